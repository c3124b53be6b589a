//! Engineering units: parsing of values with units ("42 barg", "410 degC", "1200 Btu/lb"), the
//! output presets (`si`, `engineering`, `us`, `bar`, `bar_th`), the units of one request chosen per
//! dimension and per field name ([`UnitSystem`]), and conversion to and from the internal units of
//! the physics layer (p MPa, T K, h u kJ/kg, s cp cv kJ/(kg K), v m3/kg, rho kg/m3, w m/s, flow
//! kg/s, power and heat flow kW, viscosity Pa s, conductivity W/(m K), surface tension N/m, area m2,
//! volume flow m3/s).
//!
//! Invariant: this is the only module that knows unit spellings; every conversion factor is an
//! exact definition (international foot and pound, thermochemical-free IT Btu) cited where declared.
//! A unit whose factor is a decimal fraction (bar = 0.1 MPa, kPa, degF = 1/1.8 K) is converted by
//! dividing by the exact reciprocal (10, 1000, 1.8) instead of multiplying by the inexact binary
//! fraction, so "3 bar" is 0.3 MPa and 0.3 MPa is 3 bar, to the last bit. Gauge pressures add an
//! ambient pressure (101.325 kPa unless the caller gives one).

use crate::error::{Error, Result};

/// What kind of physical quantity a value is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Dim {
    /// Absolute pressure (internal MPa).
    Pressure,
    /// A pressure difference such as a pressure drop (internal MPa; no gauge units).
    PressureDifference,
    /// Thermodynamic temperature (internal K).
    Temperature,
    /// A temperature difference such as superheat or approach (internal K).
    TemperatureDifference,
    /// Specific energy: enthalpy, internal energy, specific work (internal kJ/kg).
    SpecificEnergy,
    /// Specific entropy or heat capacity (internal kJ/(kg K)).
    SpecificEntropy,
    /// Specific volume (internal m3/kg).
    SpecificVolume,
    /// Density (internal kg/m3).
    Density,
    /// Speed (internal m/s).
    Speed,
    /// A pure number (quality, efficiency, fractions; internal 1).
    Dimensionless,
    /// Mass flow (internal kg/s).
    MassFlow,
    /// Shaft or electric power (internal kW).
    Power,
    /// Heat flow or duty (internal kW).
    HeatFlow,
    /// Dynamic viscosity (internal Pa s).
    Viscosity,
    /// Thermal conductivity (internal W/(m K)).
    Conductivity,
    /// Surface tension (internal N/m).
    SurfaceTension,
    /// Kinematic viscosity or thermal diffusivity (internal m2/s).
    Diffusivity,
    /// Per kelvin, e.g. the isobaric expansion coefficient (internal 1/K).
    InverseTemperature,
    /// Per pressure, e.g. the isothermal compressibility (internal 1/MPa).
    InversePressure,
    /// Temperature per pressure, e.g. the Joule-Thomson coefficient (internal K/MPa).
    TemperaturePerPressure,
    /// Heat rate (internal kJ/kWh).
    HeatRate,
    /// Steam rate (internal kg/kWh).
    SteamRate,
    /// Length or head (internal m).
    Length,
    /// Energy, e.g. a yearly loss (internal kJ).
    Energy,
    /// Mass, e.g. the steam lost in a year (internal kg).
    Mass,
    /// A price per unit of (fuel) energy, currency-neutral (internal per kJ).
    PricePerEnergy,
    /// A price per unit of mass (of steam), currency-neutral (internal per kg).
    PricePerMass,
    /// Heat flow per unit length of pipe (internal kW/m).
    HeatFlowPerLength,
    /// Heat-transfer coefficient (internal W/(m2 K)).
    HeatTransferCoefficient,
    /// Area, e.g. a turbine's exhaust annulus (internal m2).
    Area,
    /// Volume flow, e.g. a turbine's exhaust volume flow (internal m3/s).
    VolumeFlow,
}

impl Dim {
    /// A short name for messages.
    pub fn name(self) -> &'static str {
        match self {
            Dim::Pressure => "pressure",
            Dim::PressureDifference => "pressure difference",
            Dim::Temperature => "temperature",
            Dim::TemperatureDifference => "temperature difference",
            Dim::SpecificEnergy => "specific energy",
            Dim::SpecificEntropy => "specific entropy",
            Dim::SpecificVolume => "specific volume",
            Dim::Density => "density",
            Dim::Speed => "speed",
            Dim::Dimensionless => "dimensionless number",
            Dim::MassFlow => "mass flow",
            Dim::Power => "power",
            Dim::HeatFlow => "heat flow",
            Dim::Viscosity => "dynamic viscosity",
            Dim::Conductivity => "thermal conductivity",
            Dim::SurfaceTension => "surface tension",
            Dim::Diffusivity => "diffusivity",
            Dim::InverseTemperature => "inverse temperature",
            Dim::InversePressure => "inverse pressure",
            Dim::TemperaturePerPressure => "temperature per pressure",
            Dim::HeatRate => "heat rate",
            Dim::SteamRate => "steam rate",
            Dim::Length => "length",
            Dim::Energy => "energy",
            Dim::Mass => "mass",
            Dim::PricePerEnergy => "price per energy",
            Dim::PricePerMass => "price per mass",
            Dim::HeatFlowPerLength => "heat flow per length",
            Dim::HeatTransferCoefficient => "heat-transfer coefficient",
            Dim::Area => "area",
            Dim::VolumeFlow => "volume flow",
        }
    }

    /// The key that chooses a unit for every quantity of this dimension in a `units` object
    /// (`{"pressure": "barg", "mass_flow": "t/h"}`); `flow` is also read as `mass_flow`.
    pub fn key(self) -> &'static str {
        match self {
            Dim::Pressure => "pressure",
            Dim::PressureDifference => "pressure_difference",
            Dim::Temperature => "temperature",
            Dim::TemperatureDifference => "temperature_difference",
            Dim::SpecificEnergy => "specific_energy",
            Dim::SpecificEntropy => "specific_entropy",
            Dim::SpecificVolume => "specific_volume",
            Dim::Density => "density",
            Dim::Speed => "speed",
            Dim::Dimensionless => "dimensionless",
            Dim::MassFlow => "mass_flow",
            Dim::Power => "power",
            Dim::HeatFlow => "heat_flow",
            Dim::Viscosity => "viscosity",
            Dim::Conductivity => "thermal_conductivity",
            Dim::SurfaceTension => "surface_tension",
            Dim::Diffusivity => "diffusivity",
            Dim::InverseTemperature => "inverse_temperature",
            Dim::InversePressure => "inverse_pressure",
            Dim::TemperaturePerPressure => "temperature_per_pressure",
            Dim::HeatRate => "heat_rate",
            Dim::SteamRate => "steam_rate",
            Dim::Length => "length",
            Dim::Energy => "energy",
            Dim::Mass => "mass",
            Dim::PricePerEnergy => "price_per_energy",
            Dim::PricePerMass => "price_per_mass",
            Dim::HeatFlowPerLength => "heat_flow_per_length",
            Dim::HeatTransferCoefficient => "heat_transfer_coefficient",
            Dim::Area => "area",
            Dim::VolumeFlow => "volume_flow",
        }
    }

    /// The dimension chosen by a `units` object key ([`Dim::key`], or `flow` for mass flow).
    pub fn from_key(key: &str) -> Option<Dim> {
        if key == "flow" {
            return Some(Dim::MassFlow);
        }
        Dim::ALL.into_iter().find(|d| d.key() == key)
    }

    /// Every dimension, for listing and tests.
    pub const ALL: [Dim; 31] = [
        Dim::Pressure,
        Dim::PressureDifference,
        Dim::Temperature,
        Dim::TemperatureDifference,
        Dim::SpecificEnergy,
        Dim::SpecificEntropy,
        Dim::SpecificVolume,
        Dim::Density,
        Dim::Speed,
        Dim::Dimensionless,
        Dim::MassFlow,
        Dim::Power,
        Dim::HeatFlow,
        Dim::Viscosity,
        Dim::Conductivity,
        Dim::SurfaceTension,
        Dim::Diffusivity,
        Dim::InverseTemperature,
        Dim::InversePressure,
        Dim::TemperaturePerPressure,
        Dim::HeatRate,
        Dim::SteamRate,
        Dim::Length,
        Dim::Energy,
        Dim::Mass,
        Dim::PricePerEnergy,
        Dim::PricePerMass,
        Dim::HeatFlowPerLength,
        Dim::HeatTransferCoefficient,
        Dim::Area,
        Dim::VolumeFlow,
    ];

    /// The internal unit's symbol, as errors of the physics layer name it.
    pub fn internal_symbol(self) -> &'static str {
        match self {
            Dim::Pressure | Dim::PressureDifference => "MPa",
            Dim::Temperature | Dim::TemperatureDifference => "K",
            Dim::SpecificEnergy => "kJ/kg",
            Dim::SpecificEntropy => "kJ/(kg K)",
            Dim::SpecificVolume => "m3/kg",
            Dim::Density => "kg/m3",
            Dim::Speed => "m/s",
            Dim::Dimensionless => "1",
            Dim::MassFlow => "kg/s",
            Dim::Power | Dim::HeatFlow => "kW",
            Dim::Viscosity => "Pa s",
            Dim::Conductivity => "W/(m K)",
            Dim::SurfaceTension => "N/m",
            Dim::Diffusivity => "m2/s",
            Dim::InverseTemperature => "1/K",
            Dim::InversePressure => "1/MPa",
            Dim::TemperaturePerPressure => "K/MPa",
            Dim::HeatRate => "kJ/kWh",
            Dim::SteamRate => "kg/kWh",
            Dim::Length => "m",
            Dim::Energy => "kJ",
            Dim::Mass => "kg",
            Dim::PricePerEnergy => "/kJ",
            Dim::PricePerMass => "/kg",
            Dim::HeatFlowPerLength => "kW/m",
            Dim::HeatTransferCoefficient => "W/(m2 K)",
            Dim::Area => "m2",
            Dim::VolumeFlow => "m3/s",
        }
    }
}

