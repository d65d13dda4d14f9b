#![allow(dead_code)] // each user takes a part
//! The load-and-simulate path shared by the fuzz target (`fuzz/fuzz_targets/load_and_simulate.rs`),
//! the fuzz regression test and the mutation corpus test: any bytes in, a clean result out.
//!
//! Work is capped so one input stays fast: synthetic weather is clamped to one year and only the
//! base year of the file's own design is simulated (no horizon, no search).

use std::path::Path;

use tapplan::scheme::WeatherMode;

/// How far one input got. Every variant is a clean end; a panic or a hang is the only failure.
#[derive(Debug)]
#[allow(dead_code)] // not every user reads every field
pub enum Outcome {
    /// Refused by the loader or the validator (the error's text).
    Refused(String),
    /// Loaded, but the engine model could not be prepared (the error's text).
    ModelRefused(String),
    /// Loaded and prepared, but the file gives no complete design (the reason).
    NoDesign(String),
    /// One year simulated: shortfall hours of that year.
    Simulated { shortfall_hours: u32 },
}

/// Loads `bytes` as a scheme file and, when it loads, simulates one year of its design.
pub fn load_and_simulate(bytes: &[u8]) -> Outcome {
    let loaded = match tapplan::scheme::load_bytes(bytes, "fuzz.yaml", Path::new(".")) {
        Ok(l) => l,
        Err(e) => return Outcome::Refused(e.to_string()),
    };
    simulate_loaded(loaded.scheme)
}

/// As `load_and_simulate` for text (through `load_str`, as the mutation test needs).
#[allow(dead_code)]
pub fn load_str_and_simulate(text: &str, label: &str) -> Outcome {
    let loaded = match tapplan::scheme::load_str(text, label, Path::new(".")) {
        Ok(l) => l,
        Err(e) => return Outcome::Refused(e.to_string()),
    };
    simulate_loaded(loaded.scheme)
}

/// Prepares the model of a loaded scheme and runs one base year of its own design.
pub fn simulate_loaded(mut scheme: tapplan::scheme::Scheme) -> Outcome {
    if let WeatherMode::Synthetic { years, .. } = &mut scheme.weather.mode {
        *years = (*years).min(1);
    }
    let model = match tapplan::simulate::Model::new(&scheme) {
        Ok(m) => m,
        Err(e) => return Outcome::ModelRefused(e.to_string()),
    };
    let design = match tapplan::simulate::resolve_design(
        &scheme,
        &tapplan::simulate::DesignOverrides::default(),
    ) {
        Ok(d) => d,
        Err(e) => return Outcome::NoDesign(e),
    };
    let y = model.run_year(&design, 0, 0, false);
    let a = &y.annual;
    for (name, v) in [
        ("demand_m3", a.demand_m3),
        ("delivered_m3", a.delivered_m3),
        ("unmet_m3", a.unmet_m3),
        ("pumped_m3", a.pumped_m3),
        ("energy_kwh", a.energy_kwh),
        ("demand_met_fraction", y.demand_met_fraction),
        ("end_level_m3", y.end_level_m3),
    ] {
        assert!(
            v.is_finite(),
            "a valid scheme gave a non-finite result: {name} = {v}"
        );
    }
    Outcome::Simulated {
        shortfall_hours: a.shortfall_hours,
    }
}
