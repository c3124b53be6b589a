//! The degree-of-freedom diagnosis of a site network, as data: every finding (a missing
//! specification, a specification given twice or contradicting another, a stream whose pressure or
//! state is not the caller's to give, flows the equations leave free, equations that cannot
//! all hold) names its units, streams and quantity; each stream's status says who fixes its
//! flow, pressure and state; each unit lists the specifications it was given.
//!
//! Units: values inside findings are in the internal units of the balance (MPa, K, kg/s);
//! those with a dimension are [`Amount`]s, which [`Diagnosis::restate`] puts in the caller's
//! units.
//!
//! Invariant: text is rendered only by the `Display` impls here, from the data; the
//! rendering of a [`Diagnosis`] is the one-line message of the refusal (the under-specified
//! findings, then the over-specified ones, each in the order found).

use crate::units::Dim;
use std::fmt;

/// A unit named in a finding: its name and kind.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnitRef {
    /// Unit name.
    pub name: String,
    /// Unit kind as on the wire, e.g. "header".
    pub kind: &'static str,
}

impl UnitRef {
    /// A unit of `kind` named `name`.
    pub fn new(name: &str, kind: &'static str) -> UnitRef {
        UnitRef {
            name: name.to_string(),
            kind,
        }
    }
}

impl fmt::Display for UnitRef {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {}", self.kind, self.name)
    }
}

/// A quantity of a finding with its unit: internal units (MPa, kg/s, kW) until
/// [`Diagnosis::restate`] puts it in the caller's.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Amount {
    /// The value, in `unit`.
    pub value: f64,
    /// Its dimension.
    pub dim: Dim,
    /// The unit symbol of `value`.
    pub unit: &'static str,
}

impl Amount {
    /// A pressure in MPa.
    pub fn pressure(value: f64) -> Amount {
        Amount {
            value,
            dim: Dim::Pressure,
            unit: "MPa",
        }
    }
    /// A mass flow in kg/s.
    pub fn mass_flow(value: f64) -> Amount {
        Amount {
            value,
            dim: Dim::MassFlow,
            unit: "kg/s",
        }
    }
    /// A shaft power in kW.
    pub fn power(value: f64) -> Amount {
        Amount {
            value,
            dim: Dim::Power,
            unit: "kW",
        }
    }
    /// A specific enthalpy in kJ/kg.
    pub fn specific_energy(value: f64) -> Amount {
        Amount {
            value,
            dim: Dim::SpecificEnergy,
            unit: "kJ/kg",
        }
    }
}

/// At most six significant digits, trailing zeros dropped.
fn sig6(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let mag = x.abs().log10().floor() as i32;
    let decimals = (5 - mag).clamp(0, 12) as usize;
    let s = format!("{x:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

impl fmt::Display for Amount {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {}", sig6(self.value), self.unit)
    }
}

/// A stream the balance needs to run backwards.
#[derive(Debug, Clone, PartialEq)]
pub struct ReversedFlow {
    /// Stream name.
    pub stream: String,
    /// Its source unit.
    pub from: UnitRef,
    /// Its destination unit.
    pub to: UnitRef,
    /// Its flow (negative).
    pub flow: Amount,
}

/// What a stream running backwards means at a unit it joins, and what to change there.
#[derive(Debug, Clone, PartialEq)]
pub enum Reversal {
    /// A header's vent stream would run backwards: the header is short of steam.
    HeaderShort {
        /// The header.
        header: String,
        /// Its vent stream.
        vent: String,
        /// How much steam it lacks.
        by: Amount,
    },
    /// A let-down valve would pass steam back from its low-pressure side: what it feeds has
    /// a surplus.
    LetDownBackwards {
        /// The valve.
        valve: String,
        /// The unit its outlet feeds.
        feeds: UnitRef,
    },
    /// A deaerator's heating steam would be negative: the water entering is already hotter
    /// than saturation at its pressure.
    DeaeratorOverheated {
        /// The deaerator.
        deaerator: String,
        /// Its heating-steam stream.
        steam: String,
    },
    /// A desuperheater's spray would be negative: the steam is already at or below its target.
    SprayNotNeeded {
        /// The desuperheater.
        desuperheater: String,
        /// Its spray-water stream.
        water: String,
    },
    /// The make-up would be negative: more water comes back than the site loses.
    WaterSurplus {
        /// The make-up.
        makeup: String,
    },
}

impl Reversal {
    /// Stable snake-case name of the hint.
    pub fn code(&self) -> &'static str {
        match self {
            Reversal::HeaderShort { .. } => "header_short_of_steam",
            Reversal::LetDownBackwards { .. } => "let_down_backwards",
            Reversal::DeaeratorOverheated { .. } => "deaerator_overheated",
            Reversal::SprayNotNeeded { .. } => "spray_not_needed",
            Reversal::WaterSurplus { .. } => "water_surplus",
        }
    }
    /// The unit the hint is about.
    pub fn unit(&self) -> &str {
        match self {
            Reversal::HeaderShort { header: u, .. }
            | Reversal::LetDownBackwards { valve: u, .. }
            | Reversal::DeaeratorOverheated { deaerator: u, .. }
            | Reversal::SprayNotNeeded {
                desuperheater: u, ..
            }
            | Reversal::WaterSurplus { makeup: u } => u,
        }
    }
    /// The streams the hint names.
    pub fn streams(&self) -> Vec<&str> {
        match self {
            Reversal::HeaderShort { vent: s, .. }
            | Reversal::DeaeratorOverheated { steam: s, .. }
            | Reversal::SprayNotNeeded { water: s, .. } => vec![s.as_str()],
            Reversal::LetDownBackwards { .. } | Reversal::WaterSurplus { .. } => Vec::new(),
        }
    }
}

