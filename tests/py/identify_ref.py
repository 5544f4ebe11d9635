"""Reference FRFs for the modal identification tests (numpy).

usage: identify_ref.py modal NOISE SEED   -> known modal model, its FRFs (accelerance)
       identify_ref.py beam               -> free-free Euler-Bernoulli beam FE, receptance
       identify_ref.py couple NOISE SEED  -> two mass-spring parts, their FRFs and the
                                             direct assembly (receptance)
       identify_ref.py eig N SEED         -> a seeded random real N x N matrix and its
                                             eigenvalues (numpy.linalg.eigvals)

Complex values are written as [re, im]; FRFs are frequency-major lists of
n_out x n_in row-major matrices. Time convention e^{+iwt}: receptance
H = 1/(k - w^2 m + i w c). Noise is complex Gaussian, proportional to each
value: H (1 + NOISE (n1 + i n2)/sqrt(2)), seeded with numpy's default_rng(SEED).
"""
import json
import sys

import numpy as np


def cx(a):
    return [[float(v.real), float(v.imag)] for v in np.asarray(a).reshape(-1)]


def modal():
    noise, seed = float(sys.argv[2]), int(sys.argv[3])
    # six modes, 1-3 % damping, 118 and 120.36 Hz 2 % apart
    fr = np.array([42.0, 77.0, 118.0, 118.0 * 1.02, 165.0, 212.0])
    zeta = np.array([0.015, 0.02, 0.01, 0.012, 0.03, 0.018])
    # real shapes at 3 DOFs (mass-normalised, kg^-1/2)
    phi = np.array([
        [0.9, 0.5, -0.7, 0.4, 0.8, -0.3],
        [0.4, -0.8, 0.6, 0.9, -0.5, 0.7],
        [-0.6, 0.7, 0.5, -0.6, 0.3, 0.9],
    ])
    outs, ins = [0, 1, 2], [0, 1]
    # residual stiffness K (N/m) and mass M (kg) per DOF pair (symmetric)
    kres = np.array([[4e6, 9e6, 7e6], [9e6, 5e6, 8e6], [7e6, 8e6, 6e6]])
    mres = np.array([[30.0, 60.0, 50.0], [60.0, 35.0, 55.0], [50.0, 55.0, 40.0]])
    f = np.arange(30.0, 250.0 + 1e-9, 0.25)
    w = 2 * np.pi * f
    wr = 2 * np.pi * fr
    H = np.zeros((len(f), 3, 2), dtype=complex)
    G = np.zeros((len(f), 3, 2), dtype=complex)  # the six modes alone
    for a, o in enumerate(outs):
        for b, i in enumerate(ins):
            g = np.zeros(len(f), dtype=complex)
            for r in range(6):
                g += phi[o, r] * phi[i, r] / (wr[r] ** 2 - w ** 2 + 2j * zeta[r] * wr[r] * w)
            G[:, a, b] = g
            g += 1.0 / kres[o, i] - 1.0 / (w ** 2 * mres[o, i])
            H[:, a, b] = g
    A = -(w ** 2)[:, None, None] * H  # accelerance
    rng = np.random.default_rng(seed)
    n = (rng.standard_normal(A.shape) + 1j * rng.standard_normal(A.shape)) / np.sqrt(2)
    An = A * (1 + noise * n)
    print(json.dumps({
        "freqs": f.tolist(), "fr": fr.tolist(), "zeta": zeta.tolist(),
        "phi": phi.tolist(), "clean": cx(A), "noisy": cx(An),
        "modes_only": cx(-(w ** 2)[:, None, None] * G),
    }))


