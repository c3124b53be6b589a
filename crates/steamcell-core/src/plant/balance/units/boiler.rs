//! Boiler: one feedwater inlet; the steam outlet at the boiler's (or the stream's) pressure
//! and temperature (or the stream's T, h or x); an optional blowdown outlet of saturated
//! liquid at the drum pressure (without one the blowdown leaves the site); fuel heat input
//! from the efficiency.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated boiler holds its steam state and efficiency; the blowdown is a
//! fraction of the feedwater below 0.5.

use super::{count, find_port, fixed_state, is_wet, At, Boundary, Draft, Report, UnitKind};
use crate::error::{Error, Result};
use crate::plant::balance::diagnosis::Amount;
use crate::plant::balance::diagnosis::{ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::balance::FixedState;
use crate::plant::sat_liquid;
use crate::plant::warnings::Code;
use crate::water::state::{State, P_C};

/// A boiler's specification as given.
pub(super) struct Given<'a> {
    pub p: Option<f64>,
    pub t: Option<f64>,
    pub efficiency: Option<f64>,
    pub blowdown_fraction: f64,
    pub blowdown: Option<&'a str>,
    pub steam_flow: Option<f64>,
}

struct Wired {
    u: usize,
    fw: usize,
    steam: usize,
    bd: Option<usize>,
    p: Option<f64>,
    t: Option<f64>,
    efficiency: Option<f64>,
    blowdown_fraction: f64,
    steam_flow: Option<f64>,
}

pub(super) fn draft(w: &Wiring, u: usize, g: Given) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet (feedwater)", i, 1, 1)?;
    count(w, u, "outlet", o, 1, 2)?;
    let bd = if o.len() == 2 {
        Some(find_port(w, u, "blowdown", g.blowdown, o)?)
    } else {
        if g.blowdown.is_some() {
            find_port(w, u, "blowdown", g.blowdown, o)?;
            return Err(Error::invalid(format!(
                "boiler {}: its only outlet cannot be both steam and blowdown",
                w.un[u]
            )));
        }
        None
    };
    let steam = o.iter().copied().find(|&s| Some(s) != bd).unwrap_or(o[0]);
    Ok(Box::new(Wired {
        u,
        fw: i[0],
        steam,
        bd,
        p: g.p,
        t: g.t,
        efficiency: g.efficiency,
        blowdown_fraction: g.blowdown_fraction,
        steam_flow: g.steam_flow,
    }))
}

impl Draft for Wired {
    fn sets_state(&self, s: usize) -> Option<&'static str> {
        (Some(s) == self.bd).then_some("saturation in the drum (blowdown)")
    }
    fn outlet_p(&self, s: usize, w: &Wiring) -> Option<f64> {
        let ps = self.p.or(w.streams[self.steam].p);
        if Some(s) == self.bd {
            ps.map(|x| x.min(P_C * (1.0 - 1e-9)))
        } else {
            ps
        }
    }
    fn checks_outlet_p(&self) -> bool {
        false
    }
    fn inlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        None
    }
    fn default_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        None
    }
    fn validate(&self, w: &Wiring, f: &mut Findings) -> Result<Box<dyn UnitKind>, Refused> {
        let u = self.u;
        let stream = w.stream(self.steam);
        let steam_state = match (self.t, w.fixed[self.steam]) {
            (Some(t), None) => Ok(FixedState::T(t)),
            (None, Some(x)) => Ok(x),
            (Some(_), Some(_)) => Err(f.refuse(Finding::SteamTemperatureTwice {
                unit: w.unit(u),
                stream: stream.clone(),
            })),
            (None, None) => Err(f.refuse(Finding::MissingSteamTemperature {
                unit: w.unit(u),
                stream: stream.clone(),
            })),
        };
        let efficiency = self
            .efficiency
            .ok_or_else(|| f.refuse(Finding::MissingBoilerEfficiency { unit: w.unit(u) }));
        if let (Some(a), Some(b)) = (self.p, w.streams[self.steam].p) {
            if (a - b).abs() > 1e-9 * a {
                f.note(Finding::SteamPressureConflict {
                    unit: w.unit(u),
                    stream,
                });
            }
        }
        Ok(Box::new(Boiler {
            fw: self.fw,
            steam: self.steam,
            bd: self.bd,
            steam_state: steam_state?,
            efficiency: efficiency?,
            blowdown_fraction: self.blowdown_fraction,
            steam_flow: self.steam_flow,
        }))
    }
}

