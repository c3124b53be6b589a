"""Client.batch(): pandas round trip, bad rows as NaN plus an error, chunking, dict input."""

import math

import pandas as pd
import pytest

import steamcell
from conftest import tol


def test_dataframe_round_trip_with_bad_rows(client):
    df = pd.DataFrame(
        {"p_MPa": [3.0, 4.301325, 3.0, float("nan"), 1.0],
         "T_C": [26.85, 410.0, 5000.0, 100.0, 150.0]},
        index=["a", "b", "c", "d", "e"])
    out = client.batch(df, given={"p": "p_MPa", "T": "T_C"}, want=["h", "s", "phase"],
                       progress=False)
    assert isinstance(out, pd.DataFrame)
    assert list(out.index) == ["a", "b", "c", "d", "e"]
    assert list(out.columns) == ["h", "s", "phase", "errors"]
    # IAPWS R7-97(2012) Table 5: T = 300 K (26.85 degC), p = 3 MPa: h = 0.115331273e3 kJ/kg
    assert out.loc["a", "h"] == pytest.approx(115.331273, abs=tol(115.331273, 9))
    # the same numbers as one water.state call
    st = client.state(p=4.301325, T=410.0)
    assert out.loc["b", "h"] == st.h and out.loc["b", "s"] == st.s
    assert out.loc["b", "phase"] == "vapour"
    # row c is out of range: NaN and an error naming the row, the code and the reason
    assert math.isnan(out.loc["c", "h"]) and math.isnan(out.loc["c", "s"])
    assert out.loc["c", "errors"].startswith("row 2: [1001]")
    # row d has no pressure: NaN and an error naming it (phase wanted: the packed path, where
    # the server names it with its code; the JSON path never sends it)
    assert math.isnan(out.loc["d", "h"])
    assert out.loc["d", "errors"].startswith("row 3: [1002] p is not a finite number")
    assert out.loc["a", "errors"] is None and out.loc["e", "errors"] is None
    assert out["errors"].notna().sum() == 2


def test_dict_in_dict_out_and_units_tuple(client):
    data = {"p_bar": [30.0, 10.0], "T_K": [300.0, 423.15]}
    out = client.batch(data, given={"p": ("p_bar", "bar"), "T": ("T_K", "K")}, want=["h", "region"],
                       progress=False)
    assert isinstance(out, dict) and set(out) == {"h", "region", "errors"}
    # IAPWS R7-97(2012) Table 5: 300 K, 3 MPa
    assert out["h"][0] == pytest.approx(115.331273, abs=tol(115.331273, 9))
    # 150 degC at 1 MPa is below the saturation temperature (about 180 degC): liquid, region 1
    assert list(out["region"]) == [1, 1] and out["errors"] == [None, None]


def test_default_columns_and_want(client):
    out = client.batch({"p": [3.0], "T": [26.85]}, progress=False)
    assert set(out) == {"T", "p", "h", "s", "v", "x", "errors"}
    assert math.isnan(out["x"][0])  # x is undefined for a single-phase state


def test_bad_request_raises(client):
    with pytest.raises(steamcell.InvalidInput):
        client.batch({"p": [3.0]}, progress=False)
    with pytest.raises(steamcell.Error):
        client.batch({"p": [3.0], "T": [20.0]}, want=["colour"], progress=False)


def test_chunking_120000_rows(client, monkeypatch, capsys):
    n = 120000
    p = [0.5 + (i % 200) * 0.1 for i in range(n)]          # 0.5 .. 20.4 MPa
    t = [20.0 + (i % 331) * 1.5 for i in range(n)]         # 20 .. 515 degC
    df = pd.DataFrame({"p": p, "T": t})
    sizes = []
    real = client.call_raw

    def counting(method, params=None):
        if method == "water.batch":
            sizes.append(len(params["given"]["p"]))
        return real(method, params)

    monkeypatch.setattr(client, "call_raw", counting)
    out = client.batch(df, want=["h"], chunk=50000, progress=True, packed=False)
    assert sizes == [50000, 50000, 20000]
    assert len(out) == n
    # a few rows against single calls, at the start, across chunk borders and the end
    for i in (0, 49999, 50000, 100001, n - 1):
        assert pd.isna(out["errors"].iloc[i]), out["errors"].iloc[i]
        assert out["h"].iloc[i] == real("water.state", {"given": {"p": p[i], "T": t[i]}})["h"], i
    # the grid is all single-phase: no row fails, and every h is a number
    assert out["errors"].isna().all() and out["h"].notna().all()
    assert "water.batch" in capsys.readouterr().err  # the progress bar (tqdm or the fallback)


