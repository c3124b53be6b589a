//! Steam-plant components and cycles over the property core: turbines, pumps, valves,
//! desuperheaters, flash vessels, headers, heat exchangers, boilers, deaerators and the Rankine
//! cycle; the distribution system's losses (flow through a hole or a failed trap, pressure drop
//! and heat loss of a line, and what each costs in a year).
//!
//! Internal units: p MPa, T K, h kJ/kg, s kJ/(kg K), mass flow kg/s, power and heat flow kW.
//!
//! Invariant: this module uses only the public property API, never the IF97 region internals;
//! the state helpers here ([`solve`], [`ph`], [`ps`], [`pt`], [`sat_liquid`], [`sat_vapour`])
//! go through the core's one entry point `crate::water::solve`, so component states pass the
//! same range and validity checks as a single state or a batch row. Every function returns its
//! mass and energy balance so a caller (and the tests) can check closure; physical feasibility
//! (temperature crosses, the second law) is checked by [`feasibility`], and every warning comes
//! from the one catalogue [`warnings`].
//!
//! Caution: results support engineering work; they are not a substitute for the governing codes,
//! the equipment maker's data, or a licensed engineer's review.

pub mod balance;
pub mod components;
pub mod correlations;
pub mod cycle;
pub mod feasibility;
pub mod losses;
pub mod orifice;
pub mod pipe;
pub mod warnings;

use crate::error::Result;
use crate::water::{self, Formulation, Given, Options, State};

/// The standing caution attached to every component result.
pub const CAUTION: &str = "Results support engineering work; they are not a substitute for the governing codes, the equipment maker's data or a licensed engineer's review. Follow local codes.";

/// Exhaust moisture above which a turbine warning is given (about 12 %; common practice, no source).
pub const MOISTURE_WARNING: f64 = 0.12;

/// Mass and energy balance of a component (kg/s and kW; per kg of the reference flow when no
/// flow is given).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Balance {
    /// Mass in, kg/s.
    pub mass_in: f64,
    /// Mass out, kg/s.
    pub mass_out: f64,
    /// Energy in (stream enthalpy flows, heat and work added), kW.
    pub energy_in: f64,
    /// Energy out (stream enthalpy flows, heat and work removed), kW.
    pub energy_out: f64,
}

impl Balance {
    /// Relative mass residual |in - out| / max(|in|, tiny).
    pub fn mass_residual(&self) -> f64 {
        (self.mass_in - self.mass_out).abs() / self.mass_in.abs().max(1e-300)
    }
    /// Relative energy residual |in - out| / max(|in|, |out|).
    pub fn energy_residual(&self) -> f64 {
        (self.energy_in - self.energy_out).abs()
            / self.energy_in.abs().max(self.energy_out.abs()).max(1e-300)
    }
}

/// Solves a state with the standard options, through the core's one entry point
/// (`water::solve` with IAPWS-IF97), so that every component state passes the same range and
/// validity checks as a single state or a batch row.
pub fn solve(given: Given) -> Result<State> {
    water::solve(given, &Options::STANDARD, Formulation::If97)
}

/// State at (p, h).
pub fn ph(p: f64, h: f64) -> Result<State> {
    solve(Given::PH(p, h))
}

/// State at (p, s).
pub fn ps(p: f64, s: f64) -> Result<State> {
    solve(Given::PS(p, s))
}

/// State at (p, T).
pub fn pt(p: f64, t: f64) -> Result<State> {
    solve(Given::PT(p, t))
}

/// Saturated liquid at p.
pub fn sat_liquid(p: f64) -> Result<State> {
    solve(Given::PX(p, 0.0))
}

/// Saturated vapour at p.
pub fn sat_vapour(p: f64) -> Result<State> {
    solve(Given::PX(p, 1.0))
}
