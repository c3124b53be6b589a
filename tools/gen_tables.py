#!/usr/bin/env python3
"""Generate the Rust coefficient tables in crates/steamcell-core/src/water/tables/ from the IAPWS coefficient collection.

Usage: python3 tools/gen_tables.py [--check] [DIR_WITH_COEFFICIENT_JSON]

The collection (one JSON file per equation, every digit as the IAPWS release prints it) is
`tools/coefficients/` (its README gives the source and the verification status of each file); the
generated Rust is committed, so a build needs no Python. Re-run this script when the collection
changes, then review the diff. `--check` writes nothing: it regenerates into memory and fails when
a committed table differs (run by scripts/test-all.sh).
"""
import json
import os
import re
import sys

OUT = os.path.join(
    os.path.dirname(os.path.abspath(__file__)), "..", "crates", "steamcell-core", "src", "water", "tables"
)


class RawFloat(float):
    """A float that remembers the text it was parsed from (the release's own number form)."""

    def __new__(cls, text):
        obj = super().__new__(cls, text)
        obj.text = text
        return obj


def num(x):
    """Rust literal for a JSON number, keeping every printed digit."""
    if isinstance(x, RawFloat):
        return x.text
    s = repr(x) if isinstance(x, float) else str(x)
    if isinstance(x, int):
        return f"{x}.0" if abs(x) < 2**53 else repr(float(x))
    if "e" in s or "E" in s:
        return s
    if "." not in s and "inf" not in s and "nan" not in s:
        s += ".0"
    return s


def raw_num(tok):
    """Rust literal from the original JSON token text (keeps the release's own number form)."""
    t = tok.strip()
    if re.fullmatch(r"-?\d+", t):
        return t + ".0"
    if re.fullmatch(r"-?\d+[eE][-+]?\d+", t):
        return t
    return t


def const_name(key, taken):
    name = re.sub(r"[^A-Za-z0-9]", "_", key).upper()
    if name[0].isdigit():
        name = "C_" + name
    if name in taken:
        name = "SMALL_" + name
    taken.add(name)
    return name


def value_of(v):
    if isinstance(v, dict):
        return v.get("value"), v.get("unit")
    return v, None


def table_name(source):
    tables = re.findall(r"Table (\d+)", source or "")
    if len(tables) == 1:
        return f"TABLE_{tables[0]}"
    return "TERMS"


def is_int(x):
    return float(x).is_integer()


