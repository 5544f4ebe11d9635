"""Files and a direct-assembly reference for the end-to-end `mortise run` checks.

Three lumped mass-spring-damper components with non-proportional viscous
damping (dashpots on single elements, so C is no combination of M and K),
each written as receptance FRFs in a format mortise reads:
  * A.csv           mortise's own CSV layout (src/io/csv/), values as repr() (exact)
  * B.csv           the same layout (for the one-line `mortise couple` route)
  * B-supplier.txt  a supplier-style table (semicolon, title rows, re/im in mm/N),
                    read through a column map in the recipe
  * C.uffb          UFF dataset 58b (binary, doubles) written by pyuff
  * AB.csv          the rigidly assembled A+B, directly assembled here, at B's DOFs
                    (named AB:b1, AB:b2, AB:b3): the input of a decoupling step
and reference.json: for every case the global receptance of the directly
assembled system, inverting K - w^2 M + i w C + i H per line (time convention
e^{+iwt}; H is the hysteretic part of a joint), with the map from each DOF
label to its global index.

reference: numpy direct assembly of M, K, C (numpy.linalg.inv per line).

usage: run_msd_files.py OUTDIR
"""

import json
import os
import sys

import numpy as np
import pyuff

FREQS = 5.0 + 2.5 * np.arange(119)  # 5 ... 300 Hz
W = 2 * np.pi * FREQS


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


def receptance(M, K, C, H=None):
    H = np.zeros_like(K) if H is None else H
    D = K[None] + 1j * H[None] - (W**2)[:, None, None] * M[None] + 1j * W[:, None, None] * C[None]
    return np.linalg.inv(D)


# component A: 3 masses in a chain, mass 1 grounded; dashpots to ground at 1 and across 2-3
MA = np.diag([2.0, 1.5, 1.2])
KA = springs(3, [(0, None, 4.0e5), (0, 1, 2.5e5), (1, 2, 3.0e5)])
CA = springs(3, [(0, None, 30.0), (1, 2, 15.0)])
# component B: 3 masses, free-free (one rigid-body mode), springs in a closed triangle
MB = np.diag([0.8, 1.1, 0.9])
KB = springs(3, [(0, 1, 1.8e5), (1, 2, 2.2e5), (0, 2, 0.6e5)])
CB = springs(3, [(0, 1, 9.0), (1, 2, 4.0)])
# component C: 3 masses, mass 3 grounded through a spring and a dashpot
MC = np.diag([1.3, 0.7, 1.6])
KC = springs(3, [(0, 1, 3.0e5), (1, 2, 1.5e5), (0, 2, 1.0e5), (2, None, 2.0e5)])
CC = springs(3, [(2, None, 20.0), (0, 1, 6.0)])

LA = ["A:1+Z", "A:2+Z", "A:3+Z"]
LB = ["B:1+Z", "B:2+Z", "B:3+Z"]
LC = ["C:1+Z", "C:2+Z", "C:3+Z"]

# flexible joint of the 'flex' case (recipe joint type spring-damper): k (1 + i eta) + i w c
KJ, CJ, ETAJ = 6.0e4, 35.0, 0.08


def assemble(parts, gmap, flex=()):
    """parts: (M, K, C, labels); gmap: label -> global index; flex: (label_a, label_b, k, c, k*eta)."""
    n = max(gmap.values()) + 1
    M, K, C, H = (np.zeros((n, n)) for _ in range(4))
    for m, k, c, labels in parts:
        L = np.zeros((len(labels), n))
        for l, lab in enumerate(labels):
            L[l, gmap[lab]] = 1.0
        M += L.T @ m @ L
        K += L.T @ k @ L
        C += L.T @ c @ L
    for a, b, k, c, h in flex:
        ga, gb = gmap[a], gmap[b]
        for X, v in ((K, k), (C, c), (H, h)):
            X[ga, ga] += v
            X[gb, gb] += v
            X[ga, gb] -= v
            X[gb, ga] -= v
    return receptance(M, K, C, H)


def case_json(gmap, R):
    return {"labels": gmap, "n": R.shape[1], "re": R.real.ravel().tolist(), "im": R.imag.ravel().tolist()}


def write_native(path, name, labels, R):
    """Our own CSV layout, version 1 (src/io/csv/): SI values, repr() round-trips every double."""
    lines = ["# mortise-frf 1", f"# name: {name}", "# out-quantity: displacement",
             "# in-quantity: force", "# units: SI"]
    lines += [f"# output: {l}" for l in labels]
    lines += [f"# input: {l}" for l in labels]
    head = ["freq_Hz"]
    for o in labels:
        for i in labels:
            head += [f"re {o}/{i}", f"im {o}/{i}"]
    lines.append(",".join(head))
    n = len(labels)
    for k, f in enumerate(FREQS):
        row = [repr(float(f))]
        for a in range(n):
            for b in range(n):
                v = R[k, a, b]
                row += [repr(float(v.real)), repr(float(v.imag))]
        lines.append(",".join(row))
    with open(path, "w") as fh:
        fh.write("\n".join(lines) + "\n")


