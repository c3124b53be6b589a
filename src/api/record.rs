//! The validation record: one document a quality department can file, written by
//! `steamcell validate --report FILE.html` / `--json` and served at `GET /validation`.
//!
//! It holds the program version and build (git commit, target, profile, compiler: recorded by
//! `build.rs`), the formulations and their IAPWS releases, every built-in verification case of
//! [`super::validation`] (source table, printed value, computed value, deviation, tolerance,
//! pass/fail), two summaries computed now on fixed deterministic grids (the round trips of the
//! input pairs through `water::solve`, region by region, and IF97 against IAPWS-95 by region),
//! the validation digest (the same as `server.info`'s), the date and the machine (host name,
//! operating system, CPU model, cores).
//!
//! Units: the releases' own (MPa, K, kJ/kg, kJ/(kg K), m3/kg, m/s); deviations are relative
//! unless a row says otherwise.
//!
//! Invariant: the HTML document is self-contained (inline CSS, no script, no external
//! reference) and every text in it is escaped; the JSON and the HTML come from the same
//! [`Record`]. The summaries solve only through `water::solve` and `water::saturation`.

use crate::water::{self, Formulation, Given, Options, Phase, SaturationAt};
use serde::Serialize;
use std::fmt::Write as _;
use std::sync::OnceLock;

/// What the build script recorded about this build.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct BuildInfo {
    /// Git commit of the checkout it was built from ("unknown" without git).
    pub commit: &'static str,
    /// Target triple.
    pub target: &'static str,
    /// Cargo profile ("debug" or "release").
    pub profile: &'static str,
    /// The compiler's version line.
    pub rustc: &'static str,
}

/// This build.
pub fn build_info() -> BuildInfo {
    let or_unknown = |s: &'static str| if s.is_empty() { "unknown" } else { s };
    BuildInfo {
        commit: or_unknown(env!("STEAMCELL_BUILD_COMMIT")),
        target: or_unknown(env!("STEAMCELL_BUILD_TARGET")),
        profile: or_unknown(env!("STEAMCELL_BUILD_PROFILE")),
        rustc: or_unknown(env!("STEAMCELL_BUILD_RUSTC")),
    }
}

/// The machine a record was made on.
#[derive(Debug, Clone, Serialize)]
pub struct Machine {
    /// Host name.
    pub hostname: String,
    /// Operating system (distribution name where known) and architecture.
    pub os: String,
    /// Kernel release, where known.
    pub kernel: String,
    /// CPU model, where known.
    pub cpu: String,
    /// Cores available to the program.
    pub cores: usize,
}

fn first_line_of(path: &str) -> Option<String> {
    let t = std::fs::read_to_string(path).ok()?;
    let l = t.lines().next()?.trim().to_string();
    (!l.is_empty()).then_some(l)
}

/// The machine this runs on (Linux `/proc` and `/etc/os-release` where present).
pub fn machine() -> Machine {
    let hostname = first_line_of("/proc/sys/kernel/hostname")
        .or_else(|| first_line_of("/etc/hostname"))
        .or_else(|| std::env::var("HOSTNAME").ok())
        .or_else(|| std::env::var("COMPUTERNAME").ok())
        .unwrap_or_else(|| "unknown".to_string());
    let distro = std::fs::read_to_string("/etc/os-release")
        .ok()
        .and_then(|t| {
            t.lines()
                .find_map(|l| l.strip_prefix("PRETTY_NAME="))
                .map(|v| v.trim_matches('"').to_string())
        });
    let os = match distro {
        Some(d) => format!("{d} ({}, {})", std::env::consts::OS, std::env::consts::ARCH),
        None => format!("{} {}", std::env::consts::OS, std::env::consts::ARCH),
    };
    let cpu = std::fs::read_to_string("/proc/cpuinfo")
        .ok()
        .and_then(|t| {
            t.lines()
                .find(|l| {
                    l.starts_with("model name")
                        || l.starts_with("Model")
                        || l.starts_with("cpu model")
                })
                .and_then(|l| l.split_once(':'))
                .map(|(_, v)| v.trim().to_string())
        })
        .unwrap_or_else(|| "unknown".to_string());
    Machine {
        hostname,
        os,
        kernel: first_line_of("/proc/sys/kernel/osrelease").unwrap_or_else(|| "unknown".into()),
        cpu,
        cores: std::thread::available_parallelism().map_or(1, |n| n.get()),
    }
}

