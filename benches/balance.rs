//! Benchmarks of the site steam balance: one solve of the example site (24 units, 33 streams),
//! the same site grown to 40 units (16 more process users spread over the MP, LP and LLP
//! headers, each returning condensate), a 50-point sweep of a process demand on the grown
//! site, each point warm-started from the previous, and one solve of the example with losses
//! (30 units: two leaks, two lines marched in segments, two traps). Targets: a 40-unit site in
//! under 50 ms, a 50-point sweep of it in under 1 s.

use criterion::{criterion_group, criterion_main, Criterion};
use serde_json::{json, Value};
use steamcell::api;

const SITE: &str = include_str!("../examples/site/site.json");
const LOSSES: &str = include_str!("../examples/site/site_with_losses.json");

/// The example site with `extra` more process users (0.4 t/h each, half the condensate back at
/// 85 degC), taking turns on the MP, LP and LLP headers.
fn grown(net: &Value, extra: usize) -> Value {
    let mut net = net.clone();
    for i in 0..extra {
        let header = ["MP", "LP", "LLP"][i % 3];
        let user = format!("extra_user_{i}");
        net["units"][&user] = json!({
            "kind": "user", "demand": 0.4, "return_fraction": 0.5, "return_T": "85 degC"
        });
        net["streams"][format!("to_{user}")] = json!({ "from": header, "to": user });
        net["streams"][format!("{user}_return")] = json!({ "from": user, "to": "CR" });
    }
    net
}

fn bench(c: &mut Criterion) {
    let base: Value = serde_json::from_str(SITE).unwrap();
    let solve = json!({ "network": base });
    c.bench_function("balance.solve example site (24 units)", |b| {
        b.iter(|| api::call("balance.solve", solve.clone()).unwrap())
    });
    let net = grown(&base, 16);
    assert_eq!(net["units"].as_object().unwrap().len(), 40);
    let solve40 = json!({ "network": net });
    c.bench_function("balance.solve grown site (40 units)", |b| {
        b.iter(|| api::call("balance.solve", solve40.clone()).unwrap())
    });
    // (from 10 kg/s: below about 9 kg/s the LP header of the grown site gets more from the
    // back-pressure turbine than its users take, and those points are refused)
    let sweep = json!({
        "network": net,
        "path": "units.LP_users.demand",
        "from": 10, "to": 18, "points": 50,
        "streams": ["b2_steam", "llp_vent"]
    });
    let losses: Value = serde_json::from_str(LOSSES).unwrap();
    let solve_losses = json!({ "network": losses });
    c.bench_function("balance.solve example with losses (30 units)", |b| {
        b.iter(|| api::call("balance.solve", solve_losses.clone()).unwrap())
    });
    let mut g = c.benchmark_group("sweep");
    g.sample_size(10);
    g.bench_function("balance.sweep 50 points, 40 units", |b| {
        b.iter(|| api::call("balance.sweep", sweep.clone()).unwrap())
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
