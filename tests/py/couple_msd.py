"""Reference for the LM-FBS tests: numpy direct assembly of M, K, C.

For each scenario this script builds lumped mass-spring-damper components,
computes their FRFs by inverting K - w^2 M + i w C (+ i H for hysteretic
loss) per line (time convention e^{+iwt}), and assembles the coupled system
directly: the global M, K, C are summed from the components (rigid joints
merge DOFs, flexible joints add their spring / dashpot / loss between the two
DOFs) and inverted per line. Everything is written as JSON (freqs in Hz,
DOF labels, re/im frequency-major) for the Rust test to read.

usage: couple_msd.py OUTDIR
"""

import json
import sys

import numpy as np

FREQS = np.linspace(4.0, 400.0, 67)
W = 2 * np.pi * FREQS


def frf(M, K, C, H=None, order=0):
    """Per-line inverse of the dynamic stiffness, times (i w)^order."""
    n = M.shape[0]
    H = np.zeros((n, n)) if H is None else H
    D = K[None] - (W**2)[:, None, None] * M[None] + 1j * W[:, None, None] * C[None] + 1j * H[None]
    R = np.linalg.inv(D)
    return R * ((1j * W) ** order)[:, None, None]


def springs(n, pairs):
    """Stiffness-like matrix from (i, j, value) elements; j = None grounds i."""
    A = np.zeros((n, n))
    for i, j, v in pairs:
        A[i, i] += v
        if j is not None:
            A[j, j] += v
            A[i, j] -= v
            A[j, i] -= v
    return A


def set_json(name, kind, outs, ins, R):
    return {
        "name": name,
        "kind": kind,
        "outputs": outs,
        "inputs": ins,
        "re": R.real.ravel().tolist(),
        "im": R.imag.ravel().tolist(),
    }


class Comp:
    def __init__(self, name, labels, M, K, C, signs=None):
        self.name, self.labels, self.M, self.K, self.C = name, labels, M, K, C
        self.signs = signs or [1.0] * len(labels)


def assemble(comps, rigid, flex, n_glob_map):
    """Global M, K, C, H. n_glob_map[(comp, local)] = global index; local
    coordinate = sign * global coordinate. flex: (ga, gb, k, c, k_loss)."""
    n = max(n_glob_map.values()) + 1
    M, K, C, H = (np.zeros((n, n)) for _ in range(4))
    for ci, c in enumerate(comps):
        L = np.zeros((len(c.labels), n))
        for l in range(len(c.labels)):
            L[l, n_glob_map[(ci, l)]] = c.signs[l]
        M += L.T @ c.M @ L
        K += L.T @ c.K @ L
        C += L.T @ c.C @ L
    for ga, gb, k, cc, kl in flex:
        for A, v in ((K, k), (C, cc), (H, kl)):
            A[ga, ga] += v
            A[gb, gb] += v
            A[ga, gb] -= v
            A[gb, ga] -= v
    return M, K, C, H


def reference(comps, gmap, R_glob, outs_sel, ins_sel):
    """Rows/columns of the global FRF in mortise's result order: component
    outputs (then inputs) in order, each with its local sign."""
    ro, ri, lo, li = [], [], [], []
    for ci, c in enumerate(comps):
        for l in outs_sel[ci]:
            ro.append((gmap[(ci, l)], c.signs[l]))
            lo.append(c.labels[l])
        for l in ins_sel[ci]:
            ri.append((gmap[(ci, l)], c.signs[l]))
            li.append(c.labels[l])
    Y = np.empty((len(W), len(ro), len(ri)), complex)
    for a, (g, s) in enumerate(ro):
        for b, (h, t) in enumerate(ri):
            Y[:, a, b] = s * t * R_glob[:, g, h]
    return lo, li, Y


KINDS = {0: "receptance", 1: "mobility", 2: "accelerance"}


def comp_set(c, order, outs, ins):
    R = frf(c.M, c.K, c.C, order=order)
    return set_json(c.name, KINDS[order], [c.labels[i] for i in outs], [c.labels[i] for i in ins],
                    R[:, outs][:, :, ins])


def chain_a():
    # 3 masses along X, grounded at mass 1; stiffness-proportional damping plus a dashpot
    M = np.diag([2.0, 1.5, 1.2])
    K = springs(3, [(0, None, 4.0e5), (0, 1, 2.5e5), (1, 2, 3.0e5)])
    C = 1.0e-5 * K + springs(3, [(1, None, 12.0)])
    return Comp("A", ["A:1+X", "A:2+X", "A:3+X"], M, K, C)


