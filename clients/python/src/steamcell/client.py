"""The steamcell client: ``connect()``, generic ``call()``, ``state()``, ``batch()`` and one
generated method per OpenRPC method (``c.turbine_expand(...)`` or ``c.turbine.expand(...)``).

Numbers go to the server as given; they are read in the request's units (``units``: a preset,
default "engineering": MPa, degC, kJ/kg, kJ/(kg K), kg/s, kW; or a dict of units per quantity
such as ``{"preset": "bar", "p": "barg", "flow": "t/h"}``). Strings carry their own unit
("42 barg", "410 degC"). Results are in the request's units and list them.
"""

from __future__ import annotations

import math
import os
import re
import sys
import urllib.parse
from typing import Any, Dict, Iterable, List, Optional, Sequence, Tuple, Union

from . import errors, openrpc, transport
from .records import State, wrap

STATE_KEYS = ("p", "T", "h", "s", "u", "v", "rho", "x")
DEFAULT_WANT = ["T", "p", "h", "s", "v", "x"]


class _Namespace:
    """``c.turbine`` -> object whose ``expand(...)`` calls ``turbine.expand``."""

    def __init__(self, client: "Client", prefix: str):
        self._client, self._prefix = client, prefix

    def __getattr__(self, name: str):
        full = f"{self._prefix}.{name}"
        fn = WRAPPERS.get(full)
        if fn is None:
            raise AttributeError(f"no method {full} in the OpenRPC document")
        return fn.__get__(self._client, Client)

    def __dir__(self):
        return [m.split(".", 1)[1] for m in WRAPPERS if m.startswith(self._prefix + ".")]


