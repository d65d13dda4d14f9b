//! Life-cycle cost of a design: capital, replacements, salvage, maintenance and energy over
//! the design horizon, by present worth.
//!
//! Method: present-worth analysis with end-of-year cash flows as in Newnan, Eschenbach &
//! Lavelle, *Engineering Economic Analysis* (any recent edition, ch. 5 "Present worth
//! analysis"): NPV = capital + PW(replacements) − PW(salvage) + Σ_y opex_y·(1+i)^−y, annualised
//! with the capital recovery factor, levelised per m³ as NPV / Σ_y V_y·(1+i)^−y.
//! Operation in year y (1..H) is interpolated linearly between the simulated first and horizon
//! years (stated in the plan).

use serde::Serialize;

use crate::physics::money;
use crate::scheme::{DriveKind, PumpKind, Scheme};
use crate::simulate::Design;

/// What a design uses in one year of operation.
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct Operation {
    pub fuel_l: f64,
    pub grid_kwh: f64,
    pub generator_run_hours: f64,
    pub delivered_m3: f64,
}

/// One capital item.
#[derive(Debug, Clone, Serialize)]
pub struct CostLine {
    pub item: String,
    pub capital: f64,
    pub lifetime_years: f64,
    /// Capital + replacements − salvage, present worth.
    pub present_worth: f64,
}

#[derive(Debug, Clone, Serialize)]
pub struct CostBreakdown {
    pub lines: Vec<CostLine>,
    pub capital: f64,
    pub replacements_pw: f64,
    pub salvage_pw: f64,
    pub maintenance_pw: f64,
    pub energy_pw: f64,
    /// Net present value of all costs over the horizon.
    pub npv: f64,
    /// NPV × capital recovery factor.
    pub annualised: f64,
    pub levelised_per_m3: Option<f64>,
}

/// The capital items of a design (item, capital, lifetime in years).
pub fn capital_items(s: &Scheme, d: &Design) -> Vec<(String, f64, f64)> {
    let c = &s.costs;
    let mut items = Vec::new();
    items.push((
        format!("tank {} m³", crate::simulate::fmt_g(d.tank_m3)),
        c.tank_fixed + c.tank_per_m3 * d.tank_m3,
        c.tank_lifetime_years,
    ));
    let mut any_main = false;
    let mut any_gen = false;
    let mut any_solar = false;
    for (p, n) in s.pumps.iter().zip(&d.units) {
        if *n == 0 {
            continue;
        }
        items.push((
            format!("{n} × {}", p.name),
            p.unit_cost * *n as f64,
            p.lifetime_years,
        ));
        any_main |= matches!(
            p.kind,
            PumpKind::Curve { .. } | PumpKind::Displacement { .. } | PumpKind::Ram { .. }
        );
        any_gen |= p.drive == DriveKind::Generator;
        any_solar |= p.drive == DriveKind::Solar;
    }
    if any_solar && d.array_w > 0.0 {
        items.push((
            format!("PV array {:.2} kWp", d.array_w / 1000.0),
            c.pv_per_w * d.array_w,
            c.pv_lifetime_years,
        ));
    }
    if any_gen {
        items.push((
            "generator".into(),
            c.generator_capital,
            c.generator_lifetime_years,
        ));
    }
    if any_main {
        items.push((
            "rising main".into(),
            c.rising_main_capital,
            c.tank_lifetime_years,
        ));
    }
    items
}

/// Capital + PW(replacements) − PW(salvage) of one item.
fn item_pw(capital: f64, life: f64, horizon: f64, i: f64) -> (f64, f64) {
    let repl = money::present_worth_of_replacements(capital, life, horizon, i);
    let salv = money::salvage_value_linear(capital, life, horizon, i);
    (repl, salv)
}

/// Fixed maintenance of a design per year: the share of capital plus the per-unit pump
/// maintenance (neither depends on how the design runs).
fn fixed_maintenance_per_year(s: &Scheme, d: &Design, capital: f64) -> f64 {
    s.costs.maintenance_fraction_of_capital_per_year * capital
        + s.pumps
            .iter()
            .zip(&d.units)
            .map(|(p, n)| p.maintenance_per_unit_year * *n as f64)
            .sum::<f64>()
}

