//! The Rankine cycle with optional reheat and any number of open (direct-contact) and closed
//! feedwater heaters, as plants run it: turbine sections (HP, IP, LP) with their own
//! efficiencies, the Baumann moisture loss, the exhaust leaving loss, mechanical and generator
//! losses, a throttle valve, pressure drops in the boiler, the reheater and each extraction line,
//! heater drain-cooler approaches, drains pumped forward as well as cascaded back, and a
//! condenser fixed by its cooling water.
//!
//! Conventions (documented in the API; every option defaults to the ideal textbook cycle):
//! - Sections: HP from the turbine inlet (after the throttle valve) to the reheat pressure (or
//!   to the crossover, or to the condenser); IP from the hot reheat to the crossover (with reheat
//!   and a crossover pressure); LP from the crossover (or the hot reheat) to the condenser. Without
//!   reheat and crossover the turbine is one section.
//! - Efficiency basis "section" (the default): each section's efficiency applies from the
//!   section's inlet to every extraction point and to its exhaust (one expansion line per
//!   section). "stage": it applies to each stage between consecutive extraction points, from
//!   that stage's own inlet (the section then does better than its stages: the reheat factor).
//! - Pumps: one follows the condenser and every open heater, raising the feedwater to the next
//!   open heater's pressure, or the boiler's inlet pressure (the boiler outlet pressure plus the
//!   boiler's pressure drop). A closed heater's drain pumped forward is raised to the feedwater
//!   pressure and mixed into the feedwater just after that heater.
//! - Closed heaters drain as saturated liquid at their shell pressure (the extraction pressure
//!   less the extraction line's drop), or at the entering feedwater temperature plus the
//!   drain-cooler approach (DCA); drains cascade (throttled) to the next lower heater or the
//!   condenser unless pumped forward. Closed-heater feedwater leaves at the shell's saturation
//!   temperature minus the heater's terminal temperature difference.
//! - The leaving loss: V = m v / A at the expansion-line end point (ELEP), loss V^2/2, the
//!   used-energy end point (UEEP) goes to the condenser.
//! - Specific results are per kg of steam leaving the boiler; powers need the flow (given, or
//!   from the net power).
//!
//! Units: p MPa, T K, h kJ/kg, s kJ/(kg K), specific work kJ/kg, flow kg/s, power kW, area m2.

use super::components::{
    check_area, check_baumann, check_drive, check_efficiency, drive, expansion_line, leaving_loss,
    pump_raise, throttle_valve, DriveLoss, EfficiencyBasis, LeavingLoss, LineEnd, MoistureLoss,
    PumpEfficiencyKind, EXHAUST_VELOCITY_WARNING,
};
use super::components::{enthalpy, heat, mass_flow, power, pressure, temperature};
use super::warnings::{Arg, Code, Quantity, Warning};
use super::{ph, ps as ps_state, pt, sat_liquid, sat_vapour};
use crate::error::{Bound, Error, Message, Result, ERROR_DIGITS};
use crate::units::Dim;
use crate::water::state::{self, Phase, State};

/// IT Btu in kJ (exact by definition; common practice, no source).
const BTU_KJ: f64 = 1.055_055_852_62;

/// Kind of feedwater heater.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum HeaterKind {
    /// Open (direct-contact) heater: extraction steam mixes with the feedwater, leaving as
    /// saturated liquid at the heater pressure.
    Open,
    /// Closed (shell-and-tube) heater; its drain cascades backward unless pumped forward.
    Closed,
}

/// A feedwater heater.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HeaterSpec {
    /// Extraction pressure at the turbine, MPa (the shell pressure without a line drop).
    pub p: f64,
    /// Open or closed.
    pub kind: HeaterKind,
    /// Terminal temperature difference of a closed heater, K (0 for ideal).
    pub ttd: f64,
}

/// Where a closed heater's drain goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum DrainMode {
    /// Throttled back to the next lower-pressure heater or the condenser.
    #[default]
    Cascade,
    /// Pumped forward into the feedwater line just after the heater.
    PumpForward,
}

impl DrainMode {
    /// The name on the wire.
    pub fn name(self) -> &'static str {
        match self {
            DrainMode::Cascade => "cascade",
            DrainMode::PumpForward => "pump_forward",
        }
    }
}

/// The plant details of one heater (all off by default).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct HeaterPlant {
    /// Pressure drop of the extraction line from the turbine to the heater shell, MPa.
    pub line_dp: f64,
    /// Drain-cooler approach of a closed heater, K: the drain leaves at the entering feedwater
    /// temperature plus this (None: the drain leaves saturated).
    pub dca: Option<f64>,
    /// Where a closed heater's drain goes.
    pub drain: DrainMode,
}

/// A condenser fixed by its cooling water instead of its pressure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoolingWater {
    /// Cooling-water inlet temperature, K.
    pub inlet_t: f64,
    /// Cooling-water flow, kg/s (give this or `rise`).
    pub flow: Option<f64>,
    /// Cooling-water temperature rise, K (give this or `flow`).
    pub rise: Option<f64>,
    /// Terminal temperature difference: condensing temperature less the cooling-water outlet
    /// temperature, K (above 0).
    pub ttd: f64,
    /// Cooling-water pressure, MPa (its enthalpies are taken there).
    pub p: f64,
}

/// The plant details of a Rankine cycle; `RankinePlant::default()` is the textbook cycle.
#[derive(Debug, Clone, PartialEq)]
pub struct RankinePlant {
    /// How the section efficiencies apply along each section.
    pub efficiency_basis: EfficiencyBasis,
    /// Crossover pressure (IP or HP exhaust, LP inlet), MPa.
    pub crossover_p: Option<f64>,
    /// HP section efficiency (default: the turbine efficiency).
    pub hp_efficiency: Option<f64>,
    /// IP section efficiency (with reheat and a crossover).
    pub ip_efficiency: Option<f64>,
    /// LP section efficiency.
    pub lp_efficiency: Option<f64>,
    /// Baumann moisture-loss factor (None: no moisture loss).
    pub baumann: Option<f64>,
    /// LP exhaust annulus area, m2 (None: no leaving loss).
    pub exhaust_area: Option<f64>,
    /// Throttle (governing) valve pressure drop, MPa.
    pub throttle_dp: f64,
    /// Boiler pressure drop (feedwater inlet to steam outlet), MPa.
    pub boiler_dp: f64,
    /// Reheater pressure drop (cold to hot reheat), MPa.
    pub reheat_dp: f64,
    /// Per heater, in the order of `RankineSpec::heaters` (empty: the defaults).
    pub heaters: Vec<HeaterPlant>,
    /// Mechanical loss of the turbine-generator.
    pub mechanical: DriveLoss,
    /// Generator loss.
    pub generator: DriveLoss,
    /// Further station load taken from the gross output (besides the pumps), kW.
    pub auxiliary_power: f64,
    /// A condenser fixed by its cooling water (then `RankineSpec::condenser_p` is not used).
    pub cooling_water: Option<CoolingWater>,
}

impl Default for RankinePlant {
    fn default() -> Self {
        RankinePlant {
            efficiency_basis: EfficiencyBasis::Section,
            crossover_p: None,
            hp_efficiency: None,
            ip_efficiency: None,
            lp_efficiency: None,
            baumann: None,
            exhaust_area: None,
            throttle_dp: 0.0,
            boiler_dp: 0.0,
            reheat_dp: 0.0,
            heaters: Vec::new(),
            mechanical: DriveLoss::None,
            generator: DriveLoss::None,
            auxiliary_power: 0.0,
            cooling_water: None,
        }
    }
}

/// A Rankine cycle specification.
#[derive(Debug, Clone, PartialEq)]
pub struct RankineSpec {
    /// Boiler outlet (throttle) pressure, MPa.
    pub boiler_p: f64,
    /// Throttle temperature, K.
    pub boiler_t: f64,
    /// Reheat: the cold-reheat (HP exhaust) pressure (MPa) and the hot-reheat temperature (K).
    pub reheat: Option<(f64, f64)>,
    /// Condenser pressure, MPa.
    pub condenser_p: f64,
    /// Turbine isentropic efficiency (of every section without its own).
    pub turbine_efficiency: f64,
    /// Pump isentropic efficiency.
    pub pump_efficiency: f64,
    /// Feedwater heaters, any order.
    pub heaters: Vec<HeaterSpec>,
    /// Steam flow leaving the boiler, kg/s.
    pub flow: Option<f64>,
    /// Net electrical power wanted, kW (gives the flow).
    pub net_power: Option<f64>,
}

/// A numbered point of the cycle.
#[derive(Debug, Clone, PartialEq)]
pub struct Point {
    /// Point number, 1-based, in the order of the table.
    pub number: usize,
    /// What the point is.
    pub label: String,
    /// State.
    pub state: State,
}

