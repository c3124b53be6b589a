//! The one catalogue of warnings: every warning a component, the cycle, a distribution
//! calculation or the site balance gives is a [`Warning`] with a [`Code`] from [`CATALOGUE`],
//! which says what the code means, what to check and where the threshold comes from (a
//! published source, or "common practice, no source").
//!
//! A warning is for a result that is physically possible but needs the engineer's attention
//! (wet steam where steam is expected, a small pinch, a high velocity); an impossible result is
//! refused with an error instead, never warned. No warning fires on a nominal case (the README's
//! examples, the demo and the audit's leaks: `feasibility.rs::nominal_examples_give_no_warnings`).
//!
//! Units: a warning's `message` carries its values in internal units (p MPa, T K, flow kg/s,
//! ...). A warning built with [`Warning::with`] also keeps its values as [`Quantity`]s (value,
//! dimension, field name), so that the API states them in the caller's units
//! ([`Warning::message_in`]); the core stays free of the request's units.
//!
//! Invariant: [`CATALOGUE`] lists every [`Code`] exactly once, in the order of [`Code::ALL`]
//! (a test checks it), and codes are stable wire names: rename none; a code is removed only
//! when nothing can make it fire any more (issue 21: the negative-flow warnings of the site
//! balance, once it refused negative flows; issue 23: heat_flows_backwards and
//! temperature_cross_at_end, once the site balance refused an exchanger passing heat from cold
//! to hot).

pub use crate::error::{Arg, Quantity};
use crate::error::{Digits, Message};
use std::fmt;

/// The digits of a warning's values: 4 significant digits (a value written in full with up to
/// 6 keeps them, e.g. a limit of 333.15 K), up to 6 where two different values of one
/// dimension would otherwise print alike.
const DIGITS: Digits = Digits {
    least: 4,
    exact: 6,
    most: 6,
};

/// A warning: its code in the catalogue and a one-line message with the values of the case.
#[derive(Debug, Clone, PartialEq)]
pub struct Warning {
    /// The catalogue code.
    pub code: Code,
    /// One line: what was found, with its values (internal units), and what to check.
    pub message: String,
    /// The message as text and values, when built with [`Warning::with`].
    text: Message,
}

impl Warning {
    /// A warning of `code` with its message (no values to re-state).
    pub fn new(code: Code, message: impl Into<String>) -> Warning {
        let message = message.into();
        Warning {
            code,
            text: Message::from(message.as_str()),
            message,
        }
    }

    /// A warning of `code` whose message `template` is filled with `args` in order, one per
    /// `{}`: a value is stated as "value unit" (a pure number without unit), text as it is.
    /// Names given by the caller go in as [`Arg::Text`], never into the template.
    pub fn with(code: Code, template: &str, args: &[Arg]) -> Warning {
        let text = Message::with(template, args, DIGITS);
        Warning {
            code,
            message: text.to_string(),
            text,
        }
    }

    /// The values the message names (internal units), in order.
    pub fn quantities(&self) -> impl Iterator<Item = &Quantity> {
        self.text.quantities()
    }

    /// The message with every value stated as `to` gives it: (value, unit symbol) of a
    /// quantity. Values get 4 significant digits (a value written in full with up to 6 keeps
    /// them, e.g. a limit of 333.15 K), up to 6 where two different values of one dimension
    /// would otherwise print alike. A warning without values gives its message.
    pub fn message_in(&self, to: impl Fn(&Quantity) -> (f64, &'static str)) -> String {
        if !self.text.has_values() {
            return self.message.clone();
        }
        self.text.render(to, DIGITS)
    }

    /// The same warning with its message prefixed (e.g. "stage 2: ", "turbine BPT: ").
    pub fn prefixed(&self, prefix: &str) -> Warning {
        Warning {
            code: self.code,
            message: format!("{prefix}{}", self.message),
            text: self.text.prefixed(prefix),
        }
    }
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "[{}] {}", self.code.name(), self.message)
    }
}

