//! Reader for the plain hourly weather CSV: header `timestamp,ghi_w_per_m2,air_c`, then one row
//! per hour `YYYY-MM-DDTHH:MM,<W/m²>,<°C>`. Owns only this layout; calendar checks and year
//! assembly are shared with the EPW reader.
//!
//! Timestamps are local standard time and mark the **beginning** of the hour the row
//! describes: `2023-06-01T12:00` is the hour 12:00–13:00, and its `ghi_w_per_m2` is the mean
//! global horizontal irradiance over that hour. Minutes must be `00`. The file holds one or more
//! whole calendar years, consecutive, hours in order; 29 February rows are dropped.

use super::{
    AIR_RANGE_C, CalendarHour, DAYS_IN_MONTH, GHI_RANGE_W_PER_M2, HourlyWeather, WeatherError,
    YearAssembler, check_range, check_text_size, is_leap_year, parse_number,
};

/// The required header line.
pub const CSV_HEADER: &str = "timestamp,ghi_w_per_m2,air_c";

const TIMESTAMP_FORM: &str =
    "write YYYY-MM-DDTHH:00 (hour-beginning, minutes 00), e.g. 2023-01-01T00:00";

/// Parse the text of an hourly weather CSV into whole 365-day years.
///
/// Columns: `timestamp` (ISO `YYYY-MM-DDTHH:MM`, hour-beginning), `ghi_w_per_m2` (mean global
/// horizontal irradiance over the hour, W/m², 0–1500), `air_c` (air temperature, °C, −60–60).
/// Extra columns after the third are ignored. Rows of 29 February (leap years only) are
/// dropped; every other hour from 1 January 00:00 to 31 December 23:00 must appear once, in
/// order, for each year, and the years must follow each other (2023 then 2024 …).
/// Source: this project's format (module doc). Errors name `file_label` and the 1-based line.
pub fn parse_csv(text: &str, file_label: &str) -> Result<HourlyWeather, WeatherError> {
    check_text_size(text, file_label)?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut lines = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l))
        .filter(|(_, l)| !l.trim().is_empty());

    match lines.next() {
        Some((line, content)) => {
            let normalised: String = content.chars().filter(|c| !c.is_whitespace()).collect();
            if !normalised.eq_ignore_ascii_case(CSV_HEADER) {
                return Err(WeatherError::BadHeader {
                    file: file_label.to_string(),
                    line,
                    expected: format!("the header \"{CSV_HEADER}\""),
                    found: content.chars().take(60).collect(),
                });
            }
        }
        None => {
            return Err(WeatherError::BadHeader {
                file: file_label.to_string(),
                line: 1,
                expected: format!("the header \"{CSV_HEADER}\""),
                found: "an empty file".to_string(),
            });
        }
    }

    let mut years = YearAssembler::new();
    let mut previous_year: Option<i32> = None;
    for (line, content) in lines {
        let fields: Vec<&str> = content.split(',').collect();
        if fields.len() < 3 {
            return Err(WeatherError::TooFewFields {
                file: file_label.to_string(),
                line,
                found: fields.len(),
                needed: 3,
            });
        }
        let stamp = fields[0].trim();
        let (year, here) = parse_timestamp(stamp).ok_or_else(|| WeatherError::BadTimestamp {
            file: file_label.to_string(),
            line,
            text: stamp.to_string(),
            expected: TIMESTAMP_FORM,
        })?;
        if here.month == 2 && here.day == 29 {
            if !is_leap_year(year) {
                return Err(WeatherError::BadTimestamp {
                    file: file_label.to_string(),
                    line,
                    text: stamp.to_string(),
                    expected: "29 February exists only in leap years",
                });
            }
            continue;
        }
        let want = years.expected();
        let want_year = years
            .current_year()
            .or(previous_year.map(|y| y + 1))
            .unwrap_or(year);
        if here != want || year != want_year {
            return Err(WeatherError::Gap {
                file: file_label.to_string(),
                line,
                expected: format_stamp(want_year, want),
                found: stamp.to_string(),
            });
        }
        let ghi = parse_number(fields[1], file_label, line, "ghi_w_per_m2")?;
        let ghi = check_range(
            ghi,
            GHI_RANGE_W_PER_M2,
            "W/m²",
            file_label,
            line,
            "ghi_w_per_m2",
        )?;
        let air = parse_number(fields[2], file_label, line, "air_c")?;
        let air = check_range(air, AIR_RANGE_C, "°C", file_label, line, "air_c")?;
        years.push(line, year, ghi, air);
        if here.is_last_of_year() {
            previous_year = Some(year);
        }
    }
    years.finish(file_label)
}

