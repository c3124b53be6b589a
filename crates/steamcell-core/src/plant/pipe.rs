//! A steam or water line: pressure drop (Darcy-Weisbach with a named friction factor, fittings,
//! elevation, acceleration), heat loss through a layered wall (pipe, insulation layers, jacket) to
//! still or moving air by convection and radiation, and the state along the line, marched in
//! segments so that density, velocity and condensation are followed.
//!
//! Units: p MPa, T K, h kJ/kg; lengths m; velocities m/s; flow kg/s; heat kW (per length kW/m);
//! conductivities W/(m K); heat-transfer coefficients W/(m2 K).
//!
//! Model, per segment of length dx between states 1 and 2 (solved together by fixed-point
//! iteration to round-off), for the homogeneous flow of mass flux G = m / A:
//! - energy: h2 + V2^2/2 + g z2 = h1 + V1^2/2 + g z1 - Q/m, Q = dx (q'1 + q'2)/2 (trapezoidal);
//! - momentum: p1 - p2 = dx (1 + Le/L) (f1 G^2/(2 D rho1) + f2 G^2/(2 D rho2))/2 (Darcy-Weisbach)
//!   + (K dx/L) (G^2/(2 rho1) + G^2/(2 rho2))/2 (fittings, spread evenly along the line)
//!   + g dz (rho1 + rho2)/2 (elevation) + G^2 (1/rho2 - 1/rho1) (acceleration).
//!
//! The heat loss per length q' at a fluid temperature: series resistances (inside film by
//! Gnielinski for single-phase flow, none for a wet mixture; pipe wall; each insulation layer;
//! the jacket) and, outside, convection (Churchill-Chu in still air, combined with
//! Churchill-Bernstein in wind) plus grey radiation to surroundings, solved for the surface
//! temperature. The outside is treated as a horizontal cylinder whatever the line's slope.
//!
//! Invariant: the energy balance of the whole line closes to round-off (each segment's outlet
//! enthalpy is the one its energy equation gives); a line whose pressure is used up, or whose
//! flow reaches the speed of sound, is refused with the length reached.

use super::correlations::{self as cor, FrictionModel};
use super::{ph, Balance};
use crate::error::{Bound, Error, Result};
use crate::plant::warnings::{Arg, Code, Quantity, Warning};
use crate::units::Dim;
use crate::water::state::{self, Phase, State};
use crate::water::transport;
use crate::water::Formulation;

/// Standard acceleration of gravity, m/s2.
pub use super::components::G0;

/// Default absolute roughness of commercial steel pipe, m (0.045 mm; the value of Moody's chart,
/// L. F. Moody, Trans. ASME 66 (1944) 671-684; from memory).
pub const ROUGHNESS_STEEL: f64 = 0.045e-3;

/// Default conductivity of a carbon-steel pipe wall, W/(m K) (about 50; common practice, no
/// source).
pub const K_STEEL: f64 = 50.0;

/// Default emissivity of a bare (oxidised) steel pipe (0.8; common practice, no source).
pub const EMISSIVITY_BARE: f64 = 0.8;

/// Default emissivity of the outer surface of insulation without a metal jacket (cloth, mastic
/// or paint: 0.9; common practice, no source). Bright aluminium jackets are near 0.1.
pub const EMISSIVITY_INSULATION: f64 = 0.9;

/// Highest surface temperature commonly accepted for personnel protection, K (60 degC; common
/// practice, no source: a widely used touch limit for hot surfaces in reach; standards such as
/// ASTM C1055 relate the limit to the contact time and the surface material, from memory).
pub const TOUCH_LIMIT: f64 = 333.15;

/// Velocity above which a saturated or wet steam line is warned about, m/s (25 to 40 m/s is the
/// usual range for saturated steam mains; common practice, no source).
pub const V_MAX_SATURATED: f64 = 40.0;
/// Velocity above which a superheated steam line is warned about, m/s (35 to 60 m/s is usual;
/// common practice, no source).
pub const V_MAX_SUPERHEATED: f64 = 60.0;
/// Velocity above which a water line is warned about, m/s (1 to 3 m/s is usual for water and
/// feed lines; above it erosion, noise and water hammer grow; common practice, no source).
pub const V_MAX_WATER: f64 = 3.0;

