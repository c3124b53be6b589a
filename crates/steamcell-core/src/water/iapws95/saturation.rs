//! Vapour-liquid equilibrium of IAPWS-95 (IAPWS R6-95(2018)): saturation pressure and the two
//! coexisting densities from equal pressure and equal Gibbs free energy of both phases (the
//! Maxwell criterion), at a given T or a given p.
//!
//! Units: T K, p MPa, rho kg/m3 (properties as in `Props`).
//!
//! Invariant: the equilibrium is that of the IAPWS-95 equation itself, solved by Newton's method
//! in (delta_liquid, delta_vapour); the start values come from this project's own ancillary fits
//! (`psat_estimate`, `rho_liquid_estimate`, `rho_vapour_estimate`), least-squares fits made for
//! this crate to equilibrium states computed with this module's solver (continuation in T from
//! the triple point). They are start values only (about 1e-4 relative), never results.

use super::{helmholtz, props, P_C, RHO_C, T_C};
use crate::error::{Bound, Error, Result};
use crate::water::props::Props;

/// Triple-point temperature, K (IAPWS R6-95(2018), Eq. (9)).
pub const T_TRIPLE: f64 = 273.16;
/// Saturation pressure of IAPWS-95 at the triple-point temperature, MPa (this module's result,
/// rounded; the release gives 611.655 Pa).
pub const P_TRIPLE_95: f64 = 611.654_771e-6;
/// Highest temperature accepted by `saturation_t`, K: close enough to T_c for every use, far
/// enough that the Newton solution stays well conditioned in double precision.
pub const T_SAT_MAX: f64 = 647.095;
/// Saturation pressure at `T_SAT_MAX`, MPa (this module's result, rounded down in the 14th
/// digit): the highest pressure accepted by `saturation_p`.
pub const P_SAT_MAX: f64 = 22.063_732_706_652;

const NAME: &str = "IAPWS-95 saturation";

/// A saturation state of IAPWS-95.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Saturation {
    /// Saturation temperature, K.
    pub t: f64,
    /// Saturation pressure, MPa.
    pub psat: f64,
    /// Saturated-liquid density, kg/m3.
    pub rho_liquid: f64,
    /// Saturated-vapour density, kg/m3.
    pub rho_vapour: f64,
    /// Saturated-liquid properties.
    pub liquid: Props,
    /// Saturated-vapour properties.
    pub vapour: Props,
}

// Own ancillary fits (see the module doc). theta = 1 - T/T_c.
const PS_EXP: [f64; 6] = [1.0, 1.5, 2.5, 3.5, 5.0, 7.5];
const PS_COEF: [f64; 6] = [
    -7.870020662066067,
    1.9404989174446405,
    -2.7104485434890706,
    1.2967941810095835,
    -4.301434341489592,
    2.49991413015394,
];
const RL_EXP: [f64; 6] = [1.0 / 3.0, 2.0 / 3.0, 1.0, 5.0 / 3.0, 8.0 / 3.0, 16.0 / 3.0];
const RL_COEF: [f64; 6] = [
    1.9562109170136635,
    1.3744470880805069,
    -0.5383557711213858,
    0.04073386196339191,
    -0.2584512015131104,
    -2.214887742536629,
];
const RV_EXP: [f64; 6] = [1.0 / 3.0, 2.0 / 3.0, 4.0 / 3.0, 3.0, 37.0 / 6.0, 71.0 / 6.0];
const RV_COEF: [f64; 6] = [
    -2.0276019812229666,
    -2.6973731025349914,
    -5.360341306210506,
    -17.349561265727303,
    -44.59890969029782,
    -64.83803635239195,
];

fn series(theta: f64, exps: &[f64; 6], coef: &[f64; 6]) -> f64 {
    exps.iter()
        .zip(coef.iter())
        .map(|(e, c)| c * theta.powf(*e))
        .sum()
}

/// Estimate of the saturation pressure in MPa at T K (own fit; start value only).
pub fn psat_estimate(t: f64) -> f64 {
    let theta = (1.0 - t / T_C).max(0.0);
    P_C * (T_C / t * series(theta, &PS_EXP, &PS_COEF)).exp()
}

/// Estimate of the saturated-liquid density in kg/m3 at T K (own fit; start value only).
pub fn rho_liquid_estimate(t: f64) -> f64 {
    let theta = (1.0 - t / T_C).max(0.0);
    RHO_C * (1.0 + series(theta, &RL_EXP, &RL_COEF))
}

/// Estimate of the saturated-vapour density in kg/m3 at T K (own fit; start value only).
pub fn rho_vapour_estimate(t: f64) -> f64 {
    let theta = (1.0 - t / T_C).max(0.0);
    RHO_C * series(theta, &RV_EXP, &RV_COEF).exp()
}

