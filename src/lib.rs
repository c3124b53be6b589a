//! steamcell: one validated source of water and steam properties (IAPWS-IF97, IAPWS-95) and
//! steam-plant calculations, served to spreadsheets, notebooks and scripts.
//!
//! Layers (see DEVELOPERS.md): the physics lives in the `steamcell-core` crate (re-exported
//! here as [`water`], [`plant`], [`units`], [`error`]: no serde, no async, no I/O); [`api`]
//! holds every wire type and the method registry; [`server`] wires the transports; only these
//! two read or write JSON; `main.rs` parses the command line.
pub mod api;
pub mod server;

pub use steamcell_core::{error, plant, units, water, Error, Result};