/// One row of the round-trip summary: one input pair in one region.
#[derive(Debug, Clone, Serialize)]
pub struct RoundTrip {
    /// IF97 region ("4" for wet states).
    pub region: String,
    /// The input pair, e.g. "(p,h)".
    pub pair: String,
    /// Grid points solved.
    pub points: usize,
    /// Largest relative deviation of the recovered temperature.
    pub max_dev_t: f64,
    /// Largest deviation of the second recovered quantity: relative pressure for single-phase
    /// states, absolute vapour fraction for wet states.
    pub max_dev_second: f64,
    /// What the second deviation is ("p relative" or "x absolute").
    pub second: String,
    /// Limit of the T deviation (the promise of `water.state`).
    pub limit_t: f64,
    /// Limit of the second deviation.
    pub limit_second: f64,
    /// Points whose pair admits two states of the same phase (e.g. (p,v) of liquid water either
    /// side of its density maximum near 4 degC): refused with error 1003 as `water.state`
    /// must, not counted as failures.
    pub ambiguous: usize,
    /// Points that failed (another error, or a deviation over its limit).
    pub failures: usize,
    /// The first failure, described.
    pub first_failure: Option<String>,
    /// Whether every point passed.
    pub passed: bool,
}

/// One row of the IF97-against-IAPWS-95 summary: one region (or the saturation line).
#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    /// IF97 region, or "saturation line".
    pub region: String,
    /// Points compared.
    pub points: usize,
    /// One entry per quantity compared.
    pub quantities: Vec<Deviation>,
    /// Whether every quantity is within its tolerance.
    pub passed: bool,
}

/// The largest deviation of one quantity.
#[derive(Debug, Clone, Serialize)]
pub struct Deviation {
    /// What is compared, e.g. "v" or "p at (T, v)".
    pub quantity: String,
    /// Largest deviation (relative; for h relative to max(|h|, 200 kJ/kg)).
    pub max: f64,
    /// Where: p MPa, T K.
    pub at_p: f64,
    /// Where: T K.
    pub at_t: f64,
    /// The tolerance held.
    pub tolerance: f64,
    /// Whether max <= tolerance.
    pub passed: bool,
}

/// The built-in verification cases with their counts.
#[derive(Debug, Clone, Serialize)]
pub struct Verification {
    /// Cases that passed.
    pub passed: usize,
    /// Cases that failed.
    pub failed: usize,
    /// Every case.
    pub cases: Vec<super::selftest::SelftestCase>,
}

/// The whole record.
#[derive(Debug, Clone, Serialize)]
pub struct Record {
    /// "steamcell validation record".
    pub title: String,
    /// Program version.
    pub version: String,
    /// The build.
    pub build: BuildInfo,
    /// Formulations and their releases.
    pub formulations: Vec<super::server_methods::Formulation>,
    /// The validation digest (as `server.info`).
    pub digest: String,
    /// When the record was made (RFC 3339, UTC).
    pub generated: String,
    /// Where it was made.
    pub machine: Machine,
    /// Every built-in verification case.
    pub verification: Verification,
    /// How the round trips were run.
    pub round_trip_basis: String,
    /// The round trips, region by region.
    pub round_trips: Vec<RoundTrip>,
    /// How IF97 was compared with IAPWS-95.
    pub comparison_basis: String,
    /// IF97 against IAPWS-95, region by region.
    pub if97_vs_iapws95: Vec<Comparison>,
    /// Whether every case, round trip and comparison passed.
    pub passed: bool,
    /// The standing caution.
    pub caution: String,
}

