//! The uncertainty of a computed property of water or steam: the uncertainty statements of the
//! IAPWS-95 release for density, speed of sound, isobaric heat capacity and vapour pressure, by
//! region of the phase diagram, and for an IAPWS-IF97 state IF97's deviation from IAPWS-95 at
//! that state as a further component.
//!
//! Sources and how each figure was obtained (every [`Row`] names its own):
//!
//! - IAPWS R6-95(2018), "Revised Release on the IAPWS Formulation 1995 for the Thermodynamic
//!   Properties of Ordinary Water Substance for General and Scientific Use", its section on the
//!   estimates of uncertainty and the figures that show them by region of the phase diagram
//!   (density, speed of sound, isobaric heat capacity) with the statement for the vapour
//!   pressure. No copy of the release's figures was at hand when this table was written.
//! - Figures marked [`Basis::Quoted`] are quoted from a public text that summarises those
//!   statements: the NIST Chemistry WebBook (NIST Standard Reference Database 69, Lemmon,
//!   McLinden and Friend, "Thermophysical Properties of Fluid Systems"), the notes on the water
//!   equation of state (IAPWS-95, Wagner and Pruss 2002); its words are given in the row.
//! - Figures marked [`Basis::FromMemory`] (region bounds and the bands the summary only
//!   describes as rising) are read from the release's figures, or from the abstract of Wagner
//!   and Pruss, J. Phys. Chem. Ref. Data 31 (2002) 387, from memory. Treat them as indications.
//!
//! The release states its figures as relative uncertainties; they are read here as expanded
//! uncertainties with a coverage factor of 2 ([`K_STATED`]; from memory) and divided by it for a
//! standard uncertainty. An IF97 value carries a second component: its deviation d from IAPWS-95
//! at the same (p, T) (both formulations are in this crate), taken as a rectangular distribution
//! of half-width |d| (JCGM 100:2008, 4.3.7), so u = |d| / sqrt(3). Components add in quadrature.
//!
//! Units: internal (p MPa, T K, rho kg/m3, w m/s, cp kJ/(kg K)); relative figures are fractions.
//!
//! Invariant: data apart from logic: the tables ([`R6_95_FIGURE_DENSITY`],
//! [`R6_95_FIGURE_SPEED_OF_SOUND`], [`R6_95_FIGURE_ISOBARIC_HEAT_CAPACITY`],
//! [`R6_95_VAPOUR_PRESSURE`]) are `const` data read in order, the first row whose region holds
//! the state giving the figure; every row has a citation and a basis; no panic on finite input.

use crate::water::state::{Given, Options, Phase, State};
use crate::water::{saturation, solve, Formulation, SaturationAt};

/// The coverage factor the release's figures are read with (expanded uncertainties, k = 2;
/// from memory: the release speaks of estimated uncertainties without naming k here).
pub const K_STATED: f64 = 2.0;

/// IAPWS-95's critical temperature, K (R6-95(2018), Eq. (1)).
const T_C: f64 = 647.096;
/// IAPWS-95's critical density, kg/m3 (R6-95(2018), Eq. (2)).
const RHO_C: f64 = 322.0;
/// IAPWS-95's upper temperature of validity, K (R6-95(2018)).
const T_MAX_95: f64 = 1273.0;
/// The triple-point temperature, K (R6-95(2018)).
const T_TRIPLE: f64 = 273.16;

/// How a figure of a table was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Basis {
    /// Quoted from a public text summarising the release's statement (the row's citation gives
    /// the words).
    Quoted,
    /// Read from the release's figures (or the paper behind it) from memory; an indication.
    FromMemory,
}

impl Basis {
    /// Wire name: "quoted" or "from memory".
    pub fn name(self) -> &'static str {
        match self {
            Basis::Quoted => "quoted",
            Basis::FromMemory => "from memory",
        }
    }
}

/// A property the release states an uncertainty for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Property {
    /// Density rho.
    Density,
    /// Speed of sound w.
    SpeedOfSound,
    /// Specific isobaric heat capacity cp.
    IsobaricHeatCapacity,
    /// Vapour (saturation) pressure at the state's temperature.
    VapourPressure,
}

impl Property {
    /// Every property, in output order.
    pub const ALL: [Property; 4] = [
        Property::Density,
        Property::SpeedOfSound,
        Property::IsobaricHeatCapacity,
        Property::VapourPressure,
    ];

