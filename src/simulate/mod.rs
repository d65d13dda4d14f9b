//! The hourly tank balance over a year, an ensemble of weather years, and the design horizon.
//!
//! `Model::new` prepares everything that does not depend on the design (demand shape, PV
//! power per Wp for each weather year, tabulated pump–system operating points, the Theis
//! kernel of each borehole). `Model::run_year` then runs one year for one `Design` in a single
//! pass over 8,760 hours; `run_ensemble` runs every weather year; `horizon` runs every year from
//! the base year to the horizon. The operating rules the engine follows are listed in
//! `Model::rules` and shown with every result: they move shortfall hours a great deal.

pub mod curves;
pub mod hydraulics;
pub mod inputs;

use serde::Serialize;

use crate::error::Error;
use crate::physics::drives;
use crate::scheme::{DriveKind, JudgedOn, PumpKind, Scheme, WeatherMode};
use crate::weather::{HOURS_IN_YEAR, month_of_day};
pub use curves::PumpSystemCurves;
use hydraulics::{KERNEL_HOURS, PumpTables, SystemCurve, TAIL_DAYS, TheisKernel};
pub use inputs::{DailyDemand, SolarYear, daily_demand};

/// A design to simulate: tank size, units of each pump type (in file order), array size.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Design {
    pub tank_m3: f64,
    pub units: Vec<u32>,
    /// PV array peak power, W (0 when no pump is solar-driven).
    pub array_w: f64,
}

impl Design {
    /// The design the scheme file itself states, if it states one completely.
    pub fn from_scheme(s: &Scheme) -> Result<Design, String> {
        resolve_design(s, &DesignOverrides::default())
    }

    /// The pump units alone: "1 × SolarSub-9 + 2 × Hand-A" ("no pumps" when none).
    pub fn describe_pumps(&self, s: &Scheme) -> String {
        let pumps: Vec<String> = s
            .pumps
            .iter()
            .zip(&self.units)
            .filter(|(_, n)| **n > 0)
            .map(|(p, n)| format!("{n} × {}", p.name))
            .collect();
        if pumps.is_empty() {
            "no pumps".to_string()
        } else {
            pumps.join(" + ")
        }
    }

    /// "60 m³ tank, 1 × SolarSub-9, 6.0 kWp".
    pub fn describe(&self, s: &Scheme) -> String {
        let mut t = format!(
            "{} m³ tank, {}",
            fmt_g(self.tank_m3),
            self.describe_pumps(s)
        );
        let solar_units = s
            .pumps
            .iter()
            .zip(&self.units)
            .any(|(p, n)| *n > 0 && p.drive == DriveKind::Solar);
        if solar_units && self.array_w > 0.0 {
            t.push_str(&format!(", {:.2} kWp array", self.array_w / 1000.0));
        }
        t
    }
}

