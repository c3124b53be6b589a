//! Line: a steam or water distribution line between two units (one inlet; the main outlet and
//! an optional `drain`). At the current inlet state and flow, `pipe::line_flow` marches the
//! line (Darcy-Weisbach, heat loss through its layered wall, condensation) and gives the heat
//! lost Q, the condensate formed, the pressure drop, the velocities and the surface temperature.
//!
//! How the line fits the balance, whose stream pressures are fixed before the flows are known:
//! - its outlet streams' pressures are fixed as any stream's (given on the stream, or by the
//!   destination: a header, a deaerator...); when nothing fixes them they take the line's
//!   inlet pressure. The drop the line needs at its flow is computed and reported
//!   (`pressure_drop`), not imposed: a drop larger than the pressures allow (or above 10 % of
//!   the inlet pressure when the outlet is carried at the inlet pressure) is warned about;
//! - the energy balance holds with the streams' enthalpy flows: the outlet enthalpy is
//!   h_in - Q / m (the kinetic and potential energy the march carries along the line are not
//!   carried by the balance's streams; they are small against h: V = 40 m/s is 0.8 kJ/kg);
//! - with a `drain`, the condensate formed leaves through it as saturated liquid at the
//!   drain's pressure (to a trap, usually) and the main outlet carries the rest; without one
//!   it stays in the steam as moisture.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW; lengths m).
//!
//! Invariant: at the solution the heat lost equals `line_flow`'s heat loss for the solved inlet
//! state and flow exactly, and the line's mass and energy balance closes with it.

use super::{
    count, find_port, tag_field, At, Boundary, Draft, Loss, LossKind, Memo, Report, UnitKind,
};
use crate::error::{Error, Result};
use crate::plant::balance::diagnosis::{Amount, ClashHint, Finding, FlowHint, Reversal};
use crate::plant::balance::dof::Row;
use crate::plant::balance::model::{Findings, Refused, Wiring};
use crate::plant::balance::LineUnit;
use crate::plant::pipe::{self, LineSpec, Surroundings, Wall};
use crate::plant::warnings::{Arg, Code, Quantity};
use crate::plant::{ph, sat_liquid};
use crate::units::Dim;
use crate::water::state::{Phase, State};

struct Wired {
    u: usize,
    inlet: usize,
    main: usize,
    drain: Option<usize>,
    line: LineUnit,
}

/// The line's specification, when its geometry is given.
fn spec_of(l: &LineUnit) -> Option<LineSpec> {
    let (length, d, t) = (l.length?, l.inner_diameter?, l.wall_thickness?);
    let air_t = l.air_t.unwrap_or(293.15);
    Some(LineSpec {
        length,
        roughness: l.roughness.unwrap_or(pipe::ROUGHNESS_STEEL),
        wall: Wall {
            inner_diameter: d,
            thickness: t,
            conductivity: l.wall_conductivity.unwrap_or(pipe::K_STEEL),
            layers: l.layers.clone(),
            emissivity: l.emissivity.unwrap_or(if l.layers.is_empty() {
                pipe::EMISSIVITY_BARE
            } else {
                pipe::EMISSIVITY_INSULATION
            }),
        },
        k_total: l.k_total,
        equivalent_length: l.equivalent_length,
        elevation_change: l.elevation_change,
        friction: l.friction,
        segments: l
            .segments
            .unwrap_or_else(|| pipe::default_segments(length.max(0.0))),
        air: Surroundings {
            air_t,
            air_p: l.air_p.unwrap_or(super::P_ATM),
            wind: l.wind.unwrap_or(0.0),
            radiant_t: l.radiant_t.unwrap_or(air_t),
        },
    })
}

pub(super) fn draft(w: &Wiring, u: usize, l: &LineUnit) -> Result<Box<dyn Draft>> {
    let (i, o) = (&w.ins[u], &w.outs[u]);
    count(w, u, "inlet", i, 1, 1)?;
    count(w, u, "outlet (the line's end, and a drain)", o, 1, 2)?;
    let drain = if o.len() == 2 || l.drain.is_some() {
        Some(find_port(w, u, "drain", l.drain.as_deref(), o)?)
    } else {
        None
    };
    let Some(&main) = o.iter().find(|&&s| Some(s) != drain) else {
        return Err(Error::invalid(format!(
            "line {}: its only outlet is its drain {}; add the stream the line carries on",
            w.un[u], w.sn[o[0]]
        )));
    };
    if let Some(spec) = spec_of(l) {
        pipe::check_spec(&spec).map_err(|e| match e {
            Error::OutOfRange {
                quantity,
                value,
                limit,
                unit,
                bound,
                formulation,
            } => Error::OutOfRange {
                quantity: format!("units.{}.{quantity}", w.un[u]),
                value,
                limit,
                unit,
                bound,
                formulation,
            },
            Error::NotFinite { quantity } => Error::NotFinite {
                quantity: format!("units.{}.{quantity}", w.un[u]),
            },
            other => other,
        })?;
    }
    if let Some(t) = l.touch_limit_t {
        Error::check_finite(&format!("units.{}.touch_limit_T", w.un[u]), t)?;
    }
    Ok(Box::new(Wired {
        u,
        inlet: i[0],
        main,
        drain,
        line: l.clone(),
    }))
}

