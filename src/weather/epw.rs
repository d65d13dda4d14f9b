//! Reader for EnergyPlus weather files (EPW): the 8 header records, then one comma-separated
//! row per hour. Owns only the EPW layout; calendar checks and year assembly are shared with
//! the CSV reader.
//!
//! Layout (EnergyPlus Auxiliary Programs, "Weather Converter Program", section "EnergyPlus
//! Weather File (EPW) Data Dictionary", NREL/EnergyPlus documentation): header records
//! LOCATION, DESIGN CONDITIONS, TYPICAL/EXTREME PERIODS, GROUND TEMPERATURES, HOLIDAYS/DAYLIGHT
//! SAVINGS, COMMENTS 1, COMMENTS 2, DATA PERIODS; data fields N1 Year, N2 Month, N3 Day,
//! N4 Hour, N5 Minute, A1 Data Source and Uncertainty Flags, N6 Dry Bulb Temperature (°C,
//! missing 99.9) — field 7 counting from 1 — … N13 Global Horizontal Radiation (Wh/m²,
//! missing 9999) — field 14. Values at or above the missing code count as missing (same
//! dictionary: "if values in this field are >= the following number, it is considered missing").
//! EPW hour `h` (1–24) is the hour ending at `h`:00, so it becomes hour-beginning index `h − 1`;
//! the global horizontal radiation in Wh/m² over that hour is its mean irradiance in W/m².

use super::{
    AIR_RANGE_C, CalendarHour, DAYS_IN_MONTH, GHI_RANGE_W_PER_M2, HourlyWeather, WeatherError,
    YearAssembler, check_range, check_text_size, parse_number,
};

/// Number of header records before the hourly rows.
const HEADER_LINES: usize = 8;
/// 0-based position of the dry-bulb temperature field (N6, field 7).
const DRY_BULB_FIELD: usize = 6;
/// 0-based position of the global horizontal radiation field (N13, field 14).
const GHI_FIELD: usize = 13;
/// Dry-bulb missing code, °C.
const DRY_BULB_MISSING_C: f64 = 99.9;
/// Global horizontal radiation missing code, Wh/m².
const GHI_MISSING_WH_PER_M2: f64 = 9999.0;