/// The standing caution of the record.
pub const CAUTION: &str = "Steam at pressure can kill. This record shows that this build reproduces the published IAPWS verification values and its own consistency checks; it does not make results a substitute for the governing codes, the equipment maker's data, or a licensed engineer's review. Follow your local codes.";

/// Limit of the relative T deviation of a round trip (the promise of `water.state`).
pub const ROUND_TRIP_T: f64 = 1e-9;
/// Limit of the relative p deviation of a round trip (single phase).
pub const ROUND_TRIP_P: f64 = 1e-8;
/// Limit of the absolute x deviation of a wet round trip.
pub const ROUND_TRIP_X: f64 = 1e-9;

fn lin(lo: f64, hi: f64, i: usize, n: usize) -> f64 {
    lo + (hi - lo) * i as f64 / n as f64
}

fn log(lo: f64, hi: f64, i: usize, n: usize) -> f64 {
    (lo.ln() + (hi.ln() - lo.ln()) * i as f64 / n as f64).exp()
}

/// Whether `p` lies within 0.5 % of the IF97 saturation pressure at `t` (phase unclear there).
fn near_saturation(p: f64, t: f64) -> bool {
    t < 647.096
        && water::saturation(SaturationAt::T(t), Formulation::If97)
            .is_ok_and(|s| (p / s.p - 1.0).abs() < 5e-3)
}

/// The single-phase (p, T) grid of one IF97 region: the centres of `n` x `n` cells spanning its
/// pressures (geometric) and temperatures (linear), so that no point lies on a region boundary
/// or a limit of validity (where neighbouring equations agree only within IF97's
/// consistency), kept where IF97 puts the point in that region, clear of saturation.
fn grid(region: u8, n: usize, t_max5: f64) -> Vec<(f64, f64)> {
    let (plo, phi, tlo, thi) = match region {
        1 => (1e-3, 100.0, 273.16, 623.15),
        2 => (1e-3, 100.0, 273.16, 1073.15),
        3 => (16.53, 100.0, 623.15, 863.15),
        _ => (1e-2, 50.0, 1073.15, t_max5),
    };
    let mut out = Vec::new();
    for i in 0..n {
        for j in 0..n {
            let (p, t) = (
                log(plo, phi, 2 * i + 1, 2 * n),
                lin(tlo, thi, 2 * j + 1, 2 * n),
            );
            if near_saturation(p, t) {
                continue;
            }
            match water::solve(Given::PT(p, t), &Options::STANDARD, Formulation::If97) {
                Ok(s) if s.region.number() == region => out.push((p, t)),
                _ => {}
            }
        }
    }
    out
}