impl fmt::Display for Reversal {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Reversal::HeaderShort { header, vent, by } => {
                let by = Amount {
                    value: by.value.abs(),
                    ..*by
                };
                write!(
                    f,
                    "header {header} is short of steam by {by} (its vent stream {vent} would have to run backwards): send more steam into {header} (a let-down, an extraction) or lower the demand on it"
                )
            }
            Reversal::LetDownBackwards { valve, feeds } => write!(
                f,
                "let-down valve {valve} would have to pass steam back from its low-pressure side: {feeds}, which it feeds, has a surplus; send it to a vent or a user, or cut the steam into that header (an extraction)"
            ),
            Reversal::DeaeratorOverheated { deaerator, steam } => write!(
                f,
                "deaerator {deaerator} would need a negative heating-steam flow ({steam}): the water entering is already hotter than saturation at its pressure; lower the inflow temperatures or raise its pressure"
            ),
            Reversal::SprayNotNeeded {
                desuperheater,
                water,
            } => write!(
                f,
                "desuperheater {desuperheater} would need a negative spray flow ({water}): the steam is already at or below its target; check the target and the steam state"
            ),
            Reversal::WaterSurplus { makeup } => write!(
                f,
                "make-up {makeup} would run backwards: more water comes back than the site loses; check the return fractions and the fixed flows"
            ),
        }
    }
}

/// One specification changed alone that brings every reversed flow to zero (just above),
/// found by solving the site again with the change.
#[derive(Debug, Clone, PartialEq)]
pub struct SpecChange {
    /// Dotted path of the specification, as the `path` of `balance.sweep`
    /// (`streams.NAME.flow`, `units.NAME.demand`, ...).
    pub path: String,
    /// Its value now.
    pub now: Amount,
    /// The change (positive: raise it).
    pub by: Amount,
}

impl fmt::Display for SpecChange {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let word = if self.by.value > 0.0 {
            "raise"
        } else {
            "lower"
        };
        let by = Amount {
            value: self.by.value.abs(),
            ..self.by
        };
        write!(f, "{word} {} (now {}) by about {by}", self.path, self.now)
    }
}

/// Missing (under-specified) or too much (over-specified).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// Something the balance needs is not given.
    Under,
    /// Something is given twice or contradicts another specification (a value outside its
    /// own range is refused before the count, as out of range).
    Over,
}

/// Who owns an equation of the flow system.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Owner {
    /// A unit (its balance or one of its specifications).
    Unit(UnitRef),
    /// A stream (its fixed flow).
    Stream(String),
}

impl fmt::Display for Owner {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Owner::Unit(u) => write!(f, "{u}"),
            Owner::Stream(s) => write!(f, "stream {s}"),
        }
    }
}

/// One equation of the flow system, named by its owner and what it says.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Equation {
    /// The unit or stream it belongs to.
    pub owner: Owner,
    /// What it says, e.g. "mass balance", "fixed flow", "steam demand".
    pub what: &'static str,
    /// A specification (fixed flow, demand, power, steam flow, vent fraction) rather than a
    /// unit balance.
    pub specification: bool,
}

impl fmt::Display for Equation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} ({})", self.owner, self.what)
    }
}

/// The usual choice that would fix free flows.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum FlowHint {
    /// Give the steam flow of a turbine (a flow of one of its streams) or its power.
    TurbineFlow {
        /// Turbine name.
        unit: String,
    },
    /// Give the steam demand of a process user.
    UserDemand {
        /// User name.
        unit: String,
    },
    /// Give the steam flow of a boiler, or let a header or user downstream fix it.
    BoilerSteamFlow {
        /// Boiler name.
        unit: String,
    },
    /// A header has several outlets and no rule to share its steam among them.
    HeaderOutlets {
        /// Header name.
        unit: String,
        /// Its outlets whose flows are free.
        outlets: Vec<String>,
    },
    /// Give a deaerator's vent fraction or the flow of its vent stream.
    DeaeratorVent {
        /// Deaerator name.
        unit: String,
        /// Its vent stream.
        vent: String,
    },
    /// A vent or make-up takes any flow: fix a flow or demand elsewhere.
    Boundary {
        /// The vent or make-up.
        unit: UnitRef,
    },
}

impl FlowHint {
    /// Stable snake-case name of the hint.
    pub fn code(&self) -> &'static str {
        match self {
            FlowHint::TurbineFlow { .. } => "give_turbine_flow",
            FlowHint::UserDemand { .. } => "give_user_demand",
            FlowHint::BoilerSteamFlow { .. } => "give_boiler_steam_flow",
            FlowHint::HeaderOutlets { .. } => "share_header_outlets",
            FlowHint::DeaeratorVent { .. } => "give_deaerator_vent",
            FlowHint::Boundary { .. } => "boundary_takes_any_flow",
        }
    }
    /// The unit the hint is about.
    pub fn unit(&self) -> &str {
        match self {
            FlowHint::TurbineFlow { unit }
            | FlowHint::UserDemand { unit }
            | FlowHint::BoilerSteamFlow { unit }
            | FlowHint::HeaderOutlets { unit, .. }
            | FlowHint::DeaeratorVent { unit, .. } => unit,
            FlowHint::Boundary { unit } => &unit.name,
        }
    }
    /// The streams the hint names.
    pub fn streams(&self) -> Vec<&str> {
        match self {
            FlowHint::HeaderOutlets { outlets, .. } => outlets.iter().map(String::as_str).collect(),
            FlowHint::DeaeratorVent { vent, .. } => vec![vent.as_str()],
            FlowHint::TurbineFlow { .. }
            | FlowHint::UserDemand { .. }
            | FlowHint::BoilerSteamFlow { .. }
            | FlowHint::Boundary { .. } => Vec::new(),
        }
    }
}

