#!/usr/bin/env python3
"""Writes imaginary-falls-mill.fods: the example workbook of the steamcell Calc extension, set in
the invented Imaginary Falls Mill. Every computed cell uses only the add-in's functions (SC.PROP,
SC.COLUMN, SC.SAT, SC.METHOD, SC.SITE, SC.WHY, SC.INFO) and ordinary arithmetic; the workbook
holds no path, port or URL, so it opens unchanged wherever the extension is installed.

Usage: python3 make_example.py [--out imaginary-falls-mill.fods]

Formulas are written as Calc stores them in ODF: `of:=ORG.STEAMCELL.CALC.FUNCTIONS.PROP(...)`
(the functions' api_name in clients/functions.json); Calc shows them as SC.PROP(...). A value
with its unit is given as two cells, e.g. [.B6:.C6] holding 42 and "barg" (locale-proof).

The tables below (MILL, HISTORIAN, SITE) say for every computed cell what it must equal: a
JSON-RPC call of the server ("rpc"), a published value ("number"), or arithmetic of other cells
("calc"); clients/libreoffice/test_extension.py checks each one.
"""

from __future__ import annotations

import argparse
import json
from pathlib import Path
from xml.sax.saxutils import escape, quoteattr

HERE = Path(__file__).resolve().parent
CLIENTS = HERE.parent
SPEC = json.loads((CLIENTS / "functions.json").read_text(encoding="utf-8"))
API = {f["name"]: f["api_name"] for f in SPEC["functions"]}
OUT = HERE / "imaginary-falls-mill.fods"


def fn(name: str, *args: str) -> str:
    """An of: formula calling function `name` with the given ODF argument texts."""
    return f"{API[name]}({';'.join(args)})"


def q(text: str) -> str:
    return '"' + text.replace('"', '""') + '"'


def vu(row: int) -> str:
    """The value-and-unit pair of row `row` (columns B and C)."""
    return f"[.B{row}:.C{row}]"


# Inputs of sheet "Mill": key -> (row, label, value, unit, note)
INPUTS = [
    ("p1", 6, "header pressure", 42, "barg", "the high-pressure steam header"),
    ("T1", 7, "header temperature", 410, "degC", None),
    ("p2", 8, "turbine exhaust pressure", 4, "barg", "the low-pressure header"),
    ("eta", 9, "turbine isentropic efficiency", 0.72, "-", "from the plant's own acceptance test"),
    ("m_turb", 10, "turbine steam flow", 20, "t/h", None),
    ("m_ld", 11, "let-down steam flow", 6, "t/h", None),
    ("T_tgt", 12, "desuperheater target temperature", 165, "degC", None),
    ("p_w", 13, "spray water pressure", 10, "barg", None),
    ("T_w", 14, "spray water temperature", 105, "degC", "from the deaerator pumps"),
]
ROW = {k: r for k, r, *_ in INPUTS}
VALUE = {k: (v, u) for k, _r, _l, v, u, _n in INPUTS}


def given(k: str) -> str:
    v, u = VALUE[k]
    return f"{v!r} {u}" if u != "-" else v


TURBINE = ["inlet.p", vu(ROW["p1"]), "inlet.T", vu(ROW["T1"]), "inlet.flow", vu(ROW["m_turb"]),
           "outlet_p", vu(ROW["p2"]), "efficiency", f"[.B{ROW['eta']}]"]
TURBINE_ARGS = [q(TURBINE[i]) if i % 2 == 0 else TURBINE[i] for i in range(len(TURBINE))]
TURBINE_PARAMS = {"inlet": {"p": given("p1"), "T": given("T1"), "flow": given("m_turb")},
                  "outlet_p": given("p2"), "efficiency": VALUE["eta"][0]}
VALVE_ARGS = [q("inlet.p"), vu(ROW["p1"]), q("inlet.T"), vu(ROW["T1"]), q("outlet_p"), vu(ROW["p2"])]
VALVE_PARAMS = {"inlet": {"p": given("p1"), "T": given("T1")}, "outlet_p": given("p2")}
STATE1 = {"given": {"p": given("p1"), "T": given("T1")}}

