"""Write UFF 58 / 58b files with pyuff and a JSON of what they hold.

Usage: uff_pyuff_write.py OUT_DIR

reference: pyuff 2.5.8 (PyPI). For every file the JSON lists each dataset as
pyuff itself reads it back (x, re, im, nodes, directions, labels) and the
values handed to pyuff's writer (orig_re, orig_im): pyuff writes ASCII doubles
with '%20.11e' (12 significant digits), single precision with '%13.5e', and
uneven abscissa values with '%13.5e'; 58b holds the doubles themselves.
"""

import json
import os
import sys

import numpy as np
import pyuff

out_dir = sys.argv[1]
os.makedirs(out_dir, exist_ok=True)
rng = np.random.default_rng(20261201)


def frf_values(n, scale):
    return scale * (rng.normal(size=n) + 1j * rng.normal(size=n)) * np.exp(
        rng.normal(size=n)
    )


def dataset(binary, func_type, rsp, ref, x, data, even, num, den, codes):
    kw = dict(
        binary=binary,
        func_type=func_type,
        rsp_node=rsp[0],
        rsp_dir=rsp[1],
        ref_node=ref[0],
        ref_dir=ref[1],
        data=data,
        x=x,
        id1="pyuff check",
        abscissa_spacing=1 if even else 0,
        abscissa_spec_data_type=18,
        abscissa_axis_units_lab="Hz",
        ordinate_spec_data_type=codes[0],
        orddenom_spec_data_type=codes[1],
        ordinate_axis_units_lab=num,
        orddenom_axis_units_lab=den,
    )
    return pyuff.prepare_58(**kw)


def write(name, dsets, binary, force_double=True):
    path = os.path.join(out_dir, name)
    if os.path.exists(path):
        os.remove(path)
    u = pyuff.UFF(path)
    # pyuff 2.5.8 truncates binary output in 'overwrite' mode; 'add' to a new file works
    u.write_sets(dsets, mode="add", force_double=force_double)
    back = pyuff.UFF(path).read_sets()
    if isinstance(back, dict):
        back = [back]
    entries = []
    for orig, b in zip(dsets, back):
        od = np.asarray(orig["data"])
        bd = np.asarray(b["data"])
        entries.append(
            dict(
                func_type=int(b["func_type"]),
                rsp_node=int(b["rsp_node"]),
                rsp_dir=int(b["rsp_dir"]),
                ref_node=int(b["ref_node"]),
                ref_dir=int(b["ref_dir"]),
                num_units=b["ordinate_axis_units_lab"],
                den_units=b["orddenom_axis_units_lab"],
                x=[float(v) for v in np.asarray(b["x"])],
                re=[float(v) for v in bd.real],
                im=[float(v) for v in (bd.imag if np.iscomplexobj(bd) else 0 * bd)],
                orig_x=[float(v) for v in np.asarray(orig["x"])],
                orig_re=[float(v) for v in od.real],
                orig_im=[float(v) for v in (od.imag if np.iscomplexobj(od) else 0 * od)],
            )
        )
    return dict(
        name=name,
        binary=bool(binary),
        double=bool(force_double),
        datasets=entries,
    )


files = []
even_x = 2.0 + 0.25 * np.arange(41)
uneven_x = np.round(np.geomspace(5.0, 800.0, 23), 2)

# 1. ASCII, even, complex double: accelerance (g per N, and m/s^2 per N) with coherence
for binary, tag in [(0, "ascii"), (1, "binary")]:
    ds = []
    for rsp in [(12, 3), (7, -1), (9, 5)]:
        for ref in [(3, 3), (4, 2)]:
            rot = abs(rsp[1]) > 3
            num = "rad/s^2" if rot else ("g" if rsp[0] == 7 else "m/s^2")
            ds.append(
                dataset(binary, 4, rsp, ref, even_x, frf_values(len(even_x), 1e-3), True, num, "N", (12, 13))
            )
            ds.append(
                dataset(
                    binary, 6, rsp, ref, even_x,
                    np.clip(rng.uniform(0.5, 1.0, len(even_x)), 0, 1), True, "NONE", "NONE", (0, 0),
                )
            )
    files.append(write(f"p_{tag}_even_complex.uff", ds, binary))

    # 2. uneven, complex double: mobility in mm/s per N
    ds = [
        dataset(binary, 4, rsp, (3, 3), uneven_x, frf_values(len(uneven_x), 2.0), False, "mm/s", "N", (11, 13))
        for rsp in [(21, 1), (22, -2)]
    ]
    files.append(write(f"p_{tag}_uneven_complex.uff", ds, binary))

    # 3. real double, even and uneven: receptance in m per N
    ds = [
        dataset(binary, 4, (5, 3), (5, 3), even_x, rng.normal(size=len(even_x)) * 1e-6, True, "m", "N", (8, 13)),
    ]
    files.append(write(f"p_{tag}_even_real.uff", ds, binary))
    ds = [
        dataset(binary, 4, (5, 3), (5, 3), uneven_x, rng.normal(size=len(uneven_x)) * 1e-6, False, "m", "N", (8, 13)),
    ]
    files.append(write(f"p_{tag}_uneven_real.uff", ds, binary))

# 4. ASCII, single precision complex (pyuff force_double=False, ordinate data type 5)
ds = []
for rsp in [(1, 3), (2, 3)]:
    d = dataset(0, 4, rsp, (1, 3), even_x, frf_values(len(even_x), 10.0), True, "m/s^2", "N", (12, 13))
    d["ord_data_type"] = 5
    ds.append(d)
files.append(write("p_ascii_even_single.uff", ds, 0, force_double=False))

# 5. ASCII power spectral density (function type 9), real double, in g^2/Hz
ds = [
    dataset(0, 9, rsp, (0, 0), even_x, rng.uniform(1e-6, 1e-3, len(even_x)), True, "g^2/Hz", "NONE", (12, 0))
    for rsp in [(1, 3), (2, 3)]
]
files.append(write("p_ascii_psd.uff", ds, 0))

with open(os.path.join(out_dir, "expected.json"), "w") as fh:
    json.dump(dict(pyuff=pyuff.__version__, files=files), fh)
print(len(files), "files written")
