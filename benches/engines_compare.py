#!/usr/bin/env python3
"""Benchmark: descry beside the engines that hold the rows (docs/engines.md).

    target/ref-venv/bin/python benches/engines_compare.py [--rows 10000000] [--runs 3] [--only cli,duckdb,spark]

(the reference environment of tests/run.sh: duckdb, pyspark and the descry
package). The data is the demo listings (`descry demo --rows N`), written
once as Parquet; the rulesets are the demo's transmission and engine
rulesets. Every contender runs in this one process or its children, side by
side, and the medians are printed.

cli     `descry lookup` against `descry check` on the same Parquet file, both
        dominated by reading it: the ratio.
duckdb  (1) the engine writes each column's vocabulary (GROUP BY), `descry
        lookup --counts` evaluates it, a LEFT JOIN gives the features, written
        as Parquet; (2) `descry apply` on the same file; (3) DuckDB alone, the
        rulesets translated to regexp SQL (regexp_matches, regexp_extract,
        CASE), the way benches/apply_compare.py translates them for polars:
        on the rows, and on the DISTINCT values joined back.
spark   local[2]: descry.spark.apply with the lookup strategy, with the
        partitions strategy, and Spark alone with the rulesets translated to
        Spark SQL (rlike, regexp_extract), each written as Parquet.

Every engine-only translation is checked against descry's output on every
row; the rows on which a feature differs are counted and printed (the
translations normalize with lower case and white-space folding; neither
engine has NFKC, so values that NFKC changes may differ, and are counted).
"""

from __future__ import annotations

import argparse
import os
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(REPO / "benches"))

import apply_compare as ac  # noqa: E402

RULES = [REPO / "rulesets" / "transmission.toml", REPO / "rulesets" / "engine.toml"]
OUT = REPO / "bench-out" / "engines"


# ------------------------------------------------------------------ SQL


def sql_string(s: str) -> str:
    return "'" + s.replace("'", "''") + "'"


def regex(rust: str, dialect: str) -> str:
    """A Rust-syntax regex (what apply_compare gives polars) for RE2
    (DuckDB) or java.util.regex (Spark)."""
    import re

    out = re.sub(r"\\u\{([0-9a-fA-F]{1,6})\}", lambda m: "\\x{" + m.group(1) + "}", rust)
    if dialect == "duckdb":
        return out.replace(r"\p{Alphabetic}", r"\pL")
    return out.replace(r"\p{Alphabetic}", r"\p{IsAlphabetic}")


def matches(n: str, rx: str, dialect: str) -> str:
    return f"regexp_matches({n}, {sql_string(rx)})" if dialect == "duckdb" else f"({n} RLIKE {sql_string(rx)})"


def extract(n: str, rx: str, group: int) -> str:
    return f"nullif(regexp_extract({n}, {sql_string(rx)}, {group}), '')"


def try_double(x: str, dialect: str) -> str:
    return f"TRY_CAST({x} AS DOUBLE)" if dialect == "duckdb" else f"try_cast({x} AS DOUBLE)"


def parse_number(x: str, decimal: str, dialect: str) -> str:
    """`parse_number` (src/engine/numbers.rs) in SQL, as apply_compare's polars_parse."""
    fraction, dec = ac.number_regexes(decimal)
    fraction = fraction.replace("?P<w>", "").replace("?P<n>", "").replace("?P<d>", "")
    fr = regex(fraction, dialect)
    t = f"trim({x})"
    w, n, d = (f"regexp_extract({t}, {sql_string(fr)}, {i})" for i in (1, 2, 3))
    thousands = "," if decimal == "." else "."
    plain = f"replace(replace({t}, {sql_string(thousands)}, ''), ' ', '')"
    if decimal == ",":
        plain = f"replace({plain}, ',', '.')"
    return (
        f"(CASE WHEN {matches(t, '[/' + chr(0x2044) + ']', dialect)} THEN "
        f"(CASE WHEN NOT {matches(t, fr, dialect)} THEN NULL WHEN {d} = '0' THEN NULL "
        f"WHEN {w} = '' THEN {try_double(n, dialect)} / {try_double(d, dialect)} "
        f"ELSE {try_double(w, dialect)} + {try_double(n, dialect)} / {try_double(d, dialect)} END) "
        f"WHEN {matches(t, regex(dec, dialect), dialect)} AND length({t}) > 0 THEN {try_double(plain, dialect)} "
        f"ELSE NULL END)"
    )


