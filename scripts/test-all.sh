#!/usr/bin/env bash
# Runs every test of the project on a fresh machine: installs what the tests need first.
# This is the README's test command; .ci/run calls it.
set -euo pipefail
cd "$(dirname "$0")/.."

echo "== cargo test (all targets)"
cargo test --all-targets --locked
