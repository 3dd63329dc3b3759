"""Plausibility of the answers: results that pass every algebraic check but cannot be meant.

Equilibrium and eigen residuals prove that the equations were solved, not that the model is
the one meant. A unit slip or a missing restraint shows in the answer instead: a static
deflection as large as the structure, a mode at (near) zero frequency in a supported one.

Thresholds and their origin
---------------------------
Model size     the largest extent of the nodes' bounding box (the span of a beam, the height
               of a mast): the nearest single number to the size an engineer compares a
               deflection with. The diagonal would loosen the check by up to sqrt(3) for no gain.
SIZE_FAIL      1: a translation larger than the model's size is a failed self-check. Linear
               analysis assumes displacements small against the structure; at the size of the
               structure nothing of it holds (common practice, no source).
SIZE_WARN      1/50: a translation above 1/50 of the size is a located warning. Serviceability
               limits of practice lie near span/200 to span/360 for beams and height/150 to
               height/500 for sway (common practice, no source); 1/50 is four times the loosest
               of them, so an ordinary design never reaches it. Our choice.
NEAR_ZERO_HZ   0.01 Hz (a period of 100 s): a mode below it, in a structure whose supports
               leave no rigid-body motion free, is a failed self-check. The most flexible built
               structures (the longest suspension bridges, the tallest towers) have fundamental
               periods near 10-20 s (common practice, no source); racks, masts and frames lie far
               below. A mode this slow is a part held by nothing but a token spring, or a member
               whose length or stiffness is off by orders of magnitude. Our choice.
"""

from __future__ import annotations

import numpy as np

from ..model import DIRECTIONS, Model
from .motion import dominant_direction

__all__ = ["NEAR_ZERO_HZ", "SIZE_FAIL", "SIZE_WARN", "model_size", "static_check",
           "zero_mode_check", "zero_mode_lines"]

SIZE_FAIL = 1.0
SIZE_WARN = 1 / 50
NEAR_ZERO_HZ = 0.01


def model_size(model: Model) -> float:
    """Largest extent of the nodes' bounding box, m (0 for a single node)."""
    lo, hi = model.bounding_box()
    return float((hi - lo).max())


def _largest(u: np.ndarray) -> tuple[int, int, float]:
    """(node, direction, value) of the largest |translation| of a (n, 6) field."""
    t = np.abs(u[:, :3])
    k, d = np.unravel_index(int(t.argmax()), t.shape) if t.size else (0, 0)
    return int(k), int(d), float(t[k, d]) if t.size else 0.0


def static_check(model: Model, r, location=None) -> dict:
    """Largest translation of a static case or combination `r` (StaticResult) against the model's
    size: the checks entries and, above SIZE_WARN of the size, a located warning."""
    size = model_size(model)
    k, d, v = _largest(r.u)
    ratio = v / size if size > 0 else 0.0
    out = {"model_size_m": size, "largest_translation": {"node": model.node_names[k] if model.n_nodes else None,
                                                         "direction": DIRECTIONS[d], "value_m": v},
           "translation_over_size": ratio, "translation_within_size_pass": bool(ratio <= SIZE_FAIL),
           "warnings": []}
    if ratio > SIZE_WARN:
        where = f"{location}: " if location is not None else ""
        more = ("larger than the model itself: the loads, units or supports cannot be those meant"
                if ratio > SIZE_FAIL else
                f"more than 1/{1 / SIZE_WARN:g} of it, far past ordinary deflection limits")
        out["warnings"].append(f"{where}warning: case {r.name}: node {model.node_names[k]} moves {v:.4g} m in "
                               f"{DIRECTIONS[d]}, {ratio:.3g} times the model's size ({size:.4g} m, its largest "
                               f"extent), {more}; check the units of loads, sections and materials")
    return out


def _motion(model: Model, shape: np.ndarray) -> str:
    """Words for the motion of one mode (n, 6): the main direction and the nodes moving most."""
    main, _ = dominant_direction(shape, model.coords)
    # rotations weighed by the median member length, so a turn compares with a translation
    lever = float(np.median(model.lengths)) if model.n_members else 1.0
    w = np.abs(shape) * np.r_[np.ones(3), np.full(3, lever)]
    top = w.max(initial=0.0)
    if top <= 0:
        return f"main motion {main}"
    flat = np.argsort(-w, axis=None)[:3]
    parts = []
    for i in flat:
        k, d = divmod(int(i), 6)
        if w[k, d] >= 0.1 * top:
            parts.append(f"{model.node_names[k]} {DIRECTIONS[d]}")
    return f"main motion {main}; moving most: {', '.join(parts)}"


def zero_mode_check(model: Model, r, free: int) -> dict:
    """Modes of a modes case `r` (ModesCaseResult) at zero or near-zero frequency (below
    NEAR_ZERO_HZ) beyond the `free` rigid-body motions the supports leave free (found from K's
    own zero-energy motions by the model's checks before any case: `soundness.assess`,
    `Soundness.rigid`): the checks entries, with each such mode named with its motion."""
    freq = r.modes.freq
    slow = np.flatnonzero(freq < NEAR_ZERO_HZ)
    odd = slow[free:] if free else slow     # the lowest `free` are the expected rigid-body modes
    found = []
    for j in odd:
        found.append({"mode": int(r.first_mode + j + 1), "frequency_Hz": float(freq[j]),
                      "motion": _motion(model, r.shapes[:, :, j])})
    return {"rigid_body_motions_free": free, "near_zero_limit_Hz": NEAR_ZERO_HZ, "near_zero_modes": found,
            "near_zero_pass": not found}


def zero_mode_lines(name: str, check: dict, shown: int = 6) -> list[str]:
    """Summary lines of a zero_mode_check: each near-zero mode (up to `shown`) with its motion,
    under one line that says why it fails; none when it passes."""
    modes = check["near_zero_modes"]
    if not modes:
        return []
    free = check["rigid_body_motions_free"]
    held = ("the supports hold every rigid-body motion" if not free else
            f"the supports leave only {free} rigid-body motion(s) free")
    out = [f"{len(modes)} mode(s) below {NEAR_ZERO_HZ:g} Hz though {held} FAIL: a part moves with almost no "
           "stiffness (a support, connection or restraint missing or held only by a token spring, or a member "
           "far too long or soft for its units)"]
    out += [f"  mode {m['mode']} at {m['frequency_Hz']:.3g} Hz: {m['motion']}" for m in modes[:shown]]
    if len(modes) > shown:
        out.append(f"  and {len(modes) - shown} more (results.json: checks.near_zero_modes)")
    return out
