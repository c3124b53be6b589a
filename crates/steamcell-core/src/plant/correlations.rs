//! Published correlations used by the distribution calculations (`orifice`, `pipe`): pipe
//! friction factors, convection from a horizontal cylinder to air (natural and cross-flow),
//! forced convection inside a tube, radiation, the properties of dry air, and the homogeneous
//! viscosity of a wet mixture.
//!
//! Air properties: ideal-gas density, Sutherland's law for viscosity and conductivity (White's
//! constants), cp from a table; within 2 % of Incropera's Table A.4 from 250 K to 800 K (tested;
//! the table quoted from memory).
//!
//! Units: SI throughout this module (m, K, Pa, W, kg/s); the caller converts.
//!
//! Invariant: each correlation is one plain function, named after its authors, citing its
//! source; constants are named consts. No function here iterates except `colebrook`, which solves
//! the implicit Colebrook-White equation to round-off. Nothing checks physical ranges except
//! `friction_factor`, which refuses a non-positive Reynolds number or a negative roughness.

use crate::error::{Bound, Error, Result};

/// Stefan-Boltzmann constant, W/(m2 K4) (CODATA 2018; exact in the 2019 SI since h, c and k are
/// fixed).
pub const STEFAN_BOLTZMANN: f64 = 5.670_374_419e-8;

/// Specific gas constant of dry air, J/(kg K): R / M with R = 8.314462618 J/(mol K) (2019 SI)
/// and M = 28.9647 g/mol (the molar mass of dry air of the U.S. Standard Atmosphere 1976; from
/// memory).
pub const R_AIR: f64 = 8.314_462_618 / 0.028_964_7;

/// Isobaric heat capacity of dry air at 1 atm, (T K, cp J/(kg K)), from Incropera, DeWitt,
/// Bergman and Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., Table A.4 (values quoted
/// from memory); interpolated linearly, held constant beyond the ends. With `air_viscosity` and
/// `air_conductivity` it gives that table's Prandtl number within 2 % from 250 K to 800 K
/// (tested).
pub const AIR_CP_TABLE_A4: [(f64, f64); 12] = [
    (250.0, 1006.0),
    (300.0, 1007.0),
    (350.0, 1009.0),
    (400.0, 1014.0),
    (450.0, 1021.0),
    (500.0, 1030.0),
    (550.0, 1040.0),
    (600.0, 1051.0),
    (650.0, 1063.0),
    (700.0, 1075.0),
    (750.0, 1087.0),
    (800.0, 1099.0),
];

/// Isobaric heat capacity of dry air, J/(kg K), interpolated in `AIR_CP_TABLE_A4`.
pub fn air_cp(t: f64) -> f64 {
    let tab = &AIR_CP_TABLE_A4;
    if t <= tab[0].0 {
        return tab[0].1;
    }
    for w in tab.windows(2) {
        let ((t0, c0), (t1, c1)) = (w[0], w[1]);
        if t <= t1 {
            return c0 + (c1 - c0) * (t - t0) / (t1 - t0);
        }
    }
    tab[tab.len() - 1].1
}

/// Sutherland's law for the viscosity of air: reference temperature, K (F. M. White, Viscous
/// Fluid Flow, Table 1-2; from memory).
pub const AIR_MU_T0: f64 = 273.0;
/// Sutherland's law for air: viscosity at `AIR_MU_T0`, Pa s (White, Table 1-2; from memory).
pub const AIR_MU_0: f64 = 1.716e-5;
/// Sutherland's law for air: Sutherland constant of the viscosity, K (White, Table 1-2; from
/// memory).
pub const AIR_MU_S: f64 = 111.0;
/// Sutherland's law for the conductivity of air: reference temperature, K (White, Table 1-3;
/// from memory).
pub const AIR_K_T0: f64 = 273.0;
/// Sutherland's law for air: conductivity at `AIR_K_T0`, W/(m K) (White, Table 1-3; from memory).
pub const AIR_K_0: f64 = 0.0241;
/// Sutherland's law for air: Sutherland constant of the conductivity, K (White, Table 1-3; from
/// memory).
pub const AIR_K_S: f64 = 194.0;

/// Reynolds number up to which pipe flow is taken as laminar (f = 64/Re; common practice, no
/// source).
pub const RE_LAMINAR: f64 = 2300.0;
/// Reynolds number from which the turbulent friction correlations are used; between
/// `RE_LAMINAR` and this value the friction factor is interpolated linearly (common practice,
/// no source) and the result warns that the flow is transitional.
pub const RE_TURBULENT: f64 = 4000.0;

/// Nusselt number of fully developed laminar flow in a tube at constant wall temperature
/// (Graetz-Nusselt value 3.66; common practice, no source).
pub const NU_LAMINAR_TUBE: f64 = 3.66;