/// Parse the text of an EPW file into whole 365-day years of hourly GHI and air temperature.
///
/// Fields used: dry-bulb temperature (field 7, °C) and global horizontal radiation (field 14,
/// Wh/m² over the hour ending at the row's hour = mean W/m²). Rows dated 29 February are
/// dropped (their values are not checked). Hours must run consecutively from 1/1 hour 1 to
/// 12/31 hour 24, one or more times; only files with one record per hour are accepted. The year
/// of an [`super::HourlyYear`] is the rows' year field when all rows of that year agree, else
/// `None` (typical-year files mix years month by month).
/// Source: EnergyPlus Auxiliary Programs, EPW Data Dictionary (module doc).
/// Errors name `file_label` and the 1-based line.
pub fn parse_epw(text: &str, file_label: &str) -> Result<HourlyWeather, WeatherError> {
    check_text_size(text, file_label)?;
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let mut lines = text.lines().enumerate().map(|(i, l)| (i + 1, l));

    for n in 1..=HEADER_LINES {
        let Some((line, content)) = lines.next() else {
            return Err(WeatherError::BadHeader {
                file: file_label.to_string(),
                line: n,
                expected: format!("{HEADER_LINES} EPW header records (LOCATION … DATA PERIODS)"),
                found: "end of file".to_string(),
            });
        };
        check_header_line(line, content, file_label)?;
    }

    let mut years = YearAssembler::new();
    for (line, content) in lines {
        if content.trim().is_empty() {
            continue;
        }
        let fields: Vec<&str> = content.split(',').collect();
        if fields.len() <= GHI_FIELD {
            return Err(WeatherError::TooFewFields {
                file: file_label.to_string(),
                line,
                found: fields.len(),
                needed: GHI_FIELD + 1,
            });
        }
        let year = parse_int(fields[0], file_label, line, "year (field 1)")?;
        let month = parse_int(fields[1], file_label, line, "month (field 2)")?;
        let day = parse_int(fields[2], file_label, line, "day (field 3)")?;
        let hour = parse_int(fields[3], file_label, line, "hour (field 4)")?;
        let bad_date = || WeatherError::BadTimestamp {
            file: file_label.to_string(),
            line,
            text: format!("month {month}, day {day}, hour {hour}"),
            expected: "EPW rows need month 1–12, a day that exists in that month and hour 1–24",
        };
        if !(1..=12).contains(&month) || !(1..=24).contains(&hour) {
            return Err(bad_date());
        }
        let month = month as u32;
        let day_max = if month == 2 {
            29
        } else {
            DAYS_IN_MONTH[month as usize - 1]
        };
        if day < 1 || day as u32 > day_max {
            return Err(bad_date());
        }
        if month == 2 && day == 29 {
            continue;
        }
        let here = CalendarHour {
            month,
            day: day as u32,
            hour0: hour as u32 - 1,
        };
        let want = years.expected();
        if here != want {
            return Err(WeatherError::Gap {
                file: file_label.to_string(),
                line,
                expected: epw_hour(want),
                found: epw_hour(here),
            });
        }

        let air_c = value_field(
            fields[DRY_BULB_FIELD],
            DRY_BULB_MISSING_C,
            file_label,
            line,
            "dry-bulb temperature (field 7)",
        )?;
        let air_c = check_range(
            air_c,
            AIR_RANGE_C,
            "°C",
            file_label,
            line,
            "dry-bulb temperature (field 7)",
        )?;
        let ghi = value_field(
            fields[GHI_FIELD],
            GHI_MISSING_WH_PER_M2,
            file_label,
            line,
            "global horizontal radiation (field 14)",
        )?;
        let ghi = check_range(
            ghi,
            GHI_RANGE_W_PER_M2,
            "Wh/m² per hour",
            file_label,
            line,
            "global horizontal radiation (field 14)",
        )?;
        years.push(line, year as i32, ghi, air_c);
    }
    years.finish(file_label)
}

fn check_header_line(line: usize, content: &str, file_label: &str) -> Result<(), WeatherError> {
    let shortened = || content.chars().take(60).collect::<String>();
    let keyword = content.split(',').next().unwrap_or("").trim();
    if line == 1 && !keyword.eq_ignore_ascii_case("LOCATION") {
        return Err(WeatherError::BadHeader {
            file: file_label.to_string(),
            line,
            expected: "the EPW LOCATION record (\"LOCATION,city,region,country,…\")".to_string(),
            found: shortened(),
        });
    }
    if line == HEADER_LINES && keyword.eq_ignore_ascii_case("DATA PERIODS") {
        // DATA PERIODS, N1 number of periods, N2 records per hour, …
        let per_hour = content.split(',').nth(2).map(str::trim);
        if let Some(per_hour) = per_hour
            && let Ok(n) = per_hour.parse::<u32>()
            && n != 1
        {
            return Err(WeatherError::BadHeader {
                file: file_label.to_string(),
                line,
                expected: "1 record per hour in DATA PERIODS (sub-hourly EPW files are not read)"
                    .to_string(),
                found: shortened(),
            });
        }
    }
    Ok(())
}

fn parse_int(
    text: &str,
    file_label: &str,
    line: usize,
    field: &'static str,
) -> Result<i64, WeatherError> {
    text.trim()
        .parse::<i64>()
        .map_err(|_| WeatherError::NotNumber {
            file: file_label.to_string(),
            line,
            field,
            text: text.trim().to_string(),
        })
}

/// Parse a value field, refusing the missing code (values at or above it).
fn value_field(
    text: &str,
    missing_at_or_above: f64,
    file_label: &str,
    line: usize,
    field: &'static str,
) -> Result<f64, WeatherError> {
    let v = parse_number(text, file_label, line, field)?;
    if v >= missing_at_or_above {
        return Err(WeatherError::MissingValue {
            file: file_label.to_string(),
            line,
            field,
            text: text.trim().to_string(),
        });
    }
    Ok(v)
}

