//! Solving a state of water or steam from any pair of `crate::water::state::Given` with
//! IAPWS-95 (IAPWS R6-95(2018)), the scientific reference formulation.
//!
//! Method: Newton iteration in (rho, T) on the IAPWS-95 Helmholtz equation, started from the
//! IAPWS-IF97 solution of the same pair (`state::solve`), which is close (IF97 reproduces
//! IAPWS-95 to its stated tolerances). Where IF97 has no answer (outside its range, e.g. 1100 K
//! at 500 MPa) the start is `iapws95::rho_guess_pt` for (p, T), the given density for (T, v), and
//! a small grid of (rho, T) seeds otherwise. Two-phase states use the IAPWS-95 phase equilibrium
//! (Maxwell criterion, `iapws95::saturation_t` / `saturation_p`); a single-phase Newton answer
//! inside the IAPWS-95 saturation dome (a metastable state) is replaced by the wet state.
//!
//! Units: as `state` (p MPa, T K, v m3/kg, rho kg/m3, h u kJ/kg, s kJ/(kg K)).
//!
//! Invariant: every returned number comes from IAPWS-95 alone (IF97 only supplies start
//! values); the state lies in the IAPWS-95 range (251.165 K ... 1273 K, p <= 1000 MPa) and not
//! in an ice phase (`melting::check_not_ice`). The `region` field of the returned [`State`] is
//! informational only: the IF97 region that (p, T) would have (4 for wet states; for states
//! beyond IF97's range, the region of the nearest IF97 point at the same temperature band).

use crate::error::{Bound, Error, Result};
use crate::water::iapws95::{self, Saturation, RHO_C, T_C};
use crate::water::if97::regions::{self, Region};
use crate::water::melting;
use crate::water::props::Props;
use crate::water::state::{self, Given, Options, Phase, State};

/// Formulation name used in error messages.
pub const NAME: &str = "IAPWS-95";
/// Highest temperature of IAPWS-95's range of validity, K (R6-95(2018), Sec. 6.3).
pub const T_MAX: f64 = 1273.0;
/// Highest pressure of IAPWS-95's range of validity, MPa (R6-95(2018), Sec. 6.3).
pub const P_MAX: f64 = 1000.0;
/// Lowest temperature accepted, K: the lowest temperature of a stable liquid (the ice
/// Ih-III-liquid triple point of IAPWS R14-08); colder fluid states do not exist above the
/// sublimation curve's range used here.
pub const T_MIN: f64 = melting::T_IH_III;
/// Lowest pressure accepted, MPa (1 Pa, as for IF97).
pub const P_MIN: f64 = 1e-6;

fn oor(q: &str, value: f64, limit: f64, unit: &str, bound: Bound) -> Error {
    Error::out_of_range(q, value, limit, unit, bound, NAME)
}

fn check_t(t: f64) -> Result<()> {
    Error::check_finite("T", t)?;
    if t < T_MIN {
        return Err(oor("T", t, T_MIN, "K", Bound::Below));
    }
    if t > T_MAX {
        return Err(oor("T", t, T_MAX, "K", Bound::Above));
    }
    Ok(())
}

fn check_p(p: f64) -> Result<()> {
    Error::check_finite("p", p)?;
    if p < P_MIN {
        return Err(oor("p", p, P_MIN, "MPa", Bound::Below));
    }
    if p > P_MAX {
        return Err(oor("p", p, P_MAX, "MPa", Bound::Above));
    }
    Ok(())
}

/// Checks that (p, T) is a fluid state inside the IAPWS-95 range (ice first: its message names
/// the melting or sublimation curve).
pub fn check_range(p: f64, t: f64) -> Result<()> {
    Error::check_finite("p", p)?;
    Error::check_finite("T", t)?;
    if t < T_MAX {
        melting::check_not_ice(p, t)?;
    }
    check_t(t)?;
    check_p(p)
}

/// The IF97 region (p, T) would have; informational (see the module doc).
pub fn region_like(p: f64, t: f64) -> Region {
    if let Ok(r) = regions::region_pt(p, t) {
        return r;
    }
    let tc = t.clamp(state::T_MIN, state::T_MAX_5);
    let pc = if tc > state::T_MAX_123 {
        p.clamp(state::P_MIN, state::P_MAX_5)
    } else {
        p.clamp(state::P_MIN, state::P_MAX)
    };
    regions::region_pt(pc, tc).unwrap_or(Region::R1)
}

