"""The uncertainty of a result from Python: the sensitivity table (a DataFrame), the one-line
statement and the bar chart of the contributions.

The case is the measured-efficiency test of the issue (42 bar / 400 degC to 4.5 bar, exhaust at
190 degC): +-1 K at the exhaust moves the efficiency by about 0.42 points, +-1 K at the inlet by
about 0.34 points (the project's own measurement; the server's tests check the propagation
against independent calculations). Images are checked by what is drawn, not by pixels."""

import math

import matplotlib
import pytest

matplotlib.use("Agg")

import steamcell  # noqa: E402
import steamcell.plot as sp  # noqa: E402
from steamcell import uncertainty as unc  # noqa: E402


def measured(client, **extra):
    u = {"inlet.T": "1 K", "outlet.T": "1 K"}
    u.update(extra)
    return client.turbine_expand(inlet={"p": "42 bar", "T": "400 degC", "flow": "20 t/h"},
                                 outlet_p="4.5 bar", outlet={"T": "190 degC"}, uncertainty=u)


def test_table_is_a_sensitivity_table(client):
    r = measured(client)
    t = unc.table(r, "efficiency")
    assert list(t.columns) == ["value", "unit", "u", "u_unit", "sensitivity", "contribution",
                               "share", "one_sided"]
    assert list(t.index) == ["outlet.T", "inlet.T"]  # largest share first
    assert t.loc["inlet.T", "value"] == 400 and t.loc["inlet.T", "unit"] == "degC"
    assert t.loc["inlet.T", "u"] == 1.0
    assert t.loc["inlet.T", "sensitivity"] * 100 == pytest.approx(0.34, abs=0.01)
    assert t.loc["outlet.T", "sensitivity"] * 100 == pytest.approx(-0.42, abs=0.01)
    assert t["share"].sum() == pytest.approx(1.0, abs=1e-12)
    u = math.hypot(*t["contribution"])
    assert t.attrs["u"] == pytest.approx(u, rel=1e-12)
    assert t.attrs["U"] == pytest.approx(2 * u, rel=1e-12)
    assert t.attrs["k"] == 2 and t.attrs["field"] == "efficiency"
    # the same table for a nested field, with its unit
    th = unc.table(r, "outlet.h")
    assert th.attrs["unit"] == "kJ/kg"
    assert unc.rows(r, "power")[0]["input"] == "inlet.T"


def test_statement(client):
    r = measured(client)
    s = unc.statement(r, "efficiency")
    f = r["uncertainty"]["efficiency"]
    # U to two significant digits (GUM 7.2.6), the value to the same place
    assert s == "efficiency = 0.727 +- 0.011 (k = 2)", s
    assert f["U"] == pytest.approx(0.0107, abs=5e-5)
    assert "kJ/kg" in unc.statement(r, "specific_work")


def test_missing_fields_name_what_is_there(client):
    r = measured(client)
    with pytest.raises(KeyError, match="efficency"):
        unc.field(r, "efficency")
    with pytest.raises(KeyError, match="one numeric field"):
        unc.field(r, "outlet")
    plain = client.turbine_expand(inlet={"p": "42 bar", "T": "400 degC"}, outlet_p="4.5 bar",
                                  efficiency=0.8)
    with pytest.raises(KeyError, match="uncertainty="):
        unc.table(plain, "efficiency")


def test_contributions_chart(client, tmp_path):
    r = measured(client)
    chart = sp.contributions(r, "efficiency")
    assert isinstance(chart, sp.Chart)
    bars = {d["label"]: d for d in chart.drawn}
    assert set(bars) == {"inlet.T", "outlet.T"}
    assert sum(d["x"] for d in chart.drawn) == pytest.approx(100.0)
    assert bars["outlet.T"]["y"] > bars["inlet.T"]["y"]  # the largest on top
    ax = chart.axes[0]
    assert ax.get_title().startswith("efficiency = 0.727 +- 0.011 (k = 2)")
    assert ax.get_xlabel() == "share of the variance [%]"
    png = chart._repr_png_()
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    import matplotlib.pyplot as plt
    assert plt.get_fignums() == []  # made outside pyplot: Jupyter shows it once, no window
    chart.savefig(tmp_path / "c.svg")
    assert (tmp_path / "c.svg").read_text().lstrip().startswith("<?xml")


