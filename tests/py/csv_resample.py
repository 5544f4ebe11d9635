"""Write an FRF on an uneven grid as a CSV (Hz, re, im in SI) and print, as
JSON, its resampling onto the even grid 12:380:0.5 Hz computed with numpy:
  * linear in re/im: numpy.interp on each part;
  * log-magnitude and unwrapped phase: numpy.interp of log|H| and of
    numpy.unwrap(angle(H)), then |H| e^{i phase}.
Usage: csv_resample.py OUT_FILE
"""
import json
import sys

import numpy as np

rng = np.random.default_rng(42)
f = np.sort(np.concatenate([[10.0, 400.0], rng.uniform(10.0, 400.0, 120)]))
f = np.unique(f)
# a lightly damped two-mode receptance plus noise, e^{+i w t}: 1/(k - w^2 m + i w c)
w = 2 * np.pi * f
h = 1 / (4e5 - w**2 * 1.0 + 1j * w * 20.0) + 0.5 / (3e6 - w**2 * 0.8 + 1j * w * 30.0)
h = h * (1 + 0.02 * rng.normal(size=f.size))
with open(sys.argv[1], "w") as fh:
    for a, v in zip(f, h):
        fh.write(f"{float(a)!r},{float(v.real)!r},{float(v.imag)!r}\n")
g = 12.0 + 0.5 * np.arange(int(round((380.0 - 12.0) / 0.5)) + 1)
lin = np.interp(g, f, h.real) + 1j * np.interp(g, f, h.imag)
lm = np.interp(g, f, np.log(np.abs(h)))
ph = np.interp(g, f, np.unwrap(np.angle(h)))
logv = np.exp(lm) * np.exp(1j * ph)
print(json.dumps({
    "grid": g.tolist(),
    "linear": [[float(v.real), float(v.imag)] for v in lin],
    "logmag": [[float(v.real), float(v.imag)] for v in logv],
}))
