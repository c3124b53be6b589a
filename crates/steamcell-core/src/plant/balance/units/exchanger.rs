//! Two-stream exchanger without pressure drop: the hot side (inlet and outlet named by
//! `hot_in`, `hot_out`) heats the cold side; outlet states from T, h or x on the outlet
//! streams, one of which may be left free (then it follows from the energy balance).
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated exchanger knows at least one outlet state; a solved exchanger
//! passes heat from its hot side to its cold side without a temperature cross anywhere along
//! it (checked as `exchanger.balance` checks it, at the ends and at every bubble and dew point:
//! `feasibility::exchanger_profile`), else the balance is refused as infeasible (second law).

use super::{count, find_port, fixed_state, h, At, Boundary, Draft, Report, UnitKind};
use crate::error::{Arg, Error, Quantity, Result};
use crate::plant::balance::diagnosis::{ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::balance::FixedState;
use crate::plant::feasibility::exchanger_profile;
use crate::plant::ph;
use crate::units::Dim;
use crate::water::state::State;

struct Wired {
    u: usize,
    hi: usize,
    ho: usize,
    ci: usize,
    co: usize,
}

pub(super) fn draft(
    w: &Wiring,
    u: usize,
    hot_in: Option<&str>,
    hot_out: Option<&str>,
) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 2, 2)?;
    count(w, u, "outlet", o, 2, 2)?;
    let hi = find_port(w, u, "hot_in", hot_in, i)?;
    let ho = find_port(w, u, "hot_out", hot_out, o)?;
    Ok(Box::new(Wired {
        u,
        hi,
        ho,
        ci: if i[0] == hi { i[1] } else { i[0] },
        co: if o[0] == ho { o[1] } else { o[0] },
    }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        None
    }
    fn outlet_p(&self, s: usize, w: &Wiring) -> Option<f64> {
        w.known_p(if s == self.ho { self.hi } else { self.ci })
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
        let outlets = match (w.fixed[self.ho], w.fixed[self.co]) {
            (Some(a), Some(b)) => Outlets::Both(a, b),
            (Some(a), None) => Outlets::Hot(a),
            (None, Some(b)) => Outlets::Cold(b),
            (None, None) => {
                return Err(f.refuse(Finding::MissingExchangerOutlet {
                    unit: w.unit(self.u),
                    hot_out: w.stream(self.ho),
                    cold_out: w.stream(self.co),
                }))
            }
        };
        Ok(Box::new(Exchanger {
            hi: self.hi,
            ho: self.ho,
            ci: self.ci,
            co: self.co,
            outlets,
        }))
    }
}

/// The outlet states given.
#[derive(Debug, Clone, Copy)]
enum Outlets {
    /// Both (the flows then follow from the energy balance).
    Both(FixedState, FixedState),
    /// The hot outlet's; the cold outlet follows.
    Hot(FixedState),
    /// The cold outlet's; the hot outlet follows.
    Cold(FixedState),
}

/// A validated exchanger.
#[derive(Debug)]
struct Exchanger {
    hi: usize,
    ho: usize,
    ci: usize,
    co: usize,
    outlets: Outlets,
}

impl UnitKind for Exchanger {
    fn states(&self, at: At, m: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        let (hi, ho, ci, co) = (self.hi, self.ho, self.ci, self.co);
        let (Some(shi), Some(sci)) = (st[hi], st[ci]) else {
            return Ok(false);
        };
        match self.outlets {
            Outlets::Both(fh, fc) => {
                st[ho] = Some(fixed_state(at.p(ho), fh).map_err(at.tag())?);
                st[co] = Some(fixed_state(at.p(co), fc).map_err(at.tag())?);
            }
            Outlets::Hot(fh) => {
                let sho = fixed_state(at.p(ho), fh).map_err(at.tag())?;
                let q = m[hi] * (shi.props.h - sho.props.h);
                let h = if m[ci].abs() > 0.0 {
                    sci.props.h + q / m[ci]
                } else {
                    sci.props.h
                };
                st[ho] = Some(sho);
                st[co] = Some(follow(at, co, h, q, m[ci], "cold")?);
            }
            Outlets::Cold(fc) => {
                let sco = fixed_state(at.p(co), fc).map_err(at.tag())?;
                let q = m[ci] * (sco.props.h - sci.props.h);
                let h = if m[hi].abs() > 0.0 {
                    shi.props.h - q / m[hi]
                } else {
                    shi.props.h
                };
                st[co] = Some(sco);
                st[ho] = Some(follow(at, ho, h, q, m[hi], "hot")?);
            }
        }
        Ok(true)
    }

