//! Turbines and cycles as plants run them: throttle valve, section efficiencies and the two
//! efficiency conventions, the Baumann moisture loss, the exhaust leaving loss (expansion-line
//! and used-energy end points), mechanical and generator losses, pressure drops in the boiler,
//! reheater and extraction lines, heater drain-cooler approach, drains pumped forward, and a
//! condenser fixed by its cooling water; gross and net output and heat rates.
//!
//! Each feature has a hand calculation (marked "Hand calculation"): the states come from the
//! property core (`ph`, `ps`, `pt`, saturation) and the component functions already checked in
//! `plant_components.rs`, the cycle arithmetic is written out here, independently of
//! `plant::cycle`, with the numbers in the comments (rounded; the assertions use full
//! precision). Mass and energy close to 1e-9; gross less losses is net to the bit.
//! The reproductions of issue 15 (an impossible answer given as a plain number) are here too,
//! through the API as a user sends them; each failed on the code before this change.

use serde_json::{json, Value};
use steamcell::api;
use steamcell::plant::components::*;
use steamcell::plant::cycle::*;
use steamcell::plant::{ph, ps, pt, sat_liquid, sat_vapour};
use steamcell::water::state::{self, State};

const C: f64 = 273.15;

fn near(what: &str, got: f64, want: f64, rel: f64) {
    assert!(
        (got - want).abs() <= rel * want.abs().max(1e-300),
        "{what}: got {got}, want {want} (relative tolerance {rel})"
    );
}

fn call(method: &str, params: Value) -> Value {
    api::call(method, params).unwrap_or_else(|e| panic!("{method}: {}", e.message))
}

fn refused(method: &str, params: Value) -> (i64, String) {
    match api::call(method, params) {
        Ok(v) => panic!("{method} gave a plain answer: {v}"),
        Err(e) => (e.code, e.message),
    }
}

fn f(v: &Value, path: &str) -> f64 {
    let mut cur = v;
    for k in path.split('.') {
        cur = match k.parse::<usize>() {
            Ok(i) => &cur[i],
            Err(_) => &cur[k],
        };
    }
    cur.as_f64()
        .unwrap_or_else(|| panic!("{path} is not a number in {v}"))
}

fn pump_work(inlet: &State, p2: f64, eta: f64) -> f64 {
    (ps(p2, inlet.props.s).unwrap().props.h - inlet.props.h) / eta
}

fn line(inlet: &State, p: f64, eta: f64) -> State {
    let h = inlet.props.h - eta * (inlet.props.h - ps(p, inlet.props.s).unwrap().props.h);
    ph(p, h).unwrap()
}

fn base(pb: f64, tb: f64, pc: f64) -> RankineSpec {
    RankineSpec {
        boiler_p: pb,
        boiler_t: tb + C,
        reheat: None,
        condenser_p: pc,
        turbine_efficiency: 1.0,
        pump_efficiency: 1.0,
        heaters: vec![],
        flow: None,
        net_power: None,
    }
}

fn closes(r: &RankineResult) {
    assert!(
        r.energy_residual < 1e-9,
        "energy residual {}",
        r.energy_residual
    );
    assert!(r.mass_residual < 1e-9, "mass residual {}", r.mass_residual);
}

fn point<'a>(r: &'a RankineResult, label_start: &str) -> &'a State {
    &r.points
        .iter()
        .find(|p| p.label.starts_with(label_start))
        .unwrap_or_else(|| panic!("no point '{label_start}'"))
        .state
}

// ------------------------------------------------------------------ turbines

/// Hand calculation, throttle valve: 10 MPa, 500 degC, throttled by 0.5 MPa, then expanded at
/// 85 % to 1 MPa.
/// h1 = 3375.06 kJ/kg, s1 = 6.5993 kJ/(kg K); after the valve (9.5 MPa, same h) T = 497.60 degC,
/// s = 6.6211; isentropic to 1 MPa from there h2s = 2793.61, so h2 = 3375.06 - 0.85 (3375.06 -
/// 2793.61) = 2880.83 kJ/kg. From the stop valve (s1) h2s = 2783.63, so the efficiency with the
/// valve is (3375.06 - 2880.83) / (3375.06 - 2783.63) = 0.8357: the valve costs 1.4 points.
/// The same outlet comes from valve.throttle followed by turbine.expand.
#[test]
fn throttle_valve_hand_calculation() {
    let inlet = pt(10.0, 500.0 + C).unwrap();
    let opts = TurbineOptions {
        throttle_dp: 0.5,
        ..Default::default()
    };
    let ex = turbine_expand_with(
        &inlet,
        1.0,
        TurbineSpec::Efficiency(0.85),
        Some(20.0),
        &opts,
    )
    .unwrap();
    let h1 = inlet.props.h;
    let ti = ph(9.5, h1).unwrap();
    let h2s = ps(1.0, ti.props.s).unwrap().props.h;
    let h2 = h1 - 0.85 * (h1 - h2s);
    // (the valve outlet is solved from (p, h); its h comes back to about 1e-12)
    near("outlet h", ex.outlet.props.h, h2, 1e-11);
    near("turbine inlet p", ex.turbine_inlet.props.p, 9.5, 1e-15);
    near(
        "turbine inlet T",
        ex.turbine_inlet.props.t,
        497.5959 + C,
        1e-7,
    );
    let h2s0 = ps(1.0, inlet.props.s).unwrap().props.h;
    let with_valve = ex.efficiency_with_valve.unwrap();
    near(
        "efficiency with valve",
        with_valve,
        (h1 - h2) / (h1 - h2s0),
        1e-10,
    );
    near("efficiency with valve (printed)", with_valve, 0.83567, 1e-5);
    assert_eq!(ex.efficiency, 0.85);
    near("isentropic work", ex.isentropic_work, h1 - h2s, 1e-11);
    // the same as a let-down valve then a turbine
    let v = valve_throttle(&inlet, 9.5, None).unwrap();
    let t = turbine_expand(&v.outlet, 1.0, TurbineSpec::Efficiency(0.85), None).unwrap();
    near(
        "valve then turbine",
        t.outlet.props.h,
        ex.outlet.props.h,
        1e-12,
    );
    assert!(ex.balance.energy_residual() < 1e-12 && ex.balance.mass_residual() == 0.0);
}

/// Hand calculation, Baumann rule, superheated inlet: 1 MPa, 250 degC (h1 = 2943.22, s1 =
/// 6.9266) to 10 kPa at a dry efficiency of 0.85, factor 1.
/// The dry line h(p) = h1 - 0.85 (h1 - h_s(p)) ends at h_d2 = 2306.41 kJ/kg (x = 0.884) and
/// meets the saturated-vapour line at p_x = 0.27214 MPa, h_A = 2720.41 = h_g(p_x). Its wet part
/// does W = h_A - h_d2 = 413.99 kJ/kg dry; with moisture it does (1 - (0 + y2) / 2) W, and
/// y2 = (h_g2 - h2) / h_fg2 (h_g2 = 2583.89, h_fg2 = 2392.07), so
/// y2 = (h_g2 - h_A + W) / (h_fg2 + W / 2) = (2583.89 - 2720.41 + 413.99) / (2392.07 + 207.00)
///    = 0.10676;
/// h2 = 2720.41 - (1 - 0.05338) x 413.99 = 2328.51 kJ/kg against the dry line's 2306.41:
/// 22.1 kJ/kg lost, overall efficiency 0.8205 instead of 0.85.
#[test]
fn baumann_superheated_inlet_hand_calculation() {
    let inlet = pt(1.0, 250.0 + C).unwrap();
    let opts = TurbineOptions {
        baumann: Some(1.0),
        ..Default::default()
    };
    let ex = turbine_expand_with(&inlet, 0.01, TurbineSpec::Efficiency(0.85), None, &opts).unwrap();
    let m = ex.moisture_loss.unwrap();
    let px = m.wet_from_p.unwrap();
    near("p_x (printed)", px, 0.272136, 1e-5);
    // the dry line is on the saturated-vapour line at p_x
    let h_a = inlet.props.h - 0.85 * (inlet.props.h - ps(px, inlet.props.s).unwrap().props.h);
    assert!(
        (h_a - sat_vapour(px).unwrap().props.h).abs() < 1e-6,
        "dry line at p_x: {h_a} vs h_g {}",
        sat_vapour(px).unwrap().props.h
    );
    let h_d2 = inlet.props.h - 0.85 * (inlet.props.h - ps(0.01, inlet.props.s).unwrap().props.h);
    let w = h_a - h_d2;
    let (hg2, hf2) = (
        sat_vapour(0.01).unwrap().props.h,
        sat_liquid(0.01).unwrap().props.h,
    );
    let y2 = (hg2 - h_a + w) / (hg2 - hf2 + w / 2.0);
    let h2 = h_a - (1.0 - y2 / 2.0) * w;
    near("end h", ex.outlet.props.h, h2, 1e-11);
    near("end moisture", m.end_moisture, y2, 1e-9);
    near("end moisture (printed)", y2, 0.10676, 1e-4);
    near(
        "wet efficiency",
        m.wet_efficiency,
        0.85 * (1.0 - y2 / 2.0),
        1e-12,
    );
    near("h2 (printed)", h2, 2328.512, 1e-6);
    near("overall efficiency (printed)", m.efficiency, 0.8205, 1e-4);
    let dry = turbine_expand(&inlet, 0.01, TurbineSpec::Efficiency(0.85), None).unwrap();
    near("work lost", m.work_lost, h2 - dry.outlet.props.h, 1e-9);
    near("work lost (printed)", m.work_lost, 22.1, 1e-2);
    near(
        "overall efficiency",
        m.efficiency,
        (inlet.props.h - h2) / (inlet.props.h - ps(0.01, inlet.props.s).unwrap().props.h),
        1e-12,
    );
    assert_eq!(
        ex.efficiency, 0.85,
        "the efficiency given is reported as given"
    );
    // factor 0: the dry expansion exactly
    let zero = turbine_expand_with(
        &inlet,
        0.01,
        TurbineSpec::Efficiency(0.85),
        None,
        &TurbineOptions {
            baumann: Some(0.0),
            ..Default::default()
        },
    )
    .unwrap();
    near("factor 0", zero.outlet.props.h, dry.outlet.props.h, 1e-12);
    // a dry expansion has no moisture loss
    let dry_end =
        turbine_expand_with(&inlet, 0.3, TurbineSpec::Efficiency(0.85), None, &opts).unwrap();
    let md = dry_end.moisture_loss.unwrap();
    assert!(md.wet_from_p.is_none() && md.work_lost == 0.0 && md.mean_moisture == 0.0);
}

