//! Terminal tables (comfy-table) over results computed elsewhere. Units are in the headers.

use comfy_table::{ContentArrangement, Table, presets::UTF8_FULL_CONDENSED};

/// A new table in the house style.
pub fn new_table(header: &[&str]) -> Table {
    let mut t = Table::new();
    t.load_preset(UTF8_FULL_CONDENSED)
        .set_content_arrangement(ContentArrangement::Disabled)
        .set_header(header.iter().copied());
    t
}

use crate::simulate::{Ensemble, RunReport, YearResult};
use crate::weather::MONTH_NAMES;

fn pct(f: f64) -> String {
    format!("{:.1}", f * 100.0)
}

/// The one-line answer: design, shortfall hours and % met.
pub fn run_summary_line(r: &RunReport) -> String {
    format!(
        "{}: shortfall {:.0} h/year and {} % of demand met in {} ({} over {} weather year{}); {} h and {} % in {}; target {}",
        r.design_text,
        r.first_year.judged_shortfall_hours,
        pct(r.first_year.judged_demand_met_fraction),
        r.first_year.year,
        judged_name(r.first_year.judged_on, r.first_year.years_run),
        r.first_year.years_run,
        if r.first_year.years_run == 1 { "" } else { "s" },
        r.horizon_year.judged_shortfall_hours,
        pct(r.horizon_year.judged_demand_met_fraction),
        r.horizon_year.year,
        if r.target_met_in_horizon_year
            && r.horizon_year
                .years
                .first()
                .is_some_and(|y| y.population < 1.0)
        {
            // the scheme's warning says how a year without people is judged
            "met at the horizon, where the projection leaves no people (see the warning)"
                .to_string()
        } else if r.target_met_in_horizon_year {
            "met at the horizon".to_string()
        } else {
            match r.first_failing_year {
                Some(y) => format!("NOT met from {y}"),
                None => "NOT met".to_string(),
            }
        }
    )
}

fn judged_name(j: crate::scheme::JudgedOn, n: usize) -> &'static str {
    if n <= 1 {
        return "single year";
    }
    match j {
        crate::scheme::JudgedOn::Median => "median",
        crate::scheme::JudgedOn::P90 => "1 year in 10",
    }
}

/// Each borehole's figures of one year.
pub fn borehole_table(y: &YearResult) -> Table {
    let mut t = new_table(&[
        "borehole",
        "pumped (m³)",
        "deepest level (m below ground)",
        "least margin (m)",
        "hours at safe yield (h)",
        "dry-run stops (h)",
    ]);
    let opt = |v: Option<f64>| v.map_or("-".to_string(), |v| format!("{v:.1}"));
    for b in &y.boreholes {
        t.add_row(vec![
            b.name.clone(),
            format!("{:.0}", b.pumped_m3),
            opt(b.deepest_dynamic_level_m),
            opt(b.drawdown_margin_m),
            b.yield_capped_hours.to_string(),
            b.dry_run_stop_hours.to_string(),
        ]);
    }
    t
}