impl Draft for Wired {
    fn sets_state(&self, s: usize) -> Option<&'static str> {
        Some(if Some(s) == self.drain {
            "saturated liquid (the condensate formed in the line)"
        } else {
            "the heat lost along the line"
        })
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
        let u = self.u;
        let l = &self.line;
        let missing: Vec<&'static str> = [
            ("length", l.length),
            ("inner_diameter", l.inner_diameter),
            ("wall_thickness", l.wall_thickness),
        ]
        .iter()
        .filter(|(_, v)| v.is_none())
        .map(|(n, _)| *n)
        .collect();
        if let Some(d) = self.drain {
            if w.streams[d].flow.is_some() {
                f.note(Finding::FlowSetByUnit {
                    stream: w.stream(d),
                    unit: w.unit(u),
                    by: "the condensate formed in the line",
                });
            }
        }
        let (p_in, p_out) = (w.p[self.inlet], w.p[self.main]);
        if p_in.is_finite() && p_out.is_finite() && p_out > p_in {
            f.note(Finding::NoPressureDrop {
                unit: w.unit(u),
                upstream: Amount::pressure(p_in),
                downstream: Amount::pressure(p_out),
            });
        }
        let Some(spec) = spec_of(l) else {
            return Err(f.refuse(Finding::MissingLineGeometry {
                unit: w.unit(u),
                missing,
            }));
        };
        Ok(Box::new(Line {
            inlet: self.inlet,
            main: self.main,
            drain: self.drain,
            spec,
            touch_limit: l.touch_limit_t.unwrap_or(pipe::TOUCH_LIMIT),
            memo: Memo::default(),
        }))
    }
}

/// What the march gives the balance.
#[derive(Debug, Clone, Copy, PartialEq)]
struct March {
    /// Heat lost, kW.
    q: f64,
    /// Condensate formed per unit of flow.
    condensate_ratio: f64,
    /// Pressure drop, MPa.
    dp: f64,
    /// Highest velocity, m/s.
    v_max: f64,
    /// Highest surface temperature, K.
    surface_t: f64,
    /// Whether the fluid is wet anywhere along the line.
    wet: bool,
}

/// A validated line.
#[derive(Debug)]
struct Line {
    inlet: usize,
    main: usize,
    drain: Option<usize>,
    spec: LineSpec,
    touch_limit: f64,
    memo: Memo<Option<March>>,
}

impl Line {
    /// The march at the inlet state `si` and flow `m` (None without a positive flow).
    fn march(&self, at: At, si: &State, m: f64) -> Result<Option<March>> {
        if m.is_nan() || m <= 0.0 {
            return Ok(None);
        }
        self.memo.get([si.props.p, si.props.h, m], || {
            let r = pipe::line_flow(si, m, &self.spec).map_err(|e| tag_field(at, e))?;
            Ok(Some(March {
                q: r.heat_loss,
                condensate_ratio: r.condensate.unwrap_or(0.0) / m,
                dp: r.pressure_drop,
                v_max: r.max_velocity,
                surface_t: r.max_surface_t,
                wet: r.points.iter().any(|p| p.state.phase == Phase::Wet),
            }))
        })
    }
}