class Client:
    """A connection to a steamcell server (HTTP or stdio). Use :func:`connect`."""

    def __init__(self, tr):
        self._tr = tr
        self.url: Optional[str] = getattr(tr, "url", None)
        self.banner: Optional[str] = getattr(tr, "banner", None)
        #: The packed route the last :meth:`batch` took: "/columns", "water.batch f64le" or
        #: None (the JSON path).
        self.last_packed_route: Optional[str] = None

    # -- life cycle
    def close(self) -> None:
        """Closes the connection and stops a server this client started."""
        self._tr.close()

    def __enter__(self) -> "Client":
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def __repr__(self) -> str:
        where = self.url or "stdio"
        return f"<steamcell.Client {where}>"

    def __getattr__(self, name: str):
        if any(m.startswith(name + ".") for m in WRAPPERS):
            return _Namespace(self, name)
        raise AttributeError(name)

    # -- generic
    def call(self, method: str, /, **params: Any) -> Any:
        """Calls any JSON-RPC method with keyword params; returns the decoded result.

        Objects come back as Records (dicts with attribute access), states as State objects.
        Raises a :class:`steamcell.Error` subclass for an error answer.
        """
        return wrap(self.call_raw(method, params))

    def call_raw(self, method: str, params: Optional[Dict[str, Any]] = None) -> Any:
        """Like call() but with a params dict and a plain JSON result."""
        req = {"jsonrpc": "2.0", "id": transport.next_id(), "method": method,
               "params": _jsonable(params or {})}
        resp = self._tr.send(req)
        if "error" in resp and resp["error"] is not None:
            raise errors.from_rpc(resp["error"])
        if "result" not in resp:
            raise errors.TransportError(f"answer without result or error: {resp!r}")
        return resp["result"]

    # -- conveniences
    def state(self, units: Any = None, ambient: Any = None, **kwargs: Any) -> State:
        """One state from two properties, e.g. ``c.state(p="42 barg", T="410 degC")``.

        State keys (p, T, h, s, u, v, rho, x) form ``given``; other keywords (formulation,
        backward_only, metastable, prefer) are passed on. Bare numbers and the answer are in
        ``units``: a preset name or a dict of units per quantity, e.g. ``{"p": "barg", "T":
        "degC"}``.
        """
        given = {k: v for k, v in kwargs.items() if k in STATE_KEYS}
        params: Dict[str, Any] = {k: v for k, v in kwargs.items() if k not in STATE_KEYS}
        params["given"] = given
        if units is not None:
            params["units"] = units
        if ambient is not None:
            params["ambient"] = ambient
        result = self.call_raw("water.state", params)
        return State(wrap(result))

    def balance(self, network: Any, units: Optional[str] = None, **opts: Any):
        """Solves a site steam balance (``balance.solve``); see :mod:`steamcell.balance`."""
        from . import balance as _b
        return _b.solve(self, network, units=units, **opts)

    def info(self) -> Any:
        """``server.info``."""
        return self.call("server.info")

    def schema(self) -> Any:
        """The server's OpenRPC document (``server.schema``) as plain JSON."""
        return self.call_raw("server.schema", {})

    def health(self) -> str:
        """``GET /health`` text (HTTP transports only)."""
        status, text = self._http().get("/health")
        if status != 200:
            raise errors.TransportError(f"/health answered {status}: {text}")
        return text.strip()

    def cell(self, quantity: str, units: Any = None, unit: Optional[str] = None,
             **given: Any) -> float:
        """One number from the spreadsheet endpoint ``GET /cell/{quantity}?...``: ``units`` a
        preset or a dict of units per quantity, ``unit`` the unit of the answer itself."""
        query = dict(given)
        if units:
            query["units"] = _units_text(units)
        if unit:
            query["unit"] = unit
        path = f"/cell/{urllib.parse.quote(quantity)}?" + urllib.parse.urlencode(
            {k: str(v) for k, v in query.items()}, quote_via=urllib.parse.quote)
        status, text = self._http().get(path)
        if status != 200:
            raise errors.Error(text.strip() or f"HTTP {status}", code=None, data={"status": status})
        return float(text)

    def site(self, name: str, quantity: str, changes: Optional[Dict[str, Any]] = None,
             units: Any = None, unit: Optional[str] = None) -> float:
        """One number of a site registered with ``serve --site NAME=FILE``, from
        ``GET /site/{name}/{quantity}?...``: ``quantity`` is a site total (``"net_power"``) or a
        dotted path into the ``balance.solve`` result (``"units.BPT.power"``); ``changes`` maps
        specification paths to values, e.g. ``{"units.MP_users.demand": "40 t/h"}``; ``units``
        a preset or a dict of units per quantity, ``unit`` the unit of the answer ("MW")."""
        query = {k: str(v) for k, v in (changes or {}).items()}
        if units:
            query["units"] = _units_text(units)
        if unit:
            query["unit"] = unit
        path = (f"/site/{urllib.parse.quote(name)}/{urllib.parse.quote(quantity)}?"
                + urllib.parse.urlencode(query, quote_via=urllib.parse.quote))
        status, text = self._http().get(path)
        if status != 200:
            raise errors.Error(text.strip() or f"HTTP {status}", code=None, data={"status": status})
        return float(text)

    def _http(self) -> transport.HttpTransport:
        if not isinstance(self._tr, transport.HttpTransport):
            raise errors.TransportError("this needs an HTTP connection, not stdio")
        return self._tr

    def batch(self, data: Any, given: Optional[Dict[str, Any]] = None, units: Any = None,
              want: Optional[Sequence[str]] = None, chunk: Optional[int] = None,
              progress: bool = True, packed: Optional[bool] = None,
              unit_suffix: bool = False, pint: bool = False, **opts: Any) -> Any:
        """Properties for many states (historian columns) through ``water.batch``.

        ``data``: a pandas, polars or Dask DataFrame, a pyarrow Table, an xarray Dataset or a
        dict of lists or numpy arrays. ``given`` maps a state key to a column name, e.g.
        ``{"p": "p_bar", "T": "T_C"}``, or to ``(column, unit)`` for a column of numbers in that
        unit, e.g. ``{"p": ("p_barg", "barg"), "T": ("T_C", "degC")}``; a pint-pandas column
        brings its own unit. Without ``given`` the columns named like state keys are used.
        Untagged numbers are read in ``units``: a preset name (default "engineering") or an
        object with units per quantity, which also sets each result column's unit, e.g.
        ``{"preset": "bar", "h": "Btu/lb", "p": "psig"}``. Rows go in chunks of ``chunk`` with
        a progress bar (tqdm if installed, else a line on stderr) when ``progress``.

        Returns the same kind of table as ``data`` (a dict of numpy arrays for a dict when numpy
        is installed, else of lists) with one column per ``want`` plus ``errors`` (None or the
        row's message); with ``expect="vapour"`` (or "liquid", "wet", "supercritical") also
        ``flagged`` (None or the message of a row solved in another phase, whose values are
        kept). A bad row gives NaN and its error; only a bad request as a whole
        raises. Each column's unit travels with it: ``df.attrs["units"]`` for pandas (and
        ``units`` on a dict result), field metadata ``unit`` and schema metadata ``units`` for
        pyarrow, each variable's ``attrs["units"]`` for xarray; ``unit_suffix=True`` names the
        columns with their units ("h [kJ/kg]"), the only place polars has for them.
        ``pint=True`` (pandas, with the ``pint`` extra: pint and pint-pandas) gives pint
        quantity columns (a gauge pressure, which pint cannot express, stays a float column
        with its unit in ``attrs``). A Dask DataFrame gives a lazy Dask DataFrame (see
        :mod:`steamcell.dask`): each partition is computed on its worker by the worker's own
        engine, or by this client's server when it is a URL.

        With numpy installed and numeric columns (``packed`` not False), tagged or not, and
        with "phase" wanted, the numbers travel packed: ``POST /columns`` with raw
        little-endian doubles and a unit per column over HTTP, ``water.batch`` with base64
        ``f64le`` columns over stdio; "phase" comes back as codes with a legend and is decoded
        here; chunks of ``chunk`` rows (default 250,000) on a kept-alive connection
        (``formulation`` other than IF97: packed ``water.batch`` over HTTP too). The numbers
        are the same bit for bit as on the JSON path (default chunk 50,000), which
        ``packed=False`` forces. ``last_packed_route`` tells which packed route the last call
        took (None: JSON).
        """
        if _is_dask(data):
            from . import dask as _dask
            return _dask.batch(data, given=given, want=want, units=units, chunk=chunk,
                               **self._dask_engine(), **opts)
        frame = _Frame(data)
        self.last_packed_route = None
        if given is None:
            given = {k: k for k in STATE_KEYS if k in frame.names}
        if len(given) != 2:
            raise errors.InvalidInput(
                f"batch needs exactly two state columns in `given`, got {list(given)}")
        for key, spec in given.items():
            col_name = spec[0] if isinstance(spec, tuple) else spec
            if col_name not in frame.names:
                raise errors.InvalidInput(
                    f"column {col_name!r} (for {key}) is not in the data; its columns: "
                    + ", ".join(map(repr, frame.names)))
        # a pint-pandas column carries its unit: (column, unit)
        given = {k: (spec if isinstance(spec, tuple) else frame.tagged(spec))
                 for k, spec in given.items()}
        lengths = {len(frame.column(spec[0] if isinstance(spec, tuple) else spec))
                   for spec in given.values()}
        if len(lengths) != 1:
            raise errors.InvalidInput("the input columns differ in length")
        frame.n = lengths.pop()
        want_list = list(want) if want is not None else list(DEFAULT_WANT)
        # property_uncertainty=True: the columns u_rho, u_w, u_cp, u_p_sat come back too (JSON)
        extra = list(PROPERTY_U_COLUMNS) if opts.get("property_uncertainty") else []
        table = None
        if packed is not False and not extra:
            table = self._batch_packed(frame, given, units, want_list, chunk, progress, opts)
        if table is None:
            table = self._batch_json(frame, given, units, want_list, chunk, progress, opts,
                                     extra)
        return frame.result(table, want_list + extra, unit_suffix=unit_suffix, pint=pint)

    def _dask_engine(self) -> Dict[str, Any]:
        """Where Dask workers compute: this client's server when it was given by URL, else
        an engine of their own started from the same binary."""
        tr = self._tr
        if isinstance(tr, transport.SpawnedHttpTransport) or isinstance(tr, transport.StdioTransport):
            return {"binary": tr.binary}
        return {"server": self.url, "server_token": getattr(tr, "token", None)}

    def _batch_json(self, frame, given, units, want_list, chunk, progress, opts, extra=()):
        chunk = chunk or 50000
        inputs: Dict[str, List[Any]] = {}
        tags: Dict[str, str] = {}
        bad: Dict[int, str] = {}
        n = frame.n
        for key, spec in given.items():
            col_name, unit = (spec if isinstance(spec, tuple) else (spec, None))
            if unit:
                tags[key] = unit
            vals: List[Any] = []
            for i, v in enumerate(frame.values(col_name)):
                item, why = _cell(v)
                if why:
                    bad.setdefault(i, f"row {i}: {key} ({col_name}) {why}")
                vals.append(item)
            inputs[key] = vals
        out: Dict[str, List[Any]] = {w: [None] * n for w in list(want_list) + list(extra)}
        errs: List[Optional[str]] = [None] * n
        flags: List[Optional[str]] = [None] * n
        for i, why in bad.items():
            errs[i] = why
        good = [i for i in range(n) if i not in bad]
        chunk = max(1, int(chunk))
        bar = _Progress(len(good), enabled=progress and len(good) > 0)
        base: Dict[str, Any] = dict(opts)
        base["want"] = want_list
        if units is not None:
            base["units"] = units
        row_re = re.compile(r"^row (\d+):\s*")
        col_units: Dict[str, str] = {}
        try:
            for start in range(0, len(good), chunk):
                rows = good[start:start + chunk]
                params = dict(base)
                params["given"] = {
                    k: ({"values": [inputs[k][i] for i in rows], "unit": tags[k]} if k in tags
                        else [inputs[k][i] for i in rows])
                    for k in inputs}
                res = self.call_raw("water.batch", params)
                col_units = dict(res.get("units", {}))
                cols = res.get("columns", {})
                for w in list(want_list) + list(extra):
                    values = cols.get(w, [])
                    dest = out[w]
                    for j, i in enumerate(rows):
                        dest[i] = values[j] if j < len(values) else None
                for j, e in enumerate(res.get("errors", [])):
                    if e:
                        i = rows[j]
                        msg = row_re.sub("", str(e.get("message", "")))
                        errs[i] = f"row {i}: [{e.get('code')}] {msg}"
                for f in res.get("flagged_rows", []):
                    i = rows[int(f["row"])]
                    flags[i] = f"row {i}: " + row_re.sub("", str(f.get("message", "")))
                bar.update(len(rows))
        finally:
            bar.close()
        nan = float("nan")
        table: Dict[str, Any] = {w: (out[w] if w == "phase" else
                                     [nan if v is None else v for v in out[w]])
                                 for w in list(want_list) + list(extra)}
        table["errors"] = errs
        table["__units__"] = col_units
        if "expect" in opts:
            table["flagged"] = flags
        return table

    # -- packed columns (numpy present): numbers travel as raw little-endian doubles
    PACKED_CHUNK = 250_000

    def _batch_packed(self, frame, given, units, want_list, chunk, progress, opts):
        """The packed path of :meth:`batch`, or None when it does not apply (no numpy, or a
        column that is not numbers)."""
        try:
            import numpy as np  # type: ignore
        except ImportError:
            return None
        if opts.get("encoding") == "json":
            return None
        opts = {k: v for k, v in opts.items() if k != "encoding"}
        arrays = []
        col_tags: Dict[str, str] = {}
        for key, spec in given.items():
            col, unit = (spec if isinstance(spec, tuple) else (spec, None))
            a = frame.numeric(col)
            if a is None:
                return None
            arrays.append(a)
            if unit:
                col_tags[key] = unit
        n = frame.n
        keys = list(given.keys())
        out = {w: (np.empty(n, dtype=object) if w == "phase" else np.empty(n, dtype="<f8"))
               for w in want_list}
        errs: List[Optional[str]] = [None] * n
        flags: List[Optional[str]] = [None] * n
        step = max(1, int(chunk or self.PACKED_CHUNK))
        header_base: Dict[str, Any] = dict(opts)
        if units is not None:
            header_base["units"] = units
        post = getattr(self._tr, "post_bytes", None)
        # /columns computes with IAPWS-IF97 only: another formulation goes packed through
        # water.batch (base64 f64le columns) on the same connection.
        if str(opts.get("formulation", "if97")).lower() not in ("if97", "iapws-if97"):
            post = None
        self.last_packed_route = "/columns" if post is not None else "water.batch f64le"
        bar = _Progress(n, enabled=progress and n > 0, label=self.last_packed_route)
        col_units: Dict[str, str] = {}
        try:
            for start in range(0, max(n, 1), step):
                stop = min(n, start + step)
                cols, failed, head = self._packed_chunk(
                    np, post, keys, col_tags, want_list, header_base,
                    arrays[0][start:stop], arrays[1][start:stop])
                col_units = dict(head.get("units", {}))
                legends = head.get("legends", {})
                flagged = head.get("flagged_rows", [])
                for w, c in zip(want_list, cols):
                    if w in legends:
                        out[w][start:stop] = _decode(np, c, legends[w])
                    else:
                        out[w][start:stop] = c
                for e in failed:
                    i = start + int(e["row"])
                    msg = re.sub(r"^row \d+:\s*", "", str(e.get("message", "")))
                    errs[i] = f"row {i}: [{e.get('code')}] {msg}"
                for f in flagged:
                    i = start + int(f["row"])
                    flags[i] = f"row {i}: " + re.sub(r"^row \d+:\s*", "", str(f.get("message", "")))
                bar.update(stop - start)
                if n == 0:
                    break
        finally:
            bar.close()
        table: Dict[str, Any] = dict(out)
        table["errors"] = errs
        table["__units__"] = col_units
        if "expect" in opts:
            table["flagged"] = flags
        return table

    def _packed_chunk(self, np, post, keys, col_tags, want_list, header_base, a, b):
        """One chunk: POST /columns over HTTP, else water.batch with f64le columns. Returns the
        columns, the failed rows and the answer's header (units, legends)."""
        import base64
        import json as _json
        import struct
        rows = len(a)
        if post is not None:
            header = dict(header_base, given=keys, rows=rows, want=want_list)
            if col_tags:
                header["given_units"] = col_tags
            head = _json.dumps(header).encode()
            body = b"".join((struct.pack("<I", len(head)), head, a.tobytes(), b.tobytes()))
            status, ctype, data = post("/columns", body, "application/x-steamcell-columns")
            if status != 200:
                try:
                    err = _json.loads(data)
                except ValueError:
                    raise transport.http_failure(status, "/columns", data)
                raise errors.from_rpc(err)
            (hl,) = struct.unpack_from("<I", data, 0)
            head = _json.loads(data[4:4 + hl])
            arr = np.frombuffer(data, dtype="<f8", offset=4 + hl)
            cols = [arr[k * rows:(k + 1) * rows] for k in range(len(want_list))]
            return cols, head.get("failed_rows", []), head

        def enc(key, x):
            col = {"f64le": base64.b64encode(x.tobytes()).decode("ascii")}
            if key in col_tags:
                col["unit"] = col_tags[key]
            return col
        params = dict(header_base, given={keys[0]: enc(keys[0], a), keys[1]: enc(keys[1], b)},
                      want=want_list, encoding="f64le")
        res = self.call_raw("water.batch", params)
        cols = [np.frombuffer(base64.b64decode(res["columns"][w]["f64le"]), dtype="<f8")
                for w in want_list]
        return cols, res.get("failed_rows", []), res


