//! Properties of the hourly engine over generated schemes: water is conserved, shortfall hours
//! stay in range, a larger tank or more drive never makes shortfall worse, and runs repeat
//! exactly. Schemes are a template YAML (invented village) with its numbers drawn at random
//! within valid ranges.

use std::path::Path;

#[path = "support/samples.rs"]
mod samples;

use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed};
use tapplan::scheme::{Scheme, load_str};
use tapplan::simulate::{Design, Model, YearResult};

/// Cases per property (kept modest so the suite stays fast in debug builds); the
/// `PROPTEST_CASES` environment variable asks for more.
const CASES: u32 = 64;

#[derive(Debug, Clone)]
enum Drive {
    /// Generator window start hour and length, h.
    Generator { start: u32, hours: u32 },
    /// Daily irradiation scale (× a 5 kWh/m² base), array kWp, weather seed.
    Solar {
        irradiation: f64,
        array_kwp: f64,
        seed: u32,
    },
}

#[derive(Debug, Clone)]
struct Params {
    population: u32,
    per_capita_l: f64,
    losses_pct: f64,
    tank_m3: f64,
    usable: f64,
    initial: f64,
    start_level: f64,
    static_m: f64,
    head_scale: f64,
    flow_scale: f64,
    units: u32,
    aquifer: Option<(f64, f64)>,
    drive: Drive,
}

fn drive_strategy() -> impl Strategy<Value = Drive> {
    prop_oneof![
        (3u32..10, 3u32..13).prop_map(|(start, hours)| Drive::Generator { start, hours }),
        (0.7f64..1.3, 1.0f64..10.0, 0u32..1000).prop_map(|(irradiation, array_kwp, seed)| {
            Drive::Solar {
                irradiation,
                array_kwp,
                seed,
            }
        }),
    ]
}

prop_compose! {
    fn params()(
        population in 100u32..4000,
        per_capita_l in 15.0f64..60.0,
        losses_pct in 0.0f64..30.0,
        tank_m3 in 5.0f64..400.0,
        usable in 0.7f64..1.0,
        initial in 0.0f64..1.0,
        start_level in 0.5f64..1.0,
        static_m in 5.0f64..30.0,
        head_scale in 0.9f64..1.4,
        flow_scale in 0.5f64..2.0,
        units in 1u32..4,
        aquifer in proptest::option::of((20.0f64..500.0, 1e-4f64..1e-2)),
        drive in drive_strategy(),
    ) -> Params {
        Params { population, per_capita_l, losses_pct, tank_m3, usable, initial, start_level,
            static_m, head_scale, flow_scale, units, aquifer, drive }
    }
}

