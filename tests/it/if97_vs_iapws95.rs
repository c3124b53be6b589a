//! IAPWS-IF97 against IAPWS-95 over dense (p, T) grids of IF97 regions 1, 2, 3 and 5 (region 5
//! only up to 1273 K, IAPWS-95's upper limit) and along the saturation line.
//!
//! Tolerances (from memory, not re-read): IAPWS R7-97(2012) states how closely IF97 reproduces
//! IAPWS-95 - the permissible deviations used in its development: specific volume
//! |dv/v| <= 0.05 % in regions 1, 2 and 5; in region 3 the pressure at given (rho, T) within
//! 0.1 %; isobaric heat capacity |dcp/cp| <= 1 % and speed of sound |dw/w| <= 1 % outside the
//! critical region; saturation pressure |dps/ps| <= 0.025 %. For the enthalpy no tolerance is
//! recalled; 0.1 % of h (at least 0.2 kJ/kg near h = 0) is held here: no source.
//! The near-critical part of region 3 (T < 700 K and p < 40 MPa) is excluded from the h, cp and
//! w checks: R7-97 exempts a critical neighbourhood too (from memory; its exact extent is not
//! recalled, so this box is our choice: there cp of both formulations varies by orders of
//! magnitude over a few kelvin). v there is covered by the region-3 p(rho, T) check.
//!
//! `cargo test --test if97_vs_iapws95 -- --nocapture` prints the largest deviations (`report`).

use steamcell::water::iapws95;
use steamcell::water::if97::regions::{self, Region};
use steamcell::water::state::{self, Options};
use steamcell::water::state95;

const O: Options = Options::STANDARD;

#[derive(Default, Clone, Copy)]
struct Worst {
    v: (f64, f64, f64),
    h: (f64, f64, f64),
    cp: (f64, f64, f64),
    w: (f64, f64, f64),
    n: usize,
}

fn upd(w: &mut (f64, f64, f64), d: f64, p: f64, t: f64) {
    if d > w.0 {
        *w = (d, p, t);
    }
}

fn grid(region: Region) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    let (n_p, n_t) = (40, 40);
    let (plo, phi, tlo, thi): (f64, f64, f64, f64) = match region {
        Region::R1 => (1e-3, 100.0, 273.16, 623.15),
        Region::R2 => (1e-3, 100.0, 273.16, 1073.15),
        Region::R3 => (16.5, 100.0, 623.15, 863.15),
        Region::R5 => (1e-2, 50.0, 1073.15, 1273.0),
        Region::R4 => return out,
    };
    for i in 0..=n_p {
        let p = (plo.ln() + (phi.ln() - plo.ln()) * i as f64 / n_p as f64).exp();
        for j in 0..=n_t {
            let t = tlo + (thi - tlo) * j as f64 / n_t as f64;
            if regions::region_pt(p, t).ok() != Some(region) {
                continue;
            }
            // Stay 0.5 % off the saturation pressure (the phase is then clear in both).
            if t < state::T_C {
                let ps = iapws95::psat_estimate(t);
                if (p / ps - 1.0).abs() < 5e-3 {
                    continue;
                }
            }
            out.push((p, t));
        }
    }
    out
}

fn compare(region: Region) -> Worst {
    let mut w = Worst::default();
    for (p, t) in grid(region) {
        let a = state::at_pt(p, t, &O).unwrap().props;
        let b = state95::at_pt(p, t).unwrap().props;
        upd(&mut w.v, ((a.v - b.v) / b.v).abs(), p, t);
        let critical = region == Region::R3 && near_critical(p, t);
        if !critical {
            upd(&mut w.h, (a.h - b.h).abs() / b.h.abs().max(200.0), p, t);
            upd(&mut w.cp, ((a.cp - b.cp) / b.cp).abs(), p, t);
            upd(&mut w.w, ((a.w - b.w) / b.w).abs(), p, t);
        }
        w.n += 1;
    }
    w
}

fn near_critical(p: f64, t: f64) -> bool {
    t < 700.0 && p < 40.0
}

