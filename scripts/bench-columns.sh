#!/usr/bin/env bash
# Bench (not a test): the Python client's batch of 100,000 mixed (p,T) rows (IF97 regions 1, 2,
# 3 and 5), plain, tagged with units (barg, degC in; bar, degC, kJ/kg out) and with phase wanted,
# against an in-process general-purpose property library's array call on the same rows; then
# packed vs JSON. Builds the release server, prepares the client venv with numpy and the oracle,
# runs the timing once.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --locked
[ -x .venv/bin/python ] || python3 -m venv .venv
.venv/bin/python -m pip install -q "./clients/python[all]" CoolProp
STEAMCELL_BIN="$PWD/target/release/steamcell" .venv/bin/python scripts/bench-columns.py
