//! Property methods: `water.state`, `water.batch`, `water.saturation`, `water.curve`: their
//! params and results (the vocabulary they share with the other methods is `super::vocab`).
//!
//! Units: every numeric input is a number in the request's preset (`engineering` by default) or
//! a string with its unit; every result is in the preset and lists the unit of every field.
//!
//! Invariant: this module only converts and shapes; each method converts its wire types and
//! calls the physics once (`crate::water::solve`, `crate::water::saturation`, the bulk rows of
//! `super::rows`).

use super::rows::{check_want, column_unit, input_dim, input_unit, legend};
use super::vocab::{
    parse_formulation, state_result_with, Ctx, GivenPair, Input, SolveFlags, StateResult, Units,
};
use super::MethodSpec;
use crate::error::{Error, Result};
use crate::units::{self, Dim};
use crate::water::pairs::accepted_pairs;
use crate::water::state::{self, Given, Options};
use crate::water::{self as physics, Formulation, SaturationAt};
use schemars::JsonSchema;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The methods of this module, for the registry.
pub fn methods() -> Vec<MethodSpec> {
    vec![
        MethodSpec::new::<StateParams, StateAnswer>(
            "water.state",
            "Every property of one state of water or steam from two properties that fix it",
            "Give two of p, T, h, s, u, v, rho, x in `given` (numbers in the `units` preset, or strings with a unit such as \"42 barg\" or \"410 degC\"). Returns p, T, rho, v, u, h, s, cp, cv, w, x and derived properties in the preset's units, with the phase and the IAPWS-IF97 region. Properties that are not defined for the state (cp, cv, w of a wet mixture) are null and `undefined` says why.",
            water_state,
        )
        .quick(),
        MethodSpec::with_ctx::<BatchParams, BatchResult>(
            "water.batch",
            "Properties for columns of states (historian data): one row per state",
            "Give two columns in `given` (of equal length: JSON arrays of numbers in the preset's units or strings with units, or packed columns {\"f64le\": base64 of little-endian doubles}) and the properties wanted. A bad row gives null (NaN in packed columns) in its columns and an entry in `errors` (one entry per row with encoding \"json\", the failed rows only with \"f64le\"); it never fails the whole call. With `expect` (e.g. \"vapour\" for a batch of steam tags), rows solved in another phase are listed in `flagged_rows` with their phase.",
            water_batch,
        ),
        MethodSpec::new::<SaturationParams, SaturationResult>(
            "water.saturation",
            "Saturated liquid and vapour at a temperature or a pressure",
            "Give either T or p. Returns the saturation pressure and temperature, the full saturated-liquid and saturated-vapour states, and the latent enthalpy and entropy of vaporisation.",
            water_saturation,
        )
        .quick(),
        MethodSpec::new::<CurveParams, CurveResult>(
            "water.curve",
            "Points for charts: the saturation dome, an isobar, an isotherm or an isentrope",
            "Returns series of (T, s, h, p, v) points for T-s, h-s and p-h charts. The dome has two series (saturated liquid and saturated vapour); a line crossing the dome includes its saturation points.",
            water_curve,
        ),
    ]
}

/// Parameters of `water.state`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct StateParams {
    /// Exactly two properties that fix the state.
    pub given: GivenPair,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units (barg, psig, kPag); default 101.325 kPa.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
    /// Property formulation: "if97" (IAPWS-IF97, the default, with the industrial transport
    /// correlations) or "iapws95" (IAPWS-95, also "IAPWS-95", with the full transport
    /// correlations).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub formulation: Option<String>,
    /// Solver switches.
    #[serde(flatten)]
    pub flags: SolveFlags,
    /// Add `property_uncertainty`: the uncertainty of rho, w, cp and the vapour pressure at
    /// this state by the IAPWS-95 release's figures, with IF97's deviation from IAPWS-95 as a
    /// further component for an IF97 state.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub property_uncertainty: bool,
}

/// Result of `water.state`: the state, and on request its property uncertainties.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct StateAnswer {
    /// The state.
    #[serde(flatten)]
    pub state: StateResult,
    /// With `property_uncertainty`: the uncertainty of rho, w, cp and p_sat (value, u, U, k
    /// and its components with their sources), and why a property has none.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub property_uncertainty: Option<super::uncertainty::PropertyUncertainty>,
}

