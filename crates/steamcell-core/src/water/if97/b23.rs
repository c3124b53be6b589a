//! IAPWS-IF97 boundary between regions 2 and 3 (the B23 equation): p_B23(T), IAPWS R7-97(2012)
//! Eq. (5), and its explicit inverse T_B23(p), Eq. (6), with the coefficients of Table 1
//! (`tables::if97_b23`).
//!
//! Units: p MPa, T K. Validity: 623.15 K <= T <= 863.15 K, 16.5292 MPa <= p <= 100 MPa. No range
//! check here; below n5 MPa, T_B23(p) is NaN (never a panic).
//!
//! Invariant: the quadratic p_B23(T) is the boundary; T_B23(p) inverts it to rounding.

use crate::water::tables::if97_b23::{P_STAR, TABLE_1 as N, T_STAR};

/// Pressure in MPa on the region 2/3 boundary at temperature `t` in K (R7-97(2012) Eq. (5)).
pub fn p_b23(t: f64) -> f64 {
    let theta = t / T_STAR;
    P_STAR * (N[0] + N[1] * theta + N[2] * theta * theta)
}

/// Temperature in K on the region 2/3 boundary at pressure `p` in MPa (R7-97(2012) Eq. (6)).
pub fn t_b23(p: f64) -> f64 {
    let pi = p / P_STAR;
    T_STAR * (N[3] + ((pi - N[4]) / N[2]).sqrt())
}