/// Annual figures of one year.
pub fn annual_table(y: &YearResult, storage_days: f64) -> Table {
    let a = &y.annual;
    let mut t = new_table(&["annual figure", "value"]);
    let rows: Vec<(&str, String)> = vec![
        ("year (weather)", format!("{} ({})", y.year, y.weather)),
        ("population", format!("{:.0}", y.population)),
        ("demand (m³)", format!("{:.0}", a.demand_m3)),
        ("delivered (m³)", format!("{:.0}", a.delivered_m3)),
        ("unmet (m³)", format!("{:.1}", a.unmet_m3)),
        ("demand met (%)", pct(y.demand_met_fraction)),
        ("shortfall hours (h)", a.shortfall_hours.to_string()),
        (
            "longest dry spell (h)",
            y.longest_dry_spell_hours.to_string(),
        ),
        ("pumped (m³)", format!("{:.0}", a.pumped_m3)),
        ("overflow (m³)", format!("{:.1}", a.overflow_m3)),
        (
            "tank level at start / end (m³)",
            format!("{:.1} / {:.1}", y.start_level_m3, y.end_level_m3),
        ),
        (
            "storage change (m³) = pumped − delivered − overflow",
            format!(
                "{:+.3}",
                if y.storage_change_m3.abs() < 5e-4 {
                    0.0
                } else {
                    y.storage_change_m3
                }
            ),
        ),
        (
            "periodic state",
            if y.steady {
                format!(
                    "reached in {} pass(es): the year ends as it starts",
                    y.passes
                )
            } else {
                format!(
                    "no repeating state; figures settled after {} passes (the worse pass reported)",
                    y.passes
                )
            },
        ),
        (
            "lowest tank level (% of usable)",
            pct(a.lowest_level_fraction),
        ),
        ("pump run hours (h)", format!("{:.0}", a.pump_run_hours)),
        ("pump energy (kWh)", format!("{:.0}", a.energy_kwh)),
        (
            "specific energy (kWh/m³)",
            y.specific_energy_kwh_per_m3
                .map_or("-".into(), |v| format!("{v:.3}")),
        ),
        ("generator fuel (L)", format!("{:.0}", a.generator_fuel_l)),
        (
            "delivered domestic water (L/person/day)",
            format!("{:.1}", y.delivered_m3_per_person_day * 1000.0),
        ),
        (
            "least drawdown margin (m)",
            y.drawdown_margin_m
                .map_or("-".into(), |v| format!("{v:.1}")),
        ),
        (
            "deepest dynamic water level (m below ground)",
            y.deepest_dynamic_level_m
                .map_or("-".into(), |v| format!("{v:.1}")),
        ),
        ("dry-run stops (h)", y.dry_run_stop_hours.to_string()),
        (
            "hours capped at safe yield (h)",
            y.yield_capped_hours.to_string(),
        ),
        (
            "hours beyond the pump curve (h)",
            y.beyond_curve_hours.to_string(),
        ),
        (
            "storage (days of average demand)",
            format!("{storage_days:.2}"),
        ),
    ];
    for (k, v) in rows {
        t.add_row(vec![k.to_string(), v]);
    }
    t
}

/// Monthly figures of one year.
pub fn monthly_table(y: &YearResult) -> Table {
    let mut t = new_table(&[
        "month",
        "demand (m³)",
        "delivered (m³)",
        "unmet (m³)",
        "shortfall (h)",
        "pumped (m³)",
        "overflow (m³)",
        "run (h)",
        "energy (kWh)",
        "lowest level (%)",
    ]);
    for (m, x) in y.months.iter().enumerate() {
        t.add_row(vec![
            MONTH_NAMES[m][..3].to_string(),
            format!("{:.0}", x.demand_m3),
            format!("{:.0}", x.delivered_m3),
            format!("{:.1}", x.unmet_m3),
            x.shortfall_hours.to_string(),
            format!("{:.0}", x.pumped_m3),
            format!("{:.1}", x.overflow_m3),
            format!("{:.0}", x.pump_run_hours),
            format!("{:.0}", x.energy_kwh),
            pct(x.lowest_level_fraction),
        ]);
    }
    t
}

/// Reliability over the weather years.
pub fn ensemble_table(first: &Ensemble, last: &Ensemble) -> Table {
    let mut t = new_table(&[
        "over weather years",
        &format!("{} ({} years)", first.year, first.years_run),
        &format!("{} ({} years)", last.year, last.years_run),
    ]);
    let rows = [
        (
            "median shortfall (h)",
            first.median_shortfall_hours,
            last.median_shortfall_hours,
            false,
        ),
        (
            "1-in-10 shortfall, 90th pct (h)",
            first.p90_shortfall_hours,
            last.p90_shortfall_hours,
            false,
        ),
        (
            "worst-year shortfall (h)",
            first.worst_shortfall_hours,
            last.worst_shortfall_hours,
            false,
        ),
        (
            "median demand met (%)",
            first.median_demand_met_fraction,
            last.median_demand_met_fraction,
            true,
        ),
        (
            "1-in-10 demand met (%)",
            first.p10_demand_met_fraction,
            last.p10_demand_met_fraction,
            true,
        ),
        (
            "worst-year demand met (%)",
            first.worst_demand_met_fraction,
            last.worst_demand_met_fraction,
            true,
        ),
    ];
    for (k, a, b, is_pct) in rows {
        let f = |v: f64| if is_pct { pct(v) } else { format!("{v:.0}") };
        t.add_row(vec![k.to_string(), f(a), f(b)]);
    }
    t.add_row(vec![
        "longest dry spell (h)".to_string(),
        first.longest_dry_spell_hours.to_string(),
        last.longest_dry_spell_hours.to_string(),
    ]);
    t
}

