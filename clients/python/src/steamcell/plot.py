"""T-s and h-s charts with matplotlib: the saturation dome, isobars (and isotherms), processes.

Every curve comes from the server (``water.curve`` for isobars and isotherms, ``water.batch``
at (T, x) for the dome, its temperatures spaced ever closer towards the critical point so the
top is smooth), in the unit preset of the processes (or ``units``). A process is a
``turbine.expand`` / ``valve.throttle`` / ``pump.raise`` result (inlet -> outlet, dashed to the
isentropic outlet), a ``turbine.train`` result (its expansion line), a ``cycle.rankine`` result,
a State, a list of States, or a ``(label, process)`` pair.

A ``cycle.rankine`` result is drawn as the working fluid goes round (:func:`cycle_paths`):
pumps, feedwater heating (and the mixing of drains pumped forward) and the boiler along their
isobars (through the dome), the throttle valve, the expansion line of each turbine section
(HP, IP, LP; the last one through the expansion-line end point to the used-energy end point
when there is a leaving loss), reheat along its isobar, condensation; the extractions (from the
expansion line, through the extraction line's pressure drop, to the heater's outlet along the
shell's isobar) and the closed heaters' drains (throttled to the next heater or the condenser,
or pumped forward into the feedwater) are separate, labelled branches. The state numbers of the
result's table are written beside their points.

Charts zoom to the processes drawn (``zoom=False`` shows the whole dome); isobar and isotherm
labels sit inside the axes. Every function returns a :class:`Chart`: it shows itself in
Jupyter (a PNG, no ``%matplotlib`` magic needed), saves with ``chart.savefig("x.png")`` or
``"x.svg"``, and passes everything else to its matplotlib Figure (``chart.axes``,
``chart.figure``). ``chart.drawn`` lists what was drawn (role, label, x and y data).

:func:`contributions` draws the inputs' shares of a result field's uncertainty (a result of a
method called with the ``uncertainty`` param, see :mod:`steamcell.uncertainty`).
"""

from __future__ import annotations

import io
import math
import re
from typing import Any, Dict, Iterable, List, Optional, Sequence, Tuple

T_CRIT_K = 647.096  # IAPWS-IF97 critical temperature
T_TRIPLE_K = 273.16


class Chart:
    """A matplotlib Figure that displays itself in Jupyter and remembers what it drew."""

    def __init__(self, figure, drawn: Optional[List[Dict[str, Any]]] = None, dpi: int = 100):
        self.figure = figure
        self.drawn: List[Dict[str, Any]] = drawn if drawn is not None else []
        self.dpi = dpi

    @property
    def ax(self):
        return self.figure.axes[0]

    def __getattr__(self, name: str):
        if name in ("figure", "drawn", "dpi"):
            raise AttributeError(name)
        return getattr(self.figure, name)

    def savefig(self, fname, **kwargs) -> None:
        """Saves the chart at its figure size; the format follows the file name (.png, .svg,
        .pdf). Keywords go to matplotlib's ``savefig`` (``bbox_inches="tight"`` trims it)."""
        kwargs.setdefault("dpi", self.dpi)
        self.figure.savefig(fname, **kwargs)

    def _repr_png_(self) -> bytes:
        buf = io.BytesIO()
        self.figure.savefig(buf, format="png", dpi=self.dpi, bbox_inches="tight")
        return buf.getvalue()

    def __repr__(self) -> str:
        title = self.figure.axes[0].get_title() if self.figure.axes else ""
        return f"<steamcell.plot.Chart {title!r}: {len(self.drawn)} items drawn>"

    def show(self) -> None:
        """Displays the chart: in IPython as a PNG, else in a pyplot window."""
        try:
            from IPython.display import display  # type: ignore
            from IPython import get_ipython  # type: ignore
            if get_ipython() is not None:
                display(self)
                return
        except ImportError:
            pass
        import matplotlib.pyplot as plt  # type: ignore
        manager = plt.figure().canvas.manager  # a pyplot window for a figure made outside it
        manager.canvas.figure = self.figure
        self.figure.set_canvas(manager.canvas)
        plt.show()


