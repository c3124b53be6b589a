//! IAPWS R6-95(2018) (IAPWS-95) check values: Table 6 (ideal and residual parts of phi and their
//! derivatives), Table 7 (single phase at given T and rho), Table 8 (saturation from the Maxwell
//! criterion), all read from tests/data/iapws95.json; plus analytic derivatives against finite
//! differences, rho(p, T) and saturation round trips, and the solvers' range errors.

use serde_json::Value;
use steamcell::api::validation::printed_tolerance;
use steamcell::water::iapws95::{
    self, saturation_p, saturation_t, P_SAT_MAX, P_TRIPLE_95, T_SAT_MAX,
};
use steamcell::water::HelmholtzDerivs;
use steamcell::Error;

fn cases() -> Vec<Value> {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/iapws95.json"
    ))
    .expect("tests/data/iapws95.json");
    let v: Value = serde_json::from_str(&text).expect("valid JSON");
    v["cases"].as_array().expect("cases").clone()
}

/// Tolerance "to all printed digits": relative 1e-9 of the printed value or half a unit of the
/// last printed digit, whichever is looser (project rule). A printed 0 is exact.
fn check(id: &str, name: &str, got: f64, want: f64, digits: i32) {
    if want == 0.0 {
        assert!(got.abs() < 1e-15, "{id} {name}: got {got}, want exactly 0");
        return;
    }
    let tol = printed_tolerance(want, digits as u32);
    assert!(
        (got - want).abs() <= tol,
        "{id} {name}: got {got:.12e}, want {want:.12e} (tol {tol:e})"
    );
}

fn digits_of(case: &Value, name: &str) -> i32 {
    case.get("digits_by_value")
        .and_then(|d| d.get(name))
        .and_then(Value::as_i64)
        .or_else(|| case["digits"].as_i64())
        .expect("digits") as i32
}

fn field(d: &HelmholtzDerivs, name: &str) -> f64 {
    match name {
        "phi" => d.f,
        "phi_delta" => d.f_d,
        "phi_deltadelta" => d.f_dd,
        "phi_tau" => d.f_t,
        "phi_tautau" => d.f_tt,
        "phi_deltatau" => d.f_dt,
        other => panic!("unknown field {other}"),
    }
}

#[test]
fn table6_ideal_and_residual_parts() {
    // IAPWS R6-95(2018) Table 6: T = 500 K, rho = 838.025 kg/m3.
    let mut n = 0;
    for case in cases().iter().filter(|c| c["table"] == "Table 6") {
        let id = case["id"].as_str().unwrap();
        let t = case["inputs"]["T"].as_f64().unwrap();
        let rho = case["inputs"]["rho"].as_f64().unwrap();
        let d = if id.ends_with("ideal") {
            iapws95::ideal_derivs(rho, t)
        } else {
            iapws95::residual_derivs(rho, t)
        };
        for (name, want) in case["expected"].as_object().unwrap() {
            let want = want.as_f64().unwrap();
            check(id, name, field(&d, name), want, digits_of(case, name));
            n += 1;
        }
    }
    assert_eq!(n, 12, "Table 6 has 6 values for each of the two parts");
}

#[test]
fn table7_single_phase() {
    // IAPWS R6-95(2018) Table 7: p, cv, w, s at given (T, rho).
    let mut n = 0;
    for case in cases().iter().filter(|c| c["table"] == "Table 7") {
        let id = case["id"].as_str().unwrap();
        let t = case["inputs"]["T"].as_f64().unwrap();
        let rho = case["inputs"]["rho"].as_f64().unwrap();
        let p = iapws95::props(rho, t);
        for (name, want) in case["expected"].as_object().unwrap() {
            let want = want.as_f64().unwrap();
            let got = match name.as_str() {
                "p" => p.p,
                "cv" => p.cv,
                "w" => p.w,
                "s" => p.s,
                other => panic!("{id}: unknown {other}"),
            };
            check(id, name, got, want, digits_of(case, name));
            n += 1;
        }
        // pressure() is the same p as props().
        check(id, "pressure()", iapws95::pressure(rho, t), p.p, 14);
    }
    assert_eq!(n, 44, "Table 7 has 11 states with 4 values each");
}

