#!/usr/bin/env python3
"""Benchmark: `descry apply` against the dataframe code a practitioner would
otherwise write, on the same data, in one run, on the same machine.

Contenders (each one a separate process, each writing the same Parquet file:
the input columns plus the features of the transmission and engine rulesets):

  descry           target/release/descry apply ... --quiet
  pandas-rowwise   pandas: normalize and run every rule on every row
                   (Series.str.contains / Series.str.extract), astype, to_parquet
  pandas-expert    pandas: astype("category") first, the same rules on the
                   categories only, the results taken back through the codes
  polars-rowwise   polars (Python): the same rules as expressions on every row
                   (str.contains, str.extract_groups, when/then)
  polars-expert    polars (Python): the rules on the column's unique() values,
                   joined back to the rows
  floor            polars reading the CSV and writing the input columns to
                   Parquet, no feature work: the cost of the IO alone

The Python contenders do not hold hand-written copies of the rules: every
ruleset is translated from its TOML file here (tomllib), with descry's
semantics (docs/rulesets.md, src/engine/numbers.rs, src/engine/pattern.rs,
src/engine/evaluate.rs):

  * normalization: NFKC, lower case, every run of Unicode White_Space
    (no-break space included) becomes one space, trimmed;
  * `{int}` / `{num}` expand to the regexes of `Macro::expansion`;
  * `any` lists are whole-word literals: a literal starting (ending) with a
    letter, digit or `_` must not be preceded (followed) by one. For Python's
    `re` (pandas) this is a lookbehind/lookahead; polars runs Rust's `regex`
    crate, which has no lookaround, so the boundary is matched as a character
    `(?:^|[^\\p{Alphabetic}\\p{N}_])`: that consumes the neighbour but gives the
    same truth value, which is all a flag or a label case uses;
  * counts read the first capture group that took part in the match, parse it
    as `parse_integer` does (thousands separators, fractions; not a whole
    number -> null), apply `range` (outside -> null) and `missing` (no match);
  * measures: the first participating number group times the factor of the
    first participating unit group (unit spelling normalized, trailing `.`
    ignored; unknown unit -> null; no unit group -> the target unit);
  * labels: `map` on the exact normalized value first, then the first
    matching case, then `default`;
  * output types: Boolean; the integer type descry chooses from `range` and
    `missing` (or the observed values); Float32 / Float64; a dictionary
    (pandas category, polars Enum) whose categories are the ruleset's labels
    in order. Null source values give null features.

`fancy = true` patterns (lookaround, backreferences; the demo rulesets have
one label case each) run in pandas on Python's `re`, as every pandas regex
may. Polars' engine (Rust's `regex` crate) cannot express them, so the
polars contenders run those patterns with Python's `re` through
`map_batches`, at Python speed (`polars_contains`). Like descry's
fancy-regex, `re` backtracks; unlike it, `re` has no backtrack limit, so a
value on which descry gave up (null, reported by `check`) would make the
comparison fail rather than pass silently.

Constructs a contender cannot express raise `Unsupported` with the reason
(Rust-only regex syntax such as `\p{..}` under Python's `re`;
`strip_accents`, which is not implemented here); the demo rulesets use none
of them. Known, documented differences that the demo
data cannot reach: Python's `\\w` (used for the whole-word test under pandas)
is `str.isalnum()` or `_`, while descry uses Rust's `char::is_alphanumeric()`
or `_` (they differ on a few combining marks that are Alphabetic); pandas'
`str.lower()` on Arrow-backed strings uses simple case mapping (U+0130 and
final sigma differ from Rust's `to_lowercase`). The output comparison would
catch either on real data.

Every contender's output is compared with descry's (same columns, same types
for the features, same value in every row; floats within 1e-6 relative). Any
disagreement fails the benchmark (exit 1) with the contender, the column and
the first differing rows.

Usage (normally through benches/apply_compare.sh, which prepares the pinned
Python environment and the release binary):

  apply_compare.py run [--rows 1000000,10000000] [--runs 5,3] [--quick] ...
  apply_compare.py contender NAME INPUT.csv OUTPUT.parquet RULES.toml...
  apply_compare.py verify REFERENCE.parquet CANDIDATE.parquet RULES.toml...
"""
from __future__ import annotations

import argparse
import datetime as dt
import json
import os
import platform
import re
import shutil
import statistics
import subprocess
import sys
import time
import tomllib
import unicodedata
from dataclasses import dataclass, field
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent
DEFAULT_RULESETS = [REPO / "rulesets" / "transmission.toml", REPO / "rulesets" / "engine.toml"]
CONTENDERS = ["descry", "pandas-rowwise", "pandas-expert", "polars-rowwise", "polars-expert", "floor"]
FLOAT_RTOL = 1e-6


class Unsupported(Exception):
    """A ruleset construct that a contender's regex engine cannot express."""


# ---------------------------------------------------------------------------
# Character classes, exactly as descry defines them
# ---------------------------------------------------------------------------

# Unicode White_Space (PropList.txt), which is what Rust's char::is_whitespace
# tests: descry collapses runs of these to one space and trims them.
WHITE_SPACE = (
    "\t\n\x0b\x0c\r \x85\xa0\u1680" + "".join(chr(c) for c in range(0x2000, 0x200B)) + "\u2028\u2029\u202f\u205f\u3000"
)
# The same set as a regex character class made of the characters themselves
# (no \u escapes), so that pandas may hand it to its Arrow kernel.
WHITE_SPACE_RUN = "[" + WHITE_SPACE.replace("\\", "") + "]+"


def is_word_char(c: str) -> bool:
    """descry's whole-word test (src/engine/pattern.rs `is_whole_word`): alphanumeric or `_`."""
    return c.isalnum() or c == "_"


RUST_META = set("\\.+*?()|[]{}^$#&-~")


def rust_escape(text: str) -> str:
    """The `regex` crate's `regex::escape`: a backslash before each meta character."""
    return "".join("\\" + c if c in RUST_META else c for c in text)


# ---------------------------------------------------------------------------
# Rulesets, translated from TOML
# ---------------------------------------------------------------------------


@dataclass
class Normalize:
    unicode: str = "nfkc"
    case: str = "lower"
    trim: bool = True
    collapse_space: bool = True
    strip_accents: bool = False

    def apply(self, value: str) -> str:
        """descry's `Normalizer::apply`, for literals, map keys and unit spellings."""
        s = value
        if self.unicode in ("nfkc", "nfc"):
            s = unicodedata.normalize(self.unicode.upper(), s)
        if self.strip_accents:
            bare = "".join(c for c in unicodedata.normalize("NFD", s) if not unicodedata.category(c).startswith("M"))
            s = unicodedata.normalize("NFKC" if self.unicode == "nfkc" else "NFC", bare)
        if self.case == "lower":
            s = s.lower()
        if self.collapse_space:
            s = re.sub(WHITE_SPACE_RUN, " ", s)
        if self.trim:
            s = s.strip(WHITE_SPACE)
        return s