impl fmt::Display for FlowHint {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            FlowHint::TurbineFlow { unit } => write!(
                f,
                "give the steam flow of turbine {unit} (the flow of one of its streams) or its power"
            ),
            FlowHint::UserDemand { unit } => write!(f, "give the steam demand of user {unit}"),
            FlowHint::BoilerSteamFlow { unit } => write!(
                f,
                "give the steam flow of boiler {unit}, or let a header or user downstream fix it"
            ),
            FlowHint::HeaderOutlets { unit, outlets } => write!(
                f,
                "header {unit} has {} outlets with no rule to share its steam ({}): give the flow of one of them, or send the surplus to a vent",
                outlets.len(),
                outlets.join(", ")
            ),
            FlowHint::DeaeratorVent { unit, vent } => write!(
                f,
                "give vent_fraction of deaerator {unit} or the flow of its vent stream {vent}"
            ),
            FlowHint::Boundary { unit } => write!(
                f,
                "{unit} takes any flow: fix a flow or demand elsewhere so that it closes a balance"
            ),
        }
    }
}

/// The usual way out of equations that cannot all hold.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ClashHint {
    /// Every flow at a header is fixed: let a vent or make-up close its balance.
    HeaderNoFreeOutlet {
        /// Header name.
        unit: String,
    },
    /// Remove one of these specifications.
    RemoveOne {
        /// The specifications in the clash.
        specifications: Vec<Equation>,
    },
    /// The site has no make-up unit to replace water lost.
    AddMakeup,
    /// A vent unit could take surplus steam.
    AddVent,
}

impl ClashHint {
    /// Stable snake-case name of the hint.
    pub fn code(&self) -> &'static str {
        match self {
            ClashHint::HeaderNoFreeOutlet { .. } => "header_has_no_free_outlet",
            ClashHint::RemoveOne { .. } => "remove_one_specification",
            ClashHint::AddMakeup => "add_makeup",
            ClashHint::AddVent => "add_vent",
        }
    }
}

impl fmt::Display for ClashHint {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ClashHint::HeaderNoFreeOutlet { unit } => write!(
                f,
                "header {unit} has no free outlet flow: let a vent or make-up close the balance"
            ),
            ClashHint::RemoveOne { specifications } => {
                write!(f, "remove one of: {}", join(specifications, ", "))
            }
            ClashHint::AddMakeup => f.write_str(
                "the site has no makeup unit: water lost at users, blowdown or vents cannot be replaced; add one",
            ),
            ClashHint::AddVent => f.write_str("a vent unit can take surplus steam"),
        }
    }
}