fn phase_of(p: f64, t: f64, rho: f64) -> Phase {
    if t >= T_C && p >= iapws95::P_C {
        Phase::Supercritical
    } else if t >= T_C {
        Phase::Vapour
    } else if p >= iapws95::P_C || rho > RHO_C {
        Phase::Liquid
    } else {
        Phase::Vapour
    }
}

fn single(props: Props, iterations: u32) -> State {
    State {
        phase: phase_of(props.p, props.t, props.rho),
        region: region_like(props.p, props.t),
        props,
        x: None,
        metastable: false,
        iterations,
    }
}

/// A two-phase state of quality x from an IAPWS-95 saturation state (mixture v, u, h, s; NaN
/// for the single-phase derivatives).
pub fn wet(sat: &Saturation, x: f64) -> State {
    let (l, v) = (&sat.liquid, &sat.vapour);
    let mix = |a: f64, b: f64| a + x * (b - a);
    let vm = mix(l.v, v.v);
    let props = Props {
        p: sat.psat,
        t: sat.t,
        v: vm,
        rho: 1.0 / vm,
        u: mix(l.u, v.u),
        h: mix(l.h, v.h),
        s: mix(l.s, v.s),
        cp: f64::NAN,
        cv: f64::NAN,
        w: f64::NAN,
        kappa: f64::NAN,
        mu_jt: f64::NAN,
        alpha_v: f64::NAN,
        kappa_t: f64::NAN,
        z: sat.psat * vm * 1e3 / (iapws95::R * sat.t),
    };
    State {
        props,
        x: Some(x),
        region: Region::R4,
        phase: Phase::Wet,
        metastable: false,
        iterations: 0,
    }
}

/// Which property a target value refers to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Q {
    P,
    T,
    V,
    H,
    S,
    U,
}

impl Q {
    fn of(self, pr: &Props) -> f64 {
        match self {
            Q::P => pr.p,
            Q::T => pr.t,
            Q::V => pr.v,
            Q::H => pr.h,
            Q::S => pr.s,
            Q::U => pr.u,
        }
    }
    fn name(self) -> &'static str {
        match self {
            Q::P => "p",
            Q::T => "T",
            Q::V => "v",
            Q::H => "h",
            Q::S => "s",
            Q::U => "u",
        }
    }
    fn scale(self, value: f64) -> f64 {
        match self {
            Q::H | Q::U => value.abs().max(1.0),
            Q::S => value.abs().max(0.01),
            _ => value.abs(),
        }
    }
    /// Partial derivatives with respect to (rho, T) from a Helmholtz state.
    fn d_rt(self, pr: &Props) -> (f64, f64) {
        let (rho, v, t) = (pr.rho, pr.v, pr.t);
        let dp_drho = 1.0 / (rho * pr.kappa_t); // MPa m3/kg
        let dp_dt = pr.alpha_v / pr.kappa_t; // MPa/K
        match self {
            Q::P => (dp_drho, dp_dt),
            Q::T => (0.0, 1.0),
            Q::V => (-v * v, 0.0),
            // (dh/drho)_T = (1/rho)(dp/drho)_T - (T/rho^2)(dp/dT)_rho; (dh/dT)_rho = cv + v (dp/dT)_rho
            Q::H => (
                (v * dp_drho - t * v * v * dp_dt) * 1e3,
                pr.cv + v * dp_dt * 1e3,
            ),
            Q::S => (-v * v * dp_dt * 1e3, pr.cv / t),
            Q::U => (-v * v * (t * dp_dt - pr.p) * 1e3, pr.cv),
        }
    }
}

