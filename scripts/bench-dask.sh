#!/usr/bin/env bash
# Bench (not a test): 10,000,000 (p,T) rows through Dask on two local workers (each with its
# own steamcell engine) next to the single-process packed path, and one client shared by
# 1, 2 and 4 threads. Builds the release server and prepares the client venv first.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --locked
[ -x .venv/bin/python ] || python3 -m venv .venv
.venv/bin/python -m pip install -q "./clients/python[all]"
STEAMCELL_BIN="$PWD/target/release/steamcell" .venv/bin/python scripts/bench-dask.py "$@"