/// Hand calculation, Baumann rule, wet inlet: 0.2 MPa, x = 0.95 (h1 = 2596.16, s1 = 6.8470, y_a
/// = 0.05) to 10 kPa at 0.80, factor 1: the whole expansion is wet, h_2s = 2168.64, dh_s =
/// 427.52; y2 = (h_g2 - h1 + 0.8 dh_s (1 - 0.05 / 2)) / (h_fg2 + 0.8 dh_s / 2) = 0.12531; mean
/// moisture 0.08766, efficiency 0.8 (1 - 0.08766) = 0.72987, h2 = 2596.16 - 0.72987 x 427.52 =
/// 2284.13 kJ/kg.
#[test]
fn baumann_wet_inlet_hand_calculation() {
    let inlet = state::at_px(0.2, 0.95).unwrap();
    let ex = turbine_expand_with(
        &inlet,
        0.01,
        TurbineSpec::Efficiency(0.8),
        None,
        &TurbineOptions {
            baumann: Some(1.0),
            ..Default::default()
        },
    )
    .unwrap();
    let dh = inlet.props.h - ps(0.01, inlet.props.s).unwrap().props.h;
    let (hg2, hf2) = (
        sat_vapour(0.01).unwrap().props.h,
        sat_liquid(0.01).unwrap().props.h,
    );
    let ya = 1.0 - 0.95;
    let y2 = (hg2 - inlet.props.h + 0.8 * dh * (1.0 - ya / 2.0)) / (hg2 - hf2 + 0.8 * dh / 2.0);
    let eta = 0.8 * (1.0 - (ya + y2) / 2.0);
    near("end h", ex.outlet.props.h, inlet.props.h - eta * dh, 1e-11);
    near("end h (printed)", ex.outlet.props.h, 2284.13, 1e-6);
    let m = ex.moisture_loss.unwrap();
    near("mean moisture", m.mean_moisture, (ya + y2) / 2.0, 1e-12);
    assert_eq!(m.wet_from_p, Some(0.2));
}

/// Hand calculation, leaving loss: 0.5 MPa, 250 degC (h1 = 2961.13) to 8 kPa at 0.88, 60 kg/s
/// through a 12 m2 annulus. The expansion-line end point is h = 2358.03 kJ/kg, v = 16.4555
/// m3/kg; V = 60 x 16.4555 / 12 = 82.28 m/s; the leaving loss V^2/2 = 3.3848 kJ/kg; the
/// used-energy end point h = 2358.03 + 3.38 = 2361.41 kJ/kg; work 2961.13 - 2361.41 = 599.72
/// kJ/kg, 35 983 kW, of which 60 x 3.3848 = 203.1 kW left in the exhaust.
#[test]
fn leaving_loss_hand_calculation() {
    let inlet = pt(0.5, 250.0 + C).unwrap();
    let opts = TurbineOptions {
        exhaust_area: Some(12.0),
        ..Default::default()
    };
    let ex = turbine_expand_with(
        &inlet,
        0.008,
        TurbineSpec::Efficiency(0.88),
        Some(60.0),
        &opts,
    )
    .unwrap();
    let elep = line(&inlet, 0.008, 0.88);
    let v = 60.0 * elep.props.v / 12.0;
    let loss = v * v / 2.0 / 1000.0;
    let l = ex.leaving.unwrap();
    near("ELEP", l.expansion_line_end.props.h, elep.props.h, 1e-12);
    near("velocity", l.velocity, v, 1e-12);
    near("velocity (printed)", v, 82.2776, 1e-5);
    near("loss", l.loss, loss, 1e-12);
    near(
        "UEEP",
        l.used_energy_end.props.h,
        elep.props.h + loss,
        1e-12,
    );
    near(
        "outlet is the UEEP",
        ex.outlet.props.h,
        elep.props.h + loss,
        1e-12,
    );
    near(
        "power",
        ex.power.unwrap(),
        60.0 * (inlet.props.h - elep.props.h - loss),
        1e-11,
    );
    near("leaving power", l.power, 60.0 * loss, 1e-12);
    assert!(ex.balance.energy_residual() < 1e-12);
    assert!(ex.warnings.is_empty(), "{:?}", ex.warnings);
    // A small annulus: 450 m/s and a warning naming the velocity.
    let small = turbine_expand_with(
        &inlet,
        0.008,
        TurbineSpec::Efficiency(0.88),
        Some(60.0),
        &TurbineOptions {
            exhaust_area: Some(2.0),
            ..Default::default()
        },
    )
    .unwrap();
    assert!(small.leaving.unwrap().velocity > 300.0);
    assert!(
        small.warnings.iter().any(|w| w.code
            == steamcell::plant::warnings::Code::ExhaustVelocityHigh
            && w.message.contains("annulus velocity")),
        "{:?}",
        small.warnings
    );
}

/// Hand calculation, drive losses: 20 kg/s, internal power P = 20 w; a mechanical efficiency of
/// 0.99 takes 0.01 P, a fixed generator loss 300 kW; gross = (P - 0.01 P) - 300, to the bit.
#[test]
fn drive_losses_hand_calculation() {
    let inlet = pt(4.0, 400.0 + C).unwrap();
    let opts = TurbineOptions {
        mechanical: DriveLoss::Efficiency(0.99),
        generator: DriveLoss::Fixed(300.0),
        ..Default::default()
    };
    let ex =
        turbine_expand_with(&inlet, 0.5, TurbineSpec::Efficiency(0.8), Some(20.0), &opts).unwrap();
    let d = ex.drive.unwrap();
    let p = 20.0 * ex.specific_work;
    assert_eq!(d.internal_power, p);
    assert_eq!(d.mechanical_loss, p * (1.0 - 0.99));
    assert_eq!(d.shaft_power, p - p * (1.0 - 0.99));
    assert_eq!(d.generator_loss, 300.0);
    assert_eq!(
        d.internal_power - d.mechanical_loss - d.generator_loss,
        d.gross_power
    );
    assert_eq!(ex.power, Some(p), "power stays the internal power");
}