/// One entry of the catalogue.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Entry {
    /// The code.
    pub code: Code,
    /// What the warning means.
    pub meaning: &'static str,
    /// What to check or do.
    pub check: &'static str,
    /// Where its threshold or rule comes from: a published source, or "common practice, no
    /// source" (or a physical fact, named as such).
    pub source: &'static str,
}

macro_rules! codes {
    ($($variant:ident => $name:literal,)*) => {
        /// A warning's code. Wire name: [`Code::name`].
        #[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
        pub enum Code {
            $(
                #[doc = concat!("`", $name, "`: see [`CATALOGUE`].")]
                $variant,
            )*
        }

        impl Code {
            /// Every code, in catalogue order.
            pub const ALL: &'static [Code] = &[$(Code::$variant,)*];

            /// The code's stable wire name (snake case).
            pub fn name(self) -> &'static str {
                match self {
                    $(Code::$variant => $name,)*
                }
            }
        }
    };
}

codes! {
    ExhaustMoisture => "exhaust_moisture",
    NearCritical => "near_critical",
    TurbineInletNotSuperheated => "turbine_inlet_not_superheated",
    NpshLow => "npsh_low",
    NpshStateOnly => "npsh_state_only",
    ValveFlashing => "valve_flashing",
    ValveOutletWet => "valve_outlet_wet",
    SprayWaterPressureLow => "spray_water_pressure_low",
    SmallSuperheat => "small_superheat",
    NoFlash => "no_flash",
    FlashInletSuperheated => "flash_inlet_superheated",
    InletBelowHeaderPressure => "inlet_below_header_pressure",
    WetSteam => "wet_steam",
    SmallPinch => "small_pinch",
    FeedwaterPressureLow => "feedwater_pressure_low",
    HeatingSteamPressureLow => "heating_steam_pressure_low",
    OrificeBetaHigh => "orifice_beta_high",
    FlashingLowerEstimate => "flashing_lower_estimate",
    ApproachVelocityHigh => "approach_velocity_high",
    SurfaceAboveTouchLimit => "surface_above_touch_limit",
    VelocityHigh => "velocity_high",
    TransitionalFlow => "transitional_flow",
    LineFlashing => "line_flashing",
    LineCondensate => "line_condensate",
    PressureDropHigh => "pressure_drop_high",
    MachHigh => "mach_high",
    DesuperheaterTargetSaturated => "desuperheater_target_saturated",
    CondensateNotLiquid => "condensate_not_liquid",
    UserReceivesLiquid => "user_receives_liquid",
    PumpInletNotLiquid => "pump_inlet_not_liquid",
    ExhaustVelocityHigh => "exhaust_velocity_high",
    MeasuredOutletNearSaturation => "measured_outlet_near_saturation",
    SteamVented => "steam_vented",
    LineNoFlow => "line_no_flow",
    LineDropExceedsAvailable => "line_drop_exceeds_available",
}

const NO_SOURCE: &str = "common practice, no source";

