#!/usr/bin/env bash
# Bench (not a test): packed vs JSON batch vs an in-process general-purpose property library.
# Builds the release server, prepares the client venv with numpy and the oracle, runs the timing.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --locked
[ -x .venv/bin/python ] || python3 -m venv .venv
.venv/bin/python -m pip install -q "./clients/python[all]" CoolProp
STEAMCELL_BIN="$PWD/target/release/steamcell" .venv/bin/python scripts/bench-columns.py
