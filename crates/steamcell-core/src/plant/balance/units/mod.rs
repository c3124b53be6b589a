//! The unit kinds of the site balance, one module per kind. Each implements [`Draft`] (the
//! build step: how the unit is wired to its streams, which stream pressures and states it
//! sets, what it needs given and in which range) and [`UnitKind`] (the solve step: its outlet
//! states, its flow equations, its hints when flows are free or equations clash, its result).
//!
//! Adding a kind: its variant of [`Unit`] (with its `kind()` name and `given()` list), one
//! module here implementing both traits, and its arm in [`draft`]; the compiler then lists
//! everything else it must provide (every trait method; the API's wire conversion).
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: behaviour that depends on the kind of a unit lives in its module, reached
//! through the two traits; nothing matches on unit kinds with a fallback arm.

use super::diagnosis::{ClashHint, Finding, FlowHint, Reversal, UnitRef};
use super::dof::{Of, Row};
use super::model::{Findings, Model, Refused, Wiring};
use super::{FixedState, SankeyLink, Totals, Unit, UnitResult};
use crate::error::{Error, Result};
use crate::plant::warnings::{Arg, Code, Warning};
use crate::water::state::{self, State};
use std::fmt;

mod boiler;
mod condenser;
mod deaerator;
mod desuperheater;
mod exchanger;
mod flash;
mod header;
mod leak;
mod line;
mod makeup;
mod pump;
mod trap;
mod turbine;
mod user;
mod valve;
mod vent;

/// Pressure assumed for make-up water with no other pressure, and outside a leak or trap
/// without an outlet stream (atmospheric, 0.101325 MPa).
const P_ATM: f64 = 0.101_325;

/// Wires unit `u` of the network to its streams; a structural error (port counts, named
/// ports) or a specified value outside its range is returned at once.
pub(super) fn draft(unit: &Unit, u: usize, w: &Wiring) -> Result<Box<dyn Draft>> {
    check_ranges(unit, u, w)?;
    Ok(match unit {
        Unit::Boiler {
            p,
            t,
            efficiency,
            blowdown_fraction,
            blowdown,
            steam_flow,
        } => boiler::draft(
            w,
            u,
            boiler::Given {
                p: *p,
                t: *t,
                efficiency: *efficiency,
                blowdown_fraction: *blowdown_fraction,
                blowdown: blowdown.as_deref(),
                steam_flow: *steam_flow,
            },
        )?,
        Unit::Turbine { efficiency, power } => turbine::draft(w, u, *efficiency, *power)?,
        Unit::Valve { p } => valve::draft(w, u, *p)?,
        Unit::Desuperheater {
            water,
            p,
            t,
            superheat,
        } => desuperheater::draft(w, u, water.as_deref(), *p, *t, *superheat)?,
        Unit::Header { p } => header::draft(w, u, *p)?,
        Unit::Deaerator {
            p,
            steam,
            vent,
            vent_fraction,
        } => deaerator::draft(w, u, *p, steam.as_deref(), vent.as_deref(), *vent_fraction)?,
        Unit::Flash { p, vapour } => flash::draft(w, u, *p, vapour.as_deref())?,
        Unit::Pump { p, efficiency } => pump::draft(w, u, *p, *efficiency)?,
        Unit::Condenser { p } => condenser::draft(w, u, *p)?,
        Unit::Exchanger { hot_in, hot_out } => {
            exchanger::draft(w, u, hot_in.as_deref(), hot_out.as_deref())?
        }
        Unit::User {
            demand,
            return_fraction,
            return_t,
        } => user::draft(w, u, *demand, *return_fraction, *return_t)?,
        Unit::Vent => vent::draft(w, u)?,
        Unit::Makeup { t } => makeup::draft(w, u, *t)?,
        Unit::Leak {
            diameter,
            discharge_coefficient,
            downstream_p,
        } => leak::draft(w, u, *diameter, *discharge_coefficient, *downstream_p)?,
        Unit::Trap {
            state,
            diameter,
            leak_diameter,
            discharge_coefficient,
            steam,
            downstream_p,
        } => trap::draft(
            w,
            u,
            trap::Given {
                state: *state,
                diameter: *diameter,
                leak_diameter: *leak_diameter,
                cd: *discharge_coefficient,
                steam: steam.as_deref(),
                downstream_p: *downstream_p,
            },
        )?,
        Unit::Line(l) => line::draft(w, u, l)?,
    })
}

