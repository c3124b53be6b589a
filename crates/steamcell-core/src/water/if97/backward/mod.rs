//! IAPWS-IF97 backward equations: R7-97(2012) T(p,h), T(p,s) for regions 1 and 2; SR2-01 p(h,s)
//! regions 1 and 2; SR3-03 region 3 T, v of (p,h) and (p,s), p3sat(h), p3sat(s); SR4-04 p3(h,s),
//! Tsat(h,s) and the (h,s) boundaries; SR5-05 v(p,T) for region 3 with all subregions.
//!
//! Units: p MPa, T K, h kJ/kg, s kJ/(kg K), v m3/kg. Every function is a raw evaluation of the
//! published equation (no iteration, no refinement, no range check): finite input gives a
//! finite or non-finite `f64`, never a panic. Range checks and refinement belong to the callers.
//!
//! Invariant: the power series are evaluated in table order from powers computed once per call
//! (`Series`), with integer exponents only (`powi` on a cached range); no allocation.

pub mod hs;
pub mod region1;
pub mod region2;
pub mod region3;
pub mod region3_vpt;

use crate::water::tables::{IJn, IfJn};

/// Largest exponent span (max - min + 1) a series may use; checked at compile time.
const MAX_SPAN: usize = 64;

/// A two-variable power series `sum n x^I y^J` with its exponent ranges, built at compile time.
pub(crate) struct Series {
    terms: &'static [IJn],
    i_lo: i32,
    i_len: usize,
    j_lo: i32,
    j_len: usize,
}

impl Series {
    /// Builds the series and its exponent ranges; fails to compile if a span exceeds `MAX_SPAN`.
    pub(crate) const fn new(terms: &'static [IJn]) -> Series {
        assert!(!terms.is_empty());
        let (mut i_lo, mut i_hi, mut j_lo, mut j_hi) =
            (terms[0].i, terms[0].i, terms[0].j, terms[0].j);
        let mut k = 1;
        while k < terms.len() {
            let t = terms[k];
            if t.i < i_lo {
                i_lo = t.i;
            }
            if t.i > i_hi {
                i_hi = t.i;
            }
            if t.j < j_lo {
                j_lo = t.j;
            }
            if t.j > j_hi {
                j_hi = t.j;
            }
            k += 1;
        }
        let i_len = (i_hi - i_lo + 1) as usize;
        let j_len = (j_hi - j_lo + 1) as usize;
        assert!(i_len <= MAX_SPAN && j_len <= MAX_SPAN);
        Series {
            terms,
            i_lo,
            i_len,
            j_lo,
            j_len,
        }
    }

    /// `sum_k n_k x^I_k y^J_k`, summed in table order.
    #[inline]
    pub(crate) fn eval(&self, x: f64, y: f64) -> f64 {
        let px = powers(x, self.i_lo, self.i_len);
        let py = powers(y, self.j_lo, self.j_len);
        let mut sum = 0.0;
        for t in self.terms {
            // In range by construction (`new` computed the ranges from these terms).
            sum += t.n * px[(t.i - self.i_lo) as usize] * py[(t.j - self.j_lo) as usize];
        }
        sum
    }
}

/// A series with fractional exponents I that are multiples of 1/4 (IF97 T(p,s) subregion 2a):
/// `sum n x^I y^J` is evaluated as `sum n (x^(1/4))^(4 I) y^J`.
pub(crate) struct QuarterSeries {
    terms: &'static [IfJn],
    k_lo: i32,
    k_len: usize,
    j_lo: i32,
    j_len: usize,
}

impl QuarterSeries {
    /// Builds the series; fails to compile if an I is not a multiple of 1/4 or a span is too wide.
    pub(crate) const fn new(terms: &'static [IfJn]) -> QuarterSeries {
        assert!(!terms.is_empty());
        let k0 = quarter(terms[0].i);
        let (mut k_lo, mut k_hi, mut j_lo, mut j_hi) = (k0, k0, terms[0].j, terms[0].j);
        let mut k = 0;
        while k < terms.len() {
            let t = terms[k];
            let q = quarter(t.i);
            if q < k_lo {
                k_lo = q;
            }
            if q > k_hi {
                k_hi = q;
            }
            if t.j < j_lo {
                j_lo = t.j;
            }
            if t.j > j_hi {
                j_hi = t.j;
            }
            k += 1;
        }
        let k_len = (k_hi - k_lo + 1) as usize;
        let j_len = (j_hi - j_lo + 1) as usize;
        assert!(k_len <= MAX_SPAN && j_len <= MAX_SPAN);
        QuarterSeries {
            terms,
            k_lo,
            k_len,
            j_lo,
            j_len,
        }
    }

    /// `sum_k n_k x^I_k y^J_k` for x >= 0, summed in table order.
    #[inline]
    pub(crate) fn eval(&self, x: f64, y: f64) -> f64 {
        let pq = powers(x.sqrt().sqrt(), self.k_lo, self.k_len);
        let py = powers(y, self.j_lo, self.j_len);
        let mut sum = 0.0;
        for t in self.terms {
            sum += t.n * pq[(quarter(t.i) - self.k_lo) as usize] * py[(t.j - self.j_lo) as usize];
        }
        sum
    }
}

/// 4 I as an integer; compile-time check that I is a multiple of 1/4.
const fn quarter(i: f64) -> i32 {
    let k = (i * 4.0) as i32;
    assert!(k as f64 == i * 4.0);
    k
}

/// `x^lo, x^(lo+1), ..., x^(lo+len-1)` in the first `len` slots.
#[inline]
fn powers(x: f64, lo: i32, len: usize) -> [f64; MAX_SPAN] {
    let mut out = [0.0; MAX_SPAN];
    for (e, slot) in (lo..).zip(out.iter_mut().take(len)) {
        *slot = x.powi(e);
    }
    out
}

/// `sum n x^I` for a one-variable series with small integer exponents.
#[inline]
pub(crate) fn sum_i(terms: &[crate::water::tables::In], x: f64) -> f64 {
    let mut sum = 0.0;
    for t in terms {
        sum += t.n * x.powi(t.i);
    }
    sum
}