/// The pair of a `Given` as (quantity, value) twice; None for (T,x) and (p,x).
fn pair_of(g: Given) -> Option<(Q, f64, Q, f64)> {
    Some(match g {
        Given::PT(p, t) => (Q::P, p, Q::T, t),
        Given::PH(p, h) => (Q::P, p, Q::H, h),
        Given::PS(p, s) => (Q::P, p, Q::S, s),
        Given::HS(h, s) => (Q::H, h, Q::S, s),
        Given::TH(t, h) => (Q::T, t, Q::H, h),
        Given::TS(t, s) => (Q::T, t, Q::S, s),
        Given::PV(p, v) => (Q::P, p, Q::V, v),
        Given::TV(t, v) => (Q::T, t, Q::V, v),
        Given::UV(u, v) => (Q::U, u, Q::V, v),
        Given::PU(p, u) => (Q::P, p, Q::U, u),
        Given::TX(..) | Given::PX(..) => return None,
    })
}

/// Newton iteration in (rho, T) for qa = a, qb = b from (rho0, T0), with damped steps.
#[allow(clippy::too_many_arguments)]
fn newton_rt(
    qa: Q,
    a: f64,
    qb: Q,
    b: f64,
    rho0: f64,
    t0: f64,
    opts: &Options,
) -> Result<(Props, u32)> {
    // The pressure of a liquid carries an absolute rounding error of a few 1e-13 rho R T
    // (p = rho R T (1 + delta phi_r_delta), a small bracket): its scale never goes below
    // 0.1 rho R T, so the standard tolerance (1e-11) asks p to 1e-12 rho R T, just above that
    // rounding level (a floor of rho R T let a low-pressure liquid stop at ~1e-11 rho R T).
    let scale = |q: Q, v: f64, pr: &Props| {
        if q == Q::P {
            v.abs().max(0.1 * pr.rho * iapws95::R * pr.t * 1e-3)
        } else {
            q.scale(v)
        }
    };
    let (mut rho, mut t) = (rho0, t0);
    let mut pr = iapws95::props(rho, t);
    for it in 0..opts.max_iter {
        let (sa, sb) = (scale(qa, a, &pr), scale(qb, b, &pr));
        let fa = qa.of(&pr) - a;
        let fb = qb.of(&pr) - b;
        if fa.abs() <= opts.tol * sa && fb.abs() <= opts.tol * sb {
            return Ok((pr, it));
        }
        let (a1, a2) = qa.d_rt(&pr);
        let (b1, b2) = qb.d_rt(&pr);
        let det = a1 * b2 - a2 * b1;
        if !det.is_finite() || det == 0.0 {
            break;
        }
        let mut dr = (fa * b2 - fb * a2) / det;
        let mut dt = (a1 * fb - b1 * fa) / det;
        let k = (dr.abs() / (0.5 * rho)).max(dt.abs() / (0.2 * t)).max(1.0);
        dr /= k;
        dt /= k;
        let (nr, nt) = (rho - dr, t - dt);
        if !(nr.is_finite() && nt.is_finite()) || nr <= 0.0 || nt <= 0.0 {
            break;
        }
        // At the rounding level of rho and T: accept if the residuals are small.
        let tiny = (dr.abs() <= 1e-15 * rho) && (dt.abs() <= 1e-15 * t);
        rho = nr;
        t = nt;
        pr = iapws95::props(rho, t);
        if tiny {
            break;
        }
    }
    let (sa, sb) = (scale(qa, a, &pr), scale(qb, b, &pr));
    let fa = qa.of(&pr) - a;
    let fb = qb.of(&pr) - b;
    if fa.abs() <= 1e-9 * sa && fb.abs() <= 1e-9 * sb {
        return Ok((pr, opts.max_iter));
    }
    Err(Error::not_converged(
        format!(
            "IAPWS-95 Newton iteration for ({} = {a}, {} = {b})",
            qa.name(),
            qb.name()
        ),
        opts.max_iter as usize,
    ))
}

/// Whether (rho, T) lies strictly inside the IAPWS-95 saturation dome (a metastable or
/// unstable single-phase solution); returns the saturation state then.
fn inside_dome(rho: f64, t: f64) -> Option<Saturation> {
    if !(iapws95::T_TRIPLE..=iapws95::T_SAT_MAX).contains(&t) {
        return None;
    }
    let sat = iapws95::saturation_t(t).ok()?;
    let m = 1e-9;
    if rho < sat.rho_liquid * (1.0 - m) && rho > sat.rho_vapour * (1.0 + m) {
        Some(sat)
    } else {
        None
    }
}