/// One unit: internal = (value + offset) * factor, or (value + offset) / factor when `divide`
/// (plus the ambient pressure when `gauge`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Unit {
    /// Canonical spelling used in answers.
    pub symbol: &'static str,
    /// Dimension.
    pub dim: Dim,
    /// The exact factor between this unit and the internal one (see `divide`).
    pub factor: f64,
    /// Whether the internal value is the value divided by `factor` (decimal fractions such as
    /// bar = MPa / 10, so that no inexact binary fraction enters the conversion).
    pub divide: bool,
    /// Offset added before scaling (temperatures: 273.15 for degC, 459.67 for degF).
    pub offset: f64,
    /// Gauge pressure: the ambient pressure is added.
    pub gauge: bool,
}

// Exact definitions (common practice, no source needed beyond the SI brochure and the 1959
// international yard and pound agreement): 1 lb = 0.45359237 kg, 1 ft = 0.3048 m, 1 in =
// 0.0254 m, 1 lbf = 4.4482216152605 N, 1 psi = 6894.757293168361 Pa, IT Btu = 1055.05585262 J,
// Btu/lb = 2.326 kJ/kg exactly, Btu/(lb F) = 4.1868 kJ/(kg K) exactly, 1 degF = 1/1.8 K.
const LB: f64 = 0.453_592_37;
const FT: f64 = 0.3048;
const INCH: f64 = 0.0254;
const PSI_MPA: f64 = 6.894_757_293_168_361e-3;
const BTU_KJ: f64 = 1.055_055_852_62;
const F_K: f64 = 5.0 / 9.0;

const fn u(symbol: &'static str, dim: Dim, factor: f64) -> Unit {
    Unit {
        symbol,
        dim,
        factor,
        divide: false,
        offset: 0.0,
        gauge: false,
    }
}

const fn d(symbol: &'static str, dim: Dim, divisor: f64) -> Unit {
    Unit {
        symbol,
        dim,
        factor: divisor,
        divide: true,
        offset: 0.0,
        gauge: false,
    }
}

const fn off(symbol: &'static str, dim: Dim, offset: f64) -> Unit {
    Unit {
        symbol,
        dim,
        factor: 1.0,
        divide: false,
        offset,
        gauge: false,
    }
}

const fn offd(symbol: &'static str, dim: Dim, divisor: f64, offset: f64) -> Unit {
    Unit {
        symbol,
        dim,
        factor: divisor,
        divide: true,
        offset,
        gauge: false,
    }
}

const fn g(symbol: &'static str, factor: f64) -> Unit {
    Unit {
        symbol,
        dim: Dim::Pressure,
        factor,
        divide: false,
        offset: 0.0,
        gauge: true,
    }
}

const fn gd(symbol: &'static str, divisor: f64) -> Unit {
    Unit {
        symbol,
        dim: Dim::Pressure,
        factor: divisor,
        divide: true,
        offset: 0.0,
        gauge: true,
    }
}

