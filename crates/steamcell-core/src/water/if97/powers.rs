//! Power tables and power-series sums shared by the IF97 basic equations (regions 1, 2, 3, 5 and
//! the metastable-vapour equation). Dimensionless numbers only; no units here.
//!
//! Invariant: integer powers are built by repeated multiplication once per call into a fixed-size
//! array on the stack (no allocation, no `powf`); the bounds of each array are computed at compile
//! time from the coefficient table it serves, so every lookup is in range.

use crate::water::tables::{IJn, Jn};

/// Smallest exponent I of a two-variable table (compile time).
pub(crate) const fn i_min(t: &[IJn]) -> i32 {
    let mut k = 0;
    let mut m = i32::MAX;
    while k < t.len() {
        if t[k].i < m {
            m = t[k].i;
        }
        k += 1;
    }
    m
}

/// Largest exponent I of a two-variable table (compile time).
pub(crate) const fn i_max(t: &[IJn]) -> i32 {
    let mut k = 0;
    let mut m = i32::MIN;
    while k < t.len() {
        if t[k].i > m {
            m = t[k].i;
        }
        k += 1;
    }
    m
}

/// Smallest exponent J of a two-variable table (compile time).
pub(crate) const fn j_min(t: &[IJn]) -> i32 {
    let mut k = 0;
    let mut m = i32::MAX;
    while k < t.len() {
        if t[k].j < m {
            m = t[k].j;
        }
        k += 1;
    }
    m
}

/// Largest exponent J of a two-variable table (compile time).
pub(crate) const fn j_max(t: &[IJn]) -> i32 {
    let mut k = 0;
    let mut m = i32::MIN;
    while k < t.len() {
        if t[k].j > m {
            m = t[k].j;
        }
        k += 1;
    }
    m
}

/// Smallest exponent J of a one-variable table (compile time).
pub(crate) const fn jn_min(t: &[Jn]) -> i32 {
    let mut k = 0;
    let mut m = i32::MAX;
    while k < t.len() {
        if t[k].j < m {
            m = t[k].j;
        }
        k += 1;
    }
    m
}

/// Largest exponent J of a one-variable table (compile time).
pub(crate) const fn jn_max(t: &[Jn]) -> i32 {
    let mut k = 0;
    let mut m = i32::MIN;
    while k < t.len() {
        if t[k].j > m {
            m = t[k].j;
        }
        k += 1;
    }
    m
}

/// `[x^lo, x^(lo+1), ..., x^(lo+N-1)]`, built by multiplication outward from x^0 = 1 (exactly).
/// Four interleaved chains (each step multiplies by x^4) keep the dependency chains short, so
/// the table costs about a quarter of the latency of one long chain. For `lo > 0` the first
/// entries are `x.powi(lo + k)`. Negative powers of `x = 0` are infinite.
#[inline(always)]
pub(crate) fn powers<const N: usize>(x: f64, lo: i32) -> [f64; N] {
    let mut out = [0.0; N];
    if N == 0 {
        return out;
    }
    if lo > 0 {
        let x4 = (x * x) * (x * x);
        for (k, o) in out.iter_mut().enumerate().take(4) {
            *o = x.powi(lo + k as i32);
        }
        let mut k = 4;
        while k < N {
            out[k] = out[k - 4] * x4;
            k += 1;
        }
        return out;
    }
    let z = (-lo) as usize; // index of x^0
    let x2 = x * x;
    let x4 = x2 * x2;
    // Upward from x^0: seeds x^0..x^3, then steps of x^4.
    let seeds_up = [1.0, x, x2, x2 * x];
    let mut k = z;
    while k < N {
        out[k] = if k - z < 4 {
            seeds_up[k - z]
        } else {
            out[k - 4] * x4
        };
        k += 1;
    }
    // Downward from x^0: seeds x^-1..x^-4, then steps of x^-4.
    let xi = 1.0 / x;
    let xi2 = xi * xi;
    let xi4 = xi2 * xi2;
    let seeds_down = [xi, xi2, xi2 * xi, xi4];
    let mut e = 1usize; // exponent -e
    while e <= z {
        let idx = z - e;
        let v = if e <= 4 {
            seeds_down[e - 1]
        } else {
            // x^-e = x^-(e-4) * x^-4; index of x^-(e-4) is idx + 4 (may be beyond the table
            // when the table holds only negative powers and z >= N).
            out_or(&out, idx + 4, xi, e - 4) * xi4
        };
        if idx < N {
            out[idx] = v;
        }
        e += 1;
    }
    out
}

