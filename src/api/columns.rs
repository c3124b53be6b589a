//! The bulk column route `POST /columns`: the same computation as `water.batch`, with the
//! numbers travelling as raw little-endian doubles instead of JSON text.
//!
//! Layout of a request body (and, the same way, of a response body):
//!
//! ```text
//! u32 little-endian   H, the length of the header in bytes
//! H bytes             a UTF-8 JSON header
//! N * 8 bytes         column 1: N IEEE-754 doubles, little-endian
//! N * 8 bytes         column 2, ...
//! ```
//!
//! Request header: `{"given": ["p", "T"], "rows": N, "want": ["h", "s", "phase"],
//! "given_units"?: {"p": "barg", "T": "degC"}, "units"?, "ambient"?, "formulation"?,
//! "prefer"?, "backward_only"?, "metastable"?, "expect"?}`, followed by the two `given` columns
//! in that order, each in its unit from `given_units` (else the request's unit for it; NaN marks
//! a missing value). `units` is the request's units (a preset or an object, as for the
//! methods): it sets the unit of every wanted column.
//! Response header: `{"columns": ["h", "s", "phase"], "rows": N, "units": {"h": "kJ/kg", ...,
//! "preset", "ambient"?}, "legends": {"phase": ["liquid", "vapour", "wet", "supercritical"]},
//! "failed": k, "failed_rows": [{"row", "code", "message"}, ...], "flagged": j,
//! "flagged_rows": [{"row", "phase", "message"}, ...] (rows in another phase than `expect`),
//! "formulation"}`, followed by one column per wanted property (NaN where undefined or
//! failed). A text column ("phase") holds the index of its text in its legend; "region" holds
//! the IF97 region number. `units` names `ambient` (e.g. "1.01325 bar") when an input or an
//! output column is in a gauge unit.
//! Errors of the whole request answer a non-200 status with a JSON body `{"code", "message",
//! "data"}` (the JSON-RPC error object).
//!
//! Invariant: results are bit-identical to `water.batch` (JSON or `encoding: "f64le"`) with
//! the same columns in the same units.

use super::rows::{self, check_want, column_unit, input_dim, input_unit, legend, InputColumn};
use super::vocab::{self, Ctx};
use super::ApiError;
use crate::error::{Error, Result};
use crate::water::Formulation;
use serde::Deserialize;
use serde_json::{json, Value};

/// Content type of request and response bodies.
pub const CONTENT_TYPE: &str = "application/x-steamcell-columns";

/// Largest header accepted, bytes.
pub const MAX_HEADER: usize = 64 * 1024;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct Header {
    given: Vec<String>,
    rows: usize,
    want: Vec<String>,
    #[serde(default)]
    given_units: std::collections::BTreeMap<String, String>,
    #[serde(default)]
    units: Option<vocab::Units>,
    #[serde(default)]
    ambient: Option<vocab::Input>,
    #[serde(default)]
    formulation: Option<String>,
    #[serde(default)]
    expect: Option<String>,
    #[serde(flatten)]
    flags: vocab::SolveFlags,
}

fn bad(msg: impl Into<String>) -> Error {
    Error::invalid(msg.into())
}

/// Splits a framed body into its JSON header and the bytes after it.
pub fn split_frame(body: &[u8]) -> Result<(Value, &[u8])> {
    if body.len() < 4 {
        return Err(bad(
            "columns body: shorter than the 4-byte header length (u32 little-endian)",
        ));
    }
    let h = u32::from_le_bytes(body[..4].try_into().expect("4 bytes")) as usize;
    if h > MAX_HEADER || 4 + h > body.len() {
        return Err(bad(format!(
            "columns body: header length {h} exceeds the body ({} bytes) or the limit {MAX_HEADER}",
            body.len()
        )));
    }
    let header: Value = serde_json::from_slice(&body[4..4 + h])
        .map_err(|e| bad(format!("columns header is not JSON: {e}")))?;
    Ok((header, &body[4 + h..]))
}

/// Builds a framed body from a header and columns.
pub fn frame(header: &Value, columns: &[Vec<f64>]) -> Vec<u8> {
    let head = serde_json::to_vec(header).expect("a JSON value serialises");
    let n: usize = columns.iter().map(|c| c.len() * 8).sum();
    let mut out = Vec::with_capacity(4 + head.len() + n);
    out.extend_from_slice(&(head.len() as u32).to_le_bytes());
    out.extend_from_slice(&head);
    for c in columns {
        for x in c {
            out.extend_from_slice(&x.to_le_bytes());
        }
    }
    out
}

