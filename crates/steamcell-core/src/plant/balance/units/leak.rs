//! Leak: a hole in a header or line. Its one inlet is the stream from the unit with the hole
//! (a header), whose state is taken as the stagnation state; the flow through the hole is
//! `orifice::orifice_flow` of that state (real fluid along the isentrope, choked or not,
//! homogeneous equilibrium for water and wet steam) to the pressure outside: its outlet
//! stream's (a condensate header, a vent) or, without an outlet, `downstream_p` (atmospheric by
//! default), the flow then leaving the site. The outlet state is the inlet's enthalpy at the
//! outlet pressure (the jet mixed out).
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW; diameters m).
//!
//! Invariant: at the solution the inlet flow equals `orifice_flow` of the solved inlet state
//! exactly (the flow equation's right-hand side is that flow); a diameter of 0 passes nothing.

use super::{
    check_hole, count, tag_field, At, Boundary, Draft, Loss, LossKind, Memo, Report, UnitKind,
    P_ATM,
};
use crate::error::{Bound, Error, Result};
use crate::plant::balance::diagnosis::{Amount, ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::orifice::{self, Approach, Flashing, OrificeSpec, CD_SHARP_EDGED};
use crate::plant::ph;
use crate::water::state::State;

struct Wired {
    u: usize,
    inlet: usize,
    out: Option<usize>,
    diameter: Option<f64>,
    cd: f64,
    downstream_p: Option<f64>,
}

/// Checks an optional absolute pressure outside a hole (> 0), naming the unit's field.
pub(super) fn check_outside_p(w: &Wiring, u: usize, p: Option<f64>) -> Result<()> {
    if let Some(p) = p {
        let q = format!("units.{}.downstream_p", w.un[u]);
        Error::check_finite(&q, p)?;
        if p <= 0.0 {
            return Err(Error::out_of_range(
                &q,
                p,
                0.0,
                "MPa",
                Bound::Below,
                "an absolute pressure",
            ));
        }
    }
    Ok(())
}

pub(super) fn draft(
    w: &Wiring,
    u: usize,
    diameter: Option<f64>,
    cd: Option<f64>,
    downstream_p: Option<f64>,
) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 1, 1)?;
    count(w, u, "outlet", o, 0, 1)?;
    check_hole(w, u, "diameter", diameter, cd)?;
    check_outside_p(w, u, downstream_p)?;
    Ok(Box::new(Wired {
        u,
        inlet: i[0],
        out: o.first().copied(),
        diameter,
        cd: cd.unwrap_or(CD_SHARP_EDGED),
        downstream_p,
    }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        Some("throttling through the hole (constant enthalpy)")
    }
    fn outlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        self.downstream_p
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
        let u = self.u;
        if w.streams[self.inlet].flow.is_some() {
            f.note(Finding::FlowSetByUnit {
                stream: w.stream(self.inlet),
                unit: w.unit(u),
                by: "the flow through the hole",
            });
        }
        let d = self.diameter.ok_or_else(|| {
            f.refuse(Finding::MissingHole {
                unit: w.unit(u),
                quantity: "diameter",
                what: "the hole",
            })
        })?;
        let p_up = w.p[self.inlet];
        let p_down = match self.out {
            Some(o) => w.p[o],
            None => self.downstream_p.unwrap_or(P_ATM),
        };
        if d > 0.0 && p_up.is_finite() && p_down.is_finite() && p_down >= p_up {
            f.note(Finding::NoPressureDrop {
                unit: w.unit(u),
                upstream: Amount::pressure(p_up),
                downstream: Amount::pressure(p_down),
            });
        }
        Ok(Box::new(Leak {
            inlet: self.inlet,
            out: self.out,
            spec: OrificeSpec {
                diameter: d,
                cd: self.cd,
                downstream_p: p_down,
                flashing: Flashing::Equilibrium,
                approach: Approach::Stagnation,
            },
            memo: Memo::default(),
        }))
    }
}

/// The flow through a hole of `spec` from the stagnation state `si` (0 for a hole of no
/// size): (kg/s, choked), remembered for the last state.
pub(super) fn hole_flow(
    at: At,
    memo: &Memo<(f64, bool)>,
    spec: &OrificeSpec,
    si: &State,
) -> Result<(f64, bool)> {
    if spec.diameter == 0.0 {
        return Ok((0.0, false));
    }
    memo.get([si.props.p, si.props.h, 0.0], || {
        orifice::orifice_flow(si, spec)
            .map(|r| (r.mass_flow, r.choked))
            .map_err(|e| tag_field(at, e))
    })
}

/// A validated leak.
#[derive(Debug)]
struct Leak {
    inlet: usize,
    out: Option<usize>,
    spec: OrificeSpec,
    memo: Memo<(f64, bool)>,
}

impl UnitKind for Leak {
    /// `aux`: the flow through the hole at the current inlet state.
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], aux: &mut f64) -> Result<bool> {
        let Some(si) = st[self.inlet] else {
            return Ok(false);
        };
        *aux = hole_flow(at, &self.memo, &self.spec, &si)?.0;
        if let Some(o) = self.out {
            st[o] = Some(ph(at.p(o), si.props.h).map_err(at.tag())?);
        }
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
        bal.push(at.flow_row("flow through the hole", self.inlet, aux));
        if self.out.is_some() {
            bal.push(at.mass_balance(&[]));
        }
    }

    fn flow_hint(&self, _: At, _: usize, _: &[usize]) -> Option<FlowHint> {
        None
    }

    fn clash_hint(&self, _: At, _: &'static str) -> Option<ClashHint> {
        None
    }

    fn results(&self, at: At, m: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        let (mi, si) = (m[self.inlet], st[self.inlet]);
        let (_, choked) = hole_flow(at, &self.memo, &self.spec, &si)?;
        let e = mi * si.props.h;
        if self.out.is_none() {
            out.r.mass_lost = mi;
            out.r.energy_lost = e;
            out.r.balance.mass_out += mi;
            out.r.balance.energy_out += e;
            out.t.loss_discharged += mi;
            out.t.loss_discharged_energy += e;
            out.link(at.name(), "losses", e, mi);
        }
        out.t.leak_flow += mi;
        let mut l = Loss::steam(LossKind::Leak, mi, si.props.h, si.props.p);
        l.choked = Some(choked);
        out.lose(at.u, l);
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