def macro_expansion(kind: str, decimal: str) -> str:
    """`Macro::expansion` in src/engine/numbers.rs, character for character."""
    thousands = "," if decimal == "." else "."
    t, d = rust_escape(thousands), rust_escape(decimal)
    grouped = rf"\d{{1,3}}(?:{t}\d{{3}})+"
    if kind == "int":
        return rf"(?:{grouped}|\d+)"
    slash = r"[/\u{2044}]"
    return rf"(?:\d+(?:-| )\d+{slash}\d+|\d+{slash}\d+|(?:{grouped}|\d+)?{d}\d+|{grouped}|\d+)"


def escaped(source: str, at: int) -> bool:
    n = 0
    while at - n - 1 >= 0 and source[at - n - 1] == "\\":
        n += 1
    return n % 2 == 1


def expand_macros(source: str, decimal: str) -> tuple[str, list[int]]:
    """`expand_macros` in src/engine/pattern.rs: (expanded pattern, macro offsets)."""
    out, offsets, i = [], [], 0
    while i < len(source):
        hit = next((k for k in ("int", "num") if source.startswith("{" + k + "}", i) and not escaped(source, i)), None)
        if hit:
            offsets.append(i)
            out.append(macro_expansion(hit, decimal))
            i += len(hit) + 2
        else:
            out.append(source[i])
            i += 1
    return "".join(out), offsets


def opens_capture(rest: str) -> bool:
    if not rest[1:].startswith("?"):
        return True
    after = rest[2:]
    return after.startswith("P<") or (after.startswith("<") and not after.startswith("<=") and not after.startswith("<!"))


@dataclass
class Group:
    start: int
    end: int
    has_macro: bool = False


def scan_groups(source: str, macros: list[int]) -> list[Group]:
    """`scan_groups` in src/engine/pattern.rs: the capture groups as written."""
    groups: list[Group] = []
    stack: list[int | None] = []
    i, class_depth = 0, 0
    while i < len(source):
        c = source[i]
        if c == "\\":
            i += 1
        elif c == "[":
            class_depth += 1
        elif c == "]" and class_depth > 0:
            class_depth -= 1
        elif c == "(" and class_depth == 0:
            if opens_capture(source[i:]):
                groups.append(Group(i, i))
                stack.append(len(groups) - 1)
            else:
                stack.append(None)
        elif c == ")" and class_depth == 0:
            g = stack.pop() if stack else None
            if g is not None:
                groups[g].end = i + 1
        i += 1
    for m in macros:
        inner = [(k, g) for k, g in enumerate(groups) if g.start <= m < g.end]
        if inner:
            groups[max(inner, key=lambda kg: kg[1].start)[0]].has_macro = True
    return groups


RUST_ONLY = [r"\p{", r"\P{", "[[:", r"\z", "(?U", "(?x", r"\x{", r"\U{"]


@dataclass
class Pattern:
    source: str
    fancy: bool
    expanded: str  # the regex descry runs (Rust syntax)
    groups: list[Group]

    @property
    def python(self) -> str:
        """For Python's `re` (pandas)."""
        if any(tok in self.expanded for tok in RUST_ONLY):
            raise Unsupported(f"pattern {self.source!r} uses Rust-only regex syntax that Python's re lacks")
        return re.sub(r"\\u\{([0-9a-fA-F]{1,6})\}", lambda m: chr(int(m.group(1), 16)), self.expanded)

    @property
    def rust(self) -> str:
        """For polars (Rust's `regex` crate), which has no lookaround or
        backreferences: a `fancy` pattern runs through Python's `re` instead
        (see `polars_contains`)."""
        if self.fancy:
            raise Unsupported(f"pattern {self.source!r} is `fancy = true`: polars' regex engine cannot run it")
        return self.expanded


def compile_pattern(source: str, fancy: bool, decimal: str) -> Pattern:
    expanded, macros = expand_macros(source, decimal)
    return Pattern(source, fancy, expanded, scan_groups(source, macros))


@dataclass
class Matcher:
    words: list[str] | None = None
    pattern: Pattern | None = None

    @property
    def python(self) -> str:
        if self.pattern:
            return self.pattern.python
        alts = []
        for w in self.words:
            before = r"(?<!\w)" if is_word_char(w[0]) else ""
            after = r"(?!\w)" if is_word_char(w[-1]) else ""
            alts.append(before + re.escape(w) + after)
        return "(?:" + "|".join(alts) + ")"

    @property
    def rust(self) -> str:
        if self.pattern:
            return self.pattern.rust
        non_word = r"[^\p{Alphabetic}\p{N}_]"
        alts = []
        for w in self.words:
            before = f"(?:^|{non_word})" if is_word_char(w[0]) else ""
            after = f"(?:$|{non_word})" if is_word_char(w[-1]) else ""
            alts.append(before + rust_escape(w) + after)
        return "(?:" + "|".join(alts) + ")"


@dataclass
class Feature:
    kind: str  # flag | count | measure | label
    name: str
    output: str
    matcher: Matcher | None = None  # flag
    pattern: Pattern | None = None  # count, measure
    range: tuple | None = None
    missing: float | int | None = None
    number_groups: list[int] = field(default_factory=list)  # measure
    unit_groups: list[int] = field(default_factory=list)
    units: dict[str, float] = field(default_factory=dict)
    precision: str = "f32"
    categories: list[str] = field(default_factory=list)  # label
    default: str | None = None
    map: dict[str, str] = field(default_factory=dict)
    cases: list[tuple[str, Matcher]] = field(default_factory=list)

    def int_type(self, observed_lo=None, observed_hi=None) -> str:
        """`count_type` / `IntType::for_range` in src/table/encode.rs."""
        if self.range:
            lo, hi = self.range
        else:
            lo, hi = observed_lo, observed_hi
        if self.missing is not None:
            lo = self.missing if lo is None else min(lo, self.missing)
            hi = self.missing if hi is None else max(hi, self.missing)
        if lo is None or hi is None or lo > hi:
            return "UInt8"
        for name, mn, mx in [
            ("UInt8", 0, 2**8 - 1),
            ("Int8", -(2**7), 2**7 - 1),
            ("UInt16", 0, 2**16 - 1),
            ("Int16", -(2**15), 2**15 - 1),
            ("Int32", -(2**31), 2**31 - 1),
        ]:
            if lo >= mn and hi <= mx:
                return name
        return "Int64"


@dataclass
class Ruleset:
    path: Path
    column: str
    prefix: str
    decimal: str
    normalize: Normalize
    features: list[Feature]
    # Whole normalized values that carry no information: their features are
    # null, as for a blank value (docs/rulesets.md, "Placeholders and blanks").
    placeholders: list[str] = field(default_factory=list)
    placeholder_pattern: Pattern | None = None


def measure_groups(groups: list[Group]) -> tuple[list[int], list[int]]:
    """`measure_groups` in src/engine/ruleset/compile.rs."""
    number = [i for i, g in enumerate(groups) if g.has_macro] or [0]

    def encloses_number(i: int) -> bool:
        return any(n != i and groups[i].start <= groups[n].start and groups[n].end <= groups[i].end for n in number)

    unit = [i for i in range(len(groups)) if i not in number and not encloses_number(i)]
    return number, unit


