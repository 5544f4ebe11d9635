"""A three-channel WAV for the time-data tests of the workspace and the page,
written by Python's wave module (16-bit PCM): channel 1 a sine of known
amplitude and frequency (a microphone, full scale 20 Pa), channel 2 a seeded
random force (full scale 100 N), channel 3 the force through a single-DOF
filter (fn 150 Hz, damping ratio 0.05, bilinear; full scale 50 m/s^2) with a
little noise. Prints JSON: rate, sine frequency and amplitude (Pa, after the
16-bit rounding of the written peak), full scales, and scipy.signal's
coherence between channels 2 and 3 as read back (hann, nperseg 1024,
noverlap 512, detrend False).
Usage: sine_wav.py OUT.wav"""
import json
import sys
import wave

import numpy as np
from scipy import signal

out = sys.argv[1]
fs = 8192
n = fs * 8
f_sine = 1000.37
amp_rel = 0.5
full = np.array([20.0, 100.0, 50.0])
t = np.arange(n) / fs
rng = np.random.default_rng(17)
x1 = amp_rel * np.sin(2 * np.pi * f_sine * t)
force = 0.2 * rng.standard_normal(n)
w = 2 * np.pi * 150.0
b, a = signal.bilinear([w * w], [1.0, 2 * 0.05 * w, w * w], fs)
resp = signal.lfilter(b, a, force) * 0.3 + 0.002 * rng.standard_normal(n)
x = np.vstack([x1, np.clip(force, -0.99, 0.99), np.clip(resp, -0.99, 0.99)]).T
ints = np.round(x * 32767).astype("<i2")
with wave.open(out, "wb") as wf:
    wf.setnchannels(3)
    wf.setsampwidth(2)
    wf.setframerate(fs)
    wf.writeframes(ints.tobytes())
# read back as a WAV reader scales 16-bit PCM: v / 2^15
with wave.open(out, "rb") as wf:
    back = np.frombuffer(wf.readframes(wf.getnframes()), dtype="<i2").reshape(-1, 3) / 32768.0
si = back * full
_, coh = signal.coherence(si[:, 1], si[:, 2], fs=fs, window="hann", nperseg=1024, noverlap=512, detrend=False)
print(json.dumps({
    "rate": fs,
    "frames": n,
    "f_sine": f_sine,
    # the sine's written amplitude in Pa: 0.5 * 32767 counts, read as counts / 32768
    "amplitude_pa": float(amp_rel * 32767 / 32768.0 * full[0]),
    "full_scale": full.tolist(),
    "coherence_23": coh[1:].tolist(),
}))
