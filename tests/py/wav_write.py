"""WAV files for tests/io_wav.rs, written by Python's wave module,
scipy.io.wavfile and (WAVE_FORMAT_EXTENSIBLE, which neither writes) by hand
with struct after Microsoft's WAVEFORMATEXTENSIBLE layout. Prints JSON: for
each file its name, channels, rate and the samples per channel at full
scale 1 (PCM divided by 2^(bits-1); 8-bit: (v-128)/128).
Usage: wav_write.py OUTDIR"""
import json
import struct
import sys
import wave

import numpy as np
from scipy.io import wavfile

out = sys.argv[1]
rng = np.random.default_rng(7)
files = []


def record(name, rate, x):
    files.append({"name": name, "rate": rate, "samples": x.T.tolist()})


n = 1001
for bits in (8, 16, 24, 32):
    ch = 3
    full = 2 ** (bits - 1)
    v = rng.integers(-full, full, size=(n, ch))
    if bits == 8:
        raw = (v + 128).astype(np.uint8).tobytes()
    elif bits == 24:
        b = v.astype("<i4").view(np.uint8).reshape(n, ch, 4)[:, :, :3]
        raw = b.tobytes()
    else:
        raw = v.astype(f"<i{bits // 8}").tobytes()
    with wave.open(f"{out}/wave_{bits}.wav", "wb") as w:
        w.setnchannels(ch)
        w.setsampwidth(bits // 8)
        w.setframerate(51200)
        w.writeframes(raw)
    record(f"wave_{bits}.wav", 51200, v / full)

for dt, scale in (("int16", 2**15), ("int32", 2**31), ("float32", 1), ("float64", 1), ("uint8", None)):
    if dt == "uint8":
        v = rng.integers(0, 256, size=(n, 2)).astype(np.uint8)
        x = (v.astype(float) - 128) / 128
    elif dt.startswith("float"):
        v = rng.standard_normal((n, 2)).astype(dt)
        x = v.astype(float)
    else:
        info = np.iinfo(dt)
        v = rng.integers(info.min, info.max, size=(n, 2), dtype=dt)
        x = v.astype(float) / scale
    wavfile.write(f"{out}/scipy_{dt}.wav", 48000, v)
    # scipy reads back the same samples
    r, back = wavfile.read(f"{out}/scipy_{dt}.wav")
    assert r == 48000 and np.array_equal(back, v)
    record(f"scipy_{dt}.wav", 48000, x)

# WAVE_FORMAT_EXTENSIBLE: 4 channels of 24-bit PCM and 2 of 32-bit float
tail = bytes([0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71])
for name, sub, bits, ch in (("ext_pcm24.wav", 1, 24, 4), ("ext_float32.wav", 3, 32, 2)):
    if sub == 1:
        v = rng.integers(-(2**23), 2**23, size=(n, ch))
        data = v.astype("<i4").view(np.uint8).reshape(n, ch, 4)[:, :, :3].tobytes()
        x = v / 2**23
    else:
        v = rng.standard_normal((n, ch)).astype("<f4")
        data = v.tobytes()
        x = v.astype(float)
    ba = ch * bits // 8
    fmt = struct.pack("<HHIIHHHHI", 0xFFFE, ch, 25600, 25600 * ba, ba, bits, 22, bits, 0) + struct.pack("<H", sub) + tail
    chunks = b"fmt " + struct.pack("<I", len(fmt)) + fmt
    chunks += b"LIST" + struct.pack("<I", 5) + b"abcde" + b"\0"  # odd chunk with its pad byte
    chunks += b"data" + struct.pack("<I", len(data)) + data
    with open(f"{out}/{name}", "wb") as f:
        f.write(b"RIFF" + struct.pack("<I", 4 + len(chunks)) + b"WAVE" + chunks)
    record(name, 25600, x)

print(json.dumps(files))
