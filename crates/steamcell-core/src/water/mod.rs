//! Water and steam properties: pure physics, no serde, no async, no I/O, no panic on finite input.
//!
//! Internal units are the IAPWS releases' own: p MPa, T K, v m3/kg, rho kg/m3, h u kJ/kg,
//! s cp cv kJ/(kg K), w m/s.
//!
//! Entry points: [`solve`] fixes a state from any accepted pair ([`PAIRS`]) with either
//! formulation, [`saturation`] gives both saturated sides, and [`Field`] names and reads every
//! numeric output of a state.
pub mod field;
pub mod iapws95;
pub mod if97;
pub mod melting;
pub mod pairs;
pub mod props;
pub mod solve;
pub mod state;
pub mod state95;
pub mod tables;
pub mod transport;
pub mod uncertainty;

pub use field::Field;
pub use pairs::{PairSpec, INPUTS, PAIRS};
pub use props::{GibbsDerivs, HelmholtzDerivs, Props};
pub use solve::{saturation, solve, solve_first_order, Saturated, SaturationAt};
pub use state::{Given, Options, Phase, State};

/// The property formulation a state was solved with.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Formulation {
    /// IAPWS-IF97 (IAPWS R7-97(2012)), the industrial formulation.
    If97,
    /// IAPWS-95 (IAPWS R6-95(2018)), the scientific reference formulation.
    Iapws95,
}

impl Formulation {
    /// The formulation's name as the releases write it.
    pub fn name(self) -> &'static str {
        match self {
            Formulation::If97 => "IAPWS-IF97",
            Formulation::Iapws95 => "IAPWS-95",
        }
    }
}
