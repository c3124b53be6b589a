#!/usr/bin/env bash
# Sends the demo requests to a running steamcell server and prints the headline numbers.
# Usage: bash examples/demo/run.sh [http://127.0.0.1:8790]
set -euo pipefail
url="${1:-http://127.0.0.1:8790}"
dir="$(cd "$(dirname "$0")" && pwd)"
for f in "$dir"/0*.json; do
  body=$(python3 -c 'import json,sys; d=json.load(open(sys.argv[1])); print(json.dumps({"jsonrpc":"2.0","id":1,"method":d["method"],"params":d["params"]}))' "$f")
  echo "== $(basename "$f")"
  curl -s -H 'Content-Type: application/json' -d "$body" "$url" | python3 -c '
import json, sys
r = json.load(sys.stdin)
if "error" in r:
    print("  error", r["error"]["code"], r["error"]["message"]); sys.exit(0)
res = r["result"]
keys = ["specific_work", "power", "efficiency", "moisture", "superheat", "spray_flow", "flash_fraction",
        "vapour_flow", "liquid_flow", "steam_flow", "outlet_flow", "fuel_heat_input", "heat_to_steam", "blowdown_flow"]
units = res.get("units", {})
def unit(k):
    # A field the map does not name is in its group'"'"'s unit: mass flows, heat flows.
    if k in units:
        return units[k]
    if k.endswith("_flow"):
        return units.get("flows", "")
    if k in ("fuel_heat_input", "heat_to_steam"):
        return units.get("heat", "")
    return ""
for k in keys:
    if k in res and res[k] is not None:
        print("  %-16s %.4f %s" % (k, res[k], unit(k)))
for side in ("outlet",):
    if side in res:
        o = res[side]
        print("  outlet           p %.4f MPa, T %.2f degC, h %.1f kJ/kg, phase %s" % (o["p"], o["T"], o["h"], o["phase"]))
print("  energy residual ", res["balance"]["energy_residual"])
for w in res.get("warnings", []):
    print("  warning [" + w["code"] + "]: " + w["message"])
'
done
