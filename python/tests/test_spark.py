"""descry.spark in a local Spark instance: both strategies of apply equal
descry.apply (itself checked against the command line in test_apply.py) on
the demo listings, and check from a Spark-side groupBy equals the command
line's JSON. Reference: descry.apply and `descry check --format json`."""

from __future__ import annotations

import json
import os
import sys

import pyarrow as pa
import pytest

import descry
import descry.spark

from conftest import RULESETS, cli, read_as_text


@pytest.fixture(scope="module")
def spark():
    os.environ["PYSPARK_PYTHON"] = sys.executable
    os.environ["PYSPARK_DRIVER_PYTHON"] = sys.executable
    from pyspark.sql import SparkSession

    session = (
        SparkSession.builder.master("local[2]")
        .appName("descry-tests")
        .config("spark.sql.shuffle.partitions", "4")
        .config("spark.ui.enabled", "false")
        .config("spark.sql.execution.arrow.pyspark.enabled", "true")
        .getOrCreate()
    )
    yield session
    session.stop()


@pytest.fixture(scope="module")
def listings(demo) -> pa.Table:
    table = read_as_text(demo)
    return table.cast(pa.schema([(n, pa.string()) for n in table.column_names]))


@pytest.fixture(scope="module")
def rules(engine, transmission):
    return [str(engine), str(transmission)]


def expected(listings: pa.Table, rules) -> pa.Table:
    """descry.apply's features with Spark's types, by listing."""
    table = descry.apply(listings, rules)
    rulesets = [descry.Ruleset.load(r) for r in rules]
    return descry.spark._for_spark(table, rulesets).sort_by("listing_id")


@pytest.mark.parametrize("strategy", ["lookup", "partitions"])
def test_apply_equals_descry_apply(spark, listings, rules, strategy):
    df = spark.createDataFrame(listings).repartition(4)
    out = descry.spark.apply(df, rules, strategy=strategy)
    assert out.columns == listings.column_names + [
        f["output"] for r in rules for f in descry.Ruleset.load(r).features
    ]
    got = out.toArrow().sort_by("listing_id")
    want = expected(listings, rules)
    assert got.num_rows == want.num_rows == listings.num_rows
    for name in want.column_names:
        assert got.column(name).type == want.column(name).type, name
        assert got.column(name).to_pylist() == want.column(name).to_pylist(), name


def test_spark_types(spark, listings, engine):
    df = spark.createDataFrame(listings)
    types = dict(descry.spark.apply(df, str(engine)).dtypes)
    assert types["eng_turbo"] == "boolean"
    assert types["eng_cylinders"] == "smallint"  # UInt8 in apply's output
    assert types["eng_displacement_l"] == "float"
    assert types["eng_fuel"] == "string"


def test_check_from_a_groupby_is_the_cli_json(spark, listings, demo, engine):
    want = json.loads(cli("check", demo, "-r", engine, "--min-coverage", "0.99", "--format", "json", "-q").stdout)
    got = descry.spark.check(spark.createDataFrame(listings), str(engine), min_coverage=0.99)
    assert got.to_dict() == want


def test_a_missing_column_is_an_input_error(spark, listings):
    df = spark.createDataFrame(listings).drop("engine")
    with pytest.raises(descry.InputError, match='no column named "engine"'):
        descry.spark.apply(df, str(RULESETS / "engine.toml"))