    /// Wire name: "rho", "w", "cp", "p_sat".
    pub fn name(self) -> &'static str {
        match self {
            Property::Density => "rho",
            Property::SpeedOfSound => "w",
            Property::IsobaricHeatCapacity => "cp",
            Property::VapourPressure => "p_sat",
        }
    }

    /// The table of the release for this property.
    pub fn table(self) -> &'static [Row] {
        match self {
            Property::Density => R6_95_FIGURE_DENSITY,
            Property::SpeedOfSound => R6_95_FIGURE_SPEED_OF_SOUND,
            Property::IsobaricHeatCapacity => R6_95_FIGURE_ISOBARIC_HEAT_CAPACITY,
            Property::VapourPressure => R6_95_VAPOUR_PRESSURE,
        }
    }

    fn of(self, st: &State) -> f64 {
        match self {
            Property::Density => st.props.rho,
            Property::SpeedOfSound => st.props.w,
            Property::IsobaricHeatCapacity => st.props.cp,
            Property::VapourPressure => f64::NAN,
        }
    }
}

/// Which states a row covers, besides its temperature and pressure bounds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Zone {
    /// The critical region ([`CRITICAL_REGION`]).
    Critical,
    /// Liquid (IF97's phase naming: below the critical temperature, above the vapour pressure).
    Liquid,
    /// Vapour (gas below the critical pressure).
    Vapour,
    /// Any single-phase state.
    Fluid,
    /// The saturation line (vapour pressure), triple point to critical point.
    Saturation,
}

/// One region of a release figure: the states it covers and the uncertainty stated there.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Row {
    /// What part of the phase diagram, in words (for the answer).
    pub region: &'static str,
    /// Which states.
    pub zone: Zone,
    /// Highest temperature of the region, K.
    pub t_max: f64,
    /// Highest pressure of the region, MPa.
    pub p_max: f64,
    /// Relative expanded uncertainty (fraction, k = [`K_STATED`]).
    pub relative: f64,
    /// The statement is of the pressure at given temperature and density (the critical
    /// region), not of the property itself: density follows as delta rho / rho = kappa_T p
    /// delta p / p.
    pub in_pressure: bool,
    /// Where the figure comes from: the release, its section and figure, or the summary that
    /// quotes it.
    pub source: &'static str,
    /// The quoted words of the source, or what was read from memory.
    pub words: &'static str,
    /// How it was obtained.
    pub basis: Basis,
}

impl Row {
    /// The full citation: source, then the words.
    pub fn citation(&self) -> String {
        format!("{}: {}", self.source, self.words)
    }
}

/// The bounds of the critical region as the figures draw it (from memory): reduced temperature
/// T/Tc and reduced density rho/rhoc.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CriticalRegion {
    /// Lowest T / Tc.
    pub t_low: f64,
    /// Highest T / Tc.
    pub t_high: f64,
    /// Lowest rho / rhoc.
    pub rho_low: f64,
    /// Highest rho / rhoc.
    pub rho_high: f64,
}

/// The critical region of the release's figures (from memory: about 0.99 to 1.1 Tc and 0.5 to
/// 1.5 rhoc).
pub const CRITICAL_REGION: CriticalRegion = CriticalRegion {
    t_low: 0.99,
    t_high: 1.1,
    rho_low: 0.5,
    rho_high: 1.5,
};

const SUMMARY: &str = "IAPWS R6-95(2018), section on the estimates of uncertainty and its figures, as summarised in the NIST Chemistry WebBook (SRD 69), notes on the water equation of state (Wagner and Pruss 2002)";
const FIGURE: &str = "IAPWS R6-95(2018), section on the estimates of uncertainty, its figure by region of the phase diagram, read from the plot from memory";
const ABSTRACT: &str =
    "Wagner and Pruss, J. Phys. Chem. Ref. Data 31 (2002) 387, abstract (IAPWS-95)";

