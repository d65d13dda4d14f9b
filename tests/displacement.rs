//! Positive-displacement pumps read from a measured table, checked through the binary against
//! values computed here independently (analytic, or the table's own linear interpolation
//! written out again in the test), never against figures taken from a run of tapplan.

use std::path::{Path, PathBuf};
use std::time::Duration;

use assert_cmd::Command;

fn tapplan() -> Command {
    let mut c = Command::cargo_bin("tapplan").unwrap();
    c.timeout(Duration::from_secs(120));
    c
}

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// An invented scheme around one displacement pump. `DRIVE`, `DRIVES`, `TABLE`, `MAIN` and
/// `BORE` are replaced by the tests. The demand is far above what the pump can deliver, so
/// the tank never fills and the pump runs whenever it has power.
const BASE: &str = r#"
scheme:
  name: Test hamlet (invented)
  latitude_deg: -5.0
  longitude_deg: 30.0
  elevation_m: 1000
  plan_date: 2026-01-01
  horizon_years: 1
  currency: USD
demand:
  population: 5000
  growth: {method: geometric, rate_percent_per_year: 0}
  per_capita_l_per_day: 50
  daily_profile: flat
sources:
  boreholes:
    - name: BH
      ground_elevation_m: 1000
      static_water_level_m: 15
      tested_yield_m3_per_h: 50
      safe_yield_fraction: 1
BORE
      pump_intake_depth_m: 60
      diameter_mm: 150
      submergence_margin_m: 2
drives:
DRIVES
pumps:
  - name: PD
    drive: DRIVE
    source: BH
    units: 1
    pump_type: positive_displacement
    displacement_table:
TABLE
rising_main:
MAIN
tank:
  capacity_m3: 5
  inlet_elevation_m: 1005
targets:
  max_shortfall_hours_per_year: 8760
"#;

/// A short, wide main: friction of the order of 1e-7 m at these flows (negligible), so the
/// head is the static lift, 20 m (tank inlet 1005 − ground 1000 + rest level 15).
const NEGLIGIBLE_MAIN: &str = "  length_m: 1\n  internal_diameter_mm: 300\n  material: pvc\n";

const SOLAR: &str = r#"  solar:
    array_kwp: 0.45
    irradiation_kwh_per_m2_day: [6, 6, 6, 6, 6, 6, 6, 6, 6, 6, 6, 6]
    air_temperature_c: [25, 25, 25, 25, 25, 25, 25, 25, 25, 25, 25, 25]
    tilt_deg: 10
    facing_azimuth_deg: 0"#;

