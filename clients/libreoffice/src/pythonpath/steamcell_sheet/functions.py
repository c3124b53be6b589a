"""The spreadsheet functions by role (see clients/functions.json and clients/README.md), over an
Engine. No UNO here: the Calc component (steamcell_calc.py) turns a CellError into the cell's
error value and a result into the cell's value.

Invariants: a function never returns a number for a bad input (it raises CellError with a
message naming the argument or the engine's one-line reason); answers of the engine are kept
per (method, params) while the same engine runs, so the cells asking h, s and T of one state
cost one call; `columns` makes one call for the whole range.
"""

from __future__ import annotations

import array
import base64
import json
import math
import sys
import threading
import urllib.parse

from . import cells
from .cells import CellError
from .engine import ENV_SITES, OPTIONS_PLACE, Engine, Settings
from .table import FUNCTIONS, PREFIX

CACHE_ENTRIES = 50_000
_LITTLE = sys.byteorder == "little"
VERSION = "0.1.0"

ROLE_OF = {}
for _f in FUNCTIONS:
    ROLE_OF[_f.name.lower()] = _f.role
    ROLE_OF[f"{PREFIX}.{_f.name}".lower()] = _f.role
    ROLE_OF[_f.role] = _f.role


class Sheet:
    """The functions, with the engine started on first use and restarted after a settings
    change or an engine exit. `settings_source()` returns the current Settings."""

    def __init__(self, settings_source):
        self._settings_source = settings_source
        self.engine = None
        self._engine_key = None
        self._cache = {}
        self._schema_methods = None
        self._lock = threading.RLock()

    # ------------------------------------------------------------------ the engine

    def _engine(self) -> Engine:
        with self._lock:
            settings: Settings = self._settings_source()
            key = settings.key()
            if self.engine is not None and (key != self._engine_key or not self.engine.alive()):
                self.close()
            if self.engine is None:
                engine = Engine(settings)
                try:
                    engine.start()
                except CellError:
                    engine.close()
                    raise
                self.engine, self._engine_key = engine, key
            return self.engine

    def close(self) -> None:
        with self._lock:
            if self.engine is not None:
                self.engine.close()
            self.engine = None
            self._engine_key = None
            self._cache.clear()
            self._schema_methods = None

    def call(self, method: str, params):
        """One engine call, answered from the cache when asked before (errors included)."""
        engine = self._engine()
        key = (method, json.dumps(params, sort_keys=True, separators=(",", ":")))
        hit = self._cache.get(key)
        if hit is None:
            try:
                hit = ("ok", engine.call(method, params))
            except CellError as e:
                if e.kind == "engine":
                    raise
                hit = ("err", e)
            if len(self._cache) >= CACHE_ENTRIES:
                self._cache.clear()
            self._cache[key] = hit
        if hit[0] == "err":
            raise hit[1]
        return hit[1]

    # ------------------------------------------------------------------ roles

    def property(self, quantity, name1, value1, name2, value2, options=None):
        q = cells.text_arg(quantity, "quantity")
        n1 = cells.text_arg(name1, "name1")
        n2 = cells.text_arg(name2, "name2")
        if n1 == n2:
            raise CellError(f"name1 and name2 are both '{n1}': give two different properties")
        given = {n1: cells.value_arg(value1, f"value1 ({n1})"),
                 n2: cells.value_arg(value2, f"value2 ({n2})")}
        params = cells.parse_options(options)
        _own(params, ("given",), "PROP")
        params["given"] = given
        return cells.pick(self.call("water.state", params), q, "the state")

    def saturation(self, quantity, name, value, options=None):
        q = cells.text_arg(quantity, "quantity")
        n = cells.text_arg(name, "name")
        if n not in ("p", "T"):
            raise CellError(f"name is '{n}': the saturation line is reached from p or T")
        params = cells.parse_options(options)
        _own(params, ("p", "T"), "SAT")
        params[n] = cells.value_arg(value, f"value ({n})")
        return cells.pick(self.call("water.saturation", params), q, "the saturation state")

    def method(self, method, result, pairs=()):
        m = cells.text_arg(method, "method")
        path = cells.text_arg(result, "result")
        params = cells.pairs_to_params(pairs)
        methods = self._methods()
        if methods is not None and m not in methods:
            raise CellError(f"unknown method '{m}'; the engine has: {', '.join(sorted(methods))}")
        return cells.pick(self.call(m, params), path, f"the result of {m}")

    def site(self, site, quantity, pairs=()):
        name = cells.text_arg(site, "site")
        q = cells.text_arg(quantity, "quantity")
        flat = [cells.scalar(p) for p in (pairs or ())]
        if len(flat) % 2:
            raise CellError(f"give specification, value pairs after the quantity; {len(flat)} "
                            "arguments leave the last one without a value")
        query = []
        for k in range(0, len(flat), 2):
            spec = cells.text_arg(flat[k], f"specification {k // 2 + 1}")
            value = cells.value_arg(flat[k + 1], f"the value of {spec}")
            query.append((spec, value if isinstance(value, str) else repr(float(value))))
        engine = self._engine()
        target = ("/site/" + urllib.parse.quote(name, safe="") + "/" + urllib.parse.quote(q, safe="")
                  + ("?" + urllib.parse.urlencode(query, quote_via=urllib.parse.quote) if query else ""))
        key = ("GET", target)
        hit = self._cache.get(key)
        if hit is None:
            status, text = engine.get_text(target)
            hit = self._cache[key] = (status, text)
        status, text = hit
        if status != 200:
            if engine.child is not None and status == 404 and "no site" in text:
                if engine.site_error:
                    text += f" (the engine started without its sites: {engine.site_error})"
                else:
                    text += (f"; register sites with the embedded engine in {OPTIONS_PLACE}, "
                             f"Sites: {name}=/path/to/site.json ({ENV_SITES})")
            raise CellError(text)
        try:
            return float(text)
        except ValueError:
            return text

    def columns(self, quantity, name1, values1, name2, values2, options=None):
        """(values, failures): one value per row (None for a failed row) and, per failed row,
        its message; shaped like the input (a column unless both inputs are rows)."""
        q = cells.text_arg(quantity, "quantity")
        n1 = cells.text_arg(name1, "name1")
        n2 = cells.text_arg(name2, "name2")
        if n1 == n2:
            raise CellError(f"name1 and name2 are both '{n1}': give two different properties")
        if values1 is None or values2 is None:
            raise CellError(f"values{1 if values1 is None else 2} is missing")
        c1, o1 = cells.column_values(values1, f"values1 ({n1})")
        c2, o2 = cells.column_values(values2, f"values2 ({n2})")
        if len(c1) != len(c2) and len(c1) > 1 and len(c2) > 1:
            raise CellError(f"values1 has {len(c1)} values and values2 has {len(c2)}: give ranges "
                            "of equal length (or one value for every row)")
        rows = max(len(c1), len(c2))
        if len(c1) == 1:
            c1 = c1 * rows
        if len(c2) == 1:
            c2 = c2 * rows
        orientation = o1 or o2 or "column"
        failures = {}
        good = []
        for i in range(rows):
            bad = _cell_problem(c1[i], n1) or _cell_problem(c2[i], n2)
            if bad:
                failures[i] = bad
            else:
                good.append(i)
        params = cells.parse_options(options)
        _own(params, ("given", "want", "encoding"), "COLUMN")
        out = [None] * rows
        if good:
            params["given"] = {n1: _column([c1[i] for i in good]), n2: _column([c2[i] for i in good])}
            params["want"] = [q]
            params["encoding"] = "f64le"
            res = self._engine().call("water.batch", params)
            col = res.get("columns", {}).get(q)
            if col is None:
                raise CellError(f"unknown quantity '{q}' for COLUMN")
            if isinstance(col, dict):
                values = array.array("d")
                values.frombytes(base64.b64decode(col["f64le"]))
                if not _LITTLE:
                    values.byteswap()
            else:
                values = [math.nan if v is None else v for v in col]
            for k, i in enumerate(good):
                out[i] = values[k]
            for e in res.get("failed_rows", []) or []:
                i = good[e["row"]]
                out[i] = None
                failures[i] = _row_message(e.get("message", "error"))
            for k, i in enumerate(good):
                v = out[i]
                if v is not None and not math.isfinite(v) and i not in failures:
                    out[i] = None
                    failures[i] = f"{q} is not defined for this row"
        return out, failures, orientation

    def info(self, item=None):
        what = "" if cells.is_missing(cells.scalar(item)) else cells.text_arg(item, "item").lower()
        if what == "addin":
            return f"steamcell Calc add-in {VERSION}"
        engine = self._engine()
        if what == "engine":
            return engine.describe()
        data = self.call("server.info", None)
        formulation = (data.get("formulations") or [{}])[0].get("name", "?")
        version = f"{data.get('name', 'steamcell')} {data.get('version', '')}".strip()
        if what == "version":
            return version
        if what == "formulation":
            return formulation
        if what == "digest":
            return data.get("digest", "")
        if what == "methods":
            return ", ".join(data.get("methods", []))
        if what:
            raise CellError(f"item '{what}' is not one of: version, formulation, digest, engine, "
                            "methods, addin")
        return f"{version}; {formulation}; validation digest {data.get('digest', '?')}"

    def why(self, function, args=()):
        """The message the named function gives for these arguments, or "" when it computes."""
        name = cells.text_arg(function, "function")
        role = ROLE_OF.get(name.lower())
        if role is None or role == "why":
            known = ", ".join(f.name for f in FUNCTIONS if f.role != "why")
            raise CellError(f"function '{name}' is not one of: {known}")
        args = list(args or ())
        try:
            if role == "columns":
                _values, failures, _o = self.columns(*_pad(args, 6))
                if failures:
                    first = min(failures)
                    more = len(failures) - 1
                    return (f"row {first + 1}: {failures[first]}"
                            + (f" (and {more} more rows)" if more else ""))
                return ""
            if role in ("method", "site"):
                head = _pad(args[:2], 2)
                getattr(self, role)(head[0], head[1], args[2:])
            elif role == "property":
                self.property(*_pad(args, 6))
            elif role == "saturation":
                self.saturation(*_pad(args, 4))
            elif role == "info":
                self.info(*_pad(args, 1))
        except CellError as e:
            return e.message
        return ""

    def _methods(self):
        """The method names of the engine's OpenRPC document (fetched once per engine)."""
        if self._schema_methods is None:
            try:
                doc = self.call("server.schema", None)
                self._schema_methods = {m["name"] for m in doc.get("methods", [])}
            except CellError as e:
                if e.kind == "engine":
                    raise
                return None
        return self._schema_methods


def _pad(args, n):
    args = list(args)[:n]
    return args + [None] * (n - len(args))


def _own(params: dict, names, fn: str) -> None:
    for n in names:
        if n in params:
            raise CellError(f"options: '{n}' is set by {PREFIX}.{fn}'s own arguments")


def _cell_problem(v, name: str):
    if v is None or (isinstance(v, str) and v.strip() == ""):
        return f"{name} is an empty cell"
    if isinstance(v, bool):
        return f"{name} is TRUE/FALSE, not a number"
    if isinstance(v, float) and not math.isfinite(v):
        return f"{name} is not a finite number"
    return None


def _column(values):
    """A packed column when every value is a number, else a JSON array (numbers and texts)."""
    if all(isinstance(v, float) for v in values):
        a = array.array("d", values)
        if not _LITTLE:
            a.byteswap()
        return {"f64le": base64.b64encode(a.tobytes()).decode("ascii")}
    return [v if isinstance(v, (int, float)) else str(v).strip() for v in values]


def _row_message(message: str) -> str:
    """The engine's batch message without its own 0-based "row N: " prefix."""
    if message.startswith("row ") and ": " in message:
        head, rest = message.split(": ", 1)
        if head[4:].isdigit():
            return rest
    return message