/// Which friction-factor correlation to use for turbulent flow.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FrictionModel {
    /// Colebrook-White, solved iteratively (the reference).
    Colebrook,
    /// Swamee-Jain, explicit.
    SwameeJain,
    /// Haaland, explicit.
    Haaland,
}

impl FrictionModel {
    /// The name used on the wire.
    pub fn name(self) -> &'static str {
        match self {
            FrictionModel::Colebrook => "colebrook",
            FrictionModel::SwameeJain => "swamee_jain",
            FrictionModel::Haaland => "haaland",
        }
    }

    /// Where the correlation comes from.
    pub fn source(self) -> &'static str {
        match self {
            FrictionModel::Colebrook => "Colebrook, J. Inst. Civ. Eng. 11 (1939) 133-156 (Colebrook-White equation, solved iteratively)",
            FrictionModel::SwameeJain => "Swamee and Jain, J. Hydraul. Div. ASCE 102 (1976) 657-664 (explicit)",
            FrictionModel::Haaland => "Haaland, J. Fluids Eng. 105 (1983) 89-90 (explicit)",
        }
    }
}

/// Darcy friction factor of laminar flow in a round tube, f = 64 / Re (Hagen-Poiseuille).
pub fn laminar(re: f64) -> f64 {
    64.0 / re
}

/// Darcy friction factor from the Colebrook-White equation (C. F. Colebrook, "Turbulent flow in
/// pipes, with particular reference to the transition region between the smooth and rough pipe
/// laws", J. Inst. Civ. Eng. 11 (1939) 133-156):
/// 1/sqrt(f) = -2 log10( (eps/D)/3.7 + 2.51 / (Re sqrt(f)) ),
/// solved by Newton's method on y = 1/sqrt(f) from the Swamee-Jain value, to round-off.
pub fn colebrook(re: f64, rel_roughness: f64) -> f64 {
    let a = rel_roughness / 3.7;
    let b = 2.51 / re;
    let mut y = 1.0 / swamee_jain(re, rel_roughness).sqrt();
    let ln10 = std::f64::consts::LN_10;
    for _ in 0..50 {
        let arg = a + b * y;
        let g = y + 2.0 * arg.log10();
        let dg = 1.0 + 2.0 * b / (arg * ln10);
        let step = g / dg;
        y -= step;
        if step.abs() <= 1e-15 * y.abs() {
            break;
        }
    }
    1.0 / (y * y)
}

/// Darcy friction factor from the explicit approximation of P. K. Swamee and A. K. Jain,
/// "Explicit equations for pipe-flow problems", J. Hydraul. Div. ASCE 102 (1976) 657-664:
/// f = 0.25 / [log10( (eps/D)/3.7 + 5.74 / Re^0.9 )]^2.
pub fn swamee_jain(re: f64, rel_roughness: f64) -> f64 {
    let l = (rel_roughness / 3.7 + 5.74 / re.powf(0.9)).log10();
    0.25 / (l * l)
}

/// Darcy friction factor from the explicit formula of S. E. Haaland, "Simple and explicit
/// formulas for the friction factor in turbulent pipe flow", J. Fluids Eng. 105 (1983) 89-90:
/// 1/sqrt(f) = -1.8 log10( ((eps/D)/3.7)^1.11 + 6.9/Re ).
pub fn haaland(re: f64, rel_roughness: f64) -> f64 {
    let y = -1.8 * ((rel_roughness / 3.7).powf(1.11) + 6.9 / re).log10();
    1.0 / (y * y)
}

/// Darcy friction factor for any Reynolds number: laminar below `RE_LAMINAR`, the chosen
/// turbulent correlation from `RE_TURBULENT`, linear interpolation between (common practice,
/// no source).
pub fn friction_factor(model: FrictionModel, re: f64, rel_roughness: f64) -> Result<f64> {
    Error::check_finite("Re", re)?;
    Error::check_finite("relative roughness", rel_roughness)?;
    if re <= 0.0 {
        return Err(Error::out_of_range(
            "Re",
            re,
            0.0,
            "1",
            Bound::Below,
            "a friction factor (the Reynolds number must be positive)",
        ));
    }
    if rel_roughness < 0.0 {
        return Err(Error::out_of_range(
            "relative roughness",
            rel_roughness,
            0.0,
            "1",
            Bound::Below,
            "a friction factor",
        ));
    }
    let turbulent = |re: f64| match model {
        FrictionModel::Colebrook => colebrook(re, rel_roughness),
        FrictionModel::SwameeJain => swamee_jain(re, rel_roughness),
        FrictionModel::Haaland => haaland(re, rel_roughness),
    };
    Ok(if re <= RE_LAMINAR {
        laminar(re)
    } else if re >= RE_TURBULENT {
        turbulent(re)
    } else {
        let w = (re - RE_LAMINAR) / (RE_TURBULENT - RE_LAMINAR);
        (1.0 - w) * laminar(RE_LAMINAR) + w * turbulent(RE_TURBULENT)
    })
}

