//! The flow equations of a site as a linear system, its degrees-of-freedom analysis (which
//! streams are free, which equations clash) and its direct solution.
//!
//! Units: flows kg/s; coefficients are specific enthalpies (kJ/kg) or pure numbers.
//!
//! Invariant: rows are scaled to a largest coefficient of 1 before any rank decision; the
//! analysis never reports a matrix, only streams and units.

#![allow(clippy::needless_range_loop)] // dense elimination reads clearer with indices

use super::diagnosis::Amount;

/// Makes the amount of a value of a specification (e.g. [`Amount::mass_flow`]).
pub type AmountOf = fn(f64) -> Amount;

/// Who owns an equation: a unit or a stream (by index).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Of {
    /// A unit's balance or specification.
    Unit(usize),
    /// A stream's fixed flow.
    Stream(usize),
}

/// One linear equation sum(coef * m) = rhs on stream flows.
#[derive(Debug, Clone)]
pub struct Row {
    /// (stream index, coefficient).
    pub coefs: Vec<(usize, f64)>,
    /// Right-hand side.
    pub rhs: f64,
    /// Who owns it.
    pub owner: Of,
    /// What it says, e.g. "mass balance" or "fixed flow".
    pub what: &'static str,
    /// A specification (fixed flow, demand, power...) rather than a unit balance.
    pub spec: bool,
    /// A flow the unit computes (through a hole): the solved flow is set to it exactly once
    /// the iteration has converged (`rhs`, the row's one coefficient being 1).
    pub exact: bool,
    /// For a specification of a value (its right-hand side): the field that gives it and the
    /// amount of a value of it (internal units), e.g. ("demand", Amount::mass_flow); None for
    /// balances and ratios.
    pub field: Option<(&'static str, AmountOf)>,
}

impl Row {
    pub fn new(owner: Of, what: &'static str) -> Row {
        Row {
            coefs: Vec::new(),
            rhs: 0.0,
            owner,
            what,
            spec: false,
            exact: false,
            field: None,
        }
    }
    /// The flow of stream `s` fixed to `value` computed by the unit: the solution takes it
    /// exactly.
    pub fn flow(owner: Of, what: &'static str, s: usize, value: f64) -> Row {
        let mut r = Row::new(owner, what);
        r.add(s, 1.0);
        r.rhs = value;
        r.exact = true;
        r
    }
    pub fn spec(owner: Of, what: &'static str) -> Row {
        Row {
            spec: true,
            ..Row::new(owner, what)
        }
    }
    /// A specification of a value: `field` (an amount as `amount` makes it) is its right-hand
    /// side.
    pub fn value(owner: Of, what: &'static str, field: &'static str, amount: AmountOf) -> Row {
        Row {
            field: Some((field, amount)),
            ..Row::spec(owner, what)
        }
    }
    pub fn add(&mut self, i: usize, c: f64) {
        if let Some(e) = self.coefs.iter_mut().find(|(j, _)| *j == i) {
            e.1 += c;
        } else {
            self.coefs.push((i, c));
        }
    }
    fn dense(&self, n: usize) -> (Vec<f64>, f64) {
        let mut a = vec![0.0; n];
        for &(i, c) in &self.coefs {
            a[i] += c;
        }
        let s = a.iter().fold(0.0f64, |m, x| m.max(x.abs()));
        if s > 0.0 {
            for x in a.iter_mut() {
                *x /= s;
            }
            (a, self.rhs / s)
        } else {
            (a, self.rhs)
        }
    }
}

/// The outcome of the rank analysis.
#[derive(Debug, Clone, Default)]
pub struct Analysis {
    /// Rank of the system.
    pub rank: usize,
    /// Streams whose flows would close the system if given (one per missing equation).
    pub free: Vec<usize>,
    /// Streams whose flows are not fixed (nonzero in some null vector).
    pub undetermined: Vec<usize>,
    /// Sets of rows (indices) that are dependent and involve a specification: each set
    /// cannot hold independently.
    pub clashes: Vec<Vec<usize>>,
    /// Unit balances that follow from the others (a closed loop's last mass balance): dropped.
    pub redundant: Vec<usize>,
}

const RANK_TOL: f64 = 1e-10;

/// Rank analysis by incremental row reduction with combination tracking.
pub fn analyse(rows: &[Row], n: usize) -> Analysis {
    let m = rows.len();
    // basis: (reduced row, pivot column, combination of original rows)
    let mut basis: Vec<(Vec<f64>, usize, Vec<f64>)> = Vec::new();
    let mut clashes = Vec::new();
    let mut redundant = Vec::new();
    for (k, row) in rows.iter().enumerate() {
        let (mut r, _) = row.dense(n);
        let mut comb = vec![0.0; m];
        comb[k] = 1.0;
        for (b, piv, bc) in &basis {
            let f = r[*piv] / b[*piv];
            if f != 0.0 {
                for j in 0..n {
                    r[j] -= f * b[j];
                }
                for j in 0..m {
                    comb[j] -= f * bc[j];
                }
            }
        }
        let (piv, big) = r.iter().enumerate().fold((0, 0.0f64), |(pi, pb), (j, x)| {
            if x.abs() > pb {
                (j, x.abs())
            } else {
                (pi, pb)
            }
        });
        if big < RANK_TOL {
            let cmax = comb.iter().fold(0.0f64, |a, x| a.max(x.abs()));
            let set: Vec<usize> = (0..m).filter(|&j| comb[j].abs() > 1e-8 * cmax).collect();
            if set.iter().any(|&j| rows[j].spec) {
                clashes.push(set);
            } else {
                redundant.push(k);
            }
        } else {
            basis.push((r, piv, comb));
        }
    }
    let pivots: Vec<usize> = basis.iter().map(|(_, p, _)| *p).collect();
    let free: Vec<usize> = (0..n).filter(|j| !pivots.contains(j)).collect();
    // null vectors: x_f = 1, other free 0, solve pivot variables (basis is triangular on
    // pivots in reverse order).
    let mut undetermined = Vec::new();
    for &f in &free {
        let mut x = vec![0.0; n];
        x[f] = 1.0;
        for (b, piv, _) in basis.iter().rev() {
            let s: f64 = (0..n).filter(|j| j != piv).map(|j| b[j] * x[j]).sum();
            x[*piv] = -s / b[*piv];
        }
        let xm = x.iter().fold(0.0f64, |a, v| a.max(v.abs()));
        for (j, v) in x.iter().enumerate() {
            if v.abs() > 1e-9 * xm && !undetermined.contains(&j) {
                undetermined.push(j);
            }
        }
    }
    undetermined.sort_unstable();
    Analysis {
        rank: basis.len(),
        free,
        undetermined,
        clashes,
        redundant,
    }
}

/// Solves the square system by Gaussian elimination with partial pivoting. None if singular.
pub fn solve_square(rows: &[Row], n: usize) -> Option<Vec<f64>> {
    if rows.len() != n {
        return None;
    }
    let mut a: Vec<Vec<f64>> = Vec::with_capacity(n);
    let mut b: Vec<f64> = Vec::with_capacity(n);
    for r in rows {
        let (d, rhs) = r.dense(n);
        a.push(d);
        b.push(rhs);
    }
    for col in 0..n {
        let (piv, big) = (col..n).fold((col, 0.0f64), |(pi, pb), i| {
            if a[i][col].abs() > pb {
                (i, a[i][col].abs())
            } else {
                (pi, pb)
            }
        });
        if big < 1e-14 {
            return None;
        }
        a.swap(col, piv);
        b.swap(col, piv);
        for i in col + 1..n {
            let f = a[i][col] / a[col][col];
            if f != 0.0 {
                for j in col..n {
                    let v = a[col][j];
                    a[i][j] -= f * v;
                }
                let v = b[col];
                b[i] -= f * v;
            }
        }
    }
    let mut x = vec![0.0; n];
    for i in (0..n).rev() {
        let s: f64 = (i + 1..n).map(|j| a[i][j] * x[j]).sum();
        x[i] = (b[i] - s) / a[i][i];
    }
    // one step of iterative refinement in the original rows
    let mut r = vec![0.0; n];
    for (i, row) in rows.iter().enumerate() {
        let (d, rhs) = row.dense(n);
        r[i] = rhs - d.iter().zip(&x).map(|(c, v)| c * v).sum::<f64>();
    }
    if r.iter().any(|v| v.abs() > 0.0) {
        if let Some(dx) = solve_plain(rows, n, &r) {
            for (xi, d) in x.iter_mut().zip(dx) {
                *xi += d;
            }
        }
    }
    Some(x)
}

fn solve_plain(rows: &[Row], n: usize, rhs: &[f64]) -> Option<Vec<f64>> {
    let mut a: Vec<Vec<f64>> = rows.iter().map(|r| r.dense(n).0).collect();
    let mut b = rhs.to_vec();
    for col in 0..n {
        let piv = (col..n).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))?;
        if a[piv][col].abs() < 1e-14 {
            return None;
        }
        a.swap(col, piv);
        b.swap(col, piv);
        for i in col + 1..n {
            let f = a[i][col] / a[col][col];
            if f != 0.0 {
                for j in col..n {
                    let v = a[col][j];
                    a[i][j] -= f * v;
                }
                let v = b[col];
                b[i] -= f * v;
            }
        }
    }
    let mut x = vec![0.0; n];
    for i in (0..n).rev() {
        let s: f64 = (i + 1..n).map(|j| a[i][j] * x[j]).sum();
        x[i] = (b[i] - s) / a[i][i];
    }
    Some(x)
}

/// How the solution of the square system `rows` moves per unit change of the right-hand side
/// of row `r` (its column of the inverse): None if singular.
pub fn sensitivity(rows: &[Row], n: usize, r: usize) -> Option<Vec<f64>> {
    let mut rhs = vec![0.0; rows.len()];
    let s = rows[r]
        .coefs
        .iter()
        .fold(0.0f64, |m, &(_, c)| m.max(c.abs()));
    rhs[r] = if s > 0.0 { 1.0 / s } else { 1.0 };
    solve_plain(rows, n, &rhs)
}

/// Largest relative residual of the rows at `x`: |a.x - b| / max(|a_i x_i|, |b|).
pub fn residual(rows: &[Row], x: &[f64]) -> f64 {
    let mut worst = 0.0f64;
    for r in rows {
        let mut s = -r.rhs;
        let mut scale = r.rhs.abs();
        for &(i, c) in &r.coefs {
            s += c * x[i];
            scale = scale.max((c * x[i]).abs());
        }
        if scale > 0.0 {
            worst = worst.max(s.abs() / scale);
        }
    }
    worst
}
