//! The one error type of the whole product. Every fallible library function returns [`Result`];
//! the API layer of the `steamcell` crate maps each variant to a documented, stable JSON-RPC
//! error code (`impl From<Error> for ApiError` in `src/api/mod.rs`, codes listed in its
//! `ERROR_CODES` table). This crate knows no codes.
//!
//! Invariant: messages are one line, name the quantity, the value and the limit, and end without
//! a period; numbers in messages have at most 6 significant digits unless more are needed to
//! tell a value from its limit ([`fmt_value_and_limit`]), and a pure number carries no unit.
//! Physical values inside errors are in internal units (p MPa, T K, h kJ/kg, ...);
//! [`Error::OutOfRange`] names the unit of its value and limit, so that the API can re-state it
//! in the caller's units.

use crate::plant::balance::Diagnosis;
use std::fmt;

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
        /// One-line explanation.
        message: String,
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
        /// One-line explanation.
        message: String,
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
    pub fn invalid(message: impl Into<String>) -> Error {
        Error::InvalidInput {
            message: message.into(),
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
    pub fn infeasible(message: impl Into<String>) -> Error {
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
            } => write!(
                f,
                "unit '{unit}' is not a unit of {expected}, which {quantity} needs"
            ),
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