fn water_state(p: StateParams) -> Result<StateAnswer> {
    let f = parse_formulation(p.formulation.as_deref())?;
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let given = p.given.to_given(&ctx)?;
    let st = physics::solve(given, &p.flags.options()?, f)?;
    Ok(StateAnswer {
        state: state_result_with(&st, &ctx, f),
        property_uncertainty: p
            .property_uncertainty
            .then(|| super::uncertainty::property_uncertainty(&st, f, &ctx)),
    })
}

/// A column of inputs: a JSON array, a JSON array with the column's unit, or a packed column of
/// little-endian doubles (with or without its unit).
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(untagged)]
pub enum Column {
    /// One value per row: numbers in the request's unit for the column's property, or strings
    /// with units.
    Values(Vec<Input>),
    /// Packed numbers, in the column's `unit` or the request's unit for its property.
    Packed(PackedColumn),
    /// Numbers (or strings with units) with one unit for the column: `{"values": [...],
    /// "unit": "barg"}`.
    Tagged(TaggedColumn),
}

/// A JSON column with its unit: `{"values": [42.0, 41.5], "unit": "barg"}`. Bare numbers are in
/// `unit`, converted once for the whole column (the same numbers bit for bit as a packed column
/// with that unit).
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct TaggedColumn {
    /// One value per row: numbers in `unit`, or strings with their own unit.
    pub values: Vec<Input>,
    /// The unit of the column's bare numbers, e.g. "barg", "degC", "t/h".
    pub unit: String,
}

/// A packed column: `{"f64le": "<base64>", "unit"?: "barg"}`, the base64 text (standard
/// alphabet, with padding) of the column's IEEE-754 doubles in little-endian byte order, 8 bytes
/// per row, optionally with the unit of its numbers. NaN marks a missing value (in results: a
/// row whose value is undefined or failed).
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct PackedColumn {
    /// Base64 of little-endian f64 values.
    pub f64le: String,
    /// The unit of the numbers (inputs only; default: the request's unit for the column's
    /// property).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unit: Option<String>,
}

impl PackedColumn {
    /// Packs values (NaN for missing).
    pub fn pack(values: &[f64]) -> PackedColumn {
        use base64::Engine;
        let mut bytes = Vec::with_capacity(values.len() * 8);
        for v in values {
            bytes.extend_from_slice(&v.to_le_bytes());
        }
        PackedColumn {
            f64le: base64::engine::general_purpose::STANDARD.encode(bytes),
            unit: None,
        }
    }

    /// Unpacks, naming the column in errors.
    pub fn unpack(&self, name: &str) -> Result<Vec<f64>> {
        use base64::Engine;
        let bytes = base64::engine::general_purpose::STANDARD
            .decode(self.f64le.as_bytes())
            .map_err(|e| {
                Error::invalid(format!(
                    "given.{name}: the f64le column is not valid base64 ({e})"
                ))
            })?;
        if bytes.len() % 8 != 0 {
            return Err(Error::invalid(format!(
                "given.{name}: the f64le column has {} bytes, not a multiple of 8 (one little-endian double per row)",
                bytes.len()
            )));
        }
        Ok(bytes
            .chunks_exact(8)
            .map(|c| f64::from_le_bytes(c.try_into().expect("chunks of 8")))
            .collect())
    }
}

