//! The numeric outputs of a solved state, by name: [`Field`] knows each one's wire name, its
//! dimension, how to read its value from a [`State`] (and its transport properties), and why it
//! is undefined where it is.
//!
//! Units: values are internal (p MPa, T K, rho kg/m3, v m3/kg, u h kJ/kg, s cp cv kJ/(kg K),
//! w m/s, mu_jt K/MPa, alpha_v 1/K, kappa_t 1/MPa, superheat K, mu Pa s, lambda W/(m K), nu and
//! thermal_diffusivity m2/s; x, kappa, z, pr dimensionless); [`Field::dim`] says which.
//!
//! Invariant: a field without a value for a state reads as NaN, never as zero, and
//! [`Field::undefined_reason`] names the reason for exactly the fields the wire reports as
//! undefined. Names are resolved once ([`Field::parse`]); per-row loops match on the enum.

use crate::units::Dim;
use crate::water::iapws95;
use crate::water::state::{self, Phase, State};
use crate::water::transport::{self, Transport};
use crate::water::Formulation;

/// One numeric output of a state.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Field {
    /// Pressure (absolute).
    P,
    /// Temperature.
    T,
    /// Density.
    Rho,
    /// Specific volume.
    V,
    /// Specific internal energy.
    U,
    /// Specific enthalpy.
    H,
    /// Specific entropy.
    S,
    /// Specific isobaric heat capacity.
    Cp,
    /// Specific isochoric heat capacity.
    Cv,
    /// Speed of sound.
    W,
    /// Vapour mass fraction (quality).
    X,
    /// Isentropic exponent w^2 / (p v).
    Kappa,
    /// Joule-Thomson coefficient (dT/dp)_h.
    MuJt,
    /// Isobaric cubic expansion coefficient.
    AlphaV,
    /// Isothermal compressibility.
    KappaT,
    /// Compressibility factor p v / (R T).
    Z,
    /// T - T_sat(p): superheat above the saturation temperature at the state's pressure;
    /// negative for a subcooled liquid (its subcooling) or a metastable vapour.
    Superheat,
    /// Dynamic viscosity.
    Mu,
    /// Thermal conductivity.
    Lambda,
    /// Kinematic viscosity mu / rho.
    Nu,
    /// Thermal diffusivity lambda / (rho cp).
    ThermalDiffusivity,
    /// Prandtl number mu cp / lambda.
    Pr,
}

/// Why a single-phase property is missing from a wet state.
const WET_SINGLE_PHASE: &str = "not defined for a two-phase (wet) mixture";
/// Why the transport properties are missing from a wet state.
const WET_TRANSPORT: &str = "transport properties of a two-phase (wet) mixture are not defined";

impl Field {
    /// Every field, in the order the wire lists them (`water.state`'s error messages, the
    /// accepted `want` names).
    pub const ALL: [Field; 22] = [
        Field::P,
        Field::T,
        Field::Rho,
        Field::V,
        Field::U,
        Field::H,
        Field::S,
        Field::Cp,
        Field::Cv,
        Field::W,
        Field::X,
        Field::Kappa,
        Field::MuJt,
        Field::AlphaV,
        Field::KappaT,
        Field::Z,
        Field::Superheat,
        Field::Mu,
        Field::Lambda,
        Field::Nu,
        Field::ThermalDiffusivity,
        Field::Pr,
    ];