INT_TYPES = {
    "duckdb": {"UInt8": "UTINYINT", "Int8": "TINYINT", "UInt16": "USMALLINT", "Int16": "SMALLINT",
               "Int32": "INTEGER", "Int64": "BIGINT"},
    "spark": {"UInt8": "SMALLINT", "Int8": "TINYINT", "UInt16": "INT", "Int16": "SMALLINT",
              "Int32": "INT", "Int64": "BIGINT"},
}


class Untranslatable(Exception):
    pass


# `fancy = true` patterns (lookaround) have no RE2 form: DuckDB runs them as
# vectorized Python functions with Python's `re`, as apply_compare's polars
# contenders do (name -> (pattern, group indexes or None for a match test)).
FANCY_UDFS: dict[str, tuple[str, list[int] | None]] = {}


def fancy_udf(pattern: str, indexes: list[int] | None) -> str:
    name = f"fancy_{len(FANCY_UDFS)}"
    FANCY_UDFS[name] = (pattern, indexes)
    return name


def register_fancy(con) -> None:
    import re

    import pyarrow as pa
    from duckdb.sqltypes import BOOLEAN, VARCHAR

    def matcher(rx):
        def fn(values):
            return pa.array([None if v is None else rx.search(v) is not None for v in values.to_pylist()])
        return fn

    def extractor(rx, indexes):
        def fn(values):
            out = []
            for v in values.to_pylist():
                m = None if v is None else rx.search(v)
                out.append(next((m.group(i + 1) for i in indexes if m and m.group(i + 1) is not None), None))
            return pa.array(out, pa.string())
        return fn

    for name, (pattern, indexes) in FANCY_UDFS.items():
        rx = re.compile(pattern)
        if indexes is None:
            con.create_function(name, matcher(rx), [VARCHAR], BOOLEAN, type="arrow", null_handling="special")
        else:
            con.create_function(name, extractor(rx, indexes), [VARCHAR], VARCHAR, type="arrow",
                                null_handling="special")


def contains(n: str, m, dialect: str) -> str:
    if m.pattern is not None and m.pattern.fancy and dialect == "duckdb":
        return f"{fancy_udf(m.pattern.python, None)}({n})"
    rx = m.pattern.python if (m.pattern is not None and m.pattern.fancy) else m.rust
    return matches(n, regex(rx, dialect), dialect)


def first_group(n: str, p, indexes: list[int], dialect: str) -> str:
    if p.fancy and dialect == "duckdb":
        return f"{fancy_udf(p.python, indexes)}({n})"
    rx = regex(p.python if p.fancy else p.rust, dialect)
    return "coalesce(" + ", ".join(extract(n, rx, i + 1) for i in indexes) + ")"


def normalized(col: str, rs, dialect: str) -> str:
    e = col
    if rs.normalize.case == "lower":
        e = f"lower({e})"
    if rs.normalize.collapse_space:
        flags = ", 'g'" if dialect == "duckdb" else ""
        e = f"regexp_replace({e}, {sql_string(ac.WHITE_SPACE_RUN)}, ' '{flags})"
    if rs.normalize.trim:
        e = f"trim({e})"
    nothing = [f"{e} = ''"]
    if rs.placeholders:
        nothing.append(f"{e} IN ({', '.join(sql_string(p) for p in rs.placeholders)})")
    if rs.placeholder_pattern is not None:
        nothing.append(matches(e, regex("^(?:" + rs.placeholder_pattern.rust + ")$", dialect), dialect))
    return f"(CASE WHEN {' OR '.join(nothing)} THEN NULL ELSE {e} END)"