/// The (p, T) nodes of one IF97 region's `n` x `n` cells, the ends included exactly: points on
/// its limits of validity (273.15 K, 100 MPa, 50 MPa and 2273.15 K for region 5) and on the
/// region boundaries 623.15 K and 1073.15 K, where neighbouring equations agree only within
/// IF97's consistency and the region that owns the boundary answers every pair. Kept where
/// IF97 puts the point in that region, clear of saturation.
fn edge_grid(region: u8, n: usize) -> Vec<(f64, f64)> {
    let (plo, phi, tlo, thi) = match region {
        1 => (1e-3, 100.0, 273.15, 623.15),
        2 => (1e-3, 100.0, 273.15, 1073.15),
        3 => (16.53, 100.0, 623.15, 863.15),
        _ => (1e-2, 50.0, 1073.15, 2273.15),
    };
    let node = |lo: f64, hi: f64, i: usize, geometric: bool| match i {
        0 => lo,
        i if i == n => hi,
        i if geometric => log(lo, hi, i, n),
        i => lin(lo, hi, i, n),
    };
    let mut out = Vec::new();
    for i in 0..=n {
        for j in 0..=n {
            let (p, t) = (node(plo, phi, i, true), node(tlo, thi, j, false));
            let on_edge = i == 0 || i == n || j == 0 || j == n;
            if !on_edge || near_saturation(p, t) {
                continue;
            }
            match water::solve(Given::PT(p, t), &Options::STANDARD, Formulation::If97) {
                Ok(s) if s.region.number() == region => out.push((p, t)),
                _ => {}
            }
        }
    }
    out
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

struct Acc {
    row: RoundTrip,
}

impl Acc {
    fn new(region: &str, pair: &str, wet: bool) -> Acc {
        Acc {
            row: RoundTrip {
                region: region.to_string(),
                pair: pair.to_string(),
                points: 0,
                max_dev_t: 0.0,
                max_dev_second: 0.0,
                second: if wet { "x absolute" } else { "p relative" }.to_string(),
                limit_t: ROUND_TRIP_T,
                limit_second: if wet { ROUND_TRIP_X } else { ROUND_TRIP_P },
                ambiguous: 0,
                failures: 0,
                first_failure: None,
                passed: true,
            },
        }
    }

    fn add(&mut self, at: (f64, f64), answer: crate::Result<(f64, f64)>) {
        let r = &mut self.row;
        r.points += 1;
        let failure = match answer {
            Err(crate::Error::NoUniqueState { .. }) => {
                r.ambiguous += 1;
                None
            }
            Err(e) => Some(format!("at p = {} MPa, T = {} K: {e}", at.0, at.1)),
            Ok((dt, d2)) => {
                r.max_dev_t = r.max_dev_t.max(dt);
                r.max_dev_second = r.max_dev_second.max(d2);
                (dt > r.limit_t || d2 > r.limit_second || dt.is_nan() || d2.is_nan()).then(|| {
                    format!(
                        "at p = {} MPa, T = {} K: T off by {dt:.3e}, {} off by {d2:.3e}",
                        at.0, at.1, r.second
                    )
                })
            }
        };
        if let Some(f) = failure {
            r.failures += 1;
            r.passed = false;
            r.first_failure.get_or_insert(f);
        }
    }
}

/// The round trips: every single-phase grid point of regions 1, 2, 3 and 5 solved from (p,T),
/// then from each of its pairs (p,h), (p,s), (h,s), (p,v), (T,v), (p,u) (preferring its own
/// phase), comparing the recovered T and p; wet states of region 4 from (T,x), then from
/// (p,h), (p,s), (h,s), comparing T and x.
pub fn round_trips() -> Vec<RoundTrip> {
    type PairFn = fn(&water::Props) -> Given;
    let pairs: [(&str, PairFn); 6] = [
        ("(p,h)", |s| Given::PH(s.p, s.h)),
        ("(p,s)", |s| Given::PS(s.p, s.s)),
        ("(h,s)", |s| Given::HS(s.h, s.s)),
        ("(p,v)", |s| Given::PV(s.p, s.v)),
        ("(T,v)", |s| Given::TV(s.t, s.v)),
        ("(p,u)", |s| Given::PU(s.p, s.u)),
    ];
    let mut rows = Vec::new();
    let grids = [1u8, 2, 3, 5]
        .into_iter()
        .map(|r| (r, r.to_string(), grid(r, 9, 2273.15)))
        .chain(
            [1u8, 2, 3, 5]
                .into_iter()
                .map(|r| (r, format!("{r} edges"), edge_grid(r, 12))),
        );
    for (_, label, points) in grids {
        for (name, make) in pairs {
            let mut acc = Acc::new(&label, name, false);
            for &(p, t) in &points {
                let answer = water::solve(Given::PT(p, t), &Options::STANDARD, Formulation::If97)
                    .and_then(|st| {
                        let opts = Options {
                            prefer: Some(st.phase),
                            ..Options::STANDARD
                        };
                        water::solve(make(&st.props), &opts, Formulation::If97)
                    })
                    .map(|back| (rel(back.props.t, t), rel(back.props.p, p)));
                acc.add((p, t), answer);
            }
            rows.push(acc.row);
        }
    }
    let wet_pairs: [(&str, PairFn); 3] = [
        ("(p,h)", |s| Given::PH(s.p, s.h)),
        ("(p,s)", |s| Given::PS(s.p, s.s)),
        ("(h,s)", |s| Given::HS(s.h, s.s)),
    ];
    for (name, make) in wet_pairs {
        let mut acc = Acc::new("4", name, true);
        for i in 0..=8 {
            let t = lin(280.0, 640.0, i, 8);
            for x in [0.05, 0.25, 0.5, 0.75, 0.95] {
                let answer = water::solve(Given::TX(t, x), &Options::STANDARD, Formulation::If97)
                    .and_then(|st| {
                        let opts = Options {
                            prefer: Some(Phase::Wet),
                            ..Options::STANDARD
                        };
                        let back = water::solve(make(&st.props), &opts, Formulation::If97)?;
                        Ok((rel(back.props.t, t), (back.x.unwrap_or(f64::NAN) - x).abs()))
                    });
                acc.add((f64::NAN, t), answer);
            }
        }
        rows.push(acc.row);
    }
    rows
}

struct Worst {
    quantity: &'static str,
    max: f64,
    at: (f64, f64),
    tolerance: f64,
}

impl Worst {
    fn new(quantity: &'static str, tolerance: f64) -> Worst {
        Worst {
            quantity,
            max: 0.0,
            at: (f64::NAN, f64::NAN),
            tolerance,
        }
    }

    fn add(&mut self, d: f64, p: f64, t: f64) {
        if d > self.max || d.is_nan() {
            self.max = d;
            self.at = (p, t);
        }
    }

    fn done(self) -> Deviation {
        Deviation {
            quantity: self.quantity.to_string(),
            passed: self.max <= self.tolerance,
            max: self.max,
            at_p: self.at.0,
            at_t: self.at.1,
            tolerance: self.tolerance,
        }
    }
}

/// IF97's permissible deviations from IAPWS-95 (from memory, see [`comparison_basis`]).
const TOL_V: f64 = 5e-4;
const TOL_P3: f64 = 1e-3;
const TOL_CP: f64 = 1e-2;
const TOL_W: f64 = 1e-2;
const TOL_H: f64 = 1e-3;
const TOL_PSAT: f64 = 2.5e-4;

/// The basis of the IF97-against-IAPWS-95 summary, printed with it.
pub fn comparison_basis() -> String {
    "IF97 and IAPWS-95 evaluated at the same (p, T) at the centres of a 13 x 13 grid of cells per region (pressures geometric, temperatures linear; region 5 up to 1273 K, IAPWS-95's limit; points within 0.5 % of the saturation pressure left out), and along the saturation line at 20 temperatures from 273.16 K to 645 K. Tolerances: IF97's permissible deviations from IAPWS-95 as IAPWS R7-97(2012) states them, quoted from memory: specific volume 0.05 % in regions 1, 2 and 5, in region 3 the pressure at the IF97 (T, v) 0.1 %, isobaric heat capacity and speed of sound 1 % (in region 3 outside T < 700 K and p < 40 MPa, the critical neighbourhood, our choice of box), saturation pressure 0.025 %; enthalpy 0.1 % of max(|h|, 200 kJ/kg): no source, our choice.".to_string()
}

/// The basis of the round-trip summary, printed with it.
pub fn round_trip_basis() -> String {
    format!(
        "Single-phase states of IF97 regions 1, 2, 3 and 5 at the centres of a 9 x 9 grid of (p, T) cells per region (pressures geometric, temperatures linear; so no point lies on a region boundary or a limit of validity; points within 0.5 % of the saturation pressure left out), and, in the rows marked \"edges\", the nodes on the edges of a 12 x 12 grid of the same kind (the limits of validity 273.15 K, 100 MPa, 50 MPa, 2273.15 K and the region boundaries 623.15 K and 1073.15 K, where the region that owns the boundary answers), each solved from (p, T), then from each pair of its own properties with its own phase preferred; wet states of region 4 at 9 temperatures from 280 K to 640 K and vapour fractions 0.05, 0.25, 0.5, 0.75, 0.95. The promise of water.state: the recovered T within {ROUND_TRIP_T:e} relative, p within {ROUND_TRIP_P:e} relative, x within {ROUND_TRIP_X:e}."
    )
}

/// IF97 against IAPWS-95, region by region and along the saturation line.
pub fn comparisons() -> Vec<Comparison> {
    let mut out = Vec::new();
    for region in [1u8, 2, 3, 5] {
        let mut first = if region == 3 {
            Worst::new("p at the IF97 (T, v)", TOL_P3)
        } else {
            Worst::new("v", TOL_V)
        };
        let mut h = Worst::new("h", TOL_H);
        let mut cp = Worst::new("cp", TOL_CP);
        let mut w = Worst::new("w", TOL_W);
        let points = grid(region, 13, 1273.0);
        let mut n = 0;
        for &(p, t) in &points {
            let a = water::solve(Given::PT(p, t), &Options::STANDARD, Formulation::If97);
            let b = water::solve(Given::PT(p, t), &Options::STANDARD, Formulation::Iapws95);
            let (Ok(a), Ok(b)) = (a, b) else {
                first.add(f64::NAN, p, t);
                continue;
            };
            n += 1;
            let (a, b) = (a.props, b.props);
            if region == 3 {
                let p95 = water::solve(Given::TV(t, a.v), &Options::STANDARD, Formulation::Iapws95)
                    .map_or(f64::NAN, |s| s.props.p);
                first.add(rel(p, p95), p, t);
            } else {
                first.add(rel(a.v, b.v), p, t);
            }
            if region == 3 && t < 700.0 && p < 40.0 {
                continue;
            }
            h.add((a.h - b.h).abs() / b.h.abs().max(200.0), p, t);
            cp.add(rel(a.cp, b.cp), p, t);
            w.add(rel(a.w, b.w), p, t);
        }
        let quantities: Vec<Deviation> = [first, h, cp, w].into_iter().map(Worst::done).collect();
        out.push(Comparison {
            region: region.to_string(),
            points: n,
            passed: quantities.iter().all(|q| q.passed),
            quantities,
        });
    }
    let mut ps = Worst::new("saturation pressure", TOL_PSAT);
    let mut n = 0;
    for i in 0..20 {
        let t = lin(273.16, 645.0, i, 19);
        let a = water::saturation(SaturationAt::T(t), Formulation::If97);
        let b = water::saturation(SaturationAt::T(t), Formulation::Iapws95);
        match (a, b) {
            (Ok(a), Ok(b)) => {
                n += 1;
                ps.add(rel(a.p, b.p), a.p, t);
            }
            _ => ps.add(f64::NAN, f64::NAN, t),
        }
    }
    let q = ps.done();
    out.push(Comparison {
        region: "saturation line".to_string(),
        points: n,
        passed: q.passed,
        quantities: vec![q],
    });
    out
}

/// The summaries, computed once per process (they depend only on the build).
fn summaries() -> &'static (Vec<RoundTrip>, Vec<Comparison>) {
    static S: OnceLock<(Vec<RoundTrip>, Vec<Comparison>)> = OnceLock::new();
    S.get_or_init(|| (round_trips(), comparisons()))
}

