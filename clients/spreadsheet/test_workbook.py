#!/usr/bin/python3
"""End-to-end test of site-steam.fods in LibreOffice Calc, headless, driven through Python UNO.

Run with Debian's /usr/bin/python3 (the one that has `uno`), under `timeout` since Calc never
times out a hung web call:
    STEAMCELL_BIN=target/debug/steamcell timeout 300 /usr/bin/python3 clients/spreadsheet/test_workbook.py

Steps: start `steamcell serve` on a free port; copy the workbook into a temporary folder that a
fresh LibreOffice profile trusts (SecureURL); start soffice with a UNO socket; load the document
with full link update; write the server's port into the port cell; calculateAll(); read the
cells; compare them with the server's JSON-RPC answers and with a published value; save a
copy and reopen it on fresh profiles with and without the two settings the README names
(trusted location, update links always): live values with them, Err:540 without. Prints
'N passed, N failed' and exits non-zero on any failure.
"""

import math
import os
import shutil
import socket
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parents[1]
sys.path.insert(0, str(REPO / "clients" / "python" / "src"))  # the client is standard library only
sys.path.insert(0, str(HERE))

import make_workbook  # noqa: E402
import steamcell  # noqa: E402

BIN = os.environ.get("STEAMCELL_BIN") or str(REPO / "target" / "debug" / "steamcell")
SOFFICE = shutil.which("soffice") or "/usr/bin/soffice"

RESULTS = {"passed": 0, "failed": 0}


def check(name, ok, detail=""):
    RESULTS["passed" if ok else "failed"] += 1
    print(("PASS " if ok else "FAIL ") + name + (f": {detail}" if detail else ""), flush=True)
    return ok


def close_to(a, b, rel=1e-9, abs_=0.0):
    return a == a and b == b and abs(a - b) <= max(rel * abs(b), abs_)


def free_port():
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def trusted_profile(profile: Path, doc_dir: Path, trusted: bool = True,
                    links_always: bool = False) -> None:
    """A fresh profile; `trusted`: the document's folder is a trusted file location (Tools >
    Options > LibreOffice > Security > Macro Security > Trusted Sources > Trusted File
    Locations); `links_always`: Tools > Options > LibreOffice Calc > General > Update links when
    opening: Always. These are the two settings the README names."""
    user = profile / "user"
    user.mkdir(parents=True, exist_ok=True)
    items = []
    if trusted:
        items.append('<item oor:path="/org.openoffice.Office.Common/Security/Scripting">'
                     '<prop oor:name="SecureURL" oor:op="fuse"><value>'
                     f'<it>{doc_dir.as_uri()}</it></value></prop></item>\n')
    if links_always:
        items.append('<item oor:path="/org.openoffice.Office.Calc/Content/Update">'
                     '<prop oor:name="Link" oor:op="fuse"><value>0</value></prop></item>\n')
    (user / "registrymodifications.xcu").write_text(
        '<?xml version="1.0" encoding="UTF-8"?>\n'
        '<oor:items xmlns:oor="http://openoffice.org/2001/registry" '
        'xmlns:xs="http://www.w3.org/2001/XMLSchema" '
        'xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">\n'
        + "".join(items) + '</oor:items>\n', encoding="utf-8")


