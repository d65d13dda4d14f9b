//! Fuzz target: arbitrary bytes as a scheme file, then one simulated year of its design.
#![no_main]

use libfuzzer_sys::fuzz_target;

#[path = "../../tests/support/load_and_simulate.rs"]
mod harness;

fuzz_target!(|data: &[u8]| {
    let _ = harness::load_and_simulate(data);
});
