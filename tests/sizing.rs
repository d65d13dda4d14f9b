//! The least-cost search against its own contract, on every sample: the chosen design meets
//! the target and the next smaller tank (same pumps and array) does not; `tapplan run` of the
//! chosen design gives the same shortfall hours as `tapplan size`; shortfall does not rise as
//! the tank grows (the monotonicity the bisection assumes).

use std::path::Path;
use std::process::Command;

use tapplan::rules::RuleSet;
use tapplan::scheme::load_file;
use tapplan::simulate::{Design, Model, meets_target};
use tapplan::sizing::{size_with_model, tank_candidates};

#[path = "support/samples.rs"]
mod support_samples;
use support_samples::sample_paths as samples;

/// `tapplan size FILE --json -` with `threads` worker threads (RAYON_NUM_THREADS): the plan's
/// JSON bytes; the command must succeed.
fn size_json(path: &Path, threads: &str) -> Vec<u8> {
    let out = Command::new(env!("CARGO_BIN_EXE_tapplan"))
        .env("RAYON_NUM_THREADS", threads)
        .args(["size", path.to_str().unwrap(), "--json", "-"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}: {}",
        path.display(),
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
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
        // the tanks the search may try: the range above the storage-days rule's floor
        let floor = tapplan::sizing::storage_floor_m3(&loaded.scheme, &RuleSet::defaults())
            .map_or(0.0, |(_, f)| f);
        let tanks: Vec<f64> = tank_candidates(&loaded.scheme)
            .into_iter()
            .filter(|t| *t >= floor - 1e-9)
            .collect();
        let idx = tanks
            .iter()
            .position(|t| *t == chosen.design.tank_m3)
            .unwrap();
        if idx == 0 {
            // the smallest tank allowed already meets it: nothing smaller to try
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
        let plan: serde_json::Value = serde_json::from_slice(&size_json(&path, "2")).unwrap();
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

/// The branch-and-bound search against brute force: on a narrowed copy of the hand-and-solar
/// sample (every design in its ranges judged on the full ensemble), the cheapest design that
/// meets the target, and the cheapest for each unit count, have the costs the search reports.
/// The text of `samples/<sample>` with each `(from, to)` replaced once; every `from` must be
/// there.
fn narrow(sample: &str, swaps: &[(&str, &str)]) -> String {
    let mut out = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("samples")
            .join(sample),
    )
    .unwrap();
    for (from, to) in swaps {
        assert_eq!(
            out.matches(from).count(),
            1,
            "the sample changed: update the narrowing of {from:?}"
        );
        out = out.replace(from, to);
    }
    out
}

/// Sizes `text` (a scheme narrowed so that brute force is quick) and checks the chosen design
/// and the cheapest design of every pump count against judging every design in the ranges on
/// its whole weather ensemble. The schemes have no generator or grid pump, so the NPV needs
/// no simulation and brute force ranks by it directly.
fn search_matches_brute_force(name: &str, text: &str) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join(name);
    std::fs::write(&path, text).unwrap();
    let s = load_file(&path).unwrap().scheme;
    let m = Model::new(&s).unwrap();
    let plan = size_with_model(&m).unwrap();

    let h = s.info.horizon_years;
    let mut best: Option<f64> = None;
    let mut per_count = std::collections::BTreeMap::<u32, f64>::new();
    for units in tapplan::sizing::pump_sets(&s).unwrap() {
        let solar = s
            .pumps
            .iter()
            .zip(&units)
            .any(|(p, n)| *n > 0 && p.drive == tapplan::scheme::DriveKind::Solar);
        let arrays = if solar {
            tapplan::sizing::array_candidates(&s)
        } else {
            vec![0.0]
        };
        let floor =
            tapplan::sizing::storage_floor_m3(&s, &RuleSet::defaults()).map_or(0.0, |(_, f)| f);
        for a in arrays {
            for t in tank_candidates(&s)
                .into_iter()
                .filter(|t| *t >= floor - 1e-9)
            {
                let d = Design {
                    tank_m3: t,
                    units: units.clone(),
                    array_w: a,
                };
                assert!(tapplan::sizing::cost::npv_needs_no_simulation(&s, &d));
                if !meets_target(&s, &m.run_ensemble(&d, h)) {
                    continue;
                }
                let c = tapplan::sizing::cost::npv_lower_bound(&s, &d);
                best = Some(best.map_or(c, |b: f64| b.min(c)));
                let n: u32 = units.iter().sum();
                let e = per_count.entry(n).or_insert(c);
                *e = e.min(c);
            }
        }
    }
    let best = best.expect("some design in the narrowed ranges meets the target");
    let chosen = plan.chosen.as_ref().expect("the search finds a design");
    assert!(
        (chosen.cost.npv - best).abs() <= 1e-6 * best,
        "{name}: search chose {} at {}, brute force finds {}",
        chosen.design_text,
        chosen.cost.npv,
        best
    );
    for alt in &plan.alternatives {
        let n: u32 = alt.design.units.iter().sum();
        let want = per_count[&n];
        assert!(
            (alt.cost.npv - want).abs() <= 1e-6 * want,
            "{name}: {} units: search gives {} at {}, brute force {}",
            n,
            alt.design_text,
            alt.cost.npv,
            want
        );
    }
    assert_eq!(plan.alternatives.len(), per_count.len(), "{name}");
}

#[test]
fn search_finds_the_cheapest_design_that_brute_force_finds() {
    let narrowed = narrow(
        "sabuya-handpumps.yaml",
        &[
            (
                "array_range_kwp: {min_kwp: 0.5, max_kwp: 4.0, module_kwp: 0.25}",
                "array_range_kwp: {min_kwp: 0.5, max_kwp: 3.0, module_kwp: 0.5}",
            ),
            ("units: 3\n    max_units: 6", "units: 2\n    max_units: 2"),
            ("\n  years: 30\n", "\n  years: 8\n"),
        ],
    );
    search_matches_brute_force("narrow-hand-solar.yaml", &narrowed);
}

#[test]
fn search_over_arrays_finds_what_brute_force_finds() {
    // Solar only, several arrays and unit counts: exercises the branch and bound over arrays,
    // the bisection that stops when a bracket gets too dear, and the inferred verdicts.
    let narrowed = narrow(
        "kessa-ridge-solar.yaml",
        &[
            (
                "array_range_kwp: {min_kwp: 3.0, max_kwp: 18.0, module_kwp: 0.5}",
                "array_range_kwp: {min_kwp: 12.0, max_kwp: 18.0, module_kwp: 1.5}",
            ),
            (
                "capacity_range_m3: {min_m3: 10, max_m3: 400, step_m3: 5}",
                "capacity_range_m3: {min_m3: 40, max_m3: 400, step_m3: 40}",
            ),
            ("\n  years: 30\n", "\n  years: 6\n"),
        ],
    );
    search_matches_brute_force("narrow-solar.yaml", &narrowed);
}

#[test]
fn remembered_years_equal_fresh_runs_and_count_once() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/kessa-ridge-solar.yaml");
    let s = load_file(&path).unwrap().scheme;
    let m = Model::new(&s).unwrap();
    let d = Design::from_scheme(&s).unwrap();
    let a = m.run_year(&d, 3, 5, false);
    let runs = m.simulations_run();
    let b = m.run_year(&d, 3, 5, false);
    assert_eq!(
        m.simulations_run(),
        runs,
        "the second ask ran the year again"
    );
    let fresh = m.simulate_year(&d, 3, 5, false, &Default::default(), None);
    for r in [&b, &fresh] {
        assert_eq!(
            serde_json::to_string(&a).unwrap(),
            serde_json::to_string(r).unwrap()
        );
    }
    // a different weather year or tank is a different year
    let c = m.run_year(&d, 3, 6, false);
    let _ = c;
    assert_eq!(m.simulations_run(), runs + 1);
}

