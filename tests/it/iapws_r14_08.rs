//! IAPWS R14-08(2011) melting and sublimation pressures: the release's check values (Table 3 of
//! the release, quoted from memory, see below), the curves' reference points, monotonicity, the
//! triple-point continuity between curves, the range errors and `check_not_ice`.

use steamcell::api::validation::printed_tolerance;
use steamcell::water::melting::*;
use steamcell::{error::Bound, Error};

type Curve = fn(f64) -> steamcell::Result<f64>;

/// Relative 1e-9 or half a unit of the last printed digit, whichever is looser (project rule).
fn check(id: &str, got: f64, want: f64, digits: i32) {
    let tol = printed_tolerance(want, digits as u32);
    assert!(
        (got - want).abs() <= tol,
        "{id}: got {got:.12e}, want {want:.12e}"
    );
}

#[test]
fn release_check_values_from_memory() {
    // IAPWS R14-08(2011), check values for computer programs (values from memory, 6 digits; the
    // coefficient collection records 6/6 release check values reproduced).
    check("Ih 260 K", melting_pressure_ih(260.0).unwrap(), 138.268, 6);
    check(
        "III 254 K",
        melting_pressure_iii(254.0).unwrap(),
        268.685,
        6,
    );
    check("V 265 K", melting_pressure_v(265.0).unwrap(), 479.640, 6);
    check("VI 320 K", melting_pressure_vi(320.0).unwrap(), 1356.76, 6);
    check(
        "VII 550 K",
        melting_pressure_vii(550.0).unwrap(),
        6308.71,
        6,
    );
    check(
        "sublimation 230 K",
        sublimation_pressure(230.0).unwrap(),
        8.94735e-6,
        6,
    );
}

#[test]
fn reference_points() {
    // At each curve's reducing temperature the curve returns its reducing pressure
    // (R14-08 Eqs. (1)-(6): pi = 1 at theta = 1).
    check(
        "Ih at 273.16 K",
        melting_pressure_ih(273.16).unwrap(),
        611.657e-6,
        7,
    );
    check(
        "sub at 273.16 K",
        sublimation_pressure(273.16).unwrap(),
        611.657e-6,
        6,
    );
    check(
        "III at 251.165 K",
        melting_pressure_iii(251.165).unwrap(),
        208.566,
        7,
    );
    check(
        "V at 256.164 K",
        melting_pressure_v(256.164).unwrap(),
        350.100,
        7,
    );
    check(
        "VI at 273.31 K",
        melting_pressure_vi(273.31).unwrap(),
        632.400,
        7,
    );
    check(
        "VII at 355 K",
        melting_pressure_vii(355.0).unwrap(),
        2216.000,
        7,
    );
    // Neighbouring curves meet at the triple points to the precision of the printed constants.
    let pairs = [
        (melting_pressure_ih(251.165).unwrap(), 208.566, 1e-3),
        (melting_pressure_iii(256.164).unwrap(), 350.100, 1e-3),
        (melting_pressure_v(273.31).unwrap(), 632.400, 1e-3),
        (melting_pressure_vi(355.0).unwrap(), 2216.000, 2e-3),
    ];
    for (got, want, rel) in pairs {
        assert!((got - want).abs() <= rel * want, "{got} vs {want}");
    }
}

#[test]
fn monotonicity() {
    // Ih melting pressure falls with T; all others rise (release's figures; common practice).
    let mut t = 251.2;
    let mut last = f64::INFINITY;
    while t <= 273.16 {
        let p = melting_pressure_ih(t).unwrap();
        assert!(p < last);
        last = p;
        t += 0.5;
    }
    let rising: [(Curve, f64, f64); 5] = [
        (melting_pressure_iii, 251.165, 256.164),
        (melting_pressure_v, 256.164, 273.31),
        (melting_pressure_vi, 273.31, 355.0),
        (melting_pressure_vii, 355.0, 715.0),
        (sublimation_pressure, 50.0, 273.16),
    ];
    for (f, lo, hi) in rising {
        let mut last = 0.0;
        for k in 0..=100 {
            let p = f(lo + (hi - lo) * k as f64 / 100.0).unwrap();
            assert!(p > last, "not rising at step {k} of [{lo}, {hi}]");
            last = p;
        }
    }
}

#[test]
fn range_errors() {
    assert!(matches!(
        melting_pressure_ih(251.0),
        Err(Error::OutOfRange {
            bound: Bound::Below,
            ..
        })
    ));
    assert!(matches!(
        melting_pressure_ih(273.2),
        Err(Error::OutOfRange {
            bound: Bound::Above,
            ..
        })
    ));
    assert!(matches!(
        melting_pressure_vii(716.0),
        Err(Error::OutOfRange { .. })
    ));
    assert!(matches!(
        sublimation_pressure(49.0),
        Err(Error::OutOfRange { .. })
    ));
    assert!(matches!(
        melting_pressure_v(f64::NAN),
        Err(Error::NotFinite { .. })
    ));
}

#[test]
fn not_ice() {
    // Liquid and vapour states pass.
    for (p, t) in [
        (0.1, 300.0),
        (0.1, 273.16),
        (0.000_1, 260.0),
        (200.0, 260.0),
        (1000.0, 310.0),
        (100.0, 1000.0),
    ] {
        check_not_ice(p, t).unwrap_or_else(|e| panic!("p {p} T {t}: {e}"));
    }
    // Ice Ih at 0.1 MPa, 270 K; the limit is the melting temperature at 0.1 MPa (~273.15 K).
    match check_not_ice(0.1, 270.0) {
        Err(Error::OutOfRange {
            quantity,
            limit,
            bound,
            formulation,
            ..
        }) => {
            assert_eq!(quantity, "T");
            assert_eq!(bound, Bound::Below);
            assert!((limit - 273.153).abs() < 0.002, "limit {limit}");
            assert!(formulation.contains("IAPWS R14-08"));
            assert!(
                formulation.contains("melting curve of ice Ih"),
                "{formulation}"
            );
        }
        other => panic!("expected ice Ih, got {other:?}"),
    }
    // Vapour side: below the sublimation pressure it is vapour, above it ice.
    let ps = sublimation_pressure(250.0).unwrap();
    assert!(check_not_ice(ps * 0.9, 250.0).is_ok());
    match check_not_ice(ps * 1.1, 250.0) {
        Err(Error::OutOfRange {
            limit, formulation, ..
        }) => {
            assert!(limit > 250.0 && limit < 251.0, "{limit}");
            assert!(formulation.contains("sublimation"), "{formulation}");
        }
        other => panic!("expected ice, got {other:?}"),
    }
    // High-pressure ices: VI at 1000 MPa and 290 K, VII at 3000 MPa and 400 K, V at 450 MPa, 260 K.
    for (p, t, name) in [
        (1000.0, 290.0, "ice VI"),
        (3000.0, 400.0, "ice VII"),
        (450.0, 260.0, "ice V"),
        (250.0, 252.0, "ice III"),
    ] {
        match check_not_ice(p, t) {
            Err(Error::OutOfRange {
                limit, formulation, ..
            }) => {
                assert!(limit > t, "{name}: limit {limit}");
                assert!(formulation.contains(name), "{formulation}");
            }
            other => panic!("{name}: got {other:?}"),
        }
    }
    // The message reads as one line naming T, the limit and the curve.
    let msg = check_not_ice(0.1, 270.0).unwrap_err().to_string();
    assert!(msg.starts_with("T = 270 K is below"), "{msg}");
}
