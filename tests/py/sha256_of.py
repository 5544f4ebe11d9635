"""The SHA-256 of a file by Python's hashlib (lower-case hex).
Usage: sha256_of.py FILE"""
import hashlib
import sys

with open(sys.argv[1], "rb") as fh:
    print(hashlib.sha256(fh.read()).hexdigest())
