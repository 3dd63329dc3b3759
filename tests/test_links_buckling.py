"""Rigid links and offsets with stress stiffening: the geometric stiffness goes through the same
DOF transformation as K."""

import numpy as np
import pytest

import fem

COLUMN = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = round(d = 50 mm)
for i in 0..8 { node A[i] = (0, 0, i*0.5 m) }
for i in 8..16 { node B[i] = (0, 0, i*0.5 m) }
for i in 0..7 { member a[i] : A[i] -> A[i+1] beam P S }
for i in 8..15 { member b[i] : B[i] -> B[i+1] beam P S }
link J: A[8] -> B[8]
support A[0] (ux, uy, uz, rz)
support B[16] (ux, uy)
case DOWN static { force B[16] = (0, 0, -1 kN) }
case BK buckling { loading = DOWN, count = 2 }
"""


def test_a_column_joined_by_a_rigid_link_buckles_at_the_euler_load():
    # Euler load of a pinned-pinned column, P = pi^2 EI / L^2 (Timoshenko & Gere, Theory of
    # Elastic Stability, 2nd ed., sec. 2.1); the two halves joined at mid-height by a full link
    # (two nodes at one place) act as one column. 16 cubic elements: discretisation error of the
    # consistent geometric stiffness about 2e-6 here, so 1e-4 holds with room.
    r = fem.solve(fem.read_text(COLUMN))
    EI = 200e9 * np.pi * 0.05 ** 4 / 64
    assert r["BK"].factors[0] * 1e3 == pytest.approx(np.pi ** 2 * EI / 8.0 ** 2, rel=1e-4)
