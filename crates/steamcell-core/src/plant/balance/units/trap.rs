//! Steam trap: drains condensate (its condensate inlet: a line's drain, a user's condensate)
//! to its outlet (a condensate header, a flash vessel) or, without an outlet, out of the site.
//! Healthy, it passes the condensate only. Failed open (blowing through) or leaking, it also
//! passes live steam from its `steam` inlet (a stream from the header it drains) through a hole:
//! the trap's orifice (`diameter`, from the maker's data) when failed open, the equivalent hole
//! of the leak (`leak_diameter`, the auditor's estimate) when leaking. The live steam is
//! `orifice::orifice_flow` of the steam inlet's state to the pressure downstream, as if the
//! condensate did not share the hole: an upper estimate when the trap also carries condensate
//! (the usual audit model of a failed trap; common practice, no source). The outlet is the
//! mixture throttled to the outlet pressure (constant enthalpy).
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW; diameters m).
//!
//! Invariant: the live steam equals `orifice_flow` of the solved steam state exactly (0 for a
//! healthy trap or a hole of no size); a trap whose condensate inlet is not liquid (or
//! saturated liquid) is refused.

use super::leak::{check_outside_p, hole_flow};
use super::{
    check_hole, count, find_port, mix, At, Boundary, Draft, Loss, LossKind, Memo, Report, UnitKind,
    P_ATM,
};
use crate::error::{Error, Result};
use crate::plant::balance::diagnosis::{Amount, ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::balance::TrapState;
use crate::plant::orifice::{Approach, Flashing, OrificeSpec, CD_SHARP_EDGED};
use crate::plant::ph;
use crate::water::state::{Phase, State};

/// A trap's specification as given.
pub(super) struct Given<'a> {
    pub state: TrapState,
    pub diameter: Option<f64>,
    pub leak_diameter: Option<f64>,
    pub cd: Option<f64>,
    pub steam: Option<&'a str>,
    pub downstream_p: Option<f64>,
}

struct Wired {
    u: usize,
    condensate: usize,
    steam: Option<usize>,
    out: Option<usize>,
    state: TrapState,
    diameter: Option<f64>,
    leak_diameter: Option<f64>,
    cd: f64,
    downstream_p: Option<f64>,
}

pub(super) fn draft(w: &Wiring, u: usize, g: Given) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet (condensate, and live steam)", i, 1, 2)?;
    count(w, u, "outlet", o, 0, 1)?;
    let steam = if i.len() == 2 || g.steam.is_some() {
        Some(find_port(w, u, "steam", g.steam, i)?)
    } else {
        None
    };
    let Some(&condensate) = i.iter().find(|&&s| Some(s) != steam) else {
        return Err(Error::invalid(format!(
            "trap {}: its only inlet is its steam stream {}; a trap drains condensate: add the condensate inlet (a line's drain, a user's condensate)",
            w.un[u],
            w.sn[i[0]]
        )));
    };
    check_hole(w, u, "diameter", g.diameter, g.cd)?;
    check_hole(w, u, "leak_diameter", g.leak_diameter, None)?;
    check_outside_p(w, u, g.downstream_p)?;
    Ok(Box::new(Wired {
        u,
        condensate,
        steam,
        out: o.first().copied(),
        state: g.state,
        diameter: g.diameter,
        leak_diameter: g.leak_diameter,
        cd: g.cd.unwrap_or(CD_SHARP_EDGED),
        downstream_p: g.downstream_p,
    }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        Some("the condensate and live steam throttled to the outlet pressure")
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
        let hole = match self.state {
            TrapState::Healthy => Some(0.0),
            TrapState::FailedOpen => self.diameter,
            TrapState::Leaking => self.leak_diameter,
        };
        let hole = hole.ok_or_else(|| {
            f.refuse(match self.state {
                TrapState::Leaking => Finding::MissingHole {
                    unit: w.unit(u),
                    quantity: "leak_diameter",
                    what: "the equivalent hole of the leak (the auditor's estimate)",
                },
                TrapState::Healthy | TrapState::FailedOpen => Finding::MissingHole {
                    unit: w.unit(u),
                    quantity: "diameter",
                    what: "the trap's orifice (maker's data)",
                },
            })
        })?;
        if self.state != TrapState::Healthy && self.steam.is_none() {
            return Err(f.refuse(Finding::MissingTrapSteam {
                unit: w.unit(u),
                state: self.state.name(),
            }));
        }
        if let Some(s) = self.steam {
            if w.streams[s].flow.is_some() {
                f.note(Finding::FlowSetByUnit {
                    stream: w.stream(s),
                    unit: w.unit(u),
                    by: "the live steam through the trap",
                });
            }
        }
        let p_down = match self.out {
            Some(o) => w.p[o],
            None => self.downstream_p.unwrap_or(P_ATM),
        };
        let mut upstream = vec![self.condensate];
        if hole > 0.0 {
            upstream.extend(self.steam);
        }
        for s in upstream {
            let p_up = w.p[s];
            if p_up.is_finite() && p_down.is_finite() && p_down > p_up {
                f.note(Finding::NoPressureDrop {
                    unit: w.unit(u),
                    upstream: Amount::pressure(p_up),
                    downstream: Amount::pressure(p_down),
                });
            }
        }
        Ok(Box::new(Trap {
            condensate: self.condensate,
            steam: self.steam,
            out: self.out,
            spec: OrificeSpec {
                diameter: hole,
                cd: self.cd,
                downstream_p: p_down,
                flashing: Flashing::Equilibrium,
                approach: Approach::Stagnation,
            },
            memo: Memo::default(),
        }))
    }
}