def new_figure(figsize=(8, 6), dpi: int = 100):
    """A matplotlib Figure outside pyplot's registry (no window opens, nothing is shown twice)."""
    import matplotlib.figure  # type: ignore
    return matplotlib.figure.Figure(figsize=figsize, dpi=dpi)


# ------------------------------------------------------------------------ processes -> paths

class Path:
    """A line to draw: its role ("boiler", "turbine", "extraction", ...), label, states and
    line style."""

    def __init__(self, role: str, label: str, points: List[Dict[str, Any]], style: str = "-",
                 isobar: Optional[float] = None, main: bool = True):
        self.role, self.label, self.points, self.style = role, label, points, style
        self.isobar = isobar   # pressure of an isobaric process (drawn along its isobar)
        self.main = main       # part of the working fluid's loop (vs. a branch)
        self.heater: Optional[float] = None  # the heater pressure of a branch


_LABELS = [
    ("throttle", re.compile(r"^throttle\b")),
    ("valve_out", re.compile(r"^turbine inlet after the throttle valve")),
    ("cold", re.compile(r"^high-pressure turbine exhaust")),
    ("hot", re.compile(r"^hot reheat")),
    ("crossover", re.compile(r"^crossover")),
    ("extraction", re.compile(r"^extraction to (open|closed) heater")),
    ("shell", re.compile(r"^extraction steam at the shell of (open|closed) heater")),
    ("elep", re.compile(r"^expansion-line end point")),
    ("exhaust", re.compile(r"^turbine exhaust")),
    ("condensate", re.compile(r"^condensate")),
    ("pump", re.compile(r"^pump (\d+) outlet")),
    ("fw_out", re.compile(r"^feedwater leaving (open|closed) heater")),
    ("drain", re.compile(r"^drain of closed heater")),
    ("drain_pump", re.compile(r"^drain pump outlet of closed heater")),
    ("fw_mix", re.compile(r"^feedwater after mixing with the pumped drain")),
    ("boiler_in", re.compile(r"^feedwater entering the boiler")),
]


def _role_of(label: str) -> Tuple[str, Optional[str]]:
    for role, rx in _LABELS:
        m = rx.search(label)
        if m:
            return role, (m.group(1) if m.groups() else None)
    raise ValueError(f"cycle.rankine point label not recognised: {label!r}")


def _fmt_p(p: float, unit: str) -> str:
    return f"{p:.4g} {unit}".strip()