/// `YYYY-MM-DDTHH:00` → (year, calendar hour); `None` if malformed or not a real hour.
/// 29 February is accepted here (the caller checks the leap year).
fn parse_timestamp(s: &str) -> Option<(i32, CalendarHour)> {
    let b = s.as_bytes();
    if b.len() != 16 || b[4] != b'-' || b[7] != b'-' || b[10] != b'T' || b[13] != b':' {
        return None;
    }
    let num = |r: std::ops::Range<usize>| -> Option<u32> {
        let part = s.get(r)?;
        if part.bytes().all(|c| c.is_ascii_digit()) {
            part.parse().ok()
        } else {
            None
        }
    };
    let year = num(0..4)? as i32;
    let month = num(5..7)?;
    let day = num(8..10)?;
    let hour = num(11..13)?;
    let minute = num(14..16)?;
    if !(1..=12).contains(&month) || hour > 23 || minute != 0 {
        return None;
    }
    let day_max = if month == 2 {
        29
    } else {
        DAYS_IN_MONTH[month as usize - 1]
    };
    if day < 1 || day > day_max {
        return None;
    }
    Some((
        year,
        CalendarHour {
            month,
            day,
            hour0: hour,
        },
    ))
}

fn format_stamp(year: i32, h: CalendarHour) -> String {
    format!("{year:04}-{:02}-{:02}T{:02}:00", h.month, h.day, h.hour0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::weather::{HOURS_IN_YEAR, read_weather_file};
    use approx::assert_abs_diff_eq;
    use std::path::{Path, PathBuf};

    fn data(name: &str) -> PathBuf {
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/data/weather")
            .join(name)
    }

    #[test]
    fn two_year_csv_gives_two_years() {
        let w = read_weather_file(&data("invented_two_years.csv")).unwrap();
        assert_eq!(w.years.len(), 2);
        assert_eq!(w.years[0].year, Some(2023));
        assert_eq!(w.years[1].year, Some(2024));
        for y in &w.years {
            assert_eq!(y.ghi_w_per_m2.len(), HOURS_IN_YEAR);
            assert_eq!(y.air_c.len(), HOURS_IN_YEAR);
        }
        // Values written by make_weather_test_data.py (invented): 2023-01-01T12:00 (index 12),
        // 2024-03-01T00:00 (index 59·24 = 1416, the hour after 28 Feb 23:00 once 29 Feb is
        // dropped) and 2024-12-31T23:00 (index 8759).
        assert_abs_diff_eq!(w.years[0].ghi_w_per_m2[12], 1020.0);
        assert_abs_diff_eq!(w.years[0].air_c[12], 29.7, epsilon = 1e-12);
        assert_abs_diff_eq!(w.years[1].air_c[1416], 18.9, epsilon = 1e-12);
        assert_abs_diff_eq!(w.years[1].ghi_w_per_m2[1416], 0.0);
        assert_abs_diff_eq!(w.years[1].air_c[8759], 21.3, epsilon = 1e-12);
        // 28 Feb 23:00 of the leap year is index 58·24 + 23 = 1415, written as 20.1 °C.
        assert_abs_diff_eq!(w.years[1].air_c[1415], 20.1, epsilon = 1e-12);
        // The 29 February rows were written with -59.0 °C; none may survive.
        assert!(w.years[1].air_c.iter().all(|&t| t > -50.0));
    }

    fn err_of(name: &str) -> WeatherError {
        read_weather_file(&data(name)).unwrap_err()
    }

    #[test]
    fn broken_csv_files_name_line_and_problem() {
        let e = err_of("broken_header.csv");
        assert!(matches!(e, WeatherError::BadHeader { line: 1, .. }), "{e}");
        assert!(e.to_string().contains(CSV_HEADER), "{e}");

        let e = err_of("broken_out_of_order.csv");
        assert!(matches!(e, WeatherError::Gap { line: 6, .. }), "{e}");
        assert!(e.to_string().contains("2023-01-01T04:00"), "{e}");

        let e = err_of("broken_negative_ghi.csv");
        assert!(
            matches!(e, WeatherError::ValueOutOfRange { line: 9, .. }),
            "{e}"
        );
        assert!(e.to_string().contains("ghi_w_per_m2"), "{e}");

        let e = err_of("broken_hot_air.csv");
        assert!(
            matches!(e, WeatherError::ValueOutOfRange { line: 4, .. }),
            "{e}"
        );
        assert!(
            e.to_string().contains("air_c") && e.to_string().contains("61"),
            "{e}"
        );

        let e = err_of("broken_timestamp.csv");
        assert!(
            matches!(e, WeatherError::BadTimestamp { line: 3, .. }),
            "{e}"
        );
        assert!(e.to_string().contains("YYYY-MM-DDTHH"), "{e}");

        let e = err_of("broken_short.csv");
        assert!(
            matches!(
                e,
                WeatherError::WrongLength {
                    rows: 30,
                    last_line: 31,
                    ..
                }
            ),
            "{e}"
        );
    }

    #[test]
    fn inline_errors() {
        let e = parse_csv(
            "timestamp,ghi_w_per_m2,air_c\n2023-01-01T00:00,abc,5\n",
            "x.csv",
        )
        .unwrap_err();
        assert!(matches!(e, WeatherError::NotNumber { line: 2, .. }), "{e}");
        assert!(e.to_string().contains("abc"), "{e}");

        let e = parse_csv(
            "timestamp,ghi_w_per_m2,air_c\n2023-01-01T00:00,0\n",
            "x.csv",
        )
        .unwrap_err();
        assert!(
            matches!(
                e,
                WeatherError::TooFewFields {
                    line: 2,
                    found: 2,
                    ..
                }
            ),
            "{e}"
        );

        let e = parse_csv(
            "timestamp,ghi_w_per_m2,air_c\n2023-02-29T00:00,0,5\n",
            "x.csv",
        )
        .unwrap_err();
        assert!(
            matches!(e, WeatherError::BadTimestamp { line: 2, .. }),
            "{e}"
        );

        let e = parse_csv(
            "timestamp,ghi_w_per_m2,air_c\n2023-01-01T00:30,0,5\n",
            "x.csv",
        )
        .unwrap_err();
        assert!(matches!(e, WeatherError::BadTimestamp { .. }), "{e}");

        let e = parse_csv(
            "timestamp,ghi_w_per_m2,air_c\n2023-01-02T00:00,0,5\n",
            "x.csv",
        )
        .unwrap_err();
        assert!(matches!(e, WeatherError::Gap { line: 2, .. }), "{e}");
        assert!(e.to_string().contains("2023-01-01T00:00"), "{e}");

        let e = parse_csv("", "x.csv").unwrap_err();
        assert!(matches!(e, WeatherError::BadHeader { line: 1, .. }), "{e}");
    }

    #[test]
    fn years_must_follow_each_other() {
        let text = std::fs::read_to_string(data("invented_two_years.csv")).unwrap();
        let skipped = text.replace("2024-", "2025-");
        let e = parse_csv(&skipped, "skip.csv").unwrap_err();
        // First row of the second year is line 2 + 8760 (header on line 1).
        assert!(matches!(e, WeatherError::Gap { line: 8762, .. }), "{e}");
        assert!(e.to_string().contains("2024-01-01T00:00"), "{e}");
    }

    #[test]
    fn timestamp_parsing() {
        assert_eq!(
            parse_timestamp("2024-02-29T23:00"),
            Some((
                2024,
                CalendarHour {
                    month: 2,
                    day: 29,
                    hour0: 23
                }
            ))
        );
        assert_eq!(parse_timestamp("2024-04-31T00:00"), None);
        assert_eq!(parse_timestamp("2024-01-01T24:00"), None);
        assert_eq!(parse_timestamp("2024-1-01T00:00"), None);
        assert_eq!(parse_timestamp("2024-01-01 00:00"), None);
        assert_eq!(parse_timestamp("+024-01-01T00:00"), None);
    }
}