/// Most segments a line may be divided into.
pub const SEGMENTS_MAX: usize = 100_000;

/// One layer of insulation (or a jacket).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Layer {
    /// Thickness, m (> 0).
    pub thickness: f64,
    /// Thermal conductivity at the layer's mean temperature, W/(m K) (> 0).
    pub conductivity: f64,
}

/// The air around the line.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Surroundings {
    /// Air temperature, K.
    pub air_t: f64,
    /// Air pressure, MPa.
    pub air_p: f64,
    /// Wind speed across the line, m/s (0: still air).
    pub wind: f64,
    /// Temperature of the surroundings the surface radiates to, K.
    pub radiant_t: f64,
}

/// The cross-section of the line from the inside out.
#[derive(Debug, Clone, PartialEq)]
pub struct Wall {
    /// Inner diameter, m.
    pub inner_diameter: f64,
    /// Pipe wall thickness, m.
    pub thickness: f64,
    /// Pipe wall conductivity, W/(m K).
    pub conductivity: f64,
    /// Insulation layers from the pipe outwards (empty: bare), the jacket last if any.
    pub layers: Vec<Layer>,
    /// Emissivity of the outermost surface.
    pub emissivity: f64,
}

impl Wall {
    /// Outer diameter of the outermost layer, m.
    pub fn outer_diameter(&self) -> f64 {
        self.inner_diameter
            + 2.0 * (self.thickness + self.layers.iter().map(|l| l.thickness).sum::<f64>())
    }

    /// Conduction resistance per length from the inner surface to the outer surface, K m / W.
    pub fn conduction_resistance(&self) -> f64 {
        let tau = 2.0 * std::f64::consts::PI;
        let mut r = self.inner_diameter / 2.0;
        let mut sum = (1.0 + self.thickness / r).ln() / (tau * self.conductivity);
        r += self.thickness;
        for l in &self.layers {
            sum += (1.0 + l.thickness / r).ln() / (tau * l.conductivity);
            r += l.thickness;
        }
        sum
    }
}

/// The heat loss of one cross-section.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WallHeat {
    /// Heat loss per length, kW/m (negative for a heat gain).
    pub q: f64,
    /// Outer surface temperature, K.
    pub surface_t: f64,
    /// Outside convection coefficient, W/(m2 K).
    pub h_convection: f64,
    /// Outside radiation coefficient (linearised), W/(m2 K).
    pub h_radiation: f64,
    /// Inside film coefficient, W/(m2 K) (infinite for a wet mixture).
    pub h_inside: f64,
}

/// Outside convection coefficient of a horizontal cylinder of diameter `d` at surface
/// temperature `ts`, W/(m2 K): Churchill-Chu (natural) combined with Churchill-Bernstein (wind),
/// air properties at the film temperature.
pub fn outside_convection(d: f64, ts: f64, air: &Surroundings) -> f64 {
    let tf = 0.5 * (ts + air.air_t);
    let a = cor::air(tf, air.air_p * 1e6);
    let ra = G0 * a.beta * (ts - air.air_t).abs() * d.powi(3) / (a.nu * a.alpha);
    let nu_n = cor::churchill_chu_horizontal(ra, a.pr);
    let nu = if air.wind > 0.0 {
        let re = air.wind * d / a.nu;
        cor::mixed_convection(cor::churchill_bernstein(re, a.pr), nu_n)
    } else {
        nu_n
    };
    nu * a.k / d
}