def cycle_paths(c, result: Dict[str, Any], label: str = "cycle") -> List[Path]:
    """The paths of a ``cycle.rankine`` result, following the working fluid (see the module).

    Roles come from the state table's labels; a label this function does not know raises
    ValueError (tests keep the two in step)."""
    pts = result["points"]
    units = (pts[0]["state"].get("units") or {}) if pts else {}
    pu = units.get("p", "")
    by: Dict[str, Any] = {"extraction": [], "pump": [], "fw_out": [], "drain": []}
    heaters: List[Dict[str, Any]] = []   # highest pressure first, as in the state table
    for pt in pts:
        st = dict(pt["state"], number=pt["number"])
        role, arg = _role_of(pt["label"])
        if role == "extraction":
            heaters.append({"kind": arg, "ext": st, "p": st["p"]})
        elif role == "shell":
            heaters[-1]["shell"] = st
        elif role == "fw_out":
            h = next(h for h in heaters if "fw_out" not in h)
            h["fw_out"] = st
        elif role in ("drain", "drain_pump", "fw_mix"):
            h = [h for h in heaters if "fw_out" in h][-1]
            h[role] = st
        elif role == "pump":
            by["pump"].append(st)
        else:
            by[role] = st
    throttle, exhaust, cond = by["throttle"], by["exhaust"], by["condensate"]
    cold, hot = by.get("cold"), by.get("hot")
    cross, valve_out, elep = by.get("crossover"), by.get("valve_out"), by.get("elep")
    out: List[Path] = []
    # feed pumps and feedwater heating, from the condenser up
    pumps = list(by["pump"])
    fw = cond
    k = 0
    if pumps:
        out.append(Path("pump", f"pump {k + 1}", [fw, pumps[0]]))
        fw = pumps[0]
        k = 1
    for h in sorted(heaters, key=lambda h: h["p"]):
        if h["kind"] == "closed":
            out.append(Path("feedwater heating", f"closed heater {_fmt_p(h['p'], pu)}",
                            [fw, h["fw_out"]], isobar=fw["p"]))
            fw = h["fw_out"]
            if "fw_mix" in h:   # its drain pumped forward mixes into the feedwater
                out.append(Path("feedwater heating", f"pumped drain mixing {_fmt_p(h['p'], pu)}",
                                [fw, h["fw_mix"]], isobar=fw["p"]))
                fw = h["fw_mix"]
        else:
            out.append(Path("feedwater heating", f"open heater {_fmt_p(h['p'], pu)}",
                            [fw, h["fw_out"]], isobar=h["fw_out"]["p"]))
            fw = h["fw_out"]
            if k < len(pumps):
                out.append(Path("pump", f"pump {k + 1}", [fw, pumps[k]]))
                fw = pumps[k]
                k += 1
    boiler_in = by.get("boiler_in", fw)
    out.append(Path("boiler", f"boiler {_fmt_p(throttle['p'], pu)}", [boiler_in, throttle],
                    isobar=throttle["p"]))
    # the throttle valve, then one expansion line per turbine section, extraction points on it
    start = throttle
    if valve_out is not None:
        out.append(Path("valve", "throttle valve", [throttle, valve_out]))
        start = valve_out
    ext_states = sorted((h["ext"] for h in heaters), key=lambda s: -s["p"])
    end = [elep, exhaust] if elep is not None else [exhaust]

    def between(hi: float, lo: float) -> List[Dict[str, Any]]:
        return [s for s in ext_states if lo * (1 + 1e-9) < s["p"] < hi * (1 - 1e-9)]

    if cold is not None and hot is not None:
        prh = cold["p"]
        hp = [start] + between(start["p"], prh) + [cold]
        out.append(Path("turbine", "high-pressure turbine", hp))
        out.append(Path("reheat", f"reheat {_fmt_p(prh, pu)}", [cold, hot],
                        isobar=prh if hot["p"] == prh else None))
        if cross is not None:
            ip = [hot] + between(hot["p"], cross["p"]) + [cross]
            out.append(Path("turbine", "intermediate-pressure turbine", ip))
            lp = [cross] + between(cross["p"], exhaust["p"]) + end
        else:
            lp = [hot] + between(hot["p"], exhaust["p"]) + end
        out.append(Path("turbine", "low-pressure turbine", lp))
    elif cross is not None:
        out.append(Path("turbine", "high-pressure turbine",
                        [start] + between(start["p"], cross["p"]) + [cross]))
        out.append(Path("turbine", "low-pressure turbine",
                        [cross] + between(cross["p"], exhaust["p"]) + end))
    else:
        out.append(Path("turbine", "turbine", [start] + ext_states + end))
    out.append(Path("condenser", f"condenser {_fmt_p(exhaust['p'], pu)}", [exhaust, cond],
                    isobar=exhaust["p"]))
    # branches: extraction steam to its heater (through the extraction line's drop to the
    # shell), drains of closed heaters down the cascade or pumped forward
    asc = sorted(heaters, key=lambda h: -h["p"])

    def shell_p(h: Dict[str, Any]) -> float:
        return h.get("shell", h["ext"])["p"]

    for j, h in enumerate(asc):
        end_st = h.get("drain") if h["kind"] == "closed" else h["fw_out"]
        via = [h["shell"]] if "shell" in h else []
        out.append(Path("extraction", f"extraction to {h['kind']} heater {_fmt_p(h['p'], pu)}",
                        [h["ext"]] + via + [end_st], style="--", isobar=shell_p(h), main=False))
        out[-1].heater = h["p"]
        if h["kind"] == "closed" and h.get("drain") is not None and "drain_pump" in h:
            out.append(Path("drain", f"drain {_fmt_p(h['p'], pu)} pumped forward",
                            [h["drain"], h["drain_pump"], h["fw_mix"]], style=":", main=False))
            out[-1].heater = h["p"]
        elif h["kind"] == "closed" and h.get("drain") is not None:
            below = shell_p(asc[j + 1]) if j + 1 < len(asc) else exhaust["p"]
            where = (f"heater {_fmt_p(asc[j + 1]['p'], pu)}" if j + 1 < len(asc) else "condenser")
            preset = units.get("preset")
            params: Dict[str, Any] = {"given": {"p": below, "h": h["drain"]["h"]}}
            if preset:
                params["units"] = preset
            throttled = c.call_raw("water.state", params)
            out.append(Path("drain", f"drain {_fmt_p(h['p'], pu)} to {where}",
                            [h["drain"], throttled], style=":", main=False))
            out[-1].heater = h["p"]
    for p in out:
        p.label = f"{label}: {p.label}" if label != "cycle" else p.label
    return out


