//! Flow of steam, water or a wet mixture through a sharp-edged hole or a nozzle (a leak, a failed
//! steam trap, a restriction orifice) from an upstream state to a downstream pressure.
//!
//! Units: p MPa, T K, h kJ/kg, s kJ/(kg K), diameters m, velocities m/s, mass flux kg/(m2 s),
//! flow kg/s.
//!
//! Model: the ideal (isentropic, one-dimensional) flow from the stagnation state (h0, s0) to a
//! throat pressure p: h = h(p, s0) along the formulation's own states (IAPWS-IF97, wet states in
//! equilibrium: the homogeneous equilibrium model for liquid and wet inlets), velocity
//! V = sqrt(2 (h0 - h)) and mass flux G = rho V. G(p) is maximised over the throat pressure; when
//! the maximum lies above the downstream pressure the flow is choked at that (critical) pressure,
//! otherwise the throat is at the downstream pressure. The real flow is the discharge coefficient
//! times the ideal flow through the hole's area. No ideal-gas formula is used for the answer; an
//! ideal-gas comparison with the stagnation state's isentropic exponent is reported beside it
//! for vapour inlets.
//!
//! Invariant: the mass-flux maximum is found to a throat-pressure tolerance of 1e-12 relative
//! (G to far better than 1e-9); the balance holds h0 = h_throat + V^2/2 for the jet.

use super::warnings::{Code, Warning};
use super::{ps, Balance};
use crate::error::{Bound, Error, Result};
use crate::water::state::{self, Options, Phase, State, P_C};

/// Default discharge coefficient of a sharp-edged hole: 0.61, the contraction coefficient of a
/// jet from a sharp-edged opening (Kirchhoff's free-streamline value pi / (pi + 2) = 0.611 for a
/// slot; 0.60 to 0.62 for round holes at low velocity of approach; common practice, from memory).
/// Compressible choked flow through a sharp-edged hole contracts less, so its coefficient rises
/// with the pressure ratio (to about 0.8 and above): 0.61 errs on the low side for steam leaks.
pub const CD_SHARP_EDGED: f64 = 0.61;

/// Default discharge coefficient of a well-rounded nozzle: 0.97 (common practice, no source;
/// flow-measurement nozzles reach 0.98 to 0.995 at high Reynolds numbers).
pub const CD_NOZZLE: f64 = 0.97;

/// Lowest throat pressure examined, MPa: just above IF97's lowest saturation pressure
/// (611.213 Pa at 273.15 K); an expansion below it would freeze.
pub const P_FLOOR: f64 = 6.1122e-4;

/// The shape of the opening (gives the default discharge coefficient).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Shape {
    /// A hole with a sharp edge: a leak, a drilled trap orifice, a thin-plate orifice.
    SharpEdged,
    /// A well-rounded nozzle entry.
    Nozzle,
}

impl Shape {
    /// Default discharge coefficient.
    pub fn default_cd(self) -> f64 {
        match self {
            Shape::SharpEdged => CD_SHARP_EDGED,
            Shape::Nozzle => CD_NOZZLE,
        }
    }

    /// Where the default comes from.
    pub fn cd_source(self) -> &'static str {
        match self {
            Shape::SharpEdged => "default for a sharp-edged hole: 0.61, the contraction of a jet from a sharp edge (common practice; Kirchhoff's free-streamline value pi/(pi+2), from memory); choked steam through a sharp edge contracts less, so this errs low",
            Shape::Nozzle => "default for a rounded nozzle: 0.97 (common practice, no source)",
        }
    }
}

/// How a liquid or wet inlet behaves in the opening.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Flashing {
    /// Homogeneous equilibrium: liquid flashes as the pressure falls, both phases move together
    /// at equilibrium (the isentrope of the formulation through the wet region).
    Equilibrium,
    /// Frozen: a liquid inlet passes the opening as liquid (incompressible, Bernoulli to the
    /// downstream pressure) and flashes only after it. The opposite limit to `Equilibrium`: it
    /// gives the larger flow, approached by short openings where the liquid has no time to boil
    /// (common practice; from memory).
    Frozen,
}

impl Flashing {
    /// Wire name.
    pub fn name(self) -> &'static str {
        match self {
            Flashing::Equilibrium => "equilibrium",
            Flashing::Frozen => "frozen",
        }
    }
}

