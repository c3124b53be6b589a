//! Single components: turbine expansion and turbine trains, pumps, let-down valves,
//! desuperheaters, flash vessels, mixing headers, two-stream heat exchangers, boilers and
//! deaerators.
//!
//! Units: p MPa, T K, h kJ/kg, s kJ/(kg K), flow kg/s, power and duty kW. Specific results are
//! per kg of the component's reference stream.
//!
//! Invariant: every result carries its [`Balance`]; a test checks closure to 1e-9 for each.

use super::feasibility::{self, check_second_law, entropy_generation, entropy_scale};
use super::warnings::{Arg, Code, Quantity, Warning};
use super::{ph, ps, pt, sat_liquid, sat_vapour, Balance, MOISTURE_WARNING};
use crate::error::{Bound, Error, Result};
use crate::units::Dim;
use crate::water::state::{self, Phase, State, P_C, T_C};

/// Standard acceleration of gravity for heads, m/s2 (CGPM 1901; common practice, no source).
pub const G0: f64 = 9.80665;

// Values named in messages, stated by the API in the caller's units (by field name, else by
// dimension).
pub(crate) fn pressure(name: &'static str, v: f64) -> Arg {
    Quantity::new(name, Dim::Pressure, v).into()
}
pub(crate) fn temperature(name: &'static str, v: f64) -> Arg {
    Quantity::new(name, Dim::Temperature, v).into()
}
pub(crate) fn superheat(v: f64) -> Arg {
    Quantity::new("superheat", Dim::TemperatureDifference, v).into()
}
pub(crate) fn enthalpy(name: &'static str, v: f64) -> Arg {
    Quantity::new(name, Dim::SpecificEnergy, v).into()
}
pub(crate) fn entropy(v: f64) -> Arg {
    Quantity::new("s", Dim::SpecificEntropy, v).into()
}
pub(crate) fn mass_flow(name: &'static str, v: f64) -> Arg {
    Quantity::new(name, Dim::MassFlow, v).into()
}
pub(crate) fn power(v: f64) -> Arg {
    Quantity::new("power", Dim::Power, v).into()
}
pub(crate) fn heat(name: &'static str, v: f64) -> Arg {
    Quantity::new(name, Dim::HeatFlow, v).into()
}

/// An error of stage `i` (0-based) of a turbine train: an input or feasibility error prefixed
/// "stage N: ", a range error with its quantity under `stages[i].` (unless it names its stage
/// already), so that the API re-states either in the caller's units.
fn stage_error(i: usize, e: Error) -> Error {
    match e {
        Error::OutOfRange {
            quantity,
            value,
            limit,
            unit,
            bound,
            formulation,
        } => Error::OutOfRange {
            quantity: if quantity.starts_with("stages[") {
                quantity
            } else {
                format!("stages[{i}].{quantity}")
            },
            value,
            limit,
            unit,
            bound,
            formulation,
        },
        Error::NotFinite { quantity } if !quantity.starts_with("stages[") => Error::NotFinite {
            quantity: format!("stages[{i}].{quantity}"),
        },
        other => other.prefixed(&format!("stage {}: ", i + 1)),
    }
}

pub(crate) fn check_flow(name: &str, flow: f64) -> Result<f64> {
    Error::check_finite(name, flow)?;
    if flow < 0.0 {
        return Err(Error::out_of_range(
            name,
            flow,
            0.0,
            "kg/s",
            Bound::Below,
            "mass balance",
        ));
    }
    Ok(flow)
}

pub(crate) fn check_efficiency(name: &str, eta: f64) -> Result<f64> {
    Error::check_finite(name, eta)?;
    if eta <= 0.0 {
        return Err(Error::out_of_range(
            name,
            eta,
            0.0,
            "1",
            Bound::Below,
            "an efficiency",
        ));
    }
    if eta > 1.0 {
        return Err(Error::out_of_range(
            name,
            eta,
            1.0,
            "1",
            Bound::Above,
            "an efficiency",
        ));
    }
    Ok(eta)
}

/// Moisture (1 - x) of a state: 0 for single-phase states.
pub fn moisture(st: &State) -> f64 {
    st.x.map(|x| 1.0 - x).unwrap_or(0.0)
}

fn near_critical(st: &State) -> bool {
    (st.props.p / P_C - 1.0).abs() < 0.05 && (st.props.t / T_C - 1.0).abs() < 0.02
}

/// How a turbine's outlet is fixed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TurbineSpec {
    /// Isentropic efficiency (0, 1] of the expansion line from the turbine inlet (after the
    /// throttle valve, when there is one) to the outlet pressure; with a moisture-loss rule, the
    /// dry efficiency.
    Efficiency(f64),
    /// The measured outlet state (at the outlet pressure).
    Outlet(State),
}

/// How each efficiency of an expansion in several stages is meant (the two conventions of the
/// trade; each result names the one it used).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EfficiencyBasis {
    /// From each stage's own inlet to its own outlet (the stage efficiency; `turbine.train`'s
    /// default).
    Stage,
    /// From the inlet of the stage's section (HP, IP, LP) to the stage's outlet: every point of a
    /// section lies on one expansion line (`cycle.rankine`'s default).
    Section,
}

impl EfficiencyBasis {
    /// The name on the wire.
    pub fn name(self) -> &'static str {
        match self {
            EfficiencyBasis::Stage => "stage",
            EfficiencyBasis::Section => "section",
        }
    }
}

/// A loss between the blades and the shaft (mechanical: bearings, seals, oil pumps on the shaft)
/// or between the shaft and the generator terminals (generator).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum DriveLoss {
    /// No loss.
    #[default]
    None,
    /// An efficiency in (0, 1]: the loss is (1 - eta) times the power entering.
    Efficiency(f64),
    /// A fixed loss, kW.
    Fixed(f64),
}

/// Power from the blades to the generator terminals, kW. Each figure is the one before it less
/// its loss, computed as exactly that subtraction, so that
/// `internal_power - mechanical_loss - generator_loss == gross_power` holds to the bit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Drive {
    /// Power the steam gives the blades (flow times specific work), kW.
    pub internal_power: f64,
    /// Mechanical loss, kW.
    pub mechanical_loss: f64,
    /// Shaft power at the coupling, kW.
    pub shaft_power: f64,
    /// Generator loss, kW.
    pub generator_loss: f64,
    /// Gross electrical output at the generator terminals, kW.
    pub gross_power: f64,
}

/// Checks a drive-loss specification: an efficiency in (0, 1], a fixed loss of at least 0 kW.
/// `which` is "mechanical" or "generator".
pub fn check_drive(spec: DriveLoss, which: &str) -> Result<()> {
    match spec {
        DriveLoss::None => Ok(()),
        DriveLoss::Efficiency(e) => check_efficiency(&format!("{which}_efficiency"), e).map(|_| ()),
        DriveLoss::Fixed(l) => {
            let name = format!("{which}_loss");
            Error::check_finite(&name, l)?;
            if l < 0.0 {
                return Err(Error::out_of_range(
                    &name,
                    l,
                    0.0,
                    "kW",
                    Bound::Below,
                    "a loss (a loss cannot be negative)",
                ));
            }
            Ok(())
        }
    }
}

fn loss_of(spec: DriveLoss, power_in: f64) -> f64 {
    match spec {
        DriveLoss::None => 0.0,
        DriveLoss::Efficiency(e) => power_in * (1.0 - e),
        DriveLoss::Fixed(l) => l,
    }
}

/// Splits the internal (blade) power, kW, into shaft power and gross electrical output. Refuses
/// losses that leave no power.
pub fn drive(internal_power: f64, mechanical: DriveLoss, generator: DriveLoss) -> Result<Drive> {
    check_drive(mechanical, "mechanical")?;
    check_drive(generator, "generator")?;
    let mechanical_loss = loss_of(mechanical, internal_power);
    let shaft_power = internal_power - mechanical_loss;
    if shaft_power <= 0.0 {
        return Err(Error::infeasible_with(
            "the mechanical loss {} is not below the internal power {}: the turbine would deliver no shaft power",
            &[power(mechanical_loss), power(internal_power)],
        ));
    }
    let generator_loss = loss_of(generator, shaft_power);
    let gross_power = shaft_power - generator_loss;
    if gross_power <= 0.0 {
        return Err(Error::infeasible_with(
            "the generator loss {} is not below the shaft power {}: the generator would deliver no electrical output",
            &[power(generator_loss), power(shaft_power)],
        ));
    }
    Ok(Drive {
        internal_power,
        mechanical_loss,
        shaft_power,
        generator_loss,
        gross_power,
    })
}

/// The state after a throttle (governing) valve: isenthalpic from `inlet` to p - `dp` (MPa).
/// Without a drop (dp = 0) the inlet itself.
pub fn throttle_valve(inlet: &State, dp: f64) -> Result<State> {
    Error::check_finite("throttle_dp", dp)?;
    if dp < 0.0 {
        return Err(Error::invalid_with(
            "throttle_dp = {}: a pressure drop cannot be negative",
            &[Quantity::new("throttle_dp", Dim::PressureDifference, dp).into()],
        ));
    }
    if dp == 0.0 {
        return Ok(*inlet);
    }
    if dp >= inlet.props.p {
        return Err(Error::invalid_with(
            "throttle_dp = {} is not below the inlet pressure {}: nothing would be left to expand",
            &[
                Quantity::new("throttle_dp", Dim::PressureDifference, dp).into(),
                pressure("p", inlet.props.p),
            ],
        ));
    }
    ph(inlet.props.p - dp, inlet.props.h)
}

/// The largest Baumann factor accepted: measured and estimated factors lie between about 0.4 and
/// 2.5 (S. Senoo and A. J. White, in Advances in Steam Turbines for Modern Power Plants, 2017, as
/// quoted by the wet-steam community's history page; Baumann's own rule used 1).
pub const BAUMANN_FACTOR_MAX: f64 = 2.5;

/// Exhaust annulus velocity above which a warning is given, m/s: the exhaust loss climbs
/// steeply towards choking at about 300 to 370 m/s (exhaust-loss curves of large condensing
/// turbines; from memory, common practice).
pub const EXHAUST_VELOCITY_WARNING: f64 = 300.0;

