"""A hammer test as a WAV file, for the page's impact records
(tests/e2e/timedata.test.mjs) and tests/workspace_time.rs.

fs = 2048 Hz, 14 s, two channels: the hammer's force at bracket:1+Z and the
acceleration at bracket:5+Z of a single-DOF system (m = 1.2 kg, fn = 80 Hz,
damping ratio 0.02), acceleration / force = s^2 / (m s^2 + c s + k),
simulated by scipy.signal.lsim (exact for a force linear between samples).
Half-sine pulses of 3 ms hit at 1, 3, 5, 7, 9 and 11 s; the hit at 5 s has a
second pulse 10 ms after it at 45 % of its peak (a double hit); the hit at
9 s is the strongest, and the response's full scale is set so that only its
record reaches 0.999 of it (an overload). Seeded noise on both channels.
Written by scipy.io.wavfile as 32-bit float, sample value 1.0 being the
stated full scale of each channel.

Prints JSON: the channel descriptions (full scales as written), the
settings, each hit's expected verdict by construction, and the exact
accelerance seen through the exponential window exp(-t/tau): the Laplace
transfer function at s = 1/tau + i 2 pi f (the shift theorem; force and
response both windowed), on the records' 1 Hz lines. Usage:
hammer_wav.py OUT.wav"""
import json
import sys

import numpy as np
from scipy import signal
from scipy.io import wavfile

out = sys.argv[1]
fs = 2048.0
n = int(14 * fs)
t = np.arange(n) / fs
m, fn, zeta = 1.2, 80.0, 0.02
k = m * (2 * np.pi * fn) ** 2
c = 2 * zeta * np.sqrt(k * m)
f = np.zeros(n)
width = int(round(0.003 * fs))  # samples of the half sine
pulse = np.sin(np.pi * np.arange(width + 1) / width)
hits = [(1.0, 100.0), (3.0, 90.0), (5.0, 110.0), (7.0, 95.0), (9.0, 170.0), (11.0, 105.0)]
for at, peak in hits:
    i = int(at * fs)
    f[i:i + width + 1] += peak * pulse
    if at == 5.0:
        j = i + int(round(0.010 * fs))
        f[j:j + width + 1] += 0.45 * peak * pulse
_, a, _ = signal.lsim(([1.0, 0.0, 0.0], [m, c, k]), f, t)
rng = np.random.default_rng(20261203)
f = f + 0.05 * rng.standard_normal(n)
a = a + 0.02 * rng.standard_normal(n)
force_full = 200.0
# the overload limit is 0.999 x full scale: only the 9 s record reaches it
strongest = np.abs(a[int(8.9 * fs):int(10 * fs)]).max()
others = max(np.abs(a[int((h - 0.1) * fs):int((h + 0.9) * fs)]).max() for h, _ in hits if h != 9.0)
limit = 0.5 * (strongest + others)
acc_full = limit / 0.999
data = np.vstack([f / force_full, a / acc_full]).T.astype(np.float32)
wavfile.write(out, int(fs), data)
tau = 0.3
freqs = np.arange(1, 1024) * 1.0
s = 1.0 / tau + 2j * np.pi * freqs
exact = s * s / (m * s * s + c * s + k)
print(json.dumps({
    "freqs": freqs.tolist(), "exact_re": exact.real.tolist(), "exact_im": exact.imag.tolist(),
    "channels": [f"1=bracket:1+Z force {float(force_full)!r} N", f"2=bracket:5+Z acceleration {float(acc_full)!r} m/s^2"],
    "input": "bracket:1+Z",
    "trigger": 20.0, "record_length": 1.0, "pre_trigger": 0.01, "force_width": 0.02, "decay": tau,
    "hits": [{"at_s": h, "verdict": "double hit" if h == 5.0 else "overload" if h == 9.0 else "accepted"} for h, _ in hits],
}))
