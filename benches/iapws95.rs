//! IAPWS-95 timings: all properties at (rho, T), the state at (p, T) (density iteration from
//! the IF97 start), and the phase equilibrium at T (Maxwell criterion); plus the transport
//! properties of a state. Run by the lead: `cargo bench --bench iapws95`.
use criterion::{black_box, criterion_group, criterion_main, Criterion};
use steamcell::water::state::Given;
use steamcell::water::{iapws95, state95, transport};

fn bench(c: &mut Criterion) {
    c.bench_function("iapws95 props(rho, T) liquid", |b| {
        b.iter(|| iapws95::props(black_box(838.025), black_box(500.0)))
    });
    c.bench_function("iapws95 props(rho, T) vapour", |b| {
        b.iter(|| iapws95::props(black_box(0.435), black_box(500.0)))
    });
    c.bench_function("state95 (p, T) liquid", |b| {
        b.iter(|| state95::at_pt(black_box(10.0), black_box(500.0)))
    });
    c.bench_function("state95 (p, T) steam", |b| {
        b.iter(|| state95::at_pt(black_box(1.0), black_box(700.0)))
    });
    c.bench_function("state95 (p, h)", |b| {
        let opts = steamcell::water::state::Options::STANDARD;
        b.iter(|| state95::solve(Given::PH(black_box(3.0), black_box(3000.0)), &opts))
    });
    c.bench_function("iapws95 saturation_t", |b| {
        b.iter(|| iapws95::saturation_t(black_box(450.0)))
    });
    c.bench_function("transport_95(rho, T)", |b| {
        b.iter(|| transport::transport_95(black_box(838.025), black_box(500.0)))
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
