"""A synthetic hammer test for tests/signal_impact.rs, and its reference.

fs = 4096 Hz, 20 s. Half-sine force pulses (2 ms) of known peaks hit a
single-DOF filter (fn 120 Hz, damping ratio 0.02, scipy.signal.bilinear);
the hit at 9 s has a second pulse 8 ms after it at 40 % (a double hit); the
hit at 13 s is the strongest and its response exceeds the overload limit
given to mortise (0.9 x the largest |response|). Small seeded noise on both.

The reference applies the rules stated in src/signal/impact.rs independently
(trigger at the first |f| >= level after the previous record, pulse end where
|f| < 0.1 x its running peak, double hit where |f| reaches 0.1 x peak again
in the record), then numpy's rfft of each accepted record (force times the
force window times the exponential window, response times the exponential
window): H1 = sum conj(F) X / sum |F|^2, coherence, and the exact FRF
(scipy.signal.freqz). Writes OUT/impact.bin (force, response float64 LE) and
prints JSON; OUT/impact.wav holds the same samples as float64 at stated full
scales. Usage: impact_test.py OUT"""
import json
import sys

import numpy as np
from scipy import signal

out = sys.argv[1]
fs = 4096.0
n = int(20 * fs)
rng = np.random.default_rng(1234)
w0 = 2 * np.pi * 120.0
b, a = signal.bilinear([w0 * w0], [1.0, 2 * 0.02 * w0, w0 * w0], fs)
f = np.zeros(n)
pulse = np.sin(np.pi * np.arange(9) / 8)  # 2 ms half sine, 9 samples
hits = [(1.0, 100), (3.0, 90), (5.0, 110), (7.0, 95), (9.0, 100), (11.0, 105), (13.0, 160), (15.0, 98), (17.0, 102)]
for t, p in hits:
    i = int(t * fs)
    f[i:i + 9] += p * pulse
    if t == 9.0:
        j = i + int(0.008 * fs)
        f[j:j + 9] += 0.4 * p * pulse
x = signal.lfilter(b, a, f)
f += 0.05 * rng.standard_normal(n)
x += 1e-3 * rng.standard_normal(n)
np.vstack([f, x]).astype("<f8").tofile(out + "/impact.bin")
limit = 0.9 * np.abs(x).max()
# the same as a float64 WAV for the command line: force at full scale 200 N,
# response at full scale limit/0.999 (mortise flags 0.999 of full scale)
resp_full = limit / 0.999
from scipy.io import wavfile  # noqa: E402
wavfile.write(out + "/impact.wav", int(fs), np.vstack([f / 200.0, x / resp_full]).T)

level, pre_s, length_s, frac, width, tau = 20.0, 0.01, 1.5, 0.1, 0.02, 0.3
L = int(round(length_s * fs))
pre = int(round(pre_s * fs))
wf = (np.arange(L) / fs < width).astype(float)
we = np.exp(-np.arange(L) / fs / tau)
found, used = [], []
i = 0
while True:
    above = np.nonzero(np.abs(f[i:]) >= level)[0]
    if len(above) == 0:
        break
    t = i + above[0]
    peak, k = abs(f[t]), t
    while k < n and abs(f[k]) >= frac * peak:
        peak = max(peak, abs(f[k]))
        k += 1
    start = t - pre
    end = start + L
    if start < 0 or end > n:
        i = max(k, t + 1)
        continue
    second = np.nonzero(np.abs(f[k:end]) >= frac * peak)[0]
    over = bool(np.any(np.abs(x[start:end]) >= limit))
    found.append({"trigger": int(t), "peak": float(peak),
                  "double_after_s": float(second[0] / fs + (k - t) / fs) if len(second) else None,
                  "overload": over})
    if len(second) == 0 and not over:
        used.append(start)
    i = end
F = np.array([np.fft.rfft(f[s:s + L] * wf * we) for s in used])
X = np.array([np.fft.rfft(x[s:s + L] * we) for s in used])
sfx = (np.conj(F) * X).sum(0)
sff = (np.abs(F) ** 2).sum(0)
sxx = (np.abs(X) ** 2).sum(0)
h1 = sfx / sff
coh = np.abs(sfx) ** 2 / (sff * sxx)
fr = np.fft.rfftfreq(L, 1 / fs)
_, ht = signal.freqz(b, a, worN=fr, fs=fs)
c = lambda z: {"re": np.real(z[1:]).tolist(), "im": np.imag(z[1:]).tolist()}
# energy spectral density, one-sided (DC and, L even, Nyquist once), the
# mean over the accepted records: 2|X|^2 dt^2; and each record's energy
# sum(x^2) dt (Parseval: the ESD integrates to it over df = fs / L)
dt = 1.0 / fs
one_sided = np.full(L // 2 + 1, 2.0)
one_sided[0] = 1.0
if L % 2 == 0:
    one_sided[-1] = 1.0
esd_f = (one_sided * np.abs(F) ** 2 * dt * dt).mean(0)
esd_x = (one_sided * np.abs(X) ** 2 * dt * dt).mean(0)
energy_f = float(np.mean([np.sum((f[s:s + L] * wf * we) ** 2) * dt for s in used]))
energy_x = float(np.mean([np.sum((x[s:s + L] * we) ** 2) * dt for s in used]))
print(json.dumps({"fs": fs, "n": n, "limit": limit, "resp_full": resp_full, "hits": found, "used": len(used),
                  "freqs": fr[1:].tolist(), "h1": c(h1), "coherence": coh[1:].tolist(), "true": c(ht),
                  "record": L, "esd_force": esd_f.tolist(), "esd_resp": esd_x.tolist(),
                  "energy_force": energy_f, "energy_resp": energy_x}))