/// A validated boiler.
#[derive(Debug)]
struct Boiler {
    fw: usize,
    steam: usize,
    bd: Option<usize>,
    /// The steam's T (from the boiler) or T, h or x (from the stream).
    steam_state: FixedState,
    efficiency: f64,
    blowdown_fraction: f64,
    steam_flow: Option<f64>,
}

impl UnitKind for Boiler {
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        st[self.steam] = Some(fixed_state(at.p(self.steam), self.steam_state).map_err(at.tag())?);
        if let Some(b) = self.bd {
            st[b] = Some(sat_liquid(at.p(b)).map_err(at.tag())?);
        }
        Ok(true)
    }

    fn flow_equations(
        &self,
        at: At,
        _: &[Option<State>],
        _: f64,
        bal: &mut Vec<Row>,
        spec: &mut Vec<Row>,
    ) {
        let f = self.blowdown_fraction;
        match self.bd {
            Some(b) => {
                bal.push(at.mass_balance(&[]));
                let mut r = at.row("blowdown fraction");
                r.add(b, 1.0);
                r.add(self.steam, -f / (1.0 - f));
                bal.push(r);
            }
            None => {
                let mut r = at.row("mass balance");
                r.add(self.fw, 1.0);
                r.add(self.steam, -1.0 / (1.0 - f));
                bal.push(r);
            }
        }
        if let Some(v) = self.steam_flow {
            let mut r = at.value_row("steam flow", "steam_flow", Amount::mass_flow);
            r.add(self.steam, 1.0);
            r.rhs = v;
            spec.push(r);
        }
    }

    fn flow_hint(&self, at: At, s: usize, _: &[usize]) -> Option<FlowHint> {
        (self.steam_flow.is_none() && s == self.steam).then(|| FlowHint::BoilerSteamFlow {
            unit: at.name().to_string(),
        })
    }

    fn clash_hint(&self, _: At, _: &'static str) -> Option<ClashHint> {
        None
    }

    fn results(&self, at: At, m: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        let nm = at.name();
        let eta = self.efficiency;
        let (sfw, ss) = (st[self.fw], st[self.steam]);
        let p_drum = ss.props.p.min(P_C * (1.0 - 1e-9));
        let hbd = sat_liquid(p_drum)?.props.h;
        let mbd = m[self.fw] - m[self.steam];
        let q = m[self.steam] * (ss.props.h - sfw.props.h) + mbd * (hbd - sfw.props.h);
        let fuel = q / eta;
        out.r.duty = Some(q);
        out.r.fuel_heat_input = Some(fuel);
        out.r.efficiency = Some(eta);
        if self.bd.is_none() {
            out.r.mass_lost = mbd;
            out.r.energy_lost = mbd * hbd;
            out.t.blowdown_lost += mbd;
            out.t.water_lost_energy += mbd * hbd;
            out.link(nm, "losses", mbd * hbd, mbd);
        }
        out.t.fuel_heat_input += fuel;
        out.t.boiler_losses += fuel - q;
        out.link("fuel", nm, fuel, 0.0);
        out.link(nm, "losses", fuel - q, 0.0);
        out.r.balance.energy_in += fuel;
        out.r.balance.energy_out += out.r.energy_lost + (fuel - q);
        out.r.balance.mass_out += out.r.mass_lost;
        if sfw.props.p < ss.props.p {
            out.warn(Code::FeedwaterPressureLow,
                "the feedwater pressure is below the steam pressure: a feed pump is needed upstream",
            );
        }
        if is_wet(&ss) {
            out.warn(Code::WetSteam, "the steam leaving is wet");
        }
        Ok(())
    }

    fn boundary(&self) -> Option<Boundary> {
        None
    }

    fn reversal(&self, _: At, _: usize, _: &[f64]) -> Option<Reversal> {
        None
    }

    fn solved_finding(&self, _: At, _: &[State]) -> Option<Finding> {
        None
    }
}
