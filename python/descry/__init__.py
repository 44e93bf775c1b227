"""descry: turn messy free-text categorical columns into compact model
features (counts, flags, measures in one unit, family labels), one distinct
value at a time, inside a pandas, polars, pyarrow or DuckDB chain.

    >>> import descry
    >>> out = descry.apply(listings, "rulesets/engine.toml")      # doctest: +SKIP
    >>> report = descry.check(listings, "rulesets/engine.toml", min_coverage=0.95)  # doctest: +SKIP

The rules run in Rust, once per distinct value, with the GIL released; the
described columns reach Rust through the Arrow C stream interface.
"""

from __future__ import annotations

import html
import json
import os
from collections.abc import Iterable, Mapping, Sequence
from pathlib import Path
from typing import Any, Union

import pyarrow as pa

from . import _frames, _native
from ._errors import DescryError, InputError, RulesetError

__all__ = [
    "apply",
    "check",
    "survey",
    "cluster",
    "propose",
    "Ruleset",
    "CheckReport",
    "DescryError",
    "RulesetError",
    "InputError",
]

__version__: str = _native.VERSION


class Ruleset:
    """A ruleset (TOML; see docs/rulesets.md), loaded and compiled once."""

    __slots__ = ("_native",)

    def __init__(self, native: _native.Ruleset) -> None:
        self._native = native

    @classmethod
    def load(cls, path: str | os.PathLike[str]) -> Ruleset:
        """Load a ruleset file. Raises RulesetError naming the file, line,
        rule and pattern position of a problem."""
        return cls(_native.Ruleset.load(os.fspath(path)))

    @classmethod
    def from_toml(cls, text: str, name: str = "<string>") -> Ruleset:
        """A ruleset from TOML text; `name` stands for the file in messages."""
        return cls(_native.Ruleset.from_toml(text, name))

    @property
    def column(self) -> str | None:
        """The column the ruleset describes, if it names one."""
        return self._native.column

    @property
    def file(self) -> str:
        return self._native.file

    @property
    def text(self) -> str:
        """The TOML text the ruleset was read from."""
        return self._native.text

    @property
    def features(self) -> list[dict[str, Any]]:
        """Each rule: its name, output column, kind and line."""
        return [
            {"name": n, "output": o, "kind": k, "line": line}
            for n, o, k, line in self._native.features
        ]

    @property
    def warnings(self) -> list[str]:
        return self._native.warnings

    def explain(self, values: str | Iterable[str], *, fired_only: bool = False) -> list[dict]:
        """What every rule does to each value: the structure of
        `descry explain --format json` (normalized form, each rule's match,
        captures and feature value)."""
        values = [values] if isinstance(values, str) else list(values)
        return json.loads(self._native.explain_json(values, fired_only))

    def __repr__(self) -> str:
        return repr(self._native)


RulesLike = Union[str, os.PathLike, Ruleset, Sequence[Union[str, os.PathLike, Ruleset]]]


def _rulesets(rules: RulesLike) -> list[Ruleset]:
    items = [rules] if isinstance(rules, (str, os.PathLike, Ruleset)) else list(rules)
    if not items:
        raise InputError("give at least one ruleset")
    return [r if isinstance(r, Ruleset) else Ruleset.load(r) for r in items]


def _described(rulesets: list[Ruleset], column: str | None) -> list[tuple[Ruleset, str]]:
    if column is not None and len(rulesets) > 1:
        raise InputError(
            "column= applies to a single ruleset; with several, name each column in its ruleset"
        )
    out = []
    writers: dict[str, tuple[Ruleset, dict]] = {}
    for r in rulesets:
        for f in r.features:
            if f["output"] in writers:
                other, g = writers[f["output"]]
                raise InputError(
                    f'{r.file}:{f["line"]}: rule [[{f["kind"]}]] "{f["name"]}" would write column '
                    f'"{f["output"]}", which rule "{g["name"]}" ({other.file}:{g["line"]}) writes too; '
                    f"give each ruleset once, and a different `prefix` to rulesets whose rules share names"
                )
            writers[f["output"]] = (r, f)
        name = column if column is not None else r.column
        if name is None:
            raise InputError(
                f'{r.file}: the ruleset names no `column`; give column="NAME" or add '
                f'column = "..." to the ruleset'
            )
        out.append((r, name))
    return out