def chain_b():
    # 2 masses along X, free-free, one spring and dashpot between them
    M = np.diag([0.8, 1.1])
    K = springs(2, [(0, 1, 1.8e5)])
    C = springs(2, [(0, 1, 9.0)])
    return Comp("B", ["B:1+X", "B:2+X"], M, K, C)


def scenario_rigid(out):
    A, B = chain_a(), chain_b()
    comps = [A, B]
    gmap = {(0, 0): 0, (0, 1): 1, (0, 2): 2, (1, 0): 2, (1, 1): 3}
    M, K, C, H = assemble(comps, None, [], gmap)
    Rg = frf(M, K, C, H)
    allo = [list(range(3)), list(range(2))]
    lo, li, Y = reference(comps, gmap, Rg, allo, allo)
    # decoupling: the assembly measured at A's DOFs (named AB:...), remove B
    RA = frf(A.M, A.K, A.C)
    asm = Rg[:, :3, :3]
    ab = ["AB:1+X", "AB:2+X", "AB:3+X"]
    return {
        "components": [comp_set(A, 0, [0, 1, 2], [0, 1, 2]), comp_set(B, 0, [0, 1], [0, 1])],
        "joints": [{"a": "A:3+X", "b": "B:1+X", "kind": {"type": "rigid"}}],
        "reference": set_json("ref", "receptance", lo, li, Y),
        "decouple": {
            "assembly": set_json("AB", "receptance", ab, ab, asm),
            "removed": comp_set(B, 0, [0, 1], [0, 1]),
            "joints": [{"a": "AB:3+X", "b": "B:1+X", "kind": {"type": "rigid"}}],
            "reference": set_json("A", "receptance", ab, ab, RA),
        },
    }


def scenario_flexible(out, hysteretic):
    A, B = chain_a(), chain_b()
    comps = [A, B]
    gmap = {(0, 0): 0, (0, 1): 1, (0, 2): 2, (1, 0): 3, (1, 1): 4}
    if hysteretic:
        kj, eta = 6.0e4, 0.15
        flex = [(2, 3, kj, 0.0, kj * eta)]
        kind = {"type": "hysteretic", "k": kj, "eta": eta}
    else:
        kj, cj = 6.0e4, 35.0
        flex = [(2, 3, kj, cj, 0.0)]
        kind = {"type": "spring-damper", "k": kj, "c": cj, "eta": 0.0}
    M, K, C, H = assemble(comps, None, flex, gmap)
    Rg = frf(M, K, C, H)
    allo = [list(range(3)), list(range(2))]
    lo, li, Y = reference(comps, gmap, Rg, allo, allo)
    RA = frf(A.M, A.K, A.C)
    ab = ["AB:1+X", "AB:2+X", "AB:3+X"]
    return {
        "components": [comp_set(A, 0, [0, 1, 2], [0, 1, 2]), comp_set(B, 0, [0, 1], [0, 1])],
        "joints": [{"a": "A:3+X", "b": "B:1+X", "kind": kind}],
        "reference": set_json("ref", "receptance", lo, li, Y),
        "decouple": {
            "assembly": set_json("AB", "receptance", ab, ab, Rg[:, :3, :3]),
            "removed": comp_set(B, 0, [0, 1], [0, 1]),
            "joints": [{"a": "AB:3+X", "b": "B:1+X", "kind": kind}],
            "reference": set_json("A", "receptance", ab, ab, RA),
        },
    }


