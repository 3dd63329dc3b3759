"""The self-check policy of a solve: every tolerance and every pass or fail, in one place.

results.json, the console summary and the report all read the verdicts made here; none of them
judges a number on its own.

What is checked, by result kind
-------------------------------
model      the assembled M's rigid translations carry the members' and point masses
           (`mass_ok`, relative 1e-10: both are sums of the same numbers).
static     loads balance the support forces within the rounding of their own computation, and
           the solve's backward error is small (`static.balance`, EQUILIBRIUM_TOL, SOLVE_TOL;
           the verdict `static_ok`), and the largest translation is within the model's size
           (`analysis.plausible.static_check`, SIZE_FAIL).
modes      eigen residuals below RESIDUAL_TOL, M- and K-orthogonality below ORTHO_TOL, the Sturm
           count finds no mode missed, with every finite mode computed the effective masses add
           up to the participating mass, no near-zero mode beyond the free rigid-body motions
           (`analysis.plausible.zero_mode_check`), and a mass target, where asked, met.
free       the reactions balance the modal inertia forces (free_case.BALANCE_TOL).
buckling   residuals of (K + lambda Kg) x = 0 below RESIDUAL_TOL and the Sturm count finds no
           load factor missed below the highest found.
history, harmonic, spectrum
           reported (static correction, modes covering the band, missing mass), never failed.
           A harmonic case's vibration limits are a design check, as the resonance check is
           (`limits_failed`; fem/analysis/vibration_check.py).
combination (with a dynamic case)
           its static part balances like a static combination (`static_ok`); the peaks balance
           nothing (`demand_checks`). An envelope has no check of its own.

The tolerances of balance checks made inside the analyses (EQUILIBRIUM_TOL, SOLVE_TOL,
BALANCE_TOL) live beside the computations that use them and are named here.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .analysis.free_case import BALANCE_TOL
from .analysis.modal_case import AXES
from .analysis.plausible import static_check, zero_mode_check
from .analysis.static import EQUILIBRIUM_TOL, SOLVE_TOL
from .model import Model

__all__ = ["BALANCE_TOL", "EFFECTIVE_MASS_TOL", "EQUILIBRIUM_TOL", "MASS_RTOL", "ORTHO_TOL", "RESIDUAL_TOL",
           "SOLVE_TOL", "SelfChecks", "demand_checks", "demand_ok", "evaluate", "mass_ok", "modal_checks", "modal_ok", "plausibility",
           "plausible_ok", "sensitivity_checks", "static_ok"]

RESIDUAL_TOL = 1e-8      # backward error of an eigenpair; a double-precision solve gives ~1e-14
ORTHO_TOL = 1e-8
EFFECTIVE_MASS_TOL = 1e-8   # all finite modes: effective masses against the participating mass, relative
MASS_RTOL, MASS_ATOL = 1e-10, 1e-9   # assembled M against members + point masses (the same numbers summed)


def static_ok(checks: dict) -> bool:
    """Whether the `balance` checks of a static result pass (a check not run does not fail)."""
    return bool(checks["equilibrium_pass"]) and checks["solve_backward_error_pass"] is not False


def mass_ok(model: Model, assembled: np.ndarray) -> bool:
    """Whether the assembled M's translational mass (3,) kg matches the model's total."""
    # members' consistent or lumped mass and point masses must add to the model's total
    return bool(np.allclose(assembled, model.total_mass(), rtol=MASS_RTOL, atol=MASS_ATOL))


def _all_modes_check(r):
    """With every finite mode computed the effective masses add up to the participating mass
    in each translation (a physical fact); None when fewer modes were computed."""
    m = r.modes
    if m.sturm_expected is None or len(m.omega) < r.n_finite:
        return None, None
    tot = r.part.total[:3]
    got = r.part.effective_mass[:, :3].sum(axis=0)
    err = float(np.max(np.abs(got - tot) / np.where(tot > 0, tot, 1.0)))
    return err, bool(err < EFFECTIVE_MASS_TOL)


def _modes_checks(r) -> dict:
    m = r.modes
    k = len(m.omega)
    complete_err, complete_ok = _all_modes_check(r)
    return {"max_residual": float(m.residual.max()), "residual_pass": bool(m.residual.max() < RESIDUAL_TOL),
            "residual_per_mode": [float(x) for x in m.residual],
            "mass_orthogonality": m.orth_mass, "stiffness_orthogonality": m.orth_stiff,
            "orthogonality_pass": bool(max(m.orth_mass, m.orth_stiff) < ORTHO_TOL),
            "sturm_count": m.sturm_count, "sturm_expected": m.sturm_expected, "modes_found": k,
            "sturm_shift_Hz": None if m.sturm_shift is None else float(np.sqrt(max(m.sturm_shift, 0)) / (2 * np.pi)),
            "none_missed": None if m.sturm_count is None else bool(m.sturm_count == m.sturm_expected),
            "cumulative_mass_fraction": dict(zip(AXES[:3], map(float, r.part.cumulative[-1, :3]))),
            "all_modes_computed": bool(k >= r.n_finite), "effective_mass_sum_error": complete_err,
            "effective_mass_sum_pass": complete_ok,
            "mass_target": None if r.target is None else r.target.tolist(), "mass_target_met": r.target_met}


def _texts(notes) -> list[str]:
    """A case's warnings (fem.Note) as the texts results.json holds."""
    return [str(w) for w in notes]


