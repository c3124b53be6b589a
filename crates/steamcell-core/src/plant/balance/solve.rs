//! The site solver over a validated [`Model`]: successive substitution between the stream
//! states (each unit sets its outlets from its inlets) and the linear flow system (every
//! unit's balances and specifications, every fixed flow), with the count of the flow
//! equations before the first solve; the refusal of a balance that needs negative flows (with
//! what they mean at the units they join and the specifications that fix them, found by
//! solving again) or whose solved states no unit can give (a measured turbine outlet that
//! means an efficiency outside (0, 1]); then results, totals, the costing
//! of the losses and the energy-flow summary.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: a returned [`Solution`] closes every unit and the site to [`TOLERANCE`], and no
//! flow in it is negative (beyond 1e-9 of the largest).

use super::diagnosis::{ClashHint, Equation, Finding, Owner};
use super::dof::{self, Of, Row};
use super::model::Model;
use super::units::{At, Boundary, Loss, LossKind, Report};
use super::*;
use crate::error::{Error, Result};
use crate::plant::losses::{Costing, Price, YearlyLoss};
use crate::plant::warnings::{Code, Quantity, Warning};
use crate::plant::{ph, sat_vapour};
use crate::units::Dim;
use crate::water::state::P_C;

const MAX_ITER: usize = 200;

/// Atmospheric pressure, MPa: the least pressure of the make-up water in the costing.
const P_ATM: f64 = 0.101_325;

/// The unknowns of the successive substitution: flows, stream states, the units' own unknowns,
/// and the flow equations left out as redundant.
#[derive(Clone)]
struct Iterate {
    m: Vec<f64>,
    st: Vec<Option<State>>,
    aux: Vec<f64>,
    redundant: Vec<usize>,
}

/// Solves a site network.
pub fn solve(network: &Network) -> Result<Solution> {
    solve_from(network, None)
}

/// Solves a site network starting from a previous solution (matched by stream name).
pub fn solve_from(network: &Network, guess: Option<&Solution>) -> Result<Solution> {
    Model::build(network)?.solve_from(guess)
}

/// Solves one network per value, each from the previous successful answer; a failing point
/// gives its error and the next point starts from the last good answer.
pub fn sweep<F>(values: &[f64], mut build: F) -> Vec<Result<Solution>>
where
    F: FnMut(f64) -> Result<Network>,
{
    let mut out: Vec<Result<Solution>> = Vec::with_capacity(values.len());
    let mut last: Option<Solution> = None;
    for &v in values {
        let r = build(v).and_then(|net| solve_from(&net, last.as_ref()));
        if let Ok(s) = &r {
            last = Some(s.clone());
        }
        out.push(r);
    }
    out
}

impl Model {
    /// Solves the site.
    pub fn solve(&self) -> Result<Solution> {
        self.solve_from(None)
    }

