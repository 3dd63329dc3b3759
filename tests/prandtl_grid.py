"""Saint-Venant J by finite differences on a square grid: the independent check of the finite-
element torsion solver (fem.sections.torsion) used by tests/test_sections_catalogue.py,
tests/test_channel_torsion.py and benchmarks/torsion.py. The grid stair-steps every arc, so its J is first order in the spacing
and is extrapolated by the callers as 2 J(h/2) - J(h)."""

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spl


def prandtl_J(inside, h):
    """Saint-Venant J by finite differences of Prandtl's stress function on a square grid.

    laplacian(phi) = -2 inside, phi = 0 on the outline and beyond; J = 2 int phi dA. Nodes in
    ``inside`` are the unknowns (the 5-point stencil reads 0 at every other node).
    """
    idx = -np.ones(inside.shape, int)
    n = int(inside.sum())
    idx[inside] = np.arange(n)
    I, K = np.nonzero(inside)
    rows, cols, vals = [np.arange(n)], [np.arange(n)], [np.full(n, -4.0)]
    for di, dk in ((1, 0), (-1, 0), (0, 1), (0, -1)):
        nb = idx[I + di, K + dk]
        ok = nb >= 0
        rows.append(np.arange(n)[ok])
        cols.append(nb[ok])
        vals.append(np.ones(ok.sum()))
    L = sp.csc_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(n, n))
    return 2.0 * spl.spsolve(L, np.full(n, -2.0 * h * h)).sum() * h * h


def angle_nodes(h, b, t, r, r2=0.0):
    """Grid nodes strictly inside an equal angle with a root fillet (and toe radii r2); the
    straight edges lie on grid lines (t and b multiples of h), only the arcs are stair-stepped."""
    y = np.arange(-h, b + 2 * h, h)
    Y, Z = np.meshgrid(y, y, indexing="ij")
    e = 1e-9 * b
    body = (Y > e) & (Z > e) & (Y < b - e) & (Z < b - e)
    legs = (Y < t - e) | (Z < t - e)
    c = t + r
    fillet = (Y < c) & (Z < c) & ((Y - c) ** 2 + (Z - c) ** 2 > r * r)
    inside = body & (legs | fillet)
    if r2:
        o = b - r2
        for P, Q in ((Y, Z), (Z, Y)):              # the toe of each leg: P along it, Q across
            inside &= ~((P > o) & (Q > t - r2) & ((P - o) ** 2 + (Q - (t - r2)) ** 2 > r2 * r2))
    return inside


def channel_nodes(h, d, bf, tf, tw, r):
    """Grid nodes strictly inside a channel with parallel flanges and root fillets r: the web's
    back on y = 0, the flanges along y from z = 0 and z = d; the straight edges lie on grid lines
    (every dimension a multiple of h), only the arcs are stair-stepped."""
    Y, Z = np.meshgrid(np.arange(-h, bf + 2 * h, h), np.arange(-h, d + 2 * h, h), indexing="ij")
    e = 1e-9 * d
    body = (Y > e) & (Z > e) & (Y < bf - e) & (Z < d - e)
    plates = (Y < tw - e) | (Z < tf - e) | (Z > d - tf + e)
    inside = body & plates
    for zc in (tf + r, d - tf - r):                # the two fillets, centres (tw + r, zc), with
        # the nodes on the flange's inner face between them (inside: fillet and flange meet there)
        corner = (Y < tw + r) & (np.abs(Z - zc) < r + e) & ((Z - zc) * (zc - d / 2) > 0)
        inside |= body & corner & ((Y - tw - r) ** 2 + (Z - zc) ** 2 > r * r)
    return inside
