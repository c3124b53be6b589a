"""Tables beyond pandas: polars DataFrames, pyarrow Tables, xarray Datasets and dicts of numpy
arrays go in and the same kind comes back, with the same numbers bit for bit as pandas (IAPWS
R7-97(2012) Table 5 for one value to all printed digits)."""

import numpy as np
import pandas as pd
import pytest

from conftest import tol

P = [3.0, 80.0, 3.0, 200.0, float("nan")]
T = [26.85, 26.85, 226.85, 26.85, 100.0]   # 300 K, 300 K, 500 K, out of range, NaN p


def reference(client):
    return client.batch(pd.DataFrame({"p": P, "T": T}), want=["h", "s"], progress=False)


def check(ref, h, s, errs):
    assert np.array_equal(np.asarray(h, dtype=float), ref["h"].to_numpy(), equal_nan=True)
    assert np.array_equal(np.asarray(s, dtype=float), ref["s"].to_numpy(), equal_nan=True)
    assert [e is None for e in errs] == [e is None for e in ref["errors"]]
    assert errs[0] is None and errs[3] is not None and "100" in errs[3]
    # IAPWS R7-97(2012) Table 5: 300 K, 3 MPa: h = 0.115331273e3 kJ/kg
    assert h[0] == pytest.approx(115.331273, abs=tol(115.331273, 9))


def test_polars_in_polars_out(client):
    pl = pytest.importorskip("polars")
    ref = reference(client)
    out = client.batch(pl.DataFrame({"p": P, "T": T}), want=["h", "s"], progress=False)
    assert isinstance(out, pl.DataFrame)
    assert out.schema["h"] == pl.Float64 and out.schema["errors"] == pl.Utf8
    assert client.last_packed_route == "/columns"
    check(ref, out["h"].to_numpy(), out["s"].to_numpy(), out["errors"].to_list())
    # text columns with units go the JSON way and still come back as polars
    out = client.batch(pl.DataFrame({"p": ["30 bar", "800 bar"], "T": [26.85, 26.85]}),
                       want=["h", "phase"], progress=False)
    assert isinstance(out, pl.DataFrame) and out["phase"].to_list() == ["liquid", "liquid"]
    assert out["h"][0] == pytest.approx(115.331273, abs=tol(115.331273, 9))


def test_pyarrow_in_pyarrow_out(client):
    pa = pytest.importorskip("pyarrow")
    ref = reference(client)
    out = client.batch(pa.table({"p": P, "T": T}), want=["h", "s"], progress=False)
    assert isinstance(out, pa.Table)
    assert out.schema.field("h").type == pa.float64()
    assert out.schema.field("errors").type == pa.string()
    check(ref, out.column("h").to_numpy(), out.column("s").to_numpy(),
          out.column("errors").to_pylist())
    # integer columns are numbers too
    out = client.batch(pa.table({"p": pa.array([3, 80], pa.int64()), "T": [26.85, 26.85]}),
                       want=["h"], progress=False)
    assert out.column("h").to_pylist()[0] == pytest.approx(115.331273, abs=tol(115.331273, 9))


def test_numpy_dict_in_numpy_dict_out(client):
    ref = reference(client)
    out = client.batch({"p": np.array(P), "T": np.array(T)}, want=["h", "s"], progress=False)
    assert isinstance(out, dict) and isinstance(out["h"], np.ndarray)
    check(ref, out["h"], out["s"], out["errors"])


def test_xarray_dataset_keeps_its_shape(client):
    xr = pytest.importorskip("xarray")
    ds = xr.Dataset({"p": (("tag", "time"), np.array(P[:4]).reshape(2, 2)),
                     "T": (("tag", "time"), np.array(T[:4]).reshape(2, 2))},
                    coords={"tag": ["HP", "LP"], "time": [0, 1]})
    out = client.batch(ds, want=["h"], progress=False)
    assert isinstance(out, xr.Dataset) and out["h"].dims == ("tag", "time")
    assert list(out["tag"].values) == ["HP", "LP"]
    ref = reference(client)
    assert np.array_equal(out["h"].values.reshape(-1), ref["h"].to_numpy()[:4], equal_nan=True)
    assert out["errors"].values[1, 1] is not None


def test_unknown_column_names_the_columns(client):
    import steamcell
    with pytest.raises(steamcell.InvalidInput, match="'p_bar'.*its columns: 'p', 'T'"):
        client.batch({"p": [1.0], "T": [100.0]}, given={"p": "p_bar", "T": "T"})