/// Extraction to one heater.
#[derive(Debug, Clone, PartialEq)]
pub struct Extraction {
    /// Extraction pressure at the turbine, MPa.
    pub p: f64,
    /// Heater kind.
    pub kind: HeaterKind,
    /// Extraction per kg of boiler steam.
    pub fraction: f64,
    /// Extraction steam state at the turbine.
    pub state: State,
    /// Feedwater leaving the heater.
    pub feedwater_out: State,
    /// Shell pressure, MPa.
    pub shell_p: f64,
    /// Extraction steam at the shell (after the line's pressure drop).
    pub shell_state: State,
    /// Drain of a closed heater.
    pub drain: Option<State>,
    /// Where a closed heater's drain goes.
    pub drain_mode: Option<DrainMode>,
    /// Drain flow leaving a closed heater per kg of boiler steam (its extraction plus the drains
    /// cascaded into it).
    pub drain_fraction: Option<f64>,
}

/// A turbine section of the cycle.
#[derive(Debug, Clone, PartialEq)]
pub struct Section {
    /// "HP", "IP", "LP", or "turbine" for a cycle with one section.
    pub name: &'static str,
    /// Section inlet.
    pub inlet: State,
    /// Section exhaust (its expansion-line end point).
    pub exhaust: State,
    /// The efficiency given (dry, with a moisture rule).
    pub efficiency: f64,
    /// Isentropic efficiency from the inlet to the exhaust, moisture loss included.
    pub expansion_efficiency: f64,
    /// Specific work per kg of boiler steam (the flow through each stage counted), kJ/kg.
    pub work: f64,
    /// The moisture loss of the section's expansion line (section basis).
    pub moisture_loss: Option<MoistureLoss>,
}

/// The cycle's power, from the blades to the net output, kW. Each figure is the one before it
/// less its loss, computed as exactly that subtraction:
/// `turbine_power - mechanical_loss - generator_loss - pump_power - auxiliary_power == net_power`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PowerBalance {
    /// Internal (blade) power of all sections.
    pub turbine_power: f64,
    /// Mechanical loss.
    pub mechanical_loss: f64,
    /// Shaft power.
    pub shaft_power: f64,
    /// Generator loss.
    pub generator_loss: f64,
    /// Gross electrical output.
    pub gross_power: f64,
    /// Power of all pumps (feed, condensate and drain pumps, at their shafts).
    pub pump_power: f64,
    /// Further station load.
    pub auxiliary_power: f64,
    /// Net electrical output.
    pub net_power: f64,
}

/// The condenser when fixed by its cooling water.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Condenser {
    /// Condenser pressure found, MPa.
    pub p: f64,
    /// Condensing (saturation) temperature, K.
    pub t_sat: f64,
    /// Cooling-water inlet temperature, K.
    pub cw_inlet_t: f64,
    /// Cooling-water outlet temperature, K.
    pub cw_outlet_t: f64,
    /// Cooling-water temperature rise, K.
    pub cw_rise: f64,
    /// Terminal temperature difference, K.
    pub ttd: f64,
    /// Cooling-water flow, kg/s (given, or from the duty when the steam flow is known).
    pub cw_flow: Option<f64>,
    /// Condenser duty, kW (when the steam flow is known).
    pub duty: Option<f64>,
    /// Fixed-point iterations used (0 with a given temperature rise).
    pub iterations: usize,
}

/// Result of a Rankine cycle.
#[derive(Debug, Clone, PartialEq)]
pub struct RankineResult {
    /// The state table.
    pub points: Vec<Point>,
    /// Extractions, highest pressure first.
    pub extractions: Vec<Extraction>,
    /// Turbine work per kg of boiler steam, kJ/kg.
    pub turbine_work: f64,
    /// Pump work per kg of boiler steam, kJ/kg.
    pub pump_work: f64,
    /// Net work per kg of boiler steam, kJ/kg.
    pub net_work: f64,
    /// Heat input (boiler and reheater) per kg of boiler steam, kJ/kg.
    pub heat_input: f64,
    /// Heat rejected in the condenser per kg of boiler steam, kJ/kg.
    pub heat_rejected: f64,
    /// Thermal efficiency net work / heat input.
    pub thermal_efficiency: f64,
    /// Heat rate, kJ/kWh.
    pub heat_rate: f64,
    /// Heat rate, Btu/kWh.
    pub heat_rate_btu: f64,
    /// Steam rate, kg/kWh.
    pub steam_rate: f64,
    /// Back-work ratio pump work / turbine work.
    pub back_work_ratio: f64,
    /// Boiler steam flow, kg/s (given or from the net power).
    pub flow: Option<f64>,
    /// Net electrical power, kW: as given, or from the flow (equal to `power.net_power` to
    /// rounding).
    pub net_power: Option<f64>,
    /// Exhaust moisture at the LP expansion-line end.
    pub exhaust_moisture: f64,
    /// First-law residual |q_in - q_out - w_net| / q_in.
    pub energy_residual: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
    /// Mass residual of the cycle: the condenser's inflows against the condensate pump's flow,
    /// and the feedwater reaching the boiler against the steam leaving it (per kg).
    pub mass_residual: f64,
    /// The condenser pressure used, MPa.
    pub condenser_p: f64,
    /// How the section efficiencies applied.
    pub efficiency_basis: EfficiencyBasis,
    /// The turbine sections, in the order of the steam.
    pub sections: Vec<Section>,
    /// The LP exhaust leaving loss, when an exhaust area was given.
    pub leaving: Option<LeavingLoss>,
    /// Gross and net electrical output and the losses between, when the flow is known.
    pub power: Option<PowerBalance>,
    /// Gross heat rate: heat input over gross electrical output, kJ/kWh.
    pub gross_heat_rate: f64,
    /// Net heat rate: heat input over net electrical output, kJ/kWh.
    pub net_heat_rate: f64,
    /// The condenser, when fixed by its cooling water.
    pub condenser: Option<Condenser>,
}

struct Heater {
    spec: HeaterSpec,
    extra: HeaterPlant,
    shell_p: f64,
    /// Extraction state at the turbine and at the shell.
    ext: State,
    shell: State,
    /// Feedwater in and out (before mixing with a pumped drain).
    fw_in: State,
    fw_out: State,
    /// Drain state (closed heaters; for open heaters the outlet).
    drain: State,
    /// Drain pump outlet and specific work of a drain pumped forward.
    pumped: Option<(State, f64)>,
}

struct Pump {
    /// Heater index (open) it starts from, n for the condenser.
    bottom: usize,
    /// Open heater it feeds, None for the boiler.
    top: Option<usize>,
    work: f64,
    outlet: State,
}

/// Solves a linear system by Gaussian elimination with partial pivoting.
fn solve_linear(mut a: Vec<Vec<f64>>, mut b: Vec<f64>) -> Result<Vec<f64>> {
    let n = b.len();
    for col in 0..n {
        let piv = (col..n)
            .max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))
            .unwrap_or(col);
        if a[piv][col].abs() < 1e-300 {
            return Err(Error::infeasible(
                "the heater balances are degenerate (two heaters at the same pressure?)",
            ));
        }
        a.swap(col, piv);
        b.swap(col, piv);
        for row in col + 1..n {
            let f = a[row][col] / a[col][col];
            let pivot_row = a[col].clone();
            for (x, y) in a[row].iter_mut().zip(&pivot_row).skip(col) {
                *x -= f * y;
            }
            b[row] -= f * b[col];
        }
    }
    let mut x = vec![0.0; n];
    for row in (0..n).rev() {
        let mut s = b[row];
        for k in row + 1..n {
            s -= a[row][k] * x[k];
        }
        x[row] = s / a[row][row];
    }
    Ok(x)
}

fn check_p(name: &str, p: f64) -> Result<f64> {
    Error::check_finite(name, p)?;
    if p <= 0.0 {
        return Err(Error::out_of_range(
            name,
            p,
            0.0,
            "MPa",
            Bound::Below,
            "a cycle",
        ));
    }
    Ok(p)
}

fn check_dp(name: &'static str, dp: f64, upstream: f64, what: &str) -> Result<f64> {
    Error::check_finite(name, dp)?;
    if dp < 0.0 {
        return Err(Error::invalid_with(
            &format!("{name} = {{}}: a pressure drop cannot be negative"),
            &[difference(name, dp)],
        ));
    }
    if dp >= upstream {
        return Err(Error::invalid_with(
            &format!("{name} = {{}} is not below {what} {{}}"),
            &[difference(name, dp), pressure("p", upstream)],
        ));
    }
    Ok(dp)
}

