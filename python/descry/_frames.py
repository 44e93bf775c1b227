"""The caller's tables: which kind a table is, its columns as Arrow
streams, and the features put back into a table of the same kind.

Columns go to Rust through the Arrow C stream interface (`__arrow_c_stream__`);
nothing here touches a value one by one.
"""

from __future__ import annotations

from typing import Any

import pyarrow as pa

from ._errors import InputError

PANDAS = "pandas"
POLARS = "polars"
LAZY = "polars-lazy"
ARROW = "pyarrow"


def kind_of(data: Any) -> str:
    """`pandas`, `polars`, `polars-lazy` or `pyarrow` (a pyarrow Table, or
    anything read into one: a RecordBatchReader, a DuckDB relation, an
    object with `__arrow_c_stream__`)."""
    module = type(data).__module__.split(".")[0]
    name = type(data).__name__
    if module in ("pandas", "polars", "pyarrow") and name in (
        "Series", "Array", "ChunkedArray"
    ) or isinstance(data, (pa.Array, pa.ChunkedArray)):
        raise InputError(
            f"descry reads tables, not a single column ({module}.{name}); give a table with a "
            f"column of the name the ruleset describes (e.g. series.to_frame())"
        )
    if module == "pandas" and name == "DataFrame":
        return PANDAS
    if module == "polars" and name == "DataFrame":
        return POLARS
    if module == "polars" and name == "LazyFrame":
        return LAZY
    if isinstance(data, pa.Table):
        return ARROW
    if isinstance(data, pa.RecordBatchReader) or hasattr(data, "__arrow_c_stream__"):
        return ARROW
    if hasattr(data, "arrow"):  # a DuckDB relation of a version without the stream method
        return ARROW
    raise InputError(
        f"descry reads pandas and polars DataFrames, polars LazyFrames, pyarrow Tables and "
        f"RecordBatchReaders, and objects with __arrow_c_stream__ (a DuckDB relation); "
        f"not {type(data).__module__}.{name}"
    )


def as_arrow_table(data: Any) -> pa.Table:
    """A pyarrow Table of a table of kind `pyarrow`, read whole."""
    if isinstance(data, pa.Table):
        return data
    if isinstance(data, pa.RecordBatchReader):
        return data.read_all()
    if hasattr(data, "__arrow_c_stream__"):
        return pa.RecordBatchReader.from_stream(data).read_all()
    table = data.arrow()
    return table.read_all() if isinstance(table, pa.RecordBatchReader) else table


def column_names(data: Any, kind: str) -> list[str]:
    if kind == PANDAS:
        # The labels themselves: a label 0 is not the label "0".
        return list(data.columns)
    if kind == LAZY:
        return list(data.collect_schema().names())
    return list(data.columns) if kind == POLARS else list(data.column_names)


def check_unique(names: list[Any], described: list[str]) -> None:
    """Refuse a described column whose name more than one column has, as
    the command line does."""
    for name in described:
        at = [i + 1 for i, n in enumerate(names) if n == name]
        if len(at) > 1:
            shown = ", ".join(str(i) for i in at[:-1]) + f" and {at[-1]}"
            raise InputError(
                f'the column name "{name}" is given to more than one column (columns {shown}); '
                f"descry cannot tell them apart: rename one"
            )


def arrow_column(data: Any, kind: str, name: str) -> Any:
    """Column `name` as an object with `__arrow_c_stream__`."""
    if kind == POLARS:
        return data.get_column(name)
    if kind == ARROW:
        return data.column(name)
    try:
        return pa.chunked_array([pa.array(data[name], from_pandas=True)])
    except (pa.ArrowInvalid, pa.ArrowTypeError, pa.ArrowNotImplementedError, UnicodeError) as e:
        hint = ""
        if str(data[name].dtype) == "object" and not isinstance(e, UnicodeError):
            hint = (
                f'; the column mixes text with other values: convert it first, e.g. '
                f'frame["{name}"] = frame["{name}"].astype("string")'
            )
        raise InputError(f'column "{name}": cannot be read as text: {e}{hint}') from None


def fix_types(table: pa.Table) -> pa.Table:
    """Labels as dictionaries of `string` (the types a reader of `apply`'s
    Parquet output sees)."""
    columns, fields = [], []
    for field, column in zip(table.schema, table.columns):
        if pa.types.is_dictionary(field.type) and field.type.value_type != pa.string():
            chunks = [
                pa.DictionaryArray.from_arrays(c.indices, c.dictionary.cast(pa.string()))
                for c in column.chunks
            ]
            kind = pa.dictionary(field.type.index_type, pa.string())
            column = pa.chunked_array(chunks, type=kind)
            field = pa.field(field.name, kind, nullable=True, metadata=field.metadata)
        columns.append(column)
        fields.append(field)
    return pa.Table.from_arrays(columns, schema=pa.schema(fields))


def categories(table: pa.Table, name: str) -> list[str]:
    column = table.column(name)
    if column.num_chunks:
        return column.chunk(0).dictionary.to_pylist()
    return []


def pandas_types() -> dict[pa.DataType, Any]:
    import pandas as pd

    return {
        pa.bool_(): pd.BooleanDtype(),
        pa.int8(): pd.Int8Dtype(),
        pa.int16(): pd.Int16Dtype(),
        pa.int32(): pd.Int32Dtype(),
        pa.int64(): pd.Int64Dtype(),
        pa.uint8(): pd.UInt8Dtype(),
        pa.uint16(): pd.UInt16Dtype(),
        pa.uint32(): pd.UInt32Dtype(),
        pa.uint64(): pd.UInt64Dtype(),
        pa.float32(): pd.Float32Dtype(),
        pa.float64(): pd.Float64Dtype(),
    }


def to_kind(table: pa.Table, kind: str, index: Any = None) -> Any:
    """`table` as a table of `kind`, with nullable types (no `object`)."""
    if kind == PANDAS:
        frame = table.to_pandas(types_mapper=pandas_types().get)
        for name in table.column_names:
            if pa.types.is_dictionary(table.schema.field(name).type):
                frame[name] = frame[name].cat.set_categories(categories(table, name))
        if index is not None:
            frame.index = index
        return frame
    if kind in (POLARS, LAZY):
        import polars as pl

        frame = pl.from_arrow(table)
        enums = {
            name: pl.Enum(categories(table, name))
            for name in table.column_names
            if pa.types.is_dictionary(table.schema.field(name).type)
        }
        return frame.with_columns(pl.col(n).cast(t) for n, t in enums.items()) if enums else frame
    return table


def attach(data: Any, kind: str, features: pa.Table, kept: list[str]) -> Any:
    """The columns `kept` of `data`, then the features, in `data`'s kind."""
    if kind == PANDAS:
        import pandas as pd

        frame = to_kind(features, kind, index=data.index)
        # Columns in the table's order are picked by position, so that a
        # label two columns share is carried once each, and a label such as
        # 0 stays the number it is.
        in_order = [n for n in data.columns if n in kept] == kept
        carried = data.loc[:, [n in kept for n in data.columns]] if in_order else data[kept]
        return pd.concat([carried, frame], axis=1)
    if kind == POLARS:
        frame = to_kind(features, kind)
        return data.select(kept).hstack(frame) if kept else frame
    table = data.select(kept)
    for field, column in zip(features.schema, features.columns):
        table = table.append_column(field, column)
    return table