/// The catalogue: one entry per [`Code`], in the order of [`Code::ALL`].
pub const CATALOGUE: &[Entry] = &[
    Entry {
        code: Code::ExhaustMoisture,
        meaning: "the steam leaving a turbine or a turbine section holds more than about 12 % liquid",
        check: "expect blade erosion; consider reheat, a higher exhaust pressure or moisture removal",
        source: "common practice, no source (limits of 10 to 15 % are usual in the trade)",
    },
    Entry {
        code: Code::NearCritical,
        meaning: "a state lies within a few percent of the critical point (IF97 region 3), where properties change steeply",
        check: "small input changes move the answer a lot; check the inputs' accuracy and the margin to the critical point",
        source: "physical fact (IAPWS R7-97(2012): region 3 around the critical point 22.064 MPa, 647.096 K)",
    },
    Entry {
        code: Code::TurbineInletNotSuperheated,
        meaning: "the turbine inlet is wet or liquid, not superheated steam",
        check: "check the inlet state: a turbine is normally fed superheated or at least dry saturated steam",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::NpshLow,
        meaning: "the net positive suction head available is below 3 m",
        check: "compare with the pump maker's NPSH required plus a margin; raise the suction level or subcool the suction",
        source: "common practice, no source (3 m is a screening value; the maker's NPSH required governs)",
    },
    Entry {
        code: Code::NpshStateOnly,
        meaning: "the suction is saturated liquid and no suction_head was given, so the NPSH available from the state alone is zero",
        check: "give suction_head: the liquid level above the pump inlet less the suction-line losses; that is the NPSH available of a saturated suction",
        source: "physical fact (the vapour pressure of saturated liquid equals its pressure)",
    },
    Entry {
        code: Code::ValveFlashing,
        meaning: "liquid (or saturated liquid) flashes in a valve: part of it leaves as steam",
        check: "consider a flash vessel downstream and erosion-resistant trim; size the outlet line for two-phase flow",
        source: "physical fact (throttling is isenthalpic)",
    },
    Entry {
        code: Code::ValveOutletWet,
        meaning: "steam leaves a let-down valve wet: throttling saturated steam from above about 3 MPa makes it wetter",
        check: "provide drainage or a separator after the valve, or superheat the steam before letting it down",
        source: "physical fact: the saturated-vapour enthalpy has its maximum near 3 MPa (IAPWS-IF97)",
    },
    Entry {
        code: Code::SprayWaterPressureLow,
        meaning: "the spray water is at a lower pressure than the desuperheater outlet",
        check: "the water cannot enter without a pump: check the spray-water supply pressure",
        source: "physical fact",
    },
    Entry {
        code: Code::SmallSuperheat,
        meaning: "the desuperheater outlet has less than 5 K of superheat",
        check: "the spray may not evaporate fully; aim for 5 to 10 K of superheat",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::NoFlash,
        meaning: "the flash-vessel inlet is too cold to flash at the vessel pressure",
        check: "no flash steam is made: check the vessel pressure and the inlet temperature",
        source: "physical fact",
    },
    Entry {
        code: Code::FlashInletSuperheated,
        meaning: "the flash-vessel inlet is superheated at the vessel pressure: all of it leaves as vapour",
        check: "check the inlet state: a flash vessel is fed hot condensate",
        source: "physical fact",
    },
    Entry {
        code: Code::InletBelowHeaderPressure,
        meaning: "an inlet stream is at a lower pressure than the header it feeds",
        check: "it cannot flow in: check the stream and header pressures",
        source: "physical fact",
    },
    Entry {
        code: Code::WetSteam,
        meaning: "steam where steam is expected (a header, a boiler outlet) is wet",
        check: "provide drainage and traps, or check the states that feed it",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::SmallPinch,
        meaning: "the smallest temperature difference inside an exchanger is below 3 K",
        check: "a very large surface would be needed: check the outlet temperatures and the flows",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::FeedwaterPressureLow,
        meaning: "the boiler feedwater is at a lower pressure than the steam",
        check: "a feed pump is needed upstream: check the feedwater pressure",
        source: "physical fact",
    },
    Entry {
        code: Code::HeatingSteamPressureLow,
        meaning: "the deaerator's heating steam is at a lower pressure than the deaerator",
        check: "it cannot flow in: check the heating-steam supply pressure",
        source: "physical fact",
    },
    Entry {
        code: Code::OrificeBetaHigh,
        meaning: "the hole is more than 80 % of the pipe diameter",
        check: "the jet is hardly an orifice flow and the discharge coefficient of a sharp-edged hole does not hold: give your own",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::FlashingLowerEstimate,
        meaning: "a liquid or wet inlet is computed with homogeneous equilibrium flashing",
        check: "short openings pass more (up to the frozen limit, flashing \"frozen\"): treat the flow as a lower estimate",
        source: "homogeneous equilibrium model (common practice, no source)",
    },
    Entry {
        code: Code::ApproachVelocityHigh,
        meaning: "the approach velocity adds more than 5 % to the upstream pressure",
        check: "check the approach velocity (stagnation over static pressure)",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::SurfaceAboveTouchLimit,
        meaning: "a pipe surface is hotter than the touch limit",
        check: "personnel protection (insulation, guards) is needed where it can be touched; follow local codes",
        source: "common practice, no source (60 degC by default; standards relate it to contact time and material)",
    },
    Entry {
        code: Code::VelocityHigh,
        meaning: "the velocity in a line is above about 40 m/s (saturated or wet steam), 60 m/s (superheated steam) or 3 m/s (water)",
        check: "expect noise, erosion and a large pressure drop: consider a larger line",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::TransitionalFlow,
        meaning: "the flow is in laminar-turbulent transition (2300 < Re < 4000) somewhere along a line",
        check: "the friction factor there is an interpolation and uncertain",
        source: "Moody chart transition range (common practice, no source)",
    },
    Entry {
        code: Code::LineFlashing,
        meaning: "water flashes in a line: the line runs two-phase",
        check: "risk of water hammer: check the line pressure and temperature",
        source: "physical fact",
    },
    Entry {
        code: Code::LineCondensate,
        meaning: "condensate forms along a steam line",
        check: "drain it with traps at low points",
        source: "physical fact",
    },
    Entry {
        code: Code::PressureDropHigh,
        meaning: "the pressure drop of a line is above 10 % of its inlet pressure",
        check: "consider a larger line",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::MachHigh,
        meaning: "the Mach number in a steam line is above 0.3",
        check: "the flow is strongly compressible: check the outlet pressure against the choking limit",
        source: "common practice, no source (0.3 is the usual incompressibility limit)",
    },
    Entry {
        code: Code::DesuperheaterTargetSaturated,
        meaning: "a desuperheater's target is at or below saturation; the outlet is set to saturated vapour",
        check: "a desuperheater cannot make wet steam: aim for 5 to 10 K of superheat",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::CondensateNotLiquid,
        meaning: "a condensate stream is not liquid at its pressure",
        check: "check the condensate temperature and pressure",
        source: "physical fact",
    },
    Entry {
        code: Code::UserReceivesLiquid,
        meaning: "a process steam user receives liquid, not steam",
        check: "check the state of the stream that feeds it",
        source: "physical fact",
    },
    Entry {
        code: Code::PumpInletNotLiquid,
        meaning: "a pump of a site balance receives vapour or a wet mixture",
        check: "check the state of the pump's inlet stream",
        source: "physical fact",
    },
    Entry {
        code: Code::ExhaustVelocityHigh,
        meaning: "the turbine's exhaust annulus velocity is above about 300 m/s",
        check: "exhaust losses climb steeply towards choking there and only V^2/2 is modelled; check the exhaust area and the flow against the maker's exhaust-loss curve",
        source: "common practice, no source (exhaust-loss curves of large condensing turbines, from memory)",
    },
    Entry {
        code: Code::MeasuredOutletNearSaturation,
        meaning: "a measured turbine exhaust temperature is within 2 K of saturation",
        check: "within a thermocouple's uncertainty (about 1 K) the exhaust may be wet, where a temperature cannot fix the state; confirm with the exhaust quality or a heat balance",
        source: "common practice, no source",
    },
    Entry {
        code: Code::SteamVented,
        meaning: "a header of a site balance sends steam to a vent continuously: a priced loss",
        check: "a surplus in a normal balance: lower the steam sent into the header (an extraction, a let-down) or find a user for it; a vent that opens only on upsets has flow 0",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::LineNoFlow,
        meaning: "a line of a site balance carries no flow; the heat a line holding pressure loses without flow is not counted",
        check: "if the line stays under pressure, count its standing loss with pipe.flow at a small flow",
        source: NO_SOURCE,
    },
    Entry {
        code: Code::LineDropExceedsAvailable,
        meaning: "a line of a site balance needs a larger pressure drop at its flow than the pressures at its ends allow",
        check: "the pressure downstream cannot be held at this flow: a larger line, or a higher pressure upstream",
        source: "Darcy-Weisbach march of pipe.flow (physical fact)",
    },
];