    /// The field's name on the wire.
    pub fn name(self) -> &'static str {
        match self {
            Field::P => "p",
            Field::T => "T",
            Field::Rho => "rho",
            Field::V => "v",
            Field::U => "u",
            Field::H => "h",
            Field::S => "s",
            Field::Cp => "cp",
            Field::Cv => "cv",
            Field::W => "w",
            Field::X => "x",
            Field::Kappa => "kappa",
            Field::MuJt => "mu_jt",
            Field::AlphaV => "alpha_v",
            Field::KappaT => "kappa_t",
            Field::Z => "z",
            Field::Superheat => "superheat",
            Field::Mu => "mu",
            Field::Lambda => "lambda",
            Field::Nu => "nu",
            Field::ThermalDiffusivity => "thermal_diffusivity",
            Field::Pr => "pr",
        }
    }

    /// The field named `name` (exact spelling, as [`Field::name`] gives it).
    pub fn parse(name: &str) -> Option<Field> {
        Field::ALL.into_iter().find(|f| f.name() == name)
    }

    /// The field's dimension (its internal unit, see the module doc).
    pub fn dim(self) -> Dim {
        match self {
            Field::P => Dim::Pressure,
            Field::T => Dim::Temperature,
            Field::Rho => Dim::Density,
            Field::V => Dim::SpecificVolume,
            Field::U | Field::H => Dim::SpecificEnergy,
            Field::S | Field::Cp | Field::Cv => Dim::SpecificEntropy,
            Field::W => Dim::Speed,
            Field::X | Field::Kappa | Field::Z | Field::Pr => Dim::Dimensionless,
            Field::MuJt => Dim::TemperaturePerPressure,
            Field::AlphaV => Dim::InverseTemperature,
            Field::KappaT => Dim::InversePressure,
            Field::Superheat => Dim::TemperatureDifference,
            Field::Mu => Dim::Viscosity,
            Field::Lambda => Dim::Conductivity,
            Field::Nu | Field::ThermalDiffusivity => Dim::Diffusivity,
        }
    }

    /// Whether the field is a transport property (read from [`transport::for_state`]).
    pub fn is_transport(self) -> bool {
        matches!(
            self,
            Field::Mu | Field::Lambda | Field::Nu | Field::ThermalDiffusivity | Field::Pr
        )
    }

    /// Whether the field needs no second derivative of the fundamental equation, so that a
    /// state from [`crate::water::solve_first_order`] gives it bit for bit as
    /// [`crate::water::solve`] does (p, T, rho, v, u, h, s, x, z).
    pub fn is_first_order(self) -> bool {
        matches!(
            self,
            Field::P
                | Field::T
                | Field::Rho
                | Field::V
                | Field::U
                | Field::H
                | Field::S
                | Field::X
                | Field::Z
        )
    }

    /// The field's internal value for a state solved with formulation `f`; NaN where it is
    /// undefined. `tr` is the state's transport ([`transport::for_state`]); when None and a
    /// transport field is asked for, it is computed here.
    #[inline]
    pub fn value(self, st: &State, f: Formulation, tr: Option<&Transport>) -> f64 {
        let p = &st.props;
        match self {
            Field::P => p.p,
            Field::T => p.t,
            Field::Rho => p.rho,
            Field::V => p.v,
            Field::U => p.u,
            Field::H => p.h,
            Field::S => p.s,
            Field::Cp => p.cp,
            Field::Cv => p.cv,
            Field::W => p.w,
            Field::X => st.x.unwrap_or(f64::NAN),
            Field::Kappa => p.kappa,
            Field::MuJt => p.mu_jt,
            Field::AlphaV => p.alpha_v,
            Field::KappaT => p.kappa_t,
            Field::Z => p.z,
            Field::Superheat => superheat(st, f),
            Field::Mu | Field::Lambda | Field::Nu | Field::ThermalDiffusivity | Field::Pr => {
                self.transport_value(st, f, tr)
            }
        }
    }

    fn transport_value(self, st: &State, f: Formulation, tr: Option<&Transport>) -> f64 {
        let own;
        let tr = match tr {
            Some(t) => t,
            None => {
                own = transport::for_state(st, f);
                &own
            }
        };
        match self {
            Field::Mu => tr.mu,
            Field::Lambda => tr.lambda,
            Field::Nu => tr.nu,
            Field::ThermalDiffusivity => tr.a,
            Field::Pr => tr.pr,
            _ => f64::NAN,
        }
    }

    /// Why the field has no value for `st`, or None where it has one; `value` is the field's
    /// value for `st` as [`Field::value`] reads it. A wet state has no cp, cv, w, kappa, mu_jt,
    /// alpha_v, kappa_t, transport properties or superheat; a single-phase state no quality; a
    /// state at or above the critical pressure no superheat.
    pub fn undefined_reason(self, st: &State, value: f64) -> Option<&'static str> {
        if st.phase == Phase::Wet {
            return match self {
                Field::Cp
                | Field::Cv
                | Field::W
                | Field::Kappa
                | Field::MuJt
                | Field::AlphaV
                | Field::KappaT => Some(WET_SINGLE_PHASE),
                Field::Superheat => Some("a wet mixture is at the saturation temperature"),
                f if f.is_transport() => Some(WET_TRANSPORT),
                _ => None,
            };
        }
        if value.is_finite() {
            return None;
        }
        match self {
            Field::X => Some(match st.phase {
                Phase::Liquid => {
                    "single-phase liquid state: the quality is defined only for wet mixtures"
                }
                Phase::Vapour => {
                    "single-phase vapour state: the quality is defined only for wet mixtures"
                }
                _ => {
                    "single-phase supercritical state: the quality is defined only for wet mixtures"
                }
            }),
            Field::Superheat => Some(
                "T - T_sat(p) is defined below the critical pressure only (no saturation temperature above it)",
            ),
            _ => None,
        }
    }
}

