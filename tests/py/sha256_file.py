"""Print the SHA-256 (FIPS 180-4) of each file named, lower-case hex, one per
line, computed with Python's hashlib (a reference outside mortise)."""
import hashlib
import sys

for p in sys.argv[1:]:
    with open(p, "rb") as fh:
        print(hashlib.sha256(fh.read()).hexdigest())
