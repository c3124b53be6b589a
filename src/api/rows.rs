//! The bulk row pipeline shared by `water.batch` and `POST /columns`: two input columns in,
//! one value per wanted property and row out, computed in one pass per row.
//!
//! Each row is read, solved and turned into its outputs (in the request's units, per column) by one closure,
//! writing straight into a row-major output buffer; rows are split into blocks that run on all
//! cores above [`PARALLEL_THRESHOLD`] rows. Failed rows are kept sparse (row index and error), so
//! a clean batch allocates nothing per row beyond its outputs.
//!
//! It also owns the bulk vocabulary shared by `water.batch` and `/columns`: the input column
//! names ([`input_dim`]) and their units ([`input_unit`]: a unit per column, converted once and
//! vectorised), the wanted outputs ([`check_want`]), their units ([`column_unit`]) and the
//! legends of coded text columns ([`legend`]: "phase" travels as its index in [`PHASES`]).
//!
//! Invariants: every row is computed by the same code whether the batch runs on one core or
//! many, so results are identical bit for bit; when every wanted property is first-order
//! (`Field::is_first_order`, "region", "phase"), rows are solved by
//! `water::solve_first_order`, whose values of those equal `water::solve`'s bit for bit.

use super::vocab::Ctx;
use crate::error::{Error, Result};
use crate::units::{Dim, Unit};
use crate::water::pairs::{self, accepted_pairs, INPUTS};
use crate::water::state::{Given, Options, Phase, State};
use crate::water::{self as physics, Field, Formulation};
use rayon::prelude::*;

/// Rows above which a batch is computed on all cores. Each row is computed by the same code
/// either way, so the results are identical bit for bit.
pub const PARALLEL_THRESHOLD: usize = 2048;

/// Rows per block of parallel work.
const BLOCK: usize = 1024;

/// The phases in the order of their code in a "phase" output (see [`Rows::phase`]): the legend
/// of a packed "phase" column.
pub const PHASES: [Phase; 4] = [
    Phase::Liquid,
    Phase::Vapour,
    Phase::Wet,
    Phase::Supercritical,
];

/// One input column in internal units.
#[derive(Debug, Clone)]
pub struct InputColumn {
    /// The property the column gives (p, T, h, s, u, v, rho, x).
    pub name: &'static str,
    /// Values in internal units; NaN where the row's value could not be converted.
    pub values: Vec<f64>,
    /// The rows whose value could not be converted, in row order.
    pub errors: Vec<(usize, Error)>,
}

impl InputColumn {
    /// A column of raw numbers in `unit` (the column's own unit, else the request's unit for
    /// `name`), converted once, vectorised; `ambient` (MPa) for gauge units. NaN or infinity:
    /// that row fails.
    pub fn from_numbers(name: &'static str, unit: Unit, ambient: f64, raw: &[f64]) -> InputColumn {
        InputColumn::from_source(name, unit, ambient, raw.len(), |i| raw[i])
    }

    /// A column of little-endian doubles (8 bytes a row) in `unit`, as [`InputColumn::from_numbers`].
    pub fn from_le_bytes(
        name: &'static str,
        unit: Unit,
        ambient: f64,
        bytes: &[u8],
    ) -> InputColumn {
        let raw = |i: usize| {
            let mut b = [0u8; 8];
            b.copy_from_slice(&bytes[i * 8..i * 8 + 8]);
            f64::from_le_bytes(b)
        };
        InputColumn::from_source(name, unit, ambient, bytes.len() / 8, raw)
    }

    fn from_source(
        name: &'static str,
        unit: Unit,
        ambient: f64,
        n: usize,
        raw: impl Fn(usize) -> f64 + Sync,
    ) -> InputColumn {
        let conv = |i: usize| {
            let x = raw(i);
            if x.is_finite() {
                unit.to_internal(x, ambient)
            } else {
                f64::NAN
            }
        };
        let values: Vec<f64> = if n >= PARALLEL_THRESHOLD {
            (0..n).into_par_iter().map(conv).collect()
        } else {
            (0..n).map(conv).collect()
        };
        // Only a non-finite input becomes NaN; its error is built from the raw value.
        let errors = values
            .iter()
            .enumerate()
            .filter(|(_, x)| x.is_nan())
            .filter_map(|(i, _)| Error::check_finite(name, raw(i)).err().map(|e| (i, e)))
            .collect();
        InputColumn {
            name,
            values,
            errors,
        }
    }