/// A unit wired to its streams, before its specification is checked (build step).
pub(super) trait Draft {
    /// How the unit sets the state of its outlet `s` ("mixing at the header pressure"), or
    /// None when the stream's own T, h or x is used (or needed).
    fn sets_state(&self, s: usize) -> Option<&'static str>;
    /// The pressure the unit imposes on its outlet `s`, if any.
    fn outlet_p(&self, s: usize, w: &Wiring) -> Option<f64>;
    /// Whether a stream pressure other than [`Draft::outlet_p`] is reported as a conflict
    /// (false: the unit checks its outlet pressure itself).
    fn checks_outlet_p(&self) -> bool;
    /// The pressure the unit imposes on its inlet `s`, if any.
    fn inlet_p(&self, s: usize, w: &Wiring) -> Option<f64>;
    /// The pressure of its outlet `s` when nothing else fixes it, if the unit has one.
    fn default_p(&self, s: usize, w: &Wiring) -> Option<f64>;
    /// Checks the specification (ranges, missing or doubled values) with every stream
    /// pressure resolved, and returns the unit with every value it needs.
    fn validate(&self, w: &Wiring, f: &mut Findings) -> Result<Box<dyn UnitKind>, Refused>;
}

/// A site boundary.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Boundary {
    /// Make-up: takes in whatever water is needed.
    Source,
    /// Vent: sends out whatever is left.
    Sink,
}

/// A validated unit (solve step).
pub(super) trait UnitKind: fmt::Debug + Send + Sync {
    /// Sets the unit's outlet states from its inlet states and the flows `m`; Ok(false)
    /// while an inlet state it needs is unknown. `aux` is the unit's own unknown (a flash
    /// vessel's vapour fraction), kept between passes.
    fn states(&self, at: At, m: &[f64], st: &mut [Option<State>], aux: &mut f64) -> Result<bool>;
    /// Appends the unit's flow equations at the current states: balances to `bal`,
    /// specifications to `spec`.
    fn flow_equations(
        &self,
        at: At,
        st: &[Option<State>],
        aux: f64,
        bal: &mut Vec<Row>,
        spec: &mut Vec<Row>,
    );
    /// The usual choice when the flow of its stream `s` is left free (`undetermined`: every
    /// stream whose flow is).
    fn flow_hint(&self, at: At, s: usize, undetermined: &[usize]) -> Option<FlowHint>;
    /// The usual way out when its equation `what` is among equations that clash.
    fn clash_hint(&self, at: At, what: &'static str) -> Option<ClashHint>;
    /// Completes its result (power, duty, losses, warnings), the site totals and the
    /// energy-flow links from the solved flows and states.
    fn results(&self, at: At, m: &[f64], st: &[State], out: &mut Report) -> Result<()>;
    /// The boundary it is, if any.
    fn boundary(&self) -> Option<Boundary>;
    /// What its stream `s` (an inlet or outlet) running backwards at the flows `m` means
    /// here, and what to change, if the unit has words for it (for the refusal of negative
    /// flows).
    fn reversal(&self, at: At, s: usize, m: &[f64]) -> Option<Reversal>;
    /// A finding that refuses the solved balance at this unit (a measured state no real
    /// process gives), if any.
    fn solved_finding(&self, at: At, st: &[State]) -> Option<Finding>;
}

/// Unit `u` of a model, as the solve step sees it.
#[derive(Clone, Copy)]
pub(super) struct At<'a> {
    pub model: &'a Model,
    pub u: usize,
}

