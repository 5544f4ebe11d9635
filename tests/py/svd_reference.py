"""Reference for blocked forces by truncated-SVD pseudo-inverse and for the
audit's 2-norm condition numbers: numpy.

Synthetic bench data in the invented demo setting (the heat-pump unit's
compressor frame on a test bench): 6 force DOFs at the frame's feet, 8
indicator accelerometers on the bench, accelerance FRFs. Per line k the
bench matrix is H_k = A0 * Q_k diag(s_k) W_k^H with Q_k (8 x 8) and W_k
(6 x 6) unitary (numpy QR of seeded complex Gaussian matrices, columns
multiplied by the phase of R's diagonal so the distribution does not depend
on LAPACK's sign choice) and chosen singular values s_k:

* "spread": s_k spread evenly in log from 1 down to 0.1 (condition 10);
* "clustered": three values near 1 and three near 0.03 (each times
  1 + 0.02 u, u uniform in [-1/2, 1/2)): the case where nalgebra 0.35's SVD
  with singular vectors goes wrong in the fourth digit on some lines.

The operational responses are y_k = H_k f0_k times (1 + 1e-3 complex
Gaussian noise), so the least-squares residual is not zero.

Written per case, for each relative threshold t: the forces
numpy.linalg.pinv(H_k, rtol=t) @ y_k (cross-checked against the explicit
sum over numpy.linalg.svd's values s >= t * s_max), the singular values
(numpy.linalg.svd) and how many are kept. Also, for the audit, square
6 x 6 sets built the same way with numpy.linalg.cond(A, 2) per line.
JSON: complex numbers as [re, im]; matrices [line][row][col].

usage: svd_reference.py OUTDIR
"""

import json
import sys

import numpy as np

A0 = 2.0e-3  # accelerance scale, (m/s^2)/N
NOISE = 1.0e-3
THRESHOLDS = {"spread": [0.0, 0.3], "clustered": [1e-3, 0.1]}


def unitary(rng, n):
    z = rng.standard_normal((n, n)) + 1j * rng.standard_normal((n, n))
    q, r = np.linalg.qr(z)
    d = np.diag(r)
    return q * (d / np.abs(d))


def values(case, rng, n):
    if case == "spread":
        return np.logspace(0.0, -1.0, n)
    big = np.ones(n // 2)
    small = np.full(n - n // 2, 0.03)
    s = np.concatenate([big, small])
    return s * (1.0 + 0.02 * (rng.random(n) - 0.5))


def matrices(case, rng, lines, m, n):
    out = []
    for _ in range(lines):
        s = values(case, rng, n)
        q = unitary(rng, m)
        w = unitary(rng, n)
        d = np.zeros((m, n))
        d[:n, :n] = np.diag(s)
        out.append(A0 * (q @ d @ w.conj().T))
    return np.array(out)


def pinv_solve(h, y, t):
    u, s, vh = np.linalg.svd(h, full_matrices=False)
    keep = (s >= t * s[0]) & (s > 0)
    f = vh[keep].conj().T @ ((u[:, keep].conj().T @ y) / s[keep])
    ref = np.linalg.pinv(h, rtol=t) @ y
    assert np.abs(f - ref).max() <= 1e-12 * np.abs(ref).max(), "pinv cross-check"
    return ref, int(keep.sum())


def c(a):
    a = np.asarray(a)
    return np.stack([a.real, a.imag], axis=-1).tolist()


def bench_case(case, seed, lines):
    rng = np.random.default_rng(seed)
    m, n = 8, 6
    freqs = np.linspace(20.0, 20.0 + 2.5 * (lines - 1), lines)
    H = matrices(case, rng, lines, m, n)
    kk = np.arange(lines)[:, None]
    f0 = (1.0 + 0.2 * np.arange(n)) * np.exp(1j * (0.7 * np.arange(n) + 0.05 * kk))
    y = np.einsum("kij,kj->ki", H, f0)
    y = y * (1.0 + NOISE * (rng.standard_normal(y.shape) + 1j * rng.standard_normal(y.shape)))
    refs = []
    for t in THRESHOLDS[case]:
        sol = [pinv_solve(H[k], y[k], t) for k in range(lines)]
        refs.append(
            {
                "t": t,
                "forces": c([s[0] for s in sol]),
                "kept": [s[1] for s in sol],
            }
        )
    return {
        "freqs": freqs.tolist(),
        "H": c(H),
        "y": c(y),
        "sv": np.linalg.svd(H, compute_uv=False).tolist(),
        "cond": np.linalg.cond(H, 2).tolist(),
        "solutions": refs,
    }


def audit_case(case, seed, lines):
    rng = np.random.default_rng(seed)
    A = matrices(case, rng, lines, 6, 6)
    return {
        "freqs": np.linspace(10.0, 10.0 + lines - 1.0, lines).tolist(),
        "A": c(A),
        "cond": np.linalg.cond(A, 2).tolist(),
    }


def main():
    out = sys.argv[1]
    doc = {
        "spread": bench_case("spread", 20261211, 60),
        "clustered": bench_case("clustered", 20261212, 200),
        "audit_clustered": audit_case("clustered", 20261213, 200),
        "audit_spread": audit_case("spread", 20261214, 60),
    }
    with open(f"{out}/svd_reference.json", "w") as f:
        json.dump(doc, f)
    print("numpy", np.__version__)


if __name__ == "__main__":
    main()
