"""The resonance check: every mode of a modes case against every band of the declared excitations.

For a natural frequency f and a band [low, high] of excitation frequencies (`fem.excitation`):

- margin, signed, in percent of the nearest excitation frequency of the band:
  100 (f - high) / high above the band (positive), 100 (f - low) / low below it (negative),
  0 inside it;
- the mode fails when f lies in [low (1 - m), high (1 + m)], m the band's required margin: the
  natural frequency is within m of some excitation frequency of the band, measured in that
  excitation frequency. Above the band this is margin <= 100 m, below it margin >= -100 m.
  An edge fails too, so a mode exactly on a running speed fails even with m = 0.

Each row also carries what tells the engineer whether a failing mode matters: its effective
masses (fractions of the participating mass in X, Y, Z, RX, RY, RZ), its dominant motion, and
the modal displacement at the excitation's node (translation of the mass-normalised shape,
m / sqrt(kg)), also as a share of the mode's largest translation anywhere: a mode that barely
moves the machine's support is excited little by it (the modal force is phi^T F).

The check also says whether it could see every mode that can fail: the modes case must reach
above the top of the highest band's margin, high (1 + m) (or hold every mode of the model). A
mode not computed cannot be checked, so an incomplete check is reported as such.

Crossings, for the frequency-vs-speed diagram: where a mode's horizontal line meets an order's
ray, the running speed f / k for the order k x speed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..excitation import excitation_bands

__all__ = ["COLUMNS", "Crossing", "ResonanceCheck", "ResonanceRow", "check_resonance", "margins"]

AXES = ("X", "Y", "Z", "RX", "RY", "RZ")
COLUMNS = ("case", "mode", "frequency_Hz", "source", "order", "band_low_Hz", "band_high_Hz", "margin_percent",
           "required_percent", "verdict", "meff_X_percent", "meff_Y_percent", "meff_Z_percent", "motion", "node",
           "node_motion", "node_share_percent")


@dataclass(frozen=True)
class ResonanceRow:
    """One mode against one band. mode is numbered from 1 as in the modes tables; freq, low,
    high in Hz; margin and required in percent; effective_mass (6,) fractions X..RZ (nan where
    the model has no mass in that direction); node_motion the translation of the mass-normalised
    shape at the band's node (m / sqrt(kg)) and node_share its fraction of the mode's largest
    translation (both nan without a node)."""

    mode: int
    freq: float
    source: str
    order: str
    low: float
    high: float
    margin: float
    required: float
    passed: bool
    effective_mass: tuple
    motion: str
    node: str | None
    node_motion: float
    node_share: float


@dataclass(frozen=True)
class Crossing:
    """A mode's frequency line meeting an order's ray: mode (from 1), freq Hz, speed Hz = freq /
    multiple; in_range when the speed lies in the machine's operating range; passed the mode's
    verdict against that band."""

    source: str
    order: str
    mode: int
    freq: float
    speed: float
    in_range: bool
    passed: bool


@dataclass
class ResonanceCheck:
    """The check of one modes case.

    Attributes (k modes, b bands)
    ----------
    case : name of the modes case
    bands : (b,) the bands checked, in the order the excitations gave them
    freq : (k,) natural frequencies, Hz
    margin : (k, b) signed margin, percent
    passed : (k, b) bool
    effective_mass : (k, 6) effective mass fractions X, Y, Z, RX, RY, RZ
    motion : (k,) words for each mode's dominant motion
    node_shape : (k, b, 3) translation at each band's node, mass-normalised (nan without a node)
    node_share : (k, b) its size over the mode's largest translation (nan without a node)
    complete_to : frequency (Hz) below which the modes case holds every mode of the model
    needed_to : the top of the highest band's margin, high (1 + m), Hz
    first_mode : number (from 0) of the first mode in the case's full set
    """

    case: str
    bands: tuple
    freq: np.ndarray
    margin: np.ndarray
    passed: np.ndarray
    effective_mass: np.ndarray
    motion: tuple
    node_shape: np.ndarray
    node_share: np.ndarray
    complete_to: float
    needed_to: float
    first_mode: int = 0

    @property
    def complete(self) -> bool:
        """True when every mode that could fail a band was computed."""
        return self.complete_to >= self.needed_to

    @property
    def ok(self) -> bool:
        """Every mode passes every band, and the check saw every mode that could fail."""
        return bool(self.passed.all()) and self.complete

    def rows(self) -> list[ResonanceRow]:
        """Every (mode, band) pair, mode by mode, bands in order."""
        out = []
        for j in range(len(self.freq)):
            for b, band in enumerate(self.bands):
                out.append(ResonanceRow(
                    self.first_mode + j + 1, float(self.freq[j]), band.source, band.order, band.low, band.high,
                    float(self.margin[j, b]), 100 * band.margin, bool(self.passed[j, b]),
                    tuple(float(x) for x in self.effective_mass[j]), self.motion[j], band.node,
                    float(np.linalg.norm(self.node_shape[j, b])), float(self.node_share[j, b])))
        return out

    def failures(self) -> list[ResonanceRow]:
        """The rows that fail, in the order of `rows`."""
        return [r for r in self.rows() if not r.passed]

    def table(self, failed_only: bool = False) -> list[dict]:
        """Rows as dicts keyed by COLUMNS, for a CSV table or results.json (plain Python values;
        None where a value does not apply)."""
        num = _plain
        out = []
        for r in (self.failures() if failed_only else self.rows()):
            m = r.effective_mass
            out.append(dict(zip(COLUMNS, (
                self.case, r.mode, r.freq, r.source, r.order, r.low, r.high, r.margin, r.required,
                "pass" if r.passed else "FAIL", num(100 * m[0]), num(100 * m[1]), num(100 * m[2]), r.motion, r.node,
                num(r.node_motion), num(100 * r.node_share)))))
        return out

    def as_json(self) -> dict:
        """The check for results.json: plain values only (no NaN or inf). modes_complete_to_Hz is
        None when the case holds every mode of the model."""
        bands = [{"source": b.source, "order": b.order, "low_Hz": b.low, "high_Hz": b.high,
                  "required_percent": 100 * b.margin, "multiple": b.multiple, "node": b.node,
                  "speed_Hz": None if b.speed is None else list(b.speed)} for b in self.bands]
        return {"case": self.case, "ok": self.ok, "complete": self.complete,
                "modes_complete_to_Hz": _plain(self.complete_to), "modes_needed_to_Hz": float(self.needed_to),
                "failures": int((~self.passed).sum()), "bands": bands, "rows": self.table()}

    def ranked_failures(self) -> list[ResonanceRow]:
        """The failing rows, closest to their excitation first; among equals, the mode that moves
        the source's node most."""
        return sorted(self.failures(), key=lambda r: (abs(r.margin) - r.required,
                                                      -np.nan_to_num(r.node_share, nan=0.0), r.mode))

    def summary_lines(self, limit: int = 10) -> list[str]:
        """A few lines for the console: the verdict, then the failing rows (at most `limit`: the
        closest to their excitation first, then the ones moving the source's node most), then a
        line when the modes did not reach high enough to check every band."""
        fails = self.ranked_failures()
        lines = [f"resonance check of {self.case}: " + (
            "every mode clear of every excitation band by its margin" if not fails else
            f"{len(fails)} mode-band pair{'s' if len(fails) != 1 else ''} inside the required margin")]
        for r in fails[:limit]:
            band = f"{r.low:.4g} Hz" if r.low == r.high else f"{r.low:.4g}-{r.high:.4g} Hz"
            at = "" if r.node is None else f"; {r.node} moves {100 * r.node_share:.0f} % of the mode's most"
            margin = "inside the band" if r.margin == 0 else f"margin {r.margin:+.1f} %"
            lines.append(f"  mode {r.mode} at {r.freq:.4g} Hz vs {r.source} {r.order} ({band}): {margin}, "
                         f"needs {r.required:.3g} %{at}")
        if len(fails) > limit:
            lines.append(f"  ... and {len(fails) - limit} more (see the table)")
        if not self.complete:
            lines.append(f"  the modes reach only {self.complete_to:.4g} Hz, below the top of the bands' margins "
                         f"({self.needed_to:.4g} Hz): modes above were not checked; ask the modes case for more")
        return lines

    def crossings(self, source: str | None = None) -> list[Crossing]:
        """Where the modes meet the rays of the orders that follow a running speed (of `source`
        only, when given), sorted by source, order and speed; modes at 0 Hz meet no ray."""
        out = []
        for b, band in enumerate(self.bands):
            if band.multiple is None or (source is not None and band.source != source):
                continue
            lo, hi = band.speed
            for j in np.flatnonzero(self.freq > 0):
                s = float(self.freq[j] / band.multiple)
                out.append(Crossing(band.source, band.order, self.first_mode + int(j) + 1, float(self.freq[j]), s,
                                    bool(lo <= s <= hi), bool(self.passed[j, b])))
        return out


