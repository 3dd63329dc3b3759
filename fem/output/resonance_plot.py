"""The frequency-vs-speed diagram of a machine: where its excitation orders meet the modes.

Layout (our own): running speed in rpm across, frequency in Hz up. Each mode is a horizontal
line, labelled with its number and frequency at the right (failing modes first, a label left out
where it would overlap another); a failing mode is drawn in the warning colour, a clear one in
grey. Each order that follows the speed (1x, 2x, blade pass) is a ray from the
origin with its required margin as a pale wedge around it; over the operating speeds the wedge
is darker: a mode line crossing a dark wedge fails. Orders fixed in frequency (line, 2x line)
are horizontal bands. The operating range is a shaded column (a single line for a fixed
speed). Where a mode meets a ray the crossing is marked: a filled diamond when the mode fails
against that order, an open circle when it passes; a crossing is labelled ('mode 3 on 2x') when
it lies in the operating range or fails, unless the label would cover another (the table holds
every crossing's mode and order).

matplotlib (Agg) is imported only when a diagram is drawn.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["plot_resonance", "resonance_figure"]

INK, MUTED, GRID = "#22303c", "#7d8796", "#e6e9ee"
FAIL = "#c23b22"                  # a failing mode or crossing
OPERATING = "#f4e3b5"             # the operating speeds
WEDGE = "#6aa9a0"                 # margins around the orders (pale everywhere, darker over the range)
FIXED = "#9b7fc4"                 # orders fixed in frequency
SPEED_ROOM = 1.3                  # speed axis to this factor of the top running speed
FREQ_ROOM = 1.15                  # frequency axis to this factor of the highest band's margin
LABEL_GAP = 0.032                 # height of a 7 pt label, a fraction of the axes (4.6 in figure)
CHAR_WIDTH = 0.0075               # width of one 7 pt character, a fraction of the axes (7.2 in figure)


def _machine_bands(check, source):
    bands = [(b, band) for b, band in enumerate(check.bands) if band.speed is not None
             and (source is None or band.source == source)]
    if not bands:
        names = sorted({band.source for band in check.bands if band.speed is not None})
        raise ValueError(f"no machine named {source!r} in the check; machines: {', '.join(names) or 'none'}"
                         if source is not None else "the check has no machine (plain bands have no speed to draw)")
    name = bands[0][1].source
    return name, [(b, band) for b, band in bands if band.source == name]


def resonance_figure(check, source: str | None = None):
    """The diagram of one machine of a `ResonanceCheck` as a matplotlib Figure (the first
    machine when `source` is None). The crossings' markers carry the gids 'crossings-fail' and
    'crossings-pass' (x in rpm, y in Hz)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib import patheffects

    name, bands = _machine_bands(check, source)
    lo, hi = bands[0][1].speed
    x_top = SPEED_ROOM * hi * 60
    y_top = FREQ_ROOM * max(band.high * (1 + band.margin) for _, band in bands)
    fig, ax = plt.subplots(figsize=(7.2, 4.6), dpi=110)
    ax.spines[["top", "right"]].set_visible(False)
    ax.grid(True, color=GRID, lw=0.6)
    ax.set_axisbelow(True)
    if hi > lo:
        ax.axvspan(60 * lo, 60 * hi, color=OPERATING, lw=0, zorder=0)
    ax.axvline(60 * lo, color="#d9b45a", lw=0.9, zorder=1)
    ax.axvline(60 * hi, color="#d9b45a", lw=0.9, zorder=1)
    x = np.linspace(0.0, x_top, 2)
    for _, band in bands:
        m = band.margin
        if band.multiple is None:
            ax.axhspan(band.low * (1 - m), band.high * (1 + m), color=FIXED, alpha=0.18, lw=0, zorder=1)
            ax.axhline(band.low, color=FIXED, lw=1.1, ls="--", zorder=2)
            ax.annotate(band.order, (x_top, band.low), xytext=(-3, 3), textcoords="offset points", ha="right",
                        fontsize=7, color=FIXED)
            continue
        k = band.multiple / 60                      # Hz of excitation per rpm
        ax.fill_between(x, k * (1 - m) * x, k * (1 + m) * x, color=WEDGE, alpha=0.16, lw=0, zorder=1)
        xr = np.array([60 * lo, 60 * hi])
        ax.fill_between(xr, k * (1 - m) * xr, k * (1 + m) * xr, color=WEDGE, alpha=0.45, lw=0, zorder=1)
        ax.plot(x, k * x, color=WEDGE, lw=1.3, zorder=2)
        end = min(x_top, y_top / k)                 # label where the ray leaves the plot
        ax.annotate(band.order, (end, k * end), xytext=(-4, -10 if end < x_top else 2),
                    textcoords="offset points", ha="right", fontsize=7, color="#3d7d74")
    cols = [b for b, _ in bands]
    fails = ~check.passed[:, cols].all(axis=1)
    drawn = [j for j, f in enumerate(check.freq) if 0 < f <= y_top]
    for j in drawn:
        ax.axhline(check.freq[j], color=FAIL if fails[j] else MUTED, lw=1.4 if fails[j] else 0.7, zorder=3)
    # labels at the right, failing modes first, none closer than a line of text to one placed
    placed: list[float] = []
    for j in sorted(drawn, key=lambda j: (not fails[j], check.freq[j])):
        f = check.freq[j]
        if all(abs(f - g) >= LABEL_GAP * y_top for g in placed):
            placed.append(f)
            ax.annotate(f"mode {check.first_mode + j + 1}  {f:.4g} Hz", (x_top, f), xytext=(3, 0),
                        textcoords="offset points", va="center", fontsize=7, color=FAIL if fails[j] else INK,
                        annotation_clip=False)
    shown = [c for c in check.crossings(name) if c.speed * 60 <= x_top and c.freq <= y_top]
    for passed, gid, label, style in (
            (False, "crossings-fail", "crossing inside its margin", dict(marker="D", ms=6, mfc=FAIL, mec="white")),
            (True, "crossings-pass", "crossing clear of its margin", dict(marker="o", ms=5, mfc="white", mec=INK))):
        pts = [c for c in shown if c.passed == passed]
        ax.plot([60 * c.speed for c in pts], [c.freq for c in pts], ls="none", zorder=4, gid=gid,
                label=label if pts else None, **style)
    # labels of failing crossings (those in the operating range first), then of passing ones in the
    # range, each above and left of its marker, skipped where it would cover one already placed
    boxes: list[tuple] = []
    halo = [patheffects.withStroke(linewidth=2.5, foreground="white")]     # legible over the lines
    for c in sorted((c for c in shown if c.in_range or not c.passed), key=lambda c: (c.passed, not c.in_range)):
        text = f"mode {c.mode} on {c.order}"
        x0, y0 = 60 * c.speed / x_top, c.freq / y_top
        box = (x0 - CHAR_WIDTH * len(text), y0, x0, y0 + 1.3 * LABEL_GAP)
        if any(box[0] < b[2] and b[0] < box[2] and box[1] < b[3] and b[1] < box[3] for b in boxes):
            continue
        boxes.append(box)
        ax.annotate(text, (60 * c.speed, c.freq), xytext=(-5, 5), ha="right", textcoords="offset points",
                    fontsize=7, color=FAIL if not c.passed else INK, zorder=5, path_effects=halo)
    if shown:
        ax.legend(loc="upper left", fontsize=7, frameon=False)
    ax.set_xlim(0, x_top)
    ax.set_ylim(0, y_top)
    ax.set_xlabel("running speed, rpm (shaded: operating range)")
    ax.set_ylabel("frequency, Hz")
    n_fail = int(fails.sum())
    verdict = f"{n_fail} mode{'s' if n_fail != 1 else ''} inside a margin" if n_fail else "every mode clear"
    speed = f"{60 * lo:.4g} rpm" if hi == lo else f"{60 * lo:.4g}-{60 * hi:.4g} rpm"
    ax.set_title(f"{check.case}: {name} at {speed}, {verdict}", color=INK, loc="left", fontsize=10,
                 pad=6 if check.complete else 16)
    if not check.complete:
        ax.text(0, 1.01, f"modes computed only up to {check.complete_to:.4g} Hz: the bands reach "
                f"{check.needed_to:.4g} Hz with their margins, modes above are not checked",
                transform=ax.transAxes, va="bottom", fontsize=7, color=FAIL)
    fig.tight_layout()
    return fig


def plot_resonance(path, check, source: str | None = None) -> Path:
    """Write the diagram of one machine (see `resonance_figure`) to the PNG file `path`.

    Examples
    --------
    >>> plot_resonance(folder / "resonance_FAN.png", check, "FAN")     # doctest: +SKIP
    """
    fig = resonance_figure(check, source)          # selects the Agg backend before pyplot is imported here
    import matplotlib.pyplot as plt

    from .plots import save_drawn

    return save_drawn(plt, fig, Path(path))