#[test]
fn table8_saturation() {
    // IAPWS R6-95(2018) Table 8: saturation at 275, 450 and 625 K.
    let mut n = 0;
    for case in cases().iter().filter(|c| c["table"] == "Table 8") {
        let id = case["id"].as_str().unwrap();
        let t = case["inputs"]["T"].as_f64().unwrap();
        let s = saturation_t(t).expect("saturation");
        for (name, want) in case["expected"].as_object().unwrap() {
            let want = want.as_f64().unwrap();
            let got = match name.as_str() {
                "p" => s.psat,
                "rho_liq" => s.rho_liquid,
                "rho_vap" => s.rho_vapour,
                "h_liq" => s.liquid.h,
                "h_vap" => s.vapour.h,
                "s_liq" => s.liquid.s,
                "s_vap" => s.vapour.s,
                other => panic!("{id}: unknown {other}"),
            };
            check(id, name, got, want, digits_of(case, name));
            n += 1;
        }
        // The same state through saturation_p.
        let sp = saturation_p(s.psat).expect("saturation_p");
        assert!(
            (sp.t - t).abs() < 1e-8,
            "{id}: saturation_p gives T {}",
            sp.t
        );
    }
    assert_eq!(n, 21, "Table 8 has 3 states with 7 values each");
}

fn fd_check(rho: f64, t: f64) {
    // Central differences in delta and tau of the analytic first derivatives (and of phi).
    let rc = 322.0;
    let tc = 647.096;
    let delta = rho / rc;
    let tau = tc / t;
    let at = |d: f64, ta: f64| iapws95::derivs(d * rc, tc / ta);
    let x = at(delta, tau);
    // Small steps: near the critical point the non-analytic terms vary on a scale of 1e-3.
    let hd = 1e-7 * delta;
    let ht = 1e-7 * tau;
    let (dp, dm) = (at(delta + hd, tau), at(delta - hd, tau));
    let (tp, tm) = (at(delta, tau + ht), at(delta, tau - ht));
    let pairs = [
        ("f_d", x.f_d, (dp.f - dm.f) / (2.0 * hd)),
        ("f_dd", x.f_dd, (dp.f_d - dm.f_d) / (2.0 * hd)),
        ("f_t", x.f_t, (tp.f - tm.f) / (2.0 * ht)),
        ("f_tt", x.f_tt, (tp.f_t - tm.f_t) / (2.0 * ht)),
        ("f_dt", x.f_dt, (tp.f_d - tm.f_d) / (2.0 * ht)),
        ("f_td", x.f_dt, (dp.f_t - dm.f_t) / (2.0 * hd)),
    ];
    // Scale: the size of the quantities the derivative is combined with in the properties.
    let scale = 1.0 + x.f_d.abs() + x.f_t.abs() + x.f_dd.abs() + x.f_tt.abs();
    for (name, a, n) in pairs {
        assert!(
            (a - n).abs() <= 1e-6 * scale.max(a.abs()),
            "rho {rho} T {t}: {name} analytic {a:e} vs finite difference {n:e}"
        );
    }
}

#[test]
fn analytic_derivatives_match_finite_differences() {
    // Common practice, no source: the analytic derivatives of Table 4 and 5 must agree with
    // difference quotients of the function itself, in every term family.
    for &(rho, t) in &[
        (838.025, 500.0),
        (0.5, 300.0),
        (996.556, 300.0),
        (1188.202, 300.0),
        (0.241, 900.0),
        (870.769, 900.0),
        (358.0, 647.0), // near critical: Gaussian and non-analytic terms matter
        (330.0, 650.0), // delta ~ 1.025, tau ~ 0.996: non-analytic terms
        (300.0, 646.0), // delta < 1, tau > 1
        (322.0, 660.0), // delta = 1 exactly (allowed away from tau = 1)
        (400.0, 1273.0),
        (50.0, 1000.0),
    ] {
        fd_check(rho, t);
    }
}

#[test]
fn rho_from_pt_round_trip() {
    // Common practice, no source: rho(p(rho, T), T) = rho on both branches and above T_c.
    for &t in &[
        273.16, 300.0, 400.0, 500.0, 600.0, 640.0, 647.0, 650.0, 700.0, 900.0, 1273.0,
    ] {
        for &p in &[
            0.000_5, 0.001, 0.01, 0.1, 1.0, 5.0, 10.0, 21.5, 22.0, 22.05, 22.064, 22.07, 22.1,
            22.5, 23.0, 30.0, 100.0, 300.0, 1000.0,
        ] {
            let rho = match iapws95::rho_from_pt(p, t, iapws95::rho_guess_pt(p, t)) {
                Ok(r) => r,
                Err(e) => panic!("p {p} T {t}: {e}"),
            };
            let back = iapws95::pressure(rho, t);
            // p = rho R T (1 + delta phi_r_delta): in a liquid at low p the bracket cancels to
            // ~1e-5, so p carries a rounding noise of ~1e-13 rho R T.
            let noise = 2e-13 * rho * 0.46151805e-3 * t;
            assert!(
                (back - p).abs() <= 1e-9 * p + noise,
                "p {p} T {t}: rho {rho} gives p {back}"
            );
            // Stable branch: below T_c the density must lie on the side of psat where p is.
            if t < 647.0 {
                let s = saturation_t(t).unwrap();
                if p > s.psat * 1.000_001 {
                    assert!(
                        rho >= s.rho_liquid * 0.999_999,
                        "p {p} T {t}: not liquid {rho}"
                    );
                } else if p < s.psat * 0.999_999 {
                    assert!(
                        rho <= s.rho_vapour * 1.000_001,
                        "p {p} T {t}: not vapour {rho}"
                    );
                }
            }
        }
    }
}

