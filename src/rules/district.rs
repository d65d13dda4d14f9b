//! District rules files: YAML that changes the default rules and adds the district's own.
//!
//! ```yaml
//! district: Example District Water Office
//! change:                       # default rules by id
//!   storage-days: {limit: 1.0}  # limit in the quantity's unit (see `tapplan rules`)
//!   walk-to-tap: {severity: fail}
//!   main-velocity-low: {enabled: false}
//! add:                          # further limits on the same quantities
//!   - id: district-supply
//!     quantity: supply_per_person
//!     check: at_least
//!     limit: 40
//!     severity: warn
//!     description: District service level for new schemes
//!     source: District water plan (invented)
//! ```
//! Unknown keys are refused; every problem is reported with its line and field.

use std::collections::BTreeMap;
use std::fmt;
use std::path::Path;

use serde::Deserialize;

use super::{Check, Quantity, Rule, RuleSet, Severity, defaults};
use crate::error::Problem;
use crate::scheme::load::{LineMap, closest};

/// Largest rules file accepted (bytes).
pub const MAX_RULES_BYTES: usize = 256 * 1024;

/// Everything wrong with one rules file.
#[derive(Debug, Clone, PartialEq)]
pub struct RulesFileError {
    /// The file as the user named it.
    pub file: String,
    pub problems: Vec<Problem>,
}

impl fmt::Display for RulesFileError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        crate::error::write_problems(f, &self.file, &self.problems, "in the rules file")
    }
}