/// One finding of the degree-of-freedom analysis.
#[derive(Debug, Clone, PartialEq)]
pub enum Finding {
    // ---- streams ----
    /// A stream carries T, h or x although its source unit sets its state.
    StateSetBySource {
        /// The stream.
        stream: String,
        /// Its source unit.
        unit: UnitRef,
        /// How the unit sets it, e.g. "mixing at the header pressure".
        by: &'static str,
    },
    /// A stream carries a pressure other than the one its source unit sets.
    PressureSetBySource {
        /// The stream.
        stream: String,
        /// Its source unit.
        unit: UnitRef,
        /// The unit's pressure.
        p: Amount,
    },
    /// Nothing fixes a stream's pressure.
    PressureNotFixed {
        /// The stream.
        stream: String,
        /// Its source unit.
        from: UnitRef,
        /// Its destination unit.
        to: UnitRef,
    },
    /// A stream carries more than one of T, h and x.
    StateGivenTwice {
        /// The stream.
        stream: String,
        /// How many of T, h and x it carries.
        count: usize,
    },
    /// A pump's discharge pressure is not above its suction pressure.
    PumpDoesNotRaise {
        /// The pump.
        unit: UnitRef,
        /// Discharge pressure.
        discharge: Amount,
        /// Suction pressure.
        suction: Amount,
    },
    /// A desuperheater's outlet is at or above the critical pressure, where steam has no
    /// superheat.
    DesuperheaterAboveCritical {
        /// The desuperheater.
        unit: UnitRef,
        /// Outlet pressure.
        p: Amount,
        /// The critical pressure.
        critical: Amount,
    },
    // ---- missing specifications (under-specified) ----
    /// A boiler without a steam temperature (neither on the boiler nor on its steam stream).
    MissingSteamTemperature {
        /// The boiler.
        unit: UnitRef,
        /// Its steam stream.
        stream: String,
    },
    /// A boiler without an efficiency.
    MissingBoilerEfficiency {
        /// The boiler.
        unit: UnitRef,
    },
    /// A turbine without an efficiency and outlets without a measured state.
    MissingTurbineEfficiency {
        /// The turbine.
        unit: UnitRef,
        /// Its outlets without T, h or x.
        outlets: Vec<String>,
    },
    /// A pump without an efficiency.
    MissingPumpEfficiency {
        /// The pump.
        unit: UnitRef,
    },
    /// A desuperheater with no target (T, superheat or T on the outlet).
    MissingDesuperheaterTarget {
        /// The desuperheater.
        unit: UnitRef,
        /// Its outlet stream.
        stream: String,
    },
    /// A header, deaerator, flash vessel or condenser without its pressure.
    MissingPressure {
        /// The unit.
        unit: UnitRef,
    },
    /// An exchanger with neither outlet state given.
    MissingExchangerOutlet {
        /// The exchanger.
        unit: UnitRef,
        /// Its hot outlet.
        hot_out: String,
        /// Its cold outlet.
        cold_out: String,
    },
    /// A user without a return stream and without the temperature of its lost condensate.
    MissingLostCondensateTemperature {
        /// The user.
        unit: UnitRef,
    },
    /// A user whose return stream has no temperature (neither return_T nor T on the stream).
    MissingReturnTemperature {
        /// The user.
        unit: UnitRef,
        /// Its return stream.
        stream: String,
    },
    /// A make-up outlet without a water temperature.
    MissingMakeupTemperature {
        /// The make-up.
        unit: UnitRef,
        /// The outlet stream concerned.
        stream: String,
    },
    // ---- given twice or contradicting (over-specified) ----
    /// A boiler's steam temperature given on the boiler and on its steam stream.
    SteamTemperatureTwice {
        /// The boiler.
        unit: UnitRef,
        /// Its steam stream.
        stream: String,
    },
    /// A boiler's steam pressure given on the boiler and, differently, on its steam stream.
    SteamPressureConflict {
        /// The boiler.
        unit: UnitRef,
        /// Its steam stream.
        stream: String,
    },
    /// More than one desuperheater target.
    DesuperheaterTargetTwice {
        /// The desuperheater.
        unit: UnitRef,
        /// Its outlet stream.
        stream: String,
    },
    /// A user's demand given as demand and as the flow of its steam stream.
    DemandTwice {
        /// The user.
        unit: UnitRef,
        /// Its steam stream.
        stream: String,
    },
    /// A user's return temperature given as return_T and on its return stream.
    ReturnTemperatureTwice {
        /// The user.
        unit: UnitRef,
        /// Its return stream.
        stream: String,
    },
    /// A return fraction above zero but no return stream.
    ReturnWithoutStream {
        /// The user.
        unit: UnitRef,
        /// The return fraction given.
        return_fraction: f64,
    },
    /// A make-up water temperature given on the make-up and on its outlet stream.
    MakeupTemperatureTwice {
        /// The make-up.
        unit: UnitRef,
        /// The outlet stream.
        stream: String,
    },
    // ---- loss units (leaks, traps, lines) ----
    /// A leak or trap without the diameter of its hole.
    MissingHole {
        /// The leak or trap.
        unit: UnitRef,
        /// The field to give: "diameter" or "leak_diameter".
        quantity: &'static str,
        /// What the hole is, e.g. "the trap's orifice (maker's data)".
        what: &'static str,
    },
    /// A failed or leaking trap with no stream bringing the live steam it passes.
    MissingTrapSteam {
        /// The trap.
        unit: UnitRef,
        /// Its state: "failed_open" or "leaking".
        state: &'static str,
    },
    /// A line without its length, inner diameter or wall thickness.
    MissingLineGeometry {
        /// The line.
        unit: UnitRef,
        /// The fields to give.
        missing: Vec<&'static str>,
    },
    /// A stream's flow given though a unit fixes it (the flow through a hole, a line's drain).
    FlowSetByUnit {
        /// Stream name.
        stream: String,
        /// The unit.
        unit: UnitRef,
        /// How the unit fixes it.
        by: &'static str,
    },
    /// A leak, trap or line whose downstream pressure is not below its upstream pressure.
    NoPressureDrop {
        /// The unit.
        unit: UnitRef,
        /// Upstream pressure.
        upstream: Amount,
        /// Downstream pressure.
        downstream: Amount,
    },
    // ---- the solved flows ----
    /// The balance holds only with streams running backwards (from their destination to their
    /// source): the specifications ask for more than the sources give, or less than they must
    /// take.
    NegativeFlows {
        /// The reversed streams.
        flows: Vec<ReversedFlow>,
        /// What they mean at the units they join, each once.
        hints: Vec<Reversal>,
        /// Single specifications that would bring them all to zero (at most five).
        changes: Vec<SpecChange>,
    },
    /// A turbine outlet whose measured state no adiabatic expansion from its section's inlet
    /// gives: its enthalpy is not below the section inlet's (the section would take in work)
    /// or its entropy is below it (an isentropic efficiency above 1).
    MeasuredExpansionImpossible {
        /// The turbine.
        unit: UnitRef,
        /// The outlet stream with the measured state.
        stream: String,
        /// What was measured on it: "T", "h" or "x".
        measured: &'static str,
        /// Specific enthalpy at the section inlet.
        inlet_h: Amount,
        /// Specific enthalpy of the measured outlet.
        outlet_h: Amount,
        /// The section's isentropic efficiency the measurement means.
        efficiency: f64,
    },
    // ---- the flow equations ----
    /// The flow equations leave flows free.
    FlowsNotFixed {
        /// Number of equations missing.
        missing: usize,
        /// Streams whose flows are not fixed.
        undetermined: Vec<String>,
        /// Streams whose flows, if given, would close the system (one per missing equation).
        free: Vec<String>,
        /// The usual choices.
        hints: Vec<FlowHint>,
    },
    /// Equations (one or more specifications among them) that cannot all hold independently.
    EquationsClash {
        /// The equations.
        equations: Vec<Equation>,
        /// The usual ways out.
        hints: Vec<ClashHint>,
    },
}

impl Finding {
    /// Under- or over-specified.
    pub fn side(&self) -> Side {
        use Finding::*;
        match self {
            PressureNotFixed { .. }
            | MissingSteamTemperature { .. }
            | MissingBoilerEfficiency { .. }
            | MissingTurbineEfficiency { .. }
            | MissingPumpEfficiency { .. }
            | MissingDesuperheaterTarget { .. }
            | MissingPressure { .. }
            | MissingExchangerOutlet { .. }
            | MissingLostCondensateTemperature { .. }
            | MissingReturnTemperature { .. }
            | MissingMakeupTemperature { .. }
            | MissingHole { .. }
            | MissingTrapSteam { .. }
            | MissingLineGeometry { .. }
            | FlowsNotFixed { .. } => Side::Under,
            StateSetBySource { .. }
            | PressureSetBySource { .. }
            | StateGivenTwice { .. }
            | PumpDoesNotRaise { .. }
            | DesuperheaterAboveCritical { .. }
            | SteamTemperatureTwice { .. }
            | SteamPressureConflict { .. }
            | DesuperheaterTargetTwice { .. }
            | DemandTwice { .. }
            | ReturnTemperatureTwice { .. }
            | ReturnWithoutStream { .. }
            | MakeupTemperatureTwice { .. }
            | FlowSetByUnit { .. }
            | NoPressureDrop { .. }
            | NegativeFlows { .. }
            | MeasuredExpansionImpossible { .. }
            | EquationsClash { .. } => Side::Over,
        }
    }

