"""Run descry's patterns with Python's `re` engine (through pandas'
Series.str.contains / Series.str.extract) on the same normalized values and
compare with what descry found.

Reference: Python's standard `re` module, an independent regex engine, driven
through pandas.

usage: regex_agreement.py CASES.json
CASES.json: [{"rule": ..., "pattern": <expanded regex>, "values": [...],
              "matched": [bool...], "groups": [[str|null...]...]}, ...]
Patterns using syntax whose meaning differs between the two dialects are
skipped and listed. Exits 1 on any disagreement.
"""
import json
import re
import sys

import pandas as pd

# Rust-only or differently-meant syntax: Unicode classes by name, POSIX
# classes, \z / \A variants, inline flags groups with U, Rust \u{...} escapes
# of more than 4 digits.
UNPORTABLE = [r"\p{", r"\P{", "[[:", r"\z", "(?U", "(?s", "(?x", "(?m"]


def to_python(pattern: str) -> str:
    """Rust writes \\u{2044}; Python writes \\u2044."""
    return re.sub(r"\\u\{([0-9a-fA-F]{1,4})\}", lambda m: "\\u" + m.group(1).rjust(4, "0"), pattern)


def main(path: str) -> int:
    cases = json.load(open(path, encoding="utf-8"))
    failures, checked, skipped = 0, 0, []
    for case in cases:
        pattern = case["pattern"]
        if any(tok in pattern for tok in UNPORTABLE):
            skipped.append(case["rule"])
            continue
        py = to_python(pattern)
        values = pd.Series(case["values"], dtype="object")
        contains = values.str.contains(py, regex=True).tolist()
        n_groups = re.compile(py).groups
        extracted = values.str.extract(py, expand=True) if n_groups else None
        for i, value in enumerate(case["values"]):
            checked += 1
            if bool(contains[i]) != case["matched"][i]:
                failures += 1
                print(f"FAIL {case['rule']}: {value!r}: re matched={contains[i]}, descry matched={case['matched'][i]}")
                continue
            if extracted is None or not case["matched"][i]:
                continue
            got = [None if pd.isna(x) else x for x in extracted.iloc[i].tolist()]
            if got != case["groups"][i]:
                failures += 1
                print(f"FAIL {case['rule']}: {value!r}: re groups={got}, descry groups={case['groups'][i]}")
    print(f"{checked} value/pattern pairs checked against Python re, {failures} disagreements; "
          f"skipped rules: {skipped or 'none'}")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1]))
