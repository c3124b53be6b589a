"""Notebook-style walk through the invented example site (examples/site/site.json): solve the
steam balance, show the totals and the units with warnings, draw the energy flows, and sweep
the demand of one process user; then the same site with its distribution losses
(examples/site/site_with_losses.json: leaks, traps, lines): what each loses and costs, and what
fixing the largest leak saves.

    pip install './clients/python[all]'
    python examples/site/site_balance.py        # writes site-flows.png and site-sweep.png

Results are only as good as the specifications (efficiencies, losses: the plant's own test
data) and are not a substitute for the governing codes, the equipment maker's data or a
licensed engineer's review.
"""
import json
import pathlib

import steamcell
from steamcell import balance

here = pathlib.Path(__file__).parent
network = json.loads((here / "site.json").read_text())

with steamcell.connect() as c:
    site = c.balance(network)
    print(site)
    print(site.totals_frame)
    print(site.units[site.units["warnings"] != ""][["kind", "warnings"]])
    balance.plot_energy_flows(site).savefig("site-flows.png", dpi=100)
    user = next(n for n, u in network["units"].items() if u["kind"] == "user")
    table = balance.sweep(c, network, f"units.{user}.demand", 8.0, 14.0, points=7)
    print(table[["value", "ok", "fuel_heat_input", "net_power"]])
    balance.plot_sweep(table, xlabel=f"{user} demand").savefig("site-sweep.png", dpi=100)

    losses = json.loads((here / "site_with_losses.json").read_text())
    audit = c.balance(losses)
    print(audit.losses[["kind", "steam", "heat", "fuel", "cost_per_year"]])
    print({k: audit.totals[k] for k in ("steam_lost", "line_heat_loss", "loss_fuel",
                                        "loss_cost_per_year")})
    fix = balance.sweep(c, losses, "units.HP_flange_leak.diameter", "3 mm", 0, points=4)
    print(fix[["value", "ok", "fuel_heat_input", "loss_cost_per_year"]])
