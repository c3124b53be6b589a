//! IAPWS-IF97 region 1 (compressed liquid): the basic equation, IAPWS R7-97(2012) Eq. (7) with
//! the coefficients of Table 2 (`tables::if97_region1`), and the properties of Table 3.
//!
//! Units: p MPa, T K; results in the crate's internal units (see `crate::water::props`).
//! Validity (R7-97(2012)): 273.15 K <= T <= 623.15 K, p_s(T) <= p <= 100 MPa. The functions here
//! do not check the range (see `regions::region_pt`); they evaluate the equation for any finite
//! input and never panic.
//!
//! Invariant: the powers of (7.1 - pi) and (tau - 1.222) are built once per call by
//! multiplication, with no allocation.

use super::powers::{i_max, i_min, j_max, j_min, prepare2, sum2_order, Term2};
use crate::water::props::{GibbsDerivs, Props};
use crate::water::tables::if97_region1::{P_STAR, R, TABLE_2, T_STAR};

const X_LO: i32 = i_min(&TABLE_2) - 2;
const NX: usize = (i_max(&TABLE_2) - X_LO + 1) as usize;
const Y_LO: i32 = j_min(&TABLE_2) - 2;
const NY: usize = (j_max(&TABLE_2) - Y_LO + 1) as usize;
const TERMS: [Term2; TABLE_2.len()] = prepare2(&TABLE_2, X_LO, Y_LO);

/// Debug builds only: Table 2 with the fault of [`super::fault`] (n_3 changed in its eighth
/// digit), read instead of [`TERMS`] once the fault is switched on.
#[cfg(debug_assertions)]
const TERMS_FAULTY: [Term2; TABLE_2.len()] = prepare2(&faulty_table_2(), X_LO, Y_LO);

#[cfg(debug_assertions)]
const fn faulty_table_2() -> [crate::water::tables::IJn; TABLE_2.len()] {
    let mut t = TABLE_2;
    t[2].n *= 1.0 + super::fault::RELATIVE_CHANGE;
    t
}

/// The coefficient table region 1 computes with: [`TERMS`] (in a debug build, the faulty table
/// once [`super::fault`] is on).
#[inline(always)]
fn terms() -> &'static [Term2; TABLE_2.len()] {
    #[cfg(debug_assertions)]
    if super::fault::on() {
        return &TERMS_FAULTY;
    }
    &TERMS
}

/// Derivatives of gamma(pi, tau) = g/(RT), pi = p/16.53 MPa, tau = 1386 K/T
/// (R7-97(2012) Eq. (7), Table 4).
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
    // gamma = sum n (7.1 - pi)^I (tau - 1.222)^J; d(7.1 - pi)/dpi = -1.
    let s = sum2_order::<NX, NY, SECOND>(terms(), 7.1 - pi, X_LO, tau - 1.222, Y_LO);
    GibbsDerivs {
        g: s.s,
        g_p: -s.s_x,
        g_pp: s.s_xx,
        g_t: s.s_y,
        g_tt: s.s_yy,
        g_pt: -s.s_xy,
    }
}

/// All properties at (p, T) from the region-1 equation (R7-97(2012) Table 3).
pub fn props(p: f64, t: f64) -> Props {
    Props::from_gibbs(p, t, P_STAR, T_STAR, R, &derivs(p, t))
}

/// The first-order properties at (p, T) (see [`Props::from_gibbs_first`]), bit-identical to
/// those of [`props`].
pub fn props_first(p: f64, t: f64) -> Props {
    Props::from_gibbs_first(p, t, P_STAR, T_STAR, R, &derivs_first(p, t))
}
