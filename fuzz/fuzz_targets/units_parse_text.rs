//! Fuzz target: `steamcell::units::parse_text` on arbitrary text, for every dimension and
//! preset. Must never panic; a success is a finite number.
#![no_main]

use libfuzzer_sys::fuzz_target;
use steamcell::units::{parse_text, Dim, Preset};

const DIMS: [Dim; 8] = [
    Dim::Pressure,
    Dim::Temperature,
    Dim::TemperatureDifference,
    Dim::SpecificEnergy,
    Dim::SpecificEntropy,
    Dim::SpecificVolume,
    Dim::Density,
    Dim::Dimensionless,
];

fuzz_target!(|data: &[u8]| {
    if data.is_empty() {
        return;
    }
    let dim = DIMS[data[0] as usize % DIMS.len()];
    let preset = Preset::ALL[(data[0] as usize / DIMS.len()) % Preset::ALL.len()];
    let text = String::from_utf8_lossy(&data[1..]);
    let _ = parse_text("x", dim, &text, preset, 0.101325);
});