/// Accepted spellings: (alias, unit). Aliases are matched after removing spaces, '·', '*' and
/// '.' between symbols, and case-insensitively. "psi" alone is not a pressure (absolute or
/// gauge?) but is a pressure difference.
const UNITS: &[(&str, Unit)] = &[
    // pressure, absolute
    ("Pa", d("Pa", Dim::Pressure, 1e6)),
    ("kPa", d("kPa", Dim::Pressure, 1e3)),
    ("kPaa", d("kPa", Dim::Pressure, 1e3)),
    ("MPa", u("MPa", Dim::Pressure, 1.0)),
    ("MPaa", u("MPa", Dim::Pressure, 1.0)),
    ("bar", d("bar", Dim::Pressure, 10.0)),
    ("bara", d("bar", Dim::Pressure, 10.0)),
    ("bar(a)", d("bar", Dim::Pressure, 10.0)),
    ("mbar", d("mbar", Dim::Pressure, 1e4)),
    ("psia", u("psia", Dim::Pressure, PSI_MPA)),
    ("atm", u("atm", Dim::Pressure, 0.101_325)),
    ("kgf/cm2", u("kgf/cm2", Dim::Pressure, 0.098_066_5)),
    ("mmHg", u("mmHg", Dim::Pressure, 1.333_223_874_15e-4)),
    ("inHg", u("inHg", Dim::Pressure, 3.386_388_64e-3)),
    // pressure, gauge
    ("barg", gd("barg", 10.0)),
    ("bar(g)", gd("barg", 10.0)),
    ("psig", g("psig", PSI_MPA)),
    ("kPag", gd("kPag", 1e3)),
    ("MPag", g("MPag", 1.0)),
    ("kgf/cm2g", g("kgf/cm2g", 0.098_066_5)),
    // pressure difference (a drop or a rise: no absolute or gauge qualifier)
    ("Pa", d("Pa", Dim::PressureDifference, 1e6)),
    ("kPa", d("kPa", Dim::PressureDifference, 1e3)),
    ("MPa", u("MPa", Dim::PressureDifference, 1.0)),
    ("bar", d("bar", Dim::PressureDifference, 10.0)),
    ("mbar", d("mbar", Dim::PressureDifference, 1e4)),
    ("psi", u("psi", Dim::PressureDifference, PSI_MPA)),
    ("psid", u("psi", Dim::PressureDifference, PSI_MPA)),
    ("atm", u("atm", Dim::PressureDifference, 0.101_325)),
    (
        "kgf/cm2",
        u("kgf/cm2", Dim::PressureDifference, 0.098_066_5),
    ),
    (
        "mmHg",
        u("mmHg", Dim::PressureDifference, 1.333_223_874_15e-4),
    ),
    ("inHg", u("inHg", Dim::PressureDifference, 3.386_388_64e-3)),
    // temperature
    ("K", u("K", Dim::Temperature, 1.0)),
    ("degC", off("degC", Dim::Temperature, 273.15)),
    ("°C", off("degC", Dim::Temperature, 273.15)),
    ("C", off("degC", Dim::Temperature, 273.15)),
    ("celsius", off("degC", Dim::Temperature, 273.15)),
    ("degF", offd("degF", Dim::Temperature, 1.8, 459.67)),
    ("°F", offd("degF", Dim::Temperature, 1.8, 459.67)),
    ("F", offd("degF", Dim::Temperature, 1.8, 459.67)),
    ("fahrenheit", offd("degF", Dim::Temperature, 1.8, 459.67)),
    ("degR", d("degR", Dim::Temperature, 1.8)),
    ("R", d("degR", Dim::Temperature, 1.8)),
    // temperature difference
    ("K", u("K", Dim::TemperatureDifference, 1.0)),
    ("degC", u("degC", Dim::TemperatureDifference, 1.0)),
    ("°C", u("degC", Dim::TemperatureDifference, 1.0)),
    ("C", u("degC", Dim::TemperatureDifference, 1.0)),
    ("degF", d("degF", Dim::TemperatureDifference, 1.8)),
    ("°F", d("degF", Dim::TemperatureDifference, 1.8)),
    ("F", d("degF", Dim::TemperatureDifference, 1.8)),
    ("degR", d("degR", Dim::TemperatureDifference, 1.8)),
    ("R", d("degR", Dim::TemperatureDifference, 1.8)),
    // specific energy
    ("J/kg", d("J/kg", Dim::SpecificEnergy, 1e3)),
    ("kJ/kg", u("kJ/kg", Dim::SpecificEnergy, 1.0)),
    ("MJ/kg", u("MJ/kg", Dim::SpecificEnergy, 1e3)),
    ("Btu/lb", u("Btu/lb", Dim::SpecificEnergy, 2.326)),
    ("Btu/lbm", u("Btu/lb", Dim::SpecificEnergy, 2.326)),
    ("kcal/kg", u("kcal/kg", Dim::SpecificEnergy, 4.1868)),
    ("kWh/kg", u("kWh/kg", Dim::SpecificEnergy, 3600.0)),
    // specific entropy
    ("J/(kgK)", d("J/(kg K)", Dim::SpecificEntropy, 1e3)),
    ("J/kgK", d("J/(kg K)", Dim::SpecificEntropy, 1e3)),
    ("J/kg/K", d("J/(kg K)", Dim::SpecificEntropy, 1e3)),
    ("kJ/(kgK)", u("kJ/(kg K)", Dim::SpecificEntropy, 1.0)),
    ("kJ/kgK", u("kJ/(kg K)", Dim::SpecificEntropy, 1.0)),
    ("kJ/kg/K", u("kJ/(kg K)", Dim::SpecificEntropy, 1.0)),
    ("kJ/(kgdegC)", u("kJ/(kg K)", Dim::SpecificEntropy, 1.0)),
    ("Btu/(lbF)", u("Btu/(lb F)", Dim::SpecificEntropy, 4.1868)),
    ("Btu/lbF", u("Btu/(lb F)", Dim::SpecificEntropy, 4.1868)),
    ("Btu/lb/F", u("Btu/(lb F)", Dim::SpecificEntropy, 4.1868)),
    (
        "Btu/(lbdegF)",
        u("Btu/(lb F)", Dim::SpecificEntropy, 4.1868),
    ),
    ("Btu/(lbR)", u("Btu/(lb F)", Dim::SpecificEntropy, 4.1868)),
    ("Btu/lbR", u("Btu/(lb F)", Dim::SpecificEntropy, 4.1868)),
    ("kcal/(kgK)", u("kcal/(kg K)", Dim::SpecificEntropy, 4.1868)),
    // specific volume
    ("m3/kg", u("m3/kg", Dim::SpecificVolume, 1.0)),
    ("m^3/kg", u("m3/kg", Dim::SpecificVolume, 1.0)),
    ("m³/kg", u("m3/kg", Dim::SpecificVolume, 1.0)),
    ("L/kg", d("L/kg", Dim::SpecificVolume, 1e3)),
    ("dm3/kg", d("L/kg", Dim::SpecificVolume, 1e3)),
    ("cm3/g", d("L/kg", Dim::SpecificVolume, 1e3)),
    (
        "ft3/lb",
        u("ft3/lb", Dim::SpecificVolume, FT * FT * FT / LB),
    ),
    (
        "ft^3/lb",
        u("ft3/lb", Dim::SpecificVolume, FT * FT * FT / LB),
    ),
    (
        "ft³/lb",
        u("ft3/lb", Dim::SpecificVolume, FT * FT * FT / LB),
    ),
    // density
    ("kg/m3", u("kg/m3", Dim::Density, 1.0)),
    ("kg/m^3", u("kg/m3", Dim::Density, 1.0)),
    ("kg/m³", u("kg/m3", Dim::Density, 1.0)),
    ("g/cm3", u("g/cm3", Dim::Density, 1e3)),
    ("kg/L", u("kg/L", Dim::Density, 1e3)),
    ("lb/ft3", u("lb/ft3", Dim::Density, LB / (FT * FT * FT))),
    ("lb/ft^3", u("lb/ft3", Dim::Density, LB / (FT * FT * FT))),
    ("lb/ft³", u("lb/ft3", Dim::Density, LB / (FT * FT * FT))),
    // speed
    ("m/s", u("m/s", Dim::Speed, 1.0)),
    ("ft/s", u("ft/s", Dim::Speed, FT)),
    ("km/h", d("km/h", Dim::Speed, 3.6)),
    // dimensionless
    ("1", u("1", Dim::Dimensionless, 1.0)),
    ("-", u("1", Dim::Dimensionless, 1.0)),
    ("%", d("%", Dim::Dimensionless, 100.0)),
    // mass flow
    ("kg/s", u("kg/s", Dim::MassFlow, 1.0)),
    ("kg/h", d("kg/h", Dim::MassFlow, 3600.0)),
    ("t/h", d("t/h", Dim::MassFlow, 3.6)),
    ("tph", d("t/h", Dim::MassFlow, 3.6)),
    ("lb/h", u("lb/h", Dim::MassFlow, LB / 3600.0)),
    ("lb/hr", u("lb/h", Dim::MassFlow, LB / 3600.0)),
    ("klb/h", u("klb/h", Dim::MassFlow, 1000.0 * LB / 3600.0)),
    ("klb/hr", u("klb/h", Dim::MassFlow, 1000.0 * LB / 3600.0)),
    ("lb/s", u("lb/s", Dim::MassFlow, LB)),
    // power
    ("W", d("W", Dim::Power, 1e3)),
    ("kW", u("kW", Dim::Power, 1.0)),
    ("MW", u("MW", Dim::Power, 1e3)),
    ("hp", u("hp", Dim::Power, 0.745_699_871_582_270_2)),
    ("Btu/h", u("Btu/h", Dim::Power, BTU_KJ / 3600.0)),
    // heat flow
    ("W", d("W", Dim::HeatFlow, 1e3)),
    ("kW", u("kW", Dim::HeatFlow, 1.0)),
    ("MW", u("MW", Dim::HeatFlow, 1e3)),
    ("Btu/h", u("Btu/h", Dim::HeatFlow, BTU_KJ / 3600.0)),
    ("Btu/hr", u("Btu/h", Dim::HeatFlow, BTU_KJ / 3600.0)),
    (
        "MMBtu/h",
        u("MMBtu/h", Dim::HeatFlow, 1e6 * BTU_KJ / 3600.0),
    ),
    (
        "MMBtu/hr",
        u("MMBtu/h", Dim::HeatFlow, 1e6 * BTU_KJ / 3600.0),
    ),
    // viscosity
    ("Pas", u("Pa s", Dim::Viscosity, 1.0)),
    ("mPas", d("mPa s", Dim::Viscosity, 1e3)),
    ("cP", d("mPa s", Dim::Viscosity, 1e3)),
    ("uPas", d("uPa s", Dim::Viscosity, 1e6)),
    ("µPas", d("uPa s", Dim::Viscosity, 1e6)),
    ("lb/(fth)", u("lb/(ft h)", Dim::Viscosity, LB / FT / 3600.0)),
    ("lb/(fts)", u("lb/(ft s)", Dim::Viscosity, LB / FT)),
    // conductivity
    ("W/(mK)", u("W/(m K)", Dim::Conductivity, 1.0)),
    ("W/mK", u("W/(m K)", Dim::Conductivity, 1.0)),
    ("mW/(mK)", d("mW/(m K)", Dim::Conductivity, 1e3)),
    ("mW/mK", d("mW/(m K)", Dim::Conductivity, 1e3)),
    (
        "Btu/(hftF)",
        u(
            "Btu/(h ft F)",
            Dim::Conductivity,
            BTU_KJ * 1e3 / 3600.0 / FT / F_K,
        ),
    ),
    // surface tension
    ("N/m", u("N/m", Dim::SurfaceTension, 1.0)),
    ("mN/m", d("mN/m", Dim::SurfaceTension, 1e3)),
    ("dyn/cm", d("mN/m", Dim::SurfaceTension, 1e3)),
    (
        "lbf/ft",
        u("lbf/ft", Dim::SurfaceTension, 4.448_221_615_260_5 / FT),
    ),
    // diffusivity
    ("m2/s", u("m2/s", Dim::Diffusivity, 1.0)),
    ("mm2/s", d("mm2/s", Dim::Diffusivity, 1e6)),
    ("cSt", d("mm2/s", Dim::Diffusivity, 1e6)),
    ("ft2/s", u("ft2/s", Dim::Diffusivity, FT * FT)),
    ("ft2/h", u("ft2/h", Dim::Diffusivity, FT * FT / 3600.0)),
    // inverse temperature
    ("1/K", u("1/K", Dim::InverseTemperature, 1.0)),
    ("1/degF", u("1/degF", Dim::InverseTemperature, 1.8)),
    ("1/F", u("1/degF", Dim::InverseTemperature, 1.8)),
    // inverse pressure
    ("1/MPa", u("1/MPa", Dim::InversePressure, 1.0)),
    ("1/Pa", u("1/Pa", Dim::InversePressure, 1e6)),
    ("1/kPa", u("1/kPa", Dim::InversePressure, 1e3)),
    ("1/bar", u("1/bar", Dim::InversePressure, 10.0)),
    ("1/psi", d("1/psi", Dim::InversePressure, PSI_MPA)),
    // temperature per pressure
    ("K/MPa", u("K/MPa", Dim::TemperaturePerPressure, 1.0)),
    ("K/Pa", u("K/Pa", Dim::TemperaturePerPressure, 1e6)),
    ("K/bar", u("K/bar", Dim::TemperaturePerPressure, 10.0)),
    (
        "degF/psi",
        u("degF/psi", Dim::TemperaturePerPressure, F_K / PSI_MPA),
    ),
    (
        "F/psi",
        u("degF/psi", Dim::TemperaturePerPressure, F_K / PSI_MPA),
    ),
    // heat rate
    ("kJ/kWh", u("kJ/kWh", Dim::HeatRate, 1.0)),
    ("Btu/kWh", u("Btu/kWh", Dim::HeatRate, BTU_KJ)),
    // steam rate
    ("kg/kWh", u("kg/kWh", Dim::SteamRate, 1.0)),
    ("lb/kWh", u("lb/kWh", Dim::SteamRate, LB)),
    // length
    ("m", u("m", Dim::Length, 1.0)),
    ("mm", d("mm", Dim::Length, 1e3)),
    ("ft", u("ft", Dim::Length, FT)),
    ("cm", d("cm", Dim::Length, 100.0)),
    ("km", u("km", Dim::Length, 1e3)),
    ("in", u("in", Dim::Length, INCH)),
    ("inch", u("in", Dim::Length, INCH)),
    ("\"", u("in", Dim::Length, INCH)),
    // energy (1 kWh = 3600 kJ; 1 therm = 100 000 IT Btu)
    ("J", d("J", Dim::Energy, 1e3)),
    ("kJ", u("kJ", Dim::Energy, 1.0)),
    ("MJ", u("MJ", Dim::Energy, 1e3)),
    ("GJ", u("GJ", Dim::Energy, 1e6)),
    ("kWh", u("kWh", Dim::Energy, 3600.0)),
    ("MWh", u("MWh", Dim::Energy, 3.6e6)),
    ("GWh", u("GWh", Dim::Energy, 3.6e9)),
    ("Btu", u("Btu", Dim::Energy, BTU_KJ)),
    ("MMBtu", u("MMBtu", Dim::Energy, 1e6 * BTU_KJ)),
    ("therm", u("therm", Dim::Energy, 1e5 * BTU_KJ)),
    // mass
    ("kg", u("kg", Dim::Mass, 1.0)),
    ("t", u("t", Dim::Mass, 1e3)),
    ("tonne", u("t", Dim::Mass, 1e3)),
    ("lb", u("lb", Dim::Mass, LB)),
    ("klb", u("klb", Dim::Mass, 1e3 * LB)),
    // price per energy (currency-neutral: "30 /MWh", "30 per MWh", "8 /MMBtu")
    ("/kJ", u("/kJ", Dim::PricePerEnergy, 1.0)),
    ("/MJ", d("/MJ", Dim::PricePerEnergy, 1e3)),
    ("/GJ", d("/GJ", Dim::PricePerEnergy, 1e6)),
    ("/kWh", d("/kWh", Dim::PricePerEnergy, 3600.0)),
    ("/MWh", d("/MWh", Dim::PricePerEnergy, 3.6e6)),
    ("/MMBtu", d("/MMBtu", Dim::PricePerEnergy, 1e6 * BTU_KJ)),
    ("/therm", d("/therm", Dim::PricePerEnergy, 1e5 * BTU_KJ)),
    ("perkJ", u("/kJ", Dim::PricePerEnergy, 1.0)),
    ("perMJ", d("/MJ", Dim::PricePerEnergy, 1e3)),
    ("perGJ", d("/GJ", Dim::PricePerEnergy, 1e6)),
    ("perkWh", d("/kWh", Dim::PricePerEnergy, 3600.0)),
    ("perMWh", d("/MWh", Dim::PricePerEnergy, 3.6e6)),
    ("perMMBtu", d("/MMBtu", Dim::PricePerEnergy, 1e6 * BTU_KJ)),
    ("pertherm", d("/therm", Dim::PricePerEnergy, 1e5 * BTU_KJ)),
    // price per mass (currency-neutral: "25 /t", "12 per klb")
    ("/kg", u("/kg", Dim::PricePerMass, 1.0)),
    ("/t", d("/t", Dim::PricePerMass, 1e3)),
    ("/tonne", d("/t", Dim::PricePerMass, 1e3)),
    ("/lb", d("/lb", Dim::PricePerMass, LB)),
    ("/klb", d("/klb", Dim::PricePerMass, 1e3 * LB)),
    ("perkg", u("/kg", Dim::PricePerMass, 1.0)),
    ("pert", d("/t", Dim::PricePerMass, 1e3)),
    ("pertonne", d("/t", Dim::PricePerMass, 1e3)),
    ("perlb", d("/lb", Dim::PricePerMass, LB)),
    ("perklb", d("/klb", Dim::PricePerMass, 1e3 * LB)),
    // heat flow per length
    ("W/m", d("W/m", Dim::HeatFlowPerLength, 1e3)),
    ("kW/m", u("kW/m", Dim::HeatFlowPerLength, 1.0)),
    (
        "Btu/(hft)",
        u("Btu/(h ft)", Dim::HeatFlowPerLength, BTU_KJ / 3600.0 / FT),
    ),
    (
        "Btu/hft",
        u("Btu/(h ft)", Dim::HeatFlowPerLength, BTU_KJ / 3600.0 / FT),
    ),
    // heat-transfer coefficient
    ("W/(m2K)", u("W/(m2 K)", Dim::HeatTransferCoefficient, 1.0)),
    ("W/m2K", u("W/(m2 K)", Dim::HeatTransferCoefficient, 1.0)),
    ("W/(m^2K)", u("W/(m2 K)", Dim::HeatTransferCoefficient, 1.0)),
    (
        "Btu/(hft2F)",
        u(
            "Btu/(h ft2 F)",
            Dim::HeatTransferCoefficient,
            BTU_KJ * 1e3 / 3600.0 / (FT * FT) / F_K,
        ),
    ),
    // area
    ("m2", u("m2", Dim::Area, 1.0)),
    ("m^2", u("m2", Dim::Area, 1.0)),
    ("m²", u("m2", Dim::Area, 1.0)),
    ("cm2", d("cm2", Dim::Area, 1e4)),
    ("mm2", d("mm2", Dim::Area, 1e6)),
    ("ft2", u("ft2", Dim::Area, FT * FT)),
    ("ft^2", u("ft2", Dim::Area, FT * FT)),
    ("ft²", u("ft2", Dim::Area, FT * FT)),
    ("sqft", u("ft2", Dim::Area, FT * FT)),
    ("in2", u("in2", Dim::Area, FT * FT / 144.0)),
    // volume flow
    ("m3/s", u("m3/s", Dim::VolumeFlow, 1.0)),
    ("m^3/s", u("m3/s", Dim::VolumeFlow, 1.0)),
    ("m³/s", u("m3/s", Dim::VolumeFlow, 1.0)),
    ("m3/h", d("m3/h", Dim::VolumeFlow, 3600.0)),
    ("L/s", d("L/s", Dim::VolumeFlow, 1e3)),
    ("ft3/s", u("ft3/s", Dim::VolumeFlow, FT * FT * FT)),
    ("cfs", u("ft3/s", Dim::VolumeFlow, FT * FT * FT)),
    (
        "ft3/min",
        u("ft3/min", Dim::VolumeFlow, FT * FT * FT / 60.0),
    ),
    ("cfm", u("ft3/min", Dim::VolumeFlow, FT * FT * FT / 60.0)),
];