/// A validated trap.
#[derive(Debug)]
struct Trap {
    condensate: usize,
    steam: Option<usize>,
    out: Option<usize>,
    /// The hole passing live steam (diameter 0 for a healthy trap).
    spec: OrificeSpec,
    memo: Memo<(f64, bool)>,
}

impl Trap {
    fn live_steam(&self, at: At, st: &[Option<State>]) -> Result<Option<(f64, bool)>> {
        match self.steam {
            None => Ok(Some((0.0, false))),
            Some(s) => match st[s] {
                None => Ok(None),
                Some(ss) => hole_flow(at, &self.memo, &self.spec, &ss).map(Some),
            },
        }
    }
}

/// Whether a state is condensate: liquid, or saturated liquid.
fn is_condensate(s: &State) -> bool {
    s.phase == Phase::Liquid || s.x.is_some_and(|x| x <= 1e-9)
}

impl UnitKind for Trap {
    /// `aux`: the live steam through the hole at the current steam state.
    fn states(&self, at: At, m: &[f64], st: &mut [Option<State>], aux: &mut f64) -> Result<bool> {
        if at.ins().iter().any(|&i| st[i].is_none()) {
            return Ok(false);
        }
        let Some((live, _)) = self.live_steam(at, st)? else {
            return Ok(false);
        };
        *aux = live;
        if let Some(o) = self.out {
            let Some(h) = mix(at.ins(), m, st) else {
                return Ok(false);
            };
            st[o] = Some(ph(at.p(o), h).map_err(at.tag())?);
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
        if let Some(s) = self.steam {
            bal.push(at.flow_row("live steam through the trap", s, aux));
        }
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
        let c = st[self.condensate];
        if !is_condensate(&c) {
            let what = match (c.phase, c.x) {
                (Phase::Wet, Some(x)) => format!("wet steam (x = {x:.4})"),
                (Phase::Vapour | Phase::Supercritical, _) => "steam".to_string(),
                (Phase::Wet | Phase::Liquid, _) => c.phase.name().to_string(),
            };
            return Err(Error::invalid(format!(
                "trap {}: its condensate inlet {} carries {what}, not condensate: a steam trap drains condensate; put it on a drain (a line's drain, a user's condensate) and bring live steam through `steam`, or model a hole passing steam as a leak",
                at.name(),
                at.stream(self.condensate)
            )));
        }
        let known: Vec<Option<State>> = st.iter().map(|s| Some(*s)).collect();
        let (_, choked) = self.live_steam(at, &known)?.unwrap_or((0.0, false));
        let (mi, ei) = (out.mi, out.ei);
        if self.out.is_none() {
            out.r.mass_lost = mi;
            out.r.energy_lost = ei;
            out.r.balance.mass_out += mi;
            out.r.balance.energy_out += ei;
            out.t.loss_discharged += mi;
            out.t.loss_discharged_energy += ei;
            out.link(at.name(), "losses", ei, mi);
        }
        let (ms, ss) = match self.steam {
            Some(s) => (m[s], st[s]),
            None => (0.0, c),
        };
        out.t.trap_steam += ms;
        let mut l = Loss::steam(LossKind::Trap, ms, ss.props.h, ss.props.p);
        l.choked = (self.spec.diameter > 0.0).then_some(choked);
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