def _plain(x) -> float | None:
    """A float for JSON, None for NaN or infinity."""
    return float(x) if np.isfinite(x) else None


def margins(freq, bands) -> tuple[np.ndarray, np.ndarray]:
    """(k, b) signed margins in percent and (k, b) pass flags of frequencies freq (k,) Hz against
    bands (b,) (see the module's docstring)."""
    f = np.asarray(freq, float)[:, None]
    lo = np.array([b.low for b in bands], float)[None, :]
    hi = np.array([b.high for b in bands], float)[None, :]
    m = np.array([b.margin for b in bands], float)[None, :]
    margin = np.where(f > hi, (f - hi) / hi, np.where(f < lo, (f - lo) / lo, 0.0)) * 100
    passed = (f < lo * (1 - m)) | (f > hi * (1 + m))
    return margin, passed


def _largest_motion(shapes: np.ndarray, node_names) -> tuple:
    """Per mode: 'largest translation in Y at N5' from shapes (n, 6, k)."""
    t = shapes[:, :3, :]
    out = []
    for j in range(t.shape[2]):
        i, a = np.unravel_index(int(np.argmax(np.abs(t[:, :, j]))), t.shape[:2])
        where = f" at {node_names[i]}" if len(node_names) else ""
        out.append(f"largest translation in {AXES[a]}{where}")
    return tuple(out)


