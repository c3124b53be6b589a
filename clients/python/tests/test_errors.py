"""Error answers become steamcell.Error subclasses with code, message and data."""

import pytest

import steamcell


def test_out_of_range(client):
    with pytest.raises(steamcell.OutOfRange) as ei:
        client.state(p=3, T="5000 degC")
    e = ei.value
    assert e.code == 1001 and e.kind == "out_of_range"
    assert isinstance(e.data, dict) and e.message
    assert isinstance(e, steamcell.Error)


def test_unknown_unit(client):
    with pytest.raises(steamcell.UnknownUnit) as ei:
        client.state(p="3 furlongs", T=300)
    assert ei.value.code == 1004 and ei.value.data["kind"] == "unknown_unit"


def test_wrong_dimension(client):
    with pytest.raises(steamcell.WrongDimension) as ei:
        client.state(p="300 K", T=300)
    assert ei.value.code == 1005


def test_one_property_is_invalid_input(client):
    with pytest.raises(steamcell.InvalidInput) as ei:
        client.state(p=3)
    assert ei.value.code == 1006


def test_unknown_method(client):
    with pytest.raises(steamcell.MethodNotFound) as ei:
        client.call("water.no_such_method")
    assert ei.value.code == -32601


def test_unknown_field_is_invalid_params(client):
    with pytest.raises(steamcell.InvalidParams) as ei:
        client.call("water.state", given={"p": 3, "T": 300}, colour="blue")
    assert ei.value.code == -32602


def test_wrapper_rejects_unknown_keyword_before_sending(client):
    with pytest.raises(TypeError):
        client.valve_throttle(inlet={"p": 4, "T": 400}, outlet_p=1, colour="blue")
    with pytest.raises(TypeError):  # outlet_p is required by the OpenRPC document
        client.valve_throttle(inlet={"p": 4, "T": 400})


def test_from_rpc_mapping():
    e = steamcell.errors.from_rpc({"code": 1003, "message": "two states", "data": {"kind": "no_unique_state"}})
    assert type(e) is steamcell.NoUniqueState and e.code == 1003 and "two states" in str(e)
    e = steamcell.errors.from_rpc({"code": 1, "message": "?", "data": {"kind": "infeasible"}})
    assert type(e) is steamcell.Infeasible
    e = steamcell.errors.from_rpc({"code": 77, "message": "odd"})
    assert type(e) is steamcell.Error and e.code == 77
