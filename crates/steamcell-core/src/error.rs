//! The one error type of the whole product. Every fallible library function returns [`Result`];
//! the API layer of the `steamcell` crate maps each variant to a documented, stable JSON-RPC
//! error code (`impl From<Error> for ApiError` in `src/api/mod.rs`, codes listed in its
//! `ERROR_CODES` table). This crate knows no codes.
//!
//! Invariant: messages are one line, name the quantity, the value and the limit, and end without
//! a period; numbers in messages have at most 6 significant digits unless more are needed to
//! tell a value from its limit ([`fmt_value_and_limit`]), and a pure number carries no unit.
//! Physical values inside errors are in internal units (p MPa, T K, h kJ/kg, ...);
//! [`Error::OutOfRange`] names the unit of its value and limit, and the message of an
//! [`Error::InvalidInput`] or [`Error::Infeasible`] built with [`Error::invalid_with`] or
//! [`Error::infeasible_with`] keeps its values as [`Quantity`]s (a [`Message`]), so that the API
//! can re-state either in the caller's units ([`Error::stated`]); the core stays free of the
//! request's units.

use crate::plant::balance::Diagnosis;
use crate::units::Dim;
use std::fmt;

/// A value named in a message (an error's or a warning's): internal units, with its dimension
/// and the name of the field it is (a request may choose a unit by field name, e.g. `flow` in
/// t/h).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Quantity {
    /// Field name whose unit it takes (`flow`, `pressure_drop`, `surface_T`, ...).
    pub name: &'static str,
    /// Its dimension.
    pub dim: Dim,
    /// Its value, internal units.
    pub value: f64,
}

impl Quantity {
    /// The quantity `name` of dimension `dim` with the internal value `value`.
    pub fn new(name: &'static str, dim: Dim, value: f64) -> Quantity {
        Quantity { name, dim, value }
    }
}

/// What fills one `{}` of a message template ([`Message::with`]): a value, or text taken as it
/// is (a stream or unit name, which may itself hold braces).
#[derive(Debug, Clone, PartialEq)]
pub enum Arg {
    /// A value stated in some unit.
    Value(Quantity),
    /// Text.
    Text(String),
}

impl From<Quantity> for Arg {
    fn from(q: Quantity) -> Arg {
        Arg::Value(q)
    }
}

impl From<&str> for Arg {
    fn from(t: &str) -> Arg {
        Arg::Text(t.to_string())
    }
}

impl From<String> for Arg {
    fn from(t: String) -> Arg {
        Arg::Text(t)
    }
}

/// A piece of a message: text, or a value to be stated in some unit.
#[derive(Debug, Clone, PartialEq)]
enum Part {
    Text(String),
    Value(Quantity),
}

/// How many significant digits the values of a message get ([`Message::render`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Digits {
    /// Fewest significant digits of a value.
    pub least: usize,
    /// A value written exactly with up to this many digits keeps them (a limit of 333.15 K).
    pub exact: usize,
    /// Most digits, used only where two different values of one dimension would print alike.
    pub most: usize,
}

/// The digits of an error's values: 6 significant digits, more only where two values of one
/// dimension would print alike (a value beside its limit).
pub const ERROR_DIGITS: Digits = Digits {
    least: 6,
    exact: 6,
    most: 12,
};

/// A one-line message: text, or text and values kept as [`Quantity`]s (internal units) that a
/// caller may state in other units ([`Message::render`]). Its `Display` is the text with the
/// values in internal units.
#[derive(Debug, Clone, PartialEq)]
pub struct Message {
    text: String,
    parts: Vec<Part>,
}