impl<'a> At<'a> {
    /// Unit name.
    pub fn name(self) -> &'a str {
        &self.model.units[self.u].name
    }
    /// Inlet streams.
    pub fn ins(self) -> &'a [usize] {
        &self.model.units[self.u].ins
    }
    /// Outlet streams.
    pub fn outs(self) -> &'a [usize] {
        &self.model.units[self.u].outs
    }
    /// Stream name.
    pub fn stream(self, s: usize) -> &'a str {
        &self.model.streams[s].name
    }
    /// Stream pressure, MPa.
    pub fn p(self, s: usize) -> f64 {
        self.model.streams[s].p
    }
    /// "kind name".
    pub fn label(self) -> String {
        let u = &self.model.units[self.u];
        format!("{} {}", u.kind, u.name)
    }
    /// The unit for a diagnosis.
    pub fn unit_ref(self) -> UnitRef {
        let u = &self.model.units[self.u];
        UnitRef::new(&u.name, u.kind)
    }
    /// The boundary unit `v` is, if any.
    pub fn boundary_of(self, v: usize) -> Option<Boundary> {
        self.model.units[v].unit.boundary()
    }
    /// Prefixes an input or feasibility error with "kind name: ", and the quantity of a range
    /// error met inside the unit (a state out of the formulation's range) likewise (the API
    /// re-states the quantity after the prefix in the caller's units).
    pub fn tag(self) -> impl Fn(Error) -> Error + 'a {
        self.tag_as(String::new())
    }
    /// As [`At::tag`], with `more` after "kind name: " (e.g. "outlet stream S: ").
    pub fn tag_as(self, more: String) -> impl Fn(Error) -> Error + 'a {
        move |e| {
            let prefix = format!("{}: {more}", self.label());
            match e {
                Error::OutOfRange {
                    quantity,
                    value,
                    limit,
                    unit,
                    bound,
                    formulation,
                } if !quantity.contains(": ") => Error::OutOfRange {
                    quantity: format!("{prefix}{quantity}"),
                    value,
                    limit,
                    unit,
                    bound,
                    formulation,
                },
                other => other.prefixed(&prefix),
            }
        }
    }
    /// A balance equation of this unit.
    pub fn row(self, what: &'static str) -> Row {
        Row::new(Of::Unit(self.u), what)
    }
    /// The flow of stream `s` fixed to `value` by this unit (the flow through a hole): the
    /// solution takes it exactly.
    pub fn flow_row(self, what: &'static str, s: usize, value: f64) -> Row {
        Row::flow(Of::Unit(self.u), what, s, value)
    }
    /// A specification equation of this unit.
    pub fn spec_row(self, what: &'static str) -> Row {
        Row::spec(Of::Unit(self.u), what)
    }
    /// A specification of a value of this unit: its field `field` (an amount as `amount`
    /// makes it) is the right-hand side.
    pub fn value_row(
        self,
        what: &'static str,
        field: &'static str,
        amount: super::dof::AmountOf,
    ) -> Row {
        Row::value(Of::Unit(self.u), what, field, amount)
    }
    /// Mass in - mass out (+ `extra` terms) = 0.
    pub fn mass_balance(self, extra: &[(usize, f64)]) -> Row {
        let mut r = self.row("mass balance");
        for &i in self.ins() {
            r.add(i, 1.0);
        }
        for &o in self.outs() {
            r.add(o, -1.0);
        }
        for &(i, c) in extra {
            r.add(i, c);
        }
        r
    }
    /// Enthalpy flow in - enthalpy flow out = 0 at the current states.
    pub fn energy_balance(self, st: &[Option<State>]) -> Row {
        let mut r = self.row("energy balance");
        for &i in self.ins() {
            r.add(i, h(st, i));
        }
        for &o in self.outs() {
            r.add(o, -h(st, o));
        }
        r
    }
}

/// What a leak, trap, line or venting header loses, for the costing after every unit's
/// result (internal units).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Loss {
    /// What it is.
    pub kind: LossKind,
    /// Steam (or water) lost, kg/s.
    pub steam: f64,
    /// Heat lost, kW.
    pub heat: f64,
    /// Condensate formed, kg/s.
    pub condensate: f64,
    /// Specific enthalpy of what is lost (or of the line's inlet), kJ/kg.
    pub h: f64,
    /// Its pressure, MPa.
    pub p: f64,
    /// Whether the flow through a hole is choked.
    pub choked: Option<bool>,
    /// A line's computed pressure drop, MPa.
    pub pressure_drop: Option<f64>,
    /// A line's highest velocity, m/s.
    pub velocity: Option<f64>,
    /// A line's highest surface temperature, K.
    pub surface_t: Option<f64>,
}

/// The kinds of loss.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum LossKind {
    /// Through a leak.
    Leak,
    /// Live steam through a trap.
    Trap,
    /// Heat from a line.
    Line,
    /// Steam a header sends to a vent (a surplus): warned about, not in the loss totals.
    Vented {
        /// The vent stream.
        stream: usize,
    },
}

impl Loss {
    /// A loss of `steam` kg/s of enthalpy `h` at `p`.
    pub fn steam(kind: LossKind, steam: f64, h: f64, p: f64) -> Loss {
        Loss {
            kind,
            steam,
            heat: 0.0,
            condensate: 0.0,
            h,
            p,
            choked: None,
            pressure_drop: None,
            velocity: None,
            surface_t: None,
        }
    }
}

