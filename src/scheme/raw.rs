//! The scheme file as written by hand: serde types that mirror the YAML keys one for one.
//!
//! Every key that holds a quantity names its unit. Unknown keys are refused
//! (`deny_unknown_fields`); the loader turns serde's message into one with a "did you mean".
//! Numbers are read as `f64` even where a whole number is expected, so that validation can say
//! "population must be a whole number" instead of a bare type error. Nothing here checks meaning:
//! that is `validate`.

use serde::Deserialize;

/// The whole scheme file.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawScheme {
    pub scheme: RawInfo,
    pub demand: RawDemand,
    #[serde(default)]
    pub sources: RawSources,
    #[serde(default)]
    pub drives: RawDrives,
    pub pumps: Vec<RawPump>,
    pub rising_main: Option<RawRisingMain>,
    pub network: Option<RawNetwork>,
    pub tank: RawTank,
    pub targets: RawTargets,
    pub costs: Option<RawCosts>,
    pub weather: Option<RawWeather>,
    pub sensitivity: Option<RawSensitivity>,
    pub declared: Option<RawDeclared>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawInfo {
    pub name: String,
    pub latitude_deg: f64,
    pub longitude_deg: f64,
    pub elevation_m: f64,
    pub prepared_by: Option<String>,
    pub plan_date: String,
    pub base_year: Option<f64>,
    pub horizon_years: f64,
    pub currency: String,
    pub water_temperature_c: Option<f64>,
    pub notes: Option<String>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDemand {
    pub population: f64,
    pub growth: RawGrowth,
    pub per_capita_l_per_day: f64,
    #[serde(default)]
    pub other_users: Vec<RawUser>,
    #[serde(default)]
    pub losses_percent: f64,
    pub daily_profile: RawProfile,
    pub monthly_factors: Option<Vec<f64>>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawGrowth {
    pub method: String,
    pub rate_percent_per_year: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawUser {
    pub name: String,
    pub count: f64,
    pub unit: Option<String>,
    pub allowance_l_per_unit_day: f64,
    #[serde(default)]
    pub grows_with_population: bool,
}

/// A built-in profile name or 24 hourly factors.
#[derive(Debug, Clone, Deserialize)]
#[serde(untagged)]
pub enum RawProfile {
    Named(String),
    Factors(Vec<f64>),
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSources {
    #[serde(default)]
    pub boreholes: Vec<RawBorehole>,
    #[serde(default)]
    pub streams: Vec<RawStream>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawBorehole {
    pub name: String,
    pub ground_elevation_m: Option<f64>,
    pub static_water_level_m: f64,
    pub tested_yield_m3_per_h: f64,
    pub safe_yield_fraction: f64,
    pub transmissivity_m2_per_day: Option<f64>,
    pub storativity: Option<f64>,
    pub well_loss_linear_s_per_m2: Option<f64>,
    pub well_loss_quadratic_s2_per_m5: Option<f64>,
    pub pump_intake_depth_m: f64,
    pub diameter_mm: f64,
    pub submergence_margin_m: Option<f64>,
    pub pumping_test_file: Option<String>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawStream {
    pub name: String,
    pub flow_l_per_s: f64,
    pub monthly_flow_factors: Option<Vec<f64>>,
    pub usable_fall_m: f64,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDrives {
    pub solar: Option<RawSolar>,
    pub generator: Option<RawGenerator>,
    pub grid: Option<RawGrid>,
    pub hand: Option<RawHand>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSolar {
    pub array_kwp: Option<f64>,
    pub array_range_kwp: Option<RawArrayRange>,
    pub irradiation_kwh_per_m2_day: Vec<f64>,
    pub air_temperature_c: Vec<f64>,
    pub tilt_deg: f64,
    pub facing_azimuth_deg: f64,
    pub ground_albedo: Option<f64>,
    pub temperature_coefficient_percent_per_c: Option<f64>,
    pub noct_c: Option<f64>,
    pub soiling_loss_percent: Option<f64>,
    pub wiring_loss_percent: Option<f64>,
    pub mismatch_loss_percent: Option<f64>,
    pub controller_loss_percent: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawArrayRange {
    pub min_kwp: f64,
    pub max_kwp: f64,
    pub module_kwp: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawWindow {
    pub start_hour: f64,
    pub end_hour: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawGenerator {
    pub rated_power_kw: f64,
    pub run_hours: Vec<RawWindow>,
    pub fuel_l_per_kwh_rated: Option<f64>,
    pub fuel_l_per_kwh_output: Option<f64>,
    pub fuel_price_per_l: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawGrid {
    pub supply_hours: Vec<RawWindow>,
    pub available_power_kw: f64,
    pub tariff_per_kwh: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawHand {
    pub pumping_hours: Vec<RawWindow>,
    pub human_power_w: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawPump {
    pub name: String,
    pub drive: String,
    pub source: String,
    pub units: Option<f64>,
    pub max_units: Option<f64>,
    pub start_power_w: Option<f64>,
    pub min_speed_fraction: Option<f64>,
    pub curve: Option<Vec<RawCurvePoint>>,
    /// `centrifugal` (the default) or `positive_displacement`.
    pub pump_type: Option<String>,
    pub displacement_table: Option<RawDisplacementTable>,
    pub hand_pump: Option<RawHandPump>,
    pub ram: Option<RawRam>,
    pub unit_cost: Option<f64>,
    pub lifetime_years: Option<f64>,
    pub maintenance_per_unit_year: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCurvePoint {
    pub flow_m3_per_h: f64,
    pub head_m: f64,
    pub power_w: Option<f64>,
    pub efficiency_percent: Option<f64>,
}

/// A positive-displacement pump's measured table.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDisplacementTable {
    pub rated_power_w: f64,
    pub stall_head_m: f64,
    /// One start power for every head (a head's own `start_power_w` overrides it).
    pub start_power_w: Option<f64>,
    /// Setting depth at which the table was measured (a note; not used in the simulation).
    pub measured_at_setting_depth_m: Option<f64>,
    pub heads: Vec<RawDisplacementHead>,
}

/// One measured head: flows at several input powers (variable drive), or one flow and power
/// (a fixed-speed unit).
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDisplacementHead {
    pub head_m: f64,
    pub start_power_w: Option<f64>,
    pub points: Option<Vec<RawDisplacementPoint>>,
    pub flow_l_per_min: Option<f64>,
    pub power_w: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDisplacementPoint {
    pub power_w: f64,
    pub flow_l_per_min: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawHandPump {
    pub stroke_volume_l: f64,
    pub strokes_per_min: f64,
    pub mechanical_efficiency_percent: f64,
    pub spout_height_m: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawRam {
    pub drive_flow_l_per_min: f64,
    pub efficiency_percent: f64,
    pub elevation_m: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawRisingMain {
    pub length_m: f64,
    pub internal_diameter_mm: f64,
    pub material: String,
    pub roughness_mm: Option<f64>,
    pub hazen_williams_c: Option<f64>,
    pub friction_method: Option<String>,
    #[serde(default)]
    pub fittings_k_total: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawNetwork {
    pub public_taps: Option<f64>,
    pub household_connections: Option<f64>,
    pub tap_flow_l_per_min: Option<f64>,
    pub longest_walk_m: Option<f64>,
    #[serde(default)]
    pub tap_elevations_m: Vec<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawTank {
    pub capacity_m3: Option<f64>,
    pub capacity_range_m3: Option<RawTankRange>,
    pub standard_sizes_m3: Option<Vec<f64>>,
    pub usable_fraction: Option<f64>,
    /// Retired: accepted and ignored with a warning (years start in their periodic state).
    pub initial_level_fraction: Option<f64>,
    pub pump_start_level_fraction: Option<f64>,
    pub inlet_elevation_m: f64,
    pub stand_height_m: Option<f64>,
    /// Gauge pressure at the inlet when the pumps deliver into a pressurised vessel, bar.
    pub delivery_pressure_bar: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawTankRange {
    pub min_m3: f64,
    pub max_m3: f64,
    pub step_m3: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawTargets {
    pub max_shortfall_hours_per_year: Option<f64>,
    pub min_demand_met_percent: Option<f64>,
    pub min_supply_l_per_person_day: Option<f64>,
    pub judged_on: Option<String>,
    /// Days one unit of a pump type is out of service for repair in the repair case.
    pub repair_days: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawCosts {
    pub discount_rate_percent: f64,
    #[serde(default)]
    pub tank_per_m3: f64,
    #[serde(default)]
    pub tank_fixed: f64,
    pub tank_lifetime_years: Option<f64>,
    #[serde(default)]
    pub pv_per_kwp: f64,
    pub pv_lifetime_years: Option<f64>,
    #[serde(default)]
    pub generator_capital: f64,
    pub generator_lifetime_years: Option<f64>,
    #[serde(default)]
    pub generator_maintenance_per_run_hour: f64,
    #[serde(default)]
    pub rising_main_capital: f64,
    #[serde(default)]
    pub maintenance_percent_of_capital_per_year: f64,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawWeather {
    pub mode: String,
    pub seed: Option<f64>,
    pub years: Option<f64>,
    pub file: Option<String>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawSensitivity {
    pub demand_percent: Option<f64>,
    pub growth_points: Option<f64>,
    pub irradiation_percent: Option<f64>,
    pub yield_percent: Option<f64>,
    pub fuel_price_percent: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawDeclared {
    pub shortfall_hours_per_year: Option<f64>,
    pub demand_met_percent: Option<f64>,
}
