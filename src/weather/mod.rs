//! Weather for the solar drive: synthetic daily clearness sequences and weather-file readers.
//!
//! This module owns (a) the 365-day calendar used by the simulation ([`DAYS_IN_MONTH`],
//! [`month_of_day`]), (b) daily clearness-index sequences — seeded synthetic years with
//! day-to-day persistence ([`synthetic_daily_clearness`]) and the "mean days" mode
//! ([`mean_days_clearness`]) — and (c) reading hourly weather files (EnergyPlus EPW and a plain
//! CSV) into whole 8760-hour years ([`read_weather_file`], [`parse_epw`], [`parse_csv`]).
//! Splitting daily totals into hours belongs to `physics::solar`, not here.
//!
//! Every year is 365 days; 29 February is dropped from leap-year files.

mod csv;
mod epw;
mod error;
pub mod rng;
mod synthetic;

pub use csv::parse_csv;
pub use epw::parse_epw;
pub use error::WeatherError;
pub use synthetic::{
    ClearnessModel, KT_LOWER_BOUND, KT_UPPER_BOUND, MONTH_MEAN_TOLERANCE, MONTHLY_MEAN_KT_MAX,
    MONTHLY_MEAN_KT_MIN, mean_days_clearness, synthetic_daily_clearness,
    synthetic_daily_clearness_with,
};

use std::path::Path;

/// Days in each month of the 365-day simulation year, January first.
pub const DAYS_IN_MONTH: [u32; 12] = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
/// Days in the simulation year.
pub const DAYS_IN_YEAR: usize = 365;
/// Hours in the simulation year (365 × 24).
pub const HOURS_IN_YEAR: usize = 8760;
/// English month names, January first (used in messages).
pub const MONTH_NAMES: [&str; 12] = [
    "January",
    "February",
    "March",
    "April",
    "May",
    "June",
    "July",
    "August",
    "September",
    "October",
    "November",
    "December",
];
/// Largest weather file accepted, in bytes (50 MiB).
pub const MAX_WEATHER_FILE_BYTES: u64 = 50 * 1024 * 1024;

/// Month (0 = January … 11 = December) of a 0-based day of the 365-day year.
///
/// Formula: the month whose cumulative day range contains `day_index mod 365`.
/// Source: Gregorian calendar without 29 February. Valid for any `day_index` (taken modulo 365,
/// so day indices running over several years work).
pub fn month_of_day(day_index: usize) -> usize {
    let mut d = (day_index % DAYS_IN_YEAR) as u32;
    for (m, &len) in DAYS_IN_MONTH.iter().enumerate() {
        if d < len {
            return m;
        }
        d -= len;
    }
    11
}

/// One 365-day year of hourly weather. Index `h` (0 … 8759) is the hour that begins at
/// `h` hours after 1 January 00:00 local standard time and lasts one hour.
#[derive(Debug, Clone, PartialEq)]
pub struct HourlyYear {
    /// Calendar year named in the file, or `None` when the rows of this year name different
    /// years (typical-year files stitch months from different years).
    pub year: Option<i32>,
    /// Mean global horizontal irradiance over each hour, W/m² (8760 values).
    pub ghi_w_per_m2: Vec<f64>,
    /// Air (dry-bulb) temperature for each hour, °C (8760 values).
    pub air_c: Vec<f64>,
}

/// Whole years of hourly weather, in file order.
#[derive(Debug, Clone, PartialEq)]
pub struct HourlyWeather {
    /// The years, each 8760 hours.
    pub years: Vec<HourlyYear>,
}