#[test]
fn first_failing_years_equal_the_whole_horizon_run_year_by_year() {
    // The search finds the year a design first misses the target by bisection over the
    // years, taking verdicts from other years where growing demand implies them. Brute force:
    // run every year of the horizon on the whole weather ensemble and take the first row that
    // misses the target.
    for path in samples() {
        let loaded = load_file(&path).unwrap();
        let m = Model::new(&loaded.scheme).unwrap();
        let plan = size_with_model(&m).unwrap();
        let mut designs: Vec<(Design, Option<i32>)> = plan
            .staging
            .iter()
            .map(|st| (st.start_design.clone(), st.fails_from_year))
            .collect();
        designs.extend(
            plan.alternatives
                .iter()
                .map(|a| (a.design.clone(), a.first_failing_year)),
        );
        assert!(
            !designs.is_empty(),
            "{}: nothing to compare",
            path.display()
        );
        for (d, said) in designs {
            let rows = m.horizon(&d);
            let brute = rows.iter().find(|r| !r.meets_target).map(|r| r.year);
            assert_eq!(
                said,
                brute,
                "{}: {}",
                path.display(),
                d.describe(&loaded.scheme)
            );
        }
    }
}

#[test]
fn size_json_holds_a_horizon_row_for_every_year() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/tolomba-market-generator.yaml");
    let h = load_file(&path).unwrap().scheme.info.horizon_years as usize;
    let v: serde_json::Value = serde_json::from_slice(&size_json(&path, "2")).unwrap();
    let rows = v["report"]["horizon"].as_array().unwrap();
    assert_eq!(rows.len(), h + 1);
    let years: Vec<i64> = rows.iter().map(|r| r["year"].as_i64().unwrap()).collect();
    assert!(years.windows(2).all(|w| w[1] == w[0] + 1), "{years:?}");
}

#[test]
fn size_prints_the_same_bytes_with_one_thread_or_two() {
    // The search runs ensembles and the presentation tables side by side; neither the figures
    // nor the count of year-simulations may depend on how many threads ran them.
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/sabuya-handpumps.yaml");
    let one = size_json(&path, "1");
    assert!(!one.is_empty());
    assert!(
        one == size_json(&path, "2"),
        "size --json differs between one thread and two"
    );
}