def _missing(names: list[str], wanted: Iterable[str]) -> None:
    for w in wanted:
        if w not in names:
            shown = ", ".join(f'"{n}"' for n in names)
            raise InputError(f'no column named "{w}"; the columns are: {shown}')


def _sources(data: Any, kind: str, described: list[tuple[Ruleset, str]]) -> list[tuple[str, Any]]:
    names = list(dict.fromkeys(c for _, c in described))
    return [(c, _frames.arrow_column(data, kind, c)) for c in names]


def _features(data: Any, kind: str, described: list[tuple[Ruleset, str]]) -> pa.Table:
    stream = _native.features(
        _sources(data, kind, described), [(r._native, c) for r, c in described]
    )
    return _frames.fix_types(pa.RecordBatchReader.from_stream(stream).read_all())


def apply(
    data: Any,
    rules: RulesLike,
    *,
    keep: Sequence[str] | None = None,
    only_features: bool = False,
    drop_source: bool = False,
    column: str | None = None,
) -> Any:
    """The table with each ruleset's features added: same rows, same order,
    the caller's kind of table (a polars LazyFrame stays lazy; a DuckDB
    relation or another Arrow stream gives a pyarrow Table).

    `rules` is a path, a Ruleset, or a list of them; each describes the
    column its ruleset names (or `column`, with a single ruleset).
    `only_features` keeps only the features and the `keep` columns;
    `drop_source` leaves the described columns out. Features have the types
    `descry apply` writes: booleans, the smallest integers that hold a
    count, float32 measures and labels as categories in the ruleset's order.
    """
    rulesets = _rulesets(rules)
    described = _described(rulesets, column)
    keep = [keep] if isinstance(keep, str) else list(dict.fromkeys(keep or []))
    if drop_source and only_features:
        raise InputError("drop_source and only_features cannot be used together")
    if keep and not only_features:
        raise InputError("keep= names the columns to carry with only_features=True")
    kind = _frames.kind_of(data)
    if kind == _frames.LAZY:
        return _apply_lazy(data, rulesets, described, keep, only_features, drop_source, column)
    if kind == _frames.ARROW:
        data = _frames.as_arrow_table(data)
    names = _frames.column_names(data, kind)
    sources = [c for _, c in described]
    _missing(names, sources)
    _frames.check_unique(names, sources)
    if only_features:
        _missing(names, keep)
        kept = keep
    elif drop_source:
        kept = [n for n in names if n not in sources]
    else:
        kept = names
    for r, _ in described:
        for f in r.features:
            if f["output"] in kept:
                raise InputError(
                    f'{r.file}:{f["line"]}: rule [[{f["kind"]}]] "{f["name"]}" would write column '
                    f'"{f["output"]}", which the input already has; rename the rule or set a '
                    f"`prefix` in the ruleset"
                )
    features = _features(data, kind, described)
    return _frames.attach(data, kind, features, kept)


def _apply_lazy(lazy, rulesets, described, keep, only_features, drop_source, column):
    if not all(r._native.types_fixed for r in rulesets):
        loose = [
            f'"{f["name"]}" ({r.file}:{f["line"]})'
            for r in rulesets
            for f in r.features
            if f["kind"] == "count"
        ]
        raise InputError(
            "a LazyFrame needs every output type before it runs, and a count with no `range` is "
            "typed by the values it reads; give each count a range (counts: "
            + ", ".join(loose)
            + "), or collect the LazyFrame first"
        )
    import polars as pl

    options = dict(keep=keep, only_features=only_features, drop_source=drop_source, column=column)
    empty = pl.DataFrame(schema=lazy.collect_schema())
    schema = apply(empty, rulesets, **options).schema
    return lazy.map_batches(lambda frame: apply(frame, rulesets, **options), schema=schema)


# ---------------------------------------------------------------- check


def _share(name: str, value: float | None) -> float | None:
    if value is None:
        return None
    if isinstance(value, bool) or not (isinstance(value, (int, float)) and 0.0 <= value <= 1.0):
        raise InputError(f"{name}={value!r}: give a share between 0 and 1, e.g. 0.95")
    return float(value)


