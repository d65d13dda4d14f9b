//! Terminal tables and JSON views of rule sets and check results (no computation here).

use comfy_table::Table;
use serde::Serialize;

use super::{Counts, FileCheck, Rule, RuleSet, Status};
use crate::output::table::new_table;

/// One rule as `tapplan rules --json` shows it (limits in the unit people read).
#[derive(Debug, Clone, Serialize)]
pub struct RuleView {
    pub id: String,
    pub description: String,
    pub quantity: &'static str,
    pub unit: &'static str,
    pub check: super::Check,
    /// The fixed limit in `unit` (None: the scheme's target only).
    pub limit: Option<f64>,
    pub limit_text: String,
    pub scheme_target: bool,
    pub relative_percent: Option<f64>,
    pub severity: super::Severity,
    pub source: String,
    pub reference: String,
    pub enabled: bool,
}

impl RuleView {
    pub fn of(r: &Rule) -> RuleView {
        RuleView {
            id: r.id.clone(),
            description: r.description.clone(),
            quantity: r.quantity.name(),
            unit: r.quantity.unit(),
            check: r.check,
            limit: r.limit_si.map(|v| r.quantity.from_si(v)),
            limit_text: r.limit_text(),
            scheme_target: r.scheme_target,
            relative_percent: r.relative_fraction.map(|f| f * 100.0),
            severity: r.severity,
            source: r.source.clone(),
            reference: r.reference.clone(),
            enabled: r.enabled,
        }
    }
}

/// The rule set as `tapplan rules --json` shows it.
#[derive(Debug, Clone, Serialize)]
pub struct RuleSetView {
    pub district: Option<String>,
    pub file: Option<String>,
    pub rules: Vec<RuleView>,
}

impl RuleSetView {
    pub fn of(set: &RuleSet) -> RuleSetView {
        RuleSetView {
            district: set.district.clone(),
            file: set.file.clone(),
            rules: set.rules.iter().map(RuleView::of).collect(),
        }
    }
}

/// The rules in force: id, what is checked, limit, severity, source.
pub fn rules_table(set: &RuleSet) -> Table {
    let mut t = new_table(&["rule", "checks", "limit", "severity", "source"]);
    for r in &set.rules {
        t.add_row(vec![
            r.id.clone(),
            format!("{} [{}]", r.description, r.quantity.name()),
            r.limit_text(),
            if r.enabled {
                r.severity.name().to_string()
            } else {
                "off".to_string()
            },
            r.source.clone(),
        ]);
    }
    t
}

/// The full references of the rules, one paragraph each.
pub fn references(set: &RuleSet) -> String {
    let mut out = String::new();
    for r in &set.rules {
        out.push_str(&format!("  {}: {}\n", r.id, r.reference));
    }
    out
}

/// One scheme's outcomes: rule, status, value, limit, source.
pub fn outcomes_table(fc: &FileCheck) -> Table {
    let mut t = new_table(&["rule", "status", "value", "limit", "source"]);
    for o in &fc.outcomes {
        t.add_row(vec![
            o.id.clone(),
            o.status.name().to_string(),
            o.value.clone().unwrap_or_else(|| "—".into()),
            o.limit.clone(),
            o.source.clone(),
        ]);
    }
    t
}

/// The notes of the outcomes that did not pass, one line each.
pub fn outcome_notes(fc: &FileCheck) -> String {
    let mut out = String::new();
    for o in fc.outcomes.iter().filter(|o| o.status != Status::Pass) {
        if let Some(n) = &o.note {
            out.push_str(&format!("  {} {}: {n}\n", o.status.name(), o.id));
        }
    }
    out
}

/// The result of one file in a word.
pub fn verdict(fc: &FileCheck) -> &'static str {
    if !fc.valid {
        "invalid"
    } else if fc.counts.fail > 0 {
        "FAIL"
    } else if fc.counts.warn > 0 {
        "pass with warnings"
    } else {
        "pass"
    }
}

/// Counts per scheme across the batch.
pub fn summary_table(checks: &[FileCheck]) -> Table {
    let mut t = new_table(&[
        "file",
        "scheme",
        "pass",
        "warn",
        "fail",
        "n/a",
        "simulated",
        "result",
    ]);
    for fc in checks {
        let c = fc.counts;
        t.add_row(vec![
            fc.file.clone(),
            fc.scheme.clone().unwrap_or_else(|| "—".into()),
            c.pass.to_string(),
            c.warn.to_string(),
            c.fail.to_string(),
            c.not_applicable.to_string(),
            if !fc.valid {
                "—".to_string()
            } else if fc.simulated {
                "yes".to_string()
            } else {
                "no".to_string()
            },
            verdict(fc).to_string(),
        ]);
    }
    t
}

/// Totals across a batch.
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct BatchSummary {
    pub files: usize,
    pub invalid: usize,
    pub failed: usize,
    pub with_warnings: usize,
    pub passed: usize,
    pub outcomes: Counts,
}

impl BatchSummary {
    pub fn of(checks: &[FileCheck]) -> BatchSummary {
        let mut s = BatchSummary {
            files: checks.len(),
            ..Default::default()
        };
        for fc in checks {
            if !fc.valid {
                s.invalid += 1;
            } else if fc.counts.fail > 0 {
                s.failed += 1;
            } else if fc.counts.warn > 0 {
                s.with_warnings += 1;
            } else {
                s.passed += 1;
            }
            s.outcomes.pass += fc.counts.pass;
            s.outcomes.warn += fc.counts.warn;
            s.outcomes.fail += fc.counts.fail;
            s.outcomes.not_applicable += fc.counts.not_applicable;
        }
        s
    }

    /// "4 files: 1 pass, 1 with warnings, 2 fail, 0 invalid".
    pub fn line(&self) -> String {
        format!(
            "{} file{}: {} pass, {} pass with warnings, {} fail, {} invalid",
            self.files,
            if self.files == 1 { "" } else { "s" },
            self.passed,
            self.with_warnings,
            self.failed,
            self.invalid
        )
    }
}

/// Everything `tapplan check --json` prints.
#[derive(Debug, Clone, Serialize)]
pub struct CheckJson<'a> {
    pub rules_district: Option<&'a str>,
    pub rules_file: Option<&'a str>,
    pub files: &'a [FileCheck],
    pub summary: BatchSummary,
}