/// Parameters of `water.batch`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct BatchParams {
    /// Exactly two columns of equal length, keyed by property name (p, T, h, s, u, v, rho, x):
    /// JSON arrays, JSON arrays with their unit `{"values": [...], "unit": "barg"}`, or packed
    /// columns `{"f64le": "<base64>", "unit"?: "barg"}`.
    pub given: BTreeMap<String, Column>,
    /// Properties wanted, e.g. ["h", "s"]. Any numeric field of `water.state` plus "phase"
    /// and "region". Default: ["T", "p", "h", "s", "v", "x"].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub want: Option<Vec<String>>,
    /// Encoding of the result columns: "json" (default: arrays with null where undefined) or
    /// "f64le" (packed columns, NaN where undefined; "phase" then comes packed as the index of
    /// its text in `legends.phase`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub encoding: Option<String>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units (default 101.325 kPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
    /// Property formulation: "if97" (default) or "iapws95" (see `water.state`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub formulation: Option<String>,
    /// The phase every row is expected in: "vapour" (also "vapor", "steam"), "liquid" (also
    /// "water"), "wet" or "supercritical". Rows solved in another phase keep their values
    /// and are listed in `flagged_rows` (a saturated end, x = 0 or 1, counts as liquid or
    /// vapour). Default: no expectation.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub expect: Option<String>,
    /// Solver switches.
    #[serde(flatten)]
    pub flags: SolveFlags,
    /// Add the columns u_rho, u_w, u_cp and u_p_sat: the standard uncertainty (k = 1, in the
    /// property's unit) of each row's rho, w, cp and vapour pressure, as `water.state`'s
    /// `property_uncertainty` gives it (null or NaN where the release states none).
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub property_uncertainty: bool,
}

/// A batch row solved in another phase than the batch's `expect`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct RowFlag {
    /// Row index, 0-based.
    pub row: usize,
    /// The row's phase: "liquid", "vapour", "wet" or "supercritical".
    pub phase: String,
    /// One-line message.
    pub message: String,
}

/// An error of one batch row.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct RowError {
    /// The error code (see the error table).
    pub code: i64,
    /// One-line message.
    pub message: String,
}

/// An error of one batch row, with its row index (0-based).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct RowErrorAt {
    /// Row index, 0-based.
    pub row: usize,
    /// The error code (see the error table).
    pub code: i64,
    /// One-line message.
    pub message: String,
}

/// A result column.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(untagged)]
pub enum ColumnOut {
    /// Numbers, null where undefined or failed.
    Numbers(Vec<Option<f64>>),
    /// Texts ("phase"), null where failed.
    Texts(Vec<Option<String>>),
    /// Packed numbers (encoding "f64le"), NaN where undefined or failed.
    Packed(PackedColumn),
}

/// Whether an `encoding` param asks for packed result columns ("f64le") or JSON numbers.
fn packed_encoding(encoding: Option<&str>) -> Result<bool> {
    match encoding {
        None | Some("json") => Ok(false),
        Some("f64le") => Ok(true),
        Some(other) => Err(Error::invalid(format!(
            "encoding = '{other}'; accepted: json, f64le"
        ))),
    }
}

/// The per-row errors of `water.batch`, dense or sparse by encoding.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(untagged)]
pub enum BatchErrors {
    /// Encoding "f64le": the failed rows only, in row order, each with its row index.
    Sparse(Vec<RowErrorAt>),
    /// Encoding "json": one entry per row, null or the row's error.
    Dense(Vec<Option<RowError>>),
}

/// Result of `water.batch`: one column per wanted property, plus per-row errors.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct BatchResult {
    /// Result columns keyed by property, in the preset's units; "phase" holds texts and
    /// "region" the IF97 region numbers.
    pub columns: BTreeMap<String, ColumnOut>,
    /// Per-row errors: with encoding "json" one entry per row, null or the row's error; with
    /// "f64le" the failed rows only (sparse), each with its row index.
    pub errors: BatchErrors,
    /// The failed rows only (both encodings), in row order.
    pub failed_rows: Vec<RowErrorAt>,
    /// Number of rows.
    pub rows: usize,
    /// Number of failed rows.
    pub failed: usize,
    /// The rows solved in another phase than `expect` (empty without `expect`), in row order;
    /// their values are in the columns.
    pub flagged_rows: Vec<RowFlag>,
    /// Number of flagged rows.
    pub flagged: usize,
    /// The unit of every numeric result column, the preset's name under "preset", and, when
    /// an input or a result column is in a gauge unit, the ambient pressure it is relative to
    /// under "ambient" (e.g. "1.01325 bar").
    pub units: BTreeMap<String, String>,
    /// The encoding of the numeric result columns: "json" or "f64le".
    pub encoding: String,
    /// With encoding "f64le", the texts behind the codes of each coded text column ("phase":
    /// code 0 is "liquid", ...); absent otherwise.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub legends: BTreeMap<String, Vec<String>>,
}