def _requirements(
    require: Mapping[str, float] | Iterable[str] | None, described: list[tuple[Ruleset, str]]
) -> list[list[tuple[str, float]]]:
    """Each requirement given to the one ruleset that has the feature (by
    output column, then by rule name)."""
    per = [[] for _ in described]
    if require is None:
        return per
    if isinstance(require, Mapping):
        pairs = list(require.items())
    else:
        pairs = []
        for item in [require] if isinstance(require, str) else require:
            feature, _, share = str(item).rpartition("=")
            if not feature:
                raise InputError(f"{item!r}: write FEATURE=SHARE, e.g. turbo=0.02")
            try:
                pairs.append((feature.strip(), float(share)))
            except ValueError:
                raise InputError(f'{item!r}: "{share.strip()}" is not a number') from None
    for feature, share in pairs:
        share = _share(f"require {feature}", share)
        found = [i for i, (r, _) in enumerate(described) if any(f["output"] == feature for f in r.features)]
        if not found:
            found = [i for i, (r, _) in enumerate(described) if any(f["name"] == feature for f in r.features)]
        if not found:
            known = ", ".join(f["output"] for r, _ in described for f in r.features)
            raise InputError(
                f"require {feature}: no rule has that name or output column; the output columns are: {known}"
            )
        if len(found) > 1:
            raise InputError(
                f"require {feature}: several rulesets have a rule of that name; name its output column instead"
            )
        per[found[0]].append((feature, share))
    return per


def _baseline_files(path: str | os.PathLike | None, described, create: bool) -> list[str | None]:
    if path is None:
        return [None] * len(described)
    path = Path(path)
    if len(described) == 1:
        if create and path.suffix.lower() != ".parquet":
            raise InputError(f"{path}: a baseline is a Parquet file; name it *.parquet")
        return [os.fspath(path)]
    if create:
        if path.exists() and not path.is_dir():
            raise InputError(
                f"{path}: with several rulesets, the baseline is a folder of RULESET-STEM.parquet "
                f"files, and this is a file; name a folder"
            )
        path.mkdir(parents=True, exist_ok=True)
    elif not path.is_dir():
        raise InputError(
            f"{path}: with several rulesets, the baseline is a folder of RULESET-STEM.parquet files "
            f"(what save_baseline wrote); this is not a folder"
        )
    return [os.fspath(path / f"{Path(r.file).stem}.parquet") for r, _ in described]


class _Gates:
    """check's gates and baselines, checked before any work, for each ruleset."""

    def __init__(self, min_coverage, limits, requirements, bases, saves) -> None:
        self.min_coverage, self.limits = min_coverage, limits
        self.requirements, self.bases, self.saves = requirements, bases, saves

    @classmethod
    def of(cls, described, min_coverage, require, baseline, save_baseline, drift_limits) -> _Gates:
        max_new_share, max_new_uncovered_share, max_psi, max_shift = drift_limits
        limits = (
            _share("max_new_share", max_new_share),
            _share("max_new_uncovered_share", max_new_uncovered_share),
            None if max_psi is None else float(max_psi),
            _share("max_shift", max_shift),
        )
        if baseline is None and any(x is not None for x in limits):
            raise InputError(
                "the max_new_share, max_new_uncovered_share, max_psi and max_shift gates need baseline="
            )
        return cls(
            _share("min_coverage", min_coverage),
            limits,
            _requirements(require, described),
            _baseline_files(baseline, described, create=False),
            _baseline_files(save_baseline, described, create=True),
        )

    def per_ruleset(self, described):
        """(ruleset and column, requirements, baseline, baseline to save)."""
        return zip(described, self.requirements, self.bases, self.saves)


