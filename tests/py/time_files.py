"""Time-data files for tests/cli_time_data.rs and their references.

A seeded force (N) drives a single-DOF filter (fn 150 Hz, damping ratio 0.04,
bilinear at fs = 2048 Hz); the response (m/s^2) gets white noise. Written as
  OUT/rig.wav: 32-bit PCM by scipy.io.wavfile, channel 1 force (full scale
    100 N), channel 2 response (full scale 50 m/s^2), channel 3 unused noise;
  OUT/rig.uff: two UFF 58 time responses (function type 1) by pyuff: node 1
    +Z excitation force in N, node 2 +Z acceleration in m/s^2;
  OUT/rig.csv: the same as a time CSV (time [s], rig:1+Z [N], rig:2+Z [m/s^2]).
Prints JSON with, for each file, the samples as read back (scipy.io.wavfile,
pyuff) in SI and, from them, scipy.signal's H1 = csd(f, a) / welch(f),
coherence and the response's PSD (hann, nperseg 1024, noverlap 512,
detrend 'constant').
Usage: time_files.py OUT"""
import json
import os
import sys

import numpy as np
import pyuff
from scipy import signal
from scipy.io import wavfile

out = sys.argv[1]
fs = 2048
n = fs * 30
rng = np.random.default_rng(58)
w = 2 * np.pi * 150.0
b, a = signal.bilinear([w * w], [1.0, 2 * 0.04 * w, w * w], fs)
f = 10.0 * rng.standard_normal(n)
acc = signal.lfilter(b, a, f) * 0.5 + 0.2 * rng.standard_normal(n)
full = np.array([100.0, 50.0, 1.0])
x = np.vstack([f, acc, 0.1 * rng.standard_normal(n)]).T
ints = np.clip(np.round(x / full * 2**31), -(2**31), 2**31 - 1).astype(np.int32)
wavfile.write(f"{out}/rig.wav", fs, ints)
_, back = wavfile.read(f"{out}/rig.wav")
wav_si = back[:, :2].astype(float) / 2**31 * full[:2]

path = f"{out}/rig.uff"
if os.path.exists(path):
    os.remove(path)
sets = []
for node, dt, lab, y in ((1, 13, "N", f), (2, 12, "m/s^2", acc)):
    sets.append(pyuff.prepare_58(
        binary=0, id1=f"rig node {node}", func_type=1, rsp_node=node, rsp_dir=3, ref_node=0, ref_dir=0,
        ord_data_type=4, abscissa_spacing=1, abscissa_spec_data_type=17, abscissa_axis_units_lab="s",
        ordinate_spec_data_type=dt, ordinate_axis_units_lab=lab, orddenom_spec_data_type=0,
        orddenom_axis_units_lab="NONE", data=y, x=np.arange(n) / fs))
pyuff.UFF(path).write_sets(sets, mode="add", force_double=True)
uback = pyuff.UFF(path).read_sets()
uff_si = np.vstack([np.real(np.asarray(s["data"], dtype=float)) for s in uback]).T
# the file holds the time step to the digits pyuff writes: its rate is 1/step
fs_uff = 1.0 / float(uback[0]["abscissa_inc"])

# a time CSV with every value in its shortest exact text
with open(f"{out}/rig.csv", "w") as fh:
    fh.write("# bench recording\ntime [s], rig:1+Z [N], rig:2+Z [m/s^2]\n")
    for i in range(n):
        fh.write(f"{repr(i / fs)}, {repr(float(f[i]))}, {repr(float(acc[i]))}\n")
csv_si = np.vstack([f, acc]).T

res = {}
for name, v, rate in (("wav", wav_si, fs), ("uff", uff_si, fs_uff), ("csv", csv_si, fs)):
    kw = dict(fs=rate, window="hann", nperseg=1024, noverlap=512, detrend="constant")
    fr, gff = signal.welch(v[:, 0], **kw)
    _, gaa = signal.welch(v[:, 1], **kw)
    _, gfa = signal.csd(v[:, 0], v[:, 1], **kw)
    h1 = gfa / gff
    res[name] = {
        "freqs": fr[1:].tolist(),
        "h1_re": h1.real[1:].tolist(),
        "h1_im": h1.imag[1:].tolist(),
        "coherence": (np.abs(gfa) ** 2 / (gff * gaa))[1:].tolist(),
        "psd": gaa.tolist(),
    }
print(json.dumps(res))
