//! The default rules, each with the published source of its limit (or "common practice" where
//! the limit is a trade convention with no single source, or "this tool's own check").
//!
//! Limits are written here in the unit people read and converted with `Quantity::to_si`.

use super::{Check, Quantity, Rule, Severity};

/// Basic access: about 20 L per person per day (WHO; Howard & Bartram 2003 — from memory).
pub const WHO_BASIC_ACCESS_L_PER_PERSON_DAY: f64 = 20.0;
/// Sphere minimum for drinking and domestic hygiene: 15 L per person per day (Sphere 2018,
/// water supply standard 2.1 — from memory).
pub const SPHERE_MIN_L_PER_PERSON_DAY: f64 = 15.0;
/// Sphere: at most 250 people per tap, based on 7.5 L/min (Sphere 2018, standard 2.1 guidance
/// notes — from memory).
pub const SPHERE_PEOPLE_PER_TAP: f64 = 250.0;
/// Sphere: the nearest water point within 500 m of every household (Sphere 2018, standard 2.1
/// — from memory).
pub const SPHERE_WALK_M: f64 = 500.0;
/// Rising-main velocity band, m/s (common practice).
pub const MAIN_VELOCITY_MIN_M_PER_S: f64 = 0.5;
pub const MAIN_VELOCITY_MAX_M_PER_S: f64 = 2.5;
/// Preferred operating range around the best-efficiency flow, % (common practice).
pub const BEP_LOW_PERCENT: f64 = 70.0;
pub const BEP_HIGH_PERCENT: f64 = 120.0;
/// Storage of at least half a day's demand (common practice).
pub const STORAGE_MIN_DAYS: f64 = 0.5;
/// Least share of its rated power a displacement pump should reach in the year, %.
pub const DISPLACEMENT_RATED_LOW_PERCENT: f64 = 80.0;
/// Declared shortfall may differ from the recomputed one by max(24 h, 10 %) (our tolerance).
pub const DECLARED_SHORTFALL_TOLERANCE_H: f64 = 24.0;
pub const DECLARED_SHORTFALL_TOLERANCE_PERCENT: f64 = 10.0;
/// Declared demand met may differ by 1 percentage point (our tolerance).
pub const DECLARED_DEMAND_MET_TOLERANCE_POINTS: f64 = 1.0;

const SPHERE_2018: &str = "Sphere Association (2018), The Sphere Handbook: Humanitarian Charter and Minimum Standards in Humanitarian Response, 4th edition, Geneva; Water supply standard 2.1 (access and water quantity)";
const OWN_TARGET: &str = "the scheme's own target";
const OWN_CHECK: &str = "this tool's consistency check";

struct Spec {
    id: &'static str,
    description: &'static str,
    quantity: Quantity,
    check: Check,
    /// In `quantity.unit()`.
    limit: Option<f64>,
    scheme_target: bool,
    relative_percent: Option<f64>,
    severity: Severity,
    source: &'static str,
    reference: String,
}

fn rule(s: Spec) -> Rule {
    Rule {
        id: s.id.to_string(),
        description: s.description.to_string(),
        quantity: s.quantity,
        check: s.check,
        limit_si: s.limit.map(|v| s.quantity.to_si(v)),
        scheme_target: s.scheme_target,
        relative_fraction: s.relative_percent.map(|p| p / 100.0),
        severity: s.severity,
        source: s.source.to_string(),
        reference: s.reference,
        enabled: true,
    }
}

