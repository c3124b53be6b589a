//! IAPWS-IF97 region 3 (near-critical and supercritical dense states): the basic equation,
//! IAPWS R7-97(2012) Eq. (28), a Helmholtz function phi(delta, tau) with the logarithmic term
//! n1 ln(delta) and the coefficients of Table 30 (`tables::if97_region3`); the properties of
//! Table 31; and the density at a given (p, T) by Newton iteration on p(rho, T) = p.
//!
//! Units: rho kg/m3, T K, p MPa; results in the crate's internal units (`crate::water::props`).
//! Validity (R7-97(2012)): 623.15 K <= T <= T_B23(p), p_B23(T) <= p <= 100 MPa. No range check
//! here (see `regions::region_pt`); functions evaluate for any finite input and never panic.
//!
//! Invariant: powers of delta and tau are built once per call by multiplication, with no
//! allocation. The iteration never returns a density whose pressure misses the requested one by
//! more than its tolerance: running out of iterations is an error, not a guess.

use super::powers::{i_max, i_min, j_max, j_min, powers, prepare2, sum2, Term2};
use crate::error::{Bound, Error, Result};
use crate::water::props::{HelmholtzDerivs, Props};
use crate::water::tables::if97_region3::{N1, R, RHO_STAR, TABLE_30, T_STAR};

const X_LO: i32 = i_min(&TABLE_30) - 2;
const NX: usize = (i_max(&TABLE_30) - X_LO + 1) as usize;
const Y_LO: i32 = j_min(&TABLE_30) - 2;
const NY: usize = (j_max(&TABLE_30) - Y_LO + 1) as usize;
const TERMS: [Term2; TABLE_30.len()] = prepare2(&TABLE_30, X_LO, Y_LO);

/// Default iteration limit of [`rho_from_pt`].
pub const RHO_MAX_ITER: usize = 100;
/// Default relative pressure tolerance |p(rho,T) - p| / p of [`rho_from_pt`].
pub const RHO_P_TOL: f64 = 1e-13;
/// Rounding floor of p(rho, T): the sums of Eq. (28) cancel, so p carries a relative rounding
/// noise of up to a few 1e-13 in dense liquid-like states. When Newton stalls, an iterate within
/// this relative residual is accepted as converged.
pub const RHO_P_FLOOR: f64 = 1e-11;

/// Derivatives of phi(delta, tau) = f/(RT), delta = rho/322 kg/m3, tau = 647.096 K/T
/// (R7-97(2012) Eq. (28), Table 32). `rho` must be positive (ln(delta)).
pub fn derivs(rho: f64, t: f64) -> HelmholtzDerivs {
    let delta = rho / RHO_STAR;
    let tau = T_STAR / t;
    let s = sum2::<NX, NY>(&TERMS, delta, X_LO, tau, Y_LO);
    let dinv = 1.0 / delta;
    HelmholtzDerivs {
        f: N1 * delta.ln() + s.s,
        f_d: N1 * dinv + s.s_x,
        f_dd: -N1 * dinv * dinv + s.s_xx,
        f_t: s.s_y,
        f_tt: s.s_yy,
        f_dt: s.s_xy,
    }
}

/// All properties at (rho, T) from the region-3 equation (R7-97(2012) Table 31).
pub fn props(rho: f64, t: f64) -> Props {
    Props::from_helmholtz(rho, t, RHO_STAR, T_STAR, R, &derivs(rho, t))
}

/// Pressure p(rho, T) in MPa, and (dp/drho)_T in MPa m3/kg, from the region-3 equation.
#[inline]
fn p_and_slope(rho: f64, t: f64) -> (f64, f64) {
    let delta = rho / RHO_STAR;
    let tau = T_STAR / t;
    const DX: usize = i_max(&TABLE_30) as usize + 1;
    const DY: usize = j_max(&TABLE_30) as usize + 1;
    let dp: [f64; DX] = powers(delta, 0);
    let tp: [f64; DY] = powers(tau, 0);
    // a = delta phi_delta, b = delta^2 phi_delta_delta.
    let mut a = N1;
    let mut b = -N1;
    for term in &TABLE_30 {
        let fi = term.i as f64;
        let x = term.n * fi * dp[term.i as usize] * tp[term.j as usize];
        a += x;
        b += x * (fi - 1.0);
    }
    let rt = R * t; // kJ/kg
    (rho * rt * a * 1e-3, rt * (2.0 * a + b) * 1e-3)
}

