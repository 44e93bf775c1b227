"""descry on Spark: the rules run once per distinct value, so Spark only
counts values and joins.

    import descry.spark
    out = descry.spark.apply(df, "rulesets/engine.toml")                 # lookup
    out = descry.spark.apply(df, rules, strategy="partitions")          # mapInArrow
    report = descry.spark.check(df, "rulesets/engine.toml", min_coverage=0.95)

Strategies of `apply`:

- ``"lookup"`` (the default): Spark computes each described column's
  vocabulary with a ``groupBy``; descry evaluates it on the driver and writes
  the lookup table (one row per distinct value); the table is broadcast and
  joined to the rows. The driver holds the vocabulary, not the rows.
- ``"partitions"``: every partition runs descry on its own Arrow batches
  (``mapInArrow``), for vocabularies too large for the driver. The workers
  need the package installed.

Spark has no unsigned integers and no categorical type, so the features
have these Spark types: flags ``boolean``; counts the smallest Spark integer
holding apply's type (UInt8 -> ``smallint``, UInt16 -> ``int``, Int8 ->
``tinyint``, ...), and ``bigint`` for a count with no ``range``; measures
``float`` (``double`` with ``precision = "f64"``); labels ``string``.
The described columns are read as text (``cast("string")``).
"""

from __future__ import annotations

from typing import Any

import pyarrow as pa

from . import CheckReport, Ruleset, _described, _frames, _Gates, _native, _rulesets
from ._errors import InputError

LOOKUP = "lookup"
PARTITIONS = "partitions"
_KEY = "__descry_value"

# apply's Arrow types and the Arrow types Spark takes for them.
_SPARK_ARROW = {
    pa.uint8(): pa.int16(),
    pa.uint16(): pa.int32(),
    pa.uint32(): pa.int64(),
    pa.uint64(): pa.int64(),
}


def _spark_arrow_type(kind: pa.DataType, unfixed: bool) -> pa.DataType:
    if pa.types.is_dictionary(kind) or pa.types.is_large_string(kind):
        return pa.string()
    if unfixed:
        return pa.int64()
    return _SPARK_ARROW.get(kind, kind)


def _for_spark(table: pa.Table, rulesets: list[Ruleset]) -> pa.Table:
    """The feature columns of `table` cast to types Spark takes."""
    unfixed = {o for r in rulesets for o in r._native.unfixed_counts}
    columns, fields = [], []
    for field, column in zip(table.schema, table.columns):
        kind = _spark_arrow_type(field.type, field.name in unfixed)
        if kind != field.type:
            column = column.cast(kind)
        columns.append(column)
        fields.append(pa.field(field.name, kind))
    return pa.Table.from_arrays(columns, schema=pa.schema(fields))


def _text(col: str):
    from pyspark.sql import functions as F

    return F.col(col).cast("string")


def _vocabulary(df, col: str) -> pa.Table:
    """The column's vocabulary, computed by Spark: (value, rows)."""
    from pyspark.sql import functions as F

    vocab = df.groupBy(_text(col).alias("value")).agg(F.count(F.lit(1)).alias("rows"))
    return vocab.toArrow()


def apply(df: Any, rules: Any, *, strategy: str = LOOKUP, column: str | None = None) -> Any:
    """The Spark DataFrame with each ruleset's features added, as
    `descry.apply` computes them (with Spark's types; see the module)."""
    rulesets = _rulesets(rules)
    described = _described(rulesets, column)
    missing = [c for _, c in described if c not in df.columns]
    if missing:
        raise InputError(f'no column named "{missing[0]}"; the columns are: {", ".join(df.columns)}')
    for r, _ in described:
        for f in r.features:
            if f["output"] in df.columns:
                raise InputError(
                    f'{r.file}:{f["line"]}: rule [[{f["kind"]}]] "{f["name"]}" would write column '
                    f'"{f["output"]}", which the input already has; rename the rule or set a '
                    f"`prefix` in the ruleset"
                )
    if strategy == LOOKUP:
        return _apply_lookup(df, described)
    if strategy == PARTITIONS:
        return _apply_partitions(df, described)
    raise InputError(f'strategy={strategy!r}: choose "lookup" or "partitions"')


