"""Time `descry propose` on columns with at least 100,000 distinct values.

Generates the demo listings (invented data) with enough rows, counts the
distinct values of each column with `descry survey`, then runs
`descry propose` on each column several times and prints the median wall
time, the peak memory (the child's maximum RSS) and the draft's coverage.
The target is under 30 seconds per column on the 2-core CI machine.

It also times the worst case found for the word mining: long values of
random three-letter words (`--long ROWSxWORDS,...`, about 8,000 different
words; every word is a candidate acronym and a candidate label case).

Standard library only: python3 benches/propose_scale.py target/release/descry
"""

import argparse
import json
import os
import platform
import random
import string
import statistics
import subprocess
import sys
import time


def run_with_rss(cmd):
    start = time.perf_counter()
    pid = os.fork()
    if pid == 0:
        with open(os.devnull, "wb") as null:
            os.dup2(null.fileno(), 2)
        out = os.open(cmd_out_path(), os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o644)
        os.dup2(out, 1)
        os.execv(cmd[0], cmd)
    _, status, usage = os.wait4(pid, 0)
    seconds = time.perf_counter() - start
    if os.waitstatus_to_exitcode(status) != 0:
        sys.exit(f"failed ({os.waitstatus_to_exitcode(status)}): {' '.join(cmd)}")
    with open(cmd_out_path()) as f:
        out = f.read()
    return seconds, usage.ru_maxrss / 1024, out


OUT_DIR = "bench-out/propose"


def cmd_out_path():
    return os.path.join(OUT_DIR, "last-stdout.json")


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("descry")
    ap.add_argument(
        "--plan",
        default="transmission@900000,engine@280000,engine@900000",
        help="column@rows,...: each column on a table of that many listings (the default gives "
        "about 112,000, 124,000 and 343,000 distinct values)",
    )
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--min-distinct", type=int, default=100_000)
    ap.add_argument(
        "--long",
        default="150x1200,300x1200",
        help="ROWSxWORDS,...: columns of that many values of that many random three-letter words "
        "(\"\" for none)",
    )
    args = ap.parse_args()
    os.makedirs(OUT_DIR, exist_ok=True)
    results = []
    for item in filter(None, args.plan.split(",")):
        column, rows = item.split("@")
        rows = int(rows)
        data = os.path.join(OUT_DIR, f"rows-{rows}")
        csv = os.path.join(data, "listings.csv")
        if not os.path.exists(csv):
            print(f"generating {rows:,} listings in {data} ...", flush=True)
            subprocess.run([args.descry, "demo", "--rows", str(rows), "--seed", "7", "-o", data], check=True)
        survey = subprocess.run(
            [args.descry, "survey", csv, "--column", column, "--format", "json", "--quiet"],
            check=True, capture_output=True,
        )
        distinct = json.loads(survey.stdout)["distinct"]
        if distinct < args.min_distinct:
            sys.exit(f"{column} has {distinct:,} distinct values, fewer than {args.min_distinct:,}: give more --rows")
        draft = os.path.join(OUT_DIR, f"{column}-{rows}.draft.toml")
        times, rss = [], []
        for _ in range(args.runs):
            seconds, peak, out = run_with_rss(
                [args.descry, "propose", csv, "--column", column, "-o", draft, "--force", "--quiet", "--format", "json"]
            )
            times.append(seconds)
            rss.append(peak)
        report = json.loads(out)
        results.append({
            "column": column,
            "rows": rows,
            "csv_mib": os.path.getsize(csv) / 2**20,
            "distinct": distinct,
            "rules": len(report["draft"]["proposals"]),
            "coverage": report["check"]["coverage"]["row_share"],
            "median_s": statistics.median(times),
            "runs_s": times,
            "peak_mib": max(rss),
        })
    long_results = []
    for item in filter(None, args.long.split(",")):
        rows, words = (int(x) for x in item.split("x"))
        csv = os.path.join(OUT_DIR, f"long-{rows}x{words}.csv")
        rng = random.Random(0)
        vocabulary = sorted({"".join(rng.choice(string.ascii_lowercase) for _ in range(3)) for _ in range(8000)})
        with open(csv, "w") as f:
            f.write("t\n")
            for _ in range(rows):
                f.write(" ".join(rng.choice(vocabulary) for _ in range(words)) + "\n")
        draft = os.path.join(OUT_DIR, f"long-{rows}x{words}.draft.toml")
        times, rss = [], []
        for _ in range(args.runs):
            seconds, peak, _ = run_with_rss(
                [args.descry, "propose", csv, "--column", "t", "-o", draft, "--force", "--quiet", "--format", "json"]
            )
            times.append(seconds)
            rss.append(peak)
        long_results.append({"rows": rows, "words": words, "median_s": statistics.median(times), "runs_s": times,
                             "peak_mib": max(rss)})
    print(f"\nmachine: {platform.machine()}, {os.cpu_count()} cores, {platform.system()} {platform.release()}")
    print("data: descry demo --rows N --seed 7\n")
    print("| column | listings (CSV) | distinct values | rules | draft coverage | median time | runs | peak memory | target |")
    print("|---|---:|---:|---:|---:|---:|---|---:|---|")
    for r in results:
        runs = ", ".join(f"{t:.1f}" for t in r["runs_s"])
        verdict = "met" if r["median_s"] < 30 else "NOT met"
        print(
            f"| {r['column']} | {r['rows']:,} ({r['csv_mib']:.0f} MiB) | {r['distinct']:,} | {r['rules']} | {r['coverage'] * 100:.2f}% | "
            f"{r['median_s']:.1f} s | {runs} | {r['peak_mib']:,.0f} MiB | < 30 s: {verdict} |"
        )
    if long_results:
        print("\nlong values of random three-letter words (random.Random(0), about 8,000 different words):\n")
        print("| values | words per value | median time | runs | peak memory |")
        print("|---:|---:|---:|---|---:|")
        for r in long_results:
            runs = ", ".join(f"{t:.1f}" for t in r["runs_s"])
            print(f"| {r['rows']:,} | {r['words']:,} | {r['median_s']:.1f} s | {runs} | {r['peak_mib']:,.0f} MiB |")
    with open(os.path.join(OUT_DIR, "propose-latest.json"), "w") as f:
        json.dump({"columns": results, "long": long_results}, f, indent=2)


if __name__ == "__main__":
    main()
