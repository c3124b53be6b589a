"""The generated wrappers must match the OpenRPC document, and the package's copy of the document
must match what the server says (server.schema) and the repository's schema file.

When the server's methods change, these tests fail until `python3 clients/python/sync_schema.py`
refreshes src/steamcell/openrpc.json.
"""

import inspect
import json

import pytest

import steamcell
from steamcell import openrpc
from conftest import REPO

# The params of every method as the API contract (src/api/*.rs serde types) defines them; a
# second, hand-kept view so that a bug in reading the document cannot hide. `uncertainty` is
# added by src/api/uncertainty.rs to every method with numeric inputs but the bulk ones.
CONTRACT = {
    "water.state": {"given", "units", "ambient", "formulation", "backward_only", "metastable", "prefer",
                    "uncertainty", "property_uncertainty"},
    "water.batch": {"given", "want", "encoding", "units", "ambient", "formulation", "backward_only",
                    "metastable", "prefer", "expect",
                    "property_uncertainty"},
    "water.saturation": {"T", "p", "units", "ambient", "formulation", "uncertainty"},
    "water.curve": {"kind", "p", "T", "s", "from", "to", "points", "units", "encoding"},
    "turbine.expand": {"inlet", "outlet_p", "efficiency", "outlet", "throttle_dp", "moisture_loss",
                       "baumann_factor", "exhaust_area", "mechanical_efficiency", "mechanical_loss",
                       "generator_efficiency", "generator_loss", "units", "ambient", "uncertainty"},
    "turbine.train": {"inlet", "stages", "efficiency_basis", "throttle_dp", "moisture_loss",
                      "baumann_factor", "exhaust_area", "mechanical_efficiency", "mechanical_loss",
                      "generator_efficiency", "generator_loss", "units", "ambient", "uncertainty"},
    "pump.raise": {"inlet", "outlet_p", "efficiency", "efficiency_kind", "suction_head", "units",
                   "ambient", "uncertainty"},
    "valve.throttle": {"inlet", "outlet_p", "units", "ambient", "uncertainty"},
    "desuperheater.spray": {"steam", "water", "outlet_p", "target_T", "target_superheat", "units",
                            "ambient", "uncertainty"},
    "flash.separate": {"inlet", "p", "units", "ambient", "uncertainty"},
    "header.mix": {"inlets", "p", "units", "ambient", "uncertainty"},
    "exchanger.balance": {"hot", "cold", "units", "ambient", "uncertainty"},
    "boiler.fire": {"feedwater", "steam", "steam_flow", "blowdown_fraction", "efficiency", "units",
                    "ambient", "uncertainty"},
    "deaerator.balance": {"p", "steam", "waters", "vent_fraction", "units", "ambient", "uncertainty"},
    "cycle.rankine": {"boiler_p", "boiler_T", "reheat_p", "reheat_T", "condenser_p", "condenser_T",
                      "condenser", "turbine_efficiency", "hp_efficiency", "ip_efficiency",
                      "lp_efficiency", "crossover_p", "efficiency_basis", "moisture_loss",
                      "baumann_factor", "exhaust_area", "throttle_dp", "boiler_dp", "reheat_dp",
                      "pump_efficiency", "mechanical_efficiency", "mechanical_loss",
                      "generator_efficiency", "generator_loss", "auxiliary_power", "heaters", "flow",
                      "net_power", "units", "ambient", "uncertainty"},
    "orifice.flow": {"inlet", "diameter", "downstream_p", "shape", "discharge_coefficient", "flashing",
                     "approach_velocity", "pipe_diameter", "hours_per_year", "fuel_cost", "steam_cost",
                     "boiler_efficiency", "makeup_T", "units", "ambient", "uncertainty"},
    "pipe.flow": {"inlet", "length", "inner_diameter", "wall_thickness", "roughness", "wall_conductivity",
                  "fittings", "elevation_change", "insulation", "jacket", "insulation_installed",
                  "insulation_emissivity", "bare_emissivity", "air_T", "wind_speed", "surroundings_T",
                  "friction_factor", "segments", "touch_limit_T", "hours_per_year", "fuel_cost", "steam_cost",
                  "boiler_efficiency", "makeup_T", "units", "ambient", "uncertainty"},
    "balance.solve": {"network", "units", "ambient", "uncertainty"},
    "balance.sweep": {"network", "path", "from", "to", "points", "streams", "units", "ambient"},
}


@pytest.fixture(scope="module")
def live_doc(client):
    return client.schema()


def sig_keywords(fn):
    return {p.name for p in inspect.signature(fn).parameters.values()
            if p.kind is inspect.Parameter.KEYWORD_ONLY}


def test_package_copy_equals_server_schema(live_doc):
    packaged = openrpc.load_document()
    live = {m["name"]: m for m in live_doc["methods"]}
    mine = {m["name"]: m for m in packaged["methods"]}
    assert set(mine) == set(live), "run clients/python/sync_schema.py"
    for name in live:
        assert mine[name].get("params") == live[name].get("params"), name
        assert mine[name].get("summary") == live[name].get("summary"), name


def test_package_copy_equals_repository_schema_file():
    path = REPO / "schema" / "steamcell.openrpc.json"
    if not path.exists():
        pytest.skip("schema/steamcell.openrpc.json is not in this checkout")
    repo_doc = json.loads(path.read_text(encoding="utf-8"))
    assert [m["name"] for m in repo_doc["methods"]] == [m["name"] for m in openrpc.load_document()["methods"]]


def test_every_method_has_a_wrapper_with_its_params(live_doc):
    for m in live_doc["methods"]:
        fn = steamcell.methods.get(m["name"])
        assert fn is not None, f"no wrapper for {m['name']}"
        params = openrpc.method_params(live_doc, m)
        assert fn.rpc_params == {p.name for p in params}, m["name"]
        assert fn.rpc_required == {p.name for p in params if p.required}, m["name"]
        # the Python keywords are the wire names (a Python keyword such as `from` gets a "_")
        assert sig_keywords(fn) == {p.pyname for p in params}, m["name"]
        required = {p.name for p in inspect.signature(fn).parameters.values()
                    if p.kind is inspect.Parameter.KEYWORD_ONLY and p.default is inspect.Parameter.empty}
        assert required == {p.pyname for p in params if p.required}, m["name"]
        assert getattr(steamcell.Client, fn.__name__) is fn
        assert (m.get("summary") or m["name"]) in fn.__doc__


def test_wrappers_match_the_contract():
    for name, params in CONTRACT.items():
        assert name in steamcell.methods, name
        assert steamcell.methods[name].rpc_params == params, name


def test_from_is_sent_as_from(client):
    # water.curve's `from` is a Python keyword: the wrapper takes from_ and sends "from"
    r = client.water_curve(kind="isobar", p=1, from_=150, to=250, points=5)
    ts = r.series[0]["T"]
    assert min(ts) >= 150 - 1e-9 and max(ts) <= 250 + 1e-9
