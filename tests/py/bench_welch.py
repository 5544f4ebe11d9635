"""The Welch benchmark's data and its scipy side (examples/bench_welch.rs).

  bench_welch.py write WAV MINUTES   8 channels at 51.2 kHz, 32-bit float, seeded
                                     noise with a tone per channel, written in
                                     blocks (the header by hand, RIFF layout)
  bench_welch.py welch WAV SEG OUT   scipy.signal.welch of every channel (hann,
                                     nperseg SEG, noverlap SEG//2, detrend
                                     'constant', density) on float64 samples;
                                     the PSDs to OUT (float64 LE, channel after
                                     channel); prints JSON {"seconds": time of
                                     the welch calls alone, "read_seconds"}
"""
import json
import struct
import sys
import time

import numpy as np
from scipy import signal
from scipy.io import wavfile

FS = 51200
CH = 8

if sys.argv[1] == "write":
    path, minutes = sys.argv[2], float(sys.argv[3])
    n = int(FS * 60 * minutes)
    data_bytes = n * CH * 4
    rng = np.random.default_rng(51200)
    with open(path, "wb") as f:
        fmt = struct.pack("<HHIIHHH", 3, CH, FS, FS * CH * 4, CH * 4, 32, 0)
        f.write(b"RIFF" + struct.pack("<I", 4 + 8 + len(fmt) + 8 + data_bytes) + b"WAVE")
        f.write(b"fmt " + struct.pack("<I", len(fmt)) + fmt)
        f.write(b"data" + struct.pack("<I", data_bytes))
        block = FS * 10
        for start in range(0, n, block):
            m = min(block, n - start)
            t = (start + np.arange(m)) / FS
            x = rng.standard_normal((m, CH)) * 0.1
            x += 0.5 * np.sin(2 * np.pi * np.outer(t, 100.0 * (1 + np.arange(CH))))
            f.write(x.astype("<f4").tobytes())
    print(json.dumps({"samples_per_channel": n, "bytes": data_bytes + 46}))
elif sys.argv[1] == "welch":
    path, seg, out = sys.argv[2], int(sys.argv[3]), sys.argv[4]
    t0 = time.perf_counter()
    rate, x = wavfile.read(path, mmap=True)
    read = 0.0
    spent = 0.0
    psds = []
    for c in range(x.shape[1]):
        t1 = time.perf_counter()
        xc = np.asarray(x[:, c], dtype=np.float64)
        t2 = time.perf_counter()
        read += t2 - t1
        _, p = signal.welch(xc, fs=rate, window="hann", nperseg=seg, noverlap=seg // 2,
                            detrend="constant", scaling="density")
        spent += time.perf_counter() - t2
        psds.append(p)
        del xc
    np.asarray(psds, dtype="<f8").tofile(out)
    print(json.dumps({"seconds": spent, "read_seconds": read}))
