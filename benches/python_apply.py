#!/usr/bin/env python3
"""Benchmark: the Python package's `descry.apply` against the hand-written
code an expert would write on the same in-memory frame, in one run.

    target/ref-venv/bin/python benches/python_apply.py [--rows 10000000] [--runs 3]

(the reference environment of tests/run.sh has the package installed, with
pandas and polars). The data is the demo listings (`descry demo --rows N`),
read once into memory as a polars and a pandas DataFrame; the rulesets are
the demo's transmission and engine rulesets. Contenders, each timed in this
process with the frame already in memory, runs interleaved, median reported:

  polars  descry.apply(frame, rules)
          expert: the rules as polars expressions on `unique()` values,
          joined back to the rows (benches/apply_compare.py's translation of
          the rulesets, run_polars_expert without the file IO)
  pandas  descry.apply(frame, rules)
          expert: astype("category"), the rules on the categories, taken
          back through the codes (run_pandas_expert without the file IO)

The expert outputs are checked against descry's (every feature, every row,
compared as text) before any time is reported. Peak memory is measured in a
child process per library: the resident set before the call, and the peak
during it (VmHWM after resetting it through /proc/self/clear_refs), against
the size of the feature columns.
"""

from __future__ import annotations

import argparse
import gc
import json
import statistics
import subprocess
import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO / "benches"))

import apply_compare as ac  # noqa: E402  (the rulesets' translation)

RULES = [REPO / "rulesets" / "transmission.toml", REPO / "rulesets" / "engine.toml"]


def demo_csv(rows: int, descry_bin: Path) -> Path:
    folder = REPO / "bench-out" / "python" / f"demo-{rows}"
    csv = folder / "listings.csv"
    if not csv.exists():
        print(f"generating {rows:,} demo rows in {folder}", flush=True)
        subprocess.run([str(descry_bin), "demo", "--rows", str(rows), "-o", str(folder)], check=True,
                       stdout=subprocess.DEVNULL)
    return csv


def polars_expert(df, rulesets):
    import polars as pl

    for rs in rulesets:
        exprs, observed = ac.polars_features(rs, rs.column, ac.NORM)
        values = df.select(pl.col(rs.column).unique()).drop_nulls()
        normalized = ac.polars_considered(ac.polars_normalize(pl.col(rs.column), rs.normalize), rs)
        values = values.with_columns(normalized.alias(ac.NORM))
        values = values.with_columns(exprs).drop(ac.NORM)
        df = df.join(values, on=rs.column, how="left", maintain_order="left")
        df = ac.polars_cast_observed(df, observed)
    return df


def pandas_expert(df, rulesets):
    import pandas as pd

    df = df.copy(deep=False)
    for rs in rulesets:
        cat = df[rs.column].astype("category")
        codes = cat.cat.codes.to_numpy()
        values = pd.Series(cat.cat.categories)
        for name, arr in ac.pandas_features(rs, values).items():
            df[name] = arr.take(codes, allow_fill=True)
    return df


def missing(v) -> bool:
    return v is None or type(v).__name__ == "NAType" or (isinstance(v, float) and v != v)


def as_text(values) -> list:
    return [None if missing(v) else str(v).lower().rstrip("0").rstrip(".") for v in values]


def check_same(name: str, descry_out, expert_out, features: list[str], to_list) -> None:
    for f in features:
        a, b = as_text(to_list(descry_out, f)), as_text(to_list(expert_out, f))
        if a != b:
            bad = next(i for i, (x, y) in enumerate(zip(a, b)) if x != y)
            raise SystemExit(f"{name}: column {f} differs at row {bad}: descry {a[bad]!r}, expert {b[bad]!r}")


def timed(fn) -> float:
    gc.collect()
    start = time.perf_counter()
    fn()
    return time.perf_counter() - start


