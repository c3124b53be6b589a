//! steamcell-core: the physics of steamcell, usable without the server.
//!
//! - [`water`]: water and steam properties (IAPWS-IF97 with every supplementary backward
//!   equation, IAPWS-95, transport properties, melting and sublimation), and [`water::solve`],
//!   the one entry point that fixes a state from any supported pair of inputs.
//! - [`plant`]: steam-plant components, the Rankine cycle and the site steam balance, over the
//!   public state API only.
//! - [`units`]: unit spellings, presets, gauge pressures and conversion at the edges.
//! - [`error`]: the one error type of the whole product.
//!
//! Invariant: no serde, no async, no I/O; no panic on finite input. The compiler enforces the
//! first three (this crate has no dependencies); the tidy tests check the rest of the layering.
pub mod error;
pub mod plant;
pub mod units;
pub mod water;

pub use error::{Error, Result};
