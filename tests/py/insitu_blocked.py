"""Reference for the in-situ blocked-force tests (tests/predict_insitu.rs).

The invented heat-pump outdoor unit as a lumped network (one DOF per node,
time convention e^{+iwt}): a two-mass compressor (comp_a, comp_b) on three
mounts (loss factor 0.1) to the feet f1..f3 of a base frame (nodes b1..b4,
partly grounded by the floor), and a casing panel tied to the frame. The
dynamic stiffness Z = K(1 + i eta) - w^2 M + i w C is assembled per line
from the same masses and links that the test gives mortise's network
synthesis; the receptance is Z^-1 (numpy.linalg.inv).

The compressor runs with internal forces F at comp_a and comp_b. Its
blocked forces at the feet are those on the feet held fixed:
f_bl = -Z_cs Z_ss^-1 F (the source alone with c grounded; Z_cs the mount
coupling). The responses of the installed unit are y = H_bs F, and the
in-situ relation y_b = H_bc f_bl (Moorhouse, Elliott & Evans, J. Sound Vib.
325 (2009) 679-685) is checked here to 1e-9 before anything is written.

Written (one JSON): the network, the grid, the nodes, the responses y at
every node of the frame and panel, the true blocked forces, numpy's
least-squares forces (numpy.linalg.lstsq) and numpy.linalg.pinv forces from
the indicators, the predictions at the validation and target nodes, a
Monte Carlo (numpy default_rng(2026), 2000 draws) of the forces with 1 %
relative circular noise on the responses (u = 0.01 |y|, real and imaginary
parts N(0, u^2/2)), the same with 1 % on the indicator FRFs too, and
Tikhonov solutions (H^H H + lam^2 I)^-1 H^H y (numpy.linalg.solve) for
lam = 1e-2 sigma_max and for lam = (sum u_H^2)^(1/2) with u_H = 0.01 |H|.

usage: insitu_blocked.py OUTDIR
"""

import json
import sys

import numpy as np

FREQS = np.arange(10.0, 302.0, 2.0)
W = 2 * np.pi * FREQS
DRAWS = 2000

MASSES = [
    ("comp_a", 8.0), ("comp_b", 6.0),
    ("f1", 0.8), ("f2", 0.8), ("f3", 0.8),
    ("b1", 1.5), ("b2", 2.0), ("b3", 1.2), ("b4", 2.5),
    ("panel", 1.8),
]
# (a, b or None for ground, k, c, eta)
LINKS = [
    ("comp_a", "comp_b", 4.0e5, 20.0, 0.0),
    ("comp_a", "f1", 1.5e5, 0.0, 0.1),
    ("comp_a", "f2", 1.5e5, 0.0, 0.1),
    ("comp_b", "f3", 1.2e5, 0.0, 0.1),
    ("f1", "b1", 3.0e6, 0.0, 0.02),
    ("f2", "b2", 2.5e6, 0.0, 0.02),
    ("f3", "b3", 3.0e6, 0.0, 0.02),
    ("b1", "b2", 1.0e6, 0.0, 0.02),
    ("b2", "b3", 1.2e6, 0.0, 0.02),
    ("b3", "b4", 8.0e5, 0.0, 0.02),
    ("b1", "b4", 5.0e5, 0.0, 0.02),
    ("b4", "panel", 2.0e5, 5.0, 0.02),
    ("panel", "b2", 1.0e5, 0.0, 0.02),
    ("b1", None, 8.0e5, 30.0, 0.0),
    ("b3", None, 6.0e5, 30.0, 0.0),
    ("f2", None, 4.0e5, 30.0, 0.0),
]
SOURCE = ["comp_a", "comp_b"]
INTERFACE = ["f1", "f2", "f3"]
AT = ["f1", "f2", "f3", "b1", "b2", "b3", "b4", "panel"]
VALIDATION = ["b4"]
TARGET = ["panel"]
INDICATORS = [n for n in AT if n not in VALIDATION + TARGET]


def dyn_stiffness(w):
    names = [m[0] for m in MASSES]
    ix = {n: i for i, n in enumerate(names)}
    n = len(names)
    z = np.zeros((n, n), complex)
    for name, m in MASSES:
        z[ix[name], ix[name]] -= w * w * m
    for a, b, k, c, eta in LINKS:
        d = k * (1 + 1j * eta) + 1j * w * c
        i = ix[a]
        z[i, i] += d
        if b is not None:
            j = ix[b]
            z[j, j] += d
            z[i, j] -= d
            z[j, i] -= d
    return z, ix


def internal_forces(f):
    """Invented compressor forces, N: smooth in frequency, with phase."""
    return np.array([
        40.0 * (1 + f / 150.0) * np.exp(1j * (0.3 + f / 90.0)),
        25.0 * (1 + f / 300.0) * np.exp(-1j * (0.7 + f / 200.0)),
    ])