/// An error of the drain pump of the closed heater at `p`, as an input error whose message
/// names the heater (its values stated in the caller's units).
fn drain_pump_error(p: f64, e: Error) -> Error {
    let at = Message::with(
        "drain pump of the closed heater at {}: ",
        &[pressure("p", p)],
        ERROR_DIGITS,
    );
    let message = match e {
        Error::InvalidInput { message } | Error::Infeasible { message } => message,
        Error::OutOfRange {
            quantity,
            value,
            limit,
            unit,
            bound,
            formulation,
        } if unit == "MPa" => {
            let word = match bound {
                Bound::Below => "below the lowest",
                Bound::Above => "above the highest",
            };
            Message::with(
                &format!("{quantity} = {{}} is {word} value {{}} of {formulation}"),
                &[pressure("p", value), pressure("p", limit)],
                ERROR_DIGITS,
            )
        }
        other => Message::from(other.to_string()),
    };
    Error::InvalidInput {
        message: at.joined(&message),
    }
}

/// A pressure difference named in a message.
fn difference(name: &'static str, dp: f64) -> Arg {
    Quantity::new(name, Dim::PressureDifference, dp).into()
}

/// A temperature difference named in a message.
fn t_difference(name: &'static str, dt: f64) -> Arg {
    Quantity::new(name, Dim::TemperatureDifference, dt).into()
}

fn same_p(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * b
}

/// Solves a Rankine cycle (the textbook cycle: no plant details).
pub fn rankine(spec: &RankineSpec) -> Result<RankineResult> {
    rankine_plant(spec, &RankinePlant::default())
}

/// Solves a Rankine cycle with its plant details.
pub fn rankine_plant(spec: &RankineSpec, plant: &RankinePlant) -> Result<RankineResult> {
    let Some(cw) = plant.cooling_water else {
        return solve(spec, plant, spec.condenser_p);
    };
    Error::check_finite("condenser.cw_inlet_T", cw.inlet_t)?;
    Error::check_finite("condenser.ttd", cw.ttd)?;
    check_p("condenser.cw_p", cw.p)?;
    if cw.ttd <= 0.0 {
        return Err(Error::invalid_with(
            "condenser.ttd = {}: the condensing steam must be hotter than the cooling water leaving, so the terminal temperature difference must be above {}",
            &[t_difference("ttd", cw.ttd), t_difference("ttd", 0.0)],
        ));
    }
    let cw_in = pt(cw.p, cw.inlet_t)?;
    if cw_in.phase != Phase::Liquid {
        return Err(Error::invalid_with(
            "condenser.cw_inlet_T = {} is not liquid water at the cooling-water pressure {}",
            &[
                temperature("cw_inlet_T", cw.inlet_t),
                pressure("cw_p", cw.p),
            ],
        ));
    }
    let cw_boil = if cw.p < state::P_C {
        state::saturation_p(cw.p)?.0
    } else {
        state::T_C
    };
    let outlet_of = |t_out: f64| -> Result<State> {
        if t_out >= cw_boil {
            return Err(Error::infeasible_with(
                "the cooling water would leave at {}, not below its boiling point {} at {}: give more cooling water or a smaller rise",
                &[
                    temperature("T", t_out),
                    temperature("T", cw_boil),
                    pressure("cw_p", cw.p),
                ],
            ));
        }
        pt(cw.p, t_out)
    };
    let pc_of = |t_sat: f64| -> Result<f64> {
        if t_sat >= state::T_C {
            return Err(Error::infeasible_with(
                "the condensing temperature {} is not below the critical temperature {}",
                &[temperature("T", t_sat), temperature("T", state::T_C)],
            ));
        }
        Ok(state::saturation_t(t_sat)?.0)
    };
    match (cw.flow, cw.rise) {
        (None, Some(rise)) => {
            Error::check_finite("condenser.cw_rise", rise)?;
            if rise <= 0.0 {
                return Err(Error::invalid_with(
                    "condenser.cw_rise = {}: the cooling water must warm up (a rise above {})",
                    &[t_difference("cw_rise", rise), t_difference("cw_rise", 0.0)],
                ));
            }
            let cw_out = outlet_of(cw.inlet_t + rise)?;
            let t_sat = cw_out.props.t + cw.ttd;
            let pc = pc_of(t_sat)?;
            let mut r = solve(spec, plant, pc)?;
            let duty = r.flow.map(|f| f * r.heat_rejected);
            r.condenser = Some(Condenser {
                p: pc,
                t_sat,
                cw_inlet_t: cw.inlet_t,
                cw_outlet_t: cw_out.props.t,
                cw_rise: cw_out.props.t - cw.inlet_t,
                ttd: cw.ttd,
                cw_flow: duty.map(|q| q / (cw_out.props.h - cw_in.props.h)),
                duty,
                iterations: 0,
            });
            Ok(r)
        }
        (Some(m_cw), None) => {
            Error::check_finite("condenser.cw_flow", m_cw)?;
            if m_cw <= 0.0 {
                return Err(Error::invalid_with(
                    "condenser.cw_flow = {}: the cooling-water flow must be above 0",
                    &[mass_flow("cw_flow", m_cw)],
                ));
            }
            if spec.flow.is_none() && spec.net_power.is_none() {
                return Err(Error::invalid(
                    "a condenser fixed by its cooling-water flow needs the steam flow or the net power (the duty sets the cooling-water rise)",
                ));
            }
            // Fixed point on the condensing temperature: its duty warms the cooling water, whose
            // outlet plus the TTD is the condensing temperature. The duty changes little with it,
            // so the iteration contracts strongly.
            let mut t_sat = cw.inlet_t + 10.0 + cw.ttd;
            const MAX: usize = 200;
            for it in 1..=MAX {
                let pc = pc_of(t_sat)?;
                let mut r = solve(spec, plant, pc)?;
                let duty = r.flow.unwrap_or(0.0) * r.heat_rejected;
                let h_out = cw_in.props.h + duty / m_cw;
                if cw.p < state::P_C && h_out >= sat_liquid(cw.p)?.props.h {
                    return Err(Error::infeasible_with(
                        "{} of cooling water would be heated to its boiling point {} at {} by the condenser duty {}: give more cooling water",
                        &[
                            mass_flow("cw_flow", m_cw),
                            temperature("T", cw_boil),
                            pressure("cw_p", cw.p),
                            heat("duty", duty),
                        ],
                    ));
                }
                let cw_out = ph(cw.p, h_out)?;
                let cw_out = outlet_of(cw_out.props.t).map(|_| cw_out)?;
                let t_new = cw_out.props.t + cw.ttd;
                if (t_new - t_sat).abs() <= 1e-10 * t_sat {
                    r.condenser = Some(Condenser {
                        p: pc,
                        t_sat,
                        cw_inlet_t: cw.inlet_t,
                        cw_outlet_t: cw_out.props.t,
                        cw_rise: cw_out.props.t - cw.inlet_t,
                        ttd: cw.ttd,
                        cw_flow: Some(m_cw),
                        duty: Some(duty),
                        iterations: it,
                    });
                    return Ok(r);
                }
                t_sat = t_new;
            }
            Err(Error::not_converged(
                "the condenser pressure from the cooling water",
                MAX,
            ))
        }
        _ => Err(Error::invalid(
            "condenser: give the cooling-water flow (cw_flow) or its temperature rise (cw_rise), one of them",
        )),
    }
}

/// A turbine section while it is built.
struct Sec {
    name: &'static str,
    inlet: State,
    end_p: f64,
    eta: f64,
}

/// The states on the expansion lines at the pressures asked for.
struct Line {
    points: Vec<(f64, LineEnd)>,
}

impl Line {
    fn at(&self, p: f64) -> Result<State> {
        self.points
            .iter()
            .find(|(q, _)| same_p(*q, p))
            .map(|(_, l)| l.state)
            .ok_or_else(|| {
                Error::invalid(format!(
                    "no point of the expansion line at p = {p} (internal units; a defect)"
                ))
            })
    }
}

/// Expands one section through its points (descending pressures, its end last).
fn expand_section(
    sec: &Sec,
    pressures: &[f64],
    basis: EfficiencyBasis,
    baumann: Option<f64>,
    line: &mut Line,
) -> Result<LineEnd> {
    let mut st = sec.inlet;
    let mut last = None;
    for &p in pressures {
        let le = match basis {
            EfficiencyBasis::Section => expansion_line(&sec.inlet, p, sec.eta, baumann)?,
            EfficiencyBasis::Stage => expansion_line(&st, p, sec.eta, baumann)?,
        };
        st = le.state;
        line.points.push((p, le));
        last = Some(le);
    }
    last.ok_or_else(|| Error::invalid("a turbine section without an end (internal)"))
}