fn check_x(x: f64) -> Result<f64> {
    Error::check_finite("x", x)?;
    if !(0.0..=1.0).contains(&x) {
        return Err(Error::invalid(format!(
            "x = {x} is outside 0..1 (the vapour mass fraction of a wet state)"
        )));
    }
    Ok(x)
}

/// Quality from q = target on a saturation state; None if outside 0..1.
fn x_from(sat: &Saturation, q: Q, target: f64) -> Option<f64> {
    let (ql, qv) = (q.of(&sat.liquid), q.of(&sat.vapour));
    if qv == ql {
        return None;
    }
    let x = (target - ql) / (qv - ql);
    let eps = 1e-12;
    if (-eps..=1.0 + eps).contains(&x) {
        Some(x.clamp(0.0, 1.0))
    } else {
        None
    }
}

/// The two-phase IAPWS-95 state for a pair, if one exists.
fn wet_for(qa: Q, a: f64, qb: Q, b: f64, t_hint: Option<f64>) -> Option<State> {
    match (qa, qb) {
        (Q::T, _) => {
            let sat = iapws95::saturation_t(a).ok()?;
            x_from(&sat, qb, b).map(|x| wet(&sat, x))
        }
        (Q::P, _) => {
            let sat = iapws95::saturation_p(a).ok()?;
            x_from(&sat, qb, b).map(|x| wet(&sat, x))
        }
        _ => wet_generic(qa, a, qb, b, t_hint),
    }
}

/// (h,s) or (u,v) on the saturation line: the temperature where the qualities from both
/// properties agree (bracketed search on T).
fn wet_generic(qa: Q, a: f64, qb: Q, b: f64, t_hint: Option<f64>) -> Option<State> {
    let f = |t: f64| -> Option<(f64, Saturation, f64)> {
        let sat = iapws95::saturation_t(t).ok()?;
        let (la, va) = (qa.of(&sat.liquid), qa.of(&sat.vapour));
        let x = (a - la) / (va - la);
        let qm = qb.of(&sat.liquid) + x * (qb.of(&sat.vapour) - qb.of(&sat.liquid));
        Some(((qm - b) / qb.scale(b), sat, x))
    };
    let (lo, hi) = (iapws95::T_TRIPLE, iapws95::T_SAT_MAX - 1e-3);
    let mut brackets: Vec<(f64, f64)> = Vec::new();
    if let Some(t0) = t_hint {
        for w in [0.1, 1.0, 10.0] {
            let (x0, x1) = ((t0 - w).max(lo), (t0 + w).min(hi));
            brackets.push((x0, x1));
        }
    }
    let n = 64;
    for i in 0..n {
        let x0 = lo + (hi - lo) * i as f64 / n as f64;
        let x1 = lo + (hi - lo) * (i + 1) as f64 / n as f64;
        brackets.push((x0, x1));
    }
    for (mut x0, mut x1) in brackets {
        let (Some((mut f0, _, _)), Some((f1, _, _))) = (f(x0), f(x1)) else {
            continue;
        };
        if f0.signum() == f1.signum() && f0 != 0.0 {
            continue;
        }
        // Bisection with a secant step: 1e-12 K is far below every tolerance.
        for _ in 0..200 {
            let m = 0.5 * (x0 + x1);
            let Some((fm, _, _)) = f(m) else { break };
            if fm.signum() == f0.signum() && fm != 0.0 {
                x0 = m;
                f0 = fm;
            } else {
                x1 = m;
            }
            if x1 - x0 <= 1e-12 * m {
                break;
            }
        }
        let (_, sat, x) = f(0.5 * (x0 + x1))?;
        if (-1e-12..=1.0 + 1e-12).contains(&x) {
            let w = wet(&sat, x.clamp(0.0, 1.0));
            // Only a state that reproduces both inputs counts.
            let ok = |q: Q, v: f64| (q.of(&w.props) - v).abs() <= 1e-9 * q.scale(v);
            if ok(qa, a) && ok(qb, b) {
                return Some(w);
            }
        }
    }
    None
}

