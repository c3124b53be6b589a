//! The site solver: structure checks, degrees of freedom, pressures, then successive
//! substitution between stream states and the linear flow system; results, totals and the
//! energy-flow summary.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s, kW).
//!
//! Invariant: a returned [`Solution`] closes every unit and the site to [`TOLERANCE`].

#![allow(clippy::needless_range_loop, clippy::collapsible_match)] // stream-indexed loops; one arm per unit kind

use super::dof::{self, Of, Row};
use super::*;
use crate::error::{Error, Result};
use crate::plant::components::{self as c, moisture, TurbineSpec};
use crate::plant::{ph, ps, pt, sat_liquid, sat_vapour, MOISTURE_WARNING};
use crate::water::state::{self, Phase, P_C};

const MAX_ITER: usize = 200;
/// Pressure assumed for make-up water with no other pressure (atmospheric, 0.101325 MPa).
const P_ATM: f64 = 0.101_325;

#[derive(Debug, Clone)]
enum Ports {
    Boiler {
        fw: usize,
        steam: usize,
        bd: Option<usize>,
    },
    Turbine {
        inlet: usize,
        order: Vec<usize>,
    },
    One {
        inlet: usize,
        out: usize,
    },
    Desup {
        steam: usize,
        water: usize,
        out: usize,
    },
    Header,
    Deaerator {
        steam: usize,
        out: usize,
        vent: Option<usize>,
    },
    Flash {
        vapour: usize,
        liquid: usize,
    },
    Condenser {
        out: usize,
    },
    Exchanger {
        hi: usize,
        ho: usize,
        ci: usize,
        co: usize,
    },
    User {
        inlet: usize,
        ret: Option<usize>,
    },
    Vent,
    Makeup,
}

struct Net<'a> {
    un: Vec<&'a str>,
    units: Vec<&'a Unit>,
    ins: Vec<Vec<usize>>,
    outs: Vec<Vec<usize>>,
    ports: Vec<Ports>,
    sn: Vec<&'a str>,
    streams: Vec<&'a StreamSpec>,
    from: Vec<usize>,
    to: Vec<usize>,
    fixed: Vec<Option<FixedState>>,
    p: Vec<f64>,
    /// Who fixed each stream's pressure.
    p_source: Vec<Source>,
    /// Flash vapour fraction per unit (0 for others).
    flash_x: Vec<f64>,
}

fn label(net: &Net, u: usize) -> String {
    format!("{} {}", net.units[u].kind(), net.un[u])
}

fn uref(net: &Net, u: usize) -> UnitRef {
    UnitRef::new(net.un[u], net.units[u].kind())
}

fn find_port(
    net_un: &str,
    kind: &str,
    field: &str,
    name: &Option<String>,
    list: &[usize],
    sn: &[&str],
) -> Result<usize> {
    let Some(n) = name else {
        return Err(Error::invalid(format!(
            "{kind} {net_un}: name its {field} stream with `{field}` (one of: {})",
            list.iter().map(|&i| sn[i]).collect::<Vec<_>>().join(", ")
        )));
    };
    list.iter()
        .copied()
        .find(|&i| sn[i] == n.as_str())
        .ok_or_else(|| {
            Error::invalid(format!(
                "{kind} {net_un}: `{field}` = '{n}' is not one of its streams ({})",
                list.iter().map(|&i| sn[i]).collect::<Vec<_>>().join(", ")
            ))
        })
}

fn count(un: &str, kind: &str, what: &str, list: &[usize], lo: usize, hi: usize) -> Result<()> {
    if list.len() < lo || list.len() > hi {
        let want = if lo == hi {
            format!("exactly {lo}")
        } else if hi == usize::MAX {
            format!("at least {lo}")
        } else {
            format!("{lo} to {hi}")
        };
        return Err(Error::invalid(format!(
            "{kind} {un} has {} {what} stream(s); it needs {want}",
            list.len()
        )));
    }
    Ok(())
}

fn build(network: &Network) -> Result<Net<'_>> {
    if network.units.is_empty() {
        return Err(Error::invalid("the network has no units"));
    }
    if network.streams.is_empty() {
        return Err(Error::invalid("the network has no streams"));
    }
    let un: Vec<&str> = network.units.keys().map(String::as_str).collect();
    let units: Vec<&Unit> = network.units.values().collect();
    let sn: Vec<&str> = network.streams.keys().map(String::as_str).collect();
    let streams: Vec<&StreamSpec> = network.streams.values().collect();
    let idx = |name: &str, s: &str, end: &str| -> Result<usize> {
        un.iter().position(|u| *u == name).ok_or_else(|| {
            Error::invalid(format!(
                "stream {s}: `{end}` = '{name}' is not a unit of the network"
            ))
        })
    };
    let mut from = Vec::new();
    let mut to = Vec::new();
    let mut ins = vec![Vec::new(); un.len()];
    let mut outs = vec![Vec::new(); un.len()];
    let mut fixed = Vec::new();
    for (i, s) in streams.iter().enumerate() {
        let f = idx(&s.from, sn[i], "from")?;
        let t = idx(&s.to, sn[i], "to")?;
        if f == t {
            return Err(Error::invalid(format!(
                "stream {}: it leaves and enters the same unit {}",
                sn[i], s.from
            )));
        }
        from.push(f);
        to.push(t);
        outs[f].push(i);
        ins[t].push(i);
        let mut fx = Vec::new();
        if let Some(v) = s.t {
            fx.push(FixedState::T(v));
        }
        if let Some(v) = s.h {
            fx.push(FixedState::H(v));
        }
        if let Some(v) = s.x {
            fx.push(FixedState::X(v));
        }
        if fx.len() > 1 {
            return Err(Error::invalid(format!(
                "over-specified: stream {}: give at most one of T, h, x (with p) — it has {}",
                sn[i],
                fx.len()
            )));
        }
        for (q, v) in [
            ("flow", s.flow),
            ("p", s.p),
            ("T", s.t),
            ("h", s.h),
            ("x", s.x),
        ] {
            if let Some(v) = v {
                Error::check_finite(&format!("streams.{}.{q}", sn[i]), v)?;
            }
        }
        fixed.push(fx.first().copied());
    }
    let mut ports = Vec::new();
    for (u, unit) in units.iter().enumerate() {
        let k = unit.kind();
        let n = un[u];
        let (i, o) = (&ins[u], &outs[u]);
        let port = match unit {
            Unit::Boiler { blowdown, .. } => {
                count(n, k, "inlet (feedwater)", i, 1, 1)?;
                count(n, k, "outlet", o, 1, 2)?;
                let bd = if o.len() == 2 {
                    Some(find_port(n, k, "blowdown", blowdown, o, &sn)?)
                } else {
                    if blowdown.is_some() {
                        find_port(n, k, "blowdown", blowdown, o, &sn)?;
                        return Err(Error::invalid(format!(
                            "boiler {n}: its only outlet cannot be both steam and blowdown"
                        )));
                    }
                    None
                };
                let steam = o.iter().copied().find(|&s| Some(s) != bd).unwrap_or(o[0]);
                Ports::Boiler {
                    fw: i[0],
                    steam,
                    bd,
                }
            }
            Unit::Turbine { .. } => {
                count(n, k, "inlet", i, 1, 1)?;
                count(n, k, "outlet", o, 1, usize::MAX)?;
                Ports::Turbine {
                    inlet: i[0],
                    order: o.clone(),
                }
            }
            Unit::Valve { .. } | Unit::Pump { .. } => {
                count(n, k, "inlet", i, 1, 1)?;
                count(n, k, "outlet", o, 1, 1)?;
                Ports::One {
                    inlet: i[0],
                    out: o[0],
                }
            }
            Unit::Desuperheater { water, .. } => {
                count(n, k, "inlet", i, 2, 2)?;
                count(n, k, "outlet", o, 1, 1)?;
                let w = find_port(n, k, "water", water, i, &sn)?;
                Ports::Desup {
                    steam: if i[0] == w { i[1] } else { i[0] },
                    water: w,
                    out: o[0],
                }
            }
            Unit::Header { .. } => {
                count(n, k, "inlet", i, 1, usize::MAX)?;
                count(n, k, "outlet", o, 1, usize::MAX)?;
                Ports::Header
            }
            Unit::Deaerator { steam, vent, .. } => {
                count(n, k, "inlet", i, 2, usize::MAX)?;
                count(n, k, "outlet", o, 1, 2)?;
                let st = find_port(n, k, "steam", steam, i, &sn)?;
                let v = if o.len() == 2 {
                    Some(find_port(n, k, "vent", vent, o, &sn)?)
                } else {
                    if vent.is_some() {
                        find_port(n, k, "vent", vent, o, &sn)?;
                        return Err(Error::invalid(format!(
                            "deaerator {n}: its only outlet cannot be the vent"
                        )));
                    }
                    None
                };
                let out = o.iter().copied().find(|&s| Some(s) != v).unwrap_or(o[0]);
                Ports::Deaerator {
                    steam: st,
                    out,
                    vent: v,
                }
            }
            Unit::Flash { vapour, .. } => {
                count(n, k, "inlet", i, 1, usize::MAX)?;
                count(n, k, "outlet", o, 2, 2)?;
                let v = find_port(n, k, "vapour", vapour, o, &sn)?;
                Ports::Flash {
                    vapour: v,
                    liquid: if o[0] == v { o[1] } else { o[0] },
                }
            }
            Unit::Condenser { .. } => {
                count(n, k, "inlet", i, 1, usize::MAX)?;
                count(n, k, "outlet", o, 1, 1)?;
                Ports::Condenser { out: o[0] }
            }
            Unit::Exchanger { hot_in, hot_out } => {
                count(n, k, "inlet", i, 2, 2)?;
                count(n, k, "outlet", o, 2, 2)?;
                let hi = find_port(n, k, "hot_in", hot_in, i, &sn)?;
                let ho = find_port(n, k, "hot_out", hot_out, o, &sn)?;
                Ports::Exchanger {
                    hi,
                    ho,
                    ci: if i[0] == hi { i[1] } else { i[0] },
                    co: if o[0] == ho { o[1] } else { o[0] },
                }
            }
            Unit::User { .. } => {
                count(n, k, "inlet (steam)", i, 1, 1)?;
                count(n, k, "outlet (condensate return)", o, 0, 1)?;
                Ports::User {
                    inlet: i[0],
                    ret: o.first().copied(),
                }
            }
            Unit::Vent => {
                count(n, k, "inlet", i, 1, usize::MAX)?;
                count(n, k, "outlet", o, 0, 0)?;
                Ports::Vent
            }
            Unit::Makeup { .. } => {
                count(n, k, "inlet", i, 0, 0)?;
                count(n, k, "outlet", o, 1, usize::MAX)?;
                Ports::Makeup
            }
        };
        ports.push(port);
    }
    let ns = sn.len();
    let nu = un.len();
    Ok(Net {
        un,
        units,
        ins,
        outs,
        ports,
        sn,
        streams,
        from,
        to,
        fixed,
        p: vec![f64::NAN; ns],
        p_source: vec![Source::Missing; ns],
        flash_x: vec![0.0; nu],
    })
}