fn epw_hour(h: CalendarHour) -> String {
    format!("month {} day {} hour {}", h.month, h.day, h.hour0 + 1)
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

    fn good_text() -> String {
        std::fs::read_to_string(data("invented_site.epw")).unwrap()
    }

    #[test]
    fn full_epw_parses_to_8760_hours_with_written_values() {
        let w = read_weather_file(&data("invented_site.epw")).unwrap();
        assert_eq!(w.years.len(), 1);
        let y = &w.years[0];
        assert_eq!(y.year, Some(2019));
        assert_eq!(y.ghi_w_per_m2.len(), HOURS_IN_YEAR);
        assert_eq!(y.air_c.len(), HOURS_IN_YEAR);
        // Values written by tests/data/weather/make_weather_test_data.py (invented data; the
        // script prints these rows): EPW row "2019,1,1,1" is index 0, "2019,1,1,13" index 12,
        // "2019,6,21,12" index (171·24 + 11) = 4115, "2019,12,31,24" index 8759.
        assert_abs_diff_eq!(y.ghi_w_per_m2[0], 0.0);
        assert_abs_diff_eq!(y.air_c[0], 20.2, epsilon = 1e-12);
        assert_abs_diff_eq!(y.ghi_w_per_m2[12], 1020.0);
        assert_abs_diff_eq!(y.air_c[12], 29.7, epsilon = 1e-12);
        assert_abs_diff_eq!(y.ghi_w_per_m2[4115], 347.0);
        assert_abs_diff_eq!(y.air_c[4115], 20.9, epsilon = 1e-12);
        assert_abs_diff_eq!(y.ghi_w_per_m2[8759], 0.0);
        assert_abs_diff_eq!(y.air_c[8759], 21.3, epsilon = 1e-12);
        // Night hours are dark, every value within physical range.
        assert!(y.ghi_w_per_m2.iter().all(|&g| (0.0..=1500.0).contains(&g)));
    }

    #[test]
    fn leap_year_epw_drops_29_february() {
        // Rebuild the file as 2020 with 24 extra rows for 29 February inserted after 28 Feb.
        let text = good_text();
        let mut out = String::new();
        for (i, l) in text.lines().enumerate() {
            let l = if i >= 8 {
                l.replacen("2019,", "2020,", 1)
            } else {
                l.to_string()
            };
            out.push_str(&l);
            out.push('\n');
            if l.starts_with("2020,2,28,24,") {
                for h in 1..=24 {
                    out.push_str(&format!(
                        "2020,2,29,{h},0,?,-99,0,0,0,0,0,0,-5,0,0,0,0,0,0,0,0,0,0,0,0,9,0,0,0,0,0,0,0,0\n"
                    ));
                }
            }
        }
        let w = parse_epw(&out, "leap.epw").unwrap();
        assert_eq!(w.years[0].year, Some(2020));
        assert_eq!(w.years[0].ghi_w_per_m2.len(), HOURS_IN_YEAR);
        assert_eq!(
            w.years[0].ghi_w_per_m2,
            parse_epw(&text, "x").unwrap().years[0].ghi_w_per_m2
        );
    }

    #[test]
    fn two_year_epw_gives_two_years() {
        let text = good_text();
        let rows: String = text
            .lines()
            .skip(8)
            .map(|l| format!("{}\n", l.replacen("2019,", "2020,", 1)))
            .collect();
        let both = format!("{text}{rows}");
        let w = parse_epw(&both, "two.epw").unwrap();
        assert_eq!(w.years.len(), 2);
        assert_eq!(w.years[1].year, Some(2020));
        assert_eq!(w.years[0].air_c, w.years[1].air_c);
    }

    #[test]
    fn typical_year_with_mixed_years_has_no_year() {
        let text = good_text();
        let mixed: String = text
            .lines()
            .enumerate()
            .map(|(i, l)| {
                if i >= 8 && l.starts_with("2019,3,") {
                    format!("{}\n", l.replacen("2019,", "2007,", 1))
                } else {
                    format!("{l}\n")
                }
            })
            .collect();
        assert_eq!(parse_epw(&mixed, "tmy.epw").unwrap().years[0].year, None);
    }

    fn err_of(name: &str) -> WeatherError {
        read_weather_file(&data(name)).unwrap_err()
    }

    #[test]
    fn broken_files_name_line_and_problem() {
        let e = err_of("broken_gap.epw");
        assert!(matches!(e, WeatherError::Gap { line: 13, .. }), "{e}");
        assert!(e.to_string().contains("line 13"), "{e}");
        assert!(e.to_string().contains("month 1 day 1 hour 5"), "{e}");

        let e = err_of("broken_missing_temperature.epw");
        assert!(
            matches!(e, WeatherError::MissingValue { line: 20, .. }),
            "{e}"
        );
        assert!(
            e.to_string().contains("dry-bulb") && e.to_string().contains("99.9"),
            "{e}"
        );

        let e = err_of("broken_missing_ghi.epw");
        assert!(
            matches!(e, WeatherError::MissingValue { line: 21, .. }),
            "{e}"
        );
        assert!(e.to_string().contains("global horizontal"), "{e}");

        let e = err_of("broken_ghi_too_high.epw");
        assert!(
            matches!(e, WeatherError::ValueOutOfRange { line: 22, .. }),
            "{e}"
        );
        assert!(e.to_string().contains("1600"), "{e}");

        let e = err_of("broken_not_number.epw");
        assert!(matches!(e, WeatherError::NotNumber { line: 15, .. }), "{e}");
        assert!(e.to_string().contains("warm"), "{e}");

        let e = err_of("broken_few_fields.epw");
        assert!(
            matches!(
                e,
                WeatherError::TooFewFields {
                    line: 11,
                    found: 8,
                    ..
                }
            ),
            "{e}"
        );

        let e = err_of("broken_short.epw");
        assert!(
            matches!(
                e,
                WeatherError::WrongLength {
                    rows: 48,
                    last_line: 56,
                    ..
                }
            ),
            "{e}"
        );
        assert!(e.to_string().contains("8760"), "{e}");
    }

    #[test]
    fn bad_header_and_cold_air_and_bad_hour() {
        let text = good_text();
        let e = parse_epw(&text.replacen("LOCATION", "PLACE", 1), "h.epw").unwrap_err();
        assert!(matches!(e, WeatherError::BadHeader { line: 1, .. }), "{e}");

        let e = parse_epw("LOCATION,a\n", "h.epw").unwrap_err();
        assert!(matches!(e, WeatherError::BadHeader { line: 2, .. }), "{e}");

        let lines: Vec<&str> = text.lines().collect();
        let header = lines[..8].join("\n");
        let e = parse_epw(
            &format!("{header}\n2019,1,1,1,0,?,-75.0,0,0,0,0,0,0,0,0\n"),
            "c.epw",
        )
        .unwrap_err();
        assert!(
            matches!(e, WeatherError::ValueOutOfRange { line: 9, .. }),
            "{e}"
        );
        assert!(e.to_string().contains("-60"), "{e}");

        let e = parse_epw(
            &format!("{header}\n2019,1,1,25,0,?,5.0,0,0,0,0,0,0,0,0\n"),
            "c.epw",
        )
        .unwrap_err();
        assert!(
            matches!(e, WeatherError::BadTimestamp { line: 9, .. }),
            "{e}"
        );

        let sub_hourly = text.replacen("DATA PERIODS,1,1,", "DATA PERIODS,1,4,", 1);
        let e = parse_epw(&sub_hourly, "s.epw").unwrap_err();
        assert!(matches!(e, WeatherError::BadHeader { line: 8, .. }), "{e}");

        let e = parse_epw(&header, "empty.epw").unwrap_err();
        assert!(
            matches!(e, WeatherError::WrongLength { rows: 0, .. }),
            "{e}"
        );
    }
}
