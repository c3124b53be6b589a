//! Desuperheater: steam and spray water (the inlet named by `water`) in, one outlet at a
//! target temperature, a target superheat or the outlet stream's T, h or x; a target at or
//! below saturation gives saturated vapour and a warning.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated desuperheater has exactly one target and its outlet lies below
//! the critical pressure.

use super::{count, find_port, fixed_state, At, Boundary, Draft, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::{Amount, ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::balance::FixedState;
use crate::plant::warnings::{Arg, Code, Quantity};
use crate::plant::{pt, sat_vapour};
use crate::units::Dim;
use crate::water::state::{self, State, P_C};

struct Wired {
    u: usize,
    steam: usize,
    water: usize,
    out: usize,
    p: Option<f64>,
    t: Option<f64>,
    superheat: Option<f64>,
}

pub(super) fn draft(
    w: &Wiring,
    u: usize,
    water: Option<&str>,
    p: Option<f64>,
    t: Option<f64>,
    superheat: Option<f64>,
) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 2, 2)?;
    count(w, u, "outlet", o, 1, 1)?;
    let water = find_port(w, u, "water", water, i)?;
    Ok(Box::new(Wired {
        u,
        steam: if i[0] == water { i[1] } else { i[0] },
        water,
        out: o[0],
        p,
        t,
        superheat,
    }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        None
    }
    fn outlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        self.p
    }
    fn checks_outlet_p(&self) -> bool {
        true
    }
    fn inlet_p(&self, s: usize, w: &Wiring) -> Option<f64> {
        if s == self.steam {
            self.p.or_else(|| w.known_p(self.out))
        } else {
            None
        }
    }
    fn default_p(&self, _: usize, w: &Wiring) -> Option<f64> {
        w.known_p(self.steam)
    }
    fn validate(&self, w: &Wiring, f: &mut Findings) -> Result<Box<dyn UnitKind>, Refused> {
        let p = w.p[self.out];
        if p >= P_C {
            f.note(Finding::DesuperheaterAboveCritical {
                unit: w.unit(self.u),
                p: Amount::pressure(p),
                critical: Amount::pressure(P_C),
            });
        }
        let stream = w.stream(self.out);
        let target = match (self.t, self.superheat, w.fixed[self.out]) {
            (Some(t), None, None) => Target::T(t),
            (None, Some(dt), None) => Target::Superheat(dt),
            (None, None, Some(x)) => Target::Outlet(x),
            (None, None, None) => {
                return Err(f.refuse(Finding::MissingDesuperheaterTarget {
                    unit: w.unit(self.u),
                    stream,
                }))
            }
            (Some(_), Some(_), _) | (Some(_), None, Some(_)) | (None, Some(_), Some(_)) => {
                return Err(f.refuse(Finding::DesuperheaterTargetTwice {
                    unit: w.unit(self.u),
                    stream,
                }))
            }
        };
        Ok(Box::new(Desuperheater {
            water: self.water,
            out: self.out,
            target,
        }))
    }
}

/// The one target of the outlet.
#[derive(Debug, Clone, Copy)]
enum Target {
    /// Temperature, K.
    T(f64),
    /// Superheat, K.
    Superheat(f64),
    /// The outlet stream's T, h or x.
    Outlet(FixedState),
}

/// The outlet state a target asks for at the outlet pressure.
enum Aim {
    /// A temperature at or below saturation (K): saturated vapour instead.
    BelowSaturation(f64),
    /// A temperature above saturation, K.
    T(f64),
    /// The outlet stream's value.
    Outlet(FixedState),
}

/// A validated desuperheater.
#[derive(Debug)]
struct Desuperheater {
    water: usize,
    out: usize,
    target: Target,
}

impl Desuperheater {
    /// The aim at outlet pressure `p` (a temperature target is compared with saturation); `p`
    /// lies below the critical pressure (an outlet at or above it is refused when the network
    /// is built, DesuperheaterAboveCritical).
    fn aim(&self, p: f64) -> Result<Aim> {
        let (ts, _, _) = state::saturation_p(p)?;
        let target = match self.target {
            Target::T(t) => t,
            Target::Superheat(dt) => ts + dt,
            Target::Outlet(x) => return Ok(Aim::Outlet(x)),
        };
        Ok(if target <= ts {
            Aim::BelowSaturation(target)
        } else {
            Aim::T(target)
        })
    }
}

impl UnitKind for Desuperheater {
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        let p = at.p(self.out);
        let s = match self.aim(p).map_err(at.tag())? {
            Aim::BelowSaturation(_) => sat_vapour(p).map_err(at.tag())?,
            Aim::T(t) => pt(p, t).map_err(at.tag())?,
            Aim::Outlet(x) => fixed_state(p, x).map_err(at.tag())?,
        };
        st[self.out] = Some(s);
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
        bal.push(at.mass_balance(&[]));
        bal.push(at.energy_balance(st));
    }

    fn flow_hint(&self, _: At, _: usize, _: &[usize]) -> Option<FlowHint> {
        None
    }

    fn clash_hint(&self, _: At, _: &'static str) -> Option<ClashHint> {
        None
    }

    fn results(&self, _: At, _: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        let po = st[self.out].props.p;
        if let Aim::BelowSaturation(tt) = self.aim(po)? {
            let sh = |x: f64| Arg::from(Quantity::new("superheat", Dim::TemperatureDifference, x));
            out.warn_with(
                Code::DesuperheaterTargetSaturated,
                "the target temperature {} is at or below saturation at {}: a desuperheater cannot make wet steam; the outlet is set to saturated vapour (aim for {} to {} of superheat; common practice, no source)",
                &[
                    Quantity::new("T", Dim::Temperature, tt).into(),
                    Quantity::new("p", Dim::Pressure, po).into(),
                    sh(5.0),
                    sh(10.0),
                ],
            );
        }
        if st[self.water].props.p < po {
            out.warn(Code::SprayWaterPressureLow, "the spray water pressure is below the outlet pressure: it cannot enter without a pump");
        }
        Ok(())
    }

    fn boundary(&self) -> Option<Boundary> {
        None
    }

    fn reversal(&self, at: At, s: usize, _: &[f64]) -> Option<Reversal> {
        (s == self.water).then(|| Reversal::SprayNotNeeded {
            desuperheater: at.name().to_string(),
            water: at.stream(s).to_string(),
        })
    }

    fn solved_finding(&self, _: At, _: &[State]) -> Option<Finding> {
        None
    }
}
