"""Score descry's `cluster` and `propose` on the real columns against the hand-labelled truth.

    python score.py DESCRY_BINARY OUTDIR [--json RESULTS.json] [--only cluster|propose]

Writes the columns into OUTDIR (load.py), then for every column:

* runs `descry cluster` with each method at its default settings and prints
  the pairwise precision and recall of its clusters against
  truth/<name>.groups.csv. Only values listed in the truth count: a predicted
  pair is two distinct labelled values in one cluster, a true pair two
  distinct labelled values in one truth group.
* runs `descry propose` and prints the draft's rule count, its coverage
  (check.coverage.row_share), how many drafted counts saw a single number
  (range lo == hi), and how many word pairs that the draft puts into one flag
  (and, apart, into one label case) are the same word according to
  truth/<name>.words.csv.
* for a column with truth/<name>.readings.csv, applies the draft to the
  column's distinct values (`descry apply` to CSV) and counts the values whose
  truth has a number that the draft's measure for that quantity reads within
  1% of it, after converting the draft's unit to the truth's.

Everything is deterministic: fixed column and method order, sorted output.
The functions return plain dicts so that a test can assert floors on them.
"""

import csv
import itertools
import json
import os
import re
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
import load  # noqa: E402

METHODS = ["letters", "words", "qgram", "levenshtein", "osa", "jaro-winkler"]

# One of each unit, in the truth's unit of its quantity (inches, pounds).
# Exact factors: 1 in = 2.54 cm, 1 ft = 12 in, 1 lb = 0.45359237 kg.
TO_TRUTH_UNIT = {
    "length": {"in": 1.0, "inch": 1.0, "inches": 1.0, '"': 1.0, "''": 1.0,
               "ft": 12.0, "feet": 12.0, "foot": 12.0, "'": 12.0,
               "mm": 1 / 25.4, "cm": 1 / 2.54, "m": 100 / 2.54},
    "mass": {"lb": 1.0, "lbs": 1.0, "pound": 1.0, "pounds": 1.0,
             "oz": 1 / 16, "g": 1 / 453.59237, "kg": 1000 / 453.59237},
}


def read_truth_csv(path):
    """Rows of a truth CSV as dicts; leading '#' lines are comments."""
    with open(path, newline="", encoding="utf-8") as f:
        lines = [line for line in f if not line.startswith("#")]
    return list(csv.DictReader(lines))


def truth_path(name, kind):
    return os.path.join(HERE, "truth", f"{name}.{kind}.csv")


def pairs_of(groups):
    """Unordered pairs of distinct members of each group."""
    out = set()
    for members in groups:
        for a, b in itertools.combinations(sorted(set(members)), 2):
            out.add((a, b))
    return out


def precision_recall(predicted, true):
    hit = len(predicted & true)
    precision = hit / len(predicted) if predicted else None
    recall = hit / len(true) if true else None
    return {"predicted_pairs": len(predicted), "true_pairs": len(true), "correct_pairs": hit,
            "precision": precision, "recall": recall,
            "false_pairs": sorted(predicted - true), "missed_pairs": sorted(true - predicted)}


def run_json(args):
    done = subprocess.run(args, capture_output=True, text=True)
    if done.returncode != 0:
        raise RuntimeError(f"{' '.join(args)} exited {done.returncode}: {done.stderr.strip()}")
    return json.loads(done.stdout)


def score_cluster(descry, csv_path, column, name, method):
    truth = read_truth_csv(truth_path(name, "groups"))
    group_of = {row["value"]: row["group"] for row in truth}
    by_group = {}
    for value, group in group_of.items():
        by_group.setdefault(group, []).append(value)
    report = run_json([descry, "cluster", csv_path, "-c", column, "-m", method, "--format", "json", "--quiet"])
    clusters = [[m["value"] for m in c["members"] if m["value"] in group_of] for c in report["clusters"]]
    result = precision_recall(pairs_of(clusters), pairs_of(by_group.values()))
    result["clusters"] = len(report["clusters"])
    return result


def words_of(text):
    return re.findall(r"[a-z]+", text.lower())


def score_words(proposals, name):
    """Word pairs the draft puts in one flag's `any` list, and in one label case, judged by the word truth.

    A flag's list is meant to hold spellings of one word. A label case may
    also join words that mean one category (`check` and `welfare`), so its
    pairs are reported apart.
    """
    path = truth_path(name, "words")
    if not os.path.exists(path):
        return None
    group_of = {row["word"]: row["group"] for row in read_truth_csv(path)}

    def judge(lists):
        pairs = set()
        for spellings in lists:
            single = sorted({s.lower() for s in spellings if words_of(s) == [s.lower()]})
            pairs |= set(itertools.combinations([w for w in single if w in group_of], 2))
        return {"pairs": len(pairs), "same_word": sum(1 for a, b in pairs if group_of[a] == group_of[b]),
                "different_words": sorted(p for p in pairs if group_of[p[0]] != group_of[p[1]])}

    flags = [p["rule"]["any"] for p in proposals if p["rule"]["kind"] == "flag"]
    cases = [spellings for p in proposals if p["rule"]["kind"] == "label" and "cases" in p["rule"]
             for _, spellings in p["rule"]["cases"]]
    return {"flags": judge(flags), "label_cases": judge(cases)}


