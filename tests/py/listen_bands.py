"""Band levels of a WAV made by `mortise listen`, independently: the file read
by scipy.io.wavfile, scaled by its full-scale pressure, its PSD by
scipy.signal.welch (rectangular 1 s segments), integrated over base-ten 1/3-octave
bands (IEC 61260-1: f_m = 1000 * 10^(k/10), edges f_m * 10^(+-1/20)).
Prints JSON {"bands": {k: level dB re 20 uPa}, "peaks": [Hz of the largest PSD bins]}.
Usage: listen_bands.py WAV FULL_SCALE_PA N_PEAKS"""
import json
import sys

import numpy as np
from scipy import signal
from scipy.io import wavfile

path, full, npk = sys.argv[1], float(sys.argv[2]), int(sys.argv[3])
rate, x = wavfile.read(path)
assert x.dtype == np.float32, x.dtype
p = x.astype(np.float64) * full
# the sound repeats every second (lines on a 1 Hz grid): 1 s rectangular
# segments see whole periods, so the DFT is exact and free of leakage
f, psd = signal.welch(p, fs=rate, window="boxcar", nperseg=rate, noverlap=0, scaling="density")
df = f[1] - f[0]
bands = {}
for k in range(-20, 14):
    fm = 1000 * 10 ** (k / 10)
    lo, hi = fm * 10 ** (-1 / 20), fm * 10 ** (1 / 20)
    ms = psd[(f >= lo) & (f < hi)].sum() * df
    if ms > 0:
        bands[k] = 10 * np.log10(ms / (20e-6) ** 2)
# local maxima of the PSD, largest first
is_peak = np.r_[False, (psd[1:-1] > psd[:-2]) & (psd[1:-1] >= psd[2:]), False]
order = np.argsort(psd[is_peak])[::-1][:npk]
peaks = sorted(f[is_peak][order].tolist())
print(json.dumps({"bands": bands, "peaks": peaks}))
