"""What a spreadsheet cell hands to a steamcell function, turned into JSON-RPC params, and the
number picked back out of a result. No UNO and no network here (the Excel add-in's
functions.js implements the same rules in JavaScript; clients/sheet-cases.json holds cases both
add-ins are tested against).

Rules:
- A value is a number (read in the unit preset's unit) or a text with its unit ("42 barg"). An
  empty text, a missing argument or a whole range where one value belongs is refused with a
  message naming the argument.
- `options` is a text of name=value items separated by spaces or semicolons:
  `units=us formulation=iapws95 prefer=liquid`. A value is a bare word, a "quoted text" (may
  hold spaces), or a JSON object or array ({"preset": "engineering", "p": "barg"}); true, false
  and plain numbers become JSON booleans and numbers; a dotted name (`units.p=barg`) builds a
  nested object. Every option goes to the method's params unchanged, so options the server
  learns later (a per-quantity unit, say) need no change here.
- A result path is dotted (`outlet.T`, `stages.0.power`); a number segment indexes a list.
"""

from __future__ import annotations

import json
import math
import re

_NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$")


class CellError(Exception):
    """A cell's error: `message` is what the `why` function shows. `kind` is "value" for a bad
    input or a state that cannot be computed (#VALUE!), "engine" when no engine can be reached
    (#N/A)."""

    def __init__(self, message: str, kind: str = "value"):
        super().__init__(message)
        self.message = message
        self.kind = kind


def is_missing(v) -> bool:
    return v is None or (isinstance(v, str) and v.strip() == "")


def is_range(v) -> bool:
    return isinstance(v, (tuple, list))


def scalar(v):
    """A 1x1 range as its one value; anything else unchanged."""
    while is_range(v) and len(v) == 1:
        inner = v[0]
        if is_range(inner) and len(inner) == 1:
            v = inner[0]
        elif is_range(inner):
            return v
        else:
            v = inner
    return v


def text_arg(v, what: str) -> str:
    """A name argument (quantity, property name, method, path): a non-empty text."""
    v = scalar(v)
    if is_missing(v):
        raise CellError(f"{what} is missing: give it as a text, e.g. \"h\"")
    if is_range(v):
        raise CellError(f"{what} is a range; give one text")
    if isinstance(v, bool):
        raise CellError(f"{what} is TRUE/FALSE; give a text")
    if isinstance(v, float):
        if v.is_integer():
            return str(int(v))
        return repr(v)
    if isinstance(v, int):
        return str(v)
    return str(v).strip()


def with_unit(pair):
    """Two cells, a number and its unit (e.g. B7:C7 holding 42 and "barg"), as "42.0 barg"; None
    when `pair` is not such a pair. The number is written with a decimal point whatever the
    spreadsheet's locale."""
    flat = [x for r in pair for x in (r if is_range(r) else (r,))] if is_range(pair) else []
    if len(flat) == 2 and isinstance(flat[0], (int, float)) and not isinstance(flat[0], bool) \
            and isinstance(flat[1], str) and flat[1].strip():
        if not math.isfinite(flat[0]):
            return None
        return f"{flat[0]!r} {flat[1].strip()}"
    return None


def value_arg(v, what: str):
    """A value argument as JSON: a number, a text with its unit, or two cells (number, unit)."""
    v = scalar(v)
    if v is None:
        raise CellError(f"{what} is empty: give a number or a text with its unit such as \"42 barg\"")
    if is_range(v):
        flat = [x for r in v for x in (r if is_range(r) else (r,))]
        if len(flat) == 2 and isinstance(flat[1], str) and flat[1].strip():
            joined = _joined(flat)
            if is_missing(joined):
                raise CellError(f"{what} is an empty cell (beside its unit {flat[1].strip()})")
            return joined
        raise CellError(f"{what} is a range of several cells; give one value, or two cells "
                        "holding a number and its unit (or use COLUMN for ranges)")
    if isinstance(v, bool):
        raise CellError(f"{what} is TRUE/FALSE, not a number or a text with its unit")
    if isinstance(v, (int, float)):
        if not math.isfinite(v):
            raise CellError(f"{what} is not a finite number")
        return v
    s = str(v).strip()
    if s == "":
        raise CellError(f"{what} is empty: give a number or a text with its unit such as \"42 barg\"")
    return s


