//! The one entry point that fixes a state of water or steam: [`solve`] picks the formulation's
//! solver (IAPWS-IF97 `state::solve` or IAPWS-95 `state95::solve`), which checks the ranges, and
//! diagnoses ice where IF97 refuses a cold (p, T); [`saturation`] gives both saturated sides,
//! each with its IF97 region. Every caller (the API methods, the component streams, the bulk
//! rows) goes through these, so each decision is made once.
//!
//! Units: internal (p MPa, T K, h kJ/kg, s kJ/(kg K), v m3/kg, surface tension N/m).
//!
//! Invariant: [`solve_first_order`] agrees with [`solve`] bit for bit in every first-order field
//! (`Field::is_first_order`), the region and the phase, and fails exactly where [`solve`] fails,
//! with the same error.

use crate::error::{Bound, Error, Result};
use crate::water::if97::regions::Region;
use crate::water::props::Props;
use crate::water::state::{self, Given, Options, Phase, State};
use crate::water::{iapws95, melting, state95, transport, Formulation};

/// Solves the pair `given` with formulation `f`.
///
/// IAPWS-IF97 keeps its own range, which starts at 273.15 K at every pressure (a sliver a few mK
/// inside ice Ih near 0.1 MPa, taken as metastable liquid, so that 0 degC at atmospheric
/// pressure works); a (p, T) below it that lies in an ice phase is refused with the ice message
/// of IAPWS R14-08 (`melting::check_not_ice`), any other with IF97's range error. IAPWS-95
/// checks its range and ice itself.
pub fn solve(given: Given, opts: &Options, f: Formulation) -> Result<State> {
    match f {
        Formulation::Iapws95 => state95::solve(given, opts).map_err(|e| below_triple(given, e)),
        Formulation::If97 => match state::solve(given, opts) {
            Err(e @ Error::OutOfRange { .. }) => {
                if let Given::PT(p, t) = given {
                    if p.is_finite() && t.is_finite() && t < melting::T_VII_MAX {
                        melting::check_not_ice(p, t)?;
                    }
                }
                Err(e)
            }
            Ok(st) => check_if97(st),
            other => other,
        },
    }
}

/// An IAPWS-95 "no state" for a pressure below the triple point, with the cause named: there
/// only vapour exists (a lower h, s or u, or a smaller v, would need liquid, a wet mixture or
/// ice).
fn below_triple(given: Given, e: Error) -> Error {
    let p = match given {
        Given::PH(p, _) | Given::PS(p, _) | Given::PU(p, _) | Given::PV(p, _) => p,
        _ => return e,
    };
    match e {
        Error::NoUniqueState { message } if p < state::P_TRIPLE => Error::no_unique(format!(
            "{message}; below the triple-point pressure 0.000611657 MPa only vapour exists (no liquid or wet state; colder is ice)"
        )),
        other => other,
    }
}

/// The validity check every IAPWS-IF97 answer passes on its way out, whatever the pair and
/// path (single state, batch rows, packed columns, component streams): no state colder than
/// 273.15 K (IF97's lowest temperature, R7-97(2012) Sec. 4), and no wet state below the lowest
/// saturation pressure (611.213 Pa at 273.15 K; below the triple-point pressure 611.657 Pa
/// only vapour and ice exist). The solvers refuse such states with their own messages
/// (`state::at_p_q` below the triple point, the metastable range in `state::at_pt`); this is
/// the backstop that keeps any path from returning one.
#[inline]
pub fn check_if97(st: State) -> Result<State> {
    let (p, t) = (st.props.p, st.props.t);
    if t.is_nan() || t < state::T_MIN * (1.0 - 1e-12) {
        return Err(Error::out_of_range(
            "T",
            t,
            state::T_MIN,
            "K",
            Bound::Below,
            state::IF97,
        ));
    }
    if st.phase == Phase::Wet && p < state::p_sat_min() {
        return Err(Error::out_of_range(
            "p",
            p,
            state::p_sat_min(),
            "MPa",
            Bound::Below,
            "IAPWS-IF97's saturation line (no wet state exists below the triple-point pressure)",
        ));
    }
    Ok(st)
}

/// As [`solve`], for callers that read only first-order fields, the region and the phase: an
/// IAPWS-IF97 (p, T) without the metastable option is evaluated without second derivatives
/// (`state::at_pt_first`, about half the cost of the terms), so cp, cv, w, kappa, mu_jt,
/// alpha_v and kappa_t may be NaN; everything else is [`solve`]'s.
#[inline]
pub fn solve_first_order(given: Given, opts: &Options, f: Formulation) -> Result<State> {
    match given {
        // On failure the full path gives the error (it adds the ice diagnosis).
        Given::PT(p, t) if f == Formulation::If97 && !opts.metastable => {
            state::at_pt_first(p, t, opts)
                .and_then(check_if97)
                .or_else(|_| solve(given, opts, f))
        }
        _ => solve(given, opts, f),
    }
}

/// Where a saturation state is asked for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SaturationAt {
    /// At a temperature, K.
    T(f64),
    /// At a pressure, MPa.
    P(f64),
}

/// Both sides of a saturation state.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Saturated {
    /// Saturation pressure, MPa.
    pub p: f64,
    /// Saturation temperature, K.
    pub t: f64,
    /// The saturated liquid: phase liquid, x = 0.
    pub liquid: State,
    /// The saturated vapour: phase vapour, x = 1.
    pub vapour: State,
    /// Surface tension of the liquid against its vapour, N/m (IAPWS R1-76(2014)).
    pub surface_tension: f64,
}