/// Heat loss per length of a section with the fluid at `fluid_t` (K) and an inside film
/// coefficient `h_inside` (W/(m2 K), infinite for none).
pub fn wall_heat(fluid_t: f64, h_inside: f64, wall: &Wall, air: &Surroundings) -> Result<WallHeat> {
    let tau = 2.0 * std::f64::consts::PI;
    let r_in = if h_inside.is_finite() {
        1.0 / (h_inside * tau * wall.inner_diameter / 2.0)
    } else {
        0.0
    };
    let r_wall = r_in + wall.conduction_resistance();
    let d_o = wall.outer_diameter();
    let outside = |ts: f64| {
        let hc = outside_convection(d_o, ts, air);
        let hr = cor::radiation_coefficient(wall.emissivity, ts, air.radiant_t);
        (
            std::f64::consts::PI * d_o * (hc * (ts - air.air_t) + hr * (ts - air.radiant_t)),
            hc,
            hr,
        )
    };
    // f(ts) = conducted - released decreases with ts; bracket between the coldest and hottest
    // temperature in play.
    let f = |ts: f64| (fluid_t - ts) / r_wall - outside(ts).0;
    let mut lo = fluid_t.min(air.air_t).min(air.radiant_t);
    let mut hi = fluid_t.max(air.air_t).max(air.radiant_t);
    let (mut flo, mut fhi) = (f(lo), f(hi));
    if !(flo.is_finite() && fhi.is_finite()) {
        return Err(Error::not_converged("pipe surface temperature", 0));
    }
    let mut ts = 0.5 * (lo + hi);
    if flo * fhi > 0.0 {
        ts = if flo.abs() < fhi.abs() { lo } else { hi };
    } else {
        for _ in 0..200 {
            ts = 0.5 * (lo + hi);
            let fm = f(ts);
            if fm == 0.0 || (hi - lo) < 1e-11 * hi {
                break;
            }
            if (fm > 0.0) == (flo > 0.0) {
                lo = ts;
                flo = fm;
            } else {
                hi = ts;
                fhi = fm;
            }
        }
        let _ = fhi;
    }
    let (_, hc, hr) = outside(ts);
    Ok(WallHeat {
        q: (fluid_t - ts) / r_wall / 1e3,
        surface_t: ts,
        h_convection: hc,
        h_radiation: hr,
        h_inside,
    })
}

/// What the line is.
#[derive(Debug, Clone, PartialEq)]
pub struct LineSpec {
    /// Length, m.
    pub length: f64,
    /// Absolute roughness of the inner surface, m.
    pub roughness: f64,
    /// The cross-section as it runs (bare: no layers).
    pub wall: Wall,
    /// Sum of the fittings' loss coefficients K (velocity heads).
    pub k_total: f64,
    /// Sum of the fittings' equivalent lengths, m (friction only).
    pub equivalent_length: f64,
    /// Elevation of the outlet above the inlet, m.
    pub elevation_change: f64,
    /// Friction-factor correlation.
    pub friction: FrictionModel,
    /// Number of segments.
    pub segments: usize,
    /// The air around the line.
    pub air: Surroundings,
}

/// One point of the line's profile.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Point {
    /// Distance from the inlet, m.
    pub x: f64,
    /// State.
    pub state: State,
    /// Velocity, m/s.
    pub velocity: f64,
    /// Heat loss per length here, kW/m.
    pub q: f64,
    /// Outer surface temperature, K.
    pub surface_t: f64,
    /// Reynolds number of the flow.
    pub reynolds: f64,
    /// Darcy friction factor.
    pub friction_factor: f64,
}

/// Result of `line_flow`.
#[derive(Debug, Clone, PartialEq)]
pub struct LineResult {
    /// Inlet state.
    pub inlet: State,
    /// Outlet state.
    pub outlet: State,
    /// Profile, inlet to outlet (segments + 1 points).
    pub points: Vec<Point>,
    /// Pressure drop p_in - p_out, MPa.
    pub pressure_drop: f64,
    /// Parts of the drop: friction along the pipe and equivalent lengths, MPa.
    pub dp_friction: f64,
    /// Part of the drop due to the K values of fittings, MPa.
    pub dp_fittings: f64,
    /// Part of the drop due to elevation, MPa.
    pub dp_elevation: f64,
    /// Part of the drop due to acceleration, MPa.
    pub dp_acceleration: f64,
    /// Heat lost along the line, kW.
    pub heat_loss: f64,
    /// Condensate formed in a steam line, kg/s (None for a line whose inlet is liquid).
    pub condensate: Option<f64>,
    /// Highest outer surface temperature, K.
    pub max_surface_t: f64,
    /// Highest velocity, m/s.
    pub max_velocity: f64,
    /// Whether any segment was in laminar-turbulent transition (2300 < Re < 4000).
    pub transitional: bool,
    /// Balance: inlet enthalpy, kinetic and potential energy in; the outlet's and the heat lost out.
    pub balance: Balance,
}

