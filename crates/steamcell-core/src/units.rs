//! Engineering units: parsing of values with units ("42 barg", "410 degC", "1200 Btu/lb"), the three
//! output presets (`si`, `engineering`, `us`) and conversion to and from the internal units of the
//! physics layer (p MPa, T K, h u kJ/kg, s cp cv kJ/(kg K), v m3/kg, rho kg/m3, w m/s, flow kg/s,
//! power and heat flow kW, viscosity Pa s, conductivity W/(m K), surface tension N/m, area m2,
//! volume flow m3/s).
//!
//! Invariant: this is the only module that knows unit spellings; every conversion factor is an
//! exact definition (international foot and pound, thermochemical-free IT Btu) cited where declared.
//! Gauge pressures add an ambient pressure (101.325 kPa unless the caller gives one).

use crate::error::{Error, Result};

/// What kind of physical quantity a value is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Dim {
    /// Absolute pressure (internal MPa).
    Pressure,
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

    /// Every dimension, for listing and tests.
    pub const ALL: [Dim; 30] = [
        Dim::Pressure,
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
}

/// One unit: internal = value * scale + offset (+ ambient pressure when `gauge`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Unit {
    /// Canonical spelling used in answers.
    pub symbol: &'static str,
    /// Dimension.
    pub dim: Dim,
    /// Multiplier to the internal unit.
    pub scale: f64,
    /// Offset added after scaling (temperatures).
    pub offset: f64,
    /// Gauge pressure: the ambient pressure is added.
    pub gauge: bool,
}

// Exact definitions (common practice, no source needed beyond the SI brochure and the 1959
// international yard and pound agreement): 1 lb = 0.45359237 kg, 1 ft = 0.3048 m,
// 1 lbf = 4.4482216152605 N, 1 psi = 6894.757293168361 Pa, IT Btu = 1055.05585262 J,
// Btu/lb = 2.326 kJ/kg exactly, Btu/(lb F) = 4.1868 kJ/(kg K) exactly.
const LB: f64 = 0.453_592_37;
const FT: f64 = 0.3048;
const PSI_MPA: f64 = 6.894_757_293_168_361e-3;
const BTU_KJ: f64 = 1.055_055_852_62;
const F_K: f64 = 5.0 / 9.0;

const fn u(symbol: &'static str, dim: Dim, scale: f64) -> Unit {
    Unit {
        symbol,
        dim,
        scale,
        offset: 0.0,
        gauge: false,
    }
}

const fn off(symbol: &'static str, dim: Dim, scale: f64, offset: f64) -> Unit {
    Unit {
        symbol,
        dim,
        scale,
        offset,
        gauge: false,
    }
}

const fn g(symbol: &'static str, scale: f64) -> Unit {
    Unit {
        symbol,
        dim: Dim::Pressure,
        scale,
        offset: 0.0,
        gauge: true,
    }
}