/// Solves the cycle at the condenser pressure `pc`.
fn solve(spec: &RankineSpec, plant: &RankinePlant, pc: f64) -> Result<RankineResult> {
    let pb = check_p("boiler_p", spec.boiler_p)?;
    let pc = check_p("condenser_p", pc)?;
    if pc >= pb {
        return Err(Error::out_of_range(
            "condenser_p",
            pc,
            pb,
            "MPa",
            Bound::Above,
            "a Rankine cycle (the condenser pressure must be below the boiler pressure)",
        ));
    }
    if pc >= state::P_C {
        return Err(Error::out_of_range(
            "condenser_p",
            pc,
            state::P_C,
            "MPa",
            Bound::Above,
            "a condenser",
        ));
    }
    if spec.flow.is_some() && spec.net_power.is_some() {
        return Err(Error::invalid("give the flow or the net power, not both"));
    }
    if !plant.heaters.is_empty() && plant.heaters.len() != spec.heaters.len() {
        return Err(Error::invalid(format!(
            "{} heater details for {} heaters (internal)",
            plant.heaters.len(),
            spec.heaters.len()
        )));
    }
    let throttle_dp = check_dp("throttle_dp", plant.throttle_dp, pb, "the boiler pressure")?;
    let boiler_dp = {
        Error::check_finite("boiler_dp", plant.boiler_dp)?;
        if plant.boiler_dp < 0.0 {
            return Err(Error::invalid_with(
                "boiler_dp = {}: a pressure drop cannot be negative",
                &[difference("boiler_dp", plant.boiler_dp)],
            ));
        }
        plant.boiler_dp
    };
    check_drive(plant.mechanical, "mechanical")?;
    check_drive(plant.generator, "generator")?;
    Error::check_finite("auxiliary_power", plant.auxiliary_power)?;
    if plant.auxiliary_power < 0.0 {
        return Err(Error::out_of_range(
            "auxiliary_power",
            plant.auxiliary_power,
            0.0,
            "kW",
            Bound::Below,
            "a station load (it cannot be negative)",
        ));
    }
    if let Some(a) = plant.baumann {
        check_baumann(a)?;
    }
    if let Some(a) = plant.exhaust_area {
        check_area(a)?;
    }
    let flow_known = spec.flow.is_some() || spec.net_power.is_some();
    if !flow_known {
        if plant.exhaust_area.is_some() {
            return Err(Error::invalid(
                "exhaust_area: the leaving loss needs the exhaust flow (V = flow v / area): give the flow or the net power",
            ));
        }
        if matches!(plant.mechanical, DriveLoss::Fixed(_))
            || matches!(plant.generator, DriveLoss::Fixed(_))
            || plant.auxiliary_power > 0.0
        {
            return Err(Error::invalid(
                "mechanical_loss, generator_loss and auxiliary_power are in kW: give the flow or the net power (or give efficiencies instead)",
            ));
        }
    }
    // Heaters with their plant details, highest extraction pressure first (a stable sort keeps
    // the given order of equal pressures, which are refused below).
    let mut hs: Vec<(HeaterSpec, HeaterPlant)> = spec
        .heaters
        .iter()
        .enumerate()
        .map(|(i, h)| (*h, plant.heaters.get(i).copied().unwrap_or_default()))
        .collect();
    hs.sort_by(|a, b| b.0.p.total_cmp(&a.0.p));
    for (i, (h, x)) in hs.iter().enumerate() {
        check_p("heaters.p", h.p)?;
        if h.p >= pb || h.p <= pc {
            return Err(Error::invalid_with(
                "heater at {}: its pressure must lie between the condenser ({}) and the boiler ({})",
                &[pressure("p", h.p), pressure("condenser_p", pc), pressure("boiler_p", pb)],
            ));
        }
        if i > 0 && (hs[i - 1].0.p - h.p).abs() <= 1e-12 * h.p {
            return Err(Error::invalid_with(
                "two heaters at the same pressure {}",
                &[pressure("p", h.p)],
            ));
        }
        Error::check_finite("heaters.ttd", h.ttd)?;
        check_dp("heaters.line_dp", x.line_dp, f64::INFINITY, "")?;
        if h.p - x.line_dp <= pc {
            return Err(Error::invalid_with(
                "heater at {}: line_dp = {} would leave its shell at or below the condenser pressure {}",
                &[
                    pressure("p", h.p),
                    difference("line_dp", x.line_dp),
                    pressure("condenser_p", pc),
                ],
            ));
        }
        if h.kind == HeaterKind::Open && (x.dca.is_some() || x.drain != DrainMode::Cascade) {
            return Err(Error::invalid_with(
                "open heater at {}: an open heater has no drain (its extraction mixes with the feedwater): dca and drain apply to closed heaters",
                &[pressure("p", h.p)],
            ));
        }
        if let Some(d) = x.dca {
            Error::check_finite("heaters.dca", d)?;
            if d <= 0.0 {
                return Err(Error::invalid_with(
                    "closed heater at {}: dca = {} would make the drain leave at or below the temperature of the entering feedwater (a temperature cross in the drain cooler); a drain-cooler approach must be above {}",
                    &[pressure("p", h.p), t_difference("dca", d), t_difference("dca", 0.0)],
                ));
            }
        }
        if i > 0 {
            let above = &hs[i - 1];
            let shell_above = above.0.p - above.1.line_dp;
            if h.p - x.line_dp >= shell_above {
                return Err(Error::invalid_with(
                    "the shell of the heater at {} ({} after its line drop) is not below the shell of the heater above it ({}): drains and feedwater could not flow between them",
                    &[
                        pressure("p", h.p),
                        pressure("p", h.p - x.line_dp),
                        pressure("p", shell_above),
                    ],
                ));
            }
        }
    }
    let n = hs.len();
    let mut warnings = Vec::new();
    let throttle = pt(pb, spec.boiler_t)?;
    if throttle.phase == Phase::Liquid || throttle.phase == Phase::Wet {
        let (what, limit) = if pb < state::P_C {
            ("the saturation temperature", state::saturation_p(pb)?.0)
        } else {
            ("the critical temperature", state::T_C)
        };
        return Err(Error::infeasible_with(
            &format!("the boiler outlet at {{}} and {{}} is compressed liquid (below {what} {{}}): a turbine needs steam; raise boiler_T above it"),
            &[
                pressure("boiler_p", pb),
                temperature("boiler_T", spec.boiler_t),
                temperature("T", limit),
            ],
        ));
    }
    let ti = throttle_valve(&throttle, throttle_dp)?;
    // Sections.
    let eta_t = check_efficiency("turbine_efficiency", spec.turbine_efficiency)?;
    let eff = |name: &str, x: Option<f64>| -> Result<f64> {
        match x {
            Some(e) => check_efficiency(name, e),
            None => Ok(eta_t),
        }
    };
    let crossover = match plant.crossover_p {
        Some(x) => Some(check_p("crossover_p", x)?),
        None => None,
    };
    let reheat = match spec.reheat {
        Some((prh, trh)) => {
            check_p("reheat_p", prh)?;
            if prh >= ti.props.p || prh <= pc {
                return Err(Error::invalid_with(
                    "the reheat pressure {} must lie between the condenser and the boiler pressures",
                    &[pressure("reheat_p", prh)],
                ));
            }
            let dp = check_dp("reheat_dp", plant.reheat_dp, f64::INFINITY, "")?;
            if prh - dp <= pc {
                return Err(Error::invalid_with(
                    "reheat_dp = {} would leave the hot reheat at or below the condenser pressure {}",
                    &[difference("reheat_dp", dp), pressure("condenser_p", pc)],
                ));
            }
            Some((prh, trh, prh - dp))
        }
        None => {
            if plant.reheat_dp != 0.0 {
                return Err(Error::invalid(
                    "reheat_dp needs a reheat (reheat_p and reheat_T)",
                ));
            }
            None
        }
    };
    if let Some(x) = crossover {
        let top = reheat.map(|(_, _, p_hot)| p_hot).unwrap_or(ti.props.p);
        if x >= top || x <= pc {
            return Err(Error::invalid_with(
                &format!(
                    "crossover_p = {{}} must lie between the condenser ({{}}) and the {} ({{}})",
                    if reheat.is_some() {
                        "hot reheat"
                    } else {
                        "turbine inlet"
                    }
                ),
                &[
                    pressure("crossover_p", x),
                    pressure("condenser_p", pc),
                    pressure("p", top),
                ],
            ));
        }
    }
    let single = reheat.is_none() && crossover.is_none();
    if single && (plant.hp_efficiency.is_some() || plant.lp_efficiency.is_some()) {
        return Err(Error::invalid(
            "hp_efficiency and lp_efficiency need two sections: give crossover_p (or a reheat) to split the turbine, or use turbine_efficiency",
        ));
    }
    if plant.ip_efficiency.is_some() && !(reheat.is_some() && crossover.is_some()) {
        return Err(Error::invalid(
            "ip_efficiency needs an intermediate-pressure section: a reheat and a crossover_p",
        ));
    }
    for (h, _) in &hs {
        if h.p >= ti.props.p {
            return Err(Error::invalid_with(
                "heater at {}: its extraction pressure must be below the turbine inlet pressure {} (after the throttle valve)",
                &[pressure("p", h.p), pressure("p", ti.props.p)],
            ));
        }
        if let Some((prh, _, p_hot)) = reheat {
            if h.p >= p_hot && h.p < prh && !same_p(h.p, prh) {
                return Err(Error::invalid_with(
                    "heater at {}: its extraction pressure lies inside the reheater (from the cold reheat at {} to the hot reheat at {}), where no turbine stage is",
                    &[
                        pressure("p", h.p),
                        pressure("reheat_p", prh),
                        pressure("p", p_hot),
                    ],
                ));
            }
        }
    }
    let basis = plant.efficiency_basis;
    let ext_in = |hi: f64, lo: f64| -> Vec<f64> {
        hs.iter()
            .map(|(h, _)| h.p)
            .filter(|&p| p < hi && p > lo && !same_p(p, lo))
            .collect()
    };
    let mut line = Line { points: Vec::new() };
    let mut secs: Vec<(Sec, LineEnd)> = Vec::new();
    let mut reheat_states: Option<(f64, State, State)> = None;
    let mut cross_state: Option<State> = None;
    {
        let mut run = |sec: Sec, line: &mut Line| -> Result<LineEnd> {
            let mut pts = ext_in(sec.inlet.props.p, sec.end_p);
            pts.push(sec.end_p);
            let end = expand_section(&sec, &pts, basis, plant.baumann, line)?;
            secs.push((sec, end));
            Ok(end)
        };
        let hp_name = if single { "turbine" } else { "HP" };
        let hp_end = match (reheat, crossover) {
            (Some((prh, _, _)), _) => prh,
            (None, Some(x)) => x,
            (None, None) => pc,
        };
        let hp_eta = if single {
            eta_t
        } else {
            eff("hp_efficiency", plant.hp_efficiency)?
        };
        let hp = run(
            Sec {
                name: hp_name,
                inlet: ti,
                end_p: hp_end,
                eta: hp_eta,
            },
            &mut line,
        )?;
        let mut next_inlet = hp.state;
        if let Some((prh, trh, p_hot)) = reheat {
            let cold = hp.state;
            let hot = pt(p_hot, trh)?;
            if hot.props.h <= cold.props.h {
                return Err(Error::infeasible(
                    "the reheat temperature is below the high-pressure turbine exhaust temperature",
                ));
            }
            reheat_states = Some((prh, cold, hot));
            next_inlet = hot;
            if let Some(x) = crossover {
                let ip = run(
                    Sec {
                        name: "IP",
                        inlet: hot,
                        end_p: x,
                        eta: eff("ip_efficiency", plant.ip_efficiency)?,
                    },
                    &mut line,
                )?;
                cross_state = Some(ip.state);
                next_inlet = ip.state;
            }
        } else if crossover.is_some() {
            cross_state = Some(hp.state);
        }
        if !single {
            run(
                Sec {
                    name: "LP",
                    inlet: next_inlet,
                    end_p: pc,
                    eta: eff("lp_efficiency", plant.lp_efficiency)?,
                },
                &mut line,
            )?;
        }
    }
    let elep = line.at(pc)?;
    // Feedwater line, from the condenser upward. Heater j counts from the highest pressure.
    let eta_p = spec.pump_efficiency;
    let shell_p: Vec<f64> = hs.iter().map(|(h, x)| h.p - x.line_dp).collect();
    let p_feed = pb + boiler_dp;
    // The open heater directly above index j (exclusive), if any.
    let open_above = |j: usize| -> Option<usize> {
        (0..j.min(n))
            .rev()
            .find(|&i| hs[i].0.kind == HeaterKind::Open)
    };
    let discharge = |j: usize| -> f64 { open_above(j).map(|o| shell_p[o]).unwrap_or(p_feed) };
    let condensate = sat_liquid(pc)?;
    let any_pumped = hs.iter().any(|(_, x)| x.drain == DrainMode::PumpForward);
    // Mixed feedwater enthalpy after each heater whose drain is pumped forward (found by
    // iteration; without such drains the first pass is exact).
    let mut mix_h: Vec<Option<f64>> = vec![None; n];
    let mut pass = 0;
    let (heaters, pumps, boiler_in, y) = loop {
        pass += 1;
        let mut pumps: Vec<Pump> = Vec::new();
        let mut fw = condensate;
        let pr = pump_raise(
            &fw,
            discharge(n),
            eta_p,
            PumpEfficiencyKind::Isentropic,
            None,
        )?;
        pumps.push(Pump {
            bottom: n,
            top: open_above(n),
            work: pr.specific_work,
            outlet: pr.outlet,
        });
        fw = pr.outlet;
        let mut heaters: Vec<Heater> = Vec::with_capacity(n);
        for j in (0..n).rev() {
            let (h, x) = hs[j];
            let ext = line.at(h.p)?;
            let shell = if x.line_dp > 0.0 {
                ph(shell_p[j], ext.props.h)?
            } else {
                ext
            };
            match h.kind {
                HeaterKind::Closed => {
                    let (tsat, _, _) = state::saturation_p(shell_p[j].min(state::P_C))?;
                    let t_out = tsat - h.ttd;
                    let out = pt(fw.props.p, t_out)?;
                    if out.props.h <= fw.props.h {
                        return Err(Error::infeasible_with(
                            "the closed heater at {} would not heat the feedwater (it arrives at {}, the heater can reach {})",
                            &[
                                pressure("p", h.p),
                                temperature("T", fw.props.t),
                                temperature("T", t_out),
                            ],
                        ));
                    }
                    if h.ttd < 0.0 && t_out >= shell.props.t {
                        let phase = match shell.x {
                            Some(q) => format!("wet, x = {q:.4}"),
                            None => shell.phase.name().to_string(),
                        };
                        return Err(Error::infeasible_with(
                            "closed heater at {}: a TTD of {} makes the feedwater leave at {}, not below the extraction steam's {} ({}): the feedwater cannot leave hotter than the steam heating it; a negative TTD needs superheated extraction steam and a desuperheating zone; give a TTD of {} or more",
                            &[
                                pressure("p", h.p),
                                t_difference("ttd", h.ttd),
                                temperature("T", t_out),
                                temperature("T", shell.props.t),
                                phase.into(),
                                t_difference("ttd", 0.0),
                            ],
                        ));
                    }
                    let drain = match x.dca {
                        Some(d) => {
                            let t_d = fw.props.t + d;
                            if t_d >= tsat {
                                return Err(Error::infeasible_with(
                                    "closed heater at {}: a drain-cooler approach of {} puts the drain at {}, not below the shell's saturation temperature {}, so no drain cooling is possible; leave dca out for a heater without a drain cooler",
                                    &[
                                        pressure("p", h.p),
                                        t_difference("dca", d),
                                        temperature("T", t_d),
                                        temperature("T", tsat),
                                    ],
                                ));
                            }
                            pt(shell_p[j], t_d)?
                        }
                        None => sat_liquid(shell_p[j])?,
                    };
                    let pumped = if x.drain == DrainMode::PumpForward {
                        let pr = pump_raise(
                            &drain,
                            fw.props.p,
                            eta_p,
                            PumpEfficiencyKind::Isentropic,
                            None,
                        )
                        .map_err(|e| drain_pump_error(h.p, e))?;
                        Some((pr.outlet, pr.specific_work))
                    } else {
                        None
                    };
                    let after = match (pumped, mix_h[j]) {
                        (Some(_), Some(hm)) => ph(out.props.p, hm)?,
                        _ => out,
                    };
                    heaters.push(Heater {
                        spec: h,
                        extra: x,
                        shell_p: shell_p[j],
                        ext,
                        shell,
                        fw_in: fw,
                        fw_out: out,
                        drain,
                        pumped,
                    });
                    fw = after;
                }
                HeaterKind::Open => {
                    let out = sat_liquid(shell_p[j])?;
                    if fw.props.p > shell_p[j] * (1.0 + 1e-9) {
                        return Err(Error::invalid_with(
                            "feedwater at {} cannot enter the open heater at {}",
                            &[pressure("p", fw.props.p), pressure("p", shell_p[j])],
                        ));
                    }
                    if out.props.h <= fw.props.h {
                        return Err(Error::infeasible_with(
                            "the feedwater reaching the open heater at {} is already at or above its saturation temperature",
                            &[pressure("p", h.p)],
                        ));
                    }
                    heaters.push(Heater {
                        spec: h,
                        extra: x,
                        shell_p: shell_p[j],
                        ext,
                        shell,
                        fw_in: fw,
                        fw_out: out,
                        drain: out,
                        pumped: None,
                    });
                    let pr = pump_raise(
                        &out,
                        discharge(j),
                        eta_p,
                        PumpEfficiencyKind::Isentropic,
                        None,
                    )?;
                    pumps.push(Pump {
                        bottom: j,
                        top: open_above(j),
                        work: pr.specific_work,
                        outlet: pr.outlet,
                    });
                    fw = pr.outlet;
                }
            }
        }
        heaters.reverse(); // highest pressure first again, index j
        let boiler_in = fw;
        let y = if n > 0 {
            solve_linear_system(&heaters)?
        } else {
            vec![]
        };
        if !any_pumped {
            break (heaters, pumps, boiler_in, y);
        }
        // New mixed enthalpies after the heaters whose drains are pumped forward.
        let flows = Flows::new(&heaters, &y);
        let mut change: f64 = 0.0;
        let mut new = vec![None; n];
        for (j, ht) in heaters.iter().enumerate() {
            if let Some((pd, _)) = ht.pumped {
                let mt = flows.tube(j);
                let d = flows.drain_out(j);
                let hm = (mt * ht.fw_out.props.h + d * pd.props.h) / (mt + d);
                change = change.max(match mix_h[j] {
                    Some(old) => (hm - old).abs(),
                    None => f64::INFINITY,
                });
                new[j] = Some(hm);
            }
        }
        if change <= 1e-10 {
            break (heaters, pumps, boiler_in, y);
        }
        if pass >= 100 {
            return Err(Error::not_converged(
                "the feedwater mixing after drains pumped forward",
                pass,
            ));
        }
        mix_h = new;
    };
    let ps: Vec<f64> = heaters.iter().map(|h| h.spec.p).collect();
    for (j, yj) in y.iter().enumerate() {
        if *yj < -1e-12 || !yj.is_finite() {
            return Err(Error::infeasible_with(
                &format!("the heater at {{}} would need a negative extraction ({yj:.5}): its feedwater is already hotter than its steam can make it"),
                &[pressure("p", ps[j])],
            ));
        }
    }
    let sum_y: f64 = y.iter().sum();
    if sum_y >= 1.0 {
        return Err(Error::infeasible(
            "the extractions would take all of the steam",
        ));
    }
    let flows = Flows::new(&heaters, &y);
    check_heater_zones(&heaters, &flows)?;
    // Turbine work: steps between successive pressure points on the expansion lines.
    let mut tps: Vec<f64> = ps.clone();
    let mut ends: Vec<f64> = secs.iter().map(|(s, _)| s.end_p).collect();
    ends.pop(); // the last section ends at the condenser, pushed below
    for p in ends {
        if !tps.iter().any(|&q| same_p(q, p)) {
            tps.push(p);
        }
    }
    tps.push(pc);
    tps.sort_by(|a, b| b.total_cmp(a));
    let mut w_t = 0.0;
    let mut w_sec = vec![0.0; secs.len()];
    let mut flow = 1.0;
    let mut st = ti;
    let mut k = 0;
    for &p in &tps {
        let end = line.at(p)?;
        let dw = flow * (st.props.h - end.props.h);
        w_t += dw;
        w_sec[k] += dw;
        for (j, &pj) in ps.iter().enumerate() {
            if same_p(pj, p) {
                flow -= y[j];
            }
        }
        st = end;
        if k + 1 < secs.len() && same_p(secs[k].0.end_p, p) {
            k += 1;
            st = secs[k].0.inlet;
        }
    }
    let exhaust_flow = flow;
    // Pumps: each carries its segment's feedwater, less the drains pumped forward into it.
    let mut w_p = 0.0;
    for pump in &pumps {
        w_p += flows.pump(pump) * pump.work;
    }
    for (j, h) in heaters.iter().enumerate() {
        if let Some((_, w)) = h.pumped {
            w_p += flows.drain_out(j) * w;
        }
    }
    let reheat_flow = match reheat_states {
        Some((prh, _, _)) => {
            1.0 - ps
                .iter()
                .zip(&y)
                .filter(|(p, _)| **p >= prh * (1.0 - 1e-12))
                .map(|(_, y)| *y)
                .sum::<f64>()
        }
        None => 0.0,
    };
    let mut q_in = throttle.props.h - boiler_in.props.h;
    if let Some((_, cold, hot)) = reheat_states {
        q_in += reheat_flow * (hot.props.h - cold.props.h);
    }
    // Condenser: exhaust steam + drains cascading down from the lowest heaters.
    let to_condenser = flows.drains_into(n);
    let drain_flow: f64 = to_condenser.iter().map(|&j| y[j]).sum();
    // All of it leaves the lowest closed heater as its drain.
    let drain_h = to_condenser
        .first()
        .map(|&j| heaters[j].drain.props.h)
        .unwrap_or(0.0);
    let cond_flow = exhaust_flow + drain_flow;
    // Flow: given, or from the net power (with a leaving loss the power is a cubic in the flow).
    let w_t0 = w_t;
    let v_e = elep.props.v;
    let flow_kg = match (spec.flow, spec.net_power) {
        (Some(f), None) => {
            Error::check_finite("flow", f)?;
            if f <= 0.0 {
                return Err(Error::out_of_range(
                    "flow",
                    f,
                    0.0,
                    "kg/s",
                    Bound::Below,
                    "a cycle (the steam flow must be above 0)",
                ));
            }
            Some(f)
        }
        (None, Some(pw)) => {
            Error::check_finite("net_power", pw)?;
            if pw <= 0.0 {
                return Err(Error::out_of_range(
                    "net_power",
                    pw,
                    0.0,
                    "kW",
                    Bound::Below,
                    "a cycle (the net power must be above 0)",
                ));
            }
            Some(flow_for_power(pw, w_t0, w_p, exhaust_flow, v_e, plant)?)
        }
        _ => None,
    };
    let leaving = match (plant.exhaust_area, flow_kg) {
        (Some(a), Some(f)) => Some(leaving_loss(&elep, f * exhaust_flow, a)?),
        _ => None,
    };
    let exhaust = match leaving {
        Some(l) => {
            let dh = l.used_energy_end.props.h - elep.props.h;
            w_t -= exhaust_flow * dh;
            if let Some(last) = w_sec.last_mut() {
                *last -= exhaust_flow * dh;
            }
            if let Some(w) = velocity_warning(&l) {
                warnings.push(w);
            }
            l.used_energy_end
        }
        None => elep,
    };
    let q_out =
        exhaust_flow * exhaust.props.h + drain_flow * drain_h - cond_flow * condensate.props.h;
    let w_net = w_t - w_p;
    let eta = w_net / q_in;
    let residual = (q_in - q_out - w_net).abs() / q_in;
    let mass_residual = flows.mass_residual(&pumps, cond_flow);
    let moisture_e = elep.x.map(|x| 1.0 - x).unwrap_or(0.0);
    if moisture_e > super::MOISTURE_WARNING {
        warnings.push(Warning::new(Code::ExhaustMoisture, format!(
            "turbine exhaust moisture {:.1} % exceeds about 12 % (common practice): consider reheat",
            100.0 * moisture_e
        )));
    }
    // Power: gross and net electrical output.
    let (power, gross_hr, net_hr) = {
        let basis_flow = flow_kg.unwrap_or(1.0);
        let d = drive(basis_flow * w_t, plant.mechanical, plant.generator)?;
        let pump_power = basis_flow * w_p;
        let aux = plant.auxiliary_power;
        let net = d.gross_power - pump_power - aux;
        if net <= 0.0 {
            return Err(Error::infeasible_with(
                "the pumps ({}) and the station load ({}) take all of the gross output ({}): the cycle delivers no net power",
                &[power(pump_power), power(aux), power(d.gross_power)],
            ));
        }
        let q = basis_flow * q_in;
        let bal = PowerBalance {
            turbine_power: d.internal_power,
            mechanical_loss: d.mechanical_loss,
            shaft_power: d.shaft_power,
            generator_loss: d.generator_loss,
            gross_power: d.gross_power,
            pump_power,
            auxiliary_power: aux,
            net_power: net,
        };
        (
            flow_kg.map(|_| bal),
            3600.0 * q / d.gross_power,
            3600.0 * q / net,
        )
    };
    // State table.
    let mut points: Vec<(String, State)> = Vec::new();
    points.push(("throttle (boiler outlet)".into(), throttle));
    if throttle_dp > 0.0 {
        points.push((
            format!(
                "turbine inlet after the throttle valve ({} MPa)",
                ti.props.p
            ),
            ti,
        ));
    }
    let lp_word = if crossover.is_some() {
        "intermediate-pressure"
    } else {
        "low-pressure"
    };
    if let Some((prh, cold, hot)) = reheat_states {
        points.push((
            format!("high-pressure turbine exhaust (cold reheat, {prh} MPa)"),
            cold,
        ));
        points.push((format!("hot reheat ({lp_word} turbine inlet)"), hot));
    }
    if let (Some(x), Some(cs)) = (crossover, cross_state) {
        points.push((
            format!(
                "crossover ({} turbine exhaust, low-pressure turbine inlet, {x} MPa)",
                if reheat_states.is_some() {
                    "intermediate-pressure"
                } else {
                    "high-pressure"
                }
            ),
            cs,
        ));
    }
    for h in &heaters {
        points.push((
            format!(
                "extraction to {} heater at {} MPa",
                kind_name(h.spec.kind),
                h.spec.p
            ),
            h.ext,
        ));
        if h.extra.line_dp > 0.0 {
            points.push((
                format!(
                    "extraction steam at the shell of {} heater at {} MPa ({} MPa)",
                    kind_name(h.spec.kind),
                    h.spec.p,
                    h.shell_p
                ),
                h.shell,
            ));
        }
    }
    if leaving.is_some() {
        points.push((
            "expansion-line end point (last-stage exhaust before the leaving loss)".into(),
            elep,
        ));
    }
    points.push(("turbine exhaust (condenser inlet)".into(), exhaust));
    points.push(("condensate (condenser outlet)".into(), condensate));
    for (i, pump) in pumps.iter().enumerate() {
        points.push((format!("pump {} outlet", i + 1), pump.outlet));
    }
    // The feedwater after each heater whose drain is pumped forward (the next heater's inlet,
    // or the boiler's for the highest).
    let after_mix = |j: usize| -> State {
        if j == 0 {
            boiler_in
        } else {
            heaters[j - 1].fw_in
        }
    };
    for (j, h) in heaters.iter().enumerate() {
        points.push((
            format!(
                "feedwater leaving {} heater at {} MPa",
                kind_name(h.spec.kind),
                h.spec.p
            ),
            h.fw_out,
        ));
        if h.spec.kind == HeaterKind::Closed {
            points.push((
                format!("drain of closed heater at {} MPa", h.spec.p),
                h.drain,
            ));
        }
        if let Some((pd, _)) = h.pumped {
            points.push((
                format!("drain pump outlet of closed heater at {} MPa", h.spec.p),
                pd,
            ));
            points.push((
                format!(
                    "feedwater after mixing with the pumped drain of closed heater at {} MPa",
                    h.spec.p
                ),
                after_mix(j),
            ));
        }
    }
    points.push(("feedwater entering the boiler".into(), boiler_in));
    let points = points
        .into_iter()
        .enumerate()
        .map(|(i, (label, state))| Point {
            number: i + 1,
            label,
            state,
        })
        .collect();
    let extractions = heaters
        .iter()
        .enumerate()
        .zip(&y)
        .map(|((j, h), yj)| {
            let closed = h.spec.kind == HeaterKind::Closed;
            Extraction {
                p: h.spec.p,
                kind: h.spec.kind,
                fraction: *yj,
                state: h.ext,
                feedwater_out: h.fw_out,
                shell_p: h.shell_p,
                shell_state: h.shell,
                drain: closed.then_some(h.drain),
                drain_mode: closed.then_some(h.extra.drain),
                drain_fraction: closed.then(|| flows.drain_out(j)),
            }
        })
        .collect();
    let sections = secs
        .iter()
        .zip(&w_sec)
        .map(|((s, end), w)| -> Result<Section> {
            let iso = ps_state(end.state.props.p, s.inlet.props.s)?;
            Ok(Section {
                name: s.name,
                inlet: s.inlet,
                exhaust: end.state,
                efficiency: s.eta,
                expansion_efficiency: (s.inlet.props.h - end.state.props.h)
                    / (s.inlet.props.h - iso.props.h),
                work: *w,
                moisture_loss: match basis {
                    EfficiencyBasis::Section => end.moisture,
                    EfficiencyBasis::Stage => None,
                },
            })
        })
        .collect::<Result<Vec<_>>>()?;
    Ok(RankineResult {
        points,
        extractions,
        turbine_work: w_t,
        pump_work: w_p,
        net_work: w_net,
        heat_input: q_in,
        heat_rejected: q_out,
        thermal_efficiency: eta,
        heat_rate: 3600.0 / eta,
        heat_rate_btu: 3600.0 / eta / BTU_KJ,
        steam_rate: 3600.0 / w_net,
        back_work_ratio: w_p / w_t,
        flow: flow_kg,
        // The net power asked for is echoed as given; without drive losses and station load
        // the flow's is flow times net work, as it always was. Otherwise the chain's.
        net_power: match (spec.net_power, flow_kg) {
            (Some(pw), _) => Some(pw),
            (None, Some(f))
                if plant.mechanical == DriveLoss::None
                    && plant.generator == DriveLoss::None
                    && plant.auxiliary_power == 0.0 =>
            {
                Some(f * w_net)
            }
            _ => power.map(|p| p.net_power),
        },
        exhaust_moisture: moisture_e,
        energy_residual: residual,
        warnings,
        mass_residual,
        condenser_p: pc,
        efficiency_basis: basis,
        sections,
        leaving,
        power,
        gross_heat_rate: gross_hr,
        net_heat_rate: net_hr,
        condenser: None,
    })
}