    /// Solves the site starting from a previous solution (matched by stream name).
    pub fn solve_from(&self, guess: Option<&Solution>) -> Result<Solution> {
        let ns = self.streams.len();
        let mut m: Vec<f64> = self.streams.iter().map(|s| s.flow.unwrap_or(1.0)).collect();
        let mut st: Vec<Option<State>> = vec![None; ns];
        let mut aux = vec![0.0; self.units.len()];
        if let Some(g) = guess {
            for (s, sl) in self.streams.iter().enumerate() {
                if let Some(r) = g.streams.get(&sl.name) {
                    if r.flow.is_finite() && sl.flow.is_none() {
                        m[s] = r.flow;
                    }
                    if (r.state.props.p - sl.p).abs() <= 1e-12 * sl.p {
                        st[s] = Some(r.state);
                    }
                }
            }
        }
        self.sweep_states(&m, &mut st, &mut aux)?;
        let rs = self.rows(&st, &aux);
        let a = dof::analyse(&rs, ns);
        if a.rank < ns || !a.clashes.is_empty() {
            return Err(self.refuse(self.flow_findings(&rs, &a), &a.undetermined));
        }
        let mut it = Iterate {
            m,
            st,
            aux,
            redundant: a.redundant,
        };
        let (iterations, res) = self.converge(&mut it, None)?;
        let reversed = self.reversed(&it.m);
        if !reversed.is_empty() {
            return Err(self.refuse(vec![self.negative_flows(&it, &reversed)], &[]));
        }
        let Iterate { m, st, .. } = it;
        let st: Vec<State> = st
            .into_iter()
            .enumerate()
            .map(|(s, x)| {
                x.ok_or_else(|| {
                    Error::not_converged(
                        format!("site balance: the state of stream {}", self.streams[s].name),
                        iterations,
                    )
                })
            })
            .collect::<Result<_>>()?;
        let impossible: Vec<Finding> = (0..self.units.len())
            .filter_map(|u| self.units[u].unit.solved_finding(self.at(u), &st))
            .collect();
        if !impossible.is_empty() {
            return Err(self.refuse(impossible, &[]));
        }
        let mut sol = self.results(&m, &st)?;
        sol.iterations = iterations;
        sol.residual = sol.residual.max(res);
        if sol.residual > TOLERANCE {
            return Err(Error::not_converged(
                format!(
                    "site balance (largest unit or site residual {:.3e})",
                    sol.residual
                ),
                iterations,
            ));
        }
        Ok(sol)
    }

    /// Successive substitution from `it` until the flow equations hold (to 1e-12, at least
    /// [`TOLERANCE`]); `shift`: (row, change) adds the change to the right-hand side of one
    /// specification (by its index among all rows). Then the flows a unit computes from the
    /// final states (through a hole) are set to them exactly. Returns the iterations and the
    /// residual.
    fn converge(&self, it: &mut Iterate, shift: Option<(usize, f64)>) -> Result<(usize, f64)> {
        let ns = self.streams.len();
        let rows = |it: &Iterate| -> Vec<Row> {
            let mut rs = self.rows(&it.st, &it.aux);
            if let Some((r, d)) = shift {
                if let Some(row) = rs.get_mut(r) {
                    row.rhs += d;
                }
            }
            rs
        };
        let mut rs = rows(it);
        let mut iterations = 0;
        let mut res = f64::INFINITY;
        while iterations < MAX_ITER {
            iterations += 1;
            let square: Vec<Row> = rs
                .into_iter()
                .enumerate()
                .filter(|(i, _)| !it.redundant.contains(i))
                .map(|(_, r)| r)
                .collect();
            it.m = dof::solve_square(&square, ns).ok_or_else(|| {
                Error::not_converged(
                    "site balance: the flow equations became dependent during the iteration (check the specifications for a degenerate state)",
                    iterations,
                )
            })?;
            self.sweep_states(&it.m, &mut it.st, &mut it.aux)?;
            rs = rows(it);
            res = dof::residual(&rs, &it.m);
            if res < 1e-12 {
                break;
            }
        }
        if res > TOLERANCE {
            return Err(Error::not_converged("site balance", iterations));
        }
        for r in rs.iter().filter(|r| r.exact) {
            if let [(s, c)] = r.coefs[..] {
                if c == 1.0 {
                    it.m[s] = r.rhs;
                }
            }
        }
        Ok((iterations, res))
    }

