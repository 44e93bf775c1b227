"""Normalize values with Python's unicodedata (NFKC, Unicode Standard Annex
#15), str.lower and str.split (which splits on Unicode white space) and
compare with descry's normalized forms.

Reference: the Python standard library's unicodedata module.

usage: normalization.py PAIRS.json   ([{"value": ..., "normalized": ...}])
"""
import json
import sys
import unicodedata


def main(path: str) -> int:
    pairs = json.load(open(path, encoding="utf-8"))
    failures = 0
    for p in pairs:
        want = " ".join(unicodedata.normalize("NFKC", p["value"]).lower().split())
        if want != p["normalized"]:
            failures += 1
            print(f"FAIL {p['value']!r}: python {want!r}, descry {p['normalized']!r}")
    print(f"{len(pairs)} values normalized, {failures} disagreements with unicodedata NFKC")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1]))
