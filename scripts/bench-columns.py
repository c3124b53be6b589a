"""Columns at memory speed (a bench, not a test): times a notebook user's batch of (p, T) rows
through the Python client against a general-purpose multi-fluid property library's array call
on the same rows (a test-only oracle, never a product dependency), and prints the ratios.
Run through scripts/bench-columns.sh.

Three cases on 100,000 mixed rows (a quarter each in IAPWS-IF97 regions 1, 2, 3 and 5):
  plain   numeric columns in MPa and degC -> h, s, v (kJ/kg, kJ/(kg K), m3/kg);
  tagged  columns tagged ("p_barg", "barg"), ("T_C", "degC") -> p in bar, T in degC, h in kJ/kg;
  phase   the plain columns -> h, s, v and the phase (text).
Each steamcell figure is the client's whole call (the frame in, the frame out); the library's is
its array call on the same rows with the conversions to and from its SI units (numpy, counted).
The library runs its general Helmholtz backend for water (what a notebook user of it gets by
default); a second line gives its IF97 backend for a like-for-like kernel comparison. Then the
packed and JSON routes of the plain case at 100,000 and 1,000,000 rows.
"""
import os
import sys
import time

import numpy as np
import pandas as pd

import steamcell

AMBIENT_MPA = 0.101325  # the standard atmosphere, steamcell's default ambient


def mixed_rows(n):
    """n (p MPa, T degC) rows, a quarter in each of IF97 regions 1, 2, 3 and 5, interleaved."""
    i = np.arange(n)
    k = i % 4
    j = i // 4
    p = np.empty(n)
    t = np.empty(n)
    # region 1: compressed liquid, 5 to 50 MPa, 20 to 250 degC
    p[k == 0] = 5.0 + (j[k == 0] % 451) * 0.1
    t[k == 0] = 20.0 + (j[k == 0] % 461) * 0.5
    # region 2: superheated steam, 0.1 to 10 MPa, 350 to 750 degC
    p[k == 1] = 0.1 + (j[k == 1] % 991) * 0.01
    t[k == 1] = 350.0 + (j[k == 1] % 401) * 1.0
    # region 3: 40 to 80 MPa, 360 to 390 degC (above the B23 line)
    p[k == 2] = 40.0 + (j[k == 2] % 401) * 0.1
    t[k == 2] = 360.0 + (j[k == 2] % 301) * 0.1
    # region 5: 0.5 to 40 MPa, 850 to 1500 degC
    p[k == 3] = 0.5 + (j[k == 3] % 396) * 0.1
    t[k == 3] = 850.0 + (j[k == 3] % 651) * 1.0
    return p, t


def best(f, k):
    out = None
    for _ in range(k):
        t0 = time.perf_counter()
        f()
        dt = time.perf_counter() - t0
        out = dt if out is None else min(out, dt)
    return out


def main():
    binary = os.environ.get("STEAMCELL_BIN")
    c = steamcell.connect(binary=binary)
    try:
        import CoolProp.CoolProp as CP  # type: ignore
    except ImportError:
        CP = None
    print(f"server: {c.banner}")
    n = 100_000
    p, t = mixed_rows(n)
    regions = c.batch({"p": p, "T": t}, want=["region"], progress=False)["region"]
    counts = {int(r): int((regions == r).sum()) for r in np.unique(regions)}
    print(f"{n} rows, IF97 regions: {counts}")

    plain_df = pd.DataFrame({"p": p, "T": t})
    tagged_df = pd.DataFrame({"p_barg": (p - AMBIENT_MPA) * 10.0, "T_C": t})
    tagged_given = {"p": ("p_barg", "barg"), "T": ("T_C", "degC")}
    tagged_units = {"preset": "engineering", "p": "bar", "T": "degC", "h": "kJ/kg"}
    cases = {
        "plain": lambda: c.batch(plain_df, want=["h", "s", "v"], progress=False),
        "tagged": lambda: c.batch(tagged_df, given=tagged_given, want=["p", "T", "h"],
                                  units=tagged_units, progress=False),
        "phase": lambda: c.batch(plain_df, want=["h", "s", "v", "phase"], progress=False),
    }
    ours = {}
    for name, f in cases.items():
        f()  # warm the connection and the server
        ours[name] = best(f, 3)
        assert c.last_packed_route == "/columns", (name, c.last_packed_route)

    def library(backend):
        def plain():
            pa, ta = p * 1e6, t + 273.15
            h, s, d = CP.PropsSI(["H", "S", "D"], "P", pa, "T", ta, backend).T
            return h / 1e3, s / 1e3, 1.0 / d

        def tagged():
            pa = (tagged_df["p_barg"].to_numpy() / 10.0 + AMBIENT_MPA) * 1e6
            ta = tagged_df["T_C"].to_numpy() + 273.15
            h = CP.PropsSI("H", "P", pa, "T", ta, backend)
            return pa / 1e5, ta - 273.15, h / 1e3

        def phase():
            pa, ta = p * 1e6, t + 273.15
            h, s, d, ph = CP.PropsSI(["H", "S", "D", "Phase"], "P", pa, "T", ta, backend).T
            return h / 1e3, s / 1e3, 1.0 / d, ph

        return {"plain": plain, "tagged": tagged, "phase": phase}

    for name in cases:
        line = f"{name:>6}: steamcell {ours[name]:7.3f} s ({n / ours[name] / 1e6:5.2f} M rows/s)"
        if CP is not None:
            for label, backend in (("library (Helmholtz)", "HEOS::Water"),
                                   ("library (its IF97)", "IF97::Water")):
                lib = best(library(backend)[name], 1)
                line += f" | {label} {lib:7.3f} s, {lib / ours[name]:6.1f}x"
        print(line, flush=True)

    # the plain case through the packed and JSON routes, 100,000 and 1,000,000 rows
    for m in (100_000, 1_000_000):
        pm, tm = mixed_rows(m)
        df = pd.DataFrame({"p": pm, "T": tm})
        packed = best(lambda: c.batch(df, want=["h", "s", "v"], progress=False), 2)
        js = best(lambda: c.batch(df, want=["h", "s", "v"], progress=False, packed=False), 1)
        print(f"{m:>9} rows plain: packed {packed:7.3f} s ({m / packed / 1e6:5.2f} M rows/s), "
              f"json {js:7.3f} s, json/packed {js / packed:5.1f}x", flush=True)
    c.close()


if __name__ == "__main__":
    sys.exit(main())
