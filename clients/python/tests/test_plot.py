"""Charts: what is drawn, checked against the server's own states (not pixels).

The cycle diagram follows the working fluid: the boiler line lies on the boiler isobar (each
drawn vertex is the state at (p_boiler, s) within solver precision, the saturated liquid and
vapour included), extractions and drains are separate branches; charts zoom to the processes;
isobar labels sit inside the axes; the dome is smooth up to the critical point (IAPWS-IF97:
T_c = 647.096 K). Images are saved as PNG and SVG (Agg backend, no display)."""

import struct

import matplotlib
import pytest

matplotlib.use("Agg")

import steamcell.plot as sp  # noqa: E402

T_C_DEGC = 647.096 - 273.15  # IAPWS-IF97 critical temperature


def png_size(path):
    with open(path, "rb") as f:
        head = f.read(24)
    assert head[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">II", head[16:24])


def turbine(client):
    return client.turbine_expand(inlet={"p": "42 barg", "T": "410 degC", "flow": "20 t/h"},
                                 outlet_p="4 barg", efficiency=0.72)


def reheat_cycle(client):
    """An invented unit of Imaginary Falls Mill: reheat, one open and two closed heaters."""
    return client.cycle_rankine(
        boiler_p="100 bar", boiler_T="500 degC", reheat_p="20 bar", reheat_T="500 degC",
        condenser_p="0.08 bar", turbine_efficiency=0.87, pump_efficiency=0.8,
        heaters=[{"p": "40 bar", "kind": "closed", "ttd": 3}, {"p": "5 bar", "kind": "open"},
                 {"p": "1.5 bar", "kind": "closed"}])


def test_ts_png(client, tmp_path):
    fig = sp.ts(client, processes=[("back-pressure turbine", turbine(client))],
                figsize=(8, 6), dpi=100)
    path = tmp_path / "ts.png"
    fig.savefig(path, dpi=100)
    assert png_size(path) == (800, 600)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "s [kJ/(kg K)]"
    assert ax.get_ylabel().startswith("T [") and "C" in ax.get_ylabel()
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert "back-pressure turbine" in labels and "back-pressure turbine (isentropic)" in labels
    fig.savefig(tmp_path / "ts.svg")
    assert (tmp_path / "ts.svg").read_text().lstrip().startswith("<?xml")


def test_hs_png_and_rich_repr(client, tmp_path):
    fig = sp.hs(client, processes=[turbine(client)], isobars=[0.5, 4.3], figsize=(6, 4), dpi=120)
    path = tmp_path / "hs.png"
    fig.savefig(path, dpi=120)
    assert png_size(path) == (720, 480)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "s [kJ/(kg K)]" and ax.get_ylabel() == "h [kJ/kg]"
    # Jupyter shows the chart from its PNG repr: no %matplotlib magic, no pyplot figure
    png = fig._repr_png_()
    assert png[:8] == b"\x89PNG\r\n\x1a\n" and len(png) > 10000
    import matplotlib.pyplot as plt
    assert plt.get_fignums() == []


@pytest.mark.parametrize("kind", ["ts", "hs"])
def test_boiler_line_stays_on_its_isobar(client, kind):
    r = reheat_cycle(client)
    chart = getattr(sp, kind)(client, processes=[r])
    ykey = "T" if kind == "ts" else "h"
    boiler = next(e for e in chart.drawn if e["role"] == "boiler")
    pb = r.points[0].state.p
    sat = client.water_saturation(p=pb)
    assert len(boiler["x"]) >= 20
    for s, y in zip(boiler["x"], boiler["y"]):
        st = client.state(p=pb, s=s)
        assert y == pytest.approx(getattr(st, ykey), rel=1e-7, abs=1e-6), (s, y)
    # through the dome: both saturation points of the boiler pressure are vertices
    for phase in ("liquid", "vapour"):
        s_sat = sat[phase]["s"]
        assert min(abs(s - s_sat) for s in boiler["x"]) < 1e-9, phase
    # and the line goes from the feedwater entering the boiler to the throttle
    assert boiler["x"][0] == r.points[-1].state.s and boiler["x"][-1] == r.points[0].state.s


def test_cycle_follows_the_working_fluid_with_separate_branches(client):
    r = reheat_cycle(client)
    chart = sp.ts(client, processes=[r])
    main = [e for e in chart.drawn if e.get("main") and e["role"] not in ("dome", "isobar")]
    roles = [e["role"] for e in main]
    # condenser outlet -> pumps and heaters -> boiler -> HP turbine -> reheat -> LP -> condenser
    assert roles == ["pump", "feedwater heating", "feedwater heating", "pump",
                     "feedwater heating", "boiler", "turbine", "reheat", "turbine", "condenser"]
    # consecutive main segments join: each starts where the one before ended
    for a, b in zip(main, main[1:]):
        assert (a["x"][-1], a["y"][-1]) == (b["x"][0], b["y"][0]), (a["label"], b["label"])
    assert (main[-1]["x"][-1], main[-1]["y"][-1]) == (main[0]["x"][0], main[0]["y"][0])
    ext = [e for e in chart.drawn if e["role"] == "extraction"]
    drains = [e for e in chart.drawn if e["role"] == "drain"]
    assert len(ext) == 3 and len(drains) == 2
    assert all(not e["main"] for e in ext + drains)
    labels = [t.get_text() for t in chart.axes[0].get_legend().get_texts()]
    assert sum("extraction to" in t for t in labels) == 3 and sum("drain" in t for t in labels) == 2
    # the extraction to the open heater ends at the heater's saturated liquid on the 5 bar isobar
    open_ext = next(e for e in ext if "open" in e["label"])
    sat = client.water_saturation(p="5 bar")
    assert open_ext["x"][-1] == pytest.approx(sat.liquid.s, rel=1e-12)