fn yaml(p: &Params) -> String {
    let flows = [0.0, 3.0, 6.0, 9.0, 12.0, 15.0];
    let heads = [80.0, 76.0, 70.0, 61.0, 49.0, 34.0];
    let powers = [1200.0, 1500.0, 1800.0, 2050.0, 2250.0, 2400.0];
    let mut curve = String::new();
    for i in 0..6 {
        curve.push_str(&format!(
            "      - {{flow_m3_per_h: {:?}, head_m: {:?}, power_w: {:?}}}\n",
            flows[i] * p.flow_scale,
            heads[i] * p.head_scale,
            powers[i] * p.flow_scale * p.head_scale
        ));
    }
    let aquifer = match p.aquifer {
        Some((t, s)) => {
            format!("      transmissivity_m2_per_day: {t:?}\n      storativity: {s:?}\n")
        }
        None => String::new(),
    };
    let (drive, pump_drive, pump_extra, weather) = match &p.drive {
        Drive::Generator { start, hours } => (
            format!(
                "  generator:\n    rated_power_kw: 10\n    run_hours: [{{start_hour: {start}, end_hour: {}}}]\n    fuel_price_per_l: 1.2\n",
                start + hours
            ),
            "generator",
            String::new(),
            String::new(),
        ),
        Drive::Solar {
            irradiation,
            array_kwp,
            seed,
        } => {
            let base = [5.6, 5.7, 5.5, 5.2, 4.9, 4.6, 4.7, 5.1, 5.6, 5.9, 5.9, 5.7];
            let irr: Vec<String> = base
                .iter()
                .map(|v| format!("{:?}", v * irradiation))
                .collect();
            (
                format!(
                    "  solar:\n    array_kwp: {array_kwp:?}\n    irradiation_kwh_per_m2_day: [{}]\n    air_temperature_c: [24, 24, 23, 22, 21, 19, 19, 20, 22, 24, 25, 24]\n    tilt_deg: 10\n    facing_azimuth_deg: 0\n",
                    irr.join(", ")
                ),
                "solar",
                "    start_power_w: 300\n    min_speed_fraction: 0.3\n".to_string(),
                format!("weather:\n  mode: synthetic\n  seed: {seed}\n  years: 1\n"),
            )
        }
    };
    format!(
        r#"
scheme:
  name: Generated village (invented)
  latitude_deg: -8.5
  longitude_deg: 33.0
  elevation_m: 1200
  plan_date: 2026-03-01
  horizon_years: 10
  currency: USD
demand:
  population: {population}
  growth: {{method: geometric, rate_percent_per_year: 2.5}}
  per_capita_l_per_day: {per_capita:?}
  losses_percent: {losses:?}
  daily_profile: communal_taps
sources:
  boreholes:
    - name: BH-Gen
      static_water_level_m: {static_m:?}
      tested_yield_m3_per_h: 30
      safe_yield_fraction: 0.8
{aquifer}      well_loss_linear_s_per_m2: 300
      well_loss_quadratic_s2_per_m5: 50000
      pump_intake_depth_m: 70
      diameter_mm: 152
      submergence_margin_m: 3
drives:
{drive}pumps:
  - name: Gen-Pump
    drive: {pump_drive}
    source: BH-Gen
    units: {units}
    max_units: 3
{pump_extra}    curve:
{curve}rising_main:
  length_m: 300
  internal_diameter_mm: 75
  material: hdpe
  fittings_k_total: 6
tank:
  capacity_m3: {tank:?}
  usable_fraction: {usable:?}
  initial_level_fraction: {initial:?}
  pump_start_level_fraction: {start_level:?}
  inlet_elevation_m: 1220
targets:
  max_shortfall_hours_per_year: 200
{weather}"#,
        population = p.population,
        per_capita = p.per_capita_l,
        losses = p.losses_pct,
        static_m = p.static_m,
        units = p.units,
        tank = p.tank_m3,
        usable = p.usable,
        initial = p.initial,
        start_level = p.start_level,
    )
}

fn scheme(p: &Params) -> Scheme {
    match load_str(&yaml(p), "generated", Path::new(".")) {
        Ok(l) => l.scheme,
        Err(e) => panic!("generated scheme did not load:\n{e}\n{}", yaml(p)),
    }
}

fn design(s: &Scheme, tank_m3: f64) -> Design {
    Design {
        tank_m3,
        units: s.pumps.iter().map(|p| p.units.unwrap_or(0)).collect(),
        array_w: s.solar.as_ref().and_then(|x| x.array_peak_w).unwrap_or(0.0),
    }
}

fn run(s: &Scheme, d: &Design) -> YearResult {
    Model::new(s).expect("model").run_year(d, 0, 0, false)
}

fn check_balance(r: &YearResult) -> Result<(), TestCaseError> {
    let a = &r.annual;
    let rhs = a.delivered_m3 + a.overflow_m3 + (r.end_level_m3 - r.start_level_m3);
    prop_assert!(
        (a.pumped_m3 - rhs).abs() <= 1e-6 * a.pumped_m3.max(1.0),
        "pumped {} ≠ delivered + overflow + Δstorage {}",
        a.pumped_m3,
        rhs
    );
    prop_assert!(a.shortfall_hours <= 8760);
    prop_assert!(a.unmet_m3 >= 0.0 && a.delivered_m3 >= -1e-9);
    Ok(())
}

fn config() -> Config {
    Config {
        cases: std::env::var("PROPTEST_CASES")
            .ok()
            .and_then(|v| v.parse().ok())
            .unwrap_or(CASES),
        failure_persistence: None,
        // fixed seed: the same cases every run (`PROPTEST_RNG_SEED` is not read here)
        rng_seed: RngSeed::Fixed(20_260_301),
        ..Config::default()
    }
}