def _paths(c, proc: Any, label: Optional[str] = None) -> List[Path]:
    if isinstance(proc, tuple) and len(proc) == 2 and isinstance(proc[0], str):
        return _paths(c, proc[1], proc[0])
    if isinstance(proc, dict):
        if "points" in proc and isinstance(proc["points"], list):  # cycle.rankine
            return cycle_paths(c, proc, label or "cycle")
        if "expansion_line" in proc:  # turbine.train
            return [Path("turbine", label or "expansion line", list(proc["expansion_line"]))]
        if "inlet" in proc and "outlet" in proc and isinstance(proc["inlet"], dict):
            name = label or "process"
            out = [Path("process", name, [proc["inlet"], proc["outlet"]])]
            if isinstance(proc.get("isentropic_outlet"), dict):
                out.append(Path("isentropic", name + " (isentropic)",
                                [proc["inlet"], proc["isentropic_outlet"]], "--", main=False))
            return out
        if "h" in proc and "s" in proc:  # one state
            return [Path("state", label or "state", [proc], "o")]
    if isinstance(proc, (list, tuple)):
        return [Path("process", label or "path", list(proc))]
    raise TypeError(f"cannot draw {type(proc).__name__} as a process")


def _units_of(paths: List[Path]) -> Optional[str]:
    for path in paths:
        for pt in path.points:
            u = pt.get("units") if isinstance(pt, dict) else None
            if isinstance(u, dict) and u.get("preset"):
                return u["preset"]
    return None


# ---------------------------------------------------------------------------- curves

_DOME_CACHE: Dict[Tuple[int, Optional[str], int], Dict[str, List[float]]] = {}


def dome(c, units: Optional[str] = None, points: int = 120) -> Dict[str, List[float]]:
    """The saturation dome as one line (liquid up to the critical point, vapour down): T, s, h,
    p, v lists. Temperatures are spaced ever closer towards the critical point (cubic in the
    distance from it), so the top is smooth."""
    key = (id(c), units, points)
    if key in _DOME_CACHE:
        return _DOME_CACHE[key]
    n = max(8, int(points))
    ts = [T_CRIT_K - (T_CRIT_K - T_TRIPLE_K) * (1 - i / (n - 1)) ** 3 for i in range(n)]
    ts[-1] = T_CRIT_K
    cols: Dict[str, List[float]] = {}
    halves = []
    for x in (0.0, 1.0):
        params: Dict[str, Any] = {"given": {"T": [f"{t!r} K" for t in ts], "x": [x] * n},
                                  "want": ["T", "s", "h", "p", "v"]}
        if units:
            params["units"] = units
        res = c.call_raw("water.batch", params)
        cols["units"] = res.get("units", {})  # type: ignore[assignment]
        half = res["columns"]
        ok = [i for i in range(n) if half["s"][i] is not None]
        halves.append({k: [half[k][i] for i in ok] for k in ("T", "s", "h", "p", "v")})
    liq, vap = halves
    for k in ("T", "s", "h", "p", "v"):
        cols[k] = liq[k] + vap[k][::-1]
    _DOME_CACHE[key] = cols
    return cols


