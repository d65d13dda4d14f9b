//! One verdict everywhere: the design `tapplan size` recommends under a rules file is the one
//! `tapplan check` with the same rules passes, and `size`, `check --json` and the plan's page 1
//! say the same thing about it. Rules that turn a warning into a failure are obeyed by the
//! search (it looks among the designs that pass them), and when no design in the ranges passes
//! a rule, the recommendation says so instead of claiming the target is met.

use std::path::{Path, PathBuf};
use std::process::Command;

#[path = "support/pdf_read.rs"]
mod pdf_read;
use pdf_read::{PdfReader, RustReader, flat};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn tapplan(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_tapplan"))
        .args(args)
        .current_dir(root())
        .output()
        .unwrap()
}

/// `size FILE --rules RULES --json -`: the plan as JSON.
fn size(file: &Path, rules: &Path) -> serde_json::Value {
    let out = tapplan(&[
        "size",
        file.to_str().unwrap(),
        "--rules",
        rules.to_str().unwrap(),
        "--json",
        "-",
    ]);
    let j: serde_json::Value = serde_json::from_slice(&out.stdout)
        .unwrap_or_else(|e| panic!("{e}: {}", String::from_utf8_lossy(&out.stderr)));
    // exit 0 exactly when a design meets the target and passes every rule
    let acceptable = j["chosen"].is_object() && j["verdict"]["acceptable"] == true;
    assert_eq!(out.status.code(), Some(if acceptable { 0 } else { 1 }));
    j
}

/// A copy of the scheme file holding `design` (tank, units per pump type, array) in place of
/// its own, without declared figures (they described the file's own design).
fn with_design(src: &Path, design: &serde_json::Value, dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(src).unwrap();
    let mut y: serde_yaml::Value = serde_yaml::from_str(&text).unwrap();
    let m = y.as_mapping_mut().unwrap();
    m.remove("declared");
    m["tank"]["capacity_m3"] = serde_yaml::Value::from(design["tank_m3"].as_f64().unwrap());
    let units = design["units"].as_array().unwrap();
    for (p, n) in m["pumps"].as_sequence_mut().unwrap().iter_mut().zip(units) {
        p["units"] = serde_yaml::Value::from(n.as_u64().unwrap());
    }
    let array_w = design["array_w"].as_f64().unwrap();
    if let Some(solar) = m
        .get_mut("drives")
        .and_then(|d| d.get_mut("solar"))
        .and_then(|s| s.as_mapping_mut())
    {
        solar.insert(
            "array_kwp".into(),
            serde_yaml::Value::from(array_w / 1000.0),
        );
    }
    let out = dir.join(src.file_name().unwrap());
    std::fs::write(&out, serde_yaml::to_string(&y).unwrap()).unwrap();
    out
}

/// `check FILE --rules RULES --json`: exit code and the ids of the failing rules.
fn check(file: &Path, rules: &Path) -> (i32, Vec<String>, Vec<String>) {
    let out = tapplan(&[
        "check",
        file.to_str().unwrap(),
        "--rules",
        rules.to_str().unwrap(),
        "--json",
    ]);
    let code = out.status.code().unwrap();
    assert!(
        code == 0 || code == 1,
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let j: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let ids = |status: &str| -> Vec<String> {
        let mut v: Vec<String> = Vec::new();
        collect_ids(&j, status, &mut v);
        v
    };
    (code, ids("fail"), ids("warn"))
}

/// Every rule outcome in the JSON (objects with an "id" and a "status") of the given status.
fn collect_ids(v: &serde_json::Value, status: &str, out: &mut Vec<String>) {
    match v {
        serde_json::Value::Object(o) => {
            if let (Some(id), Some(st)) = (o.get("id"), o.get("status"))
                && st.as_str().is_some_and(|s| s.eq_ignore_ascii_case(status))
            {
                out.push(id.as_str().unwrap().to_string());
            }
            for x in o.values() {
                collect_ids(x, status, out);
            }
        }
        serde_json::Value::Array(a) => a.iter().for_each(|x| collect_ids(x, status, out)),
        _ => {}
    }
}

fn rules_file(dir: &Path, name: &str, body: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, format!("district: Test district (invented)\n{body}")).unwrap();
    p
}

fn strings(v: &serde_json::Value) -> Vec<String> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_str().unwrap().to_string())
        .collect()
}

/// A district turns `repair-cover` (a warning by default) into a failure. On the ram sample
/// the default recommendation (two rams) does not carry a week's repair of one ram, so the
/// search must look further; whatever it recommends, `check` with the same rules passes it,
/// and `check` fails the design it set aside.
#[test]
fn a_rule_made_severe_by_a_district_is_obeyed_by_the_search() {
    let dir = tempfile::tempdir().unwrap();
    let sample = root().join("samples/wendi-hamlet-ram.yaml");
    let defaults = rules_file(dir.path(), "defaults.yaml", "change: {}\n");
    let severe = rules_file(
        dir.path(),
        "repair.yaml",
        "change:\n  repair-cover:\n    severity: fail\n",
    );
    let plain = size(&sample, &defaults);
    let strict = size(&sample, &severe);
    // the default recommendation fails the stricter rules...
    let plain_dir = dir.path().join("plain");
    std::fs::create_dir(&plain_dir).unwrap();
    let plain_file = with_design(&sample, &plain["chosen"]["design"], &plain_dir);
    let (code, failing, _) = check(&plain_file, &severe);
    assert_eq!(
        code, 1,
        "the default design should fail repair-cover as a failure"
    );
    assert_eq!(failing, vec!["repair-cover".to_string()]);
    // ...so the search recommends another design, which check passes with the same rules
    assert_ne!(plain["chosen"]["design"], strict["chosen"]["design"]);
    assert_eq!(
        strict["verdict"]["acceptable"], true,
        "{}",
        strict["verdict"]
    );
    let strict_dir = dir.path().join("strict");
    std::fs::create_dir(&strict_dir).unwrap();
    let strict_file = with_design(&sample, &strict["chosen"]["design"], &strict_dir);
    let (code, failing, warned) = check(&strict_file, &severe);
    assert_eq!(code, 0, "check fails {failing:?} on the design size chose");
    assert_eq!(strings(&strict["verdict"]["warning_rules"]), warned);
    // the recommendation says what it set aside and why
    let notes = strict["notes"].to_string();
    assert!(
        notes.contains("set aside") && notes.contains("repair-cover"),
        "{notes}"
    );
}

