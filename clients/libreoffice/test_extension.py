#!/usr/bin/python3
"""End-to-end test of the steamcell LibreOffice Calc extension: build, install, open, recalculate,
check, save, reopen elsewhere, check again. Headless, through Debian's python3-uno.

Run with Debian's /usr/bin/python3 (the one with `uno`), under `timeout`:
    STEAMCELL_BIN=target/debug/steamcell timeout 600 /usr/bin/python3 clients/libreoffice/test_extension.py

1. `build.sh` builds steamcell.oxt; `unopkg add` installs it into a throwaway profile (as root,
   unopkg refuses a per-user profile, so it runs as the user `nobody` there).
2. Profile A: the add-in's options are set through its own options page (the dialog and its
   handler, as Tools > Options shows them): the steamcell program's path and the site 'mill'.
   The example workbook imaginary-falls-mill.fods (only add-in functions) is opened,
   recalculated, and every computed cell is checked against the server's JSON-RPC answers and
   against IAPWS R7-97(2012) Table 5; it is saved as .ods.
3. The cases of clients/sheet-cases.json, each a formula over cells of a new sheet: values,
   and for each bad input an error value in its cell (only there) whose message SC.WHY gives.
4. Engines: a team server with a token set in the options (values equal, a wrong token and an
   unreachable server give #N/A with what to do), a missing program (#N/A, what to install),
   and the embedded engine stopped when LibreOffice terminates.
5. Profile B, fresh (no options, no trust settings; the program found on PATH, the site from
   STEAMCELL_SITES): the saved .ods reopens, recalculates and checks again; it holds no path,
   port or URL; killing LibreOffice (SIGKILL) still stops the engine (its stdin closes).

soffice gets a clean PATH: LibreOffice's embedded Python aborts when another Python (a venv or
pyenv one) comes first on PATH. Prints 'N passed, N failed'; exit status 1 on any failure.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.request
import zipfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
CLIENTS = HERE.parent
REPO = CLIENTS.parent
sys.path.insert(0, str(HERE))

import make_example  # noqa: E402

BIN = os.path.abspath(os.environ.get("STEAMCELL_BIN") or str(REPO / "target" / "debug" / "steamcell"))
SOFFICE = shutil.which("soffice") or "/usr/bin/soffice"
UNOPKG = shutil.which("unopkg") or "/usr/bin/unopkg"
SITE_FILE = REPO / "examples" / "site" / "site.json"
CASES = json.loads((CLIENTS / "sheet-cases.json").read_text(encoding="utf-8"))["cases"]
SPEC = json.loads((CLIENTS / "functions.json").read_text(encoding="utf-8"))
CLEAN_PATH = "/usr/bin:/bin"
ERR_VALUE, ERR_NA = 519, 32767

RESULTS = {"passed": 0, "failed": 0}


def check(name, ok, detail=""):
    RESULTS["passed" if ok else "failed"] += 1
    print(("PASS " if ok else "FAIL ") + name + (f": {detail}" if detail and not ok else ""), flush=True)
    return ok


def close_to(a, b, rel=1e-12, abs_=0.0):
    return isinstance(a, float) and isinstance(b, float) and abs(a - b) <= max(rel * abs(b), abs_)


def free_port():
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


# --------------------------------------------------------------------------- reference server


class Server:
    """`steamcell serve` on a free port, for the reference answers (and as a team server)."""

    def __init__(self, *args, token=None):
        env = {k: v for k, v in os.environ.items() if not k.startswith("STEAMCELL_")}
        if token:
            env["STEAMCELL_TOKEN"] = token
        self.token = token
        self.proc = subprocess.Popen([BIN, "serve", "--listen", "127.0.0.1:0", *args], env=env,
                                     stdout=subprocess.PIPE, stderr=subprocess.DEVNULL)
        line = self.proc.stdout.readline().decode()
        self.url = "http://" + line.split("http://", 1)[1].split()[0]

    def call(self, method, params=None):
        body = json.dumps({"jsonrpc": "2.0", "id": 1, "method": method, "params": params or {}}).encode()
        headers = {"Content-Type": "application/json"}
        if self.token:
            headers["Authorization"] = "Bearer " + self.token
        with urllib.request.urlopen(urllib.request.Request(self.url, body, headers), timeout=60) as r:
            answer = json.loads(r.read())
        if "error" in answer:
            raise RuntimeError(answer["error"]["message"])
        return answer["result"]

    def close(self):
        self.proc.terminate()
        self.proc.wait(10)


def pick(result, path):
    at = result
    for p in path.split("."):
        at = at[int(p)] if isinstance(at, list) else at[p]
    return at


def site_value(ref, changes, quantity):
    net = json.loads(SITE_FILE.read_text(encoding="utf-8"))
    params = {}
    for path, value in changes.items():
        if path == "unit":  # the unit of the answer: a units key of its field name
            params["units"] = {quantity.split(".")[-1]: value}
            continue
        at = net
        parts = path.split(".")
        for p in parts[:-1]:
            at = at[p]
        at[parts[-1]] = value
    res = ref.call("balance.solve", dict(params, network=net))
    return pick(res, quantity if "." in quantity else "totals." + quantity)


# --------------------------------------------------------------------------- LibreOffice


def install(oxt: Path, profile: Path) -> bool:
    """`unopkg add` into a throwaway profile; as root, as the user nobody (see the module doc)."""
    profile.mkdir(parents=True, exist_ok=True)
    env = {"PATH": CLEAN_PATH, "HOME": str(profile), "LANG": "C.UTF-8"}
    cmd = [UNOPKG, "add", f"-env:UserInstallation={profile.as_uri()}", str(oxt)]
    if os.geteuid() == 0:
        subprocess.run(["chown", "-R", "nobody:nogroup", str(profile)], check=True)
        cmd = ["setpriv", "--reuid=nobody", "--regid=nogroup", "--clear-groups"] + cmd
    r = subprocess.run(cmd, env=env, capture_output=True, text=True, timeout=180)
    return check(f"unopkg add steamcell.oxt into {profile.name}", r.returncode == 0, r.stdout + r.stderr)


def prop(name, value):
    import uno  # noqa: F401
    from com.sun.star.beans import PropertyValue
    p = PropertyValue()
    p.Name, p.Value = name, value
    return p


class Office:
    """soffice on a profile, with a clean PATH plus `env`, driven over a UNO socket."""

    def __init__(self, profile: Path, env: dict, path_prefix: str = ""):
        import uno
        port = free_port()
        full_env = {k: v for k, v in os.environ.items()
                    if not k.startswith("STEAMCELL_") and k not in ("PYTHONPATH", "PYTHONHOME", "VIRTUAL_ENV")}
        full_env["PATH"] = (path_prefix + ":" if path_prefix else "") + CLEAN_PATH
        full_env.update(env)
        self.proc = subprocess.Popen(
            [SOFFICE, f"-env:UserInstallation={profile.as_uri()}", "--headless", "--invisible",
             "--nologo", "--norestore", "--nodefault", "--nolockcheck",
             f"--accept=socket,host=127.0.0.1,port={port};urp;"],
            env=full_env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
        local = uno.getComponentContext()
        resolver = local.ServiceManager.createInstanceWithContext("com.sun.star.bridge.UnoUrlResolver", local)
        deadline, last = time.time() + 90, None
        while time.time() < deadline:
            try:
                self.ctx = resolver.resolve(f"uno:socket,host=127.0.0.1,port={port};urp;StarOffice.ComponentContext")
                break
            except Exception as e:  # NoConnectException until soffice listens
                last = e
                time.sleep(0.3)
        else:
            raise RuntimeError(f"could not connect to soffice: {last}")
        self.smgr = self.ctx.ServiceManager
        self.desktop = self.smgr.createInstanceWithContext("com.sun.star.frame.Desktop", self.ctx)

    def load(self, path: Path):
        return self.desktop.loadComponentFromURL(path.as_uri(), "_blank", 0, (prop("Hidden", True),))

    def new_sheet_doc(self):
        return self.desktop.loadComponentFromURL("private:factory/scalc", "_blank", 0, (prop("Hidden", True),))

    def config(self, path, update=False):
        provider = self.smgr.createInstanceWithContext("com.sun.star.configuration.ConfigurationProvider", self.ctx)
        kind = "ConfigurationUpdateAccess" if update else "ConfigurationAccess"
        return provider.createInstanceWithArguments(f"com.sun.star.configuration.{kind}", (prop("nodepath", path),))

    def terminate(self):
        try:
            self.desktop.terminate()
        except Exception:
            pass
        try:
            self.proc.wait(timeout=30)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait(10)

    def kill(self):
        os.killpg(self.proc.pid, signal.SIGKILL)
        self.proc.wait(10)


def cell_result(cell):
    """A formula cell's result: ("error", code), ("value", float) or ("text", str)."""
    err = cell.getError()
    if err:
        return "error", err
    if cell.getPropertyValue("FormulaResultType2") == 2:  # com.sun.star.sheet.FormulaResult.STRING
        return "text", cell.getString()
    return "value", cell.getValue()


