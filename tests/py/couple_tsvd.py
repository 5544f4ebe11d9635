"""Reference for the truncated-SVD tests of LM-FBS: numpy.

Two scenarios from the invented demo setting (a wall bracket of a heat-pump
outdoor unit, measured on a test rig):

* "extended": the bracket was measured mounted on a rig; the rig is removed
  again (decoupling) with an extended interface: compatibility at the joint
  DOF and at the rig's two internal DOFs, three constraints where the joint
  needs one. The FRFs of the mounted assembly and of the rig carry a small
  multiplicative measurement noise (relative size NOISE, seeded). Written:
  the exact bracket (numpy inverse of its K - w^2 M + i w C per line) and the
  LM-FBS result with a truncated-SVD pseudo-inverse of the interface matrix.
* "redundant": three parts rigidly joined at one point pairwise (P-Q, Q-R and
  P-R: the third constraint repeats the other two), coupled with a
  truncated-SVD pseudo-inverse.

Tikhonov: (Z^H Z + lam^2 I)^-1 Z^H with lam = x * s_max, by numpy.linalg.solve.

The pseudo-inverse is numpy.linalg.svd with the singular values below
t * s_max dropped (the same rule as mortise); the script checks it against
numpy.linalg.pinv(Z, rtol=t). Y - Y B^T Z^+ B Y is then formed with numpy
matmul on the same float64 data that the JSON carries. Time convention
e^{+iwt}; receptance; JSON re/im frequency-major.

usage: couple_tsvd.py OUTDIR
"""

import json
import sys

import numpy as np

FREQS = np.linspace(5.0, 300.0, 60)
W = 2 * np.pi * FREQS
NOISE = 1e-12
THRESHOLDS = {"extended": [1e-6], "redundant": [1e-9, 0.15]}
# Tikhonov lambda as a fraction of the largest singular value
TIKHONOV = {"extended": [1e-4, 1e-3], "redundant": [1e-6, 0.1]}
# (on the extended interface the result is sensitive to λ below 1e-4: two
# numpy routes, lstsq and the SVD, differ by 5e-8 at 1e-5 and 4e-6 at 1e-6)


def springs(n, pairs):
    """Stiffness-like matrix from (i, j, value); j = None grounds i."""
    A = np.zeros((n, n))
    for i, j, v in pairs:
        A[i, i] += v
        if j is not None:
            A[j, j] += v
            A[i, j] -= v
            A[j, i] -= v
    return A


def receptance(M, K, C):
    D = K[None] - (W**2)[:, None, None] * M[None] + 1j * W[:, None, None] * C[None]
    return np.linalg.inv(D)


def set_json(name, labels, R):
    return {
        "name": name,
        "kind": "receptance",
        "outputs": labels,
        "inputs": labels,
        "re": R.real.ravel().tolist(),
        "im": R.imag.ravel().tolist(),
    }


def noisy(R, rng):
    e = rng.standard_normal(R.shape) + 1j * rng.standard_normal(R.shape)
    return R * (1.0 + NOISE * e)


def pinv_cut(Z, t):
    """Truncated-SVD pseudo-inverse: drop s < t * s_max (numpy.linalg.svd)."""
    u, s, vh = np.linalg.svd(Z)
    keep = (s >= t * s[0]) & (s > 0)
    P = (vh[keep].conj().T / s[keep]) @ u[:, keep].conj().T
    ref = np.linalg.pinv(Z, rtol=t)
    assert np.abs(P - ref).max() <= 1e-10 * np.abs(ref).max(), "pinv cross-check"
    return P, int((~keep).sum())


def tikhonov_inv(Z, x):
    """Tikhonov's damped inverse (Z^H Z + lam^2 I)^-1 Z^H, lam = x * s_max,
    as the least-squares solution of [Z; lam I] P = [I; 0]
    (numpy.linalg.lstsq: the normal equations' minimiser without squaring
    the condition number, and not from mortise's SVD route)."""
    lam = x * np.linalg.svd(Z, compute_uv=False)[0]
    m = Z.shape[0]
    A = np.vstack([Z, lam * np.eye(m)])
    rhs = np.vstack([np.eye(m), np.zeros((m, m))])
    P = np.linalg.lstsq(A, rhs, rcond=None)[0]
    return P, 0


def lmfbs(blocks, labels, joints, t, inv=None):
    """Y - Y B^T pinv(B Y B^T) B Y over the block diagonal of `blocks`
    (lists of (n_l, n, n) arrays, labels per block); joints: (a, b) labels."""
    allv = [l for ls in labels for l in ls]
    n = len(allv)
    Y = np.zeros((len(W), n, n), complex)
    o = 0
    for blk in blocks:
        k = blk.shape[1]
        Y[:, o : o + k, o : o + k] = blk
        o += k
    B = np.zeros((len(joints), n))
    for r, (a, b) in enumerate(joints):
        B[r, allv.index(a)] = 1.0
        B[r, allv.index(b)] = -1.0
    out = np.empty_like(Y)
    dropped = []
    for l in range(len(W)):
        Z = B @ Y[l] @ B.T
        P, d = (inv or pinv_cut)(Z, t)
        out[l] = Y[l] - Y[l] @ B.T @ P @ B @ Y[l]
        dropped.append(d)
    return out, dropped