impl Message {
    /// A message whose `template` is filled with `args` in order, one per `{}`: a value is
    /// stated as "value unit" (a pure number without unit), text as it is. Names given by the
    /// caller go in as [`Arg::Text`], never into the template. The text states the values in
    /// internal units with `digits`.
    pub fn with(template: &str, args: &[Arg], digits: Digits) -> Message {
        let mut parts = Vec::with_capacity(2 * args.len() + 1);
        let mut rest = template;
        let mut vals = args.iter();
        while let Some(i) = rest.find("{}") {
            if i > 0 {
                parts.push(Part::Text(rest[..i].to_string()));
            }
            parts.push(match vals.next() {
                Some(Arg::Value(q)) => Part::Value(*q),
                Some(Arg::Text(t)) => Part::Text(t.clone()),
                None => Part::Text("{}".into()),
            });
            rest = &rest[i + 2..];
        }
        if !rest.is_empty() {
            parts.push(Part::Text(rest.to_string()));
        }
        debug_assert!(vals.next().is_none(), "more values than {{}} in {template}");
        let mut m = Message {
            text: String::new(),
            parts,
        };
        m.text = m.render(|q| (q.value, q.dim.internal_symbol()), digits);
        m
    }

    /// The message as text (values in internal units).
    pub fn as_str(&self) -> &str {
        &self.text
    }

    /// Whether the message keeps values to state.
    pub fn has_values(&self) -> bool {
        self.parts.iter().any(|p| matches!(p, Part::Value(_)))
    }

    /// The values the message names (internal units), in order.
    pub fn quantities(&self) -> impl Iterator<Item = &Quantity> {
        self.parts.iter().filter_map(|p| match p {
            Part::Value(q) => Some(q),
            Part::Text(_) => None,
        })
    }

    /// The message with every value stated as `to` gives it (value, unit symbol), with
    /// `digits`. A message without values gives its text.
    pub fn render(&self, to: impl Fn(&Quantity) -> (f64, &'static str), digits: Digits) -> String {
        if self.parts.is_empty() {
            return self.text.clone();
        }
        let stated: Vec<(Quantity, f64, &str)> = self
            .quantities()
            .map(|q| {
                let (v, u) = to(q);
                (*q, v, u)
            })
            .collect();
        let text = |v: f64, d: usize| short(v, d, digits.exact);
        let clash = |d: usize| {
            stated.iter().enumerate().any(|(i, a)| {
                stated[..i]
                    .iter()
                    .any(|b| a.0.dim == b.0.dim && a.1 != b.1 && text(a.1, d) == text(b.1, d))
            })
        };
        let d = (digits.least..digits.most)
            .find(|&d| !clash(d))
            .unwrap_or(digits.most);
        let mut out = String::new();
        let mut k = 0;
        for p in &self.parts {
            match p {
                Part::Text(t) => out.push_str(t),
                Part::Value(_) => {
                    let (_, v, u) = stated[k];
                    k += 1;
                    out.push_str(&text(v, d));
                    if !(u.is_empty() || u == "1") {
                        out.push(' ');
                        out.push_str(u);
                    }
                }
            }
        }
        out
    }

    /// This message followed by `other` (e.g. a prefix with values, then an error's message).
    pub fn joined(&self, other: &Message) -> Message {
        let text = |m: &Message| {
            if m.parts.is_empty() {
                vec![Part::Text(m.text.clone())]
            } else {
                m.parts.clone()
            }
        };
        let mut parts = text(self);
        parts.extend(text(other));
        Message {
            text: format!("{}{}", self.text, other.text),
            parts,
        }
    }

    /// The same message with `prefix` before it (e.g. "exchanger X: ").
    pub fn prefixed(&self, prefix: &str) -> Message {
        let mut parts = self.parts.clone();
        if !parts.is_empty() {
            parts.insert(0, Part::Text(prefix.to_string()));
        }
        Message {
            text: format!("{prefix}{}", self.text),
            parts,
        }
    }
}

/// `v` with `digits` significant digits, or with the fewest more (up to `exact`) that write
/// it exactly (to 1e-9): a limit such as 333.15 K stays as given, a computed value gets
/// `digits`.
fn short(v: f64, digits: usize, exact: usize) -> String {
    (digits..=exact.max(digits))
        .map(|d| fmt_sig(v, d))
        .find(|t| {
            t.parse::<f64>()
                .is_ok_and(|x| (x - v).abs() <= 1e-9 * v.abs())
        })
        .unwrap_or_else(|| fmt_sig(v, digits))
}

impl From<String> for Message {
    fn from(text: String) -> Message {
        Message {
            text,
            parts: Vec::new(),
        }
    }
}

impl From<&str> for Message {
    fn from(text: &str) -> Message {
        Message::from(text.to_string())
    }
}

impl fmt::Display for Message {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.text)
    }
}

