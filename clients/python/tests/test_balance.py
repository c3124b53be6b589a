"""Site balances from Python against the real server: the example site of examples/site (an
invented mill) solves, its tables carry every stream and unit, the site balance closes (the
server's own totals residual), a sweep reports each point, and the charts render."""
import json

import pytest

import steamcell
from steamcell import balance
from conftest import REPO

pd = pytest.importorskip("pandas")
pytest.importorskip("matplotlib")


def site():
    return json.loads((REPO / "examples" / "site" / "site.json").read_text())


def test_example_site_solves_into_tables(client):
    b = client.balance(site())
    assert isinstance(b.streams, pd.DataFrame) and len(b.streams) == len(site()["streams"])
    assert set(b.units.index) == set(site()["units"])
    assert b.totals["energy_residual"] < 1e-9 and b.totals["mass_residual"] < 1e-9
    assert "licensed engineer" in b.caution
    # Every stream's flow is finite and its state is there.
    assert b.streams["h"].notna().all()
    # Warnings are {code, message}; the units table carries both, joined per unit.
    for w in b.warnings:
        assert set(w) == {"code", "message"} and w["code"] and w["message"]
    codes = set(c for cell in b.units["warning_codes"] for c in cell.split(", ") if c)
    assert codes == {w["code"] for w in b.warnings}


def test_network_builder_matches_plain_dicts(client):
    net = balance.Network()
    for name, u in site()["units"].items():
        spec = {k: v for k, v in u.items() if k != "kind"}
        net.unit(name, u["kind"], **spec)
    for name, s in site()["streams"].items():
        fixed = {k: v for k, v in s.items() if k not in ("from", "to")}
        net.stream(name, s["from"], s["to"], **fixed)
    a = client.balance(net).totals
    b = client.balance(site()).totals
    assert a == b


def test_sweep_and_charts(client, tmp_path):
    net = site()
    users = [n for n, u in net["units"].items() if u["kind"] == "user"]
    first = users[0]
    demand = net["units"][first]["demand"]
    assert isinstance(demand, (int, float)) or isinstance(demand, str)
    stream = next(n for n, st in net["streams"].items() if st["to"] == first)
    # (from 8 kg/s: below about 7.1 kg/s the medium-pressure header gets more from the
    # back-pressure turbine than it sends on, and the balance, which would need a let-down
    # running backwards, is refused point by point)
    table = balance.sweep(client, net, f"units.{first}.demand", 8.0, 13.0, points=4,
                          streams=[stream])
    assert len(table) == 4 and "fuel_heat_input" in table.columns
    # The chosen stream's values per point: its flow follows the swept demand (in the
    # engineering preset, t/h).
    assert table["ok"].all()
    flows = table[f"{stream}.flow"].tolist()
    assert flows == sorted(flows) and flows[0] < flows[-1], flows
    assert table[f"{stream}.T"].notna().all()
    fig = balance.plot_sweep(table)
    fig.savefig(tmp_path / "sweep.png")
    fig2 = balance.plot_energy_flows(client.balance(net))
    fig2.savefig(tmp_path / "flows.png", dpi=80)
    assert (tmp_path / "flows.png").stat().st_size > 5000
    assert fig2.axes[0].get_title().startswith("Site energy flows")


def test_sweep_in_units_and_its_table_and_plot_carry_units(client):
    """from/to as texts with units ("36 t/h" is the site's own MP demand, 10 kg/s in the
    engineering preset); the table says the unit of each column, the plot's axes too."""
    net = site()
    table = balance.sweep(client, net, "units.MP_users.demand", "36 t/h", "54 t/h", points=3)
    assert table["value"].tolist() == pytest.approx([10.0, 12.5, 15.0], rel=1e-14)
    assert table.attrs["units"]["value"] == "kg/s"
    assert table.attrs["units"]["net_power"] == "kW"
    assert table.attrs["units"]["makeup_water"] == "kg/s"
    assert table.loc[0, "net_power"] == pytest.approx(client.balance(net).totals["net_power"],
                                                      rel=1e-9)
    chart = balance.plot_sweep(table)
    ax = chart.axes[0]
    assert ax.get_xlabel() == "units.MP_users.demand [kg/s]"
    assert "[kW]" in ax.get_ylabel()
    us = balance.sweep(client, net, "units.MP_users.demand", "36 t/h", "54 t/h", points=2,
                       units="us")
    assert us.attrs["units"]["value"] == "lb/h"
    with pytest.raises(steamcell.WrongDimension):
        balance.sweep(client, net, "units.MP_users.demand", "3 bar", "54 t/h", points=2)


