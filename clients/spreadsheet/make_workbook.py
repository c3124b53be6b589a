#!/usr/bin/env python3
"""Writes site-steam.fods: the invented "Imaginary Falls Mill" site steam balance, whose cells call a
local steamcell server through the spreadsheet web-call function (COM.MICROSOFT.WEBSERVICE).

Usage: python3 make_workbook.py [--port 8790] [--out site-steam.fods]

The port is one input cell (B3); every URL is built from it with "&". Numbers are put into URLs
through SUBSTITUTE(x;",";".") so that a comma-decimal locale still sends a decimal point.
Layout (sheet "Site"): column A labels, B values, C units, D notes. CELLS below maps a short key to
each cell address so the end-to-end test can find them.

Sheet "Site totals" shows the whole-site balance of the example network examples/site/site.json,
registered on the server at start (steamcell serve --site mill=examples/site/site.json): each
result cell calls GET /site/mill/{quantity}?{specification path}={value}, so changing an input
cell re-solves the site with that specification. SITE_CELLS maps its keys to addresses.
"""

from __future__ import annotations

import argparse
from pathlib import Path
from xml.sax.saxutils import escape, quoteattr

HERE = Path(__file__).resolve().parent
DEFAULT_PORT = 8790


def num(ref: str) -> str:
    """A number cell as URL text with a decimal point whatever the locale."""
    return f'SUBSTITUTE([.{ref}];",";".")'


def cell_url(quantity: str, *pairs) -> str:
    """of: formula calling GET /cell/{quantity}?units=engineering&name=value...; each pair is
    (name, formula expression giving the value's URL text)."""
    parts = [f'[.$B$4]&"/cell/{quantity}?units=engineering"']
    for name, expr in pairs:
        parts.append(f'"&{name}="&{expr}')
    return "of:=VALUE(COM.MICROSOFT.WEBSERVICE(" + "&".join(parts) + "))"


def q(name: str, value_ref: str, unit_ref: str = None):
    """(name, value [with %20 and its unit cell]) for cell_url."""
    if unit_ref:
        return name, f'{num(value_ref)}&"%20"&[.{unit_ref}]'
    return name, num(value_ref)


