"""Welch references for tests/signal_welch.rs, from scipy.signal alone.

Writes OUT/x.bin (3 channels x N float64, little-endian, channel after channel)
and prints JSON: for each case, the one-sided 'spectrum' and 'density' welch of
every channel, csd(x0, xc, scaling='spectrum') of every channel, and
coherence(x0, x1), all with nfft = nperseg, average='mean'.
Usage: signal_welch.py OUT"""
import json
import sys

import numpy as np
from scipy import signal

out = sys.argv[1]
fs = 2048.0
n = 20000
rng = np.random.default_rng(1978)
f = rng.standard_normal(n)
# a lightly damped resonance driven by f, plus independent noise
b, a = signal.butter(2, [180 / (fs / 2), 220 / (fs / 2)], btype="bandpass")
y = signal.lfilter(b, a, f) * 5.0 + 0.1 * rng.standard_normal(n) + 0.3
t = np.arange(n) / fs
z = 2.5 * np.sin(2 * np.pi * 333.3 * t + 0.4) + 0.05 * rng.standard_normal(n) + 0.01 * t
x = np.vstack([f, y, z])
x.astype("<f8").tofile(out + "/x.bin")

cases = [
    {"segment": 512, "overlap": 256, "window": "hann", "scipy_window": "hann", "detrend": "constant"},
    {"segment": 1000, "overlap": 300, "window": "hamming", "scipy_window": "hamming", "detrend": "linear"},
    {"segment": 257, "overlap": 0, "window": "flat-top", "scipy_window": "flattop", "detrend": "none"},
    {"segment": 256, "overlap": 128, "window": "rectangular", "scipy_window": "boxcar", "detrend": "constant"},
]
res = []
for c in cases:
    kw = dict(fs=fs, window=c["scipy_window"], nperseg=c["segment"], noverlap=c["overlap"],
              detrend=False if c["detrend"] == "none" else c["detrend"])
    fr, spec = signal.welch(x, scaling="spectrum", **kw)
    _, dens = signal.welch(x, scaling="density", **kw)
    _, cross = signal.csd(x[0], x, scaling="spectrum", **kw)
    _, coh = signal.coherence(x[0], x[1], **kw)
    res.append({
        **c,
        "freqs": fr.tolist(),
        "spectrum": spec.tolist(),
        "density": dens.tolist(),
        "cross_re": cross.real.tolist(),
        "cross_im": cross.imag.tolist(),
        "coherence": coh.tolist(),
    })
print(json.dumps({"fs": fs, "n": n, "cases": res}))