/// Mean Nusselt number of natural convection from a long isothermal horizontal cylinder, from
/// S. W. Churchill and H. H. S. Chu, "Correlating equations for laminar and turbulent free
/// convection from a horizontal cylinder", Int. J. Heat Mass Transfer 18 (1975) 1049-1053:
/// Nu_D = { 0.60 + 0.387 Ra_D^(1/6) / [1 + (0.559/Pr)^(9/16)]^(8/27) }^2, for Ra_D <= 1e12
/// (properties at the film temperature).
pub fn churchill_chu_horizontal(ra: f64, pr: f64) -> f64 {
    let ra = ra.max(0.0);
    let f = (1.0 + (0.559 / pr).powf(9.0 / 16.0)).powf(8.0 / 27.0);
    let a = 0.60 + 0.387 * ra.powf(1.0 / 6.0) / f;
    a * a
}

/// Mean Nusselt number of a cylinder in cross-flow, from S. W. Churchill and M. Bernstein, "A
/// correlating equation for forced convection from gases and liquids to a circular cylinder in
/// crossflow", J. Heat Transfer 99 (1977) 300-306:
/// Nu_D = 0.3 + 0.62 Re^(1/2) Pr^(1/3) / [1 + (0.4/Pr)^(2/3)]^(1/4) * [1 + (Re/282000)^(5/8)]^(4/5),
/// for Re Pr > 0.2 (properties at the film temperature).
pub fn churchill_bernstein(re: f64, pr: f64) -> f64 {
    if re <= 0.0 {
        return 0.3;
    }
    let a = 0.62 * re.sqrt() * pr.powf(1.0 / 3.0) / (1.0 + (0.4 / pr).powf(2.0 / 3.0)).powf(0.25);
    0.3 + a * (1.0 + (re / 282_000.0).powf(5.0 / 8.0)).powf(0.8)
}

/// Exponent of the combination of forced and natural convection, Nu^n = Nu_F^n + Nu_N^n, for a
/// cylinder in transverse flow (n = 3, as recommended after Churchill (1977) in Incropera et
/// al., Fundamentals of Heat and Mass Transfer, section 9.9; from memory).
pub const MIXED_CONVECTION_EXPONENT: f64 = 3.0;

/// Mixed convection: (Nu_F^3 + Nu_N^3)^(1/3) (see `MIXED_CONVECTION_EXPONENT`); in still air it is
/// the natural-convection value itself.
pub fn mixed_convection(nu_forced: f64, nu_natural: f64) -> f64 {
    let n = MIXED_CONVECTION_EXPONENT;
    (nu_forced.powf(n) + nu_natural.powf(n)).powf(1.0 / n)
}

/// Darcy friction factor of smooth tubes of B. S. Petukhov ("Heat transfer and friction in
/// turbulent pipe flow with variable physical properties", Adv. Heat Transfer 6 (1970) 503-564):
/// f = (0.790 ln Re - 1.64)^-2, used inside Gnielinski's correlation.
pub fn petukhov(re: f64) -> f64 {
    let a = 0.790 * re.ln() - 1.64;
    1.0 / (a * a)
}

/// Mean Nusselt number of turbulent flow in a tube, from V. Gnielinski, "New equations for heat
/// and mass transfer in turbulent pipe and channel flow", Int. Chem. Eng. 16 (1976) 359-368:
/// Nu = (f/8)(Re - 1000) Pr / (1 + 12.7 (f/8)^(1/2) (Pr^(2/3) - 1)), f from `petukhov`, for
/// 3000 <= Re <= 5e6, 0.5 <= Pr <= 2000. Below Re = 2300 the laminar value 3.66 is used, and
/// between 2300 and 3000 a linear interpolation (common practice, no source).
pub fn tube_nusselt(re: f64, pr: f64) -> f64 {
    let gn = |re: f64| {
        let f8 = petukhov(re) / 8.0;
        f8 * (re - 1000.0) * pr / (1.0 + 12.7 * f8.sqrt() * (pr.powf(2.0 / 3.0) - 1.0))
    };
    if re <= RE_LAMINAR {
        NU_LAMINAR_TUBE
    } else if re >= 3000.0 {
        gn(re)
    } else {
        let w = (re - RE_LAMINAR) / (3000.0 - RE_LAMINAR);
        (1.0 - w) * NU_LAMINAR_TUBE + w * gn(3000.0)
    }
}