/// The part of the NPV that needs no simulation: capital, replacements, salvage and fixed
/// maintenance. A lower bound of the NPV (fuel, grid energy and generator run-hour
/// maintenance are ≥ 0), and the NPV itself when the design runs no generator or grid pump.
/// Non-decreasing in tank size, array size and units (every unit cost is ≥ 0).
pub fn npv_lower_bound(s: &Scheme, d: &Design) -> f64 {
    let h = s.info.horizon_years.max(1);
    let i = s.costs.discount_rate;
    let mut capital = 0.0;
    let mut pw = 0.0;
    for (_, cap, life) in capital_items(s, d) {
        let (r, sv) = item_pw(cap, life, h as f64, i);
        capital += cap;
        pw += cap + r - sv;
    }
    let maint = fixed_maintenance_per_year(s, d, capital);
    let pwf: f64 = (1..=h)
        .map(|y| money::present_worth_factor_single(i, y as f64))
        .sum();
    pw + maint * pwf
}

/// True when the design's NPV needs no simulation (no generator or grid pump installed).
pub fn npv_needs_no_simulation(s: &Scheme, d: &Design) -> bool {
    !s.pumps
        .iter()
        .zip(&d.units)
        .any(|(p, n)| *n > 0 && matches!(p.drive, DriveKind::Generator | DriveKind::Grid))
}

/// Life-cycle cost with operation interpolated between the first and the horizon year.
pub fn life_cycle_cost(
    s: &Scheme,
    d: &Design,
    first: &Operation,
    last: &Operation,
    fuel_price_factor: f64,
) -> CostBreakdown {
    let h = s.info.horizon_years.max(1);
    let i = s.costs.discount_rate;
    let mut lines = Vec::new();
    let (mut capital, mut repl, mut salv) = (0.0, 0.0, 0.0);
    for (item, cap, life) in capital_items(s, d) {
        let (r, sv) = item_pw(cap, life, h as f64, i);
        capital += cap;
        repl += r;
        salv += sv;
        lines.push(CostLine {
            item,
            capital: cap,
            lifetime_years: life,
            present_worth: cap + r - sv,
        });
    }
    let fixed_maint = fixed_maintenance_per_year(s, d, capital);
    let fuel_price = s.generator.as_ref().map_or(0.0, |g| g.fuel_price_per_l) * fuel_price_factor;
    let tariff = s.grid.as_ref().map_or(0.0, |g| g.tariff_per_kwh);
    let (mut maint_pw, mut energy_pw) = (0.0, 0.0);
    let mut volumes = Vec::with_capacity(h as usize);
    for y in 1..=h {
        let f = if h > 1 {
            (y - 1) as f64 / (h - 1) as f64
        } else {
            1.0
        };
        let lerp = |a: f64, b: f64| a + f * (b - a);
        let pwf = money::present_worth_factor_single(i, y as f64);
        let run_h = lerp(first.generator_run_hours, last.generator_run_hours);
        maint_pw += (fixed_maint + s.costs.generator_maintenance_per_run_hour * run_h) * pwf;
        energy_pw += (lerp(first.fuel_l, last.fuel_l) * fuel_price
            + lerp(first.grid_kwh, last.grid_kwh) * tariff)
            * pwf;
        volumes.push(lerp(first.delivered_m3, last.delivered_m3));
    }
    let npv = capital + repl - salv + maint_pw + energy_pw;
    CostBreakdown {
        lines,
        capital,
        replacements_pw: repl,
        salvage_pw: salv,
        maintenance_pw: maint_pw,
        energy_pw,
        npv,
        annualised: npv * money::capital_recovery_factor(i, h as f64),
        levelised_per_m3: money::levelised_cost_per_m3(npv, &volumes, i),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn item_present_worth_matches_interest_tables() {
        // Newnan, Eschenbach & Lavelle, Engineering Economic Analysis, compound-interest
        // table for i = 10 % (from memory): P/F at 10 years = 0.3855. A 1000 item with a
        // 10-year life over a 15-year horizon is replaced once at year 10 (PW 385.5) and has
        // half its life left at year 15 (salvage 500 × P/F(10 %, 15) = 500 × 0.2394 = 119.7).
        let (r, s) = item_pw(1000.0, 10.0, 15.0, 0.10);
        assert!((r - 385.5).abs() < 0.1, "replacement PW {r}");
        assert!((s - 119.7).abs() < 0.1, "salvage PW {s}");
    }
}