def _decode(np, codes, legend):
    """Texts from the codes of a packed text column (NaN: None)."""
    out = np.empty(len(codes), dtype=object)
    ok = ~np.isnan(codes)
    names = np.asarray(legend, dtype=object)
    out[ok] = names[codes[ok].astype(np.int64)]
    out[~ok] = None
    return out


def _units_text(units: Any) -> str:
    """The ``units`` of a GET query: a preset name as it is, a dict as JSON text."""
    if isinstance(units, dict):
        import json as _json
        return _json.dumps(units)
    return str(units)


# The standard-uncertainty columns water.batch adds with property_uncertainty=True.
PROPERTY_U_COLUMNS = ("u_rho", "u_w", "u_cp", "u_p_sat")


def _is_dask(data: Any) -> bool:
    mod = type(data).__module__ or ""
    return mod.startswith("dask") and hasattr(data, "map_partitions")


class _Frame:
    """The tables :meth:`Client.batch` reads and gives back, of the same kind: pandas, polars,
    pyarrow, xarray or a dict of lists / numpy arrays."""

    def __init__(self, data: Any):
        self.data = data
        mod = type(data).__module__ or ""
        if isinstance(data, dict):
            self.kind = "dict"
            self.names = list(data.keys())
        elif mod.startswith("pandas") and hasattr(data, "columns") and hasattr(data, "index"):
            self.kind = "pandas"
            self.names = list(data.columns)
        elif mod.startswith("polars") and hasattr(data, "get_column"):
            self.kind = "polars"
            self.names = list(data.columns)
        elif mod.startswith("pyarrow") and hasattr(data, "column_names"):
            self.kind = "arrow"
            self.names = list(data.column_names)
        elif mod.startswith("xarray") and hasattr(data, "data_vars"):
            self.kind = "xarray"
            self.names = [str(k) for k in data.data_vars]
        else:
            raise TypeError("batch() takes a pandas, polars or Dask DataFrame, a pyarrow Table, "
                            f"an xarray Dataset or a dict of columns, not {type(data).__name__}")
        self.n = 0

    def column(self, name: str) -> Any:
        d = self.data
        if self.kind == "polars":
            return d.get_column(name)
        if self.kind == "arrow":
            return d.column(name)
        if self.kind == "xarray":
            return d[name].values.reshape(-1)
        return d[name]

    def tagged(self, name: str) -> Any:
        """``name``, or ``(name, unit)`` for a pint-pandas column (its magnitudes travel, in the
        unit of its dtype)."""
        if self.kind != "pandas":
            return name
        unit = _pint_unit(self.data[name])
        return (name, unit) if unit else name

    def numeric(self, name: str) -> Any:
        """The column as contiguous little-endian doubles, or None when it is not numeric."""
        import numpy as np  # type: ignore
        col = self.column(name)
        try:
            if self.kind == "polars":
                if not col.dtype.is_numeric():
                    return None
                a = col.cast(float).to_numpy()
            elif self.kind == "arrow":
                import pyarrow as pa  # type: ignore
                if not (pa.types.is_integer(col.type) or pa.types.is_floating(col.type)):
                    return None
                a = col.cast(pa.float64()).to_numpy()
            else:
                if _pint_unit(col):
                    col = col.pint.magnitude
                a = np.asarray(col)
                if a.dtype.kind not in "iuf":
                    return None
            return np.ascontiguousarray(a, dtype="<f8")
        except (TypeError, ValueError):
            return None

    def values(self, name: str) -> List[Any]:
        col = self.column(name)
        if self.kind == "pandas" and _pint_unit(col):
            col = col.pint.magnitude
        if self.kind in ("polars", "arrow"):
            return col.to_list() if self.kind == "polars" else col.to_pylist()
        if hasattr(col, "tolist"):
            return col.tolist()
        return list(col)

    def result(self, table: Dict[str, Any], want_list: List[str], unit_suffix: bool = False,
               pint: bool = False) -> Any:
        # Text columns after the wanted ones: the row errors, and the flagged rows of an
        # expected phase when one was given.
        notes = [k for k in ("errors", "flagged") if k in table]
        units = {w: u for w, u in table.get("__units__", {}).items() if w in want_list}
        ambient = table.get("__units__", {}).get("ambient")
        names = {w: (f"{w} [{units[w]}]" if unit_suffix and w in units else w)
                 for w in want_list}
        kind = self.kind
        if kind == "pandas":
            import pandas as pd  # type: ignore
            cols = {}
            for w in want_list:
                cols[names[w]] = table[w]
                if pint and w in units:
                    q = _pint_array(table[w], units[w])
                    if q is not None:
                        cols[names[w]] = q
            frame = pd.DataFrame(cols, index=self.data.index)
            for k in notes:
                frame[k] = pd.Series(table[k], index=self.data.index, dtype=object)
            frame.attrs["units"] = {names[w]: units[w] for w in want_list if w in units}
            if ambient:
                frame.attrs["ambient"] = ambient
            return frame
        if kind == "polars":
            import polars as pl  # type: ignore
            cols = [pl.Series(names[w], table[w], dtype=pl.Utf8 if w == "phase" else pl.Float64)
                    for w in want_list]
            cols.extend(pl.Series(k, table[k], dtype=pl.Utf8) for k in notes)
            return pl.DataFrame(cols)
        if kind == "arrow":
            import json as _json
            import pyarrow as pa  # type: ignore
            fields = []
            arrays = []
            for w in want_list:
                typ = pa.string() if w == "phase" else pa.float64()
                meta = {b"unit": units[w].encode()} if w in units else None
                fields.append(pa.field(names[w], typ, metadata=meta))
                arrays.append(pa.array(table[w], type=typ))
            for k in notes:
                fields.append(pa.field(k, pa.string()))
                arrays.append(pa.array(table[k], type=pa.string()))
            meta = {b"units": _json.dumps({names[w]: units[w] for w in want_list
                                           if w in units}).encode()}
            if ambient:
                meta[b"ambient"] = ambient.encode()
            return pa.Table.from_arrays(arrays, schema=pa.schema(fields, metadata=meta))
        if kind == "xarray":
            import numpy as np  # type: ignore
            import xarray as xr  # type: ignore
            first = self.data[self.names[0]]
            shape, dims = first.shape, first.dims
            out = {}
            for w in want_list:
                arr = np.asarray(table[w], dtype=object if w == "phase" else "f8").reshape(shape)
                out[names[w]] = xr.Variable(dims, arr,
                                            attrs={"units": units[w]} if w in units else {})
            for k in notes:
                out[k] = (dims, np.asarray(table[k], dtype=object).reshape(shape))
            ds = xr.Dataset(out, coords=first.coords)
            if ambient:
                ds.attrs["ambient"] = ambient
            return ds
        result = Columns({names[w]: table[w] for w in want_list})
        for k in notes:
            result[k] = table[k]
        result.units = {names[w]: units[w] for w in want_list if w in units}
        result.ambient = ambient
        return result