def _curve(c, common: Dict[str, Any], **params: Any) -> List[Dict[str, List[float]]]:
    try:
        return c.call_raw("water.curve", dict(common, **params))["series"]
    except Exception:  # a line outside the range is skipped, never fatal for a chart
        return []


def _isobar_path(c, common, a: Dict[str, Any], b: Dict[str, Any], p: float,
                 n: int = 48) -> List[Dict[str, float]]:
    """States along the isobar p from state a to state b (both on it), the saturation points
    included where the path crosses the dome."""
    lo, hi = sorted((a["T"], b["T"]))
    inner: List[Dict[str, float]] = []
    if hi - lo > 1e-9 * max(1.0, abs(hi)):
        for s in _curve(c, common, kind="isobar", p=p, **{"from": lo, "to": hi, "points": n}):
            inner += [{k: s[k][i] for k in ("T", "s", "h", "p")} for i in range(len(s["s"]))]
    s_lo, s_hi = sorted((a["s"], b["s"]))
    inner = [q for q in inner if s_lo < q["s"] < s_hi]
    inner.sort(key=lambda q: q["s"], reverse=a["s"] > b["s"])
    return [a] + inner + [b]


# ---------------------------------------------------------------------------- the chart

_LEGEND_GROUPS = {
    "pump": "pumps, feedwater heating", "feedwater heating": "pumps, feedwater heating",
    "boiler": "boiler, reheat", "reheat": "boiler, reheat", "turbine": "turbine sections",
    "valve": "turbine sections",
    "condenser": "condenser",
}
_BRANCH_COLOURS = ["#ff7f0e", "#8c564b", "#e377c2", "#bcbd22", "#17becf", "#7f7f7f"]

_ROLE_COLOURS = {
    "pump": "#1f77b4", "feedwater heating": "#1f77b4", "boiler": "#d62728",
    "turbine": "#2ca02c", "reheat": "#d62728", "condenser": "#9467bd", "valve": "#2ca02c",
    "extraction": "#ff7f0e", "drain": "#8c564b", "isentropic": "#7f7f7f",
}


def _label_inside(ax, xs, ys, text, colour, xlim, ylim, used: List[Tuple[float, float]],
                  avoid: Sequence[Tuple[float, float]] = ()):
    """Writes ``text`` at a point of the line (xs, ys) well inside the axes; returns the Text
    or None when no point of the line is visible."""
    x0, x1 = xlim
    y0, y1 = ylim
    inset_x, inset_y = 0.04 * (x1 - x0), 0.06 * (y1 - y0)
    cand = [(x, y) for x, y in zip(xs, ys)
            if x0 + inset_x * 4 <= x <= x1 - inset_x and y0 + inset_y <= y <= y1 - inset_y * 2]
    if not cand:
        return None
    # right-most visible point that is not on top of another label or a process point
    cand.sort(key=lambda q: -q[0])

    def clear(q, others, fx, fy):
        return all(abs(q[0] - u[0]) > fx * (x1 - x0) or abs(q[1] - u[1]) > fy * (y1 - y0)
                   for u in others)

    # the text's box: left of the point (right-aligned), just above it
    w, h = (0.009 * len(text) + 0.02) * (x1 - x0), 0.05 * (y1 - y0)

    def hits(q):
        return sum(1 for u in avoid if q[0] - w <= u[0] <= q[0] + 0.01 * (x1 - x0) and
                   q[1] - 0.02 * (y1 - y0) <= u[1] <= q[1] + h)

    spaced = [q for q in cand if clear(q, used, 0.12, 0.05)] or cand
    pick = min(spaced, key=hits)  # the right-most of those with the fewest process points
    used.append(pick)
    return ax.annotate(text, pick, xytext=(-3, 3), textcoords="offset points", ha="right",
                       va="bottom", fontsize=7, color=colour, clip_on=True,
                       bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.7))


