#!/usr/bin/env bash
# Run every test of descry: the Rust unit, integration, snapshot and property
# tests, the reference checks against Python libraries (pandas, pyarrow,
# rapidfuzz, scipy, duckdb), whose pinned environment is created here under
# target/ref-venv, and the Python package's tests (python/tests, pytest).
set -euo pipefail
cd "$(dirname "$0")/.."

venv=target/ref-venv
requirements=tests/python/requirements.txt
if ! cmp -s "$requirements" "$venv/requirements.txt" 2>/dev/null; then
    echo "creating the Python reference environment in $venv" >&2
    rm -rf "$venv"
    python3 -m venv "$venv"
    "$venv/bin/python" -m pip install --quiet --disable-pip-version-check -r "$requirements"
    cp "$requirements" "$venv/requirements.txt"
fi
export DESCRY_PYTHON="$PWD/$venv/bin/python"

# One build profile for everything: the Python package, the tests and the
# README's quick start all build with the release profile into target/, so
# CI compiles polars once. maturin (the package's build backend) comes from
# the pinned environment, hence no build isolation.
PATH="$PWD/$venv/bin:$PATH" "$venv/bin/python" -m pip install --quiet \
    --disable-pip-version-check --no-build-isolation ./python
cargo test --release "$@"
DESCRY_BIN="$PWD/target/release/descry" "$venv/bin/python" -m pytest -q python/tests
