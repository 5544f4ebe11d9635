"""Reference for the virtual point tests (tests/vpt_transform.rs).

Two rigid blocks, each mounted on springs to a flexible lumped frame, are
modelled in numpy:
* the block's 6x6 rigid-body mass matrix at its reference point o from its
  mass, centre of gravity and inertia tensor (rigid-body kinematics,
  textbook: M = [[m I, -m [c]x], [m [c]x, J_o]], J_o = J_G + m(|c|^2 I - c c^T));
* springs from attachment points on the block to frame nodes, the frame's
  nodes tied by springs and grounded;
* receptance H = (K - w^2 M + i w C)^-1 per line, time convention e^{+iwt};
  accelerance A = -w^2 H.
The measured FRFs are made by exact kinematics: a channel at r along e
measures e . (t + theta x (r - o)), an impact F e at r loads the block with
the force F e and the moment (r - o) x F e at o. The reference is the block's
6x6 accelerance at o (rotations in rad, moments in N m) and, for the coupled
case, the direct assembly of both models with their block DOFs merged.

The transformation matrices are computed from the published formulas of
the virtual point transformation (van der Seijs, van den Bosch, Rixen,
de Klerk, COMPDYN 2013): R rows [e^T, ((r - o) x e)^T],
T_u = (R_u^T W_u R_u)^-1 R_u^T W_u, T_f = (R_f^T W_f R_f)^-1 R_f^T W_f.

usage: vpt_block.py OUTDIR
"""

import json
import sys

import numpy as np

FREQS = np.linspace(20.0, 1500.0, 38)
W = 2 * np.pi * FREQS
MM = 1e-3


def skew(v):
    return np.array([[0, -v[2], v[1]], [v[2], 0, -v[0]], [-v[1], v[0], 0]])


def block_mass(m, c, JG):
    """6x6 rigid-body mass matrix at the reference point (c = G - o)."""
    Jo = JG + m * (np.dot(c, c) * np.eye(3) - np.outer(c, c))
    M = np.zeros((6, 6))
    M[:3, :3] = m * np.eye(3)
    M[:3, 3:] = -m * skew(c)
    M[3:, :3] = m * skew(c)
    M[3:, 3:] = Jo
    return M


def point_map(d):
    """3x6: displacement of a block point at d = r - o from q = (t, theta)."""
    return np.hstack([np.eye(3), -skew(d)])


class Model:
    """Block (6 DOFs at o) on springs to a frame of n nodes (3 DOFs each)."""

    def __init__(self, name, m, c, JG, frame_nodes, attach, frame_links, ground, kmount, rng):
        self.name = name
        nf = len(frame_nodes)
        self.n = 6 + 3 * nf
        n = self.n
        M = np.zeros((n, n))
        K = np.zeros((n, n))
        M[:6, :6] = block_mass(m, c, JG)
        for i, mi in enumerate(frame_nodes):
            M[6 + 3 * i:9 + 3 * i, 6 + 3 * i:9 + 3 * i] = mi * np.eye(3)

        def spring(Ga, Gb, k3):
            # energy 1/2 (Ga x - Gb x)^T k3 (Ga x - Gb x)
            D = Ga - Gb
            return D.T @ k3 @ D

        def sel(node):
            S = np.zeros((3, n))
            S[:, 6 + 3 * node:9 + 3 * node] = np.eye(3)
            return S

        for (a, node) in attach:
            Ga = np.zeros((3, n))
            Ga[:, :6] = point_map(np.array(a) * MM)
            k3 = kmount * (np.eye(3) + 0.2 * np.diag(rng.uniform(-1, 1, 3)))
            K += spring(Ga, sel(node), k3)
        for (i, j, k) in frame_links:
            K += spring(sel(i), sel(j), k * np.diag([1.0, 0.7, 1.3]))
        for (i, k) in ground:
            K += spring(sel(i), np.zeros((3, n)), k * np.eye(3))
        self.M, self.K = M, K
        self.C = 3.0 * M + 2e-5 * K

    def receptance(self):
        D = self.K[None] - (W**2)[:, None, None] * self.M[None] + 1j * W[:, None, None] * self.C[None]
        return np.linalg.inv(D)


