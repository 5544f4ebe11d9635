"""Write dataset 58 files of many function types and label forms with pyuff,
and the values mortise must read from them, in SI.

Usage: uff_pyuff_signals.py OUT_DIR

reference: pyuff 2.5.8 (PyPI) writes the files (write_sets; single precision
with force_double=False, ASCII only: pyuff 2.5.8 writes 58b payloads in
double precision whatever the declared type; 58b with binary=1). The expected SI values are
computed here from what pyuff reads back from each file (so single-precision
and 13-column ASCII rounding is that of the file) times the factor of the
label, from these definitions:
  g_n = 9.80665 m/s^2 (ISO 80000-3)
  1 lbf = 4.4482216152605 N, 1 in = 0.0254 m (1959 international yard and pound)
  SI prefixes milli 1e-3, micro 1e-6 (SI brochure).
An amplitude spectral density (unit/sqrt(Hz)) is squared into a PSD.
Prints one JSON object: {"cases": [...]}.
"""

import json
import os
import sys

import numpy as np
import pyuff

G = 9.80665
LBF = 4.4482216152605
out_dir = sys.argv[1]

# name, func_type, (num code, num label), (den code, den label), complex,
# double, binary, factor to SI, expected kind, out qty, in qty, square
CASES = [
    ("frf_ratio_paren", 4, (1, "(1/N)*(m/s²)"), (0, ""), True, True, False, 1.0, "frf", "acceleration", "force", False),
    ("frf_caret", 4, (1, "(m/s^2)/N"), (0, "NONE"), True, True, True, 1.0, "frf", "acceleration", "force", False),
    ("frf_digit", 4, (0, "m/s2/N"), (0, ""), True, False, False, 1.0, "frf", "acceleration", "force", False),
    ("frf_g_lbf", 4, (0, "g/lbf"), (0, ""), True, True, True, G / LBF, "frf", "acceleration", "force", False),
    ("frf_mm_s_n", 4, (1, "mm/s/N"), (1, ""), True, True, False, 1e-3, "frf", "velocity", "force", False),
    ("frf_split_labels", 4, (12, "g"), (13, "lbf"), True, True, False, G / LBF, "frf", "acceleration", "force", False),
    ("general_ratio", 0, (0, "g/lbf"), (0, ""), True, True, False, G / LBF, "frf", "acceleration", "force", False),
    ("general_pa", 0, (0, "Pa"), (0, ""), True, True, True, 1.0, "peak", "pressure", "dimensionless", False),
    ("general_psd", 0, (1, "Pa^2/Hz"), (0, ""), False, True, False, 1.0, "psd", "pressure", "dimensionless", False),
    ("auto_g2", 2, (12, "g^2"), (0, ""), False, True, False, G * G, "autopower", "acceleration", "dimensionless", False),
    ("auto_single", 2, (12, "(m/s^2)^2"), (0, ""), False, False, False, 1.0, "autopower", "acceleration", "dimensionless", False),
    ("cross_g2", 3, (12, "g^2"), (12, ""), True, True, False, G * G, "cross", "acceleration", "acceleration", False),
    ("cross_g_lbf", 3, (12, "g*lbf"), (13, ""), True, True, True, G * LBF, "cross", "acceleration", "force", False),
    ("trans_g_g", 5, (12, "g"), (12, "g"), True, True, False, 1.0, "frf", "acceleration", "acceleration", False),
    ("trans_ms2_g", 5, (12, "m/s²"), (12, "g"), True, False, False, 1.0 / G, "frf", "acceleration", "acceleration", False),
    ("psd_g2hz", 9, (12, "g²/Hz"), (0, ""), False, True, False, G * G, "psd", "acceleration", "dimensionless", False),
    ("psd_paren", 9, (1, "(m/s^2)^2/Hz"), (0, ""), False, False, False, 1.0, "psd", "acceleration", "dimensionless", False),
    ("psd_pa", 9, (15, "Pa^2/Hz"), (0, ""), False, True, True, 1.0, "psd", "pressure", "dimensionless", False),
    ("asd_sqrt", 9, (11, "m/s/√Hz"), (0, ""), False, True, False, 1.0, "psd", "velocity", "dimensionless", True),
    ("esd_g2s", 10, (12, "g^2 s"), (0, ""), False, True, False, G * G, "esd", "acceleration", "dimensionless", False),
    ("esd_full", 10, (12, "(m/s^2)^2*s/Hz"), (0, ""), False, True, True, 1.0, "esd", "acceleration", "dimensionless", False),
    ("spectrum_um", 12, (11, "µm/s"), (0, ""), True, True, False, 1e-6, "peak", "velocity", "dimensionless", False),
    ("spectrum_u", 12, (1, "um/s"), (0, ""), True, False, False, 1e-6, "peak", "velocity", "dimensionless", False),
    ("spectrum_in", 12, (8, "in"), (0, ""), True, True, True, 0.0254, "peak", "displacement", "dimensionless", False),
]