def memory_child(library: str, csv: str) -> None:
    """Run in a child: load the frame, reset the peak, apply, print figures."""
    import descry

    rulesets = [ac.load_ruleset(p) for p in RULES]
    if library == "polars":
        df = ac.polars_read(Path(csv), rulesets)
        input_bytes = df.estimated_size()
    else:
        df = ac.pandas_read(Path(csv), rulesets)
        input_bytes = int(df.memory_usage(deep=True).sum())
    gc.collect()
    status = lambda key: int(next(l for l in open("/proc/self/status") if l.startswith(key)).split()[1]) * 1024  # noqa: E731
    Path("/proc/self/clear_refs").write_text("5")
    before = status("VmRSS:")
    out = descry.apply(df, [str(p) for p in RULES], only_features=True)
    peak = status("VmHWM:")
    features = out.estimated_size() if library == "polars" else int(out.memory_usage(deep=True).sum())
    print(json.dumps({"input": input_bytes, "before": before, "peak": peak, "features": features}))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--rows", type=int, default=10_000_000)
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--descry", type=Path, default=REPO / "target" / "release" / "descry")
    ap.add_argument("--memory-child", nargs=2, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.memory_child:
        memory_child(*args.memory_child)
        return

    import descry

    csv = demo_csv(args.rows, args.descry)
    rulesets = [ac.load_ruleset(p) for p in RULES]
    rules = [str(p) for p in RULES]
    features = [f.output for rs in rulesets for f in rs.features]
    pl_df = ac.polars_read(csv, rulesets)
    pd_df = ac.pandas_read(csv, rulesets)
    print(f"{args.rows:,} rows in memory; rulesets: {', '.join(p.name for p in RULES)}", flush=True)

    check_same("polars", descry.apply(pl_df, rules), polars_expert(pl_df, rulesets), features,
               lambda d, f: d.get_column(f).to_list())
    check_same("pandas", descry.apply(pd_df, rules), pandas_expert(pd_df, rulesets), features,
               lambda d, f: d[f].tolist())
    print("expert outputs equal descry's on every feature and row", flush=True)

    contenders = {
        "polars: descry.apply": lambda: descry.apply(pl_df, rules),
        "polars: expert unique+join": lambda: polars_expert(pl_df, rulesets),
        "pandas: descry.apply": lambda: descry.apply(pd_df, rules),
        "pandas: expert category": lambda: pandas_expert(pd_df, rulesets),
    }
    times: dict[str, list[float]] = {k: [] for k in contenders}
    for run in range(args.runs):
        for name, fn in contenders.items():
            times[name].append(timed(fn))
        print(f"run {run + 1}: " + ", ".join(f"{k} {v[-1]:.2f} s" for k, v in times.items()), flush=True)
    med = {k: statistics.median(v) for k, v in times.items()}
    print(f"\nmedian of {args.runs} runs, {args.rows:,} rows")
    for lib in ("polars", "pandas"):
        d = med[f"{lib}: descry.apply"]
        e = next(v for k, v in med.items() if k.startswith(lib) and "expert" in k)
        print(f"  {lib:7} descry.apply {d:6.2f} s   expert {e:6.2f} s   expert / descry = {e / d:.2f}x")

    print("\npeak memory during descry.apply (only_features=True), one child process per library")
    for lib in ("polars", "pandas"):
        out = subprocess.run([sys.executable, __file__, "--memory-child", lib, str(csv)], capture_output=True,
                             text=True, check=True)
        m = json.loads(out.stdout.strip().splitlines()[-1])
        mib = lambda b: b / 2**20  # noqa: E731
        grew = m["peak"] - m["before"]
        print(f"  {lib:7} input {mib(m['input']):7.0f} MiB   resident before {mib(m['before']):7.0f} MiB   "
              f"peak {mib(m['peak']):7.0f} MiB   grew {mib(grew):6.0f} MiB   features {mib(m['features']):5.0f} MiB")


if __name__ == "__main__":
    main()
