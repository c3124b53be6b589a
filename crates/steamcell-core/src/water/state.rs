//! Solving a state of water or steam from any pair of properties that fixes it, with IAPWS-IF97.
//!
//! The fast pairs (p,T), (p,h), (p,s) and (h,s) start from the IF97 backward equations and are
//! refined by Newton iteration on the basic equations, so that the basic equations applied to the
//! answer return the inputs to within `tol` (1e-11 relative by default, [`Options::STANDARD`]: 100
//! times tighter than the 1e-9 promise of `water.state`; in practice ~1e-13).
//! The other pairs ((T,h), (T,s), (p,v), (T,v), (p,u), (u,v)) scan each phase branch for sign
//! changes and solve each bracket with a safeguarded secant/bisection iteration, so that a pair
//! with two solutions is detected and reported, never silently resolved.
//!
//! Internal units: p MPa, T K, v m3/kg, rho kg/m3, h u kJ/kg, s kJ/(kg K).
//!
//! Invariant: a returned [`State`] always satisfies the region's validity limits; two-phase states
//! carry NaN for cp, cv, w and the other single-phase derivatives (the API reports them as null
//! with a reason).

use crate::error::{Bound, Error, Result};
use crate::water::if97::backward;
use crate::water::if97::regions::{self, Region};
use crate::water::if97::{b23, region1, region2, region3, region4, region5};
use crate::water::props::Props;

/// Formulation name used in error messages.
pub const IF97: &str = "IAPWS-IF97";

/// The IF97 critical constants (R7-97(2012) Eqs. (2) to (4)), defined once in `if97::regions`.
pub use crate::water::if97::regions::{P_C, RHO_C, T_C};
/// Lowest temperature of IF97, K.
pub const T_MIN: f64 = regions::T_MIN;
/// Upper temperature of regions 1 to 3, K.
pub const T_MAX_123: f64 = regions::T_25;
/// Upper temperature of region 5, K.
pub const T_MAX_5: f64 = regions::T_MAX;
/// Upper pressure of regions 1 to 3, MPa.
pub const P_MAX: f64 = regions::P_MAX;
/// Upper pressure of region 5, MPa.
pub const P_MAX_5: f64 = regions::P_MAX_R5;
/// Lower temperature of region 3, K.
pub const T_13: f64 = regions::T_13;
/// Lowest pressure accepted, MPa (1 Pa; IF97 region 2 is valid for p > 0).
pub const P_MIN: f64 = 1e-6;

/// The phase of a state.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Phase {
    /// Liquid (compressed or saturated), T below the critical temperature.
    Liquid,
    /// Vapour or gas below the critical pressure.
    Vapour,
    /// Two-phase liquid-vapour mixture.
    Wet,
    /// Above both the critical temperature and the critical pressure.
    Supercritical,
}

impl Phase {
    /// Lower-case name used on the wire.
    pub fn name(self) -> &'static str {
        match self {
            Phase::Liquid => "liquid",
            Phase::Vapour => "vapour",
            Phase::Wet => "wet",
            Phase::Supercritical => "supercritical",
        }
    }
}

/// A solved state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct State {
    /// All properties; for wet states the mixture v, rho, u, h, s, and NaN for cp, cv, w,
    /// kappa, mu_jt, alpha_v, kappa_t.
    pub props: Props,
    /// Vapour mass fraction: 0..1 for wet states, None for single-phase states.
    pub x: Option<f64>,
    /// IF97 region of the state (4 for wet states).
    pub region: Region,
    /// Phase.
    pub phase: Phase,
    /// Whether the metastable-vapour equation was used.
    pub metastable: bool,
    /// Newton iterations used in refinement (0 for direct evaluations).
    pub iterations: u32,
}

/// A pair of input values (internal units).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Given {
    /// Pressure MPa, temperature K.
    PT(f64, f64),
    /// Pressure MPa, enthalpy kJ/kg.
    PH(f64, f64),
    /// Pressure MPa, entropy kJ/(kg K).
    PS(f64, f64),
    /// Enthalpy kJ/kg, entropy kJ/(kg K).
    HS(f64, f64),
    /// Temperature K, quality 0..1.
    TX(f64, f64),
    /// Pressure MPa, quality 0..1.
    PX(f64, f64),
    /// Temperature K, enthalpy kJ/kg.
    TH(f64, f64),
    /// Temperature K, entropy kJ/(kg K).
    TS(f64, f64),
    /// Pressure MPa, specific volume m3/kg.
    PV(f64, f64),
    /// Temperature K, specific volume m3/kg.
    TV(f64, f64),
    /// Specific internal energy kJ/kg, specific volume m3/kg.
    UV(f64, f64),
    /// Pressure MPa, specific internal energy kJ/kg.
    PU(f64, f64),
}

/// Solver options. No `Default` for physics knobs beyond the documented ones.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Options {
    /// Relative tolerance of the refinement: the basic equations return the inputs to this.
    pub tol: f64,
    /// Iteration limit of every Newton or bracketing iteration.
    pub max_iter: u32,
    /// Return the raw backward-equation answer (no Newton refinement) for (p,h), (p,s), (h,s).
    pub backward_only: bool,
    /// Allow the metastable-vapour equation for (p,T) inputs below the saturation temperature
    /// (p <= 10 MPa).
    pub metastable: bool,
    /// Which phase to return when a pair admits two states (e.g. (T,h) compressed liquid vs wet).
    pub prefer: Option<Phase>,
}

impl Options {
    /// The documented defaults: a refinement tolerance of 1e-11 relative (100 times tighter
    /// than the 1e-9 promise), 60 iterations, refinement on, no metastable states, no
    /// preference.
    pub const STANDARD: Options = Options {
        tol: 1e-11,
        max_iter: 60,
        backward_only: false,
        metastable: false,
        prefer: None,
    };
}

fn oor(q: &str, value: f64, limit: f64, unit: &str, bound: Bound) -> Error {
    Error::out_of_range(q, value, limit, unit, bound, IF97)
}

fn check_t(t: f64) -> Result<f64> {
    Error::check_finite("T", t)?;
    if t < T_MIN {
        return Err(oor("T", t, T_MIN, "K", Bound::Below));
    }
    if t > T_MAX_5 {
        return Err(oor("T", t, T_MAX_5, "K", Bound::Above));
    }
    Ok(t)
}