/// `out[i]` when inside the table, else x^-e recomputed (only for tables of negative powers
/// that do not reach x^0).
#[inline(always)]
fn out_or<const N: usize>(out: &[f64; N], i: usize, xi: f64, e: usize) -> f64 {
    if i < N {
        out[i]
    } else {
        xi.powi(e as i32)
    }
}

/// A sum S(x, y) = sum n x^I y^J and its first and second partial derivatives.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct Sum2 {
    pub s: f64,
    pub s_x: f64,
    pub s_xx: f64,
    pub s_y: f64,
    pub s_yy: f64,
    pub s_xy: f64,
}

/// A term n x^I y^J prepared at compile time for [`sum2`]: the table indices of x^I and y^J
/// and the coefficient products that do not depend on x or y. Each product is the one the
/// evaluation would otherwise form at run time, in the same order, so the sums are identical
/// bit for bit.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Term2 {
    /// Index of x^I in the power table.
    a: usize,
    /// Index of y^J in the power table.
    b: usize,
    /// n
    n: f64,
    /// n I
    ni: f64,
    /// n I (I - 1)
    nii: f64,
    /// J
    fj: f64,
    /// J - 1
    fj1: f64,
}

/// Prepares a two-variable table for [`sum2`] with power tables starting at `x_lo`, `y_lo`
/// (requires `x_lo <= min I - 2` and `y_lo <= min J - 2`, checked at compile time).
pub(crate) const fn prepare2<const K: usize>(t: &[IJn; K], x_lo: i32, y_lo: i32) -> [Term2; K] {
    let mut out = [Term2 {
        a: 0,
        b: 0,
        n: 0.0,
        ni: 0.0,
        nii: 0.0,
        fj: 0.0,
        fj1: 0.0,
    }; K];
    let mut k = 0;
    while k < K {
        assert!(t[k].i - x_lo >= 2 && t[k].j - y_lo >= 2);
        let fi = t[k].i as f64;
        let fj = t[k].j as f64;
        out[k] = Term2 {
            a: (t[k].i - x_lo) as usize,
            b: (t[k].j - y_lo) as usize,
            n: t[k].n,
            ni: t[k].n * fi,
            nii: t[k].n * fi * (fi - 1.0),
            fj,
            fj1: fj - 1.0,
        };
        k += 1;
    }
    out
}

/// Evaluates sum n x^I y^J with its derivatives over a table prepared by [`prepare2`] with the
/// same `x_lo`, `y_lo`; `x_lo + NX > max I` and `y_lo + NY > max J` (the callers derive these
/// at compile time).
#[inline(always)]
pub(crate) fn sum2<const NX: usize, const NY: usize>(
    terms: &[Term2],
    x: f64,
    x_lo: i32,
    y: f64,
    y_lo: i32,
) -> Sum2 {
    sum2_order::<NX, NY, true>(terms, x, x_lo, y, y_lo)
}