# (key, label, value or formula, unit, note); value: number, string, or "of:=..." formula.
ROWS = [
    ("title", "Imaginary Falls Mill: site steam header, back-pressure turbine and let-down station", None, None,
     "An invented example site. Cells in column B marked 'server' call steamcell."),
    (None, None, None, None, None),
    ("port", "steamcell server port", DEFAULT_PORT, None, "Start: steamcell serve --listen 127.0.0.1:8790"),
    ("base", "server address", 'of:="http://127.0.0.1:"&[.B3]', None, "built from the port cell"),
    (None, None, None, None, None),
    (None, "INPUTS", None, None, None),
    ("p1", "header pressure", 42, "barg", "gauge; the server adds 101.325 kPa ambient"),
    ("T1", "header temperature", 410, "degC", None),
    ("p2", "turbine exhaust pressure", 4, "barg", "the low-pressure header"),
    ("eta", "turbine isentropic efficiency", 0.72, "-", None),
    ("m_turb", "turbine steam flow", 20, "t/h", None),
    ("m_ld", "let-down steam flow", 6, "t/h", None),
    ("T_tgt", "desuperheater target temperature", 165, "degC", None),
    ("p_w", "spray water pressure", 10, "barg", None),
    ("T_w", "spray water temperature", 105, "degC", "from the deaerator pumps"),
    (None, None, None, None, None),
    (None, "RESULTS", None, None, None),
    ("h1", "header enthalpy", cell_url("h", q("p", "B7", "C7"), q("T", "B8", "C8")), "kJ/kg", "server"),
    ("s1", "header entropy", cell_url("s", q("p", "B7", "C7"), q("T", "B8", "C8")), "kJ/(kg K)", "server"),
    ("sh1", "header superheat", cell_url("superheat", q("p", "B7", "C7"), q("T", "B8", "C8")), "K", "server"),
    ("h2s", "isentropic exhaust enthalpy", cell_url("h", q("p", "B9", "C9"), q("s", "B19")), "kJ/kg",
     "server: (p, s) with s from B19"),
    ("h2", "actual exhaust enthalpy", "of:=[.B18]-[.B10]*([.B18]-[.B21])", "kJ/kg", "h1 - eta (h1 - h2s)"),
    ("T2", "exhaust temperature", cell_url("T", q("p", "B9", "C9"), q("h", "B22")), "degC", "server: (p, h)"),
    ("P", "turbine power", "of:=[.B11]/3.6*([.B18]-[.B22])", "kW", "flow in kg/s times (h1 - h2)"),
    ("T_ld", "let-down valve outlet temperature", cell_url("T", q("p", "B9", "C9"), q("h", "B18")), "degC",
     "server: isenthalpic let-down, (p, h)"),
    ("h_tgt", "desuperheated steam enthalpy", cell_url("h", q("p", "B9", "C9"), q("T", "B13", "C13")), "kJ/kg",
     "server"),
    ("h_w", "spray water enthalpy", cell_url("h", q("p", "B14", "C14"), q("T", "B15", "C15")), "kJ/kg",
     "server"),
    ("m_w", "spray water flow", "of:=[.B12]*([.B18]-[.B26])/([.B26]-[.B27])", "t/h",
     "energy balance of the desuperheater"),
    ("m_out", "desuperheated steam flow", "of:=[.B12]+[.B28]", "t/h", None),
    ("Tsat2", "saturation temperature of the low-pressure header", cell_url("T", q("p", "B9", "C9"), ("x", '"0"')),
     "degC", "server: (p, x = 0)"),
    ("sh_out", "superheat after the desuperheater", "of:=[.B13]-[.B30]", "K", None),
    (None, None, None, None, None),
    (None, "CHECK against IAPWS R7-97(2012) Table 5 (region 1, T = 300 K, p = 3 MPa)", None, None, None),
    ("chk_h", "h computed", 'of:=VALUE(COM.MICROSOFT.WEBSERVICE([.$B$4]&"/cell/h?units=engineering&p=3%20MPa&T=300%20K"))',
     "kJ/kg", "published: 115.331273"),
    ("chk_h_pub", "h published", 115.331273, "kJ/kg", "IAPWS R7-97(2012) Table 5"),
    ("chk_diff", "difference", "of:=[.B34]-[.B35]", "kJ/kg", "should be below 5e-7"),
]

CELLS = {}
for _i, _row in enumerate(ROWS, start=1):
    if _row[0]:
        CELLS[_row[0]] = f"B{_i}"


def site_url(quantity: str) -> str:
    """of: formula calling GET /site/{site}/{quantity} with the input cells of "Site totals" as
    specification changes (flows in t/h, "%2F" is the URL form of "/")."""
    parts = [f'[$Site.$B$4]&"/site/"&[.$B$3]&"/{quantity}?units=engineering"']
    for path, ref in SITE_INPUTS:
        parts.append(f'"&{path}="&{num(ref)}&"%20t%2Fh"')
    return "of:=VALUE(COM.MICROSOFT.WEBSERVICE(" + "&".join(parts) + "))"


# (specification path in the network, input cell) for every input of "Site totals".
SITE_INPUTS = [
    ("units.MP_users.demand", "$B$6"),
    ("units.LP_users.demand", "$B$7"),
]

