"""Result records: dicts with attribute access, and the :class:`State` of water or steam.

A :class:`State` is the ``water.state`` result object (p, T, rho, v, u, h, s, cp, cv, w, x, ...,
phase, region, units) in the request's unit preset. Component results are :class:`Record`
objects whose nested state objects are :class:`State` objects.
"""

from __future__ import annotations

import html
import math
from typing import Any, Dict, List

# Order of the numeric fields of a state, for display.
STATE_FIELDS = ["p", "T", "rho", "v", "u", "h", "s", "cp", "cv", "w", "x", "kappa", "mu_jt",
                "alpha_v", "kappa_t", "z", "superheat"]
_STATE_MARKERS = {"phase", "region", "units", "h", "s"}

LABELS = {
    "p": "pressure", "T": "temperature", "rho": "density", "v": "specific volume",
    "u": "specific internal energy", "h": "specific enthalpy", "s": "specific entropy",
    "cp": "isobaric heat capacity", "cv": "isochoric heat capacity", "w": "speed of sound",
    "x": "quality (vapour fraction)", "kappa": "isentropic exponent",
    "mu_jt": "Joule-Thomson coefficient", "alpha_v": "cubic expansion coefficient",
    "kappa_t": "isothermal compressibility", "z": "compressibility factor",
    "superheat": "superheat",
}


class Record(dict):
    """A JSON object with attribute access (``r.power`` is ``r["power"]``)."""

    def __getattr__(self, name: str) -> Any:
        try:
            return self[name]
        except KeyError:
            raise AttributeError(name) from None

    def __dir__(self) -> List[str]:
        return sorted(set(super().__dir__()) | {k for k in self if k.isidentifier()})


def _fmt(v: Any) -> str:
    if v is None:
        return "-"
    if isinstance(v, float):
        if v == 0 or (1e-3 <= abs(v) < 1e6):
            return f"{v:.6g}"
        return f"{v:.6e}"
    return str(v)


class State(Record):
    """One state of water or steam, as returned by ``water.state``.

    Attributes are the result fields (``st.p``, ``st.T``, ``st.h``, ...); ``st.units`` maps each
    field to its unit; undefined properties are ``None`` with the reason in ``st.undefined``.
    """

    def value(self, name: str) -> float:
        """The field as a float (NaN where undefined)."""
        v = self.get(name)
        return float("nan") if v is None else float(v)

    def rows(self) -> List[tuple]:
        """(field, value, unit) for every numeric field."""
        units = self.get("units") or {}
        return [(k, self.get(k), units.get(k, "")) for k in STATE_FIELDS if k in self]

    def __repr__(self) -> str:
        units = self.get("units") or {}
        parts = []
        for k in ("p", "T", "h", "s", "x"):
            v = self.get(k)
            if v is not None:
                parts.append(f"{k}={_fmt(v)} {units.get(k, '')}".rstrip())
        parts.append(f"phase={self.get('phase')}")
        if "region" in self:
            parts.append(f"region={self.get('region')}")
        return "State(" + ", ".join(parts) + ")"

    def _repr_html_(self) -> str:
        head = (f"<b>{html.escape(str(self.get('phase', '')))}</b>, IAPWS-IF97 region "
                f"{html.escape(str(self.get('region', '')))}")
        rows = []
        undefined = self.get("undefined") or {}
        for k, v, u in self.rows():
            title = f' title="{html.escape(undefined[k])}"' if v is None and k in undefined else ""
            rows.append(f"<tr><td>{html.escape(k)}</td><td>{html.escape(LABELS.get(k, ''))}</td>"
                        f"<td style='text-align:right'{title}>{html.escape(_fmt(v))}</td>"
                        f"<td>{html.escape(u)}</td></tr>")
        return ("<table class='steamcell-state'><caption>" + head + "</caption>"
                "<thead><tr><th>property</th><th></th><th>value</th><th>unit</th></tr></thead>"
                "<tbody>" + "".join(rows) + "</tbody></table>")


def is_state(obj: Any) -> bool:
    return isinstance(obj, dict) and _STATE_MARKERS <= set(obj)


def wrap(obj: Any) -> Any:
    """Turns decoded JSON into Records, with every nested state object a State."""
    if isinstance(obj, dict):
        inner = {k: wrap(v) for k, v in obj.items()}
        return State(inner) if is_state(obj) else Record(inner)
    if isinstance(obj, list):
        return [wrap(v) for v in obj]
    return obj


def nan_if_none(v: Any) -> float:
    if v is None:
        return math.nan
    return float(v)


def plain(obj: Any) -> Dict[str, Any]:
    return dict(obj)