def parse_options(text) -> dict:
    """The params an options text adds (see the module doc); {} for a missing or empty one."""
    text = scalar(text)
    if is_missing(text):
        return {}
    if is_range(text):
        raise CellError("options is a range; give one text such as \"units=us prefer=liquid\"")
    if isinstance(text, (int, float)):
        raise CellError(f"options is the number {text!r}; give a text such as \"units=us\"")
    s = str(text)
    out: dict = {}
    i, n = 0, len(s)
    while i < n:
        while i < n and (s[i].isspace() or s[i] == ";"):
            i += 1
        if i >= n:
            break
        eq = s.find("=", i)
        stop = i
        while stop < n and not s[stop].isspace() and s[stop] != ";":
            stop += 1
        if eq < 0 or eq > stop:
            word = s[i:stop]
            raise CellError(f"options: '{word}' is not name=value (e.g. units=us prefer=liquid)")
        name = s[i:eq].strip()
        if not name or not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z0-9_]+)*", name):
            raise CellError(f"options: '{s[i:eq]}' is not an option name")
        j = eq + 1
        if j < n and s[j] == '"':
            end = s.find('"', j + 1)
            if end < 0:
                raise CellError(f"options: the text after {name}= has no closing quote")
            value = s[j + 1:end]
            i = end + 1
        elif j < n and s[j] in "{[":
            value, used = _json_prefix(s[j:], name)
            i = j + used
        else:
            k = j
            while k < n and not s[k].isspace() and s[k] != ";":
                k += 1
            word = s[j:k]
            i = k
            if word == "":
                raise CellError(f"options: {name}= has no value")
            value = _word(word)
        _put(out, name, value)
    return out


def _json_prefix(s: str, name: str):
    try:
        value, used = json.JSONDecoder().raw_decode(s)
    except ValueError as e:
        raise CellError(f"options: the value of {name} is not valid JSON ({e.msg})") from None
    return value, used


def _word(word: str):
    if word == "true":
        return True
    if word == "false":
        return False
    if _NUMBER.match(word):
        f = float(word)
        return int(word) if re.fullmatch(r"[+-]?\d+", word) else f
    return word


def _put(out: dict, dotted: str, value) -> None:
    parts = dotted.split(".")
    at = out
    for k, p in enumerate(parts[:-1]):
        nxt = at.get(p)
        if nxt is None:
            nxt = at[p] = {}
        elif not isinstance(nxt, dict):
            raise CellError(f"'{'.'.join(parts[:k + 1])}' is given both as a value and with "
                            f"names below it ('{dotted}')")
        at = nxt
    last = parts[-1]
    if last in at:
        raise CellError(f"'{dotted}' is given twice")
    at[last] = value


def pairs_to_params(pairs, what: str = "pairs") -> dict:
    """Name/value arguments (names dotted for nested params, a number segment an index into a
    list) as one params object."""
    flat = [scalar(p) for p in (pairs or ())]
    if len(flat) % 2:
        raise CellError(f"{what}: give name, value pairs; {len(flat)} arguments leave the last "
                        f"name ({_short(flat[-1])}) without a value")
    out: dict = {}
    for k in range(0, len(flat), 2):
        name = text_arg(flat[k], f"parameter name {k // 2 + 1}")
        raw = flat[k + 1]
        if isinstance(raw, bool):
            value = raw
        else:
            value = value_arg(raw, f"the value of {name}")
            if value in ("true", "false"):
                value = value == "true"
        _put_indexed(out, name, value)
    _check_holes(out, "")
    return out


def _short(v) -> str:
    s = repr(v)
    return s if len(s) < 30 else s[:27] + "..."