/// State at (p MPa, T K) with IAPWS-95.
pub fn at_pt(p: f64, t: f64) -> Result<State> {
    check_range(p, t)?;
    let rho0 = match state::at_pt(p, t, &Options::STANDARD) {
        Ok(st) => st.props.rho,
        Err(_) => iapws95::rho_guess_pt(p, t),
    };
    // Near the saturation line the IF97 start may lie on the other branch: use the IAPWS-95
    // saturated densities of the side where p lies.
    let mut guess = rho0;
    if (iapws95::T_TRIPLE..=iapws95::T_SAT_MAX).contains(&t) {
        let pe = iapws95::psat_estimate(t);
        if (p / pe - 1.0).abs() < 2e-2 {
            let sat = iapws95::saturation_t(t)?;
            guess = if p >= sat.psat {
                rho0.max(sat.rho_liquid)
            } else {
                rho0.min(sat.rho_vapour)
            };
        }
    }
    let mut rho = match iapws95::rho_from_pt(p, t, guess) {
        Ok(r) => r,
        Err(e @ Error::NotConverged { .. }) => rho_liquid_low_p(p, t, guess).ok_or(e)?,
        Err(e) => return Err(e),
    };
    // Polish to the rounding level of p (a liquid at low p has a large (dp/drho)_T, so the
    // density solver's step criterion leaves p about 1e-8 relative off there).
    for _ in 0..3 {
        let (pc, dp) = iapws95::pressure_and_slope(rho, t);
        if !(dp > 0.0 && dp.is_finite()) || pc == p {
            break;
        }
        let new = rho - (pc - p) / dp;
        if (iapws95::pressure(new, t) - p).abs() >= (pc - p).abs() {
            break;
        }
        rho = new;
    }
    let pr = iapws95::props(rho, t);
    Ok(single(pr, 0))
}

/// Density of a liquid at low pressure, where `iapws95::rho_from_pt` can stall at the
/// rounding level of p (a few 1e-13 rho R T): plain Newton on p(rho) to that level.
fn rho_liquid_low_p(p: f64, t: f64, guess: f64) -> Option<f64> {
    let mut rho = guess;
    for _ in 0..50 {
        let (pc, dp) = iapws95::pressure_and_slope(rho, t);
        if !(dp > 0.0 && dp.is_finite()) {
            return None;
        }
        let scale = p.max(rho * iapws95::R * t * 1e-3);
        if (pc - p).abs() <= 1e-12 * scale {
            return Some(rho);
        }
        rho -= (pc - p) / dp;
    }
    None
}

/// A two-phase state at T and quality x.
pub fn at_tx(t: f64, x: f64) -> Result<State> {
    check_x(x)?;
    Ok(wet(&iapws95::saturation_t(t)?, x))
}

/// A two-phase state at p and quality x.
pub fn at_px(p: f64, x: f64) -> Result<State> {
    check_x(x)?;
    Ok(wet(&iapws95::saturation_p(p)?, x))
}

fn finish(st: State) -> Result<State> {
    // A solution on a range limit may land beyond it by the solver tolerance.
    let near = |x: f64, lim: f64| {
        if x > lim && x <= lim * (1.0 + 1e-9) {
            lim
        } else {
            x
        }
    };
    check_range(near(st.props.p, P_MAX), near(st.props.t, T_MAX))?;
    Ok(st)
}

/// Single-phase Newton from (rho0, T0), with the dome check.
fn single_from(qa: Q, a: f64, qb: Q, b: f64, rho0: f64, t0: f64, opts: &Options) -> Result<State> {
    let (pr, it) = newton_rt(qa, a, qb, b, rho0, t0, opts)?;
    if let Some(sat) = inside_dome(pr.rho, pr.t) {
        if let Some(w) = wet_for(qa, a, qb, b, Some(sat.t)) {
            return Ok(w);
        }
        return Err(Error::no_unique(format!(
            "the IAPWS-95 solution of ({} = {a}, {} = {b}) is metastable (inside the saturation dome)",
            qa.name(),
            qb.name()
        )));
    }
    finish(single(pr, it))
}