fn moisture(st: &State) -> f64 {
    match st.phase {
        Phase::Liquid => 1.0,
        Phase::Wet => 1.0 - st.x.unwrap_or(0.0),
        Phase::Vapour | Phase::Supercritical => 0.0,
    }
}

/// Viscosity of a state, Pa s (McAdams' homogeneous mixture rule for a wet state).
pub fn viscosity_of(st: &State) -> Result<f64> {
    if st.phase == Phase::Wet {
        let (_, l, v) = state::saturation_p(st.props.p)?;
        let mu_f = transport::transport_industrial(l.rho, l.t, l.cp, l.cv, l.kappa_t).mu;
        let mu_g = transport::transport_industrial(v.rho, v.t, v.cp, v.cv, v.kappa_t).mu;
        Ok(cor::mcadams_viscosity(st.x.unwrap_or(0.0), mu_f, mu_g))
    } else {
        Ok(transport::for_state(st, Formulation::If97).mu)
    }
}

struct Local {
    st: State,
    v: f64,
    f: f64,
    re: f64,
    heat: WallHeat,
}

fn local(st: State, g: f64, spec: &LineSpec) -> Result<Local> {
    let d = spec.wall.inner_diameter;
    let mu = viscosity_of(&st)?;
    let re = g * d / mu;
    let f = cor::friction_factor(spec.friction, re, spec.roughness / d)?;
    let h_in = if st.phase == Phase::Wet {
        f64::INFINITY
    } else {
        let tr = transport::for_state(&st, Formulation::If97);
        cor::tube_nusselt(re, tr.pr) * tr.lambda / d
    };
    let heat = wall_heat(st.props.t, h_in, &spec.wall, &spec.air)?;
    Ok(Local {
        v: g / st.props.rho,
        st,
        f,
        re,
        heat,
    })
}

fn check_positive(name: &str, x: f64, what: &str) -> Result<()> {
    Error::check_finite(name, x)?;
    if x <= 0.0 {
        return Err(Error::out_of_range(name, x, 0.0, "m", Bound::Below, what));
    }
    Ok(())
}

