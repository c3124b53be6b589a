"""Bench (not a test): rows/s of (p,T) -> h, s, v through Dask on two local worker processes
(each with its own steamcell engine, packed columns) and through one client in this process;
calls/s of single states from one client shared by 1, 2 and 4 threads.

    STEAMCELL_BIN=target/release/steamcell .venv/bin/python scripts/bench-dask.py [ROWS]
"""
import sys
import threading
import time

import warnings

import numpy as np
import pandas as pd

import steamcell


warnings.filterwarnings("ignore", message="Sending large graph")


def main():
    rows = int(sys.argv[1]) if len(sys.argv) > 1 else 10_000_000
    rng = np.random.default_rng(2031)
    pdf = pd.DataFrame({"p": rng.uniform(0.005, 25.0, rows), "T": rng.uniform(1.0, 790.0, rows)})
    want = ["h", "s", "v"]
    with steamcell.connect() as c:
        c.batch(pdf.iloc[:1000], want=want, progress=False)
        t = time.perf_counter()
        ref = c.batch(pdf, want=want, progress=False)
        single = time.perf_counter() - t
        print(f"single process, packed /columns: {rows:,} rows in {single:.2f} s = "
              f"{rows / single / 1e6:.2f} million rows/s")
        import dask.dataframe as dd
        from distributed import Client, LocalCluster
        with LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                          dashboard_address=":0") as cl, Client(cl):
            ddf = dd.from_pandas(pdf, npartitions=20).persist()   # data already on the workers
            warm = c.batch(ddf.partitions[:2], want=want).compute()   # engines started
            t = time.perf_counter()
            out = c.batch(ddf, want=want).compute()
            dt = time.perf_counter() - t
            same = all(np.array_equal(out[w].to_numpy(), ref[w].to_numpy(), equal_nan=True)
                       for w in want)
            print(f"Dask, 2 local workers, result gathered here: {rows:,} rows in {dt:.2f} s = "
                  f"{rows / dt / 1e6:.2f} million rows/s (bit-identical: {same}; "
                  f"{len(warm)} warm-up rows)")
            t = time.perf_counter()
            total = c.batch(ddf, want=want)["h"].sum().compute()
            dt = time.perf_counter() - t
            print(f"Dask, 2 local workers, reduced on the workers: {rows:,} rows in {dt:.2f} s = "
                  f"{rows / dt / 1e6:.2f} million rows/s (sum of h {total:.6e})")
        # threads sharing one client: single water.state calls
        for n in (1, 2, 4):
            calls = 800

            def work():
                for i in range(calls // n):
                    c.state(p=1 + (i % 50) * 0.1, T=300.0)
            ts = [threading.Thread(target=work) for _ in range(n)]
            t = time.perf_counter()
            [x.start() for x in ts]
            [x.join() for x in ts]
            dt = time.perf_counter() - t
            print(f"one client, {n} thread(s): {calls} water.state calls in {dt:.3f} s = "
                  f"{calls / dt:,.0f} calls/s")


if __name__ == "__main__":
    main()
