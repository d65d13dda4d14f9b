//! Proposal checks as data: each rule names a quantity measured on a scheme and its simulated
//! design, a limit, a severity and the published source of the limit.
//!
//! The default rules (`defaults`) carry their sources; a district rules file (`district`) may
//! change limits and severities, switch rules off and add its own limits on the same
//! quantities. `measure` reads each quantity from the checked `Scheme` and a `RunReport`;
//! `evaluate` compares it with the rule's limit. `check` runs whole scheme files (in parallel)
//! for `tapplan check`, and `render` draws the tables. Nothing here changes the simulation.

pub mod check;
pub mod defaults;
pub mod district;
pub mod measure;
pub mod render;

use serde::{Deserialize, Serialize};

use crate::scheme::Scheme;
use crate::simulate::{Design, RunReport};

pub use check::{FileCheck, check_file, check_files, check_run};
pub use district::RulesFileError;
pub use measure::Quantity;

/// What a rule that is not met means for the proposal.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// The proposal should not go ahead as it stands.
    Fail,
    /// The proposal may go ahead, but the point needs a look.
    Warn,
}

impl Severity {
    pub fn name(self) -> &'static str {
        match self {
            Severity::Fail => "fail",
            Severity::Warn => "warn",
        }
    }
}

/// How a measured value is compared with the limit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Check {
    /// Met when value ≥ limit.
    AtLeast,
    /// Met when value ≤ limit.
    AtMost,
}

impl Check {
    pub fn symbol(self) -> &'static str {
        match self {
            Check::AtLeast => "≥",
            Check::AtMost => "≤",
        }
    }
}

/// The result of one rule on one scheme.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Status {
    Pass,
    Warn,
    Fail,
    /// The rule does not apply (no such part, no target, or no simulation); see the note.
    NotApplicable,
}

impl Status {
    pub fn name(self) -> &'static str {
        match self {
            Status::Pass => "pass",
            Status::Warn => "warn",
            Status::Fail => "fail",
            Status::NotApplicable => "n/a",
        }
    }
}

/// One rule in force.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Rule {
    /// Our own short id, e.g. `supply-per-person` (lower case letters, digits and `-`).
    pub id: String,
    /// What the rule asks, in plain words.
    pub description: String,
    pub quantity: Quantity,
    pub check: Check,
    /// Fixed limit in the quantity's engine unit (`Quantity::unit_si`), if any.
    pub limit_si: Option<f64>,
    /// Also use the scheme's own target for this quantity; the stricter of the two applies.
    pub scheme_target: bool,
    /// Tolerance relative to the recomputed figure (declared-figure rules only): the limit is
    /// max(limit, relative × recomputed).
    pub relative_fraction: Option<f64>,
    pub severity: Severity,
    /// Short citation shown in tables.
    pub source: String,
    /// Full reference: author, title, year, section; "from memory" or "common practice".
    pub reference: String,
    pub enabled: bool,
}

impl Rule {
    /// The limit in words, e.g. "≥ 20 L/person/day (or the scheme's target if higher)".
    pub fn limit_text(&self) -> String {
        let q = self.quantity;
        let mut t = match self.limit_si {
            Some(v) => format!("{} {} {}", self.check.symbol(), q.format(v), q.unit()),
            None => format!("{} the scheme's target", self.check.symbol()),
        };
        if let Some(r) = self.relative_fraction {
            t.push_str(&format!(
                " or {} % of the recomputed figure, whichever is larger",
                crate::simulate::fmt_g(r * 100.0)
            ));
        }
        if self.scheme_target && self.limit_si.is_some() {
            t.push_str(match self.check {
                Check::AtLeast => " (the scheme's target if higher)",
                Check::AtMost => " (the scheme's target if lower)",
            });
        }
        t
    }