/// Most rows in one `water.batch` call by default (`serve --max-batch-rows` changes the limit in
/// force, see [`super::limits::Settings::max_batch_rows`]).
pub const MAX_BATCH_ROWS: usize = super::limits::MAX_BATCH_ROWS as usize;

pub use super::rows::PARALLEL_THRESHOLD;

fn water_batch(server: &super::ServerCtx, p: BatchParams) -> Result<BatchResult> {
    use super::rows::InputColumn;
    let f = parse_formulation(p.formulation.as_deref())?;
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let opts = p.flags.options()?;
    let packed_out = packed_encoding(p.encoding.as_deref())?;
    if p.given.len() != 2 {
        return Err(Error::invalid(format!(
            "give exactly two input columns in `given` (got {}); accepted pairs: {}",
            p.given.len(),
            accepted_pairs()
        )));
    }
    let want: Vec<String> = p.want.clone().unwrap_or_else(|| {
        ["T", "p", "h", "s", "v", "x"]
            .iter()
            .map(|s| s.to_string())
            .collect()
    });
    check_want(&want, true)?;
    let mut cols = Vec::with_capacity(2);
    let mut gauge_in = false;
    for (k, col) in &p.given {
        let (name, dim) = input_dim(k)?;
        let n = match col {
            Column::Values(v) => v.len(),
            Column::Tagged(t) => t.values.len(),
            Column::Packed(pc) => pc.f64le.len() / 4 * 3 / 8,
        };
        let max_rows = server.limits.max_batch_rows();
        if n > max_rows {
            return Err(Error::LimitExceeded {
                what: "rows in one water.batch call".into(),
                limit: max_rows as f64,
                value: n as f64,
            });
        }
        let own = match col {
            Column::Values(_) => None,
            Column::Tagged(t) => Some(t.unit.as_str()),
            Column::Packed(pc) => pc.unit.as_deref(),
        };
        let key = format!("given.{name}.unit");
        let unit = input_unit(&ctx, name, dim, own.map(|t| (key.as_str(), t)))?;
        gauge_in |= unit.gauge;
        let numbers = |values: &[Input]| -> Option<Vec<f64>> {
            values
                .iter()
                .map(|x| match x {
                    Input::Number(v) => Some(*v),
                    Input::Text(_) => None,
                })
                .collect()
        };
        cols.push(match col {
            Column::Values(v) | Column::Tagged(TaggedColumn { values: v, .. }) => {
                match numbers(v) {
                    // Plain numbers: one conversion for the column, as a packed column.
                    Some(raw) => InputColumn::from_numbers(name, unit, ctx.ambient, &raw),
                    None => {
                        let mut first_gauge = None;
                        let col = InputColumn::from_results(
                            name,
                            v.iter().map(|x| {
                                let parsed = match x {
                                    Input::Number(v) => {
                                        units::parse_number_in(name, *v, unit, ctx.ambient)
                                    }
                                    Input::Text(t) => {
                                        units::parse_text_in(name, dim, t, unit, ctx.ambient)
                                    }
                                };
                                parsed.map(|p| {
                                    if p.unit.gauge && first_gauge.is_none() {
                                        first_gauge = Some(p.unit);
                                    }
                                    p.internal
                                })
                            }),
                        );
                        if let Some(g) = first_gauge {
                            gauge_in = true;
                            ctx.note_input(name, dim, g);
                        }
                        col
                    }
                }
            }
            Column::Packed(pc) => {
                InputColumn::from_numbers(name, unit, ctx.ambient, &pc.unpack(name)?)
            }
        });
    }
    let expect = super::rows::parse_expect(p.expect.as_deref())?;
    let rows = super::rows::compute(&ctx, &opts, f, &cols[0], &cols[1], &want, expect)?;
    let flagged_rows: Vec<RowFlag> = rows
        .flagged
        .iter()
        .map(|&(i, ph)| RowFlag {
            row: i,
            phase: ph.name().to_string(),
            message: super::rows::flag_message(i, ph, expect),
        })
        .collect();
    let n = rows.n;
    let mut columns = BTreeMap::new();
    let mut legends = BTreeMap::new();
    for (j, w) in want.iter().enumerate() {
        let col = if w == "phase" && !packed_out {
            ColumnOut::Texts(
                (0..n)
                    .map(|i| rows.phase(i, j).map(|ph| ph.name().to_string()))
                    .collect(),
            )
        } else {
            if let Some(l) = legend(w) {
                legends.insert(w.clone(), l.into_iter().map(String::from).collect());
            }
            let values = rows.column(j);
            if packed_out {
                ColumnOut::Packed(PackedColumn::pack(&values))
            } else {
                ColumnOut::Numbers(
                    values
                        .into_iter()
                        .map(|x| if x.is_nan() { None } else { Some(x) })
                        .collect(),
                )
            }
        };
        columns.insert(w.clone(), col);
    }
    let mut failed_rows = Vec::with_capacity(rows.failed.len());
    let mut dense = if packed_out {
        Vec::new()
    } else {
        vec![None; n]
    };
    for (i, e) in rows.failed {
        let api: super::ApiError = ctx.restate(e).into();
        let message = format!("row {i}: {}", api.message);
        if !packed_out {
            dense[i] = Some(RowError {
                code: api.code,
                message: message.clone(),
            });
        }
        failed_rows.push(RowErrorAt {
            row: i,
            code: api.code,
            message,
        });
    }
    let errors = if packed_out {
        BatchErrors::Sparse(failed_rows.clone())
    } else {
        BatchErrors::Dense(dense)
    };
    let mut units_map = BTreeMap::new();
    for w in &want {
        if let Some(u) = column_unit(&ctx, w) {
            units_map.insert(w.clone(), u.to_string());
        }
    }
    ctx.finish_units(&mut units_map);
    if gauge_in {
        units_map.insert("ambient".into(), ctx.ambient_text());
    }
    if p.property_uncertainty {
        let extra = super::uncertainty::property_columns(&ctx, &opts, f, &cols[0], &cols[1]);
        for (name, values, unit) in extra {
            let col = if packed_out {
                ColumnOut::Packed(PackedColumn::pack(&values))
            } else {
                ColumnOut::Numbers(
                    values
                        .into_iter()
                        .map(|x| x.is_finite().then_some(x))
                        .collect(),
                )
            };
            columns.insert(name.clone(), col);
            units_map.insert(name, unit);
        }
    }
    Ok(BatchResult {
        columns,
        errors,
        failed: failed_rows.len(),
        failed_rows,
        flagged: flagged_rows.len(),
        flagged_rows,
        rows: n,
        units: units_map,
        encoding: if packed_out { "f64le" } else { "json" }.to_string(),
        legends,
    })
}

