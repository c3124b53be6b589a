"""Site steam balances from Python: build a network from plain dicts, solve it with
``balance.solve`` / ``balance.sweep``, get tables (DataFrames when pandas is installed), and
draw the site's energy flows and a sweep with matplotlib.

Balance results feed operating and design decisions: they are only as good as the
specifications (efficiencies, losses, which come from the plant's own test data), and are not a
substitute for the governing codes, the equipment maker's data or a licensed engineer's review.
"""

from __future__ import annotations

from typing import Any, Dict, List, Optional, Sequence


class Network:
    """A network under construction: ``unit(name, kind, **spec)`` and
    ``stream(name, from_, to, **fixed)``; ``as_dict()`` gives the JSON of ``balance.solve``."""

    def __init__(self) -> None:
        self.units: Dict[str, Dict[str, Any]] = {}
        self.streams: Dict[str, Dict[str, Any]] = {}

    def unit(self, name: str, kind: str, **spec: Any) -> "Network":
        self.units[name] = dict(spec, kind=kind)
        return self

    def stream(self, name: str, from_: str, to: str, **fixed: Any) -> "Network":
        self.streams[name] = dict(fixed, **{"from": from_, "to": to})
        return self

    def as_dict(self) -> Dict[str, Any]:
        return {"units": self.units, "streams": self.streams}


def _network(net: Any) -> Dict[str, Any]:
    return net.as_dict() if isinstance(net, Network) else dict(net)


class Balance:
    """A solved site: ``streams``, ``units`` and ``totals`` tables, the raw ``result``."""

    def __init__(self, result: Dict[str, Any]):
        self.result = result
        self.warnings: List[str] = list(result.get("warnings", []))
        self.caution: str = result.get("caution", "")
        srows = []
        for name, s in result["streams"].items():
            st = s.get("state") or {}
            srows.append({"stream": name, "from": s["from"], "to": s["to"], "flow": s["flow"],
                          "p": st.get("p"), "T": st.get("T"), "h": st.get("h"), "x": st.get("x"),
                          "energy_flow": s.get("energy_flow")})
        urows = []
        for name, u in result["units"].items():
            row = {"unit": name}
            row.update({k: v for k, v in u.items() if not isinstance(v, (dict, list))})
            row["warnings"] = "; ".join(u.get("warnings", []))
            urows.append(row)
        self.totals: Dict[str, Any] = dict(result["totals"])
        try:
            import pandas as pd  # type: ignore
            self.streams = pd.DataFrame(srows).set_index("stream")
            self.units = pd.DataFrame(urows).set_index("unit")
            self.totals_frame = pd.Series(self.totals, name="total").to_frame()
        except ImportError:
            self.streams = srows
            self.units = urows
            self.totals_frame = self.totals

    def __repr__(self) -> str:
        t = self.totals
        return (f"<steamcell.Balance fuel {t.get('fuel_heat_input')} net power {t.get('net_power')}"
                f" process steam {t.get('process_steam')} ({len(self.warnings)} warnings)>")


def solve(c, network: Any, units: Optional[str] = None, **opts: Any) -> Balance:
    """Solves a site network (a dict or a :class:`Network`) with ``balance.solve``."""
    params: Dict[str, Any] = dict(opts, network=_network(network))
    if units is not None:
        params["units"] = units
    return Balance(c.call_raw("balance.solve", params))


def sweep(c, network: Any, path: str, from_: float, to: float, points: int = 11,
          streams: Sequence[str] = (), units: Optional[str] = None) -> Any:
    """Varies one specification (``path`` such as ``units.LP_users.demand``) with
    ``balance.sweep``; returns a DataFrame (one row per point: value, ok, error, iterations,
    the totals, and for each stream of ``streams`` its ``NAME.flow``, ``NAME.p``, ``NAME.T``,
    ``NAME.h``, ``NAME.x``; None where a point was not solved) or a list of dicts without
    pandas."""
    params: Dict[str, Any] = {"network": _network(network), "path": path, "from": from_,
                              "to": to, "points": points, "streams": list(streams)}
    if units is not None:
        params["units"] = units
    res = c.call_raw("balance.sweep", params)
    rows = []
    for pt in res["points"]:
        row = {"value": pt["value"], "ok": pt["ok"], "error": pt.get("error"),
               "iterations": pt.get("iterations")}
        row.update(pt.get("totals") or {})
        picked = pt.get("streams") or {}
        for name in streams:
            got = picked.get(name) or {}
            for field in ("flow", "p", "T", "h", "x"):
                row[f"{name}.{field}"] = got.get(field)
        rows.append(row)
    try:
        import pandas as pd  # type: ignore
        return pd.DataFrame(rows)
    except ImportError:
        return rows


