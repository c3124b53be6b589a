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

/// Evaluates sum n x^I y^J with its derivatives. Requires `x_lo <= min I - 2`,
/// `x_lo + NX > max I`, and the same for `y` with J (the callers derive these at compile time).
#[inline(always)]
pub(crate) fn sum2<const NX: usize, const NY: usize>(
    terms: &[IJn],
    x: f64,
    x_lo: i32,
    y: f64,
    y_lo: i32,
) -> Sum2 {
    let xp: [f64; NX] = powers(x, x_lo);
    let yp: [f64; NY] = powers(y, y_lo);
    let mut r = Sum2::default();
    for t in terms {
        let a = (t.i - x_lo) as usize;
        let b = (t.j - y_lo) as usize;
        let fi = t.i as f64;
        let fj = t.j as f64;
        let (x0, x1, x2) = (xp[a], xp[a - 1], xp[a - 2]);
        let (y0, y1, y2) = (yp[b], yp[b - 1], yp[b - 2]);
        let nx0 = t.n * x0;
        let nx1 = t.n * fi * x1;
        r.s += nx0 * y0;
        r.s_x += nx1 * y0;
        r.s_xx += t.n * fi * (fi - 1.0) * x2 * y0;
        r.s_y += nx0 * fj * y1;
        r.s_yy += nx0 * fj * (fj - 1.0) * y2;
        r.s_xy += nx1 * fj * y1;
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

/// Evaluates sum n x^J with its derivatives; `lo <= min J - 2`, `lo + N > max J`.
#[inline(always)]
pub(crate) fn sum1<const N: usize>(terms: &[Jn], x: f64, lo: i32) -> Sum1 {
    let xp: [f64; N] = powers(x, lo);
    let mut r = Sum1::default();
    for t in terms {
        let b = (t.j - lo) as usize;
        let fj = t.j as f64;
        r.s += t.n * xp[b];
        r.s_x += t.n * fj * xp[b - 1];
        r.s_xx += t.n * fj * (fj - 1.0) * xp[b - 2];
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
