"""Scale benchmark of `descry cluster`'s fuzzy methods.

Run through benches/cluster_scale.sh, which builds descry and the Python
reference environment first. In one run it:

1. generates N distinct values (default 100,000) with realistic variants:
   invented product descriptions with numbers, each respelt a few ways
   (swapped, dropped, doubled or replaced letters, abbreviated words,
   other separators, other word order);
2. times `descry cluster` on them for every fuzzy method, with digits
   strict (the default) and loose;
3. times an exhaustive all-pairs comparison of the same N values with
   rapidfuzz's `process.cdist` (all cores, same threshold, score_cutoff),
   2,000 query rows per call against the rest of the values (the upper
   triangle), summing the calls' times, and prints the ratio to descry's
   time; the pairs it finds give descry's recall on all N values (digits
   loose, and digits strict);
4. measures descry's recall on a sample (default 10,000 values) against
   the pairs the exhaustive comparison finds at the same threshold
   (rapidfuzz for the edit distances and Jaro-Winkler; descry --exhaustive
   for q-gram Jaccard, which rapidfuzz does not have).

Recall is of the pairs that may join groups: of the reference pairs, those
whose identity runs are equal (what descry compares at all) and whose
words agree by the word check (`may_group` below, a Python port of
src/profile/cluster/guard.rs), against the pairs descry reports as kept.
Between two long values of several words descry's index reports only such
pairs (see docs/cluster.md), so this is what it promises to find. The
script also counts the pairs on which its word check and descry's `kept`
flag disagree (expected: none), and any pair descry reports that all-pairs
does not.

The values are generated already normalized (lower case, single spaces), so
descry and rapidfuzz compare exactly the same strings.

usage: cluster_scale.py DESCRY [--values N] [--sample N] [--cdist-values N] [--seed S] [--only M1,M2]
                        [--thresholds T1,T2] [--parts P] [--repeat R] [--no-cdist]

--repeat R times each descry run R times and prints the median (and the
range); --no-cdist skips the all-pairs comparison of all N values (recall
is then measured on the sample only); --thresholds keeps the listed
thresholds only (e.g. 0.2,0.9).

Long values: `--values 15000 --parts 3` (mean length about 84 characters).
"""
import argparse
import csv
import json
import os
import random
import re
import subprocess
import sys
import tempfile
import time

import numpy as np
from rapidfuzz import process
from rapidfuzz.distance import JaroWinkler, Levenshtein, OSA

# method name, descry --threshold, rapidfuzz scorer, scorer keyword args, cdist score_cutoff
METHODS = [
    ("levenshtein", "2", Levenshtein.distance, {}, 2),
    ("levenshtein", "0.2", Levenshtein.normalized_distance, {}, 0.2),
    ("osa", "2", OSA.distance, {}, 2),
    ("osa", "0.2", OSA.normalized_distance, {}, 0.2),
    ("jaro-winkler", "0.9", JaroWinkler.similarity, {"scorer_kwargs": {"prefix_weight": 0.1}}, 0.9),
    ("jaro-winkler", "0.93", JaroWinkler.similarity, {"scorer_kwargs": {"prefix_weight": 0.1}}, 0.93),
    ("qgram", "0.7", None, {}, 0.7),
]

SYLLABLES = [
    "ba", "ro", "ka", "ti", "mo", "lu", "ne", "sa", "vi", "do", "ra", "ke", "po", "zu", "fi", "ga", "le", "mi",
    "to", "na", "shi", "tra", "gro", "ver", "dal", "min", "tor", "cas", "pel", "rin",
]
KINDS = ["pump", "filter", "valve", "bearing", "hose", "seal", "gearbox", "engine", "axle", "clutch", "radiator",
         "starter", "alternator", "injector", "cylinder", "bracket", "housing", "gasket"]
QUALIFIERS = ["front", "rear", "left", "right", "upper", "lower", "inner", "outer", "heavy duty", "hydraulic",
              "assembly", "kit", "complete", "w/ seal", "reman", "new", "used", "oem", "aftermarket"]


def invented_word(rng: random.Random) -> str:
    return "".join(rng.choice(SYLLABLES) for _ in range(rng.randint(2, 4)))


def base_value(rng: random.Random, makers: list) -> str:
    parts = [rng.choice(makers), rng.choice(KINDS)]
    if rng.random() < 0.7:
        parts.append(str(rng.choice([rng.randint(1, 99), rng.randint(100, 9999)])))
    for _ in range(rng.randint(0, 2)):
        parts.insert(rng.randint(1, len(parts)), rng.choice(QUALIFIERS))
    if rng.random() < 0.4:
        parts.append(invented_word(rng))
    return " ".join(parts)


