"""FRF references for tests/signal_frf.rs, from numpy and scipy.signal.

A single-DOF system H(s) = k/(m s^2 + c s + k) (fn = 100 Hz, damping ratio 0.05),
made discrete by scipy.signal.bilinear at fs = 1024 Hz, so its exact FRF on the
analysis lines is scipy.signal.freqz of the same filter; it is driven by
seeded white force f and its response y = lfilter(f) + white noise (sigma_n).
Two inputs (the second partly correlated with the first) drive two responses
through four such filters for the multiple-input case.

Writes OUT/siso.bin (f, y) and OUT/mimo.bin (f1, f2, x1, x2), float64 LE,
channel after channel, and prints JSON: the exact FRFs, and H1, Hv
(closed form), coherence, MIMO H1 = Sxf Sff^-1 and multiple coherence from
scipy.signal.csd / welch spectra of the whole records (hann, nperseg 1024,
noverlap 512, detrend 'constant').
Usage: signal_frf.py OUT"""
import json
import sys

import numpy as np
from scipy import signal

out = sys.argv[1]
fs = 1024.0
seg = 1024
n = seg * 200
rng = np.random.default_rng(20260)


def sdof(fn, zeta):
    w = 2 * np.pi * fn
    return signal.bilinear([w * w], [1.0, 2 * zeta * w, w * w], fs)


kw = dict(fs=fs, window="hann", nperseg=seg, noverlap=seg // 2, detrend="constant")
sigma_n = 0.5
b, a = sdof(100.0, 0.05)
f = rng.standard_normal(n)
y = signal.lfilter(b, a, f) + sigma_n * rng.standard_normal(n)
np.vstack([f, y]).astype("<f8").tofile(out + "/siso.bin")
fr, gff = signal.welch(f, **kw)
_, gyy = signal.welch(y, **kw)
_, gfy = signal.csd(f, y, **kw)  # conj(F) Y
_, htrue = signal.freqz(b, a, worN=fr, fs=fs)
h1 = gfy / gff
d = gff - gyy
hv = 2 * gfy / (d + np.sqrt(d * d + 4 * np.abs(gfy) ** 2))
coh = np.abs(gfy) ** 2 / (gff * gyy)

# two inputs, two responses
g = rng.standard_normal((2, n))
fin = np.vstack([g[0], 0.6 * g[0] + 0.8 * g[1]])
filt = [[sdof(80.0, 0.04), sdof(150.0, 0.06)], [sdof(120.0, 0.05), sdof(60.0, 0.03)]]
x = np.zeros((2, n))
for i in range(2):
    for j in range(2):
        x[i] += signal.lfilter(*filt[i][j], fin[j])
    x[i] += 0.05 * rng.standard_normal(n)
np.vstack([fin, x]).astype("<f8").tofile(out + "/mimo.bin")
L = len(fr)
sff = np.zeros((L, 2, 2), complex)
sxf = np.zeros((L, 2, 2), complex)
sxx = np.zeros((L, 2))
for i in range(2):
    for j in range(2):
        # E[F_i conj(F_j)] = csd(f_j, f_i)
        sff[:, i, j] = signal.csd(fin[j], fin[i], **kw)[1]
        sxf[:, i, j] = signal.csd(fin[j], x[i], **kw)[1]
    sxx[:, i] = signal.welch(x[i], **kw)[1]
hm = np.zeros((L, 2, 2), complex)
mcoh = np.zeros((L, 2))
for k in range(1, L):
    hm[k] = np.linalg.solve(sff[k].T, sxf[k].T).T
    mcoh[k] = np.real(np.einsum("ij,ij->i", hm[k], sxf[k].conj())) / sxx[k]
htm = np.zeros((L, 2, 2), complex)
for i in range(2):
    for j in range(2):
        htm[:, i, j] = signal.freqz(*filt[i][j], worN=fr, fs=fs)[1]

c = lambda z: {"re": np.real(z).tolist(), "im": np.imag(z).tolist()}
print(json.dumps({
    "fs": fs, "n": n, "segment": seg, "sigma_n": sigma_n,
    "freqs": fr.tolist(), "true": c(htrue), "h1": c(h1), "hv": c(hv), "coherence": coh.tolist(),
    "mimo_true": c(htm.reshape(-1)), "mimo_h1": c(hm.reshape(-1)), "mimo_coherence": mcoh.tolist(),
}))
