#!/usr/bin/env bash
# Run every test of descry: the Rust unit, integration, snapshot and property
# tests, and the reference checks against Python libraries (pandas, pyarrow,
# rapidfuzz), whose pinned environment is created here under target/ref-venv.
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

# One build profile for everything: the release build is also what the
# README's quick start runs, so CI compiles polars once.
cargo test --release "$@"