def accel(H):
    return -(W**2)[:, None, None] * H


def channel_rows(H, channels, o, cols):
    """Motion of each channel (position, direction) from the block's t, theta
    in the columns `cols` of H: e . (t + theta x d)."""
    out = np.zeros((H.shape[0], len(channels), len(cols)), complex)
    for i, (r, e) in enumerate(channels):
        d = np.array(r) * MM - o
        e = np.array(e) / np.linalg.norm(e)
        for b, col in enumerate(cols):
            t = H[:, 0:3, col]
            th = H[:, 3:6, col]
            out[:, i, b] = (t + np.cross(th, d)) @ e
    return out


def impact_loads(impacts, o, n):
    """n x k: the generalised load of each unit impact F e at r: force e and
    moment d x e on the block."""
    L = np.zeros((n, len(impacts)))
    for j, (r, e) in enumerate(impacts):
        d = np.array(r) * MM - o
        e = np.array(e) / np.linalg.norm(e)
        L[:3, j] = e
        L[3:6, j] = np.cross(d, e)
    return L


def r_matrix(items, o):
    """Rows [e^T, ((r - o) x e)^T] of the published virtual point formulas."""
    R = []
    for r, e in items:
        e = np.array(e) / np.linalg.norm(e)
        d = np.array(r) * MM - o
        R.append(np.concatenate([e, np.cross(d, e)]))
    return np.array(R)


def t_matrix(R, w):
    Wm = np.diag(w)
    return np.linalg.solve(R.T @ Wm @ R, R.T @ Wm)


def cset(name, outs, ins, A, kind="accelerance"):
    return {
        "name": name,
        "kind": kind,
        "outputs": outs,
        "inputs": ins,
        "re": A.real.ravel().tolist(),
        "im": A.imag.ravel().tolist(),
    }


VP_DIRS = ["X", "Y", "Z", "RX", "RY", "RZ"]


def measured(model, comp, origin, sensors, impacts, frame_keep):
    """The measured set: sensor channels + kept frame DOFs, by impacts + the
    same frame DOFs; and the reference at the block point."""
    H = model.receptance()
    n = model.n
    o = np.array(origin) * MM
    kept_idx = [6 + 3 * node + "XYZ".index(d) for node, d in frame_keep]
    kept_lbl = [f"{comp}:f{node}+{d}" for node, d in frame_keep]
    chans = [(s["at"], e) for s in sensors for e in s["dirs"]]
    ch_lbl = [lbl for s in sensors for lbl in s["labels"]]
    L = impact_loads([(h["at"], h["dir"]) for h in impacts], o, n)
    # responses to the impacts: H L; to the kept frame forces: H columns
    HL = np.concatenate([H @ L, H[:, :, kept_idx]], axis=2)
    cols = list(range(HL.shape[2]))
    Yu = channel_rows(HL, chans, o, cols)
    Yk = HL[:, kept_idx, :]
    Y = np.concatenate([Yk, Yu], axis=1)
    outs = kept_lbl + ch_lbl
    ins = [h["label"] for h in impacts] + kept_lbl
    # reorder columns: kept first as mortise keeps them, then the impacts
    ni = len(impacts)
    order = list(range(ni, ni + len(kept_idx))) + list(range(ni))
    Y = Y[:, :, order]
    ins = [ins[i] for i in order]
    ref_idx = kept_idx + list(range(6))
    ref_lbl = kept_lbl + [f"{comp}:bolt+{d}" for d in VP_DIRS]
    Href = H[:, ref_idx][:, :, ref_idx]
    return {
        "set": cset(comp, outs, ins, accel(Y)),
        "reference": cset("ref", ref_lbl, ref_lbl, accel(Href)),
        "channels": chans,
        "channel_labels": ch_lbl,
    }