/// Hand calculation, the two efficiency conventions in a train: 6 MPa, 480 degC, 25 kg/s;
/// HP stages to 2 and 0.5 MPa at 0.85 and 0.86, LP stages to 50 and 10 kPa at 0.88.
/// Section basis: each outlet on the line from its section's inlet, h = h_in - eta (h_in -
/// h_s(p, s_in)); the stage's own efficiency follows. Stage basis: each from its own inlet; the
/// section then does better than its stages (the reheat factor), here the LP section.
#[test]
fn efficiency_conventions_in_a_train_hand_calculation() {
    let inlet = pt(6.0, 480.0 + C).unwrap();
    let stages = [
        StageSpec {
            outlet_p: 2.0,
            efficiency: 0.85,
            extraction: 2.0,
        },
        StageSpec {
            outlet_p: 0.5,
            efficiency: 0.86,
            extraction: 3.0,
        },
        StageSpec {
            outlet_p: 0.05,
            efficiency: 0.88,
            extraction: 0.0,
        },
        StageSpec {
            outlet_p: 0.01,
            efficiency: 0.88,
            extraction: 0.0,
        },
    ];
    let sections: Vec<String> = ["HP", "HP", "LP", "LP"].map(String::from).to_vec();
    let sec = turbine_train_with(
        &inlet,
        25.0,
        &stages,
        &TrainOptions {
            basis: EfficiencyBasis::Section,
            sections: sections.clone(),
            turbine: TurbineOptions::default(),
        },
    )
    .unwrap();
    let s1 = line(&inlet, 2.0, 0.85);
    let s2 = line(&inlet, 0.5, 0.86);
    let s3 = line(&s2, 0.05, 0.88);
    let s4 = line(&s2, 0.01, 0.88);
    for (i, want) in [s1, s2, s3, s4].iter().enumerate() {
        near(
            &format!("section basis stage {}", i + 1),
            sec.stages[i].expansion.outlet.props.h,
            want.props.h,
            1e-12,
        );
        assert_eq!(sec.stages[i].section_efficiency, stages[i].efficiency);
    }
    // stage 2's own efficiency, from s1: (h1 - h2) / (h1 - h_s(0.5, s1))
    let own2 = (s1.props.h - s2.props.h) / (s1.props.h - ps(0.5, s1.props.s).unwrap().props.h);
    near(
        "stage 2 own efficiency",
        sec.stages[1].stage_efficiency,
        own2,
        1e-12,
    );
    // a stage of an expansion line does worse than the line from the section inlet (the
    // reheat factor): 0.834 here against 0.86
    assert!(own2 < 0.86, "{own2}");
    assert_eq!(sec.basis, EfficiencyBasis::Section);
    assert_eq!(sec.sections.len(), 2);
    near(
        "LP section efficiency",
        sec.sections[1].efficiency,
        0.88,
        1e-12,
    );
    // Stage basis: each from its own inlet.
    let stg = turbine_train_with(
        &inlet,
        25.0,
        &stages,
        &TrainOptions {
            basis: EfficiencyBasis::Stage,
            sections,
            turbine: TurbineOptions::default(),
        },
    )
    .unwrap();
    let t3 = line(&stg.stages[1].expansion.outlet, 0.05, 0.88);
    let t4 = line(&t3, 0.01, 0.88);
    near(
        "stage basis stage 4",
        stg.stages[3].expansion.outlet.props.h,
        t4.props.h,
        1e-12,
    );
    assert!(stg.sections[1].efficiency > 0.88, "reheat factor");
    assert!(t4.props.h < s4.props.h);
    assert_eq!(stg.stages[3].stage_efficiency, 0.88);
    for t in [&sec, &stg] {
        assert!(t.balance.energy_residual() < 1e-12 && t.balance.mass_residual() < 1e-15);
    }
}

/// The train under the section basis follows the same expansion line as `cycle.rankine`'s
/// default: extraction states of a one-section cycle equal the train's stage outlets.
#[test]
fn train_section_basis_matches_the_cycle_line() {
    let mut s = base(10.0, 520.0, 0.008);
    s.turbine_efficiency = 0.86;
    s.heaters = vec![
        HeaterSpec {
            p: 2.0,
            kind: HeaterKind::Closed,
            ttd: 0.0,
        },
        HeaterSpec {
            p: 0.4,
            kind: HeaterKind::Open,
            ttd: 0.0,
        },
    ];
    for basis in [EfficiencyBasis::Section, EfficiencyBasis::Stage] {
        let r = rankine_plant(
            &s,
            &RankinePlant {
                efficiency_basis: basis,
                ..Default::default()
            },
        )
        .unwrap();
        let inlet = pt(10.0, 520.0 + C).unwrap();
        let stages: Vec<StageSpec> = [2.0, 0.4, 0.008]
            .iter()
            .map(|&p| StageSpec {
                outlet_p: p,
                efficiency: 0.86,
                extraction: 0.0,
            })
            .collect();
        let t = turbine_train_with(
            &inlet,
            1.0,
            &stages,
            &TrainOptions {
                basis,
                ..Default::default()
            },
        )
        .unwrap();
        for (x, st) in r.extractions.iter().zip(&t.stages) {
            near(
                "extraction h",
                x.state.props.h,
                st.expansion.outlet.props.h,
                1e-12,
            );
        }
        near(
            "exhaust",
            point(&r, "turbine exhaust").props.h,
            t.stages[2].expansion.outlet.props.h,
            1e-12,
        );
        assert_eq!(r.efficiency_basis, basis);
        closes(&r);
    }
}

// ------------------------------------------------------------------ cycles

/// Hand calculation, sections: 16 MPa, 540 degC; reheat at 3.5 MPa to 540 degC; crossover
/// 0.5 MPa; 6 kPa; HP 0.86, IP 0.91, LP 0.89; pumps 0.8.
/// w_t = (h_thr - h_cold) + (h_hot - h_x) + (h_x - h_exh); w_p = (h_s(16, s_f) - h_f) / 0.8;
/// q_in = (h_thr - h_f - w_p) + (h_hot - h_cold).
#[test]
fn section_efficiencies_hand_calculation() {
    let mut s = base(16.0, 540.0, 0.006);
    s.reheat = Some((3.5, 540.0 + C));
    s.pump_efficiency = 0.8;
    let plant = RankinePlant {
        crossover_p: Some(0.5),
        hp_efficiency: Some(0.86),
        ip_efficiency: Some(0.91),
        lp_efficiency: Some(0.89),
        ..Default::default()
    };
    let r = rankine_plant(&s, &plant).unwrap();
    let thr = pt(16.0, 540.0 + C).unwrap();
    let cold = line(&thr, 3.5, 0.86);
    let hot = pt(3.5, 540.0 + C).unwrap();
    let x = line(&hot, 0.5, 0.91);
    let exh = line(&x, 0.006, 0.89);
    let cond = sat_liquid(0.006).unwrap();
    let wp = pump_work(&cond, 16.0, 0.8);
    let wt = (thr.props.h - cold.props.h) + (hot.props.h - x.props.h) + (x.props.h - exh.props.h);
    let qin = (thr.props.h - (cond.props.h + wp)) + (hot.props.h - cold.props.h);
    near("turbine work", r.turbine_work, wt, 1e-9);
    near("pump work", r.pump_work, wp, 1e-9);
    near("heat input", r.heat_input, qin, 1e-9);
    near("efficiency", r.thermal_efficiency, (wt - wp) / qin, 1e-9);
    let names: Vec<&str> = r.sections.iter().map(|s| s.name).collect();
    assert_eq!(names, ["HP", "IP", "LP"]);
    near("IP work", r.sections[1].work, hot.props.h - x.props.h, 1e-9);
    near(
        "LP expansion efficiency",
        r.sections[2].expansion_efficiency,
        0.89,
        1e-9,
    );
    near(
        "crossover",
        point(&r, "crossover").props.h,
        x.props.h,
        1e-12,
    );
    assert!(point(&r, "hot reheat (intermediate-pressure").props.p == 3.5);
    closes(&r);
}

/// Hand calculation, pressure drops: 10 MPa, 500 degC at the boiler outlet; throttle valve
/// 0.3 MPa (turbine inlet 9.7 MPa, same h); boiler 0.8 MPa (feed pump to 10.8 MPa); reheat at
/// 2 MPa to 500 degC with 0.2 MPa lost (hot reheat at 1.8 MPa); one open heater extracted at
/// 0.6 MPa with 0.03 MPa lost in the line (shell 0.57 MPa); 10 kPa; turbine 0.87, pumps 0.8.
/// Open heater: y h_shell + (1 - y) h_p1 = h_f(0.57), so y = (h_f - h_p1) / (h_shell - h_p1);
/// w_t = (h_ti - h_cold) + (h_hot - h_e) + (1 - y)(h_e - h_exh);
/// w_p = (1 - y) w_p1 + w_p2; q_in = (h_thr - h_p2) + (h_hot - h_cold).
#[test]
fn pressure_drops_hand_calculation() {
    let mut s = base(10.0, 500.0, 0.01);
    s.reheat = Some((2.0, 500.0 + C));
    s.turbine_efficiency = 0.87;
    s.pump_efficiency = 0.8;
    s.heaters = vec![HeaterSpec {
        p: 0.6,
        kind: HeaterKind::Open,
        ttd: 0.0,
    }];
    let plant = RankinePlant {
        throttle_dp: 0.3,
        boiler_dp: 0.8,
        reheat_dp: 0.2,
        heaters: vec![HeaterPlant {
            line_dp: 0.03,
            ..Default::default()
        }],
        ..Default::default()
    };
    let r = rankine_plant(&s, &plant).unwrap();
    let thr = pt(10.0, 500.0 + C).unwrap();
    let ti = ph(9.7, thr.props.h).unwrap();
    let cold = line(&ti, 2.0, 0.87);
    let hot = pt(1.8, 500.0 + C).unwrap();
    let e = line(&hot, 0.6, 0.87);
    let shell = ph(0.57, e.props.h).unwrap();
    let exh = line(&hot, 0.01, 0.87);
    let cond = sat_liquid(0.01).unwrap();
    let wp1 = pump_work(&cond, 0.57, 0.8);
    let fo = sat_liquid(0.57).unwrap();
    let wp2 = pump_work(&fo, 10.8, 0.8);
    let hp1 = cond.props.h + wp1;
    let y = (fo.props.h - hp1) / (shell.props.h - hp1);
    let wt = (ti.props.h - cold.props.h)
        + (hot.props.h - e.props.h)
        + (1.0 - y) * (e.props.h - exh.props.h);
    let wp = (1.0 - y) * wp1 + wp2;
    let qin = (thr.props.h - (fo.props.h + wp2)) + (hot.props.h - cold.props.h);
    near("y", r.extractions[0].fraction, y, 1e-9);
    near("turbine work", r.turbine_work, wt, 1e-9);
    near("pump work", r.pump_work, wp, 1e-9);
    near("heat input", r.heat_input, qin, 1e-9);
    near(
        "turbine inlet p",
        point(&r, "turbine inlet after").props.p,
        9.7,
        1e-15,
    );
    near("hot reheat p", point(&r, "hot reheat").props.p, 1.8, 1e-15);
    near(
        "shell p",
        point(&r, "extraction steam at the shell").props.p,
        0.57,
        1e-15,
    );
    near(
        "feed pump outlet p",
        point(&r, "pump 2 outlet").props.p,
        10.8,
        1e-15,
    );
    near(
        "boiler inlet p",
        point(&r, "feedwater entering").props.p,
        10.8,
        1e-15,
    );
    near(
        "shell p in extraction",
        r.extractions[0].shell_p,
        0.57,
        1e-15,
    );
    closes(&r);
}

