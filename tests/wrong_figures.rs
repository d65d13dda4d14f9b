//! Figures that were wrong on valid schemes: a pump that can never reach the tank, and a
//! population projected to nothing. (Hour counts over the year are properties in
//! `engine_props.rs`.)

use std::path::{Path, PathBuf};

use assert_cmd::Command;

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

fn sample(name: &str) -> String {
    std::fs::read_to_string(root().join("samples").join(name)).unwrap()
}

/// Replaces `from` (which must be present) by `to`.
fn edit(text: &str, from: &str, to: &str) -> String {
    assert!(text.contains(from), "`{from}` not in the text");
    text.replacen(from, to, 1)
}

/// The generator sample with its pump curve lowered to a shut-off head of 45 m. The static
/// lift is the tank inlet (338 m) less the ground (312 m) plus the static water level (24 m
/// below ground) = 50 m, counted from the sample's own numbers.
fn low_head_scheme() -> String {
    edit(
        &sample("tolomba-market-generator.yaml"),
        "      - {flow_m3_per_h: 0,  head_m: 95, power_w: 2200}
      - {flow_m3_per_h: 5,  head_m: 92, power_w: 3000}
      - {flow_m3_per_h: 10, head_m: 86, power_w: 4100}
      - {flow_m3_per_h: 15, head_m: 76, power_w: 5000}
      - {flow_m3_per_h: 20, head_m: 62, power_w: 5600}
      - {flow_m3_per_h: 25, head_m: 44, power_w: 5900}",
        "      - {flow_m3_per_h: 0,  head_m: 45, power_w: 2200}
      - {flow_m3_per_h: 5,  head_m: 44, power_w: 3000}
      - {flow_m3_per_h: 10, head_m: 42, power_w: 4100}
      - {flow_m3_per_h: 15, head_m: 38, power_w: 5000}
      - {flow_m3_per_h: 20, head_m: 30, power_w: 5600}
      - {flow_m3_per_h: 25, head_m: 20, power_w: 5900}",
    )
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

fn stdout_of(args: &[&str]) -> (Option<i32>, String, String) {
    let out = Command::cargo_bin("tapplan")
        .unwrap()
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn a_pump_below_the_static_lift_is_flagged_at_validation_with_its_field_and_line() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "low.yaml", &low_head_scheme());
    let (_, out, err) = stdout_of(&["check", p.to_str().unwrap()]);
    let all = format!("{out}{err}");
    // line 76 of the sample is the first curve point (counted in the file)
    let line = all
        .lines()
        .find(|l| l.contains("cannot lift water to the tank at any speed"))
        .unwrap_or_else(|| panic!("no warning about the pump's head:\n{all}"));
    assert!(
        line.contains("line 76: pumps[0].curve[0].head_m:"),
        "{line}"
    );
    assert!(
        line.contains("`Sub-15`") && line.contains("50.0 m"),
        "{line}"
    );
}

#[test]
fn size_names_the_pump_not_the_drive_when_it_cannot_reach_the_tank() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "low.yaml", &low_head_scheme());
    let (code, out, err) = stdout_of(&["size", p.to_str().unwrap()]);
    assert_eq!(code, Some(1), "{out}{err}");
    let limit = out
        .lines()
        .find(|l| l.contains("limited by"))
        .unwrap_or_else(|| panic!("no limit named:\n{out}"));
    assert!(limit.contains("limited by the pump: `Sub-15`"), "{limit}");
    assert!(
        !limit.contains("more generator hours or more pump units are needed"),
        "{limit}"
    );
}

/// Arithmetic decline of 5 % of the base population a year reaches 0 people after
/// 1 / 0.05 = 20 years (P = P₀(1 + r n), Twort et al., Water Supply, 6th ed., 2009, ch. 1 —
/// from memory); the sample's base year is 2026, so from 2046 on.
#[test]
fn a_population_projected_to_nothing_is_warned_and_the_judgement_stated() {
    let text = edit(
        &edit(
            &edit(
                &sample("kessa-ridge-solar.yaml"),
                "method: geometric",
                "method: arithmetic",
            ),
            "rate_percent_per_year: 2.6",
            "rate_percent_per_year: -5",
        ),
        "horizon_years: 15",
        "horizon_years: 50",
    );
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "decline.yaml", &text);
    let (_, out, _) = stdout_of(&["run", p.to_str().unwrap()]);
    let warning = out
        .lines()
        .find(|l| l.contains("warning:") && l.contains("fewer than one person"))
        .unwrap_or_else(|| panic!("no warning about the empty village:\n{out}"));
    assert!(
        warning.contains("demand.growth.rate_percent_per_year"),
        "{warning}"
    );
    assert!(warning.contains("from 2046 on (year 20 of"), "{warning}");
    assert!(
        warning.contains("judged on the other users' demand alone"),
        "{warning}"
    );
    let summary = out.lines().last().unwrap();
    assert!(summary.contains("leaves no people"), "{summary}");
    // a growing village gets no such warning
    let p = root().join("samples/kessa-ridge-solar.yaml");
    let (_, out, _) = stdout_of(&["run", p.to_str().unwrap()]);
    assert!(!out.contains("fewer than one person"), "{out}");
}