def network(name, nodes, rng, ground):
    """Planar nodes with X and Z DOFs; springs between all DOF pairs of
    neighbouring nodes (couple X and Z), non-proportional dashpots."""
    n = 2 * nodes
    labels = []
    for k in range(nodes):
        labels += [f"{name}:{k + 1}+X", f"{name}:{k + 1}+Z"]
    M = np.diag(rng.uniform(0.5, 2.0, n))
    el = []
    for a in range(n):
        for b in range(a + 1, n):
            if abs(a // 2 - b // 2) <= 1:
                el.append((a, b, rng.uniform(0.5e5, 3.0e5)))
    for g in ground:
        el.append((g, None, rng.uniform(1.0e5, 2.0e5)))
    K = springs(n, el)
    C = springs(n, [(a, b, rng.uniform(2.0, 20.0)) for a, b, _ in el[::3]])
    return Comp(name, labels, M, K, C)


def scenario_three(out):
    rng = np.random.default_rng(20261201)
    A = network("A", 2, rng, [0, 1])
    B = network("B", 3, rng, [])
    Cc = network("C", 2, rng, [3])
    # C labels its node 1 Z DOF in the negative direction: local coordinate = -u_Z
    Cc.labels[1] = "C:1-Z"
    Cc.signs[1] = -1.0
    comps = [A, B, Cc]
    # global numbering: A 0..3; B node1 = A node2 (rigid, X and Z); B 4..7 for nodes 2,3;
    # C node1 = B node3; C node2 -> 8, 9
    gmap = {(0, i): i for i in range(4)}
    gmap.update({(1, 0): 2, (1, 1): 3, (1, 2): 4, (1, 3): 5, (1, 4): 6, (1, 5): 7})
    gmap.update({(2, 0): 6, (2, 1): 7, (2, 2): 8, (2, 3): 9})
    M, K, C, H = assemble(comps, None, [], gmap)
    Rg = frf(M, K, C, H)
    # A is rectangular: all 4 outputs, inputs at its excitation point 1+X and the interface
    outs = [[0, 1, 2, 3], list(range(6)), list(range(4))]
    ins = [[0, 2, 3], list(range(6)), list(range(4))]
    lo, li, Y = reference(comps, gmap, Rg, outs, ins)
    sets = [
        comp_set(A, 0, outs[0], ins[0]),
        comp_set(B, 0, outs[1], ins[1]),
        comp_set(Cc, 0, outs[2], ins[2]),
    ]
    # C's matrices are in its local coordinates (q = -u_Z at node 1), so its FRF is too.
    joints = [
        {"a": "A:2+X", "b": "B:1+X", "kind": {"type": "rigid"}},
        {"a": "A:2+Z", "b": "B:1+Z", "kind": {"type": "rigid"}},
        {"a": "B:3+X", "b": "C:1+X", "kind": {"type": "rigid"}},
        {"a": "B:3+Z", "b": "C:1+Z", "kind": {"type": "rigid"}},
    ]
    return {"components": sets, "joints": joints, "reference": set_json("ref", "receptance", lo, li, Y)}


def scenario_nonprop(out):
    # dashpots on two elements only (C not a combination of M and K); A given as
    # mobility, B as accelerance: the result is in mobility (A's kind)
    M1 = np.diag([1.0, 3.0, 0.7, 1.3])
    K1 = springs(4, [(0, None, 2.0e5), (0, 1, 5.0e5), (1, 2, 1.5e5), (2, 3, 4.0e5)])
    C1 = springs(4, [(1, 2, 60.0), (3, None, 25.0)])
    A = Comp("A", ["A:1+Y", "A:2+Y", "A:3+Y", "A:4+Y"], M1, K1, C1)
    M2 = np.diag([0.9, 2.2, 0.6])
    K2 = springs(3, [(0, 1, 3.0e5), (1, 2, 2.0e5), (2, None, 1.0e5)])
    C2 = springs(3, [(0, 1, 80.0)])
    B = Comp("B", ["B:1+Y", "B:2+Y", "B:3+Y"], M2, K2, C2)
    comps = [A, B]
    gmap = {(0, 0): 0, (0, 1): 1, (0, 2): 2, (0, 3): 3, (1, 0): 3, (1, 1): 4, (1, 2): 5}
    M, K, C, H = assemble(comps, None, [], gmap)
    Rg = frf(M, K, C, H, order=1)
    allo = [list(range(4)), list(range(3))]
    lo, li, Y = reference(comps, gmap, Rg, allo, allo)
    return {
        "components": [comp_set(A, 1, allo[0], allo[0]), comp_set(B, 2, allo[1], allo[1])],
        "joints": [{"a": "A:4+Y", "b": "B:1+Y", "kind": {"type": "rigid"}}],
        "reference": set_json("ref", "mobility", lo, li, Y),
    }


def main():
    out = sys.argv[1]
    scen = {
        "rigid": scenario_rigid(out),
        "spring_damper": scenario_flexible(out, False),
        "hysteretic": scenario_flexible(out, True),
        "three": scenario_three(out),
        "nonprop": scenario_nonprop(out),
    }
    for name, s in scen.items():
        s["freqs"] = FREQS.tolist()
        with open(f"{out}/{name}.json", "w") as f:
            json.dump(s, f)
    print(" ".join(scen))


if __name__ == "__main__":
    main()
