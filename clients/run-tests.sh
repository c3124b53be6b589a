#!/usr/bin/env bash
# Tests of the clients: the Python package (pytest, in a venv at .venv), the stdio guide, the
# spreadsheet add-ins (generated files in step with clients/functions.json, argument rules, the
# LibreOffice Calc extension end to end, the Excel functions in headless Chromium) and the URL
# workbook (LibreOffice Calc headless through Debian's python3-uno).
# Usage: STEAMCELL_BIN=target/debug/steamcell bash clients/run-tests.sh   (from anywhere)
# Works on a fresh Debian machine as root: installs the Debian packages it needs.
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$(pwd)
export STEAMCELL_BIN="${STEAMCELL_BIN:-$ROOT/target/debug/steamcell}"
case "$STEAMCELL_BIN" in /*) ;; *) STEAMCELL_BIN="$ROOT/$STEAMCELL_BIN" ;; esac
if [ ! -x "$STEAMCELL_BIN" ]; then
  echo "steamcell binary not found at $STEAMCELL_BIN (run cargo build first)" >&2
  exit 1
fi
export DEBIAN_FRONTEND=noninteractive
apt_updated=0
apt_install() {
  if [ "$apt_updated" = 0 ]; then apt-get update -q; apt_updated=1; fi
  apt-get install -y -q --no-install-recommends "$@"
}

echo "== clients: R for the stdio guide's R example"
if ! command -v Rscript >/dev/null 2>&1 || ! Rscript -e 'library(jsonlite)' >/dev/null 2>&1; then
  apt_install r-base-core r-cran-jsonlite
fi

echo "== clients: openssl (the certificates of the TLS tests of the clients)"
if ! command -v openssl >/dev/null 2>&1; then
  apt_install openssl
fi

echo "== clients: python package (venv .venv)"
PY=${PYTHON:-python3}
if ! "$PY" -c "import venv, ensurepip" >/dev/null 2>&1; then
  apt_install python3-venv
  PY=/usr/bin/python3
fi
[ -x .venv/bin/python ] || "$PY" -m venv .venv
.venv/bin/python -m pip install -q "./clients/python[all,pint,test]"
# the install builds out of tree (flit_core): nothing new in the checkout
leftovers=$(git status --porcelain --ignored clients/python 2>/dev/null | grep -E '/build/|\.egg-info' || true)
if [ -n "$leftovers" ]; then
  echo "$leftovers" >&2
  echo "installing the client left files in the checkout" >&2; exit 1
fi
set +e
(cd clients/python && "$ROOT/.venv/bin/python" -m pytest -q -p no:cacheprovider tests)
rc=$?
set -e
if [ "$rc" = 5 ]; then echo "pytest ran no test: failure" >&2; exit 1; fi
if [ "$rc" != 0 ]; then echo "python client tests failed (pytest exit $rc)" >&2; exit "$rc"; fi

echo "== clients: spreadsheet add-ins: generated files match clients/functions.json"
python3 clients/generate.py --check

echo "== clients: spreadsheet add-ins: argument rules (pytest)"
set +e
"$ROOT/.venv/bin/python" -m pytest -q -p no:cacheprovider clients/libreoffice/tests
rc=$?
set -e
if [ "$rc" != 0 ]; then echo "add-in argument rule tests failed (pytest exit $rc)" >&2; exit 1; fi

echo "== clients: spreadsheet end-to-end (LibreOffice Calc headless)"
# libreoffice-dev brings unoidl-write, which builds the Calc extension's type library.
if ! command -v soffice >/dev/null 2>&1 || ! /usr/bin/python3 -c "import uno" >/dev/null 2>&1 \
   || [ ! -x /usr/lib/libreoffice/sdk/bin/unoidl-write ]; then
  apt_install libreoffice-calc-nogui python3-uno libreoffice-dev
fi
timeout 300 /usr/bin/python3 clients/spreadsheet/test_workbook.py

echo "== clients: LibreOffice Calc extension end-to-end (build, unopkg, recalculate, reopen)"
timeout 600 /usr/bin/python3 clients/libreoffice/test_extension.py

echo "== clients: Excel add-in functions in headless Chromium against the server"
if ! command -v chromium >/dev/null 2>&1; then
  apt_install chromium
fi
if ! command -v node >/dev/null 2>&1 || ! command -v npm >/dev/null 2>&1; then
  apt_install nodejs npm
fi
if [ "$(node -p 'process.versions.node.split(".")[0]')" -lt 20 ]; then
  echo "the Excel add-in test needs Node.js 20 or later (playwright-core); found $(node --version)" >&2
  exit 1
fi
(cd clients/excel/test && npm ci --no-audit --no-fund --loglevel=error)
timeout 300 node clients/excel/test/browser_test.mjs
