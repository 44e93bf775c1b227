"""Shared fixtures: the descry command line (the reference the package is
checked against) and the demo data set it writes."""

from __future__ import annotations

import os
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
RULESETS = ROOT / "rulesets"


def binary() -> Path:
    path = Path(os.environ.get("DESCRY_BIN", ROOT / "target" / "release" / "descry"))
    if not path.exists():
        pytest.fail(f"{path}: the descry binary is missing; build it with cargo build --release")
    return path


def cli(*args: object, check: bool = True, cwd: Path | None = None) -> subprocess.CompletedProcess:
    """Run the descry binary; fail the test on an unexpected exit code."""
    out = subprocess.run(
        [str(binary()), *map(str, args)], capture_output=True, text=True, cwd=cwd
    )
    if check and out.returncode not in (0, 1):
        pytest.fail(f"descry {args} exited {out.returncode}: {out.stderr}")
    return out


@pytest.fixture(scope="session")
def demo(tmp_path_factory) -> Path:
    """The demo listings (4,000 rows, seed 7)."""
    folder = tmp_path_factory.mktemp("demo")
    cli("demo", "-o", folder / "demo")
    return folder / "demo" / "listings.csv"


@pytest.fixture(scope="session")
def engine() -> Path:
    return RULESETS / "engine.toml"


@pytest.fixture(scope="session")
def transmission() -> Path:
    return RULESETS / "transmission.toml"


def read_as_text(path):
    """The CSV as the command line reads it, as a pyarrow Table: every
    column text, only an unquoted empty cell null."""
    import pyarrow as pa
    import pyarrow.csv as pacsv

    names = pacsv.read_csv(path).column_names
    convert = pacsv.ConvertOptions(
        column_types={n: pa.large_string() for n in names},
        null_values=[""],
        strings_can_be_null=True,
        quoted_strings_can_be_null=False,
    )
    return pacsv.read_csv(path, convert_options=convert)