def geometry_csv(sensors, impacts):
    lines = ["# mortise-geometry 1", "unit, mm", "# label, x, y, z[, dx, dy, dz]"]
    for s in sensors:
        if s.get("rotated"):
            for lbl, e in zip(s["labels"], s["dirs"]):
                lines.append(f"{lbl}, {s['at'][0]!r}, {s['at'][1]!r}, {s['at'][2]!r}, {e[0]!r}, {e[1]!r}, {e[2]!r}")
        else:
            lines.append(f"{s['node']}, {s['at'][0]!r}, {s['at'][1]!r}, {s['at'][2]!r}")
    for h in impacts:
        if h.get("own_dir"):
            lines.append(f"{h['label']}, {h['at'][0]!r}, {h['at'][1]!r}, {h['at'][2]!r}")
        else:
            e = h["dir"]
            lines.append(f"{h['label']}, {h['at'][0]!r}, {h['at'][1]!r}, {h['at'][2]!r}, {e[0]!r}, {e[1]!r}, {e[2]!r}")
    return "\n".join(lines) + "\n"


def sensors_of(comp, spots, rotate):
    out = []
    for k, at in enumerate(spots):
        node = f"{comp}:s{k + 1}"
        labels = [f"{node}+X", f"{node}+Y", f"{node}+Z"]
        if k == rotate:
            a = np.deg2rad(30.0)
            Rz = np.array([[np.cos(a), -np.sin(a), 0], [np.sin(a), np.cos(a), 0], [0, 0, 1]])
            Rx = np.array([[1, 0, 0], [0, np.cos(0.4), -np.sin(0.4)], [0, np.sin(0.4), np.cos(0.4)]])
            Q = Rz @ Rx
            dirs = [Q[:, 0].tolist(), Q[:, 1].tolist(), Q[:, 2].tolist()]
            out.append({"node": node, "at": at, "labels": labels, "dirs": dirs, "rotated": True})
        else:
            out.append({"node": node, "at": at, "labels": labels, "dirs": [[1, 0, 0], [0, 1, 0], [0, 0, 1]]})
    return out


def impacts_of(comp, hits):
    out = []
    for k, (at, d) in enumerate(hits):
        axis = {(1, 0, 0): "+X", (0, 1, 0): "+Y", (0, 0, 1): "+Z", (0, 0, -1): "-Z"}.get(tuple(d))
        if axis:
            out.append({"label": f"{comp}:h{k + 1}{axis}", "at": at, "dir": d, "own_dir": True})
        else:
            out.append({"label": f"{comp}:h{k + 1}+X", "at": at, "dir": d})
    return out


def consistency(Y, rows, cols, R_u, T_u, R_f, T_f):
    """rho_u = ||P_u Y_u||_F / ||Y_u||_F over the channel rows and all
    columns; rho_f = ||Y_f P_f^T||_F / ||Y_f||_F over the impact columns and
    all rows; P = R T (the definitions of src/vpt/consistency.rs)."""
    Pu = R_u @ T_u
    Pf = R_f @ T_f
    Yu = Y[:, rows, :]
    Yf = Y[:, :, cols]
    ru = np.linalg.norm(np.einsum("ab,kbj->kaj", Pu, Yu), axis=(1, 2)) / np.linalg.norm(Yu, axis=(1, 2))
    rf = np.linalg.norm(np.einsum("kib,ab->kia", Yf, Pf), axis=(1, 2)) / np.linalg.norm(Yf, axis=(1, 2))
    return ru, rf