/// [`sum2`] with the second derivatives left out when `SECOND` is false (they are then NaN).
/// The sum and its first derivatives are accumulated by the same expressions in the same order
/// either way, so they are identical bit for bit.
#[inline(always)]
pub(crate) fn sum2_order<const NX: usize, const NY: usize, const SECOND: bool>(
    terms: &[Term2],
    x: f64,
    x_lo: i32,
    y: f64,
    y_lo: i32,
) -> Sum2 {
    let xp: [f64; NX] = powers(x, x_lo);
    let yp: [f64; NY] = powers(y, y_lo);
    let mut r = Sum2::default();
    for t in terms {
        let (a, b) = (t.a, t.b);
        let (x0, x1) = (xp[a], xp[a - 1]);
        let (y0, y1) = (yp[b], yp[b - 1]);
        let nx0 = t.n * x0;
        let nx1 = t.ni * x1;
        r.s += nx0 * y0;
        r.s_x += nx1 * y0;
        r.s_y += nx0 * t.fj * y1;
        if SECOND {
            let (x2, y2) = (xp[a - 2], yp[b - 2]);
            r.s_xx += t.nii * x2 * y0;
            r.s_yy += nx0 * t.fj * t.fj1 * y2;
            r.s_xy += nx1 * t.fj * y1;
        }
    }
    if !SECOND {
        r.s_xx = f64::NAN;
        r.s_yy = f64::NAN;
        r.s_xy = f64::NAN;
    }
    r
}

/// A sum S(x) = sum n x^J and its first two derivatives.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct Sum1 {
    pub s: f64,
    pub s_x: f64,
    pub s_xx: f64,
}

/// A term n x^J prepared at compile time for [`sum1`] (see [`Term2`]).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Term1 {
    /// Index of x^J in the power table.
    b: usize,
    /// n
    n: f64,
    /// n J
    nj: f64,
    /// n J (J - 1)
    njj: f64,
}

/// Prepares a one-variable table for [`sum1`] with its power table starting at `lo`
/// (requires `lo <= min J - 2`, checked at compile time).
pub(crate) const fn prepare1<const K: usize>(t: &[Jn; K], lo: i32) -> [Term1; K] {
    let mut out = [Term1 {
        b: 0,
        n: 0.0,
        nj: 0.0,
        njj: 0.0,
    }; K];
    let mut k = 0;
    while k < K {
        assert!(t[k].j - lo >= 2);
        let fj = t[k].j as f64;
        out[k] = Term1 {
            b: (t[k].j - lo) as usize,
            n: t[k].n,
            nj: t[k].n * fj,
            njj: t[k].n * fj * (fj - 1.0),
        };
        k += 1;
    }
    out
}

/// Evaluates sum n x^J with its derivatives over a table prepared by [`prepare1`] with the
/// same `lo`; `lo + N > max J`.
#[inline(always)]
pub(crate) fn sum1<const N: usize>(terms: &[Term1], x: f64, lo: i32) -> Sum1 {
    sum1_order::<N, true>(terms, x, lo)
}

/// [`sum1`] with the second derivative left out (NaN) when `SECOND` is false; the sum and the
/// first derivative are identical bit for bit either way.
#[inline(always)]
pub(crate) fn sum1_order<const N: usize, const SECOND: bool>(
    terms: &[Term1],
    x: f64,
    lo: i32,
) -> Sum1 {
    let xp: [f64; N] = powers(x, lo);
    let mut r = Sum1::default();
    for t in terms {
        let b = t.b;
        r.s += t.n * xp[b];
        r.s_x += t.nj * xp[b - 1];
        if SECOND {
            r.s_xx += t.njj * xp[b - 2];
        }
    }
    if !SECOND {
        r.s_xx = f64::NAN;
    }
    r
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn powers_match_powi() {
        let x = 1.37_f64;
        let p: [f64; 12] = powers(x, -5);
        for (k, v) in p.iter().enumerate() {
            let e = k as i32 - 5;
            assert!((v / x.powi(e) - 1.0).abs() < 1e-14, "x^{e}");
        }
        let q: [f64; 4] = powers(x, 2);
        for (k, v) in q.iter().enumerate() {
            let e = k as i32 + 2;
            assert!((v / x.powi(e) - 1.0).abs() < 1e-14, "x^{e}");
        }
        let r: [f64; 3] = powers(x, -7);
        for (k, v) in r.iter().enumerate() {
            let e = k as i32 - 7;
            assert!((v / x.powi(e) - 1.0).abs() < 1e-14, "x^{e}");
        }
    }
}
