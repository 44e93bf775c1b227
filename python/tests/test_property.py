"""Random small tables give the same features through Python as through
the command line. Reference: `descry apply` on the same rows written as
CSV (every value quoted, a null as an empty unquoted cell)."""

from __future__ import annotations

import pyarrow as pa
import pyarrow.parquet as pq
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import descry

from conftest import RULESETS, cli

WORDS = ["6", "12", "spd", "speed", "auto", "Manual", "CVT", "hydro", "powershift", "16x16",
         "40", "km/h", "kph", "creeper", "shuttle", "PS", "n/a", "-", "?", "é", "Ⅻ", "  ", "x"]

value = st.lists(st.sampled_from(WORDS), min_size=1, max_size=5).map(" ".join)
rows = st.lists(st.one_of(st.none(), value), min_size=1, max_size=40)


def quoted(v: str | None) -> str:
    return "" if v is None else '"' + v.replace('"', '""') + '"'


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(rows)
def test_random_tables_match_the_cli(tmp_path, values):
    data = tmp_path / "t.csv"
    data.write_text("transmission\n" + "".join(quoted(v) + "\n" for v in values), encoding="utf-8")
    out = tmp_path / "t.parquet"
    rules = str(RULESETS / "transmission.toml")
    cli("apply", data, "-r", rules, "-o", out, "-q")
    want = pq.read_table(out)
    got = descry.apply(pa.table({"transmission": pa.array(values, pa.string())}), rules)
    for name in want.column_names[1:]:
        assert got.column(name).type == want.column(name).type, name
        assert got.column(name).to_pylist() == want.column(name).to_pylist(), (name, values)
