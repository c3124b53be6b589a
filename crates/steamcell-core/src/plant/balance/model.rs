//! The validated site model: [`Model::build`] checks a [`Network`] once — its structure
//! (stream ends, port counts, named ports, finite values), which unit or stream fixes each
//! stream's state and pressure, every unit's specification and its ranges — and yields
//! per-unit specifications in which every value the solver needs is present (a turbine's
//! outlets in order of falling pressure with their efficiency or measured state, a boiler's
//! steam state and efficiency, ...), and every stream's pressure.
//!
//! Units: internal (MPa, K, kJ/kg, kg/s).
//!
//! Invariant: every input error is found here: a structural error or a specified value outside
//! its range at once (one message; a range error as [`Error::OutOfRange`] naming the value's
//! path, `units.NAME.FIELD` or `streams.NAME.FIELD`), the specification findings all together
//! as an [`Error::Specification`] whose diagnosis lists the under-specified findings, then the
//! over-specified ones, each in the order of the checks (streams with more than one of T, h
//! and x, stream states, unit specifications, stream pressures). Only the count of the flow
//! equations, which needs the stream states, is left to the solver.

use super::diagnosis::{
    Amount, Diagnosis, Finding, FlowStatus, Side, Source, StreamStatus, UnitStatus,
};
use super::units::{self, check_range, Draft, Range, UnitKind};
use super::{FixedState, Network, SiteCosting, StreamSpec, UnitRef};
use super::{HOURS_PER_YEAR_DEFAULT, MAKEUP_T_DEFAULT};
use crate::error::{Error, Result};
use crate::plant::losses::{Costing, Price};

/// A site network checked and resolved, ready to solve.
#[derive(Debug)]
pub struct Model {
    pub(super) units: Vec<UnitSlot>,
    pub(super) streams: Vec<StreamSlot>,
    /// How the losses are priced (checked).
    pub(super) costing: SiteCosting,
}

/// A validated unit: its name, kind, streams and behaviour.
#[derive(Debug)]
pub(super) struct UnitSlot {
    pub name: String,
    pub kind: &'static str,
    /// Inlet streams, in stream-name order.
    pub ins: Vec<usize>,
    /// Outlet streams, in stream-name order.
    pub outs: Vec<usize>,
    /// The specifications given on it (for the diagnosis).
    pub given: Vec<&'static str>,
    pub unit: Box<dyn UnitKind>,
}

/// A validated stream.
#[derive(Debug)]
pub(super) struct StreamSlot {
    pub name: String,
    pub from: usize,
    pub to: usize,
    /// Fixed mass flow, kg/s.
    pub flow: Option<f64>,
    /// Pressure, MPa (finite and positive).
    pub p: f64,
    /// Who fixed the pressure (for the diagnosis).
    pub p_source: Source,
    /// Whether the stream carries its own T, h or x.
    pub state_given: bool,
}

/// The network as the build step sees it: names, topology, the streams' given values and,
/// once resolved, their pressures (NaN while unknown).
pub(super) struct Wiring<'a> {
    pub un: Vec<&'a str>,
    pub kinds: Vec<&'static str>,
    pub sn: Vec<&'a str>,
    pub streams: Vec<&'a StreamSpec>,
    pub from: Vec<usize>,
    pub to: Vec<usize>,
    pub ins: Vec<Vec<usize>>,
    pub outs: Vec<Vec<usize>>,
    pub fixed: Vec<Option<FixedState>>,
    pub p: Vec<f64>,
}

impl Wiring<'_> {
    /// Unit `u` for a finding.
    pub fn unit(&self, u: usize) -> UnitRef {
        UnitRef::new(self.un[u], self.kinds[u])
    }
    /// Name of stream `s` for a finding.
    pub fn stream(&self, s: usize) -> String {
        self.sn[s].to_string()
    }
    /// The pressure of stream `s` if already known.
    pub fn known_p(&self, s: usize) -> Option<f64> {
        self.p[s].is_finite().then_some(self.p[s])
    }
}

/// Proof that a unit's validation pushed the finding that refuses it (only
/// [`Findings::refuse`] makes one).
pub(super) struct Refused(());

/// The findings of the unit checks.
#[derive(Default)]
pub(super) struct Findings {
    spec: Vec<Finding>,
}

impl Findings {
    /// A specification finding that leaves the unit buildable (the network is refused all
    /// the same).
    pub fn note(&mut self, f: Finding) {
        self.spec.push(f);
    }
    /// A specification finding that leaves the unit without a value it needs.
    pub fn refuse(&mut self, f: Finding) -> Refused {
        self.spec.push(f);
        Refused(())
    }
}

