"""RF64 files written by hand per EBU Tech 3306 (the soundfile module is not
used), for tests/io_wav.rs: OUT/plain.wav (Python's wave module, 16-bit PCM)
and OUT/same.rf64.wav holding the same samples as RF64 ('RF64', RIFF size
0xFFFFFFFF, a 'ds64' chunk of 28 bytes with the 64-bit RIFF size, data size
and sample count and an empty table, 'fmt ', then 'data' of size
0xFFFFFFFF); OUT/bad_riff.rf64.wav whose ds64 RIFF size is 1000 bytes too
large, OUT/bad_data.rf64.wav whose ds64 data size runs past the file's end,
OUT/float.rf64.wav with 3 channels of float32 and its 'data' chunk giving
the size itself. Prints JSON with the samples (16-bit integers) and
the float samples, and the byte offsets of the ds64 fields. Usage:
rf64_write.py OUT"""
import json
import struct
import sys
import wave

import numpy as np

out = sys.argv[1]
rng = np.random.default_rng(64)
fs, n, ch = 8000, 3001, 2
pcm = (rng.standard_normal((n, ch)) * 6000).clip(-32768, 32767).astype("<i2")
with wave.open(out + "/plain.wav", "wb") as w:
    w.setnchannels(ch)
    w.setsampwidth(2)
    w.setframerate(fs)
    w.writeframes(pcm.tobytes())


def rf64(path, data, fmt_tag, bits, channels, riff_extra=0, data_extra=0, data_size32=0xFFFFFFFF):
    block = channels * bits // 8
    fmt = struct.pack("<HHIIHH", fmt_tag, channels, fs, fs * block, block, bits)
    body = data.tobytes()
    pad = len(body) & 1
    # RF64 header 12 + ds64 8+28 + fmt 8+16 + data 8+len (+ pad)
    total = 12 + 36 + 8 + len(fmt) + 8 + len(body) + pad
    ds64 = struct.pack("<QQQI", total - 8 + riff_extra, len(body) + data_extra, len(data), 0)
    with open(path, "wb") as f:
        f.write(b"RF64" + struct.pack("<I", 0xFFFFFFFF) + b"WAVE")
        f.write(b"ds64" + struct.pack("<I", len(ds64)) + ds64)
        f.write(b"fmt " + struct.pack("<I", len(fmt)) + fmt)
        f.write(b"data" + struct.pack("<I", data_size32) + body + b"\0" * pad)


rf64(out + "/same.rf64.wav", pcm, 1, 16, ch)
rf64(out + "/bad_riff.rf64.wav", pcm, 1, 16, ch, riff_extra=1000)
rf64(out + "/bad_data.rf64.wav", pcm, 1, 16, ch, data_extra=4)
flt = rng.standard_normal((500, 3)).astype("<f4")
rf64(out + "/float.rf64.wav", flt, 3, 32, 3, data_size32=flt.nbytes)
print(json.dumps({"fs": fs, "pcm": pcm.T.tolist(), "float": flt.astype(float).T.tolist(),
                  "riff_size_at": 20, "data_size_at": 28}))
