"""Write Parquet and Arrow IPC files whose other columns have types descry's
polars is built without, and other files descry must refuse in words.

Reference library: pyarrow (Apache Arrow's Python implementation).

usage: hostile_tables.py OUT_DIR
Every table has the columns `id` (int64) and `transmission` (text, the
values "6 spd auto", "manual", None, "6 spd auto"); the exotic columns sit
between them and after them, so that reading the text column alone must
skip them.
"""
import datetime
import decimal
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.feather as feather
import pyarrow.ipc as ipc
import pyarrow.parquet as pq

ROWS = 4
IDS = pa.array([1, 2, 3, 4], pa.int64())
TEXT = pa.array(["6 spd auto", "manual", None, "6 spd auto"], pa.string())


def exotic_columns() -> dict:
    """Columns of each type polars needs a feature for, by name."""
    d = [decimal.Decimal("1.50"), None, decimal.Decimal("2.25"), decimal.Decimal("3.00")]
    return {
        "price": pa.array(d, pa.decimal128(10, 2)),
        "big_price": pa.array(d, pa.decimal256(40, 2)),
        "weight": pa.array(np.array([1.5, 2.0, None, 4.0], dtype=np.float16), pa.float16()),
        "size": pa.array([[1, 2], [3, 4], None, [5, 6]], pa.list_(pa.int32(), 2)),
    }


def table(columns: dict) -> pa.Table:
    items = list(columns.items())
    half = len(items) // 2
    ordered = items[:half] + [("transmission", TEXT)] + items[half:]
    return pa.table(dict([("id", IDS)] + ordered))


def ipc_only_columns() -> dict:
    """Types Parquet cannot hold."""
    union = pa.UnionArray.from_dense(
        pa.array([0, 1, 0, 1], pa.int8()),
        pa.array([0, 0, 1, 1], pa.int32()),
        [pa.array([1, 2], pa.int64()), pa.array(["a", "b"], pa.string())],
    )
    interval = pa.array(
        [pa.MonthDayNano([1, 2, 3])] * ROWS, pa.month_day_nano_interval()
    )
    return {"choice": union, "period": interval}


def write_ipc_file(path: Path, t: pa.Table) -> None:
    with ipc.new_file(str(path), t.schema) as w:
        w.write_table(t)


def main(out: str) -> None:
    out = Path(out)
    pq.write_table(table(exotic_columns()), out / "exotic.parquet")
    write_ipc_file(out / "exotic.arrow", table({**exotic_columns(), **ipc_only_columns()}))
    ree = pa.RunEndEncodedArray.from_arrays(pa.array([2, 4], pa.int32()), pa.array(["x", "y"]))
    write_ipc_file(out / "run_end.arrow", table({"code": ree}))
    # Two columns named "note", neither of them the described column.
    notes = pa.Table.from_arrays(
        [IDS, pa.array(["a", "b", "c", "d"]), TEXT, pa.array(["e", "f", "g", "h"])],
        names=["id", "note", "transmission", "note"],
    )
    write_ipc_file(out / "twice.arrow", notes)
    plain = pa.table({"id": IDS, "transmission": TEXT})
    with ipc.new_stream(str(out / "stream.arrow"), plain.schema) as w:
        w.write_table(plain)
    feather.write_feather(plain.to_pandas(), str(out / "v1.feather"), version=1)
    print("ok")


if __name__ == "__main__":
    main(sys.argv[1])
