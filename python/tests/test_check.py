"""descry.check, survey and propose return what the command line's JSON
holds, on the same input. Reference: `descry check|survey|propose
--format json` on the demo listings."""

from __future__ import annotations

import json

import pandas as pd
import polars as pl
import pytest

import descry

from conftest import cli


def cli_json(*args) -> dict:
    out = cli(*args, "--format", "json", "-q")
    return json.loads(out.stdout)


def pandas_text(path) -> pd.DataFrame:
    return pd.read_csv(path, dtype=str, keep_default_na=False, na_values=[""])


def test_check_to_dict_is_the_cli_json(demo, engine):
    want = cli_json("check", demo, "-r", engine, "--min-coverage", "0.999", "--require", "turbo=0.05")
    report = descry.check(pandas_text(demo), str(engine), min_coverage=0.999, require={"turbo": 0.05})
    assert report.to_dict() == want
    assert report.passed is want["passed"] is False
    assert report.row_share == want["coverage"]["row_share"]
    assert report.rows == want["rows"] and report.distinct == want["distinct"]
    assert any("0.999" in reason or "99.9" in reason for reason in report.failures)


def test_several_rulesets_give_the_checks_json(demo, engine, transmission):
    want = cli_json("check", demo, "-r", engine, "-r", transmission, "--min-coverage", "0.5")
    got = descry.check(pl.read_csv(demo, infer_schema=False), [str(engine), str(transmission)], min_coverage=0.5)
    assert got.to_dict() == want
    assert [r.to_dict() for r in got.reports] == want["reports"]


def test_unmatched_is_a_table_of_the_callers_kind(demo, engine):
    frame = pl.read_csv(demo, infer_schema=False)
    report = descry.check(frame, str(engine))
    unmatched = report.unmatched
    assert isinstance(unmatched, pl.DataFrame)
    want = report.to_dict()["unmatched"]
    assert unmatched["value"].to_list() == [u["value"] for u in want]
    assert unmatched["rows"].to_list() == [u["rows"] for u in want]
    assert isinstance(descry.check(pandas_text(demo), str(engine)).unmatched, pd.DataFrame)
    html = report._repr_html_()
    assert "<table>" in html and "engine" in html


def test_a_failed_gate_raises_nothing(demo, engine):
    report = descry.check(pandas_text(demo), str(engine), min_coverage=1.0)
    assert report.passed is False
    assert "FAILED" in repr(report)


def test_baseline_drift_is_the_cli_drift(demo, engine, tmp_path):
    base = tmp_path / "base.parquet"
    cli("check", demo, "-r", engine, "--save-baseline", base, "-q")
    # The next drop: the demo listings with the first 400 rows' engines gone.
    frame = pandas_text(demo)
    drop = frame.iloc[400:].copy()
    drop_csv = tmp_path / "drop.csv"
    drop.to_csv(drop_csv, index=False)
    want = cli_json("check", drop_csv, "-r", engine, "--baseline", base, "--max-psi", "0.0001")
    got = descry.check(pandas_text(drop_csv), str(engine), baseline=str(base), max_psi=0.0001)
    assert got.to_dict() == want
    assert got.drift == want["drift"]
    # Saved from Python, the baseline is byte for byte the command line's.
    mine = tmp_path / "mine.parquet"
    descry.check(frame, str(engine), save_baseline=mine)
    assert mine.read_bytes() == base.read_bytes()


def test_survey_is_the_cli_json(demo):
    want = cli_json("survey", demo, "-c", "engine")
    assert descry.survey(pandas_text(demo), "engine") == want


def test_propose_is_the_cli_json(demo, tmp_path):
    out = tmp_path / "draft.toml"
    want = cli_json("propose", demo, "-c", "transmission", "-o", out)
    got = descry.propose(pl.read_csv(demo, infer_schema=False), "transmission")
    assert got["toml"] == out.read_text()
    for key in ("schema", "draft", "unmatched_before"):
        assert got[key] == want[key], key
    # The check of the draft names the ruleset file; the rest is the same.
    want["check"].pop("ruleset"), got["check"].pop("ruleset")
    assert got["check"] == want["check"]


def test_explain_is_the_cli_json(engine):
    values = ["4 cyl Turbo Diesel 4.5L", "n/a", "", "V8 gas"]
    want = json.loads(cli("explain", "-r", engine, *values, "--format", "json").stdout)
    assert descry.Ruleset.load(engine).explain(values) == want


def test_bad_arguments_are_input_errors(demo, engine):
    frame = pandas_text(demo)
    with pytest.raises(descry.InputError, match="no column named"):
        descry.check(frame, str(engine), column="nope")
    with pytest.raises(descry.InputError, match="share between 0 and 1"):
        descry.check(frame, str(engine), min_coverage=1.5)
    with pytest.raises(descry.InputError, match="need baseline"):
        descry.check(frame, str(engine), max_psi=0.1)
    with pytest.raises(descry.InputError, match="no rule has that name"):
        descry.check(frame, str(engine), require={"warp_drive": 0.1})


@pytest.mark.parametrize("method,extra", [("letters", []), ("words", []), ("osa", ["-t", "1"]), ("jaro-winkler", [])])
def test_cluster_is_the_cli_json(demo, method, extra):
    want = cli_json("cluster", demo, "-c", "transmission", "-m", method, *extra)
    threshold = extra[1] if extra else None
    assert descry.cluster(pandas_text(demo), "transmission", method=method, threshold=threshold) == want


def test_an_unknown_cluster_method_is_an_input_error(demo):
    with pytest.raises(descry.InputError, match="no clustering method"):
        descry.cluster(pandas_text(demo), "transmission", method="nearest")