def emit_terms(name, terms, doc, out):
    keys = set()
    for t in terms:
        keys |= set(t.keys())
    keys -= {"i", "part", "kind", "curve", "unit", "name"}
    n = len(terms)
    out.append(f"/// {doc}")
    if keys == {"I", "J", "n"}:
        if all(is_int(t["I"]) and is_int(t["J"]) for t in terms):
            out.append(f"pub const {name}: [IJn; {n}] = [")
            for t in terms:
                out.append(f"    IJn {{ i: {int(t['I'])}, j: {int(t['J'])}, n: {num(t['n'])} }}, // {t['i']}")
        else:
            out.append(f"pub const {name}: [IfJn; {n}] = [")
            for t in terms:
                out.append(f"    IfJn {{ i: {num(t['I'])}, j: {int(t['J'])}, n: {num(t['n'])} }}, // {t['i']}")
    elif keys == {"J", "n"}:
        out.append(f"pub const {name}: [Jn; {n}] = [")
        for t in terms:
            out.append(f"    Jn {{ j: {int(t['J'])}, n: {num(t['n'])} }}, // {t['i']}")
    elif keys == {"I", "n"}:
        out.append(f"pub const {name}: [In; {n}] = [")
        for t in terms:
            out.append(f"    In {{ i: {int(t['I'])}, n: {num(t['n'])} }}, // {t['i']}")
    elif keys == {"n"}:
        out.append(f"pub const {name}: [f64; {n}] = [")
        for t in terms:
            out.append(f"    {num(t['n'])}, // n{t['i']}")
    elif keys <= {"n", "gamma"}:
        out.append(f"pub const {name}: [IdealTerm95; {n}] = [")
        for t in terms:
            out.append(f"    IdealTerm95 {{ n: {num(t['n'])}, gamma: {num(t.get('gamma', 0.0))} }}, // {t['i']}")
    elif keys == {"d", "t", "n"}:
        out.append(f"pub const {name}: [PolyTerm95; {n}] = [")
        for t in terms:
            out.append(f"    PolyTerm95 {{ d: {int(t['d'])}, t: {num(t['t'])}, n: {num(t['n'])} }}, // {t['i']}")
    elif keys == {"c", "d", "t", "n"}:
        out.append(f"pub const {name}: [ExpTerm95; {n}] = [")
        for t in terms:
            out.append(
                f"    ExpTerm95 {{ c: {int(t['c'])}, d: {int(t['d'])}, t: {num(t['t'])}, n: {num(t['n'])} }}, // {t['i']}"
            )
    elif keys == {"d", "t", "n", "alpha", "beta", "gamma", "epsilon"}:
        out.append(f"pub const {name}: [GaussTerm95; {n}] = [")
        for t in terms:
            out.append(
                "    GaussTerm95 {{ d: {}, t: {}, n: {}, alpha: {}, beta: {}, gamma: {}, epsilon: {} }}, // {}".format(
                    int(t["d"]), num(t["t"]), num(t["n"]), num(t["alpha"]), num(t["beta"]),
                    num(t["gamma"]), num(t["epsilon"]), t["i"]))
    elif keys == {"a", "b", "B", "C", "D", "A", "beta", "n"}:
        out.append(f"pub const {name}: [NonAnalyticTerm95; {n}] = [")
        for t in terms:
            out.append(
                "    NonAnalyticTerm95 {{ a: {}, b: {}, big_b: {}, n: {}, big_c: {}, big_d: {}, big_a: {}, beta: {} }}, // {}".format(
                    num(t["a"]), num(t["b"]), num(t["B"]), num(t["n"]), num(t["C"]),
                    num(t["D"]), num(t["A"]), num(t["beta"]), t["i"]))
    elif keys == {"a", "b"}:
        out.append(f"pub const {name}: [Ab; {n}] = [")
        for t in terms:
            out.append(f"    Ab {{ a: {num(t['a'])}, b: {num(t['b'])} }}, // {t['i']}")
    else:
        raise SystemExit(f"unknown term shape {sorted(keys)} for {name}")
    out.append("];")
    out.append("")


def doc_lines(prefix, text):
    out = []
    for para in str(text).split("\n"):
        out.append(f"{prefix} {para}".rstrip())
    return out