/// A named set of output units.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Preset {
    /// Coherent SI: Pa, K, J/kg, J/(kg K), m3/kg, kg/m3, m/s, Pa s, W/(m K), N/m, kg/s, W.
    Si,
    /// The default: MPa, degC, kJ/kg, kJ/(kg K), m3/kg, kg/m3, m/s, uPa s, mW/(m K), mN/m, kg/s, kW.
    Engineering,
    /// US customary: psia, degF, Btu/lb, Btu/(lb F), ft3/lb, lb/ft3, ft/s, lb/(ft h), lb/h, kW.
    Us,
    /// `engineering` with pressures in bar (absolute; pressure differences in bar).
    Bar,
    /// `bar` with mass flows in t/h.
    BarTh,
}

impl Preset {
    /// Parses a preset name.
    pub fn parse(name: &str) -> Result<Preset> {
        match name.trim().to_ascii_lowercase().as_str() {
            "si" => Ok(Preset::Si),
            "engineering" | "eng" => Ok(Preset::Engineering),
            "us" => Ok(Preset::Us),
            "bar" => Ok(Preset::Bar),
            "bar_th" => Ok(Preset::BarTh),
            _ => Err(Error::invalid(format!(
                "unknown unit preset '{name}'; accepted: {}",
                Preset::ALL.map(Preset::name).join(", ")
            ))),
        }
    }