/// Checks a Baumann factor: 0 to [`BAUMANN_FACTOR_MAX`].
pub fn check_baumann(factor: f64) -> Result<f64> {
    Error::check_finite("baumann_factor", factor)?;
    if factor < 0.0 {
        return Err(Error::out_of_range(
            "baumann_factor",
            factor,
            0.0,
            "1",
            Bound::Below,
            "the Baumann rule (moisture lowers the efficiency, never raises it)",
        ));
    }
    if factor > BAUMANN_FACTOR_MAX {
        return Err(Error::out_of_range(
            "baumann_factor",
            factor,
            BAUMANN_FACTOR_MAX,
            "1",
            Bound::Above,
            "the Baumann rule (published factors lie between about 0.4 and 2.5)",
        ));
    }
    Ok(factor)
}

/// Checks an exhaust annulus area, m2: finite and above 0.
pub fn check_area(area: f64) -> Result<f64> {
    Error::check_finite("exhaust_area", area)?;
    if area <= 0.0 {
        return Err(Error::invalid_with(
            "exhaust_area = {}: an exhaust annulus area must be above 0",
            &[Quantity::new("exhaust_area", Dim::Area, area).into()],
        ));
    }
    Ok(area)
}

/// The moisture loss of an expansion by the Baumann rule.
///
/// Rule (K. Baumann, "Recent developments in steam turbine practice", Journal of the Institution
/// of Electrical Engineers, 1912; from memory; in the form summarised by Senoo and White, 2017):
/// the efficiency of a wet expansion is the dry efficiency times (1 - alpha y_m), y_m the mean
/// moisture of the expansion, alpha the Baumann factor (1 in Baumann's rule). Here the dry part
/// of an expansion that starts superheated keeps the dry efficiency; the wet part of the dry
/// expansion line, from the pressure where it enters the two-phase region (or from a wet inlet)
/// to the outlet, does (1 - alpha (y_start + y_end) / 2) of its dry work, the mean moisture
/// being the mean of the moisture where the wet part starts and where it ends (so a factor of 0
/// gives the dry line exactly). The end moisture depends on that work; at a fixed pressure the
/// wet-state enthalpy is linear in the moisture, so the two equations are solved together in
/// closed form.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MoistureLoss {
    /// Baumann factor alpha.
    pub factor: f64,
    /// The dry efficiency given.
    pub dry_efficiency: f64,
    /// Pressure where the expansion line enters the wet region, MPa (the inlet pressure for a
    /// wet inlet; None when the expansion stays dry and no loss applies).
    pub wet_from_p: Option<f64>,
    /// Moisture where the wet part starts (0 at the saturation line, or the inlet's).
    pub start_moisture: f64,
    /// Moisture at the end of the expansion line.
    pub end_moisture: f64,
    /// Mean moisture of the wet part, (start + end) / 2.
    pub mean_moisture: f64,
    /// Efficiency of the wet part: the dry efficiency times (1 - factor times mean moisture)
    /// (its work is that fraction of the dry line's work over the same pressures).
    pub wet_efficiency: f64,
    /// Resulting efficiency from the expansion's inlet to its end.
    pub efficiency: f64,
    /// Specific work lost to moisture, kJ/kg (end enthalpy less the dry line's).
    pub work_lost: f64,
}

/// The end of an expansion line.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineEnd {
    /// End state (the expansion-line end point).
    pub state: State,
    /// The isentropic end state from the same inlet.
    pub isentropic: State,
    /// The moisture loss, when a rule was asked for.
    pub moisture: Option<MoistureLoss>,
}

/// Where the dry expansion line from `inlet` at efficiency `eta` crosses the saturated-vapour
/// line between `p2` (where it is wet) and the inlet (superheated or supercritical), MPa.
fn wet_entry_pressure(inlet: &State, p2: f64, eta: f64) -> Result<f64> {
    let f = |p: f64| -> Result<f64> {
        let iso = ps(p, inlet.props.s)?;
        let h = inlet.props.h - eta * (inlet.props.h - iso.props.h);
        Ok(h - sat_vapour(p)?.props.h)
    };
    let mut hi = inlet.props.p.min(P_C * (1.0 - 1e-9));
    if f(hi)? <= 0.0 {
        return Err(Error::infeasible_with(
            "the expansion line from {}, {} reaches the two-phase region from the liquid side near the critical point: the Baumann moisture rule is not defined there",
            &[pressure("p", inlet.props.p), temperature("T", inlet.props.t)],
        ));
    }
    let mut lo = p2;
    // Bisection in ln p: the dry line lies below the saturated-vapour line at lo, above it at hi.
    for _ in 0..200 {
        if (hi / lo).ln() < 1e-14 {
            return Ok((lo * hi).sqrt());
        }
        let mid = (lo * hi).sqrt();
        if f(mid)? > 0.0 {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Err(Error::not_converged(
        "the pressure where the expansion line enters the wet region",
        200,
    ))
}

/// The expansion line from `inlet` to `p2` (MPa) at the isentropic efficiency `eta`: with
/// `baumann` = Some(factor), the efficiency of its wet part is reduced by the Baumann rule (see
/// [`MoistureLoss`]).
pub fn expansion_line(inlet: &State, p2: f64, eta: f64, baumann: Option<f64>) -> Result<LineEnd> {
    let iso = ps(p2, inlet.props.s)?;
    let dh_s = inlet.props.h - iso.props.h;
    let h_dry = inlet.props.h - eta * dh_s;
    let dry = ph(p2, h_dry)?;
    let Some(alpha) = baumann else {
        return Ok(LineEnd {
            state: dry,
            isentropic: iso,
            moisture: None,
        });
    };
    if dry.phase != Phase::Wet {
        return Ok(LineEnd {
            state: dry,
            isentropic: iso,
            moisture: Some(MoistureLoss {
                factor: alpha,
                dry_efficiency: eta,
                wet_from_p: None,
                start_moisture: 0.0,
                end_moisture: 0.0,
                mean_moisture: 0.0,
                wet_efficiency: eta,
                efficiency: eta,
                work_lost: 0.0,
            }),
        });
    }
    // The wet part of the line starts at a wet inlet, or where the dry line crosses the
    // saturated-vapour line; its dry work is what the line does from there to p2.
    let (start_p, start_h, y_a) = if inlet.phase == Phase::Wet {
        (inlet.props.p, inlet.props.h, moisture(inlet))
    } else {
        let px = wet_entry_pressure(inlet, p2, eta)?;
        let iso_x = ps(px, inlet.props.s)?;
        (
            px,
            inlet.props.h - eta * (inlet.props.h - iso_x.props.h),
            0.0,
        )
    };
    let w_dry = start_h - h_dry;
    let (_, liq, vap) = state::saturation_p(p2)?;
    let h_fg = vap.h - liq.h;
    // Wet end: h2 = h_a - (1 - alpha (y_a + y2) / 2) w_dry and y2 = (h_g - h2) / h_fg.
    let y2 = ((vap.h - start_h + w_dry * (1.0 - alpha * y_a / 2.0)) / (h_fg + alpha * w_dry / 2.0))
        .max(0.0);
    let mean = (y_a + y2) / 2.0;
    let factor = 1.0 - alpha * mean;
    let eta_w = eta * factor;
    if factor <= 0.0 {
        return Err(Error::infeasible(format!(
            "the Baumann rule with factor {alpha} and a mean moisture of {:.1} % leaves no efficiency for the wet part of the expansion",
            100.0 * mean
        )));
    }
    let end = ph(p2, start_h - factor * w_dry)?;
    Ok(LineEnd {
        state: end,
        isentropic: iso,
        moisture: Some(MoistureLoss {
            factor: alpha,
            dry_efficiency: eta,
            wet_from_p: Some(start_p),
            start_moisture: y_a,
            end_moisture: moisture(&end),
            mean_moisture: mean,
            wet_efficiency: eta_w,
            efficiency: (inlet.props.h - end.props.h) / dh_s,
            work_lost: end.props.h - dry.props.h,
        }),
    })
}

/// The exhaust leaving loss: the kinetic energy of the steam leaving the last stage through its
/// annulus, lost to the condenser. V = flow v / area with v at the expansion-line end point
/// (ELEP, the static exhaust state), loss = V^2 / 2; the used-energy end point (UEEP) is the
/// ELEP plus the loss at the exhaust pressure (the ELEP/UEEP terms of the trade's turbine
/// performance methods; only the leaving loss is modelled: no hood loss, turn-up or choking).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LeavingLoss {
    /// Exhaust annulus area, m2.
    pub area: f64,
    /// Mass flow through the annulus, kg/s.
    pub flow: f64,
    /// Volume flow at the ELEP, m3/s.
    pub volume_flow: f64,
    /// Annulus (axial) velocity, m/s.
    pub velocity: f64,
    /// Leaving loss, kJ/kg of exhaust steam.
    pub loss: f64,
    /// Leaving loss, kW.
    pub power: f64,
    /// Expansion-line end point.
    pub expansion_line_end: State,
    /// Used-energy end point: what the condenser receives.
    pub used_energy_end: State,
}

/// The leaving loss of `flow` (kg/s) leaving the expansion-line end point `elep` through an
/// annulus of `area` (m2).
pub fn leaving_loss(elep: &State, flow: f64, area: f64) -> Result<LeavingLoss> {
    check_area(area)?;
    check_flow("exhaust flow", flow)?;
    let volume_flow = flow * elep.props.v;
    let velocity = volume_flow / area;
    let loss = velocity * velocity / 2000.0;
    let ueep = ph(elep.props.p, elep.props.h + loss)?;
    Ok(LeavingLoss {
        area,
        flow,
        volume_flow,
        velocity,
        loss,
        power: flow * loss,
        expansion_line_end: *elep,
        used_energy_end: ueep,
    })
}

/// Warning for a high exhaust annulus velocity.
fn velocity_warning(l: &LeavingLoss) -> Option<Warning> {
    if l.velocity > EXHAUST_VELOCITY_WARNING {
        let v = |x: f64| Arg::from(Quantity::new("velocity", Dim::Speed, x));
        Some(Warning::with(
            Code::ExhaustVelocityHigh,
            "exhaust annulus velocity {} is above about {}: exhaust losses climb steeply towards choking there and only V^2/2 is modelled; check the exhaust area and the flow",
            &[v(l.velocity), v(EXHAUST_VELOCITY_WARNING)],
        ))
    } else {
        None
    }
}

/// Options of a turbine beyond its efficiency: all off by default.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct TurbineOptions {
    /// Throttle (governing) valve pressure drop at the inlet, MPa (isenthalpic; 0 for none).
    pub throttle_dp: f64,
    /// Baumann moisture-loss factor; None for no moisture loss.
    pub baumann: Option<f64>,
    /// Exhaust annulus area for the leaving loss, m2; None for no leaving loss.
    pub exhaust_area: Option<f64>,
    /// Mechanical loss.
    pub mechanical: DriveLoss,
    /// Generator loss.
    pub generator: DriveLoss,
}