/// The record of this build on this machine, now.
pub fn record() -> Record {
    let st = super::selftest::run();
    let (round_trips, if97_vs_iapws95) = summaries().clone();
    let passed = st.failed == 0
        && round_trips.iter().all(|r| r.passed)
        && if97_vs_iapws95.iter().all(|c| c.passed);
    Record {
        title: "steamcell validation record".to_string(),
        version: env!("CARGO_PKG_VERSION").to_string(),
        build: build_info(),
        formulations: super::server_methods::formulations(),
        digest: st.digest.clone(),
        generated: super::clock::now_rfc3339(),
        machine: machine(),
        verification: Verification {
            passed: st.passed,
            failed: st.failed,
            cases: st.cases,
        },
        round_trip_basis: round_trip_basis(),
        round_trips,
        comparison_basis: comparison_basis(),
        if97_vs_iapws95,
        passed,
        caution: CAUTION.to_string(),
    }
}

/// The record as pretty JSON.
pub fn to_json(r: &Record) -> String {
    // Non-finite numbers (an unsolved point's place) become null.
    serde_json::to_string_pretty(r).unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}"))
}

/// Text escaped for HTML element content and attribute values.
pub fn escape_html(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

fn e(s: &str) -> String {
    escape_html(s)
}

/// A number as the record prints it: the shortest round-trip decimal, so a reader can re-enter
/// it bit for bit.
fn num(v: f64) -> String {
    if v.is_nan() {
        "-".to_string()
    } else {
        format!("{v}")
    }
}

fn sci(v: f64) -> String {
    if v.is_nan() {
        "-".to_string()
    } else if v == 0.0 {
        "0".to_string()
    } else {
        format!("{v:.2e}")
    }
}

fn verdict(ok: bool) -> &'static str {
    if ok {
        "<td class=\"pass\">pass</td>"
    } else {
        "<td class=\"fail\">FAIL</td>"
    }
}