/// The last answer of an expensive calculation (a flow through a hole, a line march) and the
/// inputs it was computed for: the solver asks again with the same inputs while the other
/// states settle.
#[derive(Debug, Default)]
pub(super) struct Memo<T> {
    last: std::sync::Mutex<Option<([u64; 3], T)>>,
}

impl<T: Clone> Memo<T> {
    /// The answer for `key` (compared bit for bit), computed by `f` when it is new.
    pub fn get(&self, key: [f64; 3], f: impl FnOnce() -> Result<T>) -> Result<T> {
        let bits = key.map(f64::to_bits);
        if let Ok(g) = self.last.lock() {
            if let Some((k, v)) = g.as_ref() {
                if *k == bits {
                    return Ok(v.clone());
                }
            }
        }
        let v = f()?;
        if let Ok(mut g) = self.last.lock() {
            *g = Some((bits, v.clone()));
        }
        Ok(v)
    }
}

/// Checks a hole's diameter (>= 0: 0 is no hole) and discharge coefficient (0 < cd <= 1), at
/// once, naming the unit's field.
fn check_hole(w: &Wiring, u: usize, field: &str, d: Option<f64>, cd: Option<f64>) -> Result<()> {
    let q = |f: &str| format!("units.{}.{f}", w.un[u]);
    if let Some(d) = d {
        Error::check_finite(&q(field), d)?;
        if d < 0.0 {
            return Err(Error::out_of_range(
                &q(field),
                d,
                0.0,
                "m",
                crate::error::Bound::Below,
                "a hole (a diameter cannot be negative; 0 is no hole)",
            ));
        }
    }
    if let Some(cd) = cd {
        Error::check_finite(&q("discharge_coefficient"), cd)?;
        if cd <= 0.0 || cd > 1.0 {
            let (limit, bound) = if cd <= 0.0 {
                (0.0, crate::error::Bound::Below)
            } else {
                (1.0, crate::error::Bound::Above)
            };
            return Err(Error::out_of_range(
                &q("discharge_coefficient"),
                cd,
                limit,
                "1",
                bound,
                "a discharge coefficient (0 < cd <= 1)",
            ));
        }
    }
    Ok(())
}

/// Prefixes the quantity of an out-of-range or non-finite error with the unit's path
/// (`units.NAME.`), and tags the other input and feasibility errors with "kind name: ".
fn tag_field(at: At<'_>, e: Error) -> Error {
    match e {
        Error::OutOfRange {
            quantity,
            value,
            limit,
            unit,
            bound,
            formulation,
        } => Error::OutOfRange {
            quantity: format!("units.{}.{quantity}", at.name()),
            value,
            limit,
            unit,
            bound,
            formulation,
        },
        Error::NotFinite { quantity } => Error::NotFinite {
            quantity: format!("units.{}.{quantity}", at.name()),
        },
        other => at.tag()(other),
    }
}

/// What a unit's result step writes: its result, the site totals and the energy-flow links;
/// with its stream mass and enthalpy flows in and out.
pub(super) struct Report<'a> {
    pub r: &'a mut UnitResult,
    pub t: &'a mut Totals,
    pub links: &'a mut Vec<SankeyLink>,
    /// Losses for the costing.
    pub losses: &'a mut Vec<(usize, Loss)>,
    /// Mass in, kg/s.
    pub mi: f64,
    /// Enthalpy flow in, kW.
    pub ei: f64,
    /// Mass out, kg/s.
    pub mo: f64,
    /// Enthalpy flow out, kW.
    pub eo: f64,
}

impl Report<'_> {
    /// An energy-flow link that is not a stream (heat, work, losses).
    pub fn link(&mut self, source: &str, target: &str, energy: f64, mass: f64) {
        self.links.push(SankeyLink {
            source: source.into(),
            target: target.into(),
            stream: None,
            energy,
            mass,
        });
    }
    /// Adds a warning of catalogue code `code` to the unit's result.
    pub fn warn(&mut self, code: Code, w: impl Into<String>) {
        self.r.warnings.push(Warning::new(code, w));
    }
    /// Adds a warning of catalogue code `code` whose `template` is filled with `args`, one
    /// per `{}` ([`Warning::with`]: the API states the values in the caller's units).
    pub fn warn_with(&mut self, code: Code, template: &str, args: &[Arg]) {
        self.r.warnings.push(Warning::with(code, template, args));
    }
    /// Records a loss of unit `u` for the costing.
    pub fn lose(&mut self, u: usize, l: Loss) {
        self.losses.push((u, l));
    }
}