#[test]
fn rho_from_pt_refuses_bad_input() {
    assert!(matches!(
        iapws95::rho_from_pt(-1.0, 300.0, 1000.0),
        Err(Error::OutOfRange { .. })
    ));
    assert!(matches!(
        iapws95::rho_from_pt(f64::NAN, 300.0, 1000.0),
        Err(Error::NotFinite { .. })
    ));
}

#[test]
fn saturation_is_a_phase_equilibrium_over_the_whole_range() {
    // Maxwell criterion (R6-95 Eqs. (9a)-(9c)): equal p and equal g = h - T s in both phases.
    let mut t = 273.16;
    while t <= T_SAT_MAX {
        let s = saturation_t(t).unwrap_or_else(|e| panic!("T {t}: {e}"));
        let gl = s.liquid.h - t * s.liquid.s;
        let gv = s.vapour.h - t * s.vapour.s;
        assert!(
            (gl - gv).abs() <= 1e-8 * (s.liquid.h.abs() + s.vapour.h.abs()),
            "T {t}: g' {gl} g'' {gv}"
        );
        // The liquid-side pressure is ill-conditioned (large (dp/drho)_T), hence the looser check.
        assert!(
            (s.liquid.p - s.psat).abs() <= 1e-6 * s.psat,
            "T {t}: p' {} p'' {}",
            s.liquid.p,
            s.psat
        );
        assert!(s.rho_liquid > 322.0 && s.rho_vapour < 322.0);
        t += if t < 640.0 { 3.7 } else { 0.37 };
    }
    for &t in &[646.5, 647.0, 647.09, T_SAT_MAX] {
        let s = saturation_t(t).unwrap_or_else(|e| panic!("T {t}: {e}"));
        assert!(s.rho_liquid > s.rho_vapour);
    }
}

#[test]
fn saturation_p_inverts_saturation_t() {
    for &t in &[
        273.16, 280.0, 373.15, 450.0, 550.0, 620.0, 640.0, 646.0, 647.0, 647.09,
    ] {
        let s = saturation_t(t).unwrap();
        let sp = saturation_p(s.psat).unwrap();
        assert!((sp.t - t).abs() <= 1e-7, "T {t}: back {}", sp.t);
        assert!((sp.psat - s.psat).abs() <= 1e-9 * s.psat);
    }
    // IAPWS R6-95(2018), Sect. 8 (from memory): the saturation temperature at 0.101325 MPa is
    // 373.124 K on ITS-90.
    let nb = saturation_p(0.101325).unwrap();
    assert!(
        (nb.t - 373.124).abs() < 0.001,
        "normal boiling point {}",
        nb.t
    );
}

fn s_t(t: f64) -> f64 {
    saturation_t(t).unwrap().psat
}

#[test]
fn saturation_range_errors() {
    assert!(matches!(saturation_t(273.0), Err(Error::OutOfRange { .. })));
    assert!(matches!(
        saturation_t(647.096),
        Err(Error::OutOfRange { .. })
    ));
    assert!(matches!(
        saturation_p(P_TRIPLE_95 * 0.99),
        Err(Error::OutOfRange { .. })
    ));
    assert!(matches!(saturation_p(22.1), Err(Error::OutOfRange { .. })));
    // The constants of the range are this solver's own results.
    let top = saturation_t(T_SAT_MAX).unwrap();
    assert!((top.psat - P_SAT_MAX).abs() <= 1e-12 * P_SAT_MAX);
    let top_p = saturation_p(P_SAT_MAX).unwrap();
    assert!((top_p.t - T_SAT_MAX).abs() <= 1e-6);
    assert!((s_t(273.16) - P_TRIPLE_95).abs() <= 1e-9 * P_TRIPLE_95);
    assert!(saturation_p(P_TRIPLE_95).is_ok());
    // The triple-point pressure of IAPWS-95: the release quotes 611.655 Pa at 273.16 K.
    let s = saturation_t(273.16).unwrap();
    assert!(
        (s.psat * 1e6 - 611.655).abs() < 0.0005,
        "p_t {}",
        s.psat * 1e6
    );
}