/// Shortfall and % met year by year to the horizon.
pub fn horizon_table(r: &RunReport) -> Table {
    let mut t = new_table(&[
        "year",
        "population",
        "demand (m³/day)",
        "shortfall (h)",
        "demand met (%)",
        "target",
    ]);
    for h in &r.horizon {
        t.add_row(vec![
            h.year.to_string(),
            format!("{:.0}", h.population),
            format!("{:.1}", h.demand_m3_per_day),
            format!("{:.0}", h.shortfall_hours),
            pct(h.demand_met_fraction),
            if h.meets_target { "met" } else { "NOT met" }.to_string(),
        ]);
    }
    t
}

use crate::sizing::Plan;

fn money(v: f64, cur: &str) -> String {
    format!("{:.0} {cur}", v)
}

/// The chosen design (or the plain statement that none meets the target).
pub fn plan_summary(p: &Plan, cur: &str) -> String {
    let mut out = String::new();
    match &p.chosen {
        Some(c) => {
            match &p.verdict {
                Some(v) if !v.acceptable => out.push_str(&format!(
                    "Chosen design, NOT acceptable as it stands (it fails {}; the notes say why): {}\n",
                    v.failing_rules.join(", "),
                    c.design_text
                )),
                _ => out.push_str(&format!("Chosen design: {}\n", c.design_text)),
            }
            out.push_str(&format!(
                "  horizon-year shortfall {:.0} h/year, {:.1} % of demand met ({}); target: {}\n",
                c.judged_shortfall_hours,
                c.judged_demand_met_fraction * 100.0,
                if p.weather_years > 1 {
                    format!(
                        "{} of {} weather years",
                        match p.judged_on {
                            crate::scheme::JudgedOn::Median => "median",
                            crate::scheme::JudgedOn::P90 => "1-in-10 year",
                        },
                        p.weather_years
                    )
                } else {
                    "weather-independent".to_string()
                },
                p.target_text
            ));
            out.push_str(&format!(
                "  first-year shortfall {:.0} h/year, {:.1} % met\n",
                p.report.first_year.judged_shortfall_hours,
                p.report.first_year.judged_demand_met_fraction * 100.0
            ));
            out.push_str(&format!(
                "  life-cycle cost {} (NPV), {} a year annualised{}\n",
                money(c.cost.npv, cur),
                money(c.cost.annualised, cur),
                c.cost
                    .levelised_per_m3
                    .map_or(String::new(), |v| format!(", {v:.2} {cur}/m³ delivered"))
            ));
            if let Some(t) = p.next_smaller_tank_m3 {
                out.push_str(&format!(
                    "  the next smaller tank ({} m³) with the same pumps and array does not meet the target\n",
                    crate::simulate::fmt_g(t)
                ));
            }
        }
        None => {
            out.push_str("NO DESIGN IN THE RANGES MEETS THE TARGET.\n");
            if let Some(u) = &p.unreachable {
                out.push_str(&format!(
                    "  best reachable: {}: {:.0} shortfall h/year, {:.1} % of demand met in the horizon year\n  limited by {}\n",
                    u.best_design,
                    u.best_shortfall_hours,
                    u.best_demand_met_fraction * 100.0,
                    u.limited_by
                ));
                if let Some(pw) = u.present_worth {
                    out.push_str(&format!(
                        "  its life-cycle cost would be {} (NPV) — it does NOT meet the target\n",
                        money(pw, cur)
                    ));
                }
            }
        }
    }
    if let Some(c) = &p.chosen {
        out.push_str(&format!(
            "  storage: {:.2} days of average demand in the first year{}\n",
            c.storage_days,
            if p.weather_years > 1 {
                " (1–3 days is the usual rule of thumb for solar pumping: common practice)"
            } else {
                ""
            }
        ));
    }
    if let Some(v) = &p.verdict {
        out.push_str(&verdict_line(v));
        out.push('\n');
    }
    if let Some(md) = &p.mean_days {
        out.push_str(&format!("  {}\n", md.explanation));
    }
    out
}