/// Collects the findings of all stages, under-specified first, each side in stage order.
fn ordered(stages: Vec<Vec<Finding>>) -> Vec<Finding> {
    let all: Vec<Finding> = stages.into_iter().flatten().collect();
    let (mut under, over): (Vec<Finding>, Vec<Finding>) =
        all.into_iter().partition(|f| f.side() == Side::Under);
    under.extend(over);
    under
}

impl Model {
    /// Checks `network` and resolves every unit's specification and every stream's pressure.
    pub fn build(network: &Network) -> Result<Model> {
        if network.units.is_empty() {
            return Err(Error::invalid("the network has no units"));
        }
        if network.streams.is_empty() {
            return Err(Error::invalid("the network has no streams"));
        }
        check_costing(&network.costing)?;
        let (mut w, twice) = wire(network)?;
        let raw: Vec<_> = network.units.values().collect();
        let mut drafts: Vec<Box<dyn Draft>> = Vec::with_capacity(raw.len());
        for (u, unit) in raw.iter().enumerate() {
            drafts.push(units::draft(unit, u, &w)?);
        }
        // the stream states a source unit sets
        let mut states = Vec::new();
        for s in 0..w.sn.len() {
            if w.fixed[s].is_none() {
                continue;
            }
            let u = w.from[s];
            if let Some(by) = drafts[u].sets_state(s) {
                states.push(Finding::StateSetBySource {
                    stream: w.stream(s),
                    unit: w.unit(u),
                    by,
                });
            }
        }
        let (p_given, p_final, p_source) = resolve_pressures(&mut w, &drafts);
        let mut f = Findings::default();
        let mut validated = Vec::with_capacity(drafts.len());
        let mut refused = false;
        for d in &drafts {
            match d.validate(&w, &mut f) {
                Ok(k) => validated.push(k),
                Err(Refused(())) => refused = true,
            }
        }
        let stages = vec![twice, states, f.spec, p_given, p_final];
        let findings = ordered(stages);
        let streams: Vec<StreamSlot> = (0..w.sn.len())
            .map(|s| StreamSlot {
                name: w.stream(s),
                from: w.from[s],
                to: w.to[s],
                flow: w.streams[s].flow,
                p: w.p[s],
                p_source: p_source[s].clone(),
                state_given: w.fixed[s].is_some(),
            })
            .collect();
        let given: Vec<Vec<&'static str>> = raw.iter().map(|u| u.given()).collect();
        if refused || !findings.is_empty() {
            let units = given
                .iter()
                .enumerate()
                .map(|(u, g)| UnitStatus {
                    unit: w.unit(u),
                    given: g.clone(),
                })
                .collect();
            let names = |u: usize| w.un[u].to_string();
            return Err(specification(units, &streams, names, findings, None));
        }
        let units = validated
            .into_iter()
            .zip(given)
            .enumerate()
            .map(|(u, (unit, given))| UnitSlot {
                name: w.un[u].to_string(),
                kind: w.kinds[u],
                ins: w.ins[u].clone(),
                outs: w.outs[u].clone(),
                given,
                unit,
            })
            .collect();
        Ok(Model {
            units,
            streams,
            costing: network.costing,
        })
    }

    /// The refusal of this model by the count of its flow equations (`free`: the streams
    /// whose flows they leave free).
    pub(super) fn refuse(&self, findings: Vec<Finding>, free: &[usize]) -> Error {
        let units = self
            .units
            .iter()
            .map(|u| UnitStatus {
                unit: UnitRef::new(&u.name, u.kind),
                given: u.given.clone(),
            })
            .collect();
        specification(
            units,
            &self.streams,
            |u| self.units[u].name.clone(),
            findings,
            Some(free),
        )
    }
}

/// The refusal with its diagnosis (`free`: None when the flow equations were not counted).
fn specification(
    units: Vec<UnitStatus>,
    streams: &[StreamSlot],
    unit_name: impl Fn(usize) -> String,
    findings: Vec<Finding>,
    free: Option<&[usize]>,
) -> Error {
    let streams = streams
        .iter()
        .enumerate()
        .map(|(s, st)| StreamStatus {
            name: st.name.clone(),
            flow: match (st.flow.is_some(), free) {
                (true, _) => FlowStatus::Given,
                (false, None) => FlowStatus::Unknown,
                (false, Some(f)) if f.contains(&s) => FlowStatus::Free,
                (false, Some(_)) => FlowStatus::Fixed,
            },
            pressure: st.p_source.clone(),
            state: if st.state_given {
                Source::Stream
            } else {
                Source::Unit(unit_name(st.from))
            },
        })
        .collect();
    Error::Specification {
        diagnosis: Box::new(Diagnosis {
            findings,
            units,
            streams,
        }),
    }
}