def load_ruleset(path: Path) -> Ruleset:
    text = path.read_text(encoding="utf-8")
    spec = tomllib.loads(text)
    norm = Normalize(**spec.get("normalize", {}))
    decimal = spec.get("decimal", ".")
    prefix = spec.get("prefix", "")

    def matcher(d: dict) -> Matcher:
        if "any" in d:
            return Matcher(words=[norm.apply(w) for w in d["any"]])
        return Matcher(pattern=compile_pattern(d["pattern"], d.get("fancy", False), decimal))

    # descry orders the features as the rules appear in the file.
    kinds = re.findall(r"^[ \t]*\[\[[ \t]*(flag|count|measure|label)[ \t]*\]\]", text, re.M)
    for kind in ("flag", "count", "measure", "label"):
        if kinds.count(kind) != len(spec.get(kind, [])):
            raise Unsupported(f"{path}: write every rule as a [[{kind}]] table so the benchmark can order them")
    seen = {k: 0 for k in ("flag", "count", "measure", "label")}
    features = []
    for kind in kinds:
        d = spec[kind][seen[kind]]
        seen[kind] += 1
        f = Feature(kind=kind, name=d["name"], output=prefix + d["name"])
        if kind == "flag":
            f.matcher = matcher(d)
        elif kind in ("count", "measure"):
            f.pattern = compile_pattern(d["pattern"], d.get("fancy", False), decimal)
            f.range = tuple(d["range"]) if "range" in d else None
            f.missing = d.get("missing")
            if kind == "measure":
                f.number_groups, f.unit_groups = measure_groups(f.pattern.groups)
                f.units = {norm.apply(k): float(v) for k, v in d.get("units", {}).items()}
                f.units.setdefault(norm.apply(d["unit"]), 1.0)
                f.precision = d.get("precision", "f32")
                if f.missing is not None:
                    f.missing = float(f.missing)
        else:
            cases = d.get("case", [])
            f.map = {norm.apply(k): v for k, v in d.get("map", {}).items()}
            f.default = d.get("default")
            if "categories" in d:
                f.categories = list(d["categories"])
            else:
                for label in [c["label"] for c in cases] + list(d.get("map", {}).values()) + ([f.default] if f.default else []):
                    if label not in f.categories:
                        f.categories.append(label)
            f.cases = [(c["label"], matcher(c)) for c in cases]
        features.append(f)
    pattern = spec.get("placeholder_pattern")
    return Ruleset(
        path, spec["column"], prefix, decimal, norm, features,
        placeholders=[norm.apply(p) for p in spec.get("placeholders", [])],
        placeholder_pattern=compile_pattern(pattern, False, decimal) if pattern else None,
    )


def number_regexes(decimal: str) -> tuple[str, str]:
    """Full-text regexes of what `parse_number` accepts (src/engine/numbers.rs):
    the fraction forms and the decimal form. Only ASCII digits count."""
    fraction = "^(?:(?P<w>[0-9]+)[- ])?(?P<n>[0-9]+)[/\u2044](?P<d>[0-9]+)$"
    t = rust_escape("," if decimal == "." else ".")
    d = rust_escape(decimal)
    dec = rf"^(?:[0-9]*|[0-9]{{1,3}}(?:{t}[0-9]{{3}})+|[0-9]{{1,3}}(?: [0-9]{{3}})+)(?:{d}[0-9]+)?$"
    return fraction, dec


# ---------------------------------------------------------------------------
# pandas
# ---------------------------------------------------------------------------


def pandas_normalize(s, norm: Normalize):
    if norm.unicode in ("nfkc", "nfc"):
        s = s.str.normalize(norm.unicode.upper())
    if norm.strip_accents:
        raise Unsupported("strip_accents is not implemented in the benchmark's pandas contenders")
    if norm.case == "lower":
        # Arrow's utf8_lower (behind str.lower on `str` columns) maps each
        # character to one character; Rust's to_lowercase, like Python's
        # str.lower, uses the full mapping ("İ" -> "i̇", final sigma). Values
        # with non-ASCII characters go through str.lower one by one.
        wide = (~s.str.isascii() & s.notna()).to_numpy(dtype=bool)
        lowered = s.str.lower()
        if wide.any():
            lowered[wide] = s[wide].map(str.lower)
        s = lowered
    if norm.collapse_space:
        s = s.str.replace(WHITE_SPACE_RUN, " ", regex=True)
    if norm.trim:
        s = s.str.strip(" " if norm.collapse_space else WHITE_SPACE)
    return s


def pandas_parse(text, decimal: str):
    """`parse_number` on a column of captured text: float64, NaN when the text
    is null or unreadable."""
    import numpy as np

    fraction, dec = number_regexes(decimal)
    t = text.str.strip(WHITE_SPACE)
    out = np.full(len(t), np.nan)
    slash = t.str.contains("[/\u2044]", regex=True).to_numpy(dtype=bool, na_value=False)
    if slash.any():
        g = t[slash].str.extract(fraction)
        w, n, d = (g[k].astype("float64").to_numpy() for k in ("w", "n", "d"))
        with np.errstate(divide="ignore", invalid="ignore"):
            v = np.where(np.isnan(w), n / d, w + n / d)
        v[d == 0] = np.nan
        out[slash] = v
    ok = (~slash) & t.str.fullmatch(dec).to_numpy(dtype=bool, na_value=False) & (t.str.len().to_numpy(dtype=float, na_value=0) > 0)
    if ok.any():
        plain = t[ok].str.replace("," if decimal == "." else ".", "", regex=False).str.replace(" ", "", regex=False)
        if decimal == ",":
            plain = plain.str.replace(",", ".", regex=False)
        plain = plain.str.replace("^\\.", "0.", regex=True)
        out[ok] = plain.astype("float64").to_numpy()
    return out


def pandas_first_group(ext, indexes: list[int]):
    s = ext[indexes[0]]
    for i in indexes[1:]:
        s = s.fillna(ext[i])
    return s


