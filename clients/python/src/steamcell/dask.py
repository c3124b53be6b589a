"""Historian-size data on Dask: states of a Dask DataFrame, partition by partition.

    import dask.dataframe as dd, steamcell
    ddf = dd.read_parquet("historian/*.parquet")            # columns p_bar_abs, T_C, ...
    c = steamcell.connect()
    out = c.batch(ddf, given={"p": "p_MPa", "T": "T_C"}, want=["h", "s"])   # lazy
    out.to_parquet("states/")                                # computed on the workers

:func:`batch` (also reached as ``Client.batch`` with a Dask DataFrame) returns a lazy Dask
DataFrame with the same partitions and index as its input and one float64 column per wanted
property plus ``errors`` (a string column: missing, or the row's message, which names the row by
its index label). Nothing is computed until the result is.
Each partition is computed on the worker that holds it, through packed columns
(``POST /columns``), by:

- the worker's own engine (default): ``steamcell serve`` started on the worker at its first
  partition, on loopback, found as :func:`steamcell.find_binary` finds it on that worker
  (``binary`` when it exists there, env ``STEAMCELL_BIN``, PATH, a checkout); it stops when the
  worker closes (a worker plugin, registered when a ``dask.distributed`` client is active) or
  its process exits;
- or a team server: ``server="http://host:8790"`` (token from ``server_token`` or env
  ``STEAMCELL_TOKEN`` on the worker).

Every row is accounted for: a bad row gives NaN and its message, as in ``Client.batch``; a
partition whose engine is lost (the process died, the server cannot be reached) fails the
computation with :class:`steamcell.WorkerEngineLost` naming the worker, the engine and the
partition's rows, never with fewer rows. Each worker reports its own lost engine once; a
computation after that starts a fresh engine there.

Inputs must be numeric columns, in the request's ``units`` (default engineering: MPa, degC,
...) or each in its own unit (``given={"p": ("p_barg", "barg")}``); a missing column or a
column of text is refused when the graph is built, before anything runs. "phase" travels
packed as codes and comes back as text.
"""

from __future__ import annotations

import os
import re
import threading
import uuid
from typing import Any, Dict, List, Optional, Sequence

from . import errors
from .client import DEFAULT_WANT, STATE_KEYS

_ENGINES: Dict[Any, Any] = {}
_LOCK = threading.Lock()
PLUGIN_NAME = "steamcell-engines"
_ROW = re.compile(r"^row (\d+):")


class _EngineSpec:
    """Where a partition is computed: a team server URL, or a local engine from a binary."""

    def __init__(self, server: Optional[str], token: Optional[str], binary: Optional[str],
                 timeout: float):
        self.server, self.token, self.binary, self.timeout = server, token, binary, timeout
        # each batch() is a graph of its own: its result depends on the engines' state, so a
        # failed computation is never answered again from the scheduler's memory
        self.call = uuid.uuid4().hex

    def key(self):
        return (self.server, self.token, self.binary)

    def describe(self) -> str:
        return f"team server {self.server}" if self.server else "local steamcell engine"


def _where() -> str:
    try:
        from distributed import get_worker  # type: ignore
        w = get_worker()
        name = f" ({w.name})" if getattr(w, "name", None) not in (None, w.address) else ""
        return f"worker {w.address}{name}"
    except Exception:
        return f"process {os.getpid()} (no distributed worker)"


def _engine(spec: _EngineSpec):
    """This process's client for ``spec``, started on first use; a dead engine is reported."""
    from . import connect, transport
    with _LOCK:
        c = _ENGINES.get(spec.key())
        if c is not None:
            child = getattr(c._tr, "child", None)
            if child is not None and child.proc.poll() is not None:
                del _ENGINES[spec.key()]
                code = child.proc.returncode
                raise errors.WorkerEngineLost(
                    f"the steamcell engine on {_where()} (pid {child.proc.pid}, "
                    f"{c._tr.binary}) has stopped (exit status {code}); the partition was not "
                    f"computed; stderr: {child.stderr_text()[-300:].strip() or '-'}")
            return c
        if spec.server:
            c = connect(spec.server, timeout=spec.timeout, token=spec.token)
        else:
            binary = spec.binary if spec.binary and os.path.exists(spec.binary) else None
            try:
                path = transport.find_binary(binary)
            except errors.TransportError as e:
                raise errors.WorkerEngineLost(
                    f"no steamcell engine can start on {_where()}: {e.message}") from None
            c = connect(binary=path, timeout=spec.timeout)
        _ENGINES[spec.key()] = c
        return c


def engines() -> List[Dict[str, Any]]:
    """The engines of this process: ``[{"url", "pid" (None for a team server)}]`` (for
    ``dask.distributed.Client.run`` to see what each worker runs)."""
    with _LOCK:
        out = []
        for c in _ENGINES.values():
            child = getattr(c._tr, "child", None)
            out.append({"url": c.url, "pid": child.proc.pid if child is not None else None})
        return out


def close_engines() -> None:
    """Stops the engines this process started (a worker plugin calls it at worker close)."""
    with _LOCK:
        items = list(_ENGINES.values())
        _ENGINES.clear()
    for c in items:
        try:
            c.close()
        except Exception:
            pass


try:
    from distributed import WorkerPlugin as _WorkerPlugin  # type: ignore
except Exception:  # distributed not installed: the threaded and process schedulers still work
    _WorkerPlugin = object