fn check_p(p: f64) -> Result<f64> {
    Error::check_finite("p", p)?;
    if p < P_MIN {
        return Err(oor("p", p, P_MIN, "MPa", Bound::Below));
    }
    if p > P_MAX {
        return Err(oor("p", p, P_MAX, "MPa", Bound::Above));
    }
    Ok(p)
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

/// Phase of a single-phase state from its region and (p, T, rho).
fn phase_of(region: Region, p: f64, t: f64, rho: f64) -> Phase {
    if t >= T_C && p >= P_C {
        return Phase::Supercritical;
    }
    match region {
        Region::R1 => Phase::Liquid,
        Region::R2 | Region::R5 => Phase::Vapour,
        Region::R3 => {
            if t >= T_C {
                Phase::Vapour
            } else if p >= P_C || rho > RHO_C {
                Phase::Liquid
            } else {
                Phase::Vapour
            }
        }
        Region::R4 => Phase::Wet,
    }
}

fn single(props: Props, region: Region, iterations: u32) -> State {
    State {
        phase: phase_of(region, props.p, props.t, props.rho),
        props,
        x: None,
        region,
        metastable: false,
        iterations,
    }
}

/// Region-3 density at (p, T) from the SR5-05 backward equation `v0`, refined on the basic
/// equation by Newton; where Newton stalls (near the critical point, where (dp/drho)_T
/// vanishes) a bracketing search around the starting value on the same side of the critical
/// density takes over.
fn region3_rho(p: f64, t: f64, v0: f64) -> Result<f64> {
    let g = 1.0 / v0;
    if let Ok(rho) = region3::rho_from_pt(p, t, g) {
        return Ok(rho);
    }
    let f = |rho: f64| -> Result<f64> { Ok(region3::pressure(rho, t) - p) };
    let liquid = g > RHO_C;
    let (mut lo, mut hi) = (g * 0.97, g * 1.03);
    for _ in 0..8 {
        if t < T_C {
            if liquid {
                lo = lo.max(RHO_C);
            } else {
                hi = hi.min(RHO_C);
            }
        }
        if f(lo)?.signum() != f(hi)?.signum() {
            return brent(f, lo, hi, Some(g), &Options::STANDARD);
        }
        lo *= 0.9;
        hi *= 1.1;
    }
    Err(Error::not_converged(
        format!("IAPWS-IF97 region 3 density at p = {p} MPa, T = {t} K"),
        8,
    ))
}

/// Region-3 properties at (p, T).
fn region3_pt(p: f64, t: f64) -> Result<Props> {
    let v0 = backward::region3_vpt::v_pt(p, t);
    Ok(region3::props(region3_rho(p, t, v0)?, t))
}

/// Properties at (p, T) in a known single-phase region.
fn props_in(region: Region, p: f64, t: f64) -> Result<Props> {
    match region {
        Region::R1 => Ok(region1::props(p, t)),
        Region::R2 => Ok(region2::props(p, t)),
        Region::R5 => Ok(region5::props(p, t)),
        Region::R3 => region3_pt(p, t),
        Region::R4 => Err(Error::invalid(
            "a (p, T) pair on the saturation line does not fix a state; give the quality x",
        )),
    }
}

/// Highest pressure of the metastable-vapour equation, MPa (IAPWS R7-97(2012) Sec. 6.2).
pub const P_MAX_METASTABLE: f64 = 10.0;
/// Triple-point pressure, MPa (IAPWS R7-97(2012) Sec. 6.2 bounds the metastable-vapour
/// equation from below with it; the value is IAPWS's, 611.657 Pa).
pub const P_TRIPLE: f64 = 611.657e-6;
/// Equilibrium quality of the 5 % equilibrium-moisture line, the lower end of the
/// metastable-vapour equation (IAPWS R7-97(2012) Sec. 6.2).
pub const X_METASTABLE_MIN: f64 = 0.95;

/// Formulation text of the metastable-vapour equation's range, for its refusals.
const METASTABLE_RANGE: &str = "the IAPWS-IF97 metastable-vapour equation (R7-97(2012) Sec. 6.2: from the saturated-vapour line to the 5 % equilibrium-moisture line, triple-point pressure to 10 MPa)";

/// The metastable-vapour state at (p, T), T below the saturation temperature, or the reason it
/// lies outside the supplementary equation's range: IAPWS R7-97(2012) Sec. 6.2 makes it valid
/// from the saturated-vapour line to the 5 % equilibrium-moisture line (the enthalpy of the
/// equilibrium wet state with x = 0.95 at the same pressure, from h' and h'') for pressures
/// from the triple point to 10 MPa.
fn metastable_pt(p: f64, t: f64) -> Result<State> {
    if p > P_MAX_METASTABLE {
        return Err(Error::out_of_range(
            "p",
            p,
            P_MAX_METASTABLE,
            "MPa",
            Bound::Above,
            METASTABLE_RANGE,
        ));
    }
    if p < P_TRIPLE {
        return Err(Error::out_of_range(
            "p",
            p,
            P_TRIPLE,
            "MPa",
            Bound::Below,
            METASTABLE_RANGE,
        ));
    }
    let ts = region4::tsat(p);
    let props = region2::metastable_props(p, t);
    let h_min = region1::props(p, ts).h
        + X_METASTABLE_MIN * (region2::props(p, ts).h - region1::props(p, ts).h);
    if props.h.is_nan() || props.h < h_min {
        // Name the temperature of the 5 % line: where the metastable enthalpy meets h_min.
        let t_min = metastable_t_at_h(p, h_min, ts);
        return Err(Error::out_of_range(
            "T",
            t,
            t_min,
            "K",
            Bound::Below,
            METASTABLE_RANGE,
        ));
    }
    let mut st = single(props, Region::R2, 0);
    st.metastable = true;
    st.phase = Phase::Vapour;
    Ok(st)
}

/// The temperature at which the metastable-vapour enthalpy at p equals `h` (below `ts`), by
/// bisection: h rises with T along the metastable isobar near the saturated-vapour line.
fn metastable_t_at_h(p: f64, h: f64, ts: f64) -> f64 {
    let (mut lo, mut hi) = ((ts - 150.0).max(T_MIN), ts);
    if region2::metastable_props(p, lo).h >= h {
        return lo;
    }
    for _ in 0..80 {
        let mid = 0.5 * (lo + hi);
        if region2::metastable_props(p, mid).h < h {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// State at (p, T). With `opts.metastable`, a (p, T) below the saturation temperature is
/// answered by the metastable-vapour equation where it is valid and refused elsewhere.
pub fn at_pt(p: f64, t: f64, opts: &Options) -> Result<State> {
    check_p(p)?;
    check_t(t)?;
    if opts.metastable && p < P_C && t < region4::tsat(p) {
        return metastable_pt(p, t);
    }
    let region = regions::region_pt(p, t)?;
    Ok(single(props_in(region, p, t)?, region, 0))
}

/// State at (p, T) with the first-order properties only: p, T, v, rho, u, h, s, z, x, region
/// and phase are those of [`at_pt`] bit for bit; cp, cv, w, kappa, mu_jt, alpha_v and kappa_t
/// are NaN in regions 1, 2 and 5 (region 3 and metastable states get the full set). For bulk
/// work that needs no second derivatives, at about half the cost of the terms.
pub fn at_pt_first(p: f64, t: f64, opts: &Options) -> Result<State> {
    check_p(p)?;
    check_t(t)?;
    if opts.metastable {
        return at_pt(p, t, opts);
    }
    let region = regions::region_pt(p, t)?;
    let props = match region {
        Region::R1 => region1::props_first(p, t),
        Region::R2 => region2::props_first(p, t),
        Region::R5 => region5::props_first(p, t),
        _ => props_in(region, p, t)?,
    };
    Ok(single(props, region, 0))
}

/// Saturated liquid and vapour at temperature T (273.15 K <= T <= Tc): (p_sat, liquid, vapour).
pub fn saturation_t(t: f64) -> Result<(f64, Props, Props)> {
    check_t(t)?;
    if t > T_C {
        return Err(oor("T", t, T_C, "K", Bound::Above));
    }
    let p = region4::psat(t);
    if t <= T_13 {
        return Ok((p, region1::props(p, t), region2::props(p, t)));
    }
    let (l, v) = saturation_region3(p, t)?;
    Ok((p, l, v))
}

/// Saturated liquid and vapour at pressure p (611.213 Pa <= p <= pc): (T_sat, liquid, vapour).
pub fn saturation_p(p: f64) -> Result<(f64, Props, Props)> {
    Error::check_finite("p", p)?;
    let p_min = region4::psat(T_MIN);
    if p < p_min {
        return Err(oor("p", p, p_min, "MPa", Bound::Below));
    }
    if p > P_C {
        return Err(oor("p", p, P_C, "MPa", Bound::Above));
    }
    let t = region4::tsat(p);
    if t <= T_13 {
        return Ok((t, region1::props(p, t), region2::props(p, t)));
    }
    let (l, v) = saturation_region3(p, t.min(T_C))?;
    Ok((t, l, v))
}

fn saturation_region3(p: f64, t: f64) -> Result<(Props, Props)> {
    if t >= T_C - 1e-9 || p >= P_C {
        let c = region3::props(RHO_C, T_C);
        return Ok((c, c));
    }
    // Start each side from the SR5-05 equation a hair inside its phase, then solve p3 = psat.
    let vl = backward::region3_vpt::v_pt(p, t * (1.0 - 1e-9));
    let vv = backward::region3_vpt::v_pt(p, t * (1.0 + 1e-9));
    let rl = region3_rho(p, t, vl)?;
    let rv = region3_rho(p, t, vv)?;
    Ok((region3::props(rl, t), region3::props(rv, t)))
}

fn nan_props(p: f64, t: f64, v: f64, u: f64, h: f64, s: f64) -> Props {
    Props {
        p,
        t,
        v,
        rho: 1.0 / v,
        u,
        h,
        s,
        cp: f64::NAN,
        cv: f64::NAN,
        w: f64::NAN,
        kappa: f64::NAN,
        mu_jt: f64::NAN,
        alpha_v: f64::NAN,
        kappa_t: f64::NAN,
        z: p * v * 1e3 / (regions::R * t),
    }
}

fn wet(p: f64, t: f64, x: f64, l: &Props, v: &Props) -> State {
    let mix = |a: f64, b: f64| a + x * (b - a);
    let props = nan_props(
        p,
        t,
        mix(l.v, v.v),
        mix(l.u, v.u),
        mix(l.h, v.h),
        mix(l.s, v.s),
    );
    State {
        props,
        x: Some(x),
        region: Region::R4,
        phase: Phase::Wet,
        metastable: false,
        iterations: 0,
    }
}

/// A two-phase state at temperature T and quality x.
pub fn at_tx(t: f64, x: f64) -> Result<State> {
    check_x(x)?;
    let (p, l, v) = saturation_t(t)?;
    Ok(wet(p, t, x, &l, &v))
}

/// A two-phase state at pressure p and quality x.
pub fn at_px(p: f64, x: f64) -> Result<State> {
    check_x(x)?;
    let (t, l, v) = saturation_p(p)?;
    Ok(wet(p, t, x, &l, &v))
}

/// Which property a target value refers to.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Q {
    P,
    V,
    H,
    S,
    U,
}

impl Q {
    fn of(self, pr: &Props) -> f64 {
        match self {
            Q::P => pr.p,
            Q::V => pr.v,
            Q::H => pr.h,
            Q::S => pr.s,
            Q::U => pr.u,
        }
    }
    fn name(self) -> &'static str {
        match self {
            Q::P => "p",
            Q::V => "v",
            Q::H => "h",
            Q::S => "s",
            Q::U => "u",
        }
    }
    fn unit(self) -> &'static str {
        match self {
            Q::P => "MPa",
            Q::V => "m3/kg",
            Q::H | Q::U => "kJ/kg",
            Q::S => "kJ/(kg K)",
        }
    }
    /// A scale for relative tolerances that does not vanish where the value crosses zero.
    fn scale(self, value: f64) -> f64 {
        match self {
            Q::H | Q::U => value.abs().max(1.0),
            Q::S => value.abs().max(0.01),
            _ => value.abs(),
        }
    }
}

/// Partial derivatives of q with respect to (p, T) for Gibbs regions.
fn d_pt(q: Q, pr: &Props) -> (f64, f64) {
    let v = pr.v;
    let t = pr.t;
    match q {
        Q::P => (1.0, 0.0),
        Q::V => (-v * pr.kappa_t, v * pr.alpha_v),
        Q::H => (v * (1.0 - t * pr.alpha_v) * 1e3, pr.cp),
        Q::S => (-v * pr.alpha_v * 1e3, pr.cp / t),
        // du = dh - d(pv): (du/dp)_T = (dh/dp)_T - v - p (dv/dp)_T; (du/dT)_p = cp - p (dv/dT)_p
        Q::U => (
            (v * (1.0 - t * pr.alpha_v) - v + pr.p * v * pr.kappa_t) * 1e3,
            pr.cp - pr.p * v * pr.alpha_v * 1e3,
        ),
    }
}

/// Partial derivatives of q with respect to (rho, T) for the Helmholtz region 3.
fn d_rt(q: Q, pr: &Props) -> (f64, f64) {
    let rho = pr.rho;
    let v = pr.v;
    let t = pr.t;
    let dp_drho = 1.0 / (rho * pr.kappa_t); // MPa m3/kg
    let dp_dt = pr.alpha_v / pr.kappa_t; // MPa/K
    match q {
        Q::P => (dp_drho, dp_dt),
        Q::V => (-v * v, 0.0),
        // (dh/drho)_T = (dh/dp)_T (dp/drho)_T ; (dh/dT)_rho = cv + v (dp/dT)_rho
        Q::H => (
            v * (1.0 - t * pr.alpha_v) * dp_drho * 1e3,
            pr.cv + v * dp_dt * 1e3,
        ),
        // (ds/drho)_T = -v^2 (dp/dT)_v ; (ds/dT)_rho = cv / T
        Q::S => (-v * v * dp_dt * 1e3, pr.cv / t),
        // (du/drho)_T = -v^2 (T (dp/dT)_v - p) ; (du/dT)_rho = cv
        Q::U => (-v * v * (t * dp_dt - pr.p) * 1e3, pr.cv),
    }
}

/// Newton iteration in one region for the pair (qa = a, qb = b), from (x1, T) where x1 is p
/// (Gibbs regions) or rho (region 3). Returns the converged properties and iteration count.
#[allow(clippy::too_many_arguments)]
fn newton2(
    region: Region,
    qa: Q,
    a: f64,
    qb: Q,
    b: f64,
    mut x1: f64,
    mut t: f64,
    opts: &Options,
) -> Result<(Props, u32)> {
    let eval = |x1: f64, t: f64| -> Result<Props> {
        match region {
            Region::R1 => Ok(region1::props(x1, t)),
            Region::R2 => Ok(region2::props(x1, t)),
            Region::R5 => Ok(region5::props(x1, t)),
            Region::R3 => Ok(region3::props(x1, t)),
            Region::R4 => Err(Error::invalid(
                "no Newton iteration in the two-phase region",
            )),
        }
    };
    let sa = qa.scale(a);
    let sb = qb.scale(b);
    let mut pr = eval(x1, t)?;
    for it in 0..opts.max_iter {
        let fa = qa.of(&pr) - a;
        let fb = qb.of(&pr) - b;
        if fa.abs() <= opts.tol * sa && fb.abs() <= opts.tol * sb {
            return Ok((pr, it));
        }
        let ((a1, a2), (b1, b2)) = if region == Region::R3 {
            (d_rt(qa, &pr), d_rt(qb, &pr))
        } else {
            (d_pt(qa, &pr), d_pt(qb, &pr))
        };
        let det = a1 * b2 - a2 * b1;
        if !det.is_finite() || det == 0.0 {
            break;
        }
        let mut d1 = (fa * b2 - fb * a2) / det;
        let mut dt = (a1 * fb - b1 * fa) / det;
        // Damp steps that would leave a sane neighbourhood.
        let lim1 = 0.5 * x1.abs();
        let limt = 0.2 * t;
        let k = (d1.abs() / lim1).max(dt.abs() / limt).max(1.0);
        d1 /= k;
        dt /= k;
        x1 -= d1;
        t -= dt;
        if !(x1.is_finite() && t.is_finite()) || x1 <= 0.0 {
            break;
        }
        pr = eval(x1, t)?;
        if it + 1 == opts.max_iter {
            break;
        }
    }
    let fa = qa.of(&pr) - a;
    let fb = qb.of(&pr) - b;
    if fa.abs() <= 1e-9 * sa && fb.abs() <= 1e-9 * sb {
        return Ok((pr, opts.max_iter));
    }
    Err(Error::not_converged(
        format!(
            "IF97 region {} Newton iteration for ({} = {a}, {} = {b})",
            region.number(),
            qa.name(),
            qb.name()
        ),
        opts.max_iter as usize,
    ))
}

/// 1-D Newton on T at fixed p in a Gibbs region: q(p, T) = target, with dq/dT = cp (h) or
/// cp/T (s).
fn newton_t(region: Region, p: f64, q: Q, target: f64, t0: f64, opts: &Options) -> Result<State> {
    let eval = |t: f64| match region {
        Region::R1 => region1::props(p, t),
        Region::R5 => region5::props(p, t),
        _ => region2::props(p, t),
    };
    let scale = q.scale(target);
    let mut t = t0;
    let mut pr = eval(t);
    for it in 0..opts.max_iter {
        let f = q.of(&pr) - target;
        if f.abs() <= opts.tol * scale {
            return Ok(single(pr, region, it));
        }
        let d = d_pt(q, &pr).1;
        if !(d.is_finite() && d > 0.0) {
            break;
        }
        let step = (f / d).clamp(-0.2 * t, 0.2 * t);
        t -= step;
        pr = eval(t);
        if step.abs() <= 4.0 * f64::EPSILON * t {
            // At the rounding floor: accept if within the documented promise.
            if (q.of(&pr) - target).abs() <= 1e-9 * scale {
                return Ok(single(pr, region, it + 1));
            }
        }
    }
    if (q.of(&pr) - target).abs() <= 1e-9 * scale {
        return Ok(single(pr, region, opts.max_iter));
    }
    Err(Error::not_converged(
        format!(
            "IF97 region {} Newton iteration for (p = {p}, {} = {target})",
            region.number(),
            q.name()
        ),
        opts.max_iter as usize,
    ))
}

fn limits_t_for_p(p: f64) -> f64 {
    if p <= P_MAX_5 {
        T_MAX_5
    } else {
        T_MAX_123
    }
}

/// Saturation pressure at 273.15 K (the lowest pressure of IF97's saturation line), MPa.
pub fn p_sat_min() -> f64 {
    static P: std::sync::OnceLock<f64> = std::sync::OnceLock::new();
    *P.get_or_init(|| region4::psat(T_MIN))
}

/// Saturation pressure at 623.15 K (the lowest pressure of region 3), MPa, computed once.
fn p_sat_13() -> f64 {
    static P: std::sync::OnceLock<f64> = std::sync::OnceLock::new();
    *P.get_or_init(|| region4::psat(T_13))
}

fn backward_t(region: Region, p: f64, q: Q, target: f64) -> f64 {
    match (region, q) {
        (Region::R1, Q::H) => backward::region1::t_ph(p, target),
        (Region::R1, _) => backward::region1::t_ps(p, target),
        (_, Q::H) => backward::region2::t_ph(p, target),
        _ => backward::region2::t_ps(p, target),
    }
}

fn below_range(p: f64, q: Q, target: f64) -> Result<()> {
    let lo = q.of(&region1::props(p, T_MIN));
    if target < lo {
        return Err(oor(q.name(), target, lo, q.unit(), Bound::Below));
    }
    Ok(())
}

/// Region 2 or, above 1073.15 K, region 5 for a target above the saturated vapour / B23 value.
fn vapour_side(p: f64, q: Q, target: f64, t_low: f64, opts: &Options) -> Result<State> {
    let t0 = backward_t(Region::R2, p, q, target);
    if t0 > T_MAX_123 - 10.0 {
        let t_top = limits_t_for_p(p);
        let hi_state = if t_top > T_MAX_123 {
            region5::props(p, t_top)
        } else {
            region2::props(p, t_top)
        };
        if target > q.of(&hi_state) {
            return Err(oor(
                q.name(),
                target,
                q.of(&hi_state),
                q.unit(),
                Bound::Above,
            ));
        }
        // Region 5 when the target reaches region 5's own value at 1073.15 K (the two
        // equations differ slightly there; a target in that tiny gap is taken in region 2).
        if p <= P_MAX_5 {
            let b5 = region5::props(p, T_MAX_123);
            if target >= q.of(&b5) {
                let slope = if q == Q::S { b5.cp / b5.t } else { b5.cp };
                let t0 = (T_MAX_123 + (target - q.of(&b5)) / slope).clamp(T_MAX_123, T_MAX_5);
                return newton_t(Region::R5, p, q, target, t0, opts);
            }
        }
    }
    let st = finish_gibbs(Region::R2, p, q, target, t0.clamp(t_low, T_MAX_123), opts)?;
    if st.props.t > T_MAX_123 && !opts.backward_only {
        // The backward equation was extrapolated beyond region 2 (far into region 5, where it
        // is not valid); decide again with the region-5 boundary value.
        if p <= P_MAX_5 {
            let b5 = region5::props(p, T_MAX_123);
            if target >= q.of(&b5) {
                return newton_t(Region::R5, p, q, target, st.props.t.min(T_MAX_5), opts);
            }
        }
        if st.props.t > T_MAX_123 * (1.0 + 1e-6) {
            let top = region2::props(p, T_MAX_123);
            return Err(oor(q.name(), target, q.of(&top), q.unit(), Bound::Above));
        }
    }
    Ok(st)
}

/// How far (K) the backward-equation temperature must lie from the saturation temperature for
/// the fast (p,h)/(p,s) path (the backward equations are good to 10 to 25 mK, IAPWS R7-97(2012)).
const FAST_MARGIN: f64 = 0.5;

/// Enthalpy at the critical point, kJ/kg (IF97 region 3 at 322 kg/m3, 647.096 K; about
/// 2087.5). Only a splitting value for the order of tests.
const H_C: f64 = 2087.5;
/// Entropy at the critical point, kJ/(kg K) (about 4.412); a splitting value only.
const S_C: f64 = 4.412;

fn liquid_side(p: f64, q: Q, target: f64, t_high: f64, opts: &Options) -> Result<State> {
    let t0 = backward_t(Region::R1, p, q, target);
    if t0 < T_MIN + 5.0 {
        below_range(p, q, target)?;
    }
    finish_gibbs(Region::R1, p, q, target, t0.clamp(T_MIN, t_high), opts)
}

#[allow(clippy::too_many_arguments)]
fn liquid_or_wet(
    p: f64,
    q: Q,
    target: f64,
    ts: f64,
    l: &Props,
    v: &Props,
    opts: &Options,
) -> Result<State> {
    let (ql, qv) = (q.of(l), q.of(v));
    if target < ql {
        return liquid_side(p, q, target, ts, opts);
    }
    let x = (target - ql) / (qv - ql);
    Ok(wet(p, ts, x.clamp(0.0, 1.0), l, v))
}

/// State from (p, h) or (p, s): `q` is H or S. The saturation line and the region boundaries
/// are evaluated only as far as the decision needs them.
fn at_p_q(p: f64, q: Q, target: f64, opts: &Options) -> Result<State> {
    check_p(p)?;
    Error::check_finite(q.name(), target)?;
    if p < p_sat_min() {
        // Below the lowest saturation pressure of IF97 (273.15 K, 611.213 Pa; the triple
        // point is at 611.657 Pa) no liquid or wet state exists: IF97 holds only vapour from
        // 273.15 K up; anything colder is ice or vapour below the formulation's range.
        let lo = q.of(&region2::props(p, T_MIN));
        if target < lo {
            return Err(Error::out_of_range(
                q.name(),
                target,
                lo,
                q.unit(),
                Bound::Below,
                &format!("IAPWS-IF97 at p = {p} MPa: below the triple-point pressure 0.000611657 MPa no liquid or wet state exists, only vapour at 273.15 K and above (colder is ice)"),
            ));
        }
        return vapour_side(p, q, target, T_MIN, opts);
    }
    if p <= p_sat_13() {
        let ts = region4::tsat(p);
        // Test the nearer side of the saturation line first (split at the critical value), so
        // that a single-phase state costs one saturation evaluation, not two.
        let vapour_first = target >= if q == Q::H { H_C } else { S_C };
        // Fast path: when the backward equation puts the answer clearly away from the
        // saturation line (its stated accuracy is tens of mK), solve directly and only check
        // afterwards that the refined answer is on that side; otherwise decide with the
        // saturated states below.
        if !opts.backward_only {
            let side = if vapour_first { Region::R2 } else { Region::R1 };
            let t0 = backward_t(side, p, q, target);
            let clear = if vapour_first {
                t0 > ts + FAST_MARGIN && t0 < T_MAX_123 - 10.0
            } else {
                t0 < ts - FAST_MARGIN && t0 > T_MIN + 5.0
            };
            if clear {
                if let Ok(st) = newton_t(side, p, q, target, t0, opts) {
                    let t = st.props.t;
                    if (vapour_first && t > ts && t <= T_MAX_123)
                        || (!vapour_first && t < ts && t >= T_MIN)
                    {
                        return Ok(st);
                    }
                }
            }
        }
        if vapour_first {
            let v = region2::props(p, ts);
            if target > q.of(&v) {
                return vapour_side(p, q, target, ts, opts);
            }
            let l = region1::props(p, ts);
            return liquid_or_wet(p, q, target, ts, &l, &v, opts);
        }
        let l = region1::props(p, ts);
        if target < q.of(&l) {
            return liquid_side(p, q, target, ts, opts);
        }
        let v = region2::props(p, ts);
        if target > q.of(&v) {
            return vapour_side(p, q, target, ts, opts);
        }
        return liquid_or_wet(p, q, target, ts, &l, &v, opts);
    }
    // p above psat(623.15 K): region 1 below 623.15 K, region 3 up to B23, region 2 above.
    let b13 = region1::props(p, T_13);
    if target <= q.of(&b13) {
        let t0 = backward_t(Region::R1, p, q, target);
        if t0 < T_MIN + 5.0 {
            below_range(p, q, target)?;
        }
        return finish_gibbs(Region::R1, p, q, target, t0.clamp(T_MIN, T_13), opts);
    }
    let t23 = crate::water::if97::b23::t_b23(p);
    let b23 = region2::props(p, t23);
    if target >= q.of(&b23) {
        return vapour_side(p, q, target, t23, opts);
    }
    // Region 3, possibly two-phase below the critical pressure.
    if p < P_C {
        let (ts, l, v) = saturation_p(p)?;
        let (ql, qv) = (q.of(&l), q.of(&v));
        if target >= ql && target <= qv {
            let x = if qv > ql {
                (target - ql) / (qv - ql)
            } else {
                0.0
            };
            return Ok(wet(p, ts, x.clamp(0.0, 1.0), &l, &v));
        }
    }
    let (t0, v0) = match q {
        Q::H => (
            backward::region3::t_ph(p, target),
            backward::region3::v_ph(p, target),
        ),
        _ => (
            backward::region3::t_ps(p, target),
            backward::region3::v_ps(p, target),
        ),
    };
    if opts.backward_only {
        return Ok(backward_state(Region::R3, 1.0 / v0, t0));
    }
    let (pr, it) = newton2(Region::R3, Q::P, p, q, target, 1.0 / v0, t0, opts)?;
    Ok(single(pr, Region::R3, it))
}

fn backward_state(region: Region, x1: f64, t: f64) -> State {
    let props = match region {
        Region::R1 => region1::props(x1, t),
        Region::R2 => region2::props(x1, t),
        Region::R5 => region5::props(x1, t),
        _ => region3::props(x1, t),
    };
    single(props, region, 0)
}

fn finish_gibbs(
    region: Region,
    p: f64,
    q: Q,
    target: f64,
    t0: f64,
    opts: &Options,
) -> Result<State> {
    if opts.backward_only {
        return Ok(backward_state(region, p, t0));
    }
    newton_t(region, p, q, target, t0, opts)
}

/// State from (p, h).
pub fn at_ph(p: f64, h: f64, opts: &Options) -> Result<State> {
    at_p_q(p, Q::H, h, opts)
}

/// State from (p, s).
pub fn at_ps(p: f64, s: f64, opts: &Options) -> Result<State> {
    at_p_q(p, Q::S, s, opts)
}

/// State from (h, s), with the SR4-04 region map and the SR2-01/SR4-04 backward equations as
/// starting points.
pub fn at_hs(h: f64, s: f64, opts: &Options) -> Result<State> {
    Error::check_finite("h", h)?;
    Error::check_finite("s", s)?;
    use backward::hs::RegionHs;
    match backward::hs::region_hs(h, s) {
        Some(RegionHs::R1) => {
            let p0 = backward::region1::p_hs(h, s);
            let t0 = backward::region1::t_ph(p0, h);
            finish_hs(Region::R1, h, s, p0, t0, opts)
        }
        Some(RegionHs::R2) => {
            let p0 = backward::region2::p_hs(h, s);
            let t0 = backward::region2::t_ph(p0, h);
            finish_hs(Region::R2, h, s, p0, t0, opts)
        }
        Some(RegionHs::R3) => {
            let p0 = backward::region3::p_hs(h, s);
            let t0 = backward::region3::t_ph(p0, h);
            let v0 = backward::region3::v_ph(p0, h);
            finish_hs(Region::R3, h, s, 1.0 / v0, t0, opts)
        }
        Some(RegionHs::R4) => {
            let t0 = backward::hs::tsat_hs(h, s);
            wet_hs(h, s, t0, opts)
        }
        None => generic_hs(h, s, opts),
    }
}

fn finish_hs(region: Region, h: f64, s: f64, x1: f64, t0: f64, opts: &Options) -> Result<State> {
    if opts.backward_only {
        return Ok(backward_state(region, x1, t0));
    }
    match newton2(region, Q::H, h, Q::S, s, x1, t0, opts) {
        Ok((pr, it)) => {
            let st = single(pr, region, it);
            if region == Region::R2 && pr.t > T_MAX_123 && pr.p <= P_MAX_5 {
                // SR4-04 has no region 5: continue there from the region-2 answer.
                let (pr5, it5) = newton2(Region::R5, Q::H, h, Q::S, s, pr.p, pr.t, opts)?;
                let st5 = single(pr5, Region::R5, it + it5);
                validate_region(&st5)?;
                return Ok(st5);
            }
            // Near a region boundary the SR4-04 map may pick the neighbour: when the answer
            // lies in another region, refine it there too and keep that one if it stays inside.
            if let Ok(expect) = regions::region_pt(pr.p, pr.t) {
                if expect != region && matches!(expect, Region::R1 | Region::R2 | Region::R3) {
                    let x1 = if expect == Region::R3 { pr.rho } else { pr.p };
                    if let Ok((pr2, it2)) = newton2(expect, Q::H, h, Q::S, s, x1, pr.t, opts) {
                        if regions::region_pt(pr2.p, pr2.t).ok() == Some(expect) {
                            return Ok(single(pr2, expect, it + it2));
                        }
                    }
                }
            }
            match validate_region(&st) {
                Ok(()) => Ok(st),
                Err(e) => generic_hs(h, s, opts).map_err(|_| e),
            }
        }
        Err(e) => generic_hs(h, s, opts).map_err(|_| e),
    }
}

/// Checks that a Newton answer really lies in the region it was computed in.
fn validate_region(st: &State) -> Result<()> {
    let p = st.props.p;
    let t = st.props.t;
    check_p(p)?;
    check_t(t)?;
    let expect = regions::region_pt(p, t)?;
    if expect != st.region && !(st.region == Region::R3 || expect == Region::R3) {
        return Err(Error::no_unique(format!(
            "the state found (p = {p} MPa, T = {t} K) is not in IF97 region {}",
            st.region.number()
        )));
    }
    Ok(())
}

/// Two-phase (h, s): find T where the qualities from h and from s agree.
fn wet_hs(h: f64, s: f64, t0: f64, opts: &Options) -> Result<State> {
    let f = |t: f64| -> Result<(f64, State)> {
        let (p, l, v) = saturation_t(t)?;
        let x = (h - l.h) / (v.h - l.h);
        let st = wet(p, t, x, &l, &v);
        Ok((st.props.s - s, st))
    };
    if opts.backward_only {
        return Ok(f(t0.clamp(T_MIN, T_C))?.1);
    }
    let (lo, hi) = (T_MIN, T_C - 1e-3);
    // Outside 0 <= x <= 1 the mixture is not a state; return a value of the sign of the side
    // it is on (x < 0: above the answer's temperature, x > 1: below), so that the root is the
    // only sign change along the saturation line.
    let fs = |t: f64| {
        f(t).map(|(d, st)| match st.x {
            Some(x) if x < 0.0 => -1.0 - x.abs(),
            Some(x) if x > 1.0 => x,
            _ => d,
        })
    };
    // SR4-04 Tsat(h,s) is valid only on the high-entropy side; near it bracket the guess,
    // elsewhere scan the saturation line for sign changes with 0 <= x <= 1.
    let mut t_found = None;
    if (lo..=hi).contains(&t0) {
        for w in [0.05, 0.5, 5.0] {
            let (a, b) = ((t0 - w).max(lo), (t0 + w).min(hi));
            if fs(a)?.signum() != fs(b)?.signum() {
                let t = brent(fs, a, b, Some(t0), opts)?;
                let x = f(t)?.1.x.unwrap_or(-1.0);
                if (-1e-9..=1.0 + 1e-9).contains(&x) {
                    t_found = Some(t);
                }
                break;
            }
        }
    }
    if t_found.is_none() {
        let n = 128;
        let ts: Vec<f64> = (0..=n)
            .map(|i| lo + (hi - lo) * i as f64 / n as f64)
            .collect();
        let fv: Vec<f64> = ts.iter().map(|&t| fs(t)).collect::<Result<_>>()?;
        for i in 0..n {
            if fv[i] == 0.0 || fv[i].signum() != fv[i + 1].signum() {
                let t = if fv[i] == 0.0 {
                    ts[i]
                } else {
                    brent(fs, ts[i], ts[i + 1], None, opts)?
                };
                let x = f(t)?.1.x.unwrap_or(-1.0);
                if (-1e-9..=1.0 + 1e-9).contains(&x) {
                    t_found = Some(t);
                    break;
                }
            }
        }
    }
    let Some(t) = t_found else {
        return Err(Error::no_unique(format!(
            "(h = {h} kJ/kg, s = {s} kJ/(kg K)) is not a two-phase state of IAPWS-IF97"
        )));
    };
    let (_, st) = f(t)?;
    if let Some(x) = st.x {
        if !(-1e-9..=1.0 + 1e-9).contains(&x) {
            return Err(Error::no_unique(format!(
                "(h = {h} kJ/kg, s = {s} kJ/(kg K)) is not a two-phase state"
            )));
        }
    }
    Ok(st)
}

/// (h, s) outside the SR4-04 map's reach: a 2-D search seeded over a grid of (p, T).
fn generic_hs(h: f64, s: f64, opts: &Options) -> Result<State> {
    // Try each single-phase region with a few seeds.
    let seeds = [
        (Region::R2, 0.01, 400.0),
        (Region::R2, 1.0, 600.0),
        (Region::R2, 10.0, 900.0),
        (Region::R5, 1.0, 1500.0),
        (Region::R5, 20.0, 2000.0),
        (Region::R1, 10.0, 300.0),
        (Region::R1, 50.0, 500.0),
    ];
    for (region, p0, t0) in seeds {
        if let Ok((pr, it)) = newton2(region, Q::H, h, Q::S, s, p0, t0, opts) {
            let st = single(pr, region, it);
            if validate_region(&st).is_ok() && regions::region_pt(pr.p, pr.t).ok() == Some(region) {
                return Ok(st);
            }
        }
    }
    Err(Error::no_unique(format!(
        "no IF97 state has h = {h} kJ/kg and s = {s} kJ/(kg K) (outside the range of validity)"
    )))
}

/// Safeguarded secant/bisection (Brent-style) root finding of f on [a, b], with f(a), f(b)
/// of opposite signs.
fn brent<F>(mut f: F, a: f64, b: f64, guess: Option<f64>, opts: &Options) -> Result<f64>
where
    F: FnMut(f64) -> Result<f64>,
{
    let (mut a, mut b) = (a, b);
    let mut fa = f(a)?;
    let mut fb = f(b)?;
    if fa == 0.0 {
        return Ok(a);
    }
    if fb == 0.0 {
        return Ok(b);
    }
    if fa.signum() == fb.signum() {
        return Err(Error::no_unique("no sign change in the search interval"));
    }
    if let Some(g) = guess {
        if g > a.min(b) && g < a.max(b) {
            let fg = f(g)?;
            if fg == 0.0 {
                return Ok(g);
            }
            if fg.signum() == fa.signum() {
                a = g;
                fa = fg;
            } else {
                b = g;
                fb = fg;
            }
        }
    }
    // Illinois-modified regula falsi with bisection fallback: robust and superlinear.
    let mut side = 0i32;
    for _ in 0..(4 * opts.max_iter) {
        let mut c = (a * fb - b * fa) / (fb - fa);
        if !c.is_finite() || c <= a.min(b) || c >= a.max(b) {
            c = 0.5 * (a + b);
        }
        let fc = f(c)?;
        if fc == 0.0 || (b - a).abs() <= 4.0 * f64::EPSILON * c.abs().max(1e-300) {
            return Ok(c);
        }
        if fc.signum() == fb.signum() {
            b = c;
            fb = fc;
            if side == -1 {
                fa *= 0.5;
            }
            side = -1;
        } else {
            a = c;
            fa = fc;
            if side == 1 {
                fb *= 0.5;
            }
            side = 1;
        }
        if (b - a).abs() <= 1e-15 * c.abs() {
            return Ok(c);
        }
    }
    Ok(0.5 * (a + b))
}

/// A single-phase branch along which one independent variable runs.
#[derive(Debug, Clone, Copy)]
enum Branch {
    /// At fixed T, pressure from `lo` to `hi` (MPa), on the liquid (true) or vapour side.
    Isotherm {
        t: f64,
        lo: f64,
        hi: f64,
        liquid: bool,
    },
    /// At fixed p, temperature from `lo` to `hi` (K), on the liquid (true) or vapour side.
    Isobar {
        p: f64,
        lo: f64,
        hi: f64,
        liquid: bool,
    },
}

/// Properties at (p, T) knowing which side of the saturation line the point is on.
fn props_side(p: f64, t: f64, liquid: bool) -> Result<(Props, Region)> {
    let mut region = regions::region_pt(p, t)?;
    // Exactly on the saturation line region_pt may pick the other side.
    if t < T_13 {
        let ts = region4::tsat(p.min(region4::psat(T_13)));
        if (t - ts).abs() <= 1e-9 * ts && p <= region4::psat(T_13) {
            region = if liquid { Region::R1 } else { Region::R2 };
        }
    }
    if region == Region::R3 {
        let guess_t = if liquid {
            t * (1.0 - 1e-9)
        } else {
            t * (1.0 + 1e-9)
        };
        let v0 = backward::region3_vpt::v_pt(p, guess_t);
        return Ok((region3::props(region3_rho(p, t, v0)?, t), region));
    }
    Ok((props_in(region, p, t)?, region))
}

fn branch_point(br: &Branch, x: f64) -> Result<(Props, Region)> {
    match *br {
        Branch::Isotherm { t, liquid, .. } => props_side(x, t, liquid),
        Branch::Isobar { p, liquid, .. } => props_side(p, x, liquid),
    }
}

/// Every solution of q = target along a branch: scan for sign changes, then bracket.
fn solve_branch(br: &Branch, q: Q, target: f64, opts: &Options) -> Result<Vec<State>> {
    let (lo, hi, log) = match *br {
        Branch::Isotherm { lo, hi, .. } => (lo, hi, true),
        Branch::Isobar { lo, hi, .. } => (lo, hi, false),
    };
    if hi <= lo {
        return Ok(vec![]);
    }
    const N: usize = 48;
    let xs: Vec<f64> = (0..=N)
        .map(|i| {
            let f = i as f64 / N as f64;
            if log {
                (lo.ln() + f * (hi.ln() - lo.ln())).exp()
            } else {
                lo + f * (hi - lo)
            }
        })
        .map(|x| x.clamp(lo, hi))
        .collect();
    let mut vals = Vec::with_capacity(xs.len());
    for &x in &xs {
        vals.push(branch_point(br, x).map(|(pr, _)| q.of(&pr) - target).ok());
    }
    // Brackets: sign changes between grid points, plus sign changes hidden inside a grid cell
    // around a local extremum of q (e.g. the enthalpy minimum of a hot liquid isotherm).
    let eval = |x: f64| branch_point(br, x).map(|(pr, _)| q.of(&pr) - target);
    let mut brackets: Vec<(f64, f64)> = Vec::new();
    for i in 0..N {
        let (Some(fa), Some(fb)) = (vals[i], vals[i + 1]) else {
            continue;
        };
        if fa == 0.0 || fa.signum() != fb.signum() {
            brackets.push((xs[i], xs[i + 1]));
        }
    }
    // Interior grid points where |f| has a local minimum, and the two end cells when |f| is
    // smallest at the end of the branch (the extremum may hide inside the end cell).
    let mut cells: Vec<(usize, usize, usize)> = (1..N).map(|i| (i - 1, i, i + 1)).collect();
    cells.push((0, 0, 1));
    cells.push((N - 1, N, N));
    for (ia, im, ib) in cells {
        let (Some(fa), Some(fm), Some(fb)) = (vals[ia], vals[im], vals[ib]) else {
            continue;
        };
        let candidate = if ia != im && im != ib {
            fm.abs() < fa.abs() && fm.abs() < fb.abs()
        } else if im == ia {
            fm.abs() < fb.abs()
        } else {
            fm.abs() < fa.abs()
        };
        if !(candidate && fa.signum() == fm.signum() && fm.signum() == fb.signum()) {
            continue;
        }
        // Golden-section search for the extremum of f toward zero (the minimum of
        // sign(f_m) f) in [x_a, x_b]; if f changes sign there, the cell holds two roots.
        let sg = fm.signum();
        let (mut a, mut b) = (xs[ia], xs[ib]);
        let r = 0.618_033_988_749_894_9;
        for _ in 0..80 {
            let c = b - r * (b - a);
            let d = a + r * (b - a);
            match (eval(c), eval(d)) {
                (Ok(fc), Ok(fd)) => {
                    if sg * fc < sg * fd {
                        b = d;
                    } else {
                        a = c;
                    }
                }
                _ => break,
            }
        }
        let xm = 0.5 * (a + b);
        if let Ok(fx) = eval(xm) {
            if fx.signum() != fm.signum() {
                brackets.push((xs[ia], xm));
                brackets.push((xm, xs[ib]));
            } else if fx.abs() <= 1e-9 * q.scale(target) {
                brackets.push((xm, xm));
            }
        }
    }
    let mut out: Vec<State> = Vec::new();
    for (a, b) in brackets {
        let root = if a == b {
            a
        } else {
            brent(eval, a, b, None, opts)?
        };
        let (pr, region) = branch_point(br, root)?;
        if (q.of(&pr) - target).abs() <= 1e-9 * q.scale(target) {
            let st = single(pr, region, 0);
            let dup = out.iter().any(|o| {
                (o.props.p - pr.p).abs() <= 1e-7 * pr.p && (o.props.t - pr.t).abs() <= 1e-9 * pr.t
            });
            if !dup {
                out.push(st);
            }
        }
    }
    Ok(out)
}

/// Pick one state from the candidates, or explain the ambiguity.
fn choose(cands: Vec<State>, what: &str, opts: &Options) -> Result<State> {
    match cands.len() {
        0 => Err(Error::no_unique(format!(
            "no IF97 state has {what} (outside the range of validity or not a physical state)"
        ))),
        1 => Ok(cands[0]),
        _ => {
            if let Some(pref) = opts.prefer {
                let chosen: Vec<&State> = cands.iter().filter(|c| c.phase == pref).collect();
                if chosen.len() == 1 {
                    return Ok(*chosen[0]);
                }
            }
            let list: Vec<String> = cands.iter().map(describe).collect();
            let same_phase = cands.iter().all(|c| c.phase == cands[0].phase);
            let hint = if same_phase {
                "give another pair, e.g. p and T"
            } else {
                "give another pair, or prefer = \"liquid\", \"vapour\", \"wet\" or \"supercritical\""
            };
            Err(Error::no_unique(format!(
                "{what} admits {} states: {}; {hint}",
                cands.len(),
                list.join(" or ")
            )))
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

/// (T, v) evaluated directly on the region-3 Helmholtz equation when the point lies in
/// region 3 and outside the two-phase dome.
fn region3_tv(t: f64, v: f64) -> Result<Option<State>> {
    if !(T_13..=T_MAX_123).contains(&t) {
        return Ok(None);
    }
    let rho = 1.0 / v;
    let p = region3::pressure(rho, t);
    if !(p > 0.0 && p <= P_MAX) || regions::region_pt(p, t).ok() != Some(Region::R3) {
        return Ok(None);
    }
    if t < T_C {
        let (ps, l, vap) = saturation_t(t)?;
        if rho < l.rho && rho > vap.rho {
            let x = (v - l.v) / (vap.v - l.v);
            return Ok(Some(wet(ps, t, x, &l, &vap)));
        }
    }
    Ok(Some(single(region3::props(rho, t), Region::R3, 0)))
}

/// Region 3 at (T, v) just beyond the B23 line, where v falls in the gap IF97 leaves there: at
/// 623.15 K < T < 863.15 K, region 3 at the B23 pressure gives v3 and region 2 gives v2, and
/// when v3 < v < v2 (up to about 2e-4 relative, the inconsistency IAPWS accepted for the two
/// equations on B23) neither region has the state. Region 3 is explicit in (rho, T), so the
/// answer is region 3 carried past B23 by that gap, with v and T exact; None elsewhere.
fn region3_tv_b23_gap(t: f64, v: f64) -> Option<State> {
    if !(T_13..=863.15).contains(&t) {
        return None;
    }
    let pb = b23::p_b23(t);
    let p3 = region3::pressure(1.0 / v, t);
    let v2 = region2::props(pb, t).v;
    if p3 > 0.0 && p3 < pb && v < v2 {
        return Some(single(region3::props(1.0 / v, t), Region::R3, 0));
    }
    None
}

/// States at fixed T with q = target (q is H, S or V), with the two-phase part.
fn at_t_q(t: f64, q: Q, target: f64, opts: &Options) -> Result<State> {
    check_t(t)?;
    Error::check_finite(q.name(), target)?;
    if q == Q::V {
        if let Some(st) = region3_tv(t, target)? {
            return Ok(st);
        }
    }
    let p_top = if t > T_MAX_123 { P_MAX_5 } else { P_MAX };
    let mut cands = Vec::new();
    let what = format!("T = {t} K and {} = {target} {}", q.name(), q.unit());
    if t < T_C {
        let (ps, l, v) = saturation_t(t)?;
        cands.extend(solve_branch(
            &Branch::Isotherm {
                t,
                lo: ps,
                hi: p_top,
                liquid: true,
            },
            q,
            target,
            opts,
        )?);
        cands.extend(solve_branch(
            &Branch::Isotherm {
                t,
                lo: P_MIN,
                hi: ps,
                liquid: false,
            },
            q,
            target,
            opts,
        )?);
        let (ql, qv) = (q.of(&l), q.of(&v));
        if (target - ql) * (target - qv) <= 0.0 && qv != ql {
            let x = (target - ql) / (qv - ql);
            // The saturated ends are already found by the branches.
            if x > 1e-12 && x < 1.0 - 1e-12 {
                cands.push(wet(ps, t, x, &l, &v));
            }
        }
    } else {
        cands.extend(solve_branch(
            &Branch::Isotherm {
                t,
                lo: P_MIN,
                hi: p_top,
                liquid: false,
            },
            q,
            target,
            opts,
        )?);
    }
    if cands.is_empty() && q == Q::V {
        cands.extend(region3_tv_b23_gap(t, target));
    }
    choose(cands, &what, opts)
}

/// States at fixed p with q = target (q is V or U), with the two-phase part.
fn at_p_generic(p: f64, q: Q, target: f64, opts: &Options) -> Result<State> {
    check_p(p)?;
    Error::check_finite(q.name(), target)?;
    let t_top = limits_t_for_p(p);
    let what = format!("p = {p} MPa and {} = {target} {}", q.name(), q.unit());
    let mut cands = Vec::new();
    if p < P_C && p >= region4::psat(T_MIN) {
        let (ts, l, v) = saturation_p(p)?;
        cands.extend(solve_branch(
            &Branch::Isobar {
                p,
                lo: T_MIN,
                hi: ts,
                liquid: true,
            },
            q,
            target,
            opts,
        )?);
        cands.extend(solve_branch(
            &Branch::Isobar {
                p,
                lo: ts,
                hi: t_top,
                liquid: false,
            },
            q,
            target,
            opts,
        )?);
        let (ql, qv) = (q.of(&l), q.of(&v));
        if (target - ql) * (target - qv) <= 0.0 && qv != ql {
            let x = (target - ql) / (qv - ql);
            if x > 1e-12 && x < 1.0 - 1e-12 {
                cands.push(wet(p, ts, x, &l, &v));
            }
        }
    } else {
        cands.extend(solve_branch(
            &Branch::Isobar {
                p,
                lo: T_MIN,
                hi: t_top,
                liquid: p >= P_C,
            },
            q,
            target,
            opts,
        )?);
    }
    choose(cands, &what, opts)
}

/// State from (u, v): outer search over T of u at (T, v); (T, v) is always unique.
fn at_uv(u: f64, v: f64, opts: &Options) -> Result<State> {
    Error::check_finite("u", u)?;
    Error::check_finite("v", v)?;
    if v <= 0.0 {
        return Err(oor("v", v, 0.0, "m3/kg", Bound::Below));
    }
    let f = |t: f64| -> Result<f64> { Ok(at_t_q(t, Q::V, v, opts)?.props.u - u) };
    // Find the temperatures where (T, v) exists, scanning upward.
    const N: usize = 64;
    let ts: Vec<f64> = (0..=N)
        .map(|i| T_MIN + (T_MAX_5 - T_MIN) * i as f64 / N as f64)
        .collect();
    let vals: Vec<Option<f64>> = ts.iter().map(|&t| f(t).ok()).collect();
    for i in 0..N {
        if let (Some(fa), Some(fb)) = (vals[i], vals[i + 1]) {
            if fa == 0.0 || fa.signum() != fb.signum() {
                let t = brent(f, ts[i], ts[i + 1], None, opts)?;
                return at_t_q(t, Q::V, v, opts);
            }
        }
    }
    // The valid T range can end between grid points (p reaching 100 MPa): refine the edges.
    for i in 0..N {
        match (vals[i], vals[i + 1]) {
            (Some(fa), None) | (None, Some(fa)) => {
                let (mut good, mut bad) = if vals[i].is_some() {
                    (ts[i], ts[i + 1])
                } else {
                    (ts[i + 1], ts[i])
                };
                for _ in 0..60 {
                    let mid = 0.5 * (good + bad);
                    if f(mid).is_ok() {
                        good = mid;
                    } else {
                        bad = mid;
                    }
                }
                let fe = f(good)?;
                if fe.signum() != fa.signum() || fe == 0.0 {
                    let (a, b) = if good < ts[i + 1] && vals[i].is_some() {
                        (ts[i], good)
                    } else {
                        (good, ts[i + 1])
                    };
                    let t = brent(f, a.min(b), a.max(b), None, opts)?;
                    return at_t_q(t, Q::V, v, opts);
                }
            }
            _ => {}
        }
    }
    Err(Error::no_unique(format!(
        "no IF97 state has u = {u} kJ/kg and v = {v} m3/kg (outside the range of validity)"
    )))
}

/// Solves any supported pair.
pub fn solve(given: Given, opts: &Options) -> Result<State> {
    match given {
        Given::PT(p, t) => at_pt(p, t, opts),
        Given::PH(p, h) => at_ph(p, h, opts),
        Given::PS(p, s) => at_ps(p, s, opts),
        Given::HS(h, s) => at_hs(h, s, opts),
        Given::TX(t, x) => at_tx(t, x),
        Given::PX(p, x) => at_px(p, x),
        Given::TH(t, h) => at_t_q(t, Q::H, h, opts),
        Given::TS(t, s) => at_t_q(t, Q::S, s, opts),
        Given::TV(t, v) => {
            if v <= 0.0 || !v.is_finite() {
                Error::check_finite("v", v)?;
                return Err(oor("v", v, 0.0, "m3/kg", Bound::Below));
            }
            at_t_q(t, Q::V, v, opts)
        }
        Given::PV(p, v) => {
            if v <= 0.0 || !v.is_finite() {
                Error::check_finite("v", v)?;
                return Err(oor("v", v, 0.0, "m3/kg", Bound::Below));
            }
            at_p_generic(p, Q::V, v, opts)
        }
        Given::PU(p, u) => at_p_generic(p, Q::U, u, opts),
        Given::UV(u, v) => at_uv(u, v, opts),
    }
}