def abbreviation(short, long):
    """Whether `short` abbreviates `long`: a prefix of it at least two letters
    shorter (not a singular: `print` / `prints`), or from three letters a
    subsequence with the same first letter that drops the vowels (`mgr`)."""
    if len(short) >= len(long) or short[:1] != long[:1]:
        return False
    if long.startswith(short):
        return len(long) - len(short) >= 2 and long not in (short + "s", short + "es")
    rest = iter(long)
    return (len(short) >= 3 and not any(c in "aeiou" for c in short[1:])
            and all(c in rest for c in short))


def rarer_names(proposals, name, csv_path, column):
    """Flags and label cases named after a rarer spelling of their word.

    A name is rarer when a spelling of its list that the word truth puts in
    the same group is on more rows of the column and does not abbreviate
    the name (`manager` may name a list where `mgr` is more frequent;
    `manger` may not name one that holds `manager`).
    """
    path = truth_path(name, "words")
    if not os.path.exists(path):
        return None
    group_of = {row["word"]: row["group"] for row in read_truth_csv(path)}
    rows = {}
    with open(csv_path, newline="", encoding="utf-8") as f:
        for row in csv.DictReader(f):
            for w in set(words_of(row[column] or "")):
                rows[w] = rows.get(w, 0) + 1
    named = [(p["name"], p["rule"]["any"]) for p in proposals if p["rule"]["kind"] == "flag"]
    named += [(label, spellings) for p in proposals if p["rule"]["kind"] == "label" and "cases" in p["rule"]
              for label, spellings in p["rule"]["cases"]]
    found = []
    for title, spellings in named:
        title = title.lower()
        if title not in group_of:
            continue
        for s in {s.lower() for s in spellings if words_of(s) == [s.lower()]}:
            if (s != title and group_of.get(s) == group_of[title]
                    and rows.get(s, 0) > rows.get(title, 0) and not abbreviation(s, title)):
                found.append(f"{title} ({rows.get(title, 0)} rows) over {s} ({rows.get(s, 0)} rows)")
    return sorted(found)


def measure_rules(proposals, quantity):
    """Output names and unit factors (to the truth's unit) of the draft's measures of a quantity."""
    table = TO_TRUTH_UNIT[quantity]
    out = []
    for p in proposals:
        rule = p["rule"]
        if rule["kind"] != "measure" or rule["unit"].lower() not in table:
            continue
        spellings = {u["spelling"].lower() for u in rule["units"]} | {rule["unit"].lower()}
        if spellings & set(table):
            out.append((p["name"], table[rule["unit"].lower()]))
    return out


def score_readings(descry, name, column, draft_path, prefix, proposals, workdir):
    path = truth_path(name, "readings")
    if not os.path.exists(path):
        return None
    truth = read_truth_csv(path)
    values_csv = os.path.join(workdir, f"{name}.distinct.csv")
    with open(values_csv, "w", newline="", encoding="utf-8") as f:
        writer = csv.writer(f, lineterminator="\n")
        writer.writerow([column])
        writer.writerows([row["value"]] for row in truth)
    applied_csv = os.path.join(workdir, f"{name}.applied.csv")
    if os.path.exists(applied_csv):
        os.remove(applied_csv)
    done = subprocess.run([descry, "apply", values_csv, "-r", draft_path, "-o", applied_csv, "--quiet"],
                          capture_output=True, text=True)
    if done.returncode != 0:
        raise RuntimeError(f"descry apply exited {done.returncode}: {done.stderr.strip()}")
    with open(applied_csv, newline="", encoding="utf-8") as f:
        applied = list(csv.DictReader(f))
    result = {}
    for quantity in sorted({row["quantity"] for row in truth if row["quantity"]}):
        rules = measure_rules(proposals, quantity)
        known = [(row, out) for row, out in zip(truth, applied) if row["quantity"] == quantity and row["number"]]
        correct, wrong = 0, []
        for row, out in known:
            reading = None
            for rule_name, factor in rules:
                cell = out.get(prefix + rule_name, "")
                if cell != "":
                    reading = float(cell) * factor
                    break
            expected = float(row["number"])
            if reading is not None and abs(reading - expected) <= 0.01 * abs(expected):
                correct += 1
            else:
                wrong.append((row["value"], expected, reading))
        written = [row for row, _ in known if row.get("written_unit", "yes") == "yes"]
        written_correct = sum(1 for row, _ in known
                              if row.get("written_unit", "yes") == "yes" and row["value"] not in {w[0] for w in wrong})
        result[quantity] = {"measures": [r for r, _ in rules], "known": len(known), "correct": correct,
                            "written_unit_known": len(written), "written_unit_correct": written_correct,
                            "wrong": wrong}
    return result


