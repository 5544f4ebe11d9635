"""numpy side of the LM-FBS speed benchmark (examples/bench_couple.rs).

Builds the same component data as the Rust side from the same seed (a
counter-based splitmix64 generator, reproduced bit for bit with uint64
arithmetic), then times the LM-FBS formula
    Y_c = Y - Y B^T (B Y B^T)^-1 B Y
two ways:
- "matmul": stacked arrays, the block-diagonal Y, matmul with the signed
  Boolean B, batched np.linalg.solve;
- "indexed" (the strongest plain numpy we know): no Boolean matmul, the
  interface rows and columns taken by index (B Y = Y[a] - Y[b]), one batched
  solve, and the rank-m update written in place into the preallocated result
  in chunks of lines (no full-size temporary).
Also measured, for the machine's limit: the complex matrix-product rate
(OpenBLAS zgemm through numpy on large square matrices, best of 7: the
build machine is shared, and a low rate would make the limit look easy).
Writes every SAMPLE-th line of both results (complex128, little-endian,
line-major) for the Rust side to compare, and prints one JSON line with the
best wall-clock and CPU (all threads) times of each.

usage: bench_lmfbs.py OUTDIR LINES N_A N_B N_IF SEED REPS SAMPLE
"""

import json
import sys
import time

import numpy as np

M64 = np.uint64(0xFFFFFFFFFFFFFFFF)


def splitmix(x):
    # splitmix64 finaliser on uint64 arrays (wrapping arithmetic)
    with np.errstate(over="ignore"):
        z = x + np.uint64(0x9E3779B97F4A7C15)
        z = (z ^ (z >> np.uint64(30))) * np.uint64(0xBF58476D1CE4E5B9)
        z = (z ^ (z >> np.uint64(27))) * np.uint64(0x94D049BB133111EB)
        return z ^ (z >> np.uint64(31))


def unit(z):
    return (z >> np.uint64(11)).astype(np.float64) * 2.0**-53


def component(c, lines, n, seed):
    """Symmetric (reciprocal) receptance-like matrices per line."""
    i = np.arange(n, dtype=np.uint64)
    lo = np.minimum(i[:, None], i[None, :])
    hi = np.maximum(i[:, None], i[None, :])
    k = np.arange(lines, dtype=np.uint64)[:, None, None]
    idx = ((np.uint64(c) * np.uint64(lines) + k) * np.uint64(n) + lo[None]) * np.uint64(n) + hi[None]
    with np.errstate(over="ignore"):
        base = np.uint64(seed) + idx * np.uint64(2)
        re = unit(splitmix(base)) - 0.5
        im = unit(splitmix(base + np.uint64(1))) - 0.5
    y = re + 1j * im
    d = np.arange(n)
    y[:, d, d] += 2.0 - 1.0j
    return y * 1e-6


def main():
    out, lines, na, nb, nif, seed, reps, sample = sys.argv[1:9]
    lines, na, nb, nif, seed, reps, sample = map(int, (lines, na, nb, nif, seed, reps, sample))
    ya = component(0, lines, na, seed)
    yb = component(1, lines, nb, seed)
    n = na + nb
    # rigid joints: A's last nif DOFs to B's first nif DOFs; +1 on A, -1 on B
    B = np.zeros((nif, n))
    for r in range(nif):
        B[r, na - nif + r] = 1.0
        B[r, na + r] = -1.0
    # complex, C-contiguous operands so matmul hands every stacked product to BLAS
    B = B.astype(complex)
    Bt = np.ascontiguousarray(B.T)
    ia = np.arange(na - nif, na)
    ib = np.arange(na, na + nif)

    def matmul():
        Y = np.zeros((lines, n, n), complex)
        Y[:, :na, :na] = ya
        Y[:, na:, na:] = yb
        YBt = Y @ Bt
        BY = B @ Y
        Z = B @ YBt
        X = np.linalg.solve(Z, BY)
        Y -= YBt @ X
        return Y

    def indexed():
        Y = np.empty((lines, n, n), complex)
        Y[:, :na, :na] = ya
        Y[:, na:, na:] = yb
        Y[:, :na, na:] = 0
        Y[:, na:, :na] = 0
        BY = Y[:, ia, :] - Y[:, ib, :]
        YBt = Y[:, :, ia] - Y[:, :, ib]
        Z = BY[:, :, ia] - BY[:, :, ib]
        X = np.linalg.solve(Z, BY)
        step = 64
        for k in range(0, lines, step):
            Y[k : k + step] -= YBt[k : k + step] @ X[k : k + step]
        return Y

    res = {"numpy": np.__version__, "lines": lines, "dofs": n}
    for name, f in (("matmul", matmul), ("indexed", indexed)):
        best = float("inf")
        best_cpu = float("inf")
        yc = None
        for _ in range(reps):
            yc = None
            t0 = time.perf_counter()
            c0 = time.process_time()
            yc = f()
            best = min(best, time.perf_counter() - t0)
            best_cpu = min(best_cpu, time.process_time() - c0)
        np.ascontiguousarray(yc[::sample]).astype("<c16").tofile(f"{out}/numpy_{name}_samples.bin")
        res[name] = {"seconds": best, "cpu_seconds": best_cpu}
        yc = None
    # complex matrix-product rate: 8 real flops per complex multiply-add
    m = 1024
    rng = np.random.default_rng(1)
    a = rng.standard_normal((m, m)) + 1j * rng.standard_normal((m, m))
    b = rng.standard_normal((m, m)) + 1j * rng.standard_normal((m, m))
    t = float("inf")
    for _ in range(7):
        t0 = time.perf_counter()
        a @ b
        t = min(t, time.perf_counter() - t0)
    res["zgemm_gflops"] = 8.0 * m**3 / t / 1e9
    print(json.dumps(res))


if __name__ == "__main__":
    main()