/// Parameters of `water.saturation`: give T or p.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SaturationParams {
    /// Saturation temperature (273.15 K to 647.096 K).
    #[serde(rename = "T", default, skip_serializing_if = "Option::is_none")]
    pub t: Option<Input>,
    /// Saturation pressure (611.213 Pa to 22.064 MPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub p: Option<Input>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// Ambient pressure for gauge units (default 101.325 kPa).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ambient: Option<Input>,
    /// Property formulation: "if97" (default) or "iapws95" (the IAPWS-95 phase equilibrium
    /// from the Maxwell criterion, 273.16 K to 647.095 K).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub formulation: Option<String>,
}

/// Result of `water.saturation`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct SaturationResult {
    /// Saturation pressure.
    pub p: f64,
    /// Saturation temperature.
    #[serde(rename = "T")]
    pub t: f64,
    /// Saturated liquid (x = 0 side).
    pub liquid: StateResult,
    /// Saturated vapour (x = 1 side).
    pub vapour: StateResult,
    /// Latent enthalpy of vaporisation h'' - h'.
    pub h_fg: f64,
    /// Entropy of vaporisation s'' - s'.
    pub s_fg: f64,
    /// Volume change on vaporisation v'' - v'.
    pub v_fg: f64,
    /// Surface tension of the liquid against its vapour (IAPWS R1-76(2014)).
    pub surface_tension: f64,
    /// Units of p, T, h_fg, s_fg, v_fg, surface_tension.
    pub units: BTreeMap<String, String>,
    /// The formulation that produced the numbers: "IAPWS-IF97" or "IAPWS-95".
    pub formulation: String,
}