fn velocity_warning(l: &LeavingLoss) -> Option<Warning> {
    if l.velocity > EXHAUST_VELOCITY_WARNING {
        let v = |x: f64| Arg::from(Quantity::new("velocity", Dim::Speed, x));
        Some(Warning::with(
            Code::ExhaustVelocityHigh,
            "LP exhaust annulus velocity {} is above about {}: exhaust losses climb steeply towards choking there and only V^2/2 is modelled; check the exhaust area and the flow",
            &[v(l.velocity), v(EXHAUST_VELOCITY_WARNING)],
        ))
    } else {
        None
    }
}

/// The boiler steam flow (kg/s) that gives the net power `pw` (kW). With a leaving loss the
/// turbine power is f w_t0 - K f^3 (K = x_e (x_e v_e / A)^2 / 2000), so the net power is
/// a f - b f^3 - c; Newton's method from the left converges monotonically on the rising branch.
fn flow_for_power(
    pw: f64,
    w_t0: f64,
    w_p: f64,
    x_e: f64,
    v_e: f64,
    plant: &RankinePlant,
) -> Result<f64> {
    let (em, lm) = match plant.mechanical {
        DriveLoss::None => (1.0, 0.0),
        DriveLoss::Efficiency(e) => (e, 0.0),
        DriveLoss::Fixed(l) => (1.0, l),
    };
    let (eg, lg) = match plant.generator {
        DriveLoss::None => (1.0, 0.0),
        DriveLoss::Efficiency(e) => (e, 0.0),
        DriveLoss::Fixed(l) => (1.0, l),
    };
    let a = eg * em * w_t0 - w_p;
    let c = eg * lm + lg + plant.auxiliary_power;
    if a <= 0.0 {
        return Err(Error::infeasible(
            "the pumps and the drive losses take all of the turbine work: no flow gives a net power",
        ));
    }
    let b = match plant.exhaust_area {
        Some(area) => eg * em * x_e * (x_e * v_e / area).powi(2) / 2000.0,
        None => 0.0,
    };
    if b == 0.0 {
        if em == 1.0 && eg == 1.0 && c == 0.0 {
            // The textbook case: exactly the net power over the net work.
            return Ok(pw / (w_t0 - w_p));
        }
        return Ok((pw + c) / a);
    }
    let f_peak = (a / (3.0 * b)).sqrt();
    let p_peak = a * f_peak - b * f_peak.powi(3) - c;
    if pw > p_peak {
        return Err(Error::infeasible_with(
            "the leaving loss grows with the cube of the flow: with an exhaust area of {} this cycle gives at most {} net (at {} of steam); a larger net power needs a larger exhaust area",
            &[
                Quantity::new("exhaust_area", Dim::Area, plant.exhaust_area.unwrap_or(0.0)).into(),
                power(p_peak),
                mass_flow("flow", f_peak),
            ],
        ));
    }
    let mut f = ((pw + c) / a).min(f_peak);
    for _ in 0..100 {
        let g = a * f - b * f.powi(3) - c - pw;
        let dg = a - 3.0 * b * f * f;
        if dg <= 0.0 {
            break;
        }
        let step = g / dg;
        f -= step;
        if step.abs() <= 1e-15 * f {
            return Ok(f);
        }
    }
    Err(Error::not_converged(
        "the steam flow for the net power with a leaving loss",
        100,
    ))
}

