"""Write supplier-style CSV/TSV files and print, as JSON, the SI complex
values and frequencies a correct reader must produce, computed here with
numpy (independent arithmetic, not mortise code).

Conversions used (sources):
  * g_n = 9.80665 m/s^2 (ISO 80000-3);
  * mm = 1e-3 m (SI prefix milli, SI Brochure);
  * level L in dB re r of a field quantity: |H| = r * 10**(L/20) (IEC 60027-3);
  * phase in degrees: rad = deg * pi / 180; angular frequency: f = w / (2 pi).
Usage: csv_mapped.py OUT_DIR
"""
import json
import os
import sys

import numpy as np

out = sys.argv[1]
rng = np.random.default_rng(20261201)
G_N = 9.80665
res = {}

# 1. dB re 1e-6 g/N magnitude and degree phase, semicolon delimited, decimal point,
#    two title lines, one header line; accelerance wall:A1+Z / wall:A1+Z
f = np.linspace(5.0, 400.0, 80)
L = rng.uniform(-20.0, 60.0, f.size)
ph = rng.uniform(-180.0, 180.0, f.size)
with open(os.path.join(out, "db_deg.csv"), "w") as fh:
    fh.write("Hammer test, timber-frame wall, anchor A1\n")
    fh.write("exported 2026-11-30\n")
    fh.write("Frequency [Hz];Level [dB re 1e-6 g/N];Phase [deg]\n")
    for a, b, c in zip(f, L, ph):
        fh.write(f"{float(a)!r};{float(b)!r};{float(c)!r}\n")
h = 1e-6 * 10.0 ** (L / 20.0) * np.exp(1j * np.deg2rad(ph)) * G_N
res["db_deg"] = {"freqs": f.tolist(), "values": [[[v.real, v.imag] for v in h]]}

# 2. tab separated, kHz, re/im in mm/s/N, two FRFs addressed by header name, coherence
fk = np.linspace(0.01, 2.0, 50)
re1, im1 = rng.normal(size=fk.size), rng.normal(size=fk.size)
re2, im2 = rng.normal(size=fk.size), rng.normal(size=fk.size)
coh = rng.uniform(0.5, 1.0, fk.size)
with open(os.path.join(out, "reim_mm.tsv"), "w") as fh:
    fh.write("f_kHz\tY11_re\tY11_im\tcoh11\tY21_re\tY21_im\n")
    for row in zip(fk, re1, im1, coh, re2, im2):
        fh.write("\t".join(repr(float(x)) for x in row) + "\n")
res["reim_mm"] = {
    "freqs": (fk * 1000.0).tolist(),
    "values": [
        [[x * 1e-3, y * 1e-3] for x, y in zip(re1, im1)],
        [[x * 1e-3, y * 1e-3] for x, y in zip(re2, im2)],
    ],
    "coherence": coh.tolist(),
}

# 3. white-space separated, rad/s, linear magnitude in N/mm and phase in radians
w = np.linspace(60.0, 6000.0, 40)
mag = rng.uniform(10.0, 500.0, w.size)
phr = rng.uniform(-np.pi, np.pi, w.size)
with open(os.path.join(out, "stiff.txt"), "w") as fh:
    for a, b, c in zip(w, mag, phr):
        fh.write(f"  {float(a)!r}   {float(b)!r}   {float(c)!r}\n")
k = mag * np.exp(1j * phr) * 1e3
res["stiff"] = {"freqs": (w / (2.0 * np.pi)).tolist(), "values": [[[v.real, v.imag] for v in k]]}

print(json.dumps(res))