# Computed cells of sheet "Mill": (key, row, label, formula, unit, note, expectation)
MILL = [
    ("info", 3, "computed by", fn("INFO"), None, "engine version, formulation and validation digest",
     {"text": "steamcell "}),
    ("h1", 17, "header enthalpy", fn("PROP", q("h"), q("p"), vu(6), q("T"), vu(7)), "kJ/kg", "SC.PROP",
     {"rpc": ["water.state", STATE1, "h"]}),
    ("s1", 18, "header entropy", fn("PROP", q("s"), q("p"), vu(6), q("T"), vu(7)), "kJ/(kg K)", "SC.PROP",
     {"rpc": ["water.state", STATE1, "s"]}),
    ("sh1", 19, "header superheat", fn("PROP", q("superheat"), q("p"), vu(6), q("T"), vu(7)), "K", "SC.PROP",
     {"rpc": ["water.state", STATE1, "superheat"]}),
    ("P", 20, "turbine power", fn("METHOD", q("turbine.expand"), q("power"), *TURBINE_ARGS), "kW",
     "SC.METHOD turbine.expand", {"rpc": ["turbine.expand", TURBINE_PARAMS, "power"]}),
    ("T2", 21, "turbine exhaust temperature", fn("METHOD", q("turbine.expand"), q("outlet.T"), *TURBINE_ARGS),
     "degC", "SC.METHOD turbine.expand", {"rpc": ["turbine.expand", TURBINE_PARAMS, "outlet.T"]}),
    ("h2", 22, "turbine exhaust enthalpy", fn("METHOD", q("turbine.expand"), q("outlet.h"), *TURBINE_ARGS),
     "kJ/kg", "SC.METHOD turbine.expand", {"rpc": ["turbine.expand", TURBINE_PARAMS, "outlet.h"]}),
    ("T_ld", 23, "let-down valve outlet temperature", fn("METHOD", q("valve.throttle"), q("outlet.T"), *VALVE_ARGS),
     "degC", "SC.METHOD valve.throttle (isenthalpic)", {"rpc": ["valve.throttle", VALVE_PARAMS, "outlet.T"]}),
    ("m_w", 24, "spray water flow",
     fn("METHOD", q("desuperheater.spray"), q("spray_flow"), q("steam.p"), vu(8), q("steam.h"), "[.B17]",
        q("steam.flow"), vu(11), q("water.p"), vu(13), q("water.T"), vu(14), q("target_T"), vu(12)),
     "kg/s", "SC.METHOD desuperheater.spray, steam from the let-down valve",
     {"rpc": ["desuperheater.spray", {"steam": {"p": given("p2"), "h": "=h1", "flow": given("m_ld")},
                                      "water": {"p": given("p_w"), "T": given("T_w")},
                                      "target_T": given("T_tgt")}, "spray_flow"]}),
    ("m_w_th", 25, "spray water flow", "[.B24]*3.6", "t/h", "kg/s times 3.6", {"calc": "m_w*3.6"}),
    ("Tsat2", 26, "saturation temperature of the low-pressure header", fn("SAT", q("T"), q("p"), vu(8)),
     "degC", "SC.SAT", {"rpc": ["water.saturation", {"p": given("p2")}, "T"]}),
    ("sh_out", 27, "superheat after the desuperheater", "[.B12]-[.B26]", "K", None, {"calc": "165-Tsat2"}),
    ("hfg2", 28, "latent heat at the low-pressure header", fn("SAT", q("h_fg"), q("p"), vu(8)), "kJ/kg",
     "SC.SAT", {"rpc": ["water.saturation", {"p": given("p2")}, "h_fg"]}),
    ("chk_h", 31, "h computed", fn("PROP", q("h"), q("p"), q("3 MPa"), q("T"), q("300 K")), "kJ/kg",
     "published: 115.331273", {"number": 115.331273, "abs": 5e-7}),
    ("chk_diff", 33, "difference", "[.B31]-[.B32]", "kJ/kg", "below 5e-7 (half a unit of the last printed digit)",
     {"calc": "chk_h-115.331273"}),
    ("why", 36, "why a mistyped unit fails",
     fn("WHY", q("PROP"), q("h"), q("p"), q("42 barx"), q("T"), vu(7)), None,
     "SC.WHY gives the message of a cell's error", {"text": "unknown unit 'barx'"}),
]