def _put_indexed(out: dict, dotted: str, value) -> None:
    parts = dotted.split(".")
    if any(p == "" for p in parts):
        raise CellError(f"parameter name '{dotted}' has an empty part")
    at = out
    for k, p in enumerate(parts):
        last = k == len(parts) - 1
        nxt_is_index = not last and parts[k + 1].isdigit()
        if isinstance(at, list):
            idx = int(p)
            while len(at) <= idx:
                at.append(None)
            if last:
                if at[idx] is not None:
                    raise CellError(f"'{dotted}' is given twice")
                at[idx] = value
            else:
                if at[idx] is None:
                    at[idx] = [] if nxt_is_index else {}
                at = at[idx]
        else:
            if last:
                if p in at:
                    raise CellError(f"'{dotted}' is given twice")
                at[p] = value
            else:
                if p not in at:
                    at[p] = [] if nxt_is_index else {}
                elif not isinstance(at[p], (dict, list)):
                    raise CellError(f"'{'.'.join(parts[:k + 1])}' is given both as a value and "
                                    f"with names below it ('{dotted}')")
                at = at[p]


def _check_holes(v, path: str) -> None:
    """Refuses a list with a missing element (e.g. inlets.1.p given without inlets.0)."""
    if isinstance(v, dict):
        for k, x in v.items():
            _check_holes(x, f"{path}.{k}" if path else k)
    elif isinstance(v, list):
        for i, x in enumerate(v):
            if x is None:
                raise CellError(f"'{path}.{i}' is missing (list elements are numbered from 0)")
            _check_holes(x, f"{path}.{i}")


def pick(result, path: str, what: str = "the result"):
    """The value at a dotted path of a JSON result: a number, or a text (e.g. phase). A null
    answers the reason the result gives for it (`undefined`), a list or object is refused."""
    at = result
    parts = path.split(".")
    for k, p in enumerate(parts):
        where = what if k == 0 else "'" + ".".join(parts[:k]) + "'"
        if isinstance(at, dict):
            if p not in at:
                known = ", ".join(key for key in at.keys() if key not in ("units", "undefined"))
                raise CellError(f"unknown quantity '{path}': '{p}' is not in {where}; known there: {known}")
            parent, at = at, at[p]
        elif isinstance(at, list):
            if not p.isdigit() or int(p) >= len(at):
                raise CellError(f"'{p}' in '{path}' is not an index of {where} (0 to {len(at) - 1})")
            parent, at = None, at[int(p)]
        else:
            raise CellError(f"'{path}': {where} is a single value, it has no '{p}'")
    if at is None:
        reason = None
        if isinstance(parent, dict) and isinstance(parent.get("undefined"), dict):
            reason = parent["undefined"].get(parts[-1])
        raise CellError(f"{path} is not defined here" + (f": {reason}" if reason else ""))
    if isinstance(at, bool):
        return 1.0 if at else 0.0
    if isinstance(at, (int, float)):
        return float(at)
    if isinstance(at, str):
        return at
    kind = "list" if isinstance(at, list) else "group of values"
    names = ", ".join(at.keys()) if isinstance(at, dict) else f"0 to {len(at) - 1}"
    raise CellError(f"'{path}' is a {kind}, not one number; name one of its parts ({names})")


def column_values(v, what: str):
    """A range (or a single value) as a flat list and its orientation ("column", "row", or None
    for a single value)."""
    if not is_range(v):
        return [v], None
    rows = [tuple(r) if is_range(r) else (r,) for r in v]
    if len(rows) == 1:
        return list(rows[0]), ("row" if len(rows[0]) > 1 else None)
    if all(len(r) == 1 for r in rows):
        return [r[0] for r in rows], "column"
    if all(len(r) == 2 for r in rows) and any(isinstance(r[1], str) and r[1].strip() for r in rows):
        # two columns: numbers and their units
        return [_joined(r) for r in rows], "column"
    raise CellError(f"{what} is a block of {len(rows)} rows by {max(len(r) for r in rows)} "
                    "columns; give one column or one row")


def _joined(row):
    """One row of a (number, unit) block as one value: "42.0 barg", the number alone when the
    unit cell is empty, "" when the number cell is."""
    num, unit = row
    if not (isinstance(unit, str) and unit.strip()):
        return num
    if is_missing(num):
        return ""
    if isinstance(num, (int, float)) and not isinstance(num, bool):
        return with_unit(row) or num
    return f"{str(num).strip()} {unit.strip()}"