fn water_saturation(p: SaturationParams) -> Result<SaturationResult> {
    let f = parse_formulation(p.formulation.as_deref())?;
    let ctx = Ctx::new(p.units.as_ref(), p.ambient.as_ref())?;
    let at = match (&p.t, &p.p) {
        (Some(t), None) => SaturationAt::T(ctx.value("T", Dim::Temperature, t)?),
        (None, Some(pp)) => SaturationAt::P(ctx.value("p", Dim::Pressure, pp)?),
        _ => {
            return Err(Error::invalid(
                "give exactly one of T or p for a saturation state",
            ))
        }
    };
    let sat = physics::saturation(at, f)?;
    let (l, v) = (&sat.liquid.props, &sat.vapour.props);
    let mut units_map = BTreeMap::new();
    for (name, dim) in [
        ("p", Dim::Pressure),
        ("T", Dim::Temperature),
        ("h_fg", Dim::SpecificEnergy),
        ("s_fg", Dim::SpecificEntropy),
        ("v_fg", Dim::SpecificVolume),
        ("surface_tension", Dim::SurfaceTension),
    ] {
        units_map.insert(name.into(), ctx.unit(name, dim).into());
    }
    ctx.finish_units(&mut units_map);
    Ok(SaturationResult {
        p: ctx.out("p", Dim::Pressure, sat.p),
        t: ctx.out("T", Dim::Temperature, sat.t),
        h_fg: ctx.out("h_fg", Dim::SpecificEnergy, v.h - l.h),
        s_fg: ctx.out("s_fg", Dim::SpecificEntropy, v.s - l.s),
        v_fg: ctx.out("v_fg", Dim::SpecificVolume, v.v - l.v),
        surface_tension: ctx.out("surface_tension", Dim::SurfaceTension, sat.surface_tension),
        liquid: state_result_with(&sat.liquid, &ctx, f),
        vapour: state_result_with(&sat.vapour, &ctx, f),
        units: units_map,
        formulation: f.name().to_string(),
    })
}

/// Parameters of `water.curve`.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CurveParams {
    /// "dome" (saturation lines), "isobar" (give p), "isotherm" (give T) or "isentrope" (give s).
    pub kind: String,
    /// Pressure of an isobar.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub p: Option<Input>,
    /// Temperature of an isotherm.
    #[serde(rename = "T", default, skip_serializing_if = "Option::is_none")]
    pub t: Option<Input>,
    /// Entropy of an isentrope.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub s: Option<Input>,
    /// Start of the range: a temperature for isobars and the dome, a pressure for isotherms
    /// and isentropes. Defaults cover the IF97 range.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub from: Option<Input>,
    /// End of the range (same quantity as `from`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub to: Option<Input>,
    /// Number of points per series (2 to 2000, default 60).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub points: Option<usize>,
    /// Units of bare numbers and of the answer: a preset ("engineering" by default, "si", "us",
    /// "bar", "bar_th") or an object with a preset and units per dimension, field or path, e.g.
    /// {"preset": "engineering", "p": "barg", "flow": "t/h", "power": "MW"}.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units: Option<Units>,
    /// "json" (default) or "f64le": each series' T, s, h, p, v as packed columns (base64 of
    /// little-endian doubles), the same numbers bit for bit.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub encoding: Option<String>,
}

/// One series of chart points, its columns packed (encoding "f64le").
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct PackedSeries {
    /// What the series is, e.g. "saturated liquid" or "isobar 1 MPa".
    pub name: String,
    /// Temperatures.
    #[serde(rename = "T")]
    pub t: PackedColumn,
    /// Entropies.
    pub s: PackedColumn,
    /// Enthalpies.
    pub h: PackedColumn,
    /// Pressures.
    pub p: PackedColumn,
    /// Specific volumes.
    pub v: PackedColumn,
}

