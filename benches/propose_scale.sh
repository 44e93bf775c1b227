#!/usr/bin/env bash
# Scale benchmark of `descry propose` (see benches/propose_scale.py): the
# median time, peak memory and draft coverage on the demo columns at 900,000
# listings (about 115,000 distinct transmission values and 330,000 distinct
# engine values). Extra arguments go to the Python script (standard library
# only), e.g. `--rows 300000 --runs 5`.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
exec python3 benches/propose_scale.py target/release/descry "$@"