/// The default rules, in the order they are reported.
pub fn default_rules() -> Vec<Rule> {
    use Check::{AtLeast, AtMost};
    use Quantity as Q;
    use Severity::{Fail, Warn};
    let target = |id, description, quantity, check| Spec {
        id,
        description,
        quantity,
        check,
        limit: None,
        scheme_target: true,
        relative_percent: None,
        severity: Fail,
        source: OWN_TARGET,
        reference: format!(
            "The target the scheme file sets ({}), judged on the file's targets.judged_on figure over the weather years.",
            quantity.target_field().unwrap_or("targets")
        ),
    };
    let common = |what: &str| format!("Common practice: {what} No single published source.");
    let specs = vec![
        Spec {
            id: "supply-per-person",
            description: "Domestic water delivered per person per day, in the base and the horizon year",
            quantity: Q::SupplyPerPerson,
            check: AtLeast,
            limit: Some(WHO_BASIC_ACCESS_L_PER_PERSON_DAY),
            scheme_target: true,
            relative_percent: None,
            severity: Fail,
            source: "WHO, Howard & Bartram 2003",
            reference: "Howard G. & Bartram J. (2003), Domestic Water Quantity, Service Level and Health, World Health Organization, WHO/SDE/WSH/03.02: 'basic access' is about 20 L per person per day (a 2nd edition appeared in 2020) — from memory. The scheme's own targets.min_supply_l_per_person_day applies instead when it is higher.".into(),
        },
        Spec {
            id: "supply-per-person-floor",
            description: "Domestic water delivered per person per day stays above the emergency minimum",
            quantity: Q::SupplyPerPerson,
            check: AtLeast,
            limit: Some(SPHERE_MIN_L_PER_PERSON_DAY),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "Sphere Handbook 2018, standard 2.1",
            reference: format!("{SPHERE_2018}: at least 15 L per person per day for drinking and domestic hygiene — from memory."),
        },
        Spec {
            id: "people-per-tap",
            description: "People per public tap at the horizon",
            quantity: Q::PeoplePerTap,
            check: AtMost,
            limit: Some(SPHERE_PEOPLE_PER_TAP),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "Sphere Handbook 2018, standard 2.1",
            reference: format!("{SPHERE_2018}, guidance notes: at most 250 people per tap, based on a flow of 7.5 L/min — from memory. Counted on the horizon-year population; people on household connections are not subtracted (the scheme gives no household size)."),
        },
        Spec {
            id: "walk-to-tap",
            description: "Longest walk from a home to a tap",
            quantity: Q::WalkToTap,
            check: AtMost,
            limit: Some(SPHERE_WALK_M),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "Sphere Handbook 2018, standard 2.1",
            reference: format!("{SPHERE_2018}: the distance from any household to the nearest water point is under 500 m — from memory."),
        },
        target(
            "shortfall-first-year",
            "Hours a year the taps run short, base year",
            Q::ShortfallHoursFirstYear,
            AtMost,
        ),
        target(
            "shortfall-horizon",
            "Hours a year the taps run short, horizon year",
            Q::ShortfallHoursHorizon,
            AtMost,
        ),
        target(
            "demand-met-first-year",
            "Share of the year's demand met, base year",
            Q::DemandMetFirstYear,
            AtLeast,
        ),
        target(
            "demand-met-horizon",
            "Share of the year's demand met, horizon year",
            Q::DemandMetHorizon,
            AtLeast,
        ),
        Spec {
            id: "yield-capped",
            description: "Hours the pumps would draw more than the borehole's safe yield (the simulation holds them to it)",
            quantity: Q::YieldCappedHours,
            check: AtMost,
            limit: Some(0.0),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("a borehole is pumped at no more than its safe yield. The simulation caps the flow at the safe yield, which in the field needs a flow limiter or a smaller pump; hours at the cap show the pump is larger than the borehole."),
        },
        Spec {
            id: "pump-flow-tested-yield",
            description: "Full-speed flow of the installed pumps from the static water level, against the tested yield",
            quantity: Q::PumpFlowOverTestedYield,
            check: AtMost,
            limit: Some(100.0),
            scheme_target: false,
            relative_percent: None,
            severity: Fail,
            source: "common practice",
            reference: common("a borehole is not pumped beyond the yield its pumping test demonstrated. The flow is the pumps' operating point at rated speed against the system with the water at its static level (the largest flow they draw); above the tested yield the pumps overdraw the borehole unless a flow limiter, which the plan does not show, holds them back."),
        },
        Spec {
            id: "dry-run-stops",
            description: "Hours a pump is stopped because the water would fall below the intake and its submergence margin",
            quantity: Q::DryRunStopHours,
            check: AtMost,
            limit: Some(0.0),
            scheme_target: false,
            relative_percent: None,
            severity: Fail,
            source: "common practice",
            reference: common("the dynamic water level stays above the pump intake by the submergence margin the pump maker asks for; a pump that keeps tripping its dry-run protection wears out and leaves the tank unfilled."),
        },
        Spec {
            id: "intake-margin",
            description: "Least height of the pumping water level above the intake less its submergence margin",
            quantity: Q::IntakeMargin,
            check: AtLeast,
            limit: Some(0.0),
            scheme_target: false,
            relative_percent: None,
            severity: Fail,
            source: "common practice",
            reference: common("the dynamic water level stays above the intake by the submergence margin (borehole submergence_margin_m). A district may ask for extra metres here."),
        },
        Spec {
            id: "main-velocity-low",
            description: "Rising-main velocity at the mean flow while pumping, lower bound",
            quantity: Q::MainVelocity,
            check: AtLeast,
            limit: Some(MAIN_VELOCITY_MIN_M_PER_S),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("pumping mains run at about 0.5–2.5 m/s; slower lets air and sediment settle, faster costs energy and raises surge."),
        },
        Spec {
            id: "main-velocity-high",
            description: "Rising-main velocity at the mean flow while pumping, upper bound",
            quantity: Q::MainVelocity,
            check: AtMost,
            limit: Some(MAIN_VELOCITY_MAX_M_PER_S),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("pumping mains run at about 0.5–2.5 m/s; slower lets air and sediment settle, faster costs energy and raises surge."),
        },
        Spec {
            id: "pump-in-curve",
            description: "Hours a pump runs outside the range of its curve",
            quantity: Q::BeyondCurveHours,
            check: AtMost,
            limit: Some(0.0),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("a pump is run within the flow range its maker's curve covers; outside it the simulation does not extrapolate and its figures for those hours are uncertain."),
        },
        Spec {
            id: "pump-bep-low",
            description: "Typical pump flow against its best-efficiency flow, lower bound",
            quantity: Q::FlowOverBestEfficiency,
            check: AtLeast,
            limit: Some(BEP_LOW_PERCENT),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("a centrifugal pump is chosen to run at about 70–120 % of its best-efficiency flow, for efficiency and bearing and seal life. The flow is the volume-weighted mean over the base year, brought to the curve's speed by the affinity laws."),
        },
        Spec {
            id: "pump-bep-high",
            description: "Typical pump flow against its best-efficiency flow, upper bound",
            quantity: Q::FlowOverBestEfficiency,
            check: AtMost,
            limit: Some(BEP_HIGH_PERCENT),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("a centrifugal pump is chosen to run at about 70–120 % of its best-efficiency flow, for efficiency and bearing and seal life. The flow is the volume-weighted mean over the base year, brought to the curve's speed by the affinity laws."),
        },
        Spec {
            id: "pump-in-table",
            description: "Hours a positive-displacement pump runs outside the heads of its measured table",
            quantity: Q::OutsideTableHours,
            check: AtMost,
            limit: Some(0.0),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("a displacement pump is run within the heads its maker's table covers; outside them the simulation does not extrapolate (below the lowest head it uses the lowest row; above the highest it lets the flow fall to zero at the stall head) and its figures for those hours are uncertain."),
        },
        Spec {
            id: "pump-near-rated",
            description: "Highest input power of a positive-displacement pump in the year against its rated power",
            quantity: Q::PeakPowerOverRated,
            check: AtLeast,
            limit: Some(DISPLACEMENT_RATED_LOW_PERCENT),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("a displacement pump on a solar drive is matched to its array so that it nears its rated input power in strong sun; one that never does is larger than its array can drive. Its flow follows the drive power, so there is no best-efficiency flow to aim at."),
        },
        Spec {
            id: "storage-days",
            description: "Usable storage in days of the horizon year's average demand",
            quantity: Q::StorageDays,
            check: AtLeast,
            limit: Some(STORAGE_MIN_DAYS),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("a village tank holds at least half a day's demand (districts often ask for more; set it in the district rules file)."),
        },
        Spec {
            id: "repair-cover",
            description: "With one unit of a pump type out for repair (targets.repair_days, in the month of least margin), the tank and the remaining units carry the supply",
            quantity: Q::RepairShortfallHours,
            check: AtMost,
            limit: Some(0.0),
            scheme_target: false,
            relative_percent: None,
            severity: Warn,
            source: "common practice",
            reference: common("a supply should keep running while one pump is repaired (the \"N − 1\" rule of thumb for standby pumps); the repair is placed in the month whose lowest tank level is the least, with one unit fewer of each pump type in turn."),
        },
        Spec {
            id: "declared-shortfall",
            description: "Shortfall hours the scheme declares, against the recomputed base-year figure",
            quantity: Q::DeclaredShortfallDifference,
            check: AtMost,
            limit: Some(DECLARED_SHORTFALL_TOLERANCE_H),
            scheme_target: false,
            relative_percent: Some(DECLARED_SHORTFALL_TOLERANCE_PERCENT),
            severity: Fail,
            source: OWN_CHECK,
            reference: "The figures a proposal declares (declared.shortfall_hours_per_year) should be those its own design gives; the tolerance, 24 h or 10 % of the recomputed figure whichever is larger, allows for rounding and for other weather years.".into(),
        },
        Spec {
            id: "declared-demand-met",
            description: "Share of demand met the scheme declares, against the recomputed base-year figure",
            quantity: Q::DeclaredDemandMetDifference,
            check: AtMost,
            limit: Some(DECLARED_DEMAND_MET_TOLERANCE_POINTS),
            scheme_target: false,
            relative_percent: None,
            severity: Fail,
            source: OWN_CHECK,
            reference: "The figures a proposal declares (declared.demand_met_percent) should be those its own design gives, within 1 percentage point.".into(),
        },
    ];
    specs.into_iter().map(rule).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ids_are_unique_and_well_formed() {
        let rules = default_rules();
        let mut ids: Vec<&str> = rules.iter().map(|r| r.id.as_str()).collect();
        for id in &ids {
            assert!(super::super::district::valid_id(id), "{id}");
        }
        ids.sort();
        ids.dedup();
        assert_eq!(ids.len(), rules.len());
    }

    #[test]
    fn every_rule_names_a_source_and_a_reference() {
        for r in default_rules() {
            assert!(!r.source.is_empty(), "{}", r.id);
            assert!(r.reference.len() > 40, "{}", r.id);
            // a rule either has a fixed limit or takes the scheme's target
            assert!(r.limit_si.is_some() || r.scheme_target, "{}", r.id);
        }
    }
}