/// Hand calculation, drain-cooler approach: 8 MPa, 480 degC; 8 kPa; one closed heater extracted
/// at 0.3 MPa, TTD 2.8 K, DCA 5.6 K, drain cascaded to the condenser; turbine 0.85, pump 0.8.
/// Feedwater from the pump (8 MPa) at T_in; leaves at T_sat(0.3 MPa) - 2.8 K; the drain leaves
/// at T_in + 5.6 K, subcooled at 0.3 MPa: y = (h_fo - h_fi) / (h_e - h_drain); condenser
/// q_out = (1 - y) h_exh + y h_drain - h_f(8 kPa).
#[test]
fn drain_cooler_approach_hand_calculation() {
    let mut s = base(8.0, 480.0, 0.008);
    s.turbine_efficiency = 0.85;
    s.pump_efficiency = 0.8;
    s.heaters = vec![HeaterSpec {
        p: 0.3,
        kind: HeaterKind::Closed,
        ttd: 2.8,
    }];
    let plant = RankinePlant {
        heaters: vec![HeaterPlant {
            dca: Some(5.6),
            ..Default::default()
        }],
        ..Default::default()
    };
    let r = rankine_plant(&s, &plant).unwrap();
    let thr = pt(8.0, 480.0 + C).unwrap();
    let e = line(&thr, 0.3, 0.85);
    let exh = line(&thr, 0.008, 0.85);
    let cond = sat_liquid(0.008).unwrap();
    let fi = ph(8.0, cond.props.h + pump_work(&cond, 8.0, 0.8)).unwrap();
    let tsat = state::saturation_p(0.3).unwrap().0;
    let fo = pt(8.0, tsat - 2.8).unwrap();
    let drain = pt(0.3, fi.props.t + 5.6).unwrap();
    let y = (fo.props.h - fi.props.h) / (e.props.h - drain.props.h);
    near("y", r.extractions[0].fraction, y, 1e-9);
    near(
        "drain T",
        r.extractions[0].drain.unwrap().props.t,
        fi.props.t + 5.6,
        1e-12,
    );
    let qout = (1.0 - y) * exh.props.h + y * drain.props.h - cond.props.h;
    near("heat rejected", r.heat_rejected, qout, 1e-9);
    // without the drain cooler the drain leaves saturated and more steam is needed
    let plain = rankine(&s).unwrap();
    assert!(plain.extractions[0].fraction > y);
    assert!(r.thermal_efficiency > plain.thermal_efficiency);
    closes(&r);
}

/// Hand calculation, a drain pumped forward (the highest heater): 15 MPa, 600 degC; reheat at
/// 4 MPa to 600 degC; 10 kPa; closed heater extracted at 4 MPa (cold reheat), TTD 0, its drain
/// pumped to 15 MPa and mixed after it; open heater at 0.5 MPa; turbine 0.9, pumps 0.85.
/// Closed heater: y (h_e1 - h_d) = (1 - y)(h_fo - h_p2), so
/// y = (h_fo - h_p2) / ((h_e1 - h_d) + (h_fo - h_p2)); open heater:
/// z = (1 - y)(h_f(0.5) - h_p1) / (h_e2 - h_p1); boiler inlet h_m = (1 - y) h_fo + y h_dp;
/// w_t = (h_thr - h_cold) + (1 - y)(h_hot - h_e2) + (1 - y - z)(h_e2 - h_exh);
/// w_p = (1 - y - z) w_p1 + (1 - y) w_p2 + y w_dp; q_in = (h_thr - h_m) + (1 - y)(h_hot - h_cold).
#[test]
fn drain_pumped_forward_hand_calculation() {
    let mut s = base(15.0, 600.0, 0.01);
    s.reheat = Some((4.0, 600.0 + C));
    s.turbine_efficiency = 0.9;
    s.pump_efficiency = 0.85;
    s.heaters = vec![
        HeaterSpec {
            p: 4.0,
            kind: HeaterKind::Closed,
            ttd: 0.0,
        },
        HeaterSpec {
            p: 0.5,
            kind: HeaterKind::Open,
            ttd: 0.0,
        },
    ];
    let plant = RankinePlant {
        heaters: vec![
            HeaterPlant {
                drain: DrainMode::PumpForward,
                ..Default::default()
            },
            HeaterPlant::default(),
        ],
        ..Default::default()
    };
    let r = rankine_plant(&s, &plant).unwrap();
    let thr = pt(15.0, 600.0 + C).unwrap();
    let cold = line(&thr, 4.0, 0.9);
    let hot = pt(4.0, 600.0 + C).unwrap();
    let e2 = line(&hot, 0.5, 0.9);
    let exh = line(&hot, 0.01, 0.9);
    let cond = sat_liquid(0.01).unwrap();
    let wp1 = pump_work(&cond, 0.5, 0.85);
    let f5 = sat_liquid(0.5).unwrap();
    let wp2 = pump_work(&f5, 15.0, 0.85);
    let hp1 = cond.props.h + wp1;
    let hp2 = f5.props.h + wp2;
    let d = sat_liquid(4.0).unwrap();
    let wdp = pump_work(&d, 15.0, 0.85);
    let fo = pt(15.0, state::saturation_p(4.0).unwrap().0).unwrap();
    let y = (fo.props.h - hp2) / ((cold.props.h - d.props.h) + (fo.props.h - hp2));
    let z = (1.0 - y) * (f5.props.h - hp1) / (e2.props.h - hp1);
    let hm = (1.0 - y) * fo.props.h + y * (d.props.h + wdp);
    let wt = (thr.props.h - cold.props.h)
        + (1.0 - y) * (hot.props.h - e2.props.h)
        + (1.0 - y - z) * (e2.props.h - exh.props.h);
    let wp = (1.0 - y - z) * wp1 + (1.0 - y) * wp2 + y * wdp;
    let qin = (thr.props.h - hm) + (1.0 - y) * (hot.props.h - cold.props.h);
    near("y", r.extractions[0].fraction, y, 1e-9);
    near("z", r.extractions[1].fraction, z, 1e-9);
    near(
        "boiler inlet",
        point(&r, "feedwater entering").props.h,
        hm,
        1e-9,
    );
    near("turbine work", r.turbine_work, wt, 1e-9);
    near("pump work", r.pump_work, wp, 1e-9);
    near("heat input", r.heat_input, qin, 1e-9);
    near(
        "drain pump outlet",
        point(&r, "drain pump outlet").props.h,
        d.props.h + wdp,
        1e-9,
    );
    assert_eq!(r.extractions[0].drain_mode, Some(DrainMode::PumpForward));
    closes(&r);
}

