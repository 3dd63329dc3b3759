"""The main motion of a mode shape in words, for the summary's checks and the pictures."""

from __future__ import annotations

import numpy as np

__all__ = ["dominant_direction"]


def dominant_direction(shape: np.ndarray, coords: np.ndarray | None = None) -> tuple[str, np.ndarray]:
    """Name of the main motion of a mode, 'X', 'Y', 'Z' or 'twist about z', and the share of
    each translation (3,).

    shape (n, 6) one mode at every node; coords (n, 3) m. The plan motion is fitted by a rigid
    one, a translation (a, b) plus a turn theta about the vertical axis through the nodes'
    centroid, in least squares over the nodes' horizontal translations and their rotations
    about z (weighted by the nodes' mean plan radius rho, so both count as lengths). The mode
    is a twist when the turn moves the nodes more (|theta| rho) than the translation does and
    more than their mean vertical motion: rotations dominate and the translations circulate."""
    tr = np.abs(shape[:, :3]).sum(axis=0)
    share = tr / max(tr.sum(), 1e-300)
    name = "XYZ"[int(np.argmax(share))]
    if coords is None or not len(shape):
        return name, share
    r = coords[:, :2] - coords[:, :2].mean(axis=0)
    rho = float(np.sqrt((r ** 2).sum(axis=1).mean()))
    ext = float(np.ptp(coords, axis=0).max()) if len(coords) > 1 else 0.0
    if rho <= 1e-6 * max(ext, 1e-300):
        rho = ext / 2                     # every node on one vertical line: its length is the lever
    if rho <= 0:
        return name, share
    n = len(shape)
    turn = (np.sum(r[:, 0] * shape[:, 1] - r[:, 1] * shape[:, 0]) + rho ** 2 * shape[:, 5].sum()) / (2 * n * rho ** 2)
    mean = shape[:, :3].mean(axis=0)
    if abs(turn) * rho > max(np.hypot(mean[0], mean[1]), abs(mean[2])):
        return "twist about z", share
    return name, share
