//! `tapplan check` on whole files: validate, simulate the file's own design (a lighter run
//! than `tapplan run`), evaluate the rules; many files in parallel, results in input order.

use std::path::{Path, PathBuf};

use rayon::prelude::*;
use serde::Serialize;

use super::{Counts, RuleOutcome, RuleSet, evaluate, evaluate_unsimulated};
use crate::error::Problem;
use crate::scheme::Scheme;
use crate::simulate::{Design, DesignOverrides, Model, RunReport, resolve_design};

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
/// first of those two that misses the target. A design with no solar-driven unit installed runs
/// one weather year (its supply does not depend on the weather).
pub fn check_run(m: &Model, design: &Design) -> RunReport {
    crate::simulate::run_report_with(m, design, crate::simulate::HorizonYears::Ends)
}

/// Checks one scheme already loaded: simulates the file's own design when it states one
/// completely, else evaluates the rules that need no simulation.
pub fn check_scheme(file: &str, s: &Scheme, rules: &RuleSet) -> FileCheck {
    check_scheme_located(file, s, rules, None)
}

/// [`check_scheme`] for a loaded file: a problem found while preparing the run gets the line
/// of the field it names.
pub fn check_loaded(file: &str, loaded: &crate::scheme::Loaded, rules: &RuleSet) -> FileCheck {
    check_scheme_located(file, &loaded.scheme, rules, Some(loaded))
}

fn check_scheme_located(
    file: &str,
    s: &Scheme,
    rules: &RuleSet,
    loaded: Option<&crate::scheme::Loaded>,
) -> FileCheck {
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
                Err(e) if loaded.is_some() => {
                    let err = loaded.expect("loaded").problem(&e.to_string());
                    return FileCheck::invalid(file, err.problems.clone(), err.to_string());
                }
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
        Ok(loaded) => check_loaded(&file, &loaded, rules),
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
