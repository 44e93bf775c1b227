"""Hostile and unusual inputs: each one is either read correctly or refused
with a descry error that says what to change; never a panic, a bare
Python error from inside the package, or a silent change to the table."""

from __future__ import annotations

import decimal

import pandas as pd
import polars as pl
import pyarrow as pa
import pytest

import descry

from conftest import cli

VALUES = ["4 cyl Turbo Diesel 4.5L 120hp", "V8 gas 5.7L", None, ""]

TURBO = 'column = "engine"\n[[flag]]\nname = "turbo"\npattern = "turbo"\n'
DIESEL = 'column = "engine"\n[[flag]]\nname = "turbo"\npattern = "diesel"\n'


def test_a_decimal_column_is_refused_with_the_command_lines_message_not_a_panic(engine, tmp_path):
    table = pa.table({"engine": pa.array([decimal.Decimal("1.5"), None], pa.decimal128(5, 2))})
    with pytest.raises(descry.InputError, match=r'column "engine" has the type Decimal\(5, 2\), which descry cannot read'):
        descry.apply(table, engine)
    with pytest.raises(descry.InputError, match="cannot read"):
        descry.check(table, engine)
    # pandas makes Decimal objects a decimal Arrow column too
    with pytest.raises(descry.InputError, match="which descry cannot read"):
        descry.survey(pd.DataFrame({"engine": [decimal.Decimal("1.5")]}), "engine")
    import pyarrow.parquet as pq

    pq.write_table(table, tmp_path / "dec.parquet")
    out = cli("apply", tmp_path / "dec.parquet", "-r", engine, "-o", tmp_path / "o.parquet", check=False)
    assert "which descry cannot read" in out.stderr


def test_a_chunked_array_of_no_chunks_is_a_column_of_no_rows(engine):
    table = pa.table({"engine": pa.chunked_array([], pa.string())})
    out = descry.apply(table, engine)
    assert out.num_rows == 0
    assert out.column_names[0] == "engine" and "eng_turbo" in out.column_names
    assert descry.check(table, engine).rows == 0


def test_the_same_ruleset_twice_is_refused_naming_the_rule(engine):
    frame = pd.DataFrame({"engine": VALUES})
    with pytest.raises(descry.InputError, match=r'"turbo" would write column "eng_turbo", which rule "turbo"'):
        descry.apply(frame, [engine, engine])


@pytest.mark.parametrize("make", [pd.DataFrame, pl.DataFrame, pa.table])
def test_two_rulesets_writing_one_output_column_are_refused(make):
    a, b = descry.Ruleset.from_toml(TURBO, "a.toml"), descry.Ruleset.from_toml(DIESEL, "b.toml")
    with pytest.raises(descry.InputError, match=r'b.toml:3: .*"turbo".*\(a.toml:3\) writes too'):
        descry.apply(make({"engine": VALUES}), [a, b])
    with pytest.raises(descry.InputError, match="writes too"):
        descry.check(make({"engine": VALUES}), [a, b])


def test_pandas_duplicate_described_column_is_refused_as_the_command_line_does(engine):
    frame = pd.DataFrame([["V8 gas", "x"], ["4 cyl", "y"]], columns=["engine", "engine"])
    message = r'the column name "engine" is given to more than one column \(columns 1 and 2\)'
    for call in (
        lambda: descry.apply(frame, engine),
        lambda: descry.check(frame, engine),
        lambda: descry.survey(frame, "engine"),
    ):
        with pytest.raises(descry.InputError, match=message):
            call()


def test_pandas_non_string_and_repeated_labels_are_carried_unchanged(engine):
    frame = pd.DataFrame({"engine": ["V8 gas", "4 cyl"], 0: [1, 2], "0": ["a", "b"]})
    out = descry.apply(frame, engine)
    assert list(out.columns[:3]) == ["engine", 0, "0"]
    assert out[0].tolist() == [1, 2] and out["0"].tolist() == ["a", "b"]
    dup = pd.DataFrame([["V8 gas", 1, 2]], columns=["engine", "x", "x"])
    out = descry.apply(dup, engine, drop_source=True)
    assert list(out.columns[:2]) == ["x", "x"] and out.iloc[0, :2].tolist() == [1, 2]


def test_keep_as_one_string_names_one_column(engine):
    frame = pd.DataFrame({"engine": VALUES, "id": [1, 2, 3, 4]})
    out = descry.apply(frame, engine, only_features=True, keep="id")
    assert list(out.columns)[0] == "id" and out["id"].tolist() == [1, 2, 3, 4]
    out = descry.apply(frame, engine, only_features=True, keep=["id", "id"])
    assert list(out.columns).count("id") == 1


