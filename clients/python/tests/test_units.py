"""Units travel with batch results (issue 16): columns tagged with a unit go packed, "phase"
goes packed as codes, every result column carries its unit (pandas attrs, pyarrow metadata,
xarray attrs, the dict's ``units``, unit-suffixed names), per-column output units, and pint
quantities in and out (the ``pint`` extra). The numbers are those of the JSON path bit for bit.
"""

import numpy as np
import pandas as pd
import pytest

import steamcell

P_BARG = [41.0, 3.0, -0.5, 250.0, -2.0]        # the last one is below vacuum: a bad row
T_C = [410.0, 120.0, 100.0, 600.0, 20.0]
GIVEN = {"p": ("p_barg", "barg"), "T": ("T_C", "degC")}


def frame():
    return pd.DataFrame({"p_barg": P_BARG, "T_C": T_C}, index=list("abcde"))


def same(a, b):
    a, b = np.asarray(a, dtype=float), np.asarray(b, dtype=float)
    return np.array_equal(a.view(np.uint64)[~np.isnan(a)], b.view(np.uint64)[~np.isnan(b)]) \
        and np.array_equal(np.isnan(a), np.isnan(b))


def test_tagged_columns_and_phase_travel_packed_and_equal_json(client):
    want = ["h", "p", "s", "phase", "region"]
    units = {"preset": "engineering", "p": "bar", "h": "kJ/kg"}
    fast = client.batch(frame(), given=GIVEN, want=want, units=units, progress=False)
    assert client.last_packed_route == "/columns"
    slow = client.batch(frame(), given=GIVEN, want=want, units=units, progress=False,
                        packed=False)
    assert client.last_packed_route is None
    for w in ("h", "p", "s", "region"):
        assert same(fast[w], slow[w]), w
    assert list(fast["phase"]) == list(slow["phase"])
    assert list(fast["phase"][:4]) == ["vapour", "liquid", "vapour", "supercritical"]
    assert pd.isna(fast["phase"]["e"]) and "row 4" in fast["errors"]["e"]
    # the bad row is named in barg, the unit its column came in
    assert " barg is below" in fast["errors"]["e"], fast["errors"]["e"]
    # 41 barg is 42.01325 bar absolute (the standard ambient)
    assert fast["p"]["a"] == pytest.approx(42.01325, rel=1e-15)
    assert fast.attrs["units"] == {"h": "kJ/kg", "p": "bar", "s": "kJ/(kg K)"}
    assert fast.attrs["ambient"] == "1.01325 bar"
    assert slow.attrs == fast.attrs


def test_per_column_output_units_and_suffixed_names(client):
    out = client.batch(frame(), given=GIVEN, want=["h", "p"], units={"h": "Btu/lb", "p": "psig"},
                       ambient="0.95 bar", unit_suffix=True, progress=False)
    assert list(out.columns) == ["h [Btu/lb]", "p [psig]", "errors"]
    assert out.attrs["units"] == {"h [Btu/lb]": "Btu/lb", "p [psig]": "psig"}
    assert out.attrs["ambient"] == "0.95 bar"
    kj = client.batch(frame(), given=GIVEN, want=["h"], ambient="0.95 bar", progress=False)
    # 1 Btu/lb = 2.326 kJ/kg exactly (IT Btu; common practice, no source)
    assert out["h [Btu/lb]"]["a"] == pytest.approx(kj["h"]["a"] / 2.326, rel=1e-14)
    # 41 barg at 0.95 bar ambient is 41 bar above it: 41e5 Pa / 6894.757293168361 Pa/psi
    assert out["p [psig]"]["a"] == pytest.approx(41e5 / 6894.757293168361, rel=1e-13)