def _free_checks(r) -> dict:
    return {"initial_displacement_captured": r.captured, "start_support_force_error": r.start_force_error,
            "inertia_balance_relative": r.inertia_balance, "inertia_balance_rounding": r.inertia_rounding,
            "inertia_balance_pass": bool(r.inertia_ok), "warnings": _texts(r.warnings)}


def _history_checks(r) -> dict:
    return {"static_correction": r.corrected, "warnings": _texts(r.warnings)}


def _harmonic_checks(r) -> dict:
    return {"static_correction": r.corrected, "highest_mode_Hz": r.highest_mode_Hz,
            "modes_complete_to_Hz": r.modes_complete_Hz if np.isfinite(r.modes_complete_Hz) else None,
            "modes_cover_band": bool(r.modes_complete_Hz >= r.freq[-1]), "warnings": _texts(r.warnings)}


def _spectrum_checks(r) -> dict:
    excited = [a for a, f in zip("XYZ", r.directions) if f != 0]     # one fraction per excited direction
    return {"missing_mass_fraction": dict(zip(excited, map(float, r.missing_fraction))),
            "missing_mass_correction": r.missing, "periods_outside_table_s": r.periods_outside,
            "warnings": _texts(r.warnings)}


def _buckling_checks(r) -> dict:
    return {"max_residual": float(r.residual.max()), "residual_pass": bool(r.residual.max() < RESIDUAL_TOL),
            "residual_per_factor": [float(x) for x in r.residual], "factors_found": len(r.factors),
            "sturm_count": r.sturm_count, "sturm_expected": r.sturm_expected,
            "sturm_shift_factor": None if r.sturm_shift is None else float(r.sturm_shift),
            "none_missed": None if r.sturm_count is None else bool(r.sturm_count == r.sturm_expected)}


_MODAL_CHECKS = {"modes": _modes_checks, "buckling": _buckling_checks, "free": _free_checks, "history": _history_checks,
                 "harmonic": _harmonic_checks, "spectrum": _spectrum_checks}


def modal_checks(r) -> dict:
    """The checks entries of a modes or response result `r`, by results.json name."""
    return _MODAL_CHECKS[r.kind](r)


def _modes_ok(c: dict) -> bool:
    return (c["residual_pass"] and c["orthogonality_pass"] and c["none_missed"] is not False
            and c["effective_mass_sum_pass"] is not False)


# the verdict of each kind's checks entries; history, harmonic and spectrum results report, never fail
_MODAL_OK = {"modes": _modes_ok, "free": lambda c: bool(c["inertia_balance_pass"]),
             "buckling": lambda c: bool(c["residual_pass"] and c["none_missed"] is not False),
             "history": lambda c: True, "harmonic": lambda c: True, "spectrum": lambda c: True}


def modal_ok(r, checks: dict | None = None) -> bool:
    """Whether a modes or response result passes its self-checks (`checks`: its modal_checks)."""
    return bool(_MODAL_OK[r.kind](modal_checks(r) if checks is None else checks))


def plausibility(model: Model, statics, modal, rigid_free: int) -> dict:
    """Answer-level plausibility checks (analysis.plausible) by case name: each static case and
    combination's largest translation against the model's size, each modes case's near-zero
    modes beyond the `rigid_free` rigid-body motions the supports leave free."""
    where = {c.name: c.location for c in [*model.cases, *model.combinations]}
    out = {r.name: static_check(model, r, where.get(r.name)) for r in statics}
    out.update({r.name: zero_mode_check(model, r, rigid_free) for r in modal if r.kind == "modes"})
    return out


def plausible_ok(checks: dict) -> bool:
    """Whether every plausibility check (by case name) passes."""
    return all(c.get("translation_within_size_pass", True) and c.get("near_zero_pass", True)
               for c in checks.values())


