"""T-s and h-s charts with matplotlib: the saturation dome, a few isobars, and process paths.

Every curve comes from the server (``water.curve``: kind "dome" and "isobar"), in the unit
preset of the processes (or ``units``). A process is a ``turbine.expand`` / ``valve.throttle`` /
``pump.raise`` result (inlet -> outlet, dashed to the isentropic outlet), a ``turbine.train``
result (its expansion line), a ``cycle.rankine`` result (its numbered state table, closed), a
State, a list of States, or a ``(label, process)`` pair. Returns the matplotlib Figure.
"""

from __future__ import annotations

from typing import Any, Dict, Iterable, List, Optional, Sequence, Tuple

_Path = Tuple[str, List[Dict[str, Any]], str]  # (label, points, line style)


def _paths(proc: Any, label: Optional[str] = None) -> List[_Path]:
    if isinstance(proc, tuple) and len(proc) == 2 and isinstance(proc[0], str):
        return _paths(proc[1], proc[0])
    if isinstance(proc, dict):
        if "points" in proc and isinstance(proc["points"], list):  # cycle.rankine
            pts = [pt["state"] for pt in proc["points"]]
            if pts:
                pts = pts + [pts[0]]
            return [(label or "cycle", pts, "-")]
        if "expansion_line" in proc:  # turbine.train
            return [(label or "expansion line", list(proc["expansion_line"]), "-")]
        if "inlet" in proc and "outlet" in proc and isinstance(proc["inlet"], dict):
            out = [(label or "process", [proc["inlet"], proc["outlet"]], "-")]
            if isinstance(proc.get("isentropic_outlet"), dict):
                out.append(((label or "process") + " (isentropic)",
                            [proc["inlet"], proc["isentropic_outlet"]], "--"))
            return out
        if "h" in proc and "s" in proc:  # one state
            return [(label or "state", [proc], "o")]
    if isinstance(proc, (list, tuple)):
        return [(label or "path", list(proc), "-")]
    raise TypeError(f"cannot draw {type(proc).__name__} as a process")


def _units_of(paths: List[_Path]) -> Optional[str]:
    for _, pts, _ in paths:
        for pt in pts:
            u = pt.get("units") if isinstance(pt, dict) else None
            if isinstance(u, dict) and u.get("preset"):
                return u["preset"]
    return None


def _chart(c, xkey: str, ykey: str, processes: Sequence[Any], isobars: Optional[Iterable[Any]],
           units: Optional[str], ax, figsize, dpi, points: int, title: Optional[str]):
    import matplotlib
    if ax is None:
        import matplotlib.figure
        fig = matplotlib.figure.Figure(figsize=figsize, dpi=dpi)
        ax = fig.add_subplot(1, 1, 1)
    else:
        fig = ax.figure
    paths: List[_Path] = []
    for proc in processes or []:
        paths.extend(_paths(proc))
    units = units or _units_of(paths)
    common: Dict[str, Any] = {"points": points}
    if units:
        common["units"] = units
    dome = c.call_raw("water.curve", dict(common, kind="dome"))
    unit = dome.get("units", {})
    for series in dome["series"]:
        ax.plot(series[xkey], series[ykey], color="black", linewidth=1.2)
    # isobars: given, else the distinct pressures of the processes (at most four)
    if isobars is None:
        seen: List[float] = []
        for _, pts, _ in paths:
            for pt in pts:
                pv = pt.get("p") if isinstance(pt, dict) else None
                if isinstance(pv, (int, float)) and all(abs(pv - q) > 1e-6 * max(1.0, abs(q)) for q in seen):
                    seen.append(float(pv))
        isobars = sorted(seen)[-4:]
    for pbar in isobars:
        try:
            iso = c.call_raw("water.curve", dict(common, kind="isobar", p=pbar))
        except Exception:  # an isobar outside the range is skipped, never fatal for a chart
            continue
        for series in iso["series"]:
            ax.plot(series[xkey], series[ykey], color="tab:blue", linewidth=0.7, alpha=0.7)
            if series[xkey]:
                ax.annotate(series.get("name", ""), (series[xkey][-1], series[ykey][-1]),
                            fontsize=7, color="tab:blue")
    colors = matplotlib.rcParams["axes.prop_cycle"].by_key().get("color", ["tab:red"])
    for k, (label, pts, style) in enumerate(paths):
        xs = [pt[xkey] for pt in pts if pt.get(xkey) is not None and pt.get(ykey) is not None]
        ys = [pt[ykey] for pt in pts if pt.get(xkey) is not None and pt.get(ykey) is not None]
        color = colors[(k + 3) % len(colors)]
        if style == "o":
            ax.plot(xs, ys, "o", color=color, label=label)
        else:
            ax.plot(xs, ys, style, marker="o", markersize=4, color=color, linewidth=1.8, label=label)
    # frame the processes when there are any; else the dome
    xs_all = [pt[xkey] for _, pts, _ in paths for pt in pts if pt.get(xkey) is not None]
    ys_all = [pt[ykey] for _, pts, _ in paths for pt in pts if pt.get(ykey) is not None]
    dome_x = [v for s in dome["series"] for v in s[xkey]]
    dome_y = [v for s in dome["series"] for v in s[ykey]]
    lo_x, hi_x = min(dome_x + xs_all), max(dome_x + xs_all)
    lo_y, hi_y = min(dome_y + ys_all), max(dome_y + ys_all)
    mx, my = 0.05 * (hi_x - lo_x or 1), 0.08 * (hi_y - lo_y or 1)
    ax.set_xlim(lo_x - mx, hi_x + mx)
    ax.set_ylim(lo_y - my, hi_y + my)
    ax.set_xlabel(f"{xkey} [{unit.get(xkey, '')}]")
    ax.set_ylabel(f"{ykey} [{unit.get(ykey, '')}]")
    ax.grid(True, linewidth=0.3)
    if title:
        ax.set_title(title)
    if paths:
        ax.legend(loc="best", fontsize=8)
    return fig


def ts(c, processes: Sequence[Any] = (), isobars: Optional[Iterable[Any]] = None,
       units: Optional[str] = None, ax=None, figsize=(8, 6), dpi: int = 100, points: int = 80,
       title: Optional[str] = "T-s chart"):
    """T-s chart: dome, isobars (default: the processes' pressures) and the processes."""
    return _chart(c, "s", "T", processes, isobars, units, ax, figsize, dpi, points, title)


def hs(c, processes: Sequence[Any] = (), isobars: Optional[Iterable[Any]] = None,
       units: Optional[str] = None, ax=None, figsize=(8, 6), dpi: int = 100, points: int = 80,
       title: Optional[str] = "h-s chart"):
    """h-s (Mollier) chart: dome, isobars and the processes."""
    return _chart(c, "s", "h", processes, isobars, units, ax, figsize, dpi, points, title)
