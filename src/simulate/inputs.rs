//! Hourly inputs for the tank balance, built once per scheme and reused for every design:
//! the demand shape, the PV power per watt-peak for every weather year, drive availability
//! masks, and stream flows.
//!
//! PV power is linear in array size (per-Wp series times array W), and demand in a year is
//! the daily total times a fixed hourly shape, so neither is rebuilt when the tank, the pump
//! count or the array changes.

use crate::error::Error;
use crate::physics::{demand as dm, solar};
use crate::scheme::{GrowthMethod, Scheme, Solar, WeatherMode, in_windows};
use crate::weather::{self, DAYS_IN_MONTH, DAYS_IN_YEAR, HOURS_IN_YEAR, month_of_day};

/// Daily demand of one year, by category (m³/day, before losses unless named).
#[derive(Debug, Clone, serde::Serialize)]
pub struct DailyDemand {
    pub year: i32,
    pub population: f64,
    pub domestic_m3_per_day: f64,
    /// (category name, m³/day).
    pub other_m3_per_day: Vec<(String, f64)>,
    /// All consumption, m³/day.
    pub consumed_m3_per_day: f64,
    /// Water the tank must supply: consumed / (1 − losses), m³/day.
    pub supplied_m3_per_day: f64,
}

/// Population in a year `years` after the base year.
pub fn population(s: &Scheme, years: f64) -> f64 {
    match s.demand.growth_method {
        GrowthMethod::Geometric => {
            dm::population_geometric(s.demand.population, s.demand.growth_rate_per_year, years)
        }
        GrowthMethod::Arithmetic => {
            dm::population_arithmetic(s.demand.population, s.demand.growth_rate_per_year, years)
        }
    }
    .max(0.0)
}

/// Daily demand `year_offset` years after the base year.
pub fn daily_demand(s: &Scheme, year_offset: u32) -> DailyDemand {
    let pop = population(s, year_offset as f64);
    let growth = if s.demand.population > 0.0 {
        pop / s.demand.population
    } else {
        1.0
    };
    let domestic = pop * s.demand.per_capita_m3_per_day;
    let other: Vec<(String, f64)> = s
        .demand
        .other_users
        .iter()
        .map(|u| {
            let n = if u.grows_with_population {
                u.count * growth
            } else {
                u.count
            };
            (u.name.clone(), n * u.allowance_m3_per_unit_day)
        })
        .collect();
    let consumed = domestic + other.iter().map(|o| o.1).sum::<f64>();
    DailyDemand {
        year: s.info.base_year + year_offset as i32,
        population: pop,
        domestic_m3_per_day: domestic,
        other_m3_per_day: other,
        consumed_m3_per_day: consumed,
        supplied_m3_per_day: dm::supplied_from_consumed(consumed, s.demand.losses_fraction),
    }
}

/// One weather year for the solar drive: DC power per watt-peak of array, every hour.
#[derive(Debug, Clone)]
pub struct SolarYear {
    /// Label: "mean days", "synthetic 7", "file year 2021".
    pub label: String,
    /// W of DC power at the pump controller per W of array peak power.
    pub w_per_wp: Vec<f64>,
    /// Plane-of-array irradiation of the year (kWh/m²), for reports.
    pub plane_kwh_per_m2: f64,
}

/// The day-of-year (1-based) of a 0-based day index in a 365-day year.
fn doy(day: usize) -> u32 {
    day as u32 + 1
}

/// D&B surface azimuth (0 facing the equator-south, west positive) from a compass bearing.
pub fn surface_azimuth_rad(facing_bearing_deg: f64) -> f64 {
    (facing_bearing_deg - 180.0).to_radians()
}