fn region_pressure_r3() -> (f64, f64, f64) {
    // Region 3 as the release states it: p at given (rho, T), from the IAPWS-95 density.
    let mut worst = (0.0, 0.0, 0.0);
    for (p, t) in grid(Region::R3) {
        let rho = state95::at_pt(p, t).unwrap().props.rho;
        let p97 = steamcell::water::if97::region3::pressure(rho, t);
        upd(&mut worst, ((p97 - p) / p).abs(), p, t);
    }
    worst
}

fn saturation() -> (f64, f64, f64) {
    let mut worst = (0.0, 0.0, 0.0);
    let n = 400;
    for i in 0..=n {
        let t = 273.16 + (647.0 - 273.16) * i as f64 / n as f64;
        let (p97, _, _) = state::saturation_t(t).unwrap();
        let p95 = iapws95::saturation_t(t).unwrap().psat;
        upd(&mut worst, ((p97 - p95) / p95).abs(), p95, t);
    }
    worst
}

/// Tolerances (see the module doc; from memory of IAPWS R7-97(2012)).
const TOL_V: f64 = 5e-4;
const TOL_P3: f64 = 1e-3;
const TOL_CP: f64 = 1e-2;
const TOL_W: f64 = 1e-2;
const TOL_PS: f64 = 2.5e-4;
/// No source (see the module doc).
const TOL_H: f64 = 1e-3;

#[test]
fn regions_within_the_release_tolerances() {
    for region in [Region::R1, Region::R2, Region::R5] {
        let w = compare(region);
        assert!(w.n > 100, "region {region:?}: only {} points", w.n);
        assert!(w.v.0 <= TOL_V, "region {region:?} v: {:?}", w.v);
        assert!(w.h.0 <= TOL_H, "region {region:?} h: {:?}", w.h);
        assert!(w.cp.0 <= TOL_CP, "region {region:?} cp: {:?}", w.cp);
        assert!(w.w.0 <= TOL_W, "region {region:?} w: {:?}", w.w);
    }
    let w3 = compare(Region::R3);
    assert!(w3.n > 50, "region 3: only {} points", w3.n);
    let p3 = region_pressure_r3();
    assert!(p3.0 <= TOL_P3, "region 3 p(rho, T): {p3:?}");
    assert!(w3.h.0 <= TOL_H, "region 3 h: {:?}", w3.h);
    assert!(w3.cp.0 <= TOL_CP, "region 3 cp: {:?}", w3.cp);
    assert!(w3.w.0 <= TOL_W, "region 3 w: {:?}", w3.w);
}

#[test]
fn saturation_pressure_within_the_release_tolerance() {
    let s = saturation();
    assert!(s.0 <= TOL_PS, "saturation pressure: {s:?}");
}

/// Prints the largest deviation per region and quantity (relative; at p MPa, T K).
#[test]
fn report() {
    println!("IF97 vs IAPWS-95: largest relative deviation (value, p MPa, T K)");
    for region in [Region::R1, Region::R2, Region::R3, Region::R5] {
        let w = compare(region);
        println!("region {} ({} points):", region.number(), w.n);
        println!("  v  {:.3e} at {:.6} MPa, {:.2} K", w.v.0, w.v.1, w.v.2);
        println!("  h  {:.3e} at {:.6} MPa, {:.2} K", w.h.0, w.h.1, w.h.2);
        println!("  cp {:.3e} at {:.6} MPa, {:.2} K", w.cp.0, w.cp.1, w.cp.2);
        println!("  w  {:.3e} at {:.6} MPa, {:.2} K", w.w.0, w.w.1, w.w.2);
    }
    let p3 = region_pressure_r3();
    println!(
        "region 3 p(rho, T): {:.3e} at {:.6} MPa, {:.2} K",
        p3.0, p3.1, p3.2
    );
    let s = saturation();
    println!("saturation p: {:.3e} at {:.6} MPa, {:.2} K", s.0, s.1, s.2);
}