/// A drain pumped forward from a heater below another closed heater: the mixed feedwater is the
/// next heater's inlet, found by iteration. Checked: the mixing balance of the result's states
/// and flows holds, and mass and energy close.
#[test]
fn drain_pumped_forward_into_a_lower_segment_closes() {
    let mut s = base(12.0, 540.0, 0.008);
    s.reheat = Some((2.5, 540.0 + C));
    s.turbine_efficiency = 0.87;
    s.pump_efficiency = 0.82;
    s.flow = Some(100.0);
    let h = |p, kind, ttd| HeaterSpec { p, kind, ttd };
    s.heaters = vec![
        h(4.0, HeaterKind::Closed, -1.5),
        h(2.5, HeaterKind::Closed, 0.0),
        h(0.9, HeaterKind::Open, 0.0),
        h(0.3, HeaterKind::Closed, 2.8),
        h(0.12, HeaterKind::Closed, 2.8),
        h(0.04, HeaterKind::Closed, 2.8),
    ];
    let plant = RankinePlant {
        heaters: vec![
            HeaterPlant {
                dca: Some(5.6),
                ..Default::default()
            },
            HeaterPlant {
                dca: Some(5.6),
                line_dp: 0.1,
                ..Default::default()
            },
            HeaterPlant {
                line_dp: 0.03,
                ..Default::default()
            },
            HeaterPlant::default(),
            HeaterPlant {
                drain: DrainMode::PumpForward,
                dca: Some(5.6),
                ..Default::default()
            },
            HeaterPlant::default(),
        ],
        ..Default::default()
    };
    let r = rankine_plant(&s, &plant).unwrap();
    closes(&r);
    // heater at 0.12 MPa pumps forward: it takes its own extraction and the 0.3 MPa heater's
    // cascaded drain; the 0.04 MPa heater's drain goes to the condenser
    let x = &r.extractions;
    near(
        "drain flow",
        x[4].drain_fraction.unwrap(),
        x[4].fraction + x[3].fraction,
        1e-12,
    );
    near(
        "drain to condenser",
        x[5].drain_fraction.unwrap(),
        x[5].fraction,
        1e-12,
    );
    // mixing: (tube flow) h_fo + D h_pumped = (tube flow + D) h_mix, tube flow = segment flow
    // (1 - extractions at and above the 0.9 MPa heater) less D
    let seg = 1.0 - x[0].fraction - x[1].fraction - x[2].fraction;
    let d = x[4].drain_fraction.unwrap();
    let fo = point(&r, "feedwater leaving closed heater at 0.12").props.h;
    let pumped = point(&r, "drain pump outlet").props.h;
    let mix = point(&r, "feedwater after mixing").props.h;
    near("mixing", (seg - d) * fo + d * pumped, seg * mix, 1e-11);
    // the desuperheating zone of the -1.5 K heater is paid for by the extraction's superheat
    assert!(x[0].state.props.t > x[0].feedwater_out.props.t);
    assert!(r.warnings.is_empty(), "{:?}", r.warnings);
}

/// Hand calculation, condenser from cooling water (rise): water at 20 degC warmed by 10 K, TTD
/// 3 K, so the steam condenses at 33 degC, p_c = p_sat(306.15 K) = 5.0351 kPa. The cycle is the
/// one with that condenser pressure given; the cooling-water flow is the duty over
/// h(30 degC) - h(20 degC).
#[test]
fn condenser_from_cooling_water_rise_hand_calculation() {
    let mut s = base(10.0, 520.0, 0.0);
    s.turbine_efficiency = 0.86;
    s.pump_efficiency = 0.8;
    s.flow = Some(80.0);
    let cw = CoolingWater {
        inlet_t: 20.0 + C,
        flow: None,
        rise: Some(10.0),
        ttd: 3.0,
        p: 0.2,
    };
    let r = rankine_plant(
        &s,
        &RankinePlant {
            cooling_water: Some(cw),
            ..Default::default()
        },
    )
    .unwrap();
    let pc = state::saturation_t(33.0 + C).unwrap().0;
    near("condenser p (printed)", pc, 0.0050351, 1e-4);
    let mut fixed = s.clone();
    fixed.condenser_p = pc;
    let g = rankine(&fixed).unwrap();
    assert_eq!(r.thermal_efficiency, g.thermal_efficiency);
    assert_eq!(r.heat_rejected, g.heat_rejected);
    let c = r.condenser.unwrap();
    near("p", c.p, pc, 1e-15);
    let dh = pt(0.2, 30.0 + C).unwrap().props.h - pt(0.2, 20.0 + C).unwrap().props.h;
    near(
        "cw flow",
        c.cw_flow.unwrap(),
        80.0 * g.heat_rejected / dh,
        1e-12,
    );
    near("duty", c.duty.unwrap(), 80.0 * g.heat_rejected, 1e-12);
    closes(&r);
}

/// Condenser from cooling water (flow): the condensing temperature found is the cooling water's
/// outlet plus the TTD, and the water's enthalpy rise carries the duty, to 1e-9.
#[test]
fn condenser_from_cooling_water_flow_is_a_fixed_point() {
    let mut s = base(12.0, 540.0, 0.0);
    s.reheat = Some((3.0, 540.0 + C));
    s.turbine_efficiency = 0.87;
    s.net_power = Some(150_000.0);
    s.heaters = vec![HeaterSpec {
        p: 0.7,
        kind: HeaterKind::Open,
        ttd: 0.0,
    }];
    let cw = CoolingWater {
        inlet_t: 18.0 + C,
        flow: Some(6000.0),
        rise: None,
        ttd: 2.8,
        p: 0.2,
    };
    let r = rankine_plant(
        &s,
        &RankinePlant {
            cooling_water: Some(cw),
            ..Default::default()
        },
    )
    .unwrap();
    let c = r.condenser.unwrap();
    let t_sat = state::saturation_p(r.condenser_p).unwrap().0;
    near("T_sat", c.t_sat, t_sat, 1e-9);
    near("TTD", t_sat - c.cw_outlet_t, 2.8, 1e-7);
    let dh = pt(0.2, c.cw_outlet_t).unwrap().props.h - pt(0.2, 18.0 + C).unwrap().props.h;
    near("duty", 6000.0 * dh, r.flow.unwrap() * r.heat_rejected, 1e-9);
    near("net power", r.net_power.unwrap(), 150_000.0, 1e-12);
    assert!(c.iterations > 1 && c.iterations < 50, "{}", c.iterations);
    closes(&r);
}

/// Hand calculation, gross and net: 100 kg/s; internal power P = 100 w_t; mechanical 0.99,
/// generator 0.985, station load 2000 kW; pumps 100 w_p.
/// shaft = P - 0.01 P, gross = shaft - 0.015 shaft, net = gross - pumps - 2000, to the bit;
/// heat rates 3600 Q / gross and 3600 Q / net with Q = 100 q_in.
#[test]
fn gross_and_net_hand_calculation() {
    let mut s = base(12.0, 540.0, 0.008);
    s.turbine_efficiency = 0.87;
    s.pump_efficiency = 0.8;
    s.flow = Some(100.0);
    let plant = RankinePlant {
        mechanical: DriveLoss::Efficiency(0.99),
        generator: DriveLoss::Efficiency(0.985),
        auxiliary_power: 2000.0,
        ..Default::default()
    };
    let r = rankine_plant(&s, &plant).unwrap();
    let p = r.power.unwrap();
    let internal = 100.0 * r.turbine_work;
    assert_eq!(p.turbine_power, internal);
    assert_eq!(p.mechanical_loss, internal * (1.0 - 0.99));
    assert_eq!(p.shaft_power, internal - p.mechanical_loss);
    assert_eq!(p.generator_loss, p.shaft_power * (1.0 - 0.985));
    assert_eq!(p.gross_power, p.shaft_power - p.generator_loss);
    assert_eq!(p.pump_power, 100.0 * r.pump_work);
    assert_eq!(
        p.turbine_power - p.mechanical_loss - p.generator_loss - p.pump_power - p.auxiliary_power,
        p.net_power
    );
    assert_eq!(r.net_power, Some(p.net_power));
    let q = 100.0 * r.heat_input;
    near(
        "gross heat rate",
        r.gross_heat_rate,
        3600.0 * q / p.gross_power,
        1e-15,
    );
    near(
        "net heat rate",
        r.net_heat_rate,
        3600.0 * q / p.net_power,
        1e-15,
    );
    assert!(r.gross_heat_rate < r.net_heat_rate && r.net_heat_rate > r.heat_rate);
    // Without losses both heat rates are the cycle's: gross on the turbine work, net on the net
    // work.
    let plain = rankine(&s).unwrap();
    near(
        "plain net heat rate",
        plain.net_heat_rate,
        plain.heat_rate,
        1e-13,
    );
    near(
        "plain gross heat rate",
        plain.gross_heat_rate,
        3600.0 * plain.heat_input / plain.turbine_work,
        1e-13,
    );
}