def score_propose(descry, csv_path, column, name, workdir):
    draft_path = os.path.join(workdir, f"{name}.draft.toml")
    if os.path.exists(draft_path):
        os.remove(draft_path)
    report = run_json([descry, "propose", csv_path, "-c", column, "-o", draft_path, "--format", "json", "--quiet"])
    draft = report["draft"]
    proposals = draft["proposals"]
    counts = [p for p in proposals if p["rule"]["kind"] == "count"]
    return {
        "rules": len(proposals),
        "rule_names": [f"{p['rule']['kind']}:{draft['prefix']}{p['name']}" for p in proposals],
        "row_share": report["check"]["coverage"]["row_share"],
        "counts": len(counts),
        "single_value_counts": [p["name"] for p in counts if p["rule"]["range"][0] == p["rule"]["range"][1]],
        "words": score_words(proposals, name),
        "rarer_names": rarer_names(proposals, name, csv_path, column),
        "readings": score_readings(descry, name, column, draft_path, draft["prefix"], proposals, workdir),
    }


def score_all(descry, outdir, parts=("cluster", "propose")):
    os.makedirs(outdir, exist_ok=True)
    results = {}
    for name, (_, _, column) in load.COLUMNS.items():
        csv_path = load.write_column(name, outdir)
        results[name] = {}
        if "cluster" in parts:
            results[name]["cluster"] = {m: score_cluster(descry, csv_path, column, name, m) for m in METHODS}
        if "propose" in parts:
            results[name]["propose"] = score_propose(descry, csv_path, column, name, outdir)
    return results


def pct(x):
    return "   -  " if x is None else f"{100 * x:5.1f}%"


def print_report(results):
    if "cluster" in next(iter(results.values())):
        print_cluster(results)
    if "propose" in next(iter(results.values())):
        print_propose(results)


def print_cluster(results):
    print("cluster: pairwise precision / recall against truth/<name>.groups.csv (pairs predicted)")
    print(f"{'column':<14}" + "".join(f"{m:>22}" for m in METHODS))
    for name, r in results.items():
        cells = [f"{pct(c['precision'])} {pct(c['recall'])} ({c['predicted_pairs']})"
                 for c in (r["cluster"][m] for m in METHODS)]
        true_pairs = r["cluster"][METHODS[0]]["true_pairs"]
        print(f"{name:<14}" + "".join(f"{c:>22}" for c in cells) + f"   true pairs {true_pairs}")
    print()


def print_propose(results):
    print("propose: rules, coverage, counts with one observed value, word pairs in one flag / one label case that are one word")
    for name, r in results.items():
        p = r["propose"]
        words = p["words"]
        flag_cell = "-" if words is None else f"{words['flags']['same_word']}/{words['flags']['pairs']}"
        case_cell = "-" if words is None else f"{words['label_cases']['same_word']}/{words['label_cases']['pairs']}"
        print(f"{name:<14} rules {p['rules']:>3}  coverage {pct(p['row_share'])}  "
              f"counts {p['counts']:>2} (single value {len(p['single_value_counts'])})  "
              f"same-word pairs: flags {flag_cell:>7}  label cases {case_cell:>7}  "
              f"named after a rarer spelling {'-' if p['rarer_names'] is None else len(p['rarer_names'])}")
    for name, r in results.items():
        for quantity, q in sorted((r["propose"]["readings"] or {}).items()):
            print(f"{name:<14} {quantity} readings: {q['correct']}/{q['known']} values with a known reading, "
                  f"{q['written_unit_correct']}/{q['written_unit_known']} of those writing their unit "
                  f"(measures used: {', '.join(q['measures']) or 'none'})")


def main(argv):
    usage = "usage: python score.py DESCRY_BINARY OUTDIR [--json RESULTS.json] [--only cluster|propose]"
    if len(argv) < 3 or len(argv) % 2 == 0:
        raise SystemExit(usage)
    options = dict(zip(argv[3::2], argv[4::2]))
    if not set(options) <= {"--json", "--only"} or options.get("--only", "cluster") not in ("cluster", "propose"):
        raise SystemExit(usage)
    parts = (options["--only"],) if "--only" in options else ("cluster", "propose")
    results = score_all(argv[1], argv[2], parts)
    print_report(results)
    if "--json" in options:
        with open(options["--json"], "w", encoding="utf-8") as f:
            json.dump(results, f, indent=1, sort_keys=True)
            f.write("\n")


if __name__ == "__main__":
    main(sys.argv)
