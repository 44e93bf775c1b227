"""Read a Parquet file written by `descry apply` with pyarrow and pandas and
check the column types against an expectation file.

Reference libraries: pyarrow (Apache Arrow's Python implementation) and pandas.

usage: parquet_types.py OUTPUT.parquet EXPECT.json
EXPECT.json: {"column": {"arrow": "uint8" | "bool" | "float" | "dictionary",
                         "categories": [...]}, ...}
Prints one line per check and exits 1 on the first disagreement.
"""
import json
import sys

import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq


def main(path: str, expect_path: str) -> int:
    expect = json.load(open(expect_path, encoding="utf-8"))
    schema = pq.read_schema(path)
    frame = pd.read_parquet(path)
    failures = []
    for name, want in expect.items():
        arrow_type = schema.field(name).type
        if want["arrow"] == "dictionary":
            ok = pa.types.is_dictionary(arrow_type)
            got_pd = str(frame[name].dtype)
            if not ok or got_pd != "category":
                failures.append(f"{name}: arrow {arrow_type}, pandas {got_pd}; want dictionary / category")
                continue
            cats = list(frame[name].cat.categories)
            if cats != want["categories"]:
                failures.append(f"{name}: pandas categories {cats}; want {want['categories']}")
                continue
            # Labels are nominal: neither Arrow's dictionary nor pandas'
            # categorical may claim an order.
            if arrow_type.ordered or frame[name].cat.ordered:
                failures.append(
                    f"{name}: arrow ordered={arrow_type.ordered}, pandas ordered={frame[name].cat.ordered}; want unordered"
                )
                continue
            print(f"ok {name}: {arrow_type} (unordered) -> pandas category {cats}, ordered=False")
        else:
            if str(arrow_type) != want["arrow"]:
                failures.append(f"{name}: arrow type {arrow_type}; want {want['arrow']}")
                continue
            print(f"ok {name}: {arrow_type} -> pandas {frame[name].dtype}")
    for f in failures:
        print("FAIL", f)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1], sys.argv[2]))
