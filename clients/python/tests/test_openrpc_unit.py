"""Reading OpenRPC documents of both shapes (one by-name params object, or one descriptor per
field) into wrappers: keywords, required ones, docstrings, the wire names sent. No server."""

import inspect

import pytest

from steamcell import openrpc

PARAMS_OBJECT = {
    "openrpc": "1.2.6",
    "methods": [{
        "name": "water.curve",
        "summary": "Points for charts",
        "description": "Series of points.",
        "paramStructure": "by-name",
        "params": [{"name": "params", "required": True,
                    "schema": {"$ref": "#/components/schemas/CurveParams"}}],
        "result": {"name": "result", "schema": {"$ref": "#/components/schemas/CurveResult"}},
    }],
    "components": {"schemas": {
        "CurveParams": {"title": "CurveParams", "type": "object", "required": ["kind"],
                        "properties": {"kind": {"type": "string", "description": "dome or isobar"},
                                       "from": {"description": "Start of the range."},
                                       "points": {"type": ["integer", "null"]}}},
        "CurveResult": {"type": "object", "description": "The series."},
    }},
}

PER_FIELD = {
    "methods": [{
        "name": "valve.throttle",
        "summary": "Isenthalpic let-down",
        "paramStructure": "by-name",
        "params": [{"name": "inlet", "required": True, "schema": {"type": "object"}},
                   {"name": "outlet_p", "required": True, "schema": {}},
                   {"name": "units", "schema": {"type": "string"}}],
        "result": {"name": "ValveResult", "schema": {}},
    }],
}


class Fake:
    def __init__(self):
        self.sent = None

    def call(self, method, **params):
        self.sent = (method, params)
        return params


def test_params_object_shape():
    fn = openrpc.make_wrappers(PARAMS_OBJECT)["water.curve"]
    assert fn.rpc_params == {"kind", "from", "points"} and fn.rpc_required == {"kind"}
    sig = inspect.signature(fn)
    assert [p for p in sig.parameters][1:] == ["kind", "from_", "points"]
    assert sig.parameters["kind"].default is inspect.Parameter.empty
    assert "Points for charts" in fn.__doc__ and "dome or isobar" in fn.__doc__
    assert "from_ (sent as 'from')" in fn.__doc__
    f = Fake()
    fn(f, kind="isobar", from_=10)
    assert f.sent == ("water.curve", {"kind": "isobar", "from": 10})  # None values are left out
    with pytest.raises(TypeError):
        fn(f, kind="dome", colour="red")
    with pytest.raises(TypeError):
        fn(f, points=3)


def test_per_field_shape():
    fn = openrpc.make_wrappers(PER_FIELD)["valve.throttle"]
    assert fn.__name__ == "valve_throttle"
    assert fn.rpc_params == {"inlet", "outlet_p", "units"}
    assert fn.rpc_required == {"inlet", "outlet_p"}
    f = Fake()
    fn(f, inlet={"p": 4, "T": 400}, outlet_p=1)
    assert f.sent == ("valve.throttle", {"inlet": {"p": 4, "T": 400}, "outlet_p": 1})