def test_units_travel_with_every_kind_of_table(client):
    pa = pytest.importorskip("pyarrow")
    pl = pytest.importorskip("polars")
    xr = pytest.importorskip("xarray")
    units = {"h": "Btu/lb"}
    t = client.batch(pa.table({"p_barg": P_BARG, "T_C": T_C}), given=GIVEN, want=["h", "phase"],
                     units=units, progress=False)
    assert t.schema.field("h").metadata == {b"unit": b"Btu/lb"}
    assert t.schema.metadata[b"units"] == b'{"h": "Btu/lb"}'
    assert t.column("phase").to_pylist()[1] == "liquid"
    d = client.batch({"p_barg": np.array(P_BARG), "T_C": np.array(T_C)}, given=GIVEN,
                     want=["h", "T"], units=units, progress=False)
    assert isinstance(d, dict) and d.units == {"h": "Btu/lb", "T": "degC"}
    assert d.ambient == "1.01325 bar"
    p = client.batch(pl.DataFrame({"p_barg": P_BARG, "T_C": T_C}), given=GIVEN, want=["h"],
                     units=units, unit_suffix=True, progress=False)
    assert p.columns == ["h [Btu/lb]", "errors"]
    ds = xr.Dataset({"p_barg": ("time", np.array(P_BARG)), "T_C": ("time", np.array(T_C))})
    x = client.batch(ds, given=GIVEN, want=["h"], units=units, progress=False)
    assert x["h"].attrs["units"] == "Btu/lb" and x.attrs["ambient"] == "1.01325 bar"
    for kind in (t.column("h").to_numpy(), d["h"], p["h [Btu/lb]"].to_numpy(), x["h"].values):
        assert same(kind, client.batch(frame(), given=GIVEN, want=["h"], units=units,
                                       progress=False)["h"])


def test_stdio_packs_tagged_columns_and_phase_too(binary):
    with steamcell.connect(binary=binary, transport="stdio") as c:
        out = c.batch(frame(), given=GIVEN, want=["h", "phase"], progress=False)
        assert c.last_packed_route == "water.batch f64le"
        ref = c.batch(frame(), given=GIVEN, want=["h", "phase"], progress=False, packed=False)
    assert same(out["h"], ref["h"]) and list(out["phase"]) == list(ref["phase"])
    assert out.attrs["units"] == {"h": "kJ/kg"}


def test_pint_quantities_in_and_out(client):
    pint_pandas = pytest.importorskip("pint_pandas")  # the `pint` extra
    df = pd.DataFrame({"p": pd.array([42.01325, 4.01325], dtype="pint[bar]"),
                       "T": pd.array([410.0, 120.0], dtype="pint[degC]")})
    out = client.batch(df, want=["h", "T", "p", "phase"], units={"p": "barg"}, pint=True,
                       progress=False)
    assert client.last_packed_route == "/columns"
    ref = client.batch(pd.DataFrame({"p": [42.01325, 4.01325], "T": [410.0, 120.0]}),
                       given={"p": ("p", "bar"), "T": ("T", "degC")}, want=["h", "T", "p"],
                       units={"p": "barg"}, progress=False)
    assert isinstance(out["h"].dtype, pint_pandas.PintType)
    assert str(out["h"].pint.units) == "kilojoule / kilogram"
    assert same(out["h"].pint.magnitude, ref["h"])
    assert str(out["T"].pint.units) == "degree_Celsius"
    # a gauge pressure has no pint unit: a float column, its unit in attrs
    assert out["p"].dtype == float and out.attrs["units"]["p"] == "barg"
    assert out["p"].tolist() == pytest.approx([41.0, 3.0], rel=1e-14)
    # quantities in: the same as the numbers tagged with the unit
    assert list(out["phase"]) == ["vapour", "liquid"]


def test_pint_without_the_extra_is_named(client, monkeypatch):
    import sys
    monkeypatch.setitem(sys.modules, "pint_pandas", None)
    with pytest.raises(steamcell.InvalidInput, match=r"steamcell\[pint\]"):
        client.batch(pd.DataFrame({"p": [1.0], "T": [300.0]}), want=["h"], pint=True,
                     progress=False)


def test_progress_is_labelled_by_the_route_taken(client, monkeypatch, capsys):
    # Reproduction: the progress of a batch said "water.batch" even on the /columns route.
    import sys
    monkeypatch.setitem(sys.modules, "tqdm.auto", None)  # the stderr line, not a tqdm bar
    client.batch(frame(), given=GIVEN, want=["h"], progress=True)
    assert client.last_packed_route == "/columns"
    err = capsys.readouterr().err
    assert "/columns: 5/5 rows" in err and "water.batch" not in err, err
    client.batch(frame(), given=GIVEN, want=["h"], progress=True, packed=False)
    err = capsys.readouterr().err
    assert "water.batch: 5/5 rows" in err, err
    client.batch(frame(), given=GIVEN, want=["h"], progress=True, formulation="iapws95")
    assert client.last_packed_route == "water.batch f64le"
    err = capsys.readouterr().err
    assert "water.batch f64le: 5/5 rows" in err, err