class CheckReport:
    """The report of `descry.check`: what `descry check --format json`
    prints (`to_dict()`), with the figures as attributes. A failed gate or
    example raises nothing: `passed` is False and `failures` says why."""

    def __init__(self, reports: list[dict], kind: str) -> None:
        self._reports = reports
        self._kind = kind

    def to_dict(self) -> dict:
        """The `descry.check/1` JSON (one ruleset) or `descry.checks/1`
        (several), exactly as the command line writes it."""
        if len(self._reports) == 1:
            return self._reports[0]
        return {
            "schema": "descry.checks/1",
            "reports": self._reports,
            "gates": [{"ruleset": r["ruleset"], **g} for r in self._reports for g in r["gates"]],
            "passed": self.passed,
        }

    @property
    def reports(self) -> list[CheckReport]:
        """One report per ruleset."""
        return [CheckReport([r], self._kind) for r in self._reports]

    def _one(self) -> dict:
        if len(self._reports) != 1:
            raise AttributeError("this report holds several rulesets; use .reports[i]")
        return self._reports[0]

    @property
    def passed(self) -> bool:
        return all(r["passed"] for r in self._reports)

    @property
    def failures(self) -> list[str]:
        """The reason of every failed gate, and failed examples."""
        out = []
        for r in self._reports:
            out += [g.get("reason") or g["gate"] for g in r["gates"] if not g["passed"]]
            if r["examples_failed"]:
                out.append(f'{r["ruleset"]}: {r["examples_failed"]} examples failed')
        return out

    @property
    def rows(self) -> int:
        return self._one()["rows"]

    @property
    def distinct(self) -> int:
        return self._one()["distinct"]

    @property
    def coverage(self) -> dict:
        """rows_considered, rows_covered, row_share, distinct_considered,
        distinct_covered, distinct_share."""
        return self._one()["coverage"]

    @property
    def row_share(self) -> float | None:
        return self.coverage["row_share"]

    @property
    def distinct_share(self) -> float | None:
        return self.coverage["distinct_share"]

    @property
    def rules(self) -> list[dict]:
        return self._one()["rules"]

    @property
    def drift(self) -> dict | None:
        return self._one().get("drift")

    @property
    def unmatched(self) -> Any:
        """The values no rule covers, most rows first, as a table of the
        caller's kind (value, normalized, rows)."""
        rows = self._one()["unmatched"]
        table = pa.table(
            {
                "value": pa.array([u["value"] for u in rows], pa.string()),
                "normalized": pa.array([u["normalized"] for u in rows], pa.string()),
                "rows": pa.array([u["rows"] for u in rows], pa.uint64()),
            }
        )
        return _frames.to_kind(table, self._kind)

    def __repr__(self) -> str:
        parts = []
        for r in self._reports:
            share = r["coverage"]["row_share"]
            shown = "-" if share is None else f"{share:.1%}"
            parts.append(f'{r["column"]}: {shown} of rows covered')
        verdict = "passed" if self.passed else "FAILED"
        return f"<descry CheckReport {verdict}; " + "; ".join(parts) + ">"

    def _repr_html_(self) -> str:
        esc = html.escape
        out = []
        for r in self._reports:
            c = r["coverage"]
            share = "-" if c["row_share"] is None else f'{c["row_share"]:.1%}'
            verdict = "passed" if r["passed"] else "failed"
            out.append(
                f"<p><b>{esc(r['column'])}</b> ({esc(r['ruleset'])}): {share} of "
                f"{c['rows_considered']:,} rows with text covered, {r['distinct']:,} distinct values; "
                f"<b>{verdict}</b></p>"
            )
            failed = [g for g in r["gates"] if not g["passed"]]
            if failed:
                out.append(
                    "<ul>" + "".join(f"<li>{esc(g.get('reason') or g['gate'])}</li>" for g in failed) + "</ul>"
                )
            top = r["unmatched"][:10]
            if top:
                cells = "".join(
                    f"<tr><td>{esc(u['value'])}</td><td style='text-align:right'>{u['rows']:,}</td></tr>"
                    for u in top
                )
                out.append(
                    f"<table><thead><tr><th>unmatched value</th><th>rows</th></tr></thead>"
                    f"<tbody>{cells}</tbody></table>"
                )
        return "<div>" + "".join(out) + "</div>"


def check(
    data: Any,
    rules: RulesLike,
    *,
    min_coverage: float | None = None,
    require: Mapping[str, float] | Iterable[str] | None = None,
    baseline: str | os.PathLike | None = None,
    save_baseline: str | os.PathLike | None = None,
    max_new_share: float | None = None,
    max_new_uncovered_share: float | None = None,
    max_psi: float | None = None,
    max_shift: float | None = None,
    column: str | None = None,
) -> CheckReport:
    """Test rulesets on every distinct value of their columns: coverage,
    per-rule hits, unmatched values, examples and gates, as `descry check`.

    `require` maps a feature (rule name or output column) to the share of
    rows with text it must fire on. With `baseline` (a file saved by
    `save_baseline` or `descry check --save-baseline`), the report gets a
    drift section and the `max_*` gates apply.
    """
    rulesets = _rulesets(rules)
    described = _described(rulesets, column)
    gates = _Gates.of(described, min_coverage, require, baseline, save_baseline,
                      (max_new_share, max_new_uncovered_share, max_psi, max_shift))
    kind = _frames.kind_of(data)
    if kind == _frames.LAZY:
        data = data.select(list(dict.fromkeys(c for _, c in described))).collect()
        kind, report_kind = _frames.POLARS, _frames.POLARS
    else:
        report_kind = kind
    if kind == _frames.ARROW:
        data = _frames.as_arrow_table(data)
    names = _frames.column_names(data, kind)
    _missing(names, [c for _, c in described])
    _frames.check_unique(names, [c for _, c in described])
    reports = []
    for (r, name), req, base, save in gates.per_ruleset(described):
        source = _frames.arrow_column(data, kind, name)
        text = _native.check(source, name, r._native, gates.min_coverage, req, base, save, gates.limits)
        reports.append(json.loads(text))
    return CheckReport(reports, report_kind)


