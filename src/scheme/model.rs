//! The checked scheme in SI units (m, m³, s, W, J, fractions), as the engine sees it.
//!
//! A `Scheme` is only ever made by `validate`, so every value here is finite and in range.
//! Units are in the field names; fractions are 0–1 (the file uses percent where people do).

use serde::Serialize;

#[derive(Debug, Clone, Serialize)]
pub struct Scheme {
    pub info: Info,
    pub demand: Demand,
    pub boreholes: Vec<Borehole>,
    pub streams: Vec<Stream>,
    pub solar: Option<Solar>,
    pub generator: Option<Generator>,
    pub grid: Option<Grid>,
    pub hand: Option<HandDrive>,
    pub pumps: Vec<Pump>,
    pub rising_main: Option<RisingMain>,
    pub network: Network,
    pub tank: Tank,
    pub targets: Targets,
    pub costs: Costs,
    pub weather: Weather,
    pub sensitivity: Sensitivity,
    pub declared: Declared,
    /// Warnings found while checking (the scheme is usable, but the user should know).
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct Info {
    pub name: String,
    pub latitude_deg: f64,
    pub longitude_deg: f64,
    pub elevation_m: f64,
    pub prepared_by: Option<String>,
    /// ISO date `YYYY-MM-DD` from the file (never the clock).
    pub plan_date: String,
    pub base_year: i32,
    pub horizon_years: u32,
    pub currency: String,
    pub water_temperature_c: f64,
    pub notes: Option<String>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum GrowthMethod {
    Geometric,
    Arithmetic,
}

#[derive(Debug, Clone, Serialize)]
pub struct Demand {
    pub population: f64,
    pub growth_method: GrowthMethod,
    /// Growth rate as a fraction per year (0.03 = 3 %/year).
    pub growth_rate_per_year: f64,
    pub per_capita_m3_per_day: f64,
    pub other_users: Vec<User>,
    /// Losses as a fraction of the water supplied (IWA water-balance convention).
    pub losses_fraction: f64,
    /// Name of the profile ("communal_taps", … or "custom").
    pub profile_name: String,
    /// 24 hourly factors summing to 1; factor h covers clock hour h..h+1.
    pub profile: [f64; 24],
    /// 12 monthly factors multiplying the daily demand (mean 1 is usual, not required).
    pub monthly_factors: [f64; 12],
}

#[derive(Debug, Clone, Serialize)]
pub struct User {
    pub name: String,
    pub count: f64,
    pub unit: String,
    pub allowance_m3_per_unit_day: f64,
    pub grows_with_population: bool,
}

#[derive(Debug, Clone, Serialize)]
pub struct Borehole {
    pub name: String,
    pub ground_elevation_m: f64,
    /// Static water level, depth below ground.
    pub static_depth_m: f64,
    pub tested_yield_m3_per_s: f64,
    pub safe_yield_fraction: f64,
    pub transmissivity_m2_per_s: Option<f64>,
    pub storativity: Option<f64>,
    /// Jacob's linear well-loss coefficient B (s/m²).
    pub well_loss_b_s_per_m2: f64,
    /// Jacob's quadratic well-loss coefficient C (s²/m⁵).
    pub well_loss_c_s2_per_m5: f64,
    /// Pump intake depth below ground.
    pub intake_depth_m: f64,
    pub diameter_m: f64,
    /// Water the intake must stay below (m) to avoid drawing air.
    pub submergence_margin_m: f64,
    /// Pumping-test file the figures come from (resolved against the scheme's folder); the
    /// plan shows its analysis and carries its records.
    pub pumping_test_file: Option<std::path::PathBuf>,
}

impl Borehole {
    pub fn safe_yield_m3_per_s(&self) -> f64 {
        self.tested_yield_m3_per_s * self.safe_yield_fraction
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct Stream {
    pub name: String,
    pub flow_m3_per_s: f64,
    pub monthly_flow_factors: [f64; 12],
    pub usable_fall_m: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct Solar {
    /// Array peak power at standard test conditions, for the file's fixed design.
    pub array_peak_w: Option<f64>,
    pub array_range_w: Option<ArrayRange>,
    pub irradiation_j_per_m2_day: [f64; 12],
    pub air_temperature_c: [f64; 12],
    pub tilt_deg: f64,
    /// Compass bearing the array faces (0 N, 90 E, 180 S, 270 W).
    pub facing_azimuth_deg: f64,
    pub ground_albedo: f64,
    /// Power temperature coefficient (fraction per °C; −0.004 = −0.4 %/°C).
    pub temperature_coefficient_per_c: f64,
    pub noct_c: f64,
    pub soiling_loss: f64,
    pub wiring_loss: f64,
    pub mismatch_loss: f64,
    pub controller_loss: f64,
}

#[derive(Debug, Clone, Copy, Serialize)]
pub struct ArrayRange {
    pub min_w: f64,
    pub max_w: f64,
    pub module_w: f64,
}

/// An allowed daily window of whole clock hours, `start_hour` ≤ h < `end_hour` with
/// `end_hour` up to 24 (`{0, 24}` is all day); it wraps past midnight when end < start.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Window {
    pub start_hour: u8,
    pub end_hour: u8,
}

impl Window {
    pub fn contains(&self, hour: u8) -> bool {
        if self.start_hour <= self.end_hour {
            hour >= self.start_hour && hour < self.end_hour
        } else {
            hour >= self.start_hour || hour < self.end_hour
        }
    }
    pub fn hours(&self) -> u32 {
        (0..24u8).filter(|h| self.contains(*h)).count() as u32
    }
}

/// True when any window contains the clock hour.
pub fn in_windows(windows: &[Window], hour: u8) -> bool {
    windows.iter().any(|w| w.contains(hour))
}

#[derive(Debug, Clone, Serialize)]
pub struct Generator {
    pub rated_w: f64,
    pub run_hours: Vec<Window>,
    pub fuel_l_per_kwh_rated: f64,
    pub fuel_l_per_kwh_output: f64,
    pub fuel_price_per_l: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct Grid {
    pub supply_hours: Vec<Window>,
    pub available_w: f64,
    pub tariff_per_kwh: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct HandDrive {
    pub pumping_hours: Vec<Window>,
    pub human_power_w: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum DriveKind {
    Solar,
    Generator,
    Grid,
    Hand,
    Ram,
}

impl DriveKind {
    pub const NAMES: &'static [&'static str] = &["solar", "generator", "grid", "hand", "ram"];
    pub fn from_name(s: &str) -> Option<DriveKind> {
        Some(match s {
            "solar" => DriveKind::Solar,
            "generator" => DriveKind::Generator,
            "grid" => DriveKind::Grid,
            "hand" => DriveKind::Hand,
            "ram" => DriveKind::Ram,
            _ => return None,
        })
    }
    pub fn name(self) -> &'static str {
        match self {
            DriveKind::Solar => "solar",
            DriveKind::Generator => "generator",
            DriveKind::Grid => "grid",
            DriveKind::Hand => "hand",
            DriveKind::Ram => "ram",
        }
    }
}

/// One tabulated point of a pump's measured curve, SI units.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct CurvePointSi {
    pub flow_m3_per_s: f64,
    pub head_m: f64,
    /// Input power at this point (W).
    pub power_w: f64,
}

/// One measured head of a displacement pump's table, SI units.
#[derive(Debug, Clone, Serialize)]
pub struct DisplacementRowSi {
    pub head_m: f64,
    /// Input power at which delivery begins at this head (W; 0 for a fixed-speed unit).
    pub start_power_w: f64,
    /// (input power W, flow m³/s) of one unit.
    pub points: Vec<(f64, f64)>,
    /// Index of the head as given in the file (for messages).
    pub index: usize,
}

#[derive(Debug, Clone, Serialize)]
pub enum PumpKind {
    /// A motor pump with a measured performance curve at rated speed.
    Curve {
        points: Vec<CurvePointSi>,
        start_power_w: f64,
        min_speed_fraction: f64,
    },
    /// A hand pump worked by one person at a time.
    Hand {
        stroke_volume_m3: f64,
        strokes_per_s: f64,
        mechanical_efficiency: f64,
        spout_height_m: f64,
    },
    /// A positive-displacement pump read from its measured table (SI rows as given; the
    /// simulation builds `physics::displacement::DisplacementTable` from them).
    Displacement {
        rows: Vec<DisplacementRowSi>,
        rated_power_w: f64,
        stall_head_m: f64,
        /// One (power, flow) per head: a fixed-speed unit.
        fixed_speed: bool,
        /// Setting depth at which the table was measured, m (a note for the report).
        measured_at_setting_depth_m: Option<f64>,
    },
    /// A hydraulic ram on a stream fall.
    Ram {
        drive_flow_m3_per_s: f64,
        /// D'Aubuisson efficiency q·H/(Q·h).
        efficiency: f64,
        elevation_m: f64,
    },
}

impl PumpKind {
    /// The checked measured table of a displacement pump (None for other kinds).
    pub fn displacement_table(
        &self,
    ) -> Option<
        Result<
            crate::physics::displacement::DisplacementTable,
            crate::physics::displacement::TableError,
        >,
    > {
        use crate::physics::displacement::{DisplacementTable, TablePoint, TableRow};
        let PumpKind::Displacement {
            rows,
            rated_power_w,
            stall_head_m,
            fixed_speed,
            ..
        } = self
        else {
            return None;
        };
        let rows: Vec<TableRow> = rows
            .iter()
            .map(|r| TableRow {
                head_m: r.head_m,
                start_power_w: r.start_power_w,
                points: r
                    .points
                    .iter()
                    .map(|(w, q)| TablePoint {
                        power_w: *w,
                        flow_m3_per_s: *q,
                    })
                    .collect(),
            })
            .collect();
        Some(DisplacementTable::new(
            &rows,
            *rated_power_w,
            *stall_head_m,
            *fixed_speed,
        ))
    }
}

#[derive(Debug, Clone, Serialize)]
pub struct Pump {
    pub name: String,
    pub drive: DriveKind,
    /// Index into `boreholes` (curve and hand pumps) or `streams` (rams).
    pub source_index: usize,
    pub source_name: String,
    /// Units in the file's fixed design (None when the file leaves it to the search).
    pub units: Option<u32>,
    pub max_units: u32,
    pub kind: PumpKind,
    pub unit_cost: f64,
    pub lifetime_years: f64,
    pub maintenance_per_unit_year: f64,
}

#[derive(Debug, Clone, Copy, Serialize)]
pub enum Friction {
    ColebrookWhite { roughness_m: f64 },
    HazenWilliams { c: f64 },
}

#[derive(Debug, Clone, Serialize)]
pub struct RisingMain {
    pub length_m: f64,
    pub internal_diameter_m: f64,
    pub material: String,
    pub friction: Friction,
    pub fittings_k_total: f64,
}

#[derive(Debug, Clone, Default, Serialize)]
pub struct Network {
    pub public_taps: Option<u32>,
    pub household_connections: Option<u32>,
    pub tap_flow_m3_per_s: Option<f64>,
    pub longest_walk_m: Option<f64>,
    pub tap_elevations_m: Vec<f64>,
}

#[derive(Debug, Clone, Serialize)]
pub enum TankSearch {
    Range {
        min_m3: f64,
        max_m3: f64,
        step_m3: f64,
    },
    Sizes(Vec<f64>),
}

#[derive(Debug, Clone, Serialize)]
pub struct Tank {
    pub capacity_m3: Option<f64>,
    pub search: Option<TankSearch>,
    pub usable_fraction: f64,
    pub pump_start_level_fraction: f64,
    pub inlet_elevation_m: f64,
    pub stand_height_m: Option<f64>,
    /// Gauge pressure at the inlet (a pressurised vessel), Pa; 0 for an open tank.
    pub delivery_pressure_pa: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum JudgedOn {
    Median,
    P90,
}

#[derive(Debug, Clone, Serialize)]
pub struct Targets {
    pub max_shortfall_hours_per_year: Option<f64>,
    /// Fraction of the year's demand met (0.99 = 99 %).
    pub min_demand_met_fraction: Option<f64>,
    pub min_supply_m3_per_person_day: f64,
    pub judged_on: JudgedOn,
    /// Days one unit is out of service in the repair case (whole days).
    pub repair_days: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct Costs {
    pub given: bool,
    pub discount_rate: f64,
    pub tank_per_m3: f64,
    pub tank_fixed: f64,
    pub tank_lifetime_years: f64,
    pub pv_per_w: f64,
    pub pv_lifetime_years: f64,
    pub generator_capital: f64,
    pub generator_lifetime_years: f64,
    pub generator_maintenance_per_run_hour: f64,
    pub rising_main_capital: f64,
    pub maintenance_fraction_of_capital_per_year: f64,
}

#[derive(Debug, Clone, Serialize)]
pub enum WeatherMode {
    /// Every day of a month is that month's mean day.
    MeanDays,
    /// Seeded synthetic daily sequences with day-to-day persistence.
    Synthetic { seed: u64, years: u32 },
    /// An hourly weather file (EPW or CSV), path resolved against the scheme file's folder.
    File { path: std::path::PathBuf },
}

#[derive(Debug, Clone, Serialize)]
pub struct Weather {
    pub mode: WeatherMode,
}

#[derive(Debug, Clone, Serialize)]
pub struct Sensitivity {
    pub demand_fraction: f64,
    pub growth_points: f64,
    pub irradiation_fraction: f64,
    pub yield_fraction: f64,
    pub fuel_price_fraction: f64,
}

#[derive(Debug, Clone, Default, Serialize)]
pub struct Declared {
    pub shortfall_hours_per_year: Option<f64>,
    pub demand_met_fraction: Option<f64>,
}

impl Scheme {
    /// The design horizon year (base year + horizon years).
    pub fn horizon_year(&self) -> i32 {
        self.info.base_year + self.info.horizon_years as i32
    }
    /// True when any pump draws on the solar drive.
    pub fn uses_solar(&self) -> bool {
        self.pumps.iter().any(|p| p.drive == DriveKind::Solar)
    }
}

impl Pump {
    /// For a motor pump whose highest head at rated speed (the head of its first curve point,
    /// the shut-off head when the curve starts at zero flow) does not exceed the static lift
    /// from its borehole's static water level to the tank inlet: (that head, the static lift),
    /// both m. Such a pump delivers no water at any speed or count of units in parallel (head
    /// scales with the square of the speed and the speed is at most rated: affinity laws,
    /// Karassik et al., Pump Handbook, 4th ed., 2008, ch. 2 — from memory).
    pub fn cannot_lift_m(&self, boreholes: &[Borehole], tank: &Tank) -> Option<(f64, f64)> {
        let PumpKind::Curve { points, .. } = &self.kind else {
            return None;
        };
        let b = boreholes.get(self.source_index)?;
        let top_head_m = points.first()?.head_m;
        let lift_m = tank.inlet_elevation_m - b.ground_elevation_m + b.static_depth_m;
        (top_head_m <= lift_m).then_some((top_head_m, lift_m))
    }
}