const CSS: &str = "body{font-family:system-ui,-apple-system,'Segoe UI',sans-serif;margin:2em auto;max-width:72em;color:#1d1d1d;line-height:1.4}\
h1{font-size:1.6em;border-bottom:2px solid #2c4a6e;padding-bottom:.2em}h2{font-size:1.2em;margin-top:1.8em;color:#2c4a6e}\
table{border-collapse:collapse;width:100%;font-size:.85em;margin:.5em 0}th,td{border:1px solid #c8ccd2;padding:.25em .45em;text-align:left;vertical-align:top}\
th{background:#eef1f5}td.num{font-family:ui-monospace,Menlo,Consolas,monospace;text-align:right;white-space:nowrap}\
td.pass{color:#1d6b2f;font-weight:600}td.fail{color:#fff;background:#b3261e;font-weight:700}\
dl{display:grid;grid-template-columns:max-content auto;gap:.2em 1em}dt{font-weight:600}dd{margin:0;font-family:ui-monospace,Menlo,Consolas,monospace}\
.verdict{font-size:1.1em;padding:.5em .8em;border-radius:4px;display:inline-block}.ok{background:#e3f3e6;color:#1d6b2f}.bad{background:#fbe4e2;color:#b3261e}\
.caution{background:#fff6d5;border-left:4px solid #c99a00;padding:.6em .9em;margin:1.2em 0}.basis{font-size:.85em;color:#444}\
@media print{body{margin:0;max-width:none}th{background:#eee}}";