@pytest.mark.parametrize(
    "series", [pd.Series(VALUES, name="engine"), pl.Series("engine", VALUES), pa.chunked_array([VALUES])]
)
def test_a_single_column_is_refused_with_a_hint(engine, series):
    with pytest.raises(descry.InputError, match="not a single column"):
        descry.apply(series, engine)


def test_pandas_text_with_a_lone_surrogate_is_an_input_error(engine):
    frame = pd.DataFrame({"engine": pd.Series(["V8 \ud800 gas"], dtype=object)})
    with pytest.raises(descry.InputError, match='column "engine": cannot be read as text'):
        descry.apply(frame, engine)


def test_require_malformed_and_single_string(demo, engine):
    frame = pl.read_csv(demo, infer_schema=False)
    with pytest.raises(descry.InputError, match='"abc" is not a number'):
        descry.check(frame, engine, require=["turbo=abc"])
    # one string is one requirement, not one per character
    report = descry.check(frame, engine, require="turbo=0.99")
    assert not report.passed and any("turbo" in f for f in report.failures)
    with pytest.raises(descry.InputError, match="give a share between 0 and 1"):
        descry.check(frame, engine, min_coverage=True)


def test_save_baseline_of_several_rulesets_onto_a_file(demo, engine, transmission, tmp_path):
    frame = pl.read_csv(demo, infer_schema=False)
    (tmp_path / "b.parquet").write_text("x")
    with pytest.raises(descry.InputError, match="this is a file; name a folder"):
        descry.check(frame, [engine, transmission], save_baseline=tmp_path / "b.parquet")


@pytest.mark.parametrize(
    "call, message",
    [
        (lambda f: descry.survey(f, "engine", top=-1), "top=-1"),
        (lambda f: descry.survey(f, "engine", examples=-2), "examples=-2"),
        (lambda f: descry.cluster(f, "engine", method="qgram", q=-1), "q=-1"),
        (lambda f: descry.propose(f, "engine", max_rules=-1), "max_rules=-1"),
        (lambda f: descry.propose(f, "engine", max_rules=0), "max_rules=0"),
        (lambda f: descry.propose(f, "engine", min_share=2), "min_share=2: give a share"),
        (lambda f: descry.propose(f, "engine", max_share=float("nan")), "max_share=nan: give a share"),
    ],
)
def test_out_of_range_numbers_are_input_errors(call, message):
    frame = pl.DataFrame({"engine": ["V8 gas"] * 5 + ["4 cyl diesel"] * 3})
    with pytest.raises(descry.InputError, match=message):
        call(frame)


def test_propose_output_onto_an_existing_file_or_folder(tmp_path):
    frame = pl.DataFrame({"engine": ["V8 gas"] * 5 + ["4 cyl diesel"] * 3})
    existing = tmp_path / "draft.toml"
    existing.write_text("mine")
    with pytest.raises(descry.InputError, match="exists; descry does not overwrite"):
        descry.propose(frame, "engine", output=existing)
    assert existing.read_text() == "mine"
    with pytest.raises(descry.InputError, match="is a folder"):
        descry.propose(frame, "engine", output=tmp_path)


def test_pandas_object_column_mixing_text_and_numbers_says_how_to_convert(engine):
    frame = pd.DataFrame({"engine": pd.Series(["V8 gas", 5, None], dtype=object)})
    with pytest.raises(descry.InputError, match=r'mixes text with other values: .*astype\("string"\)'):
        descry.apply(frame, engine)
    frame["engine"] = frame["engine"].astype("string")
    assert descry.apply(frame, engine)["eng_cylinders"].tolist()[0] == 8


@pytest.mark.parametrize("kind", ["pandas", "polars", "arrow", "lazy"])
def test_propose_writes_no_column_the_frame_already_has(kind):
    # A frame that already has columns named like the draft's features (as
    # apply's own output does): the rules are renamed and the draft applies.
    kinds = ["manual", "automatic", "cvt", "powershift"]
    t = [f"{[4, 5, 6, 8, 12, 16][i % 6]} spd {kinds[(i // 6) % 4]}" for i in range(400)]
    frame = pl.DataFrame({"t": t, "t_spd": [1] * 400, "t_family": ["x"] * 400})
    data = {
        "pandas": frame.to_pandas(),
        "polars": frame,
        "arrow": frame.to_arrow(),
        "lazy": frame.lazy(),
    }[kind]
    draft = descry.propose(data, "t")
    names = [r["name"] for r in draft["draft"]["proposals"]]
    assert "spd_2" in names and "family_2" in names, names
    assert '# named spd_2: the table already has a column "t_spd"' in draft["toml"]
    out = descry.apply(frame, descry.Ruleset.from_toml(draft["toml"]))
    assert out["t_spd_2"].to_list()[:2] == [4, 5]
