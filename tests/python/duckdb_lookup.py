"""The DuckDB recipe of docs/engines.md, checked against `descry apply`.

The rows live in the engine. DuckDB counts the values of each described
column (GROUP BY), descry turns each vocabulary into a lookup table, and a
LEFT JOIN in SQL gives the features of every row. They must equal what
`descry apply` writes for the same rows, row by row (reference: the
`duckdb` package pinned in requirements.txt).

usage: duckdb_lookup.py DESCRY WORKDIR LISTINGS_CSV RULESETS_DIR
"""

import subprocess
import sys
from pathlib import Path

import duckdb
import pyarrow as pa
import pyarrow.csv as pacsv
import pyarrow.parquet as pq

descry, work, listings, rulesets = sys.argv[1:5]
work = Path(work)
rules = {"engine": f"{rulesets}/engine.toml", "transmission": f"{rulesets}/transmission.toml"}

# The engine's table: the demo listings as Parquet, every column text.
names = pacsv.read_csv(listings).column_names
table = pacsv.read_csv(
    listings, convert_options=pacsv.ConvertOptions(column_types={n: pa.string() for n in names})
)
rows = work / "rows.parquet"
pq.write_table(table, rows)

con = duckdb.connect()
joins = []
for column, ruleset in rules.items():
    # 1. The engine writes the vocabulary: one row per value, with its rows.
    vocab = work / f"{column}.vocabulary.parquet"
    con.execute(
        f"COPY (SELECT {column}, count(*) AS rows FROM '{rows}' GROUP BY {column}) "
        f"TO '{vocab}' (FORMAT parquet)"
    )
    # 2. descry writes the lookup table.
    lookup = work / f"{column}.lookup.parquet"
    subprocess.run(
        [descry, "lookup", str(vocab), "--counts", "rows", "-r", ruleset, "-o", str(lookup), "-q"],
        check=True,
    )
    joins.append((column, lookup))

# 3. A join in SQL gives the features of every row.
select = ", ".join(f"l{i}.* EXCLUDE (value, rows)" for i in range(len(joins)))
from_ = f"'{rows}' r" + "".join(
    f" LEFT JOIN '{lookup}' l{i} ON r.{column} = l{i}.value" for i, (column, lookup) in enumerate(joins)
)
joined = con.execute(f"SELECT r.listing_id, {select} FROM {from_} ORDER BY r.listing_id").fetchall()
columns = [d[0] for d in con.description]

# What apply writes for the same rows.
applied = work / "applied.parquet"
subprocess.run(
    [descry, "apply", str(rows), *[a for r in rules.values() for a in ("-r", r)],
     "--only-features", "--keep", "listing_id", "-o", str(applied), "-q"],
    check=True,
)
expected = con.execute(
    f"SELECT {', '.join(columns)} FROM '{applied}' ORDER BY listing_id"
).fetchall()

assert len(joined) == len(expected) == table.num_rows, (len(joined), len(expected), table.num_rows)
for got, want in zip(joined, expected):
    assert got == want, f"{columns}\njoin:  {got}\napply: {want}"
print(f"{len(joined)} rows agree on {len(columns) - 1} features")