proptest! {
    #![proptest_config(config())]

    /// Conservation of mass (common practice), shortfall hours within 0..=8760, and the
    /// same result from two runs (and two models) of the same design.
    #[test]
    fn balance_range_and_repeatability(p in params()) {
        let s = scheme(&p);
        let d = design(&s, p.tank_m3);
        let m = Model::new(&s).unwrap();
        let a = m.run_year(&d, 0, 0, true);
        check_balance(&a)?;
        let b = m.run_year(&d, 0, 0, true);
        let c = run(&s, &d);
        let ja = serde_json::to_string(&a).unwrap();
        prop_assert_eq!(&ja, &serde_json::to_string(&b).unwrap());
        let jc = serde_json::to_string(&c).unwrap();
        let ja_no_hourly = serde_json::to_string(&YearResult { hourly: None, ..a.clone() }).unwrap();
        prop_assert_eq!(ja_no_hourly, jc);
        // horizon year too
        check_balance(&m.run_year(&d, 10, 0, false))?;
    }

    /// Every year starts in its periodic state, so the file's (retired) starting level moves
    /// nothing: 0, ½ and full give the same year, for tanks of up to 60 days of demand
    /// (seasonal storage). The year's water balance closes to 1e-9 of its demand
    /// (conservation of mass, common practice), and a year that reached its periodic state
    /// ends at the level it started from.
    #[test]
    fn periodic_year_ignores_the_starting_level(p in params(), days in 0.1f64..60.0) {
        let daily_m3 = p.population as f64 * p.per_capita_l / 1000.0;
        let mut runs = Vec::new();
        for initial in [0.0, 0.5, 1.0] {
            let q = Params { tank_m3: (days * daily_m3).max(1.0), initial, ..p.clone() };
            let s = scheme(&q);
            prop_assert!(
                s.warnings.iter().any(|w| w.contains("initial_level_fraction")),
                "the retired key is named in a warning: {:?}", s.warnings
            );
            let r = run(&s, &design(&s, q.tank_m3));
            let a = &r.annual;
            let lhs = a.pumped_m3 - a.delivered_m3 - a.overflow_m3;
            prop_assert!(
                (lhs - r.storage_change_m3).abs() <= 1e-9 * a.demand_m3.max(1.0),
                "pumped − delivered − overflow {} ≠ storage change {}", lhs, r.storage_change_m3
            );
            prop_assert!(
                (r.storage_change_m3 - (r.end_level_m3 - r.start_level_m3)).abs() <= 1e-12 * (1.0 + r.end_level_m3)
            );
            if r.steady {
                let scale = q.tank_m3 * q.usable + daily_m3;
                prop_assert!(
                    (r.end_level_m3 - r.start_level_m3).abs() <= 1e-4 * scale,
                    "a periodic year ends where it starts: {} → {}", r.start_level_m3, r.end_level_m3
                );
            }
            runs.push(r);
        }
        for r in &runs[1..] {
            prop_assert_eq!(r.annual.shortfall_hours, runs[0].annual.shortfall_hours);
            prop_assert_eq!(r.annual.delivered_m3.to_bits(), runs[0].annual.delivered_m3.to_bits());
        }
    }

    /// A larger tank, same pumps and drive, never gives more shortfall hours when the pumps
    /// restart as soon as the tank is below full (pump start level 1, no dead band).
    ///
    /// With a dead band (start level below 1) neither shortfall hours nor unmet volume is
    /// monotone, and this is the control law, not arithmetic: a float switch that waits for the level to
    /// fall to the start level before restarting wastes drive hours (sun hours for a solar
    /// pump) by an amount that depends on when the tank fills, so a bigger tank or stronger
    /// drive can shift shortfall into more, smaller hours. Smallest case found (solar, seed 0,
    /// 3321 people at 29 L/d, usable 0.725, start level 0.718): 89.3 m³ → 365 h, 93.7 m³ →
    /// 402 h, while the unmet volume falls 1600.8 → 1569.4 m³; with start level 1 the same
    /// tanks give 176 h → 153 h. Unmet volume: solar, seed 6, 1726 people at 33.6 L/d, usable
    /// 0.726, start level 0.565, 3 units: 194.5 m³ → 625.9 m³ unmet, 204.3 m³ → 673.0 m³.
    #[test]
    fn larger_tank_never_worse(p in params(), grow in 1.05f64..3.0) {
        let q = Params { start_level: 1.0, ..p.clone() };
        let s = scheme(&q);
        let small = run(&s, &design(&s, q.tank_m3));
        let big = run(&s, &design(&s, q.tank_m3 * grow));
        check_balance(&big)?;
        prop_assert!(
            big.annual.shortfall_hours <= small.annual.shortfall_hours,
            "no dead band: tank {} m³: {} h; tank {} m³: {} h",
            q.tank_m3, small.annual.shortfall_hours, q.tank_m3 * grow, big.annual.shortfall_hours
        );
    }

    /// More drive (generator window extended at its end, or a larger array) never gives more
    /// shortfall hours without a dead band (start level 1). (Pumped
    /// volume itself is not monotone: with level control a stronger supply can pump less when
    /// demand is the limit.) Smallest dead-band counterexample for hours found: solar, seed 0,
    /// 5 m³ tank, start level 0.5, 5.18 kWp → 4961 h, 5.70 kWp → 4966 h (unmet 14 124 → 13 715
    /// m³); with start level 1: 4148 h → 4123 h. With a dead band and slow aquifer recovery
    /// (T = 20 m²/d) a 3 h → 5 h generator window left 90.7124 → 90.7140 m³ unmet.
    #[test]
    fn more_drive_never_worse(p in params(), extra_h in 1u32..6, array_factor in 1.1f64..2.0) {
        let stronger = |p: &Params| {
            let mut q = p.clone();
            q.drive = match p.drive {
                Drive::Generator { start, hours } => Drive::Generator { start, hours: (hours + extra_h).min(24 - start) },
                Drive::Solar { irradiation, array_kwp, seed } => Drive::Solar { irradiation, array_kwp: array_kwp * array_factor, seed },
            };
            q
        };
        let pair = |p: &Params| {
            let s = scheme(p);
            let base = run(&s, &design(&s, p.tank_m3));
            let q = stronger(p);
            let s2 = scheme(&q);
            (base, run(&s2, &design(&s2, q.tank_m3)), q.drive)
        };
        let (base, more, drive) = pair(&Params { start_level: 1.0, ..p.clone() });
        check_balance(&more)?;
        prop_assert!(
            more.annual.shortfall_hours <= base.annual.shortfall_hours,
            "no dead band: {:?}: {} h; {:?}: {} h",
            p.drive, base.annual.shortfall_hours, drive, more.annual.shortfall_hours
        );
    }
}

