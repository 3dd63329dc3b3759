"""Plots for the review (matplotlib, Agg backend, imported only here)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["frf_bands", "plot_participation", "plot_frf", "plot_history", "plot_spectrum", "plot_static"]

INK, ACCENT, SOFT = "#1d2733", "#c0562f", "#8a94a6"
DIR_COLOURS = {"X": "#2f6fa8", "Y": "#c0562f", "Z": "#5d8f3b"}


def _fig(w=7.0, h=3.6):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(w, h), dpi=110)
    ax.spines[["top", "right"]].set_visible(False)
    ax.grid(True, color="#e4e7ec", lw=0.6)
    return plt, fig, ax


def _save(plt, fig, path: Path) -> Path:
    fig.tight_layout()
    return save_drawn(plt, fig, path)


def save_drawn(plt, fig, path: Path) -> Path:
    """`fig` drawn once and written to `path` as palette PNG (`png`), then closed. Not savefig:
    after tight_layout it draws the figure twice (once for the layout engine that tight_layout
    leaves behind, then the picture) and encodes a PNG that would be decoded again here; the
    canvas's own pixels are the same (every plot of the rack demo byte for byte)."""
    from .png import write_palette_png

    fig.canvas.draw()
    try:
        return write_palette_png(path, np.asarray(fig.canvas.buffer_rgba()))
    finally:
        plt.close(fig)


def plot_participation(path: Path, modal) -> Path:
    """Effective-mass share per mode (bars) and cumulative share per direction (lines)."""
    plt, fig, ax = _fig()
    k = np.arange(1, len(modal.modes.freq) + 1)
    width = 0.27
    for i, d in enumerate("XYZ"):
        ax.bar(k + (i - 1) * width, 100 * np.nan_to_num(modal.part.fraction[:, i]), width,
               color=DIR_COLOURS[d], alpha=0.55, label=f"{d} per mode")
        ax.plot(k, 100 * np.nan_to_num(modal.part.cumulative[:, i]), "-o", ms=3, color=DIR_COLOURS[d],
                label=f"{d} cumulative")
    ax.axhline(90, color=SOFT, lw=0.8, ls="--")
    ax.set_xlabel("mode")
    ax.set_ylabel("effective mass, % of participating mass")
    ax.set_title(f"{modal.name}: effective modal mass", color=INK, loc="left")
    ax.legend(ncol=3, fontsize=7, frameon=False)
    return _save(plt, fig, path)


SPEED = "#7a5ca8"     # the declared machines' and bands' frequencies on the FRF plots


def frf_bands(excitations, freq) -> list[tuple[str, float, float]]:
    """(label, low Hz, high Hz) of every band of the declared excitations that reaches into the
    sweep `freq` (Hz): what the FRF plot marks, so an engineer sees the response where the
    machines run."""
    lo, hi = float(np.min(freq)), float(np.max(freq))
    return [(f"{b.source} {b.order}", b.low, b.high) for e in excitations for b in e.bands()
            if b.high >= lo and b.low <= hi]


