"""Read a UFF file written by mortise with pyuff and compare with a JSON.

Usage: uff_pyuff_read.py FILE.uff EXPECTED.json

reference: pyuff 2.5.8 (PyPI). The JSON lists, in file order, each dataset's
function type, response/reference node and direction, units labels,
abscissa and ordinate values, and tolerances:
  x_rel_tol, y_rel_tol  (|a - b| <= tol * |b|, complex values compared whole)
Prints 'ok <n> datasets, max rel err x=<..> y=<..>' or exits with status 1.
"""

import json
import sys

import numpy as np
import pyuff

path, exp_path = sys.argv[1], sys.argv[2]
with open(exp_path) as fh:
    exp = json.load(fh)

sets = pyuff.UFF(path).read_sets()
if isinstance(sets, dict):
    sets = [sets]
want = exp["datasets"]
errors = []
if len(sets) != len(want):
    print(f"pyuff read {len(sets)} datasets, expected {len(want)}", file=sys.stderr)
    sys.exit(1)

max_x = 0.0
max_y = 0.0
for n, (s, w) in enumerate(zip(sets, want)):
    for key in ["func_type", "rsp_node", "rsp_dir", "ref_node", "ref_dir"]:
        if int(s[key]) != int(w[key]):
            errors.append(f"dataset {n}: {key} is {s[key]}, expected {w[key]}")
    for key, wk in [("ordinate_axis_units_lab", "num_units"), ("orddenom_axis_units_lab", "den_units")]:
        if s[key].strip() != w[wk]:
            errors.append(f"dataset {n}: {key} is '{s[key]}', expected '{w[wk]}'")
    x = np.asarray(s["x"], dtype=float)
    wx = np.asarray(w["x"], dtype=float)
    y = np.asarray(s["data"])
    wy = np.asarray(w["re"]) + 1j * np.asarray(w["im"])
    if len(x) != len(wx) or len(y) != len(wy):
        errors.append(f"dataset {n}: {len(y)} values, expected {len(wy)}")
        continue
    ex = np.max(np.abs(x - wx) / np.maximum(np.abs(wx), 1e-300))
    ey = np.max(np.abs(y - wy) / np.maximum(np.abs(wy), 1e-300))
    max_x = max(max_x, float(ex))
    max_y = max(max_y, float(ey))
    if ex > exp["x_rel_tol"]:
        errors.append(f"dataset {n}: abscissa relative error {ex:.3e} > {exp['x_rel_tol']}")
    if ey > exp["y_rel_tol"]:
        errors.append(f"dataset {n}: ordinate relative error {ey:.3e} > {exp['y_rel_tol']}")

if errors:
    print("\n".join(errors[:20]), file=sys.stderr)
    sys.exit(1)
print(f"ok {len(sets)} datasets, max rel err x={max_x:.3e} y={max_y:.3e}")