@dataclass(frozen=True)
class SelfChecks:
    """The self-checks of one solve and their verdicts.

    Attributes
    ----------
    mass_pass : bool
        The assembled M carries the members' and point masses (`mass_ok`).
    cases : dict of str to dict
        Each case's and combination's checks entries by name: `StaticResult.checks` for static
        cases and combinations, `modal_checks` for the others.
    plausible : dict of str to dict
        The plausibility entries of static cases, combinations and modes cases, by name.
    passed : dict of str to bool
        Each result's verdict on its own checks (balance, residuals, orthogonality ...).
    short : tuple of str
        Modes cases whose effective-mass target was not met.
    resonance_failed : tuple of str
        Modes cases whose resonance check fails: a mode inside the margin of an excitation
        band, or modes that stop below the top of the bands' margins (a design check, reported
        apart from the self-checks).
    limits_failed : tuple of str
        Harmonic cases with a vibration limit exceeded (a design check, like the resonance
        check; fem/analysis/vibration_check.py).
    """

    mass_pass: bool
    cases: dict = field(default_factory=dict)
    plausible: dict = field(default_factory=dict)
    passed: dict = field(default_factory=dict)
    short: tuple = ()
    resonance_failed: tuple = ()
    limits_failed: tuple = ()

    @property
    def all_pass(self) -> bool:
        """Every self-check passes (mass, each result's own checks, plausibility)."""
        return all(self.passed.values()) and self.mass_pass and plausible_ok(self.plausible)

    @property
    def ok(self) -> bool:
        """Every self-check passes, every effective-mass target is met, every resonance check and
        every vibration limit passes."""
        return self.all_pass and not self.short and not self.resonance_failed and not self.limits_failed


def demand_checks(model: Model, r) -> dict:
    """The checks entry of a combination with a dynamic case or an envelope: the balance of a
    combination's static part (`static.balance`; None without one), what is not checked, and
    its largest translation (either bound) against the model's size, as a static case's
    (`analysis.plausible.static_check`)."""
    from types import SimpleNamespace

    part = getattr(r, "static", None)
    b = r.fields["displacement"]
    where = next((c.location for c in [*model.combinations, *model.envelopes] if c.name == r.name), None)
    size = static_check(model, SimpleNamespace(name=r.name, u=np.maximum(b.max, -b.min)), where)
    return {"static_part": None if part is None else part.checks(model.coords),
            "peaks": "not balanced: the largest values of different quantities come at different times "
                     "or carry no sign, so they are not in equilibrium with one another", **size}


def demand_ok(checks: dict) -> bool:
    """The verdict of `demand_checks`: the static part's balance, when there is one, and the
    largest translation within the model's size."""
    return (checks["static_part"] is None or static_ok(checks["static_part"])) \
        and checks["translation_within_size_pass"]


def evaluate(model: Model, statics, modal, assembled: np.ndarray, rigid_free: int, resonance=None,
             demands=()) -> SelfChecks:
    """The self-checks of static results `statics` (cases then combinations) and modes and
    response results `modal`, with the assembled translational mass (3,) kg, the number of
    rigid-body motions the supports leave free, the resonance checks by modes case name and the
    combinations with a dynamic case and envelopes `demands`."""
    cases, passed = {}, {}
    for r in demands:
        cases[r.name] = demand_checks(model, r)
        passed[r.name] = demand_ok(cases[r.name])
    for r in statics:
        cases[r.name] = r.checks(model.coords)
        passed[r.name] = static_ok(cases[r.name])
    for r in modal:
        cases[r.name] = modal_checks(r)
        passed[r.name] = modal_ok(r, cases[r.name])
    short = tuple(r.name for r in modal if getattr(r, "target_met", None) is False)
    failed = tuple(name for name, c in (resonance or {}).items() if not c.ok)
    over = tuple(r.name for r in modal if not all(c.ok for c in getattr(r, "limits", ())))
    return SelfChecks(mass_ok(model, assembled), cases, plausibility(model, statics, modal, rigid_free), passed, short,
                      failed, over)


SENSITIVITY_ENERGY_TOL = 1e-8   # a mode's member, spring and point-mass energies against the solve, relative


def sensitivity_checks(s) -> dict:
    """The checks entry of a modes case's frequency sensitivities `s`: the energies they are
    built from add up, mode by mode, to the solve's eigenvalue (strain) and unit modal mass
    (kinetic) within SENSITIVITY_ENERGY_TOL (round-off, ~1e-13, when element energies and the
    assembled matrices agree). Reported in results.json and the report; not part of `ok`."""
    worst = float(np.max(s.energy_check, initial=0.0))
    return {"energy_check": worst, "energy_check_pass": bool(worst < SENSITIVITY_ENERGY_TOL)}