# ---------------------------------------------------------------- survey, propose


def _whole(name: str, value: int, least: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or value < least:
        raise InputError(f"{name}={value!r}: give a whole number of at least {least}")
    return value


def _one_column(data: Any, column: str) -> Any:
    kind = _frames.kind_of(data)
    if kind == _frames.LAZY:
        data, kind = data.select(column).collect(), _frames.POLARS
    if kind == _frames.ARROW:
        data = _frames.as_arrow_table(data)
    names = _frames.column_names(data, kind)
    _missing(names, [column])
    _frames.check_unique(names, [column])
    return _frames.arrow_column(data, kind, column)


def survey(
    data: Any,
    column: str,
    *,
    top: int = 20,
    examples: int = 3,
    placeholders: Sequence[str] = (),
    default_placeholders: bool = True,
) -> dict:
    """A column's survey: the `descry.survey/1` JSON of `descry survey`
    (values, shapes, tokens, placeholders, anomalies)."""
    top, examples = _whole("top", top, 0), _whole("examples", examples, 0)
    placeholders = [placeholders] if isinstance(placeholders, str) else list(placeholders)
    text = _native.survey(
        _one_column(data, column), column, top, examples, placeholders, default_placeholders
    )
    return json.loads(text)


def cluster(
    data: Any,
    column: str,
    *,
    method: str = "letters",
    threshold: float | int | str | None = None,
    q: int = 3,
    digits: str = "strict",
    max_diameter: float | int | str | None = None,
) -> dict:
    """A column's near-duplicate values grouped, each group with a canonical
    spelling: the `descry.cluster/1` dict of `descry cluster --format json`.
    `method` is one of letters, words (exact), qgram, levenshtein, osa,
    jaro-winkler (fuzzy; `threshold` as on the command line)."""
    q = _whole("q", q, 0)
    if digits not in ("strict", "loose"):
        raise InputError(f'digits={digits!r}: choose "strict" or "loose"')
    text = _native.cluster(
        _one_column(data, column),
        column,
        method,
        None if threshold is None else str(threshold),
        q,
        digits == "loose",
        None if max_diameter is None else str(max_diameter),
    )
    return json.loads(text)


def propose(
    data: Any,
    column: str,
    *,
    output: str | os.PathLike | None = None,
    min_share: float | None = None,
    max_share: float | None = None,
    max_rules: int | None = None,
    prefix: str | None = None,
) -> dict:
    """A drafted ruleset for a column: the `descry.propose/1` JSON of
    `descry propose` (the draft's rules and its check), plus `toml`, the
    draft's text. With `output`, the draft is also written there (never over
    an existing file)."""
    min_share, max_share = _share("min_share", min_share), _share("max_share", max_share)
    if max_rules is not None:
        max_rules = _whole("max_rules", max_rules, 1)
    if output is not None:
        path = Path(output)
        if path.is_dir():
            raise InputError(f"{path}: is a folder; name the file to write, e.g. DIR/draft.toml")
        if path.exists():
            raise InputError(
                f"{path} exists; descry does not overwrite a ruleset you may have edited: "
                f"give another output"
            )
    kind = _frames.kind_of(data)
    if kind == _frames.ARROW:
        data = _frames.as_arrow_table(data)
    # Every column name of the frame: no drafted feature column takes one.
    names = [str(n) for n in _frames.column_names(data, kind)]
    toml, text = _native.propose(
        _one_column(data, column), column, min_share, max_share, max_rules, prefix, names
    )
    report = json.loads(text)
    if output is not None:
        path = Path(output)
        try:
            with open(path, "x", encoding="utf-8") as f:
                f.write(toml)
        except FileExistsError:
            raise InputError(
                f"{path} exists; descry does not overwrite a ruleset you may have edited: "
                f"give another output"
            ) from None
        report["output"] = os.fspath(path)
    report["toml"] = toml
    return report