def main(out):
    rng = np.random.default_rng(2026)
    nl = len(FREQS)
    h_all, y_all, truth = [], [], []
    for f, w in zip(FREQS, W):
        z, ix = dyn_stiffness(w)
        h = np.linalg.inv(z)
        s = [ix[n] for n in SOURCE]
        c = [ix[n] for n in INTERFACE]
        a = [ix[n] for n in AT]
        fint = internal_forces(f)
        fbl = -z[np.ix_(c, s)] @ np.linalg.solve(z[np.ix_(s, s)], fint)
        y = h[np.ix_(a, s)] @ fint
        hac = h[np.ix_(a, c)]
        # the in-situ relation itself
        err = np.linalg.norm(hac @ fbl - y) / np.linalg.norm(y)
        assert err < 1e-9, err
        h_all.append(hac)
        y_all.append(y)
        truth.append(fbl)
    h_all = np.array(h_all)  # lines x AT x interface
    y_all = np.array(y_all)  # lines x AT
    truth = np.array(truth)  # lines x interface
    ind = [AT.index(n) for n in INDICATORS]
    val = [AT.index(n) for n in VALIDATION]
    tar = [AT.index(n) for n in TARGET]
    hi = h_all[:, ind, :]
    yi = y_all[:, ind]
    lstsq = np.array([np.linalg.lstsq(hi[k], yi[k], rcond=None)[0] for k in range(nl)])
    pinv = np.array([np.linalg.pinv(hi[k]) @ yi[k] for k in range(nl)])
    pred_val = np.einsum("kvc,kc->kv", h_all[:, val, :], lstsq)
    pred_tar = np.einsum("kvc,kc->kv", h_all[:, tar, :], lstsq)

    def circ(shape, u):
        return (rng.standard_normal(shape) + 1j * rng.standard_normal(shape)) * u / np.sqrt(2)

    def mc(frf_noise):
        fs = np.empty((DRAWS, nl, len(INTERFACE)), complex)
        ts = np.empty((DRAWS, nl, len(TARGET)), complex)
        uy = 0.01 * np.abs(yi)
        uh = 0.01 * np.abs(hi)
        for d in range(DRAWS):
            yd = yi + circ(yi.shape, uy)
            hd = hi + circ(hi.shape, uh) if frf_noise else hi
            fd = np.linalg.solve(
                np.conj(np.transpose(hd, (0, 2, 1))) @ hd,
                (np.conj(np.transpose(hd, (0, 2, 1))) @ yd[:, :, None]),
            )[:, :, 0]
            fs[d] = fd
            ts[d] = np.einsum("kvc,kc->kv", h_all[:, tar, :], fd)
        sf = np.sqrt(fs.real.var(axis=0, ddof=1) + fs.imag.var(axis=0, ddof=1))
        st = np.sqrt(ts.real.var(axis=0, ddof=1) + ts.imag.var(axis=0, ddof=1))
        return sf, st

    mc_y, mc_y_target = mc(False)
    mc_yh, _ = mc(True)

    def tikhonov(lams):
        out = []
        for k in range(nl):
            a = hi[k]
            ah = np.conj(a.T)
            out.append(np.linalg.solve(ah @ a + lams[k] ** 2 * np.eye(a.shape[1]), ah @ yi[k]))
        return np.array(out)

    smax = np.array([np.linalg.svd(hi[k], compute_uv=False)[0] for k in range(nl)])
    lam_rel = 1e-2 * smax
    lam_noise = np.sqrt((np.abs(0.01 * hi) ** 2).sum(axis=(1, 2)))

    def cx(a):
        a = np.asarray(a)
        return {"re": a.real.ravel().tolist(), "im": a.imag.ravel().tolist()}

    doc = {
        "freqs": FREQS.tolist(),
        "network": {
            "model": "network",
            "component": "unit",
            "masses": [{"node": n, "mass": m} for n, m in MASSES],
            "links": [
                {k: v for k, v in (("a", a), ("b", b), ("k", kk), ("c", c), ("eta", e)) if v is not None}
                for a, b, kk, c, e in LINKS
            ],
            "at": AT,
        },
        "at": AT,
        "interface": INTERFACE,
        "indicators": INDICATORS,
        "validation": VALIDATION,
        "target": TARGET,
        "frf": cx(h_all),
        "y": cx(y_all),
        "truth": cx(truth),
        "lstsq": cx(lstsq),
        "pinv": cx(pinv),
        "pred_validation": cx(pred_val),
        "pred_target": cx(pred_tar),
        "draws": DRAWS,
        "mc_std_y": mc_y.ravel().tolist(),
        "mc_std_y_target": mc_y_target.ravel().tolist(),
        "mc_std_yh": mc_yh.ravel().tolist(),
        "tikhonov_rel": 1e-2,
        "tikhonov_rel_f": cx(tikhonov(lam_rel)),
        "tikhonov_noise_lambda": lam_noise.tolist(),
        "tikhonov_noise_f": cx(tikhonov(lam_noise)),
    }
    with open(f"{out}/insitu.json", "w") as fh:
        json.dump(doc, fh)
    print("insitu", nl, "lines")


if __name__ == "__main__":
    main(sys.argv[1])
