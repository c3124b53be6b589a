//! The site solver over a validated [`Model`]: successive substitution between the stream
//! states (each unit sets its outlets from its inlets) and the linear flow system (every
//! unit's balances and specifications, every fixed flow), with the count of the flow
//! equations before the first solve; then results, totals and the energy-flow summary.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: a returned [`Solution`] closes every unit and the site to [`TOLERANCE`].

use super::diagnosis::{ClashHint, Equation, Finding, Owner};
use super::dof::{self, Of, Row};
use super::model::Model;
use super::units::{At, Boundary, Report};
use super::*;
use crate::error::{Error, Result};
use crate::plant::warnings::{Code, Warning};
use crate::plant::{ph, sat_vapour};
use crate::water::state::P_C;

const MAX_ITER: usize = 200;

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
        let mut rs = self.rows(&st, &aux);
        let a = dof::analyse(&rs, ns);
        if a.rank < ns || !a.clashes.is_empty() {
            return Err(self.refuse(self.flow_findings(&rs, &a), &a.undetermined));
        }
        let keep = |rs: Vec<Row>| -> Vec<Row> {
            rs.into_iter()
                .enumerate()
                .filter(|(i, _)| !a.redundant.contains(i))
                .map(|(_, r)| r)
                .collect()
        };
        let mut iterations = 0;
        let mut res = f64::INFINITY;
        while iterations < MAX_ITER {
            iterations += 1;
            let square = keep(rs);
            m = dof::solve_square(&square, ns).ok_or_else(|| {
                Error::not_converged(
                    "site balance: the flow equations became dependent during the iteration (check the specifications for a degenerate state)",
                    iterations,
                )
            })?;
            self.sweep_states(&m, &mut st, &mut aux)?;
            rs = self.rows(&st, &aux);
            res = dof::residual(&rs, &m);
            if res < 1e-12 {
                break;
            }
        }
        if res > TOLERANCE {
            return Err(Error::not_converged("site balance", iterations));
        }
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
                let mut r = Row::spec(Of::Stream(s), "fixed flow");
                r.add(s, 1.0);
                r.rhs = f;
                spec.push(r);
            }
        }
        bal.extend(spec);
        bal
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

    /// Every unit's result, the site totals, the energy-flow summary and the residual.
    fn results(&self, m: &[f64], st: &[State]) -> Result<Solution> {
        let ns = self.streams.len();
        let mut units = BTreeMap::new();
        let mut t = Totals::default();
        let mut nodes: Vec<SankeyNode> = Vec::new();
        let mut links = Vec::new();
        let mut all_warn = Vec::new();
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
                warnings: Vec::new(),
            };
            if slot.unit.warns_negative_outlets() {
                for &o in &slot.outs {
                    if m[o] < 0.0 {
                        r.warnings.push(Warning::new(Code::NegativeFlow, format!(
                            "stream {} leaving {nm} has a negative flow ({:.6} kg/s): the balance needs it reversed",
                            self.streams[o].name, m[o]
                        )));
                    }
                }
            }
            let mut out = Report {
                r: &mut r,
                t: &mut t,
                links: &mut links,
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
        t.mass_in = t.makeup_water;
        t.mass_out = t.vented + t.condensate_lost + t.blowdown_lost;
        t.energy_in = t.fuel_heat_input + t.makeup_energy + t.pump_power;
        t.energy_out = t.turbine_power
            + t.process_heat
            + t.condenser_duty
            + t.boiler_losses
            + t.vented_energy
            + t.water_lost_energy;
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
        for (s, sl) in self.streams.iter().enumerate() {
            if m[s] < 0.0 && self.units[sl.from].unit.boundary() == Some(Boundary::Source) {
                all_warn.push(Warning::new(
                    Code::NegativeFlow,
                    format!(
                        "stream {}: negative make-up flow: the site has a water surplus",
                        sl.name
                    ),
                ));
            }
        }
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