# --------------------------------------------------------------------------- the options page


def set_options_through_page(office: Office, values: dict) -> bool:
    """Fills the add-in's options page (the dialog Tools > Options shows) and presses OK, by the
    page's own handler; True when it worked."""
    leaf = office.config("/org.openoffice.Office.OptionsDialog/Nodes/Calc/Leaves/org.steamcell.calc.options")
    url = leaf.getByName("OptionsPage")
    check("the options page is registered under LibreOffice Calc", url.endswith("/dialogs/Options.xdl"), url)
    if url.startswith("vnd.sun.star.expand:"):
        expander = office.ctx.getValueByName("/singletons/com.sun.star.util.theMacroExpander")
        import urllib.parse
        url = expander.expandMacros(urllib.parse.unquote(url[len("vnd.sun.star.expand:"):]))
    handler = office.smgr.createInstanceWithContext(leaf.getByName("EventHandlerService"), office.ctx)
    check("the options page's handler is the add-in's", handler is not None)
    doc = office.new_sheet_doc()
    try:
        parent = doc.getCurrentController().getFrame().getContainerWindow()
        provider = office.smgr.createInstanceWithContext("com.sun.star.awt.ContainerWindowProvider", office.ctx)
        window = provider.createContainerWindow(url, "", parent.getPeer() if hasattr(parent, "getPeer") else parent, handler)
        handler.callHandlerMethod(window, "initialize", "external_event")
        for name, value in values.items():
            window.getControl(name).getModel().Text = value
        ok = handler.callHandlerMethod(window, "ok", "external_event")
        window.dispose()
    finally:
        doc.close(True)
    engine = office.config("/org.steamcell.calc.Settings/Engine")
    stored = {n: engine.getByName(n) for n in values}
    return check("the options page stores the options in the profile", ok and stored == values, f"{stored}")