def feature_sql(rs, n: str, dialect: str) -> list[str]:
    """Each feature of `rs` as `expression AS name`, reading the normalized
    value `n` (null for null, blank and placeholder values)."""
    out = []
    for f in rs.features:
        if f.kind == "flag":
            e = f"CASE WHEN {n} IS NULL THEN NULL ELSE {contains(n, f.matcher, dialect)} END"
        elif f.kind in ("count", "measure"):
            indexes = list(range(len(f.pattern.groups))) if f.kind == "count" else f.number_groups
            num = first_group(n, f.pattern, indexes, dialect)
            v = parse_number(num, rs.decimal, dialect)
            if f.kind == "measure" and f.unit_groups:
                unit = first_group(n, f.pattern, f.unit_groups, dialect)
                key = f"rtrim(trim({unit}), '.')"
                factors = " ".join(f"WHEN {sql_string(k)} THEN {v!r}" for k, v in f.units.items())
                v = f"({v} * (CASE WHEN {unit} IS NULL THEN 1.0 ELSE (CASE {key} {factors} ELSE NULL END) END))"
            bad = f"{v} IS NULL"
            if f.kind == "count":
                bad += f" OR floor({v}) <> {v} OR abs({v}) >= 9.0e15"
            if f.range:
                bad += f" OR {v} < {f.range[0]} OR {v} > {f.range[1]}"
            missing = "NULL" if f.missing is None else repr(f.missing)
            e = f"CASE WHEN {n} IS NULL THEN NULL WHEN {num} IS NULL THEN {missing} WHEN {bad} THEN NULL ELSE {v} END"
            if f.kind == "count":
                e = f"CAST({e} AS {INT_TYPES[dialect][f.int_type() if f.range else 'Int64']})"
            else:
                e = f"CAST({e} AS {'DOUBLE' if f.precision == 'f64' else 'FLOAT'})"
        else:
            whens = [f"WHEN {n} IS NULL THEN NULL"]
            if f.map:
                whens += [f"WHEN {n} = {sql_string(k)} THEN {sql_string(v)}" for k, v in f.map.items()]
            whens += [f"WHEN {contains(n, m, dialect)} THEN {sql_string(label)}" for label, m in f.cases]
            default = "NULL" if f.default is None else sql_string(f.default)
            e = f"CASE {' '.join(whens)} ELSE {default} END"
        out.append(f"{e} AS {f.output}")
    return out


# ------------------------------------------------------------------ runs


def median_of(runs: int, fn) -> tuple[float, list[float]]:
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times), times


def descry_cmd(descry: Path, *args) -> None:
    subprocess.run([str(descry), *map(str, args)], check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)


def prepare(rows: int, descry: Path) -> Path:
    import duckdb

    folder = OUT / f"demo-{rows}"
    parquet = folder / "listings.parquet"
    if not parquet.exists():
        print(f"generating {rows:,} demo rows", flush=True)
        descry_cmd(descry, "demo", "--rows", rows, "-o", folder)
        duckdb.sql(
            f"COPY (SELECT * FROM read_csv('{folder / 'listings.csv'}', all_varchar=true)) TO '{parquet}' (FORMAT parquet)"
        )
    return parquet


def mismatches(con, reference: str, candidate: str, features: list[str]) -> dict[str, int]:
    """Rows on which each feature differs between two Parquet files joined by listing_id."""
    out = {}
    for f in features:
        n = con.sql(
            f"SELECT count(*) FROM '{reference}' r JOIN '{candidate}' c USING (listing_id) "
            f"WHERE (CAST(r.{f} AS VARCHAR) IS DISTINCT FROM CAST(c.{f} AS VARCHAR)) "
            f"AND NOT (TRY_CAST(r.{f} AS DOUBLE) IS NOT NULL AND abs(TRY_CAST(r.{f} AS DOUBLE) - TRY_CAST(c.{f} AS DOUBLE)) <= 1e-5 * abs(TRY_CAST(r.{f} AS DOUBLE)))"
        ).fetchall()[0][0]
        if n:
            out[f] = n
    return out


def bench_cli(parquet: Path, descry: Path, runs: int) -> None:
    rules = [a for r in RULES for a in ("-r", r)]
    folder = OUT / "lookups"
    check, _ = median_of(runs, lambda: descry_cmd(descry, "check", parquet, *rules, "--format", "json", "-q"))

    def lookup():
        shutil.rmtree(folder, ignore_errors=True)
        descry_cmd(descry, "lookup", parquet, *rules, "-o", folder, "-q")

    look, _ = median_of(runs, lookup)
    print(f"\ncli, median of {runs}: check {check:.2f} s   lookup {look:.2f} s   lookup / check = {look / check:.2f}")


