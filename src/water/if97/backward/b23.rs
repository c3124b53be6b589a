//! Boundary between IAPWS-IF97 regions 2 and 3 (B23 equation, R7-97(2012) Eqs. (5), (6),
//! Table 1), a private copy for the (h,s) region choice of SR4-04.
//!
//! Units: p MPa, T K. Invariant: `t_b23(p_b23(t))` returns `t` to rounding on 623.15..863.15 K.
// TEMPORARY: replaced by b23 at integration

use crate::water::tables::if97_b23 as b;

/// p_B23(T) in MPa, R7-97(2012) Eq. (5).
pub fn p_b23(t: f64) -> f64 {
    let n = &b::TABLE_1;
    let theta = t / b::T_STAR;
    (n[0] + n[1] * theta + n[2] * theta * theta) * b::P_STAR
}

/// T_B23(p) in K, R7-97(2012) Eq. (6).
pub fn t_b23(p: f64) -> f64 {
    let n = &b::TABLE_1;
    let pi = p / b::P_STAR;
    (n[3] + ((pi - n[4]) / n[2]).sqrt()) * b::T_STAR
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn b23_check_values() {
        // Half a unit of the 9th printed digit.
        // IAPWS R7-97(2012), B23 check value printed with Eqs. (5), (6): T = 623.15 K <-> p = 16.5291643 MPa.
        assert!(
            (p_b23(623.15) - 0.165291643e2).abs() <= 5e-8,
            "B23 p(623.15 K)"
        );
        assert!(
            (t_b23(0.165291643e2) - 623.15).abs() <= 5e-7,
            "B23 T(16.5291643 MPa)"
        );
    }
}