class Columns(dict):
    """The dict a batch of a dict gives back: one entry per column, with ``units`` (column ->
    unit) and ``ambient`` (the ambient pressure of a gauge unit, or None) as attributes."""

    units: Dict[str, str] = {}
    ambient: Optional[str] = None


def _pint_unit(col: Any) -> Optional[str]:
    """The unit of a pint-pandas column as a steamcell spelling, or None for any other column."""
    dtype = getattr(col, "dtype", None)
    units = getattr(dtype, "units", None)
    if units is None or type(dtype).__name__ != "PintType":
        return None
    text = format(units, "~C")  # compact abbreviated: "kJ/kg", "degC", "m**3/kg"
    return PINT_TO_STEAMCELL.get(text, text.replace("**", "^").replace("°", "deg"))


# pint spellings that steamcell spells otherwise (pint's compact abbreviated form on the left).
# pint has no gauge pressures: a pint pressure is absolute, so pint's psi is psia.
PINT_TO_STEAMCELL = {"psi": "psia", "Δ°C": "K", "Δ°F": "degF", "kJ/K/kg": "kJ/(kg K)",
                     "J/K/kg": "J/(kg K)", "Btu/lb/Δ°F": "Btu/(lb F)", "%": "%"}
# steamcell spellings that pint spells otherwise; None: pint cannot express it (gauge pressure)
STEAMCELL_TO_PINT = {"psia": "psi", "barg": None, "psig": None, "kPag": None, "MPag": None,
                     "kgf/cm2g": None, "1": "dimensionless", "m3/kg": "m**3/kg",
                     "kg/m3": "kg/m**3", "ft3/lb": "ft**3/lb", "lb/ft3": "lb/ft**3",
                     "mm2/s": "mm**2/s", "m2/s": "m**2/s", "ft2/s": "ft**2/s", "ft2/h": "ft**2/h",
                     "W/(m2 K)": "W/(m**2 K)", "Btu/(h ft2 F)": "Btu/(h ft**2 degF)",
                     "Btu/(lb F)": "Btu/(lb delta_degF)", "Btu/(h ft F)": "Btu/(h ft delta_degF)",
                     "kcal/(kg K)": "kcal/(kg K)", "kgf/cm2": "kgf/cm**2", "%": "percent"}