impl From<&Series> for PackedSeries {
    fn from(s: &Series) -> Self {
        PackedSeries {
            name: s.name.clone(),
            t: PackedColumn::pack(&s.t),
            s: PackedColumn::pack(&s.s),
            h: PackedColumn::pack(&s.h),
            p: PackedColumn::pack(&s.p),
            v: PackedColumn::pack(&s.v),
        }
    }
}

/// A series of `water.curve`: JSON numbers, or packed with encoding "f64le".
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
#[serde(untagged)]
pub enum SeriesOut {
    /// Encoding "json".
    Numbers(Series),
    /// Encoding "f64le".
    Packed(PackedSeries),
}

/// One series of chart points.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct Series {
    /// What the series is, e.g. "saturated liquid" or "isobar 1 MPa".
    pub name: String,
    /// Temperatures.
    #[serde(rename = "T")]
    pub t: Vec<f64>,
    /// Entropies.
    pub s: Vec<f64>,
    /// Enthalpies.
    pub h: Vec<f64>,
    /// Pressures.
    pub p: Vec<f64>,
    /// Specific volumes.
    pub v: Vec<f64>,
}

/// Result of `water.curve`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, JsonSchema)]
pub struct CurveResult {
    /// The series of points.
    pub series: Vec<SeriesOut>,
    /// Units of T, s, h, p, v.
    pub units: BTreeMap<String, String>,
}

struct SeriesBuilder<'a> {
    ctx: &'a Ctx,
    s: Series,
}

impl<'a> SeriesBuilder<'a> {
    fn new(ctx: &'a Ctx, name: String) -> Self {
        SeriesBuilder {
            ctx,
            s: Series {
                name,
                t: vec![],
                s: vec![],
                h: vec![],
                p: vec![],
                v: vec![],
            },
        }
    }
    fn push(&mut self, pr: &crate::water::Props) {
        let ctx = self.ctx;
        self.s.t.push(ctx.out("T", Dim::Temperature, pr.t));
        self.s.s.push(ctx.out("s", Dim::SpecificEntropy, pr.s));
        self.s.h.push(ctx.out("h", Dim::SpecificEnergy, pr.h));
        self.s.p.push(ctx.out("p", Dim::Pressure, pr.p));
        self.s.v.push(ctx.out("v", Dim::SpecificVolume, pr.v));
    }
}

