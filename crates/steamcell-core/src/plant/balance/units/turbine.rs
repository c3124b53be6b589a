//! Turbine: one inlet; outlets (extractions and exhaust) at their stream pressures, expanded
//! section by section in order of falling pressure with one isentropic efficiency, or set by
//! a measured T, h or x on the outlet stream; the shaft power from the enthalpy flows.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: the validated turbine lists its outlets in order of falling pressure, each with
//! its efficiency or its measured state.

use super::{count, fixed_state, h, At, Boundary, Draft, Report, UnitKind};
use crate::error::Result;
use crate::plant::balance::diagnosis::Amount;
use crate::plant::balance::diagnosis::{ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::balance::FixedState;
use crate::plant::components::{self as c, moisture, TurbineSpec};
use crate::plant::warnings::Code;
use crate::plant::{ps, MOISTURE_WARNING};
use crate::water::state::{Phase, State};

struct Wired {
    u: usize,
    inlet: usize,
    outs: Vec<usize>,
    efficiency: Option<f64>,
    power: Option<f64>,
}

pub(super) fn draft(
    w: &Wiring,
    u: usize,
    efficiency: Option<f64>,
    power: Option<f64>,
) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 1, 1)?;
    count(w, u, "outlet", o, 1, usize::MAX)?;
    Ok(Box::new(Wired {
        u,
        inlet: i[0],
        outs: o.clone(),
        efficiency,
        power,
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
    fn default_p(&self, _: usize, _: &Wiring) -> Option<f64> {
        None
    }
    fn validate(&self, w: &Wiring, f: &mut Findings) -> Result<Box<dyn UnitKind>, Refused> {
        // every outlet below the inlet pressure: steam expands through a turbine
        let p_in = w.p[self.inlet];
        let top = self
            .outs
            .iter()
            .map(|&o| w.p[o])
            .fold(f64::NEG_INFINITY, f64::max);
        if p_in.is_finite() && top.is_finite() && top >= p_in {
            f.note(Finding::NoPressureDrop {
                unit: w.unit(self.u),
                upstream: Amount::pressure(p_in),
                downstream: Amount::pressure(top),
            });
        }
        let mut order = self.outs.clone();
        order.sort_by(|&a, &b| w.p[b].total_cmp(&w.p[a]));
        let mut outlets = Vec::with_capacity(order.len());
        let mut open = false;
        for &o in &order {
            match (w.fixed[o], self.efficiency) {
                (Some(x), _) => outlets.push(Outlet {
                    stream: o,
                    state: OutletState::Measured(x),
                }),
                (None, Some(eta)) => outlets.push(Outlet {
                    stream: o,
                    state: OutletState::Expanded(eta),
                }),
                (None, None) => open = true,
            }
        }
        if open {
            let outlets = self
                .outs
                .iter()
                .filter(|&&s| w.fixed[s].is_none())
                .map(|&s| w.stream(s))
                .collect();
            return Err(f.refuse(Finding::MissingTurbineEfficiency {
                unit: w.unit(self.u),
                outlets,
            }));
        }
        Ok(Box::new(Turbine {
            inlet: self.inlet,
            outlets,
            power: self.power,
        }))
    }
}

/// How an outlet's state is found.
#[derive(Debug, Clone, Copy)]
enum OutletState {
    /// From the measured T, h or x on the stream.
    Measured(FixedState),
    /// Expanded from the previous section with this isentropic efficiency.
    Expanded(f64),
}

#[derive(Debug, Clone, Copy)]
struct Outlet {
    stream: usize,
    state: OutletState,
}

/// A validated turbine.
#[derive(Debug)]
struct Turbine {
    inlet: usize,
    /// Extractions and exhaust in order of falling pressure (at least one).
    outlets: Vec<Outlet>,
    power: Option<f64>,
}

impl UnitKind for Turbine {
    fn states(&self, at: At, _: &[f64], st: &mut [Option<State>], _: &mut f64) -> Result<bool> {
        let Some(sin) = st[self.inlet] else {
            return Ok(false);
        };
        let mut prev = sin;
        let mut first = true;
        for o in &self.outlets {
            let po = at.p(o.stream);
            let out = match o.state {
                OutletState::Measured(x) => fixed_state(po, x).map_err(at.tag())?,
                OutletState::Expanded(_) if !first && po >= prev.props.p * (1.0 - 1e-12) => prev,
                OutletState::Expanded(eta) => {
                    c::turbine_expand(&prev, po, TurbineSpec::Efficiency(eta), None)
                        .map_err(at.tag_as(format!("outlet stream {}: ", at.stream(o.stream))))?
                        .outlet
                }
            };
            st[o.stream] = Some(out);
            prev = out;
            first = false;
        }
        Ok(true)
    }

    fn flow_equations(
        &self,
        at: At,
        st: &[Option<State>],
        _: f64,
        bal: &mut Vec<Row>,
        spec: &mut Vec<Row>,
    ) {
        bal.push(at.mass_balance(&[]));
        if let Some(pw) = self.power {
            let mut r = at.value_row("power", "power", Amount::power);
            r.add(self.inlet, h(st, self.inlet));
            for o in &self.outlets {
                r.add(o.stream, -h(st, o.stream));
            }
            r.rhs = pw;
            spec.push(r);
        }
    }

    fn flow_hint(&self, at: At, _: usize, _: &[usize]) -> Option<FlowHint> {
        self.power.is_none().then(|| FlowHint::TurbineFlow {
            unit: at.name().to_string(),
        })
    }

    fn clash_hint(&self, _: At, _: &'static str) -> Option<ClashHint> {
        None
    }

    fn results(&self, at: At, _: &[f64], st: &[State], out: &mut Report) -> Result<()> {
        let pw = out.ei - out.eo;
        out.r.power = Some(pw);
        out.r.balance.energy_out += pw;
        out.t.turbine_power += pw;
        out.link(at.name(), "power", pw, 0.0);
        let sin = st[self.inlet];
        if let Some(exhaust) = self.outlets.last() {
            let last = st[exhaust.stream];
            if last.props.p < sin.props.p {
                let iso = ps(last.props.p, sin.props.s)?;
                out.r.efficiency = Some((sin.props.h - last.props.h) / (sin.props.h - iso.props.h));
            }
        }
        for o in &self.outlets {
            let mo = moisture(&st[o.stream]);
            if mo > MOISTURE_WARNING {
                out.warn(Code::ExhaustMoisture, format!(
                    "outlet {} moisture {:.1} % exceeds about 12 % (common practice): expect blade erosion",
                    at.stream(o.stream),
                    100.0 * mo
                ));
            }
        }
        if sin.phase != Phase::Vapour && sin.phase != Phase::Supercritical {
            out.warn(
                Code::TurbineInletNotSuperheated,
                format!("the inlet is {} (not superheated steam)", sin.phase.name()),
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

    fn solved_finding(&self, at: At, st: &[State]) -> Option<Finding> {
        // each measured section must expand adiabatically from the state entering it: less
        // enthalpy and no less entropy (IAPWS-IF97 states; second law)
        let mut prev = st[self.inlet];
        for o in &self.outlets {
            let so = st[o.stream];
            if let OutletState::Measured(x) = o.state {
                if so.props.p < prev.props.p * (1.0 - 1e-12) {
                    let s_tol = 1e-9 * prev.props.s.abs().max(1.0);
                    if so.props.h >= prev.props.h || so.props.s < prev.props.s - s_tol {
                        let iso = ps(so.props.p, prev.props.s).ok()?;
                        return Some(Finding::MeasuredExpansionImpossible {
                            unit: at.unit_ref(),
                            stream: at.stream(o.stream).to_string(),
                            measured: match x {
                                FixedState::T(_) => "T",
                                FixedState::H(_) => "h",
                                FixedState::X(_) => "x",
                            },
                            inlet_h: Amount::specific_energy(prev.props.h),
                            outlet_h: Amount::specific_energy(so.props.h),
                            efficiency: (prev.props.h - so.props.h) / (prev.props.h - iso.props.h),
                        });
                    }
                }
            }
            prev = so;
        }
        None
    }
}