def _pint_array(values: Any, unit: str) -> Any:
    """A pint-pandas array of ``values`` in ``unit``, or None when pint cannot express the unit
    (a gauge pressure) or pint-pandas is not installed."""
    try:
        import pint_pandas  # type: ignore  # noqa: F401
    except ImportError as e:
        raise errors.InvalidInput(
            "batch(pint=True) needs pint-pandas: pip install steamcell[pint]") from e
    spelled = STEAMCELL_TO_PINT.get(unit, unit)
    if spelled is None:
        return None
    import pandas as pd  # type: ignore
    return pd.array(list(values), dtype=f"pint[{spelled}]")


def _cell(v: Any) -> Tuple[Any, Optional[str]]:
    """(wire value, reason it is bad or None) for one input cell."""
    if v is None:
        return 0.0, "is empty"
    if isinstance(v, str):
        return (v, None) if v.strip() else (0.0, "is empty")
    try:
        x = float(v)
    except (TypeError, ValueError):
        return 0.0, f"is not a number: {v!r}"
    if not math.isfinite(x):
        return 0.0, f"is not finite ({x})"
    return x, None


class _Progress:
    """tqdm when installed, else a line on stderr per chunk; labelled by the route the rows
    take (``label``: "water.batch", "/columns", "water.batch f64le")."""

    def __init__(self, total: int, enabled: bool, label: str = "water.batch"):
        self.total, self.done, self.bar, self.enabled = total, 0, None, enabled
        self.label = label
        if enabled:
            try:
                from tqdm.auto import tqdm  # type: ignore
                self.bar = tqdm(total=total, unit="row", desc=label)
            except ImportError:
                self.bar = None

    def update(self, k: int) -> None:
        self.done += k
        if not self.enabled:
            return
        if self.bar is not None:
            self.bar.update(k)
        else:
            print(f"{self.label}: {self.done}/{self.total} rows", file=sys.stderr, flush=True)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


