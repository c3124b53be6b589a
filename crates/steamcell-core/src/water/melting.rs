//! Melting and sublimation pressures of ordinary water ice, IAPWS R14-08(2011), Eqs. (1)-(6):
//! the melting curves of ice Ih, III, V, VI, VII and the sublimation curve of ice Ih; and the
//! test whether a (p, T) state lies in a solid region (`check_not_ice`).
//!
//! Units: T K in, p MPa out (the release reduces the ice Ih curves with p* = 611.657 Pa).
//!
//! Invariant: each curve function accepts only its own temperature range (closed interval) and
//! refuses others with `Error::OutOfRange`; `check_not_ice` classifies by these same curves.

use crate::error::{Bound, Error, Result};
use crate::water::tables::melting_sublimation_2011 as tab;
use crate::water::tables::Ab;

const NAME: &str = "IAPWS R14-08";

/// Triple point Ih-liquid-vapour, K.
pub const T_TRIPLE: f64 = tab::MELTING_IH_T_STAR;
/// Triple-point pressure used by R14-08, MPa.
pub const P_TRIPLE: f64 = tab::MELTING_IH_P_STAR * 1e-6;
/// Lowest temperature of the ice Ih melting curve (triple point Ih-III-liquid), K.
pub const T_IH_III: f64 = tab::MELTING_III_T_STAR;
/// Triple point III-V-liquid, K.
pub const T_III_V: f64 = tab::MELTING_V_T_STAR;
/// Triple point V-VI-liquid, K.
pub const T_V_VI: f64 = tab::MELTING_VI_T_STAR;
/// Triple point VI-VII-liquid, K.
pub const T_VI_VII: f64 = tab::MELTING_VII_T_STAR;
/// Highest temperature of the ice VII melting curve, K.
pub const T_VII_MAX: f64 = 715.0;
/// Lowest temperature of the sublimation curve, K.
pub const T_SUB_MIN: f64 = 50.0;

fn range(t: f64, lo: f64, hi: f64, what: &str) -> Result<()> {
    Error::check_finite("T", t)?;
    // The name is built only on the error path (no allocation on success).
    if t < lo {
        let name = format!("{NAME} ({what})");
        return Err(Error::out_of_range("T", t, lo, "K", Bound::Below, &name));
    }
    if t > hi {
        let name = format!("{NAME} ({what})");
        return Err(Error::out_of_range("T", t, hi, "K", Bound::Above, &name));
    }
    Ok(())
}

fn ih(t: f64) -> f64 {
    let theta = t / tab::MELTING_IH_T_STAR;
    let pi = 1.0
        + tab::TERMS_MELTING_IH
            .iter()
            .map(|c| c.a * (1.0 - theta.powf(c.b)))
            .sum::<f64>();
    pi * tab::MELTING_IH_P_STAR * 1e-6
}

fn single(t: f64, t_star: f64, p_star: f64, c: &Ab) -> f64 {
    let theta = t / t_star;
    p_star * (1.0 + c.a * (1.0 - theta.powf(c.b)))
}

fn iii(t: f64) -> f64 {
    single(
        t,
        tab::MELTING_III_T_STAR,
        tab::MELTING_III_P_STAR,
        &tab::TERMS_MELTING_III[0],
    )
}

fn v(t: f64) -> f64 {
    single(
        t,
        tab::MELTING_V_T_STAR,
        tab::MELTING_V_P_STAR,
        &tab::TERMS_MELTING_V[0],
    )
}

fn vi(t: f64) -> f64 {
    single(
        t,
        tab::MELTING_VI_T_STAR,
        tab::MELTING_VI_P_STAR,
        &tab::TERMS_MELTING_VI[0],
    )
}

fn vii(t: f64) -> f64 {
    let theta = t / tab::MELTING_VII_T_STAR;
    let ln_pi: f64 = tab::TERMS_MELTING_VII
        .iter()
        .map(|c| c.a * (1.0 - theta.powf(c.b)))
        .sum();
    tab::MELTING_VII_P_STAR * ln_pi.exp()
}

fn sub(t: f64) -> f64 {
    let theta = t / tab::SUBLIMATION_T_STAR;
    let sum: f64 = tab::TERMS_SUBLIMATION
        .iter()
        .map(|c| c.a * theta.powf(c.b))
        .sum();
    tab::SUBLIMATION_P_STAR * 1e-6 * (sum / theta).exp()
}

/// Melting pressure of ice Ih in MPa, Eq. (1), 251.165 K <= T <= 273.16 K.
pub fn melting_pressure_ih(t: f64) -> Result<f64> {
    range(t, T_IH_III, T_TRIPLE, "melting curve of ice Ih")?;
    Ok(ih(t))
}

/// Melting pressure of ice III in MPa, Eq. (2), 251.165 K <= T <= 256.164 K.
pub fn melting_pressure_iii(t: f64) -> Result<f64> {
    range(t, T_IH_III, T_III_V, "melting curve of ice III")?;
    Ok(iii(t))
}