/// Accepted spellings: (alias, unit). Aliases are matched after removing spaces, '·', '*' and
/// '.' between symbols, and case-insensitively.
const UNITS: &[(&str, Unit)] = &[
    // pressure, absolute
    ("Pa", u("Pa", Dim::Pressure, 1e-6)),
    ("kPa", u("kPa", Dim::Pressure, 1e-3)),
    ("kPaa", u("kPa", Dim::Pressure, 1e-3)),
    ("MPa", u("MPa", Dim::Pressure, 1.0)),
    ("MPaa", u("MPa", Dim::Pressure, 1.0)),
    ("bar", u("bar", Dim::Pressure, 0.1)),
    ("bara", u("bar", Dim::Pressure, 0.1)),
    ("bar(a)", u("bar", Dim::Pressure, 0.1)),
    ("mbar", u("mbar", Dim::Pressure, 1e-4)),
    ("psi", u("psia", Dim::Pressure, PSI_MPA)),
    ("psia", u("psia", Dim::Pressure, PSI_MPA)),
    ("atm", u("atm", Dim::Pressure, 0.101_325)),
    ("kgf/cm2", u("kgf/cm2", Dim::Pressure, 0.098_066_5)),
    ("mmHg", u("mmHg", Dim::Pressure, 1.333_223_874_15e-4)),
    ("inHg", u("inHg", Dim::Pressure, 3.386_388_64e-3)),
    // pressure, gauge
    ("barg", g("barg", 0.1)),
    ("bar(g)", g("barg", 0.1)),
    ("psig", g("psig", PSI_MPA)),
    ("kPag", g("kPag", 1e-3)),
    ("MPag", g("MPag", 1.0)),
    ("kgf/cm2g", g("kgf/cm2g", 0.098_066_5)),
    // temperature
    ("K", u("K", Dim::Temperature, 1.0)),
    ("degC", off("degC", Dim::Temperature, 1.0, 273.15)),
    ("°C", off("degC", Dim::Temperature, 1.0, 273.15)),
    ("C", off("degC", Dim::Temperature, 1.0, 273.15)),
    ("celsius", off("degC", Dim::Temperature, 1.0, 273.15)),
    ("degF", off("degF", Dim::Temperature, F_K, 459.67 * F_K)),
    ("°F", off("degF", Dim::Temperature, F_K, 459.67 * F_K)),
    ("F", off("degF", Dim::Temperature, F_K, 459.67 * F_K)),
    (
        "fahrenheit",
        off("degF", Dim::Temperature, F_K, 459.67 * F_K),
    ),
    ("degR", u("degR", Dim::Temperature, F_K)),
    ("R", u("degR", Dim::Temperature, F_K)),
    // temperature difference
    ("K", u("K", Dim::TemperatureDifference, 1.0)),
    ("degC", u("degC", Dim::TemperatureDifference, 1.0)),
    ("°C", u("degC", Dim::TemperatureDifference, 1.0)),
    ("C", u("degC", Dim::TemperatureDifference, 1.0)),
    ("degF", u("degF", Dim::TemperatureDifference, F_K)),
    ("°F", u("degF", Dim::TemperatureDifference, F_K)),
    ("F", u("degF", Dim::TemperatureDifference, F_K)),
    ("degR", u("degR", Dim::TemperatureDifference, F_K)),
    ("R", u("degR", Dim::TemperatureDifference, F_K)),
    // specific energy
    ("J/kg", u("J/kg", Dim::SpecificEnergy, 1e-3)),
    ("kJ/kg", u("kJ/kg", Dim::SpecificEnergy, 1.0)),
    ("MJ/kg", u("MJ/kg", Dim::SpecificEnergy, 1e3)),
    ("Btu/lb", u("Btu/lb", Dim::SpecificEnergy, 2.326)),
    ("Btu/lbm", u("Btu/lb", Dim::SpecificEnergy, 2.326)),
    ("kcal/kg", u("kcal/kg", Dim::SpecificEnergy, 4.1868)),
    ("kWh/kg", u("kWh/kg", Dim::SpecificEnergy, 3600.0)),
    // specific entropy
    ("J/(kgK)", u("J/(kg K)", Dim::SpecificEntropy, 1e-3)),
    ("J/kgK", u("J/(kg K)", Dim::SpecificEntropy, 1e-3)),
    ("J/kg/K", u("J/(kg K)", Dim::SpecificEntropy, 1e-3)),
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
    ("L/kg", u("L/kg", Dim::SpecificVolume, 1e-3)),
    ("dm3/kg", u("L/kg", Dim::SpecificVolume, 1e-3)),
    ("cm3/g", u("L/kg", Dim::SpecificVolume, 1e-3)),
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
    ("km/h", u("km/h", Dim::Speed, 1.0 / 3.6)),
    // dimensionless
    ("1", u("1", Dim::Dimensionless, 1.0)),
    ("-", u("1", Dim::Dimensionless, 1.0)),
    ("%", u("%", Dim::Dimensionless, 0.01)),
    // mass flow
    ("kg/s", u("kg/s", Dim::MassFlow, 1.0)),
    ("kg/h", u("kg/h", Dim::MassFlow, 1.0 / 3600.0)),
    ("t/h", u("t/h", Dim::MassFlow, 1000.0 / 3600.0)),
    ("tph", u("t/h", Dim::MassFlow, 1000.0 / 3600.0)),
    ("lb/h", u("lb/h", Dim::MassFlow, LB / 3600.0)),
    ("lb/hr", u("lb/h", Dim::MassFlow, LB / 3600.0)),
    ("klb/h", u("klb/h", Dim::MassFlow, 1000.0 * LB / 3600.0)),
    ("klb/hr", u("klb/h", Dim::MassFlow, 1000.0 * LB / 3600.0)),
    ("lb/s", u("lb/s", Dim::MassFlow, LB)),
    // power
    ("W", u("W", Dim::Power, 1e-3)),
    ("kW", u("kW", Dim::Power, 1.0)),
    ("MW", u("MW", Dim::Power, 1e3)),
    ("hp", u("hp", Dim::Power, 0.745_699_871_582_270_2)),
    ("Btu/h", u("Btu/h", Dim::Power, BTU_KJ / 3600.0)),
    // heat flow
    ("W", u("W", Dim::HeatFlow, 1e-3)),
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
    ("mPas", u("mPa s", Dim::Viscosity, 1e-3)),
    ("cP", u("mPa s", Dim::Viscosity, 1e-3)),
    ("uPas", u("uPa s", Dim::Viscosity, 1e-6)),
    ("µPas", u("uPa s", Dim::Viscosity, 1e-6)),
    ("lb/(fth)", u("lb/(ft h)", Dim::Viscosity, LB / FT / 3600.0)),
    ("lb/(fts)", u("lb/(ft s)", Dim::Viscosity, LB / FT)),
    // conductivity
    ("W/(mK)", u("W/(m K)", Dim::Conductivity, 1.0)),
    ("W/mK", u("W/(m K)", Dim::Conductivity, 1.0)),
    ("mW/(mK)", u("mW/(m K)", Dim::Conductivity, 1e-3)),
    ("mW/mK", u("mW/(m K)", Dim::Conductivity, 1e-3)),
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
    ("mN/m", u("mN/m", Dim::SurfaceTension, 1e-3)),
    ("dyn/cm", u("mN/m", Dim::SurfaceTension, 1e-3)),
    (
        "lbf/ft",
        u("lbf/ft", Dim::SurfaceTension, 4.448_221_615_260_5 / FT),
    ),
    // diffusivity
    ("m2/s", u("m2/s", Dim::Diffusivity, 1.0)),
    ("mm2/s", u("mm2/s", Dim::Diffusivity, 1e-6)),
    ("cSt", u("mm2/s", Dim::Diffusivity, 1e-6)),
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
    ("1/psi", u("1/psi", Dim::InversePressure, 1.0 / PSI_MPA)),
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
    ("mm", u("mm", Dim::Length, 1e-3)),
    ("ft", u("ft", Dim::Length, FT)),
    ("cm", u("cm", Dim::Length, 1e-2)),
    ("km", u("km", Dim::Length, 1e3)),
    ("in", u("in", Dim::Length, FT / 12.0)),
    ("inch", u("in", Dim::Length, FT / 12.0)),
    ("\"", u("in", Dim::Length, FT / 12.0)),
    // energy (1 kWh = 3600 kJ; 1 therm = 100 000 IT Btu)
    ("J", u("J", Dim::Energy, 1e-3)),
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
    ("/MJ", u("/MJ", Dim::PricePerEnergy, 1e-3)),
    ("/GJ", u("/GJ", Dim::PricePerEnergy, 1e-6)),
    ("/kWh", u("/kWh", Dim::PricePerEnergy, 1.0 / 3600.0)),
    ("/MWh", u("/MWh", Dim::PricePerEnergy, 1.0 / 3.6e6)),
    (
        "/MMBtu",
        u("/MMBtu", Dim::PricePerEnergy, 1.0 / (1e6 * BTU_KJ)),
    ),
    (
        "/therm",
        u("/therm", Dim::PricePerEnergy, 1.0 / (1e5 * BTU_KJ)),
    ),
    ("perkJ", u("/kJ", Dim::PricePerEnergy, 1.0)),
    ("perMJ", u("/MJ", Dim::PricePerEnergy, 1e-3)),
    ("perGJ", u("/GJ", Dim::PricePerEnergy, 1e-6)),
    ("perkWh", u("/kWh", Dim::PricePerEnergy, 1.0 / 3600.0)),
    ("perMWh", u("/MWh", Dim::PricePerEnergy, 1.0 / 3.6e6)),
    (
        "perMMBtu",
        u("/MMBtu", Dim::PricePerEnergy, 1.0 / (1e6 * BTU_KJ)),
    ),
    (
        "pertherm",
        u("/therm", Dim::PricePerEnergy, 1.0 / (1e5 * BTU_KJ)),
    ),
    // price per mass (currency-neutral: "25 /t", "12 per klb")
    ("/kg", u("/kg", Dim::PricePerMass, 1.0)),
    ("/t", u("/t", Dim::PricePerMass, 1e-3)),
    ("/tonne", u("/t", Dim::PricePerMass, 1e-3)),
    ("/lb", u("/lb", Dim::PricePerMass, 1.0 / LB)),
    ("/klb", u("/klb", Dim::PricePerMass, 1.0 / (1e3 * LB))),
    ("perkg", u("/kg", Dim::PricePerMass, 1.0)),
    ("pert", u("/t", Dim::PricePerMass, 1e-3)),
    ("pertonne", u("/t", Dim::PricePerMass, 1e-3)),
    ("perlb", u("/lb", Dim::PricePerMass, 1.0 / LB)),
    ("perklb", u("/klb", Dim::PricePerMass, 1.0 / (1e3 * LB))),
    // heat flow per length
    ("W/m", u("W/m", Dim::HeatFlowPerLength, 1e-3)),
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
    ("cm2", u("cm2", Dim::Area, 1e-4)),
    ("mm2", u("mm2", Dim::Area, 1e-6)),
    ("ft2", u("ft2", Dim::Area, FT * FT)),
    ("ft^2", u("ft2", Dim::Area, FT * FT)),
    ("ft²", u("ft2", Dim::Area, FT * FT)),
    ("sqft", u("ft2", Dim::Area, FT * FT)),
    ("in2", u("in2", Dim::Area, FT * FT / 144.0)),
    // volume flow
    ("m3/s", u("m3/s", Dim::VolumeFlow, 1.0)),
    ("m^3/s", u("m3/s", Dim::VolumeFlow, 1.0)),
    ("m³/s", u("m3/s", Dim::VolumeFlow, 1.0)),
    ("m3/h", u("m3/h", Dim::VolumeFlow, 1.0 / 3600.0)),
    ("L/s", u("L/s", Dim::VolumeFlow, 1e-3)),
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
}

