//! Server-side throughput of the bulk column codec (no network): `cargo run --release --example columns_speed`.
use std::time::Instant;
use steamcell::api::columns::{columns, frame};
fn main() {
    {
        use steamcell::water::state::{self, Options};
        let n = 200_000;
        let t0 = Instant::now();
        let mut bad = 0;
        for i in 0..n {
            let p = 0.1 + (i % 997) as f64 * 0.02;
            let t = 150.0 + (i % 991) as f64 * 0.45 + 273.15;
            if state::at_pt(p, t, &Options::STANDARD).is_err() {
                bad += 1;
            }
        }
        println!(
            "at_pt single thread: {:.0} ns/row ({bad} errors)",
            t0.elapsed().as_nanos() as f64 / n as f64
        );
    }
    {
        use steamcell::api::rows::{compute, InputColumn};
        use steamcell::api::vocab::Ctx;
        use steamcell::units::{Dim, Preset};
        use steamcell::water::state::Options;
        let n = 1_000_000;
        let p: Vec<f64> = (0..n).map(|i| 0.1 + (i % 997) as f64 * 0.02).collect();
        let t: Vec<f64> = (0..n).map(|i| 150.0 + (i % 991) as f64 * 0.45).collect();
        let ctx = Ctx::new(None, None).unwrap();
        let pre = Preset::Engineering;
        let t0 = Instant::now();
        let a = InputColumn::from_numbers("p", pre.unit(Dim::Pressure), ctx.ambient, &p);
        let b = InputColumn::from_numbers("T", pre.unit(Dim::Temperature), ctx.ambient, &t);
        let want: Vec<String> = ["h", "s", "v"].iter().map(|s| s.to_string()).collect();
        let r = compute(
            &ctx,
            &Options::STANDARD,
            steamcell::water::Formulation::If97,
            &a,
            &b,
            &want,
            None,
        )
        .unwrap();
        let dt = t0.elapsed().as_secs_f64();
        println!(
            "row pipeline 1M (p,T) -> h, s, v: {dt:.3} s, {:.2} M rows/s ({} failed)",
            n as f64 / dt / 1e6,
            r.failed.len()
        );
    }
    for n in [100_000usize, 1_000_000] {
        let p: Vec<f64> = (0..n).map(|i| 0.1 + (i % 997) as f64 * 0.02).collect();
        let t: Vec<f64> = (0..n).map(|i| 150.0 + (i % 991) as f64 * 0.45).collect();
        let body = frame(
            &serde_json::json!({"given": ["p", "T"], "rows": n, "want": ["h", "s", "v"]}),
            &[p, t],
        );
        let t0 = Instant::now();
        let out = columns(&Default::default(), &body).unwrap();
        let dt = t0.elapsed().as_secs_f64();
        println!(
            "{n:>8} rows: {dt:.3} s, {:.2} M rows/s ({} bytes out)",
            n as f64 / dt / 1e6,
            out.len()
        );
    }
}
