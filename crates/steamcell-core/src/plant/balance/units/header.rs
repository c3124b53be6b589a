//! Header: adiabatic mixing at a pressure; any number of inlets and outlets, every outlet at
//! the mixed state.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated header holds its pressure.

use super::{count, is_wet, mix, At, Boundary, Draft, Loss, LossKind, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::{Amount, ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::ph;
use crate::plant::warnings::{Arg, Code, Quantity};
use crate::units::Dim;
use crate::water::state::{Phase, State};

/// Steam flow to a vent above which a header is said to vent continuously, kg/s (1e-6 kg/s,
/// 3.6 g/h: round-off of a closed vent lies far below).
const VENTING: f64 = 1e-6;

struct Wired {
    u: usize,
    p: Option<f64>,
}

pub(super) fn draft(w: &Wiring, u: usize, p: Option<f64>) -> Result<Box<dyn Draft>> {
    count(w, u, "inlet", &w.ins[u], 1, usize::MAX)?;
    count(w, u, "outlet", &w.outs[u], 1, usize::MAX)?;
    Ok(Box::new(Wired { u, p }))
}

impl Draft for Wired {
    fn sets_state(&self, _: usize) -> Option<&'static str> {
        Some("mixing at the header pressure")
    }
    fn outlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        self.p
    }
    fn checks_outlet_p(&self) -> bool {
        true
    }
    fn inlet_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        self.p
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
        Ok(Box::new(Header { p }))
    }
}

/// A validated header.
#[derive(Debug)]
struct Header {
    /// Pressure, MPa.
    p: f64,
}

impl UnitKind for Header {
    fn states(&self, at: At, m: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        let Some(h) = mix(at.ins(), m, st) else {
            return Ok(false);
        };
        for &o in at.outs() {
            st[o] = Some(ph(at.p(o), h).map_err(at.tag())?);
        }
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

    fn flow_hint(&self, at: At, s: usize, undetermined: &[usize]) -> Option<FlowHint> {
        if !at.outs().contains(&s) {
            return None;
        }
        let outlets: Vec<String> = at
            .outs()
            .iter()
            .filter(|o| undetermined.contains(o))
            .map(|&o| at.stream(o).to_string())
            .collect();
        (outlets.len() > 1).then(|| FlowHint::HeaderOutlets {
            unit: at.name().to_string(),
            outlets,
        })
    }

    fn clash_hint(&self, at: At, what: &'static str) -> Option<ClashHint> {
        (what == "mass balance").then(|| ClashHint::HeaderNoFreeOutlet {
            unit: at.name().to_string(),
        })
    }

    fn results(&self, at: At, m: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        let p = self.p;
        for &i in at.ins() {
            if st[i].props.p < p * (1.0 - 1e-9) {
                let q = |x: f64| Arg::from(Quantity::new("p", Dim::Pressure, x));
                out.warn_with(
                    Code::InletBelowHeaderPressure,
                    "stream {} enters at {}, below the header pressure {}: it cannot flow in",
                    &[at.stream(i).into(), q(st[i].props.p), q(p)],
                );
            }
        }
        for &o in at.outs() {
            let to = at.model.streams[o].to;
            if m[o] > VENTING
                && at.boundary_of(to) == Some(Boundary::Sink)
                && st[o].phase != Phase::Liquid
            {
                // priced and warned about with the site costing (`Code::SteamVented`)
                out.lose(
                    at.u,
                    Loss::steam(LossKind::Vented { stream: o }, m[o], st[o].props.h, p),
                );
            }
        }
        if let Some(&o) = at.outs().first() {
            if is_wet(&st[o]) {
                out.warn(
                    Code::WetSteam,
                    format!(
                        "the header steam is wet (x = {:.4}): provide drainage and traps",
                        st[o].x.unwrap_or(0.0)
                    ),
                );
            }
        }
        Ok(())
    }

    fn boundary(&self) -> Option<Boundary> {
        None
    }

    fn reversal(&self, at: At, s: usize, m: &[f64]) -> Option<Reversal> {
        let to = at.model.streams[s].to;
        (at.outs().contains(&s) && at.boundary_of(to) == Some(Boundary::Sink)).then(|| {
            Reversal::HeaderShort {
                header: at.name().to_string(),
                vent: at.stream(s).to_string(),
                by: Amount::mass_flow(-m[s]),
            }
        })
    }

    fn solved_finding(&self, _: At, _: &[State]) -> Option<Finding> {
        None
    }
}