/// The flow for a net power with a leaving loss: the power is a cubic in the flow; the flow
/// found gives the power asked for (forward, to 1e-9), and a power above the cubic's maximum is
/// refused with the maximum named.
#[test]
fn net_power_with_a_leaving_loss() {
    let mut s = base(16.0, 540.0, 0.005);
    s.reheat = Some((3.5, 540.0 + C));
    s.turbine_efficiency = 0.88;
    s.pump_efficiency = 0.82;
    s.net_power = Some(250_000.0);
    let plant = RankinePlant {
        exhaust_area: Some(25.0),
        mechanical: DriveLoss::Fixed(800.0),
        generator: DriveLoss::Efficiency(0.987),
        ..Default::default()
    };
    let r = rankine_plant(&s, &plant).unwrap();
    near("net", r.power.unwrap().net_power, 250_000.0, 1e-9);
    let f = r.flow.unwrap();
    let l = r.leaving.unwrap();
    let x_e = l.flow / f;
    let v = l.flow * l.expansion_line_end.props.v / 25.0;
    near("velocity", l.velocity, v, 1e-12);
    // per kg of boiler steam the leaving loss lowers the turbine work by x_e (h_UEEP - h_ELEP)
    let mut no_ll = s.clone();
    no_ll.net_power = None;
    no_ll.flow = Some(f);
    let g = rankine(&no_ll).unwrap();
    near(
        "turbine work",
        r.turbine_work,
        g.turbine_work - x_e * (l.used_energy_end.props.h - l.expansion_line_end.props.h),
        1e-9,
    );
    near(
        "ELEP",
        point(&r, "expansion-line end point").props.h,
        l.expansion_line_end.props.h,
        0.0,
    );
    near(
        "UEEP to the condenser",
        point(&r, "turbine exhaust").props.h,
        l.used_energy_end.props.h,
        0.0,
    );
    closes(&r);
    // too much power for a small annulus
    let small = RankinePlant {
        exhaust_area: Some(1.0),
        ..plant
    };
    let e = rankine_plant(&s, &small).unwrap_err().to_string();
    assert!(
        e.contains("cube of the flow") && e.contains("at most"),
        "{e}"
    );
}

/// Everything at once: sections, stage basis, Baumann, leaving loss, all pressure drops, drains
/// both ways, a DCA, drive losses, station load, a cooling-water condenser: mass and energy
/// close, gross less losses is net, and the warnings stay quiet on this nominal plant.
#[test]
fn a_plant_cycle_closes() {
    let mut s = base(16.5, 540.0, 0.0);
    s.reheat = Some((3.8, 540.0 + C));
    s.turbine_efficiency = 0.88;
    s.pump_efficiency = 0.82;
    s.flow = Some(180.0);
    let h = |p, kind, ttd| HeaterSpec { p, kind, ttd };
    s.heaters = vec![
        h(6.0, HeaterKind::Closed, -1.7),
        h(3.8, HeaterKind::Closed, 0.0),
        h(1.0, HeaterKind::Open, 0.0),
        h(0.35, HeaterKind::Closed, 2.8),
        h(0.1, HeaterKind::Closed, 2.8),
    ];
    let hp = |line_dp: f64, dca: Option<f64>, drain| HeaterPlant {
        line_dp,
        dca,
        drain,
    };
    for basis in [EfficiencyBasis::Section, EfficiencyBasis::Stage] {
        let plant = RankinePlant {
            efficiency_basis: basis,
            crossover_p: Some(0.9),
            hp_efficiency: Some(0.86),
            ip_efficiency: Some(0.91),
            lp_efficiency: Some(0.89),
            baumann: Some(1.0),
            exhaust_area: Some(30.0),
            throttle_dp: 0.4,
            boiler_dp: 1.5,
            reheat_dp: 0.3,
            heaters: vec![
                hp(0.18, Some(5.6), DrainMode::Cascade),
                hp(0.11, Some(5.6), DrainMode::Cascade),
                hp(0.03, None, DrainMode::Cascade),
                hp(0.01, None, DrainMode::PumpForward),
                hp(0.003, Some(5.6), DrainMode::Cascade),
            ],
            mechanical: DriveLoss::Efficiency(0.995),
            generator: DriveLoss::Fixed(2500.0),
            auxiliary_power: 4000.0,
            cooling_water: Some(CoolingWater {
                inlet_t: 22.0 + C,
                flow: Some(9000.0),
                rise: None,
                ttd: 3.0,
                p: 0.25,
            }),
        };
        let r = rankine_plant(&s, &plant).unwrap();
        closes(&r);
        let p = r.power.unwrap();
        assert_eq!(
            p.turbine_power
                - p.mechanical_loss
                - p.generator_loss
                - p.pump_power
                - p.auxiliary_power,
            p.net_power
        );
        let sum: f64 = r.sections.iter().map(|s| s.work).sum();
        near("sections add up", sum, r.turbine_work, 1e-12);
        assert!(r.sections[2].moisture_loss.is_some() == (basis == EfficiencyBasis::Section));
        assert!(r.warnings.is_empty(), "{basis:?}: {:?}", r.warnings);
    }
}

// ------------------------------------------------------------------ issue 15 reproductions

/// Issue 15, reproduction 2: a closed heater at 0.07 MPa with ttd -5 made feedwater leave at
/// 94.93 degC heated by wet steam at 89.93 degC, with no warning. Refused with the cause.
#[test]
fn issue15_repro2_negative_ttd_with_wet_steam_is_refused() {
    let (code, msg) = refused(
        "cycle.rankine",
        json!({"boiler_p": "10 MPa", "boiler_T": "500 degC", "condenser_p": "10 kPa",
               "turbine_efficiency": 0.85,
               "heaters": [{"p": "0.07 MPa", "kind": "closed", "ttd": -5}]}),
    );
    assert_eq!(code, 1009, "{msg}");
    assert!(
        msg.contains("cannot leave hotter than the steam") && msg.contains("wet"),
        "{msg}"
    );
    // a negative TTD with superheated steam and enough superheat is fine (an HP heater with a
    // desuperheating zone), and one with too little superheat is refused
    let ok = call(
        "cycle.rankine",
        json!({"boiler_p": "16 MPa", "boiler_T": "540 degC", "condenser_p": "8 kPa",
               "turbine_efficiency": 0.86,
               "heaters": [{"p": "6 MPa", "kind": "closed", "ttd": -1.7}]}),
    );
    assert!(f(&ok, "extractions.0.fraction") > 0.0);
    let (_, msg) = refused(
        "cycle.rankine",
        json!({"boiler_p": "16 MPa", "boiler_T": "360 degC", "condenser_p": "8 kPa",
               "turbine_efficiency": 0.86,
               "heaters": [{"p": "6 MPa", "kind": "closed", "ttd": -8}]}),
    );
    assert!(
        msg.contains("desuperheating") || msg.contains("hotter than the steam"),
        "{msg}"
    );
}

/// Issue 15, reproduction 4: a measured outlet of 2 bar, 299 degC after 10 bar, 300 degC gave
/// efficiency -0.053 and negative work with no warning. Refused with the reason.
#[test]
fn issue15_repro4_negative_work_is_refused() {
    let (code, msg) = refused(
        "turbine.expand",
        json!({"inlet": {"p": "10 bar", "T": "300 degC"}, "outlet_p": "2 bar",
               "outlet": {"T": "299 degC"}}),
    );
    assert_eq!(code, 1009, "{msg}");
    assert!(
        msg.contains("negative work") && msg.contains("outside (0, 1]"),
        "{msg}"
    );
}

/// Issue 15, reproduction 4: a measured exhaust temperature at saturation (2 bar, 120.21 degC)
/// cannot fix a wet exhaust, yet the message said "efficiency 2.8251 above 1". Refused with the
/// physical cause; the quality is accepted.
#[test]
fn issue15_repro4_exhaust_temperature_at_saturation_is_refused() {
    for t in ["120.21 degC", "120.2 degC", "110 degC"] {
        let (code, msg) = refused(
            "turbine.expand",
            json!({"inlet": {"p": "10 bar", "T": "300 degC"}, "outlet_p": "2 bar",
                   "outlet": {"T": t}}),
        );
        assert_eq!(code, 1009, "{t}: {msg}");
        assert!(
            msg.contains("cannot fix a wet exhaust") && !msg.contains("above 1"),
            "{t}: {msg}"
        );
    }
    // a wet exhaust is fixed by its quality: 10 bar, 200 degC to 2 bar at x = 0.95 (the
    // isentropic exhaust has x = 0.923), efficiency (h1 - h(x = 0.95)) / (h1 - h2s) = 0.7957
    let wet = call(
        "turbine.expand",
        json!({"inlet": {"p": "10 bar", "T": "200 degC"}, "outlet_p": "2 bar",
               "outlet": {"x": 0.95}}),
    );
    assert_eq!(wet["warnings"], json!([]));
    // a temperature just above saturation is accepted with a warning: it may be wet
    let near_sat = call(
        "turbine.expand",
        json!({"inlet": {"p": "10 bar", "T": "300 degC"}, "outlet_p": "2 bar",
               "outlet": {"T": "121.2 degC"}}),
    );
    let w = near_sat["warnings"].to_string();
    assert!(
        w.contains("above saturation") && w.contains("may be wet"),
        "{w}"
    );
    let i = pt(1.0, 200.0 + C).unwrap();
    let h2 = state::at_px(0.2, 0.95).unwrap().props.h;
    let h2s = ps(0.2, i.props.s).unwrap().props.h;
    near(
        "efficiency",
        f(&wet, "efficiency"),
        (i.props.h - h2) / (i.props.h - h2s),
        1e-12,
    );
    near("efficiency (printed)", f(&wet, "efficiency"), 0.7957, 1e-4);
}