    /// A column of per-row conversions (JSON numbers or texts with units).
    pub fn from_results(
        name: &'static str,
        rows: impl Iterator<Item = Result<f64>>,
    ) -> InputColumn {
        let mut values = Vec::with_capacity(rows.size_hint().0);
        let mut errors = Vec::new();
        for (i, r) in rows.enumerate() {
            match r {
                Ok(x) => values.push(x),
                Err(e) => {
                    values.push(f64::NAN);
                    errors.push((i, e));
                }
            }
        }
        InputColumn {
            name,
            values,
            errors,
        }
    }

    /// Number of rows.
    pub fn len(&self) -> usize {
        self.values.len()
    }

    /// Whether the column has no rows.
    pub fn is_empty(&self) -> bool {
        self.values.is_empty()
    }

    /// The value of row `i`, or its conversion error.
    fn get(&self, i: usize) -> Result<f64> {
        let x = self.values[i];
        if !x.is_nan() {
            return Ok(x);
        }
        match self.errors.binary_search_by_key(&i, |(r, _)| *r) {
            Ok(k) => Err(self.errors[k].1.clone()),
            Err(_) => Ok(x),
        }
    }
}

/// One wanted output, resolved once from its name.
#[derive(Debug, Clone, Copy)]
enum Out {
    /// A numeric field of `water.state` with its output unit.
    Field(Field, Unit),
    /// The IF97 region number.
    Region,
    /// The phase, as its index in [`PHASES`].
    Phase,
}

/// Which two properties a batch gives, decided once for all rows.
#[derive(Clone, Copy)]
struct PairKind {
    ctor: PairCtor,
    swap: bool,
}

type PairCtor = fn(f64, f64) -> Result<Given>;

impl PairKind {
    fn new(a: &str, b: &str) -> Result<PairKind> {
        let found = match (Field::parse(a), Field::parse(b)) {
            (Some(fa), Some(fb)) => pairs::find(fa, fb),
            _ => None,
        };
        match found {
            Some((spec, swap)) => Ok(PairKind {
                ctor: spec.given,
                swap,
            }),
            None => Err(Error::invalid(format!(
                "the pair ({a},{b}) is not supported; accepted pairs: {}",
                accepted_pairs()
            ))),
        }
    }

    fn given(&self, va: f64, vb: f64) -> Result<Given> {
        if self.swap {
            (self.ctor)(vb, va)
        } else {
            (self.ctor)(va, vb)
        }
    }
}

/// The outputs of a batch: `k` values per row, row-major, each in its column's unit.
#[derive(Debug, Clone)]
pub struct Rows {
    /// Number of rows.
    pub n: usize,
    /// Outputs per row (the wanted properties, in order).
    pub k: usize,
    /// Row-major values: NaN where undefined or where the row failed; a "phase" output holds
    /// the phase's index in [`PHASES`], a "region" output the IF97 region number.
    pub values: Vec<f64>,
    /// The failed rows, in row order.
    pub failed: Vec<(usize, Error)>,
    /// The rows solved in another phase than the batch's `expect`, with their phase, in row
    /// order (their values are given; the flag says they are not what was expected).
    pub flagged: Vec<(usize, Phase)>,
}

impl Rows {
    /// The values of output `j`, one per row.
    pub fn column(&self, j: usize) -> Vec<f64> {
        self.values
            .iter()
            .skip(j)
            .step_by(self.k)
            .copied()
            .collect()
    }

    /// Appends every output as a column of little-endian doubles, output after output (on all
    /// cores above [`PARALLEL_THRESHOLD`] rows).
    pub fn write_columns_le(&self, out: &mut Vec<u8>) {
        let start = out.len();
        out.resize(start + self.n * self.k * 8, 0);
        if self.n == 0 || self.k == 0 {
            return;
        }
        let (n, k) = (self.n, self.k);
        // Each column in blocks of rows, so the work spreads even with one column.
        let fill = |j: usize, blk: usize, part: &mut [u8]| {
            for (r, b) in part.chunks_exact_mut(8).enumerate() {
                let i = blk * BLOCK + r;
                b.copy_from_slice(&self.values[i * k + j].to_le_bytes());
            }
        };
        let body = &mut out[start..];
        if n >= PARALLEL_THRESHOLD {
            body.par_chunks_exact_mut(n * 8)
                .enumerate()
                .for_each(|(j, col)| {
                    col.par_chunks_mut(BLOCK * 8)
                        .enumerate()
                        .for_each(|(blk, part)| fill(j, blk, part))
                });
        } else {
            for (j, col) in body.chunks_exact_mut(n * 8).enumerate() {
                for (blk, part) in col.chunks_mut(BLOCK * 8).enumerate() {
                    fill(j, blk, part);
                }
            }
        }
    }