/// Checks a line's geometry and surroundings (each quantity named, internal units).
pub fn check_spec(spec: &LineSpec) -> Result<()> {
    check_positive(
        "length",
        spec.length,
        "a line (the length must be positive)",
    )?;
    let w = &spec.wall;
    check_positive(
        "inner_diameter",
        w.inner_diameter,
        "a pipe (the diameter must be positive)",
    )?;
    check_positive(
        "wall_thickness",
        w.thickness,
        "a pipe wall (the thickness must be positive)",
    )?;
    Error::check_finite("roughness", spec.roughness)?;
    if spec.roughness < 0.0 {
        return Err(Error::out_of_range(
            "roughness",
            spec.roughness,
            0.0,
            "m",
            Bound::Below,
            "a pipe (the roughness cannot be negative)",
        ));
    }
    if spec.roughness > w.inner_diameter / 2.0 {
        return Err(Error::out_of_range(
            "roughness",
            spec.roughness,
            w.inner_diameter / 2.0,
            "m",
            Bound::Above,
            "a pipe (the roughness cannot exceed the inner radius)",
        ));
    }
    Error::check_finite("wall_conductivity", w.conductivity)?;
    if w.conductivity <= 0.0 {
        return Err(Error::out_of_range(
            "wall_conductivity",
            w.conductivity,
            0.0,
            "W/(m K)",
            Bound::Below,
            "a conductivity (it must be positive)",
        ));
    }
    for (i, l) in w.layers.iter().enumerate() {
        check_positive(
            &format!("insulation[{i}].thickness"),
            l.thickness,
            "an insulation layer (a layer must have a thickness)",
        )?;
        Error::check_finite(&format!("insulation[{i}].conductivity"), l.conductivity)?;
        if l.conductivity <= 0.0 {
            return Err(Error::out_of_range(
                &format!("insulation[{i}].conductivity"),
                l.conductivity,
                0.0,
                "W/(m K)",
                Bound::Below,
                "a conductivity (it must be positive)",
            ));
        }
    }
    Error::check_finite("emissivity", w.emissivity)?;
    if !(0.0..=1.0).contains(&w.emissivity) {
        return Err(Error::out_of_range(
            "emissivity",
            w.emissivity,
            if w.emissivity < 0.0 { 0.0 } else { 1.0 },
            "1",
            if w.emissivity < 0.0 {
                Bound::Below
            } else {
                Bound::Above
            },
            "an emissivity (0 to 1)",
        ));
    }
    for (name, x) in [
        ("K", spec.k_total),
        ("equivalent_length", spec.equivalent_length),
    ] {
        Error::check_finite(name, x)?;
        if x < 0.0 {
            return Err(Error::out_of_range(
                name,
                x,
                0.0,
                if name == "K" { "1" } else { "m" },
                Bound::Below,
                "a fitting (losses cannot be negative)",
            ));
        }
    }
    Error::check_finite("elevation_change", spec.elevation_change)?;
    if spec.elevation_change.abs() > spec.length {
        return Err(Error::out_of_range(
            "elevation_change",
            spec.elevation_change.abs(),
            spec.length,
            "m",
            Bound::Above,
            "a line (it cannot rise or fall more than its length)",
        ));
    }
    let a = &spec.air;
    for (name, t) in [("air_T", a.air_t), ("surroundings_T", a.radiant_t)] {
        Error::check_finite(name, t)?;
        if !(200.0..=400.0).contains(&t) {
            return Err(Error::out_of_range(
                name,
                t,
                if t < 200.0 { 200.0 } else { 400.0 },
                "K",
                if t < 200.0 {
                    Bound::Below
                } else {
                    Bound::Above
                },
                "the air-property correlations used (200 K to 400 K)",
            ));
        }
    }
    Error::check_finite("wind_speed", a.wind)?;
    if a.wind < 0.0 {
        return Err(Error::out_of_range(
            "wind_speed",
            a.wind,
            0.0,
            "m/s",
            Bound::Below,
            "a wind speed",
        ));
    }
    if spec.segments == 0 || spec.segments > SEGMENTS_MAX {
        return Err(Error::out_of_range(
            "segments",
            spec.segments as f64,
            if spec.segments == 0 {
                1.0
            } else {
                SEGMENTS_MAX as f64
            },
            "1",
            if spec.segments == 0 {
                Bound::Below
            } else {
                Bound::Above
            },
            "a line's division",
        ));
    }
    Ok(())
}

struct Seg<'a> {
    g: f64,
    flow: f64,
    fric_scale: f64,
    spec: &'a LineSpec,
}

impl Seg<'_> {
    /// One segment of length `dx` (rise `dz`, fittings `k`) from `cur` (solved from enthalpy
    /// `h1`): the end state and [friction, fittings, elevation, acceleration (Pa), heat (kW), the
    /// end's enthalpy]. An error means the march cannot go this far (pressure used up, sonic,
    /// out of the formulation's range).
    fn step(&self, cur: &Local, h1: f64, dx: f64, dz: f64, k: f64) -> Result<(Local, [f64; 6])> {
        let (g, d) = (self.g, self.spec.wall.inner_diameter);
        let p1 = cur.st.props.p;
        let rho1 = cur.st.props.rho;
        let mut nxt = local(cur.st, g, self.spec)?;
        for _ in 0..200 {
            let rho2 = nxt.st.props.rho;
            let q_seg = dx * 0.5 * (cur.heat.q + nxt.heat.q);
            let h2 = h1 + (cur.v * cur.v - nxt.v * nxt.v) / 2000.0
                - G0 * dz / 1000.0
                - q_seg / self.flow;
            let f_part = dx
                * self.fric_scale
                * 0.5
                * (cur.f * g * g / (2.0 * d * rho1) + nxt.f * g * g / (2.0 * d * rho2));
            let k_part = k * 0.5 * (g * g / (2.0 * rho1) + g * g / (2.0 * rho2));
            let e_part = G0 * dz * 0.5 * (rho1 + rho2);
            let a_part = g * g * (1.0 / rho2 - 1.0 / rho1);
            let p2 = p1 - (f_part + k_part + e_part + a_part) / 1e6;
            if p2.is_nan() || p2 <= state::P_MIN {
                return Err(Error::infeasible("the pressure falls to zero"));
            }
            let st2 = ph(p2, h2)?;
            let done = (st2.props.p - nxt.st.props.p).abs() <= 1e-13 * p2
                && (st2.props.h - nxt.st.props.h).abs() <= 1e-13 * h2.abs().max(1.0);
            nxt = local(st2, g, self.spec)?;
            if done {
                if nxt.st.phase != Phase::Wet && nxt.v >= nxt.st.props.w {
                    return Err(Error::infeasible("the velocity reaches the speed of sound"));
                }
                return Ok((nxt, [f_part, k_part, e_part, a_part, q_seg, h2]));
            }
        }
        Err(Error::not_converged(
            "the segment's momentum and energy balance",
            200,
        ))
    }
}

