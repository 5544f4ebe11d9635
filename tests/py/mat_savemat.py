"""Write MAT-files with scipy.io.savemat (level 5, with and without
compression; one level 4) and one big-endian level-5 file by hand, and print
as JSON what a correct reader must produce: frequencies in Hz and the SI
complex values, per file, with numpy doing the arithmetic (not mortise code).

Sources: the level-5 MAT-file layout as scipy.io.savemat writes it (and as
scipy.io.loadmat reads back the hand-written big-endian file, checked below);
g_n = 9.80665 m/s^2 (ISO 80000-3); f = w / (2 pi) for rad/s.
Scenario: a heat-pump outdoor unit (component "unit") on a timber-frame wall.
Usage: mat_savemat.py OUT_DIR
"""
import json
import os
import struct
import sys

import numpy as np
import scipy.io

out = sys.argv[1]
rng = np.random.default_rng(20261202)
G_N = 9.80665
res = {}


def cplx(shape):
    return rng.standard_normal(shape) + 1j * rng.standard_normal(shape)


def frf_json(values):
    """[[re, im], ...] per FRF in the given order, as Python floats (exact)."""
    return [[[float(v.real), float(v.imag)] for v in col] for col in values]


# 1. 3-D n_out x n_in x n_freq complex double, labels as cell arrays of strings,
#    with and without compression
n = 40
f = np.linspace(2.0, 400.0, n)
H = cplx((3, 2, n))
outs = np.array(["unit:1+X", "unit:1+Y", "unit:2+Z"], dtype=object)
ins = np.array(["unit:1+Z", "unit:3+Z"], dtype=object)
for name, z in [("oif.mat", False), ("oif_z.mat", True)]:
    scipy.io.savemat(os.path.join(out, name),
                     {"f": f.reshape(1, -1), "H": H, "outs": outs, "ins": ins,
                      "note": "wall bracket test"},
                     format="5", do_compression=z)
    res[name] = {"freqs": [float(x) for x in f],
                 "outputs": list(outs), "inputs": list(ins),
                 # entry (i, j): H[i, j, :]
                 "values": {f"{i},{j}": frf_json([H[i, j, :]])[0]
                            for i in range(3) for j in range(2)}}

# 2. 3-D n_freq x n_out x n_in complex double, frequency vector of class int32,
#    output labels as a char matrix (rows padded with blanks by savemat), in g/N
fi = np.arange(10, 10 + 2 * 25, 2, dtype=np.int32)
H2 = cplx((fi.size, 2, 2))
scipy.io.savemat(os.path.join(out, "foi.mat"),
                 {"freq_hz": fi.reshape(-1, 1), "A": H2,
                  "labels": np.array(["7+X", "12+Y"])}, format="5")
res["foi.mat"] = {"freqs": [float(x) for x in fi],
                  "values": {f"{i},{j}": frf_json([H2[:, i, j] * G_N])[0]
                             for i in range(2) for j in range(2)}}

# 3. 2-D n_freq x n_frf complex double (one FRF per column), compressed,
#    frequency in rad/s, labels given in the mapping
w = np.linspace(10.0, 2000.0, 30)
H3 = cplx((w.size, 3))
scipy.io.savemat(os.path.join(out, "cols.mat"), {"w": w, "Y": H3},
                 format="5", do_compression=True)
res["cols.mat"] = {"freqs": [float(x) for x in w / (2 * np.pi)],
                   "values": [frf_json([H3[:, k]])[0] for k in range(3)]}

# 4. real single and real double FRFs, 2-D n_frf x n_freq (one FRF per row),
#    single-precision frequency vector
fs = np.linspace(1.0, 64.0, 16).astype(np.float32)
Hs = rng.standard_normal((2, fs.size)).astype(np.float32)
Hd = rng.standard_normal((2, fs.size))
scipy.io.savemat(os.path.join(out, "real.mat"), {"fs": fs, "Hs": Hs, "Hd": Hd}, format="5")
res["real.mat"] = {"freqs": [float(x) for x in fs],
                   "single": [[float(x) for x in Hs[k]] for k in range(2)],
                   "double": [[float(x) for x in Hd[k]] for k in range(2)]}

# 5. complex single (complex64) 3-D, stored as miSINGLE real and imaginary parts
Hc = cplx((2, 2, 8)).astype(np.complex64)
f8 = np.arange(1.0, 9.0)
scipy.io.savemat(os.path.join(out, "csingle.mat"), {"f": f8, "H": Hc}, format="5")
res["csingle.mat"] = {"values": {f"{i},{j}": frf_json([Hc[i, j, :].astype(np.complex128)])[0]
                                 for i in range(2) for j in range(2)}}

# 6. bad contents written by scipy: NaN frequency, decreasing frequency,
#    a struct, a complex frequency vector
Hb = cplx((1, 1, 5))
fb = np.array([1.0, 2.0, np.nan, 4.0, 5.0])
scipy.io.savemat(os.path.join(out, "nan_freq.mat"), {"f": fb, "H": Hb}, format="5")
scipy.io.savemat(os.path.join(out, "dec_freq.mat"),
                 {"f": np.array([1.0, 2.0, 3.0, 2.5, 5.0]), "H": Hb}, format="5")
scipy.io.savemat(os.path.join(out, "struct.mat"),
                 {"f": np.arange(1.0, 6.0), "s": {"H": Hb, "f": np.arange(1.0, 6.0)}},
                 format="5")
scipy.io.savemat(os.path.join(out, "cfreq.mat"),
                 {"f": np.arange(1.0, 6.0) + 1j, "H": Hb}, format="5")

# 7. level 4
scipy.io.savemat(os.path.join(out, "level4.mat"), {"f": f, "Hr": H[0, 0, :]}, format="4")


# 8. big-endian level 5 written by hand: header 'MI', f (double 1x5), G (complex
#    double 2x1x5); checked by scipy.io.loadmat before use
def be_element(ty, payload):
    pad = (-len(payload)) % 8
    return struct.pack(">II", ty, len(payload)) + payload + b"\0" * pad


def be_matrix(name, arr):
    arr = np.asarray(arr)
    cx = np.iscomplexobj(arr)
    flags = struct.pack(">II", 6 | (0x800 if cx else 0), 0)  # mxDOUBLE_CLASS
    dims = struct.pack(">" + "i" * arr.ndim, *arr.shape)
    body = be_element(6, flags) + be_element(5, dims) + be_element(1, name.encode())
    col = arr.flatten(order="F")
    body += be_element(9, col.real.astype(">f8").tobytes())
    if cx:
        body += be_element(9, col.imag.astype(">f8").tobytes())
    return be_element(14, body)


fbe = np.array([[5.0, 10.0, 20.0, 40.0, 80.0]])
G = cplx((2, 1, 5))
head = b"MATLAB 5.0 MAT-file, written by hand in big-endian order".ljust(116, b" ")
head += b"\0" * 8 + struct.pack(">H", 0x0100) + b"MI"
with open(os.path.join(out, "big.mat"), "wb") as fh:
    fh.write(head + be_matrix("f", fbe) + be_matrix("G", G))
back = scipy.io.loadmat(os.path.join(out, "big.mat"))
assert np.array_equal(back["f"], fbe) and np.array_equal(back["G"], G)
res["big.mat"] = {"freqs": [float(x) for x in fbe[0]],
                  "values": {f"{i},0": frf_json([G[i, 0, :]])[0] for i in range(2)}}

print(json.dumps(res))
