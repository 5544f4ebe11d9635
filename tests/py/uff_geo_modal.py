"""UFF datasets besides 58 written by pyuff, with the values mortise must read.

Usage:
  uff_geo_modal.py write OUT_DIR   write the files, print a JSON of expectations
  uff_geo_modal.py read FILE       read a file mortise wrote (2411, 55) with pyuff

reference: pyuff 2.5.8 (PyPI) writes and reads the files; numpy and
scipy.linalg.eigh compute the expected values. Unit factors by the 1959
definitions: 1 in = 0.0254 m, 1 lbf = 4.4482216152605 N; SI prefix milli.
pyuff writes dataset 55 values with '%13.5e' (6 significant digits), so the
modal references use the values as pyuff reads them back from the file.
"""

import json
import os
import sys

import numpy as np
import pyuff
import scipy.linalg

INCH = 0.0254
LBF = 4.4482216152605


def write_file(path, dsets):
    if os.path.exists(path):
        os.remove(path)
    pyuff.UFF(path).write_sets(dsets, mode="add")
    back = pyuff.UFF(path).read_sets()
    return back if isinstance(back, list) else [back]


def units(code, desc, length, force):
    return pyuff.prepare_164(
        units_code=code,
        units_description=desc,
        temp_mode=1,
        length=length,
        force=force,
        temp=1.0,
        temp_offset=273.15,
    )


def frf58(func_type, rsp, ref, x, data, codes):
    return pyuff.prepare_58(
        binary=0,
        func_type=func_type,
        rsp_node=rsp[0],
        rsp_dir=rsp[1],
        ref_node=ref[0],
        ref_dir=ref[1],
        data=data,
        x=x,
        id1="heat-pump mount check",
        abscissa_spacing=1,
        abscissa_spec_data_type=18,
        abscissa_axis_units_lab="Hz",
        ordinate_spec_data_type=codes[0],
        orddenom_spec_data_type=codes[1],
    )


def nodes(kind, ids, xyz, def_cs=None):
    n = len(ids)
    f = pyuff.prepare_2411 if kind == 2411 else pyuff.prepare_15
    return f(
        node_nums=np.array(ids),
        def_cs=np.array(def_cs if def_cs is not None else [0] * n),
        disp_cs=np.zeros(n, dtype=int),
        color=np.ones(n, dtype=int),
        x=xyz[:, 0],
        y=xyz[:, 1],
        z=xyz[:, 2],
    )


def modal_real(f, m, zeta, eta, phi, w):
    wr = 2 * np.pi * f
    H = np.zeros((len(w), phi.shape[0], phi.shape[0]), complex)
    for r in range(len(f)):
        den = m[r] * (wr[r] ** 2 * (1 + 1j * eta[r]) - w**2 + 2j * zeta[r] * wr[r] * w)
        H += np.einsum("i,j,k->kij", phi[:, r], phi[:, r], 1 / den)
    return H


def modal_complex(lam, a, psi, w):
    H = np.zeros((len(w), psi.shape[0], psi.shape[0]), complex)
    iw = 1j * w
    for r in range(len(lam)):
        g = 1 / (a[r] * (iw - lam[r]))
        gc = 1 / (np.conj(a[r]) * (iw - np.conj(lam[r])))
        H += np.einsum("i,j,k->kij", psi[:, r], psi[:, r], g)
        H += np.einsum("i,j,k->kij", np.conj(psi[:, r]), np.conj(psi[:, r]), gc)
    return H


def cplx(H):
    return dict(re=H.real.ravel().tolist(), im=H.imag.ravel().tolist())


def mode55(node_ids, shape, **kw):
    # shape: values at nodes * 3 (X, Y, Z), node by node
    s = np.asarray(shape).reshape(len(node_ids), 3)
    return pyuff.prepare_55(
        model_type=1,
        data_ch=2,
        spec_data_type=8,
        n_data_per_node=3,
        node_nums=np.array(node_ids),
        r1=s[:, 0],
        r2=s[:, 1],
        r3=s[:, 2],
        load_case=1,
        **kw,
    )