def plot_frf(path: Path, harm, node_name: str, j: int, natural, bands=()) -> Path:
    """Amplitude and phase lag of the translations of recorded node j, natural frequencies marked
    (dotted) and the declared excitations' bands shaded (`frf_bands`)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, (a1, a2) = plt.subplots(2, 1, figsize=(7, 5), dpi=110, sharex=True)
    dots = "o" if len(harm.freq) < 30 else None          # a few listed frequencies: points, not a curve
    for i, d in enumerate("XYZ"):
        u = harm.u[:, j, i]
        a1.semilogy(harm.freq, np.maximum(np.abs(u), 1e-30), color=DIR_COLOURS[d], label=f"u{d.lower()}", marker=dots)
        a2.plot(harm.freq, -np.degrees(np.angle(u)), color=DIR_COLOURS[d], marker=dots)
    for ax in (a1, a2):
        for fn in natural:
            if harm.freq[0] <= fn <= harm.freq[-1]:
                ax.axvline(fn, color=SOFT, lw=0.6, ls=":")
        for label, lo, hi in bands:
            if hi > lo:
                ax.axvspan(lo, hi, color=SPEED, alpha=0.12, lw=0)
            else:
                ax.axvline(lo, color=SPEED, lw=1.0, ls="--")
    for label, lo, hi in bands:
        a1.annotate(label, (0.5 * (lo + hi), 1.0), xycoords=("data", "axes fraction"), xytext=(2, -3),
                    textcoords="offset points", fontsize=6, color=SPEED, rotation=90, ha="left", va="top")
        ax.spines[["top", "right"]].set_visible(False)
    a1.set_ylabel("amplitude, m")
    a2.set_ylabel("phase lag, deg")
    a2.set_xlabel("frequency, Hz (dotted: natural frequencies" + ("; purple: declared machines and bands)"
                                                                  if len(bands) else ")"))
    a1.set_title(f"{harm.name}: response at {node_name}", color=INK, loc="left")
    a1.legend(fontsize=7, frameon=False)
    return _save(plt, fig, path)


def plot_history(path: Path, hist, node_name: str, j: int) -> Path:
    """Translations of recorded node j over time, each peak marked."""
    plt, fig, ax = _fig()
    for i, d in enumerate("XYZ"):
        u = hist.u[:, j, i]
        ax.plot(hist.t, u, color=DIR_COLOURS[d], lw=0.9, label=f"u{d.lower()}")
        k = int(np.argmax(np.abs(u)))
        ax.plot(hist.t[k], u[k], "o", color=DIR_COLOURS[d], ms=4)
        ax.annotate(f"{u[k]:.3g} m at {hist.t[k]:.3g} s", (hist.t[k], u[k]), fontsize=7,
                    xytext=(4, 4), textcoords="offset points", color=DIR_COLOURS[d])
    ax.set_xlabel("time, s")
    ax.set_ylabel("displacement, m")
    ax.set_title(f"{hist.name}: response at {node_name}", color=INK, loc="left")
    ax.legend(fontsize=7, frameon=False)
    return _save(plt, fig, path)


def plot_spectrum(path: Path, spec_case, spectrum) -> Path:
    """The spectrum with the modal periods marked."""
    plt, fig, ax = _fig()
    T = np.linspace(0.0, max(4.0, 1.2 * spec_case.periods.max()), 600)
    ax.plot(T, spectrum(T) / 9.80665, color=INK, lw=1.2)
    sa = spectrum(spec_case.periods, spec_case.zeta) / 9.80665
    ax.plot(spec_case.periods, sa, "o", color=ACCENT, ms=4, label="modal periods, each at its damping")
    ax.set_xlabel("period, s")
    ax.set_ylabel("pseudo-acceleration, g")
    ax.set_title(f"{spec_case.name}: spectrum", color=INK, loc="left")
    ax.legend(fontsize=7, frameon=False)
    return _save(plt, fig, path)


def plot_static(path: Path, model, result, scale: float) -> Path:
    """Deformed shape (two elevations) of a static case, drawn at a stated exaggeration."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, axes = plt.subplots(1, 2, figsize=(8, 3.8), dpi=110)
    peak = np.abs(result.u[:, :3]).max()
    k = scale / peak if peak > 0 else 0.0
    moved = model.coords + k * result.u[:, :3]
    from matplotlib.collections import LineCollection

    for ax, (a, b, title) in zip(axes, ((0, 2, "X-Z elevation"), (1, 2, "Y-Z elevation"))):
        ax.add_collection(LineCollection(model.coords[model.conn][:, :, [a, b]], colors="#c9ced6", lw=0.8))
        ax.add_collection(LineCollection(moved[model.conn][:, :, [a, b]], colors=ACCENT, lw=1.1))
        ax.autoscale()
        ax.set_aspect("equal")
        ax.set_title(title, fontsize=9, color=INK)
        ax.axis("off")
    fig.suptitle(f"{result.name}: largest translation {peak:.3g} m (drawn x{k:.3g})", color=INK, fontsize=10)
    return _save(plt, fig, path)