impl Code {
    /// The code's catalogue entry.
    pub fn entry(self) -> &'static Entry {
        // The catalogue is in `Code::ALL` order (checked by a test), so the index is the
        // variant's position.
        let i = Code::ALL.iter().position(|c| *c == self).unwrap_or(0);
        &CATALOGUE[i]
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Dim;

    fn kelvin_to_celsius(q: &Quantity) -> (f64, &'static str) {
        match q.dim {
            // the Celsius scale: t/degC = T/K - 273.15 (ITS-90 definition)
            Dim::Temperature => (q.value - 273.15, "degC"),
            Dim::Pressure | Dim::PressureDifference => (q.value * 10.0, "bar"),
            d => (q.value, d.internal_symbol()),
        }
    }

    #[test]
    fn a_warning_with_values_states_them_in_the_units_asked() {
        let t = |v: f64| Arg::from(Quantity::new("surface_T", Dim::Temperature, v));
        let w = Warning::with(
            Code::SurfaceAboveTouchLimit,
            "stream {} reaches {}, above the touch limit {} ({} % over)",
            &[
                "main {}".into(),
                t(432.754_321),
                t(333.15),
                Quantity::new("ratio", Dim::Dimensionless, 29.9).into(),
            ],
        );
        // internal units: 4 significant digits for a computed value, a limit written in full;
        // a name holding braces is taken as it is; a pure number has no unit
        assert_eq!(
            w.message,
            "stream main {} reaches 432.8 K, above the touch limit 333.15 K (29.9 % over)"
        );
        assert_eq!(w.quantities().count(), 3);
        assert_eq!(
            w.message_in(kelvin_to_celsius),
            "stream main {} reaches 159.6 degC, above the touch limit 60 degC (29.9 % over)"
        );
        // a prefix joins the text, the values stay values
        let p = w.prefixed("line L: ");
        assert!(p
            .message
            .starts_with("line L: stream main {} reaches 432.8 K"));
        assert!(p
            .message_in(kelvin_to_celsius)
            .starts_with("line L: stream main {} reaches 159.6 degC"));
        // a warning without values is its message in any units
        let plain = Warning::new(Code::LineCondensate, "condensate forms");
        assert_eq!(plain.message_in(kelvin_to_celsius), "condensate forms");
    }

