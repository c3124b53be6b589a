//! The IF97 solvers on the edges of the formulation: region boundaries (623.15 K, B23,
//! 1073.15 K), outer limits (273.15 K, 2273.15 K, 1 Pa, 50 MPa, 100 MPa) and the saturation
//! line. Every check is a round trip to the forward equations of IAPWS R7-97(2012) of the region
//! that owns the state: the state at (p, T) is evaluated with the equation
//! `regions::region_pt` gives it (boundary points belong to region 1 at 623.15 K and to region 2
//! on B23 and at 1073.15 K, as R7-97(2012) Sec. 4 draws them), and solving any supported pair
//! of its properties must return the same p and T to 1e-9 relative, with the pair reproduced.
//! The cases were found by sweeping every pair over grids through these edges.
//!
//! Where two equations meet, IF97 lets them differ by its consistency tolerances (at
//! 1073.15 K the region-2 and region-5 temperatures for the same (p, h) differ by up to
//! ~0.06 K): inside that band a pair can have a state in each region (or in neither). The
//! solvers answer with the owner's state; the band tests below pin that decision.

use serde_json::json;
use std::process::Command;
use steamcell::water::if97::regions::{self, Region};
use steamcell::water::if97::{b23, region4};
use steamcell::water::state::{self, Given, Options, Phase, State};
use steamcell::water::{solve, Formulation};

const O: Options = Options::STANDARD;
/// The round-trip tolerance of T: the promise of `water.state` (1e-9 relative).
const REL: f64 = 1e-9;
/// The round-trip tolerance of p, as in state_pairs: a liquid's pressure is fixed by its
/// other properties only through its small compressibility (from (h, s) at 500 K, a residual
/// of 1e-11 in h leaves ~4e-9 in p), so p is checked to 1e-8 and the pair itself to 1e-11.
const P_REL: f64 = 1e-8;
const BIN: &str = env!("CARGO_BIN_EXE_steamcell");

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / a.abs().max(b.abs()).max(1e-300)
}

fn if97(g: Given, opts: &Options) -> State {
    solve(g, opts, Formulation::If97).unwrap_or_else(|e| panic!("{g:?}: {e}"))
}

/// Every pair of `names` from the state at (p, T): the answer is the same state, in the
/// same region. `names` picks from ph ps hs th ts pv tv pu uv.
fn round_trip(p: f64, t: f64, names: &[&str], what: &str) {
    let st = state::at_pt(p, t, &O).unwrap_or_else(|e| panic!("{what}: (p, T) = ({p}, {t}): {e}"));
    let pr = st.props;
    let region = regions::region_pt(p, t).unwrap();
    assert_eq!(st.region, region, "{what}: forward region at ({p}, {t})");
    for &name in names {
        let g = match name {
            "ph" => Given::PH(pr.p, pr.h),
            "ps" => Given::PS(pr.p, pr.s),
            "hs" => Given::HS(pr.h, pr.s),
            "th" => Given::TH(pr.t, pr.h),
            "ts" => Given::TS(pr.t, pr.s),
            "pv" => Given::PV(pr.p, pr.v),
            "tv" => Given::TV(pr.t, pr.v),
            "pu" => Given::PU(pr.p, pr.u),
            "uv" => Given::UV(pr.u, pr.v),
            other => panic!("unknown pair {other}"),
        };
        let opts = Options {
            prefer: Some(st.phase),
            ..O
        };
        let got = solve(g, &opts, Formulation::If97)
            .unwrap_or_else(|e| panic!("{what}: ({name}) of p = {p} MPa, T = {t} K: {e}"));
        // A state on the saturation line may come back as the saturated end of the wet
        // region (x = 0 or 1), the same state.
        let saturated_end = got.region == Region::R4
            && got.x.is_some_and(|x| x <= 1e-9 || x >= 1.0 - 1e-9)
            && t <= 647.096
            && rel(p, region4::psat(t)) <= 1e-12;
        let (a, b) = pair_of(name, &got);
        let (a0, b0) = pair_of(name, &st);
        assert!(
            rel(a, a0) <= 1e-11 && rel(b, b0) <= 1e-11,
            "{what}: ({name}) of p = {p} MPa, T = {t} K: the pair is not reproduced: \
             {a} vs {a0}, {b} vs {b0}; got p = {}, T = {}, region {}",
            got.props.p,
            got.props.t,
            got.region.number()
        );
        assert!(
            (got.region == region || saturated_end)
                && rel(got.props.p, p) <= P_REL
                && rel(got.props.t, t) <= REL,
            "{what}: ({name}) of p = {p} MPa, T = {t} K (region {}) gave p = {}, T = {} \
             (region {}), off {:.1e} / {:.1e}",
            region.number(),
            got.props.p,
            got.props.t,
            got.region.number(),
            rel(got.props.p, p),
            rel(got.props.t, t)
        );
    }
}