/// A number without trailing zeros ("60", "12.5").
pub fn fmt_g(v: f64) -> String {
    let s = format!("{v:.3}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

/// Sums over a month or a year.
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct Totals {
    pub demand_m3: f64,
    pub delivered_m3: f64,
    pub unmet_m3: f64,
    pub pumped_m3: f64,
    pub overflow_m3: f64,
    pub shortfall_hours: u32,
    pub pump_run_hours: f64,
    pub energy_kwh: f64,
    pub generator_fuel_l: f64,
    pub grid_energy_kwh: f64,
    pub generator_energy_kwh: f64,
    pub solar_energy_kwh: f64,
    pub hand_pumped_m3: f64,
    pub ram_pumped_m3: f64,
    pub lowest_level_fraction: f64,
}

impl Totals {
    fn new() -> Totals {
        Totals {
            lowest_level_fraction: 1.0,
            ..Default::default()
        }
    }
    /// The year's totals from its months (sums; the lowest level is the least).
    pub fn sum(months: &[Totals]) -> Totals {
        let mut a = Totals::new();
        for t in months {
            a.demand_m3 += t.demand_m3;
            a.delivered_m3 += t.delivered_m3;
            a.unmet_m3 += t.unmet_m3;
            a.pumped_m3 += t.pumped_m3;
            a.overflow_m3 += t.overflow_m3;
            a.shortfall_hours += t.shortfall_hours;
            a.pump_run_hours += t.pump_run_hours;
            a.energy_kwh += t.energy_kwh;
            a.generator_fuel_l += t.generator_fuel_l;
            a.grid_energy_kwh += t.grid_energy_kwh;
            a.generator_energy_kwh += t.generator_energy_kwh;
            a.solar_energy_kwh += t.solar_energy_kwh;
            a.hand_pumped_m3 += t.hand_pumped_m3;
            a.ram_pumped_m3 += t.ram_pumped_m3;
            a.lowest_level_fraction = a.lowest_level_fraction.min(t.lowest_level_fraction);
        }
        a
    }

    pub fn demand_met_fraction(&self) -> f64 {
        if self.demand_m3 > 0.0 {
            (self.delivered_m3 / self.demand_m3).clamp(0.0, 1.0)
        } else {
            1.0
        }
    }
}

/// The hourly series of one year (index = hour of the year from 1 January 00:00).
#[derive(Debug, Clone, Default, Serialize)]
pub struct Hourly {
    pub demand_m3: Vec<f64>,
    pub pumped_m3: Vec<f64>,
    pub delivered_m3: Vec<f64>,
    pub shortfall_m3: Vec<f64>,
    pub overflow_m3: Vec<f64>,
    pub tank_level_m3: Vec<f64>,
    pub dynamic_water_level_m: Vec<f64>,
    pub pump_head_m: Vec<f64>,
    pub pump_power_w: Vec<f64>,
    pub pump_speed_ratio: Vec<f64>,
    pub drive_power_available_w: Vec<f64>,
}

/// One simulated year of one design.
#[derive(Debug, Clone, Serialize)]
pub struct YearResult {
    pub year: i32,
    pub weather: String,
    pub population: f64,
    pub annual: Totals,
    pub months: [Totals; 12],
    pub demand_met_fraction: f64,
    pub longest_dry_spell_hours: u32,
    /// Pump energy per m³ lifted by motor pumps, kWh/m³.
    pub specific_energy_kwh_per_m3: Option<f64>,
    /// Delivered domestic water per person per day, m³ (all uses shared pro rata).
    pub delivered_m3_per_person_day: f64,
    /// Least margin between the dynamic water level and the intake's limit while pumping, m.
    pub drawdown_margin_m: Option<f64>,
    pub deepest_dynamic_level_m: Option<f64>,
    /// Hours in which dry-run protection stopped a pump (each hour once).
    pub dry_run_stop_hours: u32,
    /// Hours in which the pumps ran held at a borehole's safe yield (each hour once, however
    /// many pump types share the borehole; part of the hours the pumps ran).
    pub yield_capped_hours: u32,
    /// Hours in which a pump ran beyond its tabulated curve (each hour once; part of the
    /// hours the pumps ran).
    pub beyond_curve_hours: u32,
    /// The same figures per borehole (in file order); the scheme's figures above are their
    /// sum (pumped), extremes (deepest level, least margin) and union (hours).
    pub boreholes: Vec<BoreholeYear>,
    /// Tank level at the start and the end of the year, m³ (the periodic state: equal within
    /// the tolerance of [`STEADY_TOLERANCE`] when `steady`).
    pub start_level_m3: f64,
    pub end_level_m3: f64,
    /// End level minus start level, m³: pumped − delivered − overflow over the year.
    pub storage_change_m3: f64,
    /// Passes over the year run to reach its periodic state (1 when the first guess held).
    pub passes: u32,
    /// Whether the year ended in the state it started from (within [`STEADY_TOLERANCE`]).
    pub steady: bool,
    /// True when the run stopped early because the year was sure to miss the target.
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub aborted: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hourly: Option<Hourly>,
}

/// One borehole's figures over a year.
#[derive(Debug, Clone, Default, Serialize)]
pub struct BoreholeYear {
    pub name: String,
    /// Water drawn from it by hand and motor pumps, m³.
    pub pumped_m3: f64,
    /// Deepest dynamic water level while a motor pump ran, m below ground.
    pub deepest_dynamic_level_m: Option<f64>,
    /// Least margin between that level and the intake's limit, m.
    pub drawdown_margin_m: Option<f64>,
    /// Hours in which a motor pump on it ran held at its safe yield.
    pub yield_capped_hours: u32,
    /// Hours in which dry-run protection stopped a motor pump on it.
    pub dry_run_stop_hours: u32,
}

/// Reliability over the weather years of one design and one demand year.
#[derive(Debug, Clone, Serialize)]
pub struct Ensemble {
    pub year: i32,
    pub years_run: usize,
    pub median_shortfall_hours: f64,
    /// The "1 year in 10" figure: 90th percentile of shortfall hours (nearest rank).
    pub p90_shortfall_hours: f64,
    pub worst_shortfall_hours: f64,
    pub median_demand_met_fraction: f64,
    /// Demand met in the 1-year-in-10 bad year: the value at the 90th-percentile rank (nearest
    /// rank) counted from the best year, mirroring the shortfall-hours figure.
    pub p10_demand_met_fraction: f64,
    pub worst_demand_met_fraction: f64,
    pub longest_dry_spell_hours: u32,
    pub judged_on: JudgedOn,
    pub judged_shortfall_hours: f64,
    pub judged_demand_met_fraction: f64,
    /// Weather years that miss the target, and how many may while the ensemble meets it.
    pub years_failing: usize,
    pub years_allowed_to_fail: usize,
    /// Index of the weather year whose shortfall is the judged figure (shown as "the year").
    pub representative: usize,
    pub years: Vec<YearResult>,
}

/// Nearest-rank percentile of sorted values (p in 0–100).
pub fn nearest_rank(sorted: &[f64], p: f64) -> f64 {
    if sorted.is_empty() {
        return 0.0;
    }
    let n = sorted.len();
    let rank = ((p / 100.0) * n as f64).ceil() as usize;
    sorted[rank.clamp(1, n) - 1]
}

/// Shifts applied to a run (sensitivity cases); the default changes nothing.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Scenario {
    /// Multiplies the demand of every hour.
    pub demand_factor: f64,
    /// Multiplies every borehole's safe yield.
    pub yield_factor: f64,
}

impl Default for Scenario {
    fn default() -> Scenario {
        Scenario {
            demand_factor: 1.0,
            yield_factor: 1.0,
        }
    }
}

/// When a year can stop early: it has already missed the target.
#[derive(Debug, Clone, Copy)]
pub struct Abort {
    pub max_shortfall_hours: f64,
    pub max_unmet_m3: f64,
}

/// One row of the design-horizon run.
#[derive(Debug, Clone, Serialize)]
pub struct HorizonRow {
    pub year: i32,
    pub population: f64,
    pub demand_m3_per_day: f64,
    pub shortfall_hours: f64,
    pub demand_met_fraction: f64,
    pub meets_target: bool,
}

struct RamUnit {
    /// Total delivery (m³/s) with n units running, index n.
    flow_by_units: Vec<f64>,
    /// Rams the month's stream flow can drive, per month.
    drivable_by_month: [u32; 12],
}

/// Everything prepared for a scheme that does not depend on the design.
pub struct Model {
    pub scheme: Scheme,
    pub solar_years: Vec<SolarYear>,
    shape: Vec<f64>,
    gen_mask: [bool; 24],
    grid_mask: [bool; 24],
    hand_mask: [bool; 24],
    tables: Vec<Option<PumpTables>>,
    kernels: Vec<Option<TheisKernel>>,
    rams: Vec<Option<RamUnit>>,
    /// Per-unit hand pump flow (m³/s) for each pump type (0 for others).
    hand_flow: Vec<f64>,
    /// Safe yield of each borehole, m³/s.
    safe_yield: Vec<f64>,
    /// Month (0–11) of each day of the year.
    day_month: [u8; 365],
    /// Indices of the motor (curve), hand and ram pump types.
    motor_pumps: Vec<usize>,
    hand_pumps: Vec<usize>,
    ram_pumps: Vec<usize>,
    /// The operating rules, stated with every result.
    pub rules: Vec<String>,
    /// Year-simulations run with this model (for the search's report).
    counter: std::sync::atomic::AtomicUsize,
    /// Passes over a year beyond the first, run to reach periodic states.
    extra_passes: std::sync::atomic::AtomicUsize,
    /// Results of years already run (a year is a pure function of its key).
    memo: std::sync::Mutex<std::collections::HashMap<YearKey, Memo>>,
}

/// What identifies one simulated year: the design, the demand year, the weather year and the
/// scenario.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
struct YearKey {
    tank_bits: u64,
    array_bits: u64,
    units: Vec<u32>,
    year_offset: u32,
    weather: usize,
    demand_bits: u64,
    yield_bits: u64,
}

impl YearKey {
    fn new(d: &Design, year_offset: u32, weather: usize, sc: &Scenario) -> YearKey {
        YearKey {
            tank_bits: d.tank_m3.to_bits(),
            array_bits: d.array_w.to_bits(),
            units: d.units.clone(),
            year_offset,
            weather,
            demand_bits: sc.demand_factor.to_bits(),
            yield_bits: sc.yield_factor.to_bits(),
        }
    }
}

/// A remembered year: the whole result, only that it missed the target (an early stop), or
/// only that it was run (beyond [`MEMO_LIMIT`], so it is counted once).
#[derive(Debug, Clone)]
enum Memo {
    Full(Box<YearResult>),
    MissedTarget,
    Seen,
}

/// Days at the end of the year run before the first pass, from a full tank and no pumping
/// history, to make the first guess of the periodic state: long enough that the borehole's
/// 30-day history holds no day of the idle start (with 31 days most borehole years needed a
/// second pass; with 61, on the samples, few do).
pub const WARM_UP_DAYS: usize = 61;

/// Most passes over one year in search of its periodic state; a year still moving after them
/// is reported as it ran, with `steady: false`.
pub const MAX_PASSES: u32 = 8;

/// A year is in its periodic state when its end agrees with its start: the tank level within
/// this share of the usable volume plus a day's demand, the level control the same, and the
/// boreholes' pumping history within [`HISTORY_TOLERANCE`].
pub const STEADY_TOLERANCE: f64 = 1e-4;

/// Share of its largest value within which the boreholes' pumping history (hourly flows of
/// the last day, daily volumes of the last 30) must agree at the start and the end of a
/// periodic year. A 1 % difference in past pumping moves the drawdown it leaves by at most 1 %
/// (centimetres).
pub const HISTORY_TOLERANCE: f64 = 1e-2;

/// Most years whose results are remembered per model (beyond it a year is run again when
/// asked again; its key is kept so it is still counted once).
const MEMO_LIMIT: usize = 100_000;

impl Model {
    /// Prepares a scheme with the irradiation as given.
    pub fn new(scheme: &Scheme) -> Result<Model, Error> {
        Model::with_irradiation(scheme, 1.0)
    }

    /// Prepares a scheme with the irradiation scaled by `irradiation_factor`.
    pub fn with_irradiation(scheme: &Scheme, irradiation_factor: f64) -> Result<Model, Error> {
        let s = scheme.clone();
        let solar_years = if s.uses_solar() {
            inputs::solar_years(&s, irradiation_factor)?
        } else {
            Vec::new()
        };
        let rho = crate::physics::water::water_density_kg_per_m3(s.info.water_temperature_c);
        let kernels: Vec<Option<TheisKernel>> = s
            .boreholes
            .iter()
            .map(|b| match (b.transmissivity_m2_per_s, b.storativity) {
                (Some(t), Some(st)) => Some(TheisKernel::new(t, st, b.diameter_m / 2.0)),
                _ => None,
            })
            .collect();
        let mut tables = Vec::new();
        let mut rams = Vec::new();
        let mut hand_flow = Vec::new();
        for (i, p) in s.pumps.iter().enumerate() {
            let mut table = None;
            let mut ram = None;
            let mut hand = 0.0;
            match &p.kind {
                PumpKind::Curve {
                    start_power_w,
                    min_speed_fraction,
                    ..
                } => {
                    let curve = hydraulics::curve_of(&p.kind)
                        .expect("curve pump")
                        .map_err(|e| Error::Input(format!("pumps[{i}].curve: {e}")))?;
                    let b = &s.boreholes[p.source_index];
                    let a0 = kernels[p.source_index].as_ref().map_or(0.0, |k| k.k[0]);
                    let system = SystemCurve::new(&s, b, a0);
                    let max_offset = b.intake_depth_m - b.submergence_margin_m - b.static_depth_m;
                    table = Some(PumpTables::build(
                        curve,
                        system,
                        max_offset,
                        p.max_units,
                        p.drive == DriveKind::Solar,
                        *min_speed_fraction,
                        *start_power_w,
                    ));
                }
                PumpKind::Displacement { .. } => {
                    let unit = p
                        .kind
                        .displacement_table()
                        .expect("displacement pump")
                        .map_err(|e| Error::Input(format!("pumps[{i}].displacement_table: {e}")))?;
                    let b = &s.boreholes[p.source_index];
                    let a0 = kernels[p.source_index].as_ref().map_or(0.0, |k| k.k[0]);
                    let system = SystemCurve::new(&s, b, a0);
                    let max_offset = b.intake_depth_m - b.submergence_margin_m - b.static_depth_m;
                    table = Some(PumpTables::build_displacement(
                        unit,
                        system,
                        max_offset,
                        p.max_units,
                        p.drive == DriveKind::Solar,
                    ));
                }
                PumpKind::Ram {
                    drive_flow_m3_per_s,
                    efficiency,
                    elevation_m,
                } => {
                    let st = &s.streams[p.source_index];
                    let lift = s.tank.inlet_elevation_m - elevation_m;
                    let sys = s.rising_main.as_ref().map(|_| SystemCurve {
                        lift0_m: 0.0,
                        linear_s_per_m2: 0.0,
                        quad_s2_per_m5: 0.0,
                        main: s.rising_main.clone(),
                        nu_m2_per_s: crate::physics::water::water_kinematic_viscosity_m2_per_s(
                            s.info.water_temperature_c,
                        ),
                    });
                    let mut flows = vec![0.0];
                    for n in 1..=p.max_units {
                        // fixed point: delivery head = lift + main loss at the delivered flow
                        let mut q = 0.0;
                        for _ in 0..20 {
                            let h = lift + sys.as_ref().map_or(0.0, |c| c.main_loss_m(q));
                            q = n as f64
                                * drives::ram_delivery_flow_m3_per_s(
                                    *drive_flow_m3_per_s,
                                    st.usable_fall_m,
                                    h,
                                    *efficiency,
                                )
                                .unwrap_or(0.0);
                        }
                        flows.push(q);
                    }
                    let drivable_by_month = std::array::from_fn(|month| {
                        let flow = st.flow_m3_per_s * st.monthly_flow_factors[month];
                        (flow / drive_flow_m3_per_s + 1e-9).floor().max(0.0) as u32
                    });
                    ram = Some(RamUnit {
                        flow_by_units: flows,
                        drivable_by_month,
                    });
                }
                PumpKind::Hand {
                    stroke_volume_m3,
                    strokes_per_s,
                    mechanical_efficiency,
                    spout_height_m,
                } => {
                    let b = &s.boreholes[p.source_index];
                    let human = s.hand.as_ref().map_or(60.0, |h| h.human_power_w);
                    let head = b.static_depth_m + spout_height_m;
                    hand = drives::hand_pump_flow_capped(
                        human,
                        *mechanical_efficiency,
                        head,
                        rho,
                        *stroke_volume_m3,
                        *strokes_per_s,
                    )
                    .unwrap_or(0.0);
                }
            }
            tables.push(table);
            rams.push(ram);
            hand_flow.push(hand);
        }
        let gen_mask = s
            .generator
            .as_ref()
            .map_or([false; 24], |g| inputs::hour_mask(&g.run_hours));
        let grid_mask = s
            .grid
            .as_ref()
            .map_or([false; 24], |g| inputs::hour_mask(&g.supply_hours));
        let hand_mask = s
            .hand
            .as_ref()
            .map_or([false; 24], |g| inputs::hour_mask(&g.pumping_hours));
        let rules = operating_rules(&s);
        let safe_yield = s
            .boreholes
            .iter()
            .map(|b| b.safe_yield_m3_per_s())
            .collect();
        let motor_pumps = (0..tables.len()).filter(|i| tables[*i].is_some()).collect();
        let hand_pumps = (0..s.pumps.len())
            .filter(|i| s.pumps[*i].drive == DriveKind::Hand)
            .collect();
        let ram_pumps = (0..rams.len()).filter(|i| rams[*i].is_some()).collect();
        Ok(Model {
            shape: inputs::demand_shape(&s),
            scheme: s,
            solar_years,
            gen_mask,
            grid_mask,
            hand_mask,
            tables,
            kernels,
            rams,
            hand_flow,
            safe_yield,
            day_month: std::array::from_fn(|d| month_of_day(d) as u8),
            motor_pumps,
            hand_pumps,
            ram_pumps,
            rules,
            counter: std::sync::atomic::AtomicUsize::new(0),
            extra_passes: std::sync::atomic::AtomicUsize::new(0),
            memo: Default::default(),
        })
    }

    /// Forgets the years already run (so a benchmark times the simulation, not the memory).
    pub fn forget_years(&self) {
        self.memo.lock().unwrap_or_else(|e| e.into_inner()).clear();
    }

    /// Year-simulations run so far with this model.
    pub fn simulations_run(&self) -> usize {
        self.counter.load(std::sync::atomic::Ordering::Relaxed)
    }

    /// Weather years a design needs: every year when a solar-driven unit is installed, else one
    /// (its supply does not depend on the weather).
    pub fn weather_years_for(&self, design: &Design) -> usize {
        let solar = self
            .scheme
            .pumps
            .iter()
            .zip(&design.units)
            .any(|(p, n)| *n > 0 && p.drive == DriveKind::Solar);
        if solar { self.weather_years() } else { 1 }
    }

    /// Number of weather years in the ensemble (1 when the supply does not depend on weather).
    pub fn weather_years(&self) -> usize {
        self.solar_years.len().max(1)
    }

    /// Runs one year `year_offset` years after the base year, for weather year `weather`.
    pub fn run_year(
        &self,
        design: &Design,
        year_offset: u32,
        weather: usize,
        keep_hourly: bool,
    ) -> YearResult {
        self.run_year_with(
            design,
            year_offset,
            weather,
            keep_hourly,
            &Scenario::default(),
        )
    }

    /// Annual supplied demand of a year under a scenario, m³.
    pub fn annual_demand_m3(&self, year_offset: u32, sc: &Scenario) -> f64 {
        let dd = daily_demand(&self.scheme, year_offset);
        dd.supplied_m3_per_day * sc.demand_factor * self.shape.iter().sum::<f64>()
    }

    /// One whole year under a scenario.
    ///
    /// Years without the hourly series are remembered: asking again for the same design, year,
    /// weather year and scenario returns the remembered result without running it again (the
    /// count of year-simulations counts each distinct year once).
    pub fn run_year_with(
        &self,
        design: &Design,
        year_offset: u32,
        weather: usize,
        keep_hourly: bool,
        sc: &Scenario,
    ) -> YearResult {
        if keep_hourly {
            self.count_one();
            return self.simulate_year(design, year_offset, weather, true, sc, None);
        }
        let key = YearKey::new(design, year_offset, weather, sc);
        if let Some(Memo::Full(r)) = self.memo_get(&key) {
            return *r;
        }
        let r = self.simulate_year(design, year_offset, weather, false, sc, None);
        self.remember(key, &r);
        r
    }

    /// True when the year meets the scheme's targets. The run stops as soon as the year is sure
    /// to miss them (`abort`); the answer is remembered as [`Self::run_year_with`] does.
    pub fn year_passes(
        &self,
        design: &Design,
        year_offset: u32,
        weather: usize,
        sc: &Scenario,
        abort: Abort,
    ) -> bool {
        let key = YearKey::new(design, year_offset, weather, sc);
        match self.memo_get(&key) {
            Some(Memo::Full(r)) => return year_meets_target(&self.scheme, &r),
            Some(Memo::MissedTarget) => return false,
            Some(Memo::Seen) | None => {}
        }
        let r = self.simulate_year(design, year_offset, weather, false, sc, Some(abort));
        self.remember(key, &r);
        year_meets_target(&self.scheme, &r)
    }

    /// Remembers a year run without the hourly series: whole, or (stopped early) only that it
    /// missed the target.
    fn remember(&self, key: YearKey, r: &YearResult) {
        let entry = if r.aborted {
            Memo::MissedTarget
        } else {
            Memo::Full(Box::new(r.clone()))
        };
        self.memo_put(key, entry);
    }

    /// Adds the year-simulations another model has run (a model built for a sensitivity
    /// case) to this model's count, so a plan's count includes them.
    pub fn count_runs_of(&self, other: &Model) {
        self.counter.fetch_add(
            other.simulations_run(),
            std::sync::atomic::Ordering::Relaxed,
        );
        self.extra_passes.fetch_add(
            other.extra_passes_run(),
            std::sync::atomic::Ordering::Relaxed,
        );
    }

    /// Passes over a year beyond the first, run so far to reach periodic states (every pass
    /// is counted, also of years asked for again).
    pub fn extra_passes_run(&self) -> usize {
        self.extra_passes.load(std::sync::atomic::Ordering::Relaxed)
    }

    fn count_passes(&self, passes: u32) {
        self.extra_passes.fetch_add(
            passes.saturating_sub(1) as usize,
            std::sync::atomic::Ordering::Relaxed,
        );
    }

    fn count_one(&self) {
        self.counter
            .fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    }

    fn memo_get(&self, key: &YearKey) -> Option<Memo> {
        let memo = self.memo.lock().unwrap_or_else(|e| e.into_inner());
        memo.get(key).cloned()
    }

    /// Remembers a year; counts it as a year-simulation the first time its key is seen. A
    /// year is counted once however it was run (stopped early, whole, or both, in either
    /// order, by one thread or two), so the count depends only on which years were asked
    /// for, never on the order or the number of threads.
    fn memo_put(&self, key: YearKey, entry: Memo) {
        let mut memo = self.memo.lock().unwrap_or_else(|e| e.into_inner());
        let better = match (memo.get(&key), &entry) {
            (None, _) => {
                self.count_one();
                true
            }
            (Some(Memo::Seen), Memo::Full(_) | Memo::MissedTarget)
            | (Some(Memo::MissedTarget), Memo::Full(_)) => true,
            _ => false,
        };
        if better {
            let entry = if memo.len() < MEMO_LIMIT || memo.contains_key(&key) {
                entry
            } else {
                Memo::Seen
            };
            memo.insert(key, entry);
        }
    }

    /// Runs one year without consulting or filling the memory of years already run (what the
    /// benchmarks time).
    pub fn simulate_year(
        &self,
        design: &Design,
        year_offset: u32,
        weather: usize,
        keep_hourly: bool,
        sc: &Scenario,
        abort: Option<Abort>,
    ) -> YearResult {
        let dd = daily_demand(&self.scheme, year_offset);
        let mut st = State::new(
            self,
            design,
            dd.supplied_m3_per_day * sc.demand_factor,
            weather,
        );
        st.yield_factor = sc.yield_factor;
        // First guess of the periodic state: the last WARM_UP_DAYS of the year from a full
        // tank and no pumping history. A fuller tank and less drawdown never supply less, so
        // every pass starts at least as well placed as the periodic state it moves towards.
        let warm_start = HOURS_IN_YEAR - WARM_UP_DAYS * 24;
        for h in warm_start..HOURS_IN_YEAR {
            st.step(self, h, None);
        }
        let scale_m3 = st.usable_m3 + st.daily_demand_m3;
        let mut start = st.carry();
        let mut before: Option<(Carry, YearResult)> = None;
        let mut worst: Option<YearResult> = None;
        let mut passes = 0u32;
        let result = loop {
            passes += 1;
            st.restore(&start);
            st.reset_totals();
            let mut hourly = keep_hourly.then(|| Hourly {
                demand_m3: Vec::with_capacity(HOURS_IN_YEAR),
                ..Default::default()
            });
            let mut aborted = false;
            for h in 0..HOURS_IN_YEAR {
                st.step(self, h, hourly.as_mut());
                if abort.is_some_and(|a| {
                    st.short_hours as f64 > a.max_shortfall_hours || st.unmet_m3 > a.max_unmet_m3
                }) {
                    aborted = true;
                    break;
                }
            }
            st.finish_months();
            let mut r = self.year_result(&st, &dd, weather, year_offset, start.v, hourly);
            // A year stopped early misses the target from a start at least as well placed as
            // its periodic state, so it misses it from that state too.
            if aborted {
                r.aborted = true;
                break r;
            }
            let mut end = st.carry();
            if end.agrees_with(&start, scale_m3) {
                r.steady = true;
                break r;
            }
            // No state repeats (the level control's cycle of several days does not fit a
            // whole number of times into the year, so its phase on 31 December wanders from
            // pass to pass) but the year's figures have settled: two passes in a row with the
            // same shortfall hours and unmet volume within 0.1 % of the demand. The worse of
            // the two is reported; after MAX_PASSES the worst pass after the first.
            if let Some((_, r0)) = &before {
                let settled = r0.annual.shortfall_hours == r.annual.shortfall_hours
                    && (r0.annual.unmet_m3 - r.annual.unmet_m3).abs()
                        <= 1e-3 * r.annual.demand_m3.max(1e-9);
                if settled {
                    let r0 = before.take().map(|(_, r0)| r0).expect("checked above");
                    break if worse(&r0, &r) { r0 } else { r };
                }
                if passes >= MAX_PASSES {
                    let w = worst
                        .take()
                        .map_or(r.clone(), |w| if worse(&w, &r) { w } else { r.clone() });
                    break w;
                }
                worst = Some(match worst.take() {
                    Some(w) if worse(&w, &r) => w,
                    _ => r.clone(),
                });
            }
            // Whole years at once while the tank stays clear of both bounds: the level falls
            // by the same amount each year until it meets one.
            let low = st.low_m3.iter().copied().fold(f64::INFINITY, f64::min);
            let fall = start.v - end.v;
            if !st.touched_bound && fall > 0.0 && low.is_finite() {
                let years = (low / fall).floor() - 1.0;
                if years >= 1.0 {
                    end.v = (end.v - years * fall).max(0.0);
                }
            }
            before = Some((start, r));
            start = end;
        };
        self.count_passes(passes);
        let mut result = result;
        result.passes = passes;
        debug_assert!(
            result.aborted
                || (result.annual.pumped_m3
                    - result.annual.delivered_m3
                    - result.annual.overflow_m3
                    - result.storage_change_m3)
                    .abs()
                    <= 1e-9 * result.annual.demand_m3.max(1.0),
            "the year's water balance does not close"
        );
        result
    }

    /// The result of one pass over the year, from the state after it.
    fn year_result(
        &self,
        st: &State,
        dd: &DailyDemand,
        weather: usize,
        year_offset: u32,
        start_level_m3: f64,
        hourly: Option<Hourly>,
    ) -> YearResult {
        let s = &self.scheme;
        let annual = Totals::sum(&st.months);
        let motor_pumped = annual.pumped_m3 - annual.hand_pumped_m3 - annual.ram_pumped_m3;
        let domestic_share = if dd.consumed_m3_per_day > 0.0 {
            dd.domestic_m3_per_day / dd.consumed_m3_per_day
        } else {
            1.0
        };
        let delivered_consumed = annual.delivered_m3 * (1.0 - s.demand.losses_fraction);
        YearResult {
            year: s.info.base_year + year_offset as i32,
            weather: if self.solar_years.is_empty() {
                "weather-independent drive".into()
            } else {
                self.solar_years[weather.min(self.solar_years.len() - 1)]
                    .label
                    .clone()
            },
            population: dd.population,
            demand_met_fraction: annual.demand_met_fraction(),
            annual,
            months: st.months,
            longest_dry_spell_hours: st.longest_spell,
            specific_energy_kwh_per_m3: (motor_pumped > 1e-9)
                .then(|| (annual.energy_kwh / motor_pumped).max(0.0)),
            delivered_m3_per_person_day: if dd.population > 0.0 {
                delivered_consumed * domestic_share / dd.population / 365.0
            } else {
                0.0
            },
            drawdown_margin_m: st.min_margin,
            deepest_dynamic_level_m: st.deepest,
            dry_run_stop_hours: st.dry_run_hours,
            yield_capped_hours: st.capped_hours,
            beyond_curve_hours: st.beyond_hours,
            boreholes: st.bh_year.clone(),
            start_level_m3,
            end_level_m3: st.v,
            storage_change_m3: st.v - start_level_m3,
            passes: 0,
            steady: false,
            aborted: false,
            hourly,
        }
    }

    /// Runs every weather year and summarises reliability.
    pub fn run_ensemble(&self, design: &Design, year_offset: u32) -> Ensemble {
        use rayon::prelude::*;
        let years: Vec<YearResult> = (0..self.weather_years_for(design))
            .into_par_iter()
            .map(|w| self.run_year(design, year_offset, w, false))
            .collect();
        summarise(&self.scheme, years)
    }

    /// Runs every year from the base year to the horizon.
    pub fn horizon(&self, design: &Design) -> Vec<HorizonRow> {
        use rayon::prelude::*;
        (0..=self.scheme.info.horizon_years)
            .into_par_iter()
            .map(|y| horizon_row(&self.scheme, &self.run_ensemble(design, y), y))
            .collect()
    }
}

/// The horizon-table row of an ensemble run `year_offset` years after the base year.
pub fn horizon_row(s: &Scheme, e: &Ensemble, year_offset: u32) -> HorizonRow {
    let dd = daily_demand(s, year_offset);
    HorizonRow {
        year: e.year,
        population: dd.population,
        demand_m3_per_day: dd.supplied_m3_per_day,
        shortfall_hours: e.judged_shortfall_hours,
        demand_met_fraction: e.judged_demand_met_fraction,
        meets_target: meets_target(s, e),
    }
}

/// True when one year meets every target the scheme sets.
pub fn year_meets_target(s: &Scheme, y: &YearResult) -> bool {
    let t = &s.targets;
    !y.aborted
        && t.max_shortfall_hours_per_year
            .is_none_or(|m| y.annual.shortfall_hours as f64 <= m + 1e-9)
        && t.min_demand_met_fraction
            .is_none_or(|m| y.demand_met_fraction >= m - 1e-12)
        // the water each person gets, when anyone lives there (the supply-per-person rule)
        && (y.population <= 0.0
            || y.delivered_m3_per_person_day
                >= t.min_supply_m3_per_person_day * (1.0 - 1e-9))
}

/// Weather years that may miss the target while the ensemble still meets it: all but the
/// nearest-rank share the target is judged on (15 of 30 for the median, 3 of 30 for 1 in 10).
pub fn years_allowed_to_fail(judged_on: JudgedOn, n: usize) -> usize {
    let p = match judged_on {
        JudgedOn::Median => 0.5,
        JudgedOn::P90 => 0.9,
    };
    n - ((p * n as f64).ceil() as usize).clamp(1, n.max(1))
}

/// True when the ensemble meets the scheme's targets: no more weather years miss the target
/// than the judged percentile allows (with one weather year: that year meets it).
pub fn meets_target(_s: &Scheme, e: &Ensemble) -> bool {
    e.years_failing <= e.years_allowed_to_fail
}

/// Summarises the weather years of one design.
pub fn summarise(s: &Scheme, years: Vec<YearResult>) -> Ensemble {
    let mut sh: Vec<f64> = years
        .iter()
        .map(|y| y.annual.shortfall_hours as f64)
        .collect();
    sh.sort_by(f64::total_cmp);
    // demand met sorted from the best year down, so that the same rank picks the
    // 1-in-10 bad year for both figures
    let mut met: Vec<f64> = years.iter().map(|y| y.demand_met_fraction).collect();
    met.sort_by(|a, b| b.total_cmp(a));
    let judged_on = s.targets.judged_on;
    let median_sh = nearest_rank(&sh, 50.0);
    let p90_sh = nearest_rank(&sh, 90.0);
    let median_met = nearest_rank(&met, 50.0);
    let p10_met = nearest_rank(&met, 90.0);
    let (judged_sh, judged_met) = match judged_on {
        JudgedOn::Median => (median_sh, median_met),
        JudgedOn::P90 => (p90_sh, p10_met),
    };
    let representative = years
        .iter()
        .position(|y| (y.annual.shortfall_hours as f64 - judged_sh).abs() < 0.5)
        .unwrap_or(0);
    Ensemble {
        year: years.first().map_or(s.info.base_year, |y| y.year),
        years_run: years.len(),
        median_shortfall_hours: median_sh,
        p90_shortfall_hours: p90_sh,
        worst_shortfall_hours: sh.last().copied().unwrap_or(0.0),
        median_demand_met_fraction: median_met,
        p10_demand_met_fraction: p10_met,
        worst_demand_met_fraction: met.last().copied().unwrap_or(1.0),
        longest_dry_spell_hours: years
            .iter()
            .map(|y| y.longest_dry_spell_hours)
            .max()
            .unwrap_or(0),
        judged_on,
        judged_shortfall_hours: judged_sh,
        judged_demand_met_fraction: judged_met,
        years_failing: years.iter().filter(|y| !year_meets_target(s, y)).count(),
        years_allowed_to_fail: years_allowed_to_fail(judged_on, years.len()),
        representative,
        years,
    }
}

/// The operating rules the engine follows, in plain words, for results and the plan.
pub fn operating_rules(s: &Scheme) -> Vec<String> {
    let mut r = vec![
        "Hourly time step over a 365-day year; solar time is taken as clock time.".to_string(),
        "Each year starts in its periodic steady state: the state it ends in (tank level, level control and the boreholes' pumping history). It is found by running the year again from its own end until start and end agree (within 1e-10 of the usable volume plus a day's demand), starting from the state the last 31 days of the year reach from a full tank with no pumping history; a year whose tank stays clear of both full and empty is moved on by whole years at once. Each weather year and each demand year has its own periodic state; the tank's starting level in the file plays no part.".to_string(),
        format!(
            "Level control: motor pumps start when the tank is below {:.0} % of its usable volume at the start of an hour and stop when it is full; when the tank fills part-way through an hour the pumps stop, and restart within the hour each time the level falls to the start level (with a start level of 100 % they hold the tank full while the drive lasts).",
            s.tank.pump_start_level_fraction * 100.0
        ),
        format!(
            "Usable storage is {:.0} % of the tank capacity.",
            s.tank.usable_fraction * 100.0
        ),
        "Demand is served from the tank; demand the tank cannot serve is shortfall, and an hour with any unmet demand counts as a shortfall hour.".to_string(),
        format!(
            "Losses ({:.0} %) are a share of the water supplied (IWA water-balance convention): supplied = consumed / (1 − losses).",
            s.demand.losses_fraction * 100.0
        ),
        "Each borehole's pumping is capped at its safe yield (tested yield × safe-yield fraction); a variable-speed pump slows to the cap, a fixed-speed pump is throttled to it.".to_string(),
        "Dry-run protection: a pump stops for the hour when the dynamic water level would fall below the intake minus the submergence margin.".to_string(),
        format!(
            "Aquifer drawdown: Theis superposition of the hourly pumping of the last {KERNEL_HOURS} hours, plus the mean rate of the {TAIL_DAYS} days before as a constant-rate tail; Jacob's well loss BQ + CQ² is added at the current flow."
        ),
        "A pump's input power in its curve is taken as the electrical input (wire-to-water); operating points outside the curve's table are flagged, not extrapolated.".to_string(),
    ];
    if s.uses_solar() {
        r.push("Solar drive: the pump speed follows the power available (affinity laws); with several units on one array the engine runs the number of units, each with an equal share of the power, that delivers the most water, and a unit stays off below its start power or when its speed cannot reach the static head.".to_string());
        r.push("PV power per hour: Collares-Pereira & Rabl hourly split of the daily total, Erbs daily diffuse fraction, Liu & Jordan diffuse split, isotropic-sky tilted plane, NOCT cell temperature with the monthly mean air temperature, temperature coefficient and the derating chain.".to_string());
        match &s.weather.mode {
            WeatherMode::MeanDays => r.push("Weather: every day of a month is that month's mean day (no cloudy spells): reliability is optimistic for solar pumping.".to_string()),
            WeatherMode::Synthetic { seed, years } => r.push(format!("Weather: {years} synthetic years of daily clearness with day-to-day persistence (seed {seed}); the target is judged on the {} of shortfall hours over those years.", match s.targets.judged_on { JudgedOn::Median => "median", JudgedOn::P90 => "90th percentile (1 year in 10)" })),
            WeatherMode::File { path } => r.push(format!("Weather: hourly global horizontal irradiance and air temperature from `{}`; every year in the file is run.", path.file_name().map(|f| f.to_string_lossy().into_owned()).unwrap_or_default())),
        }
    }
    if s.pumps
        .iter()
        .any(|p| matches!(p.drive, DriveKind::Generator | DriveKind::Grid))
    {
        r.push("Generator and grid pumps run at rated speed within their allowed hours; as many units run as the drive's power allows (each drawing its curve power at the operating point); the generator runs only while pumps run, and its fuel follows the linear fuel curve a·P_rated + b·P_out.".to_string());
    }
    if s.pumps
        .iter()
        .any(|p| matches!(p.kind, PumpKind::Displacement { .. }))
    {
        r.push("Positive-displacement pumps are read from their measured table, not the affinity laws: flow linear in input power along each measured head and linear in head between heads, never extrapolated (below the lowest head the lowest row is used, above the highest the flow falls to zero at the stall head, both counted as hours outside the table); the operating point is where the table's flow meets the system curve (bisection); units on one drive share its power equally, and on a generator or the mains a unit runs at its rated power (a fixed-speed unit at its row's power); held to the safe yield, a displacement pump runs that share of the hour.".to_string());
    }
    if s.pumps.iter().any(|p| p.drive == DriveKind::Hand) {
        r.push("Hand pumps serve demand directly at the well during the pumping hours (one person per pump at the stated sustained power); demand outside those hours must come from the tank.".to_string());
    }
    if s.pumps.iter().any(|p| p.drive == DriveKind::Ram) {
        r.push("Rams run continuously; as many rams run as the month's stream flow can drive; what they deliver to a full tank overflows.".to_string());
    }
    r.push("Pump types on the same borehole are solved one after another, each against its own system curve; drive power left by one type goes to the next, in file order.".to_string());
    r
}

/// Drawdown left by earlier pumping at borehole b, m: Theis superposition over the flow ring
/// `q_hist` (doubled, see [`State`]) plus the tail at the mean rate of the last days.
fn past_drawdown(
    m: &Model,
    b: usize,
    q_hist: &[f64; 2 * KERNEL_HOURS],
    hist_pos: usize,
    day_total_m3: f64,
) -> f64 {
    let Some(k) = &m.kernels[b] else {
        return 0.0;
    };
    // hours 23 … 1 ago, oldest first, against the kernel in the same order
    let past = &q_hist[hist_pos + 1..hist_pos + KERNEL_HOURS];
    // four partial sums (independent chains of additions, so the sum pipelines)
    let mut acc = [0.0f64; 4];
    let (qs, qr) = past.as_chunks::<4>();
    let (ks, kr) = k.k_rev.as_chunks::<4>();
    for (q4, k4) in qs.iter().zip(ks) {
        for j in 0..4 {
            acc[j] += q4[j] * k4[j];
        }
    }
    let tail: f64 = qr.iter().zip(kr).map(|(q, c)| q * c).sum();
    let s = (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail;
    let mean_q = day_total_m3 / (TAIL_DAYS as f64 * 86_400.0);
    s + mean_q * k.tail
}

/// The level `v` (m³) at the end of an hour in a tank of `usable_m3`: above the usable volume
/// the rest overflows. Returns (level, overflow), m³.
#[inline]
fn spill(usable_m3: f64, v: f64) -> (f64, f64) {
    if v > usable_m3 {
        (usable_m3, v - usable_m3)
    } else {
        (v, 0.0)
    }
}

/// Whether year `a` is worse than year `b`: more shortfall hours, then less water delivered.
fn worse(a: &YearResult, b: &YearResult) -> bool {
    (a.annual.shortfall_hours, -a.annual.delivered_m3)
        > (b.annual.shortfall_hours, -b.annual.delivered_m3)
}

/// What one year hands to the next (see [`State::carry`]).
#[derive(Debug, Clone)]
struct Carry {
    v: f64,
    pumps_on: bool,
    /// Per borehole: the last day's hourly mean flows, m³/s, oldest first.
    hours: Vec<[f64; KERNEL_HOURS]>,
    /// Per borehole: the last days' volumes, m³, oldest first.
    days: Vec<[f64; TAIL_DAYS]>,
}

impl Carry {
    /// Whether `self` (a year's end) agrees with `start` within [`STEADY_TOLERANCE`]; `scale_m3`
    /// is the usable volume plus a day's demand.
    fn agrees_with(&self, start: &Carry, scale_m3: f64) -> bool {
        let close = |a: f64, b: f64, scale: f64| (a - b).abs() <= HISTORY_TOLERANCE * scale;
        if self.pumps_on != start.pumps_on
            || (self.v - start.v).abs() > STEADY_TOLERANCE * scale_m3.max(1e-9)
        {
            return false;
        }
        let flows = |c: &Carry| c.hours.iter().flatten().fold(0.0f64, |m, x| m.max(x.abs()));
        let q_scale = flows(self).max(flows(start)).max(1e-12);
        let d_scale = self
            .days
            .iter()
            .chain(&start.days)
            .flatten()
            .fold(0.0f64, |m, x| m.max(x.abs()))
            .max(1e-9);
        self.hours
            .iter()
            .flatten()
            .zip(start.hours.iter().flatten())
            .all(|(a, b)| close(*a, *b, q_scale))
            && self
                .days
                .iter()
                .flatten()
                .zip(start.days.iter().flatten())
                .all(|(a, b)| close(*a, *b, d_scale))
    }
}

/// The state of one year's run.
struct State<'a> {
    design: &'a Design,
    /// PV power per watt-peak of this weather year, every hour (empty without solar).
    w_per_wp: &'a [f64],
    /// Motor pump types with units installed and a table, in the model's order.
    motors: Vec<ActiveMotor<'a>>,
    daily_demand_m3: f64,
    usable_m3: f64,
    v: f64,
    pumps_on: bool,
    /// Per borehole: hourly flow history ring (m³/s), daily sums ring (m³), counters.
    /// Doubled ring (slot i and i + KERNEL_HOURS hold the same hour) so the last hours are
    /// one contiguous slice.
    q_hist: Vec<[f64; 2 * KERNEL_HOURS]>,
    day_sums: Vec<[f64; TAIL_DAYS]>,
    /// Running sum of `day_sums` per borehole.
    day_total: Vec<f64>,
    today: Vec<f64>,
    hist_pos: usize,
    /// Slot of `day_sums` the next closed day goes into (the oldest day's slot).
    day_pos: usize,
    /// Whether the tank overflowed or ran dry this pass (the level met a bound).
    touched_bound: bool,
    months: [Totals; 12],
    /// Running annual shortfall hours and unmet m³ (for the early stop); the other annual
    /// totals are the sums of the months.
    short_hours: u32,
    unmet_m3: f64,
    spell: u32,
    longest_spell: u32,
    min_margin: Option<f64>,
    deepest: Option<f64>,
    dry_run_hours: u32,
    capped_hours: u32,
    beyond_hours: u32,
    yield_factor: f64,
    /// Which hours can run no pump (see [`State::quiet`]): solar power below this (W) starts
    /// no solar pump (infinite without solar units), and whether units of the other drives
    /// are installed.
    solar_start_w: f64,
    gen_units: bool,
    grid_units: bool,
    hand_units: bool,
    ram_units: bool,
    /// Lowest tank level of each month so far, m³ (∞ before its first hour); the months'
    /// lowest level fractions are set from it by [`State::finish_months`].
    low_m3: [f64; 12],
    /// Scratch per borehole, reused every hour.
    cap: Vec<f64>,
    /// Per borehole: the year's figures, and this hour's dry-run stop and safe-yield cap.
    bh_year: Vec<BoreholeYear>,
    bh_dry: Vec<bool>,
    bh_capped: Vec<bool>,
    bh_hand: Vec<f64>,
    bh_motor: Vec<f64>,
}

/// A motor pump type with units installed, as the hourly step needs it.
struct ActiveMotor<'a> {
    /// Index in the scheme's pumps.
    i: usize,
    units: u32,
    drive: DriveKind,
    /// Borehole index.
    b: usize,
    table: &'a hydraulics::PumpTables,
}