def _chart(c, xkey: str, ykey: str, processes: Sequence[Any], isobars: Optional[Iterable[Any]],
           isotherms: Optional[Iterable[Any]], units: Optional[str], ax, figsize, dpi: int,
           points: int, title: Optional[str], zoom: bool, numbers: bool) -> Chart:
    fig = ax.figure if ax is not None else new_figure(figsize, dpi)
    if ax is None:
        ax = fig.add_subplot(1, 1, 1)
    drawn: List[Dict[str, Any]] = []
    paths: List[Path] = []
    for proc in processes or []:
        paths.extend(_paths(c, proc))
    units = units or _units_of(paths)
    common: Dict[str, Any] = {}
    if units:
        common["units"] = units
    d = dome(c, units, points)
    ax.plot(d[xkey], d[ykey], color="black", linewidth=1.1)
    drawn.append({"role": "dome", "label": "saturation dome", "x": d[xkey], "y": d[ykey]})
    unit = dict(d.get("units") or {})
    # processes: isobaric ones follow their isobar
    colours: Dict[Any, str] = {}
    grouped: set = set()
    for path in paths:
        pts = [q for q in path.points if q.get(xkey) is not None and q.get(ykey) is not None]
        if path.isobar is not None and len(pts) >= 2:   # the last step runs along the isobar
            pts = pts[:-2] + _isobar_path(c, common, pts[-2], pts[-1], path.isobar)
        xs, ys = [q[xkey] for q in pts], [q[ykey] for q in pts]
        if path.role in ("extraction", "drain") and path.isobar is not None or \
                path.role == "drain":
            key = path.heater if path.heater is not None else path.label
            colour = colours.setdefault(("heater", key), _BRANCH_COLOURS[
                sum(1 for k in colours if k[0] == "heater") % len(_BRANCH_COLOURS)])
        else:
            colour = _ROLE_COLOURS.get(path.role)
        if colour is None:
            colour = colours.setdefault(("path", path.label), f"C{(len(colours) + 3) % 10}")
        legend = path.label
        if path.main and path.role in _LEGEND_GROUPS:
            legend = _LEGEND_GROUPS[path.role]
            legend = "_nolegend_" if legend in grouped else legend
            grouped.add(legend)
        if path.style == "o":
            ax.plot(xs, ys, "o", color=colour, label=legend)
        else:
            ends = [path.points[0], path.points[-1]] + (path.points[1:-1] if path.role == "turbine" else [])
            ax.plot(xs, ys, path.style, color=colour, linewidth=1.9 if path.main else 1.2,
                    label=legend)
            ax.plot([q[xkey] for q in ends if q.get(xkey) is not None],
                    [q[ykey] for q in ends if q.get(ykey) is not None], "o", color=colour,
                    markersize=3.5)
        drawn.append({"role": path.role, "label": path.label, "x": xs, "y": ys,
                      "isobar": path.isobar, "main": path.main})
    # limits: the processes (zoom) or the whole dome
    xs_all = [v for e in drawn[1:] for v in e["x"]]
    ys_all = [v for e in drawn[1:] for v in e["y"]]
    if zoom and xs_all:
        lo_x, hi_x, lo_y, hi_y = min(xs_all), max(xs_all), min(ys_all), max(ys_all)
    else:
        lo_x, hi_x = min(d[xkey] + xs_all), max(d[xkey] + xs_all)
        lo_y, hi_y = min(d[ykey] + ys_all), max(d[ykey] + ys_all)
    mx = 0.08 * (hi_x - lo_x or abs(hi_x) or 1)
    my = 0.10 * (hi_y - lo_y or abs(hi_y) or 1)
    xlim, ylim = (lo_x - mx, hi_x + mx), (lo_y - my, hi_y + my)
    ax.set_xlim(*xlim)
    ax.set_ylim(*ylim)
    # isobars: given, else the distinct pressures of the processes (at most five)
    if isobars is None:
        seen: List[float] = []
        for path in paths:
            for q in path.points:
                pv = q.get("p") if isinstance(q, dict) else None
                if isinstance(pv, (int, float)) and all(abs(pv - o) > 1e-6 * max(1.0, abs(o))
                                                        for o in seen):
                    seen.append(float(pv))
        seen.sort()
        isobars = seen if len(seen) <= 5 else [seen[int(round(i * (len(seen) - 1) / 4))]
                                                for i in range(5)]
    used: List[Tuple[float, float]] = []
    avoid = [(x, y) for e in drawn[1:] for x, y in zip(e["x"], e["y"])]
    t_lo, t_hi = (ylim if ykey == "T" else (None, None))
    for pbar in isobars:
        extra = {}
        if t_lo is not None:
            extra = {"from": max(t_lo, _t_min(unit)), "to": t_hi}
        for series in _curve(c, common, kind="isobar", p=pbar, points=120, **extra):
            ax.plot(series[xkey], series[ykey], color="tab:blue", linewidth=0.6, alpha=0.6,
                    zorder=0)
            text = f"{float(pbar):.4g} {unit.get('p', '')}"
            t = _label_inside(ax, series[xkey], series[ykey], text, "tab:blue", xlim, ylim, used,
                              avoid)
            drawn.append({"role": "isobar", "label": text, "x": series[xkey], "y": series[ykey],
                          "text": t})
    for tval in isotherms or []:
        for series in _curve(c, common, kind="isotherm", T=tval, points=120):
            ax.plot(series[xkey], series[ykey], color="tab:olive", linewidth=0.6, alpha=0.7,
                    zorder=0)
            text = f"{float(tval):.4g} {unit.get('T', '')}"
            t = _label_inside(ax, series[xkey], series[ykey], text, "tab:olive", xlim, ylim, used,
                              avoid)
            drawn.append({"role": "isotherm", "label": text, "x": series[xkey],
                          "y": series[ykey], "text": t})
    if numbers:
        # state numbers of the table; points that coincide on the chart share one label
        spots: List[Tuple[float, float, List[int]]] = []
        seen_n = set()
        for path in paths:
            for q in path.points:
                num = q.get("number")
                if num is None or num in seen_n or q.get(xkey) is None:
                    continue
                seen_n.add(num)
                fx = (q[xkey] - xlim[0]) / (xlim[1] - xlim[0])
                fy = (q[ykey] - ylim[0]) / (ylim[1] - ylim[0])
                for sx, sy, nums in spots:
                    if abs(sx - fx) < 0.025 and abs(sy - fy) < 0.025:
                        nums.append(num)
                        break
                else:
                    spots.append((fx, fy, [num]))
        for fx, fy, nums in spots:
            ax.annotate(",".join(map(str, sorted(nums))), (fx, fy), xycoords="axes fraction",
                        xytext=(4, -9), textcoords="offset points", fontsize=7, clip_on=True)
    ax.set_xlim(*xlim)
    ax.set_ylim(*ylim)
    ax.set_xlabel(f"{xkey} [{unit.get(xkey, '')}]")
    ax.set_ylabel(f"{ykey} [{unit.get(ykey, '')}]")
    ax.grid(True, linewidth=0.3)
    if title:
        ax.set_title(title)
    if paths:
        ax.legend(loc="best", fontsize=7, framealpha=0.85)
    return Chart(fig, drawn, dpi)