fn compute(body: &[u8], max_rows: usize) -> Result<Vec<u8>> {
    let (header, data) = split_frame(body)?;
    let h: Header =
        serde_json::from_value(header).map_err(|e| bad(format!("columns header: {e}")))?;
    if h.given.len() != 2 {
        return Err(bad(format!(
            "columns header: give exactly two input columns in `given` (got {})",
            h.given.len()
        )));
    }
    if h.rows > max_rows {
        return Err(Error::LimitExceeded {
            what: "rows in one /columns call".into(),
            limit: max_rows as f64,
            value: h.rows as f64,
        });
    }
    check_want(&h.want, true)?;
    match h.formulation.as_deref() {
        None | Some("if97") | Some("IAPWS-IF97") => {}
        Some(other) => {
            return Err(bad(format!(
                "formulation '{other}' is not available on /columns; accepted: if97"
            )))
        }
    }
    let want_bytes = h.rows * 8 * 2;
    if data.len() != want_bytes {
        return Err(bad(format!(
            "columns body: {} data bytes after the header, expected {want_bytes} (2 columns of {} rows, 8 bytes each)",
            data.len(),
            h.rows
        )));
    }
    let ctx = Ctx::new(h.units.as_ref(), h.ambient.as_ref())?;
    let opts = h.flags.options()?;
    if let Some(k) = h.given_units.keys().find(|k| !h.given.contains(k)) {
        return Err(bad(format!(
            "columns header: given_units names '{k}', which is not a given column ({})",
            h.given.join(", ")
        )));
    }
    let mut cols = Vec::with_capacity(2);
    let mut gauge_in = false;
    for (k, name) in h.given.iter().enumerate() {
        let (name, dim) = input_dim(name)?;
        let key = format!("given_units.{name}");
        let own = h.given_units.get(name).map(|t| (key.as_str(), t.as_str()));
        let unit = input_unit(&ctx, name, dim, own)?;
        gauge_in |= unit.gauge;
        let bytes = &data[k * h.rows * 8..(k + 1) * h.rows * 8];
        cols.push(InputColumn::from_le_bytes(name, unit, ctx.ambient, bytes));
    }
    let expect = rows::parse_expect(h.expect.as_deref())?;
    let out = rows::compute(
        &ctx,
        &opts,
        Formulation::If97,
        &cols[0],
        &cols[1],
        &h.want,
        expect,
    )?;
    let flagged_rows: Vec<Value> = out
        .flagged
        .iter()
        .map(|(i, ph)| json!({"row": i, "phase": ph.name(), "message": rows::flag_message(*i, *ph, expect)}))
        .collect();
    let failed_rows: Vec<Value> = out
        .failed
        .iter()
        .map(|(i, e)| {
            let api: ApiError = ctx.restate(e.clone()).into();
            json!({"row": i, "code": api.code, "message": format!("row {i}: {}", api.message)})
        })
        .collect();
    let mut units = std::collections::BTreeMap::new();
    for w in &h.want {
        if let Some(u) = column_unit(&ctx, w) {
            units.insert(w.clone(), u.to_string());
        }
    }
    ctx.finish_units(&mut units);
    if gauge_in {
        units.insert("ambient".into(), ctx.ambient_text());
    }
    let legends: serde_json::Map<String, Value> = h
        .want
        .iter()
        .filter_map(|w| legend(w).map(|l| (w.clone(), json!(l))))
        .collect();
    let mut header = json!({
        "columns": h.want,
        "rows": h.rows,
        "units": units,
        "failed": failed_rows.len(),
        "failed_rows": failed_rows,
        "flagged": flagged_rows.len(),
        "flagged_rows": flagged_rows,
        "formulation": "IAPWS-IF97",
    });
    if !legends.is_empty() {
        header["legends"] = Value::Object(legends);
    }
    let head = serde_json::to_vec(&header).expect("a JSON value serialises");
    let mut body = Vec::with_capacity(4 + head.len() + out.n * out.k * 8);
    body.extend_from_slice(&(head.len() as u32).to_le_bytes());
    body.extend_from_slice(&head);
    out.write_columns_le(&mut body);
    Ok(body)
}

/// Answers a `/columns` body under the row limit of `ctx` (the server runs it through its call
/// path, like a method call).
pub fn columns(ctx: &super::ServerCtx, body: &[u8]) -> std::result::Result<Vec<u8>, ApiError> {
    compute(body, ctx.limits.max_batch_rows()).map_err(ApiError::from)
}

/// The JSON header of a framed body as text (for the call log and the audit line), or `None`
/// when the frame is broken.
pub fn header_text(body: &[u8]) -> Option<&str> {
    let h = u32::from_le_bytes(body.get(..4)?.try_into().ok()?) as usize;
    std::str::from_utf8(body.get(4..4usize.checked_add(h)?)?).ok()
}