    /// The phase of row `i` from a "phase" output `j` (None where the row failed).
    pub fn phase(&self, i: usize, j: usize) -> Option<Phase> {
        let code = self.values[i * self.k + j];
        if code.is_nan() {
            None
        } else {
            PHASES.get(code as usize).copied()
        }
    }
}

/// The field and dimension of an input column name, or an error listing the accepted names.
pub fn input_dim(name: &str) -> Result<(&'static str, Dim)> {
    INPUTS
        .into_iter()
        .find(|f| f.name() == name)
        .map(|f| (f.name(), f.dim()))
        .ok_or_else(|| {
            Error::invalid(format!(
                "given: '{name}' is not an input property; accepted: {}",
                INPUTS.map(Field::name).join(", ")
            ))
        })
}

/// The unit of a result column, if it has one (a numeric field of `water.state`).
pub fn column_unit(ctx: &Ctx, name: &str) -> Option<&'static str> {
    Field::parse(name).map(|f| ctx.unit(f.name(), f.dim()))
}

/// The names behind the codes of a coded text column ("phase": [`PHASES`] by index), or None
/// for a column of numbers ("region" holds the IF97 region number itself).
pub fn legend(name: &str) -> Option<Vec<&'static str>> {
    (name == "phase").then(|| PHASES.iter().map(|p| p.name()).collect())
}

/// The unit of one input column: its own unit text if it has one (`own`: the key the caller
/// wrote it under, e.g. "given_units.p", for messages, and the text; checked against the
/// column's dimension), else the request's unit for `name`.
pub fn input_unit(ctx: &Ctx, name: &str, dim: Dim, own: Option<(&str, &str)>) -> Result<Unit> {
    let unit = match own {
        Some((key, text)) => crate::units::parse_unit(key, dim, text)?,
        None => ctx.in_unit(name, dim),
    };
    ctx.note_input(name, dim, unit);
    Ok(unit)
}

/// Checks a `want` list: numeric fields of `water.state`, "region", and "phase" when texts are
/// allowed.
pub fn check_want(want: &[String], texts: bool) -> Result<()> {
    if want.is_empty() {
        return Err(Error::invalid("want is empty: name at least one property"));
    }
    for w in want {
        let ok = Field::parse(w).is_some() || w == "region" || (texts && w == "phase");
        if !ok {
            return Err(Error::invalid(format!(
                "want: '{w}' is not a property; accepted: {}, region{}",
                Field::ALL.map(Field::name).join(", "),
                if texts { ", phase" } else { "" }
            )));
        }
    }
    Ok(())
}

/// The phase a batch expects (`expect`): "liquid", "vapour" (or "vapor", "steam"), "wet" or
/// "supercritical"; None when absent.
pub fn parse_expect(expect: Option<&str>) -> Result<Option<Phase>> {
    Ok(match expect {
        None => None,
        Some("liquid") | Some("water") => Some(Phase::Liquid),
        Some("vapour") | Some("vapor") | Some("steam") => Some(Phase::Vapour),
        Some("wet") => Some(Phase::Wet),
        Some("supercritical") => Some(Phase::Supercritical),
        Some(other) => {
            return Err(Error::invalid(format!(
                "expect = '{other}' is not a phase; accepted: liquid (or water), vapour (or vapor, steam), wet, supercritical"
            )))
        }
    })
}

/// The message of a row flagged by `expect`.
pub fn flag_message(row: usize, phase: Phase, expect: Option<Phase>) -> String {
    match expect {
        Some(e) => format!(
            "row {row}: {} where the batch expects {}; check the row's inputs (e.g. a tag's pressure or temperature) or the process state",
            phase.name(),
            e.name()
        ),
        None => format!("row {row}: {}", phase.name()),
    }
}

/// Whether a state is in the phase `expect`: a saturated end (x = 0 or x = 1 from a (p, x) or
/// (T, x) input) counts as liquid or vapour as well as wet.
fn in_phase(st: &State, expect: Phase) -> bool {
    st.phase == expect
        || match (st.x, expect) {
            (Some(x), Phase::Vapour) => x >= 1.0,
            (Some(x), Phase::Liquid) => x <= 0.0,
            _ => false,
        }
}