def check_resonance(modal, excitations, node_names=(), motion=None) -> ResonanceCheck:
    """Check every mode of a modes case against every band of the excitations.

    Parameters
    ----------
    modal : fem.analysis.modal_case.ModesCaseResult
    excitations : sequence of fem.excitation.Machine and FrequencyBand
    node_names : (n,) the model's node names, in node order: needed to find the excitations'
        nodes (and to name where each mode moves most)
    motion : optional (k,) words for each mode's dominant motion (e.g. the labels of
        fem.output.character.describe_mode); by default the direction and node of its largest
        translation

    Returns
    -------
    ResonanceCheck

    Examples
    --------
    >>> fan = Machine("FAN", speed=1480 / 60, node="N12")              # doctest: +SKIP
    >>> check = check_resonance(modal, [fan], model.node_names)        # doctest: +SKIP
    >>> [(r.mode, r.order, round(r.margin, 1)) for r in check.failures()]  # doctest: +SKIP
    [(3, '1x', -1.0)]
    """
    from .harmonic import modes_complete_to

    bands = excitation_bands(excitations)
    if not bands:
        raise ValueError("no excitation to check the modes against")
    names = list(node_names)
    index = {n: i for i, n in enumerate(names)}
    for band in bands:
        if band.node is not None and band.node not in index:
            from ..errors import suggest

            raise ValueError(f"{band.source}: node {band.node!r} is not a node of the model; {suggest(band.node, names)}")
    freq = np.asarray(modal.modes.freq, float)
    k = len(freq)
    shapes = np.asarray(modal.shapes, float)
    if names and len(names) != shapes.shape[0]:
        raise ValueError(f"node_names gives {len(names)} names for the {shapes.shape[0]} nodes of case {modal.name}")
    margin, passed = margins(freq, bands)
    frac = np.asarray(modal.part.fraction, float)
    eff = np.full((k, 6), np.nan)
    eff[:, :frac.shape[1]] = frac[:, :6]
    if motion is None:
        motion = _largest_motion(shapes, names)
    elif len(motion) != k:
        raise ValueError(f"motion gives {len(motion)} descriptions for {k} modes")
    # translation size at every node, per mode: (n, k); its largest over the nodes per mode
    size = np.linalg.norm(shapes[:, :3, :], axis=1)
    top = size.max(axis=0) if len(size) else np.zeros(k)
    node_shape = np.full((k, len(bands), 3), np.nan)
    node_share = np.full((k, len(bands)), np.nan)
    for b, band in enumerate(bands):
        if band.node is None:
            continue
        i = index[band.node]
        node_shape[:, b, :] = shapes[i, :3, :].T
        node_share[:, b] = np.divide(size[i], top, out=np.zeros(k), where=top > 0)
    needed = max(b.high * (1 + b.margin) for b in bands)
    return ResonanceCheck(modal.name, bands, freq, margin, passed, eff, tuple(motion), node_shape, node_share,
                          modes_complete_to(modal) if k else 0.0, needed, modal.first_mode)