/// Checks which unit or stream fixes each state; collects under- and over-specifications.
fn check_states(net: &Net, under: &mut Vec<Finding>, over: &mut Vec<Finding>) {
    for (s, f) in net.fixed.iter().enumerate() {
        if f.is_none() {
            continue;
        }
        let u = net.from[s];
        let allowed = match &net.ports[u] {
            Ports::Boiler { steam, .. } => *steam == s,
            Ports::Turbine { .. } | Ports::Exchanger { .. } | Ports::User { .. } => true,
            Ports::Desup { .. } | Ports::Makeup => true,
            _ => false,
        };
        if !allowed {
            let why = match net.units[u] {
                Unit::Header { .. } => "mixing at the header pressure",
                Unit::Valve { .. } => "throttling (constant enthalpy)",
                Unit::Deaerator { .. } => "saturation at the deaerator pressure",
                Unit::Flash { .. } => "saturation at the vessel pressure",
                Unit::Condenser { .. } => "saturation at the condenser pressure",
                Unit::Pump { .. } => "the pump efficiency",
                Unit::Boiler { .. } => "saturation in the drum (blowdown)",
                _ => "the unit",
            };
            over.push(Finding::StateSetBySource {
                stream: net.sn[s].to_string(),
                unit: uref(net, u),
                by: why,
            });
        }
    }
    for (u, unit) in net.units.iter().enumerate() {
        let n = uref(net, u);
        let sn = |s: usize| net.sn[s].to_string();
        match (unit, &net.ports[u]) {
            (
                Unit::Boiler {
                    t, efficiency, p, ..
                },
                Ports::Boiler { steam, .. },
            ) => {
                let sf = net.fixed[*steam].is_some();
                if t.is_some() && sf {
                    over.push(Finding::SteamTemperatureTwice {
                        unit: n.clone(),
                        stream: sn(*steam),
                    });
                }
                if t.is_none() && !sf {
                    under.push(Finding::MissingSteamTemperature {
                        unit: n.clone(),
                        stream: sn(*steam),
                    });
                }
                if efficiency.is_none() {
                    under.push(Finding::MissingBoilerEfficiency { unit: n.clone() });
                }
                if let (Some(a), Some(b)) = (p, net.streams[*steam].p) {
                    if (a - b).abs() > 1e-9 * a {
                        over.push(Finding::SteamPressureConflict {
                            unit: n.clone(),
                            stream: sn(*steam),
                        });
                    }
                }
            }
            (Unit::Turbine { efficiency, .. }, Ports::Turbine { order, .. }) => {
                if efficiency.is_none() {
                    let open: Vec<String> = order
                        .iter()
                        .filter(|&&s| net.fixed[s].is_none())
                        .map(|&s| sn(s))
                        .collect();
                    if !open.is_empty() {
                        under.push(Finding::MissingTurbineEfficiency {
                            unit: n.clone(),
                            outlets: open,
                        });
                    }
                }
            }
            (
                Unit::Pump {
                    efficiency: None, ..
                },
                _,
            ) => under.push(Finding::MissingPumpEfficiency { unit: n.clone() }),
            (Unit::Desuperheater { t, superheat, .. }, Ports::Desup { out, .. }) => {
                let k = t.is_some() as usize
                    + superheat.is_some() as usize
                    + net.fixed[*out].is_some() as usize;
                if k == 0 {
                    under.push(Finding::MissingDesuperheaterTarget {
                        unit: n.clone(),
                        stream: sn(*out),
                    });
                } else if k > 1 {
                    over.push(Finding::DesuperheaterTargetTwice {
                        unit: n.clone(),
                        stream: sn(*out),
                    });
                }
            }
            (
                Unit::Header { p: None }
                | Unit::Deaerator { p: None, .. }
                | Unit::Flash { p: None, .. }
                | Unit::Condenser { p: None },
                _,
            ) => under.push(Finding::MissingPressure { unit: n.clone() }),
            (Unit::Exchanger { .. }, Ports::Exchanger { ho, co, .. }) => {
                if net.fixed[*ho].is_none() && net.fixed[*co].is_none() {
                    under.push(Finding::MissingExchangerOutlet {
                        unit: n.clone(),
                        hot_out: sn(*ho),
                        cold_out: sn(*co),
                    });
                }
            }
            (
                Unit::User {
                    return_fraction,
                    return_t,
                    demand,
                },
                Ports::User { ret, inlet },
            ) => {
                if !(0.0..=1.0).contains(return_fraction) {
                    over.push(Finding::OutOfRange {
                        unit: n.clone(),
                        quantity: "return_fraction",
                        value: *return_fraction,
                        low: 0.0,
                        high: 1.0,
                        interval: Interval::Closed,
                    });
                }
                if let Some(d) = demand {
                    if net.streams[*inlet].flow.is_some() {
                        over.push(Finding::DemandTwice {
                            unit: n.clone(),
                            stream: sn(*inlet),
                        });
                    } else if *d < 0.0 {
                        over.push(Finding::NegativeDemand {
                            unit: n.clone(),
                            value: *d,
                        });
                    }
                }
                match ret {
                    None => {
                        if *return_fraction > 0.0 {
                            over.push(Finding::ReturnWithoutStream {
                                unit: n.clone(),
                                return_fraction: *return_fraction,
                            });
                        }
                        if return_t.is_none() {
                            under.push(Finding::MissingLostCondensateTemperature {
                                unit: n.clone(),
                            });
                        }
                    }
                    Some(r) => {
                        let sf = net.fixed[*r].is_some();
                        if return_t.is_some() && sf {
                            over.push(Finding::ReturnTemperatureTwice {
                                unit: n.clone(),
                                stream: sn(*r),
                            });
                        }
                        if return_t.is_none() && !sf {
                            under.push(Finding::MissingReturnTemperature {
                                unit: n.clone(),
                                stream: sn(*r),
                            });
                        }
                    }
                }
            }
            (Unit::Makeup { t }, _) => {
                for &o in &net.outs[u] {
                    let sf = net.fixed[o].is_some();
                    if t.is_some() && sf {
                        over.push(Finding::MakeupTemperatureTwice {
                            unit: n.clone(),
                            stream: sn(o),
                        });
                    }
                    if t.is_none() && !sf {
                        under.push(Finding::MissingMakeupTemperature {
                            unit: n.clone(),
                            stream: sn(o),
                        });
                    }
                }
            }
            _ => {}
        }
    }
}

