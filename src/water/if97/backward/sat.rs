//! Saturation line of IAPWS-IF97 region 4 (R7-97(2012) Eqs. (29)-(31), Table 34), a private copy
//! for the subregion choices of the backward equations (SR5-05 Tsat(p) boundary).
//!
//! Units: p MPa, T K. Invariant: the two functions are the release's explicit forms of the one
//! implicit quadratic Eq. (29), so `tsat(psat(t))` returns `t` to rounding.
// TEMPORARY: replaced by region4 at integration

use crate::water::tables::if97_region4 as r4;

/// Saturation pressure p_s(T) in MPa, R7-97(2012) Eq. (30); valid 273.15 K <= T <= 647.096 K.
pub fn psat(t: f64) -> f64 {
    let n = &r4::TABLE_34;
    let ts = t / r4::T_STAR;
    let theta = ts + n[8] / (ts - n[9]);
    let a = theta * theta + n[0] * theta + n[1];
    let b = n[2] * theta * theta + n[3] * theta + n[4];
    let c = n[5] * theta * theta + n[6] * theta + n[7];
    let x = 2.0 * c / (-b + (b * b - 4.0 * a * c).sqrt());
    let x2 = x * x;
    x2 * x2 * r4::P_STAR
}

/// Saturation temperature T_s(p) in K, R7-97(2012) Eq. (31); valid 611.213 Pa <= p <= 22.064 MPa.
pub fn tsat(p: f64) -> f64 {
    let n = &r4::TABLE_34;
    let beta = (p / r4::P_STAR).sqrt().sqrt();
    let b2 = beta * beta;
    let e = b2 + n[2] * beta + n[5];
    let f = n[0] * b2 + n[3] * beta + n[6];
    let g = n[1] * b2 + n[4] * beta + n[7];
    let d = 2.0 * g / (-f - (f * f - 4.0 * e * g).sqrt());
    let nd = n[9] + d;
    0.5 * (nd - (nd * nd - 4.0 * (n[8] + n[9] * d)).sqrt()) * r4::T_STAR
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Within half a unit of the 9th printed digit (looser than 1e-9 relative here).
    fn close(got: f64, want: f64) -> bool {
        let half_unit = 0.5 * 10f64.powi(want.abs().log10().floor() as i32 - 8);
        (got - want).abs() <= half_unit.max(1e-9 * want.abs())
    }

    #[test]
    fn saturation_check_values() {
        // IAPWS R7-97(2012) Table 35 (p_s(T)), 9 printed digits.
        assert!(close(psat(300.0), 0.353658941e-2), "Table 35 T=300 K");
        assert!(close(psat(500.0), 0.263889776e1), "Table 35 T=500 K");
        assert!(close(psat(600.0), 0.123443146e2), "Table 35 T=600 K");
        // IAPWS R7-97(2012) Table 36 (T_s(p)), 9 printed digits.
        assert!(close(tsat(0.1), 0.372755919e3), "Table 36 p=0.1 MPa");
        assert!(close(tsat(1.0), 0.453035632e3), "Table 36 p=1 MPa");
        assert!(close(tsat(10.0), 0.584149488e3), "Table 36 p=10 MPa");
    }
}