/// Melting pressure of ice V in MPa, Eq. (3), 256.164 K <= T <= 273.31 K.
pub fn melting_pressure_v(t: f64) -> Result<f64> {
    range(t, T_III_V, T_V_VI, "melting curve of ice V")?;
    Ok(v(t))
}

/// Melting pressure of ice VI in MPa, Eq. (4), 273.31 K <= T <= 355 K.
pub fn melting_pressure_vi(t: f64) -> Result<f64> {
    range(t, T_V_VI, T_VI_VII, "melting curve of ice VI")?;
    Ok(vi(t))
}

/// Melting pressure of ice VII in MPa, Eq. (5), 355 K <= T <= 715 K.
pub fn melting_pressure_vii(t: f64) -> Result<f64> {
    range(t, T_VI_VII, T_VII_MAX, "melting curve of ice VII")?;
    Ok(vii(t))
}

/// Sublimation pressure of ice Ih in MPa, Eq. (6), 50 K <= T <= 273.16 K.
pub fn sublimation_pressure(t: f64) -> Result<f64> {
    range(t, T_SUB_MIN, T_TRIPLE, "sublimation curve")?;
    Ok(sub(t))
}

/// Temperature in K on a monotone curve p(T) over [lo, hi] where p(T) = p (bisection; the
/// curves are monotone on their ranges). Used only to state the limit in an error message.
fn invert(f: fn(f64) -> f64, p: f64, lo: f64, hi: f64) -> f64 {
    let (mut a, mut b) = (lo, hi);
    let rising = f(hi) > f(lo);
    for _ in 0..80 {
        let m = 0.5 * (a + b);
        if (f(m) < p) == rising {
            a = m;
        } else {
            b = m;
        }
    }
    0.5 * (a + b)
}

fn ice_error(t: f64, limit: f64, curve: &str, p: f64) -> Error {
    Error::out_of_range(
        "T",
        t,
        limit,
        "K",
        Bound::Below,
        &format!("{NAME} (fluid at p = {p} MPa; colder is ice, below the {curve})"),
    )
}

/// Refuses (p MPa, T K) states that lie in a solid region according to the R14-08 curves:
/// between the sublimation and the ice Ih melting curve, below 251.165 K above the sublimation
/// curve, and above the melting curves of ice III, V, VI and VII. The error is
/// `Error::OutOfRange` on "T", its limit the temperature of the bounding curve at this p.
/// States on a curve are accepted. Above 715 K nothing is solid.
pub fn check_not_ice(p: f64, t: f64) -> Result<()> {
    Error::check_finite("p", p)?;
    Error::check_finite("T", t)?;
    if t >= T_VII_MAX {
        return Ok(());
    }
    if t < T_SUB_MIN {
        return Err(Error::out_of_range(
            "T",
            t,
            T_SUB_MIN,
            "K",
            Bound::Below,
            &format!("{NAME} (sublimation curve)"),
        ));
    }
    // Solid between sublimation and ice Ih melting (or at any p above sublimation below the
    // Ih-III triple point, where the III curve takes over at high p).
    let low_solid = if t < T_TRIPLE {
        let ps = sub(t);
        let pm = if t >= T_IH_III { ih(t) } else { f64::INFINITY };
        p > ps && p < pm
    } else {
        false
    };
    let high_solid = if t < T_IH_III {
        false // already covered: solid at every p above sublimation
    } else if t <= T_III_V {
        p > iii(t)
    } else if t <= T_V_VI {
        p > v(t)
    } else if t <= T_VI_VII {
        p > vi(t)
    } else {
        p > vii(t)
    };
    if !(low_solid || high_solid) {
        return Ok(());
    }
    // State the temperature of the bounding curve at this pressure.
    let err = if p < P_TRIPLE {
        ice_error(
            t,
            invert(sub, p, T_SUB_MIN, T_TRIPLE),
            "sublimation curve of ice Ih",
            p,
        )
    } else if p <= tab::MELTING_III_P_STAR {
        ice_error(
            t,
            invert(ih, p, T_IH_III, T_TRIPLE),
            "melting curve of ice Ih",
            p,
        )
    } else if p <= tab::MELTING_V_P_STAR {
        ice_error(
            t,
            invert(iii, p, T_IH_III, T_III_V),
            "melting curve of ice III",
            p,
        )
    } else if p <= tab::MELTING_VI_P_STAR {
        ice_error(
            t,
            invert(v, p, T_III_V, T_V_VI),
            "melting curve of ice V",
            p,
        )
    } else if p <= tab::MELTING_VII_P_STAR {
        ice_error(
            t,
            invert(vi, p, T_V_VI, T_VI_VII),
            "melting curve of ice VI",
            p,
        )
    } else {
        ice_error(
            t,
            invert(vii, p, T_VI_VII, T_VII_MAX),
            "melting curve of ice VII",
            p,
        )
    };
    Err(err)
}
