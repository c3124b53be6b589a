//! The Rankine cycle with optional reheat and any number of open (direct-contact) and closed
//! feedwater heaters.
//!
//! Conventions (documented in the API): the turbine efficiency applies from each turbine's inlet
//! (the throttle for the high-pressure turbine, the hot reheat for the low-pressure turbine) to
//! every extraction point and to its exhaust; a pump follows the condenser and every open heater,
//! raising the feedwater to the next open heater's pressure (or the boiler's); closed heaters
//! drain as saturated liquid at their extraction pressure, cascading (throttled) to the next
//! lower-pressure heater or the condenser; closed-heater feedwater leaves at the saturation
//! temperature of the extraction steam minus the heater's terminal temperature difference.
//! All results are per kg of steam leaving the boiler, scaled by the flow when one is given.
//!
//! Units: p MPa, T K, h kJ/kg, s kJ/(kg K), specific work kJ/kg, flow kg/s, power kW.

use super::components::{pump_raise, turbine_expand, PumpEfficiencyKind, TurbineSpec};
use super::warnings::{Code, Warning};
use super::{pt, sat_liquid};
use crate::error::{Bound, Error, Result};
use crate::water::state::{self, State};

/// IT Btu in kJ (exact by definition; common practice, no source).
const BTU_KJ: f64 = 1.055_055_852_62;

/// Kind of feedwater heater.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum HeaterKind {
    /// Open (direct-contact) heater: extraction steam mixes with the feedwater, leaving as
    /// saturated liquid at the heater pressure.
    Open,
    /// Closed (shell-and-tube) heater with drains cascaded backward.
    Closed,
}

/// A feedwater heater.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HeaterSpec {
    /// Extraction (shell) pressure, MPa.
    pub p: f64,
    /// Open or closed.
    pub kind: HeaterKind,
    /// Terminal temperature difference of a closed heater, K (0 for ideal).
    pub ttd: f64,
}

/// A Rankine cycle specification.
#[derive(Debug, Clone, PartialEq)]
pub struct RankineSpec {
    /// Boiler (throttle) pressure, MPa.
    pub boiler_p: f64,
    /// Throttle temperature, K.
    pub boiler_t: f64,
    /// Reheat pressure (MPa) and temperature (K).
    pub reheat: Option<(f64, f64)>,
    /// Condenser pressure, MPa.
    pub condenser_p: f64,
    /// Turbine isentropic efficiency.
    pub turbine_efficiency: f64,
    /// Pump isentropic efficiency.
    pub pump_efficiency: f64,
    /// Feedwater heaters, any order.
    pub heaters: Vec<HeaterSpec>,
    /// Steam flow leaving the boiler, kg/s.
    pub flow: Option<f64>,
    /// Net power wanted, kW (gives the flow).
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
    /// Heater pressure, MPa.
    pub p: f64,
    /// Heater kind.
    pub kind: HeaterKind,
    /// Extraction per kg of boiler steam.
    pub fraction: f64,
    /// Extraction steam state.
    pub state: State,
    /// Feedwater leaving the heater.
    pub feedwater_out: State,
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
    /// Net power, kW (given or from the flow).
    pub net_power: Option<f64>,
    /// Exhaust moisture at the condenser inlet.
    pub exhaust_moisture: f64,
    /// First-law residual |q_in - q_out - w_net| / q_in.
    pub energy_residual: f64,
    /// Warnings.
    pub warnings: Vec<Warning>,
}