fn seeds_solve(qa: Q, a: f64, qb: Q, b: f64, opts: &Options) -> Result<State> {
    let ts = [300.0, 500.0, 700.0, 900.0, 1100.0, 1250.0];
    let rhos = [1200.0, 1000.0, 700.0, 400.0, 100.0, 10.0, 1.0];
    let mut last = None;
    for &t0 in &ts {
        for &r0 in &rhos {
            match single_from(qa, a, qb, b, r0, t0, opts) {
                Ok(st) => return Ok(st),
                Err(e) => last = Some(e),
            }
        }
    }
    Err(last.unwrap_or_else(|| {
        Error::no_unique(format!(
            "no IAPWS-95 state has {} = {a} and {} = {b}",
            qa.name(),
            qb.name()
        ))
    }))
}

/// Solves any supported pair with IAPWS-95. `opts.tol`, `opts.max_iter` and `opts.prefer`
/// apply (the preference acts through the IF97 start); `backward_only` and `metastable` are
/// IF97 features and are refused.
pub fn solve(given: Given, opts: &Options) -> Result<State> {
    if opts.backward_only || opts.metastable {
        return Err(Error::invalid(
            "backward_only and metastable are IAPWS-IF97 options; IAPWS-95 has neither",
        ));
    }
    let Some((qa, a, qb, b)) = pair_of(given) else {
        return match given {
            Given::TX(t, x) => at_tx(t, x),
            Given::PX(p, x) => at_px(p, x),
            _ => unreachable_pair(),
        };
    };
    Error::check_finite(qa.name(), a)?;
    Error::check_finite(qb.name(), b)?;
    if let Given::PT(p, t) = given {
        return at_pt(p, t);
    }
    if matches!(qb, Q::V) && b <= 0.0 {
        return Err(oor("v", b, 0.0, "m3/kg", Bound::Below));
    }
    if let Given::TV(t, v) = given {
        return at_tv(t, v);
    }
    if qa == Q::T {
        check_t(a)?;
    }
    if qa == Q::P {
        check_p(a)?;
    }
    let start = state::solve(given, opts);
    match start {
        Ok(st) if st.phase == Phase::Wet => {
            if let Some(w) = wet_for(qa, a, qb, b, Some(st.props.t)) {
                return Ok(w);
            }
            // IAPWS-95 puts the state just outside its dome: start on the side it lies.
            let sat = iapws95::saturation_t(st.props.t.min(iapws95::T_SAT_MAX))?;
            let x = st.x.unwrap_or(0.5);
            let rho0 = if x < 0.5 {
                sat.rho_liquid
            } else {
                sat.rho_vapour
            };
            single_from(qa, a, qb, b, rho0, st.props.t, opts)
        }
        Ok(st) if qa == Q::P && qb == Q::V && st.props.t < T_COLD => pv_cold(a, b, opts),
        Ok(st) => single_from(qa, a, qb, b, st.props.rho, st.props.t, opts)
            .or_else(|_| seeds_solve(qa, a, qb, b, opts)),
        Err(e @ Error::NoUniqueState { .. }) if e.to_string().contains("admits") => Err(e),
        Err(_) => {
            // No IF97 start (outside its range, or IF97 and IAPWS-95 differ across a phase
            // boundary): collect the wet and the single-phase IAPWS-95 solutions.
            let mut cands = Vec::new();
            if let Some(w) = wet_for(qa, a, qb, b, None) {
                cands.push(w);
            }
            if let Ok(st) = seeds_solve(qa, a, qb, b, opts) {
                if st.phase != Phase::Wet {
                    cands.push(st);
                }
            }
            choose(cands, qa, a, qb, b, opts)
        }
    }
}

fn describe(st: &State) -> String {
    match st.x {
        Some(x) => format!(
            "wet at p = {:.6} MPa, T = {:.4} K, x = {:.6}",
            st.props.p, st.props.t, x
        ),
        None => format!(
            "{} at p = {:.6} MPa, T = {:.4} K",
            st.phase.name(),
            st.props.p,
            st.props.t
        ),
    }
}