def pandas_features(rs: Ruleset, raw) -> dict:
    """Every feature of `rs` on the values of `raw` (a pandas Series), as
    pandas extension arrays of the output types."""
    import numpy as np
    import pandas as pd

    n = pandas_normalize(raw, rs.normalize)
    # Blank values and placeholders describe nothing: null features.
    nothing = (n == "") | n.isin(rs.placeholders)
    if rs.placeholder_pattern is not None:
        nothing |= n.str.fullmatch(rs.placeholder_pattern.python)
    nothing = nothing.fillna(False).to_numpy(dtype=bool)
    n = n.where(~nothing)
    null = raw.isna().to_numpy() | nothing
    out = {}
    for f in rs.features:
        if f.kind == "flag":
            hit = n.str.contains(f.matcher.python, regex=True).to_numpy(dtype=bool, na_value=False)
            arr = pd.array(hit, dtype="boolean")
            arr[null] = pd.NA
        elif f.kind == "count":
            ext = n.str.extract(f.pattern.python, expand=True)
            first = pandas_first_group(ext, list(range(len(f.pattern.groups))))
            present = first.notna().to_numpy()
            v = pandas_parse(first, rs.decimal)
            with np.errstate(invalid="ignore"):
                bad = np.isnan(v) | (np.floor(v) != v) | (np.abs(v) >= 9.0e15)
                if f.range:
                    bad |= (v < f.range[0]) | (v > f.range[1])
            vals = np.where(present, v, np.nan if f.missing is None else float(f.missing))
            mask = (present & bad) | (~present & (f.missing is None)) | null
            ints = np.where(mask, 0, vals).astype("int64")
            lo = hi = None
            if f.range is None and (~mask).any():
                lo, hi = int(ints[~mask].min()), int(ints[~mask].max())
            arr = pd.array(ints, dtype="Int64")
            arr[mask] = pd.NA
            arr = arr.astype(f.int_type(lo, hi))
        elif f.kind == "measure":
            ext = n.str.extract(f.pattern.python, expand=True)
            num = pandas_first_group(ext, f.number_groups)
            present = num.notna().to_numpy()
            v = pandas_parse(num, rs.decimal)
            factor = np.ones(len(n))
            if f.unit_groups:
                unit = pandas_first_group(ext, f.unit_groups)
                has_unit = unit.notna().to_numpy()
                key = unit.str.strip(WHITE_SPACE).str.rstrip(".")
                factor = np.where(has_unit, key.map(f.units).astype("float64").to_numpy(), 1.0)
            value = v * factor
            with np.errstate(invalid="ignore"):
                bad = np.isnan(value)
                if f.range:
                    bad |= (value < f.range[0]) | (value > f.range[1])
            missing = np.nan if f.missing is None else f.missing
            value = np.where(present, np.where(bad, np.nan, value), missing)
            value[null] = np.nan
            dtype = "Float64" if f.precision == "f64" else "Float32"
            arr = pd.array(value.astype("float64" if f.precision == "f64" else "float32"), dtype=dtype)
            arr[np.isnan(value)] = pd.NA
        else:
            code = {c: i for i, c in enumerate(f.categories)}
            conds, choices = [], []
            if f.map:
                mapped = n.map({k: code[v] for k, v in f.map.items()})
                conds.append(mapped.notna().to_numpy())
                choices.append(mapped.fillna(-1).to_numpy(dtype="int64"))
            for label, m in f.cases:
                conds.append(n.str.contains(m.python, regex=True).to_numpy(dtype=bool, na_value=False))
                choices.append(code[label])
            default = code[f.default] if f.default is not None else -1
            codes = np.select(conds, choices, default=default) if conds else np.full(len(n), default)
            codes[null] = -1
            arr = pd.Categorical.from_codes(codes, dtype=pd.CategoricalDtype(f.categories, ordered=True))
        out[f.output] = arr
    return out


def pandas_read(input_csv: Path, rulesets: list[Ruleset]):
    """The CSV as a pandas DataFrame (Arrow-backed `str` columns), read as
    descry and polars read it: only an unquoted empty field is null; a quoted
    empty string "" stays an empty string, and "n/a" or "NA" stay text.
    pandas.read_csv cannot tell "" from an empty field (neither engine can),
    so the file is parsed by pyarrow.csv, which pandas uses for
    engine="pyarrow", with that one option set."""
    import pyarrow as pa
    import pyarrow.csv as pacsv

    options = pacsv.ConvertOptions(
        column_types={rs.column: pa.string() for rs in rulesets},
        null_values=[""],
        strings_can_be_null=True,
        quoted_strings_can_be_null=False,
    )
    return pacsv.read_csv(input_csv, convert_options=options).to_pandas()


def run_pandas_rowwise(input_csv: Path, output: Path, rulesets: list[Ruleset]) -> None:
    df = pandas_read(input_csv, rulesets)
    for rs in rulesets:
        for name, arr in pandas_features(rs, df[rs.column]).items():
            df[name] = arr
    df.to_parquet(output, index=False, compression="zstd")


def run_pandas_expert(input_csv: Path, output: Path, rulesets: list[Ruleset]) -> None:
    import pandas as pd

    df = pandas_read(input_csv, rulesets)
    for rs in rulesets:
        cat = df[rs.column].astype("category")
        codes = cat.cat.codes.to_numpy()
        values = pd.Series(cat.cat.categories)
        for name, arr in pandas_features(rs, values).items():
            df[name] = arr.take(codes, allow_fill=True)
    df.to_parquet(output, index=False, compression="zstd")


# ---------------------------------------------------------------------------
# polars
# ---------------------------------------------------------------------------


def polars_normalize(e, norm: Normalize):
    if norm.unicode in ("nfkc", "nfc"):
        e = e.str.normalize(norm.unicode.upper())
    if norm.strip_accents:
        raise Unsupported("strip_accents is not implemented in the benchmark's polars contenders")
    if norm.case == "lower":
        e = e.str.to_lowercase()
    if norm.collapse_space:
        # Rust's `\s` is Unicode White_Space, as char::is_whitespace.
        e = e.str.replace_all(r"\s+", " ")
    if norm.trim:
        e = e.str.strip_chars(" ") if norm.collapse_space else e.str.strip_chars()
    return e


def polars_considered(normalized, rs: Ruleset):
    """The normalized value, null where it is blank or a placeholder (whose
    features are null)."""
    import polars as pl

    nothing = (normalized == "") | normalized.is_in(rs.placeholders)
    if rs.placeholder_pattern is not None:
        nothing = nothing | normalized.str.contains("^(?:" + rs.placeholder_pattern.rust + ")$")
    return pl.when(nothing).then(None).otherwise(normalized)


def polars_parse(text, decimal: str):
    """`parse_number` as a polars expression: Float64, null when unreadable."""
    import polars as pl

    fraction, dec = number_regexes(decimal)
    t = text.str.strip_chars()
    g = t.str.extract_groups(fraction)
    w, n, d = (g.struct.field(k).cast(pl.Float64) for k in ("w", "n", "d"))
    frac = pl.when(d == 0).then(None).when(w.is_null()).then(n / d).otherwise(w + n / d)
    plain = t.str.replace_all(rust_escape("," if decimal == "." else "."), "").str.replace_all(" ", "", literal=True)
    if decimal == ",":
        plain = plain.str.replace_all(",", ".", literal=True)
    plain = plain.str.replace(r"^\.", "0.")
    return (
        pl.when(t.str.contains("[/\u2044]"))
        .then(frac)
        .when(t.str.contains(dec) & (t.str.len_bytes() > 0))
        .then(plain.cast(pl.Float64, strict=False))
        .otherwise(None)
    )


def python_regex_batches(pattern: str, groups: int | None):
    """A `map_batches` function running Python's `re` over a batch: the truth
    value of a match (groups=None), or the capture groups as a struct shaped
    like `str.extract_groups`' (fields "1", "2", ...)."""
    import polars as pl

    rx = re.compile(pattern)

    def contains(s):
        return pl.Series(s.name, [None if v is None else rx.search(v) is not None for v in s.to_list()], dtype=pl.Boolean)

    def extract(s):
        dtype = pl.Struct({str(i + 1): pl.String for i in range(groups)})
        rows = []
        for v in s.to_list():
            m = None if v is None else rx.search(v)
            rows.append(None if v is None else {str(i + 1): (m.group(i + 1) if m else None) for i in range(groups)})
        return pl.Series(s.name, rows, dtype=dtype)

    return contains if groups is None else extract


