//! `tapplan check` on whole files: validate, simulate the file's own design (a lighter run
//! than `tapplan run`), evaluate the rules; many files in parallel, results in input order.

use std::path::{Path, PathBuf};

use rayon::prelude::*;
use serde::Serialize;

use super::{Counts, RuleOutcome, RuleSet, evaluate, evaluate_unsimulated};
use crate::error::Problem;
use crate::scheme::{DriveKind, Scheme};
use crate::simulate::{
    Design, DesignOverrides, HorizonRow, Model, RunReport, daily_demand, meets_target,
    resolve_design, storage_days, summarise,
};

/// The check of one scheme file.
#[derive(Debug, Clone, Serialize)]
pub struct FileCheck {
    /// The file as the user named it.
    pub file: String,
    /// False when the file is not a valid scheme (then `problems` says why).
    pub valid: bool,
    pub scheme: Option<String>,
    pub problems: Vec<Problem>,
    /// The validation or preparation error as printed for people.
    #[serde(skip)]
    pub error_text: Option<String>,
    pub warnings: Vec<String>,
    /// The file's design in words, when it states one completely.
    pub design: Option<String>,
    /// True when the design was simulated; otherwise only the rules that need no simulation ran.
    pub simulated: bool,
    /// Why the design was not simulated.
    pub note: Option<String>,
    pub outcomes: Vec<RuleOutcome>,
    pub counts: Counts,
}

impl FileCheck {
    fn invalid(file: &str, problems: Vec<Problem>, text: String) -> FileCheck {
        FileCheck {
            file: file.to_string(),
            valid: false,
            scheme: None,
            problems,
            error_text: Some(text),
            warnings: Vec::new(),
            design: None,
            simulated: false,
            note: None,
            outcomes: Vec::new(),
            counts: Counts::default(),
        }
    }

    /// True when any rule failed.
    pub fn failed(&self) -> bool {
        self.counts.fail > 0
    }
}

/// Runs a design for the rules: the base-year and horizon-year weather ensembles and the
/// judged base year with its hourly series. The years between are not run (the rules do not
/// use them): `horizon` holds only the base and horizon rows, and `first_failing_year` is the
/// first of those two that misses the target. Everything else is as `simulate::run_report`.
///
/// A design with no solar-driven unit installed gives the same year in every weather year, so
/// it is run for one weather year only (its ensembles then show one year, "weather-independent").
pub fn check_run(m: &Model, design: &Design) -> RunReport {
    let s = &m.scheme;
    let weather_dependent = s
        .pumps
        .iter()
        .zip(&design.units)
        .any(|(p, n)| *n > 0 && p.drive == DriveKind::Solar);
    let (first, last, year) = if weather_dependent {
        let first = m.run_ensemble(design, 0);
        let last = m.run_ensemble(design, s.info.horizon_years);
        let year = m.run_year(design, 0, first.representative, true);
        (first, last, year)
    } else {
        let year = m.run_year(design, 0, 0, true);
        let mut y0 = year.clone();
        y0.hourly = None;
        let first = summarise(s, vec![y0]);
        let last = summarise(s, vec![m.run_year(design, s.info.horizon_years, 0, false)]);
        (first, last, year)
    };
    let row = |e: &crate::simulate::Ensemble, offset: u32| {
        let dd = daily_demand(s, offset);
        HorizonRow {
            year: e.year,
            population: dd.population,
            demand_m3_per_day: dd.supplied_m3_per_day,
            shortfall_hours: e.judged_shortfall_hours,
            demand_met_fraction: e.judged_demand_met_fraction,
            meets_target: meets_target(s, e),
        }
    };
    let mut horizon = vec![row(&first, 0)];
    if s.info.horizon_years > 0 {
        horizon.push(row(&last, s.info.horizon_years));
    }
    let first_failing_year = horizon.iter().find(|r| !r.meets_target).map(|r| r.year);
    let dd = daily_demand(s, 0);
    RunReport {
        scheme: s.info.name.clone(),
        design_text: design.describe(s),
        design: design.clone(),
        rules: m.rules.clone(),
        target_met_in_horizon_year: meets_target(s, &last),
        first_year: first,
        horizon_year: last,
        year,
        horizon,
        first_failing_year,
        storage_days_of_average_demand: storage_days(s, design.tank_m3, &dd),
        warnings: s.warnings.clone(),
    }
}

/// Checks one scheme already loaded: simulates the file's own design when it states one
/// completely, else evaluates the rules that need no simulation.
pub fn check_scheme(file: &str, s: &Scheme, rules: &RuleSet) -> FileCheck {
    let mut fc = FileCheck {
        file: file.to_string(),
        valid: true,
        scheme: Some(s.info.name.clone()),
        problems: Vec::new(),
        error_text: None,
        warnings: s.warnings.clone(),
        design: None,
        simulated: false,
        note: None,
        outcomes: Vec::new(),
        counts: Counts::default(),
    };
    match resolve_design(s, &DesignOverrides::default()) {
        Ok(design) => {
            let m = match Model::new(s) {
                Ok(m) => m,
                Err(e) => {
                    let msg = e.to_string();
                    return FileCheck::invalid(
                        file,
                        vec![Problem {
                            field: String::new(),
                            line: None,
                            column: None,
                            message: msg.clone(),
                        }],
                        format!("{file}: {msg}\n"),
                    );
                }
            };
            let report = check_run(&m, &design);
            fc.design = Some(report.design_text.clone());
            fc.simulated = true;
            fc.outcomes = evaluate(s, &report, rules);
        }
        Err(why) => {
            let note = format!(
                "no complete fixed design in the file ({why}); only the rules that need no simulation were checked"
            );
            fc.outcomes = evaluate_unsimulated(s, None, rules);
            fc.note = Some(note);
        }
    }
    fc.counts = Counts::of(&fc.outcomes);
    fc
}

/// Loads, validates and checks one scheme file.
pub fn check_file(path: &Path, rules: &RuleSet) -> FileCheck {
    let file = path.display().to_string();
    match crate::scheme::load_file(path) {
        Ok(loaded) => check_scheme(&file, &loaded.scheme, rules),
        Err(e) => FileCheck::invalid(&file, e.problems.clone(), e.to_string()),
    }
}

/// Checks files in parallel (rayon); the result is in input order whatever the timing.
/// `on_done` is called once per finished file with the count finished so far.
pub fn check_files(
    paths: &[PathBuf],
    rules: &RuleSet,
    on_done: &(dyn Fn(usize) + Sync),
) -> Vec<FileCheck> {
    let done = std::sync::atomic::AtomicUsize::new(0);
    paths
        .par_iter()
        .map(|p| {
            let fc = check_file(p, rules);
            let n = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            on_done(n);
            fc
        })
        .collect()
}
