//! Deaerator: water inlets and a heating-steam inlet (named by `steam`) to saturated liquid
//! at its pressure; an optional vent of saturated vapour, as a stream (named by `vent`) or
//! leaving the site, as a fraction of the heating steam.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated deaerator holds its pressure; a vent fraction lies in 0..0.5.

use super::{count, find_port, At, Boundary, Draft, Report, UnitKind};
use crate::error::{Error, Result};
use crate::plant::balance::diagnosis::{ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::warnings::Code;
use crate::plant::{sat_liquid, sat_vapour};
use crate::water::state::State;

struct Wired {
    u: usize,
    steam: usize,
    out: usize,
    vent: Option<usize>,
    p: Option<f64>,
    vent_fraction: Option<f64>,
}

pub(super) fn draft(
    w: &Wiring,
    u: usize,
    p: Option<f64>,
    steam: Option<&str>,
    vent: Option<&str>,
    vent_fraction: Option<f64>,
) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 2, usize::MAX)?;
    count(w, u, "outlet", o, 1, 2)?;
    let steam = find_port(w, u, "steam", steam, i)?;
    let vent = if o.len() == 2 {
        Some(find_port(w, u, "vent", vent, o)?)
    } else {
        if vent.is_some() {
            find_port(w, u, "vent", vent, o)?;
            return Err(Error::invalid(format!(
                "deaerator {}: its only outlet cannot be the vent",
                w.un[u]
            )));
        }
        None
    };
    let out = o.iter().copied().find(|&s| Some(s) != vent).unwrap_or(o[0]);
    Ok(Box::new(Wired {
        u,
        steam,
        out,
        vent,
        p,
        vent_fraction,
    }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        Some("saturation at the deaerator pressure")
    }
    fn outlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        self.p
    }
    fn checks_outlet_p(&self) -> bool {
        true
    }
    fn inlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        self.p
    }
    fn default_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        None
    }
    fn validate(&self, w: &Wiring, f: &mut Findings) -> Result<Box<dyn UnitKind>, Refused> {
        let p = self.p.ok_or_else(|| {
            f.refuse(Finding::MissingPressure {
                unit: w.unit(self.u),
            })
        })?;
        Ok(Box::new(Deaerator {
            p,
            vent_h: sat_vapour(p).ok().map(|s| s.props.h),
            steam: self.steam,
            out: self.out,
            vent: self.vent,
            vent_fraction: self.vent_fraction,
        }))
    }
}

/// A validated deaerator.
#[derive(Debug)]
struct Deaerator {
    /// Pressure, MPa.
    p: f64,
    /// Enthalpy of saturated vapour at `p` (None where it has none).
    vent_h: Option<f64>,
    steam: usize,
    out: usize,
    vent: Option<usize>,
    vent_fraction: Option<f64>,
}

impl UnitKind for Deaerator {
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        st[self.out] = Some(sat_liquid(at.p(self.out)).map_err(at.tag())?);
        if let Some(v) = self.vent {
            st[v] = Some(sat_vapour(at.p(v)).map_err(at.tag())?);
        }
        Ok(true)
    }

    fn flow_equations(
        &self,
        at: At,
        st: &[Option<State>],
        _: f64,
        bal: &mut Vec<Row>,
        spec: &mut Vec<Row>,
    ) {
        let f = self.vent_fraction.unwrap_or(0.0);
        let lost = if self.vent.is_none() { f } else { 0.0 };
        bal.push(at.mass_balance(&[(self.steam, -lost)]));
        let mut r = at.energy_balance(st);
        if lost > 0.0 {
            r.add(self.steam, -lost * self.vent_h.unwrap_or(f64::NAN));
        }
        bal.push(r);
        if let (Some(v), Some(f)) = (self.vent, self.vent_fraction) {
            let mut r = at.spec_row("vent fraction");
            r.add(v, 1.0);
            r.add(self.steam, -f);
            spec.push(r);
        }
    }

    fn flow_hint(&self, at: At, s: usize, _: &[usize]) -> Option<FlowHint> {
        let vent = self
            .vent
            .filter(|&v| v == s && self.vent_fraction.is_none())?;
        Some(FlowHint::DeaeratorVent {
            unit: at.name().to_string(),
            vent: at.stream(vent).to_string(),
        })
    }

    fn clash_hint(&self, _: At, _: &'static str) -> Option<ClashHint> {
        None
    }

    fn results(&self, at: At, m: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        if self.vent.is_none() {
            let f = self.vent_fraction.unwrap_or(0.0);
            let hv = match self.vent_h {
                Some(h) => h,
                None => sat_vapour(self.p)?.props.h,
            };
            out.r.mass_lost = f * m[self.steam];
            out.r.energy_lost = f * m[self.steam] * hv;
            out.r.balance.mass_out += out.r.mass_lost;
            out.r.balance.energy_out += out.r.energy_lost;
            out.t.vented += out.r.mass_lost;
            out.t.vented_energy += out.r.energy_lost;
            if out.r.mass_lost != 0.0 {
                let (e, mass) = (out.r.energy_lost, out.r.mass_lost);
                out.link(at.name(), "losses", e, mass);
            }
        }
        if st[self.steam].props.p < self.p {
            out.warn(
                Code::HeatingSteamPressureLow,
                "the heating steam pressure is below the deaerator pressure",
            );
        }
        Ok(())
    }

    fn boundary(&self) -> Option<Boundary> {
        None
    }

    fn reversal(&self, at: At, s: usize, _: &[f64]) -> Option<Reversal> {
        (s == self.steam).then(|| Reversal::DeaeratorOverheated {
            deaerator: at.name().to_string(),
            steam: at.stream(s).to_string(),
        })
    }

    fn solved_finding(&self, _: At, _: &[State]) -> Option<Finding> {
        None
    }
}
