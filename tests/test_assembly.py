"""Global assembly against a plain reference: full 12x12 transforms T^T k T of every member
scattered by DOF index into a COO matrix (the textbook direct stiffness method, e.g. Cook,
Malkus, Plesha & Witt, Concepts and Applications of FEA, 4th ed., sec. 2.5), with the members
split over several batches."""

import numpy as np
import scipy.sparse as sp

import fem.assembly as fa
from fem import elements as el
from fem.model import Model


def random_frame(n_nodes=60, n_members=300, seed=3) -> Model:
    rng = np.random.default_rng(seed)
    coords = rng.uniform(0, 10, (n_nodes, 3))
    i = rng.integers(0, n_nodes, n_members)
    j = (i + rng.integers(1, n_nodes, n_members)) % n_nodes          # never i == j
    conn = np.c_[i, j]
    e = n_members
    u = rng.uniform(0.5, 2.0, (11, e))
    releases = np.zeros((e, 12), bool)
    releases[::7, 10] = True                                            # some hinges at end j
    return Model(title="random", node_names=[f"N{k}" for k in range(n_nodes)], coords=coords,
                 member_names=[f"M{k}" for k in range(e)], conn=conn, truss=rng.random(e) < 0.2,
                 E=210e9 * u[0], G=81e9 * u[1], rho=7850 * u[2], A=5e-3 * u[3], Iy=8e-5 * u[4],
                 Iz=6e-6 * u[5], J=2e-7 * u[6], Avy=0 * u[7], Avz=0 * u[8], roll=u[9],
                 up=np.full((e, 3), np.nan), carried_mass=10 * u[10], releases=releases,
                 restraint=np.zeros((n_nodes, 6), bool), springs=rng.uniform(0, 1e6, (n_nodes, 6)),
                 point_mass=rng.uniform(0, 100, (n_nodes, 6)))


def reference(model: Model):
    k, m, R, _ = fa.element_matrices(model)
    T = el.transform_matrix(R)
    kg = np.swapaxes(T, 1, 2) @ k @ T
    mg = np.swapaxes(T, 1, 2) @ m @ T
    dofs = (6 * model.conn[:, :, None] + np.arange(6)).reshape(-1, 12)
    rows = np.repeat(dofs, 12, axis=1).ravel()
    cols = np.tile(dofs, 12).ravel()
    n = 6 * model.n_nodes
    K = sp.coo_matrix((kg.ravel(), (rows, cols)), shape=(n, n)) + sp.diags(model.springs.ravel())
    M = sp.coo_matrix((mg.ravel(), (rows, cols)), shape=(n, n)) + sp.diags(model.point_mass.ravel())
    return K.toarray(), M.toarray()


def test_batched_assembly_equals_reference(monkeypatch):
    model = random_frame()
    monkeypatch.setattr(fa, "CHUNK", 64)              # 300 members -> 5 batches, the last short
    asm = fa.assemble(model)
    K, M = reference(model)
    # same products summed in another order: agreement to rounding (1e-12 of the largest entry)
    assert np.abs(asm.K.toarray() - K).max() <= 1e-12 * np.abs(K).max()
    assert np.abs(asm.M.toarray() - M).max() <= 1e-12 * np.abs(M).max()
    k, *_ = fa.element_matrices(model)
    np.testing.assert_array_equal(asm.k_local, k)
