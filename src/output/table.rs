//! Terminal tables (comfy-table) over results computed elsewhere. Units are in the headers.

use comfy_table::{ContentArrangement, Table, presets::UTF8_FULL_CONDENSED};

use crate::scheme::{Scheme, TankSearch};

/// A new table in the house style.
pub fn new_table(header: &[&str]) -> Table {
    let mut t = Table::new();
    t.load_preset(UTF8_FULL_CONDENSED)
        .set_content_arrangement(ContentArrangement::Disabled)
        .set_header(header.iter().copied());
    t
}

/// The short summary of a valid scheme printed by `check`.
pub fn scheme_summary(s: &Scheme) -> Table {
    let mut t = new_table(&["item", "value"]);
    t.add_row(vec!["scheme".to_string(), s.info.name.clone()]);
    t.add_row(vec![
        "place (lat, lon, elevation)".into(),
        format!(
            "{:.3}°, {:.3}°, {:.0} m",
            s.info.latitude_deg, s.info.longitude_deg, s.info.elevation_m
        ),
    ]);
    t.add_row(vec![
        "plan date, horizon".into(),
        format!(
            "{}, {} years (to {})",
            s.info.plan_date,
            s.info.horizon_years,
            s.horizon_year()
        ),
    ]);
    t.add_row(vec![
        "population (base year)".into(),
        format!("{:.0}", s.demand.population),
    ]);
    let pumps: Vec<String> = s
        .pumps
        .iter()
        .map(|p| {
            format!(
                "{} ({}, {} of up to {})",
                p.name,
                p.drive.name(),
                p.units.map_or("?".to_string(), |u| u.to_string()),
                p.max_units
            )
        })
        .collect();
    t.add_row(vec!["pumps".into(), pumps.join("; ")]);
    let tank = match (&s.tank.capacity_m3, &s.tank.search) {
        (Some(c), None) => format!("{c} m³"),
        (Some(c), Some(r)) => format!("{c} m³; search {}", search_text(r)),
        (None, Some(r)) => format!("search {}", search_text(r)),
        (None, None) => "-".into(),
    };
    t.add_row(vec!["tank".into(), tank]);
    t.add_row(vec!["warnings".into(), s.warnings.len().to_string()]);
    t
}

fn search_text(r: &TankSearch) -> String {
    match r {
        TankSearch::Range {
            min_m3,
            max_m3,
            step_m3,
        } => format!("{min_m3}–{max_m3} m³ by {step_m3} m³"),
        TankSearch::Sizes(v) => format!("{} standard sizes", v.len()),
    }
}