def write_supplier(path, R):
    """A supplier table: title rows, semicolons, re/im columns in mm/N per entry."""
    n = R.shape[1]
    head = ["f [Hz]"]
    for a in range(n):
        for b in range(n):
            head += [f"Re H{a + 1}{b + 1} [mm/N]", f"Im H{a + 1}{b + 1} [mm/N]"]
    lines = ["Receptance export, part B (invented test data)", "units: mm/N", ";".join(head)]
    for k, f in enumerate(FREQS):
        row = [repr(float(f))]
        for a in range(n):
            for b in range(n):
                v = R[k, a, b] * 1e3  # m/N -> mm/N
                row += [repr(float(v.real)), repr(float(v.imag))]
        lines.append(";".join(row))
    with open(path, "w") as fh:
        fh.write("\n".join(lines) + "\n")


def write_uff(path, R):
    """UFF 58b with pyuff (binary doubles: exact); nodes 1..3, direction +Z (code 3)."""
    if os.path.exists(path):
        os.remove(path)
    ds = []
    n = R.shape[1]
    for a in range(n):
        for b in range(n):
            ds.append(pyuff.prepare_58(
                binary=1, func_type=4, rsp_node=a + 1, rsp_dir=3, ref_node=b + 1, ref_dir=3,
                data=R[:, a, b], x=FREQS, id1="part C receptance",
                rsp_ent_name="C", ref_ent_name="C",
                abscissa_spacing=1, abscissa_spec_data_type=18, abscissa_axis_units_lab="Hz",
                ordinate_spec_data_type=8, orddenom_spec_data_type=13,
                ordinate_axis_units_lab="m", orddenom_axis_units_lab="N"))
    u = pyuff.UFF(path)
    # pyuff 2.5.8 truncates binary output in 'overwrite' mode; 'add' to a new file works
    u.write_sets(ds, mode="add", force_double=True)


def main():
    out = sys.argv[1]
    os.makedirs(out, exist_ok=True)
    RA, RB, RC = receptance(MA, KA, CA), receptance(MB, KB, CB), receptance(MC, KC, CC)
    write_native(os.path.join(out, "A.csv"), "A", LA, RA)
    write_native(os.path.join(out, "B.csv"), "B", LB, RB)
    write_supplier(os.path.join(out, "B-supplier.txt"), RB)
    write_uff(os.path.join(out, "C.uffb"), RC)

    pA, pB, pC = (MA, KA, CA, LA), (MB, KB, CB, LB), (MC, KC, CC, LC)
    # rigid: A:3 = B:1
    g_rigid = {"A:1+Z": 0, "A:2+Z": 1, "A:3+Z": 2, "B:1+Z": 2, "B:2+Z": 3, "B:3+Z": 4}
    R_rigid = assemble([pA, pB], g_rigid)
    # flexible: A:3 -- B:1 through k (1 + i eta) + i w c
    g_flex = {"A:1+Z": 0, "A:2+Z": 1, "A:3+Z": 2, "B:1+Z": 3, "B:2+Z": 4, "B:3+Z": 5}
    R_flex = assemble([pA, pB], g_flex, [("A:3+Z", "B:1+Z", KJ, CJ, KJ * ETAJ)])
    # three parts: A:3 = B:1, and a two-DOF interface B:2 = C:1, B:3 = C:2
    g_three = {"A:1+Z": 0, "A:2+Z": 1, "A:3+Z": 2, "B:1+Z": 2, "B:2+Z": 3, "B:3+Z": 4,
               "C:1+Z": 3, "C:2+Z": 4, "C:3+Z": 5}
    R_three = assemble([pA, pB, pC], g_three)
    # decoupling input: the rigid assembly measured at B's DOFs; expected result: B itself
    write_native(os.path.join(out, "AB.csv"), "AB", ["AB:b1+Z", "AB:b2+Z", "AB:b3+Z"], R_rigid[:, 2:5, 2:5])
    g_dec = {"AB:b1+Z": 0, "AB:b2+Z": 1, "AB:b3+Z": 2}
    ref = {
        "freqs": FREQS.tolist(),
        "rigid": case_json(g_rigid, R_rigid),
        "flex": case_json(g_flex, R_flex),
        "three": case_json(g_three, R_three),
        "decoupled": case_json(g_dec, RB),
        "joint": {"k": KJ, "c": CJ, "eta": ETAJ},
    }
    with open(os.path.join(out, "reference.json"), "w") as fh:
        json.dump(ref, fh)
    print("wrote A.csv B.csv B-supplier.txt C.uffb AB.csv reference.json")


if __name__ == "__main__":
    main()