/// The flows of the feedwater train per kg of boiler steam, from the extraction fractions.
struct Flows<'a> {
    heaters: &'a [Heater],
    y: &'a [f64],
}

impl<'a> Flows<'a> {
    fn new(heaters: &'a [Heater], y: &'a [f64]) -> Self {
        Flows { heaters, y }
    }
    fn n(&self) -> usize {
        self.heaters.len()
    }
    fn closed(&self, i: usize) -> bool {
        self.heaters[i].spec.kind == HeaterKind::Closed
    }
    fn pumped(&self, i: usize) -> bool {
        self.heaters[i].pumped.is_some()
    }
    /// The open heater directly above j, if any.
    fn open_above(&self, j: usize) -> Option<usize> {
        (0..j.min(self.n())).rev().find(|&i| !self.closed(i))
    }
    /// The extractions whose sum reduces the feedwater flow of j's segment: those at or above
    /// the open heater directly above j.
    fn fset(&self, j: usize) -> Vec<usize> {
        match self.open_above(j) {
            Some(k) => (0..=k).collect(),
            None => vec![],
        }
    }
    /// The closed heaters whose drains cascade into j (the condenser for j = n): those directly
    /// above it, up to an open heater or a heater whose drain is pumped forward.
    fn drains_into(&self, j: usize) -> Vec<usize> {
        let mut v = Vec::new();
        let mut i = j;
        while i > 0 {
            i -= 1;
            if self.closed(i) && !self.pumped(i) {
                v.push(i);
            } else {
                break;
            }
        }
        v
    }
    /// The closed heaters at or above j in j's segment whose drains are pumped forward.
    fn pumped_at_or_above(&self, j: usize) -> Vec<usize> {
        let from = self.open_above(j).map(|k| k + 1).unwrap_or(0);
        (from..=j.min(self.n() - 1))
            .filter(|&i| self.closed(i) && self.pumped(i))
            .collect()
    }
    /// Drain flow leaving closed heater i: its extraction and the drains cascaded into it.
    fn drain_out(&self, i: usize) -> f64 {
        self.y[i] + self.drains_into(i).iter().map(|&l| self.y[l]).sum::<f64>()
    }
    /// Flow at the top of j's segment (leaving the open heater below its upper end).
    fn segment(&self, j: usize) -> f64 {
        1.0 - self.fset(j).iter().map(|&i| self.y[i]).sum::<f64>()
    }
    /// Feedwater through the tubes of closed heater j.
    fn tube(&self, j: usize) -> f64 {
        self.segment(j)
            - self
                .pumped_at_or_above(j)
                .iter()
                .map(|&i| self.drain_out(i))
                .sum::<f64>()
    }
    /// Flow through a pump (main or condensate): its segment's flow less the drains pumped
    /// forward into that segment.
    fn pump(&self, p: &Pump) -> f64 {
        let top = match p.top {
            Some(o) => 1.0 - (0..=o).map(|i| self.y[i]).sum::<f64>(),
            None => 1.0,
        };
        if !self.heaters.iter().any(|h| h.pumped.is_some()) {
            return top;
        }
        let from = p.top.map(|o| o + 1).unwrap_or(0);
        let pumped: f64 = (from..p.bottom)
            .filter(|&i| self.closed(i) && self.pumped(i))
            .map(|i| self.drain_out(i))
            .sum();
        top - pumped
    }
    /// Largest mass residual: the condenser (exhaust plus cascaded drains against the
    /// condensate pump), each open heater (inflows against its outflow) and the boiler
    /// (feedwater against the 1 kg of steam).
    fn mass_residual(&self, pumps: &[Pump], cond_flow: f64) -> f64 {
        let mut r: f64 = 0.0;
        for p in pumps {
            // What enters the segment at its bottom: the condenser's outflow, or the open
            // heater's.
            let inflow = if p.bottom == self.n() {
                cond_flow
            } else {
                let j = p.bottom;
                let fw_in = self.pump_below(pumps, j);
                fw_in + self.y[j] + self.drains_into(j).iter().map(|&i| self.y[i]).sum::<f64>()
            };
            r = r.max((inflow - self.pump(p)).abs());
        }
        // The boiler: the top segment's pump and the drains pumped forward above it.
        if let Some(top) = pumps.iter().find(|p| p.top.is_none()) {
            let from = 0;
            let pumped: f64 = (from..top.bottom.min(self.n()))
                .filter(|&i| self.closed(i) && self.pumped(i))
                .map(|i| self.drain_out(i))
                .sum();
            r = r.max((self.pump(top) + pumped - 1.0).abs());
        }
        r
    }
    /// The feedwater arriving at open heater j from below: the pump of the segment below and
    /// the drains pumped forward into that segment.
    fn pump_below(&self, pumps: &[Pump], j: usize) -> f64 {
        pumps
            .iter()
            .find(|p| p.top == Some(j))
            .map(|p| {
                let pumped: f64 = (j + 1..p.bottom)
                    .filter(|&i| self.closed(i) && self.pumped(i))
                    .map(|i| self.drain_out(i))
                    .sum();
                self.pump(p) + pumped
            })
            .unwrap_or(0.0)
    }
}