def check_function_wizard(office: Office) -> None:
    """The Function Wizard's list (com.sun.star.sheet.FunctionDescriptions) shows every function
    with the description and parameter help of clients/functions.json."""
    descriptions = office.smgr.createInstanceWithContext("com.sun.star.sheet.FunctionDescriptions", office.ctx)
    shown = {}
    for i in range(descriptions.getCount()):
        entry = {p.Name: p.Value for p in descriptions.getByIndex(i)}
        shown[entry.get("Name", "").upper()] = entry
    for f in SPEC["functions"]:
        name = f"{SPEC['prefix']}.{f['name']}"
        entry = shown.get(name)
        if not check(f"Function Wizard lists {name}", entry is not None, "not listed"):
            continue
        check(f"Function Wizard: {name}'s description", entry.get("Description") == f["description"],
              repr(entry.get("Description")))
        args = [(a.Name, a.Description) for a in entry.get("Arguments", ())]
        want = [(p["name"], p["help"] + (" (optional)" if p.get("optional") else "")) for p in f["params"]]
        check(f"Function Wizard: {name}'s parameters and their help", args == want, f"{args}")


def set_options(office: Office, values: dict) -> None:
    access = office.config("/org.steamcell.calc.Settings/Engine", update=True)
    for name, value in values.items():
        access.replaceByName(name, value)
    access.commitChanges()


# --------------------------------------------------------------------------- the example workbook


