//! Condenser: inlets condensed to saturated liquid at its pressure; the duty leaves the site
//! (to the cooling water).
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: a validated condenser has its pressure (its outlet's, by the pressure step).

use super::{count, At, Boundary, Draft, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::{ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::sat_liquid;
use crate::water::state::State;

struct Wired {
    u: usize,
    out: usize,
    p: Option<f64>,
}

pub(super) fn draft(w: &Wiring, u: usize, p: Option<f64>) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 1, usize::MAX)?;
    count(w, u, "outlet", o, 1, 1)?;
    Ok(Box::new(Wired { u, out: o[0], p }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        Some("saturation at the condenser pressure")
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
        if self.p.is_none() {
            return Err(f.refuse(Finding::MissingPressure {
                unit: w.unit(self.u),
            }));
        }
        Ok(Box::new(Condenser { out: self.out }))
    }
}

/// A validated condenser.
#[derive(Debug)]
struct Condenser {
    out: usize,
}

impl UnitKind for Condenser {
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        st[self.out] = Some(sat_liquid(at.p(self.out)).map_err(at.tag())?);
        Ok(true)
    }

    fn flow_equations(
        &self,
        at: At,
        _: &[Option<State>],
        _: f64,
        bal: &mut Vec<Row>,
        _: &mut Vec<Row>,
    ) {
        bal.push(at.mass_balance(&[]));
    }

    fn flow_hint(&self, _: At, _: usize, _: &[usize]) -> Option<FlowHint> {
        None
    }

    fn clash_hint(&self, _: At, _: &'static str) -> Option<ClashHint> {
        None
    }

    fn results(&self, at: At, _: &[f64], _: &[State], out: &mut Report) -> Result<()> {
        let q = out.ei - out.eo;
        out.r.duty = Some(q);
        out.r.balance.energy_out += q;
        out.t.condenser_duty += q;
        out.link(at.name(), "cooling", q, 0.0);
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
