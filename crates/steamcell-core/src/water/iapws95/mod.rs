//! IAPWS-95 (IAPWS R6-95(2018)): the scientific reference formulation for ordinary water, a
//! Helmholtz free energy f(rho, T), with the single-phase properties, p(rho, T), rho(p, T), and the
//! vapour-liquid phase equilibrium from the Maxwell criterion.
//!
//! Units (internal): rho kg/m3, T K, p MPa, h u kJ/kg, s cp cv kJ/(kg K), w m/s.
//!
//! Invariant: every property comes from one evaluation of `helmholtz::{ideal, residual}` at one
//! (rho, T); the solvers only iterate on that evaluation and never use another formulation.
//! Validity (release): fluid states from the melting curve to 1273 K up to 1000 MPa.
pub mod helmholtz;
pub mod saturation;

use crate::error::{Bound, Error, Result};
use crate::water::props::{HelmholtzDerivs, Props};
use crate::water::tables::iapws95 as tab;

pub use saturation::{
    psat_estimate, rho_liquid_estimate, rho_vapour_estimate, saturation_p, saturation_t,
    Saturation, P_SAT_MAX, P_TRIPLE_95, T_SAT_MAX, T_TRIPLE,
};

/// Critical density, kg/m3 (IAPWS R6-95(2018), Eq. (2)).
pub const RHO_C: f64 = tab::RHO_C;
/// Critical temperature, K (IAPWS R6-95(2018), Eq. (1)).
pub const T_C: f64 = tab::T_C;
/// Critical pressure, MPa (IAPWS R6-95(2018), Eq. (3)).
pub const P_C: f64 = tab::P_C;
/// Specific gas constant, kJ/(kg K) (IAPWS R6-95(2018), Eq. (1)).
pub const R: f64 = tab::R;

const NAME: &str = "IAPWS-95";

/// Ideal-gas part phi_o(delta, tau) and its derivatives at (rho kg/m3, T K) (R6-95 Eq. (5)).
pub fn ideal_derivs(rho: f64, t: f64) -> HelmholtzDerivs {
    helmholtz::ideal(rho / RHO_C, T_C / t)
}

/// Residual part phi_r(delta, tau) and its derivatives at (rho kg/m3, T K) (R6-95 Eq. (6)).
pub fn residual_derivs(rho: f64, t: f64) -> HelmholtzDerivs {
    helmholtz::residual(rho / RHO_C, T_C / t)
}

/// Full phi = phi_o + phi_r and its derivatives at (rho kg/m3, T K). Requires rho > 0, T > 0.
pub fn derivs(rho: f64, t: f64) -> HelmholtzDerivs {
    let delta = rho / RHO_C;
    let tau = T_C / t;
    helmholtz::add(
        &helmholtz::ideal(delta, tau),
        &helmholtz::residual(delta, tau),
    )
}

/// All single-phase properties at (rho kg/m3, T K). Requires rho > 0, T > 0 (finite).
pub fn props(rho: f64, t: f64) -> Props {
    Props::from_helmholtz(rho, t, RHO_C, T_C, R, &derivs(rho, t))
}

/// Pressure in MPa at (rho kg/m3, T K): p = rho R T (1 + delta phi_r_delta).
pub fn pressure(rho: f64, t: f64) -> f64 {
    let delta = rho / RHO_C;
    let r = helmholtz::residual(delta, T_C / t);
    rho * R * t * (1.0 + delta * r.f_d) * 1e-3
}

/// p in MPa and (dp/drho)_T in MPa m3/kg at (rho, T), from one residual evaluation.
pub fn pressure_and_slope(rho: f64, t: f64) -> (f64, f64) {
    let delta = rho / RHO_C;
    let r = helmholtz::residual(delta, T_C / t);
    let rt = R * t * 1e-3;
    let p = rho * rt * (1.0 + delta * r.f_d);
    let dp = rt * (1.0 + 2.0 * delta * r.f_d + delta * delta * r.f_dd);
    (p, dp)
}

