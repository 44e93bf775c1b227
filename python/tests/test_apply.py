"""descry.apply on pandas, polars, pyarrow and DuckDB tables gives exactly
the features `descry apply` writes, value by value and type by type.

Reference: the descry command line's Parquet output, read back with
pyarrow (the reference library) and polars."""

from __future__ import annotations

import tomllib

import duckdb
import pandas as pd
import polars as pl
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

import descry

from conftest import RULESETS, cli, read_as_text

SOURCES = ["engine", "transmission"]


@pytest.fixture(scope="module")
def rules(engine, transmission):
    return [str(engine), str(transmission)]


@pytest.fixture(scope="module")
def expected(demo, rules, tmp_path_factory) -> pa.Table:
    """What the command line writes for the demo listings."""
    out = tmp_path_factory.mktemp("cli") / "features.parquet"
    cli("apply", demo, *[a for r in rules for a in ("-r", r)], "-o", out, "-q")
    return pq.read_table(out)


def feature_names(rules) -> list[str]:
    return [f["output"] for r in rules for f in descry.Ruleset.load(r).features]


def read_as_text_pyarrow(path) -> pa.Table:
    return read_as_text(path)


def assert_same_arrow(got: pa.Table, expected: pa.Table, names: list[str]) -> None:
    assert got.num_rows == expected.num_rows
    for name in names:
        g, e = got.column(name), expected.column(name)
        assert g.type == e.type, name
        assert g.to_pylist() == e.to_pylist(), name


def test_pyarrow_table(demo, rules, expected):
    table = read_as_text_pyarrow(demo)
    got = descry.apply(table, rules)
    assert isinstance(got, pa.Table)
    assert got.column_names == table.column_names + feature_names(rules)
    assert_same_arrow(got, expected, feature_names(rules))
    # The caller's columns are untouched.
    assert got.select(table.column_names).equals(table)


def test_pyarrow_record_batch_reader(demo, rules, expected):
    table = read_as_text_pyarrow(demo)
    got = descry.apply(pa.RecordBatchReader.from_batches(table.schema, table.to_batches(500)), rules)
    assert isinstance(got, pa.Table)
    assert_same_arrow(got, expected, feature_names(rules))


def test_duckdb_relation(demo, rules, expected):
    relation = duckdb.read_csv(str(demo), all_varchar=True)
    got = descry.apply(relation, rules)
    assert isinstance(got, pa.Table)
    assert_same_arrow(got, expected, feature_names(rules))


def test_polars_dataframe(demo, rules, expected, tmp_path):
    frame = pl.read_csv(demo, infer_schema=False)
    got = descry.apply(frame, rules)
    assert isinstance(got, pl.DataFrame)
    names = feature_names(rules)
    # polars reads the command line's Parquet back as the reference.
    reference = pl.read_parquet(pq_path(expected, tmp_path))
    assert got.select(names).schema == reference.select(names).schema
    assert got.select(names).equals(reference.select(names))
    assert got.select(frame.columns).equals(frame)


def pq_path(table: pa.Table, folder) -> str:
    path = folder / "expected.parquet"
    pq.write_table(table, path)
    return str(path)


def test_polars_lazyframe_runs_when_collected(demo, rules, expected, tmp_path):
    lazy = pl.scan_csv(demo, infer_schema=False)
    got = descry.apply(lazy, rules)
    assert isinstance(got, pl.LazyFrame)
    names = feature_names(rules)
    # The schema is known before anything runs, and is what collect gives.
    declared = got.collect_schema()
    frame = got.collect()
    assert frame.schema == declared
    reference = pl.read_parquet(pq_path(expected, tmp_path)).select(names)
    assert frame.select(names).schema == reference.schema
    assert frame.select(names).equals(reference)


def test_pandas_dataframe(demo, rules, expected):
    frame = pd.read_csv(demo, dtype=str, keep_default_na=False, na_values=[""])
    got = descry.apply(frame, rules)
    assert isinstance(got, pd.DataFrame)
    assert list(got.index) == list(frame.index)
    for name in feature_names(rules):
        want = expected.column(name).to_pylist()
        values = [None if pd.isna(v) else v for v in got[name].tolist()]
        if pa.types.is_floating(expected.column(name).type):
            # float32 on both sides: compare the float32 values.
            values = [None if v is None else float(pa.scalar(v, pa.float32()).as_py()) for v in values]
        assert values == want, name


def test_pandas_types(demo, rules):
    """Nullable pandas types, never object: boolean, the small unsigned
    integers, Float32, and unordered categories in the ruleset's order."""
    frame = pd.read_csv(demo, dtype=str, keep_default_na=False, na_values=[""])
    got = descry.apply(frame, rules)
    kinds = {f["output"]: f["kind"] for r in rules for f in descry.Ruleset.load(r).features}
    declared = declared_categories(rules)
    for name, kind in kinds.items():
        dtype = got[name].dtype
        assert dtype != object, name
        if kind == "flag":
            assert dtype == pd.BooleanDtype(), name
        elif kind == "count":
            assert dtype == pd.UInt8Dtype(), name
        elif kind == "measure":
            assert dtype == pd.Float32Dtype(), name
        else:
            assert isinstance(dtype, pd.CategoricalDtype), name
            assert dtype.ordered is False
            assert list(dtype.categories) == declared[name], name


def declared_categories(rules) -> dict[str, list[str]]:
    """Each label's categories as its ruleset declares them (the cases'
    labels in order, then the `map` values not yet seen), read with tomllib."""
    out = {}
    for path in rules:
        with open(path, "rb") as f:
            spec = tomllib.load(f)
        prefix = spec.get("prefix", "")
        for label in spec.get("label", []):
            seen = []
            if "categories" in label:
                seen = list(label["categories"])
            for case in label.get("case", []):
                if case["label"] not in seen:
                    seen.append(case["label"])
            for value in label.get("map", {}).values():
                if value not in seen:
                    seen.append(value)
            out[prefix + label["name"]] = seen
    return out


def test_polars_and_pyarrow_label_types(demo, rules):
    frame = pl.read_csv(demo, infer_schema=False)
    got = descry.apply(frame, rules, only_features=True, keep=["listing_id"])
    assert got.columns == ["listing_id", *feature_names(rules)]
    declared = declared_categories(rules)
    for name, categories in declared.items():
        assert got.schema[name] == pl.Enum(categories)
    table = descry.apply(read_as_text_pyarrow(demo), rules)
    for name, categories in declared.items():
        assert table.schema.field(name).type == pa.dictionary(pa.uint8(), pa.string())
        assert table.column(name).chunk(0).dictionary.to_pylist() == categories


def test_drop_source_and_only_features(demo, rules):
    table = read_as_text_pyarrow(demo)
    dropped = descry.apply(table, rules, drop_source=True)
    assert "engine" not in dropped.column_names and "transmission" not in dropped.column_names
    only = descry.apply(table, rules, only_features=True)
    assert only.column_names == feature_names(rules)


def test_a_feature_named_like_an_input_column_is_refused_as_the_cli_refuses_it(tmp_path):
    data = tmp_path / "in.csv"
    data.write_text("name,price\nturbo,1\n")
    ruleset = tmp_path / "r.toml"
    ruleset.write_text('column = "name"\n\n[[flag]]\nname = "price"\nany = ["turbo"]\n')
    out = cli("apply", data, "-r", ruleset, "-o", tmp_path / "o.parquet", check=False)
    assert out.returncode == 2
    message = out.stderr.removeprefix("descry: error: ").strip()
    with pytest.raises(descry.InputError) as e:
        descry.apply(pd.read_csv(data), str(ruleset))
    assert str(e.value) == message