rng = np.random.default_rng(58)
n = 7
freqs = 10.0 + 2.5 * np.arange(n)
out = []
for (name, ft, (c9, l9), (c10, l10), cplx, double, binary, factor, kind, oq, iq, square) in CASES:
    if cplx:
        y = rng.normal(size=n) + 1j * rng.normal(size=n)
    else:
        y = np.abs(rng.normal(size=n)) + 0.1
    y = y * 10.0 ** rng.integers(-3, 4)
    typ = (6 if double else 5) if cplx else (4 if double else 2)
    ref_node, ref_dir = (2, 3) if ft in (3, 4, 5, 0) else (0, 0)
    if ft == 0 and kind != "frf":
        ref_node, ref_dir = 0, 0
    # pyuff 2.5.8 writes function types 0-4, 6 and 9 only: 5, 10 and 12 are
    # written as 4 and the 5-column function-type field of record 6 patched
    written_ft = ft if ft in (0, 1, 2, 3, 4, 6, 9) else 4
    d = pyuff.prepare_58(
        binary=1 if binary else 0,
        id1=name,
        id2="pyuff case",
        func_type=written_ft,
        rsp_node=1,
        rsp_dir=3,
        ref_node=ref_node,
        ref_dir=ref_dir,
        ord_data_type=typ,
        abscissa_spacing=1,
        abscissa_spec_data_type=18,
        abscissa_axis_units_lab="Hz",
        ordinate_spec_data_type=c9,
        ordinate_axis_units_lab=l9,
        orddenom_spec_data_type=c10,
        orddenom_axis_units_lab=l10,
        data=y,
        x=freqs,
    )
    path = os.path.join(out_dir, f"{name}.uff")
    if os.path.exists(path):
        os.remove(path)
    pyuff.UFF(path).write_sets([d], mode="add", force_double=False)
    if written_ft != ft:
        with open(path, "rb") as fh:
            raw = fh.read()
        lines = raw.split(b"\n", 8)
        assert lines[7][:5] == b"%5d" % written_ft, lines[7]
        lines[7] = b"%5d" % ft + lines[7][5:]
        with open(path, "wb") as fh:
            fh.write(b"\n".join(lines))
    back = pyuff.UFF(path).read_sets(0)
    stored = np.asarray(back["data"])
    if square:
        si = np.abs(stored) ** 2 * factor**2
    else:
        si = stored * factor
    out.append(
        {
            "name": name,
            "file": path,
            "func_type": ft,
            "ord_data_type": typ,
            "binary": binary,
            "kind": kind,
            "out_qty": oq,
            "in_qty": iq,
            "freqs": [float(f) for f in np.asarray(back["x"], dtype=float)],
            "re": [float(v) for v in np.real(si)],
            "im": [float(v) for v in np.imag(si)],
        }
    )
# time responses (function type 1): abscissa in s (code 17), ordinate in g
times = []
for (name, label, factor, binary, double) in [
    ("time_g", "g", G, False, True),
    ("time_mm", "mm/s²", 1e-3, True, True),
    ("time_single", "m/s2", 1.0, False, False),
]:
    n_t = 64
    dt = 1.0 / 1024.0
    y = rng.normal(size=n_t)
    d = pyuff.prepare_58(
        binary=1 if binary else 0,
        id1=name,
        func_type=1,
        rsp_node=5,
        rsp_dir=2,
        ref_node=0,
        ref_dir=0,
        ord_data_type=4 if double else 2,
        abscissa_spacing=1,
        abscissa_spec_data_type=17,
        abscissa_axis_units_lab="s",
        ordinate_spec_data_type=12,
        ordinate_axis_units_lab=label,
        orddenom_spec_data_type=0,
        orddenom_axis_units_lab="NONE",
        data=y,
        x=np.arange(n_t) * dt,
    )
    path = os.path.join(out_dir, f"{name}.uff")
    if os.path.exists(path):
        os.remove(path)
    pyuff.UFF(path).write_sets([d], mode="add", force_double=False)
    back = pyuff.UFF(path).read_sets(0)
    times.append(
        {
            "name": name,
            "file": path,
            "dt": float(back["abscissa_inc"]),
            "times": [float(t) for t in np.asarray(back["x"], dtype=float)],
            "values": [float(v) for v in np.real(np.asarray(back["data"])) * factor],
        }
    )
print(json.dumps({"cases": out, "time": times}))