def variant(rng: random.Random, s: str) -> str:
    chars = list(s)
    kind = rng.randrange(7)
    i = rng.randrange(max(1, len(chars) - 1))
    letters = "abcdefghijklmnopqrstuvwxyz"
    if kind == 0 and len(chars) > 1:
        chars[i], chars[i + 1] = chars[i + 1], chars[i]
    elif kind == 1:
        del chars[i]
    elif kind == 2:
        chars.insert(i, chars[i])
    elif kind == 3:
        chars[i] = rng.choice(letters)
    elif kind == 4:
        words = s.split(" ")
        j = rng.randrange(len(words))
        if len(words[j]) > 4:
            words[j] = words[j][0] + re.sub("[aeiou]", "", words[j][1:])
        return " ".join(words)
    elif kind == 5:
        return s.replace(" ", rng.choice(["-", "/", " - ", ""]), 1)
    else:
        words = s.split(" ")
        rng.shuffle(words)
        return " ".join(words)
    return "".join(chars)


def normalized(s: str) -> str:
    return " ".join(s.lower().split())


def generate(n: int, seed: int, parts: int = 1) -> list:
    """N distinct values; with parts > 1 each base value is that many
    descriptions joined by ", " (about 80 characters for 3)."""
    rng = random.Random(seed)
    makers = [invented_word(rng) for _ in range(2000)]
    seen, out = set(), []
    while len(out) < n:
        base = ", ".join(base_value(rng, makers) for _ in range(parts))
        group = [base]
        for _ in range(rng.choice([0, 1, 1, 2, 3, 5])):
            group.append(variant(rng, rng.choice(group)))
        for v in group:
            v = normalized(v)
            if v and v not in seen and len(out) < n:
                seen.add(v)
                out.append(v)
    return out


def write_csv(path: str, values: list) -> None:
    with open(path, "w", newline="", encoding="utf-8") as f:
        w = csv.writer(f, quoting=csv.QUOTE_ALL, lineterminator="\n")
        w.writerow(["value"])
        for v in values:
            w.writerow([v])


def run_descry(descry: str, path: str, method: str, threshold: str, digits: str, extra=()) -> tuple:
    args = [descry, "cluster", path, "--column", "value", "--method", method, "--threshold", threshold,
            "--digits", digits, "--format", "json", *extra]
    start = time.perf_counter()
    out = subprocess.run(args, capture_output=True, text=True)
    seconds = time.perf_counter() - start
    if out.returncode != 0:
        sys.exit(f"descry failed: {' '.join(args)}\n{out.stderr}")
    return seconds, json.loads(out.stdout)


ROMAN = {"i", "ii", "iii", "iv", "v", "vi", "vii", "viii", "ix", "x", "xi", "xii", "xiii", "xiv", "xv",
         "xvi", "xvii", "xviii", "xix", "xx"}


def identity_runs(s: str, digits: str) -> tuple:
    """What descry requires equal before it compares two values: digit runs
    (unless loose), letter runs of one or two characters, Roman numerals."""
    runs = re.findall(r"[^\W\d_]+|\d+", s)
    return tuple(r for r in runs
                 if (r.isdigit() and digits == "strict") or (r.isalpha() and (len(r) <= 2 or r in ROMAN)))


def words_of(s: str) -> list:
    """The words of a value: letter runs that are not identity runs."""
    return [r for r in re.findall(r"[^\W\d_]+", s) if len(r) > 2 and r not in ROMAN]


def is_typo(a: str, b: str) -> bool:
    """One word a misspelling of the other: one edit, stricter on short words."""
    if a.startswith(b) or b.startswith(a):
        return False
    shorter = min(len(a), len(b))
    if shorter < 4 or OSA.distance(a, b) != 1:
        return False
    swap = len(a) == len(b) and Levenshtein.distance(a, b) == 2
    if swap:
        return True
    if len(a) == len(b):
        return shorter >= 7
    return shorter >= 6


def may_group(a: str, b: str, digits: str) -> bool:
    """descry's word check (src/profile/cluster/guard.rs): equal identity
    runs, and the same words, or words joined or split, or as many words
    on both sides with one (two from six words) misspelled."""
    if identity_runs(a, digits) != identity_runs(b, digits):
        return False
    wa, wb = words_of(a), words_of(b)
    rest_b = list(wb)
    only_a = []
    for w in wa:
        if w in rest_b:
            rest_b.remove(w)
        else:
            only_a.append(w)
    only_b = rest_b
    if not only_a and not only_b:
        return True
    if "".join(only_a) == "".join(only_b):
        return True
    most = 2 if max(len(wa), len(wb)) >= 6 else 1
    return (len(only_a) == len(only_b) and len(only_a) <= most
            and all(is_typo(x, y) for x, y in zip(only_a, only_b)))