def gen_file(path):
    d = json.load(open(path), parse_float=RawFloat)
    stem = os.path.splitext(os.path.basename(path))[0]
    mod = stem.replace("-", "_")
    out = []
    out += doc_lines("//!", f"{d['release']}: {d['equation']}.")
    out.append("//!")
    out += doc_lines("//!", f"Source: {d.get('source', '')}. Release: {d.get('release_title', '')}.")
    if d.get("form"):
        out.append("//!")
        out += doc_lines("//!", f"Form: `{d['form']}`")
    if d.get("validity"):
        out.append("//!")
        out += doc_lines("//!", f"Validity: {d['validity']}")
    for note in d.get("notes", []) or []:
        out.append("//!")
        out += doc_lines("//!", f"Note: {note}")
    ver = d.get("verification")
    if ver:
        out.append("//!")
        status = ver.get("status", "")
        desc = f"Verification of the transcription ({status}): {ver.get('method', '')}"
        if ver.get("check_values"):
            desc += f"; {ver['check_values']}"
        if ver.get("note"):
            desc += f". {ver['note']}"
        out += doc_lines("//!", desc)
    out.append("//!")
    out.append("//! Generated by `tools/gen_tables.py` from the project's IAPWS coefficient collection; do not edit by hand.")
    out.append("")
    out.append("#[allow(unused_imports)]")
    out.append("use super::*;")
    out.append("")
    taken = set()
    for group in ("reducing", "constants"):
        items = d.get(group) or {}
        for key, v in items.items():
            if isinstance(v, dict) and "value" not in v:
                # keyed by curve (melting / sublimation)
                for k2, v2 in v.items():
                    val, unit = value_of(v2)
                    cname = const_name(f"{key}_{k2}", taken)
                    out.append(f"/// {group}: {key} {k2}" + (f" ({unit})" if unit else "") + ".")
                    out.append(f"pub const {cname}: f64 = {num(val)};")
                continue
            val, unit = value_of(v)
            cname = const_name(key, taken)
            meaning = (d.get("constants_meaning") or {}).get(key)
            docs = f"{group}: {key}" + (f" ({unit})" if unit else "") + (f": {meaning}" if meaning else "") + "."
            out.append(f"/// {docs}")
            out.append(f"pub const {cname}: f64 = {num(val)};")
    if taken:
        out.append("")
    terms = d.get("terms") or []
    if terms:
        base = table_name(d.get("source"))
        cite = f"{d['release']}, {d.get('source', '')}"
        if all("name" in t for t in terms):
            for t in terms:
                cname = const_name(t["name"], taken)
                unit = f" ({t['unit']})" if t.get("unit") else ""
                out.append(f"/// {cite}: {t['name']}{unit}.")
                out.append(f"pub const {cname}: f64 = {num(t['n'])};")
        else:
            groupkey = None
            for k in ("curve", "kind", "part"):
                if any(k in t for t in terms):
                    groupkey = k
                    break
            if groupkey is None:
                emit_terms(base, terms, f"{cite}: {len(terms)} terms (row number in the trailing comment).", out)
            else:
                groups = {}
                for t in terms:
                    g = t.get("kind") or t.get(groupkey) if groupkey != "curve" else t["curve"]
                    if groupkey == "kind" or "kind" in t:
                        g = t.get("kind", t.get("part"))
                    groups.setdefault(g, []).append(t)
                for g, ts in groups.items():
                    gname = "TERMS_" + re.sub(r"[^A-Za-z0-9]", "_", g).upper()
                    emit_terms(gname, ts, f"{cite}: {g} terms (row number in the trailing comment).", out)
    # One printed row per line: rustfmt would spread each struct literal over five lines.
    out = [("#[rustfmt::skip]\n" + line) if re.match(r"pub const \w+: \[\w+; \d+\] = \[$", line) else line
           for line in out]
    text = "\n".join(out).rstrip() + "\n"
    write(os.path.join(OUT, mod + ".rs"), text)
    return mod, d["release"], d["equation"]