    /// Stable snake-case name of the finding.
    pub fn code(&self) -> &'static str {
        use Finding::*;
        match self {
            StateSetBySource { .. } => "state_set_by_source",
            PressureSetBySource { .. } => "pressure_set_by_source",
            PressureNotFixed { .. } => "pressure_not_fixed",
            StateGivenTwice { .. } => "state_given_twice",
            PumpDoesNotRaise { .. } => "pump_does_not_raise",
            DesuperheaterAboveCritical { .. } => "desuperheater_above_critical",
            MissingSteamTemperature { .. } => "missing_steam_temperature",
            MissingBoilerEfficiency { .. } => "missing_boiler_efficiency",
            MissingTurbineEfficiency { .. } => "missing_turbine_efficiency",
            MissingPumpEfficiency { .. } => "missing_pump_efficiency",
            MissingDesuperheaterTarget { .. } => "missing_desuperheater_target",
            MissingPressure { .. } => "missing_pressure",
            MissingExchangerOutlet { .. } => "missing_exchanger_outlet",
            MissingLostCondensateTemperature { .. } => "missing_lost_condensate_temperature",
            MissingReturnTemperature { .. } => "missing_return_temperature",
            MissingMakeupTemperature { .. } => "missing_makeup_temperature",
            SteamTemperatureTwice { .. } => "steam_temperature_twice",
            SteamPressureConflict { .. } => "steam_pressure_conflict",
            DesuperheaterTargetTwice { .. } => "desuperheater_target_twice",
            DemandTwice { .. } => "demand_twice",
            ReturnTemperatureTwice { .. } => "return_temperature_twice",
            ReturnWithoutStream { .. } => "return_without_stream",
            MakeupTemperatureTwice { .. } => "makeup_temperature_twice",
            MissingHole { .. } => "missing_hole",
            MissingTrapSteam { .. } => "missing_trap_steam",
            MissingLineGeometry { .. } => "missing_line_geometry",
            FlowSetByUnit { .. } => "flow_set_by_unit",
            NoPressureDrop { .. } => "no_pressure_drop",
            NegativeFlows { .. } => "negative_flows",
            MeasuredExpansionImpossible { .. } => "measured_expansion_impossible",
            FlowsNotFixed { .. } => "flows_not_fixed",
            EquationsClash { .. } => "equations_clash",
        }
    }

    /// The specification concerned, as named on the wire (on the unit, or on a stream for
    /// "flow", "p" and "T"), if the finding is about one.
    pub fn quantity(&self) -> Option<&'static str> {
        use Finding::*;
        match self {
            DemandTwice { .. } => Some("demand"),
            StateSetBySource { .. } | StateGivenTwice { .. } => None,
            PressureSetBySource { .. }
            | PressureNotFixed { .. }
            | PumpDoesNotRaise { .. }
            | DesuperheaterAboveCritical { .. } => Some("p"),
            MissingPressure { .. } | SteamPressureConflict { .. } => Some("p"),
            MissingSteamTemperature { .. }
            | MissingDesuperheaterTarget { .. }
            | MissingExchangerOutlet { .. }
            | MissingMakeupTemperature { .. }
            | SteamTemperatureTwice { .. }
            | DesuperheaterTargetTwice { .. }
            | MakeupTemperatureTwice { .. } => Some("T"),
            MissingBoilerEfficiency { .. }
            | MissingTurbineEfficiency { .. }
            | MissingPumpEfficiency { .. } => Some("efficiency"),
            MissingLostCondensateTemperature { .. }
            | MissingReturnTemperature { .. }
            | ReturnTemperatureTwice { .. } => Some("return_T"),
            ReturnWithoutStream { .. } => Some("return_fraction"),
            MissingHole { quantity, .. } => Some(quantity),
            MissingTrapSteam { .. } => Some("steam"),
            MissingLineGeometry { missing, .. } => missing.first().copied(),
            NoPressureDrop { .. } => Some("p"),
            FlowsNotFixed { .. }
            | EquationsClash { .. }
            | FlowSetByUnit { .. }
            | NegativeFlows { .. } => Some("flow"),
            MeasuredExpansionImpossible { measured, .. } => Some(measured),
        }
    }

    /// The value concerned and its unit (internal units: "MPa", "kg/s", "" for a pure
    /// number), if the finding is about one.
    pub fn value(&self) -> Option<(f64, &'static str)> {
        use Finding::*;
        match self {
            PressureSetBySource { p: a, .. }
            | DesuperheaterAboveCritical { p: a, .. }
            | PumpDoesNotRaise { discharge: a, .. } => Some((a.value, a.unit)),
            MeasuredExpansionImpossible { efficiency, .. } => Some((*efficiency, "")),
            StateGivenTwice { count, .. } => Some((*count as f64, "")),
            ReturnWithoutStream {
                return_fraction, ..
            } => Some((*return_fraction, "")),
            NoPressureDrop { downstream, .. } => Some((downstream.value, downstream.unit)),
            NegativeFlows { flows, .. } => flows.first().map(|r| (r.flow.value, r.flow.unit)),
            MissingHole { .. }
            | MissingTrapSteam { .. }
            | MissingLineGeometry { .. }
            | FlowSetByUnit { .. } => None,
            StateSetBySource { .. }
            | PressureNotFixed { .. }
            | MissingSteamTemperature { .. }
            | MissingBoilerEfficiency { .. }
            | MissingTurbineEfficiency { .. }
            | MissingPumpEfficiency { .. }
            | MissingDesuperheaterTarget { .. }
            | MissingPressure { .. }
            | MissingExchangerOutlet { .. }
            | MissingLostCondensateTemperature { .. }
            | MissingReturnTemperature { .. }
            | MissingMakeupTemperature { .. }
            | SteamTemperatureTwice { .. }
            | SteamPressureConflict { .. }
            | DesuperheaterTargetTwice { .. }
            | DemandTwice { .. }
            | ReturnTemperatureTwice { .. }
            | MakeupTemperatureTwice { .. }
            | FlowsNotFixed { .. }
            | EquationsClash { .. } => None,
        }
    }

    /// The units the finding names.
    pub fn units(&self) -> Vec<&UnitRef> {
        use Finding::*;
        match self {
            StateSetBySource { unit, .. }
            | PressureSetBySource { unit, .. }
            | MissingSteamTemperature { unit, .. }
            | MissingBoilerEfficiency { unit }
            | MissingTurbineEfficiency { unit, .. }
            | MissingPumpEfficiency { unit }
            | MissingDesuperheaterTarget { unit, .. }
            | MissingPressure { unit }
            | MissingExchangerOutlet { unit, .. }
            | MissingLostCondensateTemperature { unit }
            | MissingReturnTemperature { unit, .. }
            | MissingMakeupTemperature { unit, .. }
            | SteamTemperatureTwice { unit, .. }
            | SteamPressureConflict { unit, .. }
            | DesuperheaterTargetTwice { unit, .. }
            | DemandTwice { unit, .. }
            | ReturnTemperatureTwice { unit, .. }
            | ReturnWithoutStream { unit, .. }
            | MakeupTemperatureTwice { unit, .. }
            | MissingHole { unit, .. }
            | MissingTrapSteam { unit, .. }
            | MissingLineGeometry { unit, .. }
            | FlowSetByUnit { unit, .. }
            | NoPressureDrop { unit, .. }
            | MeasuredExpansionImpossible { unit, .. } => vec![unit],
            NegativeFlows { flows, .. } => {
                let mut v: Vec<&UnitRef> = Vec::new();
                for r in flows {
                    for u in [&r.from, &r.to] {
                        if !v.contains(&u) {
                            v.push(u);
                        }
                    }
                }
                v
            }
            PressureNotFixed { from, to, .. } => vec![from, to],
            PumpDoesNotRaise { unit, .. } | DesuperheaterAboveCritical { unit, .. } => vec![unit],
            StateGivenTwice { .. } | FlowsNotFixed { .. } => Vec::new(),
            EquationsClash { equations, .. } => {
                let mut v: Vec<&UnitRef> = Vec::new();
                for e in equations {
                    if let Owner::Unit(u) = &e.owner {
                        if !v.contains(&u) {
                            v.push(u);
                        }
                    }
                }
                v
            }
        }
    }

    /// The streams the finding names.
    pub fn streams(&self) -> Vec<&str> {
        use Finding::*;
        match self {
            StateSetBySource { stream, .. }
            | PressureSetBySource { stream, .. }
            | PressureNotFixed { stream, .. }
            | StateGivenTwice { stream, .. }
            | MissingSteamTemperature { stream, .. }
            | MissingDesuperheaterTarget { stream, .. }
            | MissingReturnTemperature { stream, .. }
            | MissingMakeupTemperature { stream, .. }
            | SteamTemperatureTwice { stream, .. }
            | SteamPressureConflict { stream, .. }
            | DesuperheaterTargetTwice { stream, .. }
            | DemandTwice { stream, .. }
            | ReturnTemperatureTwice { stream, .. }
            | MakeupTemperatureTwice { stream, .. }
            | FlowSetByUnit { stream, .. }
            | MeasuredExpansionImpossible { stream, .. } => vec![stream.as_str()],
            NegativeFlows { flows, .. } => flows.iter().map(|r| r.stream.as_str()).collect(),
            MissingTurbineEfficiency { outlets, .. } => {
                outlets.iter().map(String::as_str).collect()
            }
            MissingExchangerOutlet {
                hot_out, cold_out, ..
            } => vec![hot_out.as_str(), cold_out.as_str()],
            FlowsNotFixed { undetermined, .. } => undetermined.iter().map(String::as_str).collect(),
            EquationsClash { equations, .. } => equations
                .iter()
                .filter_map(|e| match &e.owner {
                    Owner::Stream(s) => Some(s.as_str()),
                    Owner::Unit(_) => None,
                })
                .collect(),
            MissingBoilerEfficiency { .. }
            | MissingPumpEfficiency { .. }
            | MissingPressure { .. }
            | MissingLostCondensateTemperature { .. }
            | ReturnWithoutStream { .. }
            | PumpDoesNotRaise { .. }
            | DesuperheaterAboveCritical { .. }
            | MissingHole { .. }
            | MissingTrapSteam { .. }
            | MissingLineGeometry { .. }
            | NoPressureDrop { .. } => Vec::new(),
        }
    }
}