impl TurbineOptions {
    fn has_drive(&self) -> bool {
        self.mechanical != DriveLoss::None || self.generator != DriveLoss::None
    }
    fn has_fixed_loss(&self) -> bool {
        matches!(self.mechanical, DriveLoss::Fixed(_))
            || matches!(self.generator, DriveLoss::Fixed(_))
    }
}

/// Result of a turbine expansion.
#[derive(Debug, Clone, PartialEq)]
pub struct Expansion {
    /// Inlet state (before the throttle valve, when there is one).
    pub inlet: State,
    /// Actual outlet state (the used-energy end point when there is a leaving loss).
    pub outlet: State,
    /// Outlet of the isentropic expansion from the turbine inlet (after the throttle valve) to
    /// the same pressure.
    pub isentropic_outlet: State,
    /// Specific work h_in - h_out, kJ/kg.
    pub specific_work: f64,
    /// Isentropic specific work from the turbine inlet, kJ/kg.
    pub isentropic_work: f64,
    /// Isentropic efficiency (given or derived; with a moisture rule, the dry efficiency given).
    pub efficiency: f64,
    /// Exhaust moisture 1 - x at the expansion-line end (0 for superheated exhaust).
    pub moisture: f64,
    /// Internal power, kW, when a flow was given.
    pub power: Option<f64>,
    /// Balance (per kg/s when no flow was given).
    pub balance: Balance,
    /// Entropy generated, kW/K (per kg/s when no flow was given): m (s_out - s_in).
    pub entropy_generation: f64,
    /// Practitioner warnings.
    pub warnings: Vec<Warning>,
    /// The turbine inlet after the throttle valve (the inlet itself without a valve).
    pub turbine_inlet: State,
    /// Throttle-valve pressure drop, MPa (0 without a valve).
    pub throttle_dp: f64,
    /// Efficiency from the inlet before the throttle valve to the outlet (the valve's loss
    /// included), when there is a valve.
    pub efficiency_with_valve: Option<f64>,
    /// The moisture loss, when a rule was asked for.
    pub moisture_loss: Option<MoistureLoss>,
    /// The exhaust leaving loss, when an exhaust area was given.
    pub leaving: Option<LeavingLoss>,
    /// Internal, shaft and gross electrical power, when a flow and a drive loss were given.
    pub drive: Option<Drive>,
}

/// Expands steam through a turbine to `outlet_p` (MPa).
pub fn turbine_expand(
    inlet: &State,
    outlet_p: f64,
    spec: TurbineSpec,
    flow: Option<f64>,
) -> Result<Expansion> {
    turbine_expand_with(inlet, outlet_p, spec, flow, &TurbineOptions::default())
}

/// Refuses a measured outlet that cannot be the exhaust of the turbine inlet `ti`.
fn check_measured_outlet(ti: &State, out: &State, iso: &State) -> Result<()> {
    let p2 = out.props.p;
    if out.phase != Phase::Wet && p2 < P_C {
        let (ts, _, _) = state::saturation_p(p2)?;
        if out.props.t <= ts {
            return Err(Error::infeasible_with(
                "the measured outlet temperature {} is at or below the saturation temperature {} at outlet_p = {}: a temperature at or below saturation cannot fix a wet exhaust state (every wet state at that pressure has that temperature); give the exhaust quality x or enthalpy h instead (e.g. from a heat balance)",
                &[
                    temperature("T", out.props.t),
                    temperature("T", ts),
                    pressure("outlet_p", p2),
                ],
            ));
        }
    }
    let w = ti.props.h - out.props.h;
    if w <= 0.0 {
        let eta = w / (ti.props.h - iso.props.h);
        return Err(Error::infeasible_with(
            &format!("the measured outlet enthalpy {{}} is not below the inlet enthalpy {{}}: the turbine would do negative work ({{}}) and its efficiency would be {eta:.4}, outside (0, 1]; check the measurements (an outlet temperature reading high, or inlet and outlet swapped)"),
            &[
                enthalpy("h", out.props.h),
                enthalpy("h", ti.props.h),
                enthalpy("work", w),
            ],
        ));
    }
    Ok(())
}

/// Expands steam through a turbine to `outlet_p` (MPa) with the options of a plant turbine:
/// a throttle valve at the inlet, the Baumann moisture loss, the exhaust leaving loss and the
/// mechanical and generator losses.
pub fn turbine_expand_with(
    inlet: &State,
    outlet_p: f64,
    spec: TurbineSpec,
    flow: Option<f64>,
    opts: &TurbineOptions,
) -> Result<Expansion> {
    Error::check_finite("outlet_p", outlet_p)?;
    let ti = throttle_valve(inlet, opts.throttle_dp)?;
    if outlet_p >= ti.props.p {
        return Err(Error::out_of_range(
            "outlet_p",
            outlet_p,
            ti.props.p,
            "MPa",
            Bound::Above,
            if opts.throttle_dp > 0.0 {
                "a turbine (the outlet pressure must be below the inlet pressure after the throttle valve)"
            } else {
                "a turbine (the outlet pressure must be below the inlet pressure)"
            },
        ));
    }
    if let Some(f) = flow {
        check_flow("flow", f)?;
    }
    check_drive(opts.mechanical, "mechanical")?;
    check_drive(opts.generator, "generator")?;
    if let Some(a) = opts.baumann {
        check_baumann(a)?;
    }
    if let Some(a) = opts.exhaust_area {
        check_area(a)?;
        if flow.is_none() {
            return Err(Error::invalid(
                "exhaust_area: the leaving loss needs the exhaust flow (V = flow v / area): give the inlet flow",
            ));
        }
    }
    if flow.is_none() && opts.has_fixed_loss() {
        return Err(Error::invalid(
            "mechanical_loss and generator_loss are in kW: give the inlet flow (or give efficiencies instead)",
        ));
    }
    let line = match spec {
        TurbineSpec::Efficiency(eta) => {
            let eta = check_efficiency("efficiency", eta)?;
            (expansion_line(&ti, outlet_p, eta, opts.baumann)?, eta)
        }
        TurbineSpec::Outlet(out) => {
            if opts.baumann.is_some() {
                return Err(Error::invalid(
                    "moisture_loss predicts an expansion from an efficiency; a measured outlet already includes the moisture loss: leave moisture_loss out",
                ));
            }
            if opts.exhaust_area.is_some() {
                return Err(Error::invalid(
                    "exhaust_area applies to an expansion from an efficiency; a measured outlet is already the used-energy end point: leave exhaust_area out",
                ));
            }
            if (out.props.p - outlet_p).abs() > 1e-9 * outlet_p {
                return Err(Error::invalid_with(
                    "the measured outlet is at p = {}, not at outlet_p = {}",
                    &[pressure("p", out.props.p), pressure("outlet_p", outlet_p)],
                ));
            }
            let iso = ps(outlet_p, ti.props.s)?;
            check_measured_outlet(&ti, &out, &iso)?;
            let eta = (ti.props.h - out.props.h) / (ti.props.h - iso.props.h);
            (
                LineEnd {
                    state: out,
                    isentropic: iso,
                    moisture: None,
                },
                eta,
            )
        }
    };
    let mut ex = finish_expansion(inlet, &ti, line.0, line.1, flow, opts)?;
    if let TurbineSpec::Outlet(out) = spec {
        if let Some(sh) = superheat_of(&out) {
            if sh < MEASURED_SUPERHEAT_WARNING {
                let dt =
                    |x: f64| Arg::from(Quantity::new("superheat", Dim::TemperatureDifference, x));
                ex.warnings.push(Warning::with(
                    Code::MeasuredOutletNearSaturation,
                    "the measured exhaust is only {} above saturation: within a thermocouple's uncertainty (about {}) it may be wet, where a temperature cannot fix the state; confirm with the exhaust quality or a heat balance",
                    &[dt(sh), dt(1.0)],
                ));
            }
        }
    }
    Ok(ex)
}

/// Measured exhaust superheat below which a warning is given, K (a thermocouple's uncertainty
/// of about 1 K, with a margin; common practice, no source).
pub const MEASURED_SUPERHEAT_WARNING: f64 = 2.0;

