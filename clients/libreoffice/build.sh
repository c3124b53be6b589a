#!/usr/bin/env bash
# Builds the steamcell LibreOffice Calc extension.
# Usage: bash clients/libreoffice/build.sh OUT_DIR      -> OUT_DIR/steamcell.oxt
#
# The type library (XFunctions.rdb) is built from src/XFunctions.idl with unoidl-write, which
# Debian ships in libreoffice-dev (with the office's own types.rdb from libreoffice-core): run as
# root on Debian, the script installs them when missing. Elsewhere set UNOIDL_WRITE and
# LO_PROGRAM (the folder holding types.rdb). The generated files must match
# clients/functions.json (python3 clients/generate.py --check) or the build stops.
set -euo pipefail
HERE="$(cd "$(dirname "$0")" && pwd)"
OUT="${1:?usage: bash clients/libreoffice/build.sh OUT_DIR}"
mkdir -p "$OUT"
OUT="$(cd "$OUT" && pwd)"

find_unoidl_write() {
  if [ -n "${UNOIDL_WRITE:-}" ]; then echo "$UNOIDL_WRITE"; return; fi
  if command -v unoidl-write >/dev/null 2>&1; then command -v unoidl-write; return; fi
  for c in /usr/lib/libreoffice/sdk/bin/unoidl-write /opt/libreoffice*/sdk/bin/unoidl-write; do
    if [ -x "$c" ]; then echo "$c"; return; fi
  done
}
LO_PROGRAM="${LO_PROGRAM:-/usr/lib/libreoffice/program}"
UW="$(find_unoidl_write || true)"
if [ -z "$UW" ] || [ ! -f "$LO_PROGRAM/types.rdb" ]; then
  if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then
    echo "installing libreoffice-dev (unoidl-write) ..."
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -q
    apt-get install -y -q --no-install-recommends libreoffice-dev
    UW="$(find_unoidl_write || true)"
  fi
fi
if [ -z "$UW" ] || [ ! -f "$LO_PROGRAM/types.rdb" ]; then
  echo "build.sh: unoidl-write or $LO_PROGRAM/types.rdb not found: install the LibreOffice SDK" \
       "(Debian: apt-get install libreoffice-dev) or set UNOIDL_WRITE and LO_PROGRAM" >&2
  exit 1
fi

python3 "$HERE/../generate.py" --check

STAGE="$(mktemp -d)"
trap 'rm -rf "$STAGE"' EXIT
cp -R "$HERE/src/." "$STAGE/"
find "$STAGE" -name __pycache__ -prune -exec rm -rf {} +
"$UW" "$LO_PROGRAM/types.rdb" "$STAGE/XFunctions.idl" "$STAGE/XFunctions.rdb"
rm "$STAGE/XFunctions.idl"

# A zip with fixed dates and order, so the same sources give the same file.
python3 - "$STAGE" "$OUT/steamcell.oxt" <<'PY'
import os, sys, zipfile
stage, out = sys.argv[1], sys.argv[2]
files = []
for root, _dirs, names in os.walk(stage):
    for n in names:
        full = os.path.join(root, n)
        files.append(os.path.relpath(full, stage).replace(os.sep, "/"))
files.sort(key=lambda p: (p != "META-INF/manifest.xml", p))
with zipfile.ZipFile(out + ".tmp", "w", zipfile.ZIP_DEFLATED) as z:
    for rel in files:
        info = zipfile.ZipInfo(rel, date_time=(2024, 1, 1, 0, 0, 0))
        info.compress_type = zipfile.ZIP_DEFLATED
        info.external_attr = 0o644 << 16
        with open(os.path.join(stage, rel), "rb") as f:
            z.writestr(info, f.read())
os.replace(out + ".tmp", out)
print("wrote", out, f"({len(files)} files)")
PY
