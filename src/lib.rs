//! steamcell: one validated source of water and steam properties (IAPWS-IF97) and steam-plant
//! component calculations, served to spreadsheets, notebooks and scripts.
//!
//! Layers (see DEVELOPERS.md): `water` is pure physics (no serde, no I/O); `units` converts at
//! the edges; `api` holds every wire type; `server` wires transports; `main.rs` parses the
//! command line.
pub mod api;
pub mod error;
pub mod plant;
pub mod server;
pub mod units;
pub mod validation;
pub mod water;

pub use error::{Error, Result};