    /// The preset's name.
    pub fn name(self) -> &'static str {
        match self {
            Preset::Si => "si",
            Preset::Engineering => "engineering",
            Preset::Us => "us",
            Preset::Bar => "bar",
            Preset::BarTh => "bar_th",
        }
    }

    /// What the preset selects, for `server.info`.
    pub fn description(self) -> &'static str {
        match self {
            Preset::Si => "Coherent SI: Pa, K, J/kg, J/(kg K), m3/kg, kg/m3, m/s, Pa s, W/(m K), N/m, kg/s, W",
            Preset::Engineering => "The default: MPa, degC, kJ/kg, kJ/(kg K), m3/kg, kg/m3, m/s, uPa s, mW/(m K), mN/m, kg/s, kW",
            Preset::Us => "US customary: psia, degF, Btu/lb, Btu/(lb F), ft3/lb, lb/ft3, ft/s, lb/(ft h), lb/h, kW (power), MMBtu/h (heat)",
            Preset::Bar => "engineering with pressures in bar (absolute; pressure differences in bar): bar, degC, kJ/kg, kJ/(kg K), kg/s, kW",
            Preset::BarTh => "bar with mass flows in t/h: bar, degC, kJ/kg, kJ/(kg K), t/h, kW",
        }
    }

    /// All presets.
    pub const ALL: [Preset; 5] = [
        Preset::Si,
        Preset::Engineering,
        Preset::Us,
        Preset::Bar,
        Preset::BarTh,
    ];

    /// The preset's unit for a dimension (looked up once per process, then from a table).
    pub fn unit(self, dim: Dim) -> Unit {
        static TABLE: std::sync::OnceLock<Vec<Unit>> = std::sync::OnceLock::new();
        let table = TABLE.get_or_init(|| {
            Preset::ALL
                .iter()
                .flat_map(|p| Dim::ALL.iter().map(move |d| p.unit_uncached(*d)))
                .collect()
        });
        table[self as usize * Dim::ALL.len() + dim as usize]
    }

    fn unit_uncached(self, dim: Dim) -> Unit {
        let base = match self {
            Preset::Bar | Preset::BarTh => Preset::Engineering,
            other => other,
        };
        let symbol = match (self, dim) {
            (Preset::Bar | Preset::BarTh, Dim::Pressure | Dim::PressureDifference) => "bar",
            (Preset::BarTh, Dim::MassFlow) => "t/h",
            _ => base.own_symbol(dim),
        };
        lookup(dim, symbol).expect("every preset unit is in the table")
    }

    fn own_symbol(self, dim: Dim) -> &'static str {
        match (self, dim) {
            (Preset::Si, Dim::Pressure | Dim::PressureDifference) => "Pa",
            (_, Dim::Pressure | Dim::PressureDifference) if self != Preset::Us => "MPa",
            (_, Dim::Pressure) => "psia",
            (_, Dim::PressureDifference) => "psi",
            (Preset::Si, Dim::Temperature) => "K",
            (Preset::Us, Dim::Temperature) => "degF",
            (_, Dim::Temperature) => "degC",
            (Preset::Us, Dim::TemperatureDifference) => "degF",
            (_, Dim::TemperatureDifference) => "K",
            (Preset::Si, Dim::SpecificEnergy) => "J/kg",
            (Preset::Us, Dim::SpecificEnergy) => "Btu/lb",
            (_, Dim::SpecificEnergy) => "kJ/kg",
            (Preset::Si, Dim::SpecificEntropy) => "J/(kgK)",
            (Preset::Us, Dim::SpecificEntropy) => "Btu/(lbF)",
            (_, Dim::SpecificEntropy) => "kJ/(kgK)",
            (Preset::Us, Dim::SpecificVolume) => "ft3/lb",
            (_, Dim::SpecificVolume) => "m3/kg",
            (Preset::Us, Dim::Density) => "lb/ft3",
            (_, Dim::Density) => "kg/m3",
            (Preset::Us, Dim::Speed) => "ft/s",
            (_, Dim::Speed) => "m/s",
            (_, Dim::Dimensionless) => "1",
            (Preset::Us, Dim::MassFlow) => "lb/h",
            (_, Dim::MassFlow) => "kg/s",
            (Preset::Si, Dim::Power) => "W",
            (_, Dim::Power) => "kW",
            (Preset::Si, Dim::HeatFlow) => "W",
            (Preset::Us, Dim::HeatFlow) => "MMBtu/h",
            (_, Dim::HeatFlow) => "kW",
            (Preset::Si, Dim::Viscosity) => "Pas",
            (Preset::Us, Dim::Viscosity) => "lb/(fth)",
            (_, Dim::Viscosity) => "uPas",
            (Preset::Si, Dim::Conductivity) => "W/(mK)",
            (Preset::Us, Dim::Conductivity) => "Btu/(hftF)",
            (_, Dim::Conductivity) => "mW/(mK)",
            (Preset::Si, Dim::SurfaceTension) => "N/m",
            (Preset::Us, Dim::SurfaceTension) => "lbf/ft",
            (_, Dim::SurfaceTension) => "mN/m",
            (Preset::Si, Dim::Diffusivity) => "m2/s",
            (Preset::Us, Dim::Diffusivity) => "ft2/h",
            (_, Dim::Diffusivity) => "mm2/s",
            (Preset::Us, Dim::InverseTemperature) => "1/degF",
            (_, Dim::InverseTemperature) => "1/K",
            (Preset::Si, Dim::InversePressure) => "1/Pa",
            (Preset::Us, Dim::InversePressure) => "1/psi",
            (_, Dim::InversePressure) => "1/MPa",
            (Preset::Si, Dim::TemperaturePerPressure) => "K/Pa",
            (Preset::Us, Dim::TemperaturePerPressure) => "degF/psi",
            (_, Dim::TemperaturePerPressure) => "K/MPa",
            (Preset::Us, Dim::HeatRate) => "Btu/kWh",
            (_, Dim::HeatRate) => "kJ/kWh",
            (Preset::Us, Dim::SteamRate) => "lb/kWh",
            (_, Dim::SteamRate) => "kg/kWh",
            (Preset::Us, Dim::Length) => "ft",
            (_, Dim::Length) => "m",
            (Preset::Si, Dim::Energy) => "GJ",
            (Preset::Us, Dim::Energy) => "MMBtu",
            (_, Dim::Energy) => "MWh",
            (Preset::Si, Dim::Mass) => "kg",
            (Preset::Us, Dim::Mass) => "klb",
            (_, Dim::Mass) => "t",
            (Preset::Si, Dim::PricePerEnergy) => "/GJ",
            (Preset::Us, Dim::PricePerEnergy) => "/MMBtu",
            (_, Dim::PricePerEnergy) => "/MWh",
            (Preset::Us, Dim::PricePerMass) => "/klb",
            (_, Dim::PricePerMass) => "/t",
            (Preset::Us, Dim::HeatFlowPerLength) => "Btu/(hft)",
            (_, Dim::HeatFlowPerLength) => "W/m",
            (Preset::Us, Dim::HeatTransferCoefficient) => "Btu/(hft2F)",
            (_, Dim::HeatTransferCoefficient) => "W/(m2K)",
            (Preset::Us, Dim::Area) => "ft2",
            (_, Dim::Area) => "m2",
            (Preset::Us, Dim::VolumeFlow) => "ft3/s",
            (_, Dim::VolumeFlow) => "m3/s",
        }
    }

    /// Converts an internal value to this preset's unit for `dim`.
    pub fn from_internal(self, dim: Dim, value: f64) -> f64 {
        self.unit(dim).from_internal(value, AMBIENT_DEFAULT_MPA)
    }

    /// Converts a value in this preset's unit for `dim` to internal units.
    pub fn to_internal(self, dim: Dim, value: f64) -> f64 {
        self.unit(dim).to_internal(value, AMBIENT_DEFAULT_MPA)
    }
}