impl UnitKind for Line {
    /// `aux`: the condensate formed per unit of flow at the current state and flow.
    fn states(&self, at: At, m: &[f64], st: &mut [Option<State>], aux: &mut f64) -> Result<bool> {
        let Some(si) = st[self.inlet] else {
            return Ok(false);
        };
        let mi = m[self.inlet];
        // While the flows settle the line may be asked to carry a flow it cannot (the first
        // guess of every flow is 1 kg/s): it then loses nothing for this pass; at the solved
        // flow the result step marches it again and refuses a line that cannot carry it.
        let r = self.march(at, &si, mi).unwrap_or(None);
        let (q, cr) = r.map_or((0.0, 0.0), |r| (r.q, r.condensate_ratio));
        *aux = cr;
        let mut h_main = if mi > 0.0 {
            si.props.h - q / mi
        } else {
            si.props.h
        };
        if let Some(d) = self.drain {
            let sd = sat_liquid(at.p(d)).map_err(at.tag())?;
            let md = cr * mi;
            if mi > 0.0 && md < mi {
                h_main = (mi * si.props.h - q - md * sd.props.h) / (mi - md);
            }
            st[d] = Some(sd);
        }
        st[self.main] = Some(ph(at.p(self.main), h_main).map_err(at.tag())?);
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
        if let Some(d) = self.drain {
            let mut r = at.row("condensate to the drain");
            r.add(d, 1.0);
            r.add(self.inlet, -aux);
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
        let nm = at.name();
        let (mi, si) = (m[self.inlet], st[self.inlet]);
        let r = self.march(at, &si, mi)?;
        let q = r.map_or(0.0, |r| r.q);
        let condensate = r.map_or(0.0, |r| r.condensate_ratio * mi);
        out.r.duty = Some(q);
        out.r.balance.energy_out += q;
        out.t.line_heat_loss += q;
        out.t.line_condensate += condensate;
        out.link(nm, "losses", q, 0.0);
        let mut l = Loss::steam(LossKind::Line, 0.0, si.props.h, si.props.p);
        l.heat = q;
        l.condensate = condensate;
        l.pressure_drop = r.map(|r| r.dp);
        l.velocity = r.map(|r| r.v_max);
        l.surface_t = r.map(|r| r.surface_t);
        out.lose(at.u, l);
        let Some(r) = r else {
            // A line without flow; its standing heat loss
            // is not counted (common practice, no source)
            out.warn(Code::LineNoFlow, "it carries no flow: the heat a line holding pressure loses without flow is not counted");
            return Ok(());
        };
        let p_in = si.props.p;
        let available = p_in - st[self.main].props.p;
        let dp = |x: f64| Arg::from(Quantity::new("pressure_drop", Dim::PressureDifference, x));
        let flow = |x: f64| Arg::from(Quantity::new("flow", Dim::MassFlow, x));
        if available > 1e-12 * p_in {
            if r.dp > available {
                // The line needs a larger
                // drop at its flow than the pressures at its ends allow (Darcy-Weisbach march)
                out.warn_with(
                    Code::LineDropExceedsAvailable,
                    "it needs a pressure drop of {} to carry {} but only {} lie between its ends: the pressure downstream cannot be held at this flow (a larger line, or a higher pressure upstream)",
                    &[dp(r.dp), flow(mi), dp(available)],
                );
            }
        } else if r.dp > 0.1 * p_in {
            // The drop exceeds 10 % of the
            // inlet pressure (common practice, no source); the balance carries the outlet at
            // the inlet pressure
            out.warn_with(
                Code::PressureDropHigh,
                &format!("it loses {:.1} % of its inlet pressure {{}} ({{}}) at this flow, which the balance does not impose (its outlet is carried at the inlet pressure): consider a larger line", 100.0 * r.dp / p_in),
                &[Quantity::new("p", Dim::Pressure, p_in).into(), dp(r.dp)],
            );
        }
        let (limit, _, what) = pipe::velocity_limit(si.phase == Phase::Liquid, r.wet);
        if r.v_max > limit {
            // Velocity above the good-practice
            // range (common practice, no source; the limits of pipe.flow)
            let v = |x: f64| Arg::from(Quantity::new("velocity", Dim::Speed, x));
            out.warn_with(
                Code::VelocityHigh,
                &format!("the velocity reaches {{}}, above about {{}} for {what}: expect noise, erosion and a large pressure drop (common practice, no source)"),
                &[v(r.v_max), v(limit)],
            );
        }
        if r.surface_t > self.touch_limit {
            // The outer surface is above the touch
            // limit (default 60 degC; common practice, no source)
            out.warn_with(
                Code::SurfaceAboveTouchLimit,
                "its surface reaches {}, above the touch limit {}: personnel protection (insulation, guards) is needed where it can be touched (common practice; follow local codes)",
                &[
                    Quantity::new("surface_T", Dim::Temperature, r.surface_t).into(),
                    Quantity::new("touch_limit_T", Dim::Temperature, self.touch_limit).into(),
                ],
            );
        }
        if self.drain.is_none() && condensate > 0.0 {
            // Condensate forms in a line
            // without a drain; it is carried on as moisture (common practice, no source)
            out.warn_with(
                Code::LineCondensate,
                "{} of condensate forms and is carried on as moisture: drain it (a drain stream to a trap) at low points and before users",
                &[Quantity::new("condensate", Dim::MassFlow, condensate).into()],
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
