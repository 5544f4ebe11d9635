"""A roving-hammer delivery written with pyuff: one 58b file per reference.

Usage: uff_pyuff_roving.py OUT_DIR

reference: pyuff 2.5.8 (PyPI). Three files (references 1, 2, 3 in +Z), four
accelerometers (responses 11..14, +Z); file ref3 lacks response 14 and
repeats response 11 of reference 2 with other values (a duplicate). The
JSON lists each dataset as pyuff reads it back: file, nodes, directions,
frequencies, values.
"""

import json
import os
import sys

import numpy as np
import pyuff

out_dir = sys.argv[1]
os.makedirs(out_dir, exist_ok=True)
rng = np.random.default_rng(7)
x = 5.0 + 0.5 * np.arange(64)
plan = {
    "ref1.uff": [(1, r) for r in (11, 12, 13, 14)],
    "ref2.uff": [(2, r) for r in (11, 12, 13, 14)],
    "ref3.uff": [(3, r) for r in (11, 12, 13)] + [(2, 11)],
}
out = []
for name, pairs in plan.items():
    path = os.path.join(out_dir, name)
    if os.path.exists(path):
        os.remove(path)
    dsets = []
    for ref, rsp in pairs:
        data = rng.normal(size=len(x)) + 1j * rng.normal(size=len(x))
        dsets.append(
            pyuff.prepare_58(
                binary=1,
                func_type=4,
                rsp_node=rsp,
                rsp_dir=3,
                ref_node=ref,
                ref_dir=3,
                data=data,
                x=x,
                id1="roving",
                abscissa_spacing=1,
                abscissa_spec_data_type=18,
                ordinate_spec_data_type=12,
                orddenom_spec_data_type=13,
                ordinate_axis_units_lab="m/s^2",
                orddenom_axis_units_lab="N",
            )
        )
    # 'add' to a new file: pyuff 2.5.8 truncates binary output in 'overwrite' mode
    pyuff.UFF(path).write_sets(dsets, mode="add")
    for b in pyuff.UFF(path).read_sets():
        out.append(
            dict(
                file=name,
                rsp_node=int(b["rsp_node"]),
                ref_node=int(b["ref_node"]),
                x=[float(v) for v in b["x"]],
                re=[float(v) for v in np.real(b["data"])],
                im=[float(v) for v in np.imag(b["data"])],
            )
        )
with open(os.path.join(out_dir, "roving.json"), "w") as fh:
    json.dump(out, fh)
print(len(out), "datasets")
