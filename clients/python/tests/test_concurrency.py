"""One client shared by many threads, and the asyncio client, against the real server.

Correctness, not speed (speed lives in scripts/bench-dask.py): every thread gets the answer to
its own question (IAPWS R7-97(2012) Table 5 values, region 1, checked to all printed digits),
the pool opens more than one connection when threads call at once, and the asyncio client
answers many concurrent calls, the generated wrappers included."""

import asyncio
import threading

import pytest

import steamcell
import steamcell.aio
from conftest import tol

# IAPWS R7-97(2012) Table 5 (region 1): (T K, p MPa) -> h kJ/kg
TABLE5 = [(300.0, 3.0, 0.115331273e3), (300.0, 80.0, 0.184142828e3), (500.0, 3.0, 0.975542239e3)]


def test_threads_share_one_client(client):
    errors, barrier = [], threading.Barrier(8)

    def work(k):
        try:
            barrier.wait()
            for i in range(40):
                T, p, h = TABLE5[(k + i) % 3]
                st = client.state(p=p, T=f"{T} K")
                assert st.h == pytest.approx(h, abs=tol(h, 9)), (k, i)
        except Exception as e:  # pragma: no cover - reported below
            errors.append(e)

    threads = [threading.Thread(target=work, args=(k,)) for k in range(8)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(timeout=120)
    assert not errors, errors[:3]
    assert client._tr.opened >= 2, "threads that call at once get connections of their own"


def test_threads_share_one_client_for_batches(client):
    import numpy as np
    p = np.linspace(0.5, 10, 20000)
    T = np.full_like(p, 350.0)
    ref = client.batch({"p": p, "T": T}, want=["h"], progress=False)["h"]
    out = [None] * 4

    def work(k):
        out[k] = client.batch({"p": p, "T": T}, want=["h"], progress=False)["h"]

    threads = [threading.Thread(target=work, args=(k,)) for k in range(4)]
    [t.start() for t in threads]
    [t.join(timeout=120) for t in threads]
    for o in out:
        assert np.array_equal(o, ref)


def test_asyncio_client(binary):
    async def main():
        async with steamcell.aio.connect(binary=binary) as c:
            assert await c.health() == "ok"
            states = await asyncio.gather(*(c.state(p=p, T=f"{T} K") for T, p, _ in TABLE5 * 20))
            for st, (_, _, h) in zip(states, TABLE5 * 20):
                assert st.h == pytest.approx(h, abs=tol(h, 9))
            assert c.opened >= 2
            r = await c.turbine_expand(inlet={"p": "42 barg", "T": "410 degC", "flow": "20 t/h"},
                                       outlet_p="4 barg", efficiency=0.72)
            r2 = await c.turbine.expand(inlet={"p": "42 barg", "T": "410 degC", "flow": "20 t/h"},
                                        outlet_p="4 barg", efficiency=0.72)
            assert r.power == r2.power and r.power > 0
            with pytest.raises(steamcell.OutOfRange):
                await c.state(p=3, T="5000 degC")
            out = await c.batch({"p": [3.0, 80.0], "T": [26.85, 26.85]}, want=["h"])
            assert out["errors"] == [None, None]
            return c._owned.child.proc

    proc = asyncio.run(main())
    assert proc.poll() is not None, "the server the async client started is stopped"


def test_asyncio_client_to_a_url(client):
    async def main():
        c = await steamcell.aio.connect(client.url)
        try:
            a = await c.state(p="42 barg", T="410 degC")
        finally:
            await c.close()
        return a

    assert asyncio.run(main()).h == client.state(p="42 barg", T="410 degC").h
