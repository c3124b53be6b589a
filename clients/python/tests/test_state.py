"""water.state through Client.state(): published values, units, gauge pressure, display."""

import pytest

from conftest import tol


# IAPWS R7-97(2012) Table 5 (region 1), T = 300 K, p = 3 MPa; 9 significant digits printed.
TABLE5_300K_3MPA = {
    "v": 0.100215168e-2, "h": 0.115331273e3, "u": 0.112324818e3, "s": 0.392294792,
    "cp": 0.417301218e1, "w": 0.150773921e4,
}
# IAPWS R7-97(2012) Table 15 (region 2), T = 300 K, p = 0.0035 MPa; 9 significant digits printed.
TABLE15_300K_35KPA = {
    "v": 0.394913866e2, "h": 0.254991145e4, "u": 0.241169160e4, "s": 0.852238967e1,
    "cp": 0.191300162e1, "w": 0.427920172e3,
}


@pytest.mark.parametrize("name", sorted(TABLE5_300K_3MPA))
def test_region1_table5_engineering(client, name):
    # engineering preset: MPa, degC, kJ/kg, kJ/(kg K), m3/kg, m/s: the release's own units
    # except T, which we give as a string in kelvin.
    st = client.state(p=3, T="300 K")
    want = TABLE5_300K_3MPA[name]
    assert st[name] == pytest.approx(want, abs=tol(want, 9)), name


@pytest.mark.parametrize("name", sorted(TABLE15_300K_35KPA))
def test_region2_table15(client, name):
    st = client.state(p="3.5 kPa", T="300 K")
    want = TABLE15_300K_35KPA[name]
    assert st[name] == pytest.approx(want, abs=tol(want, 9)), name
    assert st.region == 2


def test_state_attributes_and_units(client):
    st = client.state(p=3, T="300 K")
    # 300 K in degC is 26.85 (definition of the Celsius scale)
    assert st.T == pytest.approx(26.85, abs=1e-9)
    assert st.p == pytest.approx(3.0, abs=1e-12)
    assert st.units["preset"] == "engineering"
    assert st.units["h"] == "kJ/kg"
    assert st.phase == "liquid" and st.region == 1
    assert st.x is None and "x" in st.undefined


def test_si_preset(client):
    # IAPWS R7-97(2012) Table 5: h = 0.115331273e3 kJ/kg, here in J/kg
    st = client.state(p=3e6, T=300, units="si")
    assert st.h == pytest.approx(115331.273, abs=tol(115331.273, 9))
    assert st.units["preset"] == "si"


def test_gauge_pressure(client):
    # barg is gauge: absolute = gauge + ambient; default ambient 101.325 kPa
    # (standard atmosphere, common practice, no source needed beyond its definition)
    st = client.state(p="42 barg", T="410 degC")
    assert st.p == pytest.approx(4.2 + 0.101325, abs=1e-9)
    assert st.T == pytest.approx(410.0, abs=1e-9)
    assert st.phase == "vapour"
    st2 = client.state(p="42 barg", T="410 degC", ambient="95 kPa")
    assert st2.p == pytest.approx(4.2 + 0.095, abs=1e-9)


def test_repr_and_html(client):
    st = client.state(p="42 barg", T="410 degC")
    r = repr(st)
    assert r.startswith("State(") and "h=" in r and "kJ/kg" in r and "phase=vapour" in r
    html = st._repr_html_()
    assert html.count("<tr>") >= 1 + 10  # header + at least the ten basic properties
    assert "<td>h</td>" in html and "kJ/kg" in html


def test_generated_wrapper_matches_state(client):
    r = client.water_state(given={"p": 3, "T": "300 K"})
    assert r.h == client.state(p=3, T="300 K").h
    assert client.water.state(given={"p": 3, "T": "300 K"}).h == r.h