    /// The limit that applies to one scheme, in the engine unit, with its text; None when
    /// there is neither a fixed limit nor a target in the scheme.
    fn effective_limit(&self, s: &Scheme) -> Option<(f64, String)> {
        let q = self.quantity;
        let target = if self.scheme_target {
            q.scheme_target(s)
        } else {
            None
        };
        let (v, from_target) = match (self.limit_si, target) {
            (Some(l), Some(t)) => {
                let stricter = match self.check {
                    Check::AtLeast => t > l,
                    Check::AtMost => t < l,
                };
                if stricter { (t, true) } else { (l, false) }
            }
            (Some(l), None) => (l, false),
            (None, Some(t)) => (t, true),
            (None, None) => return None,
        };
        let mut text = format!("{} {} {}", self.check.symbol(), q.format(v), q.unit());
        if from_target {
            text.push_str(" (scheme target)");
        }
        Some((v, text))
    }
}

/// The rules in force: the defaults, changed by a district file if one is given.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RuleSet {
    /// The district's name from its rules file (None for the defaults alone).
    pub district: Option<String>,
    /// The rules file as the user named it.
    pub file: Option<String>,
    pub rules: Vec<Rule>,
}

impl RuleSet {
    /// The default rules with their published sources.
    pub fn defaults() -> RuleSet {
        RuleSet {
            district: None,
            file: None,
            rules: defaults::default_rules(),
        }
    }

    /// The defaults changed by a district rules file.
    pub fn load(path: &std::path::Path) -> Result<RuleSet, RulesFileError> {
        district::load_file(path)
    }

    /// The rule with this id, if any.
    pub fn get(&self, id: &str) -> Option<&Rule> {
        self.rules.iter().find(|r| r.id == id)
    }

    /// The rules switched on, in order.
    pub fn enabled(&self) -> impl Iterator<Item = &Rule> {
        self.rules.iter().filter(|r| r.enabled)
    }
}

/// One rule evaluated on one scheme.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RuleOutcome {
    pub id: String,
    pub description: String,
    pub status: Status,
    /// The measured value with its unit (None when not applicable).
    pub value: Option<String>,
    /// The measured value as a number in `unit`, for tools.
    pub value_number: Option<f64>,
    /// The unit of `value_number` and of the limit.
    pub unit: String,
    /// The limit that applied, e.g. "≤ 120 h/year (scheme target)".
    pub limit: String,
    pub source: String,
    pub severity: Severity,
    /// Where the value comes from, or why the rule does not apply.
    pub note: Option<String>,
}

/// Evaluates every rule in force on a scheme and its simulated design (the function the plan
/// calls for the chosen design). Rules keep their order; switched-off rules are left out.
pub fn evaluate(scheme: &Scheme, report: &RunReport, rules: &RuleSet) -> Vec<RuleOutcome> {
    let facts = measure::Facts::simulated(scheme, report);
    evaluate_facts(&facts, rules)
}

/// Evaluates the rules that need no simulation (people per tap, walk, storage, pump flow
/// against the tested yield); the others are `NotApplicable`. `design`, when given, replaces
/// the file's own tank and pump counts.
pub fn evaluate_unsimulated(
    scheme: &Scheme,
    design: Option<&Design>,
    rules: &RuleSet,
) -> Vec<RuleOutcome> {
    let facts = measure::Facts::unsimulated(scheme, design);
    evaluate_facts(&facts, rules)
}

fn evaluate_facts(facts: &measure::Facts<'_>, rules: &RuleSet) -> Vec<RuleOutcome> {
    // rules on displacement pumps are in force only where the scheme has one
    let has_displacement = facts
        .scheme
        .pumps
        .iter()
        .any(|p| matches!(p.kind, crate::scheme::PumpKind::Displacement { .. }));
    rules
        .enabled()
        .filter(|r| has_displacement || !r.quantity.displacement_only())
        .map(|r| evaluate_rule(facts, r))
        .collect()
}