def test_packed_path_equals_json_path(client):
    """Issue: columns at memory speed. The packed path (POST /columns over HTTP) gives the same
    numbers as the JSON path, bit for bit, with NaN and an error for a bad row."""
    np = pytest.importorskip("numpy")
    n = 30000
    p = np.array([0.5 + (i % 200) * 0.1 for i in range(n)])
    t = np.array([20.0 + (i % 331) * 1.5 for i in range(n)])
    t[5] = -50.0
    df = pd.DataFrame({"p": p, "T": t})
    posts = []
    real_post = client._tr.post_bytes

    def counting(path, body, ctype):
        posts.append(path)
        return real_post(path, body, ctype)

    client._tr.post_bytes = counting
    try:
        fast = client.batch(df, want=["h", "s", "v"], progress=False, chunk=12000)
    finally:
        del client._tr.post_bytes
    assert posts == ["/columns"] * 3, posts  # 30,000 rows in chunks of 12,000
    assert client.last_packed_route == "/columns"
    slow = client.batch(df, want=["h", "s", "v"], progress=False, packed=False)
    assert client.last_packed_route is None
    for w in ("h", "s", "v"):
        a = fast[w].to_numpy()
        b = slow[w].to_numpy(dtype=float)
        assert np.array_equal(a.view(np.uint64)[~np.isnan(a)], b.view(np.uint64)[~np.isnan(b)]), w
        assert np.isnan(a[5]) and np.isnan(b[5])
    assert "row 5" in fast["errors"].iloc[5] and fast["errors"].iloc[0] is None


def test_packed_path_with_another_formulation(client):
    """/columns computes with IF97 only: with formulation iapws95 the packed rows go through
    water.batch with f64le columns, and equal the JSON path bit for bit."""
    np = pytest.importorskip("numpy")
    n = 300
    df = pd.DataFrame({"p": np.linspace(0.1, 30.0, n), "T": np.linspace(30.0, 600.0, n)})
    fast = client.batch(df, want=["h", "s"], progress=False, formulation="iapws95")
    assert client.last_packed_route == "water.batch f64le"
    slow = client.batch(df, want=["h", "s"], progress=False, packed=False, formulation="iapws95")
    if97 = client.batch(df, want=["h", "s"], progress=False)
    for w in ("h", "s"):
        a, b = fast[w].to_numpy(), slow[w].to_numpy(dtype=float)
        assert np.array_equal(a.view(np.uint64), b.view(np.uint64)), w
        assert not np.array_equal(a, if97[w].to_numpy()), "the formulation reached the server"
    assert fast["errors"].isna().all()


def test_without_numpy_the_json_path_is_used(client, monkeypatch):
    """No numpy: batch falls back to JSON and still answers (with NaN and an error for a bad
    row)."""
    import sys
    monkeypatch.setitem(sys.modules, "numpy", None)  # makes `import numpy` raise ImportError
    out = client.batch({"p": [1.0, 2.0, 3.0], "T": [300.0, -60.0, 400.0]}, want=["h"],
                       progress=False)
    assert client.last_packed_route is None
    import math
    assert not math.isnan(out["h"][0]) and math.isnan(out["h"][1]), out["h"]
    assert out["errors"][0] is None and "row 1" in out["errors"][1], out["errors"]


def test_expected_phase_flags_rows_on_both_paths(client):
    # A batch of steam tags: the 40 bar(g), 200 degC row is liquid (T_sat 251.85 degC), flagged
    # with its values kept; its superheat is T - T_sat, negative.
    df = pd.DataFrame({"p": [4.101325, 4.101325], "T": [200.0, 300.0]})
    for packed in (True, False):
        out = client.batch(df, want=["h", "superheat"], expect="vapour", packed=packed,
                           progress=False)
        assert list(out.columns) == ["h", "superheat", "errors", "flagged"]
        assert out.loc[0, "flagged"].startswith("row 0: liquid")
        assert out.loc[1, "flagged"] is None
        assert out.loc[0, "superheat"] < -51 and not math.isnan(out.loc[0, "h"])
    # without expect there is no flagged column
    out = client.batch(df, want=["h"], progress=False)
    assert list(out.columns) == ["h", "errors"]
