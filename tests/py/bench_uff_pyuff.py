"""pyuff side of the UFF read benchmark (examples/bench_uff.rs).

Times pyuff.UFF(path).read_sets() on one file (one process per file, so
the peak resident memory is that file's), and prints one JSON line: the
pyuff version, the wall-clock and CPU seconds, the process's peak resident
memory (VmHWM) before and after the read, the number of datasets and
one dataset's fields and values, which the Rust side compares with its own
read of the same file.

usage: bench_uff_pyuff.py FILE RECORD
"""

import json
import resource
import sys


def peak_rss():
    """Peak resident memory of this process in bytes (Linux VmHWM), else
    ru_maxrss."""
    try:
        with open("/proc/self/status") as f:
            for line in f:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024
import time

import pyuff


def main():
    path, record = sys.argv[1], int(sys.argv[2])
    rss0 = peak_rss()
    t0 = time.perf_counter()
    c0 = time.process_time()
    sets = pyuff.UFF(path).read_sets()
    secs = time.perf_counter() - t0
    cpu = time.process_time() - c0
    rss1 = peak_rss()
    if isinstance(sets, dict):
        sets = [sets]
    r = sets[record]
    data = r["data"]
    x = r["x"]
    print(
        json.dumps(
            {
                "pyuff": pyuff.__version__,
                "seconds": secs,
                "cpu_seconds": cpu,
                "peak_rss_before": rss0,
                "peak_rss_after": rss1,
                "datasets": len(sets),
                "record": {
                    "type": int(r["type"]),
                    "rsp_node": int(r["rsp_node"]),
                    "rsp_dir": int(r["rsp_dir"]),
                    "ref_node": int(r["ref_node"]),
                    "ref_dir": int(r["ref_dir"]),
                    "x": [float(v) for v in x],
                    "re": [float(v.real) for v in data],
                    "im": [float(v.imag) for v in data],
                },
            }
        )
    )


if __name__ == "__main__":
    main()
