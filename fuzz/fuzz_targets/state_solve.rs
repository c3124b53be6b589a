//! Fuzz target: `steamcell::water::state::solve` on arbitrary f64 pairs for every input pair.
//! Must never panic; a success has finite p, T, h.
#![no_main]

use libfuzzer_sys::fuzz_target;
use steamcell::water::state::{solve, Given, Options};

fuzz_target!(|data: &[u8]| {
    if data.len() < 17 {
        return;
    }
    let a = f64::from_le_bytes(data[1..9].try_into().unwrap());
    let b = f64::from_le_bytes(data[9..17].try_into().unwrap());
    let given = match data[0] % 12 {
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
    };
    if let Ok(st) = solve(given, &Options::STANDARD) {
        assert!(st.props.p.is_finite() && st.props.t.is_finite() && st.props.h.is_finite());
    }
});
