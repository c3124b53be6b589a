"""The argument rules of the Calc add-in (steamcell_sheet.cells), without LibreOffice: the
options texts and name/value pairs of clients/sheet-cases.json (the Excel add-in's functions.js
is checked against the same cases in the browser test), and the value forms."""

import json
import math
import sys
from pathlib import Path

import pytest

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "src" / "pythonpath"))

from steamcell_sheet import cells  # noqa: E402
from steamcell_sheet.cells import CellError  # noqa: E402

CASES = json.loads((HERE.parents[1] / "sheet-cases.json").read_text(encoding="utf-8"))


@pytest.mark.parametrize("case", CASES["options"], ids=lambda c: repr(c["text"]))
def test_options(case):
    if "error" in case:
        with pytest.raises(CellError) as e:
            cells.parse_options(case["text"])
        assert case["error"] in e.value.message
    else:
        assert cells.parse_options(case["text"]) == case["params"]


@pytest.mark.parametrize("case", CASES["pairs"], ids=lambda c: repr(c["args"]))
def test_pairs(case):
    args = [tuple(tuple(r) for r in a) if isinstance(a, list) else (float(a) if isinstance(a, int) else a)
            for a in case["args"]]
    if "error" in case:
        with pytest.raises(CellError) as e:
            cells.pairs_to_params(args)
        assert case["error"] in e.value.message
    else:
        assert json.loads(json.dumps(cells.pairs_to_params(args))) == case["params"]


def test_value_forms():
    assert cells.value_arg(42.0, "v") == 42.0
    assert cells.value_arg(" 42 barg ", "v") == "42 barg"
    assert cells.value_arg(((42.5, "barg"),), "v") == "42.5 barg"  # a row of two cells
    assert cells.value_arg(((42.5,), ("barg",)), "v") == "42.5 barg"  # a column of two cells
    assert cells.value_arg(((7.0,),), "v") == 7.0  # a 1x1 range
    for bad, fragment in ((None, "is empty"), ("", "is empty"), ((("", "barg"),), "empty cell"),
                          (((1.0, 2.0),), "range of several cells"), (True, "TRUE/FALSE"),
                          (math.inf, "finite")):
        with pytest.raises(CellError) as e:
            cells.value_arg(bad, "v")
        assert fragment in e.value.message


def test_column_values():
    assert cells.column_values(((1.0,), (2.0,)), "c") == ([1.0, 2.0], "column")
    assert cells.column_values(((1.0, 2.0, 3.0),), "c") == ([1.0, 2.0, 3.0], "row")
    assert cells.column_values(5.0, "c") == ([5.0], None)
    assert cells.column_values(((42.0, "barg"), ("", "barg"), (1.0, "")), "c") == (["42.0 barg", "", 1.0], "column")
    with pytest.raises(CellError):
        cells.column_values(((1.0, 2.0, 3.0), (4.0, 5.0, 6.0)), "c")


def test_pick():
    state = {"h": 1.5, "x": None, "phase": "vapour", "undefined": {"x": "single-phase"},
             "stages": [{"power": 3.0}], "outlet": {"T": 4.0}}
    assert cells.pick(state, "h") == 1.5
    assert cells.pick(state, "phase") == "vapour"
    assert cells.pick(state, "stages.0.power") == 3.0
    for path, fragment in (("x", "x is not defined here: single-phase"), ("hh", "unknown quantity 'hh'"),
                           ("stages.1.power", "not an index"), ("outlet", "not one number"),
                           ("h.a", "single value")):
        with pytest.raises(CellError) as e:
            cells.pick(state, path)
        assert fragment in e.value.message