impl<'a> State<'a> {
    fn new(m: &'a Model, design: &'a Design, daily_demand_m3: f64, weather: usize) -> State<'a> {
        let usable = design.tank_m3 * m.scheme.tank.usable_fraction;
        let nb = m.scheme.boreholes.len();
        // full: the first guess of the periodic state starts above it (see `simulate_year`)
        let v = usable;
        let w_per_wp: &[f64] = if m.solar_years.is_empty() {
            &[]
        } else {
            &m.solar_years[weather.min(m.solar_years.len() - 1)].w_per_wp
        };
        let motors: Vec<ActiveMotor> = m
            .motor_pumps
            .iter()
            .filter_map(|&i| {
                let units = design.units.get(i).copied().unwrap_or(0);
                let table = m.tables[i].as_ref()?;
                let p = &m.scheme.pumps[i];
                (units > 0).then_some(ActiveMotor {
                    i,
                    units,
                    drive: p.drive,
                    b: p.source_index,
                    table,
                })
            })
            .collect();
        let installed = |kind: DriveKind| {
            m.scheme
                .pumps
                .iter()
                .zip(&design.units)
                .any(|(p, n)| *n > 0 && p.drive == kind)
        };
        let solar_start_w = motors
            .iter()
            .filter(|am| am.drive == DriveKind::Solar)
            .map(|am| am.table.start_power_w)
            .fold(f64::INFINITY, f64::min);
        let ram_units = m
            .ram_pumps
            .iter()
            .any(|&i| design.units.get(i).copied().unwrap_or(0) > 0);
        State {
            solar_start_w,
            gen_units: installed(DriveKind::Generator),
            grid_units: installed(DriveKind::Grid),
            hand_units: installed(DriveKind::Hand),
            ram_units,
            design,
            w_per_wp,
            motors,
            daily_demand_m3,
            usable_m3: usable,
            v,
            pumps_on: v < usable * m.scheme.tank.pump_start_level_fraction,
            q_hist: vec![[0.0; 2 * KERNEL_HOURS]; nb],
            day_sums: vec![[0.0; TAIL_DAYS]; nb],
            day_total: vec![0.0; nb],
            today: vec![0.0; nb],
            hist_pos: 0,
            day_pos: 0,
            touched_bound: false,
            months: [Totals::new(); 12],
            low_m3: [f64::INFINITY; 12],
            short_hours: 0,
            unmet_m3: 0.0,
            spell: 0,
            longest_spell: 0,
            min_margin: None,
            deepest: None,
            dry_run_hours: 0,
            capped_hours: 0,
            beyond_hours: 0,
            yield_factor: 1.0,
            cap: vec![0.0; nb],
            bh_year: m
                .scheme
                .boreholes
                .iter()
                .map(|b| BoreholeYear {
                    name: b.name.clone(),
                    ..Default::default()
                })
                .collect(),
            bh_dry: vec![false; nb],
            bh_capped: vec![false; nb],
            bh_hand: vec![0.0; nb],
            bh_motor: vec![0.0; nb],
        }
    }

    /// The state one year hands to the next: the tank level, the level control and the
    /// boreholes' pumping history (oldest day and hour first).
    fn carry(&self) -> Carry {
        let hours = self
            .q_hist
            .iter()
            .map(|r| {
                let mut o = [0.0; KERNEL_HOURS];
                for (j, x) in o.iter_mut().enumerate() {
                    *x = r[self.hist_pos + j];
                }
                o
            })
            .collect();
        let days = self
            .day_sums
            .iter()
            .map(|r| {
                let mut o = [0.0; TAIL_DAYS];
                for (j, x) in o.iter_mut().enumerate() {
                    *x = r[(self.day_pos + j) % TAIL_DAYS];
                }
                o
            })
            .collect();
        Carry {
            v: self.v,
            pumps_on: self.pumps_on,
            hours,
            days,
        }
    }

    /// Starts the next pass from `c` (the day's running sums are empty at midnight).
    fn restore(&mut self, c: &Carry) {
        self.v = c.v;
        self.pumps_on = c.pumps_on;
        self.hist_pos = 0;
        self.day_pos = 0;
        for b in 0..self.q_hist.len() {
            for j in 0..KERNEL_HOURS {
                self.q_hist[b][j] = c.hours[b][j];
                self.q_hist[b][j + KERNEL_HOURS] = c.hours[b][j];
            }
            self.day_sums[b] = c.days[b];
            // summed oldest first, as the running sum would be rebuilt from scratch
            self.day_total[b] = c.days[b].iter().sum();
            self.today[b] = 0.0;
        }
    }

    fn reset_totals(&mut self) {
        self.touched_bound = false;
        self.months = [Totals::new(); 12];
        self.low_m3 = [f64::INFINITY; 12];
        self.short_hours = 0;
        self.unmet_m3 = 0.0;
        self.spell = 0;
        self.longest_spell = 0;
        self.min_margin = None;
        self.deepest = None;
        for y in &mut self.bh_year {
            *y = BoreholeYear {
                name: std::mem::take(&mut y.name),
                ..Default::default()
            };
        }
        self.dry_run_hours = 0;
        self.capped_hours = 0;
        self.beyond_hours = 0;
    }

    /// Sets each month's lowest level fraction from its lowest level: the level over the
    /// usable volume (0 without usable volume), 1 for a month not run. Dividing the least
    /// level once gives the least of the hourly fractions bit for bit (rounded division by a
    /// positive number keeps the order).
    fn finish_months(&mut self) {
        for (t, low) in self.months.iter_mut().zip(self.low_m3) {
            t.lowest_level_fraction = if low.is_infinite() {
                1.0
            } else if self.usable_m3 > 0.0 {
                (low / self.usable_m3).min(1.0)
            } else {
                0.0
            };
        }
    }

    /// Whether no pump can run in hour `h`: no hand pumps in their hours and no ram, and
    /// either no motor pump has drive power (too little solar power to start any solar pump,
    /// the night; no generator or grid pump in that drive's hours) or the level control
    /// keeps the motor pumps off (tank above the start level and the pumps stopped).
    /// [`State::step`] then takes [`State::quiet_step`], which does the same arithmetic as
    /// the full step with every flow zero (bit for bit: the flows' terms are +0.0 and drop
    /// out).
    #[inline]
    fn quiet(&self, m: &Model, h: usize) -> bool {
        let hour = h % 24;
        let solar_w = if self.w_per_wp.is_empty() {
            0.0
        } else {
            self.design.array_w * self.w_per_wp[h]
        };
        // the full step tries a solar pump when the power is positive and reaches its start
        // power
        let solar_can_start = solar_w > 0.0 && solar_w >= self.solar_start_w;
        let drive = solar_can_start
            || (self.gen_units && m.gen_mask[hour])
            || (self.grid_units && m.grid_mask[hour]);
        // the level control of the full step: the pumps are on, or the level is below the
        // start level at the start of the hour
        let called =
            self.pumps_on || self.v < self.usable_m3 * m.scheme.tank.pump_start_level_fraction;
        !(self.ram_units || (self.hand_units && m.hand_mask[hour]) || (drive && called))
    }

    /// One hour in which no pump runs: the tank only drains (see [`State::quiet`]).
    fn quiet_step(&mut self, m: &Model, h: usize) {
        let s = &m.scheme;
        let hour = h % 24;
        let month = m.day_month[h / 24] as usize;
        let demand = self.daily_demand_m3 * m.shape[h];
        if !self.pumps_on && self.v < self.usable_m3 * s.tank.pump_start_level_fraction {
            self.pumps_on = true;
        }
        let (v, overflow) = spill(self.usable_m3, self.v - demand);
        let (shortfall, short_hour) = self.close_level(month, v);
        for b in 0..self.q_hist.len() {
            self.q_hist[b][self.hist_pos] = 0.0;
            self.q_hist[b][self.hist_pos + KERNEL_HOURS] = 0.0;
        }
        self.advance_history(hour);
        {
            let t = &mut self.months[month];
            t.demand_m3 += demand;
            t.delivered_m3 += demand - shortfall;
            t.unmet_m3 += shortfall;
            t.overflow_m3 += overflow;
            t.shortfall_hours += u32::from(short_hour);
        }
    }

    /// Sets the level at the end of hour of month `month` from `v` (m³; below empty the rest
    /// is unmet demand) and books the shortfall: the month's lowest level, the year's
    /// shortfall hours and unmet volume so far and the dry spell. Returns (shortfall m³,
    /// whether the hour counts as a shortfall hour).
    #[inline]
    fn close_level(&mut self, month: usize, v: f64) -> (f64, bool) {
        let (v, shortfall) = if v < 0.0 { (0.0, -v) } else { (v, 0.0) };
        self.touched_bound |= shortfall > 0.0 || v >= self.usable_m3;
        self.v = v;
        self.low_m3[month] = self.low_m3[month].min(v);
        let short_hour = shortfall > 1e-6;
        self.short_hours += u32::from(short_hour);
        self.unmet_m3 += shortfall;
        if short_hour {
            self.spell += 1;
            self.longest_spell = self.longest_spell.max(self.spell);
        } else {
            self.spell = 0;
        }
        (shortfall, short_hour)
    }

    /// Moves the aquifer history on by the hour just written, closing the day at hour 23.
    #[inline]
    fn advance_history(&mut self, hour: usize) {
        self.hist_pos += 1;
        if self.hist_pos == KERNEL_HOURS {
            self.hist_pos = 0;
        }
        if hour == 23 {
            for b in 0..self.day_sums.len() {
                let slot = &mut self.day_sums[b][self.day_pos];
                self.day_total[b] += self.today[b] - *slot;
                *slot = self.today[b];
                self.today[b] = 0.0;
            }
            self.day_pos += 1;
            if self.day_pos == TAIL_DAYS {
                self.day_pos = 0;
            }
        }
    }

    fn step(&mut self, m: &Model, h: usize, hourly: Option<&mut Hourly>) {
        if hourly.is_none() && self.quiet(m, h) {
            self.quiet_step(m, h);
            return;
        }
        let s = &m.scheme;
        let keep_hourly = hourly.is_some();
        let hour = (h % 24) as u8;
        let month = m.day_month[h / 24] as usize;
        let demand = self.daily_demand_m3 * m.shape[h];
        let nb = s.boreholes.len();
        // remaining safe yield this hour (m³/s), and the hour's flows per borehole
        let cap = &mut self.cap;
        let bh_hand = &mut self.bh_hand;
        let bh_motor = &mut self.bh_motor;
        // one loop (a `fill` of these short vectors would be a library call every hour)
        for (b, y) in m.safe_yield.iter().enumerate() {
            cap[b] = y * self.yield_factor;
            self.bh_dry[b] = false;
            self.bh_capped[b] = false;
            bh_hand[b] = 0.0;
            bh_motor[b] = 0.0;
        }

        // hand pumps serve demand directly
        let mut hand_served = 0.0;
        if m.hand_mask[hour as usize] {
            for &i in &m.hand_pumps {
                let p = &s.pumps[i];
                let n = self.design.units.get(i).copied().unwrap_or(0);
                if n == 0 {
                    continue;
                }
                let b = p.source_index;
                let q = (m.hand_flow[i] * n as f64).min(cap[b]);
                let served = (q * 3600.0).min(demand - hand_served);
                hand_served += served;
                cap[b] -= served / 3600.0;
                bh_hand[b] += served / 3600.0;
            }
        }
        let d = demand - hand_served;

        // level control, read at the start of the hour
        if !self.pumps_on && self.v < self.usable_m3 * s.tank.pump_start_level_fraction {
            self.pumps_on = true;
        }

        // drive power available
        let solar_w = if self.w_per_wp.is_empty() {
            0.0
        } else {
            self.design.array_w * self.w_per_wp[h]
        };
        let mut pool_solar = solar_w;
        let mut pool_gen = match &s.generator {
            Some(g) if m.gen_mask[hour as usize] => g.rated_w,
            _ => 0.0,
        };
        let mut pool_grid = match &s.grid {
            Some(g) if m.grid_mask[hour as usize] => g.available_w,
            _ => 0.0,
        };
        let available = pool_solar + pool_gen + pool_grid;

        // motor pumps
        let mut motor_q = 0.0;
        let (mut p_solar, mut p_gen, mut p_grid) = (0.0, 0.0, 0.0);
        let mut head = 0.0;
        let mut speed = 0.0;
        let mut depth_rec: Option<f64> = None;
        // What happened this hour, counted once per hour however many pump types share it:
        // a pump stopped by dry-run protection, a pump that ran held at the safe yield, a pump
        // that ran beyond its tabulated curve.
        let (mut dry_now, mut capped_now, mut beyond_now) = (false, false, false);
        if self.pumps_on {
            for am in &self.motors {
                let p = &s.pumps[am.i];
                let n_inst = am.units;
                let t = am.table;
                let b = am.b;
                let bore = &s.boreholes[b];
                let pool_now = match am.drive {
                    DriveKind::Solar => pool_solar,
                    DriveKind::Generator => pool_gen,
                    _ => pool_grid,
                };
                if pool_now <= 0.0 || pool_now < t.start_power_w {
                    continue; // no drive power for this type this hour
                }
                let s_past = past_drawdown(m, b, &self.q_hist[b], self.hist_pos, self.day_total[b]);
                if s_past > t.max_offset_m {
                    dry_now = true;
                    continue;
                }
                let pool = match p.drive {
                    DriveKind::Solar => &mut pool_solar,
                    DriveKind::Generator => &mut pool_gen,
                    _ => &mut pool_grid,
                };
                let variable = p.drive == DriveKind::Solar;
                let mut best: Option<(u32, hydraulics::Point)> = None;
                if variable {
                    // how many units run: the count that delivers the most water
                    let g = t.grid(s_past);
                    let mut best_q = 0.0;
                    for n in 1..=n_inst {
                        // below the start power of n units nothing larger starts either
                        if *pool < t.start_power_w * n as f64 {
                            break;
                        }
                        let (q, pt) = t.variable_at(n, *pool, g);
                        if q > best_q {
                            best_q = q;
                            best = pt.map(|pt| (n, pt));
                        }
                    }
                    // head and speed only for the hourly record
                    if let (Some((n, pt)), true) = (best.as_mut(), keep_hourly)
                        && let Some(full) = t.point(*n, *pool, s_past)
                    {
                        pt.head_m = full.head_m;
                        pt.speed_ratio = full.speed_ratio;
                    }
                } else {
                    for n in (1..=n_inst).rev() {
                        let pt = t.point(n, 0.0, s_past);
                        if let Some(pt) = pt.filter(|pt| pt.power_w <= *pool + 1e-9) {
                            best = Some((n, pt));
                            break;
                        }
                    }
                }
                let Some((n, mut pt)) = best else { continue };
                if pt.flow_m3_per_s <= 0.0 {
                    continue;
                }
                // safe-yield cap
                let capped = pt.flow_m3_per_s > cap[b];
                if capped {
                    let q_cap = cap[b].max(0.0);
                    if q_cap <= 1e-12 {
                        continue;
                    }
                    if variable {
                        if let Some(pw) = t.power_for_flow(n, q_cap, s_past) {
                            pt.power_w = pw.min(pt.power_w);
                        }
                        pt.flow_m3_per_s = q_cap;
                    } else {
                        let pw = t.fixed_power_for_flow(n, q_cap, &pt);
                        pt.power_w = pw;
                        pt.flow_m3_per_s = q_cap;
                    }
                }
                // dry-run protection
                let depth =
                    bore.static_depth_m + s_past + t.system.well_drawdown_m(pt.flow_m3_per_s);
                let limit = bore.intake_depth_m - bore.submergence_margin_m;
                if depth > limit {
                    dry_now = true;
                    self.bh_dry[b] = true;
                    continue;
                }
                capped_now |= capped;
                self.bh_capped[b] |= capped;
                let margin = limit - depth;
                self.min_margin = Some(self.min_margin.map_or(margin, |x: f64| x.min(margin)));
                self.deepest = Some(self.deepest.map_or(depth, |x: f64| x.max(depth)));
                let by = &mut self.bh_year[b];
                by.drawdown_margin_m = Some(by.drawdown_margin_m.map_or(margin, |x| x.min(margin)));
                by.deepest_dynamic_level_m =
                    Some(by.deepest_dynamic_level_m.map_or(depth, |x| x.max(depth)));
                depth_rec = Some(depth);
                beyond_now |= pt.beyond_table;
                *pool -= pt.power_w;
                match p.drive {
                    DriveKind::Solar => p_solar += pt.power_w,
                    DriveKind::Generator => p_gen += pt.power_w,
                    _ => p_grid += pt.power_w,
                }
                cap[b] -= pt.flow_m3_per_s;
                bh_motor[b] += pt.flow_m3_per_s;
                motor_q += pt.flow_m3_per_s;
                head = pt.head_m;
                speed = pt.speed_ratio;
            }
        }

        // rams run continuously
        let mut ram_q = 0.0;
        for &i in &m.ram_pumps {
            let Some(r) = &m.rams[i] else { continue };
            let n_inst = self.design.units.get(i).copied().unwrap_or(0);
            let n = n_inst
                .min(r.drivable_by_month[month])
                .min(r.flow_by_units.len() as u32 - 1);
            ram_q += r.flow_by_units[n as usize];
        }

        // tank balance over the hour
        let motor = motor_q * 3600.0;
        let ram = ram_q * 3600.0;
        let v0 = self.v;
        let mut run_fraction = if motor > 0.0 { 1.0 } else { 0.0 };
        let mut overflow = 0.0;
        let v;
        if motor > 0.0 {
            let net = motor + ram - d;
            if v0 + net > self.usable_m3 {
                self.touched_bound = true;
                let f = ((self.usable_m3 - v0) / net).clamp(0.0, 1.0);
                run_fraction = f;
                let rest = (ram - d) * (1.0 - f);
                self.pumps_on = false;
                if rest >= 0.0 {
                    overflow = rest;
                    v = self.usable_m3;
                } else {
                    // The level falls for the rest of the hour; each time it reaches the start
                    // level the pumps restart and refill the tank (m³ and hours of this hour).
                    let drain = d - ram;
                    let left = 1.0 - f;
                    let band = self.usable_m3 * (1.0 - s.tank.pump_start_level_fraction);
                    if drain * left <= band {
                        v = self.usable_m3 - drain * left;
                    } else if band <= 1e-12 * self.usable_m3 {
                        // start level 100 %: the pumps hold the tank full
                        run_fraction += left * drain / motor;
                        v = self.usable_m3;
                        self.pumps_on = true;
                    } else {
                        let t_off = band / drain;
                        let t_on = band / net;
                        // non-negative and small, so truncation is the floor
                        let cycles = ((left / (t_off + t_on)) as u64) as f64;
                        let t = left - cycles * (t_off + t_on);
                        run_fraction += cycles * t_on;
                        if t <= t_off {
                            v = self.usable_m3 - drain * t;
                        } else {
                            run_fraction += t - t_off;
                            v = self.usable_m3 - band + net * (t - t_off);
                            self.pumps_on = true;
                        }
                    }
                    run_fraction = run_fraction.min(1.0);
                }
            } else {
                v = v0 + net;
            }
        } else {
            (v, overflow) = spill(self.usable_m3, v0 + ram - d);
        }

        // aquifer history: the hour's mean flow per borehole
        for b in 0..nb {
            // motor pumps ran only `run_fraction` of the hour
            let mean_q = bh_hand[b] + bh_motor[b] * run_fraction;
            self.q_hist[b][self.hist_pos] = mean_q;
            self.q_hist[b][self.hist_pos + KERNEL_HOURS] = mean_q;
            self.today[b] += mean_q * 3600.0;
        }

        // the capped and beyond-curve hours are hours the pumps ran (part of the run hours)
        let ran = run_fraction > 0.0;
        for b in 0..nb {
            let by = &mut self.bh_year[b];
            by.pumped_m3 += (bh_hand[b] + bh_motor[b] * run_fraction) * 3600.0;
            by.dry_run_stop_hours += u32::from(self.bh_dry[b]);
            by.yield_capped_hours += u32::from(self.bh_capped[b] && ran && bh_motor[b] > 0.0);
        }
        self.dry_run_hours += u32::from(dry_now);
        self.capped_hours += u32::from(capped_now && ran);
        self.beyond_hours += u32::from(beyond_now && ran);
        let (shortfall, short_hour) = self.close_level(month, v);
        let v = self.v;
        let motor_used = motor * run_fraction;
        let pumped = motor_used + ram + hand_served;
        let delivered = demand - shortfall;
        debug_assert!(
            (pumped - delivered - overflow - (v - v0)).abs() <= 1e-6 * (1.0 + pumped + demand),
            "water balance broken at hour {h}"
        );
        self.advance_history(hour as usize);

        // energy and fuel
        let hours = run_fraction;
        // W·h → kWh; a drive that gave no power gives +0.0 either way (no division then)
        let kwh = |p_w: f64| if p_w > 0.0 { p_w * hours / 1000.0 } else { 0.0 };
        let (e_solar, e_gen, e_grid) = (kwh(p_solar), kwh(p_gen), kwh(p_grid));
        let fuel = match &s.generator {
            Some(g) if p_gen > 0.0 => {
                drives::generator_fuel_l_per_h(
                    g.rated_w,
                    p_gen,
                    g.fuel_l_per_kwh_rated,
                    g.fuel_l_per_kwh_output,
                ) * hours
            }
            _ => 0.0,
        };

        // totals
        {
            let t = &mut self.months[month];
            t.demand_m3 += demand;
            t.delivered_m3 += delivered;
            t.unmet_m3 += shortfall;
            t.pumped_m3 += pumped;
            t.overflow_m3 += overflow;
            t.shortfall_hours += u32::from(short_hour);
            t.pump_run_hours += hours;
            t.energy_kwh += e_solar + e_gen + e_grid;
            t.solar_energy_kwh += e_solar;
            t.generator_energy_kwh += e_gen;
            t.grid_energy_kwh += e_grid;
            t.generator_fuel_l += fuel;
            t.hand_pumped_m3 += hand_served;
            t.ram_pumped_m3 += ram;
        }
        if let Some(hr) = hourly {
            hr.demand_m3.push(demand);
            hr.pumped_m3.push(pumped);
            hr.delivered_m3.push(delivered);
            hr.shortfall_m3.push(shortfall);
            hr.overflow_m3.push(overflow);
            hr.tank_level_m3.push(v);
            hr.dynamic_water_level_m.push(depth_rec.unwrap_or(f64::NAN));
            hr.pump_head_m
                .push(if motor_used > 0.0 { head } else { 0.0 });
            hr.pump_power_w.push((p_solar + p_gen + p_grid) * hours);
            hr.pump_speed_ratio
                .push(if motor_used > 0.0 { speed } else { 0.0 });
            hr.drive_power_available_w.push(available);
        }
    }
}