struct Heater {
    spec: HeaterSpec,
    /// Extraction state.
    ext: State,
    /// Feedwater in and out.
    fw_in: State,
    fw_out: State,
    /// Drain state (saturated liquid at p) for closed heaters.
    drain: State,
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

/// Solves a Rankine cycle.
pub fn rankine(spec: &RankineSpec) -> Result<RankineResult> {
    let pb = check_p("boiler_p", spec.boiler_p)?;
    let pc = check_p("condenser_p", spec.condenser_p)?;
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
    let mut heaters_spec = spec.heaters.clone();
    heaters_spec.sort_by(|a, b| b.p.total_cmp(&a.p));
    for (i, h) in heaters_spec.iter().enumerate() {
        check_p("heaters.p", h.p)?;
        if h.p >= pb || h.p <= pc {
            return Err(Error::invalid(format!(
                "heater at {} MPa: its pressure must lie between the condenser ({pc} MPa) and the boiler ({pb} MPa)",
                h.p
            )));
        }
        if i > 0 && (heaters_spec[i - 1].p - h.p).abs() <= 1e-12 * h.p {
            return Err(Error::invalid(format!(
                "two heaters at the same pressure {} MPa",
                h.p
            )));
        }
        Error::check_finite("heaters.ttd", h.ttd)?;
    }
    let mut warnings = Vec::new();
    let throttle = pt(pb, spec.boiler_t)?;
    let eta_t = spec.turbine_efficiency;
    let reheat = match spec.reheat {
        Some((prh, trh)) => {
            check_p("reheat_p", prh)?;
            if prh >= pb || prh <= pc {
                return Err(Error::invalid(format!(
                    "the reheat pressure {prh} MPa must lie between the condenser and the boiler pressures"
                )));
            }
            let cold = turbine_expand(&throttle, prh, TurbineSpec::Efficiency(eta_t), None)?.outlet;
            let hot = pt(prh, trh)?;
            if hot.props.h <= cold.props.h {
                return Err(Error::infeasible(
                    "the reheat temperature is below the high-pressure turbine exhaust temperature",
                ));
            }
            Some((prh, cold, hot))
        }
        None => None,
    };
    // Expansion-line state at pressure p (extraction at the reheat pressure is cold reheat).
    let line = |p: f64| -> Result<State> {
        match reheat {
            Some((prh, cold, hot)) => {
                if p >= prh {
                    if (p - prh).abs() <= 1e-12 * prh {
                        Ok(cold)
                    } else {
                        Ok(
                            turbine_expand(&throttle, p, TurbineSpec::Efficiency(eta_t), None)?
                                .outlet,
                        )
                    }
                } else {
                    Ok(turbine_expand(&hot, p, TurbineSpec::Efficiency(eta_t), None)?.outlet)
                }
            }
            None => Ok(turbine_expand(&throttle, p, TurbineSpec::Efficiency(eta_t), None)?.outlet),
        }
    };
    let exhaust = line(pc)?;
    // Feedwater line, from the condenser upward.
    let n = heaters_spec.len();
    let mut open_above: Vec<f64> = heaters_spec
        .iter()
        .filter(|h| h.kind == HeaterKind::Open)
        .map(|h| h.p)
        .collect();
    open_above.sort_by(|a, b| a.total_cmp(b));
    // Discharge pressure of the pump whose segment starts at pressure p_start.
    let discharge = |p_start: f64| -> f64 {
        open_above
            .iter()
            .copied()
            .find(|&po| po > p_start * (1.0 + 1e-12))
            .unwrap_or(pb)
    };
    let condensate = sat_liquid(pc)?;
    let mut points: Vec<(String, State)> = Vec::new();
    let mut pumps: Vec<(f64, f64, State, State)> = Vec::new(); // (segment start p, work, in, out)
    let eta_p = spec.pump_efficiency;
    let mut fw = condensate;
    let p1 = discharge(pc);
    let pr = pump_raise(&fw, p1, eta_p, PumpEfficiencyKind::Isentropic, None)?;
    pumps.push((pc, pr.specific_work, fw, pr.outlet));
    fw = pr.outlet;
    let mut heaters: Vec<Heater> = Vec::with_capacity(n);
    // Ascending order for the feedwater walk.
    for spec_h in heaters_spec.iter().rev() {
        let ext = line(spec_h.p)?;
        match spec_h.kind {
            HeaterKind::Closed => {
                let (tsat, _, _) = state::saturation_p(spec_h.p.min(state::P_C))?;
                let t_out = tsat - spec_h.ttd;
                let out = pt(fw.props.p, t_out)?;
                if out.props.h <= fw.props.h {
                    return Err(Error::infeasible(format!(
                        "the closed heater at {} MPa would not heat the feedwater (it arrives at {:.2} K, the heater can reach {:.2} K)",
                        spec_h.p, fw.props.t, t_out
                    )));
                }
                let drain = sat_liquid(spec_h.p)?;
                heaters.push(Heater {
                    spec: *spec_h,
                    ext,
                    fw_in: fw,
                    fw_out: out,
                    drain,
                });
                fw = out;
            }
            HeaterKind::Open => {
                let out = sat_liquid(spec_h.p)?;
                if fw.props.p > spec_h.p * (1.0 + 1e-9) {
                    return Err(Error::invalid(format!(
                        "feedwater at {} MPa cannot enter the open heater at {} MPa",
                        fw.props.p, spec_h.p
                    )));
                }
                if out.props.h <= fw.props.h {
                    return Err(Error::infeasible(format!(
                        "the feedwater reaching the open heater at {} MPa is already at or above its saturation temperature",
                        spec_h.p
                    )));
                }
                heaters.push(Heater {
                    spec: *spec_h,
                    ext,
                    fw_in: fw,
                    fw_out: out,
                    drain: out,
                });
                let next = discharge(spec_h.p);
                let pr = pump_raise(&out, next, eta_p, PumpEfficiencyKind::Isentropic, None)?;
                pumps.push((spec_h.p, pr.specific_work, out, pr.outlet));
                fw = pr.outlet;
            }
        }
    }
    heaters.reverse(); // highest pressure first again, index j
    let boiler_in = fw;
    // Linear system for the extraction fractions y_j.
    let ps: Vec<f64> = heaters.iter().map(|h| h.spec.p).collect();
    // Fset(j): the extractions whose sum reduces the feedwater flow seen by heater j.
    // Closed: extractions at pressures >= the open heater directly above j. Open: same, for
    // the segment above it.
    let open_above_of = |j: usize| -> Option<usize> {
        (0..j)
            .rev()
            .find(|&i| heaters[i].spec.kind == HeaterKind::Open)
    };
    let fset = |j: usize| -> Vec<usize> {
        match open_above_of(j) {
            Some(k) => (0..=k).collect(),
            None => vec![],
        }
    };
    // Drains into j: the closed heaters directly above j, up to (excluding) an open heater.
    let drains_into = |j: usize| -> Vec<usize> {
        let mut v = Vec::new();
        let mut i = j;
        while i > 0 {
            i -= 1;
            if heaters[i].spec.kind == HeaterKind::Closed {
                v.push(i);
            } else {
                break;
            }
        }
        v
    };
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
                h.ext.props.h - h.drain.props.h,
                h_d_above - h.drain.props.h,
                h.fw_out.props.h - h.fw_in.props.h,
            ),
            HeaterKind::Open => (
                h.ext.props.h - h.fw_in.props.h,
                h_d_above - h.fw_in.props.h,
                h.fw_out.props.h - h.fw_in.props.h,
            ),
        };
        a[j][j] += aj;
        for i in drains_into(j) {
            a[j][i] += bj;
        }
        for i in fset(j) {
            a[j][i] += cj;
        }
        b[j] = cj;
    }
    let y = if n > 0 { solve_linear(a, b)? } else { vec![] };
    for (j, yj) in y.iter().enumerate() {
        if *yj < -1e-12 || !yj.is_finite() {
            return Err(Error::infeasible(format!(
                "the heater at {} MPa would need a negative extraction ({yj:.5}): its feedwater is already hotter than its steam can make it",
                ps[j]
            )));
        }
    }
    let sum_y: f64 = y.iter().sum();
    if sum_y >= 1.0 {
        return Err(Error::infeasible(
            "the extractions would take all of the steam",
        ));
    }
    // Turbine work: sections between successive pressure points on the expansion line.
    let mut tps: Vec<f64> = ps.clone();
    if let Some((prh, _, _)) = reheat {
        if !tps.iter().any(|&p| (p - prh).abs() <= 1e-12 * prh) {
            tps.push(prh);
        }
    }
    tps.push(pc);
    tps.sort_by(|a, b| b.total_cmp(a));
    let mut w_t = 0.0;
    let mut flow = 1.0;
    let mut st = throttle;
    for &p in &tps {
        let end = line(p)?;
        w_t += flow * (st.props.h - end.props.h);
        for (j, &pj) in ps.iter().enumerate() {
            if (pj - p).abs() <= 1e-12 * p {
                flow -= y[j];
            }
        }
        st = match reheat {
            Some((prh, _, hot)) if (p - prh).abs() <= 1e-12 * prh => hot,
            _ => end,
        };
    }
    let exhaust_flow = flow;
    // Pumps: segment flows.
    let seg_flow = |p_start: f64| -> f64 {
        // Flow in the segment above p_start = 1 - extractions at pressures >= next open heater
        // above the segment's discharge... i.e. at or above the discharge pressure's open heater.
        let pd = discharge(p_start);
        if pd >= pb {
            1.0
        } else {
            1.0 - ps
                .iter()
                .zip(&y)
                .filter(|(p, _)| **p >= pd * (1.0 - 1e-12))
                .map(|(_, y)| *y)
                .sum::<f64>()
        }
    };
    let mut w_p = 0.0;
    for (p_start, w, _, _) in &pumps {
        w_p += seg_flow(*p_start) * w;
    }
    let reheat_flow = match reheat {
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
    if let Some((_, cold, hot)) = reheat {
        q_in += reheat_flow * (hot.props.h - cold.props.h);
    }
    // Condenser: exhaust steam + drains of the closed heaters below the lowest open heater.
    let to_condenser: Vec<usize> = {
        let mut v = Vec::new();
        for j in (0..n).rev() {
            if heaters[j].spec.kind == HeaterKind::Closed {
                v.push(j);
            } else {
                break;
            }
        }
        v
    };
    let drain_flow: f64 = to_condenser.iter().map(|&j| y[j]).sum();
    // All of it leaves the lowest closed heater as saturated liquid at that heater's pressure.
    let drain_h = to_condenser
        .first()
        .map(|&j| heaters[j].drain.props.h)
        .unwrap_or(0.0);
    let cond_flow = exhaust_flow + drain_flow;
    let q_out =
        exhaust_flow * exhaust.props.h + drain_flow * drain_h - cond_flow * condensate.props.h;
    let w_net = w_t - w_p;
    let eta = w_net / q_in;
    let residual = (q_in - q_out - w_net).abs() / q_in;
    let moisture = exhaust.x.map(|x| 1.0 - x).unwrap_or(0.0);
    if moisture > super::MOISTURE_WARNING {
        warnings.push(Warning::new(Code::ExhaustMoisture, format!(
            "turbine exhaust moisture {:.1} % exceeds about 12 % (common practice): consider reheat",
            100.0 * moisture
        )));
    }
    // Flow and power.
    let (flow_kg, power) = match (spec.flow, spec.net_power) {
        (Some(f), None) => {
            Error::check_finite("flow", f)?;
            (Some(f), Some(f * w_net))
        }
        (None, Some(pw)) => {
            Error::check_finite("net_power", pw)?;
            (Some(pw / w_net), Some(pw))
        }
        _ => (None, None),
    };
    // State table.
    points.push(("throttle (boiler outlet)".into(), throttle));
    if let Some((prh, cold, hot)) = reheat {
        points.push((
            format!("high-pressure turbine exhaust (cold reheat, {prh} MPa)"),
            cold,
        ));
        points.push(("hot reheat (low-pressure turbine inlet)".into(), hot));
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
    }
    points.push(("turbine exhaust (condenser inlet)".into(), exhaust));
    points.push(("condensate (condenser outlet)".into(), condensate));
    for (i, (_, _, _, out)) in pumps.iter().enumerate() {
        points.push((format!("pump {} outlet", i + 1), *out));
    }
    for h in &heaters {
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
        .zip(&y)
        .map(|(h, yj)| Extraction {
            p: h.spec.p,
            kind: h.spec.kind,
            fraction: *yj,
            state: h.ext,
            feedwater_out: h.fw_out,
        })
        .collect();
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
        net_power: power,
        exhaust_moisture: moisture,
        energy_residual: residual,
        warnings,
    })
}

fn kind_name(k: HeaterKind) -> &'static str {
    match k {
        HeaterKind::Open => "open",
        HeaterKind::Closed => "closed",
    }
}
