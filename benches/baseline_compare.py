"""Time `descry check --baseline` against plain `descry check`, side by side.

Generates the demo listings (invented data) twice: the drop the baseline is
saved from, and a new drop with another seed. Then, alternating the two
commands in one run so that both see the same machine, times `check NEW -r
rulesets/engine.toml -r rulesets/transmission.toml` with and without
`--baseline`, and prints the medians, the peak memory (the child's maximum
RSS) and the ratio. Target: `--baseline` at most 1.2x plain `check`.

Standard library only:
    python3 benches/baseline_compare.py target/release/descry [--rows 10000000] [--runs 5]
"""

import argparse
import os
import statistics
import subprocess
import sys
import time


def timed(cmd):
    start = time.perf_counter()
    pid = os.fork()
    if pid == 0:
        null = os.open(os.devnull, os.O_WRONLY)
        os.dup2(null, 1)
        os.dup2(null, 2)
        os.execv(cmd[0], cmd)
    _, status, usage = os.wait4(pid, 0)
    seconds = time.perf_counter() - start
    code = os.waitstatus_to_exitcode(status)
    if code not in (0, 1):
        sys.exit(f"failed ({code}): {' '.join(cmd)}")
    return seconds, usage.ru_maxrss / 1024


def main():
    p = argparse.ArgumentParser()
    p.add_argument("descry")
    p.add_argument("--rows", type=int, default=10_000_000)
    p.add_argument("--runs", type=int, default=5)
    p.add_argument("--out", default="bench-out/baseline")
    args = p.parse_args()
    descry = os.path.abspath(args.descry)
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    os.makedirs(args.out, exist_ok=True)
    old, new = os.path.join(args.out, "old"), os.path.join(args.out, "new")
    for folder, seed in ((old, "1"), (new, "2")):
        if not os.path.exists(os.path.join(folder, "listings.csv")):
            print(f"generating {args.rows:,} rows in {folder} (seed {seed})", flush=True)
            subprocess.run([descry, "demo", "-o", folder, "--rows", str(args.rows), "--seed", seed],
                           check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    rules = []
    for r in ("engine", "transmission"):
        rules += ["-r", os.path.join(root, "rulesets", f"{r}.toml")]
    base = os.path.join(args.out, "base")
    subprocess.run([descry, "check", os.path.join(old, "listings.csv"), *rules, "--save-baseline", base,
                    "--top", "0", "-q"], check=True, stdout=subprocess.DEVNULL)
    drop = os.path.join(new, "listings.csv")
    plain = [descry, "check", drop, *rules, "--top", "0", "-q"]
    with_baseline = plain + ["--baseline", base]
    times = {"check": [], "check --baseline": []}
    rss = {"check": [], "check --baseline": []}
    for i in range(args.runs):
        for name, cmd in (("check", plain), ("check --baseline", with_baseline)):
            s, m = timed(cmd)
            times[name].append(s)
            rss[name].append(m)
        print(f"  run {i + 1}: check {times['check'][-1]:.2f} s, --baseline {times['check --baseline'][-1]:.2f} s",
              flush=True)
    size = os.path.getsize(os.path.join(drop))
    print(f"\n{args.rows:,} rows, CSV {size / 2**20:,.0f} MiB, {args.runs} runs alternating, cores {os.cpu_count()}")
    print(f"{'command':<18} {'median s':>9} {'peak MiB':>9}")
    for name in times:
        print(f"{name:<18} {statistics.median(times[name]):>9.2f} {max(rss[name]):>9.0f}")
    ratio = statistics.median(times["check --baseline"]) / statistics.median(times["check"])
    print(f"ratio --baseline / plain: {ratio:.2f}x (target at most 1.2x)")


if __name__ == "__main__":
    main()