/// Overrides to the file's design from the command line.
#[derive(Debug, Clone, Default)]
pub struct DesignOverrides {
    pub tank_m3: Option<f64>,
    /// (pump name, units).
    pub pumps: Vec<(String, u32)>,
    pub array_kwp: Option<f64>,
}

/// The file's design with command-line overrides applied; every part must end up given.
pub fn resolve_design(s: &Scheme, o: &DesignOverrides) -> Result<Design, String> {
    let tank = match o.tank_m3 {
        Some(t) if t.is_finite() && t > 0.0 && t <= 20_000.0 => t,
        Some(t) => {
            return Err(format!(
                "--tank-m3 {t}: give a tank capacity above 0 and up to 20000 m³"
            ));
        }
        None => s
            .tank
            .capacity_m3
            .ok_or("the file gives no tank.capacity_m3; give one or use --tank-m3")?,
    };
    let mut units: Vec<Option<u32>> = s.pumps.iter().map(|p| p.units).collect();
    for (name, n) in &o.pumps {
        let Some(i) = s.pumps.iter().position(|p| &p.name == name) else {
            let names: Vec<&str> = s.pumps.iter().map(|p| p.name.as_str()).collect();
            return Err(format!(
                "--pumps {name}={n}: the scheme has no pump type `{name}`; its pump types are: {}",
                names.join(", ")
            ));
        };
        if *n > s.pumps[i].max_units {
            return Err(format!(
                "--pumps {name}={n}: at most {} units of `{name}` may be installed (pumps[{i}].max_units)",
                s.pumps[i].max_units
            ));
        }
        units[i] = Some(*n);
    }
    let mut out = Vec::new();
    for (p, u) in s.pumps.iter().zip(units) {
        out.push(u.ok_or_else(|| {
            format!(
                "pump `{}` has no `units` in the file; give the installed count with --pumps {}=N",
                p.name, p.name
            )
        })?);
    }
    // the array matters only when the design installs a solar-driven unit (a hand-pump design
    // with a solar option of 0 units runs without one)
    let solar_installed = s
        .pumps
        .iter()
        .zip(&out)
        .any(|(p, n)| *n > 0 && p.drive == DriveKind::Solar);
    let array_w = match (o.array_kwp, s.solar.as_ref().and_then(|x| x.array_peak_w)) {
        _ if !s.uses_solar() => 0.0,
        (Some(k), _) if k.is_finite() && k > 0.0 && k <= 1000.0 => k * 1000.0,
        (Some(k), _) => {
            return Err(format!(
                "--array-kwp {k}: give an array size above 0 and up to 1000 kWp"
            ));
        }
        (None, Some(w)) => w,
        (None, None) if solar_installed => {
            return Err("the design installs a solar pump but the file gives no drives.solar.array_kwp; give one or use --array-kwp".into());
        }
        (None, None) => 0.0,
    };
    Ok(Design {
        tank_m3: tank,
        units: out,
        array_w,
    })
}