def check_example(doc, ref: Server, label: str) -> None:
    mill = doc.Sheets.getByName("Mill")
    got = {}
    for key, row, name, _f, _u, _n, expect in make_example.MILL:
        cell = mill.getCellRangeByName(f"B{row}")
        kind, value = cell_result(cell)
        got[key] = value
        where = f"[{label}] Mill B{row} {name}"
        if kind == "error":
            check(where, False, f"error {value}")
            continue
        if "rpc" in expect:
            method, params, path = expect["rpc"]
            params = json.loads(json.dumps(params).replace('"=h1"', repr(got["h1"])))
            want = pick(ref.call(method, params), path)
            check(f"{where} = {method} {path}", close_to(value, float(want)), f"{value!r} vs {want!r}")
        elif "number" in expect:
            check(f"{where} = {expect['number']} (IAPWS R7-97(2012) Table 5)",
                  close_to(value, expect["number"], 0, expect["abs"]), repr(value))
        elif "text" in expect:
            check(f"{where} says '{expect['text']}'", kind == "text" and expect["text"] in value, repr(value))
        elif "calc" in expect:
            env = {k: v for k, v in got.items() if isinstance(v, float)}
            want = eval(expect["calc"], {"__builtins__": {}}, env)  # noqa: S307 - our own table
            check(f"{where} = {expect['calc']}", close_to(value, want, 1e-12, 1e-12), f"{value!r} vs {want!r}")
    hist = doc.Sheets.getByName("Historian")
    for i, (p, pu, t, tu) in enumerate(make_example.HISTORIAN_ROWS):
        r = make_example.HIST_FIRST + i
        for col, _h, qty in make_example.HISTORIAN:
            kind, value = cell_result(hist.getCellRangeByName(f"{col}{r}"))
            if isinstance(t, float):
                want = pick(ref.call("water.state", {"given": {"p": f"{p!r} {pu}", "T": f"{t!r} {tu}"}}), qty)
                check(f"[{label}] Historian {col}{r} = water.state {qty}", kind == "value" and close_to(value, want),
                      f"{kind} {value!r} vs {want!r}")
            else:
                check(f"[{label}] Historian {col}{r}: the faulty reading gives #VALUE! in its own cell",
                      (kind, value) == ("error", ERR_VALUE), f"{kind} {value}")
        kind, why = cell_result(hist.getCellRangeByName(f"G{r}"))
        if isinstance(t, float):
            check(f"[{label}] Historian G{r}: SC.WHY is empty", (kind, why) == ("text", ""), repr(why))
        else:
            check(f"[{label}] Historian G{r}: SC.WHY names the faulty reading",
                  kind == "text" and "'n/a degC' is not a number" in why, repr(why))
    site = doc.Sheets.getByName("Site")
    changes = {path: f"{v!r} {u}" for _k, _r, _l, v, u, path in make_example.SITE_INPUTS}
    for key, row, name, quantity, _u in make_example.SITE:
        kind, value = cell_result(site.getCellRangeByName(f"B{row}"))
        want = site_value(ref, changes, quantity)
        check(f"[{label}] Site B{row} {name} = balance.solve {quantity}", kind == "value" and close_to(value, want),
              f"{kind} {value!r} vs {want!r}")


# --------------------------------------------------------------------------- the cases


def col_name(i: int) -> str:
    return chr(ord("A") + i)