SITE_ROWS = [
    ("title", "Whole-site steam balance of the example mill (examples/site/site.json)", None, None,
     "The server solves the whole network for every result cell."),
    (None, None, None, None, None),
    ("site", "site name on the server", "mill", None,
     "Start: steamcell serve --listen 127.0.0.1:8790 --site mill=examples/site/site.json"),
    (None, None, None, None, None),
    (None, "INPUTS", None, None, None),
    ("mp_demand", "medium-pressure process steam demand", 36, "t/h", "units.MP_users.demand"),
    ("lp_demand", "low-pressure users steam demand", 43.2, "t/h", "units.LP_users.demand"),
    (None, None, None, None, None),
    (None, "SITE TOTALS", None, None, None),
    ("fuel", "fuel heat input", site_url("fuel_heat_input"), "kW", "server: balance of the whole site"),
    ("power", "net power", site_url("net_power"), "kW", "server"),
    ("process", "steam to process", site_url("process_steam"), "kg/s", "server"),
    ("makeup", "make-up water", site_url("makeup_water"), "kg/s", "server"),
    ("vented", "vented steam", site_url("vented_steam"), "kg/s", "server"),
    ("bpt", "back-pressure turbine power", site_url("units.BPT.power"), "kW", "server: units.BPT.power"),
    ("b2", "boiler B2 steam flow", site_url("streams.b2_steam.flow"), "kg/s",
     "server: streams.b2_steam.flow (the swing boiler)"),
    (None, None, None, None, None),
    (None, "Caution: the balance is only as good as its specifications (efficiencies, losses from the "
           "plant's own tests); not a substitute for the governing codes, the equipment maker's data "
           "or a licensed engineer's review.", None, None, None),
]

SITE_CELLS = {}
for _i, _row in enumerate(SITE_ROWS, start=1):
    if _row[0]:
        SITE_CELLS[_row[0]] = f"B{_i}"


def _cell(value) -> str:
    if value is None:
        return "<table:table-cell/>"
    if isinstance(value, str) and value.startswith("of:="):
        return (f'<table:table-cell table:formula={quoteattr(value)} office:value-type="float" '
                f'office:value="0"><text:p>0</text:p></table:table-cell>')
    if isinstance(value, (int, float)):
        return (f'<table:table-cell office:value-type="float" office:value="{value!r}">'
                f'<text:p>{value!r}</text:p></table:table-cell>')
    return (f'<table:table-cell office:value-type="string"><text:p>{escape(str(value))}</text:p>'
            f'</table:table-cell>')


def _rows(rows_in, port: int) -> str:
    rows = []
    for key, label, value, unit, note in rows_in:
        if key == "port":
            value = port
        if key == "title":
            value, note = note, None
        cells = [_cell(label), _cell(value), _cell(unit), _cell(note)]
        rows.append("<table:table-row>" + "".join(cells) + "</table:table-row>")
    return "\n".join(rows)


def document(port: int = DEFAULT_PORT) -> str:
    body = _rows(ROWS, port)
    site_body = _rows(SITE_ROWS, port)
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
<style:style style:name="colB" style:family="table-column"><style:table-column-properties style:column-width="1.6in"/></style:style>
<style:style style:name="colC" style:family="table-column"><style:table-column-properties style:column-width="0.9in"/></style:style>
<style:style style:name="colD" style:family="table-column"><style:table-column-properties style:column-width="3.6in"/></style:style>
</office:automatic-styles>
<office:body>
<office:spreadsheet>
<table:table table:name="Site">
<table:table-column table:style-name="colA"/>
<table:table-column table:style-name="colB"/>
<table:table-column table:style-name="colC"/>
<table:table-column table:style-name="colD"/>
{body}
</table:table>
<table:table table:name="Site totals">
<table:table-column table:style-name="colA"/>
<table:table-column table:style-name="colB"/>
<table:table-column table:style-name="colC"/>
<table:table-column table:style-name="colD"/>
{site_body}
</table:table>
</office:spreadsheet>
</office:body>
</office:document>
"""


def write(path: Path, port: int = DEFAULT_PORT) -> Path:
    path = Path(path)
    path.write_text(document(port), encoding="utf-8")
    return path


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--port", type=int, default=DEFAULT_PORT)
    ap.add_argument("--out", default=str(HERE / "site-steam.fods"))
    a = ap.parse_args()
    print("wrote", write(Path(a.out), a.port))


if __name__ == "__main__":
    main()