/// One verdict: the design `size` chooses, written into the scheme as its own design, passes
/// `check` (no rule of severity fail fails), and the plan's verdict says the same; the chosen
/// tank stores at least the storage-days rule's minimum whenever the range allows it.
#[test]
fn check_passes_the_design_size_chose() {
    use tapplan::rules::{Status, check::check_scheme};
    let rules = RuleSet::defaults();
    for path in samples() {
        let loaded = load_file(&path).unwrap();
        let m = Model::new(&loaded.scheme).unwrap();
        let plan = size_with_model(&m).unwrap();
        let chosen = plan.chosen.as_ref().expect("every sample has a design");
        let verdict = plan
            .verdict
            .as_ref()
            .expect("a chosen design has a verdict");
        let mut s = loaded.scheme.clone();
        s.tank.capacity_m3 = Some(chosen.design.tank_m3);
        for (p, n) in s.pumps.iter_mut().zip(&chosen.design.units) {
            p.units = Some(*n);
        }
        if let Some(sol) = s.solar.as_mut() {
            sol.array_peak_w = Some(chosen.design.array_w);
        }
        let fc = check_scheme(&path.display().to_string(), &s, &rules);
        assert!(fc.simulated, "{}: {:?}", path.display(), fc.note);
        let failing: Vec<&str> = fc
            .outcomes
            .iter()
            .filter(|o| o.status == Status::Fail)
            .map(|o| o.id.as_str())
            .collect();
        assert!(
            failing.is_empty(),
            "{}: check fails {failing:?} on the design size chose ({})",
            path.display(),
            chosen.design_text
        );
        assert!(verdict.acceptable && verdict.failing_rules.is_empty());
        let warned: Vec<String> = fc
            .outcomes
            .iter()
            .filter(|o| o.status == Status::Warn)
            .map(|o| o.id.clone())
            .collect();
        assert_eq!(verdict.warning_rules, warned, "{}", path.display());
        if let Some((_, floor)) = tapplan::sizing::storage_floor_m3(&s, &rules) {
            let top = *tank_candidates(&s).last().unwrap();
            assert!(
                chosen.design.tank_m3 >= floor - 1e-9 || chosen.design.tank_m3 == top,
                "{}: {} m³ is below the storage floor {floor} m³",
                path.display(),
                chosen.design.tank_m3
            );
        }
    }
}

/// No design meets the target: the binding limit is named from evidence (each limit relaxed
/// on its own), not guessed, and the best design's present worth is still given.
#[test]
fn the_binding_limit_is_found_by_relaxing_each_in_turn() {
    let text = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/tolomba-market-generator.yaml"),
    )
    .unwrap();
    // a borehole far too weak: 8 m³/h tested against ~515 m³/day of demand
    let weak = text.replace("tested_yield_m3_per_h: 60", "tested_yield_m3_per_h: 8");
    // a generator that runs three hours a day
    let short = text.replace(
        "      - {start_hour: 5, end_hour: 12}\n      - {start_hour: 13, end_hour: 22}\n",
        "      - {start_hour: 5, end_hour: 8}\n",
    );
    assert_ne!(weak, text);
    assert_ne!(short, text);
    for (yaml, want) in [(weak, "source yield"), (short, "drive energy")] {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("x.yaml");
        std::fs::write(&p, &yaml).unwrap();
        let s = load_file(&p).unwrap().scheme;
        let m = Model::new(&s).unwrap();
        let plan = size_with_model(&m).unwrap();
        assert!(plan.chosen.is_none());
        let u = plan.unreachable.expect("says what limits it");
        assert!(u.limited_by.starts_with(want), "{want}: {}", u.limited_by);
        let binding: Vec<&str> = u
            .relaxations
            .iter()
            .filter(|r| r.meets_target)
            .map(|r| r.limit.as_str())
            .collect();
        assert_eq!(binding, vec![want]);
        assert!(u.present_worth.is_some_and(|v| v > 0.0));
    }
}

/// A district rules file changes the storage floor, and `size --rules` obeys it: the district
/// example asks for a full day of storage, so Wendi's tank holds at least a day of its horizon
/// year's average demand (the rule's own measure).
#[test]
fn size_obeys_the_district_storage_rule() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let out = Command::new(env!("CARGO_BIN_EXE_tapplan"))
        .args(["size", "samples/wendi-hamlet-ram.yaml", "--json", "-"])
        .args(["--rules", "samples/rules/district-example.yaml"])
        .current_dir(root)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let j: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let tank = j["chosen"]["design"]["tank_m3"].as_f64().unwrap();
    let s = load_file(&root.join("samples/wendi-hamlet-ram.yaml"))
        .unwrap()
        .scheme;
    let rules = RuleSet::load(&root.join("samples/rules/district-example.yaml")).unwrap();
    let (days, floor) = tapplan::sizing::storage_floor_m3(&s, &rules).unwrap();
    assert_eq!(days, 1.0);
    assert!(
        tank >= floor - 1e-9,
        "{tank} m³ below the district's floor {floor} m³"
    );
    let verdict = &j["verdict"];
    assert!(
        !verdict["warning_rules"]
            .as_array()
            .unwrap()
            .iter()
            .any(|v| v == "storage-days"),
        "{verdict}"
    );
}
