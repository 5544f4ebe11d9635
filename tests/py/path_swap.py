"""Reference for the path ranking's spread: a plain numpy Monte Carlo of a
path analysis with noisy FRFs and forces (circular complex normal errors of
the stated standard uncertainty, every value independent), each path's
overall level computed directly from the drawn values (no linearisation).

stdin: JSON {freqs, h: [[[re, im] per input] per line], f: same, uh, uf
(standard uncertainties, same layout), draws, seed}; one target, peak
spectra, sound pressure re 20 µPa, no weighting.
stdout: JSON {louder: [[P(L_a > L_b)]], intervals: [[q2.5, q97.5] per path]}.
"""
import json
import sys

import numpy as np

d = json.load(sys.stdin)
h = np.array(d["h"])
f = np.array(d["f"])
h = h[..., 0] + 1j * h[..., 1]  # lines x paths
f = f[..., 0] + 1j * f[..., 1]
uh = np.array(d["uh"])
uf = np.array(d["uf"])
n = d["draws"]
rng = np.random.default_rng(d["seed"])


def circ(u, shape):
    # circular complex normal with E|e|^2 = u^2
    return (rng.standard_normal(shape) + 1j * rng.standard_normal(shape)) * (u / np.sqrt(2.0))


shape = (n,) + h.shape
hd = h[None] + circ(uh[None], shape)
fd = f[None] + circ(uf[None], shape)
c = hd * fd  # draws x lines x paths: each path's contribution at the target
ms = (np.abs(c) ** 2 / 2.0).sum(axis=1)  # peak amplitudes: mean square |x|^2 / 2
lv = 10.0 * np.log10(ms / (20e-6) ** 2)
npaths = h.shape[1]
louder = [[float(np.mean(lv[:, a] > lv[:, b])) for b in range(npaths)] for a in range(npaths)]
intervals = [[float(np.quantile(lv[:, p], 0.025)), float(np.quantile(lv[:, p], 0.975))] for p in range(npaths)]
print(json.dumps({"louder": louder, "intervals": intervals}))