fn scheme(drive: &str, drives: &str, table: &str, main: &str, bore: &str) -> String {
    BASE.replace("DRIVES", drives)
        .replace("DRIVE", drive)
        .replace("TABLE", table)
        .replace("MAIN", main)
        .replace("BORE", bore)
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

/// The base year's hourly rows as (available power W, pumped m³).
fn hourly(file: &Path) -> Vec<(f64, f64)> {
    let out = tapplan()
        .arg("run")
        .arg(file)
        .args(["--hourly", "-", "-q"])
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let mut lines = text.lines().filter(|l| l.contains(','));
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let (pw, pumped) = (col("drive_power_available_w"), col("pumped_m3"));
    lines
        .map(|l| {
            let c: Vec<&str> = l.split(',').collect();
            (c[pw].parse().unwrap(), c[pumped].parse().unwrap())
        })
        .collect()
}

#[test]
fn ideal_displacement_pump_gives_the_analytic_flow_every_hour_of_a_year() {
    // Ideal displacement pump: flow = displacement × stroke rate, whatever the head up to
    // stall (analytic). 0.5 L per stroke × 0.25 strokes/s = 0.125 L/s = 7.5 L/min, so
    // 0.45 m³ in every hour it runs. The table says exactly that at heads 10, 40 and 70 m;
    // a generator offers a fixed power (1 kW, above the 400 W rating) all day. The aquifer
    // drawdown and the main's friction move the head from hour to hour, never the flow.
    let dir = tempfile::tempdir().unwrap();
    let flat = |h: u32| {
        format!(
            "        - head_m: {h}\n          points:\n            - {{power_w: 200, flow_l_per_min: 7.5}}\n            - {{power_w: 400, flow_l_per_min: 7.5}}\n"
        )
    };
    let table = format!(
        "      rated_power_w: 400\n      stall_head_m: 80\n      start_power_w: 100\n      heads:\n{}{}{}",
        flat(10),
        flat(40),
        flat(70)
    );
    let drives = "  generator:\n    rated_power_kw: 1\n    run_hours:\n      - {start_hour: 0, end_hour: 24}\n    fuel_l_per_kwh_rated: 0.08\n    fuel_l_per_kwh_output: 0.25\n    fuel_price_per_l: 1";
    let main = "  length_m: 400\n  internal_diameter_mm: 32\n  material: hdpe\n";
    let bore = "      transmissivity_m2_per_day: 20\n      storativity: 0.001";
    let f = write(
        dir.path(),
        "ideal.yaml",
        &scheme("generator", drives, &table, main, bore),
    );
    let rows = hourly(&f);
    assert_eq!(rows.len(), 8760);
    let per_hour = 0.5e-3 * 0.25 * 3600.0; // m³, analytic
    for (k, (_, pumped)) in rows.iter().enumerate() {
        assert!(
            (pumped - per_hour).abs() <= 1e-6,
            "hour {k}: {pumped} m³, analytic {per_hour} m³"
        );
    }
}

#[test]
fn a_fixed_speed_unit_between_two_measured_heads() {
    // One flow and power per head (a fixed-speed unit on a generator): at the 20 m static
    // lift, a third of the way from the row at 10 m (8 L/min, 300 W) to the one at 40 m
    // (6 L/min, 350 W), linear interpolation in head gives 8 − 2/3 L/min = 0.44 m³/h and
    // 300 + 50/3 W (analytic).
    let dir = tempfile::tempdir().unwrap();
    let table = "      rated_power_w: 400\n      stall_head_m: 45\n      heads:\n        - {head_m: 40, flow_l_per_min: 6, power_w: 350}\n        - {head_m: 10, flow_l_per_min: 8, power_w: 300}\n";
    let drives = "  generator:\n    rated_power_kw: 1\n    run_hours:\n      - {start_hour: 6, end_hour: 18}\n    fuel_l_per_kwh_rated: 0.08\n    fuel_l_per_kwh_output: 0.25\n    fuel_price_per_l: 1";
    let f = write(
        dir.path(),
        "fixed.yaml",
        &scheme("generator", drives, table, NEGLIGIBLE_MAIN, ""),
    );
    let out = tapplan()
        .arg("run")
        .arg(&f)
        .args(["--hourly", "-", "-q"])
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    let mut lines = text.lines().filter(|l| l.contains(','));
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let (pumped, power) = (col("pumped_m3"), col("pump_power_w"));
    for (k, l) in lines.enumerate() {
        let c: Vec<&str> = l.split(',').collect();
        let (v, w): (f64, f64) = (c[pumped].parse().unwrap(), c[power].parse().unwrap());
        let on = (6..18).contains(&(k % 24));
        let (ev, ew) = if on {
            (0.44, 300.0 + 50.0 / 3.0)
        } else {
            (0.0, 0.0)
        };
        assert!(
            (v - ev).abs() < 1e-5 && (w - ew).abs() < 1e-3,
            "hour {k}: {v} m³ at {w} W"
        );
    }
}

/// Flow (L/min) of one row of a measured table at power `p` (W): the straight line between
/// the neighbouring measured points (the trapezoid rule's own interpolant), 0 below the start
/// power, the last point's flow above the last power. Written out here, independent of the
/// library's code.
fn row_flow(start_w: f64, pts: &[(f64, f64)], p: f64) -> f64 {
    if p < start_w {
        return 0.0;
    }
    let mut prev = (start_w, 0.0);
    for &(w, q) in pts {
        if p <= w {
            return prev.1 + (q - prev.1) * (p - prev.0) / (w - prev.0);
        }
        prev = (w, q);
    }
    prev.1
}

fn clear_day_volume(start_w: f64, pts: &[(f64, f64)]) -> (f64, f64) {
    // mean days: every day of a month is that month's mean day (a clear, repeatable day)
    let dir = tempfile::tempdir().unwrap();
    let mut table = format!(
        "      rated_power_w: 400\n      stall_head_m: 45\n      heads:\n        - head_m: 20\n          start_power_w: {start_w}\n          points:\n"
    );
    for (w, q) in pts {
        table.push_str(&format!(
            "            - {{power_w: {w}, flow_l_per_min: {q}}}\n"
        ));
    }
    // a second measured head with less flow at every power (the table needs two)
    table.push_str(&format!(
        "        - head_m: 30\n          start_power_w: {start_w}\n          points:\n"
    ));
    for (w, q) in pts {
        table.push_str(&format!(
            "            - {{power_w: {w}, flow_l_per_min: {}}}\n",
            q * 0.5
        ));
    }
    let f = write(
        dir.path(),
        "day.yaml",
        &scheme("solar", SOLAR, &table, NEGLIGIBLE_MAIN, ""),
    );
    let rows = hourly(&f);
    // 15 January: hours 14·24 .. 15·24
    let day = &rows[14 * 24..15 * 24];
    assert!(day.iter().any(|(p, _)| *p > 100.0), "the day has sun");
    let simulated: f64 = day.iter().map(|(_, v)| v).sum();
    let integral: f64 = day
        .iter()
        .map(|(p, _)| row_flow(start_w, pts, *p) / 60_000.0 * 3600.0)
        .sum();
    (simulated, integral)
}

#[test]
fn a_clear_days_volume_is_the_integral_of_the_tables_flow_over_the_hourly_power() {
    // Trapezoid rule over the measured points (flow linear in power between them), summed
    // over the day's hours at each hour's drive power; computed here from the table.
    let pts = [(100.0, 2.6), (200.0, 5.6), (300.0, 8.2), (400.0, 10.0)];
    let (simulated, integral) = clear_day_volume(55.0, &pts);
    assert!(integral > 0.5, "{integral}");
    assert!(
        ((simulated - integral) / integral).abs() < 1e-5,
        "simulated {simulated} m³, integral {integral} m³"
    );
}

#[test]
fn flow_is_proportional_to_power_at_a_fixed_head_where_the_table_says_so() {
    // At 20 m the table gives 3 L/min per 100 W through the origin (start 0 W): every hour's
    // volume is 0.03 L/min/W × P × 60 min (analytic), up to the 400 W rating.
    let pts = [(100.0, 3.0), (200.0, 6.0), (400.0, 12.0)];
    let dir = tempfile::tempdir().unwrap();
    let mut table = String::from(
        "      rated_power_w: 400\n      stall_head_m: 45\n      start_power_w: 0\n      heads:\n",
    );
    for (h, k) in [(20, 1.0), (30, 0.5)] {
        table.push_str(&format!("        - head_m: {h}\n          points:\n"));
        for (w, q) in pts {
            table.push_str(&format!(
                "            - {{power_w: {w}, flow_l_per_min: {}}}\n",
                q * k
            ));
        }
    }
    let f = write(
        dir.path(),
        "prop.yaml",
        &scheme("solar", SOLAR, &table, NEGLIGIBLE_MAIN, ""),
    );
    let mut sunny = 0;
    for (k, (p, v)) in hourly(&f).into_iter().enumerate() {
        let expect = 0.03 * p.min(400.0) * 60.0 / 1000.0;
        assert!(
            (v - expect).abs() <= 1e-5 * expect.max(1e-3),
            "hour {k}: {p} W gave {v} m³, proportional {expect} m³"
        );
        sunny += usize::from(p > 0.0);
    }
    assert!(sunny > 3000, "{sunny}");
}

/// The sample's displacement table with its heads (and each head's points) in reverse order.
fn reversed_rows(text: &str) -> String {
    let start = text.find("      heads:\n").unwrap() + "      heads:\n".len();
    let end = text[start..].find("    unit_cost").unwrap() + start;
    let body = &text[start..end];
    let mut heads: Vec<String> = Vec::new();
    for line in body.lines() {
        if line.starts_with("        - head_m") {
            heads.push(String::new());
        }
        let h = heads.last_mut().unwrap();
        h.push_str(line);
        h.push('\n');
    }
    let flipped: Vec<String> = heads
        .iter()
        .rev()
        .map(|h| {
            let (head, points): (Vec<&str>, Vec<&str>) =
                h.lines().partition(|l| !l.contains("{power_w"));
            let mut s: String = head.iter().map(|l| format!("{l}\n")).collect();
            for p in points.iter().rev() {
                s.push_str(p);
                s.push('\n');
            }
            s
        })
        .collect();
    format!("{}{}{}", &text[..start], flipped.concat(), &text[end..])
}

#[test]
fn row_order_does_not_change_the_yearly_figures() {
    let dir = tempfile::tempdir().unwrap();
    let text =
        std::fs::read_to_string(root().join("samples/tarumo-hamlet-oscillating.yaml")).unwrap();
    let flipped = reversed_rows(&text);
    assert_ne!(flipped, text);
    let a = write(dir.path(), "a.yaml", &text);
    let b = write(dir.path(), "b.yaml", &flipped);
    let year = |f: &Path| {
        let out = tapplan()
            .arg("run")
            .arg(f)
            .args(["--json", "-"])
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(0));
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        (
            v["year"].clone(),
            v["first_year"].clone(),
            v["horizon_year"].clone(),
        )
    };
    assert_eq!(year(&a), year(&b));
}