def main(outdir):
    rng = np.random.default_rng(20261213)
    # component A: the outdoor unit's foot block on its frame
    JA = np.array([[4.0e-3, 2.0e-4, -1.0e-4], [2.0e-4, 5.0e-3, 3.0e-4], [-1.0e-4, 3.0e-4, 6.0e-3]])
    A = Model(
        "unit", 2.5, np.array([5.0, -3.0, 8.0]) * MM, JA,
        [0.8, 0.6, 0.9, 0.7],
        [((40, 30, -10), 0), ((-40, 30, -10), 1), ((-40, -30, -10), 2), ((40, -30, -10), 3)],
        [(0, 1, 4e6), (1, 2, 3e6), (2, 3, 5e6), (3, 0, 2e6), (0, 2, 1e6)],
        [(0, 8e5), (2, 6e5)],
        2e6, rng,
    )
    # component B: the wall bracket's plate block on its frame
    JB = np.array([[1.5e-3, -1.0e-4, 0.0], [-1.0e-4, 2.2e-3, 1.5e-4], [0.0, 1.5e-4, 2.8e-3]])
    B = Model(
        "bracket", 1.2, np.array([-4.0, 6.0, -9.0]) * MM, JB,
        [1.1, 0.9, 1.0],
        [((35, 0, 15), 0), ((-20, 30, 15), 1), ((-20, -30, 15), 2)],
        [(0, 1, 6e6), (1, 2, 4e6), (2, 0, 5e6)],
        [(0, 1e6), (1, 7e5), (2, 9e5)],
        3e6, rng,
    )
    origin = [0.0, 0.0, 0.0]
    sA = sensors_of("unit", [[30, 0, 20], [-15, 26, 20], [-15, -26, 20]], rotate=2)
    hA = impacts_of("unit", [
        ([35, 5, 25], [0, 0, 1]), ([-20, 20, 25], [0, 0, 1]), ([-10, -30, 25], [0, 0, 1]),
        ([45, 0, 10], [1, 0, 0]), ([0, 40, 10], [0, 1, 0]), ([-45, 10, 5], [1, 0, 0]),
        ([20, -40, 12], [0.3, -1.0, 0.2]), ([30, 30, 15], [1, 1, 0.5]), ([-30, -20, 25], [0.2, 0.4, -1.0]),
    ])
    sB = sensors_of("bracket", [[25, 10, -20], [-20, 20, -20], [0, -28, -20]], rotate=0)
    hB = impacts_of("bracket", [
        ([30, 0, -25], [0, 0, -1]), ([-20, 25, -25], [0, 0, -1]), ([5, -25, -25], [0, 0, -1]),
        ([40, 5, -10], [1, 0, 0]), ([0, 35, -10], [0, 1, 0]), ([-35, 0, -10], [1, 0, 0]),
        ([15, -35, -15], [0.5, -1.0, 0.0]), ([-25, -25, -5], [-1, -1, 0.3]), ([10, 20, -30], [0.1, 0.2, 1.0]),
    ])
    mA = measured(A, "unit", origin, sA, hA, [(0, "Z"), (2, "X")])
    mB = measured(B, "bracket", origin, sB, hB, [(1, "Y")])

    # the published formulas, with non-unit weights
    o = np.array(origin) * MM
    items_u = [(s["at"], e) for s in sA for e in s["dirs"]]
    items_f = [(h["at"], h["dir"]) for h in hA]
    R_u, R_f = r_matrix(items_u, o), r_matrix(items_f, o)
    w_u = np.array([1.0, 1.0, 1.0, 2.0, 2.0, 2.0, 0.5, 0.5, 0.5])
    w_f = np.array([1.0, 3.0, 1.0, 1.0, 1.0, 0.25, 1.0, 1.0, 2.0])
    weighted = {
        "origin": [3.0, -2.0, 10.0],
        "sensor_weights": {"unit:s2": 2.0, "unit:s3": 0.5},
        "impact_weights": {"unit:h2+Z": 3.0, "unit:h6+X": 0.25, "unit:h9+X": 2.0},
    }
    ow = np.array(weighted["origin"]) * MM
    R_uw, R_fw = r_matrix(items_u, ow), r_matrix(items_f, ow)
    T_uw, T_fw = t_matrix(R_uw, w_u), t_matrix(R_fw, w_f)

    # 1 % complex noise on the sensor channels, seeded
    Y = np.array(mA["set"]["re"]) + 1j * np.array(mA["set"]["im"])
    nk, no, ni = len(FREQS), len(mA["set"]["outputs"]), len(mA["set"]["inputs"])
    Y = Y.reshape(nk, no, ni)
    rows = list(range(2, no))  # the 9 sensor channels follow the 2 kept frame DOFs
    cols = list(range(2, ni))  # the 9 impacts follow the 2 kept frame DOFs
    noise = (rng.standard_normal(Y.shape) + 1j * rng.standard_normal(Y.shape)) / np.sqrt(2)
    Yn = Y.copy()
    Yn[:, rows, :] += 0.01 * np.abs(Y[:, rows, :]) * noise[:, rows, :]
    T_u1, T_f1 = t_matrix(R_u, np.ones(9)), t_matrix(R_f, np.ones(9))
    ru, rf = consistency(Yn, rows, cols, R_u, T_u1, R_f, T_f1)
    ru0, rf0 = consistency(Y, rows, cols, R_u, T_u1, R_f, T_f1)
    noisy = dict(mA["set"])
    noisy["name"] = "unit"
    noisy["re"] = Yn.real.ravel().tolist()
    noisy["im"] = Yn.imag.ravel().tolist()

    # direct assembly: both blocks' DOFs at o merged (rigid joint of the points)
    nA, nB = A.n, B.n
    n = nA + nB - 6
    LA = np.zeros((nA, n))
    LA[:, :nA] = np.eye(nA)
    LB = np.zeros((nB, n))
    LB[:6, :6] = np.eye(6)
    LB[6:, nA:] = np.eye(nB - 6)
    Mg = LA.T @ A.M @ LA + LB.T @ B.M @ LB
    Kg = LA.T @ A.K @ LA + LB.T @ B.K @ LB
    Cg = LA.T @ A.C @ LA + LB.T @ B.C @ LB
    D = Kg[None] - (W**2)[:, None, None] * Mg[None] + 1j * W[:, None, None] * Cg[None]
    Hg = np.linalg.inv(D)
    glob = {"unit:f0+Z": 6 + 2, "unit:f2+X": 6 + 6}
    glob.update({f"unit:bolt+{d}": i for i, d in enumerate(VP_DIRS)})
    glob.update({f"bracket:bolt+{d}": i for i, d in enumerate(VP_DIRS)})
    glob["bracket:f1+Y"] = nA + 3 + 1
    lbl = list(glob)
    idx = [glob[k] for k in lbl]
    coupled = cset("coupled", lbl, lbl, accel(Hg[:, idx][:, :, idx]))

    doc = {
        "freqs": FREQS.tolist(),
        "unit": mA,
        "bracket": mB,
        "geometry_unit": geometry_csv(sA, hA),
        "geometry_bracket": geometry_csv(sB, hB),
        "sensors_unit": [s["node"] for s in sA],
        "impacts_unit": [h["label"] for h in hA],
        "sensors_bracket": [s["node"] for s in sB],
        "impacts_bracket": [h["label"] for h in hB],
        "weighted": weighted,
        "T_u": T_uw.tolist(),
        "T_f": T_fw.tolist(),
        "R_u": R_uw.tolist(),
        "R_f": R_fw.tolist(),
        "noisy": noisy,
        "rho_u": ru.tolist(),
        "rho_f": rf.tolist(),
        "rho_u_clean": ru0.tolist(),
        "rho_f_clean": rf0.tolist(),
        "coupled": coupled,
    }
    with open(f"{outdir}/vpt.json", "w") as f:
        json.dump(doc, f)
    print(f"vpt: min rho_u noisy {ru.min():.9f}, min rho_f noisy {rf.min():.9f}")


if __name__ == "__main__":
    main(sys.argv[1])