/// The saturated liquid and vapour at a temperature or a pressure, from the formulation's own
/// saturation line (IAPWS-IF97 region 4 with the sides from regions 1 and 2, or 3 above
/// 623.15 K; IAPWS-95's phase equilibrium). Each side's `region` is the IF97 region it lies
/// in (informational for IAPWS-95): 1 (liquid) or 2 (vapour) up to 623.15 K, 3 above.
pub fn saturation(at: SaturationAt, f: Formulation) -> Result<Saturated> {
    let (p, t, l, v) = match (at, f) {
        (SaturationAt::T(t), Formulation::If97) => {
            let (p, l, v) = state::saturation_t(t)?;
            (p, t, l, v)
        }
        (SaturationAt::T(t), Formulation::Iapws95) => {
            let sat = iapws95::saturation_t(t)?;
            (sat.psat, t, sat.liquid, sat.vapour)
        }
        (SaturationAt::P(p), Formulation::If97) => {
            let (t, l, v) = state::saturation_p(p)?;
            (p, t, l, v)
        }
        (SaturationAt::P(p), Formulation::Iapws95) => {
            let sat = iapws95::saturation_p(p)?;
            (p, sat.t, sat.liquid, sat.vapour)
        }
    };
    let surface_tension = transport::surface_tension(t.min(transport::surface_tension::T_MAX))?;
    let side = |props: Props, phase: Phase| {
        let liquid = phase == Phase::Liquid;
        let region = if t <= state::T_13 {
            if liquid {
                Region::R1
            } else {
                Region::R2
            }
        } else {
            Region::R3
        };
        State {
            props,
            x: Some(if liquid { 0.0 } else { 1.0 }),
            region,
            phase,
            metastable: false,
            iterations: 0,
        }
    };
    Ok(Saturated {
        p,
        t,
        liquid: side(l, Phase::Liquid),
        vapour: side(v, Phase::Vapour),
        surface_tension,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const O: Options = Options::STANDARD;

    #[test]
    fn if97_refuses_ice_with_the_ice_message() {
        // -10 degC at 0.1 MPa lies in ice Ih (IAPWS R14-08).
        let e = solve(Given::PT(0.1, 263.15), &O, Formulation::If97).unwrap_err();
        assert!(e.to_string().contains("ice"), "{e}");
        // Below IF97's range but not ice (vapour at 100 Pa): IF97's own range error.
        let e = solve(Given::PT(1e-4, 263.15), &O, Formulation::If97).unwrap_err();
        assert!(matches!(e, Error::OutOfRange { .. }), "{e}");
    }

    #[test]
    fn first_order_is_bit_identical_and_fails_alike() {
        for (p, t) in [(1.0, 400.0), (1.0, 600.0), (30.0, 1500.0), (25.0, 650.0)] {
            let g = Given::PT(p, t);
            let a = solve(g, &O, Formulation::If97).unwrap();
            let b = solve_first_order(g, &O, Formulation::If97).unwrap();
            for (x, y) in [(a.props.h, b.props.h), (a.props.s, b.props.s)] {
                assert_eq!(x.to_bits(), y.to_bits());
            }
            assert_eq!((a.region, a.phase), (b.region, b.phase));
        }
        let g = Given::PT(0.1, 263.15);
        assert_eq!(
            solve(g, &O, Formulation::If97).unwrap_err(),
            solve_first_order(g, &O, Formulation::If97).unwrap_err()
        );
    }

    /// The backstop refuses what no solver may return: a state below 273.15 K, and a wet
    /// state below the triple-point pressure (IAPWS R7-97(2012): IF97 starts at 273.15 K).
    #[test]
    fn the_if97_backstop_refuses_states_outside_the_formulation() {
        let ok = solve(Given::PX(0.01, 0.5), &O, Formulation::If97).unwrap();
        assert!(check_if97(ok).is_ok());
        let mut cold = ok;
        cold.props.t = 270.0;
        assert!(matches!(check_if97(cold), Err(Error::OutOfRange { .. })));
        let mut low = ok;
        low.props.p = 5e-4;
        let e = check_if97(low).unwrap_err();
        assert!(e.to_string().contains("triple-point"), "{e}");
        // (p, h) at 500 Pa (repro: a wet state at -2.73 degC was returned) is refused on the
        // solver's own path, with the cause named.
        let e = solve(Given::PH(5e-4, 2200.0), &O, Formulation::If97).unwrap_err();
        assert!(e.to_string().contains("triple-point"), "{e}");
        let e = solve_first_order(Given::PH(5e-4, 2200.0), &O, Formulation::If97).unwrap_err();
        assert!(e.to_string().contains("triple-point"), "{e}");
        let e = solve(Given::PH(5e-4, 2200.0), &O, Formulation::Iapws95).unwrap_err();
        assert!(e.to_string().contains("triple-point"), "{e}");
    }

    #[test]
    fn saturated_sides_carry_their_region() {
        let s = saturation(SaturationAt::T(373.15), Formulation::If97).unwrap();
        assert_eq!((s.liquid.region, s.vapour.region), (Region::R1, Region::R2));
        assert_eq!((s.liquid.x, s.vapour.x), (Some(0.0), Some(1.0)));
        let s = saturation(SaturationAt::P(20.0), Formulation::Iapws95).unwrap();
        assert_eq!((s.liquid.region, s.vapour.region), (Region::R3, Region::R3));
        assert_eq!(s.vapour.phase, Phase::Vapour);
    }
}