/// Density: the release's figure of the estimated uncertainties in density.
pub const R6_95_FIGURE_DENSITY: &[Row] = &[
    Row {
        region: "critical region (stated as the uncertainty in pressure)",
        zone: Zone::Critical,
        t_max: f64::INFINITY,
        p_max: f64::INFINITY,
        relative: 0.001,
        in_pressure: true,
        source: SUMMARY,
        words: "\"The uncertainty in pressure in the critical region is 0.1%.\"",
        basis: Basis::Quoted,
    },
    Row {
        region: "liquid at ambient pressure (taken here as p <= 0.2 MPa)",
        zone: Zone::Liquid,
        t_max: 373.15,
        p_max: 0.2,
        relative: 0.000_001,
        in_pressure: false,
        source: SUMMARY,
        words: "\"The uncertainty in density of the equation of state is 0.0001% at 1 atm in the liquid phase\"",
        basis: Basis::Quoted,
    },
    Row {
        region: "liquid up to 10 MPa and 423 K",
        zone: Zone::Liquid,
        t_max: 423.15,
        p_max: 10.0,
        relative: 0.000_01,
        in_pressure: false,
        source: SUMMARY,
        words: "\"and 0.001% at other liquid states at pressures up to 10 MPa and temperatures to 423 K\"",
        basis: Basis::Quoted,
    },
    Row {
        region: "liquid up to 100 MPa and 623.15 K",
        zone: Zone::Liquid,
        t_max: 623.15,
        p_max: 100.0,
        relative: 0.000_2,
        in_pressure: false,
        source: ABSTRACT,
        words: "\"in the most important part of the liquid region ... from 0.001% to 0.02% in density\"; the upper figure is used for the whole region (from memory)",
        basis: Basis::FromMemory,
    },
    Row {
        region: "vapour (gas below the critical pressure)",
        zone: Zone::Vapour,
        t_max: T_MAX_95,
        p_max: 22.064,
        relative: 0.000_5,
        in_pressure: false,
        source: SUMMARY,
        words: "\"In the vapor phase, the uncertainty is 0.05% or less.\"",
        basis: Basis::Quoted,
    },
    Row {
        region: "other fluid states up to 100 MPa",
        zone: Zone::Fluid,
        t_max: T_MAX_95,
        p_max: 100.0,
        relative: 0.001,
        in_pressure: false,
        source: SUMMARY,
        words: "\"The uncertainties rise at higher temperatures and/or pressures, but are generally less than 0.1% in density except at extreme conditions.\"",
        basis: Basis::Quoted,
    },
    Row {
        region: "above 100 MPa",
        zone: Zone::Fluid,
        t_max: T_MAX_95,
        p_max: 1000.0,
        relative: 0.01,
        in_pressure: false,
        source: FIGURE,
        words: "density, outer band above 100 MPa (from memory; 1 % used as a cautious indication)",
        basis: Basis::FromMemory,
    },
];

/// Speed of sound: the release's figure of the estimated uncertainties in speed of sound.
pub const R6_95_FIGURE_SPEED_OF_SOUND: &[Row] = &[
    Row {
        region: "critical region",
        zone: Zone::Critical,
        t_max: f64::INFINITY,
        p_max: f64::INFINITY,
        relative: 0.01,
        in_pressure: false,
        source: FIGURE,
        words: "speed of sound, critical region (from memory; the summary says only that the uncertainty \"increases near the critical region\")",
        basis: Basis::FromMemory,
    },
    Row {
        region: "liquid at ambient pressure (taken here as p <= 0.2 MPa)",
        zone: Zone::Liquid,
        t_max: 373.15,
        p_max: 0.2,
        relative: 0.000_05,
        in_pressure: false,
        source: ABSTRACT,
        words: "\"In the liquid region at ambient pressure, IAPWS-95 is extremely accurate in ... speed of sound (0.005%)\" (from memory)",
        basis: Basis::FromMemory,
    },
    Row {
        region: "liquid up to 100 MPa",
        zone: Zone::Liquid,
        t_max: T_C,
        p_max: 100.0,
        relative: 0.001,
        in_pressure: false,
        source: SUMMARY,
        words: "\"The uncertainty of the speed of sound is 0.15% in the vapor and 0.1% or less in the liquid\"",
        basis: Basis::Quoted,
    },
    Row {
        region: "vapour (gas below the critical pressure)",
        zone: Zone::Vapour,
        t_max: T_MAX_95,
        p_max: 22.064,
        relative: 0.001_5,
        in_pressure: false,
        source: SUMMARY,
        words: "\"The uncertainty of the speed of sound is 0.15% in the vapor\"",
        basis: Basis::Quoted,
    },
    Row {
        region: "other fluid states up to 100 MPa",
        zone: Zone::Fluid,
        t_max: T_MAX_95,
        p_max: 100.0,
        relative: 0.005,
        in_pressure: false,
        source: FIGURE,
        words: "speed of sound, supercritical states (from memory; the summary says it \"increases ... at high temperatures and pressures\")",
        basis: Basis::FromMemory,
    },
    Row {
        region: "above 100 MPa",
        zone: Zone::Fluid,
        t_max: T_MAX_95,
        p_max: 1000.0,
        relative: 0.02,
        in_pressure: false,
        source: FIGURE,
        words: "speed of sound, outer band above 100 MPa (from memory; a cautious indication)",
        basis: Basis::FromMemory,
    },
];