/// The pressure a unit imposes on a stream it sends out, if any.
fn src_p(net: &Net, s: usize) -> Option<f64> {
    let u = net.from[s];
    match (net.units[u], &net.ports[u]) {
        (Unit::Boiler { p, .. }, Ports::Boiler { steam, bd, .. }) => {
            let ps = p.or(net.streams[*steam].p);
            if Some(s) == *bd {
                ps.map(|x| x.min(P_C * (1.0 - 1e-9)))
            } else {
                ps
            }
        }
        (Unit::Header { p }, _)
        | (Unit::Deaerator { p, .. }, _)
        | (Unit::Flash { p, .. }, _)
        | (Unit::Condenser { p }, _)
        | (Unit::Valve { p }, _)
        | (Unit::Pump { p, .. }, _)
        | (Unit::Desuperheater { p, .. }, _) => *p,
        (_, Ports::Exchanger { hi, ho, ci, .. }) => {
            let side = if s == *ho { *hi } else { *ci };
            let v = net.p[side];
            v.is_finite().then_some(v)
        }
        _ => None,
    }
}

/// The pressure a unit imposes on a stream it receives, if any.
fn dest_p(net: &Net, s: usize) -> Option<f64> {
    let u = net.to[s];
    match (net.units[u], &net.ports[u]) {
        (Unit::Header { p }, _) | (Unit::Deaerator { p, .. }, _) | (Unit::Condenser { p }, _) => *p,
        (Unit::Desuperheater { p, .. }, Ports::Desup { steam, out, .. }) if s == *steam => {
            p.or_else(|| net.p[*out].is_finite().then_some(net.p[*out]))
        }
        _ => None,
    }
}

fn resolve_pressures(net: &mut Net, under: &mut Vec<Finding>, over: &mut Vec<Finding>) {
    let ns = net.sn.len();
    for s in 0..ns {
        if let Some(p) = net.streams[s].p {
            if let Some(q) = src_p(net, s) {
                let u = net.from[s];
                if (p - q).abs() > 1e-9 * q && !matches!(net.units[u], Unit::Boiler { .. }) {
                    over.push(Finding::PressureSetBySource {
                        stream: net.sn[s].to_string(),
                        unit: uref(net, u),
                        p: q,
                    });
                }
            }
            net.p[s] = p;
            net.p_source[s] = Source::Stream;
        }
    }
    for _ in 0..ns + 2 {
        let mut changed = false;
        for s in 0..ns {
            if net.p[s].is_finite() {
                continue;
            }
            let mut v = src_p(net, s);
            let mut by = net.from[s];
            if v.is_none() {
                v = dest_p(net, s);
                by = net.to[s];
            }
            if v.is_none() {
                by = net.from[s];
                v = match net.units[net.from[s]] {
                    Unit::Makeup { .. } => Some(P_ATM),
                    Unit::User { .. } => {
                        if let Ports::User { inlet, .. } = net.ports[net.from[s]] {
                            net.p[inlet].is_finite().then_some(net.p[inlet])
                        } else {
                            None
                        }
                    }
                    Unit::Desuperheater { .. } => {
                        if let Ports::Desup { steam, .. } = net.ports[net.from[s]] {
                            net.p[steam].is_finite().then_some(net.p[steam])
                        } else {
                            None
                        }
                    }
                    _ => None,
                };
            }
            if let Some(v) = v {
                net.p[s] = v;
                net.p_source[s] = Source::Unit(net.un[by].to_string());
                changed = true;
            }
        }
        if !changed {
            break;
        }
    }
    for s in 0..ns {
        let p = net.p[s];
        if !p.is_finite() {
            under.push(Finding::PressureNotFixed {
                stream: net.sn[s].to_string(),
                from: uref(net, net.from[s]),
                to: uref(net, net.to[s]),
            });
        } else if p <= 0.0 {
            over.push(Finding::PressureNotPositive {
                stream: net.sn[s].to_string(),
                p,
            });
        }
    }
}

fn fixed_state(p: f64, f: FixedState) -> Result<State> {
    match f {
        FixedState::T(t) => pt(p, t),
        FixedState::H(h) => ph(p, h),
        FixedState::X(x) => {
            if !(0.0..=1.0).contains(&x) {
                return Err(Error::invalid(format!("x = {x} is outside 0..1")));
            }
            state::at_px(p, x)
        }
    }
}

fn mix(net: &Net, list: &[usize], m: &[f64], st: &[Option<State>]) -> Option<f64> {
    let known: Vec<usize> = list.iter().copied().filter(|&i| st[i].is_some()).collect();
    if known.is_empty() {
        return None;
    }
    let _ = net;
    let mt: f64 = known.iter().map(|&i| m[i]).sum();
    let e: f64 = known
        .iter()
        .map(|&i| m[i] * st[i].map(|s| s.props.h).unwrap_or(0.0))
        .sum();
    if mt > 1e-12 * known.iter().map(|&i| m[i].abs()).sum::<f64>().max(1e-300) && mt > 0.0 {
        Some(e / mt)
    } else {
        Some(known.iter().map(|&i| st[i].unwrap().props.h).sum::<f64>() / known.len() as f64)
    }
}

/// Outlet target temperature of a desuperheater (K) and whether it was below saturation.
fn desup_target(unit: &Unit, p: f64) -> Result<Option<(f64, bool)>> {
    if let Unit::Desuperheater { t, superheat, .. } = unit {
        if p >= P_C {
            return Err(Error::invalid(
                "a desuperheater outlet above the critical pressure has no superheat",
            ));
        }
        let (ts, _, _) = state::saturation_p(p)?;
        let target = match (t, superheat) {
            (Some(t), _) => *t,
            (None, Some(dt)) => ts + dt,
            _ => return Ok(None),
        };
        Ok(Some((target, target <= ts)))
    } else {
        Ok(None)
    }
}