fn water_curve(c: CurveParams) -> Result<CurveResult> {
    let ctx = Ctx::new(c.units.as_ref(), None)?;
    let packed = packed_encoding(c.encoding.as_deref())?;
    let n = c.points.unwrap_or(60);
    if !(2..=2000).contains(&n) {
        return Err(Error::invalid(format!("points = {n} is outside 2..2000")));
    }
    let opts = Options::STANDARD;
    let if97 = Formulation::If97;
    let lin = |a: f64, b: f64, i: usize| a + (b - a) * i as f64 / (n - 1) as f64;
    let geo =
        |a: f64, b: f64, i: usize| (a.ln() + (b.ln() - a.ln()) * i as f64 / (n - 1) as f64).exp();
    let from = |dim: Dim, default: f64| -> Result<f64> {
        c.from
            .as_ref()
            .map(|x| ctx.value("from", dim, x))
            .unwrap_or(Ok(default))
    };
    let to = |dim: Dim, default: f64| -> Result<f64> {
        c.to.as_ref()
            .map(|x| ctx.value("to", dim, x))
            .unwrap_or(Ok(default))
    };
    let mut series = Vec::new();
    match c.kind.as_str() {
        "dome" => {
            let a = from(Dim::Temperature, state::T_MIN)?;
            let b = to(Dim::Temperature, state::T_C)?;
            let mut liq = SeriesBuilder::new(&ctx, "saturated liquid".into());
            let mut vap = SeriesBuilder::new(&ctx, "saturated vapour".into());
            for i in 0..n {
                let t = lin(a, b, i);
                let sat = physics::saturation(SaturationAt::T(t), if97)?;
                liq.push(&sat.liquid.props);
                vap.push(&sat.vapour.props);
            }
            series.push(liq.s);
            series.push(vap.s);
        }
        "isobar" => {
            let p = ctx.value(
                "p",
                Dim::Pressure,
                c.p.as_ref()
                    .ok_or_else(|| Error::invalid("an isobar needs p"))?,
            )?;
            let a = from(Dim::Temperature, state::T_MIN)?;
            let b = to(Dim::Temperature, state::T_MAX_123)?;
            let mut sb = SeriesBuilder::new(
                &ctx,
                format!(
                    "isobar {} {}",
                    ctx.out("p", Dim::Pressure, p),
                    ctx.unit("p", Dim::Pressure)
                ),
            );
            let sat = if p < state::P_C {
                physics::saturation(SaturationAt::P(p), if97).ok()
            } else {
                None
            };
            let mut done_sat = false;
            for i in 0..n {
                let t = lin(a, b, i);
                if let Some(sat) = &sat {
                    if !done_sat && t >= sat.t {
                        if sat.t >= a {
                            sb.push(&sat.liquid.props);
                            sb.push(&sat.vapour.props);
                        }
                        done_sat = true;
                    }
                    if (t - sat.t).abs() < 1e-9 {
                        continue;
                    }
                }
                if let Ok(st) = physics::solve(Given::PT(p, t), &opts, if97) {
                    sb.push(&st.props);
                }
            }
            series.push(sb.s);
        }
        "isotherm" => {
            let t = ctx.value(
                "T",
                Dim::Temperature,
                c.t.as_ref()
                    .ok_or_else(|| Error::invalid("an isotherm needs T"))?,
            )?;
            let a = from(Dim::Pressure, 1e-3)?;
            let b = to(Dim::Pressure, state::P_MAX)?;
            let mut sb = SeriesBuilder::new(
                &ctx,
                format!(
                    "isotherm {} {}",
                    ctx.out("T", Dim::Temperature, t),
                    ctx.unit("T", Dim::Temperature)
                ),
            );
            let sat = if t < state::T_C {
                physics::saturation(SaturationAt::T(t), if97).ok()
            } else {
                None
            };
            let mut done_sat = false;
            for i in 0..n {
                let p = geo(a.max(1e-6), b, i);
                if let Some(sat) = &sat {
                    if !done_sat && p >= sat.p {
                        if sat.p >= a {
                            sb.push(&sat.vapour.props);
                            sb.push(&sat.liquid.props);
                        }
                        done_sat = true;
                    }
                }
                if let Ok(st) = physics::solve(Given::PT(p, t), &opts, if97) {
                    sb.push(&st.props);
                }
            }
            series.push(sb.s);
        }
        "isentrope" => {
            let s = ctx.value(
                "s",
                Dim::SpecificEntropy,
                c.s.as_ref()
                    .ok_or_else(|| Error::invalid("an isentrope needs s"))?,
            )?;
            let a = from(Dim::Pressure, 1e-3)?;
            let b = to(Dim::Pressure, state::P_MAX)?;
            let mut sb = SeriesBuilder::new(
                &ctx,
                format!(
                    "isentrope {} {}",
                    ctx.out("s", Dim::SpecificEntropy, s),
                    ctx.unit("s", Dim::SpecificEntropy)
                ),
            );
            for i in 0..n {
                let p = geo(a.max(1e-6), b, i);
                if let Ok(st) = physics::solve(Given::PS(p, s), &opts, if97) {
                    sb.push(&st.props);
                }
            }
            series.push(sb.s);
        }
        other => {
            return Err(Error::invalid(format!(
                "kind = '{other}' is not a curve; accepted: dome, isobar, isotherm, isentrope"
            )))
        }
    }
    let mut units_map = BTreeMap::new();
    for (name, dim) in [
        ("T", Dim::Temperature),
        ("s", Dim::SpecificEntropy),
        ("h", Dim::SpecificEnergy),
        ("p", Dim::Pressure),
        ("v", Dim::SpecificVolume),
    ] {
        units_map.insert(name.into(), ctx.unit(name, dim).into());
    }
    ctx.finish_units(&mut units_map);
    let series = series
        .into_iter()
        .map(|s| {
            if packed {
                SeriesOut::Packed((&s).into())
            } else {
                SeriesOut::Numbers(s)
            }
        })
        .collect();
    Ok(CurveResult {
        series,
        units: units_map,
    })
}
