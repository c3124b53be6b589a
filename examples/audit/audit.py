"""Notebook-style steam-loss audit of an invented site, Imaginary Falls Mill: a leak at a flange,
a steam trap failed open, a trap leaking, and a line and a valve left bare, each priced with
real-fluid numbers (orifice.flow and pipe.flow), then the total.

    pip install './clients/python[all]'
    python examples/audit/audit.py            # prints the table, writes audit-losses.png

The site, its pressures, prices and hole sizes are made up. A failed-open trap is a hole the
size of the trap's orifice passing live steam; a leaking trap is a smaller equivalent hole (the
size is the auditor's estimate). The results support engineering work; they are not a substitute
for the governing codes, the equipment maker's data or a licensed engineer's review, and steam
leaks are hazards to be made safe before they are priced.
"""
import steamcell

# The mill's operating basis (invented): steam made in a gas-fired boiler.
BASIS = dict(hours_per_year=8000, fuel_cost="32 EUR/MWh", boiler_efficiency=0.84, makeup_T="12 degC")
MAIN = {"p": "10 barg", "x": 1}  # the 10 bar(g) saturated steam main

with steamcell.connect() as c:
    items = []

    # 1. A leak at a flange of the main: a 3 mm hole to atmosphere.
    leak = c.orifice_flow(inlet=MAIN, diameter="3 mm", **BASIS)
    items.append(("flange leak, 3 mm, 10 bar(g) main", leak.mass_flow, leak.yearly))
    print(f"leak: {leak.mass_flow * 3600:.1f} kg/h, choked={leak.choked}, "
          f"throat {leak.throat_p * 10:.2f} bar(a), jet {leak.velocity:.0f} m/s")

    # 2. A trap on a 4 bar(g) drip leg failed open: live steam through its 4.5 mm orifice into
    #    the condensate return at 0.5 bar(g).
    trap = c.orifice_flow(inlet={"p": "4 barg", "x": 1}, diameter="4.5 mm",
                          downstream_p="0.5 barg", **BASIS)
    items.append(("trap failed open, 4.5 mm, 4 bar(g)", trap.mass_flow, trap.yearly))

    # 3. A trap leaking steam past its seat: an equivalent hole of 1.5 mm on the main.
    seat = c.orifice_flow(inlet=MAIN, diameter="1.5 mm", downstream_p="0.5 barg", **BASIS)
    items.append(("trap leaking, 1.5 mm equivalent, 10 bar(g)", seat.mass_flow, seat.yearly))

    # 4. 25 m of bare DN80 branch line, with the insulation that would go on it (60 mm of
    #    mineral wool at 0.045 W/(m K) under an aluminium jacket).
    line = c.pipe_flow(inlet={**MAIN, "flow": "3 t/h"}, length="25 m", inner_diameter="77.9 mm",
                       wall_thickness="5.5 mm", insulation=[{"thickness": "60 mm", "conductivity": "0.045 W/(m K)"}],
                       jacket={"emissivity": 0.1}, insulation_installed=False,
                       fittings=[{"name": "elbow", "K": 0.3, "count": 4}], **BASIS)
    ins = line.insulation
    items.append(("25 m of bare DN80 line (heat)", None, ins.bare.yearly))
    print(f"line: {line.pressure_drop * 1e3:.1f} kPa drop, bare {ins.bare.heat_loss:.1f} kW "
          f"(surface {ins.bare.surface_T:.0f} degC), insulated {ins.insulated.heat_loss:.2f} kW "
          f"(surface {ins.insulated.surface_T:.0f} degC): insulating saves "
          f"{ins.yearly_cost_saving:,.0f} EUR a year")

    # 5. A bare DN80 gate valve: taken as the heat loss of 1.5 m of bare pipe of the same size
    #    (a rough equivalence; common practice, no source).
    valve = c.pipe_flow(inlet={**MAIN, "flow": "3 t/h"}, length="1.5 m", inner_diameter="77.9 mm",
                        wall_thickness="5.5 mm", insulation=[{"thickness": "60 mm", "conductivity": "0.045 W/(m K)"}],
                        insulation_installed=False, **BASIS)
    items.append(("bare DN80 valve (as 1.5 m of pipe)", None, valve.insulation.bare.yearly))
    print(f"valve: an insulating cover saves {valve.insulation.yearly_cost_saving:,.0f} EUR a year")

    print()
    print(f"{'Imaginary Falls Mill: losses':44s} {'steam kg/h':>10s} {'fuel MWh/yr':>12s} {'EUR/yr':>10s}")
    total_fuel = total_cost = 0.0
    for name, flow, y in items:
        steam = f"{flow * 3600:10.1f}" if flow is not None else f"{'(heat)':>10s}"
        print(f"{name:44s} {steam} {y.fuel:12.1f} {y.cost:10,.0f}")
        total_fuel += y.fuel
        total_cost += y.cost
    print(f"{'total':44s} {'':10s} {total_fuel:12.1f} {total_cost:10,.0f}")
    for r in (leak, trap, seat, line):
        for w in r.warnings:
            print(f"warning [{w['code']}]:", w["message"])
    print(leak.caution)

    try:
        import matplotlib
        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
        fig, ax = plt.subplots(figsize=(8, 3.5))
        ax.barh([n for n, _, _ in items], [y.cost for _, _, y in items], color="tab:red")
        ax.set_xlabel("cost per year (EUR)")
        ax.set_title("Imaginary Falls Mill: what each loss costs")
        ax.invert_yaxis()
        fig.tight_layout()
        fig.savefig("audit-losses.png", dpi=100)
        print("wrote audit-losses.png")
    except ImportError:
        pass