/// Compares one measured quantity with one rule's limit.
fn evaluate_rule(facts: &measure::Facts<'_>, r: &Rule) -> RuleOutcome {
    let q = r.quantity;
    let na = |limit: String, why: String| RuleOutcome {
        id: r.id.clone(),
        description: r.description.clone(),
        status: Status::NotApplicable,
        value: None,
        value_number: None,
        unit: q.unit().to_string(),
        limit,
        source: r.source.clone(),
        severity: r.severity,
        note: Some(why),
    };
    let Some((mut limit, mut limit_text)) = r.effective_limit(facts.scheme) else {
        return na(
            r.limit_text(),
            format!(
                "the scheme gives no target for this ({}) and the rule has no fixed limit",
                q.target_field().unwrap_or("no target field")
            ),
        );
    };
    let m = match facts.measure(q) {
        Ok(m) => m,
        Err(why) => return na(limit_text, why),
    };
    if let Some(rel) = r.relative_fraction {
        let base = m.reference_si.unwrap_or(0.0).abs();
        if rel * base > limit {
            limit = rel * base;
            limit_text = format!(
                "{} {} {} ({} % of {} {})",
                r.check.symbol(),
                q.format(limit),
                q.unit(),
                crate::simulate::fmt_g(rel * 100.0),
                q.format(base),
                q.unit()
            );
        }
    }
    // A tiny allowance for rounding in the engine's sums (1e-9 relative).
    let slack = 1e-9 * limit.abs().max(1e-12);
    let met = match r.check {
        Check::AtLeast => m.value_si >= limit - slack,
        Check::AtMost => m.value_si <= limit + slack,
    };
    let status = match (met, r.severity) {
        (true, _) => Status::Pass,
        (false, Severity::Warn) => Status::Warn,
        (false, Severity::Fail) => Status::Fail,
    };
    RuleOutcome {
        id: r.id.clone(),
        description: r.description.clone(),
        status,
        value: Some(format!("{} {}", q.format(m.value_si), q.unit())),
        value_number: Some(q.from_si(m.value_si)),
        unit: q.unit().to_string(),
        limit: limit_text,
        source: r.source.clone(),
        severity: r.severity,
        note: m.note,
    }
}

/// Counts of outcomes by status.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
pub struct Counts {
    pub pass: usize,
    pub warn: usize,
    pub fail: usize,
    pub not_applicable: usize,
}