/// Which side of a limit a value fell on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Bound {
    /// The value is below the lowest allowed value.
    Below,
    /// The value is above the highest allowed value.
    Above,
}

/// The crate's error type.
#[derive(Debug, Clone, PartialEq)]
pub enum Error {
    /// A quantity lies outside the range of validity of a formulation.
    OutOfRange {
        /// Quantity symbol, e.g. "T" or "p".
        quantity: String,
        /// The value given (in `unit`).
        value: f64,
        /// The limit it crossed (in `unit`).
        limit: f64,
        /// Unit of `value` and `limit`.
        unit: String,
        /// Below or above the limit.
        bound: Bound,
        /// The formulation whose range it is, e.g. "IAPWS-IF97".
        formulation: String,
    },
    /// A number is NaN or infinite.
    NotFinite {
        /// Quantity symbol.
        quantity: String,
    },
    /// The input pair admits more than one state, or none.
    NoUniqueState {
        /// Human-readable explanation, naming the candidates.
        message: String,
    },
    /// A unit text is not recognised.
    UnknownUnit {
        /// The text given.
        text: String,
        /// Accepted spellings for the quantity's dimension.
        accepted: Vec<String>,
    },
    /// A unit of the wrong dimension for the quantity.
    WrongDimension {
        /// Quantity symbol.
        quantity: String,
        /// Unit text given.
        unit: String,
        /// Expected dimension, e.g. "pressure".
        expected: String,
    },
    /// A value or combination of inputs is not acceptable (missing, extra, ill-formed).
    InvalidInput {
        /// One-line explanation (its values, if kept, stated by [`Error::stated`]).
        message: Message,
    },
    /// An iterative solution did not converge inside its limits.
    NotConverged {
        /// What was being solved.
        what: String,
        /// Iterations used.
        iterations: usize,
    },
    /// A request exceeds a configured limit (rows, sizes).
    LimitExceeded {
        /// What limit.
        what: String,
        /// The limit.
        limit: f64,
        /// The value requested.
        value: f64,
    },
    /// The inputs are valid but violate a physical law for the requested operation
    /// (e.g. a temperature cross in a heat exchanger).
    Infeasible {
        /// One-line explanation (its values, if kept, stated by [`Error::stated`]).
        message: Message,
    },
    /// A site network is under- or over-specified (refused before solving): what is missing,
    /// given twice or contradictory, per unit and stream, as data.
    Specification {
        /// The degree-of-freedom diagnosis.
        diagnosis: Box<Diagnosis>,
    },
}

/// The crate's result type.
pub type Result<T, E = Error> = std::result::Result<T, E>;

impl Error {
    /// Shorthand for an [`Error::OutOfRange`].
    pub fn out_of_range(
        quantity: &str,
        value: f64,
        limit: f64,
        unit: &str,
        bound: Bound,
        formulation: &str,
    ) -> Error {
        Error::OutOfRange {
            quantity: quantity.to_string(),
            value,
            limit,
            unit: unit.to_string(),
            bound,
            formulation: formulation.to_string(),
        }
    }

    /// Shorthand for an [`Error::InvalidInput`].
    pub fn invalid(message: impl Into<Message>) -> Error {
        Error::InvalidInput {
            message: message.into(),
        }
    }

