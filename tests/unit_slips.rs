//! Unit slips caught at validation: the file is refused (exit 2) with the field, its line and
//! the likely slip, before anything is simulated.

use assert_cmd::Command;

fn sample(name: &str) -> String {
    std::fs::read_to_string(
        std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("samples")
            .join(name),
    )
    .unwrap()
}

/// Writes `text` to a temporary file, runs `tapplan check` on it, returns (code, stderr).
fn check(text: &str) -> (Option<i32>, String) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("slip.yaml");
    std::fs::write(&p, text).unwrap();
    let out = Command::cargo_bin("tapplan")
        .unwrap()
        .arg("check")
        .arg(&p)
        .output()
        .unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn per_capita_demand_in_cubic_metres_is_refused() {
    let text = sample("kessa-ridge-solar.yaml");
    let line = text
        .lines()
        .find(|l| l.contains("per_capita_l_per_day"))
        .unwrap();
    let bad = text.replace(line, "  per_capita_l_per_day: 0.02");
    let (code, err) = check(&bad);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("demand.per_capita_l_per_day"), "{err}");
    assert!(err.contains("m³") && err.contains("20 L"), "{err}");
    let n = text.lines().position(|l| l == line).unwrap() + 1;
    assert!(err.contains(&format!(":{n}:")), "names line {n}: {err}");
}

#[test]
fn pump_power_in_kilowatts_is_refused() {
    // 3.3 W input against ~1.2 kW of hydraulic power at 3 m³/h and 141 m (ρgQH, common
    // practice): an efficiency far above 100 %.
    let text = sample("kessa-ridge-solar.yaml");
    let bad = text.replace(
        "{flow_m3_per_h: 3,  head_m: 141, power_w: 3300}",
        "{flow_m3_per_h: 3,  head_m: 141, power_w: 3.3}",
    );
    assert_ne!(bad, text);
    let (code, err) = check(&bad);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("power_w"), "{err}");
    assert!(err.contains("kW"), "{err}");
}

#[test]
fn a_tank_of_litres_is_refused() {
    let text = sample("tolomba-market-generator.yaml");
    let bad = text.replace("capacity_m3: 100", "capacity_m3: 0.05");
    assert_ne!(bad, text);
    let (code, err) = check(&bad);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("tank.capacity_m3"), "{err}");
}

#[test]
fn a_flow_that_would_race_through_the_main_warns() {
    // 250 m³/h in a 125 mm main is 5.7 m/s (Q / (π d² / 4), analytic): a warning with the
    // field, not a refusal.
    let text = sample("tolomba-market-generator.yaml");
    let bad = text.replace(
        "{flow_m3_per_h: 25, head_m: 44, power_w: 5900}",
        "{flow_m3_per_h: 250, head_m: 0, power_w: 5900}",
    );
    assert_ne!(bad, text);
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("fast.yaml");
    std::fs::write(&p, &bad).unwrap();
    let out = Command::cargo_bin("tapplan")
        .unwrap()
        .arg("check")
        .arg(&p)
        .output()
        .unwrap();
    let all = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        all.contains("pumps[0].curve") && all.contains("5.7 m/s"),
        "{all}"
    );
    assert!(all.contains("3.6 m³/h"), "{all}");
}