/// The common tail of an expansion: second-law check, leaving loss, warnings, drive, balance.
fn finish_expansion(
    inlet: &State,
    ti: &State,
    line: LineEnd,
    eta: f64,
    flow: Option<f64>,
    opts: &TurbineOptions,
) -> Result<Expansion> {
    let elep = line.state;
    let iso = line.isentropic;
    let dh_s = ti.props.h - iso.props.h;
    let mut warnings = Vec::new();
    if elep.props.s < ti.props.s - 1e-9 * ti.props.s.abs().max(1.0) {
        return Err(Error::infeasible_with(
            &format!("the outlet entropy {{}} is below the inlet entropy {{}}: a measured efficiency of {eta:.4} above 1 is impossible; check the measurements"),
            &[entropy(elep.props.s), entropy(ti.props.s)],
        ));
    }
    let leaving = match (opts.exhaust_area, flow) {
        (Some(a), Some(f)) => Some(leaving_loss(&elep, f, a)?),
        _ => None,
    };
    let outlet = leaving.map(|l| l.used_energy_end).unwrap_or(elep);
    let m = moisture(&elep);
    if m > MOISTURE_WARNING {
        warnings.push(Warning::new(Code::ExhaustMoisture, format!(
            "exhaust moisture {:.1} % exceeds about 12 % (common practice): expect blade erosion; consider reheat or a higher exhaust pressure",
            100.0 * m
        )));
    }
    if elep.region.number() == 3 || near_critical(&elep) {
        warnings.push(Warning::new(Code::NearCritical,
            "the outlet lies in IF97 region 3 / near the critical point, where properties change steeply",
        ));
    }
    if inlet.phase == Phase::Wet || inlet.phase == Phase::Liquid {
        warnings.push(Warning::new(
            Code::TurbineInletNotSuperheated,
            format!(
                "the inlet is {} (not superheated steam)",
                inlet.phase.name()
            ),
        ));
    }
    if let Some(w) = leaving.as_ref().and_then(velocity_warning) {
        warnings.push(w);
    }
    let w = inlet.props.h - outlet.props.h;
    let mflow = flow.unwrap_or(1.0);
    let efficiency_with_valve = if opts.throttle_dp > 0.0 {
        let iso0 = ps(outlet.props.p, inlet.props.s)?;
        Some(w / (inlet.props.h - iso0.props.h))
    } else {
        None
    };
    let drive = match flow {
        Some(f) if opts.has_drive() => Some(drive(f * w, opts.mechanical, opts.generator)?),
        _ => None,
    };
    Ok(Expansion {
        inlet: *inlet,
        outlet,
        isentropic_outlet: iso,
        specific_work: w,
        isentropic_work: dh_s,
        efficiency: eta,
        moisture: m,
        power: flow.map(|f| f * w),
        balance: Balance {
            mass_in: mflow,
            mass_out: mflow,
            energy_in: mflow * inlet.props.h,
            energy_out: mflow * outlet.props.h + mflow * w,
        },
        entropy_generation: mflow * (outlet.props.s - inlet.props.s),
        warnings,
        turbine_inlet: *ti,
        throttle_dp: opts.throttle_dp,
        efficiency_with_valve,
        moisture_loss: line.moisture,
        leaving,
        drive,
    })
}

/// One stage of a turbine train.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StageSpec {
    /// Stage outlet pressure, MPa.
    pub outlet_p: f64,
    /// Stage isentropic efficiency (its meaning set by [`EfficiencyBasis`]).
    pub efficiency: f64,
    /// Steam extracted at the stage outlet, kg/s (0 for none).
    pub extraction: f64,
}

/// Result of one stage of a train.
#[derive(Debug, Clone, PartialEq)]
pub struct StageResult {
    /// The stage's expansion (power for the stage flow).
    pub expansion: Expansion,
    /// Flow through the stage, kg/s.
    pub flow: f64,
    /// Extraction at the stage outlet, kg/s.
    pub extraction: f64,
    /// The section the stage belongs to.
    pub section: String,
    /// The efficiency given for the stage (dry, with a moisture rule).
    pub given_efficiency: f64,
    /// Isentropic efficiency from the stage's own inlet to its expansion-line end.
    pub stage_efficiency: f64,
    /// Isentropic efficiency from the inlet of the stage's section to its expansion-line end.
    pub section_efficiency: f64,
}

/// A section (HP, IP, LP, ...) of a turbine train: consecutive stages with one name.
#[derive(Debug, Clone, PartialEq)]
pub struct SectionResult {
    /// Section name.
    pub name: String,
    /// Index of its first stage (0-based).
    pub first_stage: usize,
    /// Index of its last stage (0-based).
    pub last_stage: usize,
    /// Section inlet.
    pub inlet: State,
    /// Section outlet (the last stage's outlet).
    pub outlet: State,
    /// Section power, kW.
    pub power: f64,
    /// Isentropic efficiency from the section inlet to its expansion-line end.
    pub efficiency: f64,
}

/// Options of a turbine train: the meaning of the stage efficiencies, the section of each stage,
/// and the plant-turbine options (throttle valve at the train inlet, moisture rule for every
/// stage, exhaust area of the last stage, drive losses of the whole train).
#[derive(Debug, Clone, PartialEq)]
pub struct TrainOptions {
    /// How the stage efficiencies are meant.
    pub basis: EfficiencyBasis,
    /// The section of each stage (empty: one section "turbine").
    pub sections: Vec<String>,
    /// Throttle valve, moisture rule, exhaust area, drive losses.
    pub turbine: TurbineOptions,
}

impl Default for TrainOptions {
    fn default() -> Self {
        TrainOptions {
            basis: EfficiencyBasis::Stage,
            sections: Vec::new(),
            turbine: TurbineOptions::default(),
        }
    }
}

/// Result of a turbine train.
#[derive(Debug, Clone, PartialEq)]
pub struct Train {
    /// Stages in order.
    pub stages: Vec<StageResult>,
    /// Total internal power, kW.
    pub power: f64,
    /// Exhaust flow, kg/s.
    pub exhaust_flow: f64,
    /// Overall isentropic efficiency from the inlet (before the throttle valve) to the final
    /// exhaust.
    pub overall_efficiency: f64,
    /// Balance.
    pub balance: Balance,
    /// Entropy generated by all stages, kW/K.
    pub entropy_generation: f64,
    /// Warnings of all stages.
    pub warnings: Vec<Warning>,
    /// How the stage efficiencies were meant.
    pub basis: EfficiencyBasis,
    /// The sections, in order.
    pub sections: Vec<SectionResult>,
    /// The turbine inlet after the throttle valve.
    pub turbine_inlet: State,
    /// Throttle-valve pressure drop, MPa.
    pub throttle_dp: f64,
    /// The leaving loss of the last stage, when an exhaust area was given.
    pub leaving: Option<LeavingLoss>,
    /// Internal, shaft and gross electrical power, when a drive loss was given.
    pub drive: Option<Drive>,
}

/// Expands through stages in series with extractions.
pub fn turbine_train(inlet: &State, flow: f64, stages: &[StageSpec]) -> Result<Train> {
    turbine_train_with(inlet, flow, stages, &TrainOptions::default())
}

/// Expands through stages in series with extractions, with sections, an efficiency basis and
/// the plant-turbine options.
pub fn turbine_train_with(
    inlet: &State,
    flow: f64,
    stages: &[StageSpec],
    opts: &TrainOptions,
) -> Result<Train> {
    check_flow("flow", flow)?;
    if stages.is_empty() {
        return Err(Error::invalid("a turbine train needs at least one stage"));
    }
    if !opts.sections.is_empty() && opts.sections.len() != stages.len() {
        return Err(Error::invalid(format!(
            "give a section for every stage or for none ({} sections for {} stages)",
            opts.sections.len(),
            stages.len()
        )));
    }
    let section_of = |i: usize| -> &str {
        opts.sections
            .get(i)
            .map(String::as_str)
            .unwrap_or("turbine")
    };
    for i in 0..stages.len() {
        let name = section_of(i);
        if name.trim().is_empty() {
            return Err(Error::invalid(format!("stages[{i}].section is empty")));
        }
        if i > 0 && name != section_of(i - 1) && (0..i - 1).any(|k| section_of(k) == name) {
            return Err(Error::invalid(format!(
                "stages[{i}].section = '{name}': the stages of a section must follow one another"
            )));
        }
    }
    let t = &opts.turbine;
    check_drive(t.mechanical, "mechanical")?;
    check_drive(t.generator, "generator")?;
    if let Some(a) = t.baumann {
        check_baumann(a)?;
    }
    if let Some(a) = t.exhaust_area {
        check_area(a)?;
    }
    let ti = throttle_valve(inlet, t.throttle_dp)?;
    let mut st = ti;
    let mut m = flow;
    let mut out: Vec<StageResult> = Vec::new();
    let mut power = 0.0;
    let mut energy_out = 0.0;
    let mut warnings = Vec::new();
    let mut sec_inlet = ti;
    let n = stages.len();
    for (i, spec) in stages.iter().enumerate() {
        check_flow(&format!("stages[{i}].extraction"), spec.extraction)?;
        if i > 0 && section_of(i) != section_of(i - 1) {
            sec_inlet = st;
        }
        let stage_opts = TurbineOptions {
            throttle_dp: 0.0,
            baumann: t.baumann,
            exhaust_area: if i + 1 == n { t.exhaust_area } else { None },
            mechanical: DriveLoss::None,
            generator: DriveLoss::None,
        };
        let stage_err = |e: Error| stage_error(i, e);
        let ex = match opts.basis {
            EfficiencyBasis::Stage => turbine_expand_with(
                &st,
                spec.outlet_p,
                TurbineSpec::Efficiency(spec.efficiency),
                Some(m),
                &stage_opts,
            )
            .map_err(stage_err)?,
            EfficiencyBasis::Section => {
                section_stage(&st, &sec_inlet, spec, i, m, &stage_opts).map_err(stage_err)?
            }
        };
        power += ex.power.unwrap_or(0.0);
        if spec.extraction > m {
            return Err(Error::infeasible_with(
                &format!(
                    "stage {}: extraction {{}} exceeds the stage flow {{}}",
                    i + 1
                ),
                &[
                    mass_flow("extraction", spec.extraction),
                    mass_flow("flow", m),
                ],
            ));
        }
        energy_out += spec.extraction * ex.outlet.props.h;
        for w in &ex.warnings {
            warnings.push(w.prefixed(&format!("stage {}: ", i + 1)));
        }
        let elep = ex
            .leaving
            .map(|l| l.expansion_line_end)
            .unwrap_or(ex.outlet);
        let own = |from: &State, given: Option<f64>| -> Result<f64> {
            match given {
                Some(g) => Ok(g),
                None => {
                    let iso = ps(elep.props.p, from.props.s)?;
                    Ok((from.props.h - elep.props.h) / (from.props.h - iso.props.h))
                }
            }
        };
        let plain = t.baumann.is_none();
        let stage_efficiency = own(
            &st,
            (plain && opts.basis == EfficiencyBasis::Stage).then_some(spec.efficiency),
        )?;
        let section_efficiency = own(
            &sec_inlet,
            (plain && opts.basis == EfficiencyBasis::Section).then_some(spec.efficiency),
        )?;
        st = ex.outlet;
        let stage_flow = m;
        m -= spec.extraction;
        out.push(StageResult {
            expansion: ex,
            flow: stage_flow,
            extraction: spec.extraction,
            section: section_of(i).to_string(),
            given_efficiency: spec.efficiency,
            stage_efficiency,
            section_efficiency,
        });
    }
    energy_out += m * st.props.h + power;
    let iso = ps(st.props.p, inlet.props.s)?;
    let overall = (inlet.props.h - st.props.h) / (inlet.props.h - iso.props.h);
    let mut sections: Vec<SectionResult> = Vec::new();
    for (i, s) in out.iter().enumerate() {
        match sections.last_mut() {
            Some(sec) if sec.name == s.section => {
                sec.last_stage = i;
                sec.outlet = s.expansion.outlet;
                sec.power += s.expansion.power.unwrap_or(0.0);
                sec.efficiency = s.section_efficiency;
            }
            _ => sections.push(SectionResult {
                name: s.section.clone(),
                first_stage: i,
                last_stage: i,
                inlet: s.expansion.inlet,
                outlet: s.expansion.outlet,
                power: s.expansion.power.unwrap_or(0.0),
                efficiency: s.section_efficiency,
            }),
        }
    }
    let leaving = out.last().and_then(|s| s.expansion.leaving);
    let drive = if t.has_drive() {
        Some(drive(power, t.mechanical, t.generator)?)
    } else {
        None
    };
    let entropy_generation = out.iter().map(|s| s.expansion.entropy_generation).sum();
    Ok(Train {
        entropy_generation,
        stages: out,
        power,
        exhaust_flow: m,
        overall_efficiency: overall,
        balance: Balance {
            mass_in: flow,
            mass_out: m + stages.iter().map(|s| s.extraction).sum::<f64>(),
            energy_in: flow * inlet.props.h,
            energy_out,
        },
        warnings,
        basis: opts.basis,
        sections,
        turbine_inlet: ti,
        throttle_dp: t.throttle_dp,
        leaving,
        drive,
    })
}