fn join<T: fmt::Display>(items: &[T], sep: &str) -> String {
    items
        .iter()
        .map(ToString::to_string)
        .collect::<Vec<_>>()
        .join(sep)
}

/// At most ten names, then "and N more".
fn list(names: &[String]) -> String {
    const MAX: usize = 10;
    if names.len() > MAX {
        format!("{} and {} more", names[..MAX].join(", "), names.len() - MAX)
    } else {
        names.join(", ")
    }
}

impl fmt::Display for Finding {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        use Finding::*;
        match self {
            StateSetBySource { stream, unit, by } => write!(
                f,
                "stream {stream}: its state is set by {unit} ({by}); remove its T/h/x"
            ),
            PressureSetBySource { stream, unit, p } => write!(
                f,
                "stream {stream}: its pressure is set by {unit} ({p}); remove p from the stream"
            ),
            PressureNotFixed { stream, from, to } => write!(
                f,
                "stream {stream}: its pressure is not fixed: give p on the stream or on {from} or {to}"
            ),
            StateGivenTwice { stream, count } => write!(
                f,
                "stream {stream}: give at most one of T, h, x (with p) — it has {count}"
            ),
            PumpDoesNotRaise {
                unit,
                discharge,
                suction,
            } => write!(
                f,
                "{unit}: the discharge pressure {discharge} is not above the suction pressure {suction}"
            ),
            DesuperheaterAboveCritical { unit, p, critical } => write!(
                f,
                "{unit}: the outlet pressure {p} is at or above the critical pressure {critical}, where steam has no superheat"
            ),
            MissingSteamTemperature { unit, stream } => write!(
                f,
                "{unit}: give the steam temperature T of boiler {} (or T on its steam stream {stream})",
                unit.name
            ),
            MissingBoilerEfficiency { unit } => write!(
                f,
                "{unit}: give the boiler efficiency (heat to steam over fuel heat input, from the plant's test data)"
            ),
            MissingTurbineEfficiency { unit, outlets } => write!(
                f,
                "{unit}: give its isentropic efficiency, or the measured T of outlet stream(s) {}",
                outlets.join(", ")
            ),
            MissingPumpEfficiency { unit } => write!(f, "{unit}: give its efficiency"),
            MissingDesuperheaterTarget { unit, stream } => write!(
                f,
                "{unit}: give its target temperature T or its target superheat (or T on its outlet stream {stream})"
            ),
            MissingPressure { unit } => write!(f, "{unit}: give its pressure p"),
            MissingExchangerOutlet {
                unit,
                hot_out,
                cold_out,
            } => write!(
                f,
                "{unit}: give the outlet temperature of stream {hot_out} or of stream {cold_out}"
            ),
            MissingLostCondensateTemperature { unit } => write!(
                f,
                "{unit}: give the condensate temperature return_T (for the lost condensate)"
            ),
            MissingReturnTemperature { unit, stream } => write!(
                f,
                "{unit}: give the condensate return temperature return_T (or T on stream {stream})"
            ),
            MissingMakeupTemperature { unit, .. } => {
                write!(f, "{unit}: give the make-up water temperature T")
            }
            SteamTemperatureTwice { unit, stream } => write!(
                f,
                "{unit}: the steam temperature is given both as T of the boiler and on stream {stream}; keep one"
            ),
            SteamPressureConflict { unit, stream } => write!(
                f,
                "{unit}: the steam pressure is given as p of the boiler and differently on stream {stream}; keep one"
            ),
            DesuperheaterTargetTwice { unit, stream } => write!(
                f,
                "{unit}: give only one of target T, target superheat and T on its outlet stream {stream}"
            ),
            DemandTwice { unit, stream } => write!(
                f,
                "{unit}: the steam demand is given both as demand and as the flow of stream {stream}; keep one"
            ),
            ReturnTemperatureTwice { unit, stream } => write!(
                f,
                "{unit}: the condensate temperature is given both as return_T and on stream {stream}; keep one"
            ),
            ReturnWithoutStream {
                unit,
                return_fraction,
            } => write!(
                f,
                "{unit}: return_fraction = {return_fraction} but no condensate stream leaves user {n}; add a stream from {n} or set return_fraction 0",
                n = unit.name
            ),
            MakeupTemperatureTwice { unit, stream } => write!(
                f,
                "{unit}: the water temperature is given both as T of the make-up and on stream {stream}; keep one"
            ),
            MissingHole {
                unit,
                quantity,
                what,
            } => write!(
                f,
                "{unit}: give {quantity}, the diameter of {what} (0: no hole)"
            ),
            MissingTrapSteam { unit, state } => write!(
                f,
                "{unit}: a trap {state} passes live steam: name the stream that brings it with `steam` (a stream from the header the trap drains), or set state healthy"
            ),
            MissingLineGeometry { unit, missing } => {
                write!(f, "{unit}: give its {}", missing.join(", "))
            }
            FlowSetByUnit { stream, unit, by } => write!(
                f,
                "stream {stream}: its flow is set by {unit} ({by}); remove flow from the stream"
            ),
            NoPressureDrop {
                unit,
                upstream,
                downstream,
            } => write!(
                f,
                "{unit}: the downstream pressure {downstream} is not below the upstream pressure {upstream}: nothing flows through it; check the pressures of its streams (or of the units that set them)"
            ),
            NegativeFlows {
                flows,
                hints,
                changes,
            } => {
                let list: Vec<String> = flows
                    .iter()
                    .map(|r| format!("stream {} ({} -> {}) {}", r.stream, r.from, r.to, r.flow))
                    .collect();
                write!(
                    f,
                    "the balance needs negative flows, which no stream can carry (steam and water run from a stream's source to its destination): {}; ",
                    list.join(", ")
                )?;
                for h in hints {
                    write!(f, "{h}; ")?;
                }
                if changes.is_empty() {
                    f.write_str("no single fixed flow, demand or power brings them to zero: check the specifications around these streams (a header short of steam needs a source, one with a surplus a vent or a user)")
                } else {
                    write!(
                        f,
                        "change one specification, e.g. {} (each alone; found by solving the site again with it)",
                        join(changes, ", or ")
                    )
                }
            }
            MeasuredExpansionImpossible {
                unit,
                stream,
                measured,
                inlet_h,
                outlet_h,
                efficiency,
            } => {
                write!(
                    f,
                    "{unit}: the measured {measured} of outlet stream {stream} gives h = {outlet_h}, "
                )?;
                let (why, check) = if outlet_h.value >= inlet_h.value {
                    (
                        format!("not below the {inlet_h} entering its section: the section would take in work instead of giving it"),
                        "a temperature reading high, or inlet and outlet swapped",
                    )
                } else {
                    (
                        format!("below what an isentropic expansion from the {inlet_h} entering its section reaches: an expansion cannot lose entropy"),
                        "a temperature reading low, or a quality or enthalpy too low",
                    )
                };
                write!(
                    f,
                    "{why} (an isentropic efficiency of {}, outside (0, 1]); check the measurement ({check}) or give the turbine's efficiency instead",
                    crate::error::fmt_sig(*efficiency, 4)
                )
            }
            FlowsNotFixed {
                missing,
                undetermined,
                free,
                hints,
            } => write!(
                f,
                "{missing} flow equation(s) missing: the flows of streams {} are not fixed; for example give the flow of stream(s) {}{}{}",
                list(undetermined),
                list(free),
                if hints.is_empty() { "" } else { "; usual choices: " },
                join(hints, "; ")
            ),
            EquationsClash { equations, hints } => write!(
                f,
                "these cannot all hold independently: {}; {}",
                join(equations, ", "),
                join(hints, "; ")
            ),
        }
    }
}

