#!/usr/bin/env bash
# Scale benchmark of `descry propose` (see benches/propose_scale.py): the
# median time, peak memory and draft coverage on the demo columns with about
# 112,000 (transmission), 124,000 and 343,000 (engine) distinct values.
# Extra arguments go to the Python script (standard library only), e.g.
# `--plan engine@280000 --runs 5`.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
exec python3 benches/propose_scale.py target/release/descry "$@"