def cdist_pairs(values: list, scorer, kwargs: dict, cutoff, chunk: int, want_pairs: bool) -> tuple:
    """Exhaustive all-pairs (upper triangle) with rapidfuzz; seconds and pairs."""
    is_distance = scorer is not JaroWinkler.similarity
    pairs = set()
    total = 0.0
    for start in range(0, len(values), chunk):
        queries = values[start:start + chunk]
        choices = values[start:]
        t = time.perf_counter()
        m = process.cdist(queries, choices, scorer=scorer, score_cutoff=cutoff, workers=-1,
                          dtype=np.float32 if isinstance(cutoff, float) else np.int32, **kwargs)
        if is_distance:
            hit = m <= (cutoff + 1e-6 if isinstance(cutoff, float) else cutoff)
        else:
            hit = m >= cutoff
        rows, cols = np.nonzero(hit)
        total += time.perf_counter() - t
        if want_pairs:
            for r, c in zip(rows.tolist(), cols.tolist()):
                a, b = start + r, start + c
                if b > a:
                    pairs.add((min(values[a], values[b]), max(values[a], values[b])))
    if want_pairs and isinstance(cutoff, float):
        # The matrix holds float32 scores: a score just below the threshold
        # (0.8999999999999999) can round up to it. Keep the pairs whose
        # score, recomputed in double precision by the same scorer, is
        # within the threshold.
        score = lambda a, b: scorer(a, b, **kwargs.get("scorer_kwargs", {}))
        pairs = {p for p in pairs if (score(*p) <= cutoff + 1e-12 if is_distance else score(*p) >= cutoff)}
    return total, pairs


def descry_pairs(report: dict) -> set:
    return {(min(p["a"], p["b"]), max(p["a"], p["b"])) for p in report.get("pairs", [])}


def descry_kept(report: dict) -> set:
    return {(min(p["a"], p["b"]), max(p["a"], p["b"])) for p in report.get("pairs", []) if p["kept"]}


def kept_recall(report: dict, reference: set, digits: str, label: str) -> float:
    """Recall of the reference pairs that may group (equal identity runs,
    words agree) among the pairs descry reports as kept; prints any pair
    descry reports that the reference lacks, and any disagreement of the
    two word checks."""
    got, kept = descry_pairs(report), descry_kept(report)
    ref = {(a, b) for a, b in reference if may_group(a, b, digits)}
    extra = {(a, b) for a, b in got - reference if identity_runs(a, digits) == identity_runs(b, digits)}
    if extra:
        print(f"  {label}: {len(extra)} pairs descry reports that all-pairs does not, e.g. {sorted(extra)[:3]}")
    disagree = {p for p in got if (p in kept) != may_group(*p, digits)}
    if disagree:
        print(f"  {label}: the word checks disagree on {len(disagree)} pairs, e.g. {sorted(disagree)[:3]}")
    return len(kept & ref) / len(ref) if ref else 1.0