/// The ambient pressure used for gauge units unless a request gives one: 101.325 kPa
/// (standard atmosphere; common practice, no source).
pub const AMBIENT_DEFAULT_MPA: f64 = 0.101_325;

impl Unit {
    /// Converts a value in this unit to internal units; `ambient` (MPa) is added for gauge units.
    #[inline]
    pub fn to_internal(&self, value: f64, ambient: f64) -> f64 {
        let v = value + self.offset;
        let x = if self.divide {
            v / self.factor
        } else {
            v * self.factor
        };
        if self.gauge {
            x + ambient
        } else {
            x
        }
    }

    /// Converts an internal value to this unit; `ambient` (MPa) is subtracted for gauge units.
    #[inline]
    pub fn from_internal(&self, value: f64, ambient: f64) -> f64 {
        let x = if self.gauge { value - ambient } else { value };
        let v = if self.divide {
            x * self.factor
        } else {
            x / self.factor
        };
        v - self.offset
    }

    /// The shortest decimal text of the internal value `internal` in this unit that reads back
    /// through this unit as exactly `internal` ("0.9" for 0.09 MPa in bar, where the plain
    /// conversion gives 0.8999999999999999): for echoes such as the ambient pressure.
    pub fn shortest(&self, internal: f64, ambient: f64) -> String {
        let v = self.from_internal(internal, ambient);
        if !v.is_finite() {
            return format!("{v}");
        }
        for digits in 1..=17 {
            let text = crate::error::fmt_sig(v, digits);
            if let Ok(back) = text.parse::<f64>() {
                if self.to_internal(back, ambient) == internal {
                    return text;
                }
            }
        }
        format!("{v}")
    }

    /// The multiplier from this unit to the internal one (ignoring offset and ambient).
    pub fn scale(&self) -> f64 {
        if self.divide {
            1.0 / self.factor
        } else {
            self.factor
        }
    }

    /// The absolute pressure unit of the same size as this gauge unit (barg -> bar, psig ->
    /// psia); every other unit is itself.
    pub fn absolute(self) -> Unit {
        if !self.gauge {
            return self;
        }
        self.same_size(Dim::Pressure).unwrap_or(self)
    }

    /// The difference unit of the same size as this pressure or temperature unit (barg and bar
    /// -> bar, psia and psig -> psi, degC -> K, degF -> degF), for pressure and temperature
    /// differences; None for other dimensions.
    pub fn as_difference(self) -> Option<Unit> {
        match self.dim {
            Dim::Pressure => self.same_size(Dim::PressureDifference),
            Dim::Temperature => self.same_size(Dim::TemperatureDifference),
            _ => None,
        }
    }

    fn same_size(self, dim: Dim) -> Option<Unit> {
        UNITS.iter().map(|(_, x)| *x).find(|x| {
            x.dim == dim
                && !x.gauge
                && x.factor.to_bits() == self.factor.to_bits()
                && x.divide == self.divide
        })
    }
}

fn normalise(text: &str) -> String {
    text.chars()
        .filter(|c| !matches!(c, ' ' | '\u{b7}' | '*' | '\u{22c5}' | '\t'))
        .collect::<String>()
}

fn lookup(dim: Dim, text: &str) -> Option<Unit> {
    let key = normalise(text);
    // Exact (case-sensitive) match first, then case-insensitive.
    UNITS
        .iter()
        .find(|(alias, unit)| unit.dim == dim && normalise(alias) == key)
        .or_else(|| {
            UNITS.iter().find(|(alias, unit)| {
                unit.dim == dim && normalise(alias).eq_ignore_ascii_case(&key)
            })
        })
        .map(|(_, unit)| *unit)
}

/// Accepted spellings for a dimension (canonical symbols first, then aliases), for messages.
pub fn accepted(dim: Dim) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    for (alias, unit) in UNITS.iter().filter(|(_, unit)| unit.dim == dim) {
        for s in [unit.symbol, *alias] {
            if !out.iter().any(|x| x == s) {
                out.push(s.to_string());
            }
        }
    }
    out
}

/// The canonical symbols of a dimension's units, each once ("MPa, kPa, Pa, bar, ..."), for
/// messages that say which units a quantity takes.
pub fn symbols(dim: Dim) -> Vec<&'static str> {
    let mut out: Vec<&'static str> = Vec::new();
    for (_, unit) in UNITS.iter().filter(|(_, unit)| unit.dim == dim) {
        if !out.contains(&unit.symbol) {
            out.push(unit.symbol);
        }
    }
    out
}

/// The dimension whose message name ([`Dim::name`]) is `name`.
pub fn dim_named(name: &str) -> Option<Dim> {
    Dim::ALL.into_iter().find(|d| d.name() == name)
}

/// Every accepted spelling of every dimension with its unit (for tests and listings).
pub fn spellings() -> impl Iterator<Item = (&'static str, Unit)> {
    UNITS.iter().copied()
}

/// The units of every dimension that `text` names ("K" names a temperature and a temperature
/// difference), for messages about a unit given for the wrong quantity.
pub fn dims_of(text: &str) -> Vec<Unit> {
    Dim::ALL
        .into_iter()
        .filter_map(|d| lookup(d, text))
        .collect()
}

fn psi_ambiguous(quantity: &str) -> Error {
    Error::invalid(format!(
        "{quantity}: 'psi' does not say whether the pressure is absolute or gauge; write psia or psig"
    ))
}

