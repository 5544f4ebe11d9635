"""Independent A and C weightings: the analog transfer functions built from
the IEC 61672-1:2013 pole frequencies, evaluated with scipy.signal.freqs_zpk
and normalised to 0 dB at 1 kHz. Prints JSON {"f": [...], "A": [...], "C": [...]}.
Usage: levels_weighting.py F1 F2 ..."""
import json
import sys

import numpy as np
from scipy import signal

f1, f2, f3, f4 = 20.598997, 107.65265, 737.86223, 12194.217
w = lambda f: 2 * np.pi * f

# A: four zeros at s = 0; poles at -w1 (double), -w2, -w3, -w4 (double)
za = [0, 0, 0, 0]
pa = [-w(f1), -w(f1), -w(f2), -w(f3), -w(f4), -w(f4)]
# C: two zeros at s = 0; poles at -w1 (double), -w4 (double)
zc = [0, 0]
pc = [-w(f1), -w(f1), -w(f4), -w(f4)]

freqs = np.array([float(a) for a in sys.argv[1:]] + [1000.0])


def db(z, p):
    _, h = signal.freqs_zpk(z, p, 1.0, worN=2 * np.pi * freqs)
    d = 20 * np.log10(np.abs(h))
    return d[:-1] - d[-1]


print(json.dumps({"f": freqs[:-1].tolist(), "A": db(za, pa).tolist(), "C": db(zc, pc).tolist()}))
