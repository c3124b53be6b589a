//! Transport and interfacial properties of ordinary water: viscosity (IAPWS R12-08), thermal
//! conductivity (IAPWS R15-11), surface tension (IAPWS R1-76(2014)), and the derived kinematic
//! viscosity, thermal diffusivity and Prandtl number.
//!
//! Units: SI at this layer's outputs: viscosity Pa s, conductivity W/(m K), surface tension N/m,
//! kinematic viscosity and thermal diffusivity m2/s; inputs rho kg/m3, T K, cp kJ/(kg K).
//!
//! Invariant: the `*_95` and full functions take every thermodynamic input from IAPWS-95 at the
//! same (rho, T); the industrial variants take them from the caller. `for_state` gives NaN for
//! every field of a wet (two-phase) state: the transport properties of a mixture are undefined.
pub mod conductivity;
pub mod surface_tension;
pub mod viscosity;

pub use conductivity::{conductivity, conductivity_background, conductivity_with};
pub use surface_tension::surface_tension;
pub use viscosity::{viscosity, viscosity_industrial};

use crate::water::iapws95;
use crate::water::state::{Phase, State};
use crate::water::Formulation;

/// Kinematic viscosity nu = mu / rho in m2/s (mu Pa s, rho kg/m3).
pub fn kinematic_viscosity(mu: f64, rho: f64) -> f64 {
    mu / rho
}

/// Thermal diffusivity a = lambda / (rho cp) in m2/s (lambda W/(m K), rho kg/m3, cp kJ/(kg K)).
pub fn thermal_diffusivity(lambda: f64, rho: f64, cp: f64) -> f64 {
    lambda / (rho * cp * 1e3)
}

/// Prandtl number Pr = mu cp / lambda (mu Pa s, cp kJ/(kg K), lambda W/(m K)), dimensionless.
pub fn prandtl(mu: f64, cp: f64, lambda: f64) -> f64 {
    mu * cp * 1e3 / lambda
}

/// The transport properties of one state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Transport {
    /// Dynamic viscosity, Pa s.
    pub mu: f64,
    /// Thermal conductivity, W/(m K).
    pub lambda: f64,
    /// Kinematic viscosity, m2/s.
    pub nu: f64,
    /// Thermal diffusivity, m2/s.
    pub a: f64,
    /// Prandtl number.
    pub pr: f64,
}

/// All transport properties at (rho kg/m3, T K) with the full correlations and IAPWS-95
/// (critical enhancements included). Requires rho > 0, T > 0.
pub fn transport_95(rho: f64, t: f64) -> Transport {
    let p = iapws95::props(rho, t);
    let mu = viscosity(rho, t);
    let lambda = conductivity_with(rho, t, p.cp, p.cv, mu, iapws95::drho_dp_t(rho, t));
    Transport {
        mu,
        lambda,
        nu: kinematic_viscosity(mu, rho),
        a: thermal_diffusivity(lambda, rho, p.cp),
        pr: prandtl(mu, p.cp, lambda),
    }
}

impl Transport {
    /// Every field NaN (a state without transport properties, e.g. a wet mixture).
    pub const UNDEFINED: Transport = Transport {
        mu: f64::NAN,
        lambda: f64::NAN,
        nu: f64::NAN,
        a: f64::NAN,
        pr: f64::NAN,
    };
}

/// All transport properties at (rho kg/m3, T K) for industrial use with IAPWS-IF97 state
/// properties: viscosity with mu_bar_2 = 1 (IAPWS R12-08, industrial recommendation), thermal
/// conductivity from the state's own cp, cv and (d rho/d p)_T = rho kappa_t (IAPWS R15-11,
/// industrial use, see `conductivity_with`). `cp`, `cv` in kJ/(kg K), `kappa_t` in 1/MPa.
pub fn transport_industrial(rho: f64, t: f64, cp: f64, cv: f64, kappa_t: f64) -> Transport {
    let mu = viscosity_industrial(rho, t);
    let lambda = conductivity_with(rho, t, cp, cv, mu, rho * kappa_t);
    Transport {
        mu,
        lambda,
        nu: kinematic_viscosity(mu, rho),
        a: thermal_diffusivity(lambda, rho, cp),
        pr: prandtl(mu, cp, lambda),
    }
}

/// Transport properties of a solved state: the full correlations (`transport_95`) for an
/// IAPWS-95 state, the industrial variants (`transport_industrial`) for an IAPWS-IF97 state;
/// `Transport::UNDEFINED` for a wet state or one without a positive finite density.
pub fn for_state(st: &State, formulation: Formulation) -> Transport {
    let p = &st.props;
    if st.phase == Phase::Wet || !(p.rho > 0.0 && p.rho.is_finite() && p.t > 0.0) {
        return Transport::UNDEFINED;
    }
    match formulation {
        Formulation::Iapws95 => transport_95(p.rho, p.t),
        Formulation::If97 => transport_industrial(p.rho, p.t, p.cp, p.cv, p.kappa_t),
    }
}
