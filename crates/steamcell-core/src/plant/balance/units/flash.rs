//! Flash vessel: inlets mixed and flashed at the vessel pressure to saturated vapour (the
//! outlet named by `vapour`) and saturated liquid; a subcooled or superheated mixture leaves
//! by one outlet only.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated vessel holds its pressure; its vapour fraction is the unit's own
//! unknown, updated with the states.

use super::{count, find_port, mix, At, Boundary, Draft, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::{ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::{ph, sat_liquid, sat_vapour};
use crate::water::state::{Phase, State};

struct Wired {
    u: usize,
    vapour: usize,
    liquid: usize,
    p: Option<f64>,
}

pub(super) fn draft(
    w: &Wiring,
    u: usize,
    p: Option<f64>,
    vapour: Option<&str>,
) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 1, usize::MAX)?;
    count(w, u, "outlet", o, 2, 2)?;
    let vapour = find_port(w, u, "vapour", vapour, o)?;
    Ok(Box::new(Wired {
        u,
        vapour,
        liquid: if o[0] == vapour { o[1] } else { o[0] },
        p,
    }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        Some("saturation at the vessel pressure")
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
        let p = self.p.ok_or_else(|| {
            f.refuse(Finding::MissingPressure {
                unit: w.unit(self.u),
            })
        })?;
        Ok(Box::new(Flash {
            p,
            vapour: self.vapour,
            liquid: self.liquid,
        }))
    }
}

/// A validated flash vessel.
#[derive(Debug)]
struct Flash {
    /// Pressure, MPa.
    p: f64,
    vapour: usize,
    liquid: usize,
}

impl UnitKind for Flash {
    /// `aux`: the vapour fraction of the mixed inlets.
    fn states(&self, at: At, m: &[f64], st: &mut [Option<State>], aux: &mut f64) -> Result<bool> {
        if at.ins().iter().any(|&i| st[i].is_none()) {
            return Ok(false);
        }
        let Some(h) = mix(at.ins(), m, st) else {
            return Ok(false);
        };
        let pv = self.p;
        let mx = ph(pv, h).map_err(at.tag())?;
        let (x, v, l) = match mx.phase {
            Phase::Wet => (
                mx.x.unwrap_or(0.0),
                sat_vapour(pv).map_err(at.tag())?,
                sat_liquid(pv).map_err(at.tag())?,
            ),
            Phase::Liquid => (0.0, sat_vapour(pv).map_err(at.tag())?, mx),
            Phase::Vapour | Phase::Supercritical => (1.0, mx, sat_liquid(pv).map_err(at.tag())?),
        };
        *aux = x;
        st[self.vapour] = Some(v);
        st[self.liquid] = Some(l);
        Ok(true)
    }

    fn flow_equations(
        &self,
        at: At,
        _: &[Option<State>],
        aux: f64,
        bal: &mut Vec<Row>,
        _: &mut Vec<Row>,
    ) {
        bal.push(at.mass_balance(&[]));
        let mut r = at.row("flash split");
        r.add(self.vapour, 1.0);
        for &i in at.ins() {
            r.add(i, -aux);
        }
        bal.push(r);
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

    fn reversal(&self, _: At, _: usize, _: &[f64]) -> Option<Reversal> {
        None
    }

    fn solved_finding(&self, _: At, _: &[State]) -> Option<Finding> {
        None
    }
}
