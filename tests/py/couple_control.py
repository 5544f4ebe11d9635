"""Reference for cascade, sum of paths and mechanical series/parallel.

python-control 0.10.2 (PyPI): control.frd builds MIMO frequency-response
data, control.series(sys1, sys2) is sys2 * sys1 per frequency, and
control.parallel(sys1, sys2) is sys1 + sys2. numpy gives the mechanical
parallel combination inv(inv(R1) + inv(R2)) of two receptance matrices.

usage: couple_control.py OUT.json
"""

import json
import sys

import control
import numpy as np

rng = np.random.default_rng(7)
freqs = np.linspace(10.0, 500.0, 41)
omega = 2 * np.pi * freqs


def rand(no, ni):
    return rng.normal(size=(no, ni, len(freqs))) + 1j * rng.normal(size=(no, ni, len(freqs)))


def flat(r):
    # (out, in, freq) -> frequency-major (freq, out, in)
    a = np.transpose(r, (2, 0, 1))
    return {"re": a.real.ravel().tolist(), "im": a.imag.ravel().tolist()}


def set_json(name, oq, iq, outs, ins, r):
    d = {"name": name, "out_qty": oq, "in_qty": iq, "outputs": outs, "inputs": ins}
    d.update(flat(r))
    return d


# first: mobility from 3 forces to 2 velocities; second: pressure per velocity at 4 mics
r1 = rand(2, 3) * 1e-3
r2 = rand(4, 2) * 50.0
r3 = rand(2, 3) * 1e-3
s1 = control.frd(r1, omega)
s2 = control.frd(r2, omega)
s3 = control.frd(r3, omega)
ser = control.series(s1, s2)
par = control.parallel(s1, s3)

vel = ["mount:1+Z", "mount:2+Z"]
frc = ["unit:1+Z", "unit:2+Z", "unit:3+Y"]
mic = ["room:m1", "room:m2", "room:m3", "room:m4"]

# mechanical: two 2x2 receptances of lumped mass-spring-damper elements,
# inverted per line from K - w^2 M + i w C (e^{+iwt})
def recept(M, K, C):
    D = K[None] - (omega**2)[:, None, None] * M[None] + 1j * omega[:, None, None] * C[None]
    return np.linalg.inv(D)


Ra = recept(np.diag([1.0, 2.0]), np.array([[3e5, -1e5], [-1e5, 2e5]]), np.array([[20.0, -5.0], [-5.0, 10.0]]))
Rb = recept(np.diag([0.5, 0.3]), np.array([[1e5, -4e4], [-4e4, 6e4]]), np.array([[8.0, 0.0], [0.0, 3.0]]))
Rpar = np.linalg.inv(np.linalg.inv(Ra) + np.linalg.inv(Rb))
tr = lambda a: np.transpose(a, (1, 2, 0))
dofs = ["e:1+X", "e:2+X"]

out = {
    "freqs": freqs.tolist(),
    "first": set_json("first", "velocity", "force", vel, frc, s1.frdata),
    "second": set_json("second", "pressure", "velocity", mic, vel, s2.frdata),
    "third": set_json("third", "velocity", "force", vel, frc, s3.frdata),
    "series": set_json("series", "pressure", "force", mic, frc, ser.frdata),
    "parallel": set_json("parallel", "velocity", "force", vel, frc, par.frdata),
    "ra": set_json("ra", "displacement", "force", dofs, dofs, tr(Ra)),
    "rb": set_json("rb", "displacement", "force", dofs, dofs, tr(Rb)),
    "rpar": set_json("rpar", "displacement", "force", dofs, dofs, tr(Rpar)),
}
with open(sys.argv[1], "w") as f:
    json.dump(out, f)
print("python-control", control.__version__)
