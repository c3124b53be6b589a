#!/usr/bin/env bash
# Load benchmark of the release server (see examples/load_bench.rs):
#   64 keep-alive HTTP clients for ~10 s (req/s, p50/p99), single water.state round trips over
#   HTTP keep-alive and WebSocket (p50/p99), and one water.batch of 100,000 (p,T) rows -> h,s.
# Usage: scripts/load-bench.sh [CLIENTS] [SECONDS]
set -euo pipefail
cd "$(dirname "$0")/.."
clients="${1:-64}"
seconds="${2:-10}"
cargo build --release --bin steamcell --example load_bench
bin=target/release/steamcell
out=$(mktemp)
"$bin" serve --listen 127.0.0.1:0 --max-connections 200 --max-in-flight 512 >"$out" &
pid=$!
trap 'kill "$pid" 2>/dev/null || true; rm -f "$out"' EXIT
for _ in $(seq 100); do
  [ -s "$out" ] && break
  sleep 0.05
done
addr=$(sed -n 's#.*listening on http://\([^ ]*\).*#\1#p' "$out")
[ -n "$addr" ] || { echo "server did not start" >&2; exit 1; }
echo "server $addr (pid $pid), $(nproc) CPUs"
target/release/examples/load_bench "$addr" "$clients" "$seconds"
echo "server VmRSS after the run: $(grep VmRSS /proc/$pid/status | awk '{print $2, $3}')"