/// Moisture below which steam counts as dry saturated (1e-6: the round-off of a (p, h) state
/// of saturated vapour lies far below it; a given x = 1 has none).
const DRY: f64 = 1e-6;

/// Whether steam is wet, beyond round-off: dry saturated steam (x = 1) is not.
pub(super) fn is_wet(s: &State) -> bool {
    s.phase == state::Phase::Wet && s.x.is_some_and(|x| x < 1.0 - DRY)
}

/// Specific enthalpy of stream `i` at the current states (NaN while unknown).
pub(super) fn h(st: &[Option<State>], i: usize) -> f64 {
    st[i].map(|s| s.props.h).unwrap_or(f64::NAN)
}

/// The state at `p` with a stream's fixed value.
fn fixed_state(p: f64, f: FixedState) -> Result<State> {
    match f {
        FixedState::T(t) => crate::plant::pt(p, t),
        FixedState::H(h) => crate::plant::ph(p, h),
        // x lies in 0..1: checked when the network was built
        FixedState::X(x) => state::at_px(p, x),
    }
}

/// Adiabatic mixing of the streams in `list` whose states are known: the mixed enthalpy
/// (the plain mean when the known flows add up to about zero); None if none is known.
fn mix(list: &[usize], m: &[f64], st: &[Option<State>]) -> Option<f64> {
    let known: Vec<(f64, f64)> = list
        .iter()
        .filter_map(|&i| st[i].map(|s| (m[i], s.props.h)))
        .collect();
    if known.is_empty() {
        return None;
    }
    let mt: f64 = known.iter().map(|&(m, _)| m).sum();
    let e: f64 = known.iter().map(|&(m, h)| m * h).sum();
    if mt > 1e-12 * known.iter().map(|&(m, _)| m.abs()).sum::<f64>().max(1e-300) && mt > 0.0 {
        Some(e / mt)
    } else {
        Some(known.iter().map(|&(_, h)| h).sum::<f64>() / known.len() as f64)
    }
}

/// Checks the number of a unit's inlets or outlets.
fn count(w: &Wiring, u: usize, what: &str, list: &[usize], lo: usize, hi: usize) -> Result<()> {
    if list.len() < lo || list.len() > hi {
        let want = if lo == hi {
            format!("exactly {lo}")
        } else if hi == usize::MAX {
            format!("at least {lo}")
        } else {
            format!("{lo} to {hi}")
        };
        return Err(Error::invalid(format!(
            "{} {} has {} {what} stream(s); it needs {want}",
            w.kinds[u],
            w.un[u],
            list.len()
        )));
    }
    Ok(())
}

/// The stream of `list` named by the unit's `field` (e.g. a deaerator's `steam`).
fn find_port(
    w: &Wiring,
    u: usize,
    field: &str,
    name: Option<&str>,
    list: &[usize],
) -> Result<usize> {
    let (kind, un) = (w.kinds[u], w.un[u]);
    let names = || list.iter().map(|&i| w.sn[i]).collect::<Vec<_>>().join(", ");
    let Some(n) = name else {
        return Err(Error::invalid(format!(
            "{kind} {un}: name its {field} stream with `{field}` (one of: {})",
            names()
        )));
    };
    list.iter().copied().find(|&i| w.sn[i] == n).ok_or_else(|| {
        Error::invalid(format!(
            "{kind} {un}: `{field}` = '{n}' is not one of its streams ({})",
            names()
        ))
    })
}

/// The interval a specified value must lie in.
#[derive(Debug, Clone, Copy)]
pub(super) enum Range {
    /// Above 0 (an absolute pressure).
    Positive,
    /// 0 or more (a flow, a demand, a power, a superheat).
    NotNegative,
    /// Above 0, at most 1 (an efficiency).
    Efficiency,
    /// 0 to 1 (a fraction, a quality).
    Fraction,
    /// 0 or more, below the given limit (a blowdown or vent fraction).
    Below(f64),
}

