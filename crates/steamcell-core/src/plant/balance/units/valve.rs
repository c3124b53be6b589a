//! Let-down (pressure-reducing) valve: one inlet, one outlet, isenthalpic; the outlet
//! pressure from the valve, its stream or its destination.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the outlet enthalpy equals the inlet enthalpy.

use super::{count, At, Boundary, Draft, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::{ClashHint, FlowHint};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::ph;
use crate::plant::warnings::Code;
use crate::water::state::State;

struct Wired {
    inlet: usize,
    out: usize,
    p: Option<f64>,
}

pub(super) fn draft(w: &Wiring, u: usize, p: Option<f64>) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 1, 1)?;
    count(w, u, "outlet", o, 1, 1)?;
    Ok(Box::new(Wired {
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
    fn validate(&self, _: &Wiring, _: &mut Findings) -> Result<Box<dyn UnitKind>, Refused> {
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

    fn results(&self, _: At, m: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        let (si, so) = (st[self.inlet], st[self.out]);
        if si.props.p < so.props.p || m[self.inlet] < 0.0 {
            out.warn(Code::ValveRunsBackwards, format!(
                "the let-down valve runs backwards (flow {:.6} kg/s from {:.4} MPa to {:.4} MPa): steam would have to flow from the low-pressure side; the header it feeds has a surplus — vent it or cut an extraction",
                m[self.inlet], si.props.p, so.props.p
            ));
        }
        Ok(())
    }

    fn boundary(&self) -> Option<Boundary> {
        None
    }

    fn warns_negative_outlets(&self) -> bool {
        false
    }
}
