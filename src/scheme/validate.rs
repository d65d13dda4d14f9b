//! The second layer of checking: meaning. Turns the raw file into a `Scheme` in SI units.
//!
//! Every problem is collected (not just the first) with its field path and line, the bad value,
//! what is allowed and why. Bounds are physical or practical limits, chosen wide enough for any
//! village scheme and narrow enough to catch a slipped decimal point or a unit mix-up; each
//! bound's reason is in its message.

use std::path::Path;

use super::load::LineMap;
use super::model::*;
use super::raw::*;
use crate::error::Problem;
use crate::physics::demand::BuiltinProfile;
use crate::physics::pipes::Material;

mod displacement;

/// Collects problems and warnings while checking.
struct Ck<'a> {
    lines: &'a LineMap,
    problems: Vec<Problem>,
    warnings: Vec<String>,
}

fn fmt_num(v: f64) -> String {
    if v.is_nan() {
        "NaN".into()
    } else if v.is_infinite() {
        if v > 0.0 {
            "infinity".into()
        } else {
            "-infinity".into()
        }
    } else if v.abs() >= 1e9 {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

impl Ck<'_> {
    fn err(&mut self, field: &str, message: impl Into<String>) {
        let (line, column) = self
            .lines
            .locate(field)
            .map_or((None, None), |(l, c)| (Some(l), Some(c)));
        self.problems.push(Problem {
            field: field.to_string(),
            line,
            column,
            message: message.into(),
        });
    }

    fn warn(&mut self, field: &str, message: impl AsRef<str>) {
        let at = self
            .lines
            .locate(field)
            .map(|(l, _)| format!("line {l}: "))
            .unwrap_or_default();
        self.warnings
            .push(format!("{at}{field}: {}", message.as_ref()));
    }

    /// A finite number within [lo, hi]; `what` names the allowed range's unit and reason.
    fn range(&mut self, field: &str, v: f64, lo: f64, hi: f64, what: &str) -> f64 {
        if !v.is_finite() {
            self.err(
                field,
                format!(
                    "{} is not a number; give a value from {lo} to {hi} {what}",
                    fmt_num(v)
                ),
            );
            return lo.max(f64::MIN_POSITIVE);
        }
        if v < lo || v > hi {
            self.err(
                field,
                format!(
                    "{} is out of range; allowed {lo} to {hi} {what}",
                    fmt_num(v)
                ),
            );
            return v.clamp(lo, hi);
        }
        v
    }

    /// A finite number > 0 and ≤ hi.
    fn positive(&mut self, field: &str, v: f64, hi: f64, what: &str) -> f64 {
        if v.is_finite() && v <= 0.0 {
            self.err(
                field,
                format!(
                    "{} must be greater than zero (up to {hi} {what})",
                    fmt_num(v)
                ),
            );
            return hi.min(1.0);
        }
        self.range(field, v, 0.0, hi, what)
    }

    /// A whole number within [lo, hi].
    fn whole(&mut self, field: &str, v: f64, lo: f64, hi: f64, what: &str) -> u32 {
        let v = self.range(field, v, lo, hi, what);
        if v.fract() != 0.0 {
            self.err(
                field,
                format!(
                    "{v} is not a whole number; give a count such as {}",
                    v.round()
                ),
            );
        }
        v.round().max(0.0) as u32
    }

    fn opt_range(
        &mut self,
        field: &str,
        v: Option<f64>,
        default: f64,
        lo: f64,
        hi: f64,
        what: &str,
    ) -> f64 {
        match v {
            Some(v) => self.range(field, v, lo, hi, what),
            None => default,
        }
    }

    fn twelve(&mut self, field: &str, values: &[f64], lo: f64, hi: f64, what: &str) -> [f64; 12] {
        let mut out = [lo.max(0.0); 12];
        if values.len() != 12 {
            self.err(
                field,
                format!(
                    "has {} values; give exactly 12, one per month from January to December",
                    values.len()
                ),
            );
            return out;
        }
        for (i, v) in values.iter().enumerate() {
            out[i] = self.range(&format!("{field}[{i}]"), *v, lo, hi, what);
        }
        out
    }

    fn windows(&mut self, field: &str, raw: &[RawWindow]) -> Vec<Window> {
        if raw.is_empty() {
            self.err(
                field,
                "no hours given; list at least one window such as `{start_hour: 8, end_hour: 12}`",
            );
        }
        let mut out = Vec::new();
        for (i, w) in raw.iter().enumerate() {
            let f = format!("{field}[{i}]");
            let s = self.whole(
                &format!("{f}.start_hour"),
                w.start_hour,
                0.0,
                23.0,
                "(clock hour 0–23)",
            );
            let e = self.whole(
                &format!("{f}.end_hour"),
                w.end_hour,
                0.0,
                24.0,
                "(clock hour 0–24, the hour the window ends)",
            );
            if s == e {
                self.err(
                    &f,
                    "start_hour equals end_hour; a window must cover at least one hour",
                );
            }
            out.push(Window {
                start_hour: s as u8,
                end_hour: e as u8,
            });
        }
        out
    }
}

/// Checks a raw scheme. `base_dir` resolves relative paths (weather files).
pub fn validate(raw: &RawScheme, lines: &LineMap, base_dir: &Path) -> Result<Scheme, Vec<Problem>> {
    let mut ck = Ck {
        lines,
        problems: Vec::new(),
        warnings: Vec::new(),
    };
    let c = &mut ck;

    // ---- scheme
    let r = &raw.scheme;
    if r.name.trim().is_empty() {
        c.err(
            "scheme.name",
            "is empty; give the scheme a name, e.g. the village and the source",
        );
    }
    let latitude_deg = c.range(
        "scheme.latitude_deg",
        r.latitude_deg,
        -90.0,
        90.0,
        "degrees (north positive)",
    );
    let longitude_deg = c.range(
        "scheme.longitude_deg",
        r.longitude_deg,
        -180.0,
        180.0,
        "degrees (east positive)",
    );
    let elevation_m = c.range(
        "scheme.elevation_m",
        r.elevation_m,
        -500.0,
        6000.0,
        "m above sea level",
    );
    let plan_date = match chrono::NaiveDate::parse_from_str(r.plan_date.trim(), "%Y-%m-%d") {
        Ok(d) => Some(d),
        Err(_) => {
            c.err(
                "scheme.plan_date",
                format!(
                    "`{}` is not a date; write it as YYYY-MM-DD, e.g. 2026-11-15",
                    r.plan_date
                ),
            );
            None
        }
    };
    use chrono::Datelike;
    let base_year = match r.base_year {
        Some(y) => c.whole("scheme.base_year", y, 1900.0, 2200.0, "(calendar year)") as i32,
        None => plan_date.map(|d| d.year()).unwrap_or(2000),
    };
    let horizon_years = c.whole(
        "scheme.horizon_years",
        r.horizon_years,
        1.0,
        50.0,
        "years (design horizons are usually 10–25 years)",
    );
    if r.currency.trim().is_empty() || r.currency.len() > 12 {
        c.err(
            "scheme.currency",
            "give a short currency code or symbol, e.g. USD or EUR",
        );
    }
    let water_temperature_c = c.opt_range(
        "scheme.water_temperature_c",
        r.water_temperature_c,
        20.0,
        0.0,
        40.0,
        "°C (groundwater temperature)",
    );

    // ---- demand
    let d = &raw.demand;
    let population = c.whole(
        "demand.population",
        d.population,
        1.0,
        5_000_000.0,
        "people in the base year",
    ) as f64;
    let growth_method = match d.growth.method.as_str() {
        "geometric" => GrowthMethod::Geometric,
        "arithmetic" => GrowthMethod::Arithmetic,
        other => {
            c.err(
                "demand.growth.method",
                format!("`{other}` is not a growth method; use `geometric` or `arithmetic`"),
            );
            GrowthMethod::Geometric
        }
    };
    let growth_rate = c.range(
        "demand.growth.rate_percent_per_year",
        d.growth.rate_percent_per_year,
        -5.0,
        10.0,
        "% per year (village growth rates are rarely outside 0–5 %)",
    ) / 100.0;
    // a declining projection that empties the village inside the horizon
    let emptied = (1..=horizon_years).find(|&n| {
        let p = match growth_method {
            GrowthMethod::Geometric => {
                crate::physics::demand::population_geometric(population, growth_rate, f64::from(n))
            }
            GrowthMethod::Arithmetic => {
                crate::physics::demand::population_arithmetic(population, growth_rate, f64::from(n))
            }
        };
        p < 1.0
    });
    if let Some(n) = emptied {
        c.warn(
            "demand.growth.rate_percent_per_year",
            format!(
                "the {} projection at {} % a year leaves fewer than one person from {} on (year {n} of the {horizon_years}-year horizon); such a year has no domestic demand, so it is judged on the other users' demand alone and meets the target whenever that is met (with no other users it always does); check the rate, or shorten the horizon to the years people live there",
                match growth_method {
                    GrowthMethod::Geometric => "geometric",
                    GrowthMethod::Arithmetic => "arithmetic",
                },
                fmt_num(growth_rate * 100.0),
                base_year + n as i32,
            ),
        );
    }
    let per_capita = c.positive(
        "demand.per_capita_l_per_day",
        d.per_capita_l_per_day,
        500.0,
        "L per person per day",
    ) / 1000.0;
    if per_capita > 0.0 && per_capita * 1000.0 < 1.0 {
        c.err(
            "demand.per_capita_l_per_day",
            format!(
                "{} L per person per day is below 1 L, far less than anyone drinks; the key is in litres — was it given in m³ ({} m³ is {} L)?",
                fmt_num(per_capita * 1000.0),
                fmt_num(per_capita * 1000.0),
                fmt_num(per_capita * 1.0e6)
            ),
        );
    }
    if (1.0..15.0).contains(&(per_capita * 1000.0)) {
        c.warn(
            "demand.per_capita_l_per_day",
            "is below the 15 L/person/day emergency minimum of the humanitarian standards",
        );
    }
    let mut other_users = Vec::new();
    for (i, u) in d.other_users.iter().enumerate() {
        let f = format!("demand.other_users[{i}]");
        if u.name.trim().is_empty() {
            c.err(
                &format!("{f}.name"),
                "is empty; name the user category, e.g. `Primary school`",
            );
        }
        let count = c.range(
            &format!("{f}.count"),
            u.count,
            0.0,
            1_000_000.0,
            "(pupils, beds, head of livestock …)",
        );
        let allowance = c.range(
            &format!("{f}.allowance_l_per_unit_day"),
            u.allowance_l_per_unit_day,
            0.0,
            100_000.0,
            "L per unit per day",
        ) / 1000.0;
        other_users.push(User {
            name: u.name.clone(),
            count,
            unit: u.unit.clone().unwrap_or_else(|| "unit".into()),
            allowance_m3_per_unit_day: allowance,
            grows_with_population: u.grows_with_population,
        });
    }
    let losses = c.range(
        "demand.losses_percent",
        d.losses_percent,
        0.0,
        60.0,
        "% of the water supplied (above 60 % the scheme needs repair, not sizing)",
    ) / 100.0;
    let (profile_name, profile) = match &d.daily_profile {
        RawProfile::Named(n) => {
            match BuiltinProfile::from_name(n) {
                Some(p) => (n.clone(), p.factors()),
                None => {
                    let names: Vec<&str> = BuiltinProfile::ALL.iter().map(|p| p.name()).collect();
                    c.err("demand.daily_profile", format!("`{n}` is not a built-in profile; use one of {} or a list of 24 factors", names.join(", ")));
                    ("flat".into(), [1.0 / 24.0; 24])
                }
            }
        }
        RawProfile::Factors(v) => {
            let mut out = [1.0 / 24.0; 24];
            if v.len() != 24 {
                c.err("demand.daily_profile", format!("has {} values; a custom profile has 24, one per clock hour from 00–01 to 23–24", v.len()));
            } else {
                let mut ok = true;
                for (i, x) in v.iter().enumerate() {
                    if !x.is_finite() || *x < 0.0 {
                        c.err(
                            &format!("demand.daily_profile[{i}]"),
                            format!(
                                "{} is not allowed; hourly factors are numbers ≥ 0",
                                fmt_num(*x)
                            ),
                        );
                        ok = false;
                    }
                }
                let sum: f64 = v.iter().sum();
                if ok && sum <= 0.0 {
                    c.err("demand.daily_profile", "all factors are zero; the profile must share the day's demand among the hours");
                } else if ok {
                    if (sum - 1.0).abs() > 1e-3 {
                        c.warn("demand.daily_profile", format!("factors sum to {sum:.4}, not 1; they were normalised (each divided by the sum)"));
                    }
                    for (o, x) in out.iter_mut().zip(v) {
                        *o = x / sum;
                    }
                }
            }
            ("custom".into(), out)
        }
    };
    let monthly_factors = match &d.monthly_factors {
        Some(v) => c.twelve(
            "demand.monthly_factors",
            v,
            0.2,
            3.0,
            "(factor on the daily demand of that month)",
        ),
        None => [1.0; 12],
    };

    // ---- sources
    let mut boreholes = Vec::new();
    for (i, b) in raw.sources.boreholes.iter().enumerate() {
        let f = format!("sources.boreholes[{i}]");
        let static_depth = c.range(
            &format!("{f}.static_water_level_m"),
            b.static_water_level_m,
            0.0,
            500.0,
            "m below ground",
        );
        let tested = c.positive(
            &format!("{f}.tested_yield_m3_per_h"),
            b.tested_yield_m3_per_h,
            500.0,
            "m³/h",
        ) / 3600.0;
        let frac = c.positive(
            &format!("{f}.safe_yield_fraction"),
            b.safe_yield_fraction,
            1.0,
            "(share of the tested yield that may be pumped; 0.5–0.8 is usual)",
        );
        let t = b.transmissivity_m2_per_day.map(|t| {
            c.positive(
                &format!("{f}.transmissivity_m2_per_day"),
                t,
                100_000.0,
                "m²/day",
            ) / 86_400.0
        });
        let s = b.storativity.map(|s| {
            c.positive(
                &format!("{f}.storativity"),
                s,
                0.5,
                "(dimensionless; confined 1e-5–1e-3, unconfined 0.01–0.3)",
            )
        });
        if t.is_some() != s.is_some() {
            c.err(&f, "give both transmissivity_m2_per_day and storativity for aquifer drawdown, or neither");
        }
        let wb = c.opt_range(
            &format!("{f}.well_loss_linear_s_per_m2"),
            b.well_loss_linear_s_per_m2,
            0.0,
            0.0,
            1.0e6,
            "s/m² (Jacob's B)",
        );
        let wc = c.opt_range(
            &format!("{f}.well_loss_quadratic_s2_per_m5"),
            b.well_loss_quadratic_s2_per_m5,
            0.0,
            0.0,
            1.0e9,
            "s²/m⁵ (Jacob's C)",
        );
        let intake = c.range(
            &format!("{f}.pump_intake_depth_m"),
            b.pump_intake_depth_m,
            0.0,
            1000.0,
            "m below ground",
        );
        let margin = c.opt_range(
            &format!("{f}.submergence_margin_m"),
            b.submergence_margin_m,
            3.0,
            0.0,
            50.0,
            "m of water above the intake",
        );
        if intake <= static_depth + margin {
            c.err(&format!("{f}.pump_intake_depth_m"), format!("the intake at {intake} m is not below the static water level ({static_depth} m) plus the submergence margin ({margin} m); set the intake deeper than {} m", static_depth + margin));
        }
        let dia = c.range(
            &format!("{f}.diameter_mm"),
            b.diameter_mm,
            50.0,
            1000.0,
            "mm (internal diameter of the borehole)",
        ) / 1000.0;
        if b.transmissivity_m2_per_day.is_none() {
            c.warn(&f, "no transmissivity and storativity: aquifer drawdown is not modelled, only well loss and the safe-yield cap");
        }
        boreholes.push(Borehole {
            name: b.name.clone(),
            ground_elevation_m: match b.ground_elevation_m {
                Some(e) => c.range(
                    &format!("{f}.ground_elevation_m"),
                    e,
                    -500.0,
                    6000.0,
                    "m above sea level",
                ),
                None => elevation_m,
            },
            static_depth_m: static_depth,
            tested_yield_m3_per_s: tested,
            safe_yield_fraction: frac,
            transmissivity_m2_per_s: t,
            storativity: s,
            well_loss_b_s_per_m2: wb,
            well_loss_c_s2_per_m5: wc,
            intake_depth_m: intake,
            diameter_m: dia,
            submergence_margin_m: margin,
            pumping_test_file: b.pumping_test_file.as_ref().map(|p| {
                let path = base_dir.join(p);
                if !path.is_file() {
                    c.warn(&format!("{f}.pumping_test_file"), format!("pumping-test file `{p}` not found beside the scheme file (paths are relative to the scheme file's folder); the borehole's figures are used as written and the plan cannot show the test"));
                }
                path
            }),
        });
    }
    let mut streams = Vec::new();
    for (i, s) in raw.sources.streams.iter().enumerate() {
        let f = format!("sources.streams[{i}]");
        streams.push(Stream {
            name: s.name.clone(),
            flow_m3_per_s: c.positive(
                &format!("{f}.flow_l_per_s"),
                s.flow_l_per_s,
                100_000.0,
                "L/s (the dry-season flow that may be diverted)",
            ) / 1000.0,
            monthly_flow_factors: match &s.monthly_flow_factors {
                Some(v) => c.twelve(
                    &format!("{f}.monthly_flow_factors"),
                    v,
                    0.0,
                    5.0,
                    "(factor on the stream flow that month)",
                ),
                None => [1.0; 12],
            },
            usable_fall_m: c.range(
                &format!("{f}.usable_fall_m"),
                s.usable_fall_m,
                0.5,
                200.0,
                "m (vertical drop from the intake to the ram)",
            ),
        });
    }
    check_unique_names(
        c,
        "sources.boreholes",
        raw.sources.boreholes.iter().map(|b| b.name.as_str()),
    );
    check_unique_names(
        c,
        "sources.streams",
        raw.sources.streams.iter().map(|s| s.name.as_str()),
    );

    // ---- drives
    let solar = raw.drives.solar.as_ref().map(|s| {
        let f = "drives.solar";
        let array_peak_w = s.array_kwp.map(|k| c.positive(&format!("{f}.array_kwp"), k, 1000.0, "kWp") * 1000.0);
        let array_range_w = s.array_range_kwp.as_ref().map(|r| {
            let min = c.positive(&format!("{f}.array_range_kwp.min_kwp"), r.min_kwp, 1000.0, "kWp");
            let max = c.positive(&format!("{f}.array_range_kwp.max_kwp"), r.max_kwp, 1000.0, "kWp");
            let m = c.positive(&format!("{f}.array_range_kwp.module_kwp"), r.module_kwp, 5.0, "kWp per module");
            if max < min {
                c.err(&format!("{f}.array_range_kwp"), "max_kwp is below min_kwp");
            } else if (max - min) / m > 400.0 {
                c.err(&format!("{f}.array_range_kwp"), format!("the range holds {:.0} module steps; at most 400 are searched — use a larger module_kwp or a narrower range", (max - min) / m));
            }
            ArrayRange { min_w: min * 1000.0, max_w: max * 1000.0, module_w: m * 1000.0 }
        });
        if array_peak_w.is_none() && array_range_w.is_none() {
            c.err(f, "give array_kwp (the design) or array_range_kwp (for the search), or both");
        }
        let mut irr = c.twelve(&format!("{f}.irradiation_kwh_per_m2_day"), &s.irradiation_kwh_per_m2_day, 0.1, 12.0, "kWh/m²/day on the horizontal (monthly mean)");
        for v in irr.iter_mut() {
            *v *= 3.6e6;
        }
        let temp = c.twelve(&format!("{f}.air_temperature_c"), &s.air_temperature_c, -40.0, 50.0, "°C (monthly mean daytime air temperature)");
        Solar {
            array_peak_w,
            array_range_w,
            irradiation_j_per_m2_day: irr,
            air_temperature_c: temp,
            tilt_deg: c.range(&format!("{f}.tilt_deg"), s.tilt_deg, 0.0, 90.0, "degrees from horizontal"),
            facing_azimuth_deg: c.range(&format!("{f}.facing_azimuth_deg"), s.facing_azimuth_deg, 0.0, 360.0, "degrees compass bearing (0 north, 180 south)"),
            ground_albedo: c.opt_range(&format!("{f}.ground_albedo"), s.ground_albedo, 0.2, 0.0, 1.0, "(fraction)"),
            temperature_coefficient_per_c: c.opt_range(&format!("{f}.temperature_coefficient_percent_per_c"), s.temperature_coefficient_percent_per_c, -0.4, -1.0, 0.0, "% per °C (crystalline silicon about −0.4)") / 100.0,
            noct_c: c.opt_range(&format!("{f}.noct_c"), s.noct_c, 45.0, 25.0, 70.0, "°C"),
            soiling_loss: c.opt_range(&format!("{f}.soiling_loss_percent"), s.soiling_loss_percent, 3.0, 0.0, 50.0, "%") / 100.0,
            wiring_loss: c.opt_range(&format!("{f}.wiring_loss_percent"), s.wiring_loss_percent, 3.0, 0.0, 50.0, "%") / 100.0,
            mismatch_loss: c.opt_range(&format!("{f}.mismatch_loss_percent"), s.mismatch_loss_percent, 2.0, 0.0, 50.0, "%") / 100.0,
            controller_loss: c.opt_range(&format!("{f}.controller_loss_percent"), s.controller_loss_percent, 5.0, 0.0, 50.0, "%") / 100.0,
        }
    });
    let generator = raw.drives.generator.as_ref().map(|g| {
        let f = "drives.generator";
        Generator {
            rated_w: c.positive(
                &format!("{f}.rated_power_kw"),
                g.rated_power_kw,
                2000.0,
                "kW",
            ) * 1000.0,
            run_hours: c.windows(&format!("{f}.run_hours"), &g.run_hours),
            fuel_l_per_kwh_rated: c.opt_range(
                &format!("{f}.fuel_l_per_kwh_rated"),
                g.fuel_l_per_kwh_rated,
                0.08,
                0.0,
                1.0,
                "L per kWh of rated power per hour (no-load term)",
            ),
            fuel_l_per_kwh_output: c.opt_range(
                &format!("{f}.fuel_l_per_kwh_output"),
                g.fuel_l_per_kwh_output,
                0.25,
                0.0,
                2.0,
                "L per kWh delivered",
            ),
            fuel_price_per_l: c.range(
                &format!("{f}.fuel_price_per_l"),
                g.fuel_price_per_l,
                0.0,
                1.0e6,
                "currency per litre",
            ),
        }
    });
    let grid = raw.drives.grid.as_ref().map(|g| {
        let f = "drives.grid";
        Grid {
            supply_hours: c.windows(&format!("{f}.supply_hours"), &g.supply_hours),
            available_w: c.positive(
                &format!("{f}.available_power_kw"),
                g.available_power_kw,
                5000.0,
                "kW",
            ) * 1000.0,
            tariff_per_kwh: c.range(
                &format!("{f}.tariff_per_kwh"),
                g.tariff_per_kwh,
                0.0,
                1.0e6,
                "currency per kWh",
            ),
        }
    });
    let hand = raw.drives.hand.as_ref().map(|h| {
        let f = "drives.hand";
        HandDrive {
            pumping_hours: c.windows(&format!("{f}.pumping_hours"), &h.pumping_hours),
            human_power_w: c.opt_range(
                &format!("{f}.human_power_w"),
                h.human_power_w,
                60.0,
                20.0,
                250.0,
                "W sustained by one person",
            ),
        }
    });

    // ---- pumps
    if raw.pumps.is_empty() {
        c.err("pumps", "no pumps listed; give at least one pump type");
    }
    check_unique_names(c, "pumps", raw.pumps.iter().map(|p| p.name.as_str()));
    let rho_g = crate::physics::water::water_density_kg_per_m3(water_temperature_c)
        * crate::physics::water::G_M_PER_S2;
    let mut pumps = Vec::new();
    for (i, p) in raw.pumps.iter().enumerate() {
        let f = format!("pumps[{i}]");
        if p.name.trim().is_empty() {
            c.err(
                &format!("{f}.name"),
                "is empty; name the pump type so the design can refer to it",
            );
        }
        let drive = match DriveKind::from_name(&p.drive) {
            Some(d) => d,
            None => {
                let hint = super::load::closest(&p.drive, DriveKind::NAMES)
                    .map(|s| format!(" (did you mean `{s}`?)"))
                    .unwrap_or_default();
                c.err(
                    &format!("{f}.drive"),
                    format!(
                        "`{}` is not a drive{hint}; use one of {}",
                        p.drive,
                        DriveKind::NAMES.join(", ")
                    ),
                );
                DriveKind::Grid
            }
        };
        let section_present = match drive {
            DriveKind::Solar => solar.is_some(),
            DriveKind::Generator => generator.is_some(),
            DriveKind::Grid => grid.is_some(),
            DriveKind::Hand => hand.is_some(),
            DriveKind::Ram => true,
        };
        if !section_present && DriveKind::from_name(&p.drive).is_some() {
            c.err(
                &format!("{f}.drive"),
                format!(
                    "drive `{}` is used but the file has no `drives.{}` section; add it",
                    p.drive, p.drive
                ),
            );
        }
        let source_index = if drive == DriveKind::Ram {
            raw.sources.streams.iter().position(|s| s.name == p.source)
        } else {
            raw.sources
                .boreholes
                .iter()
                .position(|b| b.name == p.source)
        };
        let source_index = match source_index {
            Some(i) => i,
            None => {
                let (kind, names): (&str, Vec<&str>) = if drive == DriveKind::Ram {
                    (
                        "stream",
                        raw.sources
                            .streams
                            .iter()
                            .map(|s| s.name.as_str())
                            .collect(),
                    )
                } else {
                    (
                        "borehole",
                        raw.sources
                            .boreholes
                            .iter()
                            .map(|b| b.name.as_str())
                            .collect(),
                    )
                };
                let hint = super::load::closest(&p.source, &names)
                    .map(|s| format!(" (did you mean `{s}`?)"))
                    .unwrap_or_default();
                c.err(
                    &format!("{f}.source"),
                    format!(
                        "no {kind} is named `{}`{hint}; {}",
                        p.source,
                        if names.is_empty() {
                            format!("add one under sources.{kind}s")
                        } else {
                            format!("the {kind}s are: {}", names.join(", "))
                        }
                    ),
                );
                0
            }
        };
        let max_units = match p.max_units {
            Some(m) => c.whole(
                &format!("{f}.max_units"),
                m,
                1.0,
                20.0,
                "units of this type that may be installed",
            ),
            None => p
                .units
                .filter(|u| u.is_finite())
                .map(|u| u.round().clamp(1.0, 20.0) as u32)
                .unwrap_or(1),
        };
        let units = p
            .units
            .map(|u| c.whole(&format!("{f}.units"), u, 0.0, 20.0, "installed units"));
        if let Some(u) = units.filter(|u| *u > max_units) {
            c.err(
                &format!("{f}.units"),
                format!("{u} units is more than max_units ({max_units})"),
            );
        }
        displacement::check_kind_keys(c, &f, p, drive);
        let kind = match drive {
            DriveKind::Hand => match &p.hand_pump {
                Some(h) => PumpKind::Hand {
                    stroke_volume_m3: c.positive(
                        &format!("{f}.hand_pump.stroke_volume_l"),
                        h.stroke_volume_l,
                        20.0,
                        "L per stroke",
                    ) / 1000.0,
                    strokes_per_s: c.positive(
                        &format!("{f}.hand_pump.strokes_per_min"),
                        h.strokes_per_min,
                        120.0,
                        "strokes per minute",
                    ) / 60.0,
                    mechanical_efficiency: c.range(
                        &format!("{f}.hand_pump.mechanical_efficiency_percent"),
                        h.mechanical_efficiency_percent,
                        5.0,
                        95.0,
                        "%",
                    ) / 100.0,
                    spout_height_m: c.opt_range(
                        &format!("{f}.hand_pump.spout_height_m"),
                        h.spout_height_m,
                        0.8,
                        0.0,
                        5.0,
                        "m above ground",
                    ),
                },
                None => {
                    c.err(&f, "a hand-driven pump needs a `hand_pump` section (stroke_volume_l, strokes_per_min, mechanical_efficiency_percent)");
                    PumpKind::Hand {
                        stroke_volume_m3: 0.001,
                        strokes_per_s: 0.5,
                        mechanical_efficiency: 0.5,
                        spout_height_m: 0.8,
                    }
                }
            },
            DriveKind::Ram => match &p.ram {
                Some(r) => PumpKind::Ram {
                    drive_flow_m3_per_s: c.positive(
                        &format!("{f}.ram.drive_flow_l_per_min"),
                        r.drive_flow_l_per_min,
                        100_000.0,
                        "L/min through the drive pipe",
                    ) / 60_000.0,
                    efficiency: c.range(
                        &format!("{f}.ram.efficiency_percent"),
                        r.efficiency_percent,
                        10.0,
                        90.0,
                        "% (D'Aubuisson efficiency; 50–80 % is usual)",
                    ) / 100.0,
                    elevation_m: c.range(
                        &format!("{f}.ram.elevation_m"),
                        r.elevation_m,
                        -500.0,
                        6000.0,
                        "m above sea level",
                    ),
                },
                None => {
                    c.err(&f, "a ram needs a `ram` section (drive_flow_l_per_min, efficiency_percent, elevation_m)");
                    PumpKind::Ram {
                        drive_flow_m3_per_s: 0.001,
                        efficiency: 0.6,
                        elevation_m: 0.0,
                    }
                }
            },
            _ if displacement::wanted(p) => displacement::check(c, &f, p, drive),
            _ => match &p.curve {
                Some(pts) => PumpKind::Curve {
                    points: check_curve(c, &f, pts, rho_g),
                    start_power_w: c.opt_range(
                        &format!("{f}.start_power_w"),
                        p.start_power_w,
                        0.0,
                        0.0,
                        1.0e6,
                        "W",
                    ),
                    min_speed_fraction: c.opt_range(
                        &format!("{f}.min_speed_fraction"),
                        p.min_speed_fraction,
                        0.3,
                        0.05,
                        1.0,
                        "(of the curve's speed)",
                    ),
                },
                None => {
                    c.err(&format!("{f}.curve"), "a motor pump needs its performance curve: a list of points with flow_m3_per_h, head_m and power_w (or efficiency_percent)");
                    PumpKind::Curve {
                        points: Vec::new(),
                        start_power_w: 0.0,
                        min_speed_fraction: 0.3,
                    }
                }
            },
        };
        pumps.push(Pump {
            name: p.name.clone(),
            drive,
            source_index,
            source_name: p.source.clone(),
            units,
            max_units,
            kind,
            unit_cost: c.opt_range(
                &format!("{f}.unit_cost"),
                p.unit_cost,
                0.0,
                0.0,
                1.0e9,
                "currency",
            ),
            lifetime_years: c.opt_range(
                &format!("{f}.lifetime_years"),
                p.lifetime_years,
                10.0,
                1.0,
                100.0,
                "years",
            ),
            maintenance_per_unit_year: c.opt_range(
                &format!("{f}.maintenance_per_unit_year"),
                p.maintenance_per_unit_year,
                0.0,
                0.0,
                1.0e9,
                "currency per unit per year",
            ),
        });
    }

    // ---- rising main
    let needs_main = pumps.iter().any(|p| {
        matches!(
            p.kind,
            PumpKind::Curve { .. } | PumpKind::Displacement { .. } | PumpKind::Ram { .. }
        )
    });
    let rising_main = match &raw.rising_main {
        Some(m) => {
            let f = "rising_main";
            let material = match Material::from_name(&m.material) {
                Some(mat) => Some(mat),
                None => {
                    let names = crate::physics::pipes::MATERIAL_NAMES;
                    let hint = super::load::closest(&m.material, names)
                        .map(|s| format!(" (did you mean `{s}`?)"))
                        .unwrap_or_default();
                    c.err(
                        &format!("{f}.material"),
                        format!(
                            "`{}` is not a known material{hint}; use one of {}",
                            m.material,
                            names.join(", ")
                        ),
                    );
                    None
                }
            };
            let method = m.friction_method.as_deref().unwrap_or("colebrook_white");
            let friction = match method {
                "colebrook_white" => Friction::ColebrookWhite {
                    roughness_m: match m.roughness_mm {
                        Some(r) => {
                            c.range(
                                &format!("{f}.roughness_mm"),
                                r,
                                0.0,
                                10.0,
                                "mm (absolute roughness)",
                            ) / 1000.0
                        }
                        None => material.map(|m| m.roughness_m()).unwrap_or(1.5e-6),
                    },
                },
                "hazen_williams" => Friction::HazenWilliams {
                    c: match m.hazen_williams_c {
                        Some(v) => c.range(
                            &format!("{f}.hazen_williams_c"),
                            v,
                            40.0,
                            160.0,
                            "(Hazen–Williams C)",
                        ),
                        None => material.map(|m| m.hazen_williams_c()).unwrap_or(140.0),
                    },
                },
                other => {
                    c.err(&format!("{f}.friction_method"), format!("`{other}` is not a friction method; use `colebrook_white` or `hazen_williams`"));
                    Friction::ColebrookWhite {
                        roughness_m: 1.5e-6,
                    }
                }
            };
            Some(RisingMain {
                length_m: c.positive(&format!("{f}.length_m"), m.length_m, 50_000.0, "m"),
                internal_diameter_m: c.range(
                    &format!("{f}.internal_diameter_mm"),
                    m.internal_diameter_mm,
                    10.0,
                    1000.0,
                    "mm",
                ) / 1000.0,
                material: m.material.clone(),
                friction,
                fittings_k_total: c.range(
                    &format!("{f}.fittings_k_total"),
                    m.fittings_k_total,
                    0.0,
                    1000.0,
                    "(sum of fitting loss coefficients K)",
                ),
            })
        }
        None => {
            if needs_main {
                c.err("rising_main", "a motor pump or ram needs the rising main to the tank: length_m, internal_diameter_mm, material");
            }
            None
        }
    };

    // ---- network
    let network = match &raw.network {
        Some(n) => {
            let f = "network";
            Network {
                public_taps: n
                    .public_taps
                    .map(|v| c.whole(&format!("{f}.public_taps"), v, 0.0, 100_000.0, "taps")),
                household_connections: n.household_connections.map(|v| {
                    c.whole(
                        &format!("{f}.household_connections"),
                        v,
                        0.0,
                        1_000_000.0,
                        "connections",
                    )
                }),
                tap_flow_m3_per_s: n.tap_flow_l_per_min.map(|v| {
                    c.positive(&format!("{f}.tap_flow_l_per_min"), v, 200.0, "L/min") / 60_000.0
                }),
                longest_walk_m: n
                    .longest_walk_m
                    .map(|v| c.range(&format!("{f}.longest_walk_m"), v, 0.0, 50_000.0, "m")),
                tap_elevations_m: n
                    .tap_elevations_m
                    .iter()
                    .enumerate()
                    .map(|(i, e)| {
                        c.range(
                            &format!("{f}.tap_elevations_m[{i}]"),
                            *e,
                            -500.0,
                            6000.0,
                            "m above sea level",
                        )
                    })
                    .collect(),
            }
        }
        None => Network::default(),
    };

    // ---- tank
    let t = &raw.tank;
    let f = "tank";
    let capacity_m3 = t.capacity_m3.map(|v| {
        let v = c.positive(
            &format!("{f}.capacity_m3"),
            v,
            20_000.0,
            "m³; a tank of zero cannot store water",
        );
        if v > 0.0 && v < 0.1 {
            c.err(
                &format!("{f}.capacity_m3"),
                format!(
                    "{} m³ is under 100 L, a bucket rather than a tank; the key is in m³ — was it given in some other unit (a 10,000 L tank is 10 m³)?",
                    fmt_num(v)
                ),
            );
        }
        v
    });
    let mut search = None;
    if let Some(r) = &t.capacity_range_m3 {
        let min = c.positive(
            &format!("{f}.capacity_range_m3.min_m3"),
            r.min_m3,
            20_000.0,
            "m³",
        );
        let max = c.positive(
            &format!("{f}.capacity_range_m3.max_m3"),
            r.max_m3,
            20_000.0,
            "m³",
        );
        let step = c.positive(
            &format!("{f}.capacity_range_m3.step_m3"),
            r.step_m3,
            1000.0,
            "m³",
        );
        if max < min {
            c.err(&format!("{f}.capacity_range_m3"), "max_m3 is below min_m3");
        } else if (max - min) / step > 4000.0 {
            c.err(
                &format!("{f}.capacity_range_m3"),
                format!(
                    "the range holds {:.0} steps; at most 4000 are allowed — use a larger step_m3",
                    (max - min) / step
                ),
            );
        }
        search = Some(TankSearch::Range {
            min_m3: min,
            max_m3: max,
            step_m3: step,
        });
    }
    if let Some(sizes) = &t.standard_sizes_m3 {
        if sizes.is_empty() {
            c.err(
                &format!("{f}.standard_sizes_m3"),
                "is empty; list the tank sizes available, e.g. [10, 20, 30, 50]",
            );
        } else if sizes.len() > 200 {
            c.err(
                &format!("{f}.standard_sizes_m3"),
                "lists more than 200 sizes; give a range with capacity_range_m3 instead",
            );
        }
        let mut v = Vec::new();
        for (i, s) in sizes.iter().enumerate() {
            v.push(c.positive(&format!("{f}.standard_sizes_m3[{i}]"), *s, 20_000.0, "m³"));
        }
        if v.windows(2).any(|w| w[1] <= w[0]) {
            c.err(
                &format!("{f}.standard_sizes_m3"),
                "sizes must be listed in increasing order without repeats",
            );
        }
        if search.is_some() {
            c.err(f, "give capacity_range_m3 or standard_sizes_m3, not both");
        }
        search = Some(TankSearch::Sizes(v));
    }
    if capacity_m3.is_none() && search.is_none() {
        c.err(f, "give capacity_m3 (the design) or capacity_range_m3 / standard_sizes_m3 (for the search)");
    }
    if t.initial_level_fraction.is_some() {
        c.warn(
            &format!("{f}.initial_level_fraction"),
            format!(
                "{f}.initial_level_fraction is no longer used and is ignored: every simulated \
                 year now starts in its periodic steady state (the state it ends in), so the \
                 result does not depend on a starting level; remove the line"
            ),
        );
    }
    let tank = Tank {
        capacity_m3,
        search,
        usable_fraction: c.opt_range(
            &format!("{f}.usable_fraction"),
            t.usable_fraction,
            0.95,
            0.3,
            1.0,
            "(share of the volume between outlet and overflow)",
        ),
        pump_start_level_fraction: c.opt_range(
            &format!("{f}.pump_start_level_fraction"),
            t.pump_start_level_fraction,
            0.9,
            0.0,
            1.0,
            "(pumps start when the tank falls below this share of full)",
        ),
        inlet_elevation_m: c.range(
            &format!("{f}.inlet_elevation_m"),
            t.inlet_elevation_m,
            -500.0,
            6500.0,
            "m above sea level",
        ),
        stand_height_m: t
            .stand_height_m
            .map(|h| c.range(&format!("{f}.stand_height_m"), h, 0.0, 60.0, "m")),
        delivery_pressure_pa: t.delivery_pressure_bar.map_or(0.0, |p| {
            crate::physics::water::pa_from_bar(c.range(
                &format!("{f}.delivery_pressure_bar"),
                p,
                0.0,
                16.0,
                "bar gauge at the inlet (a pressure vessel; 0 for an open tank)",
            ))
        }),
    };
    for (i, b) in boreholes.iter().enumerate() {
        let lift = tank.inlet_elevation_m - b.ground_elevation_m + b.static_depth_m;
        if lift < 0.0 {
            c.warn(&format!("sources.boreholes[{i}]"), "the tank inlet is below the static water level: water would flow by gravity; check the elevations");
        }
    }
    for (i, p) in pumps.iter().enumerate() {
        if let Some((head_m, lift_m)) = p.cannot_lift_m(&boreholes, &tank) {
            c.warn(
                &format!("pumps[{i}].curve[0].head_m"),
                format!(
                    "pump `{}` cannot lift water to the tank at any speed: its highest head at rated speed is {} m, the static lift from the water level in `{}` to the tank inlet is {:.1} m; choose a pump whose shut-off head is well above {:.0} m",
                    p.name,
                    fmt_num(head_m),
                    p.source_name,
                    lift_m,
                    lift_m
                ),
            );
        }
    }
    for (i, p) in pumps.iter().enumerate() {
        let PumpKind::Ram { elevation_m, .. } = p.kind else {
            continue;
        };
        if let Some(s) = streams.get(p.source_index) {
            let lift = tank.inlet_elevation_m - elevation_m;
            if lift <= s.usable_fall_m {
                c.err(&format!("pumps[{i}].ram.elevation_m"), format!("the tank inlet (tank.inlet_elevation_m) is only {lift:.1} m above the ram, not above the supply fall ({} m, sources.streams[{}].usable_fall_m); a ram lifts higher than its fall", s.usable_fall_m, p.source_index));
            }
        }
    }

    displacement::check_lift(
        c,
        &pumps,
        &boreholes,
        &tank,
        crate::physics::water::water_density_kg_per_m3(water_temperature_c),
    );

    // ---- targets
    let g = &raw.targets;
    let f = "targets";
    let max_sh = g.max_shortfall_hours_per_year.map(|v| {
        c.range(
            &format!("{f}.max_shortfall_hours_per_year"),
            v,
            0.0,
            8760.0,
            "hours a year",
        )
    });
    let min_met = g.min_demand_met_percent.map(|v| {
        c.range(
            &format!("{f}.min_demand_met_percent"),
            v,
            0.0,
            100.0,
            "% of the year's demand",
        ) / 100.0
    });
    if max_sh.is_none() && min_met.is_none() {
        c.err(f, "give max_shortfall_hours_per_year or min_demand_met_percent (or both): the reliability the plan must reach");
    }
    let judged_on = match g.judged_on.as_deref() {
        None | Some("p90") => JudgedOn::P90,
        Some("median") => JudgedOn::Median,
        Some(o) => {
            c.err(
                &format!("{f}.judged_on"),
                format!("`{o}` is not known; use `median` or `p90` (the 1-year-in-10 figure)"),
            );
            JudgedOn::P90
        }
    };
    let targets = Targets {
        max_shortfall_hours_per_year: max_sh,
        min_demand_met_fraction: min_met,
        min_supply_m3_per_person_day: c.opt_range(
            &format!("{f}.min_supply_l_per_person_day"),
            g.min_supply_l_per_person_day,
            20.0,
            0.0,
            500.0,
            "L per person per day",
        ) / 1000.0,
        judged_on,
        repair_days: c.opt_range(
            &format!("{f}.repair_days"),
            g.repair_days,
            7.0,
            1.0,
            60.0,
            "days one pump unit is out of service for repair in the repair case",
        ),
    };

    // ---- costs
    let costs = match &raw.costs {
        Some(k) => {
            let f = "costs";
            let money = |c: &mut Ck, key: &str, v: f64| {
                c.range(&format!("{f}.{key}"), v, 0.0, 1.0e10, "currency")
            };
            Costs {
                given: true,
                discount_rate: c.range(
                    &format!("{f}.discount_rate_percent"),
                    k.discount_rate_percent,
                    0.0,
                    30.0,
                    "% per year (real)",
                ) / 100.0,
                tank_per_m3: money(c, "tank_per_m3", k.tank_per_m3),
                tank_fixed: money(c, "tank_fixed", k.tank_fixed),
                tank_lifetime_years: c.opt_range(
                    &format!("{f}.tank_lifetime_years"),
                    k.tank_lifetime_years,
                    30.0,
                    1.0,
                    100.0,
                    "years",
                ),
                pv_per_w: money(c, "pv_per_kwp", k.pv_per_kwp) / 1000.0,
                pv_lifetime_years: c.opt_range(
                    &format!("{f}.pv_lifetime_years"),
                    k.pv_lifetime_years,
                    25.0,
                    1.0,
                    100.0,
                    "years",
                ),
                generator_capital: money(c, "generator_capital", k.generator_capital),
                generator_lifetime_years: c.opt_range(
                    &format!("{f}.generator_lifetime_years"),
                    k.generator_lifetime_years,
                    10.0,
                    1.0,
                    100.0,
                    "years",
                ),
                generator_maintenance_per_run_hour: money(
                    c,
                    "generator_maintenance_per_run_hour",
                    k.generator_maintenance_per_run_hour,
                ),
                rising_main_capital: money(c, "rising_main_capital", k.rising_main_capital),
                maintenance_fraction_of_capital_per_year: c.range(
                    &format!("{f}.maintenance_percent_of_capital_per_year"),
                    k.maintenance_percent_of_capital_per_year,
                    0.0,
                    50.0,
                    "% of capital per year",
                ) / 100.0,
            }
        }
        None => Costs {
            given: false,
            discount_rate: 0.0,
            tank_per_m3: 0.0,
            tank_fixed: 0.0,
            tank_lifetime_years: 30.0,
            pv_per_w: 0.0,
            pv_lifetime_years: 25.0,
            generator_capital: 0.0,
            generator_lifetime_years: 10.0,
            generator_maintenance_per_run_hour: 0.0,
            rising_main_capital: 0.0,
            maintenance_fraction_of_capital_per_year: 0.0,
        },
    };

    // ---- weather
    let weather = match &raw.weather {
        None => Weather {
            mode: WeatherMode::MeanDays,
        },
        Some(w) => {
            let f = "weather";
            let mode = match w.mode.as_str() {
                "mean_days" => WeatherMode::MeanDays,
                "synthetic" => {
                    let seed = match w.seed {
                        Some(s) => c.whole(
                            &format!("{f}.seed"),
                            s,
                            0.0,
                            4_294_967_295.0,
                            "(any whole number; it makes the weather repeatable)",
                        ) as u64,
                        None => {
                            c.err(&format!("{f}.seed"), "synthetic weather needs a seed (any whole number) so every run and reprint is identical");
                            0
                        }
                    };
                    let years = w
                        .years
                        .map(|y| c.whole(&format!("{f}.years"), y, 1.0, 100.0, "synthetic years"))
                        .unwrap_or(30);
                    WeatherMode::Synthetic { seed, years }
                }
                "file" => match &w.file {
                    Some(p) => {
                        let path = base_dir.join(p);
                        match std::fs::metadata(&path) {
                            Ok(m) if m.is_file() => {}
                            Ok(m) => c.err(&format!("{f}.file"), format!("weather file `{}` is {}, not a regular file; give the path of an .epw or .csv file", crate::text::escape_controls(&path.display().to_string()), crate::input::kind_of(&m))),
                            Err(e) if e.kind() == std::io::ErrorKind::NotFound => c.err(&format!("{f}.file"), format!("weather file `{}` not found (paths are relative to the scheme file's folder)", crate::text::escape_controls(&path.display().to_string()))),
                            Err(e) => c.err(&format!("{f}.file"), format!("weather file `{}` cannot be read: {}", crate::text::escape_controls(&path.display().to_string()), crate::input::plain_io(&e))),
                        }
                        WeatherMode::File { path }
                    }
                    None => {
                        c.err(
                            &format!("{f}.file"),
                            "mode `file` needs `file:` naming an .epw or .csv weather file",
                        );
                        WeatherMode::MeanDays
                    }
                },
                other => {
                    c.err(
                        &format!("{f}.mode"),
                        format!(
                            "`{other}` is not a weather mode; use mean_days, synthetic or file"
                        ),
                    );
                    WeatherMode::MeanDays
                }
            };
            Weather { mode }
        }
    };
    let uses_solar = pumps.iter().any(|p| p.drive == DriveKind::Solar);
    // Checks the engine would otherwise meet only when preparing a run, made here so they are
    // reported with their line and beside every other problem of the file.
    if uses_solar {
        match (&weather.mode, &solar) {
            (WeatherMode::Synthetic { .. }, Some(sol)) => {
                let kt = crate::simulate::inputs::monthly_mean_clearness(
                    latitude_deg.to_radians(),
                    &sol.irradiation_j_per_m2_day,
                );
                let (lo, hi) = (
                    crate::weather::MONTHLY_MEAN_KT_MIN,
                    crate::weather::MONTHLY_MEAN_KT_MAX,
                );
                for (m, k) in kt.iter().enumerate() {
                    let field = format!("drives.solar.irradiation_kwh_per_m2_day[{m}]");
                    let reported = c.problems.iter().any(|p| p.field == field);
                    if !reported && !(lo..hi).contains(k) {
                        c.err(
                            &field,
                            format!(
                                "{:.2} kWh/m²/day is {:.0} % of the sunlight reaching the top of the atmosphere at this latitude in {}; a monthly mean clearness index must lie between {lo} and {hi} — check the value and its unit (kWh/m² per day on the horizontal)",
                                sol.irradiation_j_per_m2_day[m] / 3.6e6,
                                k * 100.0,
                                crate::weather::MONTH_NAMES[m],
                            ),
                        );
                    }
                }
            }
            (WeatherMode::File { path }, _) if path.is_file() => {
                if let Err(e) = crate::weather::read_weather_file(path) {
                    c.err("weather.file", e.to_string());
                }
            }
            _ => {}
        }
    }
    if !uses_solar && !matches!(weather.mode, WeatherMode::MeanDays) {
        c.warn(
            "weather",
            "no pump is solar-driven, so the weather does not change the results",
        );
    }

    // ---- sensitivity, declared
    let sens = raw.sensitivity.clone().unwrap_or(RawSensitivity {
        demand_percent: None,
        growth_points: None,
        irradiation_percent: None,
        yield_percent: None,
        fuel_price_percent: None,
    });
    let f = "sensitivity";
    let sensitivity = Sensitivity {
        demand_fraction: c.opt_range(
            &format!("{f}.demand_percent"),
            sens.demand_percent,
            20.0,
            -90.0,
            500.0,
            "% change",
        ) / 100.0,
        growth_points: c.opt_range(
            &format!("{f}.growth_points"),
            sens.growth_points,
            1.0,
            -10.0,
            10.0,
            "percentage points",
        ) / 100.0,
        irradiation_fraction: c.opt_range(
            &format!("{f}.irradiation_percent"),
            sens.irradiation_percent,
            -15.0,
            -90.0,
            100.0,
            "% change",
        ) / 100.0,
        yield_fraction: c.opt_range(
            &format!("{f}.yield_percent"),
            sens.yield_percent,
            -25.0,
            -90.0,
            100.0,
            "% change",
        ) / 100.0,
        fuel_price_fraction: c.opt_range(
            &format!("{f}.fuel_price_percent"),
            sens.fuel_price_percent,
            50.0,
            -90.0,
            1000.0,
            "% change",
        ) / 100.0,
    };
    let declared = match &raw.declared {
        Some(dc) => Declared {
            shortfall_hours_per_year: dc
                .shortfall_hours_per_year
                .map(|v| c.range("declared.shortfall_hours_per_year", v, 0.0, 8760.0, "hours")),
            demand_met_fraction: dc
                .demand_met_percent
                .map(|v| c.range("declared.demand_met_percent", v, 0.0, 100.0, "%") / 100.0),
        },
        None => Declared::default(),
    };

    // a curve's flows in L/s typed as m³/h would be 3.6 times too small; in m³/h typed where
    // L/s was meant, 3.6 times too large: a velocity in the main above 5 m/s (common practice:
    // mains are laid for 0.5–2.5 m/s) points at the latter
    if let Some(main) = &rising_main {
        let area = std::f64::consts::PI * main.internal_diameter_m * main.internal_diameter_m / 4.0;
        for (i, p) in pumps.iter().enumerate() {
            if let PumpKind::Curve { points, .. } = &p.kind {
                let q = points
                    .iter()
                    .map(|x| x.flow_m3_per_s)
                    .fold(0.0f64, f64::max);
                let v = if area > 0.0 { q / area } else { 0.0 };
                if v > 5.0 {
                    ck.warn(
                        &format!("pumps[{i}].curve"),
                        format!(
                            "the curve's largest flow, {:.1} m³/h, would run at {v:.1} m/s in the {:.0} mm rising main (mains are laid for 0.5–2.5 m/s); check that flow_m3_per_h is in m³/h (1 L/s is 3.6 m³/h) and the main's internal_diameter_mm",
                            q * 3600.0,
                            main.internal_diameter_m * 1000.0
                        ),
                    );
                }
            }
        }
    }
    if !ck.problems.is_empty() {
        return Err(ck.problems);
    }
    Ok(Scheme {
        info: Info {
            name: r.name.clone(),
            latitude_deg,
            longitude_deg,
            elevation_m,
            prepared_by: r.prepared_by.clone(),
            plan_date: plan_date
                .map(|d| d.format("%Y-%m-%d").to_string())
                .unwrap_or_default(),
            base_year,
            horizon_years,
            currency: r.currency.trim().to_string(),
            water_temperature_c,
            notes: r.notes.clone(),
        },
        demand: Demand {
            population,
            growth_method,
            growth_rate_per_year: growth_rate,
            per_capita_m3_per_day: per_capita,
            other_users,
            losses_fraction: losses,
            profile_name,
            profile,
            monthly_factors,
        },
        boreholes,
        streams,
        solar,
        generator,
        grid,
        hand,
        pumps,
        rising_main,
        network,
        tank,
        targets,
        costs,
        weather,
        sensitivity,
        declared,
        warnings: ck.warnings,
    })
}

fn check_unique_names<'a>(c: &mut Ck, field: &str, names: impl Iterator<Item = &'a str>) {
    let mut seen = std::collections::BTreeSet::new();
    for (i, n) in names.enumerate() {
        if !seen.insert(n) {
            c.err(
                &format!("{field}[{i}].name"),
                format!(
                    "the name `{n}` is used twice; names must be unique so they can be referred to"
                ),
            );
        }
    }
}