/// Parses `NAME=N` for `--pumps`.
pub fn parse_pump_override(arg: &str) -> Result<(String, u32), String> {
    let (name, n) = arg.rsplit_once('=').ok_or_else(|| {
        format!("`{arg}`: write the pump type and count as NAME=N, e.g. SolarSub-9=2")
    })?;
    let n: u32 = n
        .trim()
        .parse()
        .map_err(|_| format!("`{arg}`: the count after `=` must be a whole number ≥ 0"))?;
    Ok((name.trim().to_string(), n))
}

/// Everything `tapplan run` reports for one design.
#[derive(Debug, Clone, Serialize)]
pub struct RunReport {
    pub scheme: String,
    pub design: Design,
    pub design_text: String,
    pub rules: Vec<String>,
    /// Base-year reliability over the weather years.
    pub first_year: Ensemble,
    /// Horizon-year reliability over the weather years.
    pub horizon_year: Ensemble,
    /// The base-year weather year shown in detail (the judged one), with monthly figures.
    pub year: YearResult,
    pub horizon: Vec<HorizonRow>,
    /// First year the target fails, if any.
    pub first_failing_year: Option<i32>,
    pub storage_days_of_average_demand: f64,
    pub target_met_in_horizon_year: bool,
    pub warnings: Vec<String>,
    /// One repair case per pump type installed (see [`repair_cases`]).
    pub repair: Vec<RepairCase>,
}