fn choose(cands: Vec<State>, qa: Q, a: f64, qb: Q, b: f64, opts: &Options) -> Result<State> {
    let what = format!("{} = {a} and {} = {b}", qa.name(), qb.name());
    match cands.len() {
        0 => Err(Error::no_unique(format!(
            "no IAPWS-95 state has {what} (outside the range of validity or not a physical state)"
        ))),
        1 => Ok(cands[0]),
        _ => {
            if let Some(pref) = opts.prefer {
                if let Some(c) = cands.iter().find(|c| c.phase == pref) {
                    return Ok(*c);
                }
            }
            let list: Vec<String> = cands.iter().map(describe).collect();
            Err(Error::no_unique(format!(
                "{what} admits {} states: {}; give a third property or the option prefer",
                cands.len(),
                list.join(" or ")
            )))
        }
    }
}

/// Below this temperature, K, a liquid isobar can pass a density maximum (near 277 K at low
/// pressure), so (p, v) may have two liquid states: common practice, no source.
const T_COLD: f64 = 330.0;

/// (p, v) of a cold liquid: scan v(p, T) over T at fixed p for every root (two around the
/// density maximum), bisect each, and report an ambiguity instead of picking one.
fn pv_cold(p: f64, v: f64, opts: &Options) -> Result<State> {
    let f = |t: f64| at_pt(p, t).map(|st| (st.props.v - v, st));
    let lo = T_MIN.max(melting_t(p));
    let n = 64;
    let ts: Vec<f64> = (0..=n)
        .map(|i| lo + (T_COLD + 20.0 - lo) * i as f64 / n as f64)
        .collect();
    let vals: Vec<Option<f64>> = ts.iter().map(|&t| f(t).ok().map(|r| r.0)).collect();
    let mut cands = Vec::new();
    for i in 0..n {
        let (Some(fa), Some(fb)) = (vals[i], vals[i + 1]) else {
            continue;
        };
        if fa != 0.0 && fa.signum() == fb.signum() {
            continue;
        }
        let (mut a, mut b, mut fa) = (ts[i], ts[i + 1], fa);
        for _ in 0..200 {
            let m = 0.5 * (a + b);
            let fm = f(m)?.0;
            if fm != 0.0 && fm.signum() == fa.signum() {
                a = m;
                fa = fm;
            } else {
                b = m;
            }
            if b - a <= 1e-13 * m {
                break;
            }
        }
        let st = f(0.5 * (a + b))?.1;
        // A sign change across the saturation line (liquid to vapour) is no root.
        if (st.props.v - v).abs() > 1e-9 * v {
            continue;
        }
        if !cands
            .iter()
            .any(|c: &State| (c.props.t - st.props.t).abs() < 1e-6)
        {
            cands.push(st);
        }
    }
    if cands.len() > 1 {
        return Err(Error::no_unique(format!(
            "p = {p} MPa and v = {v} m3/kg admits {} states: {}; give a third property",
            cands.len(),
            cands.iter().map(describe).collect::<Vec<_>>().join(" or ")
        )));
    }
    match cands.pop() {
        Some(st) => Ok(st),
        None => seeds_solve(Q::P, p, Q::V, v, opts),
    }
}

/// The lowest fluid temperature at pressure p, K (the melting curve where it lies above
/// `T_MIN`; a lower bound only, for scans).
fn melting_t(p: f64) -> f64 {
    // Bisection on check_not_ice between T_MIN and 400 K (fluid at the top for p <= 1000 MPa).
    let (mut a, mut b) = (T_MIN, 400.0);
    if melting::check_not_ice(p, a).is_ok() {
        return a;
    }
    for _ in 0..50 {
        let m = 0.5 * (a + b);
        if melting::check_not_ice(p, m).is_ok() {
            b = m;
        } else {
            a = m;
        }
    }
    b
}

/// (T, v): the density is given, so the state is evaluated directly (wet inside the dome).
fn at_tv(t: f64, v: f64) -> Result<State> {
    check_t(t)?;
    if let Some(sat) = inside_dome(1.0 / v, t) {
        let x = (v - sat.liquid.v) / (sat.vapour.v - sat.liquid.v);
        return Ok(wet(&sat, x.clamp(0.0, 1.0)));
    }
    finish(single(iapws95::props(1.0 / v, t), 0))
}

fn unreachable_pair() -> Result<State> {
    Err(Error::invalid("unsupported input pair"))
}