/// Isobaric heat capacity: the release's figure of the estimated uncertainties in cp.
pub const R6_95_FIGURE_ISOBARIC_HEAT_CAPACITY: &[Row] = &[
    Row {
        region: "critical region",
        zone: Zone::Critical,
        t_max: f64::INFINITY,
        p_max: f64::INFINITY,
        relative: 0.02,
        in_pressure: false,
        source: FIGURE,
        words: "isobaric heat capacity, critical region (from memory; the summary speaks of \"increasing values in the critical region\")",
        basis: Basis::FromMemory,
    },
    Row {
        region: "liquid up to 100 MPa",
        zone: Zone::Liquid,
        t_max: T_C,
        p_max: 100.0,
        relative: 0.001,
        in_pressure: false,
        source: SUMMARY,
        words: "\"The uncertainty in isobaric heat capacity is 0.2% in the vapor and 0.1% in the liquid\"",
        basis: Basis::Quoted,
    },
    Row {
        region: "vapour (gas below the critical pressure)",
        zone: Zone::Vapour,
        t_max: T_MAX_95,
        p_max: 22.064,
        relative: 0.002,
        in_pressure: false,
        source: SUMMARY,
        words: "\"The uncertainty in isobaric heat capacity is 0.2% in the vapor\"",
        basis: Basis::Quoted,
    },
    Row {
        region: "other fluid states up to 100 MPa",
        zone: Zone::Fluid,
        t_max: T_MAX_95,
        p_max: 100.0,
        relative: 0.01,
        in_pressure: false,
        source: FIGURE,
        words: "isobaric heat capacity, supercritical states (from memory; the summary speaks of \"increasing values ... at high pressures\")",
        basis: Basis::FromMemory,
    },
    Row {
        region: "above 100 MPa",
        zone: Zone::Fluid,
        t_max: T_MAX_95,
        p_max: 1000.0,
        relative: 0.02,
        in_pressure: false,
        source: FIGURE,
        words: "isobaric heat capacity, outer band above 100 MPa (from memory; a cautious indication)",
        basis: Basis::FromMemory,
    },
];

/// Vapour pressure: the release's statement for the saturation line.
pub const R6_95_VAPOUR_PRESSURE: &[Row] = &[Row {
    region: "saturation line, triple point to critical point",
    zone: Zone::Saturation,
    t_max: T_C,
    p_max: 22.064,
    relative: 0.000_25,
    in_pressure: false,
    source: SUMMARY,
    words: "\"The uncertainties of saturation conditions are 0.025% in vapor pressure\"",
    basis: Basis::Quoted,
}];

/// Whether `st` lies in the critical region of the figures.
pub fn in_critical_region(st: &State) -> bool {
    let c = CRITICAL_REGION;
    let tr = st.props.t / T_C;
    let dr = st.props.rho / RHO_C;
    st.phase != Phase::Wet
        && (c.t_low..=c.t_high).contains(&tr)
        && (c.rho_low..=c.rho_high).contains(&dr)
}

