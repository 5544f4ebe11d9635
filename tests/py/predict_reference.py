"""Independent reference for operational prediction and blocked forces.

A five-mass chain with one cross spring (invented test structure) is assembled from M, K, C with
numpy and its receptance H = (K - w^2 M + i w C)^-1 is inverted per line
(time convention e^{+i w t}). Prints JSON with:
  H            receptance, [line][out][in] as [re, im]
  f            complex RMS forces at DOFs 0, 1, 2, [line][dof]
  y            y = H[:, :, 0:3] @ f (numpy matrix product)
  y_ms         incoherent sum |H|^2 @ |f|^2
  bench_f      forces from numpy.linalg.pinv(Hb, rcond) @ y_ind, where Hb =
               H[ind][:, 0:2], ind = DOFs 2, 3, 4, y_ind = H[ind][:, 0:2] @ f0 + noise
  bench_sv     numpy.linalg.svd singular values of Hb per line
  cond         numpy.linalg.cond (2-norm) of the full 5x5 receptance per line
Usage: predict_reference.py RCOND NOISE"""
import json
import sys

import numpy as np

rcond = float(sys.argv[1])
noise = float(sys.argv[2])
freqs = np.arange(5.0, 201.0, 5.0)
m = np.diag([2.0, 1.5, 1.0, 1.2, 0.8])
ks = [2.0e4, 1.0e4, 1.5e4, 8.0e3, 1.2e4]  # ground-0, 0-1, 1-2, 2-3, 3-4
K = np.zeros((5, 5))
K[0, 0] += ks[0]
for i in range(4):
    k = ks[i + 1]
    K[i, i] += k
    K[i + 1, i + 1] += k
    K[i, i + 1] -= k
    K[i + 1, i] -= k
# a cross spring 0-3, so forces at DOFs 0 and 1 reach the far DOFs by two routes
K[0, 0] += 7.0e3
K[3, 3] += 7.0e3
K[0, 3] -= 7.0e3
K[3, 0] -= 7.0e3
C = 0.5 * m + 1.0e-4 * K

H = []
for f in freqs:
    w = 2 * np.pi * f
    H.append(np.linalg.inv(K - w * w * m + 1j * w * C))
H = np.array(H)

kk = np.arange(len(freqs))
F = np.stack([(1 + j) * np.exp(1j * (0.3 * j + 0.01 * kk)) for j in range(3)], axis=1)
y = np.einsum("kij,kj->ki", H[:, :, 0:3], F)
y_ms = np.einsum("kij,kj->ki", np.abs(H[:, :, 0:3]) ** 2, np.abs(F) ** 2)

ind = [2, 3, 4]
F0 = np.stack([np.full(len(freqs), 3.0 + 1.0j), 2.0 * np.exp(0.02j * kk)], axis=1)
rng = np.random.default_rng(7)
bench_y = []
bench_f = []
bench_sv = []
val_y = []
for k in range(len(freqs)):
    hb = H[k][np.ix_(ind, [0, 1])]
    yk = hb @ F0[k]
    yk = yk * (1 + noise * (rng.standard_normal(3) + 1j * rng.standard_normal(3)))
    bench_y.append(yk)
    bench_f.append(np.linalg.pinv(hb, rcond=rcond) @ yk)
    bench_sv.append(np.linalg.svd(hb, compute_uv=False))
    val_y.append(H[k][1, 0:2] @ F0[k])


def c(a):
    a = np.asarray(a)
    return np.stack([a.real, a.imag], axis=-1).tolist()


print(
    json.dumps(
        {
            "freqs": freqs.tolist(),
            "H": c(H),
            "f": c(F),
            "y": c(y),
            "y_ms": y_ms.tolist(),
            "F0": c(F0),
            "bench_y": c(bench_y),
            "bench_f": c(bench_f),
            "bench_sv": np.array(bench_sv).tolist(),
            "val_y": c(val_y),
            "cond": [float(np.linalg.cond(h)) for h in H],
        }
    )
)