def write_all(out):
    os.makedirs(out, exist_ok=True)
    rng = np.random.default_rng(20261202)
    res = {}
    x = np.arange(10.0, 60.0, 2.5)
    n = len(x)

    # 1. mm / milli-newton: an FRF (accelerance, invariant) and an autopower
    #    of acceleration ((1 mm/s^2)^2 = 1e-6 (m/s^2)^2), nodes in mm
    frf = rng.normal(size=n) + 1j * rng.normal(size=n)
    spec = np.abs(rng.normal(size=n)) + 0j
    xyz = rng.normal(size=(4, 3)) * 300.0
    back = write_file(
        os.path.join(out, "units_mm.unv"),
        [
            units(5, "mm (milli newton)", 1000.0, 1000.0),
            nodes(2411, [1, 2, 3, 4], xyz),
            frf58(4, (1, 3), (2, 3), x, frf, (12, 13)),
            frf58(2, (3, -2), (0, 0), x, spec, (12, 0)),
        ],
    )
    res["mm"] = dict(
        file="units_mm.unv",
        frf=cplx(back[2]["data"] * 1.0),
        spectrum=cplx(back[3]["data"] * 1e-6),
        xyz=(np.column_stack([back[1]["x"], back[1]["y"], back[1]["z"]]) * 1e-3).ravel().tolist(),
    )

    # 2. inch / pound-force: a receptance (in/lbf), a force PSD (lbf^2/Hz),
    #    nodes as dataset 15 in inches
    rec = rng.normal(size=n) + 1j * rng.normal(size=n)
    psd = np.abs(rng.normal(size=n)) + 0j
    xyz = rng.normal(size=(3, 3)) * 20.0
    back = write_file(
        os.path.join(out, "units_in.unv"),
        [
            units(7, "inch (pound f)", 1.0 / INCH, 1.0 / LBF),
            nodes(15, [11, 12, 13], xyz),
            frf58(4, (11, 1), (12, -1), x, rec, (8, 13)),
            frf58(9, (13, 3), (0, 0), x, psd, (9, 0)),
        ],
    )
    res["inch"] = dict(
        file="units_in.unv",
        frf=cplx(back[2]["data"] * (INCH / LBF)),
        psd=cplx(back[3]["data"] * LBF**2),
        xyz=(np.column_stack([back[1]["x"], back[1]["y"], back[1]["z"]]) * INCH).ravel().tolist(),
    )

    # 3. geometry through coordinate systems: 2420 (rotation about z by 30
    #    degrees, origin) and 18 (three points), nodes in them
    c, s = np.cos(np.pi / 6), np.sin(np.pi / 6)
    R = np.array([[c, s, 0.0], [-s, c, 0.0], [0.0, 0.0, 1.0]])  # rows: local axes in global
    o = np.array([0.5, -0.25, 1.0])
    T = np.vstack([R, o])
    o18 = np.array([1.0, 2.0, 0.0])
    xp = o18 + np.array([0.0, 2.0, 0.0])  # local x along global y
    xzp = o18 + np.array([0.0, 1.0, 3.0])  # local z along global z
    ex = (xp - o18) / np.linalg.norm(xp - o18)
    v = xzp - o18
    ez = v - ex * (v @ ex)
    ez /= np.linalg.norm(ez)
    ey = np.cross(ez, ex)
    loc = rng.normal(size=(6, 3))
    cs_of = [0, 5, 5, 7, 7, 0]
    glob = []
    for p, cs in zip(loc, cs_of):
        if cs == 0:
            glob.append(p)
        elif cs == 5:
            glob.append(o + p @ R)
        else:
            glob.append(o18 + p[0] * ex + p[1] * ey + p[2] * ez)
    write_file(
        os.path.join(out, "geometry.unv"),
        [
            pyuff.prepare_2420(
                Part_UID=1,
                Part_Name="outdoor unit",
                CS_sys_labels=[5],
                CS_types=[0],
                CS_colors=[8],
                CS_names=["mount frame"],
                CS_matrices=[T],
            ),
            pyuff.prepare_18(
                cs_num=[7],
                cs_type=[0],
                ref_cs_num=[0],
                color=[1],
                method=[1],
                cs_name=["wall frame"],
                ref_o=[o18],
                x_point=[xp],
                xz_point=[xzp],
            ),
            nodes(2411, [1, 2, 3, 4, 5, 6], loc, cs_of),
            pyuff.prepare_82(trace_num=1, n_nodes=7, color=2, id="outline", nodes=np.array([1, 2, 3, 0, 4, 5, 6])),
        ],
    )
    res["geometry"] = dict(file="geometry.unv", xyz=np.array(glob).ravel().tolist())

    # 4. modes: real normal modes and complex modes at three nodes
    fr = np.arange(5.0, 200.0, 0.5)
    w = 2 * np.pi * fr
    ids = [101, 102, 103]
    f = np.array([23.0, 61.5, 140.25])
    m = np.array([1.5, 0.8, 2.2])
    zeta = np.array([0.02, 0.035, 0.01])
    eta = np.array([0.0, 0.0, 0.0])
    phi = rng.normal(size=(9, 3))
    back = write_file(
        os.path.join(out, "modes_real.unv"),
        [
            mode55(ids, phi[:, r], analysis_type=2, mode_n=r + 1, freq=float(f[r]), modal_m=float(m[r]),
                   modal_damp_vis=float(zeta[r]), modal_damp_his=float(eta[r]))
            for r in range(3)
        ],
    )
    fb = np.array([b["freq"] for b in back])
    mb = np.array([b["modal_m"] for b in back])
    zb = np.array([b["modal_damp_vis"] for b in back])
    hb = np.array([b["modal_damp_his"] for b in back])
    pb = np.column_stack([np.column_stack([b["r1"], b["r2"], b["r3"]]).ravel() for b in back])
    res["real"] = dict(file="modes_real.unv", freqs=fr.tolist(), n=9,
                       H=cplx(modal_real(fb, mb, zb, hb, pb, w)))

    lam = -np.array([0.03, 0.05]) * 2 * np.pi * np.array([40.0, 95.0]) + 1j * 2 * np.pi * np.array([40.0, 95.0])
    a = np.array([0.7 + 0.2j, -0.3 + 1.1j])
    psi = rng.normal(size=(9, 2)) + 1j * rng.normal(size=(9, 2))
    back = write_file(
        os.path.join(out, "modes_complex.unv"),
        [
            mode55(ids, psi[:, r], analysis_type=3, mode_n=r + 1, eig=complex(lam[r]), modal_a=complex(a[r]),
                   modal_b=complex(-a[r] * lam[r]))
            for r in range(2)
        ],
    )
    lb = np.array([b["eig"] for b in back])
    ab = np.array([b["modal_a"] for b in back])
    sb = np.column_stack([np.column_stack([b["r1"], b["r2"], b["r3"]]).ravel() for b in back])
    res["complex"] = dict(file="modes_complex.unv", freqs=fr.tolist(), n=9,
                          H=cplx(modal_complex(lb, ab, sb, w)))

    # 5. a model from M and K: two nodes, X Y Z each (6 DOFs), all modes kept,
    #    mass-normalised shapes (scipy.linalg.eigh), proportional damping
    M = np.diag([2.0, 2.0, 2.0, 1.2, 1.2, 1.2])
    k = 4.0e5
    K = np.zeros((6, 6))
    for d in range(3):
        kk = k * (1 + 0.3 * d)
        K[d, d] += 2 * kk
        K[d + 3, d + 3] += kk
        K[d, d + 3] -= kk
        K[d + 3, d] -= kk
    K[0, 1] = K[1, 0] = 0.2 * k
    K[3, 5] = K[5, 3] = 0.1 * k
    lam2, V = scipy.linalg.eigh(K, M)
    wr = np.sqrt(lam2)
    alpha, beta = 2.0, 2e-5
    C = alpha * M + beta * K
    zr = alpha / (2 * wr) + beta * wr / 2
    back = write_file(
        os.path.join(out, "modes_mk.unv"),
        [
            pyuff.prepare_55(
                model_type=1, analysis_type=2, data_ch=2, spec_data_type=8, n_data_per_node=3,
                node_nums=np.array([1, 2]), r1=V[[0, 3], r], r2=V[[1, 4], r], r3=V[[2, 5], r],
                load_case=1, mode_n=r + 1, freq=float(wr[r] / 2 / np.pi), modal_m=1.0,
                modal_damp_vis=float(zr[r]), modal_damp_his=0.0,
            )
            for r in range(6)
        ],
    )
    fmk = np.linspace(5.0, 150.0, 300)
    wmk = 2 * np.pi * fmk
    Hd = np.array([np.linalg.inv(K - ww**2 * M + 1j * ww * C) for ww in wmk])
    # DOF order of the file: node 1 X Y Z, node 2 X Y Z = the order of M and K
    fb = np.array([b["freq"] for b in back])
    zb = np.array([b["modal_damp_vis"] for b in back])
    pb = np.column_stack([np.column_stack([b["r1"], b["r2"], b["r3"]]).ravel() for b in back])
    res["mk"] = dict(file="modes_mk.unv", freqs=fmk.tolist(), n=6,
                     direct=cplx(Hd), modal=cplx(modal_real(fb, np.ones(6), zb, np.zeros(6), pb, wmk)))

    # 6. one file of 151, 164, 2411, 58 and 55
    back = write_file(
        os.path.join(out, "mixed.unv"),
        [
            pyuff.prepare_151(model_name="outdoor unit mounts", description="mount FRFs and modes",
                              db_app="test generator", program="pyuff"),
            units(5, "mm (milli newton)", 1000.0, 1000.0),
            nodes(2411, ids, rng.normal(size=(3, 3)) * 100.0),
            frf58(4, (101, 3), (102, 3), x, frf, (12, 13)),
            frf58(2, (103, 1), (0, 0), x, spec, (12, 0)),
        ]
        + [
            mode55(ids, phi[:, r], analysis_type=2, mode_n=r + 1, freq=float(f[r]), modal_m=float(m[r]),
                   modal_damp_vis=float(zeta[r]), modal_damp_his=0.0)
            for r in range(3)
        ],
    )
    # receptance scale of mm / mN: (1e-3 m) / (1e-3 N) = 1, so the modes are as in file 4
    res["mixed"] = dict(file="mixed.unv", frf=cplx(back[3]["data"] * 1.0),
                        spectrum=cplx(back[4]["data"] * 1e-6),
                        xyz=(np.column_stack([back[2]["x"], back[2]["y"], back[2]["z"]]) * 1e-3).ravel().tolist())
    print(json.dumps(res))