    fn flow_equations(
        &self,
        at: At,
        st: &[Option<State>],
        _: f64,
        bal: &mut Vec<Row>,
        _: &mut Vec<Row>,
    ) {
        let (hi, ho, ci, co) = (self.hi, self.ho, self.ci, self.co);
        let mut r = at.row("hot-side mass balance");
        r.add(hi, 1.0);
        r.add(ho, -1.0);
        bal.push(r);
        let mut r = at.row("cold-side mass balance");
        r.add(ci, 1.0);
        r.add(co, -1.0);
        bal.push(r);
        if let Outlets::Both(..) = self.outlets {
            let mut r = at.row("energy balance");
            r.add(hi, h(st, hi) - h(st, ho));
            r.add(ci, -(h(st, co) - h(st, ci)));
            bal.push(r);
        }
    }

    fn flow_hint(&self, _: At, _: usize, _: &[usize]) -> Option<FlowHint> {
        None
    }

    fn clash_hint(&self, _: At, _: &'static str) -> Option<ClashHint> {
        None
    }

    fn results(&self, at: At, m: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        let (hi, ho, ci, co) = (self.hi, self.ho, self.ci, self.co);
        let q = m[hi] * (st[hi].props.h - st[ho].props.h);
        let t = |s: usize| Arg::from(Quantity::new("T", Dim::Temperature, st[s].props.t));
        // heat from the cold side to the hot side: the second law refuses it
        if q < 0.0 {
            return Err(Error::infeasible_with(
                "heat would flow from the cold side to the hot side (second law: heat cannot flow from cold to hot): the hot stream {} leaves at {}, hotter than it enters at {}, and the cold stream {} leaves at {}, entering at {}; swap the sides (hot_in, hot_out) or check the outlet temperatures",
                &[
                    at.stream(ho).into(),
                    t(ho),
                    t(hi),
                    at.stream(co).into(),
                    t(co),
                    t(ci),
                ],
            )
            .prefixed(&format!("{}: ", at.label())));
        }
        // a temperature cross anywhere along it, as exchanger.balance refuses one
        if q > 0.0 {
            exchanger_profile(&st[hi], &st[ho], &st[ci], &st[co], q).map_err(at.tag())?;
        }
        out.r.duty = Some(q);
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

/// The outlet state `s` at enthalpy `h` that the energy balance gives one side (`side`, its
/// flow `flow`) for the duty `q` the other side's outlet fixes; an enthalpy outside IAPWS-IF97
/// there means that side cannot give or take that duty (the outlets cross), refused as
/// infeasible with the values.
fn follow(at: At, s: usize, h: f64, q: f64, flow: f64, side: &str) -> Result<State> {
    ph(at.p(s), h).map_err(|e| match e {
        Error::OutOfRange { .. } => Error::infeasible_with(
            &format!("the energy balance puts the {side} outlet stream {{}} at h = {{}} (a duty of {{}} on a {side} flow of {{}}), outside the range of IAPWS-IF97 at its pressure: the {side} side cannot pass that duty without a temperature cross (second law); lower the duty the other outlet asks (its temperature) or raise the {side} flow"),
            &[
                at.stream(s).into(),
                Quantity::new("h", Dim::SpecificEnergy, h).into(),
                Quantity::new("duty", Dim::HeatFlow, q.abs()).into(),
                Quantity::new("flow", Dim::MassFlow, flow).into(),
            ],
        )
        .prefixed(&format!("{}: ", at.label())),
        other => at.tag()(other),
    })
}
