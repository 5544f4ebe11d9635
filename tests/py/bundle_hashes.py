"""Independent reference for a bundle's hashes (the layout in the docs of
src/io/bundle.rs), written from that description with the Python standard
library only (hashlib, json, struct, re).

Usage: bundle_hashes.py BUNDLE.json
Prints one line `content <hex>` (SHA-256 of the file's bytes with the value of
the final "content_sha256" member replaced by 64 '0' characters), then for
every stored set `set <where> <computed hex> <recorded hex>`, and for every
result carrying an uncertainty (version 4) `uncertainty <where> <computed hex>
<recorded hex>`.
"""
import hashlib
import json
import re
import struct
import sys

NAN_BITS = 0x7FF8000000000000


def u64(n):
    return struct.pack("<Q", n)


def text(s):
    b = s.encode("utf-8")
    return u64(len(b)) + b


def f64(x):
    if x is None:
        return u64(NAN_BITS)
    if x == "inf":
        x = float("inf")
    elif x == "-inf":
        x = float("-inf")
    x = float(x)
    if x != x:
        return u64(NAN_BITS)
    return struct.pack("<d", x)


def dof(d):
    return text(d["component"]) + text(d["node"]) + text(d["dir"]) + bytes([1 if d["positive"] else 0])


def canonical(s):
    out = b"mortise-set 1\n" + text(s["name"])
    out += u64(len(s["freqs"])) + b"".join(f64(f) for f in s["freqs"])
    for key in ("outputs", "inputs"):
        out += u64(len(s[key])) + b"".join(dof(d) for d in s[key])
    out += text(s["out_qty"]) + text(s["in_qty"]) + text(s.get("signal") or "")
    out += u64(len(s["data"])) + b"".join(f64(re_) + f64(im) for re_, im in s["data"])
    out += u64(len(s["present"])) + bytes(1 if p else 0 for p in s["present"])
    coh = s.get("coherence")
    out += b"\x00" if coh is None else b"\x01" + u64(len(coh)) + b"".join(f64(c) for c in coh)
    prov = s.get("provenance", [])
    out += u64(len(prov))
    for p in prov:
        out += text(p["file"]) + text(p["sha256"]) + text(p["format"]) + text(p.get("options", ""))
    warns = s.get("warnings", [])
    out += u64(len(warns)) + b"".join(text(w) for w in warns)
    return out


def uncertainty_canonical(set_sha, u):
    out = b"mortise-uncertainty 1\n" + text(set_sha) + text(u["method"])
    out += u64(len(u["std"])) + b"".join(f64(x) for x in u["std"])
    out += u64(len(u["flags"])) + bytes(u["flags"])
    return out


def main():
    raw = open(sys.argv[1], "rb").read()
    m = re.search(rb'"content_sha256"\s*:\s*"([0-9a-fA-F]{64})"\s*\}\s*\Z', raw)
    if m is None:
        sys.exit("no final content_sha256 member")
    zeroed = raw[: m.start(1)] + b"0" * 64 + raw[m.end(1):]
    print("content", hashlib.sha256(zeroed).hexdigest())
    b = json.loads(raw)
    for i, inp in enumerate(b.get("inputs", [])):
        for j, s in enumerate(inp.get("sets") or []):
            print("set", f"input{i + 1}.set{j + 1}", hashlib.sha256(canonical(s)).hexdigest(), s["sha256"])
    for k, s in enumerate(b.get("results", [])):
        print("set", f"result{k + 1}", hashlib.sha256(canonical(s)).hexdigest(), s["sha256"])
        u = s.get("uncertainty")
        if u is not None:
            h = hashlib.sha256(uncertainty_canonical(s["sha256"], u)).hexdigest()
            print("uncertainty", f"result{k + 1}", h, u["sha256"])


main()
