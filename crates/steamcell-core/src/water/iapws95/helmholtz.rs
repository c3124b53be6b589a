//! The IAPWS-95 dimensionless Helmholtz free energy phi(delta, tau) = phi_o + phi_r and its first
//! and second derivatives (IAPWS R6-95(2018), Eqs. (4)-(6), Tables 1, 2, 4 and 5).
//!
//! Units: everything here is dimensionless; delta = rho / 322 kg/m3, tau = 647.096 K / T.
//!
//! Invariant: one call evaluates every term once; powers of delta and tau are built by repeated
//! multiplication (integer exponents) or from tau^(1/8) (the polynomial terms' eighths), and the
//! five exp(-delta^c) factors are computed once per call. No allocation. The only `powf` calls are
//! those of the two non-analytic terms, whose exponents are not rational with a small denominator.

use crate::water::props::HelmholtzDerivs;
use crate::water::tables::iapws95 as tab;

/// Highest integer power of tau in the exponential terms (Table 2, t_i = 50).
const MAX_TAU_POW: usize = 50;
/// Highest integer power of delta in the residual terms (Table 2, d_i = 15).
const MAX_DELTA_POW: usize = 15;
/// Highest exponent c_i of the exponential terms (Table 2, c_i = 6).
const MAX_C: usize = 6;

/// Ideal-gas part phi_o and its derivatives, IAPWS R6-95(2018) Eq. (5) and Table 4.
/// `delta > 0`, `tau > 0`. `f_dt` is zero by construction.
pub fn ideal(delta: f64, tau: f64) -> HelmholtzDerivs {
    let n = &tab::TERMS_IDEAL;
    let mut f = delta.ln() + n[0].n + n[1].n * tau + n[2].n * tau.ln();
    let mut f_t = n[1].n + n[2].n / tau;
    let mut f_tt = -n[2].n / (tau * tau);
    for term in &n[3..] {
        let e = (-term.gamma * tau).exp();
        let one_me = 1.0 - e;
        f += term.n * one_me.ln();
        f_t += term.n * term.gamma * (1.0 / one_me - 1.0);
        f_tt -= term.n * term.gamma * term.gamma * e / (one_me * one_me);
    }
    HelmholtzDerivs {
        f,
        f_d: 1.0 / delta,
        f_dd: -1.0 / (delta * delta),
        f_t,
        f_tt,
        f_dt: 0.0,
    }
}

/// tau^t for the polynomial terms, whose t_i are multiples of 1/8 (Table 2); `tau8` = tau^(1/8).
#[inline]
fn tau_pow_eighths(tau: f64, tau8: f64, t: f64) -> f64 {
    let k = t * 8.0;
    if k.fract() == 0.0 {
        tau8.powi(k as i32)
    } else {
        tau.powf(t)
    }
}