/// The values of the pair `name` in the state `st`.
fn pair_of(name: &str, st: &State) -> (f64, f64) {
    let pr = &st.props;
    match name {
        "ph" => (pr.p, pr.h),
        "ps" => (pr.p, pr.s),
        "hs" => (pr.h, pr.s),
        "th" => (pr.t, pr.h),
        "ts" => (pr.t, pr.s),
        "pv" => (pr.p, pr.v),
        "tv" => (pr.t, pr.v),
        "pu" => (pr.p, pr.u),
        _ => (pr.u, pr.v),
    }
}

const ALL: [&str; 9] = ["ph", "ps", "hs", "th", "ts", "pv", "tv", "pu", "uv"];

/// n + 1 pressures from lo to hi, evenly in ln p, with both ends exact.
fn log_grid(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..=n)
        .map(|i| match i {
            0 => lo,
            i if i == n => hi,
            _ => (lo.ln() + (hi.ln() - lo.ln()) * i as f64 / n as f64).exp(),
        })
        .collect()
}

// ---- 2273.15 K, the upper limit of region 5 ----

/// The reported case: (h, s) of the state at 0.084 MPa and 2273.15 K. SR4-04's region map
/// (which knows regions 1 to 4 only) passed it as region 2 by extrapolation and started the
/// region-2 Newton iteration at T = 6.8e15 K, which did not converge; the region-5 fallback
/// then converged to T one ulp above 2273.15 K and was refused as outside the range.
#[test]
fn hs_at_region5_upper_limit_0_084_mpa() {
    let (p, t) = (0.084, 2273.15);
    let fwd = state::at_pt(p, t, &O).unwrap();
    assert_eq!(fwd.region, Region::R5);
    let got = if97(Given::HS(fwd.props.h, fwd.props.s), &O);
    assert_eq!(got.region, Region::R5);
    assert!(rel(got.props.p, p) <= REL && rel(got.props.t, t) <= REL);
    assert!(
        got.props.t <= state::T_MAX_5,
        "inside the range: T = {}",
        got.props.t
    );

    // The same through the API (water.state with given h and s, SI units)...
    let v = steamcell::api::call(
        "water.state",
        json!({"given": {"h": fwd.props.h * 1e3, "s": fwd.props.s * 1e3}, "units": "si"}),
    )
    .unwrap();
    assert!(rel(v["T"].as_f64().unwrap(), t) <= REL, "{v}");
    assert!(rel(v["p"].as_f64().unwrap(), p * 1e6) <= REL, "{v}");
    assert_eq!(v["region"], 5);

    // ... and the CLI.
    let out = Command::new(BIN)
        .args([
            "get",
            "T",
            &format!("h={}", fwd.props.h * 1e3),
            &format!("s={}", fwd.props.s * 1e3),
            "--units",
            "si",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    let got: f64 = text.trim().parse().unwrap();
    assert!(rel(got, t) <= REL, "CLI answered {text}");
}

/// (h, s) on the 2273.15 K isotherm at every pressure of region 5.
#[test]
fn hs_on_region5_upper_limit_every_pressure() {
    for p in log_grid(1e-6, 50.0, 24) {
        round_trip(p, 2273.15, &["hs"], "2273.15 K");
    }
}

/// Every pair on and just inside the 2273.15 K isotherm. (T, h) is left out below 0.01 MPa,
/// where steam is so near an ideal gas that h hardly depends on p: the answer reproduces h
/// to 1e-11 while p is fixed only to ~1e-7 (the pair is ill-conditioned, not the solver).
#[test]
fn all_pairs_at_region5_upper_limit() {
    for t in [2273.15, 2273.15 * (1.0 - 1e-9)] {
        for p in log_grid(0.01, 50.0, 8) {
            round_trip(p, t, &ALL, "2273.15 K");
        }
    }
}

// ---- 1073.15 K, the region 2/5 boundary ----

/// The reported case: region-2 (p, h) and (p, s) on the 1073.15 K isotherm returned region 5
/// at a T 4e-6 to 4e-5 relative higher. At 1073.15 K region 2 gives higher h and s than
/// region 5 at most pressures (the two equations overlap within IF97's consistency), and the
/// solver took region 5 whenever the target reached region 5's boundary value; it now
/// decides with region 2's, the owner of the isotherm.
#[test]
fn ph_ps_on_1073_15_isotherm_return_region2() {
    for p in log_grid(1e-3, 100.0, 30) {
        round_trip(p, 1073.15, &["ph", "ps"], "1073.15 K");
    }
}

/// Every pair on the 1073.15 K isotherm, and 1e-9 relative and 10 mK inside region 2 (still
/// inside the overlap band at most pressures).
#[test]
fn all_pairs_on_1073_15_isotherm_return_region2() {
    for t in [1073.15, 1073.15 * (1.0 - 1e-9), 1073.14] {
        for p in log_grid(1e-3, 100.0, 10) {
            round_trip(p, t, &ALL, "1073.15 K");
        }
    }
}

/// Every pair half a kelvin either side of 1073.15 K, clear of the consistency band: each
/// region answers its own states.
#[test]
fn all_pairs_either_side_of_1073_15_outside_the_band() {
    for t in [1072.65, 1073.65] {
        for p in log_grid(0.01, 50.0, 6) {
            round_trip(p, t, &ALL, "1073.15 K +- 0.5 K");
        }
    }
}

/// Inside the band a region-5 state just above 1073.15 K shares its (p, h) with a region-2
/// state just below: the answer is region 2's (the owner's), within the consistency of the
/// two equations (here 0.03 K), and it reproduces the pair.
#[test]
fn region5_state_in_the_1073_15_overlap_is_answered_by_region2() {
    let (p, t) = (6.0, 1073.16);
    let fwd = state::at_pt(p, t, &O).unwrap();
    assert_eq!(fwd.region, Region::R5);
    let got = if97(Given::PH(p, fwd.props.h), &O);
    assert_eq!(got.region, Region::R2);
    assert!(
        got.props.t <= 1073.15 && got.props.t > 1073.1,
        "T = {}",
        got.props.t
    );
    assert!(rel(got.props.h, fwd.props.h) <= 1e-11);
}

// ---- B23, the region 2/3 boundary ----

/// Every pair on B23 (R7-97(2012) Eq. (5)) and 1e-9 inside region 2.
#[test]
fn all_pairs_on_b23_return_region2() {
    for i in 1..=12 {
        let t = 623.15 + 20.0 * i as f64;
        // At 863.15 K Eq. (5) gives 100 MPa plus 3e-13 relative: the limit.
        let p = b23::p_b23(t).min(100.0);
        round_trip(p, t, &ALL, "B23");
        round_trip(p * (1.0 - 1e-9), t, &ALL, "B23 - 1e-9");
    }
}

/// The (p, h) decision at B23 used T_B23(p) (Eq. (6)), which inverts Eq. (5) only to ~1e-12
/// relative: 1.4e-10 K too high at 17.66 MPa, which put the state on B23 a hair inside region
/// 3 and returned the region-3 state 2.2 mK away.
#[test]
fn ph_ps_on_b23_where_eq6_rounds_into_region3() {
    for t in [633.15, 703.15] {
        let p = b23::p_b23(t);
        round_trip(p, t, &["ph", "ps"], "B23, Eq. (6) rounding");
    }
}

/// A region-3 state 1e-9 above B23 is inside the band: its (p, h) is answered by region 2's
/// state, which reproduces the pair.
#[test]
fn region3_state_in_the_b23_overlap_is_answered_by_region2() {
    let t = 813.15;
    let p = b23::p_b23(t) * (1.0 + 1e-9);
    let fwd = state::at_pt(p, t, &O).unwrap();
    assert_eq!(fwd.region, Region::R3);
    let got = if97(Given::PH(p, fwd.props.h), &O);
    assert_eq!(got.region, Region::R2);
    assert!(rel(got.props.h, fwd.props.h) <= 1e-11);
    assert!((got.props.t - t).abs() < 0.05, "T = {}", got.props.t);
}

// ---- 623.15 K, the region 1/3 boundary ----

/// Every pair on the 623.15 K isotherm above the saturation pressure, and 1e-9 inside
/// region 1: (p, v) and (p, u) lost the boundary state to the jump of v and u there.
#[test]
fn all_pairs_on_623_15_isotherm_return_region1() {
    let ps = region4::psat(623.15);
    for t in [623.15, 623.15 * (1.0 - 1e-9)] {
        for p in log_grid(ps * 1.001, 100.0, 8) {
            round_trip(p, t, &ALL, "623.15 K");
        }
    }
}

/// The saturated liquid at 623.15 K: (T, v) found it twice (once as the end of the vapour
/// branch, which evaluated the saturation point as liquid) and (u, v) failed.
#[test]
fn tv_uv_of_saturated_liquid_at_623_15() {
    round_trip(
        region4::psat(623.15),
        623.15,
        &ALL,
        "saturated liquid, 623.15 K",
    );
}

// ---- 100 MPa and 50 MPa, the upper pressures ----

/// A region-3 state at 100 MPa carries the pressure given: the density iteration reproduced
/// it only to ~3e-14, above the limit, and the state's own p was then refused as input.
#[test]
fn region3_at_100_mpa_keeps_the_limit() {
    for t in [660.0, 700.0, 800.0] {
        let st = state::at_pt(100.0, t, &O).unwrap();
        assert_eq!(st.region, Region::R3);
        assert_eq!(st.props.p, 100.0, "T = {t}");
        round_trip(100.0, t, &ALL, "100 MPa, region 3");
    }
}

/// Every pair on 100 MPa and 50 MPa at the region edges: 273.15 K, 623.15 K (and 1 K above,
/// clear of the region 1/3 band),
/// 863.15 K (the top of B23) and 1073.15 K; (h, s) answers that landed a rounding error
/// beyond 100 MPa were refused, and (h, s) at 800 K, 100 MPa lay off the SR4-04 map.
#[test]
fn all_pairs_on_the_upper_pressures() {
    let ts = [
        273.15 * (1.0 + 1e-9),
        573.15,
        623.15 * (1.0 - 1e-9),
        624.15,
        800.0,
        863.15,
        1073.15,
    ];
    for p in [100.0, 50.0] {
        for t in ts {
            // (T, s) and (p, v) of cold liquid have two liquid states (the density maximum
            // near 277 K), and (T, h) at 573.15 K two (the enthalpy minimum of a hot liquid
            // isotherm): those pairs are left to the two-state tests of state_pairs.
            let names: &[&str] = if t < 280.0 {
                &["ph", "ps", "hs", "th", "tv", "pu", "uv"]
            } else if t == 573.15 {
                &["ph", "ps", "hs", "ts", "pv", "tv", "pu", "uv"]
            } else {
                &ALL
            };
            round_trip(p, t, names, "upper pressure");
        }
    }
}

/// (u, v) in region 3 at 100 MPa, 0.6 uK above 623.15 K: (T, v) exists only within ~1e-6 K
/// there, a sliver the temperature scan stepped over.
#[test]
fn uv_region3_corner_at_100_mpa_above_623_15() {
    round_trip(
        100.0,
        623.15 * (1.0 + 1e-9),
        &["uv", "hs"],
        "100 MPa, 623.15 K + 1e-9",
    );
}

// ---- 273.15 K and 1 Pa, the lower limits ----

/// (u, v) of liquid at 273.15 K: the root lay on the end of the temperature scan, where
/// rounding gave it the sign of its neighbour.
#[test]
fn uv_of_liquid_at_273_15() {
    for p in [0.001, 0.1, 1.0, 10.0, 50.0, 100.0] {
        round_trip(p, 273.15, &["uv"], "273.15 K");
    }
}

/// (h, s) at the lowest pressure (1 Pa) and of vapour at 273.15 K below the triple point:
/// answers a rounding error below 1 Pa or 273.15 K were refused.
#[test]
fn hs_at_the_lower_limits() {
    for t in [273.15, 323.15, 723.15, 1073.15, 1373.15, 2273.15] {
        round_trip(state::P_MIN, t, &["hs"], "1 Pa");
    }
    for p in [6e-4, 1e-5] {
        round_trip(p, 273.15, &["hs"], "273.15 K vapour");
    }
}

// ---- the saturation line ----

/// (h, s) of wet states across the whole dome. The two-phase search signed the mixture by
/// its quality, an assumption that fails near the critical point (x = 0.5 at 645 K was "not a
/// two-phase state"); at 273.15 K the states lie on the SR4-04 map's lower edge, and at
/// 623.15 K the saturated states jump from regions 1 and 2 to region 3.
#[test]
fn hs_two_phase_across_the_dome() {
    for t in [
        273.15, 280.0, 373.15, 500.0, 600.0, 623.15, 630.0, 640.0, 645.0, 647.0,
    ] {
        for x in [
            1e-7,
            1e-5,
            1e-3,
            0.01,
            0.5,
            0.99,
            0.999,
            1.0 - 1e-5,
            1.0 - 1e-7,
        ] {
            let fwd = state::at_tx(t, x).unwrap();
            let got = solve(Given::HS(fwd.props.h, fwd.props.s), &O, Formulation::If97)
                .unwrap_or_else(|e| panic!("(h, s) of T = {t} K, x = {x}: {e}"));
            let gx = got.x.unwrap_or(f64::NAN);
            // Beside the saturated vapour at 600 K to 640 K and the saturated liquid at
            // 640 K, the single-phase equation also reaches (h, s) of x within 1e-7 of the
            // line (IF97's consistency between its saturation-pressure equation and the
            // single-phase equations); that state, equally exact, is the answer there.
            let single_ok = got.phase != Phase::Wet
                && (x <= 1e-7 || x >= 1.0 - 1e-7)
                && rel(got.props.h, fwd.props.h) <= 1e-11
                && rel(got.props.s, fwd.props.s) <= 1e-11;
            assert!(
                single_ok
                    || (got.phase == Phase::Wet
                        && rel(got.props.t, t) <= REL
                        && rel(got.props.p, fwd.props.p) <= REL
                        && (gx - x).abs() <= REL),
                "(h, s) of T = {t} K, x = {x}: got T = {}, p = {}, x = {gx}, {:?}",
                got.props.t,
                got.props.p,
                got.phase
            );
        }
    }
}

/// (h, s) of single-phase states beside the saturation line (1e-3 to 1e-10 relative in
/// pressure off it, both sides): the SR4-04 map puts some inside the two-phase region, where
/// the single-phase state is the answer whenever its equation reaches (h, s) on its own side
/// of the saturation pressure.
#[test]
fn hs_single_phase_beside_saturation() {
    for t in [
        280.0, 373.15, 500.0, 600.0, 623.15, 630.0, 640.0, 645.0, 647.0,
    ] {
        let ps = region4::psat(t);
        for k in 3..=10 {
            let d = 10f64.powi(-k);
            round_trip(ps * (1.0 + d), t, &["hs"], "liquid beside saturation");
            round_trip(ps * (1.0 - d), t, &["hs"], "vapour beside saturation");
        }
    }
}

/// (T, v) and (u, v) of liquid a hair above the saturation pressure at 280 K: the wet
/// candidate was dropped for x <= 1e-12, and at 280 K (v'' = 1.3e5 v') that left targets
/// between 1e-9 and 1e-7 relative above v' without any state.
#[test]
fn tv_uv_of_liquid_beside_saturation_at_280_k() {
    let ps = region4::psat(280.0);
    for k in 3..=10 {
        round_trip(ps * (1.0 + 10f64.powi(-k)), 280.0, &["tv", "uv"], "280 K");
    }
}