/// The rules' verdict on a design in one line, as `check` would give it.
pub fn verdict_line(v: &crate::sizing::Verdict) -> String {
    let mut t = if v.acceptable {
        "  rules: no rule of severity fail is failed (the verdict `tapplan check` gives)"
            .to_string()
    } else {
        format!("  rules: FAILS {}", v.failing_rules.join(", "))
    };
    if !v.warning_rules.is_empty() {
        t.push_str(&format!("; warns: {}", v.warning_rules.join(", ")));
    }
    t
}

/// Cheapest design per pump count.
pub fn alternatives_table(p: &Plan, cur: &str) -> Table {
    let mut t = new_table(&[
        "alternative",
        "shortfall (h/year)",
        "demand met (%)",
        "meets target",
        "first fails",
        "storage (days)",
        &format!("NPV ({cur})"),
        &format!("capital ({cur})"),
    ]);
    for a in &p.alternatives {
        t.add_row(vec![
            a.design_text.clone(),
            format!("{:.0}", a.judged_shortfall_hours),
            pct(a.judged_demand_met_fraction),
            if a.meets_target { "yes" } else { "no" }.to_string(),
            a.first_failing_year.map_or("-".into(), |y| y.to_string()),
            format!("{:.2}", a.storage_days),
            format!("{:.0}", a.cost.npv),
            format!("{:.0}", a.cost.capital),
        ]);
    }
    t
}

/// Cost–reliability front.
pub fn front_table(p: &Plan, cur: &str) -> Table {
    let mut t = new_table(&[
        "cost–reliability front",
        "shortfall (h/year)",
        "demand met (%)",
        &format!("NPV ({cur})"),
    ]);
    for f in &p.front {
        t.add_row(vec![
            f.design_text.clone(),
            format!("{:.0}", f.judged_shortfall_hours),
            pct(f.judged_demand_met_fraction),
            format!("{:.0}", f.npv),
        ]);
    }
    t
}

/// Horizon staging.
pub fn staging_table(p: &Plan, cur: &str) -> Table {
    let mut t = new_table(&[
        "start with",
        "first fails",
        "then add",
        &format!("PW saved by waiting ({cur})"),
    ]);
    for s in &p.staging {
        t.add_row(vec![
            s.start_with.clone(),
            s.fails_from_year
                .map_or("does not fail".into(), |y| y.to_string()),
            s.then_add.clone(),
            format!("{:.0}", s.capital_saving_pw),
        ]);
    }
    t
}

/// Sensitivity of the chosen design.
pub fn sensitivity_table(p: &Plan, cur: &str) -> Table {
    let mut t = new_table(&[
        "case (horizon year)",
        "shortfall (h/year)",
        "demand met (%)",
        "meets target",
        &format!("NPV ({cur})"),
    ]);
    for r in &p.sensitivity {
        if r.applicable {
            t.add_row(vec![
                r.case.clone(),
                format!("{:.0}", r.judged_shortfall_hours),
                pct(r.judged_demand_met_fraction),
                if r.meets_target { "yes" } else { "no" }.to_string(),
                format!("{:.0}", r.npv),
            ]);
        } else {
            t.add_row(vec![
                r.case.clone(),
                "not applicable".into(),
                "-".into(),
                "-".into(),
                "-".into(),
            ]);
        }
    }
    t
}
