//! The uncertainty of any result (`uncertainty` param) and the property uncertainty of a state
//! (`property_uncertainty`).
//!
//! Sources: JCGM 100:2008 (GUM) 5.1.2 and 5.2.2 (the law of propagation of uncertainty, with
//! correlations) for the closed forms of the linear cases; JCGM 101:2008 for the Monte Carlo
//! cross-check (its standard deviation scatters by about u / sqrt(2 (M - 1)) over M samples);
//! thermodynamic identities (dh = cp dT at constant p, dh = T ds at constant p) for the
//! measured-efficiency case, independent of the propagation; IAPWS R6-95(2018) for the
//! property uncertainty (each row's figure and citation, see crates/steamcell-core/src/water/
//! uncertainty.rs for which figures are quoted and which are from memory).

use serde_json::{json, Value};
use steamcell::api::{self, codes, uncertainty as unc};
use steamcell::water::state::{Given, Options};
use steamcell::water::uncertainty::{self as pu, Basis, Property};
use steamcell::water::{solve, Formulation};

fn call(method: &str, params: Value) -> Value {
    api::call(method, params).unwrap_or_else(|e| panic!("{method}: {e}"))
}

fn err(method: &str, params: Value) -> api::ApiError {
    match api::call(method, params) {
        Ok(v) => panic!("{method} answered {v}"),
        Err(e) => e,
    }
}

fn f(v: &Value, path: &str) -> f64 {
    let mut at = v;
    for seg in path.split('.') {
        at = match seg.parse::<usize>() {
            Ok(i) if at.is_array() => &at[i],
            _ => &at[seg],
        };
    }
    at.as_f64()
        .unwrap_or_else(|| panic!("{path} is not a number: {at}"))
}

fn close(a: f64, b: f64, tol: f64, what: &str) {
    assert!((a - b).abs() <= tol, "{what}: {a} vs {b} (tol {tol})");
}