/// Issue 15, reproduction 10: an efficiency meant one thing in turbine.train (each stage from its
/// own inlet) and another in cycle.rankine (from each turbine's inlet). Both name the convention
/// and take either; turbine.train reports each stage's efficiency both ways.
#[test]
fn issue15_repro10_efficiency_conventions_are_named_and_chosen() {
    let t = call(
        "turbine.train",
        json!({"inlet": {"p": "60 bar", "T": "480 degC", "flow": 25},
               "stages": [{"outlet_p": "20 bar", "efficiency": 0.85},
                          {"outlet_p": "5 bar", "efficiency": 0.85}]}),
    );
    assert_eq!(t["efficiency_basis"], "stage");
    assert_eq!(f(&t, "stages.1.efficiency"), 0.85);
    assert!(f(&t, "stages.1.section_efficiency") > 0.85);
    let ts = call(
        "turbine.train",
        json!({"inlet": {"p": "60 bar", "T": "480 degC", "flow": 25}, "efficiency_basis": "section",
               "stages": [{"outlet_p": "20 bar", "efficiency": 0.85},
                          {"outlet_p": "5 bar", "efficiency": 0.85}]}),
    );
    assert_eq!(ts["efficiency_basis"], "section");
    assert_eq!(f(&ts, "stages.1.section_efficiency"), 0.85);
    assert!(f(&ts, "stages.1.efficiency") < 0.85);
    let base = json!({"boiler_p": "60 bar", "boiler_T": "480 degC", "condenser_p": "5 bar",
                      "turbine_efficiency": 0.85, "heaters": [{"p": "20 bar", "kind": "closed"}]});
    let c = call("cycle.rankine", base.clone());
    assert_eq!(c["efficiency_basis"], "section");
    let mut stage = base.clone();
    stage["efficiency_basis"] = json!("stage");
    let cs = call("cycle.rankine", stage);
    assert_eq!(cs["efficiency_basis"], "stage");
    // the same turbine both ways: the cycle's exhaust is the train's last stage outlet
    let exhaust = |r: &Value| {
        r["points"]
            .as_array()
            .unwrap()
            .iter()
            .find(|p| p["label"].as_str().unwrap().starts_with("turbine exhaust"))
            .unwrap()["state"]["h"]
            .as_f64()
            .unwrap()
    };
    near("section", exhaust(&c), f(&ts, "stages.1.outlet.h"), 1e-12);
    near("stage", exhaust(&cs), f(&t, "stages.1.outlet.h"), 1e-12);
}

/// Issue 15, reproduction 12: cycle.rankine at 8 MPa / 250 degC sent compressed liquid into the
/// turbine with only an exhaust-moisture warning. Refused with the cause.
#[test]
fn issue15_repro12_liquid_into_the_turbine_is_refused() {
    let (code, msg) = refused(
        "cycle.rankine",
        json!({"boiler_p": "8 MPa", "boiler_T": "250 degC", "condenser_p": "10 kPa"}),
    );
    assert_eq!(code, 1009, "{msg}");
    assert!(
        msg.contains("compressed liquid") && msg.contains("needs steam"),
        "{msg}"
    );
    let (_, msg) = refused(
        "cycle.rankine",
        json!({"boiler_p": "25 MPa", "boiler_T": "350 degC", "condenser_p": "10 kPa"}),
    );
    assert!(msg.contains("critical temperature"), "{msg}");
}

// ------------------------------------------------------------------ the API

/// The new inputs and outputs on the wire, in the caller's units.
#[test]
fn plant_options_on_the_wire_in_the_callers_units() {
    let r = call(
        "turbine.expand",
        json!({"inlet": {"p": "100 bar", "T": "500 degC", "flow": "72 t/h"}, "outlet_p": "10 bar",
               "efficiency": "85 %", "throttle_dp": "5 %", "mechanical_efficiency": 0.99,
               "generator_loss": "0.3 MW", "units": "si"}),
    );
    near("throttle dp in Pa", f(&r, "throttle_dp"), 5e5, 1e-12);
    near(
        "turbine inlet in Pa",
        f(&r, "turbine_inlet.p"),
        9.5e6,
        1e-12,
    );
    assert_eq!(r["units"]["drive"], "W");
    near(
        "generator loss in W",
        f(&r, "drive.generator_loss"),
        3e5,
        1e-12,
    );
    let g = f(&r, "drive.gross_power");
    let i = f(&r, "drive.internal_power");
    assert!(g < i);
    // the same throttle as a pressure difference
    let r2 = call(
        "turbine.expand",
        json!({"inlet": {"p": "100 bar", "T": "500 degC", "flow": "72 t/h"}, "outlet_p": "10 bar",
               "efficiency": 0.85, "throttle_dp": "5 bar"}),
    );
    near(
        "same outlet",
        f(&r2, "outlet.h"),
        f(&r, "outlet.h") / 1000.0,
        1e-12,
    );
    let l = call(
        "turbine.expand",
        json!({"inlet": {"p": "5 bar", "T": "250 degC", "flow": 60}, "outlet_p": "8 kPa",
               "efficiency": 0.88, "exhaust_area": "129.17 ft2", "moisture_loss": "baumann",
               "units": "us"}),
    );
    assert_eq!(l["units"]["leaving_loss.exhaust_area"], "ft2");
    assert_eq!(l["units"]["leaving_loss.volume_flow"], "ft3/s");
    assert_eq!(l["units"]["leaving_loss.velocity"], "ft/s");
    assert!(
        l["leaving_loss"]["used_energy_end_point"]["h"]
            .as_f64()
            .unwrap()
            > 0.0
    );
    assert_eq!(l["moisture_loss"]["rule"], "Baumann");
    let cycle = |units: &str| {
        call(
            "cycle.rankine",
            json!({"boiler_p": "120 bar", "boiler_T": "540 degC", "condenser_p": "0.08 bar",
                   "turbine_efficiency": 0.87, "flow": "360 t/h", "generator_efficiency": "98.5 %",
                   "units": units}),
        )
    };
    let (eng, us) = (cycle("engineering"), cycle("us"));
    assert_eq!(eng["units"]["net_heat_rate"], "kJ/kWh");
    assert_eq!(us["units"]["gross_heat_rate"], "Btu/kWh");
    // IT Btu = 1.05505585262 kJ (exact by definition)
    near(
        "net heat rate in Btu/kWh",
        f(&us, "net_heat_rate") * 1.055_055_852_62,
        f(&eng, "net_heat_rate"),
        1e-12,
    );
    near(
        "net heat rate",
        f(&eng, "net_heat_rate"),
        3600.0 * f(&eng, "heat_input") * 100.0 / f(&eng, "power.net_power"),
        1e-12,
    );
    let cw = call(
        "cycle.rankine",
        json!({"boiler_p": "120 bar", "boiler_T": "540 degC", "turbine_efficiency": 0.87,
               "flow": 100, "condenser": {"cw_inlet_T": "68 degF", "cw_rise": "18 degF", "ttd": "5.4 degF"}}),
    );
    near("condensing at 33 degC", f(&cw, "condenser.T"), 33.0, 1e-9);
}