def plant_options():
    """Every option of cycle.rankine that adds a state point: throttle valve, reheater and
    extraction-line drops, a crossover, a leaving loss, a drain pumped forward, a DCA."""
    return dict(reheat_p="3 MPa", reheat_T="520 degC", reheat_dp="8 %", throttle_dp="3 %",
                boiler_dp="1.5 MPa", crossover_p="0.5 MPa", exhaust_area="12 m2", flow=90,
                heaters=[{"p": "3 MPa", "kind": "closed", "line_dp": "3 %", "dca": 5.6},
                         {"p": "1 MPa", "kind": "open", "line_dp": "5 %"},
                         {"p": "0.2 MPa", "kind": "closed", "drain": "pump_forward"},
                         {"p": "0.05 MPa", "kind": "closed", "line_dp": "2 kPa"}])


def test_plant_cycle_follows_the_working_fluid(client):
    """With every plant option the main paths still join up round the loop, the throttle valve
    and the three sections included."""
    r = client.cycle_rankine(boiler_p="12 MPa", boiler_T="520 degC", condenser_p="10 kPa",
                             turbine_efficiency=0.85, **plant_options())
    paths = sp.cycle_paths(client, r)
    main = [p for p in paths if p.main]
    assert [p.label for p in main if p.role in ("valve", "turbine")] == [
        "throttle valve", "high-pressure turbine", "intermediate-pressure turbine",
        "low-pressure turbine"]
    assert any(p.label.startswith("pumped drain mixing") for p in main)
    assert sum(p.role == "extraction" for p in paths) == 4
    assert any(p.role == "drain" and p.label.endswith("pumped forward") for p in paths)
    chart = sp.ts(client, processes=[r])
    drawn = [e for e in chart.drawn if e.get("main") and e["role"] not in ("dome", "isobar")]
    for a, b in zip(drawn, drawn[1:]):
        assert (a["x"][-1], a["y"][-1]) == (b["x"][0], b["y"][0]), (a["label"], b["label"])
    assert (drawn[-1]["x"][-1], drawn[-1]["y"][-1]) == (drawn[0]["x"][0], drawn[0]["y"][0])


def test_every_cycle_label_is_known(client):
    """cycle_paths reads the roles from the state table's labels: every configuration's labels
    are recognised (a label changed in the server fails here)."""
    cases = [dict(),
             dict(reheat_p="3 MPa", reheat_T="450 degC"),
             dict(heaters=[{"p": "1 MPa", "kind": "open"}]),
             dict(heaters=[{"p": "2 MPa", "kind": "closed"}, {"p": "0.3 MPa", "kind": "closed"}]),
             dict(reheat_p="2 MPa", reheat_T="480 degC",
                  heaters=[{"p": "2 MPa", "kind": "closed"}, {"p": "0.6 MPa", "kind": "open"}]),
             plant_options()]
    for extra in cases:
        r = client.cycle_rankine(boiler_p="12 MPa", boiler_T="520 degC", condenser_p="10 kPa",
                                 turbine_efficiency=0.85, **extra)
        paths = sp.cycle_paths(client, r)
        assert [p.role for p in paths if p.role == "boiler"] == ["boiler"], extra
        assert sum(p.role == "extraction" for p in paths) == len(extra.get("heaters", []))
    with pytest.raises(ValueError, match="not recognised"):
        sp._role_of("something new")


def _inside(chart):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    canvas = FigureCanvasAgg(chart.figure)
    canvas.draw()
    renderer = canvas.get_renderer()
    box = chart.axes[0].get_window_extent(renderer)
    texts = [e["text"] for e in chart.drawn if e.get("text") is not None]
    assert texts, "no labels drawn"
    for t in texts:
        bb = t.get_window_extent(renderer)
        assert box.x0 <= bb.x0 and bb.x1 <= box.x1 and box.y0 <= bb.y0 and bb.y1 <= box.y1, \
            (t.get_text(), bb, box)
    return texts


@pytest.mark.parametrize("kind", ["ts", "hs"])
def test_labels_inside_and_zoom_to_the_processes(client, kind):
    t = turbine(client)
    chart = getattr(sp, kind)(client, processes=[t], isotherms=[300, 400])
    _inside(chart)
    ax = chart.axes[0]
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    ykey = "T" if kind == "ts" else "h"
    for st in (t.inlet, t.outlet, t.isentropic_outlet):
        assert x0 < st.s < x1 and y0 < st[ykey] < y1
    assert x1 - x0 < 1.0, "zoomed to the expansion, not the whole dome (s 0 to 9)"
    whole = getattr(sp, kind)(client, processes=[t], zoom=False)
    wx0, wx1 = whole.axes[0].get_xlim()
    assert wx0 < 0.1 and wx1 > 9.0
    cyc = getattr(sp, kind)(client, processes=[reheat_cycle(client)])
    _inside(cyc)


def test_dome_is_smooth_up_to_the_critical_point(client):
    d = sp.dome(client)
    top = max(d["T"])
    assert top == pytest.approx(T_C_DEGC, abs=1e-9)
    i = d["T"].index(top)
    # the last steps below the critical point are small in s (no flat or kinked top)
    steps = [abs(d["s"][k + 1] - d["s"][k]) for k in range(i - 5, i + 5)]
    assert max(steps) < 0.05, steps
    assert d["T"][0] == pytest.approx(0.01, abs=1e-9) and d["T"][-1] == pytest.approx(0.01, abs=1e-9)
