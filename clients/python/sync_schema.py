#!/usr/bin/env python3
"""Copies the server's OpenRPC document into the Python package (src/steamcell/openrpc.json).

Source, in order: the path given as the first argument; the repository's
schema/steamcell.openrpc.json; else the output of `STEAMCELL_BIN server.schema` via stdio.
Run it after the server's methods change; tests/test_drift.py fails until you do.
"""

import json
import os
import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parents[1]
DEST = HERE / "src" / "steamcell" / "openrpc.json"


def from_binary() -> dict:
    binary = os.environ.get("STEAMCELL_BIN", str(REPO / "target" / "debug" / "steamcell"))
    req = json.dumps({"jsonrpc": "2.0", "id": 1, "method": "server.schema", "params": {}})
    out = subprocess.run([binary, "stdio"], input=req + "\n", capture_output=True, text=True,
                         timeout=60, check=True).stdout
    return json.loads(out.splitlines()[0])["result"]


def main() -> int:
    src = Path(sys.argv[1]) if len(sys.argv) > 1 else REPO / "schema" / "steamcell.openrpc.json"
    if src.exists():
        doc = json.loads(src.read_text(encoding="utf-8"))
        origin = str(src)
    else:
        doc = from_binary()
        origin = "server.schema"
    DEST.write_text(json.dumps(doc, indent=2, sort_keys=False) + "\n", encoding="utf-8")
    print(f"wrote {DEST} from {origin}: {len(doc.get('methods', []))} methods")
    return 0


if __name__ == "__main__":
    sys.exit(main())