/// The heater energy balances: a linear system in the extraction fractions.
fn solve_linear_system(heaters: &[Heater]) -> Result<Vec<f64>> {
    let n = heaters.len();
    let zero = vec![0.0; n];
    let f = Flows::new(heaters, &zero);
    let mut a = vec![vec![0.0; n]; n];
    let mut b = vec![0.0; n];
    for j in 0..n {
        let h = &heaters[j];
        let h_d_above = if j > 0 {
            heaters[j - 1].drain.props.h
        } else {
            0.0
        };
        let (aj, bj, cj) = match h.spec.kind {
            HeaterKind::Closed => (
                h.shell.props.h - h.drain.props.h,
                h_d_above - h.drain.props.h,
                h.fw_out.props.h - h.fw_in.props.h,
            ),
            HeaterKind::Open => (
                h.shell.props.h - h.fw_in.props.h,
                h_d_above - h.fw_in.props.h,
                h.fw_out.props.h - h.fw_in.props.h,
            ),
        };
        a[j][j] += aj;
        for i in f.drains_into(j) {
            a[j][i] += bj;
        }
        for i in f.fset(j) {
            a[j][i] += cj;
        }
        // A closed heater's tube flow, and an open heater's outflow, exclude the drains pumped
        // forward at or above it in its segment (they join the feedwater further up).
        for i in f.pumped_at_or_above(j) {
            a[j][i] += cj;
            for l in f.drains_into(i) {
                a[j][l] += cj;
            }
        }
        b[j] = cj;
    }
    solve_linear(a, b)
}

