#!/usr/bin/env bash
# Scale benchmark of `descry cluster` (see benches/cluster_scale.py): times
# every fuzzy method on 100,000 generated distinct values, times rapidfuzz's
# exhaustive process.cdist on the same values, and measures recall against
# all pairs on a 10,000-value sample and on all values. Takes about half an
# hour on 2 cores (the exhaustive comparisons are the slow part). Extra
# arguments go to the Python script, e.g. `--cdist-values 20000` to
# extrapolate cdist from fewer values instead.
#
# It uses the Python reference environment that `bash tests/run.sh` creates
# (or the interpreter named by DESCRY_PYTHON).
set -euo pipefail
cd "$(dirname "$0")/.."

python="${DESCRY_PYTHON:-target/ref-venv/bin/python}"
if ! "$python" -c "import rapidfuzz, numpy" 2>/dev/null; then
    echo "cluster_scale: no Python with rapidfuzz and numpy at $python;" \
         "run 'bash tests/run.sh' once (it creates target/ref-venv) or set DESCRY_PYTHON" >&2
    exit 2
fi
cargo build --release --quiet
# Run a private copy of the binary: another build into the same target
# directory (CARGO_TARGET_DIR) cannot replace it in the middle of the run.
copy="$(mktemp -d)"
cp "${CARGO_TARGET_DIR:-target}/release/descry" "$copy/descry"
exec "$python" benches/cluster_scale.py "$copy/descry" "$@"
