//! Let-down (pressure-reducing) valve: one inlet, one outlet, isenthalpic; the outlet
//! pressure from the valve, its stream or its destination.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the outlet enthalpy equals the inlet enthalpy.

use super::{count, At, Boundary, Draft, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::{Amount, ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::ph;
use crate::water::state::State;

struct Wired {
    u: usize,
    inlet: usize,
    out: usize,
    p: Option<f64>,
}

pub(super) fn draft(w: &Wiring, u: usize, p: Option<f64>) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 1, 1)?;
    count(w, u, "outlet", o, 1, 1)?;
    Ok(Box::new(Wired {
        u,
        inlet: i[0],
        out: o[0],
        p,
    }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        Some("throttling (constant enthalpy)")
    }
    fn outlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        self.p
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
    fn validate(&self, w: &Wiring, f: &mut Findings) -> Result<Box<dyn UnitKind>, Refused> {
        // throttling lowers the pressure; equal pressures pass (a valve wide open)
        let (p_in, p_out) = (w.p[self.inlet], w.p[self.out]);
        if p_in.is_finite() && p_out.is_finite() && p_out > p_in * (1.0 + 1e-12) {
            f.note(Finding::NoPressureDrop {
                unit: w.unit(self.u),
                upstream: Amount::pressure(p_in),
                downstream: Amount::pressure(p_out),
            });
        }
        Ok(Box::new(Valve {
            inlet: self.inlet,
            out: self.out,
        }))
    }
}

/// A validated valve.
#[derive(Debug)]
struct Valve {
    inlet: usize,
    out: usize,
}

impl UnitKind for Valve {
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        let Some(si) = st[self.inlet] else {
            return Ok(false);
        };
        st[self.out] = Some(ph(at.p(self.out), si.props.h).map_err(at.tag())?);
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

    fn results(&self, _: At, _: &[f64], _: &[State], _: &mut Report) -> Result<()> {
        Ok(())
    }

    fn boundary(&self) -> Option<Boundary> {
        None
    }

    fn reversal(&self, at: At, _: usize, _: &[f64]) -> Option<Reversal> {
        Some(Reversal::LetDownBackwards {
            valve: at.name().to_string(),
            feeds: At {
                model: at.model,
                u: at.model.streams[self.out].to,
            }
            .unit_ref(),
        })
    }

    fn solved_finding(&self, _: At, _: &[State]) -> Option<Finding> {
        None
    }
}