def _apply_lookup(df, described):
    from pyspark.sql import functions as F

    spark = df.sparkSession
    out = df
    for col in dict.fromkeys(c for _, c in described):
        mine = [r for r, c in described if c == col]
        vocab = _vocabulary(df, col)
        stream = _native.lookup(
            vocab.column("value"), col, [r._native for r in mine], vocab.column("rows")
        )
        table = pa.RecordBatchReader.from_stream(stream).read_all()
        table = _for_spark(table.drop_columns(["rows"]), mine)
        table = table.rename_columns([_KEY, *table.column_names[1:]])
        lookup = F.broadcast(spark.createDataFrame(table))
        out = out.join(lookup, _text(col) == lookup[_KEY], "left").drop(_KEY)
    return out


def _apply_partitions(df, described):
    from pyspark.sql.pandas.types import from_arrow_schema
    from pyspark.sql.types import StructType

    texts = [(r.text, r.file, c) for r, c in described]
    columns = list(dict.fromkeys(c for _, c in described))
    empty = pa.table({c: pa.array([], pa.string()) for c in columns})
    rulesets = [r for r, _ in described]
    features = _for_spark(_features_of(empty, texts), rulesets)
    schema = StructType(df.schema.fields + from_arrow_schema(features.schema).fields)

    def run(batches):
        import pyarrow as pa  # on the worker

        import descry

        described_here = [(descry.Ruleset.from_toml(t, f), c) for t, f, c in texts]
        here = [r for r, _ in described_here]
        for batch in batches:
            table = pa.Table.from_batches([batch])
            text = pa.table({c: table.column(c).cast(pa.string()) for c in columns})
            found = descry._features(text, _frames.ARROW, described_here)
            found = _for_spark(found, here)
            for name, col in zip(found.column_names, found.columns):
                table = table.append_column(name, col)
            yield from table.to_batches()

    return df.mapInArrow(run, schema)


def _features_of(table: pa.Table, texts) -> pa.Table:
    from . import _features

    described = [(Ruleset.from_toml(t, f), c) for t, f, c in texts]
    return _features(table, _frames.ARROW, described)


def check(
    df: Any,
    rules: Any,
    *,
    min_coverage: float | None = None,
    require: Any = None,
    baseline: Any = None,
    save_baseline: Any = None,
    max_new_share: float | None = None,
    max_new_uncovered_share: float | None = None,
    max_psi: float | None = None,
    max_shift: float | None = None,
    column: str | None = None,
) -> CheckReport:
    """The report of `descry.check`, from a Spark-side ``groupBy``: only the
    vocabulary reaches the driver. `.unmatched` is a pyarrow Table."""
    rulesets = _rulesets(rules)
    described = _described(rulesets, column)
    missing = [c for _, c in described if c not in df.columns]
    if missing:
        raise InputError(f'no column named "{missing[0]}"; the columns are: {", ".join(df.columns)}')
    gates = _Gates.of(described, min_coverage, require, baseline, save_baseline,
                      (max_new_share, max_new_uncovered_share, max_psi, max_shift))
    import json

    vocabularies: dict[str, pa.Table] = {}
    reports = []
    for (r, col), req, base, save in gates.per_ruleset(described):
        if col not in vocabularies:
            vocabularies[col] = _vocabulary(df, col)
        vocab = vocabularies[col]
        text = _native.check(
            vocab.column("value"), col, r._native, gates.min_coverage, req, base, save, gates.limits,
            vocab.column("rows"),
        )
        reports.append(json.loads(text))
    return CheckReport(reports, _frames.ARROW)