def _t_min(unit: Dict[str, str]) -> float:
    return {"K": 273.16, "degC": 0.01, "degF": 32.018}.get(unit.get("T", "degC"), -1e300)


def ts(c, processes: Sequence[Any] = (), isobars: Optional[Iterable[Any]] = None,
       units: Optional[str] = None, ax=None, figsize=(8, 6), dpi: int = 100, points: int = 120,
       title: Optional[str] = "T-s chart", zoom: bool = True,
       isotherms: Optional[Iterable[Any]] = None, numbers: bool = True) -> Chart:
    """T-s chart: dome, isobars (default: the processes' pressures) and the processes,
    zoomed to them (``zoom=False``: the whole dome)."""
    return _chart(c, "s", "T", processes, isobars, isotherms, units, ax, figsize, dpi, points,
                  title, zoom, numbers)


def hs(c, processes: Sequence[Any] = (), isobars: Optional[Iterable[Any]] = None,
       units: Optional[str] = None, ax=None, figsize=(8, 6), dpi: int = 100, points: int = 120,
       title: Optional[str] = "h-s chart", zoom: bool = True,
       isotherms: Optional[Iterable[Any]] = None, numbers: bool = True) -> Chart:
    """h-s (Mollier) chart: dome, isobars, optional isotherms and the processes, zoomed to
    them (``zoom=False``: the whole dome)."""
    return _chart(c, "s", "h", processes, isobars, isotherms, units, ax, figsize, dpi, points,
                  title, zoom, numbers)