/// Finds a unit of dimension `dim` by its spelling. `quantity` names the value for messages.
pub fn parse_unit(quantity: &str, dim: Dim, text: &str) -> Result<Unit> {
    // Prices are currency-neutral: "EUR/MWh", "$/t" and "1/MWh" are read as "/MWh", "/t".
    let text = match (dim, text.find('/')) {
        (Dim::PricePerEnergy | Dim::PricePerMass, Some(i)) => &text[i..],
        _ => text,
    };
    if let Some(unit) = lookup(dim, text) {
        return Ok(unit);
    }
    if dim == Dim::Pressure && normalise(text).eq_ignore_ascii_case("psi") {
        return Err(psi_ambiguous(quantity));
    }
    for other in Dim::ALL {
        if other != dim {
            if let Some(found) = lookup(other, text) {
                return Err(Error::WrongDimension {
                    quantity: quantity.to_string(),
                    unit: format!("{} ({})", text.trim(), found.dim.name()),
                    expected: dim.name().to_string(),
                });
            }
        }
    }
    Err(Error::UnknownUnit {
        text: text.trim().to_string(),
        accepted: accepted(dim),
    })
}

/// The units of one request: a preset, with units chosen for whole dimensions (`pressure`,
/// `mass_flow`, ...) and for fields by name (`p`, `flow`, `net_power`) or by dotted path
/// (`outlet.p`, `totals.net_power`).
///
/// A field named by the dotted path `name` (array indices such as `[2]` ignored) of dimension
/// `dim` is in: the unit of the longest name key that ends `name` in whole segments (a path
/// over a leaf name), with the field's dimension; else the unit chosen for `dim` (a pressure
/// difference or temperature difference follows the unit chosen for pressure or temperature,
/// without gauge: barg gives bar); else the preset's unit for `dim`.
#[derive(Debug, Clone, PartialEq)]
pub struct UnitSystem {
    preset: Preset,
    by_dim: Vec<Unit>,
    by_name: Vec<(String, Unit)>,
}

impl UnitSystem {
    /// The preset's units alone.
    pub fn new(preset: Preset) -> UnitSystem {
        UnitSystem {
            preset,
            by_dim: Vec::new(),
            by_name: Vec::new(),
        }
    }

    /// The base preset.
    pub fn preset(&self) -> Preset {
        self.preset
    }

    /// True when nothing but the preset was chosen.
    pub fn is_preset_only(&self) -> bool {
        self.by_dim.is_empty() && self.by_name.is_empty()
    }

    /// Whether any field is chosen by name or path.
    pub fn has_names(&self) -> bool {
        !self.by_name.is_empty()
    }

    /// Chooses `unit` for every quantity of its dimension.
    pub fn set_dim(&mut self, unit: Unit) {
        self.by_dim.retain(|u| u.dim != unit.dim);
        self.by_dim.push(unit);
    }

    /// Chooses `unit` for the fields named `key` (a leaf name or a dotted path) of its dimension.
    pub fn set_name(&mut self, key: &str, unit: Unit) {
        let key = strip_indices(key);
        self.by_name
            .retain(|(k, u)| !(*k == key && u.dim == unit.dim));
        self.by_name.push((key, unit));
    }

    /// The unit of the field named `name` (a dotted path) of dimension `dim` (see the type's doc).
    pub fn unit(&self, name: &str, dim: Dim) -> Unit {
        self.named(name, dim).unwrap_or_else(|| self.for_dim(dim))
    }

    /// The unit chosen for the field `name` by a name or path key, if any.
    pub fn named(&self, name: &str, dim: Dim) -> Option<Unit> {
        if self.by_name.is_empty() {
            return None;
        }
        let name = strip_indices(name);
        self.by_name
            .iter()
            .filter(|(k, u)| u.dim == dim && ends_with_segments(&name, k))
            .max_by_key(|(k, _)| k.split('.').count())
            .map(|(_, u)| *u)
    }

    /// The unit of a quantity of dimension `dim` without a name key: the dimension's choice,
    /// else the preset's.
    pub fn for_dim(&self, dim: Dim) -> Unit {
        let chosen = |d: Dim| self.by_dim.iter().find(|u| u.dim == d).copied();
        if let Some(u) = chosen(dim) {
            return u;
        }
        let from = match dim {
            Dim::PressureDifference => chosen(Dim::Pressure),
            Dim::TemperatureDifference => chosen(Dim::Temperature),
            _ => None,
        };
        from.and_then(Unit::as_difference)
            .unwrap_or_else(|| self.preset.unit(dim))
    }
}

fn strip_indices(name: &str) -> String {
    let mut out = String::with_capacity(name.len());
    let mut depth = 0;
    for c in name.chars() {
        match c {
            '[' => depth += 1,
            ']' if depth > 0 => depth -= 1,
            _ if depth == 0 => out.push(c),
            _ => {}
        }
    }
    out
}

fn ends_with_segments(name: &str, key: &str) -> bool {
    name == key
        || (name.len() > key.len()
            && name.ends_with(key)
            && name.as_bytes()[name.len() - key.len() - 1] == b'.')
}

/// A value with the unit it came in, converted to internal units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Parsed {
    /// The value in internal units.
    pub internal: f64,
    /// The unit it was given in (the default unit when a bare number was given).
    pub unit: Unit,
}

/// Splits "42 barg" into (42, "barg"). The number is a decimal floating-point literal.
fn split_number(text: &str) -> Option<(f64, &str, &str)> {
    let t = text.trim();
    let bytes = t.as_bytes();
    let mut end = 0;
    let mut seen_digit = false;
    let mut seen_e = false;
    while end < bytes.len() {
        let c = bytes[end] as char;
        let ok = match c {
            '0'..='9' => {
                seen_digit = true;
                true
            }
            '+' | '-' => end == 0 || matches!(bytes[end - 1] as char, 'e' | 'E'),
            '.' => !seen_e,
            'e' | 'E' => {
                // only an exponent if digits (with optional sign) follow
                let rest = &t[end + 1..];
                let rest = rest.strip_prefix(['+', '-']).unwrap_or(rest);
                seen_digit && !seen_e && rest.starts_with(|c: char| c.is_ascii_digit()) && {
                    seen_e = true;
                    true
                }
            }
            _ => false,
        };
        if !ok {
            break;
        }
        end += 1;
    }
    if !seen_digit {
        return None;
    }
    let value: f64 = t[..end].parse().ok()?;
    Some((value, &t[..end], t[end..].trim()))
}

/// The error for a number written with digit grouping or a decimal comma ("2,000,000 lb/h",
/// "3,5 bar", "2 000 000 kg/h", "2'000'000 lb/h"), or None when `rest` (the text after the
/// number) does not continue it.
fn grouping_error(quantity: &str, text: &str, number: &str, rest: &str) -> Option<Error> {
    let sep = rest.chars().next()?;
    let continues = |r: &str| r.starts_with(|c: char| c.is_ascii_digit());
    let after = match sep {
        ',' | '\'' | '\u{2019}' | '_' => &rest[sep.len_utf8()..],
        // split_number trims the space between groups: "2 000 000" leaves "000 000"; a space
        // before a unit made of digits ("0.4 1") is no grouping
        '0'..='9' => {
            let first = rest.split(' ').next().unwrap_or("");
            let group = first.len() == 3 && first.bytes().all(|b| b.is_ascii_digit());
            if !group || number.contains(['.', 'e', 'E']) {
                return None;
            }
            rest
        }
        _ => return None,
    };
    if !continues(after) {
        return None;
    }
    // The digits and separators of the whole number, and the unit after them.
    let end = rest
        .char_indices()
        .find(|(_, c)| {
            !(c.is_ascii_digit() || matches!(c, ',' | '\'' | '\u{2019}' | '_' | ' ' | '.'))
        })
        .map_or(rest.len(), |(i, _)| i);
    let (tail, unit) = rest.split_at(end);
    let groups: Vec<&str> = tail
        .split([',', '\'', '\u{2019}', '_', ' '])
        .filter(|g| !g.is_empty())
        .collect();
    let grouped = groups
        .iter()
        .all(|g| g.len() == 3 || (g.len() > 3 && g.as_bytes()[3] == b'.'));
    let suggestion = if sep == ',' && !grouped && groups.len() == 1 {
        format!("{number}.{}", groups[0])
    } else {
        format!("{number}{}", groups.concat())
    };
    let unit = unit.trim();
    let example = if unit.is_empty() {
        suggestion
    } else {
        format!("{suggestion} {unit}")
    };
    Some(Error::invalid(format!(
        "{quantity}: '{}' groups digits or uses a decimal comma, which is not accepted; write the number without grouping and with '.' for decimals, e.g. {example}",
        text.trim()
    )))
}