/// No design in the ranges can pass a rule: the search still shows the cheapest design that
/// meets the target, and every output states that it fails the rule (never "acceptable").
#[test]
fn when_no_design_passes_a_rule_every_output_says_it_fails() {
    let dir = tempfile::tempdir().unwrap();
    let sample = root().join("samples/wendi-hamlet-ram.yaml");
    // ram delivery mains run slowly: under 0.5 m/s for every number of rams
    let severe = rules_file(
        dir.path(),
        "velocity.yaml",
        "change:\n  main-velocity-low:\n    severity: fail\n",
    );
    let j = size(&sample, &severe);
    assert_eq!(j["verdict"]["acceptable"], false, "{}", j["verdict"]);
    assert_eq!(
        strings(&j["verdict"]["failing_rules"]),
        vec!["main-velocity-low".to_string()]
    );
    assert!(
        j["notes"]
            .to_string()
            .contains("none in the ranges passes every rule")
    );
    // check on the shown design fails the same rule
    let file = with_design(&sample, &j["chosen"]["design"], dir.path());
    let (code, failing, _) = check(&file, &severe);
    assert_eq!(code, 1);
    assert_eq!(failing, vec!["main-velocity-low".to_string()]);
    // run on the file holding that design gives the same verdict in its JSON and its tables
    let out = tapplan(&[
        "run",
        file.to_str().unwrap(),
        "--rules",
        severe.to_str().unwrap(),
        "--json",
        "-",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let r: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(r["verdict"], j["verdict"]);
    // the plan: exit 1, page 1 says the design is not acceptable and names the rule, and
    // verify repeats the plan with the rules file the PDF carries
    let pdf = dir.path().join("plan.pdf");
    let out = tapplan(&[
        "plan",
        sample.to_str().unwrap(),
        "--rules",
        severe.to_str().unwrap(),
        "-o",
        pdf.to_str().unwrap(),
    ]);
    assert_eq!(
        out.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let page1 = flat(&RustReader.page_texts(&pdf)[0]);
    assert!(page1.contains("NOT ACCEPTABLE"), "{page1}");
    assert!(page1.contains("FAILS main-velocity-low"), "{page1}");
    let names: Vec<String> = RustReader
        .attachments(&pdf)
        .into_iter()
        .map(|(n, _)| n)
        .collect();
    assert!(names.iter().any(|n| n == "rules.yaml"), "{names:?}");
    let out = tapplan(&["verify", pdf.to_str().unwrap()]);
    assert!(
        out.status.success(),
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    // the terminal summary of size says it too
    let out = tapplan(&[
        "size",
        sample.to_str().unwrap(),
        "--rules",
        severe.to_str().unwrap(),
    ]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("main-velocity-low"),
        "size's summary does not name the failing rule:\n{text}"
    );
}

/// For several samples and rule sets: whatever `size` recommends, `check` with the same rules
/// agrees with its verdict (acceptable exactly when check passes; the same failing and warning
/// rule ids).
#[test]
fn size_and_check_give_one_verdict_on_the_recommended_design() {
    let dir = tempfile::tempdir().unwrap();
    let rule_sets = [
        rules_file(dir.path(), "defaults.yaml", "change: {}\n"),
        root().join("samples/rules/district-example.yaml"),
        rules_file(
            dir.path(),
            "repair.yaml",
            "change:\n  repair-cover:\n    severity: fail\n  pump-in-curve:\n    severity: fail\n",
        ),
    ];
    for sample in [
        "samples/wendi-hamlet-ram.yaml",
        "samples/tolomba-market-generator.yaml",
        "samples/tarumo-hamlet-oscillating.yaml",
    ] {
        for (k, rules) in rule_sets.iter().enumerate() {
            let path = root().join(sample);
            let j = size(&path, rules);
            let sub = dir.path().join(format!(
                "{k}-{}",
                path.file_stem().unwrap().to_str().unwrap()
            ));
            std::fs::create_dir(&sub).unwrap();
            let file = with_design(&path, &j["chosen"]["design"], &sub);
            let (code, failing, warned) = check(&file, rules);
            let v = &j["verdict"];
            assert_eq!(
                v["acceptable"].as_bool().unwrap(),
                code == 0,
                "{sample} with {}: size says {v}, check fails {failing:?}",
                rules.display()
            );
            assert_eq!(
                strings(&v["failing_rules"]),
                failing,
                "{sample} {}",
                rules.display()
            );
            assert_eq!(
                strings(&v["warning_rules"]),
                warned,
                "{sample} {}",
                rules.display()
            );
        }
    }
}