/// T - T_sat(p) of a single-phase state below the critical pressure, with the saturation line
/// of the state's own formulation: positive for a superheated vapour, negative for a subcooled
/// liquid (minus its subcooling) and for a metastable vapour; NaN for a wet state and at or
/// above the critical pressure.
fn superheat(st: &State, f: Formulation) -> f64 {
    if matches!(st.phase, Phase::Vapour | Phase::Liquid) && st.props.p < state::P_C {
        // A saturated side (`water::saturation`) is at its saturation temperature exactly,
        // not at the round-off of T_sat(p_sat(T)).
        if st.x.is_some() {
            return 0.0;
        }
        let ts = match f {
            Formulation::If97 => state::saturation_p(st.props.p).map(|r| r.0),
            Formulation::Iapws95 => iapws95::saturation_p(st.props.p).map(|s| s.t),
        };
        if let Ok(ts) = ts {
            return st.props.t - ts;
        }
    }
    f64::NAN
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::water::state::Options;

    #[test]
    fn names_round_trip_and_are_unique() {
        for (i, f) in Field::ALL.into_iter().enumerate() {
            assert_eq!(Field::parse(f.name()), Some(f));
            assert!(Field::ALL[..i].iter().all(|g| g.name() != f.name()));
        }
        assert_eq!(Field::parse("H"), None);
        assert_eq!(Field::parse("region"), None);
    }

    #[test]
    fn values_are_the_state_s_own() {
        let st = state::at_pt(1.0, 500.0, &Options::STANDARD).unwrap();
        let pr = st.props;
        for (f, want) in [
            (Field::H, pr.h),
            (Field::Cp, pr.cp),
            (Field::W, pr.w),
            (Field::Z, pr.z),
        ] {
            let got = f.value(&st, Formulation::If97, None);
            assert_eq!(got.to_bits(), want.to_bits(), "{}", f.name());
        }
        let tr = transport::for_state(&st, Formulation::If97);
        assert_eq!(
            Field::Pr.value(&st, Formulation::If97, None).to_bits(),
            tr.pr.to_bits()
        );
        // Vapour at 1 MPa, 500 K (T_sat = 453.0 K): superheat, but no quality.
        let x = Field::X.value(&st, Formulation::If97, None);
        assert!(x.is_nan());
        assert!(Field::X
            .undefined_reason(&st, x)
            .unwrap()
            .contains("vapour"));
        let sh = Field::Superheat.value(&st, Formulation::If97, None);
        assert!(sh > 46.0 && sh < 48.0, "{sh}");
        assert_eq!(Field::Superheat.undefined_reason(&st, sh), None);
        // Liquid at 1 MPa, 400 K (T_sat = 453.03 K): superheat minus its subcooling, about
        // -53 K, a number rather than undefined.
        let liq = state::at_pt(1.0, 400.0, &Options::STANDARD).unwrap();
        let sh = Field::Superheat.value(&liq, Formulation::If97, None);
        assert!(sh > -54.0 && sh < -52.0, "{sh}");
        assert_eq!(Field::Superheat.undefined_reason(&liq, sh), None);
        // Above the critical pressure there is no saturation temperature.
        let sc = state::at_pt(30.0, 400.0, &Options::STANDARD).unwrap();
        let sh = Field::Superheat.value(&sc, Formulation::If97, None);
        assert!(sh.is_nan() && Field::Superheat.undefined_reason(&sc, sh).is_some());
    }

    #[test]
    fn a_wet_state_lacks_the_single_phase_fields() {
        let st = state::at_px(1.0, 0.5).unwrap();
        for f in Field::ALL {
            let v = f.value(&st, Formulation::If97, None);
            let why = f.undefined_reason(&st, v);
            assert_eq!(why.is_some(), v.is_nan(), "{}", f.name());
        }
    }
}