#[test]
fn a_table_and_a_centrifugal_curve_in_one_pump_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let text =
        std::fs::read_to_string(root().join("samples/tarumo-hamlet-oscillating.yaml")).unwrap();
    let mixed = text.replace(
        "    pump_type: positive_displacement\n",
        "    pump_type: positive_displacement\n    curve:\n      - {flow_m3_per_h: 0, head_m: 40, power_w: 300}\n      - {flow_m3_per_h: 0.3, head_m: 30, power_w: 350}\n      - {flow_m3_per_h: 0.6, head_m: 15, power_w: 400}\n",
    );
    assert_ne!(mixed, text);
    let f = write(dir.path(), "mixed.yaml", &mixed);
    let out = tapplan().arg("check").arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    let line = mixed
        .lines()
        .position(|l| l.trim_start().starts_with("curve:"))
        .unwrap()
        + 1;
    assert!(
        err.contains(&format!("mixed.yaml:{line}:")) && err.contains("pumps[0].curve"),
        "{err}"
    );
    // a table on a pump that says it is centrifugal is refused too
    let wrong = text.replace("pump_type: positive_displacement", "pump_type: centrifugal");
    let f = write(dir.path(), "wrong.yaml", &wrong);
    let out = tapplan().arg("check").arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("pumps[0].displacement_table"));
}