    #[test]
    fn close_values_of_one_dimension_get_the_digits_that_tell_them_apart() {
        let p = |v: f64| Arg::from(Quantity::new("p", Dim::Pressure, v));
        let w = Warning::with(
            Code::InletBelowHeaderPressure,
            "enters at {}, below {}",
            &[p(0.999_931_7), p(1.0)],
        );
        assert_eq!(w.message, "enters at 0.9999 MPa, below 1 MPa");
        // both print as 1 with 4 digits; 5 tell them apart
        let w = Warning::with(
            Code::InletBelowHeaderPressure,
            "enters at {}, below {}",
            &[p(0.999_993_1), p(0.999_996_2)],
        );
        assert_eq!(w.message, "enters at 0.99999 MPa, below 1 MPa");
    }

    #[test]
    fn the_catalogue_lists_every_code_once_in_order() {
        assert_eq!(CATALOGUE.len(), Code::ALL.len());
        for (e, c) in CATALOGUE.iter().zip(Code::ALL) {
            assert_eq!(e.code, *c, "{}", c.name());
            assert!(!e.meaning.is_empty() && !e.check.is_empty() && !e.source.is_empty());
            assert_eq!(c.entry().code, *c);
        }
        for (i, c) in Code::ALL.iter().enumerate() {
            assert!(Code::ALL[..i].iter().all(|d| d.name() != c.name()));
            assert!(c
                .name()
                .chars()
                .all(|ch| ch.is_ascii_lowercase() || ch == '_'));
        }
    }
}
