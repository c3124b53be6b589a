//! Property-core speed: median time per call of the state solver for the main input pairs.
//! Targets (2-core machine): (p,T) <= 200 ns in regions 1, 2, 5; (p,h), (p,s) <= 500 ns;
//! (h,s) <= 1 us; region 3 <= 2 us. Run with `cargo bench --bench properties`.

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use steamcell::water::state::{self, Options};

fn bench(c: &mut Criterion) {
    let o = Options::STANDARD;
    let mut g = c.benchmark_group("state");
    g.bench_function("pT region 1 (3 MPa, 300 K)", |b| {
        b.iter(|| state::at_pt(black_box(3.0), black_box(300.0), &o).unwrap())
    });
    g.bench_function("pT region 2 (1 MPa, 600 K)", |b| {
        b.iter(|| state::at_pt(black_box(1.0), black_box(600.0), &o).unwrap())
    });
    g.bench_function("pT region 5 (30 MPa, 1500 K)", |b| {
        b.iter(|| state::at_pt(black_box(30.0), black_box(1500.0), &o).unwrap())
    });
    g.bench_function("pT region 3 (25 MPa, 650 K)", |b| {
        b.iter(|| state::at_pt(black_box(25.0), black_box(650.0), &o).unwrap())
    });
    g.bench_function("ph region 1 (5 MPa, 500 kJ/kg)", |b| {
        b.iter(|| state::at_ph(black_box(5.0), black_box(500.0), &o).unwrap())
    });
    g.bench_function("ph region 2 (1 MPa, 3000 kJ/kg)", |b| {
        b.iter(|| state::at_ph(black_box(1.0), black_box(3000.0), &o).unwrap())
    });
    g.bench_function("ps region 2 (1 MPa, 7 kJ/kgK)", |b| {
        b.iter(|| state::at_ps(black_box(1.0), black_box(7.0), &o).unwrap())
    });
    g.bench_function("ph wet (0.1 MPa, 2000 kJ/kg)", |b| {
        b.iter(|| state::at_ph(black_box(0.1), black_box(2000.0), &o).unwrap())
    });
    g.bench_function("ph region 3 (25 MPa, 2000 kJ/kg)", |b| {
        b.iter(|| state::at_ph(black_box(25.0), black_box(2000.0), &o).unwrap())
    });
    g.bench_function("hs region 2 (3000 kJ/kg, 7 kJ/kgK)", |b| {
        b.iter(|| state::at_hs(black_box(3000.0), black_box(7.0), &o).unwrap())
    });
    g.bench_function("hs region 1 (500 kJ/kg, 1.5 kJ/kgK)", |b| {
        b.iter(|| state::at_hs(black_box(500.0), black_box(1.5), &o).unwrap())
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
