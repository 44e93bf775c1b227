#!/usr/bin/env bash
# Run the apply benchmark (benches/apply_compare.py; see benches/README.md).
#
#   bash benches/apply_compare.sh                  # 1M rows x5 runs, 10M rows x3 runs
#   bash benches/apply_compare.sh --quick          # 200,000 rows x3: a smoke run
#   bash benches/apply_compare.sh --rows 1000000 --runs 5
#
# Creates the pinned Python environment in target/bench-venv (from
# benches/requirements.txt) when it is missing or out of date, builds the
# release binary (skip with --no-build, e.g. while someone else is
# compiling), and passes every other option to `apply_compare.py run`.
# Results go to bench-out/apply/ (git-ignored).
set -euo pipefail
cd "$(dirname "$0")/.."

build=1
args=()
for a in "$@"; do
    if [[ "$a" == "--no-build" ]]; then build=0; else args+=("$a"); fi
done

venv=target/bench-venv
requirements=benches/requirements.txt
if ! cmp -s "$requirements" "$venv/requirements.txt" 2>/dev/null; then
    echo "creating the Python benchmark environment in $venv" >&2
    rm -rf "$venv"
    python3 -m venv "$venv"
    "$venv/bin/python" -m pip install --quiet --disable-pip-version-check -r "$requirements"
    cp "$requirements" "$venv/requirements.txt"
fi

if [[ $build == 1 ]]; then
    cargo build --release
fi

exec "$venv/bin/python" benches/apply_compare.py run "${args[@]}"