/// Checks the network's costing (hours per year, price, boiler efficiency, make-up water
/// temperature), naming its fields as `costing.FIELD`.
fn check_costing(c: &SiteCosting) -> Result<()> {
    let probe = Costing {
        hours_per_year: c.hours_per_year.unwrap_or(HOURS_PER_YEAR_DEFAULT),
        price: c.price,
        boiler_efficiency: Some(c.boiler_efficiency.unwrap_or(1.0)),
        makeup_t: c.makeup_t.unwrap_or(MAKEUP_T_DEFAULT),
    };
    let field = |q: &str| -> String {
        let name = match (q, c.price) {
            ("price", Some(Price::PerSteamMass(_))) => "steam_cost",
            ("price", Some(Price::PerFuelEnergy(_)) | None) => "fuel_cost",
            (other, _) => other,
        };
        format!("costing.{name}")
    };
    probe.check().map_err(|e| match e {
        Error::OutOfRange {
            quantity,
            value,
            limit,
            unit,
            bound,
            formulation,
        } => Error::OutOfRange {
            quantity: field(&quantity),
            value,
            limit,
            unit,
            bound,
            formulation,
        },
        Error::NotFinite { quantity } => Error::NotFinite {
            quantity: field(&quantity),
        },
        other => other,
    })
}

/// Stream ends and the streams' fixed values (all finite); with the streams that carry more
/// than one of T, h and x (the first counts).
fn wire(network: &Network) -> Result<(Wiring<'_>, Vec<Finding>)> {
    let un: Vec<&str> = network.units.keys().map(String::as_str).collect();
    let kinds: Vec<&'static str> = network.units.values().map(|u| u.kind()).collect();
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
    let mut twice = Vec::new();
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
            twice.push(Finding::StateGivenTwice {
                stream: sn[i].to_string(),
                count: fx.len(),
            });
        }
        for (q, v) in [("T", s.t), ("h", s.h)] {
            if let Some(v) = v {
                Error::check_finite(&format!("streams.{}.{q}", sn[i]), v)?;
            }
        }
        let q = |f: &str| format!("streams.{}.{f}", sn[i]);
        check_range(
            &q("flow"),
            s.flow,
            "kg/s",
            Range::NotNegative,
            "a stream's flow (steam and water run from a stream's source to its destination)",
        )?;
        check_range(&q("p"), s.p, "MPa", Range::Positive, units::PRESSURE)?;
        check_range(&q("x"), s.x, "1", Range::Fraction, "a quality (0 to 1)")?;
        fixed.push(fx.first().copied());
    }
    let ns = sn.len();
    let w = Wiring {
        un,
        kinds,
        sn,
        streams,
        from,
        to,
        ins,
        outs,
        fixed,
        p: vec![f64::NAN; ns],
    };
    Ok((w, twice))
}

/// Fixes every stream's pressure: given on the stream, else imposed by its source unit, else
/// by its destination, else a default of its source (repeated until nothing changes).
/// Returns the findings (streams whose given pressure contradicts their source; streams left
/// without a pressure) and who fixed each pressure. Every pressure is positive: each comes from
/// a given one (checked) or the atmosphere.
#[allow(clippy::needless_range_loop)] // several stream-indexed vectors at once
fn resolve_pressures(
    w: &mut Wiring,
    drafts: &[Box<dyn Draft>],
) -> (Vec<Finding>, Vec<Finding>, Vec<Source>) {
    let ns = w.sn.len();
    let mut given = Vec::new();
    let mut source = vec![Source::Missing; ns];
    for s in 0..ns {
        if let Some(p) = w.streams[s].p {
            let u = w.from[s];
            if drafts[u].checks_outlet_p() {
                if let Some(q) = drafts[u].outlet_p(s, w) {
                    if (p - q).abs() > 1e-9 * q {
                        given.push(Finding::PressureSetBySource {
                            stream: w.stream(s),
                            unit: w.unit(u),
                            p: Amount::pressure(q),
                        });
                    }
                }
            }
            w.p[s] = p;
            source[s] = Source::Stream;
        }
    }
    for _ in 0..ns + 2 {
        let mut changed = false;
        for s in 0..ns {
            if w.p[s].is_finite() {
                continue;
            }
            let (f, t) = (w.from[s], w.to[s]);
            let found = if let Some(v) = drafts[f].outlet_p(s, w) {
                Some((v, f))
            } else if let Some(v) = drafts[t].inlet_p(s, w) {
                Some((v, t))
            } else {
                drafts[f].default_p(s, w).map(|v| (v, f))
            };
            if let Some((v, by)) = found {
                w.p[s] = v;
                source[s] = Source::Unit(w.un[by].to_string());
                changed = true;
            }
        }
        if !changed {
            break;
        }
    }
    let mut last = Vec::new();
    for s in 0..ns {
        if !w.p[s].is_finite() {
            last.push(Finding::PressureNotFixed {
                stream: w.stream(s),
                from: w.unit(w.from[s]),
                to: w.unit(w.to[s]),
            });
        }
    }
    (given, last, source)
}