/// Pressure in MPa at (rho, T) from the region-3 equation (R7-97(2012) Table 31).
pub fn pressure(rho: f64, t: f64) -> f64 {
    p_and_slope(rho, t).0
}

/// Density in kg/m3 at (p, T) by Newton iteration on p(rho, T) = p from `rho_guess`, with the
/// default limits [`RHO_MAX_ITER`] and [`RHO_P_TOL`]. See [`rho_from_pt_with`].
pub fn rho_from_pt(p: f64, t: f64, rho_guess: f64) -> Result<f64> {
    rho_from_pt_with(p, t, rho_guess, RHO_MAX_ITER, RHO_P_TOL)
}

/// Density in kg/m3 at (p, T) by Newton iteration on p(rho, T) = p, starting at `rho_guess`.
///
/// Converged when |p(rho,T) - p| <= `p_tol` p, when the Newton step falls below 1e-15 rho
/// (the root is then resolved to double precision), or when Newton stops reducing the residual
/// with the best iterate within [`RHO_P_FLOOR`] p (the rounding floor of p(rho, T); that iterate
/// is returned). Each step is limited to 20 % of rho so the
/// iterate stays positive. Errors: [`Error::NotFinite`] for non-finite inputs,
/// [`Error::OutOfRange`] for p <= 0 or T <= 0, [`Error::InvalidInput`] for `rho_guess` <= 0, and
/// [`Error::NotConverged`] when the slope (dp/drho)_T is not positive (a mechanically unstable
/// state: the guess lies on the wrong side of a spinodal) or `max_iter` is used up.
/// The root found is the one the guess leads to: below the critical temperature the equation
/// has liquid-like and vapour-like roots and the caller chooses by its guess.
pub fn rho_from_pt_with(
    p: f64,
    t: f64,
    rho_guess: f64,
    max_iter: usize,
    p_tol: f64,
) -> Result<f64> {
    Error::check_finite("p", p)?;
    Error::check_finite("T", t)?;
    Error::check_finite("rho_guess", rho_guess)?;
    if p <= 0.0 {
        return Err(Error::out_of_range(
            "p",
            p,
            0.0,
            "MPa",
            Bound::Below,
            "IAPWS-IF97",
        ));
    }
    if t <= 0.0 {
        return Err(Error::out_of_range(
            "T",
            t,
            0.0,
            "K",
            Bound::Below,
            "IAPWS-IF97",
        ));
    }
    if rho_guess <= 0.0 {
        return Err(Error::invalid(format!(
            "rho_guess = {rho_guess} kg/m3 must be positive for the region-3 density iteration"
        )));
    }
    let what = "IAPWS-IF97 region 3 density from (p, T)";
    let mut rho = rho_guess;
    let mut prev = f64::INFINITY; // |p(rho) - p| of the previous iterate
    let mut best = (rho, f64::INFINITY);
    for k in 0..max_iter {
        let (pc, slope) = p_and_slope(rho, t);
        let dp = pc - p;
        let adp = dp.abs();
        if adp <= p_tol * p {
            return Ok(rho);
        }
        if adp < best.1 {
            best = (rho, adp);
        }
        // Stalled: Newton no longer reduces the residual. Near the root this happens only at the
        // rounding floor of p(rho, T); accept the best iterate if it lies within that floor.
        if adp >= prev && best.1 <= RHO_P_FLOOR * p {
            return Ok(best.0);
        }
        prev = adp;
        if !(slope > 0.0 && slope.is_finite()) {
            return Err(Error::not_converged(what, k + 1));
        }
        let step = (dp / slope).clamp(-0.2 * rho, 0.2 * rho);
        rho -= step;
        if step.abs() <= 1e-15 * rho {
            return Ok(rho);
        }
    }
    Err(Error::not_converged(what, max_iter))
}
