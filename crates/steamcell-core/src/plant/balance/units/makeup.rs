//! Make-up: a boundary source of water at a temperature (its `T` or its outlet streams'
//! T, h or x), whatever flow the site needs; atmospheric pressure unless something else
//! fixes it.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated make-up knows the state of every outlet.

use super::{count, fixed_state, At, Boundary, Draft, Report, UnitKind, P_ATM};
use crate::error::Result;
use crate::plant::balance::diagnosis::{ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::balance::FixedState;
use crate::water::state::State;

struct Wired {
    u: usize,
    t: Option<f64>,
}

pub(super) fn draft(w: &Wiring, u: usize, t: Option<f64>) -> Result<Box<dyn Draft>> {
    count(w, u, "inlet", &w.ins[u], 0, 0)?;
    count(w, u, "outlet", &w.outs[u], 1, usize::MAX)?;
    Ok(Box::new(Wired { u, t }))
}

impl Draft for Wired {
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
        Some(P_ATM)
    }
    fn validate(&self, w: &Wiring, f: &mut Findings) -> Result<Box<dyn UnitKind>, Refused> {
        let mut outs = Vec::new();
        let mut refused = None;
        for &o in &w.outs[self.u] {
            match (self.t, w.fixed[o]) {
                (Some(t), None) => outs.push((o, FixedState::T(t))),
                (None, Some(x)) => outs.push((o, x)),
                (Some(_), Some(_)) => {
                    refused = Some(f.refuse(Finding::MakeupTemperatureTwice {
                        unit: w.unit(self.u),
                        stream: w.stream(o),
                    }))
                }
                (None, None) => {
                    refused = Some(f.refuse(Finding::MissingMakeupTemperature {
                        unit: w.unit(self.u),
                        stream: w.stream(o),
                    }))
                }
            }
        }
        match refused {
            Some(r) => Err(r),
            None => Ok(Box::new(Makeup { outs })),
        }
    }
}

/// A validated make-up.
#[derive(Debug)]
struct Makeup {
    /// Every outlet with its state.
    outs: Vec<(usize, FixedState)>,
}

impl UnitKind for Makeup {
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        for &(o, x) in &self.outs {
            st[o] = Some(fixed_state(at.p(o), x).map_err(at.tag())?);
        }
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

    fn results(&self, _: At, _: &[f64], _: &[State], out: &mut Report) -> Result<()> {
        let (mo, eo) = (out.mo, out.eo);
        out.t.makeup_water += mo;
        out.t.makeup_energy += eo;
        out.r.balance.mass_in += mo;
        out.r.balance.energy_in += eo;
        Ok(())
    }

    fn boundary(&self) -> Option<Boundary> {
        Some(Boundary::Source)
    }

    fn reversal(&self, at: At, _: usize, _: &[f64]) -> Option<Reversal> {
        Some(Reversal::WaterSurplus {
            makeup: at.name().to_string(),
        })
    }

    fn solved_finding(&self, _: At, _: &[State]) -> Option<Finding> {
        None
    }
}