def polars_contains(n, m: Matcher):
    """Whether the matcher matches. Polars' engine (Rust's `regex` crate) has no
    lookaround or backreferences, so a `fancy = true` pattern is run with
    Python's `re` through `map_batches`: same semantics as descry's
    fancy-regex for these patterns, at Python speed."""
    import polars as pl

    if m.pattern is not None and m.pattern.fancy:
        return n.map_batches(python_regex_batches(m.pattern.python, None), return_dtype=pl.Boolean, is_elementwise=True)
    return n.str.contains(m.rust)


def polars_groups(n, p: Pattern):
    """The capture groups of the first match, as a struct; `fancy` patterns via Python's `re`."""
    import polars as pl

    if p.fancy:
        dtype = pl.Struct({str(i + 1): pl.String for i in range(len(p.groups))})
        return n.map_batches(python_regex_batches(p.python, len(p.groups)), return_dtype=dtype, is_elementwise=True)
    return n.str.extract_groups(p.rust)


def polars_first_group(groups, indexes: list[int]):
    import polars as pl

    return pl.coalesce([groups.struct.field(f"{i + 1}") for i in indexes])


POLARS_INT = {"UInt8": "UInt8", "Int8": "Int8", "UInt16": "UInt16", "Int16": "Int16", "Int32": "Int32", "Int64": "Int64"}


def polars_features(rs: Ruleset, src: str, norm_col: str):
    """The feature expressions of `rs`, reading the normalized column `norm_col`
    (null where the source column `src` is null). Counts without a `range` get
    their type from the data: they come back as Int64 and are listed in the
    second return value to be cast once the values are known."""
    import polars as pl

    n = pl.col(norm_col)
    exprs, observed = [], []
    for f in rs.features:
        if f.kind == "flag":
            e = polars_contains(n, f.matcher)
        elif f.kind == "count":
            g = polars_groups(n, f.pattern)
            first = polars_first_group(g, list(range(len(f.pattern.groups))))
            v = polars_parse(first, rs.decimal)
            bad = v.is_null() | (v.floor() != v) | (v.abs() >= 9.0e15)
            if f.range:
                bad = bad | (v < f.range[0]) | (v > f.range[1])
            e = (
                pl.when(n.is_null()).then(None)
                .when(first.is_null()).then(pl.lit(f.missing, dtype=pl.Float64))
                .when(bad).then(None)
                .otherwise(v)
                .cast(pl.Int64)
            )
            if f.range is None:
                observed.append(f)
            else:
                e = e.cast(getattr(pl, f.int_type()))
        elif f.kind == "measure":
            g = polars_groups(n, f.pattern)
            num = polars_first_group(g, f.number_groups)
            v = polars_parse(num, rs.decimal)
            if f.unit_groups:
                unit = polars_first_group(g, f.unit_groups)
                key = unit.str.strip_chars().str.strip_chars_end(".")
                factor = pl.when(unit.is_null()).then(1.0).otherwise(
                    key.replace_strict(list(f.units), list(f.units.values()), default=None, return_dtype=pl.Float64)
                )
                value = v * factor
            else:
                value = v
            bad = value.is_null()
            if f.range:
                bad = bad | (value < f.range[0]) | (value > f.range[1])
            e = (
                pl.when(n.is_null()).then(None)
                .when(num.is_null()).then(pl.lit(f.missing, dtype=pl.Float64))
                .when(bad).then(None)
                .otherwise(value)
                .cast(pl.Float64 if f.precision == "f64" else pl.Float32)
            )
        else:
            chain = pl.when(n.is_null()).then(pl.lit(None, dtype=pl.String))
            if f.map:
                mapped = n.replace_strict(list(f.map), list(f.map.values()), default=None, return_dtype=pl.String)
                chain = chain.when(mapped.is_not_null()).then(mapped)
            for label, m in f.cases:
                chain = chain.when(polars_contains(n, m)).then(pl.lit(label))
            e = chain.otherwise(pl.lit(f.default, dtype=pl.String)).cast(pl.Enum(f.categories))
        exprs.append(e.alias(f.output))
    return exprs, observed


def polars_cast_observed(df, observed: list[Feature]):
    import polars as pl

    casts = []
    for f in observed:
        col = df.get_column(f.output)
        lo, hi = col.min(), col.max()
        casts.append(pl.col(f.output).cast(getattr(pl, f.int_type(lo, hi))))
    return df.with_columns(casts) if casts else df


def polars_read(input_csv: Path, rulesets: list[Ruleset]):
    import polars as pl

    return pl.read_csv(input_csv, schema_overrides={rs.column: pl.String for rs in rulesets})


NORM = "__normalized"


def run_polars_rowwise(input_csv: Path, output: Path, rulesets: list[Ruleset]) -> None:
    import polars as pl

    df = polars_read(input_csv, rulesets)
    for rs in rulesets:
        exprs, observed = polars_features(rs, rs.column, NORM)
        normalized = polars_considered(polars_normalize(pl.col(rs.column), rs.normalize), rs)
        df = df.with_columns(normalized.alias(NORM))
        df = df.with_columns(exprs).drop(NORM)
        df = polars_cast_observed(df, observed)
    df.write_parquet(output, compression="zstd")


def run_polars_expert(input_csv: Path, output: Path, rulesets: list[Ruleset]) -> None:
    import polars as pl

    df = polars_read(input_csv, rulesets)
    for rs in rulesets:
        exprs, observed = polars_features(rs, rs.column, NORM)
        values = df.select(pl.col(rs.column).unique()).drop_nulls()
        normalized = polars_considered(polars_normalize(pl.col(rs.column), rs.normalize), rs)
        values = values.with_columns(normalized.alias(NORM))
        values = values.with_columns(exprs).drop(NORM)
        df = df.join(values, on=rs.column, how="left", maintain_order="left")
        df = polars_cast_observed(df, observed)
    df.write_parquet(output, compression="zstd")


def run_floor(input_csv: Path, output: Path, rulesets: list[Ruleset]) -> None:
    """The input columns, read and written as the other contenders do, no features."""
    polars_read(input_csv, rulesets).write_parquet(output, compression="zstd")


PYTHON_CONTENDERS = {
    "pandas-rowwise": run_pandas_rowwise,
    "pandas-expert": run_pandas_expert,
    "polars-rowwise": run_polars_rowwise,
    "polars-expert": run_polars_expert,
    "floor": run_floor,
}


# ---------------------------------------------------------------------------
# Comparing outputs
# ---------------------------------------------------------------------------


def feature_index(rulesets: list[Ruleset]) -> dict[str, Feature]:
    return {f.output: f for rs in rulesets for f in rs.features}