/// Bad input gets a specific error naming the quantity, never a plain number.
#[test]
fn bad_plant_inputs_are_refused_specifically() {
    let turb = |extra: Value| {
        let mut p = json!({"inlet": {"p": "40 bar", "T": "400 degC", "flow": 20},
                           "outlet_p": "0.1 bar", "efficiency": 0.85});
        for (k, v) in extra.as_object().unwrap() {
            p[k] = v.clone();
        }
        refused("turbine.expand", p)
    };
    let cyc = |extra: Value| {
        let mut p = json!({"boiler_p": "120 bar", "boiler_T": "540 degC", "condenser_p": "0.08 bar",
                           "turbine_efficiency": 0.87, "flow": 100});
        for (k, v) in extra.as_object().unwrap() {
            p[k] = v.clone();
        }
        refused("cycle.rankine", p)
    };
    let cases: Vec<((i64, String), &[&str])> = vec![
        (
            turb(json!({"exhaust_area": 0})),
            &["exhaust_area", "above 0"],
        ),
        (
            turb(json!({"exhaust_area": "-3 m2"})),
            &["exhaust_area", "above 0"],
        ),
        (
            cyc(json!({"exhaust_area": 0})),
            &["exhaust_area", "above 0"],
        ),
        (
            turb(json!({"mechanical_efficiency": 1.02})),
            &["mechanical_efficiency", "1.02"],
        ),
        (
            turb(json!({"generator_efficiency": 0})),
            &["generator_efficiency"],
        ),
        (
            turb(json!({"mechanical_loss": "-5 kW"})),
            &["mechanical_loss", "negative"],
        ),
        (
            turb(json!({"mechanical_efficiency": 0.99, "mechanical_loss": 10})),
            &["mechanical_efficiency or mechanical_loss"],
        ),
        (turb(json!({"generator_loss": "1 GW"})), &["unknown unit"]),
        (
            turb(json!({"generator_loss": "100 MW"})),
            &["no shaft power", "generator", "no electrical"],
        ),
        (turb(json!({"baumann_factor": 1})), &["moisture_loss"]),
        (
            turb(json!({"moisture_loss": "baumann", "baumann_factor": 3})),
            &["baumann_factor", "2.5"],
        ),
        (
            turb(json!({"moisture_loss": "baumann", "baumann_factor": -1})),
            &["baumann_factor"],
        ),
        (
            turb(json!({"moisture_loss": "wet"})),
            &["moisture_loss", "baumann"],
        ),
        (
            turb(json!({"throttle_dp": "2 barg"})),
            &["throttle_dp", "gauge"],
        ),
        (
            turb(json!({"throttle_dp": "-1 bar"})),
            &["throttle_dp", "negative"],
        ),
        (
            turb(json!({"throttle_dp": "40 bar"})),
            &["throttle_dp", "not below the inlet pressure"],
        ),
        (
            turb(json!({"throttle_dp": "39.99 bar"})),
            &["outlet_p", "after the throttle valve"],
        ),
        (
            cyc(json!({"heaters": [{"p": "3 bar", "kind": "closed", "dca": -2}]})),
            &["dca", "temperature cross"],
        ),
        (
            cyc(json!({"heaters": [{"p": "3 bar", "kind": "closed", "dca": 0}]})),
            &["dca", "above 0 K"],
        ),
        (
            cyc(json!({"heaters": [{"p": "3 bar", "kind": "closed", "dca": 100}]})),
            &["drain-cooler approach", "saturation"],
        ),
        (
            cyc(json!({"heaters": [{"p": "3 bar", "kind": "open", "dca": 5}]})),
            &["open heater", "no drain"],
        ),
        (
            cyc(json!({"heaters": [{"p": "3 bar", "kind": "open", "drain": "pump_forward"}]})),
            &["open heater"],
        ),
        (
            cyc(json!({"heaters": [{"p": "3 bar", "kind": "closed", "drain": "sideways"}]})),
            &["drain", "pump_forward"],
        ),
        (
            cyc(json!({"heaters": [{"p": "3 bar", "kind": "closed", "line_dp": "3 bar"}]})),
            &["line_dp", "condenser"],
        ),
        (
            cyc(
                json!({"heaters": [{"p": "3 bar", "kind": "closed", "line_dp": "0.2 bar"}, {"p": "2.9 bar", "kind": "closed"}]}),
            ),
            &["shell", "not below"],
        ),
        (
            cyc(
                json!({"condenser_p": null, "condenser": {"cw_inlet_T": "20 degC", "cw_rise": 10, "ttd": 0}}),
            ),
            &["ttd", "above 0"],
        ),
        (
            cyc(
                json!({"condenser_p": null, "condenser": {"cw_inlet_T": "20 degC", "cw_rise": 10, "ttd": -2}}),
            ),
            &["ttd", "above 0"],
        ),
        (
            cyc(json!({"condenser": {"cw_inlet_T": "20 degC", "cw_rise": 10, "ttd": 3}})),
            &["exactly one of condenser_p"],
        ),
        (
            cyc(json!({"condenser_p": null, "condenser": {"cw_inlet_T": "20 degC", "ttd": 3}})),
            &["cw_flow", "cw_rise"],
        ),
        (
            cyc(
                json!({"condenser_p": null, "condenser": {"cw_inlet_T": "20 degC", "cw_rise": 10, "cw_flow": 5000, "ttd": 3}}),
            ),
            &["cw_flow", "cw_rise"],
        ),
        (
            cyc(
                json!({"condenser_p": null, "condenser": {"cw_inlet_T": "20 degC", "cw_rise": -1, "ttd": 3}}),
            ),
            &["cw_rise"],
        ),
        (
            cyc(
                json!({"condenser_p": null, "condenser": {"cw_inlet_T": "95 degC", "cw_rise": 10, "ttd": 3}}),
            ),
            &["boiling point"],
        ),
        (
            cyc(
                json!({"condenser_p": null, "condenser": {"cw_inlet_T": "20 degC", "cw_flow": 20, "ttd": 3}}),
            ),
            &["boiling point"],
        ),
        (
            cyc(json!({"hp_efficiency": 0.9})),
            &["hp_efficiency", "crossover_p"],
        ),
        (
            cyc(json!({"crossover_p": "5 bar", "ip_efficiency": 0.9})),
            &["ip_efficiency"],
        ),
        (cyc(json!({"crossover_p": "200 bar"})), &["crossover_p"]),
        (cyc(json!({"reheat_dp": "1 bar"})), &["reheat_dp", "reheat"]),
        (cyc(json!({"reheat_dp": "5 %"})), &["reheat_dp", "reheat"]),
        (
            cyc(
                json!({"reheat_p": "30 bar", "reheat_T": "540 degC", "reheat_dp": "3 bar",
                       "heaters": [{"p": "28 bar", "kind": "closed"}]}),
            ),
            &["inside the reheater"],
        ),
        (
            cyc(json!({"boiler_dp": "-1 bar"})),
            &["boiler_dp", "negative"],
        ),
        (
            cyc(json!({"efficiency_basis": "turbine"})),
            &["efficiency_basis", "stage", "section"],
        ),
        (
            cyc(json!({"auxiliary_power": "-1 MW"})),
            &["auxiliary_power"],
        ),
        (
            cyc(json!({"auxiliary_power": "1000 MW"})),
            &["no net power"],
        ),
        (cyc(json!({"flow": -5})), &["flow"]),
        (
            refused(
                "cycle.rankine",
                json!({"boiler_p": "120 bar", "boiler_T": "540 degC", "condenser_p": "0.08 bar",
                       "exhaust_area": "30 m2"}),
            ),
            &["exhaust_area", "flow"],
        ),
        (
            refused(
                "cycle.rankine",
                json!({"boiler_p": "120 bar", "boiler_T": "540 degC", "condenser_p": "0.08 bar",
                       "generator_loss": "1 MW"}),
            ),
            &["flow or the net power"],
        ),
        (
            refused(
                "turbine.expand",
                json!({"inlet": {"p": "40 bar", "T": "400 degC"}, "outlet_p": "0.1 bar",
                       "efficiency": 0.85, "exhaust_area": "10 m2"}),
            ),
            &["exhaust_area", "flow"],
        ),
        (
            refused(
                "turbine.expand",
                json!({"inlet": {"p": "40 bar", "T": "400 degC", "flow": 10}, "outlet_p": "2 bar",
                       "outlet": {"T": "150 degC"}, "moisture_loss": "baumann"}),
            ),
            &["measured outlet already includes the moisture loss"],
        ),
        (
            refused(
                "turbine.expand",
                json!({"inlet": {"p": "40 bar", "T": "400 degC", "flow": 10}, "outlet_p": "2 bar",
                       "outlet": {"T": "150 degC"}, "exhaust_area": "1 m2"}),
            ),
            &["used-energy end point"],
        ),
        (
            refused(
                "turbine.train",
                json!({"inlet": {"p": "60 bar", "T": "480 degC", "flow": 25},
                       "stages": [{"outlet_p": "20 bar", "efficiency": 0.85, "section": "HP"},
                                  {"outlet_p": "10 bar", "efficiency": 0.85, "section": "LP"},
                                  {"outlet_p": "5 bar", "efficiency": 0.85, "section": "HP"}]}),
            ),
            &["follow one another"],
        ),
        (
            refused(
                "turbine.train",
                json!({"inlet": {"p": "60 bar", "T": "480 degC", "flow": 25}, "efficiency_basis": "section",
                       "stages": [{"outlet_p": "20 bar", "efficiency": 0.90},
                                  {"outlet_p": "19 bar", "efficiency": 0.70}]}),
            ),
            &["stage 2", "outside (0, 1]"],
        ),
    ];
    for ((code, msg), words) in &cases {
        assert!(
            [1001, 1002, 1004, 1005, 1006, 1009, -32602].contains(code),
            "{code}: {msg}"
        );
        assert!(
            words.iter().any(|w| msg.contains(w)),
            "message '{msg}' names none of {words:?}"
        );
    }
}
