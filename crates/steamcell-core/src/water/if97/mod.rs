//! IAPWS-IF97 (IAPWS R7-97(2012)): basic equations of regions 1 to 5, the region boundaries and
//! the supplementary backward equations. Internal units: MPa, K, kJ/kg, kJ/(kg K), m3/kg.
pub mod b23;
pub mod backward;
#[cfg(debug_assertions)]
pub mod fault;
mod powers;
pub mod region1;
pub mod region2;
pub mod region3;
pub mod region4;
pub mod region5;
pub mod regions;

pub use regions::{P_C, R, RHO_C, T_C};