/// How the upstream state is given.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Approach {
    /// The state is the stagnation state (a vessel, a header, a large pipe).
    Stagnation,
    /// The state is static, moving at this velocity (m/s) towards the opening.
    Velocity(f64),
    /// The state is static in a pipe of this inner diameter (m) ending at the opening; the
    /// approach velocity follows from the flow (solved together).
    PipeDiameter(f64),
}

/// What the opening is.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OrificeSpec {
    /// Diameter of the hole (at its narrowest), m.
    pub diameter: f64,
    /// Discharge coefficient (actual over ideal flow).
    pub cd: f64,
    /// Pressure downstream of the opening, MPa.
    pub downstream_p: f64,
    /// Flashing model for liquid and wet inlets.
    pub flashing: Flashing,
    /// How the upstream state is given.
    pub approach: Approach,
}

/// The ideal-gas comparison for a vapour inlet.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IdealGas {
    /// Isentropic exponent of the stagnation state, w^2 / (p v).
    pub kappa: f64,
    /// Critical pressure p0 (2/(kappa+1))^(kappa/(kappa-1)), MPa.
    pub critical_p: f64,
    /// Whether the ideal gas would choke at the downstream pressure.
    pub choked: bool,
    /// Ideal mass flux, kg/(m2 s).
    pub mass_flux: f64,
    /// Flow with the same discharge coefficient, kg/s.
    pub mass_flow: f64,
    /// Ideal-gas flow over real-fluid flow minus one.
    pub deviation: f64,
}