/// Refuses a specified value outside `range` as out of range, naming it by `name` (its path,
/// `units.NAME.FIELD` or `streams.NAME.FIELD`) in the internal unit `unit`, with `what` it is
/// (the "formulation" of the message, saying its interval where the bounds do not).
pub(super) fn check_range(
    name: &str,
    value: Option<f64>,
    unit: &str,
    range: Range,
    what: &str,
) -> Result<()> {
    let Some(v) = value else {
        return Ok(());
    };
    Error::check_finite(name, v)?;
    let (low, low_open, high, high_open) = match range {
        Range::Positive => (0.0, true, f64::INFINITY, false),
        Range::NotNegative => (0.0, false, f64::INFINITY, false),
        Range::Efficiency => (0.0, true, 1.0, false),
        Range::Fraction => (0.0, false, 1.0, false),
        Range::Below(hi) => (0.0, false, hi, true),
    };
    let (limit, bound) = if v < low || (low_open && v == low) {
        (low, crate::error::Bound::Below)
    } else if v > high || (high_open && v == high) {
        (high, crate::error::Bound::Above)
    } else {
        return Ok(());
    };
    Err(Error::out_of_range(name, v, limit, unit, bound, what))
}

/// The ranges of a unit's specified values (the costing's and a line's own are checked
/// elsewhere): a user takes steam in, a turbine gives work, a boiler makes steam, pressures are
/// absolute, efficiencies lie in (0, 1], fractions in their intervals.
fn check_ranges(unit: &Unit, u: usize, w: &Wiring) -> Result<()> {
    use Range::*;
    let q = |f: &str| format!("units.{}.{f}", w.un[u]);
    let p = |v: &Option<f64>| check_range(&q("p"), *v, "MPa", Positive, PRESSURE);
    let eff = |v: &Option<f64>| check_range(&q("efficiency"), *v, "1", Efficiency, EFFICIENCY);
    match unit {
        Unit::Boiler {
            p: pr,
            efficiency,
            blowdown_fraction,
            steam_flow,
            ..
        } => {
            p(pr)?;
            eff(efficiency)?;
            check_range(
                &q("blowdown_fraction"),
                Some(*blowdown_fraction),
                "1",
                Below(0.5),
                "a blowdown fraction of the feedwater (0 <= fraction < 0.5)",
            )?;
            check_range(
                &q("steam_flow"),
                *steam_flow,
                "kg/s",
                NotNegative,
                "a boiler's steam flow (a boiler makes steam; 0: none)",
            )
        }
        Unit::Turbine { efficiency, power } => {
            eff(efficiency)?;
            check_range(
                &q("power"),
                *power,
                "kW",
                NotNegative,
                "a turbine's power (a turbine gives work; 0: idle)",
            )
        }
        Unit::Desuperheater {
            p: pr, superheat, ..
        } => {
            p(pr)?;
            check_range(
                &q("superheat"),
                *superheat,
                "K",
                NotNegative,
                "a desuperheater's target superheat (0: saturated vapour)",
            )
        }
        Unit::Deaerator {
            p: pr,
            vent_fraction,
            ..
        } => {
            p(pr)?;
            check_range(
                &q("vent_fraction"),
                *vent_fraction,
                "1",
                Below(0.5),
                "a vent fraction of the heating steam (0 <= fraction < 0.5)",
            )
        }
        Unit::Pump { p: pr, efficiency } => {
            p(pr)?;
            eff(efficiency)
        }
        Unit::User {
            demand,
            return_fraction,
            ..
        } => {
            check_range(
                &q("demand"),
                *demand,
                "kg/s",
                NotNegative,
                "a user's steam demand (a user takes steam in; 0: none)",
            )?;
            check_range(
                &q("return_fraction"),
                Some(*return_fraction),
                "1",
                Fraction,
                "a condensate return fraction (0 to 1)",
            )
        }
        Unit::Valve { p: pr }
        | Unit::Header { p: pr }
        | Unit::Flash { p: pr, .. }
        | Unit::Condenser { p: pr } => p(pr),
        Unit::Exchanger { .. }
        | Unit::Vent
        | Unit::Makeup { .. }
        | Unit::Leak { .. }
        | Unit::Trap { .. }
        | Unit::Line(_) => Ok(()),
    }
}

/// What an absolute pressure is, for its range error.
pub(super) const PRESSURE: &str = "an absolute pressure";
/// What an efficiency is, for its range error.
const EFFICIENCY: &str = "an efficiency (0 < efficiency <= 1)";