/// The row of `table` that covers the single-phase state `st` (or, for the saturation table,
/// the state's temperature), if any.
pub fn row_for(table: &'static [Row], st: &State) -> Option<&'static Row> {
    let (p, t) = (st.props.p, st.props.t);
    let critical = in_critical_region(st);
    table.iter().find(|r| {
        let zone = match r.zone {
            Zone::Critical => critical,
            Zone::Liquid => !critical && st.phase == Phase::Liquid,
            Zone::Vapour => !critical && st.phase == Phase::Vapour,
            Zone::Fluid => !critical && st.phase != Phase::Wet,
            Zone::Saturation => (T_TRIPLE..=T_C).contains(&t),
        };
        zone && (r.zone == Zone::Saturation || (t <= r.t_max && p <= r.p_max))
    })
}

/// The uncertainty of one property of one state.
#[derive(Debug, Clone, PartialEq)]
pub struct Statement {
    /// Which property.
    pub property: Property,
    /// The property's value at the state with the state's formulation (internal units).
    pub value: f64,
    /// The release's row that covers the state.
    pub row: &'static Row,
    /// Relative expanded uncertainty (k = [`K_STATED`]) of the IAPWS-95 value of the property
    /// (for a critical-region row converted from pressure to density).
    pub relative_expanded: f64,
    /// Standard uncertainty of the IAPWS-95 value, internal units.
    pub u_iapws95: f64,
    /// IF97 minus IAPWS-95 at the same (p, T) (vapour pressure: at the same T), internal units;
    /// None for an IAPWS-95 state or where it cannot be formed ([`Statement::deviation_note`]).
    pub if97_deviation: Option<f64>,
    /// Why no deviation is given for an IF97 state.
    pub deviation_note: Option<&'static str>,
    /// Standard uncertainty of the IF97 deviation, |d| / sqrt(3) (0 without one).
    pub u_if97: f64,
    /// Combined standard uncertainty, internal units.
    pub u: f64,
}

/// The property uncertainties of a state: a statement per property that has one, and why the
/// others have none.
#[derive(Debug, Clone, PartialEq)]
pub struct StateUncertainty {
    /// Statements, in the order of [`Property::ALL`].
    pub statements: Vec<Statement>,
    /// Properties without a statement, with the reason.
    pub undefined: Vec<(Property, &'static str)>,
}

/// The uncertainty of density, speed of sound, isobaric heat capacity and vapour pressure at
/// the state `st`, solved with formulation `f`.
pub fn of_state(st: &State, f: Formulation) -> StateUncertainty {
    let mut statements = Vec::new();
    let mut undefined = Vec::new();
    let (p, t) = (st.props.p, st.props.t);
    let reference = if f == Formulation::If97 && st.phase != Phase::Wet {
        Some(solve(
            Given::PT(p, t),
            &Options::STANDARD,
            Formulation::Iapws95,
        ))
    } else {
        None
    };
    for prop in Property::ALL {
        if t > T_MAX_95 {
            undefined.push((
                prop,
                "above IAPWS-95's range of validity (1273 K): the release states no uncertainty",
            ));
            continue;
        }
        let (value, row, dev): (f64, Option<&'static Row>, Result<f64, &'static str>) = if prop
            == Property::VapourPressure
        {
            if !(T_TRIPLE..T_C).contains(&t) {
                undefined.push((prop, "no vapour pressure: the temperature is not between the triple point and the critical point"));
                continue;
            }
            let own = saturation(SaturationAt::T(t), f);
            let Ok(own) = own else {
                undefined.push((
                    prop,
                    "the saturation state at this temperature cannot be computed",
                ));
                continue;
            };
            let dev = if f == Formulation::If97 {
                match saturation(SaturationAt::T(t), Formulation::Iapws95) {
                    Ok(r) => Ok(own.p - r.p),
                    Err(_) => {
                        Err("IAPWS-95's saturation state at this temperature cannot be computed")
                    }
                }
            } else {
                Err("")
            };
            (own.p, row_for(prop.table(), st), dev)
        } else {
            if st.phase == Phase::Wet {
                undefined.push((prop, "a wet mixture: the release states uncertainties for single-phase states (cp and w of a mixture are not defined)"));
                continue;
            }
            let value = prop.of(st);
            let dev = match &reference {
                    None => Err(""),
                    Some(Err(_)) => Err("the state lies outside IAPWS-95's range or cannot be solved with it"),
                    Some(Ok(r)) if r.phase != st.phase => Err("the state lies between the saturation lines of IAPWS-IF97 and IAPWS-95 (the two formulations give different phases)"),
                    Some(Ok(r)) => Ok(value - prop.of(r)),
                };
            (value, row_for(prop.table(), st), dev)
        };
        let Some(row) = row else {
            undefined.push((prop, "no region of the release's figure covers this state"));
            continue;
        };
        if !value.is_finite() {
            undefined.push((prop, "the property is not defined at this state"));
            continue;
        }
        let relative_expanded = if row.in_pressure {
            // delta rho / rho = kappa_T delta p = (kappa_T p) delta p / p
            row.relative * st.props.kappa_t * p
        } else {
            row.relative
        };
        let u_iapws95 = relative_expanded * value.abs() / K_STATED;
        let (if97_deviation, deviation_note) = match dev {
            Ok(d) if d.is_finite() => (Some(d), None),
            Ok(_) => (None, Some("the IAPWS-95 value is not finite")),
            Err("") => (None, None),
            Err(why) => (None, Some(why)),
        };
        let u_if97 = if97_deviation.map_or(0.0, |d| d.abs() / 3f64.sqrt());
        statements.push(Statement {
            property: prop,
            value,
            row,
            relative_expanded,
            u_iapws95,
            if97_deviation,
            deviation_note,
            u_if97,
            u: u_iapws95.hypot(u_if97),
        });
    }
    StateUncertainty {
        statements,
        undefined,
    }
}
