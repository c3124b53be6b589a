//! Thermal conductivity of ordinary water, IAPWS R15-11: lambda = lambda* [lambda_bar_0(T)
//! lambda_bar_1(T, rho) + lambda_bar_2(T, rho)], Eqs. (10), (15)-(17) (Tables 1, 2) and the
//! critical enhancement Eqs. (18)-(23) (Table 3).
//!
//! Units: rho kg/m3, T K, cp cv kJ/(kg K), mu Pa s, (d rho/d p)_T kg/(m3 MPa) in; W/(m K) out.
//! (The release's check values are in mW/(m K).)
//!
//! Invariant: the full correlation takes cp, cv and zeta = (d rho_bar/d p_bar)_T from IAPWS-95 and
//! mu_bar from the full R12-08 viscosity (including mu_bar_2, as the release's Table 5 requires).
//! The variant for industrial use takes cp, cv, mu and (d rho/d p)_T of the state from the caller
//! (e.g. IAPWS-IF97) and only the reference-temperature term zeta(T_R) from IAPWS-95.
//! No allocation, no iteration.

use super::viscosity::{self, zeta_95};
use crate::water::iapws95;
use crate::water::tables::conductivity_2011 as tab;

/// lambda_bar_0(T_bar), the dilute-gas part, Eq. (16) with Table 1.
pub fn lambda0(t_bar: f64) -> f64 {
    let inv = 1.0 / t_bar;
    let mut sum = 0.0;
    let mut pw = 1.0;
    // TERMS_LAMBDA0 holds k = 0..4 in order.
    for term in &tab::TERMS_LAMBDA0 {
        sum += term.n * pw;
        pw *= inv;
    }
    t_bar.sqrt() / sum
}

/// lambda_bar_1(T_bar, rho_bar), the residual part, Eq. (17) with Table 2.
pub fn lambda1(t_bar: f64, rho_bar: f64) -> f64 {
    let x = 1.0 / t_bar - 1.0;
    let y = rho_bar - 1.0;
    let mut xp = [1.0f64; 5];
    let mut yp = [1.0f64; 6];
    for i in 1..5 {
        xp[i] = xp[i - 1] * x;
    }
    for j in 1..6 {
        yp[j] = yp[j - 1] * y;
    }
    let sum: f64 = tab::TERMS_LAMBDA1
        .iter()
        .map(|c| c.n * xp[c.i as usize] * yp[c.j as usize])
        .sum();
    (rho_bar * sum).exp()
}

/// Correlation length xi in nm, Eqs. (21)-(23): Delta_chi_bar = rho_bar [zeta(T) - zeta(T_R)
/// T_R / T], set to 0 where negative; xi = xi0 (Delta_chi_bar / Gamma0)^(nu/gamma).
pub fn correlation_length(rho_bar: f64, t_bar: f64, zeta_t: f64, zeta_r: f64) -> f64 {
    let dchi = (rho_bar * (zeta_t - zeta_r * tab::T_BAR_R / t_bar)).max(0.0);
    tab::XI0 * (dchi / tab::GAMMA0).powf(tab::NU / tab::GAMMA)
}

/// lambda_bar_2, Eqs. (18)-(19), from rho_bar, T_bar, cp and cv in kJ/(kg K), mu_bar (viscosity
/// over 1e-6 Pa s) and the correlation length xi in nm.
pub fn lambda2(rho_bar: f64, t_bar: f64, cp: f64, cv: f64, mu_bar: f64, xi: f64) -> f64 {
    let mut cp_bar = cp / tab::R;
    // Guard for states where cp is not a positive finite number (from memory of the release's
    // computer-program notes: cp_bar is limited to 1e13).
    if !(cp_bar.is_finite() && cp_bar > 0.0 && cp_bar <= 1e13) {
        cp_bar = 1e13;
    }
    let kappa = cp / cv;
    let y = xi / tab::QD_INVERSE;
    if y.is_nan() || y < 1.2e-7 {
        return 0.0;
    }
    let z = 2.0 / (std::f64::consts::PI * y)
        * (((1.0 - 1.0 / kappa) * y.atan() + y / kappa)
            - (1.0 - (-1.0 / (1.0 / y + y * y / (3.0 * rho_bar * rho_bar))).exp()));
    tab::LAMBDA * rho_bar * cp_bar * t_bar * z / mu_bar
}

/// Thermal conductivity in W/(m K) without the critical enhancement, lambda_bar_0 lambda_bar_1
/// (the release's Table 4 values). Accepts rho >= 0.
pub fn conductivity_background(rho: f64, t: f64) -> f64 {
    let t_bar = t / tab::T_STAR;
    let rho_bar = rho / tab::RHO_STAR;
    tab::LAMBDA_STAR * lambda0(t_bar) * lambda1(t_bar, rho_bar)
}

/// Thermal conductivity in W/(m K) at (rho kg/m3, T K), the full IAPWS R15-11 correlation with
/// the critical enhancement; cp, cv and zeta from IAPWS-95, mu from the full R12-08 viscosity.
pub fn conductivity(rho: f64, t: f64) -> f64 {
    if rho <= 0.0 {
        return conductivity_background(0.0, t);
    }
    let p = iapws95::props(rho, t);
    let mu = viscosity::viscosity(rho, t);
    conductivity_with(rho, t, p.cp, p.cv, mu, iapws95::drho_dp_t(rho, t))
}

/// Thermal conductivity in W/(m K) at (rho kg/m3, T K) from the state's cp, cv in kJ/(kg K),
/// viscosity `mu` in Pa s and (d rho/d p)_T in kg/(m3 MPa), all from the caller's formulation
/// (for industrial use, IAPWS-IF97 and `viscosity_industrial`); zeta at the reference
/// temperature T_R = 1.5 T_c comes from IAPWS-95 at the same density.
///
/// The release's industrial recipe replaces zeta(T_R) by a density polynomial fitted to these
/// same IAPWS-95 values; that table is not in this crate's coefficient collection, so the exact
/// IAPWS-95 value is used here instead (a difference far below the correlation's uncertainty).
pub fn conductivity_with(rho: f64, t: f64, cp: f64, cv: f64, mu: f64, drho_dp_t: f64) -> f64 {
    let t_bar = t / tab::T_STAR;
    let rho_bar = rho / tab::RHO_STAR;
    let background = lambda0(t_bar) * lambda1(t_bar, rho_bar);
    if rho <= 0.0 {
        return tab::LAMBDA_STAR * background;
    }
    let zeta_t = drho_dp_t * tab::P_STAR / tab::RHO_STAR;
    let zeta_r = zeta_95(rho, tab::T_BAR_R * tab::T_STAR);
    let xi = correlation_length(rho_bar, t_bar, zeta_t, zeta_r);
    let mu_bar = mu / tab::MU_STAR;
    tab::LAMBDA_STAR * (background + lambda2(rho_bar, t_bar, cp, cv, mu_bar, xi))
}