/// Parses a text value such as "42 barg" or "0.91" for a quantity of dimension `dim`.
/// A bare number is taken in the preset's unit. `ambient` is in MPa.
pub fn parse_text(
    quantity: &str,
    dim: Dim,
    text: &str,
    preset: Preset,
    ambient: f64,
) -> Result<Parsed> {
    parse_text_in(quantity, dim, text, preset.unit(dim), ambient)
}

/// Parses a text value such as "42 barg" or "0.91" for a quantity of dimension `dim`; a bare
/// number is taken in `default` (a unit of `dim`). `ambient` is in MPa.
pub fn parse_text_in(
    quantity: &str,
    dim: Dim,
    text: &str,
    default: Unit,
    ambient: f64,
) -> Result<Parsed> {
    let Some((value, number, unit_text)) = split_number(text) else {
        return Err(Error::invalid(format!(
            "{quantity}: '{}' is not a number with an optional unit (e.g. \"{}\")",
            text.trim(),
            example(dim)
        )));
    };
    if let Some(e) = grouping_error(quantity, text, number, unit_text) {
        return Err(e);
    }
    Error::check_finite(quantity, value)?;
    let unit = if unit_text.is_empty() {
        default
    } else {
        parse_unit(quantity, dim, unit_text)?
    };
    let internal = unit.to_internal(value, ambient);
    Error::check_finite(quantity, internal)?;
    Ok(Parsed { internal, unit })
}

/// Converts a bare number in the preset's unit. `ambient` is in MPa.
pub fn parse_number(
    quantity: &str,
    dim: Dim,
    value: f64,
    preset: Preset,
    ambient: f64,
) -> Result<Parsed> {
    parse_number_in(quantity, value, preset.unit(dim), ambient)
}

/// Converts a bare number given in `unit`. `ambient` is in MPa.
pub fn parse_number_in(quantity: &str, value: f64, unit: Unit, ambient: f64) -> Result<Parsed> {
    Error::check_finite(quantity, value)?;
    Ok(Parsed {
        internal: unit.to_internal(value, ambient),
        unit,
    })
}

fn example(dim: Dim) -> &'static str {
    match dim {
        Dim::Pressure => "42 barg",
        Dim::PressureDifference => "0.5 bar",
        Dim::Temperature => "410 degC",
        Dim::SpecificEnergy => "1200 Btu/lb",
        Dim::SpecificEntropy => "6.5 kJ/(kg K)",
        Dim::MassFlow => "90 t/h",
        Dim::Dimensionless => "0.91",
        Dim::Length => "50 mm",
        Dim::PricePerEnergy => "30 EUR/MWh",
        Dim::PricePerMass => "25 $/t",
        Dim::Area => "28 m2",
        _ => "1.5",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(text: &str) -> f64 {
        parse_text(
            "p",
            Dim::Pressure,
            text,
            Preset::Engineering,
            AMBIENT_DEFAULT_MPA,
        )
        .unwrap()
        .internal
    }

    #[test]
    fn pressures() {
        assert_eq!(p("10 MPa"), 10.0);
        assert_eq!(p("10"), 10.0);
        assert!((p("42 barg") - 4.301325).abs() < 1e-15);
        assert!((p("1500 psia") - 10.342_135_939_752_541).abs() < 1e-12);
        assert!((p("0 psig") - 0.101_325).abs() < 1e-15);
        assert!((p("1.2e2 kPa") - 0.12).abs() < 1e-15);
        assert!((p("120kPa") - 0.12).abs() < 1e-15);
        assert!((p("1 bar(a)") - 0.1).abs() < 1e-15);
    }

    #[test]
    fn temperatures() {
        let t = |s: &str| {
            parse_text("T", Dim::Temperature, s, Preset::Engineering, 0.1)
                .unwrap()
                .internal
        };
        assert!((t("410 degC") - 683.15).abs() < 1e-12);
        assert!((t("410 °C") - 683.15).abs() < 1e-12);
        assert!((t("212 degF") - 373.15).abs() < 1e-12);
        assert!((t("32 F") - 273.15).abs() < 1e-12);
        assert!((t("300 K") - 300.0).abs() < 1e-12);
        assert!((t("100") - 373.15).abs() < 1e-12);
        let d = parse_text("dT", Dim::TemperatureDifference, "18 degF", Preset::Si, 0.1).unwrap();
        assert!((d.internal - 10.0).abs() < 1e-12);
    }

    #[test]
    fn preset_table_matches_lookup() {
        for (pi, p) in Preset::ALL.iter().enumerate() {
            assert_eq!(*p as usize, pi);
            for (di, d) in Dim::ALL.iter().enumerate() {
                assert_eq!(*d as usize, di);
                assert_eq!(p.unit(*d), p.unit_uncached(*d));
            }
        }
    }

    #[test]
    fn energies_and_round_trip() {
        let h = parse_text("h", Dim::SpecificEnergy, "1200 Btu/lb", Preset::Si, 0.1).unwrap();
        assert!((h.internal - 2791.2).abs() < 1e-9);
        for preset in Preset::ALL {
            for dim in Dim::ALL {
                let unit = preset.unit(dim);
                let x = 123.456;
                let back = unit.from_internal(unit.to_internal(x, 0.1), 0.1);
                assert!((back - x).abs() < 1e-9 * x, "{preset:?} {dim:?}");
            }
        }
    }

    #[test]
    fn errors_name_the_problem() {
        let e = parse_text("p", Dim::Pressure, "10 furlongs", Preset::Si, 0.1).unwrap_err();
        let msg = e.to_string();
        assert!(msg.contains("furlongs") && msg.contains("barg"), "{msg}");
        let e = parse_text("p", Dim::Pressure, "10 degC", Preset::Si, 0.1).unwrap_err();
        assert!(matches!(e, Error::WrongDimension { .. }), "{e}");
        let e = parse_text("p", Dim::Pressure, "abc", Preset::Si, 0.1).unwrap_err();
        assert!(e.to_string().contains("not a number"), "{e}");
        let e = parse_text("p", Dim::Pressure, "1e999 MPa", Preset::Si, 0.1).unwrap_err();
        assert!(matches!(e, Error::NotFinite { .. }), "{e}");
        assert!(Preset::parse("metric").is_err());
    }

    #[test]
    fn prices_lengths_energies() {
        let v = |q: &str, d: Dim, t: &str| {
            parse_text(q, d, t, Preset::Engineering, 0.1)
                .unwrap()
                .internal
        };
        // currency-neutral prices: per kJ and per kg inside
        assert!((v("fuel_cost", Dim::PricePerEnergy, "36 EUR/MWh") - 1e-5).abs() < 1e-18);
        assert!((v("fuel_cost", Dim::PricePerEnergy, "36 per MWh") - 1e-5).abs() < 1e-18);
        assert!((v("fuel_cost", Dim::PricePerEnergy, "36") - 1e-5).abs() < 1e-18);
        assert!((v("steam_cost", Dim::PricePerMass, "25 $/t") - 0.025).abs() < 1e-15);
        let mmbtu = v("fuel_cost", Dim::PricePerEnergy, "1 /MMBtu");
        assert!((1.0 / mmbtu - 1_055_055.852_62).abs() < 1e-6);
        assert!((v("d", Dim::Length, "2 in") - 0.0508).abs() < 1e-15);
        assert!((v("d", Dim::Length, "50 mm") - 0.05).abs() < 1e-15);
        assert!((v("E", Dim::Energy, "1 MWh") - 3.6e6).abs() < 1e-6);
        assert!((v("m", Dim::Mass, "2 t") - 2000.0).abs() < 1e-12);
        let e = parse_text(
            "fuel_cost",
            Dim::PricePerEnergy,
            "30 EUR/t",
            Preset::Si,
            0.1,
        )
        .unwrap_err();
        assert!(matches!(e, Error::WrongDimension { .. }), "{e}");
    }
}