def run_cases(office: Office, ref: Server) -> None:
    doc = office.new_sheet_doc()
    sheet = doc.Sheets.getByIndex(0)
    scratch_col = 40  # ranges go far right
    rows = []
    row = 1
    for case in CASES:
        if case.get("skip_libreoffice"):
            print(f"SKIP {case['name']}: {case.get('why_libreoffice')}")
            continue
        refs = []
        for k, arg in enumerate(case["args"]):
            addr = f"{col_name(3 + k)}{row}"
            if isinstance(arg, dict) and "range" in arg:
                block = arg["range"]
                top = row
                for i, r in enumerate(block):
                    for j, v in enumerate(r):
                        c = sheet.getCellByPosition(scratch_col + j, top - 1 + i)
                        if isinstance(v, dict):
                            continue  # an empty cell
                        if isinstance(v, str):
                            c.setString(v)
                        else:
                            c.setValue(v)
                first = sheet.getCellByPosition(scratch_col, top - 1).AbsoluteName.split(".")[-1].replace("$", "")
                last = sheet.getCellByPosition(scratch_col + len(block[0]) - 1, top - 1 + len(block) - 1)
                last = last.AbsoluteName.split(".")[-1].replace("$", "")
                refs.append(f"{first}:{last}")
                scratch_col += 3
                continue
            cell = sheet.getCellRangeByName(addr)
            if isinstance(arg, dict) and arg.get("empty"):
                pass
            elif isinstance(arg, str):
                cell.setString(arg)
            else:
                cell.setValue(arg)
            refs.append(addr)
        fn = f"{SPEC['prefix']}.{case['fn']}"
        height = len(case["column"]) if "column" in case else 1
        formula = f"={fn}({';'.join(refs)})"
        if "column" in case:
            sheet.getCellRangeByName(f"A{row}:A{row + height - 1}").setArrayFormula(formula)
        else:
            sheet.getCellRangeByName(f"A{row}").setFormula(formula)
        sheet.getCellRangeByName(f"B{row}").setFormula(f'={SPEC["prefix"]}.WHY("{case["fn"]}";{";".join(refs)})'
                                                       if refs else f'={SPEC["prefix"]}.WHY("{case["fn"]}")')
        rows.append((case, row, height))
        row += max(height, 1) + 1
    doc.calculateAll()
    for case, row, height in rows:
        name = f"case '{case['name']}'"
        kind, value = cell_result(sheet.getCellRangeByName(f"A{row}"))
        wkind, why = cell_result(sheet.getCellRangeByName(f"B{row}"))
        if "rpc" in case:
            e = case["rpc"]
            want = pick(ref.call(e["method"], e["params"]), e["path"])
            check(f"{name} = {e['method']} {e['path']}", kind == "value" and close_to(value, float(want)),
                  f"{kind} {value!r} vs {want!r}")
            check(f"{name}: SC.WHY is empty", (wkind, why) == ("text", ""), repr(why))
        elif "number" in case:
            check(f"{name} = {case['number']} ({case['source']})",
                  kind == "value" and close_to(value, case["number"], 0, case["abs"]), f"{kind} {value!r}")
        elif "site" in case:
            s = case["site"]
            want = site_value(ref, s["changes"], s["quantity"])
            check(f"{name} = balance.solve", kind == "value" and close_to(value, want), f"{kind} {value!r} vs {want!r}")
        elif "text" in case:
            got = value if kind == "text" else ""
            check(f"{name} says '{case['text']}'", case["text"] in got, f"{kind} {value!r}")
        elif "error" in case:
            fragment = case.get("error_libreoffice", case["error"])
            check(f"{name}: #VALUE! in its cell", (kind, value) == ("error", ERR_VALUE), f"{kind} {value!r}")
            check(f"{name}: SC.WHY says '{fragment}'", wkind == "text" and fragment in why, repr(why))
        elif "column" in case:
            first_error = None
            for i, expect in enumerate(case["column"]):
                k, v = cell_result(sheet.getCellRangeByName(f"A{row + i}"))
                if "rpc" in expect:
                    e = expect["rpc"]
                    want = pick(ref.call(e["method"], e["params"]), e["path"])
                    check(f"{name} row {i + 1} = {e['method']} {e['path']}", k == "value" and close_to(v, float(want)),
                          f"{k} {v!r} vs {want!r}")
                else:
                    check(f"{name} row {i + 1}: #VALUE! in its own cell only", (k, v) == ("error", ERR_VALUE), f"{k} {v!r}")
                    if first_error is None:
                        first_error = (i, expect["error"])
            if first_error:
                i, fragment = first_error
                check(f"{name}: SC.WHY names row {i + 1}: '{fragment}'",
                      wkind == "text" and why.startswith(f"row {i + 1}: ") and fragment in why, repr(why))
    # the same function through the name Calc stores in files (api_name)
    api = {f["name"]: f["api_name"] for f in SPEC["functions"]}
    c = sheet.getCellRangeByName("A200")
    c.setFormula(f'={api["PROP"]}("h";"p";"3 MPa";"T";"300 K")')
    doc.calculateAll()
    check("api_name ORG.STEAMCELL.CALC.FUNCTIONS.PROP works in setFormula",
          close_to(c.getValue(), 115.331273, 0, 5e-7), c.getString())
    check("getFormula gives the api_name", c.getFormula().startswith("=" + api["PROP"]), c.getFormula())
    doc.close(True)


# --------------------------------------------------------------------------- engines


def engine_pid(text: str):
    m = re.search(r"\(pid (\d+),", text or "")
    return int(m.group(1)) if m else None


def gone(pid: int, within: float = 10.0) -> bool:
    deadline = time.time() + within
    while time.time() < deadline:
        try:
            os.kill(pid, 0)
        except ProcessLookupError:
            return True
        try:  # a zombie of ours counts as gone
            if Path(f"/proc/{pid}/stat").read_text().split()[2] == "Z":
                return True
        except OSError:
            return True
        time.sleep(0.2)
    return False


