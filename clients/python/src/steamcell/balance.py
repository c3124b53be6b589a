"""Site steam balances from Python: build a network from plain dicts, solve it with
``balance.solve`` / ``balance.sweep``, get tables (DataFrames when pandas is installed), and
draw the site's energy flows and a sweep with matplotlib. Leaks, steam traps and lines are units
like the others (kinds ``leak``, ``trap``, ``line``); what each loses and costs is in the
``losses`` table and the site totals (``steam_lost``, ``line_heat_loss``, ``loss_heat``,
``loss_fuel``, ``loss_cost_per_year``, ...), priced with the network's ``costing``.

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
        self.costing_: Optional[Dict[str, Any]] = None

    def unit(self, name: str, kind: str, **spec: Any) -> "Network":
        self.units[name] = dict(spec, kind=kind)
        return self

    def stream(self, name: str, from_: str, to: str, **fixed: Any) -> "Network":
        self.streams[name] = dict(fixed, **{"from": from_, "to": to})
        return self

    def costing(self, **basis: Any) -> "Network":
        """How the losses are priced: ``hours_per_year``, ``fuel_cost`` ("30 EUR/MWh") or
        ``steam_cost`` ("25 /t"), ``boiler_efficiency``, ``makeup_T`` (all optional)."""
        self.costing_ = dict(basis)
        return self

    def as_dict(self) -> Dict[str, Any]:
        d: Dict[str, Any] = {"units": self.units, "streams": self.streams}
        if self.costing_ is not None:
            d["costing"] = self.costing_
        return d


def _network(net: Any) -> Dict[str, Any]:
    return net.as_dict() if isinstance(net, Network) else dict(net)


_LOSS_FIELDS = ("steam", "heat", "condensate", "makeup_heat", "fuel", "choked", "pressure_drop",
                "velocity", "surface_T")


class Balance:
    """A solved site: ``streams``, ``units``, ``losses`` (one row per leak, trap and line:
    what it loses, the boiler heat and fuel to make it good, and its yearly steam, heat, fuel
    and cost) and ``totals`` tables, the raw ``result``."""

    def __init__(self, result: Dict[str, Any]):
        self.result = result
        # Each warning is {"code": ..., "message": ...}; the codes are the server's warning
        # catalogue (README, "Warnings").
        self.warnings: List[Dict[str, str]] = list(result.get("warnings", []))
        self.caution: str = result.get("caution", "")
        srows = []
        for name, s in result["streams"].items():
            st = s.get("state") or {}
            srows.append({"stream": name, "from": s["from"], "to": s["to"], "flow": s["flow"],
                          "p": st.get("p"), "T": st.get("T"), "h": st.get("h"), "x": st.get("x"),
                          "energy_flow": s.get("energy_flow")})
        urows = []
        lrows = []
        for name, u in result["units"].items():
            row = {"unit": name}
            row.update({k: v for k, v in u.items() if not isinstance(v, (dict, list))})
            row["warnings"] = "; ".join(w["message"] for w in u.get("warnings", []))
            row["warning_codes"] = ", ".join(w["code"] for w in u.get("warnings", []))
            urows.append(row)
            loss = u.get("loss")
            if loss:
                lrow = {"unit": name, "kind": u["kind"]}
                lrow.update({k: loss.get(k) for k in _LOSS_FIELDS})
                yearly = loss.get("yearly") or {}
                for k in ("steam", "heat", "fuel", "cost"):
                    lrow[f"{k}_per_year"] = yearly.get(k)
                lrows.append(lrow)
        self.totals: Dict[str, Any] = dict(result["totals"])
        self.costing: Dict[str, Any] = dict(result.get("costing") or {})
        try:
            import pandas as pd  # type: ignore
            self.streams = pd.DataFrame(srows).set_index("stream")
            self.units = pd.DataFrame(urows).set_index("unit")
            self.losses = (pd.DataFrame(lrows).set_index("unit") if lrows else
                           pd.DataFrame(columns=["kind", *_LOSS_FIELDS]))
            self.totals_frame = pd.Series(self.totals, name="total").to_frame()
        except ImportError:
            self.streams = srows
            self.units = urows
            self.losses = lrows
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


def sweep(c, network: Any, path: str, from_: Any, to: Any, points: int = 11,
          streams: Sequence[str] = (), units: Optional[str] = None) -> Any:
    """Varies one specification (``path`` such as ``units.LP_users.demand``) with
    ``balance.sweep`` from ``from_`` to ``to``: numbers in the preset or texts with their unit
    ("20 t/h", "5 barg"), read in the dimension of that field. Returns a DataFrame (one row per
    point: value, ok, error, iterations, the totals, and for each stream of ``streams`` its
    ``NAME.flow``, ``NAME.p``, ``NAME.T``, ``NAME.h``, ``NAME.x``; None where a point was not
    solved) or a list of dicts without pandas. The unit of every column is in
    ``table.attrs["units"]`` (``"value"``: the unit of the swept quantity) and the path in
    ``table.attrs["path"]``."""
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
    col_units = _sweep_units(res, rows, streams)
    try:
        import pandas as pd  # type: ignore
        table = pd.DataFrame(rows)
        table.attrs["units"] = col_units
        table.attrs["path"] = path
        return table
    except ImportError:
        return rows


def _total_unit(name: str, used: Dict[str, str]) -> str:
    if name.endswith("_residual") or name in ("efficiency",) or "fraction" in name:
        return ""
    if name == "hours_per_year":
        return "h"
    if name.endswith("_per_year"):
        if "cost" in name:
            return "per year"
        return used.get("mass", "") if "steam" in name else used.get("energy_per_year", "")
    if name == "loss_discharged":
        return used.get("flow", "")
    if "power" in name:
        return used.get("power", "")
    if any(k in name for k in ("heat", "duty", "fuel", "loss", "cooling", "energy")):
        return used.get("heat", "")
    return used.get("flow", "")  # steam, water and condensate totals are mass flows


def _sweep_units(res: Dict[str, Any], rows: List[Dict[str, Any]],
                 streams: Sequence[str]) -> Dict[str, str]:
    used = res.get("units_used") or {}
    out = {"value": res.get("unit", "")}
    for row in rows[:1]:
        for k in row:
            if k in ("value", "ok", "error", "iterations"):
                continue
            if "." in k:
                field = k.rsplit(".", 1)[1]
                out[k] = {"flow": used.get("flow", ""), "p": used.get("p", ""),
                          "T": used.get("T", ""), "h": used.get("h", ""), "x": ""}[field]
            else:
                out[k] = _total_unit(k, used)
    return out


def _fmt_energy(v: float, unit: str) -> str:
    if unit == "kW" and abs(v) >= 1000:
        return f"{v / 1000:.1f} MW"
    if unit == "W" and abs(v) >= 1e6:
        return f"{v / 1e6:.1f} MW"
    return f"{v:.3g} {unit}".strip()


def plot_energy_flows(balance: Balance, min_share: float = 0.005, label_share: float = 0.02,
                      figsize=(13, 7.5), dpi: int = 100):
    """A Sankey-style chart of the site's energy flows: units in columns by their distance from
    the fuel (the boundary sinks power, process, losses and cooling in the last column), each
    column ordered to keep links short, links drawn as bands whose width is their energy flow
    and labelled with it when they carry at least ``label_share`` of the largest. Links below
    ``min_share`` of the largest are left out; links running back (feedwater and condensate
    returns, power to pumps) are drawn as grey arcs below. Returns a
    :class:`steamcell.plot.Chart`."""
    from matplotlib.patches import PathPatch  # type: ignore
    from matplotlib.path import Path  # type: ignore
    from .plot import Chart, new_figure

    sk = balance.result["sankey"]
    links = [lk for lk in sk["links"] if lk.get("energy") and lk["energy"] > 0]
    if not links:
        raise ValueError("no energy flows to draw")
    top = max(lk["energy"] for lk in links)
    links = [lk for lk in links if lk["energy"] >= min_share * top]
    # one band per (source, target): parallel links are summed
    merged: Dict[Any, Dict[str, Any]] = {}
    for lk in links:
        m = merged.setdefault((lk["source"], lk["target"]),
                              {"source": lk["source"], "target": lk["target"], "energy": 0.0,
                               "streams": []})
        m["energy"] += lk["energy"]
        if lk.get("stream"):
            m["streams"].append(lk["stream"])
    links = list(merged.values())
    kinds = {n["name"]: n.get("kind", "") for n in sk["nodes"]}
    names = [n["name"] for n in sk["nodes"] if any(n["name"] in (lk["source"], lk["target"])
                                                   for lk in links)]
    sinks = [n for n in names if kinds.get(n) == "boundary" and n != "fuel"]
    # columns: shortest distance from the sources (fuel first), sinks last
    targets = {lk["target"] for lk in links if lk["source"] not in sinks}
    depth = {n: 0 for n in names if n not in targets and n not in sinks}
    if "fuel" in depth:
        depth = {n: (0 if n == "fuel" else 1) for n in depth}
    frontier = list(depth)
    while frontier:
        nxt = []
        for n in frontier:
            for lk in links:
                t = lk["target"]
                if lk["source"] == n and t not in depth and t not in sinks:
                    depth[t] = depth[n] + 1
                    nxt.append(t)
        frontier = nxt
    last = max(depth.values(), default=0) + 1
    for n in names:
        depth.setdefault(n, last)
    for n in sinks:
        depth[n] = last
    ncol = last + 1
    forward = [lk for lk in links if depth[lk["target"]] > depth[lk["source"]]]
    backward = [lk for lk in links if depth[lk["target"]] <= depth[lk["source"]]]
    through = {n: max(sum(lk["energy"] for lk in forward if lk["target"] == n),
                      sum(lk["energy"] for lk in forward if lk["source"] == n)) for n in names}
    cols: Dict[int, List[str]] = {}
    for n in names:
        cols.setdefault(depth[n], []).append(n)
    looped = {n for lk in backward for n in (lk["source"], lk["target"])}
    # order each column by the mean position of its neighbours (a few sweeps each way)
    pos = {n: i for d in cols for i, n in enumerate(cols[d])}
    for _ in range(8):
        for d in list(range(1, ncol)) + list(range(ncol - 2, -1, -1)):
            if d not in cols:
                continue

            def centre(n):
                w = [(pos[lk["source"] if lk["target"] == n else lk["target"]], lk["energy"])
                     for lk in forward if n in (lk["source"], lk["target"])]
                tot = sum(e for _, e in w)
                return sum(p * e for p, e in w) / tot if tot else pos[n]
            # nodes with links running back sit low, next to the arcs drawn below
            cols[d].sort(key=lambda n: (n in looped, centre(n)))
            for i, n in enumerate(cols[d]):
                pos[n] = i * 1.0 / max(1, len(cols[d]) - 1) if len(cols[d]) > 1 else 0.5
    # vertical layout: heights proportional to throughput, gaps between nodes
    gap = 0.025
    scale = min((1.0 - gap * (len(m) - 1)) / max(sum(through[n] for n in m), 1e-300)
                for m in cols.values())
    y0: Dict[str, float] = {}
    height = {n: max(through[n] * scale, 0.004) for n in names}
    for d, members in cols.items():
        total = sum(height[n] for n in members) + gap * (len(members) - 1)
        y = 0.5 + total / 2
        for n in members:
            y -= height[n]
            y0[n] = y
            y -= gap
    x = {n: depth[n] / max(1, ncol - 1) for n in names}
    fig = new_figure(figsize, dpi)
    ax = fig.add_subplot(1, 1, 1)
    unit = balance.result.get("units_used", {}).get("heat", "")
    drawn: List[Dict[str, Any]] = []
    out_off = {n: 0.0 for n in names}
    in_off = {n: 0.0 for n in names}
    colour = {"boiler": "#d62728", "turbine": "#2ca02c", "header": "#1f77b4",
              "boundary": "#7f7f7f", "user": "#9467bd", "deaerator": "#17becf"}
    node_w = 0.012
    forward.sort(key=lambda lk: (y0[lk["source"]], -y0[lk["target"]]))
    # bands leave a node top-down in the order of their targets, enter in that of their sources
    by_src = sorted(forward, key=lambda lk: -(y0[lk["target"]] + height[lk["target"]] / 2))
    start = {}
    for lk in by_src:
        s = lk["source"]
        h = lk["energy"] * scale
        start[id(lk)] = y0[s] + height[s] - out_off[s] - h
        out_off[s] += h
    by_tgt = sorted(forward, key=lambda lk: -(y0[lk["source"]] + height[lk["source"]] / 2))
    for lk in by_tgt:
        s, t = lk["source"], lk["target"]
        h = lk["energy"] * scale
        ys = start[id(lk)]
        yt = y0[t] + height[t] - in_off[t] - h
        in_off[t] += h
        xa, xb = x[s] + node_w / 2, x[t] - node_w / 2
        xm = (xa + xb) / 2
        verts = [(xa, ys), (xm, ys), (xm, yt), (xb, yt), (xb, yt + h), (xm, yt + h),
                 (xm, ys + h), (xa, ys + h), (xa, ys)]
        codes = [Path.MOVETO, Path.CURVE4, Path.CURVE4, Path.CURVE4, Path.LINETO, Path.CURVE4,
                 Path.CURVE4, Path.CURVE4, Path.CLOSEPOLY]
        c = colour.get(kinds.get(s, ""), "#1f77b4")
        ax.add_patch(PathPatch(Path(verts, codes), fc=c, ec="none", alpha=0.35))
        entry = {"role": "link", "source": s, "target": t, "energy": lk["energy"], "text": None}
        if lk["energy"] >= label_share * top:
            # the label sits on the band near its target end, where bands are apart
            lx, ly = xa + 0.7 * (xb - xa), (ys + yt) / 2 + h / 2
            ly = yt + h / 2 if abs(xb - xa) < 0.2 else 0.25 * (ys + h / 2) + 0.75 * (yt + h / 2)
            entry["text"] = ax.text(lx, ly, _fmt_energy(lk["energy"], unit), fontsize=7,
                                    ha="center", va="center",
                                    bbox=dict(boxstyle="round,pad=0.12", fc="white", ec="none",
                                              alpha=0.75))
        drawn.append(entry)
    # links running back: grey arcs below the diagram
    for i, lk in enumerate(sorted(backward, key=lambda lk: -lk["energy"])):
        s, t = lk["source"], lk["target"]
        xa, xb = x[s], x[t]
        depth_y = -0.04 - 0.035 * (i % 5)
        ya, yb = y0[s], y0[t]
        verts = [(xa, ya), (xa, depth_y), (xb, depth_y), (xb, yb)]
        lw = max(0.6, 14 * lk["energy"] / top)
        ax.add_patch(PathPatch(Path(verts, [Path.MOVETO, Path.CURVE4, Path.CURVE4, Path.CURVE4]),
                               fc="none", ec="#999999", lw=lw, alpha=0.5))
        entry = {"role": "return", "source": s, "target": t, "energy": lk["energy"], "text": None}
        if lk["energy"] >= label_share * top:
            entry["text"] = ax.text((xa + xb) / 2, 0.75 * depth_y + 0.25 * min(ya, yb) - 0.01,
                                    f"{s} to {t}: {_fmt_energy(lk['energy'], unit)}", fontsize=6.5,
                                    ha="center", va="center", color="#555555",
                                    bbox=dict(boxstyle="round,pad=0.1", fc="white", ec="none",
                                              alpha=0.75))
        drawn.append(entry)
    for n in names:
        kind = kinds.get(n, "")
        ax.add_patch(__import__("matplotlib.patches", fromlist=["Rectangle"]).Rectangle(
            (x[n] - node_w / 2, y0[n]), node_w, height[n], fc=colour.get(kind, "#444444"),
            ec="none"))
        right = depth[n] < ncol - 1
        ax.text(x[n] + (node_w if right else -node_w), y0[n] + height[n] / 2,
                f"{n}\n{_fmt_energy(through[n], unit)}" if through[n] >= label_share * top else n,
                fontsize=7, ha="left" if right else "right", va="center",
                bbox=dict(boxstyle="round,pad=0.1", fc="white", ec="none", alpha=0.6))
        drawn.append({"role": "node", "name": n, "x": x[n], "y": y0[n], "height": height[n]})
    ax.set_xlim(-0.04, 1.04)
    ax.set_ylim(-0.24, 1.02)
    ax.set_xticks([])
    ax.set_yticks([])
    for side in ax.spines.values():
        side.set_visible(False)
    ax.set_title(f"Site energy flows ({unit}; widest band {_fmt_energy(top, unit)})")
    return Chart(fig, drawn, dpi)


def plot_sweep(table: Any, y: Sequence[str] = ("fuel_heat_input", "net_power"), x: str = "value",
               xlabel: Optional[str] = None, figsize=(7, 4.5), dpi: int = 100):
    """Plots totals of a :func:`sweep` table against the swept value, with the units of both
    axes (from ``table.attrs["units"]``); failed points are left out of the lines and marked at
    the bottom. Returns a :class:`steamcell.plot.Chart`."""
    from .plot import Chart, new_figure

    attrs = getattr(table, "attrs", {}) or {}
    units = attrs.get("units", {})
    rows = table.to_dict("records") if hasattr(table, "to_dict") else list(table)
    fig = new_figure(figsize, dpi)
    ax = fig.add_subplot(1, 1, 1)
    drawn = []
    for key in y:
        pts = [(r[x], r[key]) for r in rows if r.get("ok") and r.get(key) is not None]
        if pts:
            u = units.get(key, "")
            ax.plot([p[0] for p in pts], [p[1] for p in pts], "o-",
                    label=f"{key} [{u}]" if u else key)
            drawn.append({"role": "total", "label": key, "x": [p[0] for p in pts],
                          "y": [p[1] for p in pts]})
    bad = [r[x] for r in rows if not r.get("ok")]
    if bad:
        ax.plot(bad, [ax.get_ylim()[0]] * len(bad), "rx", label="not solved")
    xu = units.get(x, "")
    name = xlabel or attrs.get("path") or x
    ax.set_xlabel(f"{name} [{xu}]" if xu else name)
    yunits = sorted({units.get(k, "") for k in y} - {""})
    ax.set_ylabel("site total" + (f" [{', '.join(yunits)}]" if yunits else ""))
    ax.grid(True, linewidth=0.3)
    ax.legend()
    return Chart(fig, drawn, dpi)