/// Who fixes a stream's pressure or state.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Source {
    /// Given on the stream itself.
    Stream,
    /// Set by this unit (its specification or its physics).
    Unit(String),
    /// Nothing fixes it.
    Missing,
}

/// Whether a stream's flow is fixed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FlowStatus {
    /// Given on the stream.
    Given,
    /// Fixed by the balances and the specifications.
    Fixed,
    /// Left free by the flow equations.
    Free,
    /// Not analysed: the specifications of the units were refused first.
    Unknown,
}

/// What fixes one stream.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StreamStatus {
    /// Stream name.
    pub name: String,
    /// Its flow.
    pub flow: FlowStatus,
    /// Who fixes its pressure.
    pub pressure: Source,
    /// Who fixes its state (T, h or x).
    pub state: Source,
}

/// What one unit was given.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct UnitStatus {
    /// The unit.
    pub unit: UnitRef,
    /// The specifications given on it, as named on the wire.
    pub given: Vec<&'static str>,
}

/// The degree-of-freedom diagnosis of a refused network.
#[derive(Debug, Clone, PartialEq)]
pub struct Diagnosis {
    /// Every finding (at least one): the under-specified ones, then the over-specified ones,
    /// each in the order the checks found them.
    pub findings: Vec<Finding>,
    /// Every unit, in name order.
    pub units: Vec<UnitStatus>,
    /// Every stream, in name order.
    pub streams: Vec<StreamStatus>,
}

