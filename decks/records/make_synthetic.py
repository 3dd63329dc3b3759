"""Write synthetic_ground.csv: a SYNTHETIC ground-acceleration record for the demo decks.

Not a recorded earthquake: seeded white noise, band-limited to 0.5-15 Hz, shaped by a
rise-hold-decay envelope and scaled to a peak of 1.0 (the deck applies the scale in m/s^2).
Run from this folder: python make_synthetic.py
"""

import numpy as np
from scipy.signal import butter, sosfiltfilt

dt, duration = 0.01, 12.0
t = np.arange(0, duration + dt / 2, dt)
rng = np.random.default_rng(20261202)
sos = butter(4, [0.5, 15.0], btype="band", fs=1 / dt, output="sos")
a = sosfiltfilt(sos, rng.normal(size=t.size))
env = np.clip(t / 2.0, 0, 1) * np.where(t > 6.0, np.exp(-(t - 6.0) / 2.0), 1.0)
a *= env
a /= np.abs(a).max()
with open("synthetic_ground.csv", "w") as fh:
    fh.write("# SYNTHETIC record for demos (seeded band-limited noise), not a real earthquake\n")
    fh.write("time_s,factor\n")
    for ti, ai in zip(t, a):
        fh.write(f"{ti:.2f},{ai:.6f}\n")