/// The scheme of `p` with the borehole's tested yield set (m³/h) and, when `two_types`, a
/// second pump type (a copy of the first under another name) on the same borehole.
fn yaml_capped(p: &Params, tested_yield_m3_per_h: f64, two_types: bool) -> String {
    let text = yaml(p).replace(
        "tested_yield_m3_per_h: 30",
        &format!("tested_yield_m3_per_h: {tested_yield_m3_per_h:?}"),
    );
    if !two_types {
        return text;
    }
    let start = text.find("  - name: Gen-Pump").expect("pump block");
    let end = text.find("rising_main:").expect("rising main");
    let copy = text[start..end].replace("name: Gen-Pump", "name: Gen-Pump-B");
    format!("{}{copy}{}", &text[..end], &text[end..])
}

proptest! {
    #![proptest_config(config())]

    /// Every hour count of a year is a count of hours, not of pump types: none exceeds the
    /// hours in the year, and the hours held at the safe yield and beyond the curve are hours
    /// in which a motor pump ran (from the hourly series), with one or two pump types on one
    /// borehole and a safe yield low enough to hold them (common practice: a year has 8760
    /// or 8784 hours).
    #[test]
    fn hour_counts_count_hours(
        p in params(),
        tested_yield in 1.0f64..20.0,
        two_types in any::<bool>(),
    ) {
        let text = yaml_capped(&p, tested_yield, two_types);
        let s = match load_str(&text, "generated", Path::new(".")) {
            Ok(l) => l.scheme,
            Err(e) => panic!("generated scheme did not load:\n{e}\n{text}"),
        };
        let d = design(&s, p.tank_m3);
        let m = Model::new(&s).unwrap();
        for year in [0, s.info.horizon_years] {
            let r = m.run_year(&d, year, 0, true);
            let h = r.hourly.as_ref().unwrap();
            let hours = h.demand_m3.len() as u32;
            prop_assert!(hours == 8760 || hours == 8784, "{hours} hours in the year");
            let motor_hours = h.pump_power_w.iter().filter(|w| **w > 0.0).count() as u32;
            let a = &r.annual;
            prop_assert!(a.pump_run_hours <= f64::from(hours) + 1e-9);
            prop_assert!(f64::from(motor_hours) <= f64::from(hours));
            for (what, n) in [
                ("shortfall", a.shortfall_hours),
                ("longest dry spell", r.longest_dry_spell_hours),
                ("dry-run stop", r.dry_run_stop_hours),
                ("yield capped", r.yield_capped_hours),
                ("beyond curve", r.beyond_curve_hours),
            ] {
                prop_assert!(n <= hours, "{what}: {n} h > {hours} h in the year");
            }
            for (what, n) in [
                ("yield capped", r.yield_capped_hours),
                ("beyond curve", r.beyond_curve_hours),
            ] {
                prop_assert!(
                    n <= motor_hours,
                    "{what}: {n} h > {motor_hours} h in which a motor pump ran"
                );
            }
            let month_sum: u32 = r.months.iter().map(|t| t.shortfall_hours).sum();
            prop_assert_eq!(month_sum, a.shortfall_hours);
        }
    }
}