class EnginePlugin(_WorkerPlugin):  # type: ignore[misc, valid-type]
    """Stops a worker's steamcell engines when the worker closes."""

    idempotent = True
    name = PLUGIN_NAME

    def setup(self, worker=None):
        pass

    def teardown(self, worker=None):
        close_engines()


def _register_plugin() -> None:
    try:
        from distributed import default_client  # type: ignore
        client = default_client()
    except Exception:
        return  # no distributed client: engines stop with their process
    done = getattr(client, "_steamcell_plugin", False)
    if not done:
        client.register_plugin(EnginePlugin(), name=PLUGIN_NAME)
        try:
            client._steamcell_plugin = True
        except Exception:
            pass


def _partition(df, spec: _EngineSpec, given: Dict[str, str], want: List[str],
               units: Optional[str], chunk: Optional[int], opts: Dict[str, Any]):
    import pandas as pd  # type: ignore
    if len(df) == 0:
        return _meta(want, df.index)
    c = _engine(spec)
    first, last = df.index[0], df.index[-1]
    names = [spec[0] if isinstance(spec, tuple) else spec for spec in given.values()]
    try:
        out = c.batch(df[names], given=given, want=want, units=units, chunk=chunk,
                      progress=False, **opts)
    except errors.TransportError as e:
        with _LOCK:
            if _ENGINES.get(spec.key()) is c:
                del _ENGINES[spec.key()]
        child = getattr(c._tr, "child", None)
        what = (f"steamcell engine (pid {child.proc.pid}, exit status {child.proc.poll()})"
                if child is not None else spec.describe())
        raise errors.WorkerEngineLost(
            f"the {what} on {_where()} was lost during a partition of {len(df)} rows (index "
            f"{first!r} to {last!r}), which was not computed: {e.message}") from None
    if c.last_packed_route is None:  # cannot happen for numeric columns; never silently slow
        raise errors.InvalidInput("steamcell.dask: the partition did not travel packed")
    # "row i:" of a message counts within the partition: name the row by its index label
    labels = df.index
    errs = out["errors"]
    bad = errs.notna().to_numpy()
    col = pd.Series(pd.NA, index=out.index, dtype="string")
    if bad.any():
        col[bad] = [_ROW.sub(lambda m: f"row {labels[int(m.group(1))]}:", e, count=1)
                    for e in errs[bad].tolist()]
    out["errors"] = col
    return out


def _meta(want: Sequence[str], index):
    import pandas as pd  # type: ignore
    cols = {w: pd.Series([], dtype="object" if w == "phase" else "float64", index=index[:0])
            for w in want}
    frame = pd.DataFrame(cols, index=index[:0])
    frame["errors"] = pd.Series([], dtype="string", index=index[:0])
    return frame


def batch(ddf: Any, given: Optional[Dict[str, str]] = None,
          want: Optional[Sequence[str]] = None, units: Optional[str] = None, *,
          server: Optional[str] = None, server_token: Optional[str] = None,
          binary: Optional[str] = None, chunk: Optional[int] = None, timeout: float = 600.0,
          **opts: Any):
    """States of every row of a Dask DataFrame, as a lazy Dask DataFrame (see the module).

    ``given`` maps two state keys to numeric columns (``{"p": "p_MPa", "T": "T_C"}``; default:
    the columns named like state keys), read in ``units``, or to ``(column, unit)`` for a column
    in its own unit (``{"p": ("p_barg", "barg")}``); ``want`` lists properties (default T, p,
    h, s, v, x; "phase" travels packed as codes too). ``server``: a team server URL instead of an engine per worker.
    Other keywords (``formulation``, ``backward_only``, ...) go to ``water.batch``.
    """
    import pandas as pd  # type: ignore
    columns = [str(c) for c in ddf.columns]
    if given is None:
        given = {k: k for k in STATE_KEYS if k in columns}
    if len(given) != 2:
        raise errors.InvalidInput(
            f"steamcell.dask.batch needs exactly two state columns in `given`, got {list(given)} "
            f"(the frame's columns: {', '.join(columns)})")
    for key, spec in given.items():
        col = spec[0] if isinstance(spec, tuple) else spec
        if col not in columns:
            raise errors.InvalidInput(
                f"the Dask DataFrame has no column {col!r} (for {key}); its columns: "
                + ", ".join(map(repr, columns)))
        dtype = ddf.dtypes[col]
        if not (pd.api.types.is_numeric_dtype(dtype) and not pd.api.types.is_bool_dtype(dtype)):
            raise errors.InvalidInput(
                f"column {col!r} (for {key}) holds {dtype} values, not numbers: steamcell.dask "
                f"sends packed doubles read in the preset {units or 'engineering'}; convert it "
                f"first, e.g. ddf[{col!r}] = dd.to_numeric(ddf[{col!r}], errors='coerce') (text "
                f"that is not a number then gives NaN and a row error)")
    want_list = list(want) if want is not None else list(DEFAULT_WANT)
    if "expect" in opts:
        raise errors.InvalidInput(
            "expect: the flagged rows of an expected phase are not carried through Dask yet; "
            "want 'superheat' (negative for liquid) or 'x' and filter on it, or run the "
            "partitions through Client.batch")
    spec = _EngineSpec(server, server_token, binary, timeout)
    _register_plugin()
    meta = _meta(want_list, ddf._meta.index)
    return ddf.map_partitions(_partition, spec, dict(given), want_list, units, chunk, dict(opts),
                              meta=meta, enforce_metadata=True)
