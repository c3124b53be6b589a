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
        use steamcell::water::state::Options;
        let n = 1_000_000;
        let a: Vec<steamcell::Result<f64>> =
            (0..n).map(|i| Ok(0.1 + (i % 997) as f64 * 0.02)).collect();
        let b: Vec<steamcell::Result<f64>> = (0..n)
            .map(|i| Ok(150.0 + (i % 991) as f64 * 0.45 + 273.15))
            .collect();
        let t0 = Instant::now();
        let r = steamcell::api::water::solve_rows(
            &Options::STANDARD,
            steamcell::water::Formulation::If97,
            "p",
            &a,
            "T",
            &b,
        )
        .unwrap();
        println!(
            "solve_rows 1M: {:.3} s ({} ok)",
            t0.elapsed().as_secs_f64(),
            r.iter().filter(|x| x.is_ok()).count()
        );
        println!(
            "size of Result<f64> {} Result<State> {}",
            std::mem::size_of::<steamcell::Result<f64>>(),
            std::mem::size_of::<steamcell::Result<steamcell::water::state::State>>()
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
        let out = columns(&body).unwrap();
        let dt = t0.elapsed().as_secs_f64();
        println!(
            "{n:>8} rows: {dt:.3} s, {:.2} M rows/s ({} bytes out)",
            n as f64 / dt / 1e6,
            out.len()
        );
    }
}