/// Monthly mean clearness index from the monthly mean daily horizontal irradiation:
/// K̄T = H̄ / H̄0, with H̄0 the mean of the daily extraterrestrial values over the month
/// (Duffie & Beckman 2006, §2.9).
pub fn monthly_mean_clearness(lat_rad: f64, irradiation_j_per_m2_day: &[f64; 12]) -> [f64; 12] {
    let mut kt = [0.0; 12];
    let mut day = 0usize;
    for m in 0..12 {
        let n = DAYS_IN_MONTH[m] as usize;
        let h0: f64 = (day..day + n)
            .map(|d| solar::extraterrestrial_daily_j_per_m2(lat_rad, doy(d)))
            .sum::<f64>()
            / n as f64;
        kt[m] = if h0 > 0.0 {
            irradiation_j_per_m2_day[m] / h0
        } else {
            0.0
        };
        day += n;
    }
    kt
}

struct PvConsts {
    lat_rad: f64,
    tilt_rad: f64,
    az_rad: f64,
    albedo: f64,
    gamma: f64,
    noct: f64,
    derate: f64,
    /// Sun–array geometry of each day of the year (the same for every weather year).
    days: Vec<solar::DayGeometry>,
}

impl PvConsts {
    fn new(s: &Scheme, sol: &Solar) -> PvConsts {
        let lat_rad = s.info.latitude_deg.to_radians();
        let tilt_rad = sol.tilt_deg.to_radians();
        let az_rad = surface_azimuth_rad(sol.facing_azimuth_deg);
        let albedo = sol.ground_albedo;
        PvConsts {
            lat_rad,
            tilt_rad,
            az_rad,
            albedo,
            days: (0..DAYS_IN_YEAR)
                .map(|d| solar::DayGeometry::new(lat_rad, doy(d), tilt_rad, az_rad, albedo))
                .collect(),
            gamma: sol.temperature_coefficient_per_c,
            noct: sol.noct_c,
            derate: solar::derate_chain(
                sol.soiling_loss,
                sol.wiring_loss,
                sol.mismatch_loss,
                sol.controller_loss,
            ),
        }
    }
    fn dc(&self, plane_w_per_m2: f64, air_c: f64) -> f64 {
        let cell = solar::cell_temperature_noct_c(air_c, plane_w_per_m2, self.noct);
        solar::pv_dc_power_w(1.0, plane_w_per_m2, cell, self.gamma, self.derate)
    }
}

/// PV power per Wp for a year of daily horizontal totals (J/m² per day, 365 values).
fn solar_year_from_daily(
    label: String,
    pv: &PvConsts,
    daily_j_per_m2: &[f64],
    air_c: &[f64; 12],
) -> SolarYear {
    let mut w = vec![0.0; HOURS_IN_YEAR];
    let mut plane_sum = 0.0;
    for (d, h_day) in daily_j_per_m2.iter().enumerate().take(DAYS_IN_YEAR) {
        let m = month_of_day(d);
        let g = pv.days[d].plane_irradiance_w_per_m2(*h_day);
        for (h, gh) in g.iter().enumerate() {
            // no light, no power (the slot stays 0)
            if *gh > 0.0 {
                w[d * 24 + h] = pv.dc(*gh, air_c[m]);
                plane_sum += gh;
            }
        }
    }
    SolarYear {
        label,
        w_per_wp: w,
        plane_kwh_per_m2: plane_sum / 1000.0,
    }
}

