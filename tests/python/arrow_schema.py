"""Print the Arrow schema of Parquet files as pyarrow reads it: one line per
column, `name: type`, each file's schema after a line naming the file.

Reference library: pyarrow (Apache Arrow's Python implementation).

usage: arrow_schema.py FILE.parquet [FILE.parquet ...]
"""
import sys

import pyarrow.parquet as pq

for path in sys.argv[1:]:
    print(f"== {path.rsplit('/', 1)[-1]}")
    for field in pq.read_schema(path):
        print(f"{field.name}: {field.type}")
