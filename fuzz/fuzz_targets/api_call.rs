//! Fuzz target: the request decoder, `steamcell::api::call` on arbitrary JSON text as params
//! for every method name. Must never panic.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if data.is_empty() {
        return;
    }
    let methods = steamcell::api::registry();
    let m = &methods[data[0] as usize % methods.len()];
    let Ok(params) = serde_json::from_slice::<serde_json::Value>(&data[1..]) else {
        return;
    };
    let _ = steamcell::api::call(m.name, params);
});