def plot_energy_flows(balance: Balance, min_share: float = 0.005):
    """A Sankey-style chart of the site's energy flows: units placed in columns by their
    distance from the fuel, links drawn with widths proportional to their energy flow. Links
    below ``min_share`` of the largest are left out. Returns the matplotlib Figure."""
    import matplotlib.pyplot as plt  # type: ignore
    from matplotlib.patches import PathPatch  # type: ignore
    from matplotlib.path import Path  # type: ignore

    sk = balance.result["sankey"]
    links = [lk for lk in sk["links"] if lk.get("energy") and lk["energy"] > 0]
    if not links:
        raise ValueError("no energy flows to draw")
    top = max(lk["energy"] for lk in links)
    links = [lk for lk in links if lk["energy"] >= min_share * top]
    names = [n["name"] for n in sk["nodes"]]
    # Columns by the shortest distance from the sources (nodes nothing flows into), so that
    # recycles (condensate returns, deaerator feedwater) do not push nodes to the right.
    targets = {lk["target"] for lk in links}
    depth = {n: 0 for n in names if n not in targets}
    frontier = list(depth)
    while frontier:
        nxt = []
        for n in frontier:
            for lk in links:
                if lk["source"] == n and lk["target"] not in depth:
                    depth[lk["target"]] = depth[n] + 1
                    nxt.append(lk["target"])
        frontier = nxt
    last = max(depth.values(), default=0) + 1
    for n in names:
        depth.setdefault(n, last)
    cols: Dict[int, List[str]] = {}
    for n in names:
        cols.setdefault(depth[n], []).append(n)
    pos = {}
    for d, members in cols.items():
        for i, n in enumerate(members):
            pos[n] = (d, (i + 1) / (len(members) + 1))
    fig, ax = plt.subplots(figsize=(10, 6))
    for lk in links:
        (x0, y0), (x1, y1) = pos[lk["source"]], pos[lk["target"]]
        w = 12.0 * lk["energy"] / top
        xm = (x0 + x1) / 2
        path = Path([(x0, y0), (xm, y0), (xm, y1), (x1, y1)],
                    [Path.MOVETO, Path.CURVE4, Path.CURVE4, Path.CURVE4])
        ax.add_patch(PathPatch(path, fill=False, lw=max(w, 0.3), alpha=0.45, color="tab:blue"))
    for n, (x, y) in pos.items():
        ax.plot([x], [y], "s", color="tab:orange", ms=6)
        ax.annotate(n, (x, y), textcoords="offset points", xytext=(4, 4), fontsize=8)
    ax.set_xlim(-0.5, max(d for d in cols) + 0.8)
    ax.set_ylim(0, 1)
    ax.set_xticks([])
    ax.set_yticks([])
    unit = balance.result.get("units_used", {}).get("heat", "")
    ax.set_title(f"Site energy flows (widest link {top:.4g} {unit})")
    return fig


def plot_sweep(table: Any, y: Sequence[str] = ("fuel_heat_input", "net_power"), x: str = "value",
               xlabel: Optional[str] = None):
    """Plots totals of a :func:`sweep` table against the swept value; failed points are left
    out of the lines and marked at the bottom. Returns the matplotlib Figure."""
    import matplotlib.pyplot as plt  # type: ignore

    rows = table.to_dict("records") if hasattr(table, "to_dict") else list(table)
    fig, ax = plt.subplots(figsize=(7, 4.5))
    for key in y:
        pts = [(r[x], r[key]) for r in rows if r.get("ok") and r.get(key) is not None]
        if pts:
            ax.plot([p[0] for p in pts], [p[1] for p in pts], "o-", label=key)
    bad = [r[x] for r in rows if not r.get("ok")]
    if bad:
        ax.plot(bad, [ax.get_ylim()[0]] * len(bad), "rx", label="not solved")
    ax.set_xlabel(xlabel or x)
    ax.set_ylabel("site total")
    ax.legend()
    return fig
