//! Typed errors of the weather module: bad generator inputs and bad weather files. Every
//! message says what is wrong, where (file and line for files) and what would be right.

use std::path::PathBuf;

/// Everything that can go wrong making or reading weather.
#[derive(Debug, thiserror::Error)]
pub enum WeatherError {
    /// A monthly mean clearness index outside (0.05, 0.8).
    #[error(
        "monthly mean clearness index for {month} is {value}; it must lie between 0.05 and 0.8 \
         (it is daily global horizontal divided by daily extraterrestrial radiation, not kWh/m²/day)"
    )]
    MonthlyMeanOutOfRange {
        /// Month name, e.g. "March".
        month: &'static str,
        /// The value given.
        value: f64,
    },
    /// The lag-1 coefficient of the clearness model is outside [0, 0.9].
    #[error(
        "lag-1 autocorrelation {value} of the clearness model must lie between 0 and 0.9 (0.3 is typical)"
    )]
    Lag1OutOfRange {
        /// The value given.
        value: f64,
    },
    /// Zero years were asked for.
    #[error("asked for 0 synthetic years; ask for at least 1")]
    NoYears,
    /// The file could not be opened or read.
    #[error("cannot read weather file {file}: {}; check the path and that it is a text file", crate::input::plain_io(.source))]
    Io {
        /// The file.
        file: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// The path names a folder, a pipe, a device or a socket.
    #[error(
        "weather file {file} is {kind}, not a regular file; give the path of an .epw or .csv file"
    )]
    NotAFile {
        /// The file.
        file: String,
        /// What it is, in words.
        kind: &'static str,
    },
    /// The file is larger than the 50 MiB limit.
    #[error(
        "weather file {file} is larger than the 50 MiB limit (52428800 bytes); an hourly file for \
         30 years is about 30 MB, so cut it to whole years of hourly rows"
    )]
    FileTooLarge {
        /// The file.
        file: String,
    },
    /// The extension is neither `.epw` nor `.csv`.
    #[error(
        "weather file {file} must end in .epw (EnergyPlus weather) or .csv (timestamp,ghi_w_per_m2,air_c)"
    )]
    UnknownExtension {
        /// The file.
        file: PathBuf,
    },
    /// A header line is not what the format requires.
    #[error("{file} line {line}: expected {expected}, found \"{found}\"")]
    BadHeader {
        /// File label.
        file: String,
        /// 1-based line number.
        line: usize,
        /// What the line should be.
        expected: String,
        /// What it is (shortened).
        found: String,
    },
    /// A data row has too few comma-separated fields.
    #[error("{file} line {line}: {found} comma-separated fields, need at least {needed}")]
    TooFewFields {
        /// File label.
        file: String,
        /// 1-based line number.
        line: usize,
        /// Fields found.
        found: usize,
        /// Fields needed.
        needed: usize,
    },
    /// A field that must be a number is not.
    #[error(
        "{file} line {line}: {field} is \"{text}\", which is not a number; write a plain decimal such as 12.5"
    )]
    NotNumber {
        /// File label.
        file: String,
        /// 1-based line number.
        line: usize,
        /// Field name.
        field: &'static str,
        /// The text found.
        text: String,
    },
    /// A field holds the format's missing-data code.
    #[error(
        "{file} line {line}: {field} is {text}, the missing-data code; fill the gap with a measured or estimated value"
    )]
    MissingValue {
        /// File label.
        file: String,
        /// 1-based line number.
        line: usize,
        /// Field name.
        field: &'static str,
        /// The text found.
        text: String,
    },
    /// A value is physically impossible.
    #[error(
        "{file} line {line}: {field} is {value}, outside the possible range {min} to {max} {unit}"
    )]
    ValueOutOfRange {
        /// File label.
        file: String,
        /// 1-based line number.
        line: usize,
        /// Field name.
        field: &'static str,
        /// The value found.
        value: f64,
        /// Lowest possible value.
        min: f64,
        /// Highest possible value.
        max: f64,
        /// Unit of the range.
        unit: &'static str,
    },
    /// A timestamp or date field is malformed or names no real date/hour.
    #[error("{file} line {line}: bad date/time \"{text}\"; {expected}")]
    BadTimestamp {
        /// File label.
        file: String,
        /// 1-based line number.
        line: usize,
        /// The text found.
        text: String,
        /// What a good one looks like.
        expected: &'static str,
    },
    /// Hours are missing, repeated or out of order.
    #[error(
        "{file} line {line}: expected the hour {expected} next but found {found}; rows must be consecutive hours of whole years, with none missing or repeated"
    )]
    Gap {
        /// File label.
        file: String,
        /// 1-based line number.
        line: usize,
        /// The hour that should come next.
        expected: String,
        /// The hour found.
        found: String,
    },
    /// The number of hourly rows is not a whole number of 365-day years.
    #[error(
        "{file}: {rows} hourly rows (after dropping 29 February), the last on line {last_line}; \
         need whole years of 8760 rows each, ending at 31 December, last hour"
    )]
    WrongLength {
        /// File label.
        file: String,
        /// Hourly rows kept.
        rows: usize,
        /// Line of the last data row (0 if none).
        last_line: usize,
    },
}