/// Residual part phi_r and its derivatives, IAPWS R6-95(2018) Eq. (6) and Table 5.
/// `delta > 0`, `tau > 0`. At exactly delta = 1 and tau = 1 (the critical point) the
/// non-analytic terms' second derivatives are singular, as in the release.
pub fn residual(delta: f64, tau: f64) -> HelmholtzDerivs {
    // Integer powers of delta and tau, built once.
    let mut dp = [1.0f64; MAX_DELTA_POW + 1];
    for i in 1..=MAX_DELTA_POW {
        dp[i] = dp[i - 1] * delta;
    }
    let mut tp = [1.0f64; MAX_TAU_POW + 1];
    for i in 1..=MAX_TAU_POW {
        tp[i] = tp[i - 1] * tau;
    }
    let inv_d = 1.0 / delta;
    let inv_t = 1.0 / tau;
    let mut r = HelmholtzDerivs::default();

    // Polynomial terms i = 1..7: n delta^d tau^t.
    let tau8 = tau.sqrt().sqrt().sqrt();
    for term in &tab::TERMS_POLYNOMIAL {
        let d = f64::from(term.d);
        let t = term.t;
        let base = term.n * dp[term.d as usize] * tau_pow_eighths(tau, tau8, t);
        r.f += base;
        r.f_d += base * d * inv_d;
        r.f_dd += base * d * (d - 1.0) * inv_d * inv_d;
        r.f_t += base * t * inv_t;
        r.f_tt += base * t * (t - 1.0) * inv_t * inv_t;
        r.f_dt += base * d * t * inv_d * inv_t;
    }

    // Exponential terms i = 8..51: n delta^d tau^t exp(-delta^c).
    let mut exp_c = [0.0f64; MAX_C + 1];
    for (c, slot) in exp_c.iter_mut().enumerate().skip(1) {
        *slot = (-dp[c]).exp();
    }
    for term in &tab::TERMS_EXPONENTIAL {
        let c = term.c as usize;
        let d = f64::from(term.d);
        let t = term.t;
        let dc = dp[c];
        let cf = f64::from(term.c);
        let base = term.n * dp[term.d as usize] * tp[t as usize] * exp_c[c];
        let g = d - cf * dc; // delta * d/d delta of ln(term)
        r.f += base;
        r.f_d += base * g * inv_d;
        r.f_dd += base * (g * (g - 1.0) - cf * cf * dc) * inv_d * inv_d;
        r.f_t += base * t * inv_t;
        r.f_tt += base * t * (t - 1.0) * inv_t * inv_t;
        r.f_dt += base * t * g * inv_d * inv_t;
    }

    // Gaussian terms i = 52..54: n delta^d tau^t exp[-alpha (delta - eps)^2 - beta (tau - gamma)^2].
    for term in &tab::TERMS_GAUSSIAN {
        let d = f64::from(term.d);
        let t = term.t;
        let dd = delta - term.epsilon;
        let dt = tau - term.gamma;
        let e = (-term.alpha * dd * dd - term.beta * dt * dt).exp();
        let base = term.n * dp[term.d as usize] * tp[t as usize] * e;
        let a = d * inv_d - 2.0 * term.alpha * dd;
        let b = t * inv_t - 2.0 * term.beta * dt;
        r.f += base;
        r.f_d += base * a;
        r.f_dd += base * (a * a - d * inv_d * inv_d - 2.0 * term.alpha);
        r.f_t += base * b;
        r.f_tt += base * (b * b - t * inv_t * inv_t - 2.0 * term.beta);
        r.f_dt += base * a * b;
    }

    // Non-analytic terms i = 55, 56: n Delta^b delta psi.
    let dm1 = delta - 1.0;
    let q = dm1 * dm1;
    let tm1 = tau - 1.0;
    for term in &tab::TERMS_NONANALYTIC {
        let (a, b, big_a, big_b, beta) = (term.a, term.b, term.big_a, term.big_b, term.beta);
        let (big_c, big_d) = (term.big_c, term.big_d);
        let e1 = 0.5 / beta; // 1/(2 beta)
                             // Powers of q = (delta - 1)^2 with non-negative exponents only (finite at q = 0).
        let q_e1m1 = q.powf(e1 - 1.0); // q^(1/(2 beta) - 1); q * this = q^(1/(2 beta))
        let q_e1 = q * q_e1m1;
        let q_am1 = q.powf(a - 1.0);
        let q_a = q * q_am1;
        let q_2e1m1 = q.powf(2.0 * e1 - 1.0); // q^(1/beta - 1)
        let theta = -tm1 + big_a * q_e1;
        let big_delta = theta * theta + big_b * q_a;
        // dDelta/d delta = (delta - 1) G
        let g = big_a * theta * (2.0 / beta) * q_e1m1 + 2.0 * big_b * a * q_am1;
        let dd_d = dm1 * g;
        let dd_dd = g
            + 4.0 * big_b * a * (a - 1.0) * q_am1
            + 2.0 * big_a * big_a / (beta * beta) * q_2e1m1
            + big_a * theta * (4.0 / beta) * (e1 - 1.0) * q_e1m1;
        let db_m1 = big_delta.powf(b - 1.0); // Delta^(b-1)
        let db = big_delta * db_m1; // Delta^b
        let db_m2 = db_m1 / big_delta; // Delta^(b-2)
        let db_d = b * db_m1 * dd_d;
        let db_dd = b * (db_m1 * dd_dd + (b - 1.0) * db_m2 * dd_d * dd_d);
        let db_t = -2.0 * theta * b * db_m1;
        let db_tt = 2.0 * b * db_m1 + 4.0 * theta * theta * b * (b - 1.0) * db_m2;
        let db_dt = -big_a * b * (2.0 / beta) * db_m1 * dm1 * q_e1m1
            - 2.0 * theta * b * (b - 1.0) * db_m2 * dd_d;
        let psi = (-big_c * q - big_d * tm1 * tm1).exp();
        let psi_d = -2.0 * big_c * dm1 * psi;
        let psi_dd = (2.0 * big_c * q - 1.0) * 2.0 * big_c * psi;
        let psi_t = -2.0 * big_d * tm1 * psi;
        let psi_tt = (2.0 * big_d * tm1 * tm1 - 1.0) * 2.0 * big_d * psi;
        let psi_dt = 4.0 * big_c * big_d * dm1 * tm1 * psi;
        let n = term.n;
        r.f += n * db * delta * psi;
        r.f_d += n * (db * (psi + delta * psi_d) + db_d * delta * psi);
        r.f_dd += n
            * (db * (2.0 * psi_d + delta * psi_dd)
                + 2.0 * db_d * (psi + delta * psi_d)
                + db_dd * delta * psi);
        r.f_t += n * delta * (db_t * psi + db * psi_t);
        r.f_tt += n * delta * (db_tt * psi + 2.0 * db_t * psi_t + db * psi_tt);
        r.f_dt += n
            * (db * (psi_t + delta * psi_dt)
                + delta * db_d * psi_t
                + db_t * (psi + delta * psi_d)
                + db_dt * delta * psi);
    }
    r
}

/// Sum of two derivative sets (ideal + residual).
#[inline]
pub fn add(a: &HelmholtzDerivs, b: &HelmholtzDerivs) -> HelmholtzDerivs {
    HelmholtzDerivs {
        f: a.f + b.f,
        f_d: a.f_d + b.f_d,
        f_dd: a.f_dd + b.f_dd,
        f_t: a.f_t + b.f_t,
        f_tt: a.f_tt + b.f_tt,
        f_dt: a.f_dt + b.f_dt,
    }
}