/// One stage under the section basis: its outlet lies on the expansion line from the section's
/// inlet at the stage's (section) efficiency.
fn section_stage(
    st: &State,
    sec_inlet: &State,
    spec: &StageSpec,
    i: usize,
    flow: f64,
    opts: &TurbineOptions,
) -> Result<Expansion> {
    Error::check_finite("outlet_p", spec.outlet_p)?;
    if spec.outlet_p >= st.props.p {
        return Err(Error::out_of_range(
            "outlet_p",
            spec.outlet_p,
            st.props.p,
            "MPa",
            Bound::Above,
            "a turbine (the outlet pressure must be below the inlet pressure)",
        ));
    }
    let eta = check_efficiency(&format!("stages[{i}].efficiency"), spec.efficiency)?;
    let line = expansion_line(sec_inlet, spec.outlet_p, eta, opts.baumann)?;
    let iso = ps(spec.outlet_p, st.props.s)?;
    let w = st.props.h - line.state.props.h;
    let eta_stage = w / (st.props.h - iso.props.h);
    if !(eta_stage > 0.0 && eta_stage <= 1.0 + 1e-12) {
        return Err(Error::infeasible(format!(
            "with efficiencies from the section inlet, this stage's own efficiency would be {eta_stage:.4}, outside (0, 1]: its efficiency from the section inlet ({eta}) does not fit the stage before it"
        )));
    }
    finish_expansion(
        st,
        st,
        LineEnd {
            state: line.state,
            isentropic: iso,
            moisture: line.moisture,
        },
        eta_stage,
        Some(flow),
        opts,
    )
}

/// How a pump efficiency is meant.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PumpEfficiencyKind {
    /// Isentropic: w = (h(p2, s1) - h1) / eta.
    Isentropic,
    /// Hydraulic (incompressible): w = v1 (p2 - p1) / eta.
    Hydraulic,
}