def bench_duckdb(parquet: Path, descry: Path, runs: int, rows: int, sql_rows_limit: int | None) -> None:
    import duckdb

    rulesets = [ac.load_ruleset(p) for p in RULES]
    features = [f.output for rs in rulesets for f in rs.features]
    con = duckdb.connect()
    applied = OUT / f"apply-{rows}.parquet"

    def via_lookup():
        joins, selects = [], []
        for i, rs in enumerate(rulesets):
            vocab, lookup = OUT / f"vocab_{rs.column}.parquet", OUT / f"lookup_{rs.column}.parquet"
            con.sql(
                f"COPY (SELECT {rs.column} AS value, count(*) AS rows FROM '{parquet}' GROUP BY {rs.column}) "
                f"TO '{vocab}' (FORMAT parquet)"
            )
            descry_cmd(descry, "lookup", vocab, "--counts", "rows", "-c", "value", "-r", rs.path, "-o", lookup, "-q")
            joins.append(f"LEFT JOIN '{lookup}' l{i} ON r.{rs.column} = l{i}.value")
            selects.append(f"l{i}.* EXCLUDE (value, rows)")
        con.sql(
            f"COPY (SELECT r.*, {', '.join(selects)} FROM '{parquet}' r {' '.join(joins)}) "
            f"TO '{OUT / 'via_lookup.parquet'}' (FORMAT parquet)"
        )

    def whole_apply():
        descry_cmd(descry, "apply", parquet, *[a for r in RULES for a in ("-r", r)], "-o", applied, "-q")

    def sql(distinct: bool):
        try:
            exprs = []
            for rs in rulesets:
                n = normalized(f"r.{rs.column}" if not distinct else "v", rs, "duckdb")
                reads = "n" if distinct else f"n_{rs.column}"
                exprs.append((rs, feature_sql(rs, reads, "duckdb"), n))
        except Untranslatable as e:
            return str(e)
        target = OUT / ("sql_distinct.parquet" if distinct else "sql_rows.parquet")

        def run():
            if not distinct:
                inner = ", ".join(f"{n} AS n_{rs.column}" for rs, _, n in exprs)
                cols = ", ".join(e for _, es, _ in exprs for e in es)
                query = f"SELECT * EXCLUDE ({', '.join('n_' + rs.column for rs, _, _ in exprs)}), {cols} " \
                        f"FROM (SELECT r.*, {inner} FROM '{parquet}' r)"
            else:
                ctes, joins, selects = [], [], []
                for i, (rs, es, n) in enumerate(exprs):
                    ctes.append(
                        f"f{i} AS (SELECT v, {', '.join(es)} FROM (SELECT v, {n} AS n FROM "
                        f"(SELECT DISTINCT {rs.column} AS v FROM '{parquet}')))"
                    )
                    joins.append(f"LEFT JOIN f{i} ON r.{rs.column} = f{i}.v")
                    selects.append(f"f{i}.* EXCLUDE (v)")
                query = f"WITH {', '.join(ctes)} SELECT r.*, {', '.join(selects)} FROM '{parquet}' r {' '.join(joins)}"
            con.sql(f"COPY ({query}) TO '{target}' (FORMAT parquet)")

        return run, target

    whole_apply()
    rows_sql, distinct_sql = sql(False), sql(True)
    if sql_rows_limit is not None and rows > sql_rows_limit:
        rows_sql = f"skipped above {sql_rows_limit:,} rows (--sql-rows-limit); it grows with the rows"
    register_fancy(con)
    contenders = {"vocabulary + descry lookup + join": via_lookup, "descry apply (whole file)": whole_apply}
    for name, made in (("DuckDB regexp SQL on the rows", rows_sql), ("DuckDB regexp SQL on DISTINCT values + join", distinct_sql)):
        if isinstance(made, str):
            print(f"  {name}: not run: {made}")
        else:
            contenders[name] = made[0]
    # The regexp SQL runs once: it takes minutes at 10 million rows.
    results = {name: median_of(1 if "SQL" in name else runs, fn)[0] for name, fn in contenders.items()}
    print(f"\nduckdb {duckdb.__version__}, median of {runs} (regexp SQL: 1 run):")
    base = results["descry apply (whole file)"]
    for name, t in results.items():
        print(f"  {name:48} {t:7.2f} s   {t / base:5.2f}x apply")
    print("  rows whose features differ from descry apply:")
    print(f"    vocabulary + lookup + join: {mismatches(con, applied, OUT / 'via_lookup.parquet', features) or 'none'}")
    for name, made in (("regexp SQL on the rows", rows_sql), ("regexp SQL on DISTINCT + join", distinct_sql)):
        if not isinstance(made, str):
            print(f"    {name}: {mismatches(con, applied, made[1], features) or 'none'}")