/// Computes a unit's outlet states from its inlet states; false when inlets are missing.
fn unit_states(net: &mut Net, u: usize, m: &[f64], st: &mut [Option<State>]) -> Result<bool> {
    let unit = net.units[u];
    let ports = net.ports[u].clone();
    let ctx = |e: Error| match e {
        Error::InvalidInput { message } => Error::invalid(format!("{}: {message}", label(net, u))),
        Error::Infeasible { message } => Error::infeasible(format!("{}: {message}", label(net, u))),
        other => other,
    };
    let p = net.p.clone();
    match (unit, ports) {
        (Unit::Boiler { t, .. }, Ports::Boiler { steam, bd, .. }) => {
            st[steam] = Some(match (t, net.fixed[steam]) {
                (Some(t), _) => pt(p[steam], *t).map_err(ctx)?,
                (None, Some(f)) => fixed_state(p[steam], f).map_err(ctx)?,
                _ => unreachable!("checked"),
            });
            if let Some(b) = bd {
                st[b] = Some(sat_liquid(p[b]).map_err(ctx)?);
            }
        }
        (Unit::Turbine { efficiency, .. }, Ports::Turbine { inlet, order }) => {
            let Some(sin) = st[inlet] else {
                return Ok(false);
            };
            let mut prev = sin;
            let mut first = true;
            for &o in &order {
                let po = p[o];
                let out = if let Some(f) = net.fixed[o] {
                    fixed_state(po, f).map_err(ctx)?
                } else if !first && po >= prev.props.p * (1.0 - 1e-12) {
                    prev
                } else {
                    let eta = efficiency.expect("checked");
                    c::turbine_expand(&prev, po, TurbineSpec::Efficiency(eta), None)
                        .map_err(|e| {
                            Error::invalid(format!(
                                "turbine {}: outlet stream {}: {e}",
                                net.un[u], net.sn[o]
                            ))
                        })?
                        .outlet
                };
                st[o] = Some(out);
                prev = out;
                first = false;
            }
        }
        (Unit::Valve { .. }, Ports::One { inlet, out }) => {
            let Some(si) = st[inlet] else {
                return Ok(false);
            };
            st[out] = Some(ph(p[out], si.props.h).map_err(ctx)?);
        }
        (Unit::Pump { efficiency, .. }, Ports::One { inlet, out }) => {
            let Some(si) = st[inlet] else {
                return Ok(false);
            };
            if p[out] <= si.props.p {
                return Err(Error::invalid(format!(
                    "pump {}: the discharge pressure {} MPa is not above the suction pressure {} MPa",
                    net.un[u], p[out], si.props.p
                )));
            }
            let eta = efficiency.expect("checked");
            let iso = ps(p[out], si.props.s).map_err(ctx)?;
            let w = (iso.props.h - si.props.h) / eta;
            st[out] = Some(ph(p[out], si.props.h + w).map_err(ctx)?);
        }
        (Unit::Desuperheater { .. }, Ports::Desup { out, .. }) => {
            let s = match desup_target(unit, p[out]).map_err(ctx)? {
                Some((_, true)) => sat_vapour(p[out]).map_err(ctx)?,
                Some((t, false)) => pt(p[out], t).map_err(ctx)?,
                None => fixed_state(p[out], net.fixed[out].expect("checked")).map_err(ctx)?,
            };
            st[out] = Some(s);
        }
        (Unit::Header { .. }, _) => {
            let Some(h) = mix(net, &net.ins[u], m, st) else {
                return Ok(false);
            };
            for &o in &net.outs[u] {
                st[o] = Some(ph(p[o], h).map_err(ctx)?);
            }
        }
        (Unit::Deaerator { .. }, Ports::Deaerator { out, vent, .. }) => {
            st[out] = Some(sat_liquid(p[out]).map_err(ctx)?);
            if let Some(v) = vent {
                st[v] = Some(sat_vapour(p[v]).map_err(ctx)?);
            }
        }
        (Unit::Flash { p: Some(pv), .. }, Ports::Flash { vapour, liquid }) => {
            if net.ins[u].iter().any(|&i| st[i].is_none()) {
                return Ok(false);
            }
            let h = mix(net, &net.ins[u], m, st).expect("inlets known");
            let mx = ph(*pv, h).map_err(ctx)?;
            let (x, v, l) = match mx.phase {
                Phase::Wet => (
                    mx.x.unwrap_or(0.0),
                    sat_vapour(*pv).map_err(ctx)?,
                    sat_liquid(*pv).map_err(ctx)?,
                ),
                Phase::Liquid => (0.0, sat_vapour(*pv).map_err(ctx)?, mx),
                _ => (1.0, mx, sat_liquid(*pv).map_err(ctx)?),
            };
            net.flash_x[u] = x;
            st[vapour] = Some(v);
            st[liquid] = Some(l);
        }
        (Unit::Condenser { .. }, Ports::Condenser { out }) => {
            st[out] = Some(sat_liquid(p[out]).map_err(ctx)?);
        }
        (Unit::Exchanger { .. }, Ports::Exchanger { hi, ho, ci, co }) => {
            let (Some(shi), Some(sci)) = (st[hi], st[ci]) else {
                return Ok(false);
            };
            match (net.fixed[ho], net.fixed[co]) {
                (Some(fh), Some(fc)) => {
                    st[ho] = Some(fixed_state(p[ho], fh).map_err(ctx)?);
                    st[co] = Some(fixed_state(p[co], fc).map_err(ctx)?);
                }
                (Some(fh), None) => {
                    let sho = fixed_state(p[ho], fh).map_err(ctx)?;
                    let q = m[hi] * (shi.props.h - sho.props.h);
                    let h = if m[ci].abs() > 0.0 {
                        sci.props.h + q / m[ci]
                    } else {
                        sci.props.h
                    };
                    st[ho] = Some(sho);
                    st[co] = Some(ph(p[co], h).map_err(ctx)?);
                }
                (None, Some(fc)) => {
                    let sco = fixed_state(p[co], fc).map_err(ctx)?;
                    let q = m[ci] * (sco.props.h - sci.props.h);
                    let h = if m[hi].abs() > 0.0 {
                        shi.props.h - q / m[hi]
                    } else {
                        shi.props.h
                    };
                    st[co] = Some(sco);
                    st[ho] = Some(ph(p[ho], h).map_err(ctx)?);
                }
                _ => unreachable!("checked"),
            }
        }
        (Unit::User { return_t, .. }, Ports::User { ret: Some(r), .. }) => {
            st[r] = Some(match (return_t, net.fixed[r]) {
                (Some(t), _) => pt(p[r], *t).map_err(ctx)?,
                (None, Some(f)) => fixed_state(p[r], f).map_err(ctx)?,
                _ => unreachable!("checked"),
            });
        }
        (Unit::Makeup { t }, _) => {
            for &o in &net.outs[u] {
                st[o] = Some(match (t, net.fixed[o]) {
                    (Some(t), _) => pt(p[o], *t).map_err(ctx)?,
                    (None, Some(f)) => fixed_state(p[o], f).map_err(ctx)?,
                    _ => unreachable!("checked"),
                });
            }
        }
        _ => {}
    }
    Ok(true)
}