/// Newton solution of the Maxwell criterion at T from start densities; returns
/// (rho_liquid, rho_vapour). J = delta (1 + delta phi_r_delta) (reduced pressure) and
/// K = delta phi_r_delta + phi_r + ln delta (reduced Gibbs energy) must be equal in both phases.
pub fn solve_maxwell(t: f64, rho_l0: f64, rho_v0: f64) -> Result<(f64, f64)> {
    let tau = T_C / t;
    let mut dl = rho_l0 / RHO_C;
    let mut dv = rho_v0 / RHO_C;
    const MAX_IT: usize = 60;
    let mut last_corr = f64::INFINITY;
    let jk = |d: f64| {
        let r = helmholtz::residual(d, tau);
        let j = d * (1.0 + d * r.f_d);
        let k = d * r.f_d + r.f + d.ln();
        let j_d = 1.0 + 2.0 * d * r.f_d + d * d * r.f_dd;
        let k_d = 2.0 * r.f_d + d * r.f_dd + 1.0 / d;
        (j, k, j_d, k_d)
    };
    for _ in 0..MAX_IT {
        let (jl, kl, jl_d, kl_d) = jk(dl);
        let (jv, kv, jv_d, kv_d) = jk(dv);
        let det = jv_d * kl_d - jl_d * kv_d;
        if !det.is_finite() || det == 0.0 {
            break;
        }
        let ddl = ((kv - kl) * jv_d - (jv - jl) * kv_d) / det;
        let ddv = ((kv - kl) * jl_d - (jv - jl) * kl_d) / det;
        // Keep the liquid above and the vapour below the critical density, both positive.
        let mut lam = 1.0;
        while lam > 1e-6
            && (dl + lam * ddl <= 1.0 || dv + lam * ddv <= 0.0 || dv + lam * ddv >= 1.0)
        {
            lam *= 0.5;
        }
        dl += lam * ddl;
        dv += lam * ddv;
        // Converged when the correction is at the rounding level, or when it has stopped
        // shrinking quadratically at a level that is already noise (near T_c the residuals
        // cancel to about 1e-12).
        let corr = (ddl / dl).abs().max((ddv / dv).abs());
        if corr < 1e-13 || (corr < 1e-8 && corr > 0.25 * last_corr) {
            return Ok((dl * RHO_C, dv * RHO_C));
        }
        last_corr = corr;
    }
    Err(Error::not_converged(
        format!("IAPWS-95 phase equilibrium at T = {t} K"),
        MAX_IT,
    ))
}

fn build(t: f64, rho_l: f64, rho_v: f64) -> Saturation {
    let liquid = props(rho_l, t);
    let vapour = props(rho_v, t);
    Saturation {
        t,
        // The vapour-side pressure has no cancellation; the liquid side's agrees to the solver
        // tolerance.
        psat: vapour.p,
        rho_liquid: rho_l,
        rho_vapour: rho_v,
        liquid,
        vapour,
    }
}

/// Saturation state at T K, 273.16 K <= T <= `T_SAT_MAX` (just below T_c = 647.096 K).
pub fn saturation_t(t: f64) -> Result<Saturation> {
    Error::check_finite("T", t)?;
    if t < T_TRIPLE {
        return Err(Error::out_of_range(
            "T",
            t,
            T_TRIPLE,
            "K",
            Bound::Below,
            NAME,
        ));
    }
    if t > T_SAT_MAX {
        return Err(Error::out_of_range(
            "T",
            t,
            T_SAT_MAX,
            "K",
            Bound::Above,
            NAME,
        ));
    }
    let (rl, rv) = solve_maxwell(t, rho_liquid_estimate(t), rho_vapour_estimate(t))?;
    Ok(build(t, rl, rv))
}

/// Saturation state at p MPa, between the IAPWS-95 saturation pressures at 273.16 K and at
/// `T_SAT_MAX`. Newton on T with the Clausius-Clapeyron slope dp/dT = (s'' - s')/(v'' - v').
pub fn saturation_p(p: f64) -> Result<Saturation> {
    Error::check_finite("p", p)?;
    if p < P_TRIPLE_95 {
        return Err(Error::out_of_range(
            "p",
            p,
            P_TRIPLE_95,
            "MPa",
            Bound::Below,
            NAME,
        ));
    }
    let p_max = P_SAT_MAX;
    if p > p_max {
        return Err(Error::out_of_range(
            "p",
            p,
            p_max,
            "MPa",
            Bound::Above,
            NAME,
        ));
    }
    // Start: invert the ancillary fit (Newton in ln p against T).
    let mut t = 273.16 + (T_SAT_MAX - 273.16) * ((p / p_max).ln() / (P_TRIPLE_95 / p_max).ln());
    t = t.clamp(T_TRIPLE, T_SAT_MAX);
    for _ in 0..30 {
        let f = psat_estimate(t).ln() - p.ln();
        let h = 1e-4;
        let df = (psat_estimate(t + h).ln() - psat_estimate(t - h).ln()) / (2.0 * h);
        let step = f / df;
        t = (t - step).clamp(T_TRIPLE, T_SAT_MAX);
        if step.abs() < 1e-9 {
            break;
        }
    }
    let mut rl = rho_liquid_estimate(t);
    let mut rv = rho_vapour_estimate(t);
    const MAX_IT: usize = 40;
    for _ in 0..MAX_IT {
        let (l, v) = solve_maxwell(t, rl, rv)?;
        rl = l;
        rv = v;
        let s = build(t, rl, rv);
        let dpdt = (s.vapour.s - s.liquid.s) / (1.0 / rv - 1.0 / rl) * 1e-3;
        let step = (s.psat - p) / dpdt;
        let t_new = (t - step).clamp(T_TRIPLE, T_SAT_MAX);
        if (t_new - t).abs() <= 1e-12 * t {
            let (l, v) = solve_maxwell(t_new, rl, rv)?;
            return Ok(build(t_new, l, v));
        }
        t = t_new;
    }
    Err(Error::not_converged(
        format!("IAPWS-95 saturation temperature at p = {p} MPa"),
        MAX_IT,
    ))
}