impl Diagnosis {
    /// Puts every [`Amount`] of the findings in the caller's units: `to` gives the value and
    /// unit symbol of an internal value of a dimension.
    pub fn restate(&mut self, to: impl Fn(Dim, f64) -> (f64, &'static str)) {
        let one = |a: &mut Amount| {
            let (value, unit) = to(a.dim, a.value);
            a.value = value;
            a.unit = unit;
        };
        for f in &mut self.findings {
            match f {
                Finding::NoPressureDrop {
                    upstream,
                    downstream,
                    ..
                } => {
                    one(upstream);
                    one(downstream);
                }
                Finding::NegativeFlows {
                    flows,
                    hints,
                    changes,
                } => {
                    for r in flows {
                        one(&mut r.flow);
                    }
                    for h in hints {
                        if let Reversal::HeaderShort { by, .. } = h {
                            one(by);
                        }
                    }
                    for c in changes {
                        one(&mut c.now);
                        one(&mut c.by);
                    }
                }
                Finding::PressureSetBySource { p: a, .. } => one(a),
                Finding::PumpDoesNotRaise {
                    discharge: a,
                    suction: b,
                    ..
                }
                | Finding::DesuperheaterAboveCritical {
                    p: a, critical: b, ..
                }
                | Finding::MeasuredExpansionImpossible {
                    inlet_h: a,
                    outlet_h: b,
                    ..
                } => {
                    one(a);
                    one(b);
                }
                Finding::StateSetBySource { .. }
                | Finding::PressureNotFixed { .. }
                | Finding::StateGivenTwice { .. }
                | Finding::MissingSteamTemperature { .. }
                | Finding::MissingBoilerEfficiency { .. }
                | Finding::MissingTurbineEfficiency { .. }
                | Finding::MissingPumpEfficiency { .. }
                | Finding::MissingDesuperheaterTarget { .. }
                | Finding::MissingPressure { .. }
                | Finding::MissingExchangerOutlet { .. }
                | Finding::MissingLostCondensateTemperature { .. }
                | Finding::MissingReturnTemperature { .. }
                | Finding::MissingMakeupTemperature { .. }
                | Finding::SteamTemperatureTwice { .. }
                | Finding::SteamPressureConflict { .. }
                | Finding::DesuperheaterTargetTwice { .. }
                | Finding::DemandTwice { .. }
                | Finding::ReturnTemperatureTwice { .. }
                | Finding::ReturnWithoutStream { .. }
                | Finding::MakeupTemperatureTwice { .. }
                | Finding::MissingHole { .. }
                | Finding::MissingTrapSteam { .. }
                | Finding::MissingLineGeometry { .. }
                | Finding::FlowSetByUnit { .. }
                | Finding::FlowsNotFixed { .. }
                | Finding::EquationsClash { .. } => {}
            }
        }
    }

    /// The under-specified findings, in order.
    pub fn under(&self) -> impl Iterator<Item = &Finding> {
        self.findings.iter().filter(|f| f.side() == Side::Under)
    }
    /// The over-specified findings, in order.
    pub fn over(&self) -> impl Iterator<Item = &Finding> {
        self.findings.iter().filter(|f| f.side() == Side::Over)
    }
}

impl fmt::Display for Diagnosis {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let under: Vec<&Finding> = self.under().collect();
        let over: Vec<&Finding> = self.over().collect();
        f.write_str("site balance: ")?;
        if !under.is_empty() {
            write!(f, "under-specified: {}", join(&under, " | "))?;
        }
        if !over.is_empty() {
            if !under.is_empty() {
                f.write_str(" || ")?;
            }
            write!(f, "over-specified: {}", join(&over, " | "))?;
        }
        Ok(())
    }
}