/// A pump unit out of service for repair: one unit of one pump type is taken out for
/// `targets.repair_days` in the month whose lowest tank level is the least in the horizon
/// year's judged weather year, placed where it leaves the most shortfall in that month.
#[derive(Debug, Clone, Serialize)]
pub struct RepairCase {
    pub pump: String,
    /// Units of that type left running.
    pub units_left: u32,
    pub month: &'static str,
    /// First day of the repair period (1 = the 1st of the month).
    pub start_day: u32,
    pub days: u32,
    /// Shortfall hours and unmet volume inside the repair period.
    pub shortfall_hours: u32,
    pub unmet_m3: f64,
    /// True when the tank and the remaining units carry the period with no shortfall hour.
    pub carried: bool,
}

/// The repair case of every pump type installed in `design`, in the horizon year's judged
/// weather year `weather`.
///
/// Method: the month with the least margin is the one whose lowest tank level is the least
/// in that year; the year is run again with one unit fewer of the pump type throughout, from
/// its own periodic state, and the shortfall is counted in every window of `repair_days`
/// starting at a midnight of that month; the worst window is reported. Running the year short
/// of a unit throughout is conservative: the tank enters the repair period no fuller than it
/// would with every unit running until then. Common practice (a supply that keeps running
/// while one pump is repaired, the "N − 1" rule of thumb), no published limit.
pub fn repair_cases(
    m: &Model,
    design: &Design,
    months: &[Totals; 12],
    weather: usize,
) -> Vec<RepairCase> {
    let s = &m.scheme;
    let h = s.info.horizon_years;
    let month = (0..12)
        .min_by(|a, b| {
            months[*a]
                .lowest_level_fraction
                .total_cmp(&months[*b].lowest_level_fraction)
                .then(a.cmp(b))
        })
        .unwrap_or(0);
    let days = s.targets.repair_days.round().max(1.0) as usize;
    let first_day: usize = crate::weather::DAYS_IN_MONTH[..month]
        .iter()
        .map(|d| *d as usize)
        .sum();
    let month_days = crate::weather::DAYS_IN_MONTH[month] as usize;
    let mut out = Vec::new();
    for (i, p) in s.pumps.iter().enumerate() {
        let n = design.units.get(i).copied().unwrap_or(0);
        if n == 0 {
            continue;
        }
        let mut d = design.clone();
        d.units[i] = n - 1;
        let y = m.run_year(&d, h, weather, true);
        let Some(hr) = y.hourly.as_ref() else {
            continue;
        };
        let mut best = (0u32, 0.0f64, 0usize);
        for k in 0..month_days {
            let start = (first_day + k) * 24;
            let end = (start + days * 24).min(hr.shortfall_m3.len());
            let w = &hr.shortfall_m3[start.min(end)..end];
            let hours = w.iter().filter(|x| **x > 1e-6).count() as u32;
            let unmet: f64 = w.iter().sum();
            if (hours, unmet) > (best.0, best.1) {
                best = (hours, unmet, k);
            }
        }
        out.push(RepairCase {
            pump: p.name.clone(),
            units_left: n - 1,
            month: crate::weather::MONTH_NAMES[month],
            start_day: best.2 as u32 + 1,
            days: days as u32,
            shortfall_hours: best.0,
            unmet_m3: best.1,
            carried: best.0 == 0,
        });
    }
    out
}