#[test]
fn a_bad_table_is_refused_with_file_line_and_field() {
    let dir = tempfile::tempdir().unwrap();
    let text =
        std::fs::read_to_string(root().join("samples/tarumo-hamlet-oscillating.yaml")).unwrap();
    // flow falling as power rises at one head
    let bad = text.replacen(
        "{power_w: 300, flow_l_per_min: 10.0}",
        "{power_w: 300, flow_l_per_min: 6.0}",
        1,
    );
    assert_ne!(bad, text);
    let f = write(dir.path(), "bad.yaml", &bad);
    let out = tapplan().arg("check").arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    let line = bad
        .lines()
        .position(|l| l.contains("flow_l_per_min: 6.0"))
        .unwrap()
        + 1;
    assert!(
        err.contains(&format!("bad.yaml:{line}:"))
            && err.contains("pumps[0].displacement_table.heads[0].points[2].flow_l_per_min"),
        "{err}"
    );
    // a head range that misses the static lift (24 m here; heads from 30 m only)
    let high = text
        .replace("head_m: 10\n", "head_m: 35\n")
        .replace("head_m: 20\n", "head_m: 38\n");
    let f = write(dir.path(), "high.yaml", &high);
    let out = tapplan().arg("check").arg(&f).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("miss the static lift"), "{err}");
}

#[test]
fn a_pressure_vessel_adds_its_pressure_as_head() {
    // 1.8 bar of vessel pressure adds about 18.4 m of head (common practice: about 10.2 m
    // per bar of fresh water).
    let text = std::fs::read_to_string(root().join("samples/lomari-helical-rotor.yaml")).unwrap();
    let with = text.replace(
        "  inlet_elevation_m: 422\n",
        "  inlet_elevation_m: 422\n  delivery_pressure_bar: 1.8\n",
    );
    assert_ne!(with, text);
    let dir = tempfile::tempdir().unwrap();
    let a = tapplan::scheme::load_file(&write(dir.path(), "a.yaml", &text))
        .unwrap()
        .scheme;
    let b = tapplan::scheme::load_file(&write(dir.path(), "b.yaml", &with))
        .unwrap()
        .scheme;
    let lift = |s: &tapplan::scheme::Scheme| {
        tapplan::simulate::hydraulics::SystemCurve::new(s, &s.boreholes[0], 0.0).lift0_m
    };
    let added = lift(&b) - lift(&a);
    assert!((added - 18.4).abs() < 0.05, "{added}");
}