def test_energy_flow_chart_has_values_on_its_links(client):
    b = client.balance(site())
    chart = balance.plot_energy_flows(b)
    links = [e for e in chart.drawn if e["role"] in ("link", "return")]
    labelled = [e for e in links if e["text"] is not None]
    top = max(e["energy"] for e in links)
    # every link of at least 2 % of the largest carries its value, in MW (the preset is kW)
    assert labelled and all(e["text"] is not None for e in links if e["energy"] >= 0.02 * top)
    for e in labelled:
        assert f"{e['energy'] / 1000:.1f} MW" in e["text"].get_text()
    # the fuel enters on the left, the boundary sinks leave on the right
    nodes = {e["name"]: e for e in chart.drawn if e["role"] == "node"}
    assert nodes["fuel"]["x"] == 0 and nodes["power"]["x"] == 1 and nodes["losses"]["x"] == 1
    # nodes of a column do not overlap
    cols = {}
    for n in nodes.values():
        cols.setdefault(n["x"], []).append((n["y"], n["y"] + n["height"]))
    for spans in cols.values():
        spans.sort()
        assert all(a[1] <= b[0] + 1e-12 for a, b in zip(spans, spans[1:]))


def test_underspecified_network_raises_with_the_stream_named(client):
    net = site()
    # Drop every fixed flow of the first boiler steam stream's unit spec: the diagnosis names it.
    boiler = next(n for n, u in net["units"].items() if u["kind"] == "boiler")
    net["units"][boiler].pop("steam_flow", None)
    with pytest.raises(steamcell.Error) as e:
        client.balance(net)
    assert "specified" in str(e.value)


def test_registered_site_numbers_match_balance_solve(binary, client):
    """``serve --site`` + ``Client.site``: the one-number bridge gives balance.solve's totals, with
    a specification changed on the way."""
    path = REPO / "examples" / "site" / "site.json"
    with steamcell.connect(binary=binary, serve_args=["--site", f"mill={path}"]) as c:
        assert c.site("mill", "net_power") == client.balance(site()).totals["net_power"]
        changed = site()
        changed["units"]["MP_users"]["demand"] = "40 t/h"
        want = client.balance(changed).units.loc["BPT", "power"]
        got = c.site("mill", "units.BPT.power", {"units.MP_users.demand": "40 t/h"})
        assert got == want
        with pytest.raises(steamcell.Error, match="registered: mill"):
            c.site("other", "net_power")


def test_the_notebook_style_example_runs(tmp_path):
    """examples/site/site_balance.py, as the README tells a user to run it: it prints the
    totals and writes both charts."""
    import os
    import subprocess
    import sys
    env = dict(os.environ, MPLBACKEND="Agg")
    out = subprocess.run([sys.executable, str(REPO / "examples" / "site" / "site_balance.py")],
                         cwd=tmp_path, env=env, capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr[-2000:]
    assert "net_power" in out.stdout and "fuel_heat_input" in out.stdout, out.stdout[-2000:]
    for png in ("site-flows.png", "site-sweep.png"):
        assert (tmp_path / png).stat().st_size > 5000, png


def test_losses_are_units_with_their_costs_in_the_tables(client):
    """The example with losses (examples/site/site_with_losses.json: two leaks, an insulated
    main with its drain trap, a bare valve, a failed trap): the losses table has one row per
    leak, trap and line, the totals carry the steam lost and its yearly cost, and a sweep of
    a leak's diameter to zero shows the saving in the totals."""
    net = json.loads((REPO / "examples" / "site" / "site_with_losses.json").read_text())
    b = client.balance(net)
    kinds = {n: u["kind"] for n, u in net["units"].items()}
    assert set(b.losses.index) == {n for n, k in kinds.items() if k in ("leak", "trap", "line")}
    assert b.losses.loc["HP_flange_leak", "steam"] > 0 and bool(b.losses.loc["HP_flange_leak", "choked"])
    assert b.losses.loc["LP_main", "heat"] > 0
    t = b.totals
    assert t["steam_lost"] == pytest.approx(t["leak_flow"] + t["trap_steam"], rel=1e-12)
    assert t["loss_cost_per_year"] == pytest.approx(b.losses["cost_per_year"].sum(), rel=1e-9)
    assert b.costing["boiler_efficiency_source"] == "the site's boilers"
    table = balance.sweep(client, net, "units.HP_flange_leak.diameter", "3 mm", 0, points=3)
    assert table["ok"].all()
    assert table["leak_flow"].iloc[-1] < table["leak_flow"].iloc[0]
    assert table["loss_cost_per_year"].iloc[-1] < table["loss_cost_per_year"].iloc[0]
    assert table["fuel_heat_input"].iloc[-1] < table["fuel_heat_input"].iloc[0]
    assert table.attrs["units"]["steam_lost_per_year"] == "t"
    assert table.attrs["units"]["loss_cost_per_year"] == "per year"
    assert table.attrs["units"]["hours_per_year"] == "h"
    assert table.attrs["units"]["loss_discharged"] == "kg/s"