/// Linearised radiation coefficient between a grey surface at `ts` and large surroundings at
/// `tsur` (K): h_r = eps sigma (ts^2 + tsur^2)(ts + tsur), W/(m2 K), so that the radiated flux is
/// h_r (ts - tsur) = eps sigma (ts^4 - tsur^4) exactly (Stefan-Boltzmann law).
pub fn radiation_coefficient(emissivity: f64, ts: f64, tsur: f64) -> f64 {
    emissivity * STEFAN_BOLTZMANN * (ts * ts + tsur * tsur) * (ts + tsur)
}

/// Properties of dry air at one temperature and pressure, SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Air {
    /// Density, kg/m3 (ideal gas).
    pub rho: f64,
    /// Dynamic viscosity, Pa s (Sutherland).
    pub mu: f64,
    /// Kinematic viscosity, m2/s.
    pub nu: f64,
    /// Thermal conductivity, W/(m K) (Sutherland).
    pub k: f64,
    /// Isobaric heat capacity, J/(kg K) (`air_cp`).
    pub cp: f64,
    /// Thermal diffusivity, m2/s.
    pub alpha: f64,
    /// Prandtl number.
    pub pr: f64,
    /// Volumetric expansion coefficient 1/T, 1/K (ideal gas).
    pub beta: f64,
}

/// Sutherland's law, x = x0 (T/T0)^(3/2) (T0 + S)/(T + S) (W. Sutherland, Phil. Mag. 36 (1893)
/// 507-531).
pub fn sutherland(t: f64, x0: f64, t0: f64, s: f64) -> f64 {
    x0 * (t / t0).powf(1.5) * (t0 + s) / (t + s)
}

/// Viscosity of air, Pa s: Sutherland's law with White's constants (`AIR_MU_*`).
pub fn air_viscosity(t: f64) -> f64 {
    sutherland(t, AIR_MU_0, AIR_MU_T0, AIR_MU_S)
}

/// Thermal conductivity of air, W/(m K): Sutherland's law with White's constants (`AIR_K_*`).
pub fn air_conductivity(t: f64) -> f64 {
    sutherland(t, AIR_K_0, AIR_K_T0, AIR_K_S)
}

/// Dry air at temperature `t` (K) and pressure `p` (Pa): ideal-gas density and expansion
/// coefficient, Sutherland viscosity and conductivity, tabulated cp.
pub fn air(t: f64, p: f64) -> Air {
    let rho = p / (R_AIR * t);
    let mu = air_viscosity(t);
    let k = air_conductivity(t);
    let cp = air_cp(t);
    Air {
        rho,
        mu,
        nu: mu / rho,
        k,
        cp,
        alpha: k / (rho * cp),
        pr: mu * cp / k,
        beta: 1.0 / t,
    }
}

/// Viscosity of a homogeneous two-phase mixture of quality x from the saturated-liquid and
/// saturated-vapour viscosities: 1/mu = x/mu_g + (1 - x)/mu_f (W. H. McAdams, W. K. Woods and
/// L. C. Heroman, Trans. ASME 64 (1942) 193-200; from memory).
pub fn mcadams_viscosity(x: f64, mu_f: f64, mu_g: f64) -> f64 {
    1.0 / (x / mu_g + (1.0 - x) / mu_f)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn colebrook_satisfies_its_equation() {
        for &re in &[4e3, 1e4, 1e5, 1e6, 1e8] {
            for &rr in &[0.0, 1e-6, 1e-4, 1e-3, 1e-2, 0.05] {
                let f = colebrook(re, rr);
                let lhs = 1.0 / f.sqrt();
                let rhs = -2.0 * (rr / 3.7 + 2.51 / (re * f.sqrt())).log10();
                assert!((lhs - rhs).abs() < 1e-12 * lhs, "Re {re} eps/D {rr}");
            }
        }
    }

    #[test]
    fn friction_refuses_nonsense() {
        assert!(friction_factor(FrictionModel::Colebrook, 0.0, 1e-3).is_err());
        assert!(friction_factor(FrictionModel::Colebrook, 1e5, -1e-3).is_err());
        assert!(friction_factor(FrictionModel::Colebrook, f64::NAN, 1e-3).is_err());
        // continuous at both ends of the transition
        let f0 = friction_factor(FrictionModel::Colebrook, RE_LAMINAR, 1e-3).unwrap();
        assert!((f0 - 64.0 / RE_LAMINAR).abs() < 1e-15);
        let f1 = friction_factor(FrictionModel::Colebrook, RE_TURBULENT, 1e-3).unwrap();
        assert!((f1 - colebrook(RE_TURBULENT, 1e-3)).abs() < 1e-15);
    }

    #[test]
    fn radiation_coefficient_is_exact() {
        let (ts, tsur, e) = (450.0, 290.0, 0.8);
        let h = radiation_coefficient(e, ts, tsur);
        let q = e * STEFAN_BOLTZMANN * (ts.powi(4) - tsur.powi(4));
        assert!((h * (ts - tsur) - q).abs() < 1e-12 * q);
    }
}