/// Marches the flow `flow` (kg/s) from `inlet` along the line.
pub fn line_flow(inlet: &State, flow: f64, spec: &LineSpec) -> Result<LineResult> {
    check_spec(spec)?;
    Error::check_finite("flow", flow)?;
    if flow <= 0.0 {
        return Err(Error::out_of_range(
            "flow",
            flow,
            0.0,
            "kg/s",
            Bound::Below,
            "a line (give a positive flow)",
        ));
    }
    let d = spec.wall.inner_diameter;
    let area = std::f64::consts::PI * d * d / 4.0;
    let g = flow / area;
    let n = spec.segments;
    let dx = spec.length / n as f64;
    let dz = spec.elevation_change / n as f64;
    let fric_scale = 1.0 + spec.equivalent_length / spec.length;
    let k_per_seg = spec.k_total / n as f64;

    let first = local(*inlet, g, spec)?;
    let mut points = vec![Point {
        x: 0.0,
        state: first.st,
        velocity: first.v,
        q: first.heat.q,
        surface_t: first.heat.surface_t,
        reynolds: first.re,
        friction_factor: first.f,
    }];
    let mut cur = first;
    let (mut dpf, mut dpk, mut dpe, mut dpa, mut heat) = (0.0, 0.0, 0.0, 0.0, 0.0);
    let mut transitional = false;
    // The enthalpy each state was solved from: carried exactly so that the (p, h) solver's own
    // tolerance does not add up along the line.
    let mut h1 = inlet.props.h;
    let seg = Seg {
        g,
        flow,
        fric_scale,
        spec,
    };
    for i in 0..n {
        let x_start = dx * i as f64;
        let x_end = dx * (i + 1) as f64;
        let (nxt, parts) = match seg.step(&cur, h1, dx, dz, k_per_seg) {
            Ok(ok) => ok,
            Err(cause) => {
                // Find how far into this segment the march still goes, for the message.
                let (mut lo, mut hi) = (0.0, 1.0);
                for _ in 0..30 {
                    let th = 0.5 * (lo + hi);
                    if seg.step(&cur, h1, th * dx, th * dz, th * k_per_seg).is_ok() {
                        lo = th;
                    } else {
                        hi = th;
                    }
                }
                return Err(Error::out_of_range(
                    "length",
                    spec.length,
                    x_start + lo * dx,
                    "m",
                    Bound::Above,
                    &format!("this line at this flow: the flow chokes or its pressure is used up at that distance from the inlet ({cause})"),
                ));
            }
        };
        dpf += parts[0];
        dpk += parts[1];
        dpe += parts[2];
        dpa += parts[3];
        heat += parts[4];
        h1 = parts[5];
        transitional |= nxt.re > cor::RE_LAMINAR && nxt.re < cor::RE_TURBULENT;
        points.push(Point {
            x: x_end,
            state: nxt.st,
            velocity: nxt.v,
            q: nxt.heat.q,
            surface_t: nxt.heat.surface_t,
            reynolds: nxt.re,
            friction_factor: nxt.f,
        });
        cur = nxt;
    }
    transitional |= points[0].reynolds > cor::RE_LAMINAR && points[0].reynolds < cor::RE_TURBULENT;
    let outlet = cur.st;
    let v_in = points[0].velocity;
    let condensate = (inlet.phase != Phase::Liquid)
        .then(|| flow * (moisture(&outlet) - moisture(inlet)).max(0.0));
    Ok(LineResult {
        inlet: *inlet,
        outlet,
        pressure_drop: inlet.props.p - outlet.props.p,
        dp_friction: dpf / 1e6,
        dp_fittings: dpk / 1e6,
        dp_elevation: dpe / 1e6,
        dp_acceleration: dpa / 1e6,
        heat_loss: heat,
        condensate,
        max_surface_t: points
            .iter()
            .map(|p| p.surface_t)
            .fold(f64::NEG_INFINITY, f64::max),
        max_velocity: points.iter().map(|p| p.velocity).fold(0.0, f64::max),
        transitional,
        balance: Balance {
            mass_in: flow,
            mass_out: flow,
            energy_in: flow * (inlet.props.h + v_in * v_in / 2000.0),
            energy_out: flow
                * (outlet.props.h + cur.v * cur.v / 2000.0 + G0 * spec.elevation_change / 1000.0)
                + heat,
        },
        points,
    })
}