def test_chart_labels_u_as_a_difference(client):
    # Reproduction: the chart labelled the uncertainty of a temperature given in degC
    # "u = 1 degC"; an uncertainty is a difference: 1 K. Likewise 0.05 bar for a pressure given
    # in barg.
    r = client.turbine_expand(inlet={"p": "41 barg", "T": "400 degC", "flow": "20 t/h"},
                              outlet_p="4.5 bar", outlet={"T": "190 degC"},
                              uncertainty={"inlet.T": "1 K", "inlet.p": "0.05 bar"})
    rows = {x["input"]: x for x in unc.rows(r, "efficiency")}
    assert rows["inlet.T"]["unit"] == "degC" and rows["inlet.T"]["u_unit"] == "K"
    assert rows["inlet.p"]["unit"] == "barg" and rows["inlet.p"]["u_unit"] == "bar"
    labels = [t.get_text() for t in sp.contributions(r, "efficiency").axes[0].get_yticklabels()]
    assert "inlet.T\n(u = 1 K)" in labels, labels
    assert "inlet.p\n(u = 0.05 bar)" in labels, labels
    assert not any("degC" in x or "barg" in x for x in labels), labels
    assert unc.u_unit("degF", "temperature") == "degF difference"
    assert unc.u_unit("psia", "pressure") == "psi" and unc.u_unit("kJ/kg", "specific energy") == "kJ/kg"


def test_chart_with_monte_carlo_and_a_correlation(client):
    r = measured(client, method="monte_carlo", samples=2000, seed=3,
                 correlations=[{"inputs": ["inlet.T", "outlet.T"], "r": 0.5}],
                 outputs=["efficiency"])
    f = r["uncertainty"]["efficiency"]
    assert f["monte_carlo"]["samples"] == 2000
    chart = sp.contributions(r, "efficiency")
    assert "Monte Carlo u" in chart.axes[0].get_title()
    # a positive correlation of inputs with opposite sensitivities lowers u (GUM 5.2.2)
    plain = measured(client, outputs=["efficiency"])["uncertainty"]["efficiency"]["u"]
    assert f["u"] < plain
    assert sum(d["x"] for d in chart.drawn) == pytest.approx(100.0)


def test_bad_uncertainty_is_refused_with_its_path(client):
    with pytest.raises(steamcell.InvalidInput, match="inlet.flow"):
        client.turbine_expand(inlet={"p": "42 bar", "T": "400 degC"}, outlet_p="4.5 bar",
                              efficiency=0.8, uncertainty={"inlet.flow": "1 t/h"})


def test_property_uncertainty_of_a_state(client):
    st = client.state(p="1 bar", T="20 degC", property_uncertainty=True)
    pu = st["property_uncertainty"]
    assert pu["rho"]["components"][0]["name"] == "IAPWS-95"
    assert "0.0001%" in pu["rho"]["components"][0]["source"]
    assert pu["rho"]["U"] == pytest.approx(2 * pu["rho"]["u"])


def test_batch_property_uncertainty_columns(client):
    import pandas as pd
    df = pd.DataFrame({"p": [0.1, 5.0], "T": [20.0, 300.0]})
    out = client.batch(df, want=["rho"], property_uncertainty=True, progress=False)
    assert list(out.columns) == ["rho", "u_rho", "u_w", "u_cp", "u_p_sat", "errors"]
    st = client.state(p=0.1, T=20, property_uncertainty=True)
    assert out["u_rho"][0] == st["property_uncertainty"]["rho"]["u"]
    assert out["u_cp"][1] == client.state(p=5, T=300, property_uncertainty=True)[
        "property_uncertainty"]["cp"]["u"]
