//! Vent: a boundary sink that takes whatever its inlets bring (steam or water leaving the
//! site).
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: a vent has no outlets and adds no flow equation.

use super::{count, At, Boundary, Draft, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::{ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::water::state::State;

struct Wired;

pub(super) fn draft(w: &Wiring, u: usize) -> Result<Box<dyn Draft>> {
    count(w, u, "inlet", &w.ins[u], 1, usize::MAX)?;
    count(w, u, "outlet", &w.outs[u], 0, 0)?;
    Ok(Box::new(Wired))
}

impl Draft for Wired {
    /// A vent has no outlets.
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        None
    }
    fn outlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        None
    }
    fn checks_outlet_p(&self) -> bool {
        true
    }
    fn inlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        None
    }
    fn default_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        None
    }
    fn validate(&self, _: &Wiring, _: &mut Findings) -> Result<Box<dyn UnitKind>, Refused> {
        Ok(Box::new(Vent))
    }
}

/// A validated vent.
#[derive(Debug)]
struct Vent;

impl UnitKind for Vent {
    fn states(&self, _: At, _: &[f64], _: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        Ok(true)
    }

    fn flow_equations(
        &self,
        _: At,
        _: &[Option<State>],
        _: f64,
        _: &mut Vec<Row>,
        _: &mut Vec<Row>,
    ) {
    }

    fn flow_hint(&self, at: At, _: usize, _: &[usize]) -> Option<FlowHint> {
        Some(FlowHint::Boundary {
            unit: at.unit_ref(),
        })
    }

    fn clash_hint(&self, _: At, _: &'static str) -> Option<ClashHint> {
        None
    }

    fn results(&self, at: At, _: &[f64], _: &[State], out: &mut Report) -> Result<()> {
        let (mi, ei) = (out.mi, out.ei);
        out.t.vented += mi;
        out.t.vented_energy += ei;
        out.r.balance.mass_out += mi;
        out.r.balance.energy_out += ei;
        out.link(at.name(), "losses", ei, mi);
        Ok(())
    }

    fn boundary(&self) -> Option<Boundary> {
        Some(Boundary::Sink)
    }

    fn reversal(&self, _: At, _: usize, _: &[f64]) -> Option<Reversal> {
        None
    }

    fn solved_finding(&self, _: At, _: &[State]) -> Option<Finding> {
        None
    }
}
