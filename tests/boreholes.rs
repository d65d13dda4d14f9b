//! Figures per borehole: a scheme with two boreholes reports each one's own pumped volume,
//! deepest level, margin, hours held at the safe yield and dry-run stops, and the scheme's
//! figures are their sum, extremes and union (conservation of mass and plain set counting:
//! common practice).

use std::path::Path;

use tapplan::scheme::load_str;
use tapplan::simulate::{Design, Model};

/// The Tolomba sample with a second borehole: BH-A deep (static level 38 m) with a small safe
/// yield, BH-B shallow (20 m) with a large one; two units on A, one on B.
fn two_boreholes() -> String {
    let text = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/tolomba-market-generator.yaml"),
    )
    .unwrap();
    let text = text
        .replace("static_water_level_m: 24", "static_water_level_m: 38")
        .replace("tested_yield_m3_per_h: 60", "tested_yield_m3_per_h: 20")
        .replace("pump_intake_depth_m: 55", "pump_intake_depth_m: 75")
        .replace(
            "\ndrives:",
            "    - name: Tolomba-BH-B
      static_water_level_m: 20
      tested_yield_m3_per_h: 100
      safe_yield_fraction: 0.75
      transmissivity_m2_per_day: 300
      storativity: 0.0005
      well_loss_linear_s_per_m2: 150
      well_loss_quadratic_s2_per_m5: 20000
      pump_intake_depth_m: 50
      diameter_mm: 203
      submergence_margin_m: 4

drives:",
        )
        .replace(
            "    units: 3\n    max_units: 4",
            "    units: 2\n    max_units: 2",
        );
    let pump_b = "  - name: Sub-15-B
    drive: generator
    source: Tolomba-BH-B
    units: 1
    max_units: 1
    curve:
      - {flow_m3_per_h: 0,  head_m: 95, power_w: 2200}
      - {flow_m3_per_h: 5,  head_m: 92, power_w: 3000}
      - {flow_m3_per_h: 10, head_m: 86, power_w: 4100}
      - {flow_m3_per_h: 15, head_m: 76, power_w: 5000}
      - {flow_m3_per_h: 20, head_m: 62, power_w: 5600}
      - {flow_m3_per_h: 25, head_m: 44, power_w: 5900}
    unit_cost: 5200
    lifetime_years: 8
    maintenance_per_unit_year: 250
";
    let i = text.find("\nrising_main:").unwrap();
    format!("{}\n{}{}", &text[..i], pump_b, &text[i..])
}

#[test]
fn two_boreholes_report_their_own_figures() {
    let yaml = two_boreholes();
    let s = match load_str(&yaml, "two-boreholes", Path::new(".")) {
        Ok(l) => l.scheme,
        Err(e) => panic!("{e}\n{yaml}"),
    };
    assert_eq!(s.boreholes.len(), 2);
    let m = Model::new(&s).unwrap();
    let d = Design::from_scheme(&s).unwrap();
    let y = m.run_year(&d, 0, 0, false);
    let (a, b) = (&y.boreholes[0], &y.boreholes[1]);
    assert_eq!(a.name, "Tolomba-BH-A");
    assert_eq!(b.name, "Tolomba-BH-B");
    // each pumping level lies below its own rest level
    let (da, db) = (
        a.deepest_dynamic_level_m.expect("A pumped"),
        b.deepest_dynamic_level_m.expect("B pumped"),
    );
    assert!(da > 38.0 && db > 20.0, "{da} {db}");
    assert!(db < 38.0, "B's level {db} m is not A's");
    assert_ne!(a.drawdown_margin_m, b.drawdown_margin_m);
    // B's safe yield (75 m³/h) is above anything its one pump lifts (25 m³/h at most): never
    // held there. A's (15 m³/h) is below two units' flow: held there whenever they run.
    assert_eq!(b.yield_capped_hours, 0);
    assert!(a.yield_capped_hours > 0);
    // the scheme's figures are the boreholes' sum, extremes and union
    let pumped: f64 = y.boreholes.iter().map(|x| x.pumped_m3).sum();
    let from_boreholes = y.annual.pumped_m3 - y.annual.ram_pumped_m3;
    assert!((pumped - from_boreholes).abs() <= 1e-9 * from_boreholes.max(1.0));
    assert_eq!(y.deepest_dynamic_level_m, Some(da.max(db)));
    let margins = [a.drawdown_margin_m.unwrap(), b.drawdown_margin_m.unwrap()];
    assert_eq!(y.drawdown_margin_m, Some(margins[0].min(margins[1])));
    let caps = [a.yield_capped_hours, b.yield_capped_hours];
    assert!(y.yield_capped_hours >= caps[0].max(caps[1]));
    assert!(y.yield_capped_hours <= caps[0] + caps[1]);
    let dry = [a.dry_run_stop_hours, b.dry_run_stop_hours];
    assert!(y.dry_run_stop_hours >= dry[0].max(dry[1]));
    assert!(y.dry_run_stop_hours <= dry[0] + dry[1]);
}

#[test]
fn every_sample_sums_its_boreholes() {
    for p in std::fs::read_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join("samples")).unwrap() {
        let p = p.unwrap().path();
        if p.extension().and_then(|e| e.to_str()) != Some("yaml") {
            continue;
        }
        let s = tapplan::scheme::load_file(&p).unwrap().scheme;
        let m = Model::new(&s).unwrap();
        let d = Design::from_scheme(&s).unwrap();
        let y = m.run_year(&d, s.info.horizon_years, 0, false);
        assert_eq!(y.boreholes.len(), s.boreholes.len());
        let pumped: f64 = y.boreholes.iter().map(|x| x.pumped_m3).sum();
        let from_boreholes = y.annual.pumped_m3 - y.annual.ram_pumped_m3;
        assert!(
            (pumped - from_boreholes).abs() <= 1e-9 * from_boreholes.max(1.0),
            "{}: {pumped} vs {from_boreholes}",
            p.display()
        );
        let deepest = y
            .boreholes
            .iter()
            .filter_map(|x| x.deepest_dynamic_level_m)
            .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))));
        assert_eq!(y.deepest_dynamic_level_m, deepest, "{}", p.display());
    }
}
