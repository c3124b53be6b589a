"""orifice.flow and pipe.flow from Python through the generated wrappers, against the real
server, and the audit example of examples/audit run as the README tells a user to run it.

Checks: the wrappers send every keyword and decode the answer; an independent check of the
answer (the yearly amounts from the flow, the hours and the prices; the insulated/bare saving
from the two heat losses); errors arrive as steamcell.Error subclasses with the quantity named.
"""
import os
import subprocess
import sys

import pytest

import steamcell
from conftest import REPO


def test_orifice_flow_wrapper(client):
    r = client.orifice_flow(inlet={"p": "10 barg", "x": 1}, diameter="3 mm", hours_per_year=8000,
                            fuel_cost="30 EUR/MWh", boiler_efficiency=0.85)
    assert r.choked is True
    assert 0.5 < r.throat_p / 1.101325 < 0.6  # critical ratio of steam, about 0.55-0.58
    # yearly steam in t: kg/s x 8000 h x 3.6
    assert r.yearly.steam == pytest.approx(r.mass_flow * 8000 * 3.6, rel=1e-12)
    assert r.yearly.cost == pytest.approx(30 * r.yearly.heat / 0.85, rel=1e-12)
    assert "licensed engineer" in r.caution
    # the namespace form reaches the same method
    r2 = client.orifice.flow(inlet={"p": "10 barg", "x": 1}, diameter="3 mm")
    assert r2.mass_flow == r.mass_flow


def test_pipe_flow_wrapper(client):
    r = client.pipe_flow(inlet={"p": "10 barg", "x": 1, "flow": "3 t/h"}, length="25 m",
                         inner_diameter="77.9 mm", wall_thickness="5.5 mm",
                         insulation=[{"thickness": "60 mm", "conductivity": "0.045 W/(m K)"}],
                         insulation_installed=False, fuel_cost="30 EUR/MWh", boiler_efficiency=0.85)
    assert r.condition == "bare"
    ins = r.insulation
    assert ins.saving == pytest.approx(ins.bare.heat_loss - ins.insulated.heat_loss, rel=1e-12)
    assert ins.yearly_cost_saving == pytest.approx(ins.bare.yearly.cost - ins.insulated.yearly.cost, rel=1e-9)
    assert r.touch_safe is False and any(
        w["code"] == "surface_above_touch_limit" and "touch limit" in w["message"] for w in r.warnings)
    assert r.balance.energy_residual < 1e-9
    assert r.profile[0]["distance"] == 0 and r.profile[-1]["distance"] == pytest.approx(25)


def test_distribution_errors(client):
    with pytest.raises(steamcell.Error) as e:
        client.orifice_flow(inlet={"p": "5 barg", "x": 1}, diameter="3 mm", downstream_p="6 barg")
    assert "downstream_p" in str(e.value)
    with pytest.raises(steamcell.Error) as e:
        client.pipe_flow(inlet={"p": "10 barg", "x": 1, "flow": 1}, length=10, inner_diameter="50 mm",
                         wall_thickness="4 mm", insulation=[{"thickness": 0, "conductivity": "0.04 W/(m K)"}])
    assert "insulation[0].thickness" in str(e.value)


def test_the_audit_example_runs(tmp_path):
    """examples/audit/audit.py prices a leak, a failed trap, a leaking trap and a bare line and
    valve, prints the total and writes its chart."""
    env = dict(os.environ, MPLBACKEND="Agg")
    out = subprocess.run([sys.executable, str(REPO / "examples" / "audit" / "audit.py")],
                         cwd=tmp_path, env=env, capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr[-2000:]
    assert "Imaginary Falls Mill" in out.stdout and "total" in out.stdout, out.stdout[-2000:]
    assert (tmp_path / "audit-losses.png").stat().st_size > 5000
