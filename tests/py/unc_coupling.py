"""Reference for the uncertainty propagation tests: numpy Monte Carlo of
LM-FBS coupling with the same seeded draws as mortise.

Cases (lumped mass-spring-damper parts, time convention e^{+iwt}, FRFs by
inverting K - w^2 M + i w C per line): "rigid" (a grounded 3-mass chain A in
accelerance and a free 2-mass chain B given as receptance, one rigid joint),
"flexible" (both accelerance, a spring-damper joint), "three" (A grounded, B
and C free, two rigid joints). Grid 1..400 Hz, step 1 Hz.

Input uncertainty per value: "small" u = 0.01 |H| (1 % relative); "supplier"
u = hypot(0.01 |H|, 1e-3 P / w^(2 - order)) (1 % plus a floor 60 dB below
each FRF's accelerance peak P = max_k |H| w^(2 - order)). The Monte Carlo perturbs each input value by u/sqrt(2) (z_re + i z_im),
(z_re, z_im) the Box-Muller pair of two splitmix64 uniforms: pair number
d*T + o_c + v for draw d, input c (offset o_c, T values in all), value v in
line-major (line, output, input) order; seed 2026, 400 draws. The coupled
result Y - Y B^T (B Y B^T + G)^-1 B Y is formed per line with
numpy.linalg.solve; written: the inputs, the uncertainties, the noise-free
coupled result and the Monte Carlo standard deviation sqrt(var re + var im)
(ddof 1) of every result value.

usage: unc_coupling.py OUTDIR
"""

import json
import sys

import numpy as np

FREQS = np.arange(1.0, 401.0, 1.0)
W = 2 * np.pi * FREQS
SEED = 2026
DRAWS = 400
GOLD = np.uint64(0x9E3779B97F4A7C15)


def uniform(seed, n):
    """splitmix64 output of state seed + (n + 1) * GOLD, top 53 bits / 2^53."""
    z = np.uint64(seed) + (n + np.uint64(1)) * GOLD
    z = (z ^ (z >> np.uint64(30))) * np.uint64(0xBF58476D1CE4E5B9)
    z = (z ^ (z >> np.uint64(27))) * np.uint64(0x94D049BB133111EB)
    z = z ^ (z >> np.uint64(31))
    return (z >> np.uint64(11)).astype(np.float64) / 2.0**53


def normal_pairs(seed, idx):
    u1 = uniform(seed, idx * np.uint64(2))
    u2 = uniform(seed, idx * np.uint64(2) + np.uint64(1))
    r = np.sqrt(-2.0 * np.log(1.0 - u1))
    t = 2.0 * np.pi * u2
    return r * np.cos(t) + 1j * r * np.sin(t)


def springs(n, pairs):
    A = np.zeros((n, n))
    for i, j, v in pairs:
        A[i, i] += v
        if j is not None:
            A[j, j] += v
            A[i, j] -= v
            A[j, i] -= v
    return A


def frf(M, K, C, order):
    D = K[None] - (W**2)[:, None, None] * M[None] + 1j * W[:, None, None] * C[None]
    return np.linalg.inv(D) * ((1j * W) ** order)[:, None, None]


KIND = {0: "receptance", 2: "accelerance"}


def part(name, n, M, K, C, order):
    labels = [f"{name}:{k + 1}+X" for k in range(n)]
    return {"name": name, "labels": labels, "order": order, "H": frf(M, K, C, order)}


def chain_a():
    M = np.diag([2.0, 1.5, 1.2])
    K = springs(3, [(0, None, 4.0e5), (0, 1, 2.5e5), (1, 2, 3.0e5)])
    C = 1.0e-5 * K + springs(3, [(1, None, 12.0)])
    return M, K, C


def chain_b():
    M = np.diag([0.8, 1.1])
    K = springs(2, [(0, 1, 1.8e5)])
    C = springs(2, [(0, 1, 9.0)])
    return M, K, C


def chain_c():
    M = np.diag([0.5, 0.9])
    K = springs(2, [(0, 1, 2.6e5)])
    C = springs(2, [(0, 1, 5.0)])
    return M, K, C


