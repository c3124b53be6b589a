#!/usr/bin/env bash
# Runs every test of the project on a fresh machine, installing what the tests need first
# (a Python venv for the client, Debian's LibreOffice Calc for the spreadsheet test).
# This is the README's test command; .ci/run calls it.
set -euo pipefail
cd "$(dirname "$0")/.."

echo "== cargo fmt --check"
cargo fmt --all -- --check

echo "== generated coefficient tables match tools/coefficients"
python3 tools/gen_tables.py --check

echo "== cargo clippy (all targets, warnings are errors)"
cargo clippy --workspace --all-targets --locked -- -D warnings

echo "== cargo test (workspace, all targets)"
cargo test --workspace --all-targets --locked

if [ -f clients/run-tests.sh ]; then
  echo "== clients (Python package, stdio guide, spreadsheet)"
  STEAMCELL_BIN="$PWD/target/debug/steamcell" bash clients/run-tests.sh
fi
echo "== all tests passed"