/// Which years the horizon table of a report holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum HorizonYears {
    /// Every year from the base year to the horizon.
    Every,
    /// Only the base and the horizon year (for quick checks of many schemes).
    Ends,
}

/// Runs a design over the base year (with hourly series), the weather ensemble and horizon.
pub fn run_report(m: &Model, design: &Design) -> RunReport {
    run_report_with(m, design, HorizonYears::Every)
}

/// As `run_report`, with the horizon table over `years`.
pub fn run_report_with(m: &Model, design: &Design, years: HorizonYears) -> RunReport {
    let s = &m.scheme;
    let h = s.info.horizon_years;
    let mut first = m.run_ensemble(design, 0);
    let last = m.run_ensemble(design, h);
    let year = m.run_year(design, 0, first.representative, true);
    let horizon = match years {
        HorizonYears::Every => m.horizon(design),
        HorizonYears::Ends if h == 0 => vec![horizon_row(s, &first, 0)],
        HorizonYears::Ends => vec![horizon_row(s, &first, 0), horizon_row(s, &last, h)],
    };
    let first_failing_year = horizon.iter().find(|r| !r.meets_target).map(|r| r.year);
    let dd = daily_demand(s, 0);
    for y in first.years.iter_mut() {
        y.hourly = None;
    }
    let repair = last
        .years
        .get(last.representative)
        .map(|y| repair_cases(m, design, &y.months, last.representative))
        .unwrap_or_default();
    RunReport {
        scheme: s.info.name.clone(),
        design_text: design.describe(s),
        design: design.clone(),
        rules: m.rules.clone(),
        target_met_in_horizon_year: meets_target(s, &last),
        first_year: first,
        horizon_year: last,
        year,
        horizon,
        first_failing_year,
        storage_days_of_average_demand: storage_days(s, design.tank_m3, &dd),
        warnings: s.warnings.clone(),
        repair,
    }
}

/// Usable storage in days of average (supplied) demand.
pub fn storage_days(s: &Scheme, tank_m3: f64, dd: &DailyDemand) -> f64 {
    let mean_factor = s.demand.monthly_factors.iter().sum::<f64>() / 12.0;
    let per_day = dd.supplied_m3_per_day * mean_factor;
    if per_day > 0.0 {
        tank_m3 * s.tank.usable_fraction / per_day
    } else {
        f64::INFINITY
    }
}