/// Read an hourly weather file, choosing the format by extension: `.epw` → [`parse_epw`],
/// `.csv` → [`parse_csv`] (case-insensitive).
///
/// Files larger than [`MAX_WEATHER_FILE_BYTES`] (50 MiB) are refused (at most that much plus
/// one byte is read), and a path that is not a regular file is refused and named.
/// Source: formats as documented on the two parsers. Validity: text files, hourly rows.
pub fn read_weather_file(path: &Path) -> Result<HourlyWeather, WeatherError> {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    let label = path.display().to_string();
    let parse: fn(&str, &str) -> Result<HourlyWeather, WeatherError> = match ext.as_deref() {
        Some("epw") => parse_epw,
        Some("csv") => parse_csv,
        _ => {
            return Err(WeatherError::UnknownExtension {
                file: path.to_path_buf(),
            });
        }
    };
    let io_err = |source| WeatherError::Io {
        file: path.to_path_buf(),
        source,
    };
    let bytes = match crate::input::read_limited(path, MAX_WEATHER_FILE_BYTES) {
        Ok(b) => b,
        Err(crate::input::ReadError::NotAFile(kind)) => {
            return Err(WeatherError::NotAFile { file: label, kind });
        }
        Err(crate::input::ReadError::TooLarge { .. }) => {
            return Err(WeatherError::FileTooLarge { file: label });
        }
        Err(crate::input::ReadError::Io(e)) => return Err(io_err(e)),
    };
    let text = String::from_utf8(bytes).map_err(|e| {
        io_err(std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            format!(
                "not UTF-8 text (invalid byte at offset {})",
                e.utf8_error().valid_up_to()
            ),
        ))
    })?;
    parse(&text, &label)
}

/// Refuse over-large text handed to a parser directly.
fn check_text_size(text: &str, file_label: &str) -> Result<(), WeatherError> {
    let bytes = text.len() as u64;
    if bytes > MAX_WEATHER_FILE_BYTES {
        return Err(WeatherError::FileTooLarge {
            file: file_label.to_string(),
        });
    }
    Ok(())
}

/// Position of an hour in the 365-day calendar: month 1–12, day 1–31, hour-beginning 0–23.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct CalendarHour {
    month: u32,
    day: u32,
    hour0: u32,
}

impl CalendarHour {
    const FIRST: Self = Self {
        month: 1,
        day: 1,
        hour0: 0,
    };

    fn next(self) -> Self {
        if self.hour0 < 23 {
            return Self {
                hour0: self.hour0 + 1,
                ..self
            };
        }
        if self.day < DAYS_IN_MONTH[self.month as usize - 1] {
            return Self {
                day: self.day + 1,
                hour0: 0,
                ..self
            };
        }
        if self.month < 12 {
            return Self {
                month: self.month + 1,
                day: 1,
                hour0: 0,
            };
        }
        Self::FIRST
    }

    fn is_last_of_year(self) -> bool {
        self.month == 12 && self.day == 31 && self.hour0 == 23
    }
}

/// Collects rows into years, checking that hours run consecutively from 1 January, first hour.
struct YearAssembler {
    years: Vec<HourlyYear>,
    expected: CalendarHour,
    current: HourlyYear,
    year_mixed: bool,
    rows: usize,
    last_line: usize,
}

impl YearAssembler {
    fn new() -> Self {
        Self {
            years: Vec::new(),
            expected: CalendarHour::FIRST,
            current: Self::empty_year(),
            year_mixed: false,
            rows: 0,
            last_line: 0,
        }
    }

    fn empty_year() -> HourlyYear {
        HourlyYear {
            year: None,
            ghi_w_per_m2: Vec::with_capacity(HOURS_IN_YEAR),
            air_c: Vec::with_capacity(HOURS_IN_YEAR),
        }
    }

    /// The hour this row must be; the caller formats it for messages.
    fn expected(&self) -> CalendarHour {
        self.expected
    }

    /// Year of the previous row of the year being assembled, if any.
    fn current_year(&self) -> Option<i32> {
        if self.current.ghi_w_per_m2.is_empty() {
            None
        } else {
            self.current.year
        }
    }

    /// Add a row already checked to be `self.expected()`.
    fn push(&mut self, line: usize, year: i32, ghi_w_per_m2: f64, air_c: f64) {
        if self.current.ghi_w_per_m2.is_empty() {
            self.current.year = Some(year);
            self.year_mixed = false;
        } else if self.current.year != Some(year) {
            self.year_mixed = true;
        }
        self.current.ghi_w_per_m2.push(ghi_w_per_m2);
        self.current.air_c.push(air_c);
        self.rows += 1;
        self.last_line = line;
        let done = self.expected.is_last_of_year();
        self.expected = self.expected.next();
        if done {
            let mut year = std::mem::replace(&mut self.current, Self::empty_year());
            if self.year_mixed {
                year.year = None;
            }
            self.years.push(year);
        }
    }

