#!/usr/bin/python3
"""Speed of the steamcell Calc extension in headless LibreOffice (a bench script: it prints
figures, it never fails on time).

    STEAMCELL_BIN=target/release/steamcell timeout 600 /usr/bin/python3 clients/libreoffice/bench.py

1. A sheet of 1,000 SC.PROP cells, four input pairs in turn ((p,T), (p,h), (p,s), (T,x)),
   recalculated with calculateAll(): the first time (engine start included), again with every
   input changed (1,000 new states, engine running), and once more unchanged (answers kept by
   the add-in). Target: at most 2 s.
2. SC.COLUMN on 100,000 rows of (p,T): one array formula, one engine call. Target: at most 1 s.

Builds and installs the extension like the end-to-end test (test_extension.py), whose helpers
it uses.
"""

import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

import test_extension as t  # noqa: E402


def inputs(n: int, shift: float):
    rows = []
    for i in range(n):
        k = i % 4
        if k == 0:
            rows.append(("h", "p", 1 + (i % 37) * 0.25 + shift, "T", 200 + (i % 61) * 5 + 0.5))
        elif k == 1:
            rows.append(("T", "p", 0.5 + (i % 23) * 0.2 + shift, "h", 1000 + (i % 97) * 20))
        elif k == 2:
            rows.append(("v", "p", 0.2 + (i % 29) * 0.3 + shift, "s", 2 + (i % 41) * 0.12))
        else:
            rows.append(("s", "T", 50 + (i % 31) * 8 + shift, "x", (i % 11) / 10))
    return rows


def timed(doc) -> float:
    started = time.perf_counter()
    doc.calculateAll()
    return time.perf_counter() - started


def main() -> int:
    tmp = Path(tempfile.mkdtemp(prefix="steamcell-bench-"))
    os.chmod(tmp, 0o755)
    office = None
    try:
        subprocess.run(["bash", str(HERE / "build.sh"), str(tmp / "oxt")], check=True, capture_output=True)
        os.chmod(tmp / "oxt", 0o755)
        oxt = tmp / "oxt" / "steamcell.oxt"
        os.chmod(oxt, 0o644)
        if not t.install(oxt, tmp / "profile"):
            return 1
        office = t.Office(tmp / "profile", {"STEAMCELL_BIN": t.BIN})
        print(f"engine: {t.BIN}")

        doc = office.new_sheet_doc()
        sheet = doc.Sheets.getByIndex(0)
        doc.enableAutomaticCalculation(False)
        n = 1000
        rows = inputs(n, 0.0)
        sheet.getCellRangeByName(f"B1:F{n}").setDataArray(tuple(tuple(r) for r in rows))
        sheet.getCellRangeByName(f"A1:A{n}").setFormulaArray(
            tuple((f"=SC.PROP(B{i};C{i};D{i};E{i};F{i})",) for i in range(1, n + 1)))
        first = timed(doc)
        sheet.getCellRangeByName(f"B1:F{n}").setDataArray(tuple(tuple(r) for r in inputs(n, 0.01)))
        changed = timed(doc)
        same = timed(doc)
        errors = sum(1 for i in range(1, n + 1) if sheet.getCellRangeByName(f"A{i}").getError())
        print(f"1,000 SC.PROP cells (mixed pairs): first recalculation {first:.2f} s (engine start "
              f"included), all inputs changed {changed:.2f} s, unchanged {same:.3f} s; "
              f"{errors} error cells (target: at most 2 s)")
        doc.close(True)

        doc = office.new_sheet_doc()
        sheet = doc.Sheets.getByIndex(0)
        doc.enableAutomaticCalculation(False)
        m = 100_000
        sheet.getCellRangeByName(f"B1:C{m}").setDataArray(
            tuple((1 + (i % 100) * 0.05, 300 + (i % 300)) for i in range(m)))
        sheet.getCellRangeByName(f"A1:A{m}").setArrayFormula(f'=SC.COLUMN("h";"p";B1:B{m};"T";C1:C{m})')
        cold = timed(doc)
        sheet.getCellRangeByName(f"C1:C{m}").setDataArray(tuple((301 + (i % 300),) for i in range(m)))
        warm = timed(doc)
        bad = sum(1 for v in sheet.getCellRangeByName(f"A1:A{m}").getDataArray() if not isinstance(v[0], float))
        print(f"SC.COLUMN on 100,000 rows: {cold:.2f} s the first time, {warm:.2f} s with new inputs "
              f"(target: at most 1 s); {bad} cells without a number")
        doc.close(True)
    finally:
        if office is not None:
            office.terminate()
        shutil.rmtree(tmp, ignore_errors=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