    fn at(&self, u: usize) -> At<'_> {
        At { model: self, u }
    }

    /// Updates every stream state: passes until all are known (seeding a stuck recycle with
    /// saturated vapour at its pressure).
    fn sweep_states(&self, m: &[f64], st: &mut [Option<State>], aux: &mut [f64]) -> Result<()> {
        let nu = self.units.len();
        for _ in 0..(2 * nu + 4) {
            // passes until no state moves (a recycle through mixing needs several)
            let mut settled = false;
            for _ in 0..(nu + 50) {
                let before: Vec<f64> = st
                    .iter()
                    .map(|s| s.map(|s| s.props.h).unwrap_or(f64::NAN))
                    .collect();
                for (u, slot) in self.units.iter().enumerate() {
                    slot.unit.states(self.at(u), m, st, &mut aux[u])?;
                }
                let moved = st.iter().zip(&before).any(|(s, b)| match s {
                    Some(s) => {
                        !(b.is_finite() && (s.props.h - b).abs() <= 1e-13 * b.abs().max(1.0))
                    }
                    None => false,
                });
                if !moved {
                    settled = true;
                    break;
                }
            }
            if st.iter().all(Option::is_some) {
                if !settled {
                    return Err(Error::not_converged(
                        "site balance: stream states around a recycle",
                        nu + 50,
                    ));
                }
                return Ok(());
            }
            // seed the first unknown stream
            if let Some(s) = (0..st.len()).find(|&s| st[s].is_none()) {
                let p = self.streams[s].p;
                st[s] = Some(if p < P_C {
                    sat_vapour(p)?
                } else {
                    ph(p, 2800.0)?
                });
            }
        }
        if st.iter().all(Option::is_some) {
            Ok(())
        } else {
            Err(Error::not_converged(
                "site balance: stream states",
                2 * nu + 4,
            ))
        }
    }

    /// The flow equations at the current states: unit balances first, then specifications.
    fn rows(&self, st: &[Option<State>], aux: &[f64]) -> Vec<Row> {
        let mut bal = Vec::new();
        let mut spec = Vec::new();
        for (u, slot) in self.units.iter().enumerate() {
            slot.unit
                .flow_equations(self.at(u), st, aux[u], &mut bal, &mut spec);
        }
        for (s, sl) in self.streams.iter().enumerate() {
            if let Some(f) = sl.flow {
                let mut r = Row::value(Of::Stream(s), "fixed flow", "flow", Amount::mass_flow);
                r.add(s, 1.0);
                r.rhs = f;
                spec.push(r);
            }
        }
        bal.extend(spec);
        bal
    }

    /// The streams whose solved flow is negative (beyond round-off: 1e-9 of the largest flow).
    fn reversed(&self, m: &[f64]) -> Vec<usize> {
        let scale = m.iter().fold(0.0f64, |a, x| a.max(x.abs()));
        (0..m.len()).filter(|&s| m[s] < -1e-9 * scale).collect()
    }

    /// The refusal of flows that run backwards: the streams, and the single specifications of
    /// a value (fixed flows, demands, steam flows, powers) whose change brings them all to
    /// zero without reversing another stream: estimated from the flow equations at the solved
    /// states, then refined by solving the site again with the change (secant steps), since
    /// the states move with the flows.
    fn negative_flows(&self, it: &Iterate, reversed: &[usize]) -> Finding {
        let ns = it.m.len();
        let m = &it.m;
        let unit = |u: usize| UnitRef::new(&self.units[u].name, self.units[u].kind);
        let flows = reversed
            .iter()
            .map(|&s| ReversedFlow {
                stream: self.streams[s].name.clone(),
                from: unit(self.streams[s].from),
                to: unit(self.streams[s].to),
                flow: Amount::mass_flow(m[s]),
            })
            .collect();
        let scale = m.iter().fold(0.0f64, |a, x| a.max(x.abs()));
        let rows = self.rows(&it.st, &it.aux);
        let kept: Vec<usize> = (0..rows.len())
            .filter(|i| !it.redundant.contains(i))
            .collect();
        let square: Vec<Row> = kept.iter().map(|&i| rows[i].clone()).collect();
        // the least flow of the reversed streams after a change, and whether another stream
        // turned backwards
        let least = |x: &[f64]| reversed.iter().map(|&s| x[s]).fold(f64::INFINITY, f64::min);
        let others_forward =
            |x: &[f64]| (0..ns).all(|s| reversed.contains(&s) || x[s] >= -1e-9 * scale);
        let mut changes = Vec::new();
        for (j, row) in square.iter().enumerate() {
            let Some((field, amount)) = row.field else {
                continue;
            };
            let Some(d) = dof::sensitivity(&square, ns, j) else {
                continue;
            };
            // every reversed stream must move the same way and reach zero
            let mut by = 0.0f64;
            let mut ok = true;
            for &s in reversed {
                if d[s].abs() < 1e-9 {
                    ok = false;
                    break;
                }
                let need = -m[s] / d[s];
                if by != 0.0 && need.signum() != by.signum() {
                    ok = false;
                    break;
                }
                by = if need.abs() > by.abs() { need } else { by };
            }
            let now = row.rhs;
            if !ok || by == 0.0 || now + by < 0.0 {
                continue;
            }
            let linear: Vec<f64> = (0..ns).map(|s| m[s] + by * d[s]).collect();
            if !others_forward(&linear) {
                continue;
            }
            // refine on the whole site: secant steps on the least reversed flow, aiming a
            // little above zero (1e-6 of the largest flow) so that the rounded change printed
            // is still enough
            let target = 1e-6 * scale;
            let (mut d0, mut f0) = (0.0, least(m) - target);
            let mut d1 = by;
            for _ in 0..5 {
                let mut trial = it.clone();
                if self.converge(&mut trial, Some((kept[j], d1))).is_err() {
                    break;
                }
                let f1 = least(&trial.m) - target;
                if !others_forward(&trial.m) || now + d1 < 0.0 {
                    ok = false;
                    break;
                }
                if (f1 >= 0.0 && f1 <= 1e-3 * target) || f1 == f0 {
                    by = d1;
                    break;
                }
                let d2 = d1 - f1 * (d1 - d0) / (f1 - f0);
                (d0, f0, d1) = (d1, f1, d2);
                by = d1;
            }
            if !ok || now + by < 0.0 {
                continue;
            }
            let path = match row.owner {
                Of::Stream(s) => format!("streams.{}.{field}", self.streams[s].name),
                Of::Unit(u) => format!("units.{}.{field}", self.units[u].name),
            };
            changes.push(SpecChange {
                path,
                now: amount(now),
                by: amount(by),
            });
            if changes.len() == 5 {
                break;
            }
        }
        // what each reversed stream means: at its destination first (a spray not needed
        // says more than the make-up feeding it), else at its source
        let mut hints = Vec::new();
        for &s in reversed {
            let hint = [self.streams[s].to, self.streams[s].from]
                .into_iter()
                .find_map(|u| self.units[u].unit.reversal(self.at(u), s, m));
            if let Some(h) = hint {
                uniq(&mut hints, h);
            }
        }
        Finding::NegativeFlows {
            flows,
            hints,
            changes,
        }
    }

    fn equation(&self, row: &Row) -> Equation {
        Equation {
            owner: match row.owner {
                Of::Unit(u) => Owner::Unit(self.at(u).unit_ref()),
                Of::Stream(s) => Owner::Stream(self.streams[s].name.clone()),
            },
            what: row.what,
            specification: row.spec,
        }
    }

    /// What the count of the flow equations found: free flows (under-specified) and sets of
    /// equations that cannot all hold (over-specified), each with the usual choices.
    fn flow_findings(&self, rows: &[Row], a: &dof::Analysis) -> Vec<Finding> {
        let mut under = Vec::new();
        let mut over = Vec::new();
        let ns = self.streams.len();
        let has = |b: Boundary| self.units.iter().any(|u| u.unit.boundary() == Some(b));
        let (has_makeup, has_vent) = (has(Boundary::Source), has(Boundary::Sink));
        let name = |s: usize| self.streams[s].name.clone();
        if a.rank < ns {
            let mut hints = Vec::new();
            for &s in &a.undetermined {
                for u in [self.streams[s].from, self.streams[s].to] {
                    if let Some(h) = self.units[u].unit.flow_hint(self.at(u), s, &a.undetermined) {
                        uniq(&mut hints, h);
                    }
                }
            }
            under.push(Finding::FlowsNotFixed {
                missing: ns - a.rank,
                undetermined: a.undetermined.iter().map(|&s| name(s)).collect(),
                free: a.free.iter().map(|&s| name(s)).collect(),
                hints,
            });
        }
        for set in &a.clashes {
            let equations: Vec<Equation> = set.iter().map(|&r| self.equation(&rows[r])).collect();
            let mut hints = Vec::new();
            for &r in set {
                if let Of::Unit(u) = rows[r].owner {
                    if let Some(h) = self.units[u].unit.clash_hint(self.at(u), rows[r].what) {
                        uniq(&mut hints, h);
                    }
                }
            }
            let specifications: Vec<Equation> = set
                .iter()
                .filter(|&&r| rows[r].spec)
                .map(|&r| self.equation(&rows[r]))
                .collect();
            if !specifications.is_empty() {
                uniq(&mut hints, ClashHint::RemoveOne { specifications });
            }
            if !has_makeup {
                uniq(&mut hints, ClashHint::AddMakeup);
            }
            if !has_vent && hints.len() < 2 {
                uniq(&mut hints, ClashHint::AddVent);
            }
            over.push(Finding::EquationsClash { equations, hints });
        }
        under.extend(over);
        under
    }

    /// The costing of the losses: the network's, with the site's own boilers' efficiency
    /// (heat to water and steam over fuel) and make-up water temperature (flow-weighted) where
    /// the network gives none. Returns it and the efficiency (None: none given, no boiler).
    fn site_costing(&self, t: &Totals, m: &[f64], st: &[State]) -> (Costing, Option<f64>) {
        let c = self.costing;
        let eta = c.boiler_efficiency.or_else(|| {
            (t.fuel_heat_input > 0.0)
                .then(|| (t.fuel_heat_input - t.boiler_losses) / t.fuel_heat_input)
        });
        let makeup_t = c.makeup_t.unwrap_or_else(|| {
            let (mut mt, mut w) = (0.0, 0.0);
            for (s, sl) in self.streams.iter().enumerate() {
                if m[s] > 0.0 && self.units[sl.from].unit.boundary() == Some(Boundary::Source) {
                    mt += m[s] * st[s].props.t;
                    w += m[s];
                }
            }
            if w > 0.0 {
                mt / w
            } else {
                MAKEUP_T_DEFAULT
            }
        });
        // a fuel price needs an efficiency: without one the cost stays unknown
        let price = if eta.is_none() && matches!(c.price, Some(Price::PerFuelEnergy(_))) {
            None
        } else {
            c.price
        };
        (
            Costing {
                hours_per_year: c.hours_per_year.unwrap_or(HOURS_PER_YEAR_DEFAULT),
                price,
                boiler_efficiency: eta,
                makeup_t,
            },
            eta,
        )
    }

    /// Prices every loss with the site costing: the loss results of leaks, traps and lines,
    /// the loss totals, and the warning of a header that vents steam.
    fn cost_losses(
        &self,
        losses: &[(usize, Loss)],
        m: &[f64],
        st: &[State],
        t: &mut Totals,
        units: &mut BTreeMap<String, UnitResult>,
        all_warn: &mut Vec<Warning>,
    ) -> Result<()> {
        let (c, eta) = self.site_costing(t, m, st);
        t.hours_per_year = c.hours_per_year;
        t.loss_boiler_efficiency = eta;
        t.loss_boiler_efficiency_given = self.costing.boiler_efficiency.is_some();
        t.loss_makeup_t = c.makeup_t;
        t.steam_lost = t.leak_flow + t.trap_steam;
        let mut fuel = eta.map(|_| 0.0);
        let mut fuel_year = eta.map(|_| 0.0);
        let mut cost = c.price.map(|_| 0.0);
        for &(u, l) in losses {
            let slot = &self.units[u];
            let tag = |e: Error| self.at(u).tag()(e);
            // the make-up water is taken at the loss's pressure, or at the atmospheric one
            // below it (make-up water is liquid there; its enthalpy hardly depends on p)
            let p = l.p.max(P_ATM);
            let y: YearlyLoss = match l.kind {
                LossKind::Line => c.heat_loss(l.heat, l.h, p).map_err(tag)?,
                LossKind::Leak | LossKind::Trap | LossKind::Vented { .. } => {
                    c.steam_loss(l.steam, l.h, p).map_err(tag)?
                }
            };
            let makeup_heat = l.heat + l.steam * (l.h - y.makeup_h).max(0.0);
            let Some(r) = units.get_mut(&slot.name) else {
                continue;
            };
            if let LossKind::Vented { stream } = l.kind {
                let priced = match y.cost {
                    Some(k) => format!(", about {k:.0} per year at the network's price"),
                    None => String::new(),
                };
                // A header sends steam to a vent in the solved balance: a continuous loss
                let w = Warning::with(
                    Code::SteamVented,
                    &format!(
                        "vents {{}} of steam continuously through {{}} ({{}} a year over {} h; {{}} of boiler heat to replace it{{}}): a surplus in a normal balance; lower the steam sent into {{}} (an extraction, a let-down) or find a user for it (a vent that opens only on upsets has flow 0 here)",
                        c.hours_per_year
                    ),
                    &[
                        Quantity::new("flow", Dim::MassFlow, l.steam).into(),
                        self.streams[stream].name.as_str().into(),
                        Quantity::new("steam", Dim::Mass, y.steam).into(),
                        Quantity::new("makeup_heat", Dim::HeatFlow, makeup_heat).into(),
                        priced.as_str().into(),
                        slot.name.as_str().into(),
                    ],
                );
                all_warn.push(w.prefixed(&format!("{} {}: ", slot.kind, slot.name)));
                r.warnings.push(w);
                continue;
            }
            let unit_fuel = eta.map(|e| makeup_heat / e);
            t.loss_heat += makeup_heat;
            t.loss_heat_per_year += y.heat;
            if matches!(l.kind, LossKind::Leak | LossKind::Trap) {
                t.steam_lost_per_year += y.steam;
            }
            fuel = fuel.zip(unit_fuel).map(|(a, b)| a + b);
            fuel_year = fuel_year.zip(y.fuel).map(|(a, b)| a + b);
            cost = cost.zip(y.cost).map(|(a, b)| a + b);
            r.loss = Some(LossResult {
                steam: l.steam,
                heat: l.heat,
                condensate: l.condensate,
                makeup_heat,
                fuel: unit_fuel,
                yearly: y,
                choked: l.choked,
                pressure_drop: l.pressure_drop,
                velocity: l.velocity,
                surface_t: l.surface_t,
            });
        }
        t.loss_fuel = fuel;
        t.loss_fuel_per_year = fuel_year;
        t.loss_cost_per_year = cost;
        Ok(())
    }

    /// Every unit's result, the site totals, the energy-flow summary and the residual.
    fn results(&self, m: &[f64], st: &[State]) -> Result<Solution> {
        let ns = self.streams.len();
        let mut units = BTreeMap::new();
        let mut t = Totals::default();
        let mut nodes: Vec<SankeyNode> = Vec::new();
        let mut links = Vec::new();
        let mut all_warn = Vec::new();
        let mut losses: Vec<(usize, Loss)> = Vec::new();
        for u in &self.units {
            nodes.push(SankeyNode {
                name: u.name.clone(),
                kind: u.kind.to_string(),
            });
        }
        for b in ["fuel", "power", "process", "losses", "cooling"] {
            nodes.push(SankeyNode {
                name: b.into(),
                kind: "boundary".into(),
            });
        }
        for (u, slot) in self.units.iter().enumerate() {
            let nm = slot.name.as_str();
            let mi: f64 = slot.ins.iter().map(|&i| m[i]).sum();
            let ei: f64 = slot.ins.iter().map(|&i| m[i] * st[i].props.h).sum();
            let mo: f64 = slot.outs.iter().map(|&o| m[o]).sum();
            let eo: f64 = slot.outs.iter().map(|&o| m[o] * st[o].props.h).sum();
            let mut r = UnitResult {
                kind: slot.kind,
                power: None,
                duty: None,
                fuel_heat_input: None,
                efficiency: None,
                mass_lost: 0.0,
                energy_lost: 0.0,
                balance: Balance {
                    mass_in: mi,
                    mass_out: mo,
                    energy_in: ei,
                    energy_out: eo,
                },
                loss: None,
                warnings: Vec::new(),
            };
            let mut out = Report {
                r: &mut r,
                t: &mut t,
                links: &mut links,
                losses: &mut losses,
                mi,
                ei,
                mo,
                eo,
            };
            slot.unit.results(self.at(u), m, st, &mut out)?;
            for x in &r.warnings {
                all_warn.push(x.prefixed(&format!("{} {nm}: ", slot.kind)));
            }
            units.insert(nm.to_string(), r);
        }
        t.net_power = t.turbine_power - t.pump_power;
        self.cost_losses(&losses, m, st, &mut t, &mut units, &mut all_warn)?;
        t.mass_in = t.makeup_water;
        t.mass_out = t.vented + t.condensate_lost + t.blowdown_lost + t.loss_discharged;
        t.energy_in = t.fuel_heat_input + t.makeup_energy + t.pump_power;
        t.energy_out = t.turbine_power
            + t.process_heat
            + t.condenser_duty
            + t.boiler_losses
            + t.vented_energy
            + t.water_lost_energy
            + t.loss_discharged_energy
            + t.line_heat_loss;
        let mut streams = BTreeMap::new();
        for (s, sl) in self.streams.iter().enumerate() {
            let (from, to) = (&self.units[sl.from].name, &self.units[sl.to].name);
            links.push(SankeyLink {
                source: from.clone(),
                target: to.clone(),
                stream: Some(sl.name.clone()),
                energy: m[s] * st[s].props.h,
                mass: m[s],
            });
            streams.insert(
                sl.name.clone(),
                StreamResult {
                    from: from.clone(),
                    to: to.clone(),
                    flow: m[s],
                    state: st[s],
                },
            );
        }
        // residual: units (scaled by the site throughput so that idle units do not divide by
        // zero) and the site
        let scale_m: f64 = m.iter().fold(0.0f64, |a, x| a.max(x.abs()));
        let scale_e: f64 = (0..ns).fold(0.0f64, |a, s| a.max((m[s] * st[s].props.h).abs()));
        let mut residual = 0.0f64;
        for r in units.values() {
            let b = &r.balance;
            let dm = (b.mass_in - b.mass_out).abs()
                / b.mass_in
                    .abs()
                    .max(b.mass_out.abs())
                    .max(1e-6 * scale_m)
                    .max(1e-300);
            let de = (b.energy_in - b.energy_out).abs()
                / b.energy_in
                    .abs()
                    .max(b.energy_out.abs())
                    .max(1e-6 * scale_e)
                    .max(1e-300);
            residual = residual.max(dm).max(de);
        }
        if t.mass_in != 0.0 || t.mass_out != 0.0 {
            residual = residual.max(t.mass_residual());
        }
        residual = residual.max(t.energy_residual());
        Ok(Solution {
            streams,
            units,
            totals: t,
            nodes,
            links,
            iterations: 0,
            residual,
            warnings: all_warn,
        })
    }
}

fn uniq<T: PartialEq>(v: &mut Vec<T>, x: T) {
    if !v.contains(&x) {
        v.push(x);
    }
}