/// The default number of segments of a line of `length` m: one per 5 m, at least 40, at most
/// 4000 (halving the segment length from there changes the pressure drop, heat loss and outlet
/// enthalpy of the tested lines by far less than 1e-4 relative).
pub fn default_segments(length: f64) -> usize {
    ((length / 5.0).ceil() as usize).clamp(40, 4000)
}

/// The velocity limit of a line ([`V_MAX_WATER`], [`V_MAX_SATURATED`] or
/// [`V_MAX_SUPERHEATED`], m/s), the usual range below it (m/s) and the line's name, from its
/// inlet phase and whether it runs wet anywhere.
pub fn velocity_limit(liquid: bool, wet: bool) -> (f64, (f64, f64), &'static str) {
    if liquid {
        (V_MAX_WATER, (1.0, 3.0), "a water line")
    } else if wet {
        (
            V_MAX_SATURATED,
            (25.0, 40.0),
            "a saturated or wet steam line",
        )
    } else {
        (V_MAX_SUPERHEATED, (35.0, 60.0), "a superheated steam line")
    }
}

/// Mach number above which a steam line is warned about (0.3, the usual incompressibility
/// limit; common practice, no source).
pub const MACH_WARNING: f64 = 0.3;

/// The warnings of a marched line `r` (pipe.flow): its surface above `touch_limit` (K; `built`
/// names the surface, "bare" or "insulated"), a velocity above [`velocity_limit`],
/// laminar-turbulent transition, water flashing, condensate in a steam line, a pressure drop
/// above 10 % of the inlet pressure, a Mach number above [`MACH_WARNING`]. Their values are
/// [`Quantity`]s, stated in the caller's units by the API.
pub fn line_warnings(r: &LineResult, built: &str, touch_limit: f64) -> Vec<Warning> {
    let mut w = Vec::new();
    let steam = r.inlet.phase != Phase::Liquid;
    if r.max_surface_t > touch_limit {
        w.push(Warning::with(
            Code::SurfaceAboveTouchLimit,
            &format!("the {built} surface reaches {{}} above the touch limit {{}}: personnel protection (insulation, guards) is needed where it can be touched (common practice; follow local codes)"),
            &[
                Quantity::new("surface_T", Dim::Temperature, r.max_surface_t).into(),
                Quantity::new("touch_limit_T", Dim::Temperature, touch_limit).into(),
            ],
        ));
    }
    let wet = r.points.iter().any(|pt| pt.state.phase == Phase::Wet);
    let (limit, (lo, hi), what) = velocity_limit(!steam, wet);
    if r.max_velocity > limit {
        let v = |x: f64| Arg::from(Quantity::new("velocity", Dim::Speed, x));
        w.push(Warning::with(
            Code::VelocityHigh,
            &format!("the velocity reaches {{}} above about {{}} for {what} ({{}} to {{}} is usual): expect noise, erosion and a large pressure drop (common practice, no source)"),
            &[v(r.max_velocity), v(limit), v(lo), v(hi)],
        ));
    }
    if r.transitional {
        w.push(Warning::new(Code::TransitionalFlow, "the flow is in laminar-turbulent transition (2300 < Re < 4000) somewhere along the line: the friction factor there is an interpolation and uncertain"));
    }
    if !steam && r.outlet.phase == Phase::Wet {
        w.push(Warning::new(Code::LineFlashing, format!(
            "the water flashes in the line (outlet quality {:.4}): the line runs two-phase, with the risk of water hammer",
            r.outlet.x.unwrap_or(0.0)
        )));
    }
    if let Some(c) = r.condensate.filter(|&c| steam && c > 0.0) {
        w.push(Warning::with(
            Code::LineCondensate,
            "{} of condensate forms along the line: drain it with traps at low points (the calculation carries it along with the steam, homogeneously)",
            &[Quantity::new("condensate", Dim::MassFlow, c).into()],
        ));
    }
    if r.pressure_drop > 0.1 * r.inlet.props.p {
        w.push(Warning::with(
            Code::PressureDropHigh,
            &format!(
                "the pressure drop {{}} is {:.1} % of the inlet pressure {{}}: consider a larger line (common practice, no source)",
                100.0 * r.pressure_drop / r.inlet.props.p
            ),
            &[
                Quantity::new("pressure_drop", Dim::PressureDifference, r.pressure_drop).into(),
                Quantity::new("p", Dim::Pressure, r.inlet.props.p).into(),
            ],
        ));
    }
    if steam && r.inlet.phase == Phase::Vapour {
        let mach = r
            .points
            .iter()
            .filter(|pt| pt.state.props.w.is_finite())
            .map(|pt| pt.velocity / pt.state.props.w)
            .fold(0.0, f64::max);
        if mach > MACH_WARNING {
            w.push(Warning::new(Code::MachHigh, format!("the Mach number reaches {mach:.2}: the flow is strongly compressible; check the outlet pressure against the choking limit")));
        }
    }
    w
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plant::pt;

    fn air() -> Surroundings {
        Surroundings {
            air_t: 293.15,
            air_p: 0.101325,
            wind: 0.0,
            radiant_t: 293.15,
        }
    }

    #[test]
    fn bare_loses_more_than_insulated() {
        let bare = Wall {
            inner_diameter: 0.1023,
            thickness: 0.00602,
            conductivity: K_STEEL,
            layers: vec![],
            emissivity: EMISSIVITY_BARE,
        };
        let ins = Wall {
            layers: vec![Layer {
                thickness: 0.05,
                conductivity: 0.04,
            }],
            emissivity: EMISSIVITY_INSULATION,
            ..bare.clone()
        };
        let qb = wall_heat(453.15, f64::INFINITY, &bare, &air()).unwrap();
        let qi = wall_heat(453.15, f64::INFINITY, &ins, &air()).unwrap();
        assert!(qb.q > 5.0 * qi.q, "{} {}", qb.q, qi.q);
        assert!(qi.surface_t < 313.15 && qi.surface_t > 293.15);
        // the surface balance holds
        let d = ins.outer_diameter();
        let out =
            std::f64::consts::PI * d * (qi.h_convection + qi.h_radiation) * (qi.surface_t - 293.15)
                / 1e3;
        assert!((out - qi.q).abs() < 1e-9 * qi.q);
    }

    #[test]
    fn water_line_closes() {
        let inlet = pt(0.5, 353.15).unwrap();
        let spec = LineSpec {
            length: 100.0,
            roughness: ROUGHNESS_STEEL,
            wall: Wall {
                inner_diameter: 0.0525,
                thickness: 0.0039,
                conductivity: K_STEEL,
                layers: vec![],
                emissivity: EMISSIVITY_BARE,
            },
            k_total: 2.0,
            equivalent_length: 0.0,
            elevation_change: 5.0,
            friction: FrictionModel::Colebrook,
            segments: 40,
            air: air(),
        };
        let r = line_flow(&inlet, 4.0, &spec).unwrap();
        assert!(r.balance.energy_residual() < 1e-9, "{:?}", r.balance);
        assert!(r.pressure_drop > 0.0);
        let sum = r.dp_friction + r.dp_fittings + r.dp_elevation + r.dp_acceleration;
        assert!((sum - r.pressure_drop).abs() < 1e-12);
    }
}