def _jsonable(obj: Any) -> Any:
    """Plain JSON types for numpy scalars, tuples and Records."""
    if isinstance(obj, dict):
        return {str(k): _jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_jsonable(v) for v in obj]
    if isinstance(obj, (str, bool, int, float)) or obj is None:
        return obj
    if hasattr(obj, "tolist"):  # numpy arrays and scalars
        return _jsonable(obj.tolist())
    if hasattr(obj, "__float__"):
        return float(obj)
    return obj


def _load_wrappers() -> Dict[str, Any]:
    try:
        doc = openrpc.load_document()
    except FileNotFoundError:
        return {}
    return openrpc.make_wrappers(doc)


WRAPPERS: Dict[str, Any] = _load_wrappers()
for _name, _fn in WRAPPERS.items():
    if not hasattr(Client, _fn.__name__):
        setattr(Client, _fn.__name__, _fn)


#: Environment variable with the validation digest every connection must find (see connect).
ENV_EXPECT_DIGEST = "STEAMCELL_EXPECT_DIGEST"


def expected_digest(expect_digest: Optional[str]) -> Optional[str]:
    """The digest to demand: the argument, else env STEAMCELL_EXPECT_DIGEST, else None."""
    d = expect_digest or os.environ.get(ENV_EXPECT_DIGEST) or None
    return d.strip() if d else None