/// Updates every stream state: passes until all are known (seeding a stuck recycle with
/// saturated vapour at its pressure).
fn sweep_states(net: &mut Net, m: &[f64], st: &mut [Option<State>]) -> Result<()> {
    let nu = net.un.len();
    for _ in 0..(2 * nu + 4) {
        // passes until no state moves (a recycle through mixing needs several)
        let mut settled = false;
        for _ in 0..(nu + 50) {
            let before: Vec<f64> = st
                .iter()
                .map(|s| s.map(|s| s.props.h).unwrap_or(f64::NAN))
                .collect();
            for u in 0..nu {
                unit_states(net, u, m, st)?;
            }
            let moved = st.iter().zip(&before).any(|(s, b)| match s {
                Some(s) => !(b.is_finite() && (s.props.h - b).abs() <= 1e-13 * b.abs().max(1.0)),
                None => false,
            });
            if !moved {
                settled = true;
                break;
            }
        }
        if st.iter().all(Option::is_some) {
            if !settled {
                return Err(Error::not_converged(
                    "site balance: stream states around a recycle",
                    nu + 50,
                ));
            }
            return Ok(());
        }
        // seed the first unknown stream
        if let Some(s) = (0..st.len()).find(|&s| st[s].is_none()) {
            let p = net.p[s];
            st[s] = Some(if p < P_C {
                sat_vapour(p)?
            } else {
                ph(p, 2800.0)?
            });
        }
    }
    if st.iter().all(Option::is_some) {
        Ok(())
    } else {
        Err(Error::not_converged(
            "site balance: stream states",
            2 * nu + 4,
        ))
    }
}

fn h(st: &[Option<State>], i: usize) -> f64 {
    st[i].map(|s| s.props.h).unwrap_or(f64::NAN)
}

/// The flow equations at the current states: unit balances first, then specifications.
fn rows(net: &Net, st: &[Option<State>]) -> Vec<Row> {
    let mut bal = Vec::new();
    let mut spec = Vec::new();
    for (u, unit) in net.units.iter().enumerate() {
        let lab = Of::Unit(u);
        let ins = &net.ins[u];
        let outs = &net.outs[u];
        let mass = |extra: &[(usize, f64)]| {
            let mut r = Row::new(lab, "mass balance");
            for &i in ins {
                r.add(i, 1.0);
            }
            for &o in outs {
                r.add(o, -1.0);
            }
            for &(i, c) in extra {
                r.add(i, c);
            }
            r
        };
        match (unit, &net.ports[u]) {
            (
                Unit::Boiler {
                    blowdown_fraction,
                    steam_flow,
                    ..
                },
                Ports::Boiler { fw, steam, bd },
            ) => {
                let f = *blowdown_fraction;
                match bd {
                    Some(b) => {
                        bal.push(mass(&[]));
                        let mut r = Row::new(lab, "blowdown fraction");
                        r.add(*b, 1.0);
                        r.add(*steam, -f / (1.0 - f));
                        bal.push(r);
                    }
                    None => {
                        let mut r = Row::new(lab, "mass balance");
                        r.add(*fw, 1.0);
                        r.add(*steam, -1.0 / (1.0 - f));
                        bal.push(r);
                    }
                }
                if let Some(v) = steam_flow {
                    let mut r = Row::spec(lab, "steam flow");
                    r.add(*steam, 1.0);
                    r.rhs = *v;
                    spec.push(r);
                }
            }
            (Unit::Turbine { power, .. }, Ports::Turbine { inlet, order }) => {
                bal.push(mass(&[]));
                if let Some(pw) = power {
                    let mut r = Row::spec(lab, "power");
                    r.add(*inlet, h(st, *inlet));
                    for &o in order {
                        r.add(o, -h(st, o));
                    }
                    r.rhs = *pw;
                    spec.push(r);
                }
            }
            (Unit::Valve { .. } | Unit::Pump { .. } | Unit::Header { .. }, _)
            | (Unit::Condenser { .. }, _) => bal.push(mass(&[])),
            (Unit::Desuperheater { .. }, _) => {
                bal.push(mass(&[]));
                let mut r = Row::new(lab, "energy balance");
                for &i in ins {
                    r.add(i, h(st, i));
                }
                for &o in outs {
                    r.add(o, -h(st, o));
                }
                bal.push(r);
            }
            (
                Unit::Deaerator {
                    vent_fraction, p, ..
                },
                Ports::Deaerator { steam, vent, .. },
            ) => {
                let f = vent_fraction.unwrap_or(0.0);
                let hv = p.and_then(|p| sat_vapour(p).ok()).map(|s| s.props.h);
                let lost = if vent.is_none() { f } else { 0.0 };
                bal.push(mass(&[(*steam, -lost)]));
                let mut r = Row::new(lab, "energy balance");
                for &i in ins {
                    r.add(i, h(st, i));
                }
                for &o in outs {
                    r.add(o, -h(st, o));
                }
                if lost > 0.0 {
                    r.add(*steam, -lost * hv.unwrap_or(f64::NAN));
                }
                bal.push(r);
                if let (Some(v), Some(f)) = (vent, vent_fraction) {
                    let mut r = Row::spec(lab, "vent fraction");
                    r.add(*v, 1.0);
                    r.add(*steam, -f);
                    spec.push(r);
                }
            }
            (Unit::Flash { .. }, Ports::Flash { vapour, .. }) => {
                bal.push(mass(&[]));
                let mut r = Row::new(lab, "flash split");
                r.add(*vapour, 1.0);
                for &i in ins {
                    r.add(i, -net.flash_x[u]);
                }
                bal.push(r);
            }
            (Unit::Exchanger { .. }, Ports::Exchanger { hi, ho, ci, co }) => {
                let mut r = Row::new(lab, "hot-side mass balance");
                r.add(*hi, 1.0);
                r.add(*ho, -1.0);
                bal.push(r);
                let mut r = Row::new(lab, "cold-side mass balance");
                r.add(*ci, 1.0);
                r.add(*co, -1.0);
                bal.push(r);
                if net.fixed[*ho].is_some() && net.fixed[*co].is_some() {
                    let mut r = Row::new(lab, "energy balance");
                    r.add(*hi, h(st, *hi) - h(st, *ho));
                    r.add(*ci, -(h(st, *co) - h(st, *ci)));
                    bal.push(r);
                }
            }
            (
                Unit::User {
                    demand,
                    return_fraction,
                    ..
                },
                Ports::User { inlet, ret },
            ) => {
                if let Some(r0) = ret {
                    let mut r = Row::new(lab, "condensate return fraction");
                    r.add(*r0, 1.0);
                    r.add(*inlet, -return_fraction);
                    bal.push(r);
                }
                if let Some(d) = demand {
                    let mut r = Row::spec(lab, "steam demand");
                    r.add(*inlet, 1.0);
                    r.rhs = *d;
                    spec.push(r);
                }
            }
            _ => {}
        }
    }
    for (s, sp) in net.streams.iter().enumerate() {
        if let Some(f) = sp.flow {
            let mut r = Row::spec(Of::Stream(s), "fixed flow");
            r.add(s, 1.0);
            r.rhs = f;
            spec.push(r);
        }
    }
    bal.extend(spec);
    bal
}

fn uniq<T: PartialEq>(v: &mut Vec<T>, x: T) {
    if !v.contains(&x) {
        v.push(x);
    }
}

fn equation(net: &Net, row: &Row) -> Equation {
    Equation {
        owner: match row.owner {
            Of::Unit(u) => Owner::Unit(uref(net, u)),
            Of::Stream(s) => Owner::Stream(net.sn[s].to_string()),
        },
        what: row.what,
        specification: row.spec,
    }
}