impl std::error::Error for RulesFileError {}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRules {
    district: Option<String>,
    change: Option<BTreeMap<String, RawChange>>,
    add: Option<Vec<RawAdd>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawChange {
    limit: Option<f64>,
    unit: Option<String>,
    severity: Option<Severity>,
    enabled: Option<bool>,
    scheme_target: Option<bool>,
    relative_percent: Option<f64>,
    description: Option<String>,
    source: Option<String>,
    reference: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawAdd {
    id: String,
    quantity: Quantity,
    check: Check,
    limit: Option<f64>,
    unit: Option<String>,
    #[serde(default)]
    scheme_target: bool,
    relative_percent: Option<f64>,
    severity: Severity,
    description: String,
    source: String,
    reference: Option<String>,
    #[serde(default = "yes")]
    enabled: bool,
}

fn yes() -> bool {
    true
}

/// True for an id of lower-case letters, digits and `-`, starting with a letter or digit,
/// at most 48 characters.
pub fn valid_id(id: &str) -> bool {
    let mut chars = id.chars();
    matches!(chars.next(), Some(c) if c.is_ascii_lowercase() || c.is_ascii_digit())
        && id.len() <= 48
        && id
            .chars()
            .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '-')
}

/// Reads a rules file and applies it to the default rules.
pub fn load_file(path: &Path) -> Result<RuleSet, RulesFileError> {
    let label = path.display().to_string();
    let whole = |m: String| RulesFileError {
        file: label.clone(),
        problems: vec![Problem {
            field: String::new(),
            line: None,
            column: None,
            message: m,
        }],
    };
    use crate::input::{ReadError, read_limited};
    let bytes = read_limited(path, MAX_RULES_BYTES as u64).map_err(|e| {
        whole(match e {
            ReadError::NotAFile(kind) => {
                format!("this is {kind}, not a regular file; give the path of a rules file (.yaml)")
            }
            ReadError::TooLarge { .. } => format!(
                "the file is larger than {MAX_RULES_BYTES} bytes; a rules file may be at most {MAX_RULES_BYTES} bytes — is this the right file?"
            ),
            e => e.to_string(),
        })
    })?;
    let text = String::from_utf8(bytes)
        .map_err(|_| whole("the file is not UTF-8 text; save it as UTF-8".into()))?;
    from_str(&text, &label)
}

/// Parses rules-file text (`label` names it in messages) and applies it to the defaults.
pub fn from_str(text: &str, label: &str) -> Result<RuleSet, RulesFileError> {
    let fail = |problems: Vec<Problem>| RulesFileError {
        file: label.to_string(),
        problems,
    };
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if text.trim().is_empty() {
        return Err(fail(vec![problem(
            "",
            None,
            "the rules file is empty; see samples/rules/district-example.yaml for the layout"
                .into(),
        )]));
    }
    // the structure first: a deeply nested or tagged file is refused before the serde parse
    let lines = LineMap::build(text);
    let structure = crate::scheme::load::structure_problems(text, &lines);
    if !structure.is_empty() {
        return Err(fail(structure));
    }
    let value: serde_yaml::Value = serde_yaml::from_str(text).map_err(|e| {
        let loc = e.location().map(|l| (l.line(), l.column()));
        fail(vec![crate::scheme::load::yaml_problem(
            &e.to_string(),
            loc.map(|l| l.0),
            loc.map(|l| l.1),
        )])
    })?;
    if let Some((tag, path)) = crate::scheme::load::first_tagged(&value, String::new()) {
        let loc = lines.locate(&path);
        return Err(fail(vec![crate::scheme::load::tag_problem(
            &tag,
            loc.map(|l| l.0),
            loc.map(|l| l.1),
        )]));
    }
    if !value.is_mapping() {
        return Err(fail(vec![problem(
            "",
            Some((1, 1)),
            "a rules file is a YAML mapping with the keys `district`, `change` and `add`".into(),
        )]));
    }
    let raw: RawRules = serde_path_to_error::deserialize(value).map_err(|err| {
        let path = err.path().to_string();
        let path = if path == "." { String::new() } else { path };
        let msg = err.into_inner().to_string();
        fail(vec![
            crate::scheme::load::describe_serde_error(
                &path,
                &msg,
                &lines,
                "an added rule needs id, quantity, check, severity, description and source",
            )
            .0,
        ])
    })?;
    let mut problems = Vec::new();
    let set = apply(raw, &lines, &mut problems, label);
    if problems.is_empty() {
        Ok(set)
    } else {
        Err(fail(problems))
    }
}

fn problem(field: &str, loc: Option<(usize, usize)>, message: String) -> Problem {
    Problem {
        field: field.to_string(),
        line: loc.map(|l| l.0),
        column: loc.map(|l| l.1),
        message,
    }
}

/// Checks a limit given in the quantity's unit; returns it in the engine unit.
fn check_limit(
    q: Quantity,
    limit: f64,
    unit: Option<&str>,
    field: &str,
    lines: &LineMap,
    problems: &mut Vec<Problem>,
) -> Option<f64> {
    if let Some(u) = unit
        && u != q.unit()
    {
        problems.push(problem(
            &format!("{field}.unit"),
            lines.locate(&format!("{field}.unit")),
            format!(
                "`{u}` is not the unit of {}; its limits are written in {}",
                q.name(),
                q.unit()
            ),
        ));
        return None;
    }
    let f = format!("{field}.limit");
    if !limit.is_finite() || limit < 0.0 {
        problems.push(problem(
            &f,
            lines.locate(&f),
            format!("give a limit of 0 or more, in {} (got {limit})", q.unit()),
        ));
        return None;
    }
    let too_big = match q {
        Quantity::SupplyPerPerson => limit > 1000.0,
        Quantity::DemandMetFirstYear
        | Quantity::DemandMetHorizon
        | Quantity::DeclaredDemandMetDifference => limit > 100.0,
        Quantity::ShortfallHoursFirstYear
        | Quantity::ShortfallHoursHorizon
        | Quantity::YieldCappedHours
        | Quantity::DryRunStopHours
        | Quantity::BeyondCurveHours
        | Quantity::DeclaredShortfallDifference => limit > 8760.0,
        Quantity::MainVelocity => limit > 20.0,
        _ => false,
    };
    if too_big {
        problems.push(problem(
            &f,
            lines.locate(&f),
            format!(
                "{limit} {} is out of range for {}; check the unit (see `tapplan rules`)",
                q.unit(),
                q.name()
            ),
        ));
        return None;
    }
    Some(q.to_si(limit))
}

fn check_relative(
    q: Quantity,
    rel: f64,
    field: &str,
    lines: &LineMap,
    problems: &mut Vec<Problem>,
) -> Option<f64> {
    let f = format!("{field}.relative_percent");
    if !q.is_declared() {
        problems.push(problem(
            &f,
            lines.locate(&f),
            "a relative tolerance applies only to the declared-figure quantities (declared_shortfall_difference, declared_demand_met_difference); remove it".into(),
        ));
        return None;
    }
    if !rel.is_finite() || !(0.0..=100.0).contains(&rel) {
        problems.push(problem(
            &f,
            lines.locate(&f),
            format!("give a percentage from 0 to 100 (got {rel})"),
        ));
        return None;
    }
    Some(rel / 100.0)
}

fn check_target(q: Quantity, field: &str, lines: &LineMap, problems: &mut Vec<Problem>) -> bool {
    if q.target_field().is_some() {
        return true;
    }
    let f = format!("{field}.scheme_target");
    problems.push(problem(
        &f,
        lines.locate(&f),
        format!(
            "a scheme has no target for {}; only supply_per_person, shortfall_hours_* and demand_met_* have one",
            q.name()
        ),
    ));
    false
}

fn apply(raw: RawRules, lines: &LineMap, problems: &mut Vec<Problem>, label: &str) -> RuleSet {
    let mut rules = defaults::default_rules();
    let default_ids: Vec<String> = rules.iter().map(|r| r.id.clone()).collect();
    for (id, c) in raw.change.unwrap_or_default() {
        let field = format!("change.{id}");
        let Some(r) = rules.iter_mut().find(|r| r.id == id) else {
            let known: Vec<&str> = default_ids.iter().map(|s| s.as_str()).collect();
            let mut m = format!("there is no default rule `{id}`");
            if let Some(s) = closest(&id, &known) {
                m.push_str(&format!("; did you mean `{s}`?"));
            }
            m.push_str(" (`tapplan rules` lists them; put new rules under `add`)");
            problems.push(problem(&field, lines.locate(&field), m));
            continue;
        };
        let q = r.quantity;
        if let Some(l) = c.limit {
            if let Some(v) = check_limit(q, l, c.unit.as_deref(), &field, lines, problems) {
                r.limit_si = Some(v);
            }
        } else if let Some(u) = c.unit.as_deref()
            && u != q.unit()
        {
            let f = format!("{field}.unit");
            problems.push(problem(
                &f,
                lines.locate(&f),
                format!("`{u}` is not the unit of {}; it is {}", q.name(), q.unit()),
            ));
        }
        if let Some(t) = c.scheme_target
            && (!t || check_target(q, &field, lines, problems))
        {
            r.scheme_target = t;
        }
        if let Some(p) = c.relative_percent
            && let Some(v) = check_relative(q, p, &field, lines, problems)
        {
            r.relative_fraction = Some(v);
        }
        if let Some(s) = c.severity {
            r.severity = s;
        }
        if let Some(e) = c.enabled {
            r.enabled = e;
        }
        if let Some(d) = c.description {
            r.description = d;
        }
        if let Some(s) = c.source {
            r.source = s;
        }
        if let Some(s) = c.reference {
            r.reference = s;
        }
        if r.limit_si.is_none() && !r.scheme_target {
            problems.push(problem(
                &field,
                lines.locate(&field),
                "with scheme_target off this rule has no limit; give `limit` too, or switch the rule off with `enabled: false`".into(),
            ));
        }
    }
    for (i, a) in raw.add.unwrap_or_default().into_iter().enumerate() {
        let field = format!("add[{i}]");
        let id_field = format!("{field}.id");
        if !valid_id(&a.id) {
            problems.push(problem(
                &id_field,
                lines.locate(&id_field),
                format!("`{}` is not a usable id; use lower-case letters, digits and `-` (at most 48), e.g. district-supply", a.id),
            ));
            continue;
        }
        if rules.iter().any(|r| r.id == a.id) {
            problems.push(problem(
                &id_field,
                lines.locate(&id_field),
                format!(
                    "a rule `{}` already exists; give the new rule its own id, or change the existing one under `change`",
                    a.id
                ),
            ));
            continue;
        }
        let q = a.quantity;
        let limit_si = match a.limit {
            Some(l) => match check_limit(q, l, a.unit.as_deref(), &field, lines, problems) {
                Some(v) => Some(v),
                None => continue,
            },
            None => None,
        };
        if a.scheme_target && !check_target(q, &field, lines, problems) {
            continue;
        }
        if limit_si.is_none() && !a.scheme_target {
            problems.push(problem(
                &field,
                lines.locate(&field),
                format!(
                    "rule `{}` has no limit; give `limit` (in {}) or `scheme_target: true`",
                    a.id,
                    q.unit()
                ),
            ));
            continue;
        }
        let relative_fraction = match a.relative_percent {
            Some(p) => match check_relative(q, p, &field, lines, problems) {
                Some(v) => Some(v),
                None => continue,
            },
            None => None,
        };
        for (key, v) in [("description", &a.description), ("source", &a.source)] {
            if v.trim().is_empty() {
                let f = format!("{field}.{key}");
                problems.push(problem(
                    &f,
                    lines.locate(&f),
                    format!("give the rule a {key} in words"),
                ));
            }
        }
        rules.push(Rule {
            id: a.id,
            description: a.description,
            quantity: q,
            check: a.check,
            limit_si,
            scheme_target: a.scheme_target,
            relative_fraction,
            severity: a.severity,
            reference: a.reference.unwrap_or_else(|| a.source.clone()),
            source: a.source,
            enabled: a.enabled,
        });
    }
    RuleSet {
        district: raw.district,
        file: Some(label.to_string()),
        rules,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// A rules file gets the scheme file's structure checks before the serde parse: deep
    /// nesting is refused where it passes the limit (quickly), and tags are refused.
    #[test]
    fn deep_nesting_and_tags_are_refused_in_rules_files() {
        let deep = format!("district: {}{}\n", "[".repeat(100_000), "]".repeat(100_000));
        let t = std::time::Instant::now();
        let e = from_str(&deep, "deep.yaml").unwrap_err().to_string();
        assert!(
            t.elapsed() < std::time::Duration::from_secs(5),
            "{:?}",
            t.elapsed()
        );
        assert!(
            e.contains("deep.yaml:1:") && e.contains("nested more than 32"),
            "{e}"
        );
        let e = from_str("district: !!binary SGVsbG8=\n", "tag.yaml")
            .unwrap_err()
            .to_string();
        assert!(e.contains("tag.yaml:1:") && e.contains("`!!binary`"), "{e}");
    }

    #[test]
    fn changes_and_additions_apply() {
        let text = "district: Test district (invented)
change:
  storage-days:
    limit: 1.5
  walk-to-tap:
    severity: fail
  main-velocity-low:
    enabled: false
add:
  - id: district-supply
    quantity: supply_per_person
    check: at_least
    limit: 40
    unit: L/person/day
    severity: warn
    description: District service level
    source: District plan (invented)
";
        let set = from_str(text, "d.yaml").unwrap();
        assert_eq!(set.district.as_deref(), Some("Test district (invented)"));
        assert_relative_eq!(set.get("storage-days").unwrap().limit_si.unwrap(), 1.5);
        assert_eq!(set.get("walk-to-tap").unwrap().severity, Severity::Fail);
        assert!(!set.get("main-velocity-low").unwrap().enabled);
        let d = set.get("district-supply").unwrap();
        // 40 L = 0.040 m³
        assert_relative_eq!(d.limit_si.unwrap(), 0.040);
        assert_eq!(d.quantity, Quantity::SupplyPerPerson);
        assert_eq!(set.rules.len(), defaults::default_rules().len() + 1);
    }

    #[test]
    fn unknown_key_names_its_line_and_a_suggestion() {
        let text = "change:\n  storage-days:\n    limt: 1.5\n";
        let e = from_str(text, "d.yaml").unwrap_err();
        assert_eq!(e.problems.len(), 1);
        let p = &e.problems[0];
        assert_eq!(p.line, Some(3));
        assert!(p.message.contains("did you mean `limit`"), "{}", p.message);
        assert!(e.to_string().contains("d.yaml:3"), "{e}");
    }

    #[test]
    fn unknown_rule_id_and_bad_values_are_all_reported() {
        let text = "change:
  storage-dayz:
    limit: 1
  supply-per-person:
    limit: -5
add:
  - id: supply-per-person
    quantity: supply_per_person
    check: at_least
    limit: 30
    severity: warn
    description: x
    source: y
  - id: Bad_Id
    quantity: supply_per_person
    check: at_least
    limit: 30
    severity: warn
    description: x
    source: y
";
        let e = from_str(text, "d.yaml").unwrap_err();
        let lines: Vec<Option<usize>> = e.problems.iter().map(|p| p.line).collect();
        assert_eq!(lines, vec![Some(2), Some(5), Some(7), Some(14)], "{e}");
        assert!(
            e.problems[0]
                .message
                .contains("did you mean `storage-days`")
        );
    }

    #[test]
    fn wrong_unit_and_unknown_severity_are_refused() {
        let e = from_str(
            "change:\n  walk-to-tap:\n    limit: 0.4\n    unit: km\n",
            "d.yaml",
        )
        .unwrap_err();
        assert_eq!(e.problems[0].line, Some(4));
        let e = from_str("change:\n  walk-to-tap:\n    severity: eror\n", "d.yaml").unwrap_err();
        assert_eq!(e.problems[0].line, Some(3));
        assert!(
            e.problems[0].message.contains("use one of: fail, warn"),
            "{}",
            e.problems[0].message
        );
    }

    #[test]
    fn scheme_target_only_where_a_target_exists() {
        let e = from_str(
            "change:\n  walk-to-tap:\n    scheme_target: true\n",
            "d.yaml",
        )
        .unwrap_err();
        assert_eq!(e.problems[0].line, Some(3));
        assert!(
            from_str(
                "change:\n  supply-per-person:\n    scheme_target: false\n",
                "d.yaml"
            )
            .is_ok()
        );
    }

    #[test]
    fn ids() {
        assert!(valid_id("supply-per-person"));
        assert!(valid_id("d2-supply"));
        assert!(!valid_id("-x"));
        assert!(!valid_id("Supply"));
        assert!(!valid_id(""));
    }
}