def start_office(profile: Path):
    """soffice on `profile` with a UNO socket: (process, desktop)."""
    uno_port = free_port()
    office = subprocess.Popen(
        [SOFFICE, f"-env:UserInstallation={profile.as_uri()}", "--headless", "--invisible",
         "--nologo", "--norestore", "--nodefault", "--nolockcheck",
         f"--accept=socket,host=127.0.0.1,port={uno_port};urp;"],
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        return office, connect_uno(uno_port, time.time() + 60)
    except Exception:
        office.kill()
        office.wait(10)
        raise


def stop_office(office, desktop, doc=None) -> None:
    try:
        if doc is not None:
            doc.close(True)
    except Exception:
        pass
    try:
        desktop.terminate()
    except Exception:
        pass
    try:
        office.wait(timeout=15)
    except subprocess.TimeoutExpired:
        office.kill()
        office.wait(timeout=10)


def reopen_checks(saved: Path, tmp: Path, server) -> None:
    """The saved copy, reopened as a user opens it (links updated as the profile says), on a
    fresh profile with the README's two settings, and on one without them (Err:540)."""
    for name, settings in (("with the README's settings", True), ("without them", False)):
        profile = tmp / f"profile-reopen-{'set' if settings else 'plain'}"
        trusted_profile(profile, saved.parent, trusted=settings, links_always=settings)
        office, desktop = start_office(profile)
        doc = None
        try:
            # UpdateDocMode 2 = ACCORDING_TO_CONFIG: what opening the file in the program does
            doc = desktop.loadComponentFromURL(saved.as_uri(), "_blank", 0,
                                               (prop("Hidden", True), prop("UpdateDocMode", 2)))
            sheet = doc.Sheets.getByName("Site")
            h1 = sheet.getCellRangeByName(make_workbook.CELLS["h1"])
            if settings:
                want = server.state(p="42 barg", T="410 degC").h
                check("reopened with the README's settings: h1 is live at load",
                      h1.getError() == 0 and close_to(h1.getValue(), want), f"{h1.getString()} vs {want!r}")
                sheet.getCellRangeByName(make_workbook.CELLS["T1"]).setValue(420)
                doc.calculateAll()
                want = server.state(p="42 barg", T="420 degC").h
                check("reopened with the README's settings: a new input recalculates through the server",
                      h1.getError() == 0 and close_to(h1.getValue(), want), f"{h1.getString()} vs {want!r}")
            else:
                doc.calculateAll()
                check("reopened without them: Err:540 (external content disabled)",
                      h1.getError() == 540, f"{h1.getError()} {h1.getString()}")
        finally:
            stop_office(office, desktop, doc)
            for lock in saved.parent.glob(".~lock.*#"):
                lock.unlink()


def connect_uno(port: int, deadline: float):
    import uno  # Debian's python3-uno
    local = uno.getComponentContext()
    resolver = local.ServiceManager.createInstanceWithContext(
        "com.sun.star.bridge.UnoUrlResolver", local)
    last = None
    while time.time() < deadline:
        try:
            ctx = resolver.resolve(
                f"uno:socket,host=127.0.0.1,port={port};urp;StarOffice.ComponentContext")
            return ctx.ServiceManager.createInstanceWithContext("com.sun.star.frame.Desktop", ctx)
        except Exception as e:  # NoConnectException until soffice listens
            last = e
            time.sleep(0.3)
    raise RuntimeError(f"could not connect to soffice: {last}")


def prop(name, value):
    import uno
    from com.sun.star.beans import PropertyValue
    p = PropertyValue()
    p.Name, p.Value = name, value
    return p


def main() -> int:
    if not Path(BIN).is_file():
        print(f"steamcell binary not found at {BIN}")
        print("0 passed, 1 failed")
        return 1
    tmp = Path(tempfile.mkdtemp(prefix="steamcell-fods-"))
    doc_dir = tmp / "doc"
    doc_dir.mkdir()
    profile = tmp / "profile"
    trusted_profile(profile, doc_dir)
    # the committed workbook, as a user would get it (port cell at the default)
    doc_path = doc_dir / "site-steam.fods"
    shutil.copy(HERE / "site-steam.fods", doc_path)
    check("committed workbook is what make_workbook.py writes",
          doc_path.read_text(encoding="utf-8") == make_workbook.document(),
          "run make_workbook.py" )

    site_file = REPO / "examples" / "site" / "site.json"
    server = steamcell.connect(binary=BIN, serve_args=["--site", f"mill={site_file}"])
    port = int(server.url.rsplit(":", 1)[1])
    uno_port = free_port()
    office = subprocess.Popen(
        [SOFFICE, f"-env:UserInstallation={profile.as_uri()}", "--headless", "--invisible",
         "--nologo", "--norestore", "--nodefault", "--nolockcheck",
         f"--accept=socket,host=127.0.0.1,port={uno_port};urp;"],
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    doc = None
    try:
        desktop = connect_uno(uno_port, time.time() + 60)
        doc = desktop.loadComponentFromURL(doc_path.as_uri(), "_blank", 0,
                                           (prop("Hidden", True), prop("UpdateDocMode", 3)))
        sheet = doc.Sheets.getByName("Site")
        cell = lambda key: sheet.getCellRangeByName(make_workbook.CELLS[key])  # noqa: E731
        # one cell configures the port
        cell("port").setValue(port)
        doc.calculateAll()
        check("address cell follows the port cell", cell("base").getString() == server.url,
              cell("base").getString())

        def value(key):
            c = cell(key)
            if c.getError():
                return float("nan"), f"Err:{c.getError()} {c.getString()}"
            return c.getValue(), c.getString()

        # published check value: IAPWS R7-97(2012) Table 5, T = 300 K, p = 3 MPa:
        # h = 0.115331273e3 kJ/kg (9 digits printed: half a unit of the last is 5e-7)
        h, txt = value("chk_h")
        check("Table 5 h(300 K, 3 MPa) through the sheet", close_to(h, 115.331273, 0, 5e-7), txt)

        # every server cell against the JSON-RPC answers
        st1 = server.state(p="42 barg", T="410 degC")
        for key, want in (("h1", st1.h), ("s1", st1.s), ("sh1", st1.superheat)):
            got, txt = value(key)
            check(f"{key} = water.state(42 barg, 410 degC)", close_to(got, want), f"{txt} vs {want!r}")
        s1_sheet = value("s1")[0]
        st2s = server.state(p="4 barg", s=s1_sheet)
        got, txt = value("h2s")
        check("h2s = water.state(4 barg, s1)", close_to(got, st2s.h), f"{txt} vs {st2s.h!r}")
        h1, h2s = value("h1")[0], got
        h2 = h1 - 0.72 * (h1 - h2s)
        got, txt = value("h2")
        check("h2 = h1 - eta (h1 - h2s)", close_to(got, h2), txt)
        st2 = server.state(p="4 barg", h=value("h2")[0])
        got, txt = value("T2")
        check("T2 = water.state(4 barg, h2).T", close_to(got, st2.T), f"{txt} vs {st2.T!r}")
        got, txt = value("P")
        check("turbine power = flow (h1 - h2)", close_to(got, 20 / 3.6 * (h1 - h2)), txt)
        # the component method must agree with the spreadsheet's own arithmetic
        tex = server.call("turbine.expand", inlet={"p": "42 barg", "T": "410 degC", "flow": "20 t/h"},
                                    outlet_p="4 barg", efficiency=0.72)
        check("turbine power = turbine.expand power", close_to(got, tex.power, 1e-6), f"{got} vs {tex.power}")
        stl = server.state(p="4 barg", h=h1)
        got, txt = value("T_ld")
        check("let-down T = water.state(4 barg, h1).T", close_to(got, stl.T), f"{txt} vs {stl.T!r}")
        st_t = server.state(p="4 barg", T="165 degC")
        st_w = server.state(p="10 barg", T="105 degC")
        check("target h", close_to(value("h_tgt")[0], st_t.h), value("h_tgt")[1])
        check("spray water h", close_to(value("h_w")[0], st_w.h), value("h_w")[1])
        m_w = 6 * (h1 - st_t.h) / (st_t.h - st_w.h)
        got, txt = value("m_w")
        check("spray flow from the energy balance", close_to(got, m_w, 1e-9), txt)
        spray = server.call("desuperheater.spray", steam={"p": "4 barg", "h": h1, "flow": "6 t/h"},
                                           water={"p": "10 barg", "T": "105 degC"},
                                           target_T="165 degC")
        spray_th = spray.spray_flow * 3.6  # kg/s -> t/h
        check("spray flow = desuperheater.spray", close_to(got, spray_th, 1e-6), f"{got} vs {spray_th}")
        sat = server.call("water.saturation", p="4 barg")
        got, txt = value("Tsat2")
        check("Tsat(4 barg) = water.saturation", close_to(got, sat.T), f"{txt} vs {sat.T!r}")
        check("superheat after the desuperheater", close_to(value("sh_out")[0], 165 - sat.T), value("sh_out")[1])

        # sheet "Site totals": every result cell is balance.solve of the example site with the
        # sheet's inputs; changing an input re-solves the site
        tot = doc.Sheets.getByName("Site totals")
        tcell = lambda key: tot.getCellRangeByName(make_workbook.SITE_CELLS[key])  # noqa: E731
        import json as _json
        network = _json.loads(site_file.read_text(encoding="utf-8"))

        def site_check(mp_th, lp_th):
            net = _json.loads(_json.dumps(network))
            net["units"]["MP_users"]["demand"] = f"{mp_th} t/h"
            net["units"]["LP_users"]["demand"] = f"{lp_th} t/h"
            res = server.call("balance.solve", network=net, units="engineering")
            wants = {k: res.totals[k] for k in ("fuel_heat_input", "net_power", "process_steam",
                                                 "makeup_water", "vented_steam")}
            keys = {"fuel": "fuel_heat_input", "power": "net_power", "process": "process_steam",
                    "makeup": "makeup_water", "vented": "vented_steam"}
            for key, field in keys.items():
                c = tcell(key)
                got = float("nan") if c.getError() else c.getValue()
                check(f"Site totals {key} = balance.solve totals.{field} at MP {mp_th} t/h",
                      close_to(got, wants[field]), f"{c.getString()} vs {wants[field]!r}")
            c = tcell("bpt")
            want = res.units["BPT"]["power"]
            check(f"Site totals BPT power at MP {mp_th} t/h", close_to(c.getValue(), want),
                  f"{c.getString()} vs {want!r}")
            c = tcell("b2")
            want = res.streams["b2_steam"]["flow"]
            check(f"Site totals B2 steam at MP {mp_th} t/h", close_to(c.getValue(), want),
                  f"{c.getString()} vs {want!r}")
            return tcell("power").getValue()

        p0 = site_check(36, 43.2)
        tcell("mp_demand").setValue(44)
        doc.calculateAll()
        p1 = site_check(44, 43.2)
        check("a new demand changes the site answer", p0 != p1, f"{p0} -> {p1}")

        # a copy saved with the live port, for the reopening checks
        saved = doc_dir / "site-steam-saved.ods"
        doc.storeToURL(saved.as_uri(), (prop("FilterName", "calc8"),))

        # a refused connection gives an error cell, not a stale number
        cell("port").setValue(free_port())
        doc.calculateAll()
        check("a wrong port gives an error cell", cell("h1").getError() != 0,
              f"error {cell('h1').getError()}")
    finally:
        try:
            if doc is not None:
                doc.close(True)
        except Exception:
            pass
        try:
            desktop.terminate()  # noqa: F821 (defined once connected)
        except Exception:
            pass
        try:
            office.wait(timeout=15)
        except subprocess.TimeoutExpired:
            office.kill()
            office.wait(timeout=10)
        for lock in doc_dir.glob(".~lock.*#"):
            lock.unlink()
    try:
        saved = doc_dir / "site-steam-saved.ods"
        if check("a copy was saved", saved.is_file()):
            reopen_checks(saved, tmp, server)
    finally:
        server.close()
        shutil.rmtree(tmp, ignore_errors=True)
    print(f"{RESULTS['passed']} passed, {RESULTS['failed']} failed")
    return 0 if RESULTS["failed"] == 0 and RESULTS["passed"] > 0 else 1


if __name__ == "__main__":
    sys.exit(main())