def timed(descry: str, path: str, method: str, threshold: str, digits: str, repeat: int) -> tuple:
    """The median time of `repeat` runs, the range, and the last report."""
    times, report = [], None
    for _ in range(repeat):
        seconds, report = run_descry(descry, path, method, threshold, digits, ["--pairs"])
        times.append(seconds)
    times.sort()
    return times[len(times) // 2], (times[0], times[-1]), report


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("descry")
    ap.add_argument("--values", type=int, default=100_000)
    ap.add_argument("--sample", type=int, default=10_000)
    ap.add_argument("--cdist-values", type=int, default=None,
                    help="time cdist on this many values and extrapolate quadratically (default: all values)")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--only", default="", help="comma-separated method names to run (default: all)")
    ap.add_argument("--parts", type=int, default=1,
                    help="descriptions per value: 3 gives long values of about 80 characters")
    ap.add_argument("--thresholds", default="", help="comma-separated thresholds to run (default: all)")
    ap.add_argument("--repeat", type=int, default=1, help="time each descry run this many times (median)")
    ap.add_argument("--no-cdist", action="store_true", help="skip the all-pairs comparison of all values")
    args = ap.parse_args()
    print(f"load average at start: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")

    values = generate(args.values, args.seed, args.parts)
    assert all(v == normalized(v) for v in values)
    rng = random.Random(args.seed + 1)
    sample = sorted(rng.sample(values, min(args.sample, len(values))))
    tmp = tempfile.mkdtemp(prefix="descry-bench-")
    full_csv, sample_csv = os.path.join(tmp, "values.csv"), os.path.join(tmp, "sample.csv")
    write_csv(full_csv, values)
    write_csv(sample_csv, sample)
    lengths = [len(v) for v in values]
    print(f"{len(values):,} distinct values (mean length {sum(lengths) / len(lengths):.1f} characters, "
          f"longest {max(lengths)}); recall sample {len(sample):,}; {os.cpu_count()} cores")
    print(f"examples: {values[:3]}\n")

    cdist_n = args.cdist_values or len(values)
    header = (f"{'method':<14}{'threshold':>10}{'strict s':>10}{'loose s':>10}{'loose range':>14}"
              f"{'compared (loose)':>18}{'share':>8}{'found':>8}{'kept':>8}{'by words':>9}{'cdist s':>10}{'ratio':>8}"
              f"{'recall strict':>15}{'recall loose':>14}{'all strict':>12}{'all loose':>11}")
    print(header)
    print("-" * len(header))
    results = []
    all_pair_count = len(values) * (len(values) - 1) // 2
    for method, threshold, scorer, kwargs, cutoff in METHODS:
        if args.only and method not in args.only.split(","):
            continue
        if args.thresholds and threshold not in args.thresholds.split(","):
            continue
        strict_s, _, strict = timed(args.descry, full_csv, method, threshold, "strict", args.repeat)
        loose_s, loose_range, loose = timed(args.descry, full_csv, method, threshold, "loose", args.repeat)
        full_recall = ["n/a", "n/a"]
        if scorer is not None and not args.no_cdist:
            full = cdist_n == len(values)
            cd_s, all_pairs = cdist_pairs(values[:cdist_n], scorer, kwargs, cutoff, 2000, full)
            if not full:
                cd_s *= (len(values) / cdist_n) ** 2
            cd_text = f"{cd_s:.1f}" + ("" if full else "*")
            ratio = f"{cd_s / loose_s:.0f}x"
            if full:
                for i, (report, digits) in enumerate([(strict, "strict"), (loose, "loose")]):
                    recall = kept_recall(report, all_pairs, digits, f"{method} {threshold} {digits}, all values")
                    full_recall[i] = f"{recall:.4f}"
        else:
            cd_text, ratio = "n/a", "n/a"
        recalls = []
        for digits in ("strict", "loose"):
            _, found = run_descry(args.descry, sample_csv, method, threshold, digits, ["--pairs"])
            if scorer is not None:
                _, ref = cdist_pairs(sample, scorer, kwargs, cutoff, 2000, True)
            else:
                _, exhaustive = run_descry(args.descry, sample_csv, method, threshold, digits, ["--pairs", "--exhaustive"])
                ref = descry_pairs(exhaustive)
            recalls.append(kept_recall(found, ref, digits, f"{method} {threshold} {digits}, sample"))
        results.append((method, threshold, strict_s, loose_s, recalls, full_recall))
        share = 100.0 * loose["pairs_compared"] / all_pair_count
        print(f"{method:<14}{threshold:>10}{strict_s:>10.2f}{loose_s:>10.2f}"
              f"{f'{loose_range[0]:.2f}-{loose_range[1]:.2f}':>14}{loose['pairs_compared']:>18,}{share:>7.2f}%"
              f"{loose['pairs_found']:>8,}{loose['pairs_kept']:>8,}{loose.get('forms_searched_by_words', 0):>9,}"
              f"{cd_text:>10}{ratio:>8}{recalls[0]:>15.4f}{recalls[1]:>14.4f}"
              f"{full_recall[0]:>12}{full_recall[1]:>11}", flush=True)
    print("\ntimes are wall-clock seconds of the whole command (reading the CSV included); cdist is "
          "rapidfuzz.process.cdist over the upper triangle of all pairs, all cores, summed over its calls"
          + ("; * extrapolated from %d values" % cdist_n if cdist_n < len(values) else "")
          + f"; recall (of the pairs that may group) strict/loose on the {len(sample):,}-value sample, 'all' on "
          f"all {len(values):,} values; times are medians of {args.repeat} run(s); share = compared / all pairs")
    print(f"load average at end: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    slow = [r for r in results if max(r[2], r[3]) >= 10.0]
    low = [r for r in results if min(r[4]) < 0.99 or any(x != "n/a" and float(x) < 0.99 for x in r[5])]
    print(f"under 10 s: {'yes' if not slow else 'NO: ' + str(slow)}; recall >= 0.99: {'yes' if not low else 'NO: ' + str(low)}")
    return 1 if slow or low else 0


if __name__ == "__main__":
    sys.exit(main())
