//! Pump: liquid raised to a discharge pressure (from the pump, its stream or its
//! destination) with an isentropic efficiency; the power it absorbs.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated pump holds its efficiency and its discharge pressure exceeds its
//! suction pressure.

use super::{count, At, Boundary, Draft, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::{Amount, ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::warnings::Code;
use crate::plant::{ph, ps};
use crate::water::state::{Phase, State};

struct Wired {
    u: usize,
    inlet: usize,
    out: usize,
    p: Option<f64>,
    efficiency: Option<f64>,
}

pub(super) fn draft(
    w: &Wiring,
    u: usize,
    p: Option<f64>,
    efficiency: Option<f64>,
) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 1, 1)?;
    count(w, u, "outlet", o, 1, 1)?;
    Ok(Box::new(Wired {
        u,
        inlet: i[0],
        out: o[0],
        p,
        efficiency,
    }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        Some("the pump efficiency")
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
        let (discharge, suction) = (w.p[self.out], w.p[self.inlet]);
        if discharge <= suction {
            f.note(Finding::PumpDoesNotRaise {
                unit: w.unit(self.u),
                discharge: Amount::pressure(discharge),
                suction: Amount::pressure(suction),
            });
        }
        let efficiency = self.efficiency.ok_or_else(|| {
            f.refuse(Finding::MissingPumpEfficiency {
                unit: w.unit(self.u),
            })
        })?;
        Ok(Box::new(Pump {
            inlet: self.inlet,
            out: self.out,
            efficiency,
        }))
    }
}

/// A validated pump.
#[derive(Debug)]
struct Pump {
    inlet: usize,
    out: usize,
    efficiency: f64,
}

impl UnitKind for Pump {
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        let Some(si) = st[self.inlet] else {
            return Ok(false);
        };
        // the discharge is above the suction: a pump that does not raise the pressure is
        // refused when the network is built (PumpDoesNotRaise)
        let po = at.p(self.out);
        let iso = ps(po, si.props.s).map_err(at.tag())?;
        let w = (iso.props.h - si.props.h) / self.efficiency;
        st[self.out] = Some(ph(po, si.props.h + w).map_err(at.tag())?);
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

    fn results(&self, at: At, m: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        let pw = m[self.inlet] * (st[self.out].props.h - st[self.inlet].props.h);
        out.r.power = Some(pw);
        out.r.balance.energy_in += pw;
        out.t.pump_power += pw;
        out.link("power", at.name(), pw, 0.0);
        out.r.efficiency = Some(self.efficiency);
        // vapour, or a mixture beyond the round-off of saturated liquid (x = 0)
        let si = st[self.inlet];
        let steam = match si.phase {
            Phase::Vapour => true,
            Phase::Wet => si.x.is_some_and(|x| x > 1e-9),
            Phase::Liquid | Phase::Supercritical => false,
        };
        if steam {
            out.warn(
                Code::PumpInletNotLiquid,
                format!("the pump inlet is {}, not liquid", si.phase.name()),
            );
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
