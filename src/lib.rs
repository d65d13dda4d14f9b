//! tapplan: plans a village water supply from one scheme file.
//!
//! The pipeline runs one way:
//! `scheme` (load YAML, validate into SI units) → `simulate` (hourly inputs and the tank balance
//! for a year and for the design horizon) → `sizing` (least-cost search that calls `simulate` as
//! a black box) → `rules` (proposal checks) → `output` (terminal tables, CSV, JSON, PDF bytes).
//! The physical models live in `physics`, one module per topic, as pure functions in SI units.
//! `weather` makes or reads the daily and hourly weather the solar drive needs.
//! Nothing downstream reaches back upstream: renderers never recompute physics.

pub mod error;
pub mod input;
pub mod output;
pub mod physics;
pub mod pumptest;
pub mod rules;
pub mod scheme;
pub mod simulate;
pub mod sizing;
pub mod templates;
pub mod text;
pub mod weather;
