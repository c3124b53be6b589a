"""The uncertainty of a result, from a method called with the ``uncertainty`` param.

Every method with numeric inputs (the component methods, ``cycle.rankine``, ``balance.solve``,
``water.state``, ...) takes ``uncertainty``: standard uncertainties of inputs by dotted path,
with options ``k``, ``method`` ("gum" or "monte_carlo"), ``samples``, ``seed``,
``correlations`` and ``outputs``. The result then carries ``uncertainty`` (for every numeric
field, at the same path: value, u, U, k and the contributions of the inputs) and
``uncertainty_basis`` (the inputs as used, warnings, sources)::

    r = c.turbine_expand(inlet={"p": "42 bar", "T": "400 degC"}, outlet_p="4.5 bar",
                         outlet={"T": "190 degC"},
                         uncertainty={"inlet.T": "1 K", "outlet.T": "1 K"})
    steamcell.uncertainty.statement(r, "efficiency")   # 'efficiency = 0.7266 +- 0.0107 (k = 2)'
    steamcell.uncertainty.table(r, "efficiency")       # one row per input
    steamcell.plot.contributions(r, "efficiency")      # bar chart of the shares

The propagation follows JCGM 100:2008 (GUM, first order) and, on request, JCGM 101:2008 (Monte
Carlo). A test result +- U is compared with a guarantee under the test code the contract names
(for a turbine, its acceptance test code); this is not a substitute for it.
"""

from __future__ import annotations

from typing import Any, Dict, List

COLUMNS = ["input", "value", "unit", "u", "u_unit", "sensitivity", "contribution", "share",
           "one_sided"]

# An uncertainty is a difference: of a temperature in K (a degC difference is a kelvin), of a
# gauge or absolute pressure in the plain unit of the same size.
_DIFFERENCE_UNITS = {"degC": "K", "degF": "degF difference", "degR": "degR",
                     "barg": "bar", "psig": "psi", "psia": "psi", "kPag": "kPa", "MPag": "MPa",
                     "kgf/cm2g": "kgf/cm2"}


def u_unit(unit: Any, dimension: Any = None) -> Any:
    """The unit of a standard uncertainty of an input given in ``unit`` (the input's own unit,
    as ``uncertainty_basis`` names it): a difference, so "K" for "degC", "bar" for "barg",
    "psi" for "psia" or "psig"; any other unit is its own. ``dimension`` (the basis's
    "temperature", "pressure", ...) limits the change to temperatures and pressures."""
    if dimension not in (None, "temperature", "pressure"):
        return unit
    return _DIFFERENCE_UNITS.get(unit, unit)


def field(result: Dict[str, Any], path: str) -> Dict[str, Any]:
    """The uncertainty of the result field at dotted ``path`` (``"efficiency"``,
    ``"outlet.T"``, ``"points.3.state.h"``): value, unit, u, U, k, relative, contributions and,
    with method "monte_carlo", monte_carlo."""
    at: Any = result.get("uncertainty")
    if at is None:
        raise KeyError("the result has no uncertainty: call the method with uncertainty={...}")
    for part in path.split("."):
        if isinstance(at, list):
            try:
                at = at[int(part)]
            except (ValueError, IndexError):
                raise KeyError(f"'{part}' in '{path}' is not an index of a list of {len(at)}") from None
        elif isinstance(at, dict) and part in at:
            at = at[part]
        else:
            known = ", ".join(sorted(at)) if isinstance(at, dict) else ""
            raise KeyError(f"no uncertainty of '{path}': '{part}' is not there (known: {known})")
    if not isinstance(at, dict) or "contributions" not in at or "U" not in at:
        raise KeyError(f"'{path}' is not one numeric field; name one of its parts")
    return at


def rows(result: Dict[str, Any], path: str) -> List[Dict[str, Any]]:
    """The sensitivity table of one field as a list of dicts, one per input: input, value and
    unit (the input as given), u (its standard uncertainty, of the size of that unit) and
    u_unit (the unit of u, a difference: "K" for an input in degC, "bar" for one in barg, see
    :func:`u_unit`), sensitivity (the
    field's change per unit of the input), contribution (sensitivity times u, in the field's
    unit), share (of the field's variance) and one_sided."""
    f = field(result, path)
    inputs = {i["input"]: i for i in (result.get("uncertainty_basis") or {}).get("inputs", [])}
    out = []
    for c in f["contributions"]:
        given = inputs.get(c["input"], {})
        out.append({"input": c["input"], "value": given.get("value"), "unit": given.get("unit"),
                    "u": c["u"], "u_unit": u_unit(given.get("unit"), given.get("dimension")),
                    "sensitivity": c["sensitivity"],
                    "contribution": c["contribution"], "share": c["share"],
                    "one_sided": c.get("one_sided", False)})
    return out


def table(result: Dict[str, Any], path: str) -> Any:
    """The sensitivity table of one field: a pandas DataFrame indexed by input with the columns
    of :func:`rows`, largest share first; ``attrs`` holds the field, its value, unit, u, U and
    k. Without pandas, the list of :func:`rows`."""
    f = field(result, path)
    data = sorted(rows(result, path), key=lambda r: -abs(r["share"]))
    try:
        import pandas as pd  # type: ignore
    except ImportError:
        return data
    frame = pd.DataFrame(data, columns=COLUMNS).set_index("input")
    frame.attrs.update({"field": path, "value": f["value"], "unit": f.get("unit"), "u": f["u"],
                        "U": f["U"], "k": f["k"]})
    return frame


def statement(result: Dict[str, Any], path: str, digits: int = 2) -> str:
    """One line: ``field = value +- U unit (k = 2)``, U to ``digits`` significant digits and the
    value to the same decimal place."""
    import math
    f = field(result, path)
    U, value = f["U"], f["value"]
    unit = f.get("unit")
    unit = "" if unit in (None, "1") else f" {unit}"
    if U > 0:
        places = max(0, digits - 1 - int(math.floor(math.log10(U))))
        text = f"{value:.{places}f} +- {U:.{places}f}"
    else:
        text = f"{value} +- 0"
    return f"{path} = {text}{unit} (k = {f['k']:g})"