# Sheet "Historian": hourly header readings, one SC.COLUMN array formula per property.
HISTORIAN_ROWS = [
    (42.0, "barg", 410.0, "degC"), (41.6, "barg", 408.5, "degC"), (41.9, "barg", 409.2, "degC"),
    (42.3, "barg", 411.0, "degC"), (40.8, "barg", "n/a", "degC"), (41.1, "barg", 404.7, "degC"),
    (42.0, "barg", 412.3, "degC"), (41.7, "barg", 407.9, "degC"),
]
HIST_FIRST = 5
HIST_LAST = HIST_FIRST + len(HISTORIAN_ROWS) - 1
HIST_P = f"[.A{HIST_FIRST}:.B{HIST_LAST}]"
HIST_T = f"[.C{HIST_FIRST}:.D{HIST_LAST}]"
HISTORIAN = [  # (column letter, heading, quantity)
    ("E", "h, kJ/kg", "h"),
    ("F", "s, kJ/(kg K)", "s"),
]

# Sheet "Site": totals of the example network (registered as "mill"), as SC.SITE.
SITE_INPUTS = [("mp_demand", 6, "medium-pressure process steam demand", 36, "t/h", "units.MP_users.demand"),
               ("lp_demand", 7, "low-pressure users steam demand", 43.2, "t/h", "units.LP_users.demand")]


def site_fn(quantity: str) -> str:
    args = [q("mill"), q(quantity)]
    for _k, row, _l, _v, _u, path in SITE_INPUTS:
        args += [q(path), vu(row)]
    return fn("SITE", *args)


SITE = [  # (key, row, label, quantity, unit)
    ("fuel", 10, "fuel heat input", "fuel_heat_input", "kW"),
    ("power", 11, "net power", "net_power", "kW"),
    ("process", 12, "steam to process", "process_steam", "kg/s"),
    ("makeup", 13, "make-up water", "makeup_water", "kg/s"),
    ("vented", 14, "vented steam", "vented_steam", "kg/s"),
    ("bpt", 15, "back-pressure turbine power", "units.BPT.power", "kW"),
    ("b2", 16, "boiler B2 steam flow (the swing boiler)", "streams.b2_steam.flow", "kg/s"),
]

CAUTION = ("Caution: steam at pressure can kill. These results support engineering work; they are not a "
           "substitute for the governing codes, the equipment maker's data, or a licensed engineer's "
           "review. Component and balance results are only as good as their specifications "
           "(efficiencies, losses), which should come from the plant's own tests.")


def _cell(value, array_rows: int = 0) -> str:
    if value is None:
        return "<table:table-cell/>"
    if isinstance(value, tuple) and value[0] == "formula":
        span = (f' table:number-matrix-columns-spanned="1" table:number-matrix-rows-spanned="{array_rows}"'
                if array_rows else "")
        return (f'<table:table-cell table:formula={quoteattr("of:=" + value[1])}{span} '
                f'office:value-type="float" office:value="0"><text:p>0</text:p></table:table-cell>')
    if isinstance(value, (int, float)):
        return (f'<table:table-cell office:value-type="float" office:value="{value!r}">'
                f"<text:p>{value!r}</text:p></table:table-cell>")
    return (f'<table:table-cell office:value-type="string"><text:p>{escape(str(value))}</text:p>'
            "</table:table-cell>")


def _row(*cells) -> str:
    return "<table:table-row>" + "".join(cells) + "</table:table-row>"


def _sheet_rows(cells_by_row: dict, last_row: int, width: int) -> str:
    out = []
    for r in range(1, last_row + 1):
        row = cells_by_row.get(r, [])
        row = list(row) + [None] * (width - len(row))
        out.append(_row(*[c if isinstance(c, str) and c.startswith("<table:") else _cell(c) for c in row]))
    return "\n".join(out)


def mill_sheet() -> str:
    rows = {1: ["Imaginary Falls Mill: steam header, back-pressure turbine and let-down station", None, None,
                "An invented example site. Column B: inputs (rows 6 to 14) and results of the steamcell functions."],
            5: ["INPUTS"], 16: ["RESULTS"],
            30: ["CHECK against IAPWS R7-97(2012) Table 5 (region 1, T = 300 K, p = 3 MPa)"],
            32: ["h published", 115.331273, "kJ/kg", "IAPWS R7-97(2012) Table 5"],
            35: ["WHY"], 38: [CAUTION]}
    for _k, r, label, value, unit, note in INPUTS:
        rows[r] = [label, value, unit, note]
    for _k, r, label, formula, unit, note, _e in MILL:
        rows[r] = [label, ("formula", formula), unit, note]
    return _sheet_rows(rows, 38, 4)