/// (d rho / d p)_T in kg/(m3 MPa) at (rho, T).
pub fn drho_dp_t(rho: f64, t: f64) -> f64 {
    1.0 / pressure_and_slope(rho, t).1
}

/// Largest density accepted by the solvers, kg/m3 (beyond 1000 MPa at 273 K, a safe ceiling).
const RHO_MAX: f64 = 1500.0;

/// A starting density in kg/m3 for `rho_from_pt`: below T_c, the saturated-liquid or
/// saturated-vapour estimate (own ancillary fits, see `saturation`) on the side of the
/// saturation pressure estimate where p lies; above T_c, a value between the ideal gas and a
/// dense-fluid estimate. Not a property: only a start value.
pub fn rho_guess_pt(p: f64, t: f64) -> f64 {
    let rho_ideal = p / (R * t * 1e-3);
    if t < T_C {
        let ps = psat_estimate(t);
        if p >= ps {
            // Liquid: saturated liquid estimate, compressed by a modest isothermal compressibility.
            let rl = rho_liquid_estimate(t);
            let kappa = 5e-4 * (1.0 + 20.0 * ((t - 273.16) / (T_C - 273.16)).powi(4));
            (rl * (1.0 + kappa * (p - ps)).min(1.35)).min(RHO_MAX)
        } else {
            rho_ideal.min(rho_vapour_estimate(t))
        }
    } else {
        // Supercritical: the ideal gas overshoots nothing at low p; at high p cap it with a
        // dense-liquid-like value that falls with T.
        let dense = 1100.0 * (T_C / t).powf(0.6) * (1.0 + 2e-4 * p).min(1.3);
        rho_ideal.min(dense)
    }
}

/// Density in kg/m3 at (p MPa, T K), Newton on p(rho) with safeguards: steps are limited to a
/// factor 2 either way, and where (dp/drho)_T <= 0 (inside the spinodal) the iterate is moved
/// away from the critical density, toward the branch the guess belongs to. The root found is the
/// one on the branch of `rho_guess` (liquid if rho_guess > rho_c below T_c, vapour otherwise).
pub fn rho_from_pt(p: f64, t: f64, rho_guess: f64) -> Result<f64> {
    Error::check_finite("p", p)?;
    Error::check_finite("T", t)?;
    Error::check_finite("rho_guess", rho_guess)?;
    if p <= 0.0 {
        return Err(Error::out_of_range("p", p, 0.0, "MPa", Bound::Below, NAME));
    }
    if t <= 0.0 {
        return Err(Error::out_of_range("T", t, 0.0, "K", Bound::Below, NAME));
    }
    let mut rho = if rho_guess > 0.0 && rho_guess < RHO_MAX {
        rho_guess
    } else {
        rho_guess_pt(p, t)
    };
    let liquid_side = rho > RHO_C;
    const MAX_IT: usize = 100;
    for _ in 0..MAX_IT {
        let (pc, dp) = pressure_and_slope(rho, t);
        let res = pc - p;
        if res.abs() <= 1e-14 * p {
            return Ok(rho);
        }
        let new = if dp > 0.0 && dp.is_finite() {
            let step = res / dp;
            (rho - step).clamp(0.5 * rho, (2.0 * rho).min(RHO_MAX))
        } else if liquid_side {
            (rho * 1.05).min(RHO_MAX)
        } else {
            rho * 0.9
        };
        // At the rounding level of p (a liquid at low p has a large (dp/drho)_T).
        if (new - rho).abs() <= 1e-14 * rho {
            return Ok(new);
        }
        rho = new;
    }
    Err(Error::not_converged(
        format!("IAPWS-95 density at p = {p} MPa, T = {t} K"),
        MAX_IT,
    ))
}

/// All properties at (p MPa, T K), the density found from `rho_guess_pt` by `rho_from_pt`.
pub fn props_pt(p: f64, t: f64) -> Result<Props> {
    let rho = rho_from_pt(p, t, rho_guess_pt(p, t))?;
    Ok(props(rho, t))
}