def beam():
    # steel strip 1.2 m x 40 mm x 10 mm, bending about the weak axis, free-free
    L, E, rho, b, h = 1.2, 210e9, 7850.0, 0.04, 0.01
    A, I = b * h, b * h ** 3 / 12
    ne = 60
    le = L / ne
    nd = 2 * (ne + 1)
    K = np.zeros((nd, nd))
    M = np.zeros((nd, nd))
    ke = E * I / le ** 3 * np.array([
        [12, 6 * le, -12, 6 * le], [6 * le, 4 * le ** 2, -6 * le, 2 * le ** 2],
        [-12, -6 * le, 12, -6 * le], [6 * le, 2 * le ** 2, -6 * le, 4 * le ** 2]])
    me = rho * A * le / 420 * np.array([
        [156, 22 * le, 54, -13 * le], [22 * le, 4 * le ** 2, 13 * le, -3 * le ** 2],
        [54, 13 * le, 156, -22 * le], [-13 * le, -3 * le ** 2, -22 * le, 4 * le ** 2]])
    for e in range(ne):
        s = slice(2 * e, 2 * e + 4)
        K[s, s] += ke
        M[s, s] += me
    # generalised eigenproblem K phi = w^2 M phi by Cholesky reduction
    Lc = np.linalg.cholesky(M)
    Li = np.linalg.inv(Lc)
    Ks = Li @ K @ Li.T
    lam, Y = np.linalg.eigh((Ks + Ks.T) / 2)
    Phi = Li.T @ Y  # mass-normalised
    zeta = 0.01
    nodes = [0, 18, 33]  # transverse DOFs at x = 0, 0.36 m, 0.66 m
    dofs = [2 * n for n in nodes]
    ins = [0, 1]
    f = np.arange(20.0, 240.0 + 1e-9, 0.25)
    w = 2 * np.pi * f
    H = np.zeros((len(f), 3, 2), dtype=complex)
    for r in range(nd):
        wr = np.sqrt(max(lam[r], 0.0))
        if wr < 1e-3 * 2 * np.pi:  # rigid-body mode: mass line
            g = -1.0 / w ** 2
        else:
            g = 1.0 / (wr ** 2 - w ** 2 + 2j * zeta * wr * w)
        for a, d in enumerate(dofs):
            for bb, i in enumerate(ins):
                H[:, a, bb] += Phi[d, r] * Phi[dofs[i], r] * g
    fe_hz = [float(np.sqrt(max(x, 0.0)) / (2 * np.pi)) for x in lam[:6]]
    print(json.dumps({
        "freqs": f.tolist(), "h": cx(H), "L": L, "E": E, "rho": rho, "A": A, "I": I,
        "x": [n * le for n in nodes], "fe_hz": fe_hz,
    }))


def chain(m, k, kg, c_alpha, c_beta):
    n = len(m)
    M = np.diag(m)
    K = np.zeros((n, n))
    for j in range(n - 1):
        K[j:j + 2, j:j + 2] += k[j] * np.array([[1, -1], [-1, 1]])
    K += np.diag(kg)
    C = c_alpha * M + c_beta * K
    return M, K, C


def couple():
    noise, seed = float(sys.argv[2]), int(sys.argv[3])
    # part A: 3 masses, measured at a1 and a3 (a3 the interface)
    MA, KA, CA = chain([1.0, 0.8, 1.2], [3e5, 2.5e5], [2e5, 0.0, 1.5e5], 1.5, 2e-5)
    # part B: 2 masses, measured at b1 (interface) and b2
    MB, KB, CB = chain([0.9, 0.6], [2e5], [0.0, 1.2e5], 1.5, 2e-5)
    f = np.arange(15.0, 200.0 + 1e-9, 0.25)
    w = 2 * np.pi * f
    # assembly: a3 and b1 rigidly joined; DOFs a1 a2 a3=b1 b2
    n = 4
    M = np.zeros((n, n)); K = np.zeros((n, n)); C = np.zeros((n, n))
    ia, ib = [0, 1, 2], [2, 3]
    for (Mx, Kx, Cx, idx) in [(MA, KA, CA, ia), (MB, KB, CB, ib)]:
        for p, P in enumerate(idx):
            for q, Q in enumerate(idx):
                M[P, Q] += Mx[p, q]; K[P, Q] += Kx[p, q]; C[P, Q] += Cx[p, q]
    rng = np.random.default_rng(seed)
    HA = np.zeros((len(f), 2, 2), dtype=complex)
    HB = np.zeros((len(f), 2, 2), dtype=complex)
    HC = np.zeros((len(f), 3, 3), dtype=complex)
    for l, x in enumerate(w):
        ha = np.linalg.inv(KA - x * x * MA + 1j * x * CA)
        hb = np.linalg.inv(KB - x * x * MB + 1j * x * CB)
        hc = np.linalg.inv(K - x * x * M + 1j * x * C)
        HA[l] = ha[np.ix_([0, 2], [0, 2])]
        HB[l] = hb[np.ix_([0, 1], [0, 1])]
        HC[l] = hc[np.ix_([0, 2, 3], [0, 2, 3])]
    def noisy(H):
        z = (rng.standard_normal(H.shape) + 1j * rng.standard_normal(H.shape)) / np.sqrt(2)
        return H * (1 + noise * z)
    ev = np.sort(np.sqrt(np.real(np.linalg.eigvals(np.linalg.solve(M, K))))) / (2 * np.pi)
    print(json.dumps({
        "freqs": f.tolist(), "a_clean": cx(HA), "b_clean": cx(HB),
        "a_noisy": cx(noisy(HA)), "b_noisy": cx(noisy(HB)), "assembled": cx(HC),
        "assembled_hz": ev.tolist(),
    }))


def eig():
    n, seed = int(sys.argv[2]), int(sys.argv[3])
    rng = np.random.default_rng(seed)
    a = rng.standard_normal((n, n))
    ev = np.linalg.eigvals(a)
    print(json.dumps({"a": a.reshape(-1).tolist(), "ev": cx(ev)}))


{"modal": modal, "beam": beam, "couple": couple, "eig": eig}[sys.argv[1]]()