HEADER = '''//! IAPWS coefficient tables, one module per equation, transcribed with every printed digit.
//!
//! Units are the releases' own: p in MPa (Pa where a module says so), T in K, h in kJ/kg,
//! s in kJ/(kg K), v in m3/kg, rho in kg/m3. Each module's doc names its release, equation and
//! table, and how the transcription was checked numerically.
//!
//! Architecture invariant: this folder holds data only; the equations live in `crate::water::if97`
//! and its siblings. Generated by `tools/gen_tables.py`; do not edit by hand.
#![allow(
    clippy::excessive_precision,
    clippy::unreadable_literal,
    clippy::approx_constant
)]

/// A term of a two-variable power series: exponents I, J and coefficient n.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IJn {
    /// Exponent I.
    pub i: i32,
    /// Exponent J.
    pub j: i32,
    /// Coefficient n.
    pub n: f64,
}

/// A power-series term with a fractional exponent I (IF97 T(p,s) subregion 2a).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IfJn {
    /// Exponent I (fractional).
    pub i: f64,
    /// Exponent J.
    pub j: i32,
    /// Coefficient n.
    pub n: f64,
}

/// A one-variable series term with exponent J.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Jn {
    /// Exponent J.
    pub j: i32,
    /// Coefficient n.
    pub n: f64,
}

/// A one-variable series term with exponent I.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct In {
    /// Exponent I.
    pub i: i32,
    /// Coefficient n.
    pub n: f64,
}

/// IAPWS-95 ideal-gas term: coefficient n and, for the Planck-Einstein terms, gamma (0 otherwise).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IdealTerm95 {
    /// Coefficient n.
    pub n: f64,
    /// Exponent gamma (0 for the first three terms).
    pub gamma: f64,
}

/// IAPWS-95 polynomial residual term n delta^d tau^t.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PolyTerm95 {
    /// Exponent d of delta.
    pub d: i32,
    /// Exponent t of tau.
    pub t: f64,
    /// Coefficient n.
    pub n: f64,
}

/// IAPWS-95 exponential residual term n delta^d tau^t exp(-delta^c).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ExpTerm95 {
    /// Exponent c.
    pub c: i32,
    /// Exponent d of delta.
    pub d: i32,
    /// Exponent t of tau.
    pub t: f64,
    /// Coefficient n.
    pub n: f64,
}

/// IAPWS-95 Gaussian residual term.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GaussTerm95 {
    /// Exponent d of delta.
    pub d: i32,
    /// Exponent t of tau.
    pub t: f64,
    /// Coefficient n.
    pub n: f64,
    /// alpha.
    pub alpha: f64,
    /// beta.
    pub beta: f64,
    /// gamma.
    pub gamma: f64,
    /// epsilon.
    pub epsilon: f64,
}

/// IAPWS-95 non-analytic residual term (the release's a, b, B, C, D, A, beta).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NonAnalyticTerm95 {
    /// a.
    pub a: f64,
    /// b.
    pub b: f64,
    /// B.
    pub big_b: f64,
    /// Coefficient n.
    pub n: f64,
    /// C.
    pub big_c: f64,
    /// D.
    pub big_d: f64,
    /// A.
    pub big_a: f64,
    /// beta.
    pub beta: f64,
}

/// A melting or sublimation term a_i theta^b_i.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ab {
    /// Coefficient a.
    pub a: f64,
    /// Exponent b.
    pub b: f64,
}
'''


CHECK = {"on": False, "stale": []}


def write(path, text):
    """Writes a generated file, or in --check mode records it when the committed text differs."""
    if CHECK["on"]:
        try:
            with open(path) as f:
                same = f.read() == text
        except FileNotFoundError:
            same = False
        if not same:
            CHECK["stale"].append(os.path.normpath(path))
        return
    with open(path, "w") as f:
        f.write(text)


def main():
    args = sys.argv[1:]
    if args[:1] == ["--check"]:
        CHECK["on"] = True
        args = args[1:]
    if len(args) > 1:
        raise SystemExit(__doc__)
    here = os.path.dirname(os.path.abspath(__file__))
    src = args[0] if args else os.path.join(here, "coefficients")
    os.makedirs(OUT, exist_ok=True)
    mods = []
    for name in sorted(os.listdir(src)):
        if name.endswith(".json"):
            mods.append(gen_file(os.path.join(src, name)))
    lines = [HEADER]
    for mod, release, equation in mods:
        lines.append(f"/// {release}: {equation}.")
        lines.append(f"pub mod {mod};")
    write(os.path.join(OUT, "mod.rs"), "\n".join(lines) + "\n")
    if CHECK["on"]:
        if CHECK["stale"]:
            raise SystemExit("generated tables differ from tools/gen_tables.py's output: " + ", ".join(CHECK["stale"]))
        print(f"{len(mods)} generated table modules match {os.path.normpath(src)}")
        return
    print(f"wrote {len(mods)} modules to {os.path.normpath(OUT)}")


if __name__ == "__main__":
    main()