/// Result of a pump.
#[derive(Debug, Clone, PartialEq)]
pub struct PumpResult {
    /// Inlet state.
    pub inlet: State,
    /// Outlet state.
    pub outlet: State,
    /// Outlet of the isentropic compression.
    pub isentropic_outlet: State,
    /// Specific work added, kJ/kg.
    pub specific_work: f64,
    /// Power, kW, when a flow is given.
    pub power: Option<f64>,
    /// Efficiency used.
    pub efficiency: f64,
    /// Differential head, m of the inlet liquid.
    pub head: f64,
    /// Net positive suction head available, m: (p1 - psat(T1)) / (rho1 g) plus the suction
    /// head when one is given (None above the critical temperature).
    pub npsh_available: Option<f64>,
    /// Balance.
    pub balance: Balance,
    /// Entropy generated, kW/K (per kg/s when no flow was given): m (s_out - s_in).
    pub entropy_generation: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// NPSH available below which a warning is given, m (a screening value; common practice, no
/// source: the pump maker's NPSH required plus a margin governs).
pub const NPSH_WARNING: f64 = 3.0;

/// Raises liquid to `outlet_p` (MPa), with the inlet state taken at the pump inlet (no suction
/// head): see [`pump_raise_from`].
pub fn pump_raise(
    inlet: &State,
    outlet_p: f64,
    efficiency: f64,
    kind: PumpEfficiencyKind,
    flow: Option<f64>,
) -> Result<PumpResult> {
    pump_raise_from(inlet, outlet_p, efficiency, kind, flow, None)
}

/// Raises liquid to `outlet_p` (MPa). `suction_head` (m of liquid) is the static height of the
/// suction vessel's liquid surface above the pump inlet less the suction-line losses, when the
/// inlet state is the vessel's (e.g. saturated liquid in a deaerator storage tank); the NPSH
/// available is then (p1 - psat(T1)) / (rho1 g) + suction_head (the usual definition of pump
/// texts; common practice, from memory). Without it the NPSH available is the inlet state's
/// own, and a saturated suction gets 0 m and a warning that asks for the suction head.
pub fn pump_raise_from(
    inlet: &State,
    outlet_p: f64,
    efficiency: f64,
    kind: PumpEfficiencyKind,
    flow: Option<f64>,
    suction_head: Option<f64>,
) -> Result<PumpResult> {
    Error::check_finite("outlet_p", outlet_p)?;
    if let Some(z) = suction_head {
        Error::check_finite("suction_head", z)?;
    }
    let eta = check_efficiency("efficiency", efficiency)?;
    if outlet_p <= inlet.props.p {
        return Err(Error::out_of_range(
            "outlet_p",
            outlet_p,
            inlet.props.p,
            "MPa",
            Bound::Below,
            "a pump (the outlet pressure must be above the inlet pressure)",
        ));
    }
    if let Some(f) = flow {
        check_flow("flow", f)?;
    }
    if inlet.phase != Phase::Liquid && !(inlet.phase == Phase::Wet && inlet.x == Some(0.0)) {
        return Err(Error::invalid(format!(
            "a pump needs liquid at its inlet; the inlet is {}",
            inlet.phase.name()
        )));
    }
    let iso = ps(outlet_p, inlet.props.s)?;
    let w = match kind {
        PumpEfficiencyKind::Isentropic => (iso.props.h - inlet.props.h) / eta,
        PumpEfficiencyKind::Hydraulic => inlet.props.v * (outlet_p - inlet.props.p) * 1e3 / eta,
    };
    let outlet = ph(outlet_p, inlet.props.h + w)?;
    let rho = inlet.props.rho;
    let head = (outlet_p - inlet.props.p) * 1e6 / (rho * G0);
    let mut warnings = Vec::new();
    let npsh = if inlet.props.t < T_C {
        let (psat, _, _) = state::saturation_t(inlet.props.t)?;
        // A saturated suction (x = 0, or liquid at its own saturation pressure to round-off)
        // has no head of its own: exactly 0 m, not a rounding residue.
        let saturated = inlet.x == Some(0.0) || (inlet.props.p - psat).abs() <= 1e-9 * psat;
        let own = if saturated {
            0.0
        } else {
            (inlet.props.p - psat) * 1e6 / (rho * G0)
        };
        let n = own + suction_head.unwrap_or(0.0);
        if saturated && suction_head.is_none() {
            warnings.push(Warning::new(
                Code::NpshStateOnly,
                "the suction is saturated liquid, so its NPSH available from the state alone is 0 m: give suction_head (the liquid level above the pump inlet less the suction-line losses) for the NPSH available of the installation, and compare it with the pump maker's NPSH required plus a margin",
            ));
        } else if n < NPSH_WARNING {
            warnings.push(Warning::with(
                Code::NpshLow,
                "NPSH available is only {}: compare with the pump maker's NPSH required plus a margin",
                &[Quantity::new("npsh_available", Dim::Length, n).into()],
            ));
        }
        Some(n)
    } else {
        None
    };
    let m = flow.unwrap_or(1.0);
    let s_gen = check_second_law(
        "the pump",
        m * (outlet.props.s - inlet.props.s),
        entropy_scale(&[(m, inlet)], &[(m, &outlet)]),
        "its work is less than the isentropic work; check the efficiency",
    )?;
    Ok(PumpResult {
        entropy_generation: s_gen,
        inlet: *inlet,
        outlet,
        isentropic_outlet: iso,
        specific_work: w,
        power: flow.map(|f| f * w),
        efficiency: eta,
        head,
        npsh_available: npsh,
        balance: Balance {
            mass_in: m,
            mass_out: m,
            energy_in: m * inlet.props.h + m * w,
            energy_out: m * outlet.props.h,
        },
        warnings,
    })
}

/// Result of a throttling valve.
#[derive(Debug, Clone, PartialEq)]
pub struct ValveResult {
    /// Inlet state.
    pub inlet: State,
    /// Outlet state (same enthalpy).
    pub outlet: State,
    /// Superheat after the valve, K (None when the outlet is wet or liquid).
    pub superheat: Option<f64>,
    /// Temperature drop across the valve, K.
    pub temperature_drop: f64,
    /// Balance.
    pub balance: Balance,
    /// Entropy generated, kW/K (per kg/s when no flow was given): m (s_out - s_in).
    pub entropy_generation: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// Superheat of a vapour state, K.
pub fn superheat_of(st: &State) -> Option<f64> {
    if st.phase == Phase::Vapour && st.props.p < P_C {
        state::saturation_p(st.props.p)
            .ok()
            .map(|(ts, _, _)| st.props.t - ts)
    } else {
        None
    }
}

/// Isenthalpic let-down to `outlet_p` (MPa).
pub fn valve_throttle(inlet: &State, outlet_p: f64, flow: Option<f64>) -> Result<ValveResult> {
    Error::check_finite("outlet_p", outlet_p)?;
    if outlet_p > inlet.props.p {
        return Err(Error::out_of_range(
            "outlet_p",
            outlet_p,
            inlet.props.p,
            "MPa",
            Bound::Above,
            "a let-down valve (flow runs from high to low pressure)",
        ));
    }
    let outlet = ph(outlet_p, inlet.props.h)?;
    let mut warnings = Vec::new();
    if outlet.phase == Phase::Wet {
        let x_out = outlet.x.unwrap_or(0.0);
        // Liquid in, whether given by T (compressed liquid) or as x = 0 (saturated liquid):
        // the same physics, the same warning.
        let liquid_in = inlet.phase == Phase::Liquid || inlet.x == Some(0.0);
        if liquid_in && x_out > 1e-9 {
            warnings.push(Warning::new(Code::ValveFlashing, format!(
                "the liquid flashes in the valve: {:.1} % leaves as steam (consider a flash vessel and erosion-resistant trim)",
                100.0 * x_out
            )));
        } else if !liquid_in && x_out < 1.0 - 1e-9 {
            let was = match inlet.x {
                Some(x) if x >= 1.0 => "saturated steam".to_string(),
                Some(x) => format!("wet steam (x = {x:.4})"),
                None => inlet.phase.name().to_string(),
            };
            let pr = |x: f64| Arg::from(Quantity::new("p", Dim::Pressure, x));
            warnings.push(Warning::with(
                Code::ValveOutletWet,
                &format!("the steam leaves the valve wet (x = {x_out:.4}) though it entered as {was}: throttled from {{}} to {{}} its enthalpy {{}} is below the saturated vapour's there (saturated steam above about {{}} gets wetter when throttled); provide drainage or a separator after the valve, or superheat the steam before the let-down"),
                &[
                    pr(inlet.props.p),
                    pr(outlet_p),
                    Quantity::new("h", Dim::SpecificEnergy, inlet.props.h).into(),
                    pr(3.0),
                ],
            ));
        }
    }
    let m = flow.unwrap_or(1.0);
    let s_gen = check_second_law(
        "the valve",
        m * (outlet.props.s - inlet.props.s),
        entropy_scale(&[(m, inlet)], &[(m, &outlet)]),
        "an isenthalpic let-down always raises the entropy; check the states",
    )?;
    Ok(ValveResult {
        entropy_generation: s_gen,
        inlet: *inlet,
        superheat: superheat_of(&outlet),
        temperature_drop: inlet.props.t - outlet.props.t,
        outlet,
        balance: Balance {
            mass_in: m,
            mass_out: m,
            energy_in: m * inlet.props.h,
            energy_out: m * outlet.props.h,
        },
        warnings,
    })
}

/// What a desuperheater aims for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SprayTarget {
    /// Outlet temperature, K.
    Temperature(f64),
    /// Outlet superheat above saturation at the outlet pressure, K.
    Superheat(f64),
}

/// Result of a desuperheater.
#[derive(Debug, Clone, PartialEq)]
pub struct SprayResult {
    /// Steam inlet.
    pub steam: State,
    /// Spray water.
    pub water: State,
    /// Outlet state.
    pub outlet: State,
    /// Spray water flow, kg/s (per kg/s of steam when no steam flow is given).
    pub spray_flow: f64,
    /// Spray per kg of inlet steam.
    pub spray_ratio: f64,
    /// Outlet flow, kg/s.
    pub outlet_flow: f64,
    /// Outlet superheat, K.
    pub superheat: f64,
    /// Balance.
    pub balance: Balance,
    /// Entropy generated by the mixing, kW/K (per kg/s of steam when no flow was given).
    pub entropy_generation: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// Sprays water into steam to reach a target temperature or superheat at `outlet_p` (MPa; the
/// steam pressure when None).
pub fn desuperheater_spray(
    steam: &State,
    steam_flow: Option<f64>,
    water: &State,
    outlet_p: Option<f64>,
    target: SprayTarget,
) -> Result<SprayResult> {
    let p = outlet_p.unwrap_or(steam.props.p);
    Error::check_finite("outlet_p", p)?;
    if p > steam.props.p * (1.0 + 1e-12) {
        return Err(Error::out_of_range(
            "outlet_p",
            p,
            steam.props.p,
            "MPa",
            Bound::Above,
            "a desuperheater (the outlet cannot exceed the steam pressure)",
        ));
    }
    if let Some(f) = steam_flow {
        check_flow("steam flow", f)?;
    }
    let (ts, _, _) = if p < P_C {
        state::saturation_p(p)?
    } else {
        return Err(Error::invalid(
            "a desuperheater outlet above the critical pressure has no superheat",
        ));
    };
    let t_out = match target {
        SprayTarget::Temperature(t) => t,
        SprayTarget::Superheat(dt) => {
            Error::check_finite("superheat", dt)?;
            ts + dt
        }
    };
    Error::check_finite("target T", t_out)?;
    if t_out <= ts {
        return Err(Error::infeasible_with(
            "the target outlet temperature {} is not above the saturation temperature {} at {}: a desuperheater cannot produce wet steam; aim for some superheat (typically {} to {}; common practice, no source)",
            &[
                temperature("T", t_out),
                temperature("T", ts),
                pressure("p", p),
                superheat(5.0),
                superheat(10.0),
            ],
        ));
    }
    let outlet = pt(p, t_out)?;
    let h_in = steam.props.h;
    let h_out = outlet.props.h;
    let h_w = water.props.h;
    if h_out > h_in {
        return Err(Error::infeasible_with(
            "the target outlet enthalpy {} is above the steam enthalpy {}: spray water cannot heat the steam",
            &[enthalpy("h", h_out), enthalpy("h", h_in)],
        ));
    }
    if h_w >= h_out {
        return Err(Error::infeasible_with(
            "the spray water enthalpy {} is not below the target {}",
            &[enthalpy("h", h_w), enthalpy("h", h_out)],
        ));
    }
    let ratio = (h_in - h_out) / (h_out - h_w);
    let ms = steam_flow.unwrap_or(1.0);
    let mw = ms * ratio;
    let mut warnings = Vec::new();
    if water.props.p < p {
        let pr = |x: f64| Arg::from(Quantity::new("p", Dim::Pressure, x));
        warnings.push(Warning::with(
            Code::SprayWaterPressureLow,
            "the spray water pressure {} is below the outlet pressure {}: it cannot enter without a pump",
            &[pr(water.props.p), pr(p)],
        ));
    }
    if t_out - ts < 5.0 {
        let dt = |x: f64| Arg::from(Quantity::new("superheat", Dim::TemperatureDifference, x));
        warnings.push(Warning::with(
            Code::SmallSuperheat,
            "outlet superheat {} is below {}: spray may not evaporate fully (common practice, no source)",
            &[dt(t_out - ts), dt(5.0)],
        ));
    }
    let ins = [(ms, steam), (mw, water)];
    let outs = [(ms + mw, &outlet)];
    let s_gen = check_second_law(
        "the desuperheater",
        entropy_generation(&ins, &outs),
        entropy_scale(&ins, &outs),
        "check the steam, spray water and outlet states",
    )?;
    Ok(SprayResult {
        entropy_generation: s_gen,
        steam: *steam,
        water: *water,
        outlet,
        spray_flow: mw,
        spray_ratio: ratio,
        outlet_flow: ms + mw,
        superheat: t_out - ts,
        balance: Balance {
            mass_in: ms + mw,
            mass_out: ms + mw,
            energy_in: ms * h_in + mw * h_w,
            energy_out: (ms + mw) * h_out,
        },
        warnings,
    })
}

/// Result of a flash vessel.
#[derive(Debug, Clone, PartialEq)]
pub struct FlashResult {
    /// Inlet.
    pub inlet: State,
    /// Mixture just after the pressure drop.
    pub mixture: State,
    /// Flash steam (saturated vapour).
    pub vapour: State,
    /// Remaining condensate (saturated liquid).
    pub liquid: State,
    /// Flash-steam mass fraction.
    pub flash_fraction: f64,
    /// Flash-steam flow, kg/s.
    pub vapour_flow: f64,
    /// Liquid flow, kg/s.
    pub liquid_flow: f64,
    /// Balance.
    pub balance: Balance,
    /// Entropy generated, kW/K (per kg/s when no flow was given).
    pub entropy_generation: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// Flashes hot condensate to `p` (MPa).
pub fn flash_separate(inlet: &State, p: f64, flow: Option<f64>) -> Result<FlashResult> {
    Error::check_finite("p", p)?;
    if p > inlet.props.p {
        return Err(Error::out_of_range(
            "p",
            p,
            inlet.props.p,
            "MPa",
            Bound::Above,
            "a flash vessel (the vessel pressure must be below the inlet pressure)",
        ));
    }
    if p >= P_C {
        return Err(Error::out_of_range(
            "p",
            p,
            P_C,
            "MPa",
            Bound::Above,
            "a flash vessel (two phases exist only below the critical pressure)",
        ));
    }
    let mix = ph(p, inlet.props.h)?;
    let l = sat_liquid(p)?;
    let v = sat_vapour(p)?;
    let mut warnings = Vec::new();
    let x = match mix.phase {
        Phase::Wet => mix.x.unwrap_or(0.0),
        Phase::Liquid => {
            warnings.push(Warning::new(
                Code::NoFlash,
                "the inlet is too cold to flash at this pressure: no flash steam",
            ));
            0.0
        }
        _ => {
            warnings.push(Warning::new(
                Code::FlashInletSuperheated,
                "the inlet is superheated at the vessel pressure: all of it leaves as vapour",
            ));
            1.0
        }
    };
    let m = flow.unwrap_or(1.0);
    let liquid = if x == 0.0 && mix.phase == Phase::Liquid {
        mix
    } else {
        l
    };
    let vapour = if x == 1.0 && mix.phase != Phase::Wet {
        mix
    } else {
        v
    };
    let ins = [(m, inlet)];
    let outs = [(m * x, &vapour), (m * (1.0 - x), &liquid)];
    let s_gen = check_second_law(
        "the flash vessel",
        entropy_generation(&ins, &outs),
        entropy_scale(&ins, &outs),
        "check the inlet state and the vessel pressure",
    )?;
    Ok(FlashResult {
        entropy_generation: s_gen,
        inlet: *inlet,
        mixture: mix,
        vapour_flow: m * x,
        liquid_flow: m * (1.0 - x),
        flash_fraction: x,
        balance: Balance {
            mass_in: m,
            mass_out: m * x + m * (1.0 - x),
            energy_in: m * inlet.props.h,
            energy_out: m * x * vapour.props.h + m * (1.0 - x) * liquid.props.h,
        },
        vapour,
        liquid,
        warnings,
    })
}

/// Result of a mixing header.
#[derive(Debug, Clone, PartialEq)]
pub struct MixResult {
    /// Outlet state.
    pub outlet: State,
    /// Outlet flow, kg/s.
    pub flow: f64,
    /// Balance.
    pub balance: Balance,
    /// Entropy generated by the mixing, kW/K.
    pub entropy_generation: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// Mixes streams (state, flow kg/s) adiabatically into one at `p` (MPa).
pub fn header_mix(inlets: &[(State, f64)], p: f64) -> Result<MixResult> {
    Error::check_finite("p", p)?;
    if inlets.is_empty() {
        return Err(Error::invalid("a header needs at least one inlet stream"));
    }
    let mut m = 0.0;
    let mut e = 0.0;
    let mut warnings = Vec::new();
    for (i, (st, f)) in inlets.iter().enumerate() {
        check_flow(&format!("inlets[{i}].flow"), *f)?;
        m += f;
        e += f * st.props.h;
        if st.props.p < p * (1.0 - 1e-9) {
            let pr = |x: f64| Arg::from(Quantity::new("p", Dim::Pressure, x));
            warnings.push(Warning::with(
                Code::InletBelowHeaderPressure,
                &format!("inlet {i} is at {{}}, below the header pressure {{}}: it cannot flow in"),
                &[pr(st.props.p), pr(p)],
            ));
        }
    }
    if m <= 0.0 {
        return Err(Error::invalid("the inlet flows sum to zero"));
    }
    let outlet = ph(p, e / m)?;
    if outlet.phase == Phase::Wet {
        warnings.push(Warning::new(
            Code::WetSteam,
            format!(
                "the mixed header steam is wet (x = {:.4}): provide drainage and traps",
                outlet.x.unwrap_or(0.0)
            ),
        ));
    }
    let ins: Vec<(f64, &State)> = inlets.iter().map(|(st, f)| (*f, st)).collect();
    let outs = [(m, &outlet)];
    let s_gen = check_second_law(
        "the header",
        entropy_generation(&ins, &outs),
        entropy_scale(&ins, &outs),
        "an inlet below the header pressure cannot flow in; raise its pressure or lower the header pressure",
    )?;
    Ok(MixResult {
        entropy_generation: s_gen,
        flow: m,
        balance: Balance {
            mass_in: m,
            mass_out: m,
            energy_in: e,
            energy_out: m * outlet.props.h,
        },
        outlet,
        warnings,
    })
}

/// One side of a heat exchanger: inlet, optional outlet (p defaults to the inlet's), flow.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Side {
    /// Inlet state.
    pub inlet: State,
    /// Outlet state, when known.
    pub outlet: Option<State>,
    /// Mass flow, kg/s, when known.
    pub flow: Option<f64>,
}

/// Result of a two-stream heat exchanger.
#[derive(Debug, Clone, PartialEq)]
pub struct ExchangerResult {
    /// Hot inlet.
    pub hot_in: State,
    /// Hot outlet.
    pub hot_out: State,
    /// Hot flow, kg/s.
    pub hot_flow: f64,
    /// Cold inlet.
    pub cold_in: State,
    /// Cold outlet.
    pub cold_out: State,
    /// Cold flow, kg/s.
    pub cold_flow: f64,
    /// Duty, kW.
    pub duty: f64,
    /// Log-mean temperature difference of the two ends (counterflow), K; None where a stream
    /// changes phase inside the exchanger, where the two ends alone do not give the mean
    /// difference for sizing (use `effective_mtd`, zone by zone).
    pub lmtd: Option<f64>,
    /// Hot-end temperature difference (hot in - cold out), K.
    pub hot_end_difference: f64,
    /// Cold-end temperature difference (hot out - cold in), K.
    pub cold_end_difference: f64,
    /// Smallest temperature difference along the exchanger (pinch), K: at the ends, at every
    /// phase-change point of both streams and between them.
    pub pinch: f64,
    /// Where the pinch is, in words.
    pub pinch_at: String,
    /// The zones between the phase-change points, hot end first (one zone without a phase
    /// change).
    pub zones: Vec<feasibility::Zone>,
    /// Overall UA, the sum of the zones', kW/K.
    pub ua: f64,
    /// Effective mean temperature difference duty / UA (zone by zone), K.
    pub effective_mtd: f64,
    /// Feedwater-heater terminal temperature difference Tsat(hot inlet p) - cold out, K; only
    /// where the hot stream condenses below the critical pressure (None for a single-phase
    /// exchanger, where it has no meaning).
    pub terminal_temperature_difference: Option<f64>,
    /// Feedwater-heater drain-cooler approach hot out - cold in, K; only where the hot stream
    /// condenses (its drain leaves as hot out).
    pub drain_cooler_approach: Option<f64>,
    /// Balance.
    pub balance: Balance,
    /// Entropy generated, kW/K: m_hot (s_out - s_in) + m_cold (s_out - s_in).
    pub entropy_generation: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// Pinch below which a warning is given, K (common practice, no source).
pub const PINCH_WARNING: f64 = 3.0;

/// Refuses an outlet that would pass the other stream's inlet temperature: a hot stream asked
/// for more duty than it gives cooling down to the cold inlet temperature, or a cold stream
/// asked to take more than it takes heating up to the hot inlet temperature. Names the
/// temperature cross and the largest duty the stream can pass, instead of a range error on an
/// impossible outlet enthalpy.
fn check_outlet_reachable(
    side: &str,
    inlet: &State,
    flow: f64,
    duty: f64,
    limit_t: f64,
    hot: bool,
) -> Result<()> {
    let Ok(lim) = pt(inlet.props.p, limit_t) else {
        return Ok(());
    };
    let max_duty = flow * (inlet.props.h - lim.props.h).abs();
    if duty > max_duty {
        let (goes, other, fix) = if hot {
            (
                "cools to",
                "cold inlet",
                "raise the hot flow or lower the cold outlet temperature",
            )
        } else {
            (
                "heats to",
                "hot inlet",
                "raise the cold flow or lower the duty on the hot side",
            )
        };
        return Err(Error::infeasible_with(
            &format!("temperature cross: the duty {{}} is more than the {side} stream can pass before it {goes} the {other} temperature {{}} (at most {{}} with {{}}; second law: heat cannot flow from cold to hot); {fix}"),
            &[
                heat("duty", duty),
                temperature("T", limit_t),
                heat("duty", max_duty),
                mass_flow("flow", flow),
            ],
        ));
    }
    Ok(())
}

/// Balances a counterflow two-stream exchanger: exactly one of hot outlet, cold outlet, hot
/// flow, cold flow must be unknown (outlets are given as states; see the API for partial
/// outlet specs). The temperature profile is checked for a cross at the ends, at every
/// phase-change point of both streams and between them ([`feasibility::exchanger_profile`]),
/// and split into zones for the UA.
pub fn exchanger_balance(hot: &Side, cold: &Side) -> Result<ExchangerResult> {
    let unknown = [
        hot.outlet.is_none(),
        cold.outlet.is_none(),
        hot.flow.is_none(),
        cold.flow.is_none(),
    ];
    let n_unknown = unknown.iter().filter(|u| **u).count();
    if n_unknown != 1 {
        return Err(Error::invalid(format!(
            "give exactly three of: hot outlet, cold outlet, hot flow, cold flow ({} unknown)",
            n_unknown
        )));
    }
    let (hot_out, cold_out, mh, mc) = match (hot.outlet, cold.outlet, hot.flow, cold.flow) {
        (None, Some(co), Some(mh), Some(mc)) => {
            check_flow("hot flow", mh)?;
            check_flow("cold flow", mc)?;
            let q = mc * (co.props.h - cold.inlet.props.h);
            let h = hot.inlet.props.h - q / mh;
            check_outlet_reachable("hot", &hot.inlet, mh, q, cold.inlet.props.t, true)?;
            (ph(hot.inlet.props.p, h)?, co, mh, mc)
        }
        (Some(ho), None, Some(mh), Some(mc)) => {
            check_flow("hot flow", mh)?;
            check_flow("cold flow", mc)?;
            let q = mh * (hot.inlet.props.h - ho.props.h);
            let h = cold.inlet.props.h + q / mc;
            check_outlet_reachable("cold", &cold.inlet, mc, q, hot.inlet.props.t, false)?;
            (ho, ph(cold.inlet.props.p, h)?, mh, mc)
        }
        (Some(ho), Some(co), None, Some(mc)) => {
            check_flow("cold flow", mc)?;
            let q = mc * (co.props.h - cold.inlet.props.h);
            let dh = hot.inlet.props.h - ho.props.h;
            if dh <= 0.0 {
                return Err(Error::infeasible("the hot stream does not give up heat (its outlet enthalpy is not below its inlet)"));
            }
            (ho, co, q / dh, mc)
        }
        (Some(ho), Some(co), Some(mh), None) => {
            check_flow("hot flow", mh)?;
            let q = mh * (hot.inlet.props.h - ho.props.h);
            let dh = co.props.h - cold.inlet.props.h;
            if dh <= 0.0 {
                return Err(Error::infeasible("the cold stream does not take up heat (its outlet enthalpy is not above its inlet)"));
            }
            (ho, co, mh, q / dh)
        }
        _ => {
            return Err(Error::invalid(
                "give exactly three of: hot outlet, cold outlet, hot flow, cold flow",
            ))
        }
    };
    let duty = mh * (hot.inlet.props.h - hot_out.props.h);
    if duty < 0.0 {
        return Err(Error::infeasible(
            "heat would flow from the cold stream to the hot stream: swap the sides",
        ));
    }
    // Second law along the exchanger: the pinch at the ends, every phase-change point and
    // between them; a cross is refused with where it happens.
    let prof = feasibility::exchanger_profile(&hot.inlet, &hot_out, &cold.inlet, &cold_out, duty)?;
    let pinch = prof.pinch.dt();
    let dt1 = hot.inlet.props.t - cold_out.props.t;
    let dt2 = hot_out.props.t - cold.inlet.props.t;
    let lmtd = if prof.phase_change {
        None
    } else {
        Some(feasibility::lmtd(dt1, dt2))
    };
    let ttd = if prof.hot_condenses && hot.inlet.props.p < P_C {
        state::saturation_p(hot.inlet.props.p)
            .ok()
            .map(|(ts, _, _)| ts - cold_out.props.t)
    } else {
        None
    };
    let dca = if prof.hot_condenses { Some(dt2) } else { None };
    let mut warnings = Vec::new();
    if pinch < PINCH_WARNING {
        let dt = |x: f64| Arg::from(Quantity::new("pinch", Dim::TemperatureDifference, x));
        warnings.push(Warning::with(
            Code::SmallPinch,
            &format!(
                "the pinch is only {{}} (at {}), below {{}}: a very large surface would be needed",
                prof.pinch.describe()
            ),
            &[dt(pinch), dt(PINCH_WARNING)],
        ));
    }
    let ins = [(mh, &hot.inlet), (mc, &cold.inlet)];
    let outs = [(mh, &hot_out), (mc, &cold_out)];
    let s_gen = check_second_law(
        "the exchanger",
        entropy_generation(&ins, &outs),
        entropy_scale(&ins, &outs),
        "an outlet pressure above its inlet's raises that stream's state without work; check the outlet pressures",
    )?;
    Ok(ExchangerResult {
        hot_in: hot.inlet,
        hot_out,
        hot_flow: mh,
        cold_in: cold.inlet,
        cold_out,
        cold_flow: mc,
        duty,
        lmtd,
        hot_end_difference: dt1,
        cold_end_difference: dt2,
        pinch,
        pinch_at: prof.pinch.describe(),
        zones: prof.zones,
        ua: prof.ua,
        effective_mtd: prof.effective_mtd,
        terminal_temperature_difference: ttd,
        drain_cooler_approach: dca,
        balance: Balance {
            mass_in: mh + mc,
            mass_out: mh + mc,
            energy_in: mh * hot.inlet.props.h + mc * cold.inlet.props.h,
            energy_out: mh * hot_out.props.h + mc * cold_out.props.h,
        },
        entropy_generation: s_gen,
        warnings,
    })
}

/// Result of a boiler.
#[derive(Debug, Clone, PartialEq)]
pub struct BoilerResult {
    /// Feedwater.
    pub feedwater: State,
    /// Steam produced.
    pub steam: State,
    /// Blowdown (saturated liquid at the steam pressure).
    pub blowdown: State,
    /// Steam flow, kg/s.
    pub steam_flow: f64,
    /// Feedwater flow, kg/s.
    pub feedwater_flow: f64,
    /// Blowdown flow, kg/s.
    pub blowdown_flow: f64,
    /// Heat to the water and steam, kW.
    pub heat_to_steam: f64,
    /// Energy leaving in the blowdown above the feedwater's, kW.
    pub blowdown_energy: f64,
    /// Fuel heat input, kW.
    pub fuel_heat_input: f64,
    /// Losses (fuel input - heat to steam), kW.
    pub losses: f64,
    /// Balance.
    pub balance: Balance,
    /// Entropy generated, kW/K, with the fuel heat counted as coming from a source of
    /// unbounded temperature (so a lower bound): the entropy flows out minus in.
    pub entropy_generation: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// Boiler: feedwater in, steam and blowdown out. `blowdown_fraction` is of the feedwater flow.
pub fn boiler_fire(
    feedwater: &State,
    steam: &State,
    steam_flow: f64,
    blowdown_fraction: f64,
    efficiency: f64,
) -> Result<BoilerResult> {
    check_flow("steam_flow", steam_flow)?;
    Error::check_finite("blowdown_fraction", blowdown_fraction)?;
    if !(0.0..0.5).contains(&blowdown_fraction) {
        return Err(Error::out_of_range(
            "blowdown_fraction",
            blowdown_fraction,
            if blowdown_fraction < 0.0 { 0.0 } else { 0.5 },
            "1",
            if blowdown_fraction < 0.0 {
                Bound::Below
            } else {
                Bound::Above
            },
            "a boiler blowdown",
        ));
    }
    let eta = check_efficiency("efficiency", efficiency)?;
    if steam.props.h <= feedwater.props.h {
        return Err(Error::infeasible(
            "the steam enthalpy is not above the feedwater enthalpy",
        ));
    }
    let p_drum = steam.props.p.min(P_C * (1.0 - 1e-9));
    let bd_state = sat_liquid(p_drum)?;
    let mfw = steam_flow / (1.0 - blowdown_fraction);
    let mbd = mfw - steam_flow;
    let q_steam = steam_flow * (steam.props.h - feedwater.props.h);
    let q_bd = mbd * (bd_state.props.h - feedwater.props.h);
    let q = q_steam + q_bd;
    let fuel = q / eta;
    let mut warnings = Vec::new();
    if feedwater.props.p < steam.props.p {
        warnings.push(Warning::new(
            Code::FeedwaterPressureLow,
            "the feedwater pressure is below the steam pressure: a feed pump is needed upstream",
        ));
    }
    if steam.phase == Phase::Wet {
        warnings.push(Warning::new(
            Code::WetSteam,
            format!(
                "the steam leaving is wet (x = {:.4}): check the steam state (drum separators, superheater)",
                steam.x.unwrap_or(0.0)
            ),
        ));
    }
    let ins = [(mfw, feedwater)];
    let outs = [(steam_flow, steam), (mbd, &bd_state)];
    let s_gen = check_second_law(
        "the boiler",
        entropy_generation(&ins, &outs),
        entropy_scale(&ins, &outs),
        "check the feedwater and steam states",
    )?;
    Ok(BoilerResult {
        entropy_generation: s_gen,
        feedwater: *feedwater,
        steam: *steam,
        blowdown: bd_state,
        steam_flow,
        feedwater_flow: mfw,
        blowdown_flow: mbd,
        heat_to_steam: q,
        blowdown_energy: q_bd,
        fuel_heat_input: fuel,
        losses: fuel - q,
        balance: Balance {
            mass_in: mfw,
            mass_out: steam_flow + mbd,
            energy_in: mfw * feedwater.props.h + fuel,
            energy_out: steam_flow * steam.props.h + mbd * bd_state.props.h + (fuel - q),
        },
        warnings,
    })
}

/// Result of a deaerator.
#[derive(Debug, Clone, PartialEq)]
pub struct DeaeratorResult {
    /// Heating steam.
    pub steam: State,
    /// Outlet (saturated liquid at the deaerator pressure).
    pub outlet: State,
    /// Heating-steam flow, kg/s.
    pub steam_flow: f64,
    /// Outlet flow, kg/s.
    pub outlet_flow: f64,
    /// Vent flow, kg/s.
    pub vent_flow: f64,
    /// Balance.
    pub balance: Balance,
    /// Entropy generated by the mixing, kW/K.
    pub entropy_generation: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

/// Deaerator: water streams (state, flow) and heating steam to a saturated liquid at `p`;
/// `vent_fraction` of the heating steam leaves through the vent (saturated vapour).
pub fn deaerator_balance(
    p: f64,
    steam: &State,
    waters: &[(State, f64)],
    vent_fraction: f64,
) -> Result<DeaeratorResult> {
    Error::check_finite("p", p)?;
    Error::check_finite("vent_fraction", vent_fraction)?;
    if !(0.0..0.5).contains(&vent_fraction) {
        return Err(Error::out_of_range(
            "vent_fraction",
            vent_fraction,
            if vent_fraction < 0.0 { 0.0 } else { 0.5 },
            "1",
            if vent_fraction < 0.0 {
                Bound::Below
            } else {
                Bound::Above
            },
            "a vent fraction of the heating steam (0 <= fraction < 0.5)",
        ));
    }
    if waters.is_empty() {
        return Err(Error::invalid(
            "a deaerator needs at least one water stream",
        ));
    }
    let out = sat_liquid(p)?;
    let vent = sat_vapour(p)?;
    let mut mw = 0.0;
    let mut ew = 0.0;
    let mut warnings = Vec::new();
    for (i, (st, f)) in waters.iter().enumerate() {
        check_flow(&format!("waters[{i}].flow"), *f)?;
        mw += f;
        ew += f * st.props.h;
    }
    // m_s h_s + E_w = (m_s (1 - f) + m_w) h_out + m_s f h_vent
    let denom = steam.props.h - (1.0 - vent_fraction) * out.props.h - vent_fraction * vent.props.h;
    if denom <= 0.0 {
        return Err(Error::infeasible(
            "the heating steam is not hotter than the deaerator outlet: it cannot heat the water",
        ));
    }
    let ms = (mw * out.props.h - ew) / denom;
    if ms < 0.0 {
        return Err(Error::infeasible_with(
            "the water entering is already hotter than saturation at {}: the deaerator would need {} of steam removed; lower the inflow temperatures or raise the pressure",
            &[pressure("p", p), mass_flow("flow", -ms)],
        ));
    }
    if steam.props.p < p {
        let pr = |x: f64| Arg::from(Quantity::new("p", Dim::Pressure, x));
        warnings.push(Warning::with(
            Code::HeatingSteamPressureLow,
            "the heating steam pressure {} is below the deaerator pressure {}: it cannot flow in; check the heating-steam supply",
            &[pr(steam.props.p), pr(p)],
        ));
    }
    let mv = ms * vent_fraction;
    let mo = mw + ms - mv;
    let mut ins: Vec<(f64, &State)> = waters.iter().map(|(st, f)| (*f, st)).collect();
    ins.push((ms, steam));
    let outs = [(mo, &out), (mv, &vent)];
    let s_gen = check_second_law(
        "the deaerator",
        entropy_generation(&ins, &outs),
        entropy_scale(&ins, &outs),
        "heating steam below the deaerator pressure cannot flow in; raise its pressure",
    )?;
    Ok(DeaeratorResult {
        entropy_generation: s_gen,
        steam: *steam,
        outlet: out,
        steam_flow: ms,
        outlet_flow: mo,
        vent_flow: mv,
        balance: Balance {
            mass_in: mw + ms,
            mass_out: mo + mv,
            energy_in: ew + ms * steam.props.h,
            energy_out: mo * out.props.h + mv * vent.props.h,
        },
        warnings,
    })
}
