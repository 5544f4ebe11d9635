"""Reference calculations for the synthesis tests (numpy / scipy).

usage: synth_ref.py direct IN.json   -> {"eig_hz": [...], "h": [[re, im], ...]}
       synth_ref.py eigh IN.json     -> {"eig_hz": [...], "phi": [[...], ...]}

IN.json holds "m", "k" (row-major lists of lists), optional "c", "kh" and
"freqs" (Hz). "direct" solves (K + iKh - w^2 M + iwC) H = I with
numpy.linalg.inv per line (frequency-major, row-major entries) and gives the
natural frequencies from scipy.linalg.eig(K, M). "eigh" gives the
generalized symmetric eigenpairs of scipy.linalg.eigh(K, M), shapes
mass-normalised (columns of phi).
"""
import json
import sys

import numpy as np
import scipy.linalg

mode, path = sys.argv[1], sys.argv[2]
with open(path) as f:
    d = json.load(f)
M = np.array(d["m"], dtype=float)
K = np.array(d["k"], dtype=float)
n = M.shape[0]
C = np.array(d.get("c", np.zeros((n, n))), dtype=float)
KH = np.array(d.get("kh", np.zeros((n, n))), dtype=float)

if mode == "direct":
    lam = scipy.linalg.eig(K, M, right=False)
    lam = np.sort(np.real(lam))
    eig_hz = [float(np.sqrt(max(x, 0.0)) / (2 * np.pi)) for x in lam]
    out = []
    for f in d["freqs"]:
        w = 2 * np.pi * f
        Z = K + 1j * KH - w * w * M + 1j * w * C
        H = np.linalg.inv(Z)
        out.extend([[float(v.real), float(v.imag)] for v in H.reshape(-1)])
    print(json.dumps({"eig_hz": eig_hz, "h": out}))
elif mode == "eigh":
    lam, phi = scipy.linalg.eigh(K, M)
    eig_hz = [float(np.sqrt(max(x, 0.0)) / (2 * np.pi)) for x in lam]
    print(json.dumps({"eig_hz": eig_hz, "phi": phi.tolist()}))
else:
    sys.exit("unknown mode " + mode)
