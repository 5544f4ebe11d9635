"""Writes a virtual-point geometry (our layout, tests/vpt_transform.rs) as a
Universal File with pyuff: nodes as dataset 2411 (global coordinates, m),
and for each node whose DOFs are measured along other directions than the
global axes, a cartesian displacement system as dataset 2420 whose axes are
those directions (rows of the matrix: the local x, y, z axes in global
coordinates, then the origin). Node labels are numbered: sK -> K, hK -> 10 + K.

usage: vpt_uff_geom.py GEOMETRY.csv OUT.unv
"""

import sys

import numpy as np
import pyuff

AXES = {"X": 0, "Y": 1, "Z": 2}


def number(node):
    kind, k = node[0], int(node[1:])
    return k if kind == "s" else 10 + k


def complete(k, e):
    """An orthonormal triad whose axis k is e (a right-handed system)."""
    e = np.asarray(e, float) / np.linalg.norm(e)
    helper = np.eye(3)[np.argmin(np.abs(e))]
    a = np.cross(e, helper)
    a /= np.linalg.norm(a)
    b = np.cross(e, a)
    # axes (k, k+1, k+2) cyclic = (e, a, b) keeps the system right-handed
    m = np.zeros((3, 3))
    m[k], m[(k + 1) % 3], m[(k + 2) % 3] = e, a, b
    return m


def main(src, out):
    nodes = {}  # number -> [xyz m, axes or None]
    for line in open(src):
        line = line.strip()
        if not line or line.startswith("#") or line.replace(" ", "").lower().startswith("unit,"):
            continue
        cells = [c.strip() for c in line.split(",")]
        label = cells[0].split(":", 1)[1]
        at = np.array([float(c) for c in cells[1:4]]) * 1e-3  # mm -> m
        node, axis = (label[:-2], label[-1]) if label[-2:-1] in "+-" and label[-1] in AXES else (label, None)
        n = number(node)
        entry = nodes.setdefault(n, [at, None])
        if len(cells) == 7:
            e = np.array([float(c) for c in cells[4:7]])
            k = AXES[axis]
            if entry[1] is None:
                entry[1] = complete(k, e)
            else:
                entry[1][k] = e / np.linalg.norm(e)
    nums = sorted(nodes)
    systems = []
    disp = []
    for n in nums:
        axes = nodes[n][1]
        if axes is None:
            disp.append(0)
        else:
            assert np.allclose(axes @ axes.T, np.eye(3), atol=1e-12), (n, axes)
            label = 100 + n
            systems.append((label, np.vstack([axes, np.zeros(3)])))
            disp.append(label)
    uf = pyuff.UFF(out)
    uf.write_sets(pyuff.prepare_2420(
        Part_UID=1, Part_Name="block", CS_sys_labels=[s[0] for s in systems],
        CS_types=[0] * len(systems), CS_colors=[8] * len(systems),
        CS_names=[f"node {s[0] - 100}" for s in systems], CS_matrices=[s[1] for s in systems]), mode="overwrite")
    xyz = np.array([nodes[n][0] for n in nums])
    uf.write_sets(pyuff.prepare_2411(
        node_nums=np.array(nums), def_cs=np.zeros(len(nums), int), disp_cs=np.array(disp),
        color=np.ones(len(nums), int), x=xyz[:, 0], y=xyz[:, 1], z=xyz[:, 2]), mode="add")
    print(f"vpt geometry: {len(nums)} nodes, {len(systems)} displacement systems")


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