def one_cell(office: Office, formula: str):
    doc = office.new_sheet_doc()
    try:
        sheet = doc.Sheets.getByIndex(0)
        c = sheet.getCellRangeByName("A1")
        c.setFormula(formula)
        sheet.getCellRangeByName("B1").setFormula('=SC.WHY("PROP";"h";"p";"3 MPa";"T";"300 K")')
        sheet.getCellRangeByName("C1").setFormula('=SC.INFO("engine")')
        doc.calculateAll()
        return cell_result(c), cell_result(sheet.getCellRangeByName("B1"))[1], cell_result(sheet.getCellRangeByName("C1"))[1]
    finally:
        doc.close(True)


def check_engines(office: Office, ref: Server) -> None:
    table5 = '=SC.PROP("h";"p";"3 MPa";"T";"300 K")'
    (kind, value), _why, engine = one_cell(office, table5)
    pid = engine_pid(engine)
    check("embedded engine: the option's program runs as a child", pid is not None and BIN in engine, engine)
    token = "team-token-" + os.urandom(6).hex()
    team = Server("--site", f"mill={SITE_FILE}", token=token)
    try:
        set_options(office, {"ServerUrl": team.url, "ServerToken": token})
        (kind, value), why, engine = one_cell(office, table5)
        check("team server from the options: Table 5 h", kind == "value" and close_to(value, 115.331273, 0, 5e-7),
              f"{kind} {value!r} {why}")
        check("team server in use", engine == f"team server {team.url}", engine)
        check("switching to the team server stops the embedded engine", pid is not None and gone(pid), str(pid))
        # A pinned digest: the right one computes, another refuses every cell (#N/A) and
        # SC.WHY names both digests.
        digest = team.call("server.info")["digest"]
        set_options(office, {"ExpectDigest": digest})
        (kind, value), why, _e = one_cell(office, table5)
        check("pinned to the team server's digest: Table 5 h", kind == "value" and close_to(value, 115.331273, 0, 5e-7),
              f"{kind} {value!r} {why}")
        wrong = "if97-0000000000000000-259of259"
        set_options(office, {"ExpectDigest": wrong})
        (kind, value), why, _e = one_cell(office, table5)
        check("pinned to another digest: #N/A", (kind, value) == ("error", ERR_NA), f"{kind} {value}")
        check("pinned to another digest: SC.WHY names both digests", wrong in why and digest in why, why)
        set_options(office, {"ExpectDigest": ""})
        set_options(office, {"ServerToken": "wrong"})
        (kind, value), why, _e = one_cell(office, table5)
        check("team server, wrong token: #N/A", (kind, value) == ("error", ERR_NA), f"{kind} {value}")
        check("team server, wrong token: SC.WHY says to set the token", "refused the token" in why, why)
        closed = f"http://127.0.0.1:{free_port()}"
        set_options(office, {"ServerUrl": closed, "ServerToken": ""})
        (kind, value), why, _e = one_cell(office, table5)
        check("unreachable server: #N/A", (kind, value) == ("error", ERR_NA), f"{kind} {value}")
        check("unreachable server: SC.WHY says to start it", f"cannot reach the steamcell server at {closed}" in why
              and "steamcell serve" in why, why)
    finally:
        team.close()
    set_options(office, {"ServerUrl": "", "EngineBinary": "/nonexistent/steamcell"})
    (kind, value), why, _e = one_cell(office, table5)
    check("missing program: #N/A", (kind, value) == ("error", ERR_NA), f"{kind} {value}")
    check("missing program: SC.WHY says what to install", "does not exist: install steamcell" in why, why)
    set_options(office, {"EngineBinary": BIN})
    (kind, value), _why, engine = one_cell(office, table5)
    check("embedded engine again", kind == "value" and close_to(value, 115.331273, 0, 5e-7), f"{kind} {value}")
    pid = engine_pid(engine)
    office.terminate()
    check("the embedded engine stops when LibreOffice terminates", pid is not None and gone(pid), str(pid))


# --------------------------------------------------------------------------- main


