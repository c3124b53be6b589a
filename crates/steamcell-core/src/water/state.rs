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
//! Region boundaries: where two IF97 equations meet (623.15 K, B23, 1073.15 K) they differ
//! within IF97's consistency, so near the boundary a pair can have a state in each region (or
//! in neither). Every pair is answered with the state of the region that owns the boundary, the
//! one `regions::region_pt` gives the boundary points to (region 1 at 623.15 K, region 2 on B23
//! and at 1073.15 K): a state on the boundary round-trips through every pair. A state of the
//! other region inside that narrow band (at most ~0.1 K) comes back as the owner's state with
//! the same pair; a pair in a gap between the two is answered by the non-owner's equation
//! carried past the boundary by less than the band ((p,h), (p,s), (h,s), (u,v), and (T,v) on
//! B23; the other scanned pairs refuse it as no state). Answers a rounding error beyond an
//! outer limit (273.15 K, 2273.15 K, 1 Pa, 50 MPa, 100 MPa) are put on the limit.
//!
//! Internal units: p MPa, T K, v m3/kg, rho kg/m3, h u kJ/kg, s kJ/(kg K).
//!
//! Invariant: a returned [`State`] always satisfies the region's validity limits (up to the
//! boundary band above for a gap answer); two-phase states
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

/// Relative distance within which an iterated answer counts as lying on a limit or boundary
/// it has crossed: the rounding of a converged iteration (~1e-13), far below the 1e-9 promise.
const EDGE_SLACK: f64 = 1e-9;

/// Relative width of the band along a region boundary where the neighbouring IF97 equations
/// can both (or neither) have a state for the same pair: their inconsistency on the boundary
/// (at most ~6e-5 in T at 1073.15 K and ~2e-4 in p on B23, as computed with the basic
/// equations) with a wide margin.
const BAND: f64 = 1e-3;

/// The region that owns the boundary between two neighbouring single-phase regions: the one
/// [`regions::region_pt`] gives the boundary points to (region 1 at 623.15 K, region 2 on
/// B23 and at 1073.15 K). Where both equations have a state for the same pair (their overlap
/// within IF97's consistency), the owner's is the answer, so that a state on the boundary
/// round-trips through every pair to the equation that the forward (p, T) call uses.
fn boundary_owner(a: Region, b: Region) -> Option<Region> {
    match (a, b) {
        (Region::R1, Region::R3) | (Region::R3, Region::R1) => Some(Region::R1),
        (Region::R2, Region::R3)
        | (Region::R3, Region::R2)
        | (Region::R2, Region::R5)
        | (Region::R5, Region::R2) => Some(Region::R2),
        _ => None,
    }
}

/// The regions across a boundary from `region` when (p, T) lies within [`BAND`] of that
/// boundary: the 623.15 K isotherm above the saturation pressure (regions 1 and 3), B23
/// (regions 2 and 3), the 1073.15 K isotherm up to 50 MPa (regions 2 and 5). Near the corner
/// at 623.15 K and 16.53 MPa, region 3 has both regions 1 and 2 as neighbours.
fn neighbours_near(region: Region, p: f64, t: f64) -> Vec<Region> {
    let near_13 = (t - T_13).abs() <= BAND * T_13 && p >= p_sat_13() * (1.0 - BAND);
    let near_b23 = (T_13 * (1.0 - BAND)..=regions::T_B23_MAX * (1.0 + BAND)).contains(&t)
        && (p - b23::p_b23(t)).abs() <= BAND * p;
    let near_25 = (t - T_MAX_123).abs() <= BAND * T_MAX_123 && p <= P_MAX_5 * (1.0 + BAND);
    let mut out = Vec::new();
    match region {
        Region::R1 if near_13 => out.push(Region::R3),
        Region::R3 => {
            if near_13 {
                out.push(Region::R1);
            }
            if near_b23 {
                out.push(Region::R2);
            }
        }
        Region::R2 => {
            if near_25 {
                out.push(Region::R5);
            }
            if near_b23 {
                out.push(Region::R3);
            }
        }
        Region::R5 if near_25 => out.push(Region::R2),
        _ => {}
    }
    out
}

/// Whether the single-phase state `st` lies in its region, counting a point within rounding
/// ([`EDGE_SLACK`]) of the region's boundary as inside (an iterated answer for a state on the
/// boundary lands a hair on either side of it). Region 3 below Tc also holds the two-phase
/// dome, where its equation gives no stable state: there the pressure must be on the side of
/// the saturation pressure that the density is on (liquid-like above, vapour-like below).
fn in_region(st: &State) -> bool {
    const STEPS: [(f64, f64); 9] = [
        (0.0, 0.0),
        (1.0, 0.0),
        (-1.0, 0.0),
        (0.0, 1.0),
        (0.0, -1.0),
        (1.0, 1.0),
        (1.0, -1.0),
        (-1.0, 1.0),
        (-1.0, -1.0),
    ];
    let (region, p, t) = (st.region, st.props.p, st.props.t);
    let inside = STEPS.iter().any(|&(a, b)| {
        regions::region_pt(p * (1.0 + a * EDGE_SLACK), t * (1.0 + b * EDGE_SLACK)).ok()
            == Some(region)
    });
    if !inside || region != Region::R3 || t >= T_C {
        return inside;
    }
    let ps = region4::psat(t);
    if st.props.rho > RHO_C {
        p >= ps * (1.0 - EDGE_SLACK)
    } else {
        p <= ps * (1.0 + EDGE_SLACK)
    }
}