/// The contribution of `input` to a field's uncertainty.
fn contribution(field: &Value, input: &str) -> Value {
    field["contributions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["input"] == input)
        .cloned()
        .unwrap_or_else(|| panic!("no contribution of {input}"))
}

fn header(uncertainty: Value) -> Value {
    json!({
        "inlets": [
            {"p": "10 bar", "h": 2800, "flow": 4},
            {"p": "10 bar", "h": 3000, "flow": 6}
        ],
        "p": "10 bar",
        "uncertainty": uncertainty,
    })
}

/// A linear case with a closed form: a header's outlet enthalpy is sum(m_i h_i) / sum(m_i),
/// so with u(h1) = 2 kJ/kg and u(h2) = 3 kJ/kg, u(h) = sqrt((0.4 * 2)^2 + (0.6 * 3)^2); its
/// outlet flow is m1 + m2 (GUM 5.1.2).
#[test]
fn header_enthalpy_closed_form() {
    let r = call(
        "header.mix",
        header(json!({"inlets.0.h": "2 kJ/kg", "inlets": {"1": {"h": "3 kJ/kg"}}})),
    );
    let u = &r["uncertainty"]["outlet"]["h"];
    let exact = (0.8f64.powi(2) + 1.8f64.powi(2)).sqrt();
    close(f(u, "u"), exact, 1e-6 * exact, "u(h)");
    close(f(u, "U"), 2.0 * exact, 2e-6 * exact, "U(h)");
    assert_eq!(f(u, "k"), 2.0);
    assert_eq!(u["unit"], "kJ/kg");
    let c1 = contribution(u, "inlets.0.h");
    let c2 = contribution(u, "inlets.1.h");
    close(f(&c1, "sensitivity"), 0.4, 1e-7, "c1");
    close(f(&c2, "sensitivity"), 0.6, 1e-7, "c2");
    close(f(&c1, "share") + f(&c2, "share"), 1.0, 1e-12, "shares");
    close(f(&c1, "share"), 0.64 / 3.88, 1e-7, "share 1");
    // The flow does not depend on the enthalpies.
    assert_eq!(f(&r, "uncertainty.flow.u"), 0.0);
}

/// Correlations change the answer as the closed form says: u^2 = a^2 + b^2 + 2 r a b with
/// a = 0.4 * 2 and b = 0.6 * 3 (GUM 5.2.2), for r = 0.5, 1 and -1; the shares still sum to 1.
#[test]
fn correlations_follow_the_closed_form() {
    let (a, b): (f64, f64) = (0.8, 1.8);
    for r in [0.5, 1.0, -1.0] {
        let res = call(
            "header.mix",
            header(json!({
                "inlets.0.h": "2 kJ/kg", "inlets.1.h": "3 kJ/kg",
                "correlations": [{"inputs": ["inlets.0.h", "inlets.1.h"], "r": r}]
            })),
        );
        let u = &res["uncertainty"]["outlet"]["h"];
        let exact = (a * a + b * b + 2.0 * r * a * b).sqrt();
        close(f(u, "u"), exact, 1e-6, &format!("u(h) at r = {r}"));
        let shares = f(u, "contributions.0.share") + f(u, "contributions.1.share");
        close(shares, 1.0, 1e-9, "shares");
        assert_eq!(res["uncertainty_basis"]["correlations"][0]["r"], json!(r));
    }
    // Fully correlated flows: u(m1 + m2) = u1 + u2.
    let res = call(
        "header.mix",
        header(json!({
            "inlets.0.flow": "0.1 kg/s", "inlets.1.flow": "0.2 kg/s",
            "correlations": [{"inputs": ["inlets.0.flow", "inlets.1.flow"], "r": 1}]
        })),
    );
    close(f(&res, "uncertainty.flow.u"), 0.3, 1e-9, "u(flow), r = 1");
}

/// A heat duty linear in an input: a boiler's heat to steam is m (h_steam - h_feed), so
/// u(duty) = (h_steam - h_feed) u(m).
#[test]
fn boiler_duty_is_linear_in_the_flow() {
    let r = call(
        "boiler.fire",
        json!({
            "feedwater": {"p": "70 bar", "T": "105 degC"},
            "steam": {"p": "60 bar", "T": "450 degC", "flow": "100 t/h"},
            "efficiency": 0.88,
            "uncertainty": {"steam.flow": "1 t/h"},
        }),
    );
    let dh = f(&r, "steam.h") - f(&r, "feedwater.h");
    let u = &r["uncertainty"]["heat_to_steam"];
    close(f(u, "u"), dh / 3.6, 1e-7 * dh, "u(duty) in kW for 1 t/h");
    close(
        f(u, "contributions.0.share"),
        1.0,
        1e-12,
        "one input, all the variance",
    );
}

fn turbine(uncertainty: Option<Value>) -> Value {
    let mut p = json!({
        "inlet": {"p": "42 bar", "T": "400 degC"},
        "outlet_p": "4.5 bar",
        "outlet": {"T": "190 degC"},
    });
    if let Some(u) = uncertainty {
        p["uncertainty"] = u;
    }
    p
}

fn efficiency_at(inlet_t: f64, outlet_t: f64) -> f64 {
    let r = call(
        "turbine.expand",
        json!({
            "inlet": {"p": "42 bar", "T": format!("{inlet_t} degC")},
            "outlet_p": "4.5 bar",
            "outlet": {"T": format!("{outlet_t} degC")},
        }),
    );
    f(&r, "efficiency")
}

/// The measured-efficiency case of the issue (42 bar / 400 degC to 4.5 bar, exhaust measured at
/// 190 degC; +-1 K at the exhaust moves the efficiency by about 0.42 points, +-1 K at the inlet
/// by about 0.34 points: the issue's own figures, no external source), against two independent
/// calculations to 1 % of u: central differences of plain calls with a step of 0.05 K, and the
/// thermodynamic identities d(eta)/dT2 = -cp2 / (h1 - h2s) and
/// d(eta)/dT1 = cp1 [(h1 - h2s) - (h1 - h2)(1 - T2s / T1)] / (h1 - h2s)^2
/// (dh = cp dT and dh = T ds at constant pressure).
#[test]
fn measured_efficiency_case() {
    let r = call(
        "turbine.expand",
        turbine(Some(json!({"inlet.T": "1 K", "outlet": {"T": "1 K"}}))),
    );
    let u = &r["uncertainty"]["efficiency"];
    let c_in = f(u, "contributions.0.sensitivity");
    let c_out = f(u, "contributions.1.sensitivity");
    assert_eq!(u["contributions"][0]["input"], "inlet.T");
    assert_eq!(u["contributions"][1]["input"], "outlet.T");
    close(c_in * 100.0, 0.34, 0.01, "points per K at the inlet");
    close(c_out * 100.0, -0.42, 0.01, "points per K at the exhaust");

    // Independent 1: plain calls, another step.
    let h = 0.05;
    let fd_in = (efficiency_at(400.0 + h, 190.0) - efficiency_at(400.0 - h, 190.0)) / (2.0 * h);
    let fd_out = (efficiency_at(400.0, 190.0 + h) - efficiency_at(400.0, 190.0 - h)) / (2.0 * h);
    let u_fd = fd_in.hypot(fd_out);
    let u_gum = f(u, "u");
    close(
        u_gum,
        u_fd,
        0.01 * u_gum,
        "u against plain central differences",
    );
    close(c_in, fd_in, 0.01 * u_gum, "inlet sensitivity");
    close(c_out, fd_out, 0.01 * u_gum, "exhaust sensitivity");

    // Independent 2: the identities, from the states themselves.
    let (p1, t1, p2, t2) = (4.2, 673.15, 0.45, 463.15);
    let o = Options::STANDARD;
    let s1 = solve(Given::PT(p1, t1), &o, Formulation::If97).unwrap();
    let s2 = solve(Given::PT(p2, t2), &o, Formulation::If97).unwrap();
    let s2s = solve(Given::PS(p2, s1.props.s), &o, Formulation::If97).unwrap();
    let (h1, h2, h2s) = (s1.props.h, s2.props.h, s2s.props.h);
    let d_out = -s2.props.cp / (h1 - h2s);
    let d_in =
        s1.props.cp * ((h1 - h2s) - (h1 - h2) * (1.0 - s2s.props.t / t1)) / (h1 - h2s).powi(2);
    close(
        c_in,
        d_in,
        0.01 * u_gum,
        "inlet sensitivity against the identity",
    );
    close(
        c_out,
        d_out,
        0.01 * u_gum,
        "exhaust sensitivity against the identity",
    );
    let shares = f(u, "contributions.0.share") + f(u, "contributions.1.share");
    close(shares, 1.0, 1e-12, "shares");
    assert!(r["uncertainty_basis"]["warnings"]
        .as_array()
        .unwrap()
        .is_empty());
}

/// Every unit the caller used works: the same turbine in the us preset with bare numbers (degF,
/// psia) and 1 K = 1.8 degF gives the same efficiency uncertainty.
#[test]
fn units_of_the_caller() {
    let si = call(
        "turbine.expand",
        turbine(Some(json!({"inlet.T": "1 K", "outlet.T": "1 K"}))),
    );
    let us = call(
        "turbine.expand",
        json!({
            "units": "us",
            "inlet": {"p": 4.2 / 6.894_757_293_168_361e-3, "T": 752.0},
            "outlet_p": "0.45 MPa",
            "outlet": {"T": 374.0},
            "uncertainty": {"inlet.T": "1.8 degF", "outlet.T": "1 K"},
        }),
    );
    let (a, b) = (
        f(&si, "uncertainty.efficiency.u"),
        f(&us, "uncertainty.efficiency.u"),
    );
    close(a, b, 1e-6 * a, "u(efficiency) in two presets");
    let input = &us["uncertainty_basis"]["inputs"][0];
    assert_eq!(input["unit"], "degF");
    close(f(input, "u"), 1.8, 1e-12, "u in degF");
    // A percentage of the value as given: 0.25 % of 400 degC is 1 K.
    let pct = call(
        "turbine.expand",
        turbine(Some(json!({"inlet.T": "0.25 %", "outlet.T": "1 K"}))),
    );
    close(
        f(&pct, "uncertainty.efficiency.u"),
        a,
        1e-6 * a,
        "0.25 % of 400 degC",
    );
}

/// Bare numbers are read in the unit the request's units give their quantity (here barg and
/// degF per quantity, not a preset's), as the method reads them: the same u as with every
/// input written with its unit.
#[test]
fn units_per_quantity_of_the_caller() {
    let u = json!({"inlet.T": "1 K", "outlet.T": "1 K", "inlet.p": "0.05 bar"});
    let written = call(
        "turbine.expand",
        json!({
            "inlet": {"p": "42 barg", "T": "400 degC"},
            "outlet_p": "4.5 barg",
            "outlet": {"T": "190 degC"},
            "uncertainty": u,
        }),
    );
    let bare = call(
        "turbine.expand",
        json!({
            "units": {"pressure": "barg", "outlet.T": "degF"},
            "inlet": {"p": 42, "T": 400},
            "outlet_p": 4.5,
            "outlet": {"T": 374},
            "uncertainty": u,
        }),
    );
    let (a, b) = (
        f(&written, "uncertainty.efficiency.u"),
        f(&bare, "uncertainty.efficiency.u"),
    );
    close(a, b, 1e-6 * a, "u(efficiency) with units per quantity");
    let inputs = &bare["uncertainty_basis"]["inputs"];
    let unit_of = |name: &str| {
        inputs
            .as_array()
            .unwrap()
            .iter()
            .find(|i| i["input"] == name)
            .map(|i| i["unit"].clone())
            .unwrap()
    };
    assert_eq!(unit_of("inlet.p"), "barg");
    assert_eq!(unit_of("outlet.T"), "degF");
    assert_eq!(unit_of("inlet.T"), "degC");
}

/// GUM and Monte Carlo agree on a nearly linear case to the Monte Carlo's own statistical
/// uncertainty (JCGM 101:2008: the standard deviation of M samples scatters by about
/// u / sqrt(2 (M - 1)); the mean by u / sqrt(M)); a seed gives the same answer.
#[test]
fn monte_carlo_agrees_with_gum() {
    let m = 20_000u64;
    let params = |seed: u64| {
        turbine(Some(json!({
            "inlet.T": "1 K", "outlet.T": "1 K", "inlet.p": "0.05 bar",
            "method": "monte_carlo", "samples": m, "seed": seed,
            "outputs": ["efficiency", "specific_work"],
        })))
    };
    let r = call("turbine.expand", params(7));
    for field in ["efficiency", "specific_work"] {
        let u = &r["uncertainty"][field];
        let (gum, mc) = (f(u, "u"), f(u, "monte_carlo.u"));
        let sd = gum / (2.0 * (m as f64 - 1.0)).sqrt();
        assert!(
            (gum - mc).abs() < 3.0 * sd,
            "{field}: GUM {gum} vs MC {mc} (3 sd = {})",
            3.0 * sd
        );
        let mean = f(u, "monte_carlo.mean");
        assert!(
            (mean - f(u, "value")).abs() < 4.0 * gum / (m as f64).sqrt(),
            "{field}: mean {mean}"
        );
        let (lo, hi) = (f(u, "monte_carlo.low"), f(u, "monte_carlo.high"));
        assert!(
            (hi - lo - 2.0 * f(u, "U")).abs() < 0.05 * f(u, "U"),
            "{field} interval"
        );
        assert_eq!(f(u, "monte_carlo.samples"), m as f64);
    }
    let basis = &r["uncertainty_basis"]["monte_carlo"];
    assert_eq!(basis["failed"], 0);
    close(
        f(basis, "coverage_probability"),
        0.9545,
        1e-4,
        "p for k = 2",
    );
    let again = call("turbine.expand", params(7));
    assert_eq!(
        again["uncertainty"], r["uncertainty"],
        "same seed, same answer"
    );
    let other = call("turbine.expand", params(8));
    assert_ne!(
        other["uncertainty"]["efficiency"]["monte_carlo"],
        r["uncertainty"]["efficiency"]["monte_carlo"]
    );
}

/// An input within u of a limit of the method (an efficiency of 1 cannot go higher): the
/// sensitivities are one-sided, with a warning.
#[test]
fn a_limit_within_u_gives_a_one_sided_difference() {
    let r = call(
        "turbine.expand",
        json!({
            "inlet": {"p": "42 bar", "T": "400 degC", "flow": 10},
            "outlet_p": "4.5 bar", "efficiency": 1.0,
            "uncertainty": {"efficiency": 0.01, "outputs": ["power"]},
        }),
    );
    let c = &r["uncertainty"]["power"]["contributions"][0];
    assert_eq!(c["one_sided"], true);
    assert!(f(c, "sensitivity") > 0.0);
    let w = r["uncertainty_basis"]["warnings"].to_string();
    assert!(w.contains("efficiency") && w.contains("one-sided"), "{w}");
}

/// balance.solve names its inputs as in the network (with or without `network.`); a boiler
/// efficiency does not move the net power.
#[test]
fn balance_inputs_by_network_path() {
    let net: Value = serde_json::from_str(include_str!("../../examples/site/site.json")).unwrap();
    let r = call(
        "balance.solve",
        json!({"network": net, "uncertainty": {
            "units.BPT.efficiency": "1 %", "network.units.B1.efficiency": 0.01,
            "outputs": ["totals.net_power", "totals.fuel_heat_input"]}}),
    );
    let np = &r["uncertainty"]["totals"]["net_power"];
    let by_input = |name: &str| contribution(np, name);
    assert_eq!(
        f(&by_input("network.units.B1.efficiency"), "sensitivity"),
        0.0
    );
    assert!(f(&by_input("units.BPT.efficiency"), "sensitivity") > 0.0);
    close(
        f(np, "contributions.0.share") + f(np, "contributions.1.share"),
        1.0,
        1e-9,
        "shares",
    );
    assert!(
        r["uncertainty"]["streams"].is_null(),
        "outputs limit the fields"
    );
}

/// Without `uncertainty` a method's answer is unchanged; every method with numeric inputs but
/// the bulk ones takes the param, and the schema says so for each.
#[test]
fn registration() {
    let plain = call("turbine.expand", turbine(None));
    assert!(plain.get("uncertainty").is_none());
    // An explicit null is no request.
    assert_eq!(call("turbine.expand", turbine(Some(Value::Null))), plain);
    let doc = api::openrpc::document();
    for m in api::registry() {
        let takes = unc::takes_uncertainty(m.name);
        let entry = doc["methods"]
            .as_array()
            .unwrap()
            .iter()
            .find(|x| x["name"] == m.name)
            .unwrap();
        let has = entry["params"]
            .as_array()
            .unwrap()
            .iter()
            .any(|p| p["name"] == "uncertainty");
        assert_eq!(takes, has, "{}", m.name);
        if !takes {
            assert!(
                m.name.starts_with("server.") || unc::WITHOUT_UNCERTAINTY.contains(&m.name),
                "{}",
                m.name
            );
        }
    }
    // water.state: the uncertainty of every property from the inputs' uncertainties.
    let r = call(
        "water.state",
        json!({"given": {"p": "10 bar", "T": "250 degC"},
               "uncertainty": {"given.T": "0.5 K", "outputs": ["h"]}}),
    );
    let cp = f(&r, "cp");
    close(
        f(&r, "uncertainty.h.u"),
        0.5 * cp,
        1e-3 * cp,
        "u(h) = cp u(T)",
    );
}

fn code_and_message(e: &api::ApiError) -> (i64, &str) {
    (e.code, e.message.as_str())
}

/// Bad input: specific errors naming the path, the value and the limit.
#[test]
fn bad_input() {
    let t = |u: Value| err("turbine.expand", turbine(Some(u)));
    let e = t(json!({"inlet.flow": "1 t/h"}));
    let (c, m) = code_and_message(&e);
    assert_eq!(c, codes::INVALID_INPUT);
    assert!(
        m.contains("inlet.flow") && m.contains("inlet.p") && m.contains("outlet.T"),
        "{m}"
    );
    let e = t(json!({"outlet": "1 K"}));
    assert!(e.message.contains("not a numeric input"), "{}", e.message);
    let e = t(json!({"inlet.T": "-1 K"}));
    assert!(e.message.contains("negative"), "{}", e.message);
    let e = t(json!({"inlet.T": 1}));
    assert!(
        e.message.contains("no unit") && e.message.contains("temperature"),
        "{}",
        e.message
    );
    let e = t(json!({"inlet.T": "1 bar"}));
    assert_eq!(e.code, codes::WRONG_DIMENSION, "{}", e.message);
    assert_eq!(e.data["quantity"], "uncertainty.inlet.T");
    let e = t(json!({"inlet.T": "1 K", "outlet.T": "1 K",
        "correlations": [{"inputs": ["inlet.T", "outlet.T"], "r": 1.5}]}));
    assert!(
        e.message.contains("r = 1.5") && e.message.contains("-1 to 1"),
        "{}",
        e.message
    );
    let e = t(
        json!({"inlet.T": "1 K", "outlet.T": "1 K", "inlet.p": "0.1 bar",
        "correlations": [
            {"inputs": ["inlet.T", "outlet.T"], "r": 0.9},
            {"inputs": ["outlet.T", "inlet.p"], "r": 0.9},
            {"inputs": ["inlet.T", "inlet.p"], "r": -0.9}]}),
    );
    assert!(
        e.message.contains("positive semi-definite"),
        "{}",
        e.message
    );
    let e = t(json!({"inlet.T": "1 K",
        "correlations": [{"inputs": ["inlet.T", "outlet.T"], "r": 0.5}]}));
    assert!(e.message.contains("outlet.T"), "{}", e.message);
    let e = t(json!({"inlet.T": "1 K", "method": "monte_carlo", "samples": 1_000_000}));
    assert_eq!(e.code, codes::LIMIT_EXCEEDED, "{}", e.message);
    assert_eq!(e.data["limit"], json!(unc::MAX_SAMPLES as f64));
    let e = t(json!({"inlet.T": "1 K", "samples": 1000}));
    assert!(e.message.contains("monte_carlo"), "{}", e.message);
    let e = t(json!({"inlet.T": "1 K", "method": "bayes"}));
    assert!(e.message.contains("gum, monte_carlo"), "{}", e.message);
    let e = t(json!({"inlet.T": "1 K", "k": 0}));
    assert!(e.message.contains("coverage factor"), "{}", e.message);
    let e = t(json!({"inlet.T": "1 K", "outputs": ["efficency"]}));
    assert!(e.message.contains("efficency"), "{}", e.message);
    let e = t(json!({"inlet.T": "zero"}));
    assert!(
        e.message.contains("not a standard uncertainty"),
        "{}",
        e.message
    );
    let e = t(json!({"k": 2}));
    assert!(e.message.contains("at least one input"), "{}", e.message);
    let e = t(json!({"inlet.T": "1 K", "correlations": "high"}));
    assert_eq!(e.code, codes::INVALID_PARAMS, "{}", e.message);
    // The method's own error passes through unchanged.
    let mut p = turbine(Some(json!({"inlet.T": "1 K"})));
    p["inlet"]["T"] = json!("4000 degC");
    let e = err("turbine.expand", p);
    assert_eq!(e.code, codes::OUT_OF_RANGE);
}

/// Reproduction: `"samples": 10` with `"method": "monte_carlo"` on turbine.expand was refused
/// as "Monte Carlo samples (at least 100): 10 exceeds the limit 100000", the wrong way round.
/// Too few samples are refused as below the least 100; too many as over the limit.
#[test]
fn too_few_monte_carlo_samples_are_refused_as_below_the_least() {
    let t = |u: Value| err("turbine.expand", turbine(Some(u)));
    let e = t(json!({"inlet.T": "1 K", "method": "monte_carlo", "samples": 10}));
    assert_eq!(e.code, codes::INVALID_INPUT, "{}", e.message);
    assert!(
        e.message
            .contains("uncertainty.samples = 10 is below the least 100")
            && !e.message.contains("exceeds"),
        "{}",
        e.message
    );
    let e = t(json!({"inlet.T": "1 K", "method": "monte_carlo", "samples": 100_001}));
    assert_eq!(e.code, codes::LIMIT_EXCEEDED, "{}", e.message);
    assert!(
        e.message.contains("100001 exceeds the limit 100000"),
        "{}",
        e.message
    );
}

/// Reproduction: `"inlet.p": "0.05 barg"` was read as 0.05 bar. The uncertainty of a pressure
/// is a pressure difference, which has no gauge (nor an absolute qualifier): a gauge or
/// absolute unit is refused naming the units of a pressure difference; the plain units, psi
/// among them, are read as differences.
#[test]
fn a_pressure_uncertainty_in_a_gauge_unit_is_refused() {
    let t = |u: Value| err("turbine.expand", turbine(Some(u)));
    for (given, example) in [
        ("0.05 barg", "\"0.05 bar\""),
        ("5 kPag", "\"5 kPa\""),
        ("0.7 psig", "\"0.7 psi\""),
        ("0.7 psia", "\"0.7 psi\""),
    ] {
        let e = t(json!({"inlet.p": given}));
        assert_eq!(e.code, codes::INVALID_INPUT, "{}", e.message);
        let m = &e.message;
        assert!(
            m.contains(&format!("uncertainty.inlet.p = \"{given}\""))
                && m.contains("pressure difference")
                && m.contains("Pa, kPa, MPa, bar, mbar, psi")
                && m.contains(example),
            "{m}"
        );
    }
    // 0.05 bar = 5 kPa = 0.725189 psi (0.05 bar / 6.894757 kPa per psi; exact definitions,
    // common practice, no source): the same standard uncertainty of the inlet pressure, in bar
    let u = |given: &str| {
        let r = steamcell::api::call("turbine.expand", turbine(Some(json!({"inlet.p": given}))))
            .unwrap();
        f(&r, "uncertainty_basis.inputs.0.u")
    };
    let psi_mpa = 6.894_757_293_168_361e-3;
    close(u("0.05 bar"), 0.05, 1e-15, "0.05 bar");
    close(u("5 kPa"), 0.05, 1e-15, "5 kPa");
    close(u("0.725189 psi"), 0.725189 * psi_mpa * 10.0, 1e-15, "psi");
}

/// Reproduction: the uncertainty of `steam_flow`, `fuel_heat_input` and `balance.energy_in` of
/// `boiler.fire` had no `unit`, since the answer's `units` map named them only by group. Each
/// is now named there, so its uncertainty says its unit.
#[test]
fn component_fields_uncertainty_names_its_unit() {
    let r = steamcell::api::call(
        "boiler.fire",
        json!({"feedwater": {"p": "45 bar", "T": "105 degC"}, "steam": {"p": "42 bar", "T": "400 degC"},
               "steam_flow": "20 t/h", "efficiency": 0.88, "units": {"flow": "t/h"},
               "uncertainty": {"efficiency": 0.01}}),
    )
    .unwrap();
    let u = &r["uncertainty"];
    assert_eq!(u["steam_flow"]["unit"], "t/h", "{}", u["steam_flow"]);
    assert_eq!(
        u["fuel_heat_input"]["unit"], "kW",
        "{}",
        u["fuel_heat_input"]
    );
    assert_eq!(u["balance"]["energy_in"]["unit"], "kW", "{}", u["balance"]);
    assert_eq!(u["balance"]["mass_in"]["unit"], "t/h", "{}", u["balance"]);
}

// ------------------------------------------------------------------------ property uncertainty

/// A state inside each region of the release's figures, with the row it must fall in.
fn region_states() -> Vec<(Formulation, Given, Property, &'static str)> {
    use Property::*;
    let c = 273.15;
    vec![
        (
            Formulation::Iapws95,
            Given::TV(650.0, 1.0 / 330.0),
            Density,
            "critical region",
        ),
        (
            Formulation::If97,
            Given::PT(0.101_325, 20.0 + c),
            Density,
            "liquid at ambient pressure",
        ),
        (
            Formulation::If97,
            Given::PT(5.0, 100.0 + c),
            Density,
            "liquid up to 10 MPa and 423 K",
        ),
        (
            Formulation::If97,
            Given::PT(50.0, 300.0 + c),
            Density,
            "liquid up to 100 MPa and 623.15 K",
        ),
        (
            Formulation::If97,
            Given::PT(1.0, 300.0 + c),
            Density,
            "vapour",
        ),
        (
            Formulation::If97,
            Given::PT(50.0, 700.0 + c),
            Density,
            "other fluid states up to 100 MPa",
        ),
        (
            Formulation::Iapws95,
            Given::PT(300.0, 500.0),
            Density,
            "above 100 MPa",
        ),
        (
            Formulation::Iapws95,
            Given::TV(650.0, 1.0 / 330.0),
            SpeedOfSound,
            "critical region",
        ),
        (
            Formulation::If97,
            Given::PT(0.101_325, 20.0 + c),
            SpeedOfSound,
            "liquid at ambient pressure",
        ),
        (
            Formulation::If97,
            Given::PT(50.0, 300.0 + c),
            SpeedOfSound,
            "liquid up to 100 MPa",
        ),
        (
            Formulation::If97,
            Given::PT(1.0, 300.0 + c),
            SpeedOfSound,
            "vapour",
        ),
        (
            Formulation::If97,
            Given::PT(50.0, 700.0 + c),
            SpeedOfSound,
            "other fluid states up to 100 MPa",
        ),
        (
            Formulation::Iapws95,
            Given::PT(300.0, 500.0),
            SpeedOfSound,
            "above 100 MPa",
        ),
        (
            Formulation::Iapws95,
            Given::TV(650.0, 1.0 / 330.0),
            IsobaricHeatCapacity,
            "critical region",
        ),
        (
            Formulation::If97,
            Given::PT(5.0, 100.0 + c),
            IsobaricHeatCapacity,
            "liquid up to 100 MPa",
        ),
        (
            Formulation::If97,
            Given::PT(1.0, 300.0 + c),
            IsobaricHeatCapacity,
            "vapour",
        ),
        (
            Formulation::If97,
            Given::PT(50.0, 700.0 + c),
            IsobaricHeatCapacity,
            "other fluid states up to 100 MPa",
        ),
        (
            Formulation::Iapws95,
            Given::PT(300.0, 500.0),
            IsobaricHeatCapacity,
            "above 100 MPa",
        ),
        (
            Formulation::If97,
            Given::PT(1.0, 150.0 + c),
            VapourPressure,
            "saturation line",
        ),
    ]
}

/// Each region's figure at a state inside it, with its citation: the row found is the one the
/// state lies in, its figure is the answer's (IAPWS-95 component), a quoted figure appears in
/// its quoted words, and every row of every table is reached.
#[test]
fn property_uncertainty_by_region() {
    let mut reached = Vec::new();
    for (form, given, prop, region) in region_states() {
        let st = solve(given, &Options::STANDARD, form).unwrap();
        let all = pu::of_state(&st, form);
        let s = all
            .statements
            .iter()
            .find(|s| s.property == prop)
            .unwrap_or_else(|| panic!("{given:?}: no {prop:?} ({:?})", all.undefined));
        assert!(
            s.row.region.starts_with(region),
            "{given:?} {prop:?}: region {} instead of {region}",
            s.row.region
        );
        let cite = s.row.citation();
        assert!(
            cite.contains("IAPWS R6-95(2018)") || cite.contains("Wagner and Pruss"),
            "{cite}"
        );
        if s.row.in_pressure {
            let expect = s.row.relative * st.props.kappa_t * st.props.p;
            close(
                s.relative_expanded,
                expect,
                1e-15,
                "critical density from pressure",
            );
            assert!(
                s.relative_expanded > s.row.relative,
                "near the critical point"
            );
        } else {
            assert_eq!(s.relative_expanded, s.row.relative);
        }
        let value = if prop == Property::VapourPressure {
            steamcell::water::saturation(steamcell::water::SaturationAt::T(st.props.t), form)
                .unwrap()
                .p
        } else {
            s.value
        };
        close(
            s.u_iapws95,
            s.relative_expanded * value.abs() / pu::K_STATED,
            1e-15 * value.abs(),
            "u of the IAPWS-95 component",
        );
        reached.push(s.row as *const pu::Row);
    }
    for prop in Property::ALL {
        for row in prop.table() {
            assert!(
                reached.contains(&(row as *const pu::Row)),
                "{prop:?}: row '{}' reached by no test state",
                row.region
            );
            if row.basis == Basis::Quoted {
                let pct = format!("{:.6}", row.relative * 100.0);
                let pct = format!("{}%", pct.trim_end_matches('0').trim_end_matches('.'));
                assert!(
                    row.words.contains(&pct),
                    "{prop:?} '{}': the quoted words do not state {pct}: {}",
                    row.region,
                    row.words
                );
            } else {
                assert!(row.words.contains("from memory"), "{}", row.words);
            }
        }
    }
}

/// The IF97 component is IF97's deviation from IAPWS-95 at the same (p, T), computed from the
/// two formulations independently here, with u = |d| / sqrt(3); the components add in
/// quadrature; a wet state has only the vapour pressure.
#[test]
fn if97_deviation_component() {
    let r = call(
        "water.state",
        json!({"given": {"p": "50 bar", "T": "300 degC"}, "property_uncertainty": true}),
    );
    let r95 = call(
        "water.state",
        json!({"given": {"p": "50 bar", "T": "300 degC"}, "formulation": "iapws95"}),
    );
    for prop in ["rho", "w", "cp"] {
        let pu = &r["property_uncertainty"][prop];
        let d = f(&r, prop) - f(&r95, prop);
        assert_eq!(pu["components"][1]["name"], "IF97 - IAPWS-95");
        close(f(pu, "components.1.deviation"), d, 1e-9 * f(&r, prop), prop);
        close(
            f(pu, "components.1.u"),
            d.abs() / 3f64.sqrt(),
            1e-9 * f(&r, prop),
            prop,
        );
        let u = f(pu, "components.0.u").hypot(f(pu, "components.1.u"));
        close(f(pu, "u"), u, 1e-12 * u, prop);
        close(f(pu, "U"), 2.0 * u, 1e-12 * u, prop);
    }
    let wet = call(
        "water.state",
        json!({"given": {"p": "1 bar", "x": 0.5}, "property_uncertainty": true}),
    );
    let pu = &wet["property_uncertainty"];
    assert!(pu["rho"].is_null() && pu["p_sat"].is_object());
    assert!(pu["undefined"]["cp"].as_str().unwrap().contains("wet"));
    // IAPWS-95 states carry only the release's component.
    let r = call(
        "water.state",
        json!({"given": {"p": "50 bar", "T": "300 degC"}, "formulation": "iapws95",
               "property_uncertainty": true}),
    );
    assert_eq!(
        r["property_uncertainty"]["rho"]["components"]
            .as_array()
            .unwrap()
            .len(),
        1
    );
    // Without the flag the answer has no such field.
    assert!(r95.get("property_uncertainty").is_none());
}

/// water.batch gives the same standard uncertainties as water.state, row by row.
#[test]
fn batch_property_uncertainty_columns() {
    let r = call(
        "water.batch",
        json!({"given": {"p": [0.1, 5, 1], "T": [20, 300, 100]}, "want": ["rho"],
               "property_uncertainty": true}),
    );
    for (i, (p, t)) in [(0.1, 20.0), (5.0, 300.0), (1.0, 100.0)].iter().enumerate() {
        let s = call(
            "water.state",
            json!({"given": {"p": p, "T": t}, "property_uncertainty": true}),
        );
        for prop in ["rho", "w", "cp", "p_sat"] {
            let col = &r["columns"][format!("u_{prop}")][i];
            let want = &s["property_uncertainty"][prop]["u"];
            assert_eq!(col, want, "row {i} {prop}");
        }
    }
    assert_eq!(r["units"]["u_rho"], "kg/m3");
}

/// Every method that takes `uncertainty` propagates through it: one call per method with an
/// uncertainty on one of its inputs gives a field with a positive u whose contributions'
/// shares sum to 1, and an input that is not a number is refused (`segments` of a pipe is a
/// count: it takes no unit).
#[test]
fn every_method_propagates() {
    let cases = [
        (
            "water.state",
            json!({"given": {"p": "10 bar", "T": "250 degC"}}),
            "given.T",
            json!("1 K"),
            "h",
        ),
        (
            "water.saturation",
            json!({"p": "10 bar"}),
            "p",
            json!("0.05 bar"),
            "T",
        ),
        (
            "turbine.expand",
            turbine(None),
            "outlet.T",
            json!("1 K"),
            "efficiency",
        ),
        (
            "header.mix",
            header(Value::Null),
            "inlets.0.h",
            json!("2 kJ/kg"),
            "outlet.h",
        ),
        (
            "turbine.train",
            json!({"inlet": {"p": "60 bar", "T": "480 degC", "flow": "90 t/h"},
            "stages": [{"outlet_p": "12 bar", "efficiency": 0.8, "extraction": "10 t/h"},
                       {"outlet_p": "2 bar", "efficiency": 0.82}]}),
            "stages.0.efficiency",
            json!(0.01),
            "power",
        ),
        (
            "pump.raise",
            json!({"inlet": {"p": "1 bar", "T": "40 degC", "flow": 10},
            "outlet_p": "50 bar", "efficiency": 0.75}),
            "efficiency",
            json!("2 %"),
            "power",
        ),
        (
            "valve.throttle",
            json!({"inlet": {"p": "40 bar", "T": "400 degC"}, "outlet_p": "5 bar"}),
            "inlet.T",
            json!("2 K"),
            "outlet.T",
        ),
        (
            "desuperheater.spray",
            json!({"steam": {"p": "10 bar", "T": "300 degC", "flow": 5},
            "water": {"p": "20 bar", "T": "105 degC"}, "target_T": "200 degC"}),
            "steam.T",
            json!("2 K"),
            "spray_flow",
        ),
        (
            "flash.separate",
            json!({"inlet": {"p": "10 bar", "x": 0, "flow": 2}, "p": "1.5 bar"}),
            "p",
            json!("0.02 bar"),
            "flash_fraction",
        ),
        (
            "exchanger.balance",
            json!({
            "hot": {"inlet": {"p": "5 bar", "x": 1, "flow": 1}, "outlet": {"x": 0}},
            "cold": {"inlet": {"p": "20 bar", "T": "60 degC"}, "outlet": {"T": "120 degC"}}}),
            "cold.outlet.T",
            json!("1 K"),
            "cold_flow",
        ),
        (
            "boiler.fire",
            json!({"feedwater": {"p": "70 bar", "T": "105 degC"},
            "steam": {"p": "60 bar", "T": "450 degC", "flow": "100 t/h"}, "efficiency": 0.88}),
            "efficiency",
            json!(0.01),
            "fuel_heat_input",
        ),
        (
            "deaerator.balance",
            json!({"p": "1.2 bar", "steam": {"p": "3 bar", "T": "200 degC"},
            "waters": [{"p": "2 bar", "T": "60 degC", "flow": 20}]}),
            "waters.0.T",
            json!("1 K"),
            "steam_flow",
        ),
        (
            "orifice.flow",
            json!({"inlet": {"p": "10 barg", "x": 1}, "diameter": "3 mm"}),
            "diameter",
            json!("0.1 mm"),
            "mass_flow",
        ),
        (
            "pipe.flow",
            json!({"inlet": {"p": "10 bar", "T": "250 degC", "flow": "5 t/h"},
            "length": "100 m", "inner_diameter": "100 mm", "wall_thickness": "4 mm"}),
            "length",
            json!("1 m"),
            "pressure_drop",
        ),
        (
            "cycle.rankine",
            json!({"boiler_p": "100 bar", "boiler_T": "500 degC",
            "condenser_p": "0.1 bar", "turbine_efficiency": 0.85, "pump_efficiency": 0.8}),
            "turbine_efficiency",
            json!(0.01),
            "thermal_efficiency",
        ),
    ];
    let mut covered = vec![];
    for (method, params, input, u, field) in cases {
        let mut p = params.clone();
        p["uncertainty"] = json!({input: u});
        let r = call(method, p);
        let leaf = r["uncertainty"]
            .as_object()
            .and_then(|_| {
                let mut at = &r["uncertainty"];
                for seg in field.split('.') {
                    at = &at[seg];
                }
                at.is_object().then_some(at)
            })
            .unwrap_or_else(|| {
                panic!(
                    "{method}: no uncertainty of {field}; fields: {:?}",
                    r["uncertainty"]
                        .as_object()
                        .map(|o| o.keys().collect::<Vec<_>>())
                )
            });
        assert!(f(leaf, "u") > 0.0, "{method}: u({field}) = 0");
        close(f(leaf, "contributions.0.share"), 1.0, 1e-9, method);
        covered.push(method);
    }
    for m in api::registry() {
        if unc::takes_uncertainty(m.name) && m.name != "balance.solve" {
            assert!(covered.contains(&m.name), "{}: no case here", m.name);
        }
    }
    let e = err(
        "pipe.flow",
        json!({"inlet": {"p": "10 bar", "T": "250 degC", "flow": "5 t/h"}, "length": "100 m",
               "inner_diameter": "100 mm", "wall_thickness": "4 mm", "segments": 40,
               "uncertainty": {"segments": 1}}),
    );
    assert!(e.message.contains("takes no unit"), "{}", e.message);
}

/// The shapes a spreadsheet builds from dotted names: list elements (`uncertainty.inlets.1.h`
/// makes a list), a zero for an element it skips (left out), correlations as a list of objects
/// and `outputs` as one comma-separated text.
#[test]
fn spreadsheet_shapes() {
    let r = call(
        "header.mix",
        header(json!({
            "inlets": [{"h": 0}, {"h": "3 kJ/kg", "flow": "0.2 kg/s"}],
            "outputs": "outlet.h, flow",
        })),
    );
    let inputs = r["uncertainty_basis"]["inputs"].as_array().unwrap();
    let names: Vec<&str> = inputs
        .iter()
        .map(|i| i["input"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["inlets.1.flow", "inlets.1.h"]);
    close(
        f(&r, "uncertainty.outlet.h.contributions.1.sensitivity"),
        0.6,
        1e-7,
        "c2",
    );
    let fields: Vec<&String> = r["uncertainty"].as_object().unwrap().keys().collect();
    assert_eq!(fields, ["flow", "outlet"]);
    let corr = call(
        "header.mix",
        header(json!({
            "inlets": [{"h": "2 kJ/kg"}, {"h": "3 kJ/kg"}],
            "correlations": [{"inputs": ["inlets.0.h", "inlets.1.h"], "r": 1}],
            "outputs": ["outlet.h"],
        })),
    );
    close(f(&corr, "uncertainty.outlet.h.u"), 0.8 + 1.8, 1e-6, "r = 1");
    let e = err("header.mix", header(json!({"inlets.0.h": "0 kJ/kg"})));
    assert!(e.message.contains("zero"), "{}", e.message);
}

/// A quick method answers on a connection's worker; its propagation (here a Monte Carlo of
/// several seconds) tells the runtime first, so the worker's other connections keep being
/// answered. With one worker thread (TOKIO_WORKER_THREADS=1) a plain state call on a second
/// connection answers while the Monte Carlo is still running.
#[test]
fn a_long_propagation_does_not_hold_the_worker() {
    use crate::common;
    use std::sync::atomic::{AtomicBool, Ordering};
    use std::sync::Arc;
    let server = common::start(&[], &[("TOKIO_WORKER_THREADS", "1")]);
    let addr = server.addr.clone();
    let done = Arc::new(AtomicBool::new(false));
    let long = {
        let (addr, done) = (addr.clone(), done.clone());
        std::thread::spawn(move || {
            let body = json!({"jsonrpc": "2.0", "id": 1, "method": "turbine.expand",
                "params": turbine(Some(json!({"inlet.T": "1 K", "outlet.T": "1 K",
                    "method": "monte_carlo", "samples": 30_000, "outputs": "efficiency"})))});
            let r = common::post(
                &addr,
                &["Content-Type: application/json"],
                body.to_string().as_bytes(),
            );
            done.store(true, Ordering::SeqCst);
            r
        })
    };
    std::thread::sleep(std::time::Duration::from_millis(300));
    let body = json!({"jsonrpc": "2.0", "id": 2, "method": "water.state",
        "params": {"given": {"p": "1 bar", "T": "20 degC"}}});
    let r = common::post(
        &addr,
        &["Content-Type: application/json"],
        body.to_string().as_bytes(),
    );
    assert!(r.json()["result"]["h"].is_f64(), "{}", r.text());
    assert!(
        !done.load(Ordering::SeqCst),
        "the state call waited for the Monte Carlo to end"
    );
    let mc = long.join().unwrap();
    assert!(mc.json()["result"]["uncertainty"]["efficiency"]["monte_carlo"].is_object());
}
