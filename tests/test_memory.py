"""Memory estimate before factorising: an upper bound of SuperLU's actual fill, and a clear
refusal when the factor cannot fit."""

import numpy as np
import pytest
import scipy.sparse as sp
import scipy.sparse.linalg as spla

import fem.analysis.memory as mem
from fem.analysis.static import factorise
from fem.assembly import assemble
from fem.deck.reader import read_text
from fem.errors import ModelError


def grid_laplacian(n):
    """2-D 5-point Laplacian (+ identity), n x n grid: a standard sparse SPD test matrix."""
    T = sp.diags([-np.ones(n - 1), 4 * np.ones(n), -np.ones(n - 1)], [-1, 0, 1])
    I = sp.identity(n)
    S = sp.diags([-np.ones(n - 1), -np.ones(n - 1)], [-1, 1])
    return (sp.kron(I, T) + sp.kron(S, I) + sp.identity(n * n)).tocsc()


def test_estimate_bounds_the_actual_factor():
    A = grid_laplacian(40)
    lu = spla.splu(A, permc_spec="MMD_AT_PLUS_A")
    actual = 12 * (lu.L.nnz + lu.U.nnz)            # values and row indices
    est = mem.factor_bytes_estimate(A)
    assert actual <= est <= 20 * actual             # an upper bound, not absurdly loose


def test_refuses_when_memory_is_short(monkeypatch):
    m = read_text("""
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..20 { node N[i] = (i*1 m, 0, 0) }
for i in 0..19 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
""")
    monkeypatch.setattr(mem, "available_bytes", lambda: 100)
    with pytest.raises(ModelError, match="GiB.*free"):
        factorise(m, assemble(m))