/// Moves `x` onto `lo` or `hi` when it lies beyond it by no more than [`EDGE_SLACK`].
fn clamp_near(x: f64, lo: f64, hi: f64) -> f64 {
    if x < lo && x >= lo * (1.0 - EDGE_SLACK) {
        lo
    } else if x > hi && x <= hi * (1.0 + EDGE_SLACK) {
        hi
    } else {
        x
    }
}

/// An iterated single-phase answer that lies beyond an outer limit of IF97 (273.15 K and
/// 2273.15 K; 1 Pa, 50 MPa above 1073.15 K and 100 MPa) by rounding only is put on that limit
/// and evaluated there, so that a state on the limit is returned inside the range; anything
/// else is returned unchanged (and the range checks judge it).
fn snap_to_range(region: Region, pr: Props) -> Result<Props> {
    let (p, t) = (pr.p, pr.t);
    let mut tc = clamp_near(t, T_MIN, T_MAX_5);
    if region != Region::R5 && p > P_MAX_5 && t > T_MAX_123 {
        tc = clamp_near(t, T_MIN, T_MAX_123);
    }
    let p_top = if tc <= T_MAX_123 { P_MAX } else { P_MAX_5 };
    let pc = clamp_near(p, P_MIN, p_top);
    if pc == p && tc == t {
        return Ok(pr);
    }
    match region {
        Region::R1 => Ok(region1::props(pc, tc)),
        Region::R2 => Ok(region2::props(pc, tc)),
        Region::R5 => Ok(region5::props(pc, tc)),
        Region::R3 => {
            let mut out = region3::props(region3_rho(pc, tc, pr.v)?, tc);
            out.p = pc;
            Ok(out)
        }
        Region::R4 => Ok(pr),
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

/// Region-3 properties at (p, T), with the given p (the density iteration reproduces it to
/// ~1e-14 relative; the state carries the pressure asked for, so that a state at 100 MPa is
/// not returned a rounding error above the limit).
fn region3_pt(p: f64, t: f64) -> Result<Props> {
    let v0 = backward::region3_vpt::v_pt(p, t);
    let mut pr = region3::props(region3_rho(p, t, v0)?, t);
    pr.p = p;
    Ok(pr)
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
        let ((a1, a2), (b1, b2)) = if region == Region::R3 {
            (d_rt(qa, &pr), d_rt(qb, &pr))
        } else {
            (d_pt(qa, &pr), d_pt(qb, &pr))
        };
        let det = a1 * b2 - a2 * b1;
        if fa.abs() <= opts.tol * sa && fb.abs() <= opts.tol * sb {
            // Converged in the inputs. Where the pair is ill-conditioned in x1 (a liquid's p
            // from (h,s) at low pressure: h and s hardly depend on p) a residual within the
            // tolerance still leaves x1 off by up to ~1e-8 relative; one more Newton step (its
            // derivatives are at hand) fixes x1 to its rounding level. Taken only when it would
            // move x1 or T by more than 1e-12 relative, and kept only if the inputs stay met,
            // so well-conditioned answers are unchanged to the bit.
            if det.is_finite() && det != 0.0 {
                let d1 = (fa * b2 - fb * a2) / det;
                let dt = (a1 * fb - b1 * fa) / det;
                if d1.abs() > 1e-12 * x1.abs() || dt.abs() > 1e-12 * t {
                    let (y1, u) = (x1 - d1, t - dt);
                    if y1.is_finite() && u.is_finite() && y1 > 0.0 {
                        if let Ok(q) = eval(y1, u) {
                            if (qa.of(&q) - a).abs() <= opts.tol * sa
                                && (qb.of(&q) - b).abs() <= opts.tol * sb
                            {
                                pr = q;
                            }
                        }
                    }
                }
            }
            return Ok((snap_to_range(region, pr)?, it));
        }
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
        return Ok((snap_to_range(region, pr)?, opts.max_iter));
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
            return Ok(single(snap_to_range(region, pr)?, region, it));
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
                return Ok(single(snap_to_range(region, pr)?, region, it + 1));
            }
        }
    }
    if (q.of(&pr) - target).abs() <= 1e-9 * scale {
        return Ok(single(snap_to_range(region, pr)?, region, opts.max_iter));
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
///
/// Region 2 owns the 1073.15 K isotherm (`regions::region_pt`), and the two equations differ
/// there by IF97's consistency (up to ~0.06 K in T): region 5 answers only a target beyond
/// region 2's own value at 1073.15 K, so that a state on the isotherm round-trips to region 2.
/// Where region 5's value there lies higher still (a gap of the two equations), such a target
/// is answered by region 5 carried a few mK below 1073.15 K.
fn vapour_side(p: f64, q: Q, target: f64, t_low: f64, opts: &Options) -> Result<State> {
    let t0 = backward_t(Region::R2, p, q, target);
    let region5 = |t0: f64| -> Result<State> {
        let top = region5::props(p, T_MAX_5);
        if target > q.of(&top) {
            return Err(oor(q.name(), target, q.of(&top), q.unit(), Bound::Above));
        }
        // Region 5 has no backward equation: it is always solved on the basic equation.
        newton_t(Region::R5, p, q, target, t0, opts)
    };
    // The backward equation is exact to tens of mK inside region 2; a start near or beyond
    // 1073.15 K (or no start: far outside its range) is decided with the boundary value.
    if t0.is_nan() || t0 > T_MAX_123 - 10.0 {
        let b2 = region2::props(p, T_MAX_123);
        if target > q.of(&b2) {
            if p > P_MAX_5 {
                return Err(oor(q.name(), target, q.of(&b2), q.unit(), Bound::Above));
            }
            let slope = if q == Q::S { b2.cp / b2.t } else { b2.cp };
            return region5((T_MAX_123 + (target - q.of(&b2)) / slope).clamp(T_MAX_123, T_MAX_5));
        }
    }
    let start = if t0.is_nan() { T_MAX_123 } else { t0 };
    let st = finish_gibbs(
        Region::R2,
        p,
        q,
        target,
        start.clamp(t_low, T_MAX_123),
        opts,
    )?;
    if st.props.t > T_MAX_123 * (1.0 + EDGE_SLACK) && !opts.backward_only {
        // A backward start far off (outside the backward equation's range) led past
        // 1073.15 K: decide again with the boundary value.
        let b2 = region2::props(p, T_MAX_123);
        if p <= P_MAX_5 && target > q.of(&b2) {
            return region5(st.props.t.min(T_MAX_5));
        }
        return Err(oor(q.name(), target, q.of(&b2), q.unit(), Bound::Above));
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
    let t23 = t_b23_owned(p);
    let b23 = region2::props(p, t23);
    // Eq. (5) itself is rounded (not monotonic at the last ulp), so the owned edge is known
    // to ~1e-15 relative in T: a target within the solver's tolerance of region 2's value
    // there is region 2's.
    if target >= q.of(&b23) - opts.tol * q.scale(target) {
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
    let (mut pr, it) = newton2(Region::R3, Q::P, p, q, target, 1.0 / v0, t0, opts)?;
    // The iteration meets p to its tolerance; the state carries the pressure given.
    pr.p = p;
    Ok(single(pr, Region::R3, it))
}

/// The lowest temperature at pressure p (16.5292 MPa <= p <= 100 MPa) that region 2 owns:
/// `regions::region_pt` gives region 2 where p <= p_B23(T). T_B23(p) (R7-97(2012) Eq. (6))
/// inverts Eq. (5) only to ~1e-12 relative (1.4e-10 K at 17.66 MPa), which put a state on B23
/// a hair inside region 3 for the (p, h) and (p, s) decision, and so sent it to the
/// region-3 equation, ~0.01 K away; bisection on Eq. (5) itself finds the edge to a few ulps.
fn t_b23_owned(p: f64) -> f64 {
    let t0 = b23::t_b23(p);
    let (mut lo, mut hi) = (t0 * (1.0 - EDGE_SLACK), t0 * (1.0 + EDGE_SLACK));
    if !(p > b23::p_b23(lo) && p <= b23::p_b23(hi)) {
        return t0;
    }
    for _ in 0..64 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if p <= b23::p_b23(mid) {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    hi
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
/// starting points. SR4-04 maps regions 1 to 4 only: an enthalpy above every state of regions
/// 1 to 3 (region 2 at 1073.15 K and 1 Pa) goes straight to region 5, and an answer the map
/// placed in a neighbouring region is settled there (`settle`).
pub fn at_hs(h: f64, s: f64, opts: &Options) -> Result<State> {
    Error::check_finite("h", h)?;
    Error::check_finite("s", s)?;
    use backward::hs::RegionHs;
    if h > h_max_123() {
        // Beyond the map's reach, where its region-2 test can still pass by extrapolation
        // and start region 2 at an absurd temperature (e.g. 6.8e15 K for the state at
        // 0.084 MPa, 2273.15 K).
        return generic_hs(h, s, opts);
    }
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
            // The map's two-phase test reaches a hair beyond the saturation lines: a
            // single-phase state beside them (within IF97's consistency) is found by seeds.
            let t0 = backward::hs::tsat_hs(h, s);
            wet_hs(h, s, t0, opts).or_else(|e| generic_hs(h, s, opts).map_err(|_| e))
        }
        // Off the map (e.g. a wet state on the 273.15 K isotherm, a rounding error below the
        // map's lower edge): single-phase seeds, then the saturation line.
        None => generic_hs(h, s, opts).or_else(|e| wet_hs(h, s, f64::NAN, opts).map_err(|_| e)),
    }
}

fn finish_hs(region: Region, h: f64, s: f64, x1: f64, t0: f64, opts: &Options) -> Result<State> {
    if opts.backward_only {
        return Ok(backward_state(region, x1, t0));
    }
    match newton2(region, Q::H, h, Q::S, s, x1, t0, opts) {
        Ok((pr, it)) => {
            settle_hs(single(pr, region, it), h, s, opts).or_else(|e| hs_fallback(h, s, opts, e))
        }
        Err(e) => hs_fallback(h, s, opts, e),
    }
}

/// When the map's region does not settle: single-phase seeds, then the saturation line (the
/// map's single-phase regions reach a hair into the two-phase region, e.g. x = 1e-7 at
/// 280 K); the first error is the one reported.
fn hs_fallback(h: f64, s: f64, opts: &Options, e: Error) -> Result<State> {
    generic_hs(h, s, opts)
        .or_else(|_| wet_hs(h, s, f64::NAN, opts))
        .map_err(|_| e)
}

/// The pair (qa = a, qb = b) solved by Newton in `region` from the state `from` (its p, or its
/// rho in region 3, and T).
fn newton_pair(
    region: Region,
    (qa, a): (Q, f64),
    (qb, b): (Q, f64),
    from: &Props,
    opts: &Options,
) -> Result<State> {
    let x1 = if region == Region::R3 {
        from.rho
    } else {
        from.p
    };
    let (pr, it) = newton2(region, qa, a, qb, b, x1, from.t, opts)?;
    Ok(single(pr, region, it))
}

fn settle_hs(st: State, h: f64, s: f64, opts: &Options) -> Result<State> {
    settle(st, (Q::H, h), (Q::S, s), opts)
}

/// The state IF97 gives for a pair (qa = a, qb = b) of two properties that vary with both p
/// and T ((h, s), (u, v)), from an answer `st` solved in the region a map or a scan chose.
///
/// - `st` inside its region: the answer, unless it lies within IF97's consistency band of a
///   boundary a neighbour owns and the neighbour's own equation reaches the pair inside its
///   region too (the overlap of the two equations): then the owner's state, so that a state
///   on the boundary round-trips ([`boundary_owner`]).
/// - `st` outside its region (the map picked a neighbour, or region 2 ran past 1073.15 K, or
///   past 100 MPa beside region 3): solved again in the region its (p, T) lies in and in the
///   neighbours across nearby boundaries, and the first inside its region kept. If none is (a
///   gap between two equations on a boundary), the non-owner's answer carried past the
///   boundary by less than the band, as the (p, h) and (T, v) paths do.
fn settle(mut st: State, qa: (Q, f64), qb: (Q, f64), opts: &Options) -> Result<State> {
    // An answer of a scan met the pair only to its bracketing (at a region boundary, to the
    // edge of the jump, ~1e-10): polish it on its own equation to the solver's tolerance.
    let meets = |s: &State| {
        (qa.0.of(&s.props) - qa.1).abs() <= opts.tol * qa.0.scale(qa.1)
            && (qb.0.of(&s.props) - qb.1).abs() <= opts.tol * qb.0.scale(qb.1)
    };
    if !meets(&st) {
        if let Ok(o) = newton_pair(st.region, qa, qb, &st.props, opts) {
            if in_region(&o) {
                st = o;
            }
        }
    }
    let (p, t) = (st.props.p, st.props.t);
    if in_region(&st) {
        for nb in neighbours_near(st.region, p, t) {
            if boundary_owner(st.region, nb) == Some(nb) {
                if let Ok(o) = newton_pair(nb, qa, qb, &st.props, opts) {
                    if in_region(&o) {
                        return Ok(o);
                    }
                }
            }
        }
        return Ok(st);
    }
    let mut homes: Vec<Region> = Vec::new();
    for r in regions::region_pt(p, t)
        .into_iter()
        .chain(neighbours_near(st.region, p, t))
    {
        if r != st.region && !homes.contains(&r) {
            homes.push(r);
        }
    }
    let mut tried = Vec::new();
    for &home in &homes {
        if let Ok(o) = newton_pair(home, qa, qb, &st.props, opts) {
            if in_region(&o) {
                return Ok(o);
            }
            tried.push(o);
        }
    }
    for o in tried {
        let Some(owner) = boundary_owner(st.region, o.region) else {
            continue;
        };
        let guest = if st.region == owner { o } else { st };
        let (gp, gt) = (guest.props.p, guest.props.t);
        if neighbours_near(guest.region, gp, gt).contains(&owner)
            && check_p(gp).is_ok()
            && check_t(gt).is_ok()
        {
            return Ok(guest);
        }
    }
    check_p(p)?;
    check_t(t)?;
    Err(Error::no_unique(format!(
        "the state found (p = {p} MPa, T = {t} K) is not in IF97 region {}",
        st.region.number()
    )))
}

/// Quality within which a two-phase (h, s) answer is checked against the single-phase
/// equation of the nearer saturated side ([`single_beside_saturation`]).
const X_NEAR_SATURATION: f64 = 1e-3;

/// Two-phase (h, s): the temperature T on the saturation line where the qualities from h and
/// from s agree, x_h = (h - h')/(h'' - h') = x_s = (s - s')/(s'' - s').
///
/// G(T) = (h - h')(s'' - s') - (s - s')(h'' - h') vanishes there. With h'' - h' = T (s'' - s')
/// (to IF97's consistency), G = (s'' - s')(h - T s - g'(T)) and d(h - T s - g')/dT = s' - s
/// (plus the small v' dp_s/dT), negative while s' < s: so G falls through zero once on the
/// temperatures where s' <= s <= s'' (from 273.15 K up to where s leaves that window, which
/// only narrows as T rises). Above that window G is taken as negative, so that the answer is
/// the only sign change on 273.15 K to Tc. (An earlier version signed the mixture by its
/// quality instead; that assumption fails near the critical point, where x runs to large
/// values of either sign, and missed e.g. x = 0.5 at 645 K.)
///
/// An answer within [`X_NEAR_SATURATION`] of a saturated side is the single-phase state there
/// when that side's equation reaches (h, s) on its own side of the saturation line.
fn wet_hs(h: f64, s: f64, t0: f64, opts: &Options) -> Result<State> {
    let at = |t: f64| -> Result<State> {
        let (p, l, v) = saturation_t(t)?;
        Ok(wet(p, t, (h - l.h) / (v.h - l.h), &l, &v))
    };
    if opts.backward_only {
        return at(t0.clamp(T_MIN, T_C));
    }
    let not_wet = || {
        Error::no_unique(format!(
            "(h = {h} kJ/kg, s = {s} kJ/(kg K)) is not a two-phase state of IAPWS-IF97"
        ))
    };
    let g = |t: f64| -> Result<f64> {
        let (_, l, v) = saturation_t(t)?;
        let tol = 1e-12 * s.abs().max(1.0);
        if s < l.s - tol || s > v.s + tol {
            return Ok(-1.0);
        }
        Ok((h - l.h) * (v.s - l.s) - (s - l.s) * (v.h - l.h))
    };
    // Whether the mixture at T with the quality from h has the entropy s (to the solver's
    // tolerance): a state exactly at 273.15 K or 623.15 K, where the sign of G is rounding.
    let exact_at = |t: f64| -> Result<bool> {
        let st = at(t)?;
        Ok(st.x.is_some_and(|x| (-1e-9..=1.0 + 1e-9).contains(&x))
            && (st.props.s - s).abs() <= opts.tol * s.abs().max(0.01))
    };
    let (lo, hi) = (T_MIN, T_C - 1e-3);
    let g_lo = g(lo)?;
    let on_lo = g_lo == 0.0 || exact_at(lo)?;
    if g_lo < 0.0 && !on_lo {
        // Outside the window at 273.15 K, or the answer lies below it.
        return Err(not_wet());
    }
    // The saturated states switch from regions 1 and 2 to region 3 above 623.15 K, and G
    // jumps there by the equations' inconsistency: a state at 623.15 K itself (saturation
    // evaluated with regions 1 and 2 there) is taken at the edge, and each side is searched
    // on its own.
    let t = if on_lo {
        lo
    } else if exact_at(T_13)? {
        T_13
    } else {
        let g13 = g(T_13)?;
        let (a, b) = if g13 < 0.0 { (lo, T_13) } else { (T_13, hi) };
        if g(b)? >= 0.0 {
            return Err(not_wet());
        }
        let guess = (t0 > a && t0 < b).then_some(t0);
        brent(g, a, b, guess, opts)?
    };
    let st = at(t)?;
    let x = st.x.unwrap_or(-1.0);
    if !(-1e-9..=1.0 + 1e-9).contains(&x) || (st.props.s - s).abs() > 1e-9 * s.abs().max(0.01) {
        return Err(not_wet());
    }
    let (p, l, v) = saturation_t(t)?;
    let mut st = wet(p, t, x.clamp(0.0, 1.0), &l, &v);
    if !(X_NEAR_SATURATION..=1.0 - X_NEAR_SATURATION).contains(&x) {
        let side = if x < 0.5 { &l } else { &v };
        if let Some(single) = single_beside_saturation(h, s, side, x < 0.5, opts) {
            st = single;
        }
    }
    Ok(st)
}

/// The single-phase state with (h, s) next to the saturated state `sat`, on the liquid
/// (`liquid`) or the vapour side of the saturation line, if that side's equation reaches it
/// there. Beside the saturation line IF97's single-phase equations and its saturation-pressure
/// equation agree only within their consistency, so (h, s) of a liquid a few ppm above the
/// saturation pressure can also be met by a wet mixture with x ~ 1e-6; the saturation line
/// belongs to the single phase (`regions::region_pt`), and so does such a state.
fn single_beside_saturation(
    h: f64,
    s: f64,
    sat: &Props,
    liquid: bool,
    opts: &Options,
) -> Option<State> {
    let region = if sat.t <= T_13 {
        if liquid {
            Region::R1
        } else {
            Region::R2
        }
    } else {
        Region::R3
    };
    let st = newton_pair(region, (Q::H, h), (Q::S, s), sat, opts).ok()?;
    let (p, t) = (st.props.p, st.props.t);
    if !in_region(&st) || t > T_C {
        return None;
    }
    let ps = region4::psat(t);
    let beside = if liquid { p >= ps } else { p <= ps };
    if !beside || (p - sat.p).abs() > BAND * sat.p {
        return None;
    }
    Some(st)
}

/// (h, s) outside the SR4-04 map's reach (or where its choice did not settle): Newton from
/// the backward equations' starts of regions 1 to 3 taken beyond their ranges (e.g. a state
/// at 100 MPa, whose backward pressure lies a hair above the limit), from a near-ideal-gas
/// start in region 5 when the enthalpy is above regions 1 to 3, then from a few fixed seeds.
fn generic_hs(h: f64, s: f64, opts: &Options) -> Result<State> {
    let mut seeds: Vec<(Region, f64, f64)> = Vec::new();
    if h > h_min_5() {
        let (p0, t0) = region5_hs_start(h, s);
        seeds.push((Region::R5, p0, t0));
    }
    let p1 = backward::region1::p_hs(h, s);
    seeds.push((Region::R1, p1, backward::region1::t_ph(p1, h)));
    let p2 = backward::region2::p_hs(h, s);
    seeds.push((Region::R2, p2, backward::region2::t_ph(p2, h)));
    let p3 = backward::region3::p_hs(h, s);
    seeds.push((
        Region::R3,
        1.0 / backward::region3::v_ph(p3, h),
        backward::region3::t_ph(p3, h),
    ));
    seeds.extend([
        (Region::R2, 0.01, 400.0),
        (Region::R2, 1.0, 600.0),
        (Region::R2, 10.0, 900.0),
        (Region::R5, 1.0, 1500.0),
        (Region::R5, 20.0, 2000.0),
        (Region::R1, 10.0, 300.0),
        (Region::R1, 50.0, 500.0),
    ]);
    for (region, x1, t0) in seeds {
        if !(x1.is_finite() && x1 > 0.0 && t0.is_finite() && t0 > 0.0) {
            continue;
        }
        if let Ok((pr, it)) = newton2(region, Q::H, h, Q::S, s, x1, t0, opts) {
            if let Ok(st) = settle_hs(single(pr, region, it), h, s, opts) {
                return Ok(st);
            }
        }
    }
    Err(Error::no_unique(format!(
        "no IF97 state has h = {h} kJ/kg and s = {s} kJ/(kg K) (outside the range of validity)"
    )))
}

/// The highest enthalpy of regions 1 to 3, kJ/kg: region 2 at 1073.15 K and the lowest
/// pressure (about 4160.7), computed once.
fn h_max_123() -> f64 {
    static H: std::sync::OnceLock<f64> = std::sync::OnceLock::new();
    *H.get_or_init(|| region2::props(P_MIN, T_MAX_123).h)
}

/// The lowest enthalpy of region 5, kJ/kg: 1073.15 K at 50 MPa, computed once.
fn h_min_5() -> f64 {
    static H: std::sync::OnceLock<f64> = std::sync::OnceLock::new();
    *H.get_or_init(|| region5::props(P_MAX_5, T_MAX_123).h)
}

/// A start for region 5 at (h, s): steam there is close to an ideal gas, so T follows from h
/// at 1 MPa (h depends little on p) and p from s with ds = -R d(ln p).
fn region5_hs_start(h: f64, s: f64) -> (f64, f64) {
    let p1 = 1.0;
    let mut t = 1500.0;
    for _ in 0..40 {
        let pr = region5::props(p1, t);
        let step = (pr.h - h) / pr.cp;
        t = (t - step).clamp(0.5 * T_MAX_123, 2.0 * T_MAX_5);
        if step.abs() <= 1e-9 * t {
            break;
        }
    }
    let s1 = region5::props(p1, t).s;
    let p = p1 * ((s1 - s) / regions::R).exp();
    (p.clamp(P_MIN, P_MAX_5), t.clamp(T_MAX_123, T_MAX_5))
}

/// Safeguarded secant/bisection (Brent-style) root finding of f on [a, b], with f(a), f(b)
/// of opposite signs. When the bracket closes to rounding, the point of smallest |f| seen is
/// returned: where f jumps at a region boundary (two IF97 equations meeting within their
/// consistency) and the root is the boundary point itself, that is the side that holds it.
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
    let mut best = if fa.abs() <= fb.abs() {
        (a, fa.abs())
    } else {
        (b, fb.abs())
    };
    if let Some(g) = guess {
        if g > a.min(b) && g < a.max(b) {
            let fg = f(g)?;
            if fg == 0.0 {
                return Ok(g);
            }
            if fg.abs() < best.1 {
                best = (g, fg.abs());
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
        if fc.abs() < best.1 {
            best = (c, fc.abs());
        }
        if fc == 0.0 {
            return Ok(c);
        }
        if (b - a).abs() <= 4.0 * f64::EPSILON * c.abs().max(1e-300) {
            return Ok(best.0);
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
            return Ok(best.0);
        }
    }
    Ok(best.0)
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
    // Exactly on the saturation line region_pt may pick the other side (up to and including
    // 623.15 K, where region_pt gives the saturation point to region 1).
    if t <= T_13 {
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
        let mut pr = region3::props(region3_rho(p, t, v0)?, t);
        pr.p = p;
        return Ok((pr, region));
    }
    Ok((props_in(region, p, t)?, region))
}

fn branch_point(br: &Branch, x: f64) -> Result<(Props, Region)> {
    match *br {
        Branch::Isotherm { t, liquid, .. } => props_side(x, t, liquid),
        Branch::Isobar { p, liquid, .. } => props_side(p, x, liquid),
    }
}

/// The region boundaries a branch may cross, as values of its running variable: on an
/// isotherm between 623.15 K and 863.15 K the B23 pressure; on an isobar 623.15 K (above the
/// saturation pressure there), the owned B23 temperature ([`t_b23_owned`]) and 1073.15 K.
fn branch_boundaries(br: &Branch) -> Vec<f64> {
    match *br {
        Branch::Isotherm { t, .. } => {
            if t > T_13 && t <= regions::T_B23_MAX {
                vec![b23::p_b23(t)]
            } else {
                vec![]
            }
        }
        Branch::Isobar { p, .. } => {
            let mut out = vec![T_MAX_123];
            if p > p_sat_13() {
                out.push(T_13);
            }
            if p >= b23::p_b23(T_13) && p <= P_MAX {
                out.push(t_b23_owned(p));
            }
            out
        }
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
    const M: usize = 48;
    let mut xs: Vec<f64> = (0..=M)
        .map(|i| {
            let f = i as f64 / M as f64;
            if log {
                (lo.ln() + f * (hi.ln() - lo.ln())).exp()
            } else {
                lo + f * (hi - lo)
            }
        })
        .map(|x| x.clamp(lo, hi))
        .collect();
    // The region boundaries the branch crosses join the grid: q jumps there by the two
    // equations' inconsistency, and a state on the boundary (the owner's, as
    // `regions::region_pt` evaluates it) is a root at the edge of a jump that no sign change
    // reveals.
    xs.extend(
        branch_boundaries(br)
            .into_iter()
            .filter(|&x| x > lo && x < hi),
    );
    xs.sort_by(f64::total_cmp);
    xs.dedup();
    let n = xs.len() - 1;
    let mut vals = Vec::with_capacity(xs.len());
    for &x in &xs {
        vals.push(branch_point(br, x).map(|(pr, _)| q.of(&pr) - target).ok());
    }
    // Brackets: sign changes between grid points, plus sign changes hidden inside a grid cell
    // around a local extremum of q (e.g. the enthalpy minimum of a hot liquid isotherm).
    let eval = |x: f64| branch_point(br, x).map(|(pr, _)| q.of(&pr) - target);
    let mut brackets: Vec<(f64, f64)> = Vec::new();
    for i in 0..n {
        let (Some(fa), Some(fb)) = (vals[i], vals[i + 1]) else {
            continue;
        };
        if fa == 0.0 || fa.signum() != fb.signum() {
            brackets.push((xs[i], xs[i + 1]));
        }
    }
    // Grid points that are roots to rounding (a state on a region boundary or a branch end;
    // only to rounding: along a liquid isotherm v changes by ~1e-13 over a pressure change of
    // 1e-6 relative, so a looser test would add near-duplicate states).
    for (i, v) in vals.iter().enumerate() {
        if v.is_some_and(|f| f.abs() <= 8.0 * f64::EPSILON * q.scale(target)) {
            brackets.push((xs[i], xs[i]));
        }
    }
    // Interior grid points where |f| has a local minimum, and the two end cells when |f| is
    // smallest at the end of the branch (the extremum may hide inside the end cell).
    let mut cells: Vec<(usize, usize, usize)> = (1..n).map(|i| (i - 1, i, i + 1)).collect();
    cells.push((0, 0, 1));
    cells.push((n - 1, n, n));
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

/// Removes from `cands` a state of a non-owner region that has an owner's twin across their
/// shared boundary (within [`BAND`] in p and T): the overlap of two IF97 equations within
/// their consistency, not two states of water ([`boundary_owner`]).
fn drop_overlap_twins(cands: &mut Vec<State>) {
    let twin = |a: &State, b: &State| {
        (a.props.p - b.props.p).abs() <= BAND * a.props.p
            && (a.props.t - b.props.t).abs() <= BAND * a.props.t
    };
    let snapshot = cands.clone();
    cands.retain(|c| {
        !snapshot.iter().any(|o| {
            o.region != c.region
                && boundary_owner(c.region, o.region) == Some(o.region)
                && neighbours_near(c.region, c.props.p, c.props.t).contains(&o.region)
                && twin(c, o)
        })
    });
}

/// Pick one state from the candidates, or explain the ambiguity.
fn choose(mut cands: Vec<State>, what: &str, opts: &Options) -> Result<State> {
    drop_overlap_twins(&mut cands);
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
    // Region 2 owns B23: when its own equation reaches v at or below the B23 pressure (the
    // two equations overlap there within their consistency), the state is region 2's.
    if t <= regions::T_B23_MAX {
        let pb = b23::p_b23(t);
        if v >= region2::props(pb, t).v && p <= pb * (1.0 + BAND) {
            return Ok(None);
        }
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

/// Whether a candidate lies at (p, T) to 1e-9 relative (a saturated end of a branch).
fn at_point(c: &State, p: f64, t: f64) -> bool {
    (c.props.p - p).abs() <= 1e-9 * p && (c.props.t - t).abs() <= 1e-9 * t
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
            // A saturated end the branches found already is not added twice; any other
            // mixture is (a test on x alone, x > 1e-12, lost targets within ~1e-7 of v' at
            // low temperatures, where v'' is 1e5 times v').
            if x > 0.0 && x < 1.0 && !cands.iter().any(|c| at_point(c, ps, t)) {
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
            if x > 0.0 && x < 1.0 && !cands.iter().any(|c| at_point(c, p, ts)) {
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
    // Find the temperatures where (T, v) exists, scanning upward. The region boundaries at
    // fixed T (623.15 K, 1073.15 K) join the grid: u jumps there by the two equations'
    // inconsistency, and a state on the boundary is a root at the edge of the jump; so are
    // states at 273.15 K and 2273.15 K, where rounding may give f the sign of its neighbour.
    const M: usize = 64;
    let mut ts: Vec<f64> = (0..=M)
        .map(|i| T_MIN + (T_MAX_5 - T_MIN) * i as f64 / M as f64)
        .collect();
    ts.extend([T_13, T_MAX_123]);
    ts.sort_by(f64::total_cmp);
    ts.dedup();
    let n = ts.len() - 1;
    let vals: Vec<Option<f64>> = ts.iter().map(|&t| f(t).ok()).collect();
    for i in 0..=n {
        if vals[i].is_some_and(|fe| fe.abs() <= 1e-12 * Q::U.scale(u)) {
            return settle_uv(at_t_q(ts[i], Q::V, v, opts)?, u, v, opts);
        }
    }
    for i in 0..n {
        if let (Some(fa), Some(fb)) = (vals[i], vals[i + 1]) {
            if fa == 0.0 || fa.signum() != fb.signum() {
                let t = brent(f, ts[i], ts[i + 1], None, opts)?;
                return settle_uv(at_t_q(t, Q::V, v, opts)?, u, v, opts);
            }
        }
    }
    // The valid T range can end between grid points (p reaching 100 MPa): refine the edges.
    for i in 0..n {
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
                    return settle_uv(at_t_q(t, Q::V, v, opts)?, u, v, opts);
                }
            }
            _ => {}
        }
    }
    // A state the scan cannot reach: in a sliver of the range between grid temperatures
    // (e.g. region 3 at 100 MPa a hair above 623.15 K, where (T, v) exists only within
    // ~1e-6 K). Newton on (u, v) directly: region 3 at rho = 1/v, and the Gibbs regions from a
    // few seeds.
    let seeds = [
        (Region::R3, 1.0 / v, 650.0),
        (Region::R3, 1.0 / v, 800.0),
        (Region::R1, 50.0, 400.0),
        (Region::R2, 1.0, 600.0),
        (Region::R5, 1.0, 1500.0),
    ];
    for (region, x1, t0) in seeds {
        if let Ok((pr, it)) = newton2(region, Q::U, u, Q::V, v, x1, t0, opts) {
            if let Ok(st) = settle_uv(single(pr, region, it), u, v, opts) {
                if in_region(&st) {
                    return Ok(st);
                }
            }
        }
    }
    Err(Error::no_unique(format!(
        "no IF97 state has u = {u} kJ/kg and v = {v} m3/kg (outside the range of validity)"
    )))
}

/// A (u, v) answer of the T scan, settled between neighbouring regions as (h, s) is
/// ([`settle`]); two-phase states are returned as found.
fn settle_uv(st: State, u: f64, v: f64, opts: &Options) -> Result<State> {
    if st.region == Region::R4 {
        return Ok(st);
    }
    settle(st, (Q::U, u), (Q::V, v), opts)
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