def historian_sheet() -> str:
    rows = {1: ["Imaginary Falls Mill: hourly readings of the high-pressure header (a historian export)"],
            2: ["Columns E and F are one SC.COLUMN array formula each: one engine call for the whole range. "
                "Row 9 holds a sensor fault (n/a): only its own cells show an error; G9 says why."],
            4: ["p", "unit", "T", "unit"] + [h for _c, h, _q in HISTORIAN] + ["why"]}
    for i, (p, pu, t, tu) in enumerate(HISTORIAN_ROWS):
        r = HIST_FIRST + i
        cells = [p, pu, t, tu]
        for k, (_c, _h, qty) in enumerate(HISTORIAN):
            if i == 0:
                cells.append(_cell(("formula", fn("COLUMN", q(qty), q("p"), HIST_P, q("T"), HIST_T)),
                                   array_rows=len(HISTORIAN_ROWS)))
            else:
                cells.append(_cell(0.0))
        cells.append(("formula", fn("WHY", q("PROP"), q("h"), q("p"), f"[.A{r}:.B{r}]", q("T"), f"[.C{r}:.D{r}]")))
        rows[r] = cells
    return _sheet_rows(rows, HIST_LAST, 7)


def site_sheet() -> str:
    rows = {1: ["Imaginary Falls Mill: whole-site steam balance (examples/site/site.json, registered as 'mill')"],
            2: ["The engine needs the site: add-in options, Sites: mill=/path/to/examples/site/site.json "
                "(or STEAMCELL_SITES), or a team server started with --site mill=...; without it these "
                "cells show #VALUE! and SC.WHY says so."],
            5: ["INPUTS"], 9: ["SITE TOTALS"], 18: [CAUTION]}
    for _k, r, label, value, unit, path in SITE_INPUTS:
        rows[r] = [label, value, unit, path]
    for _k, r, label, quantity, unit in SITE:
        rows[r] = [label, ("formula", site_fn(quantity)), unit, quantity]
    return _sheet_rows(rows, 18, 4)


def document() -> str:
    cols = ('<table:table-column table:style-name="colA"/><table:table-column table:style-name="colB"/>'
            '<table:table-column table:style-name="colC"/><table:table-column table:style-name="colD"/>')
    return f"""<?xml version="1.0" encoding="UTF-8"?>
<office:document xmlns:office="urn:oasis:names:tc:opendocument:xmlns:office:1.0"
 xmlns:style="urn:oasis:names:tc:opendocument:xmlns:style:1.0"
 xmlns:text="urn:oasis:names:tc:opendocument:xmlns:text:1.0"
 xmlns:table="urn:oasis:names:tc:opendocument:xmlns:table:1.0"
 xmlns:fo="urn:oasis:names:tc:opendocument:xmlns:xsl-fo-compatible:1.0"
 xmlns:of="urn:oasis:names:tc:opendocument:xmlns:of:1.2"
 office:version="1.2" office:mimetype="application/vnd.oasis.opendocument.spreadsheet">
<office:automatic-styles>
<style:style style:name="colA" style:family="table-column"><style:table-column-properties style:column-width="3.2in"/></style:style>
<style:style style:name="colB" style:family="table-column"><style:table-column-properties style:column-width="1.4in"/></style:style>
<style:style style:name="colC" style:family="table-column"><style:table-column-properties style:column-width="0.9in"/></style:style>
<style:style style:name="colD" style:family="table-column"><style:table-column-properties style:column-width="3.4in"/></style:style>
</office:automatic-styles>
<office:body>
<office:spreadsheet>
<table:table table:name="Mill">
{cols}
{mill_sheet()}
</table:table>
<table:table table:name="Historian">
{historian_sheet()}
</table:table>
<table:table table:name="Site">
{cols}
{site_sheet()}
</table:table>
</office:spreadsheet>
</office:body>
</office:document>
"""


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default=str(OUT))
    a = ap.parse_args()
    Path(a.out).write_text(document(), encoding="utf-8")
    print("wrote", a.out)


if __name__ == "__main__":
    main()