/// What happened to a row other than a clean answer.
enum Note {
    /// The row could not be solved.
    Failed(Error),
    /// The row was solved in another phase than expected.
    Unexpected(Phase),
}

/// Resolves the wanted names (already checked by `check_want`).
fn outputs(ctx: &Ctx, want: &[String]) -> Result<Vec<Out>> {
    want.iter()
        .map(|w| match w.as_str() {
            "region" => Ok(Out::Region),
            "phase" => Ok(Out::Phase),
            name => Field::parse(name)
                .map(|f| Out::Field(f, ctx.out_unit(f.name(), f.dim())))
                .ok_or_else(|| Error::invalid(format!("want: '{name}' is not a property"))),
        })
        .collect()
}

/// Solves every row of two input columns and computes the wanted outputs, on all cores above
/// [`PARALLEL_THRESHOLD`] rows. The pair and the wanted names are checked once, so a bad pair
/// fails the call rather than every row. With `expect`, rows solved in another phase are
/// flagged ([`Rows::flagged`]).
pub fn compute(
    ctx: &Ctx,
    opts: &Options,
    f: Formulation,
    a: &InputColumn,
    b: &InputColumn,
    want: &[String],
    expect: Option<Phase>,
) -> Result<Rows> {
    let kind = PairKind::new(a.name, b.name)?;
    let outs = outputs(ctx, want)?;
    let n = a.len();
    if b.len() != n {
        return Err(Error::invalid(format!(
            "the input columns differ in length: {} has {n} rows, {} has {}",
            a.name,
            b.name,
            b.len()
        )));
    }
    let k = outs.len();
    let ambient = ctx.ambient;
    let first_order = outs.iter().all(|o| match o {
        Out::Field(field, _) => field.is_first_order(),
        Out::Region | Out::Phase => true,
    });
    let solve = |i: usize| -> Result<State> {
        let va = a.get(i)?;
        let vb = b.get(i)?;
        let given = kind.given(va, vb)?;
        if first_order {
            physics::solve_first_order(given, opts, f)
        } else {
            physics::solve(given, opts, f)
        }
    };
    let fill = |i: usize, row: &mut [f64]| -> Option<(usize, Note)> {
        match solve(i) {
            Ok(st) => {
                for (slot, out) in row.iter_mut().zip(&outs) {
                    *slot = match *out {
                        Out::Region => st.region.number() as f64,
                        Out::Phase => PHASES
                            .iter()
                            .position(|ph| *ph == st.phase)
                            .map_or(f64::NAN, |c| c as f64),
                        Out::Field(field, unit) => {
                            let x = field.value(&st, f, None);
                            if x.is_finite() {
                                unit.from_internal(x, ambient)
                            } else {
                                f64::NAN
                            }
                        }
                    };
                }
                match expect {
                    Some(ph) if !in_phase(&st, ph) => Some((i, Note::Unexpected(st.phase))),
                    _ => None,
                }
            }
            Err(e) => {
                row.fill(f64::NAN);
                Some((i, Note::Failed(e)))
            }
        }
    };
    let mut values = vec![0.0; n * k];
    let notes: Vec<(usize, Note)> = if k == 0 {
        (0..n)
            .filter_map(|i| match solve(i) {
                Err(e) => Some((i, Note::Failed(e))),
                Ok(st) => match expect {
                    Some(ph) if !in_phase(&st, ph) => Some((i, Note::Unexpected(st.phase))),
                    _ => None,
                },
            })
            .collect()
    } else if n >= PARALLEL_THRESHOLD {
        values
            .par_chunks_mut(BLOCK * k)
            .enumerate()
            .map(|(blk, chunk)| {
                chunk
                    .chunks_mut(k)
                    .enumerate()
                    .filter_map(|(r, row)| fill(blk * BLOCK + r, row))
                    .collect::<Vec<_>>()
            })
            .collect::<Vec<_>>()
            .into_iter()
            .flatten()
            .collect()
    } else {
        values
            .chunks_mut(k)
            .enumerate()
            .filter_map(|(i, row)| fill(i, row))
            .collect()
    };
    let mut failed = Vec::new();
    let mut flagged = Vec::new();
    for (i, note) in notes {
        match note {
            Note::Failed(e) => failed.push((i, e)),
            Note::Unexpected(ph) => flagged.push((i, ph)),
        }
    }
    Ok(Rows {
        n,
        k,
        values,
        failed,
        flagged,
    })
}