/// The record as one self-contained HTML document.
pub fn to_html(r: &Record) -> String {
    let mut h = String::with_capacity(256 * 1024);
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{} {} - {}</title>\n<style>{CSS}</style>\n</head>\n<body>\n",
        e(&r.title),
        e(&r.version),
        e(&r.generated)
    );
    let _ = writeln!(h, "<h1>{} {}</h1>", e(&r.title), e(&r.version));
    let (class, text) = if r.passed {
        (
            "ok",
            "Every verification case, round trip and comparison passed.",
        )
    } else {
        ("bad", "NOT VALIDATED: at least one case, round trip or comparison failed (marked FAIL below).")
    };
    let _ = writeln!(h, "<p class=\"verdict {class}\">{text}</p>");
    let _ = writeln!(h, "<p class=\"caution\">{}</p>", e(&r.caution));
    h.push_str("<h2>Build and machine</h2>\n<dl>\n");
    let b = &r.build;
    let m = &r.machine;
    let rows: [(&str, String); 12] = [
        ("Program", format!("steamcell {}", r.version)),
        ("Validation digest", r.digest.clone()),
        ("Git commit", b.commit.to_string()),
        ("Target", b.target.to_string()),
        ("Profile", b.profile.to_string()),
        ("Compiler", b.rustc.to_string()),
        ("Generated (UTC)", r.generated.clone()),
        ("Host", m.hostname.clone()),
        ("Operating system", m.os.clone()),
        ("Kernel", m.kernel.clone()),
        ("CPU", m.cpu.clone()),
        ("Cores", m.cores.to_string()),
    ];
    for (k, v) in rows {
        let _ = writeln!(h, "<dt>{}</dt><dd>{}</dd>", e(k), e(&v));
    }
    h.push_str(
        "</dl>\n<h2>Formulations</h2>\n<table>\n<tr><th>Formulation</th><th>Releases</th></tr>\n",
    );
    for f in &r.formulations {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{}</td></tr>",
            e(&f.name),
            e(&f.release)
        );
    }
    h.push_str("</table>\n");
    let v = &r.verification;
    let _ = writeln!(
        h,
        "<h2>Built-in verification cases: {} passed, {} failed</h2>\n<p class=\"basis\">The computer-program verification values printed in the IAPWS releases, evaluated with this build. Tolerance: the larger of 1e-9 relative and half a unit in the last printed digit. Deviation: (computed - printed) / |printed| (absolute where the printed value is 0).</p>",
        v.passed, v.failed
    );
    h.push_str("<table>\n<tr><th>Case</th><th>Source</th><th>Equation</th><th>Inputs</th><th>Printed</th><th>Computed</th><th>Deviation</th><th>Tolerance</th><th>Status of the printed value</th><th>Result</th></tr>\n");
    for c in &v.cases {
        let _ = writeln!(
            h,
            "<tr id=\"{}\"><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td>{}</tr>",
            e(&c.id),
            e(&c.id),
            e(&c.source),
            e(&c.equation),
            e(&c.inputs),
            num(c.expected),
            num(c.computed),
            sci(c.deviation),
            sci(c.tolerance),
            e(&c.status),
            verdict(c.passed)
        );
    }
    h.push_str("</table>\n<h2>Round trips of the input pairs</h2>\n");
    let _ = writeln!(h, "<p class=\"basis\">{}</p>", e(&r.round_trip_basis));
    h.push_str("<table>\n<tr><th>Region</th><th>Pair</th><th>Points</th><th>Largest T deviation</th><th>Limit</th><th>Largest second deviation</th><th>Limit</th><th>Two states (refused)</th><th>Failures</th><th>First failure</th><th>Result</th></tr>\n");
    for t in &r.round_trips {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{} ({})</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td>{}</td>{}</tr>",
            e(&t.region),
            e(&t.pair),
            t.points,
            sci(t.max_dev_t),
            sci(t.limit_t),
            sci(t.max_dev_second),
            e(&t.second),
            sci(t.limit_second),
            t.ambiguous,
            t.failures,
            e(t.first_failure.as_deref().unwrap_or("")),
            verdict(t.passed)
        );
    }
    h.push_str("</table>\n<h2>IAPWS-IF97 against IAPWS-95</h2>\n");
    let _ = writeln!(h, "<p class=\"basis\">{}</p>", e(&r.comparison_basis));
    h.push_str("<table>\n<tr><th>Region</th><th>Points</th><th>Quantity</th><th>Largest deviation</th><th>at p (MPa)</th><th>at T (K)</th><th>Tolerance</th><th>Result</th></tr>\n");
    for c in &r.if97_vs_iapws95 {
        for q in &c.quantities {
            let _ = writeln!(
                h,
                "<tr><td>{}</td><td class=\"num\">{}</td><td>{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>{}</tr>",
                e(&c.region),
                c.points,
                e(&q.quantity),
                sci(q.max),
                sci(q.at_p),
                num((q.at_t * 100.0).round() / 100.0),
                sci(q.tolerance),
                verdict(q.passed)
            );
        }
    }
    h.push_str("</table>\n");
    let _ = writeln!(
        h,
        "<p class=\"basis\">Made by <code>steamcell validate</code> or <code>GET /validation</code>. The validation digest is a hash over every case's id, printed value and computed value: the same digest means the same computed numbers; compare it with <code>server.info</code> of any server.</p>\n</body>\n</html>"
    );
    h
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn html_escapes() {
        assert_eq!(
            escape_html(r#"<a href="x">&'</a>"#),
            "&lt;a href=&quot;x&quot;&gt;&amp;&#39;&lt;/a&gt;"
        );
    }
}
