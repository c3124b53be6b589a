"""The steamcell client: ``connect()``, generic ``call()``, ``state()``, ``batch()`` and one
generated method per OpenRPC method (``c.turbine_expand(...)`` or ``c.turbine.expand(...)``).

Numbers go to the server as given; they are read in the request's unit preset (``units``,
default "engineering": MPa, degC, kJ/kg, kJ/(kg K), kg/s, kW). Strings carry their own unit
("42 barg", "410 degC"). Results are in the preset and list their units.
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
    def state(self, units: Optional[str] = None, ambient: Any = None, **kwargs: Any) -> State:
        """One state from two properties, e.g. ``c.state(p="42 barg", T="410 degC")``.

        State keys (p, T, h, s, u, v, rho, x) form ``given``; other keywords (formulation,
        backward_only, metastable, prefer) are passed on. Bare numbers are in ``units``.
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

    def cell(self, quantity: str, units: Optional[str] = None, **given: Any) -> float:
        """One number from the spreadsheet endpoint ``GET /cell/{quantity}?...``."""
        query = dict(given)
        if units:
            query["units"] = units
        path = f"/cell/{urllib.parse.quote(quantity)}?" + urllib.parse.urlencode(
            {k: str(v) for k, v in query.items()}, quote_via=urllib.parse.quote)
        status, text = self._http().get(path)
        if status != 200:
            raise errors.Error(text.strip() or f"HTTP {status}", code=None, data={"status": status})
        return float(text)

    def site(self, name: str, quantity: str, changes: Optional[Dict[str, Any]] = None,
             units: Optional[str] = None) -> float:
        """One number of a site registered with ``serve --site NAME=FILE``, from
        ``GET /site/{name}/{quantity}?...``: ``quantity`` is a site total (``"net_power"``) or a
        dotted path into the ``balance.solve`` result (``"units.BPT.power"``); ``changes`` maps
        specification paths to values, e.g. ``{"units.MP_users.demand": "40 t/h"}``."""
        query = {k: str(v) for k, v in (changes or {}).items()}
        if units:
            query["units"] = units
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

    def batch(self, data: Any, given: Optional[Dict[str, Any]] = None, units: Optional[str] = None,
              want: Optional[Sequence[str]] = None, chunk: Optional[int] = None,
              progress: bool = True, packed: Optional[bool] = None,
              **opts: Any) -> Any:
        """Properties for many states (historian columns) through ``water.batch``.

        ``data``: a pandas, polars or Dask DataFrame, a pyarrow Table, an xarray Dataset or a
        dict of lists or numpy arrays. ``given`` maps a state key to a column name, e.g.
        ``{"p": "p_bar", "T": "T_C"}``, or to ``(column, unit)`` to send every value as
        "<number> <unit>". Without ``given`` the columns named like state keys are used. Numbers
        are read in ``units`` (default engineering). Rows go in chunks of ``chunk`` with a
        progress bar (tqdm if installed, else a line on stderr) when ``progress``.

        Returns the same kind of table as ``data`` (a dict of numpy arrays for a dict when numpy
        is installed, else of lists) with one column per ``want`` plus ``errors`` (None or the
        row's message). A bad row gives NaN and its error; only a bad request as a whole
        raises. A Dask DataFrame gives a lazy Dask DataFrame (see :mod:`steamcell.dask`): each
        partition is computed on its worker by the worker's own engine, or by this client's
        server when it is a URL.

        With numpy installed and plain numeric columns (``packed`` not False, no "phase" in
        ``want``) the numbers travel packed: ``POST /columns`` with raw little-endian doubles
        over HTTP, ``water.batch`` with base64 ``f64le`` columns over stdio; chunks of
        ``chunk`` rows (default 250,000) on a kept-alive connection (``formulation`` other
        than IF97: packed ``water.batch`` over HTTP too). The numbers are the same bit for bit
        as on the JSON path (default chunk 50,000), which ``packed=False`` forces.
        ``last_packed_route`` tells which packed route the last call took (None: JSON).
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
        lengths = {len(frame.column(spec[0] if isinstance(spec, tuple) else spec))
                   for spec in given.values()}
        if len(lengths) != 1:
            raise errors.InvalidInput("the input columns differ in length")
        frame.n = lengths.pop()
        want_list = list(want) if want is not None else list(DEFAULT_WANT)
        table = None
        if packed is not False:
            table = self._batch_packed(frame, given, units, want_list, chunk, progress, opts)
        if table is None:
            table = self._batch_json(frame, given, units, want_list, chunk, progress, opts)
        return frame.result(table, want_list)

    def _dask_engine(self) -> Dict[str, Any]:
        """Where Dask workers compute: this client's server when it was given by URL, else
        an engine of their own started from the same binary."""
        tr = self._tr
        if isinstance(tr, transport.SpawnedHttpTransport) or isinstance(tr, transport.StdioTransport):
            return {"binary": tr.binary}
        return {"server": self.url, "server_token": getattr(tr, "token", None)}

    def _batch_json(self, frame, given, units, want_list, chunk, progress, opts):
        chunk = chunk or 50000
        inputs: Dict[str, List[Any]] = {}
        bad: Dict[int, str] = {}
        n = frame.n
        for key, spec in given.items():
            col_name, unit = (spec if isinstance(spec, tuple) else (spec, None))
            vals: List[Any] = []
            for i, v in enumerate(frame.values(col_name)):
                item, why = _cell(v, unit)
                if why:
                    bad.setdefault(i, f"row {i}: {key} ({col_name}) {why}")
                vals.append(item)
            inputs[key] = vals
        out: Dict[str, List[Any]] = {w: [None] * n for w in want_list}
        errs: List[Optional[str]] = [None] * n
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
        try:
            for start in range(0, len(good), chunk):
                rows = good[start:start + chunk]
                params = dict(base)
                params["given"] = {k: [inputs[k][i] for i in rows] for k in inputs}
                res = self.call_raw("water.batch", params)
                cols = res.get("columns", {})
                for w in want_list:
                    values = cols.get(w, [])
                    dest = out[w]
                    for j, i in enumerate(rows):
                        dest[i] = values[j] if j < len(values) else None
                for j, e in enumerate(res.get("errors", [])):
                    if e:
                        i = rows[j]
                        msg = row_re.sub("", str(e.get("message", "")))
                        errs[i] = f"row {i}: [{e.get('code')}] {msg}"
                bar.update(len(rows))
        finally:
            bar.close()
        nan = float("nan")
        table: Dict[str, Any] = {w: (out[w] if w == "phase" else
                                     [nan if v is None else v for v in out[w]])
                                 for w in want_list}
        table["errors"] = errs
        return table

    # -- packed columns (numpy present): numbers travel as raw little-endian doubles
    PACKED_CHUNK = 250_000

    def _batch_packed(self, frame, given, units, want_list, chunk, progress, opts):
        """The packed path of :meth:`batch`, or None when it does not apply (no numpy,
        columns that are not plain numbers, unit tuples in ``given``, or "phase" wanted)."""
        try:
            import numpy as np  # type: ignore
        except ImportError:
            return None
        if opts.get("encoding") == "json":
            return None
        opts = {k: v for k, v in opts.items() if k != "encoding"}
        if "phase" in want_list:
            return None
        if any(not isinstance(v, str) for v in given.values()):
            return None
        arrays = []
        for col in given.values():
            a = frame.numeric(col)
            if a is None:
                return None
            arrays.append(a)
        n = frame.n
        keys = list(given.keys())
        out = {w: np.empty(n, dtype="<f8") for w in want_list}
        errs: List[Optional[str]] = [None] * n
        step = max(1, int(chunk or self.PACKED_CHUNK))
        bar = _Progress(n, enabled=progress and n > 0)
        header_base: Dict[str, Any] = dict(opts)
        if units is not None:
            header_base["units"] = units
        post = getattr(self._tr, "post_bytes", None)
        # /columns computes with IAPWS-IF97 only: another formulation goes packed through
        # water.batch (base64 f64le columns) on the same connection.
        if str(opts.get("formulation", "if97")).lower() not in ("if97", "iapws-if97"):
            post = None
        self.last_packed_route = "/columns" if post is not None else "water.batch f64le"
        try:
            for start in range(0, n, step):
                stop = min(n, start + step)
                cols, failed = self._packed_chunk(np, post, keys, want_list, header_base,
                                                  arrays[0][start:stop], arrays[1][start:stop])
                for w, c in zip(want_list, cols):
                    out[w][start:stop] = c
                for e in failed:
                    i = start + int(e["row"])
                    msg = re.sub(r"^row \d+:\s*", "", str(e.get("message", "")))
                    errs[i] = f"row {i}: [{e.get('code')}] {msg}"
                bar.update(stop - start)
        finally:
            bar.close()
        table: Dict[str, Any] = dict(out)
        table["errors"] = errs
        return table

    def _packed_chunk(self, np, post, keys, want_list, header_base, a, b):
        """One chunk: POST /columns over HTTP, else water.batch with f64le columns."""
        import base64
        import json as _json
        import struct
        rows = len(a)
        if post is not None:
            header = dict(header_base, given=keys, rows=rows, want=want_list)
            head = _json.dumps(header).encode()
            body = b"".join((struct.pack("<I", len(head)), head, a.tobytes(), b.tobytes()))
            status, ctype, data = post("/columns", body, "application/x-steamcell-columns")
            if status != 200:
                try:
                    err = _json.loads(data)
                except ValueError:
                    raise errors.TransportError(f"HTTP {status} from /columns: {data[:200]!r}")
                raise errors.from_rpc(err)
            (hl,) = struct.unpack_from("<I", data, 0)
            head = _json.loads(data[4:4 + hl])
            arr = np.frombuffer(data, dtype="<f8", offset=4 + hl)
            cols = [arr[k * rows:(k + 1) * rows] for k in range(len(want_list))]
            return cols, head.get("failed_rows", [])
        enc = lambda x: {"f64le": base64.b64encode(x.tobytes()).decode("ascii")}  # noqa: E731
        params = dict(header_base, given={keys[0]: enc(a), keys[1]: enc(b)},
                      want=want_list, encoding="f64le")
        res = self.call_raw("water.batch", params)
        cols = [np.frombuffer(base64.b64decode(res["columns"][w]["f64le"]), dtype="<f8")
                for w in want_list]
        return cols, res.get("failed_rows", [])


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
                a = np.asarray(col)
                if a.dtype.kind not in "iuf":
                    return None
            return np.ascontiguousarray(a, dtype="<f8")
        except (TypeError, ValueError):
            return None

    def values(self, name: str) -> List[Any]:
        col = self.column(name)
        if self.kind in ("polars", "arrow"):
            return col.to_list() if self.kind == "polars" else col.to_pylist()
        if hasattr(col, "tolist"):
            return col.tolist()
        return list(col)

    def result(self, table: Dict[str, Any], want_list: List[str]) -> Any:
        errs = table["errors"]
        kind = self.kind
        if kind == "pandas":
            import pandas as pd  # type: ignore
            frame = pd.DataFrame({w: table[w] for w in want_list}, index=self.data.index)
            frame["errors"] = pd.Series(errs, index=self.data.index, dtype=object)
            return frame
        if kind == "polars":
            import polars as pl  # type: ignore
            cols = [pl.Series(w, table[w], dtype=pl.Utf8 if w == "phase" else pl.Float64)
                    for w in want_list]
            cols.append(pl.Series("errors", errs, dtype=pl.Utf8))
            return pl.DataFrame(cols)
        if kind == "arrow":
            import pyarrow as pa  # type: ignore
            arrays = [pa.array(table[w], type=pa.string() if w == "phase" else pa.float64())
                      for w in want_list]
            arrays.append(pa.array(errs, type=pa.string()))
            return pa.table(arrays, names=want_list + ["errors"])
        if kind == "xarray":
            import numpy as np  # type: ignore
            import xarray as xr  # type: ignore
            first = self.data[self.names[0]]
            shape, dims = first.shape, first.dims
            out = {w: (dims, np.asarray(table[w], dtype=object if w == "phase" else "f8")
                       .reshape(shape)) for w in want_list}
            out["errors"] = (dims, np.asarray(errs, dtype=object).reshape(shape))
            return xr.Dataset(out, coords=first.coords)
        result: Dict[str, Any] = {w: table[w] for w in want_list}
        result["errors"] = errs
        return result


def _cell(v: Any, unit: Optional[str]) -> Tuple[Any, Optional[str]]:
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
    if unit:
        return f"{x!r} {unit}", None
    return x, None


class _Progress:
    """tqdm when installed, else a line on stderr per chunk."""

    def __init__(self, total: int, enabled: bool):
        self.total, self.done, self.bar, self.enabled = total, 0, None, enabled
        if enabled:
            try:
                from tqdm.auto import tqdm  # type: ignore
                self.bar = tqdm(total=total, unit="row", desc="water.batch")
            except ImportError:
                self.bar = None

    def update(self, k: int) -> None:
        self.done += k
        if not self.enabled:
            return
        if self.bar is not None:
            self.bar.update(k)
        else:
            print(f"water.batch: {self.done}/{self.total} rows", file=sys.stderr, flush=True)

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