def compare_outputs(reference: Path, candidate: Path, rulesets: list[Ruleset], with_features: bool = True) -> list[str]:
    """Problems found comparing `candidate` with `reference` (descry's output).
    With `with_features=False` only the input columns are expected (the floor)."""
    import numpy as np
    import pyarrow as pa
    import pyarrow.compute as pc
    import pyarrow.parquet as pq

    features = feature_index(rulesets)
    ref_schema = pq.read_schema(reference)
    cand_schema = pq.read_schema(candidate)
    expected = [n for n in ref_schema.names if with_features or n not in features]
    if cand_schema.names != expected:
        return [f"columns differ: expected {expected}, got {cand_schema.names}"]
    ref_rows = pq.ParquetFile(reference).metadata.num_rows
    cand_rows = pq.ParquetFile(candidate).metadata.num_rows
    if ref_rows != cand_rows:
        return [f"row count differs: descry {ref_rows}, candidate {cand_rows}"]

    problems = []
    for name in expected:
        ref = pq.read_table(reference, columns=[name]).column(name)
        got = pq.read_table(candidate, columns=[name]).column(name)
        f = features.get(name)
        rt, gt = ref.type, got.type
        if f is not None:
            kind_ok = {
                "flag": pa.types.is_boolean(gt),
                "count": gt == rt,
                "measure": gt == rt,
                "label": pa.types.is_dictionary(gt),
            }[f.kind]
            if not kind_ok:
                problems.append(f"column {name}: type {gt}, descry writes {rt}")
                continue
            if f.kind == "label":
                for side, col in (("descry", ref), ("candidate", got)):
                    dicts = {tuple(c.dictionary.to_pylist()) for c in col.chunks if len(c)}
                    if dicts and dicts != {tuple(f.categories)}:
                        problems.append(
                            f"column {name}: {side} categories {sorted(dicts)} are not the ruleset's {f.categories}"
                        )
        if pa.types.is_dictionary(rt):
            ref = ref.cast(pa.large_string())
        if pa.types.is_dictionary(gt):
            got = got.cast(pa.large_string())
        rt, gt = ref.type, got.type
        if pa.types.is_floating(rt) or pa.types.is_floating(gt):
            a = ref.cast(pa.float64()).to_numpy(zero_copy_only=False)
            b = got.cast(pa.float64()).to_numpy(zero_copy_only=False)
            an, bn = np.isnan(a), np.isnan(b)
            with np.errstate(invalid="ignore"):
                far = np.abs(a - b) > FLOAT_RTOL * np.maximum(np.abs(a), np.abs(b))
            diff = (an != bn) | (~an & ~bn & far)
        else:
            if rt != gt:
                if (pa.types.is_string(rt) or pa.types.is_large_string(rt) or pa.types.is_string_view(rt)) and (
                    pa.types.is_string(gt) or pa.types.is_large_string(gt) or pa.types.is_string_view(gt)
                ):
                    ref, got = ref.cast(pa.large_string()), got.cast(pa.large_string())
                elif pa.types.is_integer(rt) and (pa.types.is_integer(gt) or pa.types.is_floating(gt)):
                    ref, got = ref.cast(pa.float64()), got.cast(pa.float64())
                else:
                    problems.append(f"column {name}: type {gt}, descry writes {rt}")
                    continue
            null_diff = pc.not_equal(pc.is_null(ref), pc.is_null(got))
            value_diff = pc.fill_null(pc.not_equal(ref, got), False)
            diff = pc.or_(null_diff, value_diff).to_numpy(zero_copy_only=False)
        bad = np.flatnonzero(diff)
        if len(bad):
            show = bad[:5]
            rows = ", ".join(f"row {i}: descry {ref[int(i)].as_py()!r}, got {got[int(i)].as_py()!r}" for i in show)
            problems.append(f"column {name}: {len(bad)} of {len(diff)} rows differ; first: {rows}")
    return problems


# ---------------------------------------------------------------------------
# The benchmark run
# ---------------------------------------------------------------------------


def sh(*cmd: str) -> str:
    try:
        return subprocess.run(cmd, capture_output=True, text=True, check=False).stdout.strip()
    except OSError:
        return ""


