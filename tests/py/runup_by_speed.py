"""A run-up whose second order changes with speed, as a time CSV, for the
order-by-speed tables (tests/workspace_time_records.rs, the page's e2e).

fs = 4096 Hz, 20 s, the speed rising linearly from 600 to 3600 rpm
(s(t) = 10 + 2.5 t rev/s, so the angle is theta(t) = 10 t + 1.25 t^2
revolutions). Channel fan:1+Z (force, N) holds order 2 with the amplitude
A(s) = 0.5 + 0.05 s N and the phase phi(s) = 0.3 + 0.01 s rad (the component
A cos(2 pi 2 theta + phi), so its complex amplitude A e^{i phi} under
e^{+i omega t}), order 3.5 at 1 N, and seeded noise (numpy). A second
channel tach:1+Z carries one pulse a revolution (1 from theta's fraction
0 to 0.25, 0 else). Prints JSON: the profile, and the expected complex
amplitude of order 2 every 0.5 rev/s from 10 to 60 rev/s. Usage:
runup_by_speed.py OUT.csv"""
import json
import sys

import numpy as np

out = sys.argv[1]
fs = 4096.0
t = np.arange(int(20 * fs)) / fs
theta = 10 * t + 1.25 * t * t
s = 10 + 2.5 * t
amp = lambda sp: 0.5 + 0.05 * sp  # noqa: E731
phase = lambda sp: 0.3 + 0.01 * sp  # noqa: E731
rng = np.random.default_rng(7)
x = amp(s) * np.cos(2 * np.pi * 2 * theta + phase(s)) + np.cos(2 * np.pi * 3.5 * theta) \
    + 0.01 * rng.standard_normal(t.size)
tach = (np.mod(theta, 1.0) < 0.25).astype(float)
with open(out, "w") as fh:
    fh.write("time [s],fan:1+Z [N],tach:1+Z [1]\n")
    for row in zip(t, x, tach):
        fh.write("%.17g,%.17g,%g\n" % row)
speeds = np.arange(10.0, 60.0 + 1e-9, 0.5)
z = amp(speeds) * np.exp(1j * phase(speeds))
print(json.dumps({"speed": "0:600,20:3600", "order": 2,
                  "speeds": speeds.tolist(), "re": z.real.tolist(), "im": z.imag.tolist()}))
