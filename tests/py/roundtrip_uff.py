"""Write a UFF dataset 58 file with pyuff (a reference library outside
mortise), ASCII or binary, with two FRFs of an invented heat-pump casing
(response node 1 +Z, references nodes 1 and 2 +Z, receptance: ordinate type
8 = displacement, denominator 13 = excitation force, as pyuff's dataset 58
documentation lists them). Prints, as JSON, the frequencies and values
handed to pyuff.
Usage: roundtrip_uff.py OUT_FILE [binary]
"""
import json
import os
import sys

import numpy as np
import pyuff

path = sys.argv[1]
binary = len(sys.argv) > 2 and sys.argv[2] == "binary"
rng = np.random.default_rng(7)
freqs = np.arange(1, 201) * 2.5
sets = []
values = {}
for ref in (1, 2):
    data = rng.normal(size=freqs.size) + 1j * rng.normal(size=freqs.size)
    data *= 1e-4
    values[str(ref)] = [[float(v.real), float(v.imag)] for v in data]
    sets.append(
        pyuff.prepare_58(
            binary=1 if binary else 0,
            id1="casing FRF",
            func_type=4,
            rsp_node=1,
            rsp_dir=3,
            ref_node=ref,
            ref_dir=3,
            ord_data_type=6,
            num_pts=freqs.size,
            abscissa_spacing=1,
            abscissa_min=float(freqs[0]),
            abscissa_inc=2.5,
            abscissa_spec_data_type=18,
            ordinate_spec_data_type=8,
            orddenom_spec_data_type=13,
            data=data,
            x=freqs,
        )
    )
if os.path.exists(path):
    os.remove(path)
# pyuff 2.5.8 truncates binary output in 'overwrite' mode; 'add' to a new file works
pyuff.UFF(path).write_sets(sets, mode="add", force_double=True)
print(json.dumps({"freqs": freqs.tolist(), "values": values}))
