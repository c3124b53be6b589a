//! IAPWS-IF97 region 2 (vapour): the basic equation, IAPWS R7-97(2012) Eqs. (15)-(17), ideal-gas
//! part Table 10 (`tables::if97_region2_ideal`) and residual part Table 11
//! (`tables::if97_region2_residual`); and the supplementary metastable-vapour equation,
//! Eqs. (18), (19) with Table 16 and the replaced n_1^o, n_2^o (`tables::if97_region2_metastable`).
//! Properties per Table 12.
//!
//! Units: p MPa, T K; results in the crate's internal units (see `crate::water::props`).
//! Validity (R7-97(2012)): 273.15 K <= T <= 623.15 K, 0 < p <= p_s(T); 623.15 K < T <= 863.15 K,
//! 0 < p <= p_B23(T); 863.15 K < T <= 1073.15 K, 0 < p <= 100 MPa. Metastable vapour: from the
//! saturated-vapour line to the 5 % equilibrium moisture line, p <= 10 MPa. No range check here.
//!
//! Invariant: powers of tau, pi and (tau - 0.5) are built once per call by multiplication, with no
//! allocation; gamma = gamma_o + gamma_r, with the derivatives summed part by part.

use super::powers::{
    i_max, i_min, j_max, j_min, jn_max, jn_min, prepare1, prepare2, sum1, sum1_order, sum2,
    sum2_order, Term1, Term2,
};
use crate::water::props::{GibbsDerivs, Props};
use crate::water::tables::if97_region2_ideal::{P_STAR, R, TABLE_10, T_STAR};
use crate::water::tables::if97_region2_metastable::{N01, N02, TERMS as TABLE_16};
use crate::water::tables::if97_region2_residual::TABLE_11;
use crate::water::tables::Jn;

const O_LO: i32 = jn_min(&TABLE_10) - 2;
const NO: usize = (jn_max(&TABLE_10) - O_LO + 1) as usize;

const R_X_LO: i32 = i_min(&TABLE_11) - 2;
const R_NX: usize = (i_max(&TABLE_11) - R_X_LO + 1) as usize;
const R_Y_LO: i32 = j_min(&TABLE_11) - 2;
const R_NY: usize = (j_max(&TABLE_11) - R_Y_LO + 1) as usize;

const M_X_LO: i32 = i_min(&TABLE_16) - 2;
const M_NX: usize = (i_max(&TABLE_16) - M_X_LO + 1) as usize;
const M_Y_LO: i32 = j_min(&TABLE_16) - 2;
const M_NY: usize = (j_max(&TABLE_16) - M_Y_LO + 1) as usize;

const IDEAL: [Term1; TABLE_10.len()] = prepare1(&TABLE_10, O_LO);
const RESIDUAL: [Term2; TABLE_11.len()] = prepare2(&TABLE_11, R_X_LO, R_Y_LO);
const IDEAL_METASTABLE: [Term1; TABLE_10.len()] = prepare1(&TABLE_10_METASTABLE, O_LO);
const RESIDUAL_METASTABLE: [Term2; TABLE_16.len()] = prepare2(&TABLE_16, M_X_LO, M_Y_LO);

/// Table 10 with n_1^o, n_2^o replaced by the metastable-vapour values (R7-97(2012) Eq. (18)).
const TABLE_10_METASTABLE: [Jn; 9] = {
    let mut t = TABLE_10;
    t[0].n = N01;
    t[1].n = N02;
    t
};

/// Ideal part gamma_o = ln(pi) + sum n tau^J, added to the residual sums.
#[inline(always)]
fn combine(pi: f64, ideal: super::powers::Sum1, res: super::powers::Sum2) -> GibbsDerivs {
    let pinv = 1.0 / pi;
    GibbsDerivs {
        g: pi.ln() + ideal.s + res.s,
        g_p: pinv + res.s_x,
        g_pp: -pinv * pinv + res.s_xx,
        g_t: ideal.s_x + res.s_y,
        g_tt: ideal.s_xx + res.s_yy,
        g_pt: res.s_xy,
    }
}

/// Derivatives of gamma(pi, tau) = g/(RT), pi = p/1 MPa, tau = 540 K/T
/// (R7-97(2012) Eqs. (15)-(17), Tables 10, 11, 13, 14).
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
    let ideal = sum1_order::<NO, SECOND>(&IDEAL, tau, O_LO);
    let res = sum2_order::<R_NX, R_NY, SECOND>(&RESIDUAL, pi, R_X_LO, tau - 0.5, R_Y_LO);
    combine(pi, ideal, res)
}

/// All properties at (p, T) from the region-2 equation (R7-97(2012) Table 12).
pub fn props(p: f64, t: f64) -> Props {
    Props::from_gibbs(p, t, P_STAR, T_STAR, R, &derivs(p, t))
}

/// The first-order properties at (p, T) (see [`Props::from_gibbs_first`]), bit-identical to
/// those of [`props`].
pub fn props_first(p: f64, t: f64) -> Props {
    Props::from_gibbs_first(p, t, P_STAR, T_STAR, R, &derivs_first(p, t))
}

/// Derivatives of gamma(pi, tau) of the metastable-vapour equation, pi = p/1 MPa, tau = 540 K/T
/// (R7-97(2012) Eqs. (18), (19), Table 16; ideal part Eq. (16) with n_1^o, n_2^o replaced).
pub fn metastable_derivs(p: f64, t: f64) -> GibbsDerivs {
    let pi = p / P_STAR;
    let tau = T_STAR / t;
    let ideal = sum1::<NO>(&IDEAL_METASTABLE, tau, O_LO);
    let res = sum2::<M_NX, M_NY>(&RESIDUAL_METASTABLE, pi, M_X_LO, tau - 0.5, M_Y_LO);
    combine(pi, ideal, res)
}

/// All properties at (p, T) from the metastable-vapour equation (R7-97(2012) Eq. (18), Table 12).
pub fn metastable_props(p: f64, t: f64) -> Props {
    Props::from_gibbs(p, t, P_STAR, T_STAR, R, &metastable_derivs(p, t))
}
