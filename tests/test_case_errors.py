"""Errors and warnings that arise while solving one case point at that case in the deck."""

import pytest

from fem import solve
from fem.deck.reader import read_text
from fem.errors import ModelError

FRAME = """
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
node C = (2 m, 0, 3 m)
member U : A -> B beam P S
member V : B -> C beam P S
support A fixed
"""


def test_modes_case_error_carries_its_location():
    m = read_text(FRAME + "case M modes { fmax = 0.001 Hz }\n", "frame.deck")
    with pytest.raises(ModelError) as err:
        solve(m)
    text = str(err.value)
    assert text.startswith("frame.deck:10:1: case M: no mode lies at or below fmax")
    assert text.splitlines()[1].strip() == "case M modes { fmax = 0.001 Hz }"
    assert text.splitlines()[2].strip() == "^"


def test_more_modes_than_the_model_has_is_warned():
    # 3 nodes, one fixed: 12 free DOFs, all with mass (consistent mass), so 12 modes at most
    m = read_text(FRAME + "case M modes { count = 50 }\n", "frame.deck")
    solved = solve(m)
    modal = solved.modal
    assert len(modal[0].modes.omega) == 12
    assert any("frame.deck:10:1" in w and "asks for 50 modes" in w and "only 12" in w for w in solved.warnings)


def test_modes_only_run_estimates_the_stiffness_condition():
    # no static case: the estimate comes from the model's checks. Hager-Higham's estimator is a
    # lower bound of the 1-norm condition number, exact or near it for small matrices
    # (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., sec. 15.3); numpy's
    # cond(K, 1) on the dense K is the reference.
    import numpy as np

    from fem.assembly import assemble

    m = read_text(FRAME + "case M modes { count = 4 }\n")
    cond = solve(m).soundness.condition
    asm = assemble(m)
    K = asm.K[asm.free][:, asm.free].toarray()
    exact = np.linalg.cond(K, 1)
    assert 0.3 * exact <= cond <= exact * (1 + 1e-9)


def test_modes_only_stiff_contrast_is_warned(tmp_path, capsys):
    from fem.cli import run_deck

    stiff = FRAME.replace("material S { E = 210 GPa", "material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }\n"
                          "material X { E = 2.1e9 GPa").replace("member V : B -> C beam P S", "member V : B -> C beam P X")
    (tmp_path / "s.deck").write_text(stiff + "case M modes { count = 3 }\n")
    run_deck(str(tmp_path / "s.deck"), str(tmp_path / "o"), render=False)
    out = capsys.readouterr().out
    assert "warning: stiffness condition estimate" in out


def test_free_structure_has_no_condition_estimate():
    # a free-free member: K is singular by design (six rigid-body modes), no estimate is made
    m = read_text(FRAME.replace("support A fixed\n", "") + "case M modes { count = 8 }\n")
    assert solve(m).soundness.condition is None
