//! The least-cost search against its own contract, on every sample: the chosen design meets
//! the target and the next smaller tank (same pumps and array) does not; `tapplan run` of the
//! chosen design gives the same shortfall hours as `tapplan size`; shortfall does not rise as
//! the tank grows (the monotonicity the bisection assumes).

use std::path::{Path, PathBuf};
use std::process::Command;

use tapplan::scheme::load_file;
use tapplan::simulate::{Design, Model, meets_target};
use tapplan::sizing::{size_with_model, tank_candidates};

fn samples() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
    let mut v: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .collect();
    v.sort();
    v
}

#[test]
fn chosen_design_meets_the_target_and_the_next_smaller_tank_does_not() {
    for path in samples() {
        let loaded = load_file(&path).unwrap();
        let m = Model::new(&loaded.scheme).unwrap();
        let plan = size_with_model(&m).unwrap();
        let chosen = plan
            .chosen
            .as_ref()
            .unwrap_or_else(|| panic!("{}: no design meets the target", path.display()));
        let h = loaded.scheme.info.horizon_years;
        assert!(
            meets_target(&loaded.scheme, &m.run_ensemble(&chosen.design, h)),
            "{}",
            path.display()
        );
        let tanks = tank_candidates(&loaded.scheme);
        let idx = tanks
            .iter()
            .position(|t| *t == chosen.design.tank_m3)
            .unwrap();
        if idx == 0 {
            // the smallest tank in the range already meets it: nothing smaller to try
            assert_eq!(plan.next_smaller_tank_m3, None);
            continue;
        }
        let smaller = Design {
            tank_m3: tanks[idx - 1],
            ..chosen.design.clone()
        };
        assert!(
            !meets_target(&loaded.scheme, &m.run_ensemble(&smaller, h)),
            "{}: the next smaller tank {} m³ also meets the target",
            path.display(),
            tanks[idx - 1]
        );
        assert_eq!(plan.next_smaller_tank_m3, Some(tanks[idx - 1]));
    }
}

#[test]
fn shortfall_does_not_rise_with_tank_size_on_the_samples() {
    for path in samples() {
        let loaded = load_file(&path).unwrap();
        let s = &loaded.scheme;
        let m = Model::new(s).unwrap();
        let base = tapplan::simulate::resolve_design(s, &Default::default()).unwrap();
        let tanks = tank_candidates(s);
        let step = (tanks.len() / 8).max(1);
        let mut last = f64::INFINITY;
        for t in tanks.iter().step_by(step) {
            let d = Design {
                tank_m3: *t,
                ..base.clone()
            };
            let e = m.run_ensemble(&d, s.info.horizon_years);
            assert!(
                e.judged_shortfall_hours <= last,
                "{}: {} m³ gives {} h after {} h for a smaller tank",
                path.display(),
                t,
                e.judged_shortfall_hours,
                last
            );
            last = e.judged_shortfall_hours;
        }
    }
}

#[test]
fn run_of_the_chosen_design_repeats_the_sized_figures() {
    let bin = env!("CARGO_BIN_EXE_tapplan");
    for path in samples() {
        let out = Command::new(bin)
            .args(["size", path.to_str().unwrap(), "--json", "-"])
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(0), "{}", path.display());
        let plan: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let d = &plan["chosen"]["design"];
        let loaded = load_file(&path).unwrap();
        let mut args: Vec<String> = vec![
            "run".into(),
            path.to_str().unwrap().into(),
            "--tank-m3".into(),
            d["tank_m3"].as_f64().unwrap().to_string(),
        ];
        for (p, n) in loaded
            .scheme
            .pumps
            .iter()
            .zip(d["units"].as_array().unwrap())
        {
            args.push("--pumps".into());
            args.push(format!("{}={}", p.name, n.as_u64().unwrap()));
        }
        let array_w = d["array_w"].as_f64().unwrap();
        if array_w > 0.0 {
            args.push("--array-kwp".into());
            args.push((array_w / 1000.0).to_string());
        }
        args.extend(["--json".into(), "-".into()]);
        let out = Command::new(bin).args(&args).output().unwrap();
        assert_eq!(out.status.code(), Some(0), "{}", path.display());
        let run: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        for key in ["first_year", "horizon_year"] {
            assert_eq!(
                run[key]["judged_shortfall_hours"],
                plan["report"][key]["judged_shortfall_hours"],
                "{}: {key}",
                path.display()
            );
            assert_eq!(
                run[key]["judged_demand_met_fraction"],
                plan["report"][key]["judged_demand_met_fraction"],
                "{}: {key}",
                path.display()
            );
        }
        assert_eq!(
            plan["chosen"]["judged_shortfall_hours"],
            run["horizon_year"]["judged_shortfall_hours"]
        );
    }
}