def digest_mismatch(where: str, expected: str, found: Any) -> errors.DigestMismatch:
    """The refusal of a server whose validation digest is not the expected one."""
    return errors.DigestMismatch(
        f"refusing the steamcell server at {where}: its validation digest {found} is not the "
        f"expected {expected} (a different or unvalidated build)",
        data={"kind": "digest_mismatch", "expected": expected, "found": found})


def connect(url: Optional[str] = None, binary: Optional[str] = None, *,
            transport: Optional[str] = None, timeout: float = 600.0,
            serve_args: Sequence[str] = (), token: Optional[str] = None,
            pool_size: int = 32, ca_file: Optional[str] = None,
            expect_digest: Optional[str] = None) -> Client:
    """Connects to a steamcell server.

    ``connect("http://127.0.0.1:8790")`` or ``connect("https://calc.example:8790")`` talks to a
    running server. ``connect()`` finds the binary (``binary``, env STEAMCELL_BIN, PATH, the
    repository's target/ directory) and starts ``steamcell serve --listen 127.0.0.1:0``, stopped
    again by ``close()``, a ``with`` block's end or interpreter exit; ``serve_args`` are extra
    flags for it, e.g. ``["--site", "mill=site.json"]``. ``connect(transport="stdio")`` starts
    ``steamcell stdio`` instead. ``token``: the bearer token of a team server (default env
    STEAMCELL_TOKEN). ``ca_file``: a PEM file of the CA certificates to trust for an https://
    server (default env STEAMCELL_CA_FILE, else the system's trust store). ``expect_digest``:
    the validation digest the server must report (``server.info``; default env
    STEAMCELL_EXPECT_DIGEST); another digest raises :class:`steamcell.DigestMismatch` naming
    both, and nothing is computed. ``pool_size``: how many idle HTTP connections the client
    keeps for threads that share it.
    """
    kind = transport or ("http" if url else "spawn")
    if kind == "stdio":
        client = Client(_transport_mod.StdioTransport(_transport_mod.find_binary(binary)))
    elif url:
        client = Client(_transport_mod.HttpTransport(url, timeout=timeout, token=token,
                                                     pool_size=pool_size, ca_file=ca_file))
    elif kind not in ("spawn", "http"):
        raise ValueError(f"transport must be 'http' or 'stdio', not {kind!r}")
    else:
        tr = _transport_mod.SpawnedHttpTransport(_transport_mod.find_binary(binary),
                                                 timeout=timeout, extra_args=serve_args,
                                                 token=token)
        tr.pool_size = max(1, int(pool_size))
        client = Client(tr)
    want = expected_digest(expect_digest)
    if want:
        try:
            found = client.call_raw("server.info").get("digest")
        except BaseException:
            client.close()
            raise
        if found != want:
            client.close()
            raise digest_mismatch(client.url or "stdio", want, found)
    return client


_transport_mod = transport