def couple(parts, joints):
    """Accelerance (the first part's kind) coupled result, all DOFs."""
    Hs = []
    for p in parts:
        H = p["H"] * ((1j * W) ** (2 - p["order"]))[:, None, None]
        Hs.append(H)
    n = sum(H.shape[1] for H in Hs)
    Y = np.zeros((len(W), n, n), complex)
    labels, o = [], 0
    for p, H in zip(parts, Hs):
        k = H.shape[1]
        Y[:, o:o + k, o:o + k] = H
        labels += p["labels"]
        o += k
    B = np.zeros((len(joints), n))
    G = np.zeros((len(W), len(joints), len(joints)), complex)
    for r, j in enumerate(joints):
        B[r, labels.index(j["a"])] = 1.0
        B[r, labels.index(j["b"])] = -1.0
        kind = j["kind"]
        if kind["type"] == "spring-damper":
            Kd = kind["k"] * (1 + 1j * kind["eta"]) + 1j * W * kind["c"]
            G[:, r, r] = -(W**2) / Kd
    Z = B[None] @ Y @ B.T[None] + G
    X = np.linalg.solve(Z, B[None] @ Y)
    return Y - (Y @ B.T[None]) @ X


def uncertainties(H, order):
    small = 0.01 * np.abs(H)
    to_acc = (W ** (2 - order))[:, None, None]
    peak = (np.abs(H) * to_acc).max(axis=0)
    supplier = np.hypot(0.01 * np.abs(H), 1e-3 * peak[None] / to_acc)
    return small, supplier


def case(parts, joints):
    truth = couple(parts, joints)
    smalls = [uncertainties(p["H"], p["order"])[0] for p in parts]
    total = sum(p["H"].size for p in parts)
    res = []
    for d in range(DRAWS):
        off = d * total
        drawn = []
        for p, u in zip(parts, smalls):
            idx = np.arange(off, off + p["H"].size, dtype=np.uint64)
            z = normal_pairs(SEED, idx).reshape(p["H"].shape)
            drawn.append(dict(p, H=p["H"] + z * u / np.sqrt(2.0)))
            off += p["H"].size
        res.append(couple(drawn, joints))
    res = np.array(res)
    std = np.sqrt(res.real.var(axis=0, ddof=1) + res.imag.var(axis=0, ddof=1))
    comps = []
    for p in parts:
        small, supplier = uncertainties(p["H"], p["order"])
        comps.append({
            "name": p["name"],
            "kind": KIND[p["order"]],
            "outputs": p["labels"],
            "inputs": p["labels"],
            "re": p["H"].real.ravel().tolist(),
            "im": p["H"].imag.ravel().tolist(),
            "u_small": small.ravel().tolist(),
            "u_supplier": supplier.ravel().tolist(),
        })
    return {
        "freqs": FREQS.tolist(),
        "components": comps,
        "joints": joints,
        "seed": SEED,
        "draws": DRAWS,
        "truth_re": truth.real.ravel().tolist(),
        "truth_im": truth.imag.ravel().tolist(),
        "mc_std": std.ravel().tolist(),
    }


def main():
    out = sys.argv[1]
    A, B, C = chain_a(), chain_b(), chain_c()
    rigid = {"type": "rigid"}
    cases = {
        "rigid": case(
            [part("A", 3, *A, 2), part("B", 2, *B, 0)],
            [{"a": "A:3+X", "b": "B:1+X", "kind": rigid}],
        ),
        "flexible": case(
            [part("A", 3, *A, 2), part("B", 2, *B, 2)],
            [{"a": "A:3+X", "b": "B:1+X",
              "kind": {"type": "spring-damper", "k": 6.0e4, "c": 35.0, "eta": 0.0}}],
        ),
        "three": case(
            [part("A", 3, *A, 2), part("B", 2, *B, 2), part("C", 2, *C, 2)],
            [{"a": "A:3+X", "b": "B:1+X", "kind": rigid},
             {"a": "B:2+X", "b": "C:1+X", "kind": rigid}],
        ),
    }
    for name, c in cases.items():
        with open(f"{out}/{name}.json", "w") as f:
            json.dump(c, f)
    print(" ".join(cases))


if __name__ == "__main__":
    main()