def machine_info(descry_bin: Path) -> dict:
    cpu = ""
    try:
        for line in open("/proc/cpuinfo", encoding="utf-8"):
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    mem_kib = 0
    try:
        for line in open("/proc/meminfo", encoding="utf-8"):
            if line.startswith("MemTotal:"):
                mem_kib = int(line.split()[1])
    except OSError:
        pass
    versions = json.loads(subprocess.run([sys.executable, str(Path(__file__).resolve()), "versions"],
                                         capture_output=True, text=True, check=True).stdout)
    dirty = sh("git", "-C", str(REPO), "status", "--porcelain", "--untracked-files=no")
    return {
        "date_utc": dt.datetime.now(dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC"),
        "nproc": len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count(),
        "cpu": cpu,
        "memory_gib": round(mem_kib / 1024 / 1024, 1),
        "kernel": platform.release(),
        "load_average_at_start": os.getloadavg(),
        "descry": sh(str(descry_bin), "--version"),
        "descry_binary_built": dt.datetime.fromtimestamp(descry_bin.stat().st_mtime, dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC"),
        "descry_commit": sh("git", "-C", str(REPO), "rev-parse", "--short", "HEAD") + (" (with uncommitted changes)" if dirty else ""),
        "python": platform.python_version(),
        **versions,
        "runner_rss_mib": own_rss_mib(),
    }


def own_rss_mib() -> float:
    """This process's resident set. A child's ru_maxrss starts from it (Linux
    keeps the parent's high-water mark across fork and exec), so the runner
    imports no dataframe library and compares outputs in child processes."""
    try:
        for line in open("/proc/self/status", encoding="utf-8"):
            if line.startswith("VmHWM:"):
                return int(line.split()[1]) / 1024
    except OSError:
        pass
    return float("nan")


def library_versions() -> dict:
    import numpy
    import pandas
    import polars
    import pyarrow

    return {"pandas": pandas.__version__, "polars": polars.__version__, "pyarrow": pyarrow.__version__, "numpy": numpy.__version__}


def busy_compilers() -> list[str]:
    """Running compiler processes, whose load would make timings meaningless."""
    found = []
    for pid in os.listdir("/proc"):
        if not pid.isdigit():
            continue
        try:
            comm = Path(f"/proc/{pid}/comm").read_text().strip()
        except OSError:
            continue
        if comm in ("rustc", "cargo", "cc1", "cc1plus", "ld", "lld", "mold"):
            found.append(f"{comm} (pid {pid})")
    return found


def contender_command(name: str, args, input_csv: Path, output: Path) -> list[str]:
    rules = [str(p) for p in args.rules]
    if name == "descry":
        cmd = [str(args.descry), "apply", str(input_csv)]
        for r in rules:
            cmd += ["-r", r]
        return cmd + ["-o", str(output), "--quiet"]
    return [sys.executable, str(Path(__file__).resolve()), "contender", name, str(input_csv), str(output), *rules]


def timed_run(cmd: list[str], log: Path) -> tuple[float, float, int]:
    """Wall seconds, peak RSS in MiB (the child's own ru_maxrss), exit status."""
    with open(log, "ab") as err:
        start = time.perf_counter()
        proc = subprocess.Popen(cmd, stdout=err, stderr=err)
        _, status, usage = os.wait4(proc.pid, 0)
        wall = time.perf_counter() - start
    proc.returncode = os.waitstatus_to_exitcode(status)
    return wall, usage.ru_maxrss / 1024.0, proc.returncode


def sample_args(args, rows: int) -> list[str]:
    """The `descry demo` options of the benchmark data."""
    spellings = [] if args.spellings is None else ["--spellings", str(args.spellings)]
    return ["--rows", str(rows), "--seed", str(args.seed), *spellings]


def size_folder(args, rows: int) -> Path:
    vocabulary = "unbounded" if args.spellings is None else f"spellings-{args.spellings}"
    return args.out_dir / f"rows-{rows}-{vocabulary}"


def generate(args, rows: int, folder: Path) -> Path:
    csv = folder / "listings.csv"
    stamp = folder / "generated.json"
    want = {"sample": sample_args(args, rows), "descry": sh(str(args.descry), "--version")}
    if args.reuse_data and csv.exists() and stamp.exists() and json.loads(stamp.read_text()) == want:
        print(f"  reusing {csv}")
        return csv
    folder.mkdir(parents=True, exist_ok=True)
    print(f"  generating: descry demo {' '.join(sample_args(args, rows))} -o {folder}")
    subprocess.run([str(args.descry), "demo", *sample_args(args, rows), "-o", str(folder)], check=True, stdout=subprocess.DEVNULL)
    stamp.write_text(json.dumps(want))
    return csv


def median(xs: list[float]) -> float:
    return statistics.median(xs) if xs else float("nan")


def bench_size(args, rows: int, runs: int, rulesets: list[Ruleset]) -> dict:
    folder = size_folder(args, rows)
    csv = generate(args, rows, folder / "data")
    csv_mib = csv.stat().st_size / 2**20
    distinct = {}
    outputs = {c: folder / f"{c}.parquet" for c in args.contenders}
    log = folder / "contenders.log"
    log.write_bytes(b"")
    times: dict[str, list[float]] = {c: [] for c in args.contenders}
    rss: dict[str, list[float]] = {c: [] for c in args.contenders}
    verified: dict[str, str] = {}
    disturbed: list[str] = []
    print(f"  {runs} rounds of {len(args.contenders)} contenders, alternating (CSV: {csv_mib:,.0f} MiB)")
    for r in range(runs):
        k = r % len(args.contenders)
        order = args.contenders[k:] + args.contenders[:k]
        for c in order:
            wall, peak, code = timed_run(contender_command(c, args, csv, outputs[c]), log)
            if code != 0:
                sys.exit(f"FAIL: contender {c} exited with status {code} at {rows:,} rows; see {log}")
            times[c].append(wall)
            rss[c].append(peak)
            busy = busy_compilers()
            if busy:
                disturbed.append(f"round {r + 1} {c}: {', '.join(busy[:3])}")
            note = "  (compilers running!)" if busy else ""
            print(f"    round {r + 1}/{runs}  {c:<15} {wall:8.2f} s  {peak:8.0f} MiB{note}", flush=True)
        if r == 0:
            verified = verify_all(args, outputs, rulesets, rows)
    ref = "descry" if "descry" in args.contenders else None
    floor = "floor" if "floor" in args.contenders else None
    table = []
    for c in args.contenders:
        m = median(times[c])
        table.append({
            "contender": c,
            "median_s": m,
            "min_s": min(times[c]),
            "runs_s": times[c],
            "peak_rss_mib": max(rss[c]),
            "vs_descry": m / median(times[ref]) if ref else None,
            "vs_floor": m / median(times[floor]) if floor else None,
            "output_mib": outputs[c].stat().st_size / 2**20,
            "output_check": verified.get(c, ""),
        })
    if "descry" in args.contenders:
        distinct = json.loads(subprocess.run(
            [sys.executable, str(Path(__file__).resolve()), "distinct", str(outputs["descry"]), *[rs.column for rs in rulesets], "part_no"],
            capture_output=True, text=True, check=True).stdout)
    return {"rows": rows, "runs": runs, "sample": " ".join(sample_args(args, rows)), "csv_mib": csv_mib,
            "distinct": distinct, "table": table, "disturbed_runs": disturbed}


def verify_all(args, outputs: dict[str, Path], rulesets: list[Ruleset], rows: int) -> dict[str, str]:
    if "descry" not in outputs:
        print("  (descry not among the contenders: outputs not compared)")
        return {}
    result = {"descry": "reference"}
    failures = []
    for c, path in outputs.items():
        if c == "descry":
            continue
        cmd = [sys.executable, str(Path(__file__).resolve()), "verify", str(outputs["descry"]), str(path),
               *[str(rs.path) for rs in rulesets]] + (["--no-features"] if c == "floor" else [])
        done = subprocess.run(cmd, capture_output=True, text=True)
        if done.returncode != 0:
            failures.append((c, (done.stdout + done.stderr).strip().splitlines()[:-1] or [done.stderr.strip()]))
        result[c] = "same input columns" if c == "floor" else "matches descry"
    if failures:
        for c, problems in failures:
            print(f"FAIL: {c} disagrees with descry at {rows:,} rows:", file=sys.stderr)
            for p in problems:
                print(f"  {p}", file=sys.stderr)
        sys.exit(1)
    print("  outputs checked: every contender's output matches descry's")
    return result


def targets(result: dict) -> list[tuple[str, bool]]:
    t = {row["contender"]: row for row in result["table"]}
    if not {"descry", "floor", "pandas-rowwise", "polars-expert"} <= set(t):
        return []
    d = t["descry"]
    others = [row for c, row in t.items() if c not in ("descry", "floor")]
    return [
        ("descry within 1.3x the floor", d["median_s"] <= 1.3 * t["floor"]["median_s"]),
        ("descry faster than every contender", all(d["median_s"] < row["median_s"] for row in others)),
        ("descry at least 20x faster than row-wise pandas", t["pandas-rowwise"]["median_s"] >= 20 * d["median_s"]),
        ("descry peak memory no higher than expert polars", d["peak_rss_mib"] <= t["polars-expert"]["peak_rss_mib"]),
    ]


def markdown(results: list[dict], machine: dict, command: str) -> str:
    lines = [
        f"Run on {machine['date_utc']}: {machine['cpu']}, {machine['nproc']} cores, {machine['memory_gib']} GiB, "
        f"Linux {machine['kernel']}; {machine['descry']} (commit {machine['descry_commit']}, binary built "
        f"{machine['descry_binary_built']}), Python {machine['python']}, "
        f"pandas {machine['pandas']}, polars {machine['polars']}, pyarrow {machine['pyarrow']}, numpy {machine['numpy']}.",
        "",
        f"Command: `{command}`",
        "",
    ]
    for res in results:
        distinct = ", ".join(f"{k} {v:,}" for k, v in res["distinct"].items())
        lines += [
            f"**{res['rows']:,} rows** (`descry demo {res.get('sample', '')}`; CSV {res['csv_mib']:,.0f} MiB; "
            f"distinct values: {distinct}; median of {res['runs']} alternating runs)",
            "",
            "| contender | median s | peak RSS MiB | × descry | × floor | output |",
            "|---|---:|---:|---:|---:|---|",
        ]
        for row in res["table"]:
            lines.append(
                f"| {row['contender']} | {row['median_s']:.2f} | {row['peak_rss_mib']:,.0f} | "
                f"{row['vs_descry']:.2f} | {row['vs_floor']:.2f} | {row['output_check']} |"
            )
        if res.get("disturbed_runs"):
            lines += ["", f"WARNING: compilers were running after {len(res['disturbed_runs'])} of "
                          f"{res['runs'] * len(res['table'])} runs; these timings are not clean."]
        tg = targets(res)
        if tg:
            lines += ["", "Targets: " + "; ".join(f"{name}: {'met' if ok else 'NOT met'}" for name, ok in tg) + "."]
        lines.append("")
    return "\n".join(lines)


def cmd_run(args) -> int:
    args.descry = Path(args.descry).resolve()
    if not args.descry.exists():
        sys.exit(f"no descry binary at {args.descry}; build it with `cargo build --release`")
    args.rules = [Path(p).resolve() for p in args.rules]
    rulesets = [load_ruleset(p) for p in args.rules]
    for rs in rulesets:  # fail early on constructs a contender cannot express
        for f in rs.features:
            patterns = [f.pattern] + [m.pattern for m in [f.matcher, *[m for _, m in f.cases]] if m]
            for m in [f.matcher, *[m for _, m in f.cases]]:
                if m and m.pattern is None:
                    m.python, m.rust
            for pat in patterns:
                if pat:
                    pat.python
                    if not pat.fancy:
                        pat.rust
    if args.quick:
        sizes, runs = [200_000], [3]
    else:
        sizes = [int(x.replace("_", "")) for x in args.rows.split(",")]
        runs = [int(x) for x in args.runs.split(",")]
    runs = (runs + [runs[-1]] * len(sizes))[: len(sizes)]
    args.contenders = [c.strip() for c in args.contenders.split(",")]
    for c in args.contenders:
        if c not in CONTENDERS:
            sys.exit(f"unknown contender {c!r}; choose from {', '.join(CONTENDERS)}")
    busy = busy_compilers()
    if busy and not args.allow_busy:
        sys.exit(f"compilers are running ({', '.join(busy[:5])}): timings would be meaningless. "
                 "Wait for them, or pass --allow-busy for a smoke run.")
    args.out_dir = Path(args.out_dir).resolve()
    args.out_dir.mkdir(parents=True, exist_ok=True)
    for rows in sizes:
        need = rows * 240  # CSV ~67 B/row, six Parquet outputs; generous
        free = shutil.disk_usage(args.out_dir).free
        if free < need:
            sys.exit(f"{rows:,} rows need about {need / 2**30:.1f} GiB free in {args.out_dir}; {free / 2**30:.1f} GiB are")
    machine = machine_info(args.descry)
    machine["busy_at_start"] = busy
    print("machine: " + ", ".join(f"{k} {v}" for k, v in machine.items()))
    command = "bash benches/apply_compare.sh " + " ".join(args.argv)
    results = []
    for rows, n in zip(sizes, runs):
        print(f"\n== {rows:,} rows ==")
        res = bench_size(args, rows, n, rulesets)
        results.append(res)
        print()
        print(markdown([res], machine, command).split("\n\n", 2)[2])
        if not args.keep_outputs:
            for c in args.contenders:
                (size_folder(args, rows) / f"{c}.parquet").unlink(missing_ok=True)
    stamp = dt.datetime.now().strftime("%Y%m%d-%H%M%S")
    data = {"machine": machine, "command": command, "results": results,
            "targets": {str(r["rows"]): targets(r) for r in results}}
    (args.out_dir / f"apply-{stamp}.json").write_text(json.dumps(data, indent=2))
    md = markdown(results, machine, command)
    (args.out_dir / f"apply-{stamp}.md").write_text(md)
    (args.out_dir / "apply-latest.md").write_text(md)
    print(f"results: {args.out_dir / f'apply-{stamp}.json'} and .md")
    return 0


def main(argv: list[str]) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0], formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = p.add_subparsers(dest="cmd", required=True)
    r = sub.add_parser("run", help="the whole benchmark")
    r.add_argument("--rows", default="1000000,10000000", help="comma-separated table sizes (default: 1000000,10000000)")
    r.add_argument("--runs", default="5,3", help="runs per contender for each size (default: 5,3; the last repeats)")
    r.add_argument("--quick", action="store_true", help="smoke run: 200,000 rows, 3 runs")
    r.add_argument("--seed", type=int, default=7)
    r.add_argument("--spellings", default="5000",
                   help="`descry demo --spellings`: distinct spellings per descriptor column (default 5000); "
                        "`unbounded` for the sample's growing vocabulary")
    r.add_argument("--contenders", default=",".join(CONTENDERS))
    r.add_argument("--descry", default=str(REPO / "target" / "release" / "descry"))
    r.add_argument("--rules", nargs="+", default=[str(p) for p in DEFAULT_RULESETS])
    r.add_argument("--out-dir", default=str(REPO / "bench-out" / "apply"))
    r.add_argument("--reuse-data", action="store_true", help="keep a generated CSV of the same size and seed")
    r.add_argument("--keep-outputs", action="store_true", help="keep each contender's Parquet output")
    r.add_argument("--allow-busy", action="store_true", help="run even while compilers are running")
    c = sub.add_parser("contender", help="run one Python contender (used by `run`)")
    c.add_argument("name", choices=sorted(PYTHON_CONTENDERS))
    c.add_argument("input", type=Path)
    c.add_argument("output", type=Path)
    c.add_argument("rules", nargs="+", type=Path)
    v = sub.add_parser("verify", help="compare a Parquet output with descry's")
    v.add_argument("reference", type=Path)
    v.add_argument("candidate", type=Path)
    v.add_argument("rules", nargs="+", type=Path)
    v.add_argument("--no-features", action="store_true", help="the candidate holds only the input columns")
    sub.add_parser("versions", help="print the library versions as JSON (used by `run`)")
    d = sub.add_parser("distinct", help="print distinct non-null value counts of columns as JSON (used by `run`)")
    d.add_argument("parquet", type=Path)
    d.add_argument("columns", nargs="+")
    args = p.parse_args(argv)
    if args.cmd == "versions":
        print(json.dumps(library_versions()))
        return 0
    if args.cmd == "distinct":
        import polars as pl

        counts = pl.scan_parquet(args.parquet).select(pl.col(c).drop_nulls().n_unique() for c in args.columns).collect()
        print(json.dumps({c: counts[c][0] for c in args.columns}))
        return 0
    if args.cmd == "contender":
        PYTHON_CONTENDERS[args.name](args.input, args.output, [load_ruleset(x) for x in args.rules])
        return 0
    if args.cmd == "verify":
        problems = compare_outputs(args.reference, args.candidate, [load_ruleset(x) for x in args.rules], not args.no_features)
        for problem in problems:
            print(problem)
        print("same" if not problems else f"{len(problems)} problems")
        return 1 if problems else 0
    args.argv = argv[1:]
    args.spellings = None if args.spellings == "unbounded" else int(args.spellings)
    return cmd_run(args)


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
