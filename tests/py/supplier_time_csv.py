"""A supplier-like time CSV for tests/csv_time_mapped.rs: a title line, a
names line, a units row, semicolons, decimal commas, time in ms, a column
the map leaves out. Written from seeded numpy data (fs 2000 Hz, 4096 rows:
a hammer-like force in N and an acceleration in g), then read back by
numpy (np.genfromtxt, the decimal comma turned into a point) as the
reference: prints JSON with numpy's reading (time in ms, force in N,
acceleration in g) and scipy.signal.welch of the acceleration in SI
(g = 9.80665 m/s^2; hann, 256 samples, 128 overlap, constant detrend).
Usage: supplier_time_csv.py OUT.csv"""
import json
import sys

import numpy as np
from scipy import signal

out = sys.argv[1]
fs, n = 2000.0, 4096
rng = np.random.default_rng(99)
t_ms = np.arange(n) * 0.5
force = np.round(rng.standard_normal(n) * 12.0, 4)
acc = np.round(np.convolve(force, np.exp(-np.arange(64) / 9.0) * np.sin(np.arange(64) * 0.7), "same") / 40.0, 6)
temp = np.full(n, 21.5)
dec = lambda v, d: (f"{v:.{d}f}").replace(".", ",")  # noqa: E731
with open(out, "w", encoding="utf-8") as fh:
    fh.write("Prüfstand Lauf 4 / bench run 4\n")
    fh.write("Zeit;Hammer;Beschl. 1;Temp\n")
    fh.write("ms;N;g;degC\n")
    for row in zip(t_ms, force, acc, temp):
        fh.write(";".join([dec(row[0], 1), dec(row[1], 4), dec(row[2], 6), dec(row[3], 1)]) + "\n")
conv = {i: (lambda s: float(s.replace(",", "."))) for i in range(4)}
back = np.genfromtxt(out, delimiter=";", skip_header=3, converters=conv, encoding="utf-8")
g = 9.80665
f, p = signal.welch(back[:, 2] * g, fs=1000.0 / (back[1, 0] - back[0, 0]), window="hann",
                    nperseg=256, noverlap=128, detrend="constant")
print(json.dumps({"t_ms": back[:, 0].tolist(), "force": back[:, 1].tolist(), "acc_g": back[:, 2].tolist(),
                  "freqs": f.tolist(), "psd_acc": p.tolist()}))