/// Builds the solar weather years the scheme asks for. `irradiation_factor` scales the
/// irradiation (1.0 as given; 0.85 for a −15 % sensitivity case).
pub fn solar_years(s: &Scheme, irradiation_factor: f64) -> Result<Vec<SolarYear>, Error> {
    let Some(sol) = &s.solar else {
        return Ok(Vec::new());
    };
    let pv = PvConsts::new(s, sol);
    let mut irr = sol.irradiation_j_per_m2_day;
    for v in irr.iter_mut() {
        *v *= irradiation_factor;
    }
    let kt = monthly_mean_clearness(pv.lat_rad, &irr);
    let h0: Vec<f64> = (0..DAYS_IN_YEAR)
        .map(|d| solar::extraterrestrial_daily_j_per_m2(pv.lat_rad, doy(d)))
        .collect();
    let check_kt = |kt: &[f64; 12]| -> Result<(), Error> {
        for (m, k) in kt.iter().enumerate() {
            if !(weather::MONTHLY_MEAN_KT_MIN..weather::MONTHLY_MEAN_KT_MAX).contains(k) {
                return Err(Error::Input(format!(
                    "drives.solar.irradiation_kwh_per_m2_day[{m}]: {:.2} kWh/m²/day is {:.0} % of the sunlight reaching the top of the atmosphere at this latitude in {}; a monthly mean clearness index must lie between {} and {} — check the value and its unit (kWh/m² per day on the horizontal)",
                    irr[m] / 3.6e6,
                    k * 100.0,
                    weather::MONTH_NAMES[m],
                    weather::MONTHLY_MEAN_KT_MIN,
                    weather::MONTHLY_MEAN_KT_MAX
                )));
            }
        }
        Ok(())
    };
    match &s.weather.mode {
        WeatherMode::MeanDays => {
            let daily: Vec<f64> = (0..DAYS_IN_YEAR).map(|d| irr[month_of_day(d)]).collect();
            Ok(vec![solar_year_from_daily(
                "mean days".into(),
                &pv,
                &daily,
                &sol.air_temperature_c,
            )])
        }
        WeatherMode::Synthetic { seed, years } => {
            check_kt(&kt)?;
            let seqs = weather::synthetic_daily_clearness(&kt, *years as usize, *seed)
                .map_err(|e| Error::Input(format!("weather: {e}")))?;
            Ok(seqs
                .iter()
                .enumerate()
                .map(|(i, seq)| {
                    let daily: Vec<f64> = seq.iter().zip(&h0).map(|(k, h)| k * h).collect();
                    solar_year_from_daily(
                        format!("synthetic year {}", i + 1),
                        &pv,
                        &daily,
                        &sol.air_temperature_c,
                    )
                })
                .collect())
        }
        WeatherMode::File { path } => {
            let w = weather::read_weather_file(path)
                .map_err(|e| Error::Input(format!("weather.file: {e}")))?;
            Ok(w.years
                .iter()
                .enumerate()
                .map(|(i, y)| {
                    let mut out = vec![0.0; HOURS_IN_YEAR];
                    let mut plane_sum = 0.0;
                    for (h, o) in out.iter_mut().enumerate() {
                        let d = h / 24;
                        let g = solar::plane_irradiance_from_hourly_ghi(
                            pv.lat_rad,
                            doy(d),
                            (h % 24) as f64 + 0.5,
                            y.ghi_w_per_m2[h] * irradiation_factor,
                            pv.tilt_rad,
                            pv.az_rad,
                            pv.albedo,
                        );
                        plane_sum += g;
                        *o = pv.dc(g, y.air_c[h]);
                    }
                    SolarYear {
                        label: match y.year {
                            Some(yr) => format!("file year {yr}"),
                            None => format!("file year {}", i + 1),
                        },
                        w_per_wp: out,
                        plane_kwh_per_m2: plane_sum / 1000.0,
                    }
                })
                .collect())
        }
    }
}

/// The hourly demand shape: m³ in each hour of the year per m³/day of daily demand
/// (monthly factor × 24-hour profile).
pub fn demand_shape(s: &Scheme) -> Vec<f64> {
    let mut v = Vec::with_capacity(HOURS_IN_YEAR);
    for d in 0..DAYS_IN_YEAR {
        let mf = s.demand.monthly_factors[month_of_day(d)];
        for h in 0..24 {
            v.push(mf * s.demand.profile[h]);
        }
    }
    v
}

/// A 24-hour availability mask from windows.
pub fn hour_mask(windows: &[crate::scheme::Window]) -> [bool; 24] {
    let mut m = [false; 24];
    for (h, x) in m.iter_mut().enumerate() {
        *x = in_windows(windows, h as u8);
    }
    m
}
