"""Score pairs of strings with rapidfuzz (the general-purpose reference
library, pinned in requirements.txt) and compare with descry's scores.

Levenshtein, optimal string alignment (rapidfuzz's OSA) and Jaro-Winkler
(prefix weight 0.1) come from rapidfuzz.distance; the q-gram Jaccard
similarity is computed here from its definition (distinct q-grams of the
code points; a string shorter than q is its own single q-gram), because
rapidfuzz has no q-gram measure.

usage: distances.py PAIRS.json
  PAIRS.json: [{"a": ..., "b": ..., "levenshtein": int, "osa": int,
                "jaro_winkler": float, "qgram2": float, "qgram3": float}]
"""
import json
import sys

from rapidfuzz.distance import JaroWinkler, Levenshtein, OSA

TOLERANCE = 1e-9


def qgrams(s: str, q: int) -> set:
    if len(s) < q:
        return {s}
    return {s[i:i + q] for i in range(len(s) - q + 1)}


def jaccard(a: str, b: str, q: int) -> float:
    ga, gb = qgrams(a, q), qgrams(b, q)
    union = len(ga | gb)
    return 1.0 if union == 0 else len(ga & gb) / union


def main(path: str) -> int:
    pairs = json.load(open(path, encoding="utf-8"))
    failures = 0
    worst = 0.0
    for p in pairs:
        a, b = p["a"], p["b"]
        want = {
            "levenshtein": Levenshtein.distance(a, b),
            "osa": OSA.distance(a, b),
            "jaro_winkler": JaroWinkler.similarity(a, b, prefix_weight=0.1),
            "qgram2": jaccard(a, b, 2),
            "qgram3": jaccard(a, b, 3),
        }
        for name, value in want.items():
            diff = abs(value - p[name])
            worst = max(worst, diff)
            if diff > TOLERANCE:
                failures += 1
                if failures <= 20:
                    print(f"FAIL {name} {a!r} {b!r}: rapidfuzz {value!r}, descry {p[name]!r}")
    print(f"{len(pairs)} pairs x 5 measures, {failures} disagreements beyond {TOLERANCE}, largest difference {worst:.3g}")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1]))
