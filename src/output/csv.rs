//! CSV of the hourly series: one row per hour, ISO date-hour, units in the column names.
//! Numbers are written in full (the shortest text that reads back as the same binary value), so
//! the rows' water balance closes as the engine's does: for every hour,
//! pumped − delivered − overflow = tank level at the end − tank level at the start.

use std::fmt::Write;

use crate::simulate::Hourly;
use crate::weather::{DAYS_IN_MONTH, HOURS_IN_YEAR};

/// Column names, units included.
pub const HOURLY_COLUMNS: &[&str] = &[
    "hour_start",
    "demand_m3",
    "pumped_m3",
    "delivered_m3",
    "shortfall_m3",
    "overflow_m3",
    "tank_level_start_m3",
    "tank_level_m3",
    "dynamic_water_level_m_below_ground",
    "pump_head_m",
    "pump_power_w",
    "pump_speed_ratio",
    "drive_power_available_w",
];

/// `YYYY-MM-DDTHH:00` for hour `h` of a 365-day year.
pub fn hour_stamp(year: i32, h: usize) -> String {
    let mut day = h / 24;
    let mut month = 0;
    while month < 11 && day >= DAYS_IN_MONTH[month] as usize {
        day -= DAYS_IN_MONTH[month] as usize;
        month += 1;
    }
    format!("{year:04}-{:02}-{:02}T{:02}:00", month + 1, day + 1, h % 24)
}

fn num(out: &mut String, v: f64) {
    if v.is_finite() {
        let _ = write!(out, ",{v}");
    } else {
        out.push(',');
    }
}

/// The hourly series as CSV text; `start_level_m3` is the tank level when the year begins.
pub fn hourly_csv(year: i32, start_level_m3: f64, h: &Hourly) -> String {
    let mut out = String::with_capacity(HOURS_IN_YEAR * 120);
    out.push_str(&HOURLY_COLUMNS.join(","));
    out.push('\n');
    for i in 0..h.demand_m3.len() {
        out.push_str(&hour_stamp(year, i));
        for v in [
            h.demand_m3[i],
            h.pumped_m3[i],
            h.delivered_m3[i],
            h.shortfall_m3[i],
            h.overflow_m3[i],
            if i == 0 {
                start_level_m3
            } else {
                h.tank_level_m3[i - 1]
            },
            h.tank_level_m3[i],
            h.dynamic_water_level_m[i],
            h.pump_head_m[i],
            h.pump_power_w[i],
            h.pump_speed_ratio[i],
            h.drive_power_available_w[i],
        ] {
            num(&mut out, v);
        }
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stamps_follow_the_calendar() {
        // analytic: hour 0 is 1 January 00:00; day 59 (0-based) is 1 March in a 365-day year
        assert_eq!(hour_stamp(2026, 0), "2026-01-01T00:00");
        assert_eq!(hour_stamp(2026, 59 * 24 + 5), "2026-03-01T05:00");
        assert_eq!(hour_stamp(2026, 8759), "2026-12-31T23:00");
    }
}