impl Preset {
    /// Parses a preset name.
    pub fn parse(name: &str) -> Result<Preset> {
        match name.trim().to_ascii_lowercase().as_str() {
            "si" => Ok(Preset::Si),
            "engineering" | "eng" => Ok(Preset::Engineering),
            "us" => Ok(Preset::Us),
            _ => Err(Error::invalid(format!(
                "unknown unit preset '{name}'; accepted: si, engineering, us"
            ))),
        }
    }

    /// The preset's name.
    pub fn name(self) -> &'static str {
        match self {
            Preset::Si => "si",
            Preset::Engineering => "engineering",
            Preset::Us => "us",
        }
    }

    /// What the preset selects, for `server.info`.
    pub fn description(self) -> &'static str {
        match self {
            Preset::Si => "Coherent SI: Pa, K, J/kg, J/(kg K), m3/kg, kg/m3, m/s, Pa s, W/(m K), N/m, kg/s, W",
            Preset::Engineering => "The default: MPa, degC, kJ/kg, kJ/(kg K), m3/kg, kg/m3, m/s, uPa s, mW/(m K), mN/m, kg/s, kW",
            Preset::Us => "US customary: psia, degF, Btu/lb, Btu/(lb F), ft3/lb, lb/ft3, ft/s, lb/(ft h), lb/h, kW (power), MMBtu/h (heat)",
        }
    }

    /// All presets.
    pub const ALL: [Preset; 3] = [Preset::Si, Preset::Engineering, Preset::Us];

    /// The preset's unit for a dimension (looked up once per process, then from a table: this
    /// is on the hot path of every batch row).
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
        let symbol = match (self, dim) {
            (Preset::Si, Dim::Pressure) => "Pa",
            (Preset::Engineering, Dim::Pressure) => "MPa",
            (Preset::Us, Dim::Pressure) => "psia",
            (Preset::Si, Dim::Temperature) => "K",
            (Preset::Engineering, Dim::Temperature) => "degC",
            (Preset::Us, Dim::Temperature) => "degF",
            (Preset::Si | Preset::Engineering, Dim::TemperatureDifference) => "K",
            (Preset::Us, Dim::TemperatureDifference) => "degF",
            (Preset::Si, Dim::SpecificEnergy) => "J/kg",
            (Preset::Engineering, Dim::SpecificEnergy) => "kJ/kg",
            (Preset::Us, Dim::SpecificEnergy) => "Btu/lb",
            (Preset::Si, Dim::SpecificEntropy) => "J/(kgK)",
            (Preset::Engineering, Dim::SpecificEntropy) => "kJ/(kgK)",
            (Preset::Us, Dim::SpecificEntropy) => "Btu/(lbF)",
            (Preset::Si | Preset::Engineering, Dim::SpecificVolume) => "m3/kg",
            (Preset::Us, Dim::SpecificVolume) => "ft3/lb",
            (Preset::Si | Preset::Engineering, Dim::Density) => "kg/m3",
            (Preset::Us, Dim::Density) => "lb/ft3",
            (Preset::Si | Preset::Engineering, Dim::Speed) => "m/s",
            (Preset::Us, Dim::Speed) => "ft/s",
            (_, Dim::Dimensionless) => "1",
            (Preset::Si | Preset::Engineering, Dim::MassFlow) => "kg/s",
            (Preset::Us, Dim::MassFlow) => "lb/h",
            (Preset::Si, Dim::Power) => "W",
            (Preset::Engineering | Preset::Us, Dim::Power) => "kW",
            (Preset::Si, Dim::HeatFlow) => "W",
            (Preset::Engineering, Dim::HeatFlow) => "kW",
            (Preset::Us, Dim::HeatFlow) => "MMBtu/h",
            (Preset::Si, Dim::Viscosity) => "Pas",
            (Preset::Engineering, Dim::Viscosity) => "uPas",
            (Preset::Us, Dim::Viscosity) => "lb/(fth)",
            (Preset::Si, Dim::Conductivity) => "W/(mK)",
            (Preset::Engineering, Dim::Conductivity) => "mW/(mK)",
            (Preset::Us, Dim::Conductivity) => "Btu/(hftF)",
            (Preset::Si, Dim::SurfaceTension) => "N/m",
            (Preset::Engineering, Dim::SurfaceTension) => "mN/m",
            (Preset::Us, Dim::SurfaceTension) => "lbf/ft",
            (Preset::Si, Dim::Diffusivity) => "m2/s",
            (Preset::Engineering, Dim::Diffusivity) => "mm2/s",
            (Preset::Us, Dim::Diffusivity) => "ft2/h",
            (Preset::Si | Preset::Engineering, Dim::InverseTemperature) => "1/K",
            (Preset::Us, Dim::InverseTemperature) => "1/degF",
            (Preset::Si, Dim::InversePressure) => "1/Pa",
            (Preset::Engineering, Dim::InversePressure) => "1/MPa",
            (Preset::Us, Dim::InversePressure) => "1/psi",
            (Preset::Si, Dim::TemperaturePerPressure) => "K/Pa",
            (Preset::Engineering, Dim::TemperaturePerPressure) => "K/MPa",
            (Preset::Us, Dim::TemperaturePerPressure) => "degF/psi",
            (Preset::Si | Preset::Engineering, Dim::HeatRate) => "kJ/kWh",
            (Preset::Us, Dim::HeatRate) => "Btu/kWh",
            (Preset::Si | Preset::Engineering, Dim::SteamRate) => "kg/kWh",
            (Preset::Us, Dim::SteamRate) => "lb/kWh",
            (Preset::Si | Preset::Engineering, Dim::Length) => "m",
            (Preset::Us, Dim::Length) => "ft",
            (Preset::Si, Dim::Energy) => "GJ",
            (Preset::Engineering, Dim::Energy) => "MWh",
            (Preset::Us, Dim::Energy) => "MMBtu",
            (Preset::Si, Dim::Mass) => "kg",
            (Preset::Engineering, Dim::Mass) => "t",
            (Preset::Us, Dim::Mass) => "klb",
            (Preset::Si, Dim::PricePerEnergy) => "/GJ",
            (Preset::Engineering, Dim::PricePerEnergy) => "/MWh",
            (Preset::Us, Dim::PricePerEnergy) => "/MMBtu",
            (Preset::Si | Preset::Engineering, Dim::PricePerMass) => "/t",
            (Preset::Us, Dim::PricePerMass) => "/klb",
            (Preset::Si | Preset::Engineering, Dim::HeatFlowPerLength) => "W/m",
            (Preset::Us, Dim::HeatFlowPerLength) => "Btu/(hft)",
            (Preset::Si | Preset::Engineering, Dim::HeatTransferCoefficient) => "W/(m2K)",
            (Preset::Us, Dim::HeatTransferCoefficient) => "Btu/(hft2F)",
            (Preset::Si | Preset::Engineering, Dim::Area) => "m2",
            (Preset::Us, Dim::Area) => "ft2",
            (Preset::Si | Preset::Engineering, Dim::VolumeFlow) => "m3/s",
            (Preset::Us, Dim::VolumeFlow) => "ft3/s",
        };
        lookup(dim, symbol).expect("every preset unit is in the table")
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
    pub fn to_internal(&self, value: f64, ambient: f64) -> f64 {
        let x = value * self.scale + self.offset;
        if self.gauge {
            x + ambient
        } else {
            x
        }
    }

    /// Converts an internal value to this unit; `ambient` (MPa) is subtracted for gauge units.
    pub fn from_internal(&self, value: f64, ambient: f64) -> f64 {
        let x = if self.gauge { value - ambient } else { value };
        (x - self.offset) / self.scale
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

/// A value with the unit it came in, converted to internal units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Parsed {
    /// The value in internal units.
    pub internal: f64,
    /// The unit it was given in (the preset's when a bare number was given).
    pub unit: Unit,
}

/// Splits "42 barg" into (42, "barg"). The number is a decimal floating-point literal.
fn split_number(text: &str) -> Option<(f64, &str)> {
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
    Some((value, t[end..].trim()))
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
    let Some((value, unit_text)) = split_number(text) else {
        return Err(Error::invalid(format!(
            "{quantity}: '{}' is not a number with an optional unit (e.g. \"{}\")",
            text.trim(),
            example(dim)
        )));
    };
    Error::check_finite(quantity, value)?;
    let unit = if unit_text.is_empty() {
        preset.unit(dim)
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
    Error::check_finite(quantity, value)?;
    let unit = preset.unit(dim);
    Ok(Parsed {
        internal: unit.to_internal(value, ambient),
        unit,
    })
}

fn example(dim: Dim) -> &'static str {
    match dim {
        Dim::Pressure => "42 barg",
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