/// Zone checks of the closed heaters once the flows are known: a negative TTD must be paid for
/// by the extraction steam's superheat (the desuperheating zone), and a drain cooler must not
/// heat the feedwater to the shell's saturation temperature.
fn check_heater_zones(heaters: &[Heater], flows: &Flows) -> Result<()> {
    for (j, h) in heaters.iter().enumerate() {
        if h.spec.kind != HeaterKind::Closed {
            continue;
        }
        let (tsat, _, _) = state::saturation_p(h.shell_p.min(state::P_C))?;
        let mt = flows.tube(j);
        if mt <= 0.0 {
            return Err(Error::infeasible_with(
                &format!("closed heater at {{}}: no feedwater would pass its tubes ({mt:.5} per kg of boiler steam)"),
                &[pressure("p", h.spec.p)],
            ));
        }
        if h.spec.ttd < 0.0 && h.fw_out.props.t > tsat {
            let at_sat = pt(h.fw_out.props.p, tsat)?;
            let need = mt * (h.fw_out.props.h - at_sat.props.h);
            let superheat = (h.shell.props.h - sat_vapour(h.shell_p)?.props.h).max(0.0);
            let have = flows.y[j] * superheat;
            if need > have {
                return Err(Error::infeasible_with(
                    "closed heater at {}: a TTD of {} needs {} (per kg of boiler steam) to heat the feedwater above the shell's saturation temperature {}, but the extraction steam's superheat brings only {}: the desuperheating zone cannot do it; raise the TTD",
                    &[
                        pressure("p", h.spec.p),
                        t_difference("ttd", h.spec.ttd),
                        enthalpy("h", need),
                        temperature("T", tsat),
                        enthalpy("h", have),
                    ],
                ));
            }
        }
        if h.extra.dca.is_some() {
            let d = flows.drain_out(j);
            let sat = sat_liquid(h.shell_p)?;
            let h_dc = h.fw_in.props.h + d * (sat.props.h - h.drain.props.h) / mt;
            let t_dc = ph(h.fw_in.props.p, h_dc)?.props.t;
            if t_dc >= tsat {
                return Err(Error::infeasible_with(
                    "closed heater at {}: the drain cooler would heat the feedwater to {}, not below the shell's saturation temperature {} (a temperature cross in the drain-cooling zone); lower the drain-cooler approach",
                    &[
                        pressure("p", h.spec.p),
                        temperature("T", t_dc),
                        temperature("T", tsat),
                    ],
                ));
            }
        }
    }
    Ok(())
}

fn kind_name(k: HeaterKind) -> &'static str {
    match k {
        HeaterKind::Open => "open",
        HeaterKind::Closed => "closed",
    }
}