# ------------------------------------------------------------------------ uncertainty

def contributions(result: Dict[str, Any], field: str, ax=None, figsize=(8, 4.5), dpi: int = 100,
                  title: Optional[str] = None, monte_carlo: bool = True) -> Chart:
    """Bar chart of the inputs' shares of the variance of one result field, from a result
    computed with the ``uncertainty`` param (see :mod:`steamcell.uncertainty`): one horizontal
    bar per input, largest first, labelled with its contribution (sensitivity times u) in the
    field's unit; the title states the field as value +- U (k). With a Monte Carlo answer
    (``monte_carlo=True``) its u is named beside the GUM u. ``chart.drawn`` lists each bar
    (role "share", label the input, x its share, y its position)."""
    from . import uncertainty as unc
    f = unc.field(result, field)
    data = sorted(unc.rows(result, field), key=lambda r: abs(r["share"]))
    unit = f.get("unit")
    unit_text = "" if unit in (None, "1") else f" {unit}"
    if ax is None:
        fig = new_figure(figsize=figsize, dpi=dpi)
        ax = fig.add_subplot(1, 1, 1)
    else:
        fig = ax.figure
    ys = list(range(len(data)))
    shares = [100.0 * r["share"] for r in data]
    colours = ["#1f77b4" if s >= 0 else "#d62728" for s in shares]
    ax.barh(ys, shares, color=colours, height=0.6)
    labels = []
    for r in data:
        # the unit of u, a difference ("K" for an input in degC)
        u_unit = "" if r.get("u_unit") in (None, "1") else f" {r['u_unit']}"
        labels.append(f"{r['input']}\n(u = {r['u']:.3g}{u_unit})")
    ax.set_yticks(ys)
    ax.set_yticklabels(labels)
    top = max([abs(s) for s in shares] + [1e-12])
    for y, s, r in zip(ys, shares, data):
        ax.text(s + (0.01 * top if s >= 0 else -0.01 * top), y,
                f" {s:.1f} %  ({r['contribution']:+.3g}{unit_text})",
                va="center", ha="left" if s >= 0 else "right", fontsize=8)
    lo = min([0.0] + shares)
    ax.set_xlim(lo * 1.35 if lo < 0 else 0.0, top * 1.45)
    ax.axvline(0.0, color="black", linewidth=0.8)
    ax.set_xlabel("share of the variance [%]")
    if title is None:
        title = unc.statement(result, field)
        mc = f.get("monte_carlo")
        if monte_carlo and mc:
            title += f"\nGUM u = {f['u']:.3g}, Monte Carlo u = {mc['u']:.3g} ({mc['samples']} samples)"
    if title:
        ax.set_title(title)
    fig.tight_layout()
    drawn = [{"role": "share", "label": r["input"], "x": 100.0 * r["share"], "y": y,
              "contribution": r["contribution"]} for y, r in zip(ys, data)]
    return Chart(fig, drawn, dpi=dpi)