fn flow_messages(
    net: &Net,
    rows: &[Row],
    a: &dof::Analysis,
    under: &mut Vec<Finding>,
    over: &mut Vec<Finding>,
) {
    let n = net.sn.len();
    let has_makeup = net.units.iter().any(|u| matches!(u, Unit::Makeup { .. }));
    let has_vent = net.units.iter().any(|u| matches!(u, Unit::Vent));
    if a.rank < n {
        let und: Vec<String> = a
            .undetermined
            .iter()
            .map(|&s| net.sn[s].to_string())
            .collect();
        let free: Vec<String> = a.free.iter().map(|&s| net.sn[s].to_string()).collect();
        let mut hints = Vec::new();
        for &s in &a.undetermined {
            for u in [net.from[s], net.to[s]] {
                let nm = net.un[u].to_string();
                match (net.units[u], &net.ports[u]) {
                    (Unit::Turbine { power: None, .. }, _) => {
                        uniq(&mut hints, FlowHint::TurbineFlow { unit: nm })
                    }
                    (Unit::User { demand: None, .. }, Ports::User { inlet, .. }) if *inlet == s => {
                        uniq(&mut hints, FlowHint::UserDemand { unit: nm })
                    }
                    (
                        Unit::Boiler {
                            steam_flow: None, ..
                        },
                        Ports::Boiler { steam, .. },
                    ) if *steam == s => uniq(&mut hints, FlowHint::BoilerSteamFlow { unit: nm }),
                    (Unit::Header { .. }, _) if net.outs[u].contains(&s) => {
                        let os: Vec<String> = net.outs[u]
                            .iter()
                            .filter(|o| a.undetermined.contains(o))
                            .map(|&o| net.sn[o].to_string())
                            .collect();
                        if os.len() > 1 {
                            uniq(
                                &mut hints,
                                FlowHint::HeaderOutlets {
                                    unit: nm,
                                    outlets: os,
                                },
                            )
                        }
                    }
                    (
                        Unit::Deaerator {
                            vent_fraction: None,
                            ..
                        },
                        Ports::Deaerator { vent: Some(v), .. },
                    ) if *v == s => uniq(
                        &mut hints,
                        FlowHint::DeaeratorVent {
                            unit: nm,
                            vent: net.sn[*v].to_string(),
                        },
                    ),
                    (Unit::Vent, _) | (Unit::Makeup { .. }, _) => {
                        uniq(&mut hints, FlowHint::Boundary { unit: uref(net, u) })
                    }
                    _ => {}
                }
            }
        }
        under.push(Finding::FlowsNotFixed {
            missing: n - a.rank,
            undetermined: und,
            free,
            hints,
        });
    }
    for set in &a.clashes {
        let equations: Vec<Equation> = set.iter().map(|&r| equation(net, &rows[r])).collect();
        let mut hints = Vec::new();
        for &r in set {
            let row = &rows[r];
            if let Of::Unit(u) = row.owner {
                if matches!(net.units[u], Unit::Header { .. }) && row.what == "mass balance" {
                    uniq(
                        &mut hints,
                        ClashHint::HeaderNoFreeOutlet {
                            unit: net.un[u].to_string(),
                        },
                    );
                }
            }
        }
        let specs: Vec<Equation> = set
            .iter()
            .filter(|&&r| rows[r].spec)
            .map(|&r| equation(net, &rows[r]))
            .collect();
        if !specs.is_empty() {
            uniq(
                &mut hints,
                ClashHint::RemoveOne {
                    specifications: specs,
                },
            );
        }
        if !has_makeup {
            uniq(&mut hints, ClashHint::AddMakeup);
        }
        if !has_vent && hints.len() < 2 {
            uniq(&mut hints, ClashHint::AddVent);
        }
        over.push(Finding::EquationsClash { equations, hints });
    }
}

fn dof_error(
    net: &Net,
    under: Vec<Finding>,
    over: Vec<Finding>,
    flows: Option<&dof::Analysis>,
) -> Error {
    let units = net
        .units
        .iter()
        .enumerate()
        .map(|(u, unit)| UnitStatus {
            unit: uref(net, u),
            given: unit.given(),
        })
        .collect();
    let streams = (0..net.sn.len())
        .map(|s| StreamStatus {
            name: net.sn[s].to_string(),
            flow: if net.streams[s].flow.is_some() {
                FlowStatus::Given
            } else {
                match flows {
                    None => FlowStatus::Unknown,
                    Some(a) if a.undetermined.contains(&s) => FlowStatus::Free,
                    Some(_) => FlowStatus::Fixed,
                }
            },
            pressure: net.p_source[s].clone(),
            state: if net.fixed[s].is_some() {
                Source::Stream
            } else {
                Source::Unit(net.un[net.from[s]].to_string())
            },
        })
        .collect();
    let mut findings = under;
    findings.extend(over);
    Error::Specification {
        diagnosis: Box::new(Diagnosis {
            findings,
            units,
            streams,
        }),
    }
}

/// Solves a site network.
pub fn solve(network: &Network) -> Result<Solution> {
    solve_from(network, None)
}

/// Solves a site network starting from a previous solution (matched by stream name).
pub fn solve_from(network: &Network, guess: Option<&Solution>) -> Result<Solution> {
    let mut net = build(network)?;
    let mut under = Vec::new();
    let mut over = Vec::new();
    for (u, unit) in net.units.iter().enumerate() {
        let nm = net.un[u];
        let bad = |q: &'static str, v: f64, lo: f64, hi: f64, over: &mut Vec<Finding>| {
            if !(v.is_finite() && v > lo && v <= hi) {
                over.push(Finding::OutOfRange {
                    unit: UnitRef::new(nm, unit.kind()),
                    quantity: q,
                    value: v,
                    low: lo,
                    high: hi,
                    interval: Interval::OpenClosed,
                });
            }
        };
        match unit {
            Unit::Boiler {
                efficiency,
                blowdown_fraction,
                ..
            } => {
                if let Some(e) = efficiency {
                    bad("efficiency", *e, 0.0, 1.0, &mut over);
                }
                if !(0.0..0.5).contains(blowdown_fraction) {
                    over.push(Finding::OutOfRange {
                        unit: UnitRef::new(nm, unit.kind()),
                        quantity: "blowdown_fraction",
                        value: *blowdown_fraction,
                        low: 0.0,
                        high: 0.5,
                        interval: Interval::ClosedOpen,
                    });
                }
            }
            Unit::Turbine {
                efficiency: Some(e),
                ..
            }
            | Unit::Pump {
                efficiency: Some(e),
                ..
            } => bad("efficiency", *e, 0.0, 1.0, &mut over),
            Unit::Deaerator {
                vent_fraction: Some(f),
                ..
            } if !(0.0..0.5).contains(f) => over.push(Finding::OutOfRange {
                unit: UnitRef::new(nm, unit.kind()),
                quantity: "vent_fraction",
                value: *f,
                low: 0.0,
                high: 0.5,
                interval: Interval::ClosedOpen,
            }),
            _ => {}
        }
    }
    check_states(&net, &mut under, &mut over);
    resolve_pressures(&mut net, &mut under, &mut over);
    if !under.is_empty() || !over.is_empty() {
        return Err(dof_error(&net, under, over, None));
    }
    // turbine outlets in order of falling pressure
    for u in 0..net.un.len() {
        if let Ports::Turbine { order, inlet } = &net.ports[u] {
            let mut o = order.clone();
            o.sort_by(|&a, &b| net.p[b].total_cmp(&net.p[a]));
            let inlet = *inlet;
            net.ports[u] = Ports::Turbine { inlet, order: o };
        }
    }
    let ns = net.sn.len();
    let mut m: Vec<f64> = (0..ns)
        .map(|s| net.streams[s].flow.unwrap_or(1.0))
        .collect();
    let mut st: Vec<Option<State>> = vec![None; ns];
    if let Some(g) = guess {
        for s in 0..ns {
            if let Some(r) = g.streams.get(net.sn[s]) {
                if r.flow.is_finite() && net.streams[s].flow.is_none() {
                    m[s] = r.flow;
                }
                if (r.state.props.p - net.p[s]).abs() <= 1e-12 * net.p[s] {
                    st[s] = Some(r.state);
                }
            }
        }
    }
    sweep_states(&mut net, &m, &mut st)?;
    let mut rs = rows(&net, &st);
    let a = dof::analyse(&rs, ns);
    let keep = |rs: Vec<Row>| -> Vec<Row> {
        rs.into_iter()
            .enumerate()
            .filter(|(i, _)| !a.redundant.contains(i))
            .map(|(_, r)| r)
            .collect()
    };
    if a.rank < ns || !a.clashes.is_empty() {
        flow_messages(&net, &rs, &a, &mut under, &mut over);
        return Err(dof_error(&net, under, over, Some(&a)));
    }
    let mut iterations = 0;
    let mut res = f64::INFINITY;
    while iterations < MAX_ITER {
        iterations += 1;
        let square = keep(rs);
        m = dof::solve_square(&square, ns).ok_or_else(|| {
            Error::not_converged(
                "site balance: the flow equations became dependent during the iteration (check the specifications for a degenerate state)",
                iterations,
            )
        })?;
        sweep_states(&mut net, &m, &mut st)?;
        rs = rows(&net, &st);
        res = dof::residual(&rs, &m);
        if res < 1e-12 {
            break;
        }
    }
    if res > TOLERANCE {
        return Err(Error::not_converged("site balance", iterations));
    }
    let st: Vec<State> = st.into_iter().map(|s| s.expect("all known")).collect();
    let mut sol = results(&net, &m, &st)?;
    sol.iterations = iterations;
    sol.residual = sol.residual.max(res);
    if sol.residual > TOLERANCE {
        return Err(Error::not_converged(
            format!(
                "site balance (largest unit or site residual {:.3e})",
                sol.residual
            ),
            iterations,
        ));
    }
    Ok(sol)
}

