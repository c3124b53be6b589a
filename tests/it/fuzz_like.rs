//! Property-based stand-ins for the cargo-fuzz targets in `fuzz/` (which need nightly), run in
//! every `cargo test`: random bytes, strings and f64 fed to the unit parser
//! (`steamcell::units::parse_text`), the request decoder (`steamcell::api::call` with every
//! method name) and the state solver (`steamcell::water::state::solve`). None may panic; a
//! success must be finite. Invariants only (no published values): "no panics on finite input"
//! is a project rule, finite results are common practice, no source.

use proptest::prelude::*;
use serde_json::Value;
use steamcell::units::{parse_text, Dim, Preset};
use steamcell::water::state::{solve, Given, Options};

const DIMS: [Dim; 8] = [
    Dim::Pressure,
    Dim::Temperature,
    Dim::TemperatureDifference,
    Dim::SpecificEnergy,
    Dim::SpecificEntropy,
    Dim::SpecificVolume,
    Dim::Density,
    Dim::Dimensionless,
];

/// Any f64 bit pattern (NaN, infinities, subnormals included) or a value in a physical range.
fn any_f64() -> impl Strategy<Value = f64> {
    prop_oneof![
        any::<u64>().prop_map(f64::from_bits),
        -1e4f64..1e4,
        0.0f64..100.0,
        200.0f64..2500.0,
        Just(0.0),
        Just(-0.0),
        Just(f64::MIN_POSITIVE),
    ]
}

fn given(kind: u8, a: f64, b: f64) -> Given {
    match kind % 12 {
        0 => Given::PT(a, b),
        1 => Given::PH(a, b),
        2 => Given::PS(a, b),
        3 => Given::HS(a, b),
        4 => Given::TX(a, b),
        5 => Given::PX(a, b),
        6 => Given::TH(a, b),
        7 => Given::TS(a, b),
        8 => Given::PV(a, b),
        9 => Given::TV(a, b),
        10 => Given::UV(a, b),
        _ => Given::PU(a, b),
    }
}

/// A JSON value from a small grammar of params-like shapes.
fn json_value() -> impl Strategy<Value = Value> {
    let leaf = prop_oneof![
        Just(Value::Null),
        any::<bool>().prop_map(Value::Bool),
        any_f64().prop_map(|f| serde_json::Number::from_f64(f).map_or(Value::Null, Value::Number)),
        any::<i64>().prop_map(|i| Value::Number(i.into())),
        "[ -~]{0,12}".prop_map(Value::String),
        prop_oneof![
            Just("3 MPa"),
            Just("300 K"),
            Just("-1 MPa"),
            Just("1e308 bar"),
            Just("NaN"),
            Just("25 degC"),
            Just("0.5"),
            Just("2000 kJ/kg"),
            Just("si"),
            Just("us"),
            Just("p"),
            Just("T"),
            Just("h"),
            Just("s"),
            Just("x"),
            Just("if97"),
        ]
        .prop_map(|s| Value::String(s.to_string())),
    ];
    leaf.prop_recursive(4, 24, 6, |inner| {
        let key = prop_oneof![
            Just("given"),
            Just("p"),
            Just("T"),
            Just("h"),
            Just("s"),
            Just("x"),
            Just("v"),
            Just("units"),
            Just("want"),
            Just("ambient"),
            Just("formulation"),
            Just("inlet"),
            Just("outlet"),
            Just("m"),
            Just("eta"),
            Just("tol"),
            Just("zz"),
        ];
        prop_oneof![
            prop::collection::vec(inner.clone(), 0..6).prop_map(Value::Array),
            prop::collection::btree_map(key.prop_map(str::to_string), inner, 0..5)
                .prop_map(|m| Value::Object(m.into_iter().collect())),
        ]
    })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 512, .. ProptestConfig::default() })]

    #[test]
    fn parse_text_never_panics(d in 0usize..DIMS.len(), pr in 0usize..16, text in "\\PC{0,24}") {
        let preset = Preset::ALL[pr % Preset::ALL.len()];
        if let Ok(p) = parse_text("x", DIMS[d], &text, preset, 0.101325) {
            prop_assert!(p.internal.is_finite(), "{:?} -> {}", text, p.internal);
        }
    }

    #[test]
    fn parse_text_on_number_unit_texts(d in 0usize..DIMS.len(), v in any_f64(),
                                       unit in "(MPa|bar|barg|psig|degC|degF|K|R|kJ/kg|%|m3/kg|kg/m3|[a-z/()0-9]{0,6})") {
        let text = format!("{v} {unit}");
        if let Ok(p) = parse_text("x", DIMS[d], &text, Preset::ALL[0], 0.101325) {
            prop_assert!(p.internal.is_finite(), "{:?} -> {}", text, p.internal);
        }
    }

    #[test]
    fn solve_never_panics(kind in any::<u8>(), a in any_f64(), b in any_f64()) {
        if let Ok(st) = solve(given(kind, a, b), &Options::STANDARD) {
            prop_assert!(st.props.p.is_finite() && st.props.t.is_finite() && st.props.h.is_finite(),
                "{:?} -> {:?}", given(kind, a, b), st.props);
        }
    }

    #[test]
    fn api_call_on_random_params(m in 0usize..64, params in json_value()) {
        let methods = steamcell::api::registry();
        let name = methods[m % methods.len()].name;
        let _ = steamcell::api::call(name, params);
    }

    #[test]
    fn api_call_on_random_text(m in 0usize..64, bytes in prop::collection::vec(any::<u8>(), 0..64)) {
        let methods = steamcell::api::registry();
        let name = methods[m % methods.len()].name;
        if let Ok(params) = serde_json::from_slice::<Value>(&bytes) {
            let _ = steamcell::api::call(name, params);
        }
        let _ = steamcell::api::call_text(name, &String::from_utf8_lossy(&bytes));
    }
}
