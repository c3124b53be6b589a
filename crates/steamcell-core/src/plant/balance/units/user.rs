//! Process steam user: steam in; a fraction returned as condensate (an optional outlet at
//! `return_T` or the stream's T, h or x); the rest lost at `return_T`; the heat to process
//! from its energy balance.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated user knows the state of its condensate, returned or lost.

use super::{count, fixed_state, At, Boundary, Draft, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::{Amount, ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::balance::FixedState;
use crate::plant::pt;
use crate::plant::warnings::Code;
use crate::water::state::{Phase, State};

struct Wired {
    u: usize,
    inlet: usize,
    ret: Option<usize>,
    demand: Option<f64>,
    return_fraction: f64,
    return_t: Option<f64>,
}

pub(super) fn draft(
    w: &Wiring,
    u: usize,
    demand: Option<f64>,
    return_fraction: f64,
    return_t: Option<f64>,
) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet (steam)", i, 1, 1)?;
    count(w, u, "outlet (condensate return)", o, 0, 1)?;
    Ok(Box::new(Wired {
        u,
        inlet: i[0],
        ret: o.first().copied(),
        demand,
        return_fraction,
        return_t,
    }))
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
    fn default_p(&self, _: usize, w: &Wiring) -> Option<f64> {
        w.known_p(self.inlet)
    }
    fn validate(&self, w: &Wiring, f: &mut Findings) -> Result<Box<dyn UnitKind>, Refused> {
        let (u, rf) = (self.u, self.return_fraction);
        if self.demand.is_some() && w.streams[self.inlet].flow.is_some() {
            f.note(Finding::DemandTwice {
                unit: w.unit(u),
                stream: w.stream(self.inlet),
            });
        }
        let condensate = match self.ret {
            None => {
                if rf > 0.0 {
                    f.note(Finding::ReturnWithoutStream {
                        unit: w.unit(u),
                        return_fraction: rf,
                    });
                }
                match self.return_t {
                    Some(t) => Condensate::Lost { t },
                    None => {
                        return Err(
                            f.refuse(Finding::MissingLostCondensateTemperature { unit: w.unit(u) })
                        )
                    }
                }
            }
            Some(r) => match (self.return_t, w.fixed[r]) {
                (Some(t), None) => Condensate::Returned {
                    stream: r,
                    state: FixedState::T(t),
                },
                (None, Some(x)) => Condensate::Returned {
                    stream: r,
                    state: x,
                },
                (Some(_), Some(_)) => {
                    return Err(f.refuse(Finding::ReturnTemperatureTwice {
                        unit: w.unit(u),
                        stream: w.stream(r),
                    }))
                }
                (None, None) => {
                    return Err(f.refuse(Finding::MissingReturnTemperature {
                        unit: w.unit(u),
                        stream: w.stream(r),
                    }))
                }
            },
        };
        Ok(Box::new(User {
            inlet: self.inlet,
            condensate,
            demand: self.demand,
            return_fraction: rf,
        }))
    }
}

/// Where the condensate goes.
#[derive(Debug, Clone, Copy)]
enum Condensate {
    /// Back through this stream, in this state.
    Returned { stream: usize, state: FixedState },
    /// All lost, at this temperature (K).
    Lost { t: f64 },
}

/// A validated process user.
#[derive(Debug)]
struct User {
    inlet: usize,
    condensate: Condensate,
    demand: Option<f64>,
    return_fraction: f64,
}

impl UnitKind for User {
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        match self.condensate {
            Condensate::Returned { stream, state } => {
                st[stream] = Some(fixed_state(at.p(stream), state).map_err(at.tag())?);
            }
            Condensate::Lost { .. } => {}
        }
        Ok(true)
    }

    fn flow_equations(
        &self,
        at: At,
        _: &[Option<State>],
        _: f64,
        bal: &mut Vec<Row>,
        spec: &mut Vec<Row>,
    ) {
        if let Condensate::Returned { stream, .. } = self.condensate {
            let mut r = at.row("condensate return fraction");
            r.add(stream, 1.0);
            r.add(self.inlet, -self.return_fraction);
            bal.push(r);
        }
        if let Some(d) = self.demand {
            let mut r = at.value_row("steam demand", "demand", Amount::mass_flow);
            r.add(self.inlet, 1.0);
            r.rhs = d;
            spec.push(r);
        }
    }

    fn flow_hint(&self, at: At, s: usize, _: &[usize]) -> Option<FlowHint> {
        (self.demand.is_none() && s == self.inlet).then(|| FlowHint::UserDemand {
            unit: at.name().to_string(),
        })
    }

    fn clash_hint(&self, _: At, _: &'static str) -> Option<ClashHint> {
        None
    }

    fn results(&self, at: At, m: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        let nm = at.name();
        let inlet = self.inlet;
        let (mret, hc) = match self.condensate {
            Condensate::Returned { stream, .. } => (m[stream], st[stream].props.h),
            Condensate::Lost { t } => (0.0, pt(st[inlet].props.p, t)?.props.h),
        };
        let lost = m[inlet] - mret;
        let q = out.ei - out.eo - lost * hc;
        out.r.duty = Some(q);
        out.r.mass_lost = lost;
        out.r.energy_lost = lost * hc;
        out.r.balance.mass_out += lost;
        out.r.balance.energy_out += lost * hc + q;
        out.t.process_steam += m[inlet];
        out.t.process_heat += q;
        out.t.condensate_lost += lost;
        out.t.water_lost_energy += lost * hc;
        out.link(nm, "process", q, 0.0);
        out.link(nm, "losses", lost * hc, lost);
        if let Condensate::Returned { stream, .. } = self.condensate {
            // Saturated liquid (x = 0) is condensate too.
            let saturated_liquid = st[stream].x.is_some_and(|x| x <= 0.0);
            if st[stream].phase != Phase::Liquid && !saturated_liquid {
                out.warn(
                    Code::CondensateNotLiquid,
                    format!(
                        "the condensate stream {} is not liquid at its pressure",
                        at.stream(stream)
                    ),
                );
            }
        }
        if st[inlet].phase == Phase::Liquid {
            out.warn(
                Code::UserReceivesLiquid,
                "the user receives liquid, not steam",
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