def bench_spark(parquet: Path, runs: int, rows: int, with_sql: bool = True) -> None:
    import duckdb

    os.environ.setdefault("PYSPARK_PYTHON", sys.executable)
    from pyspark.sql import SparkSession

    import descry.spark

    spark = (
        SparkSession.builder.master("local[2]").appName("descry-bench")
        .config("spark.ui.enabled", "false").config("spark.driver.memory", "8g")
        .config("spark.sql.parser.escapedStringLiterals", "true")
        .getOrCreate()
    )
    rulesets = [ac.load_ruleset(p) for p in RULES]
    features = [f.output for rs in rulesets for f in rs.features]
    df = spark.read.parquet(str(parquet))
    rules = [str(p) for p in RULES]
    out = {k: OUT / f"spark_{k}" for k in ("lookup", "partitions", "sql")}

    def write(frame, path):
        frame.write.mode("overwrite").parquet(str(path))

    def sql_version():
        # Spark inlines each normalized value into every rule that reads it
        # when it collapses the projections, and the generated code of the
        # whole expression outgrows the JVM's method size; keep the
        # normalized values as their own projection.
        spark.conf.set("spark.sql.optimizer.excludedRules",
                       "org.apache.spark.sql.catalyst.optimizer.CollapseProject")
        df.createOrReplaceTempView("listings")
        inner = ", ".join(f"{normalized(rs.column, rs, 'spark')} AS n_{rs.column}" for rs in rulesets)
        cols = []
        for rs in rulesets:
            cols += feature_sql(rs, f"n_{rs.column}", "spark")
        query = f"SELECT * FROM (SELECT *, {', '.join(cols)} FROM (SELECT *, {inner} FROM listings))"
        frame = spark.sql(query).drop(*[f"n_{rs.column}" for rs in rulesets])
        write(frame, out["sql"])

    contenders = {
        "descry.spark.apply, lookup strategy": lambda: write(descry.spark.apply(df, rules), out["lookup"]),
        "descry.spark.apply, partitions strategy": lambda: write(
            descry.spark.apply(df, rules, strategy="partitions"), out["partitions"]),
        "Spark SQL rlike/regexp_extract": sql_version,
    }
    if not with_sql:
        del contenders["Spark SQL rlike/regexp_extract"]
        del out["sql"]
    print(f"\nspark {spark.version} local[2], median of {runs}:", flush=True)
    results = {}
    for name, fn in contenders.items():
        results[name] = median_of(runs, fn)[0]
        base = results["descry.spark.apply, lookup strategy"]
        print(f"  {name:42} {results[name]:7.2f} s   {results[name] / base:5.2f}x lookup", flush=True)
    # The parts of the lookup strategy, for the projection in docs/engines.md.
    from pyspark.sql import functions as F

    spark.conf.unset("spark.sql.optimizer.excludedRules")
    start = time.perf_counter()
    counts = [df.groupBy(rs.column).agg(F.count(F.lit(1))).count() for rs in rulesets]
    count_s = time.perf_counter() - start
    print(f"  parts: groupBy of both columns {count_s:.2f} s ({', '.join(f'{c:,}' for c in counts)} distinct)")
    con = duckdb.connect()
    applied = OUT / f"apply-{rows}.parquet"  # written by the duckdb part
    if applied.exists():
        for k, path in out.items():
            print(f"  rows whose features differ from descry apply, {k}: "
                  f"{mismatches(con, applied, str(path) + '/*.parquet', features) or 'none'}")
    spark.stop()


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--rows", type=int, default=10_000_000)
    ap.add_argument("--runs", type=int, default=3)
    ap.add_argument("--only", default="cli,duckdb,spark")
    ap.add_argument("--descry", type=Path, default=REPO / "target" / "release" / "descry")
    ap.add_argument("--no-spark-sql", action="store_true",
                    help="leave out the Spark SQL translation (it takes about an hour at 10 million rows)")
    ap.add_argument("--sql-rows-limit", type=int, default=None,
                    help="skip DuckDB's regexp SQL on the rows above this many rows")
    args = ap.parse_args()
    OUT.mkdir(parents=True, exist_ok=True)
    parquet = prepare(args.rows, args.descry)
    only = args.only.split(",")
    print(f"{args.rows:,} rows; rulesets: {', '.join(p.name for p in RULES)}", flush=True)
    if "cli" in only:
        bench_cli(parquet, args.descry, args.runs)
    if "duckdb" in only:
        bench_duckdb(parquet, args.descry, args.runs, args.rows, args.sql_rows_limit)
    if "spark" in only:
        bench_spark(parquet, args.runs, args.rows, with_sql=not args.no_spark_sql)


if __name__ == "__main__":
    main()
