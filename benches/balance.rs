//! Benchmarks of the site steam balance: one solve of the example site (24 units, 33 streams)
//! and a 50-point sweep of a process demand, each point warm-started from the previous.

use criterion::{criterion_group, criterion_main, Criterion};
use serde_json::{json, Value};
use steamcell::api;

const SITE: &str = include_str!("../examples/site/site.json");

fn bench(c: &mut Criterion) {
    let net: Value = serde_json::from_str(SITE).unwrap();
    let solve = json!({ "network": net });
    c.bench_function("balance.solve example site", |b| {
        b.iter(|| api::call("balance.solve", solve.clone()).unwrap())
    });
    let sweep = json!({
        "network": net,
        "path": "units.LP_users.demand",
        "from": 6, "to": 18, "points": 50,
        "streams": ["b2_steam", "llp_vent"]
    });
    let mut g = c.benchmark_group("sweep");
    g.sample_size(10);
    g.bench_function("balance.sweep 50 points", |b| {
        b.iter(|| api::call("balance.sweep", sweep.clone()).unwrap())
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