def extended():
    rng = np.random.default_rng(20261203)
    # bracket: three masses along Z, bolted to the wall (grounded) at node 1
    Mb = np.diag([1.4, 0.9, 0.6])
    Kb = springs(3, [(0, None, 8.0e5), (0, 1, 3.0e5), (1, 2, 2.2e5)])
    Cb = 2.0e-5 * Kb + springs(3, [(2, None, 6.0)])
    # test rig: three masses, its node 1 holds the bracket's node 3, node 3
    # stands on the floor through a soft mount
    Mr = np.diag([2.5, 4.0, 6.0])
    Kr = springs(3, [(0, 1, 5.0e5), (1, 2, 4.0e5), (2, None, 6.0e4)])
    Cr = springs(3, [(0, 1, 40.0), (2, None, 90.0)])
    # mounted: global DOFs bracket 1, 2, 3 = rig 1, rig 2, rig 3
    n = 5
    L_b = np.zeros((3, n))
    L_r = np.zeros((3, n))
    for i in range(3):
        L_b[i, i] = 1.0
        L_r[i, 2 + i] = 1.0
    M = L_b.T @ Mb @ L_b + L_r.T @ Mr @ L_r
    K = L_b.T @ Kb @ L_b + L_r.T @ Kr @ L_r
    C = L_b.T @ Cb @ L_b + L_r.T @ Cr @ L_r
    mounted = noisy(receptance(M, K, C), rng)
    rig = noisy(receptance(Mr, Kr, Cr), rng)
    bracket = receptance(Mb, Kb, Cb)
    lm = [f"mounted:{k}+Z" for k in range(1, 6)]
    lr = [f"rig:{k}+Z" for k in range(1, 4)]
    joints = [(lm[2], lr[0]), (lm[3], lr[1]), (lm[4], lr[2])]
    refs = []
    for t in THRESHOLDS["extended"]:
        Yd, dropped = lmfbs([mounted, -rig], [lm, lr], joints, t)
        refs.append({"t": t, "result": set_json("pinv", lm, Yd[:, :5, :5]), "dropped": dropped})
    tik = []
    for x in TIKHONOV["extended"]:
        Yd, _ = lmfbs([mounted, -rig], [lm, lr], joints, x, tikhonov_inv)
        tik.append({"x": x, "result": set_json("tikhonov", lm, Yd[:, :5, :5])})
    return {
        "tikhonov": tik,
        "assembly": set_json("mounted", lm, mounted),
        "removed": set_json("rig", lr, rig),
        "joints": [{"a": a, "b": b, "kind": {"type": "rigid"}} for a, b in joints],
        "exact": set_json("bracket", lm[:3], bracket),
        "pinv": refs,
    }


def redundant():
    def part(name, m, k):
        M = np.diag(m)
        K = springs(2, [(0, 1, k), (1, None, 0.5 * k)])
        C = 1.0e-5 * K
        return [f"{name}:1+Z", f"{name}:2+Z"], receptance(M, K, C)

    lp, yp = part("P", [1.0, 2.0], 3.0e5)
    lq, yq = part("Q", [0.7, 1.6], 2.0e5)
    lr, yr = part("R", [1.2, 0.8], 4.0e5)
    joints = [(lp[0], lq[0]), (lq[0], lr[0]), (lp[0], lr[0])]
    refs = []
    for t in THRESHOLDS["redundant"]:
        Yc, dropped = lmfbs([yp, yq, yr], [lp, lq, lr], joints, t)
        refs.append({"t": t, "result": set_json("pinv", lp + lq + lr, Yc), "dropped": dropped})
    tik = []
    for x in TIKHONOV["redundant"]:
        Yc, _ = lmfbs([yp, yq, yr], [lp, lq, lr], joints, x, tikhonov_inv)
        tik.append({"x": x, "result": set_json("tikhonov", lp + lq + lr, Yc)})
    return {
        "tikhonov": tik,
        "components": [set_json("P", lp, yp), set_json("Q", lq, yq), set_json("R", lr, yr)],
        "joints": [{"a": a, "b": b, "kind": {"type": "rigid"}} for a, b in joints],
        "pinv": refs,
    }


def main():
    out = sys.argv[1]
    for name, s in (("extended", extended()), ("redundant", redundant())):
        s["freqs"] = FREQS.tolist()
        with open(f"{out}/{name}.json", "w") as f:
            json.dump(s, f)
    print("numpy", np.__version__)


if __name__ == "__main__":
    main()