/// Result of `orifice_flow`.
#[derive(Debug, Clone, PartialEq)]
pub struct OrificeResult {
    /// Upstream state as given.
    pub inlet: State,
    /// Stagnation state (equal to the inlet when no approach velocity).
    pub stagnation: State,
    /// State in the throat (None for frozen liquid flow, where the liquid at the throat is
    /// superheated, not an equilibrium state).
    pub throat: Option<State>,
    /// Throat pressure, MPa (the critical pressure when choked, else the downstream pressure).
    pub throat_p: f64,
    /// State downstream once the jet has mixed out (downstream pressure, stagnation enthalpy).
    pub downstream: State,
    /// Whether the flow is choked (the mass-flux maximum lies above the downstream pressure).
    pub choked: bool,
    /// Critical pressure (of the mass-flux maximum) when choked, MPa.
    pub critical_p: Option<f64>,
    /// Ideal mass flux at the throat, kg/(m2 s).
    pub ideal_mass_flux: f64,
    /// Actual flow, kg/s: cd * area * ideal mass flux.
    pub mass_flow: f64,
    /// Jet velocity at the throat, m/s.
    pub velocity: f64,
    /// Approach velocity used, m/s.
    pub approach_velocity: f64,
    /// Discharge coefficient used.
    pub cd: f64,
    /// Hole area, m2.
    pub area: f64,
    /// Flashing model used ("equilibrium", or "frozen" for a liquid inlet).
    pub flashing: Flashing,
    /// Ideal-gas comparison (vapour and supercritical inlets only).
    pub ideal_gas: Option<IdealGas>,
    /// Balance of the jet: stagnation enthalpy in, throat enthalpy plus kinetic energy out.
    pub balance: Balance,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

fn positive(name: &str, x: f64, what: &str) -> Result<f64> {
    Error::check_finite(name, x)?;
    if x <= 0.0 {
        return Err(Error::out_of_range(name, x, 0.0, "m", Bound::Below, what));
    }
    Ok(x)
}

/// Ideal isentropic flux from (h0, s0) to throat pressure p: (G kg/(m2 s), throat state).
pub fn isentropic_flux(h0: f64, s0: f64, p: f64) -> Result<(f64, State)> {
    let st = ps(p, s0)?;
    let dh = (h0 - st.props.h).max(0.0);
    Ok((st.props.rho * (2.0e3 * dh).sqrt(), st))
}

/// The throat of the ideal flow from stagnation (h0, s0, p0) to `p_down`: (throat p, G,
/// throat state, choked).
pub fn ideal_throat(h0: f64, s0: f64, p0: f64, p_down: f64) -> Result<(f64, f64, State, bool)> {
    let lo = p_down.max(P_FLOOR);
    if lo >= p0 {
        let st = ps(p0, s0)?;
        return Ok((p0, 0.0, st, false));
    }
    let g = |p: f64| isentropic_flux(h0, s0, p).map(|(g, _)| g);
    // Coarse scan: geometric in p from lo to p0 (the flux is 0 at p0).
    const N: usize = 96;
    let ratio = (p0 / lo).powf(1.0 / N as f64);
    let mut ps_grid = Vec::with_capacity(N + 1);
    let mut p = lo;
    for _ in 0..N {
        ps_grid.push(p);
        p *= ratio;
    }
    ps_grid.push(p0);
    let mut best = 0;
    let mut best_g = f64::NEG_INFINITY;
    for (i, &p) in ps_grid.iter().enumerate().take(N) {
        let gi = g(p)?;
        if gi > best_g {
            best_g = gi;
            best = i;
        }
    }
    // Golden-section search in the bracket around the best grid point.
    let mut a = ps_grid[best.saturating_sub(1)];
    let mut b = ps_grid[(best + 1).min(N)];
    let invphi = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - invphi * (b - a);
    let mut d = a + invphi * (b - a);
    let mut gc = g(c)?;
    let mut gd = g(d)?;
    let mut iter = 0;
    while (b - a) > 1e-12 * p0 {
        iter += 1;
        if iter > 200 {
            return Err(Error::not_converged("orifice mass-flux maximum", iter));
        }
        if gc >= gd {
            b = d;
            d = c;
            gd = gc;
            c = b - invphi * (b - a);
            gc = g(c)?;
        } else {
            a = c;
            c = d;
            gc = gd;
            d = a + invphi * (b - a);
            gd = g(d)?;
        }
    }
    let pm = 0.5 * (a + b);
    let (gm, sm) = isentropic_flux(h0, s0, pm)?;
    // At the lower end of the range the throat is at the downstream pressure (not choked).
    let (g_lo, s_lo) = isentropic_flux(h0, s0, lo)?;
    if pm <= lo * (1.0 + 1e-9) || g_lo >= gm {
        if p_down < P_FLOOR {
            return Err(Error::out_of_range(
                "downstream_p",
                p_down,
                P_FLOOR,
                "MPa",
                Bound::Below,
                "IAPWS-IF97 (the expansion would reach ice before the flow chokes)",
            ));
        }
        return Ok((lo, g_lo, s_lo, false));
    }
    Ok((pm, gm, sm, true))
}

/// Ideal-gas mass flux from stagnation (p0 MPa, rho0 kg/m3) with exponent `k` to `p_down`:
/// G* = sqrt(k p0 rho0 (2/(k+1))^((k+1)/(k-1))) when choked, else
/// G = sqrt(2 k/(k-1) p0 rho0 (r^(2/k) - r^((k+1)/k))), r = p_down/p0 (the isentropic nozzle of a
/// perfect gas; any gas-dynamics text). Returns (G, critical p MPa, choked).
pub fn ideal_gas_flux(p0: f64, rho0: f64, k: f64, p_down: f64) -> (f64, f64, bool) {
    let pc = p0 * (2.0 / (k + 1.0)).powf(k / (k - 1.0));
    let p0pa = p0 * 1e6;
    if p_down <= pc {
        let g = (k * p0pa * rho0 * (2.0 / (k + 1.0)).powf((k + 1.0) / (k - 1.0))).sqrt();
        (g, pc, true)
    } else {
        let r = p_down / p0;
        let g = (2.0 * k / (k - 1.0) * p0pa * rho0 * (r.powf(2.0 / k) - r.powf((k + 1.0) / k)))
            .max(0.0)
            .sqrt();
        (g, pc, false)
    }
}

fn stagnation_of(inlet: &State, v: f64) -> Result<State> {
    if v == 0.0 {
        return Ok(*inlet);
    }
    let h0 = inlet.props.h + v * v / 2000.0;
    state::at_hs(h0, inlet.props.s, &Options::STANDARD)
}

/// Flow through the opening from `inlet` (MPa, K, ... state) as `spec` says.
pub fn orifice_flow(inlet: &State, spec: &OrificeSpec) -> Result<OrificeResult> {
    let d = positive(
        "diameter",
        spec.diameter,
        "a hole (the diameter must be positive)",
    )?;
    Error::check_finite("discharge_coefficient", spec.cd)?;
    if spec.cd <= 0.0 || spec.cd > 1.0 {
        return Err(Error::out_of_range(
            "discharge_coefficient",
            spec.cd,
            if spec.cd <= 0.0 { 0.0 } else { 1.0 },
            "1",
            if spec.cd <= 0.0 {
                Bound::Below
            } else {
                Bound::Above
            },
            "a discharge coefficient (0 < cd <= 1)",
        ));
    }
    Error::check_finite("downstream_p", spec.downstream_p)?;
    if spec.downstream_p <= 0.0 {
        return Err(Error::out_of_range(
            "downstream_p",
            spec.downstream_p,
            0.0,
            "MPa",
            Bound::Below,
            "an absolute pressure",
        ));
    }
    if spec.downstream_p >= inlet.props.p {
        return Err(Error::out_of_range(
            "downstream_p",
            spec.downstream_p,
            inlet.props.p,
            "MPa",
            Bound::Above,
            "an orifice (flow runs from the upstream to a lower downstream pressure)",
        ));
    }
    let frozen = spec.flashing == Flashing::Frozen;
    if frozen && inlet.phase != Phase::Liquid {
        return Err(Error::invalid(format!(
            "the frozen flashing model applies to a liquid inlet; the inlet is {} (use flashing \"equilibrium\")",
            inlet.phase.name()
        )));
    }
    let area = std::f64::consts::PI * d * d / 4.0;
    let mut warnings = Vec::new();

    // One ideal-flow solution from a given approach velocity.
    let solve = |v: f64| -> Result<(State, f64, f64, Option<State>, bool)> {
        let stag = stagnation_of(inlet, v)?;
        if frozen {
            let dp = (stag.props.p - spec.downstream_p) * 1e6;
            let g = (2.0 * stag.props.rho * dp).sqrt();
            Ok((stag, spec.downstream_p, g, None, false))
        } else {
            let (pt, g, st, choked) =
                ideal_throat(stag.props.h, stag.props.s, stag.props.p, spec.downstream_p)?;
            Ok((stag, pt, g, Some(st), choked))
        }
    };

    let (approach_v, (stag, throat_p, g, throat, choked)) = match spec.approach {
        Approach::Stagnation => (0.0, solve(0.0)?),
        Approach::Velocity(v) => {
            Error::check_finite("approach_velocity", v)?;
            if v < 0.0 {
                return Err(Error::out_of_range(
                    "approach_velocity",
                    v,
                    0.0,
                    "m/s",
                    Bound::Below,
                    "an approach velocity",
                ));
            }
            (v, solve(v)?)
        }
        Approach::PipeDiameter(dp) => {
            let dp = positive(
                "pipe_diameter",
                dp,
                "a pipe (the diameter must be positive)",
            )?;
            if dp <= d {
                return Err(Error::out_of_range(
                    "pipe_diameter",
                    dp,
                    d,
                    "m",
                    Bound::Below,
                    "an orifice in a pipe (the pipe must be wider than the hole)",
                ));
            }
            let beta = d / dp;
            if beta > 0.8 {
                warnings.push(Warning::new(Code::OrificeBetaHigh, format!(
                    "the hole is {:.0} % of the pipe diameter: the jet is hardly an orifice flow; the discharge coefficient of a sharp-edged hole does not hold (common practice, no source)",
                    100.0 * beta
                )));
            }
            let a_pipe = std::f64::consts::PI * dp * dp / 4.0;
            let mut v = 0.0;
            let mut sol = solve(0.0)?;
            let mut converged = false;
            for _ in 0..200 {
                let m = spec.cd * area * sol.2;
                let v_new = m / (inlet.props.rho * a_pipe);
                sol = solve(v_new)?;
                if (v_new - v).abs() <= 1e-13 * v_new.max(1e-300) {
                    v = v_new;
                    converged = true;
                    break;
                }
                v = v_new;
            }
            if !converged {
                return Err(Error::not_converged("orifice approach velocity", 200));
            }
            (v, sol)
        }
    };

    let h0 = stag.props.h;
    let mass_flow = spec.cd * area * g;
    let (velocity, h_throat) = match &throat {
        Some(st) => ((2.0e3 * (h0 - st.props.h).max(0.0)).sqrt(), st.props.h),
        None => {
            let v = g / stag.props.rho;
            (v, h0 - v * v / 2000.0)
        }
    };
    let downstream = super::ph(spec.downstream_p, h0)?;

    // Saturated vapour (a wet state of quality 1) counts as vapour here.
    let vapour_like = |st: &State| {
        matches!(st.phase, Phase::Vapour | Phase::Supercritical)
            || (st.phase == Phase::Wet && st.x.unwrap_or(0.0) >= 1.0 - 1e-12)
    };
    let ideal_gas = if vapour_like(&stag) {
        let k = if stag.phase == Phase::Wet {
            state::saturation_p(stag.props.p)?.2.kappa
        } else {
            stag.props.kappa
        };
        if k.is_finite() && k > 1.0 {
            let (gi, pc, ch) = ideal_gas_flux(stag.props.p, stag.props.rho, k, spec.downstream_p);
            let mi = spec.cd * area * gi;
            Some(IdealGas {
                kappa: k,
                critical_p: pc,
                choked: ch,
                mass_flux: gi,
                mass_flow: mi,
                deviation: mi / mass_flow - 1.0,
            })
        } else {
            None
        }
    } else {
        None
    };

    if !vapour_like(&stag) && !frozen {
        warnings.push(Warning::new(Code::FlashingLowerEstimate,
            "liquid or wet inlet: the homogeneous equilibrium model assumes the liquid flashes in equilibrium inside the opening; short openings pass more (up to the frozen limit, flashing \"frozen\"), so treat the flow as a lower estimate",
        ));
    }
    if (stag.props.p / P_C - 1.0).abs() < 0.05 {
        warnings.push(Warning::new(
            Code::NearCritical,
            "the upstream state is near the critical point, where properties change steeply",
        ));
    }
    if approach_v > 0.0 && stag.props.p > inlet.props.p * 1.05 {
        warnings.push(Warning::new(Code::ApproachVelocityHigh, format!(
            "the approach velocity adds {:.1} % to the upstream pressure (stagnation over static): check the approach velocity",
            100.0 * (stag.props.p / inlet.props.p - 1.0)
        )));
    }

    Ok(OrificeResult {
        inlet: *inlet,
        stagnation: stag,
        throat,
        throat_p,
        downstream,
        choked,
        critical_p: choked.then_some(throat_p),
        ideal_mass_flux: g,
        mass_flow,
        velocity,
        approach_velocity: approach_v,
        cd: spec.cd,
        area,
        flashing: spec.flashing,
        ideal_gas,
        balance: Balance {
            mass_in: mass_flow,
            mass_out: mass_flow,
            energy_in: mass_flow * h0,
            energy_out: mass_flow * (h_throat + velocity * velocity / 2000.0),
        },
        warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plant::pt;

    #[test]
    fn superheated_steam_chokes_near_the_ideal_gas_ratio() {
        let inlet = pt(1.0, 573.15).unwrap();
        let spec = OrificeSpec {
            diameter: 0.005,
            cd: 1.0,
            downstream_p: 0.101325,
            flashing: Flashing::Equilibrium,
            approach: Approach::Stagnation,
        };
        let r = orifice_flow(&inlet, &spec).unwrap();
        assert!(r.choked);
        let ratio = r.throat_p / 1.0;
        assert!((ratio - 0.546).abs() < 0.01, "{ratio}");
        assert!(r.balance.energy_residual() < 1e-12);
    }

    #[test]
    fn refuses_reverse_flow_and_bad_holes() {
        let inlet = pt(1.0, 573.15).unwrap();
        let mut spec = OrificeSpec {
            diameter: 0.005,
            cd: 0.61,
            downstream_p: 1.5,
            flashing: Flashing::Equilibrium,
            approach: Approach::Stagnation,
        };
        assert!(matches!(
            orifice_flow(&inlet, &spec),
            Err(Error::OutOfRange { .. })
        ));
        spec.downstream_p = 0.1;
        spec.diameter = 0.0;
        assert!(orifice_flow(&inlet, &spec).is_err());
        spec.diameter = 0.005;
        spec.cd = 1.2;
        assert!(orifice_flow(&inlet, &spec).is_err());
    }
}
