"""Dask: a lazy Dask DataFrame of states, each partition computed by its worker's own engine,
on a dask.distributed LocalCluster with two worker processes; the answer is the single-process
packed answer bit for bit. Bad input is refused when the graph is built (a missing column, a
column of text); a lost worker engine fails the computation with an error naming the worker,
never with rows missing, and the next computation starts a fresh engine."""

import numpy as np
import pandas as pd
import pytest

import steamcell
import steamcell.dask as sd

dd = pytest.importorskip("dask.dataframe")
distributed = pytest.importorskip("distributed")

ROWS = 2_000_000


@pytest.fixture(scope="module")
def cluster():
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=":0") as cl, distributed.Client(cl) as dc:
        yield dc


def frame(n):
    rng = np.random.default_rng(17)
    p = rng.uniform(0.005, 25.0, n)
    T = rng.uniform(1.0, 790.0, n)
    p[::100_003] = 150.0   # out of range rows: NaN and a message, never dropped
    return pd.DataFrame({"p_MPa": p, "T_C": T})


@pytest.mark.filterwarnings("ignore:Sending large graph")
def test_millions_of_rows_on_two_workers_bit_for_bit(cluster, client, tmp_path):
    pdf = frame(ROWS)
    pdf.iloc[:200_000].to_parquet(tmp_path / "small.parquet")
    ddf = dd.from_pandas(pdf, npartitions=8)
    lazy = client.batch(ddf, given={"p": "p_MPa", "T": "T_C"}, want=["h", "s", "v"])
    assert lazy.npartitions == 8
    assert list(lazy.columns) == ["h", "s", "v", "errors"]
    assert lazy.dtypes["h"] == np.float64
    got = lazy.compute()
    ref = client.batch(pdf, given={"p": "p_MPa", "T": "T_C"}, want=["h", "s", "v"],
                       progress=False)
    assert len(got) == ROWS and got.index.equals(ref.index)
    for w in ("h", "s", "v"):
        assert np.array_equal(got[w].to_numpy(), ref[w].to_numpy(), equal_nan=True), w
    bad = ref["errors"].notna()
    assert bad.sum() == 20 and (got["errors"].notna() == bad).all()
    assert got["errors"][bad].tolist() == ref["errors"][bad].tolist()
    # each worker ran its own engine
    engines = cluster.run(sd.engines)
    assert len(engines) == 2 and all(len(v) == 1 and v[0]["pid"] for v in engines.values())
    # Parquet in, Parquet out (the README's example)
    out = sd.batch(dd.read_parquet(tmp_path / "small.parquet"), given={"p": "p_MPa", "T": "T_C"},
                   want=["h"])
    out.to_parquet(tmp_path / "states")
    back = pd.read_parquet(tmp_path / "states")
    assert np.array_equal(back["h"].to_numpy(), ref["h"].to_numpy()[:200_000], equal_nan=True)


def test_bad_input_is_refused_before_anything_runs(cluster):
    ddf = dd.from_pandas(pd.DataFrame({"p": [1.0, 2.0], "T": [100.0, 200.0],
                                       "tag": ["a", "b"]}), npartitions=1)
    with pytest.raises(steamcell.InvalidInput, match="no column 'p_bar'.*'p', 'T', 'tag'"):
        sd.batch(ddf, given={"p": "p_bar", "T": "T"})
    with pytest.raises(steamcell.InvalidInput, match="column 'tag' \\(for T\\) holds .* not numbers"):
        sd.batch(ddf, given={"p": "p", "T": "tag"})


def test_tagged_columns_and_phase_on_dask(cluster):
    """Columns in their own units and "phase" travel packed on Dask too (issue 16), with the
    numbers and texts of the pandas path."""
    df = pd.DataFrame({"p_barg": [41.0, 3.0, 0.0], "T_C": [410.0, 120.0, 100.0]})
    ddf = dd.from_pandas(df, npartitions=2)
    given = {"p": ("p_barg", "barg"), "T": ("T_C", "degC")}
    out = sd.batch(ddf, given=given, want=["h", "phase"]).compute()
    with steamcell.connect() as c:
        ref = c.batch(df, given=given, want=["h", "phase"], progress=False)
    assert np.array_equal(out["h"].to_numpy(), ref["h"].to_numpy())
    assert list(out["phase"]) == list(ref["phase"]) == ["vapour", "liquid", "vapour"]


def test_a_lost_engine_is_named_and_nothing_is_dropped(cluster, binary):
    ddf = dd.from_pandas(frame(20_000), npartitions=4)
    lazy = sd.batch(ddf, given={"p": "p_MPa", "T": "T_C"}, want=["h"], binary=binary)
    assert len(lazy.compute()) == 20_000

    def kill():
        import os
        import signal
        for e in sd.engines():
            os.kill(e["pid"], signal.SIGKILL)
        import time
        time.sleep(0.3)
        return len(sd.engines())

    assert sum(cluster.run(kill).values()) >= 2
    with pytest.raises(steamcell.WorkerEngineLost) as e:
        lazy.compute()
    msg = str(e.value)
    assert "worker tcp://127.0.0.1:" in msg and "has stopped" in msg and "not computed" in msg
    # each worker reports its own lost engine once; then fresh engines give the whole answer
    seen = {msg.split(" (pid")[0]}
    again = None
    for _ in range(2):
        try:  # a new graph: the scheduler keeps the failed one's error
            again = sd.batch(ddf, given={"p": "p_MPa", "T": "T_C"}, want=["h"],
                             binary=binary).compute()
            break
        except steamcell.WorkerEngineLost as e2:
            seen.add(str(e2).split(" (pid")[0])
    assert again is not None, seen
    assert len(again) == 20_000 and again["h"].notna().sum() == 20_000 - 1


def test_engines_stop_with_the_cluster(binary):
    import os
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True,
                                  dashboard_address=":0") as cl, distributed.Client(cl) as dc:
        ddf = dd.from_pandas(frame(1000), npartitions=2)
        sd.batch(ddf, given={"p": "p_MPa", "T": "T_C"}, want=["h"], binary=binary).compute()
        pids = [e["pid"] for v in dc.run(sd.engines).values() for e in v]
    assert pids
    import time
    deadline = time.time() + 20
    while time.time() < deadline and any(os.path.exists(f"/proc/{p}") for p in pids):
        time.sleep(0.2)
    alive = [p for p in pids if os.path.exists(f"/proc/{p}")
             and "Z" not in open(f"/proc/{p}/stat").read().split()[2]]
    assert not alive, f"engines left running: {alive}"
