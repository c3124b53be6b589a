//! Water and steam properties: pure physics, no serde, no async, no I/O, no panic on finite input.
//!
//! Internal units are the IAPWS releases' own: p MPa, T K, v m3/kg, rho kg/m3, h u kJ/kg,
//! s cp cv kJ/(kg K), w m/s.
pub mod iapws95;
pub mod if97;
pub mod melting;
pub mod props;
pub mod state;
pub mod tables;
pub mod transport;

pub use props::{GibbsDerivs, HelmholtzDerivs, Props};