/// Checks a pump curve and converts it to SI; input power from efficiency where power is absent.
fn check_curve(c: &mut Ck, f: &str, pts: &[RawCurvePoint], rho_g: f64) -> Vec<CurvePointSi> {
    let cf = format!("{f}.curve");
    if pts.len() < 3 {
        c.err(
            &cf,
            format!(
                "has {} points; a performance curve needs at least 3 (shut-off, duty, run-out)",
                pts.len()
            ),
        );
    }
    let mut out = Vec::new();
    for (j, p) in pts.iter().enumerate() {
        let pf = format!("{cf}[{j}]");
        let q = c.range(
            &format!("{pf}.flow_m3_per_h"),
            p.flow_m3_per_h,
            0.0,
            2000.0,
            "m³/h",
        ) / 3600.0;
        let h = c.range(&format!("{pf}.head_m"), p.head_m, 0.0, 2000.0, "m");
        let power = match (p.power_w, p.efficiency_percent) {
            (Some(w), _) => c.positive(&format!("{pf}.power_w"), w, 5.0e6, "W input power"),
            (None, Some(e)) => {
                let e = c.range(
                    &format!("{pf}.efficiency_percent"),
                    e,
                    0.0,
                    95.0,
                    "% (wire-to-water)",
                ) / 100.0;
                if e <= 0.0 || q <= 0.0 || h <= 0.0 {
                    c.err(&pf, "input power cannot be found from efficiency at zero flow or head; give power_w at this point");
                    1.0
                } else {
                    rho_g * q * h / e
                }
            }
            (None, None) => {
                c.err(
                    &pf,
                    "give power_w (input power) or efficiency_percent at every curve point",
                );
                1.0
            }
        };
        // hydraulic power ρ g Q H cannot exceed the input power (efficiency above 100 %)
        let hydraulic_w = rho_g * q * h;
        if p.power_w.is_some() && power > 0.0 && hydraulic_w > power * (1.0 + 1e-9) {
            c.err(
                &format!("{pf}.power_w"),
                format!(
                    "{} W is less than the {:.0} W of hydraulic power this point delivers (ρ·g·Q·H), an efficiency of {:.0} %; the key is input power in watts — was it given in kW ({} kW is {} W)?",
                    fmt_num(power),
                    hydraulic_w,
                    hydraulic_w / power * 100.0,
                    fmt_num(power),
                    fmt_num(power * 1000.0)
                ),
            );
        }
        out.push(CurvePointSi {
            flow_m3_per_s: q,
            head_m: h,
            power_w: power,
        });
    }
    // best wire-to-water efficiency over the curve: below 5 % a unit is likely wrong
    let best = out
        .iter()
        .filter(|p| p.power_w > 0.0)
        .map(|p| rho_g * p.flow_m3_per_s * p.head_m / p.power_w)
        .fold(0.0f64, f64::max);
    if pts.iter().all(|p| p.power_w.is_some()) && out.len() >= 3 && best > 0.0 && best < 0.05 {
        c.warn(
            &cf,
            format!(
                "the best wire-to-water efficiency on this curve is {:.1} % (ρ·g·Q·H over power_w); pumps reach 20–80 % — check the units of flow_m3_per_h (m³/h, not L/s or L/h) and power_w (W)",
                best * 100.0
            ),
        );
    }
    for j in 1..out.len() {
        if out[j].flow_m3_per_s <= out[j - 1].flow_m3_per_s {
            c.err(
                &format!("{cf}[{j}].flow_m3_per_h"),
                "flows must increase from point to point; list the curve from shut-off to run-out",
            );
        }
        if out[j].head_m > out[j - 1].head_m {
            c.err(&format!("{cf}[{j}].head_m"), format!("head rises with flow ({} m after {} m at {cf}[{}].head_m); a measured pump curve falls as flow rises — check the order of the points", out[j].head_m, out[j - 1].head_m, j - 1));
        }
    }
    out
}
