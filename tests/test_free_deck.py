"""Free-vibration case through the deck against the full system's exact solution."""

import numpy as np
import pytest
import scipy.linalg as sla

from fem.deck.reader import read_text
from fem.errors import DeckError
from fem.run import solve_all

DECK = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (i*1.25 m, 0, 0) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N4 = 50 kg
case TIP static { force N4 = (0, 0, -10 kN) }
case ALL modes { count = %d }
case REL free { start = TIP, duration = 0.2 s, step = 0.005 s, damping = 0, record = "N4" }
"""


def test_release_matches_full_system_expm():
    # all 24 modes kept: modal superposition is exact, so the recorded tip history must equal
    # x(t) = expm(A t) x0 of the full undamped system built from the same K and M
    # (scipy.linalg.expm); tolerance 1e-9 of the initial deflection covers round-off.
    from fem.assembly import assemble
    m = read_text(DECK % 24)
    statics, others = solve_all(m)
    free = others[-1]
    u_tip0 = statics[0].u[4, 2]
    assert free.u[0, 0, 2] == pytest.approx(u_tip0, rel=1e-10)
    asm = assemble(m)
    f = asm.free
    K, M = asm.K[f][:, f].toarray(), asm.M[f][:, f].toarray()
    n = len(f)
    A = np.block([[np.zeros((n, n)), np.eye(n)], [-np.linalg.solve(M, K), np.zeros((n, n))]])
    x0 = np.r_[statics[0].u.ravel()[f], np.zeros(n)]
    tip = list(f).index(6 * 4 + 2)
    for i in (10, 25, 40):
        x = sla.expm(A * free.t[i]) @ x0
        assert free.u[i, 0, 2] == pytest.approx(x[tip], abs=1e-9 * abs(u_tip0))
    assert free.captured == pytest.approx(1.0, abs=1e-12)


def test_truncated_modes_capture_less():
    m = read_text(DECK % 2)
    _, others = solve_all(m)
    assert 0.9 < others[-1].captured < 1.0


@pytest.mark.parametrize("change,text", [
    ("start = TIP", "start = TOP", ),
    ("duration = 0.2 s", "duration = 0.2 m"),
    ('record = "N4"', 'record = "Q*"'),
], ids=["unknown start", "duration unit", "record pattern"])
def test_free_case_errors(change, text):
    with pytest.raises(DeckError):
        read_text((DECK % 4).replace(change, text))