def read(path):
    back = pyuff.UFF(path).read_sets()
    back = back if isinstance(back, list) else [back]
    out = []
    for b in back:
        t = int(b["type"])
        if t == 2411:
            out.append(dict(type=t, ids=[int(v) for v in b["node_nums"]],
                            xyz=np.column_stack([b["x"], b["y"], b["z"]]).ravel().tolist()))
        elif t == 55:
            d = dict(type=t, analysis=int(b["analysis_type"]), ids=[int(v) for v in b["node_nums"]])
            s = np.column_stack([b["r1"], b["r2"], b["r3"]]).ravel()
            d["shape_re"] = s.real.tolist()
            d["shape_im"] = (s.imag if np.iscomplexobj(s) else 0 * s).tolist()
            if d["analysis"] == 2:
                d.update(freq=float(b["freq"]), modal_m=float(b["modal_m"]),
                         zeta=float(b["modal_damp_vis"]), eta=float(b["modal_damp_his"]))
            else:
                d.update(eig=[float(b["eig"].real), float(b["eig"].imag)],
                         modal_a=[float(b["modal_a"].real), float(b["modal_a"].imag)])
            out.append(d)
    print(json.dumps(out))


if __name__ == "__main__":
    if sys.argv[1] == "write":
        write_all(sys.argv[2])
    else:
        read(sys.argv[2])
