//! The one error type of the whole product. Every fallible library function returns [`Result`];
//! the API layer of the `steamcell` crate maps each variant to a documented, stable JSON-RPC
//! error code (`impl From<Error> for ApiError` in `src/api/mod.rs`, codes listed in its
//! `ERROR_CODES` table). This crate knows no codes.
//!
//! Invariant: messages are one line, name the quantity, the value and the limit, and end without
//! a period. Physical values inside errors are in internal units (p MPa, T K, h kJ/kg, ...);
//! [`Error::OutOfRange`] names the unit of its value and limit. They reach the caller in these
//! units: errors are not re-stated in the caller's units.

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

fn fmt_num(x: f64) -> String {
    // Shortest text that parses back to the same f64.
    format!("{x}")
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
                write!(
                    f,
                    "{quantity} = {} {unit} is {word} the {sign} value {} {unit} of {formulation}",
                    fmt_num(*value),
                    fmt_num(*limit)
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
            Error::LimitExceeded { what, limit, value } => write!(
                f,
                "{what}: {} exceeds the limit {}",
                fmt_num(*value),
                fmt_num(*limit)
            ),
            Error::Infeasible { message } => write!(f, "{message}"),
            Error::Specification { diagnosis } => write!(f, "{diagnosis}"),
        }
    }
}

impl std::error::Error for Error {}