impl Counts {
    pub fn of(outcomes: &[RuleOutcome]) -> Counts {
        let mut c = Counts::default();
        for o in outcomes {
            match o.status {
                Status::Pass => c.pass += 1,
                Status::Warn => c.warn += 1,
                Status::Fail => c.fail += 1,
                Status::NotApplicable => c.not_applicable += 1,
            }
        }
        c
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    const WENDI: &str = include_str!("../../samples/wendi-hamlet-ram.yaml");

    fn scheme(text: &str) -> Scheme {
        crate::scheme::load_str(text, "t.yaml", std::path::Path::new("."))
            .unwrap()
            .scheme
    }

    #[test]
    fn the_stricter_of_the_fixed_limit_and_the_scheme_target_applies() {
        let rules = RuleSet::defaults();
        let r = rules.get("supply-per-person").unwrap();
        // scheme target 25 L above WHO's 20 L: the target applies
        let s = scheme(&WENDI.replace(
            "min_supply_l_per_person_day: 20",
            "min_supply_l_per_person_day: 25",
        ));
        let (v, text) = r.effective_limit(&s).unwrap();
        assert_relative_eq!(v, 0.025);
        assert_eq!(text, "≥ 25.0 L/person/day (scheme target)");
        // a lower target does not weaken the published minimum
        let s = scheme(&WENDI.replace(
            "min_supply_l_per_person_day: 20",
            "min_supply_l_per_person_day: 12",
        ));
        let (v, text) = r.effective_limit(&s).unwrap();
        assert_relative_eq!(v, 0.020);
        assert_eq!(text, "≥ 20.0 L/person/day");
        // a target-only rule with no target in the file has no limit
        let d = rules.get("demand-met-first-year").unwrap();
        assert!(d.effective_limit(&s).is_none());
    }

    #[test]
    fn unsimulated_rules_say_why_and_static_ones_still_run() {
        let s = scheme(WENDI);
        let out = evaluate_unsimulated(&s, None, &RuleSet::defaults());
        let get = |id: &str| out.iter().find(|o| o.id == id).unwrap();
        assert_eq!(get("shortfall-first-year").status, Status::NotApplicable);
        assert_eq!(
            get("shortfall-first-year").note.as_deref(),
            Some("needs a simulation of a complete design")
        );
        // 250 m walk against Sphere's 500 m; 310 people + 2 %/year arithmetic growth for 15
        // years = 310 × 1.30 = 403 people on 3 taps = 134 (< 250).
        assert_eq!(get("walk-to-tap").status, Status::Pass);
        assert_eq!(get("people-per-tap").value.as_deref(), Some("134 people"));
        // 10 m³ tank against (403 × 20 L + 150 L)/0.9 = 9.12 m³/day: above half a day for any
        // usable fraction over 0.46
        assert_eq!(get("storage-days").status, Status::Pass);
    }

    #[test]
    fn switched_off_rules_are_left_out_and_severity_decides_warn_or_fail() {
        let s = scheme(&WENDI.replace("longest_walk_m: 250", "longest_walk_m: 800"));
        let mut rules = RuleSet::defaults();
        let out = evaluate_unsimulated(&s, None, &rules);
        let walk = out.iter().find(|o| o.id == "walk-to-tap").unwrap();
        assert_eq!(walk.status, Status::Warn);
        assert_eq!(walk.value.as_deref(), Some("800 m"));
        rules
            .rules
            .iter_mut()
            .find(|r| r.id == "walk-to-tap")
            .unwrap()
            .severity = Severity::Fail;
        let out = evaluate_unsimulated(&s, None, &rules);
        assert_eq!(
            out.iter().find(|o| o.id == "walk-to-tap").unwrap().status,
            Status::Fail
        );
        rules
            .rules
            .iter_mut()
            .find(|r| r.id == "walk-to-tap")
            .unwrap()
            .enabled = false;
        let out = evaluate_unsimulated(&s, None, &rules);
        assert!(out.iter().all(|o| o.id != "walk-to-tap"));
        // rules on displacement pumps are not in force for a scheme without one
        let displacement_only = RuleSet::defaults()
            .rules
            .iter()
            .filter(|r| r.quantity.displacement_only())
            .count();
        assert_eq!(displacement_only, 2);
        assert_eq!(
            out.len(),
            RuleSet::defaults().rules.len() - 1 - displacement_only
        );
    }

    #[test]
    fn declared_figures_use_the_larger_of_the_absolute_and_relative_tolerance() {
        let s = scheme(WENDI);
        let m = crate::simulate::Model::new(&s).unwrap();
        let d = crate::simulate::resolve_design(&s, &Default::default()).unwrap();
        let r = check_run(&m, &d);
        let recomputed = r.first_year.judged_shortfall_hours;
        // declare 30 h more than recomputed: outside 24 h, inside a 40 h tolerance
        let text = format!(
            "{WENDI}\ndeclared:\n  shortfall_hours_per_year: {}\n",
            recomputed + 30.0
        );
        let s2 = scheme(&text);
        let mut rules = RuleSet::defaults();
        let get = |rules: &RuleSet| {
            evaluate(&s2, &r, rules)
                .into_iter()
                .find(|o| o.id == "declared-shortfall")
                .unwrap()
        };
        let o = get(&rules);
        assert_eq!(o.value.as_deref(), Some("30 h/year"));
        let rel_allows = 0.10 * recomputed >= 30.0;
        assert_eq!(
            o.status,
            if rel_allows {
                Status::Pass
            } else {
                Status::Fail
            }
        );
        rules
            .rules
            .iter_mut()
            .find(|r| r.id == "declared-shortfall")
            .unwrap()
            .limit_si = Some(40.0);
        assert_eq!(get(&rules).status, Status::Pass);
    }
}