    /// An [`Error::InvalidInput`] whose `template` is filled with `args`, one per `{}`
    /// ([`Message::with`]): the API states its values in the caller's units.
    pub fn invalid_with(template: &str, args: &[Arg]) -> Error {
        Error::InvalidInput {
            message: Message::with(template, args, ERROR_DIGITS),
        }
    }

    /// An [`Error::Infeasible`] whose `template` is filled with `args`, one per `{}`
    /// ([`Message::with`]): the API states its values in the caller's units.
    pub fn infeasible_with(template: &str, args: &[Arg]) -> Error {
        Error::Infeasible {
            message: Message::with(template, args, ERROR_DIGITS),
        }
    }

    /// The same error with the values of its message stated as `to` gives them (value, unit
    /// symbol of a quantity); an error without such values is unchanged.
    pub fn stated(self, to: impl Fn(&Quantity) -> (f64, &'static str)) -> Error {
        match self {
            Error::InvalidInput { message } if message.has_values() => Error::InvalidInput {
                message: message.render(to, ERROR_DIGITS).into(),
            },
            Error::Infeasible { message } if message.has_values() => Error::Infeasible {
                message: message.render(to, ERROR_DIGITS).into(),
            },
            other => other,
        }
    }

    /// The same input or feasibility error with `prefix` before its message (e.g. "turbine
    /// T1: "); other errors are unchanged.
    pub fn prefixed(self, prefix: &str) -> Error {
        match self {
            Error::InvalidInput { message } => Error::InvalidInput {
                message: message.prefixed(prefix),
            },
            Error::Infeasible { message } => Error::Infeasible {
                message: message.prefixed(prefix),
            },
            other => other,
        }
    }

    /// Shorthand for an [`Error::NoUniqueState`].
    pub fn no_unique(message: impl Into<String>) -> Error {
        Error::NoUniqueState {
            message: message.into(),
        }
    }

    /// Shorthand for an [`Error::NotConverged`].
    pub fn not_converged(what: impl Into<String>, iterations: usize) -> Error {
        Error::NotConverged {
            what: what.into(),
            iterations,
        }
    }

    /// Shorthand for an [`Error::Infeasible`].
    pub fn infeasible(message: impl Into<Message>) -> Error {
        Error::Infeasible {
            message: message.into(),
        }
    }

    /// Checks that `value` is finite, naming `quantity` otherwise.
    pub fn check_finite(quantity: &str, value: f64) -> Result<f64> {
        if value.is_finite() {
            Ok(value)
        } else {
            Err(Error::NotFinite {
                quantity: quantity.to_string(),
            })
        }
    }
}

/// A number for a message: at most 6 significant digits (trailing zeros dropped), plain
/// notation from 1e-7 to 1e15, else scientific ("1.5e-8").
pub fn fmt_sig(x: f64, digits: usize) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let digits = digits.clamp(1, 17);
    let exp = x.abs().log10().floor() as i32;
    if (-7..15).contains(&exp) {
        let decimals = (digits as i32 - 1 - exp).max(0) as usize;
        let scale = 10f64.powi((exp + 1 - digits as i32).max(0));
        let x = if scale > 1.0 {
            (x / scale).round() * scale
        } else {
            x
        };
        let s = format!("{x:.decimals$}");
        let s = if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        };
        if s == "-0" {
            "0".to_string()
        } else {
            s
        }
    } else {
        let s = format!("{x:.prec$e}", prec = digits - 1);
        match s.split_once('e') {
            Some((m, e)) if m.contains('.') => {
                format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.'))
            }
            _ => s,
        }
    }
}

