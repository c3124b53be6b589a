//! IAPWS-IF97 region 5 (high-temperature steam): the basic equation, IAPWS R7-97(2012)
//! Eqs. (32)-(34) with the 2007 coefficients of Tables 37 (ideal-gas part) and 38 (residual part)
//! (`tables::if97_region5`), and the properties of Table 39.
//!
//! Units: p MPa, T K; results in the crate's internal units (see `crate::water::props`).
//! Validity (R7-97(2012), 2007 revision): 1073.15 K <= T <= 2273.15 K, 0 < p <= 50 MPa. No range
//! check here (see `regions::region_pt`).
//!
//! Invariant: powers of tau and pi are built once per call by multiplication, with no allocation;
//! gamma = gamma_o + gamma_r.

use super::powers::{
    i_max, i_min, j_max, j_min, jn_max, jn_min, prepare1, prepare2, sum1_order, sum2_order, Term1,
    Term2,
};
use crate::water::props::{GibbsDerivs, Props};
use crate::water::tables::if97_region5::{P_STAR, R, TERMS_IDEAL, TERMS_RESIDUAL, T_STAR};

const O_LO: i32 = jn_min(&TERMS_IDEAL) - 2;
const NO: usize = (jn_max(&TERMS_IDEAL) - O_LO + 1) as usize;
const X_LO: i32 = i_min(&TERMS_RESIDUAL) - 2;
const NX: usize = (i_max(&TERMS_RESIDUAL) - X_LO + 1) as usize;
const Y_LO: i32 = j_min(&TERMS_RESIDUAL) - 2;
const NY: usize = (j_max(&TERMS_RESIDUAL) - Y_LO + 1) as usize;
const IDEAL: [Term1; TERMS_IDEAL.len()] = prepare1(&TERMS_IDEAL, O_LO);
const RESIDUAL: [Term2; TERMS_RESIDUAL.len()] = prepare2(&TERMS_RESIDUAL, X_LO, Y_LO);

/// Derivatives of gamma(pi, tau) = g/(RT), pi = p/1 MPa, tau = 1000 K/T
/// (R7-97(2012) Eqs. (32)-(34), Tables 37, 38, 40, 41).
pub fn derivs(p: f64, t: f64) -> GibbsDerivs {
    derivs_order::<true>(p, t)
}

/// gamma and its first derivatives only (second derivatives NaN), bit-identical to [`derivs`].
pub fn derivs_first(p: f64, t: f64) -> GibbsDerivs {
    derivs_order::<false>(p, t)
}

#[inline(always)]
fn derivs_order<const SECOND: bool>(p: f64, t: f64) -> GibbsDerivs {
    let pi = p / P_STAR;
    let tau = T_STAR / t;
    let o = sum1_order::<NO, SECOND>(&IDEAL, tau, O_LO);
    let r = sum2_order::<NX, NY, SECOND>(&RESIDUAL, pi, X_LO, tau, Y_LO);
    let pinv = 1.0 / pi;
    GibbsDerivs {
        g: pi.ln() + o.s + r.s,
        g_p: pinv + r.s_x,
        g_pp: -pinv * pinv + r.s_xx,
        g_t: o.s_x + r.s_y,
        g_tt: o.s_xx + r.s_yy,
        g_pt: r.s_xy,
    }
}

/// All properties at (p, T) from the region-5 equation (R7-97(2012) Table 39).
pub fn props(p: f64, t: f64) -> Props {
    Props::from_gibbs(p, t, P_STAR, T_STAR, R, &derivs(p, t))
}

/// The first-order properties at (p, T) (see [`Props::from_gibbs_first`]), bit-identical to
/// those of [`props`].
pub fn props_first(p: f64, t: f64) -> Props {
    Props::from_gibbs_first(p, t, P_STAR, T_STAR, R, &derivs_first(p, t))
}