fn results(net: &Net, m: &[f64], st: &[State]) -> Result<Solution> {
    let ns = net.sn.len();
    let hh = |i: usize| st[i].props.h;
    let mut units = BTreeMap::new();
    let mut t = Totals::default();
    let mut nodes: Vec<SankeyNode> = Vec::new();
    let mut links = Vec::new();
    let mut all_warn = Vec::new();
    for (u, unit) in net.units.iter().enumerate() {
        nodes.push(SankeyNode {
            name: net.un[u].to_string(),
            kind: unit.kind().to_string(),
        });
    }
    for b in ["fuel", "power", "process", "losses", "cooling"] {
        nodes.push(SankeyNode {
            name: b.into(),
            kind: "boundary".into(),
        });
    }
    let mut link = |source: &str, target: &str, energy: f64, mass: f64| {
        links.push(SankeyLink {
            source: source.into(),
            target: target.into(),
            stream: None,
            energy,
            mass,
        })
    };
    for (u, unit) in net.units.iter().enumerate() {
        let nm = net.un[u];
        let ins = &net.ins[u];
        let outs = &net.outs[u];
        let mi: f64 = ins.iter().map(|&i| m[i]).sum();
        let ei: f64 = ins.iter().map(|&i| m[i] * hh(i)).sum();
        let mo: f64 = outs.iter().map(|&o| m[o]).sum();
        let eo: f64 = outs.iter().map(|&o| m[o] * hh(o)).sum();
        let mut r = UnitResult {
            kind: unit.kind(),
            power: None,
            duty: None,
            fuel_heat_input: None,
            efficiency: None,
            mass_lost: 0.0,
            energy_lost: 0.0,
            balance: Balance {
                mass_in: mi,
                mass_out: mo,
                energy_in: ei,
                energy_out: eo,
            },
            warnings: Vec::new(),
        };
        let w = &mut r.warnings;
        for &o in outs {
            if m[o] < 0.0 && !matches!(unit, Unit::Valve { .. }) {
                w.push(format!(
                    "stream {} leaving {nm} has a negative flow ({:.6} kg/s): the balance needs it reversed",
                    net.sn[o], m[o]
                ));
            }
        }
        match (unit, &net.ports[u]) {
            (
                Unit::Boiler {
                    efficiency,
                    blowdown_fraction,
                    ..
                },
                Ports::Boiler { fw, steam, bd },
            ) => {
                let eta = efficiency.expect("checked");
                let (sfw, ss) = (st[*fw], st[*steam]);
                let p_drum = ss.props.p.min(P_C * (1.0 - 1e-9));
                let hbd = sat_liquid(p_drum)?.props.h;
                let mbd = m[*fw] - m[*steam];
                let q = m[*steam] * (ss.props.h - sfw.props.h) + mbd * (hbd - sfw.props.h);
                let fuel = q / eta;
                r.duty = Some(q);
                r.fuel_heat_input = Some(fuel);
                r.efficiency = Some(eta);
                if bd.is_none() {
                    r.mass_lost = mbd;
                    r.energy_lost = mbd * hbd;
                    t.blowdown_lost += mbd;
                    t.water_lost_energy += mbd * hbd;
                    link(nm, "losses", mbd * hbd, mbd);
                }
                let _ = blowdown_fraction;
                t.fuel_heat_input += fuel;
                t.boiler_losses += fuel - q;
                link("fuel", nm, fuel, 0.0);
                link(nm, "losses", fuel - q, 0.0);
                r.balance.energy_in += fuel;
                r.balance.energy_out += r.energy_lost + (fuel - q);
                r.balance.mass_out += r.mass_lost;
                if sfw.props.p < ss.props.p {
                    w.push("the feedwater pressure is below the steam pressure: a feed pump is needed upstream".into());
                }
                if ss.phase == Phase::Wet {
                    w.push("the steam leaving is wet".into());
                }
            }
            (Unit::Turbine { .. }, Ports::Turbine { inlet, order }) => {
                let pw = ei - eo;
                r.power = Some(pw);
                r.balance.energy_out += pw;
                t.turbine_power += pw;
                link(nm, "power", pw, 0.0);
                let sin = st[*inlet];
                let last = st[*order.last().expect("one outlet")];
                if last.props.p < sin.props.p {
                    let iso = ps(last.props.p, sin.props.s)?;
                    r.efficiency = Some((sin.props.h - last.props.h) / (sin.props.h - iso.props.h));
                }
                for &o in order {
                    let mo = moisture(&st[o]);
                    if mo > MOISTURE_WARNING {
                        w.push(format!("outlet {} moisture {:.1} % exceeds about 12 % (common practice): expect blade erosion", net.sn[o], 100.0 * mo));
                    }
                }
                if sin.phase != Phase::Vapour && sin.phase != Phase::Supercritical {
                    w.push(format!(
                        "the inlet is {} (not superheated steam)",
                        sin.phase.name()
                    ));
                }
                if pw < 0.0 {
                    w.push("the turbine power is negative: check the flows".into());
                }
            }
            (Unit::Valve { .. }, Ports::One { inlet, out }) => {
                if st[*inlet].props.p < st[*out].props.p || m[*inlet] < 0.0 {
                    w.push(format!(
                        "the let-down valve runs backwards (flow {:.6} kg/s from {:.4} MPa to {:.4} MPa): steam would have to flow from the low-pressure side; the header it feeds has a surplus — vent it or cut an extraction",
                        m[*inlet], st[*inlet].props.p, st[*out].props.p
                    ));
                }
            }
            (Unit::Pump { .. }, Ports::One { inlet, out }) => {
                let pw = m[*inlet] * (hh(*out) - hh(*inlet));
                r.power = Some(pw);
                r.balance.energy_in += pw;
                t.pump_power += pw;
                link("power", nm, pw, 0.0);
                if let Unit::Pump { efficiency, .. } = unit {
                    r.efficiency = *efficiency;
                }
                if st[*inlet].x.is_some_and(|x| x > 1e-9) {
                    w.push("the pump inlet is not liquid".into());
                }
            }
            (Unit::Desuperheater { .. }, Ports::Desup { water, out, .. }) => {
                if let Some((tt, true)) = desup_target(unit, st[*out].props.p)? {
                    w.push(format!("the target temperature {tt:.3} K is at or below saturation at {:.4} MPa: a desuperheater cannot make wet steam; the outlet is set to saturated vapour (aim for 5 to 10 K superheat; common practice, no source)", st[*out].props.p));
                }
                if m[*water] < 0.0 {
                    w.push(
                        "the spray flow is negative: the steam is already below the target".into(),
                    );
                }
                if st[*water].props.p < st[*out].props.p {
                    w.push("the spray water pressure is below the outlet pressure: it cannot enter without a pump".into());
                }
            }
            (Unit::Header { p: Some(p) }, _) => {
                for &i in ins {
                    if st[i].props.p < p * (1.0 - 1e-9) {
                        w.push(format!("stream {} enters at {:.4} MPa, below the header pressure {p:.4} MPa: it cannot flow in", net.sn[i], st[i].props.p));
                    }
                }
                for &o in outs {
                    if m[o] < 0.0 && matches!(net.units[net.to[o]], Unit::Vent) {
                        w.push(format!("header {nm} is short of steam by {:.6} kg/s: its vent stream {} would have to run backwards; send more steam into {nm} (let-down, extraction) or lower its demand", -m[o], net.sn[o]));
                    }
                }
                if let Some(&o) = outs.first() {
                    if st[o].phase == Phase::Wet {
                        w.push(format!(
                            "the header steam is wet (x = {:.4}): provide drainage and traps",
                            st[o].x.unwrap_or(0.0)
                        ));
                    }
                }
            }
            (
                Unit::Deaerator {
                    vent_fraction, p, ..
                },
                Ports::Deaerator { steam, vent, .. },
            ) => {
                if vent.is_none() {
                    let f = vent_fraction.unwrap_or(0.0);
                    let hv = sat_vapour(p.expect("checked"))?.props.h;
                    r.mass_lost = f * m[*steam];
                    r.energy_lost = f * m[*steam] * hv;
                    r.balance.mass_out += r.mass_lost;
                    r.balance.energy_out += r.energy_lost;
                    t.vented += r.mass_lost;
                    t.vented_energy += r.energy_lost;
                    if r.mass_lost != 0.0 {
                        link(nm, "losses", r.energy_lost, r.mass_lost);
                    }
                }
                if m[*steam] < 0.0 {
                    w.push("the heating-steam flow is negative: the water entering is already hotter than saturation; lower the inflow temperatures or raise the pressure".into());
                }
                if st[*steam].props.p < p.unwrap_or(0.0) {
                    w.push("the heating steam pressure is below the deaerator pressure".into());
                }
            }
            (Unit::Condenser { .. }, _) => {
                let q = ei - eo;
                r.duty = Some(q);
                r.balance.energy_out += q;
                t.condenser_duty += q;
                link(nm, "cooling", q, 0.0);
            }
            (Unit::Exchanger { .. }, Ports::Exchanger { hi, ho, ci, co }) => {
                let q = m[*hi] * (hh(*hi) - hh(*ho));
                r.duty = Some(q);
                if q < 0.0 {
                    w.push("heat flows from the cold side to the hot side: swap the sides".into());
                }
                if st[*hi].props.t <= st[*co].props.t || st[*ho].props.t <= st[*ci].props.t {
                    w.push("temperature cross at an end of the exchanger (second law): check the outlet temperatures".into());
                }
            }
            (Unit::User { return_t, .. }, Ports::User { inlet, ret }) => {
                let mret = ret.map(|r| m[r]).unwrap_or(0.0);
                let hc = match ret {
                    Some(r) => hh(*r),
                    None => pt(st[*inlet].props.p, return_t.expect("checked"))?.props.h,
                };
                let lost = m[*inlet] - mret;
                let q = ei - eo - lost * hc;
                r.duty = Some(q);
                r.mass_lost = lost;
                r.energy_lost = lost * hc;
                r.balance.mass_out += lost;
                r.balance.energy_out += lost * hc + q;
                t.process_steam += m[*inlet];
                t.process_heat += q;
                t.condensate_lost += lost;
                t.water_lost_energy += lost * hc;
                link(nm, "process", q, 0.0);
                link(nm, "losses", lost * hc, lost);
                if let Some(r0) = ret {
                    // Saturated liquid (x = 0) is condensate too.
                    let saturated_liquid = st[*r0].x.is_some_and(|x| x <= 0.0);
                    if st[*r0].phase != Phase::Liquid && !saturated_liquid {
                        w.push(format!(
                            "the condensate stream {} is not liquid at its pressure",
                            net.sn[*r0]
                        ));
                    }
                }
                if st[*inlet].phase == Phase::Liquid {
                    w.push("the user receives liquid, not steam".into());
                }
            }
            (Unit::Vent, _) => {
                t.vented += mi;
                t.vented_energy += ei;
                r.balance.mass_out += mi;
                r.balance.energy_out += ei;
                link(nm, "losses", ei, mi);
            }
            (Unit::Makeup { .. }, _) => {
                t.makeup_water += mo;
                t.makeup_energy += eo;
                r.balance.mass_in += mo;
                r.balance.energy_in += eo;
            }
            _ => {}
        }
        for x in &r.warnings {
            all_warn.push(format!("{} {nm}: {x}", unit.kind()));
        }
        units.insert(nm.to_string(), r);
    }
    t.net_power = t.turbine_power - t.pump_power;
    t.mass_in = t.makeup_water;
    t.mass_out = t.vented + t.condensate_lost + t.blowdown_lost;
    t.energy_in = t.fuel_heat_input + t.makeup_energy + t.pump_power;
    t.energy_out = t.turbine_power
        + t.process_heat
        + t.condenser_duty
        + t.boiler_losses
        + t.vented_energy
        + t.water_lost_energy;
    let mut streams = BTreeMap::new();
    for s in 0..ns {
        links.push(SankeyLink {
            source: net.un[net.from[s]].to_string(),
            target: net.un[net.to[s]].to_string(),
            stream: Some(net.sn[s].to_string()),
            energy: m[s] * st[s].props.h,
            mass: m[s],
        });
        streams.insert(
            net.sn[s].to_string(),
            StreamResult {
                from: net.un[net.from[s]].to_string(),
                to: net.un[net.to[s]].to_string(),
                flow: m[s],
                state: st[s],
            },
        );
    }
    // residual: units (scaled by the site throughput so that idle units do not divide by
    // zero) and the site
    let scale_m: f64 = m.iter().fold(0.0f64, |a, x| a.max(x.abs()));
    let scale_e: f64 = (0..ns).fold(0.0f64, |a, s| a.max((m[s] * st[s].props.h).abs()));
    let mut residual = 0.0f64;
    for r in units.values() {
        let b = &r.balance;
        let dm = (b.mass_in - b.mass_out).abs()
            / b.mass_in
                .abs()
                .max(b.mass_out.abs())
                .max(1e-6 * scale_m)
                .max(1e-300);
        let de = (b.energy_in - b.energy_out).abs()
            / b.energy_in
                .abs()
                .max(b.energy_out.abs())
                .max(1e-6 * scale_e)
                .max(1e-300);
        residual = residual.max(dm).max(de);
    }
    if t.mass_in != 0.0 || t.mass_out != 0.0 {
        residual = residual.max(t.mass_residual());
    }
    residual = residual.max(t.energy_residual());
    for s in 0..ns {
        if m[s] < 0.0 && matches!(net.units[net.from[s]], Unit::Makeup { .. }) {
            all_warn.push(format!(
                "stream {}: negative make-up flow: the site has a water surplus",
                net.sn[s]
            ));
        }
    }
    Ok(Solution {
        streams,
        units,
        totals: t,
        nodes,
        links,
        iterations: 0,
        residual,
        warnings: all_warn,
    })
}

/// Solves one network per value, each from the previous successful answer; a failing point
/// gives its error and the next point starts from the last good answer.
pub fn sweep<F>(values: &[f64], mut build: F) -> Vec<Result<Solution>>
where
    F: FnMut(f64) -> Result<Network>,
{
    let mut out: Vec<Result<Solution>> = Vec::with_capacity(values.len());
    let mut last: Option<Solution> = None;
    for &v in values {
        let r = build(v).and_then(|net| solve_from(&net, last.as_ref()));
        if let Ok(s) = &r {
            last = Some(s.clone());
        }
        out.push(r);
    }
    out
}