/// A value and the limit it crossed, for a message: 6 significant digits, or as many more as
/// it takes for the two texts to differ when the numbers do (up to the shortest text that
/// reads back as the same number).
pub fn fmt_value_and_limit(value: f64, limit: f64) -> (String, String) {
    for digits in 6..=17 {
        let (a, b) = (fmt_sig(value, digits), fmt_sig(limit, digits));
        if a != b || value == limit {
            return (a, b);
        }
    }
    (format!("{value}"), format!("{limit}"))
}

/// " unit" for a message, or nothing for a pure number (unit "1" or "").
fn with_unit(unit: &str) -> String {
    if unit.is_empty() || unit == "1" {
        String::new()
    } else {
        format!(" {unit}")
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::OutOfRange {
                quantity,
                value,
                limit,
                unit,
                bound,
                formulation,
            } => {
                let (word, sign) = match bound {
                    Bound::Below => ("below", "lowest"),
                    Bound::Above => ("above", "highest"),
                };
                let (v, l) = fmt_value_and_limit(*value, *limit);
                let unit = with_unit(unit);
                write!(
                    f,
                    "{quantity} = {v}{unit} is {word} the {sign} value {l}{unit} of {formulation}"
                )
            }
            Error::NotFinite { quantity } => {
                write!(
                    f,
                    "{quantity} is not a finite number (NaN and infinities are refused)"
                )
            }
            Error::NoUniqueState { message } => write!(f, "{message}"),
            Error::UnknownUnit { text, accepted } => write!(
                f,
                "unknown unit '{text}'; accepted: {}",
                accepted.join(", ")
            ),
            Error::WrongDimension {
                quantity,
                unit,
                expected,
            } => {
                write!(
                    f,
                    "unit '{unit}' is not a unit of {expected}, which {quantity} needs"
                )?;
                // The units that would do, where the expected dimension is one.
                match crate::units::dim_named(expected) {
                    Some(d) => write!(f, " ({})", crate::units::symbols(d).join(", ")),
                    None => Ok(()),
                }
            }
            Error::InvalidInput { message } => write!(f, "{message}"),
            Error::NotConverged { what, iterations } => {
                write!(f, "{what} did not converge in {iterations} iterations")
            }
            Error::LimitExceeded { what, limit, value } => {
                let (v, l) = fmt_value_and_limit(*value, *limit);
                write!(f, "{what}: {v} exceeds the limit {l}")
            }
            Error::Infeasible { message } => write!(f, "{message}"),
            Error::Specification { diagnosis } => write!(f, "{diagnosis}"),
        }
    }
}

impl std::error::Error for Error {}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_in_messages() {
        assert_eq!(fmt_sig(-0.30000000000000004, 6), "-0.3");
        assert_eq!(fmt_sig(1.05, 6), "1.05");
        assert_eq!(fmt_sig(1073.15, 6), "1073.15");
        assert_eq!(fmt_sig(0.000611212677, 6), "0.000611213");
        assert_eq!(fmt_sig(2.5e-7, 6), "0.00000025");
        assert_eq!(fmt_sig(2.5e-9, 6), "2.5e-9");
        assert_eq!(fmt_sig(123456789.0, 6), "123457000");
        assert_eq!(fmt_sig(0.0, 6), "0");
        assert_eq!(
            fmt_value_and_limit(1.0000001, 1.0),
            ("1.0000001".into(), "1".into())
        );
        assert_eq!(fmt_value_and_limit(1.05, 1.0), ("1.05".into(), "1".into()));
        let e = Error::out_of_range("efficiency", 1.05, 1.0, "1", Bound::Above, "an efficiency");
        assert_eq!(
            e.to_string(),
            "efficiency = 1.05 is above the highest value 1 of an efficiency"
        );
        let e = Error::out_of_range(
            "p",
            -0.30000000000000004,
            0.0,
            "MPa",
            Bound::Below,
            "IAPWS-IF97",
        );
        assert_eq!(
            e.to_string(),
            "p = -0.3 MPa is below the lowest value 0 MPa of IAPWS-IF97"
        );
    }
}
