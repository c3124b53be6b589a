"""Columns at memory speed: times a notebook user's batch of (p, T) rows -> h, s, v through
(a) the packed path (POST /columns), (b) the JSON path (water.batch), and (c) a general-purpose
multi-fluid property library called in-process (a test-only oracle, never a product
dependency), and prints the ratios. Run through scripts/bench-columns.sh.

The oracle runs its general multiparameter Helmholtz backend (the one it uses for every fluid),
one state update per row and three outputs read from it, so the comparison is with what a
notebook user of that library gets for water; it is not a like-for-like kernel comparison
(IF97 here, a Helmholtz equation of state there). The server's own kernel time without the
network is `cargo run --release --example columns_speed`.
"""
import os
import sys
import time

import numpy as np

import steamcell


def rows(n):
    i = np.arange(n)
    p = 0.1 + (i % 997) * 0.02          # 0.1 .. 20 MPa
    t = 150.0 + (i % 991) * 0.45        # 150 .. 595 degC
    return p, t


def best(f, k=3):
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
    for n in (100_000, 1_000_000):
        p, t = rows(n)
        data = {"p": p, "T": t}
        packed = best(lambda: c.batch(data, want=["h", "s", "v"], progress=False), 3)
        line = f"{n:>9} rows  packed {packed:8.3f} s ({n / packed / 1e6:5.2f} M rows/s)"
        js = best(lambda: c.batch(data, want=["h", "s", "v"], progress=False, packed=False), 1)
        line += f"  json {js:8.3f} s  json/packed {js / packed:5.1f}x"
        if CP is not None:
            pa, ta = (p * 1e6).tolist(), (t + 273.15).tolist()

            def oracle():
                st = CP.AbstractState("HEOS", "Water")
                h, s, v = np.empty(n), np.empty(n), np.empty(n)
                for k in range(n):
                    st.update(CP.PT_INPUTS, pa[k], ta[k])
                    h[k], s[k], v[k] = st.hmass(), st.smass(), 1.0 / st.rhomass()
                return h, s, v

            o = best(oracle, 1)
            line += f"  oracle in-process {o:8.3f} s  oracle/packed {o / packed:5.1f}x"
        print(line, flush=True)
    c.close()


if __name__ == "__main__":
    sys.exit(main())
