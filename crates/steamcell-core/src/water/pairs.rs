//! The input pairs that fix a state: the one table ([`PAIRS`]) of which two properties the
//! solver accepts and how each pair becomes a [`Given`], used by single states, component
//! streams, the bulk rows and the messages that list the accepted pairs.
//!
//! Units: internal (p MPa, T K, h u kJ/kg, s kJ/(kg K), v m3/kg, rho kg/m3, x 1); a density is
//! turned into a specific volume here.
//!
//! Invariant: [`PAIRS`] is in order of precedence; every lookup takes the first pair whose two
//! properties are given, in either order.

use crate::error::{Bound, Error, Result};
use crate::water::field::Field;
use crate::water::state::Given;

/// One accepted pair: its two properties and the constructor of the [`Given`] from their values
/// (in the order `a`, `b`).
#[derive(Debug, Clone, Copy)]
pub struct PairSpec {
    /// The first property.
    pub a: Field,
    /// The second property.
    pub b: Field,
    /// Builds the solver's pair from the values of `a` and `b` (internal units).
    pub given: fn(f64, f64) -> Result<Given>,
}

/// The properties that may be given (in the order their values are read and checked).
pub const INPUTS: [Field; 8] = [
    Field::P,
    Field::T,
    Field::H,
    Field::S,
    Field::U,
    Field::V,
    Field::Rho,
    Field::X,
];

/// Every accepted pair, in order of precedence.
pub const PAIRS: [PairSpec; 15] = [
    pair(Field::P, Field::T, |a, b| Ok(Given::PT(a, b))),
    pair(Field::P, Field::H, |a, b| Ok(Given::PH(a, b))),
    pair(Field::P, Field::S, |a, b| Ok(Given::PS(a, b))),
    pair(Field::H, Field::S, |a, b| Ok(Given::HS(a, b))),
    pair(Field::T, Field::X, |a, b| Ok(Given::TX(a, b))),
    pair(Field::P, Field::X, |a, b| Ok(Given::PX(a, b))),
    pair(Field::T, Field::H, |a, b| Ok(Given::TH(a, b))),
    pair(Field::T, Field::S, |a, b| Ok(Given::TS(a, b))),
    pair(Field::P, Field::V, |a, b| Ok(Given::PV(a, b))),
    pair(Field::P, Field::Rho, |a, b| Ok(Given::PV(a, inv_rho(b)?))),
    pair(Field::T, Field::V, |a, b| Ok(Given::TV(a, b))),
    pair(Field::T, Field::Rho, |a, b| Ok(Given::TV(a, inv_rho(b)?))),
    pair(Field::U, Field::V, |a, b| Ok(Given::UV(a, b))),
    pair(Field::U, Field::Rho, |a, b| Ok(Given::UV(a, inv_rho(b)?))),
    pair(Field::P, Field::U, |a, b| Ok(Given::PU(a, b))),
];

const fn pair(a: Field, b: Field, given: fn(f64, f64) -> Result<Given>) -> PairSpec {
    PairSpec { a, b, given }
}

/// 1 / rho for a positive density, else the range error.
pub fn inv_rho(rho: f64) -> Result<f64> {
    if rho > 0.0 {
        Ok(1.0 / rho)
    } else {
        Err(Error::out_of_range(
            "rho",
            rho,
            0.0,
            "kg/m3",
            Bound::Below,
            "IAPWS-IF97",
        ))
    }
}

/// The accepted pairs as messages list them: "(p,T), (p,h), ...".
pub fn accepted_pairs() -> String {
    PAIRS
        .iter()
        .map(|p| format!("({},{})", p.a.name(), p.b.name()))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The pair of the properties `a` and `b` (either order) and whether they come swapped
/// (`b` is the pair's first property).
pub fn find(a: Field, b: Field) -> Option<(PairSpec, bool)> {
    PAIRS.into_iter().find_map(|p| {
        if (p.a, p.b) == (a, b) {
            Some((p, false))
        } else if (p.a, p.b) == (b, a) {
            Some((p, true))
        } else {
            None
        }
    })
}

/// The solver's pair from the given properties (each at most once): exactly two, forming an
/// accepted pair. Errors list the names given (sorted) and the accepted pairs.
pub fn given_from(values: &[(Field, f64)]) -> Result<Given> {
    let mut names: Vec<&str> = values.iter().map(|(f, _)| f.name()).collect();
    names.sort_unstable();
    if values.len() != 2 {
        return Err(Error::invalid(format!(
            "give exactly two properties to fix a state (got {}: {}); accepted pairs: {}",
            values.len(),
            if names.is_empty() {
                "none".to_string()
            } else {
                names.join(", ")
            },
            accepted_pairs()
        )));
    }
    let get = |f: Field| values.iter().find(|(g, _)| *g == f).map(|(_, v)| *v);
    for p in PAIRS {
        if let (Some(a), Some(b)) = (get(p.a), get(p.b)) {
            return (p.given)(a, b);
        }
    }
    Err(Error::invalid(format!(
        "the pair ({}) is not supported; accepted pairs: {}",
        names.join(","),
        accepted_pairs()
    )))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_accepted_pairs_read_as_before() {
        assert_eq!(
            accepted_pairs(),
            "(p,T), (p,h), (p,s), (h,s), (T,x), (p,x), (T,h), (T,s), (p,v), (p,rho), (T,v), (T,rho), (u,v), (u,rho), (p,u)"
        );
    }

    #[test]
    fn pairs_are_found_in_either_order() {
        let (p, swap) = find(Field::T, Field::P).unwrap();
        assert!(swap);
        assert_eq!((p.given)(1.0, 300.0).unwrap(), Given::PT(1.0, 300.0));
        assert!(find(Field::P, Field::P).is_none());
        assert_eq!(
            given_from(&[(Field::Rho, 2.0), (Field::T, 400.0)]).unwrap(),
            Given::TV(400.0, 0.5)
        );
        let e = given_from(&[(Field::X, 0.5), (Field::V, 1.0)]).unwrap_err();
        assert!(e.to_string().starts_with("the pair (v,x) is not supported"));
        let e = given_from(&[(Field::P, 1.0)]).unwrap_err();
        assert!(e.to_string().contains("(got 1: p)"));
        assert!(given_from(&[(Field::P, 1.0), (Field::Rho, 0.0)]).is_err());
    }
}