def main() -> int:
    if not Path(BIN).is_file():
        print(f"steamcell binary not found at {BIN}\n0 passed, 1 failed")
        return 1
    tmp = Path(tempfile.mkdtemp(prefix="steamcell-oxt-"))
    os.chmod(tmp, 0o755)
    ref = None
    office = None
    try:
        check("committed example workbook is what make_example.py writes",
              make_example.OUT.read_text(encoding="utf-8") == make_example.document(), "run make_example.py")
        build = subprocess.run(["bash", str(HERE / "build.sh"), str(tmp / "oxt")], capture_output=True, text=True)
        if not check("build.sh writes steamcell.oxt", build.returncode == 0, build.stdout + build.stderr):
            return 1
        oxt = tmp / "oxt" / "steamcell.oxt"
        os.chmod(tmp / "oxt", 0o755)
        os.chmod(oxt, 0o644)
        names = zipfile.ZipFile(oxt).namelist()
        check("the .oxt holds the type library, the add-in and its configuration",
              {"XFunctions.rdb", "steamcell_calc.py", "CalcAddIns.xcu", "Settings.xcs"} <= set(names), str(names))
        ref = Server("--site", f"mill={SITE_FILE}")
        doc_dir = tmp / "doc"
        doc_dir.mkdir()
        example = doc_dir / "imaginary-falls-mill.fods"
        shutil.copy(make_example.OUT, example)
        saved = doc_dir / "imaginary-falls-mill-saved.ods"

        # --- profile A: options set on the add-in's options page
        profile_a = tmp / "profile-a"
        if not install(oxt, profile_a):
            return 1
        office = Office(profile_a, {})
        check_function_wizard(office)
        set_options_through_page(office, {"EngineBinary": BIN, "Sites": f"mill={SITE_FILE}"})
        doc = office.load(example)
        doc.calculateAll()
        check_example(doc, ref, "profile A")
        doc.storeToURL(saved.as_uri(), (prop("FilterName", "calc8"),))
        doc.close(True)
        run_cases(office, ref)
        check_engines(office, ref)
        office = None

        with zipfile.ZipFile(saved) as z:
            content = z.read("content.xml").decode("utf-8")
        content = re.sub(r'xmlns:[\w-]+="[^"]*"', "", content)  # the ODF namespace URIs
        check("the saved workbook holds the functions", "ORG.STEAMCELL.CALC.FUNCTIONS.PROP" in content)
        found = [s for s in ("127.0.0.1", "http://", "localhost", BIN, str(SITE_FILE)) if s in content]
        check("the saved workbook holds no path, port or URL", not found,
              "; ".join(content[max(0, content.find(s) - 80):content.find(s) + 40] for s in found))

        # --- profile B: fresh, no options, no trust settings; program on PATH, site from the env
        profile_b = tmp / "profile-b"
        if not install(oxt, profile_b):
            return 1
        bin_dir = tmp / "bin"
        bin_dir.mkdir()
        (bin_dir / "steamcell").symlink_to(BIN)
        registry = profile_b / "user" / "registrymodifications.xcu"
        trust = registry.read_text(encoding="utf-8") if registry.exists() else ""
        check("profile B has no trusted locations and no add-in options",
              "SecureURL" not in trust and "org.steamcell.calc.Settings" not in trust)
        office = Office(profile_b, {"STEAMCELL_SITES": f"mill={SITE_FILE}"}, path_prefix=str(bin_dir))
        doc = office.load(saved)
        doc.calculateAll()
        check_example(doc, ref, "profile B, reopened")
        mill = doc.Sheets.getByName("Mill")
        info = mill.getCellRangeByName("A40")
        info.setFormula('=SC.INFO("engine")')
        doc.calculateAll()
        engine = info.getString()
        check("profile B: the program found on PATH", str(bin_dir / "steamcell") in engine, engine)
        pid = engine_pid(engine)
        doc.close(True)
        office.kill()
        office = None
        check("the embedded engine stops when LibreOffice is killed (SIGKILL)", pid is not None and gone(pid), str(pid))
    finally:
        if office is not None:
            try:
                office.kill()
            except Exception:
                pass
        if ref is not None:
            ref.close()
        shutil.rmtree(tmp, ignore_errors=True)
    print(f"{RESULTS['passed']} passed, {RESULTS['failed']} failed")
    return 0 if RESULTS["failed"] == 0 and RESULTS["passed"] > 0 else 1


if __name__ == "__main__":
    sys.exit(main())