    fn finish(self, file_label: &str) -> Result<HourlyWeather, WeatherError> {
        if self.years.is_empty() || !self.current.ghi_w_per_m2.is_empty() {
            return Err(WeatherError::WrongLength {
                file: file_label.to_string(),
                rows: self.rows,
                last_line: self.last_line,
            });
        }
        Ok(HourlyWeather { years: self.years })
    }
}

/// Parse a field as a finite number or report which field and line.
fn parse_number(
    text: &str,
    file_label: &str,
    line: usize,
    field: &'static str,
) -> Result<f64, WeatherError> {
    match text.trim().parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        _ => Err(WeatherError::NotNumber {
            file: file_label.to_string(),
            line,
            field,
            text: text.trim().to_string(),
        }),
    }
}

/// Plausible range of hourly mean global horizontal irradiance, W/m² (solar constant ≈ 1361
/// W/m²; ground-level hourly means above ~1500 W/m² do not occur — common practice).
const GHI_RANGE_W_PER_M2: (f64, f64) = (0.0, 1500.0);
/// Plausible range of air temperature, °C (common practice).
const AIR_RANGE_C: (f64, f64) = (-60.0, 60.0);

fn check_range(
    value: f64,
    range: (f64, f64),
    unit: &'static str,
    file_label: &str,
    line: usize,
    field: &'static str,
) -> Result<f64, WeatherError> {
    if value < range.0 || value > range.1 {
        return Err(WeatherError::ValueOutOfRange {
            file: file_label.to_string(),
            line,
            field,
            value,
            min: range.0,
            max: range.1,
            unit,
        });
    }
    Ok(value)
}

fn is_leap_year(year: i32) -> bool {
    (year % 4 == 0 && year % 100 != 0) || year % 400 == 0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn calendar_has_365_days_and_month_boundaries() {
        // Gregorian calendar, common year.
        assert_eq!(DAYS_IN_MONTH.iter().sum::<u32>(), 365);
        assert_eq!(month_of_day(0), 0);
        assert_eq!(month_of_day(30), 0);
        assert_eq!(month_of_day(31), 1);
        assert_eq!(month_of_day(58), 1);
        assert_eq!(month_of_day(59), 2);
        assert_eq!(month_of_day(180), 5); // 30 June is day 181 of a common year
        assert_eq!(month_of_day(181), 6);
        assert_eq!(month_of_day(364), 11);
        assert_eq!(month_of_day(365), 0);
    }

    #[test]
    fn calendar_hour_walks_a_year() {
        let mut h = CalendarHour::FIRST;
        for _ in 0..HOURS_IN_YEAR - 1 {
            h = h.next();
        }
        assert!(h.is_last_of_year());
        assert_eq!(h.next(), CalendarHour::FIRST);
    }

    #[test]
    fn leap_years() {
        // Gregorian rule.
        assert!(is_leap_year(2024));
        assert!(is_leap_year(2000));
        assert!(!is_leap_year(1900));
        assert!(!is_leap_year(2023));
    }

    #[test]
    fn unknown_extension_and_missing_file() {
        let e = read_weather_file(Path::new("weather.txt")).unwrap_err();
        assert!(matches!(e, WeatherError::UnknownExtension { .. }));
        assert!(e.to_string().contains(".epw"));
        let e = read_weather_file(Path::new("/nonexistent/dir/site.epw")).unwrap_err();
        assert!(matches!(e, WeatherError::Io { .. }));
    }

    #[test]
    fn oversize_file_refused() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("big.csv");
        let f = std::fs::File::create(&path).unwrap();
        f.set_len(MAX_WEATHER_FILE_BYTES + 1).unwrap();
        let e = read_weather_file(&path).unwrap_err();
        assert!(matches!(e, WeatherError::FileTooLarge { .. }));
        assert!(
            e.to_string().contains("50 MiB limit (52428800 bytes)"),
            "{e}"
        );
    }
}
