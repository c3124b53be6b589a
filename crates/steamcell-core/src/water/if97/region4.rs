//! IAPWS-IF97 region 4 (saturation line): the saturation-pressure equation p_s(T), IAPWS
//! R7-97(2012) Eq. (30), and the saturation-temperature equation T_s(p), Eq. (31), both explicit
//! solutions of the implicit quadratic Eq. (29) with the coefficients of Table 34
//! (`tables::if97_region4`).
//!
//! Units: p MPa, T K. Validity: 273.15 K <= T <= 647.096 K, i.e. 611.213 Pa <= p <= 22.064 MPa.
//! No range check here; outside the range the result may be NaN (never a panic).
//!
//! Invariant: the two equations are inverse to each other only to rounding (about 1e-15
//! relative); callers that need a consistent side of the line must compare against one of them.

use crate::water::tables::if97_region4::{P_STAR, TABLE_34 as N, T_STAR};

/// Saturation pressure p_s in MPa at temperature `t` in K (R7-97(2012) Eq. (30)).
pub fn psat(t: f64) -> f64 {
    let ts = t / T_STAR;
    let theta = ts + N[8] / (ts - N[9]);
    let th2 = theta * theta;
    let a = th2 + N[0] * theta + N[1];
    let b = N[2] * th2 + N[3] * theta + N[4];
    let c = N[5] * th2 + N[6] * theta + N[7];
    let x = 2.0 * c / (-b + (b * b - 4.0 * a * c).sqrt());
    let x2 = x * x;
    P_STAR * x2 * x2
}

/// Saturation temperature T_s in K at pressure `p` in MPa (R7-97(2012) Eq. (31)).
pub fn tsat(p: f64) -> f64 {
    let beta = (p / P_STAR).sqrt().sqrt();
    let b2 = beta * beta;
    let e = b2 + N[2] * beta + N[5];
    let f = N[0] * b2 + N[3] * beta + N[6];
    let g = N[1] * b2 + N[4] * beta + N[7];
    let d = 2.0 * g / (-f - (f * f - 4.0 * e * g).sqrt());
    let nd = N[9] + d;
    T_STAR * (nd - (nd * nd - 4.0 * (N[8] + N[9] * d)).sqrt()) / 2.0
}