/// Two pump types on one borehole whose safe yield holds them back for most of the year:
/// the hours held at the safe yield stay within the hours the pumps ran.
#[test]
fn two_pump_types_on_one_borehole_count_each_capped_hour_once() {
    let p = Params {
        population: 3000,
        per_capita_l: 40.0,
        losses_pct: 10.0,
        tank_m3: 100.0,
        usable: 0.9,
        initial: 0.5,
        start_level: 0.9,
        static_m: 10.0,
        head_scale: 1.0,
        flow_scale: 1.0,
        units: 2,
        aquifer: None,
        drive: Drive::Generator {
            start: 0,
            hours: 24,
        },
    };
    let s = load_str(&yaml_capped(&p, 2.0, true), "two types", Path::new("."))
        .unwrap()
        .scheme;
    let r = run(&s, &design(&s, 100.0));
    let run_hours = r.annual.pump_run_hours;
    assert!(r.yield_capped_hours > 0, "the safe yield holds the pumps");
    assert!(
        f64::from(r.yield_capped_hours) <= run_hours.ceil(),
        "{} h capped against {run_hours} run hours",
        r.yield_capped_hours
    );
}

/// Hours in which no pump can run take a shorter path through the hourly step (the night
/// of a solar scheme, the hours outside a generator's window); a run that keeps the hourly
/// series always takes the full path. The two give the same year bit for bit on every
/// sample (hand pumps, rams, generator and solar among them), in the base and horizon years
/// and under a demand and a yield scenario.
#[test]
fn quiet_hours_shortcut_changes_nothing() {
    use tapplan::simulate::Scenario;
    let mut n = 0;
    for (p, s, m, d) in samples::every_sample() {
        let scenarios = [
            Scenario::default(),
            Scenario {
                demand_factor: 1.3,
                yield_factor: 0.7,
            },
        ];
        for sc in &scenarios {
            for year in [0, s.info.horizon_years] {
                for w in 0..m.weather_years().min(3) {
                    let full = m.simulate_year(&d, year, w, true, sc, None);
                    let short = m.simulate_year(&d, year, w, false, sc, None);
                    let full = YearResult {
                        hourly: None,
                        ..full
                    };
                    assert_eq!(
                        serde_json::to_string(&full).unwrap(),
                        serde_json::to_string(&short).unwrap(),
                        "{} year {year} weather {w}",
                        p.display()
                    );
                    n += 1;
                }
            }
        }
    }
    assert!(n >= 4 * 2 * 2, "every sample was run ({n} years)");
}
