"""One FRF matrix written with pyuff as many datasets in one file, the way a
measurement front end exports a hammer test: every dataset has its own ID
lines (a point label in ID line 1, a run note in ID line 2).

Usage: uff_pyuff_oneset.py OUT_DIR

reference: pyuff 2.5.8 (PyPI). Writes oneset_ascii.uff (58, doubles) and
oneset_binary.uff (58b): references 1 and 2 (+Z), responses 21, 22, 23
(+Z), accelerance in m/s^2 per N on an even grid, and oneset.json with each
dataset as pyuff reads it back (file, nodes, abscissa, real and imaginary
parts).
"""

import json
import os
import sys

import numpy as np
import pyuff

out_dir = sys.argv[1]
os.makedirs(out_dir, exist_ok=True)
rng = np.random.default_rng(58)
x = 4.0 + 0.25 * np.arange(40)
pairs = [(ref, rsp) for ref in (1, 2) for rsp in (21, 22, 23)]
values = {
    p: rng.normal(size=len(x)) + 1j * rng.normal(size=len(x)) for p in pairs
}
out = []
for name, binary in (("oneset_ascii.uff", 0), ("oneset_binary.uff", 1)):
    path = os.path.join(out_dir, name)
    if os.path.exists(path):
        os.remove(path)
    dsets = []
    for n, (ref, rsp) in enumerate(pairs):
        dsets.append(
            pyuff.prepare_58(
                binary=binary,
                func_type=4,
                rsp_node=rsp,
                rsp_dir=3,
                ref_node=ref,
                ref_dir=3,
                data=values[(ref, rsp)],
                x=x,
                id1=f"pt {rsp}:+Z / {ref}:+Z",
                id2=f"run {n + 1}",
                abscissa_spacing=1,
                abscissa_spec_data_type=18,
                ordinate_spec_data_type=12,
                orddenom_spec_data_type=13,
                ordinate_axis_units_lab="m/s^2",
                orddenom_axis_units_lab="N",
            )
        )
    # 'add' to a new file: pyuff 2.5.8 truncates binary output in 'overwrite' mode
    pyuff.UFF(path).write_sets(dsets, mode="add", force_double=True)
    back = pyuff.UFF(path).read_sets()
    if isinstance(back, dict):
        back = [back]
    for b in back:
        out.append(
            dict(
                file=name,
                rsp_node=int(b["rsp_node"]),
                ref_node=int(b["ref_node"]),
                id1=str(b["id1"]),
                id2=str(b["id2"]),
                x=[float(v) for v in b["x"]],
                re=[float(v) for v in np.real(b["data"])],
                im=[float(v) for v in np.imag(b["data"])],
            )
        )
with open(os.path.join(out_dir, "oneset.json"), "w") as fh:
    json.dump(out, fh)
print(len(out), "datasets")
