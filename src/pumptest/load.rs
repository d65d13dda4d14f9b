//! Reading a pumping-test file: a small YAML file for the borehole that names one CSV record
//! per test. Every problem is reported as `FILE:LINE:COLUMN: field: what is wrong; what is
//! right`; readings that are left out (a blank reading, a reading before pumping started)
//! are listed as notes, never dropped silently.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::error::Problem;
use crate::scheme::load::{LineMap, describe_serde_error};

/// Largest pumping-test file (YAML or CSV) read, bytes.
pub const MAX_FILE_BYTES: u64 = 20 * 1024 * 1024;
/// Most readings in one CSV record.
pub const MAX_ROWS: usize = 200_000;

/// Problems found in the pumping-test files, each with its file.
#[derive(Debug, Clone, Default)]
pub struct PumpTestError {
    pub problems: Vec<(String, Problem)>,
}

impl std::fmt::Display for PumpTestError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let n = self.problems.len();
        writeln!(
            f,
            "pumping test: {n} problem{} found",
            if n == 1 { "" } else { "s" }
        )?;
        for (file, p) in &self.problems {
            write!(f, "  {}", located(file, p))?;
            writeln!(f)?;
        }
        Ok(())
    }
}

impl std::error::Error for PumpTestError {}

/// `file:line:col: field: message`.
pub fn located(file: &str, p: &Problem) -> String {
    let mut s = file.to_string();
    if let Some(l) = p.line {
        s.push_str(&format!(":{l}"));
        if let Some(c) = p.column {
            s.push_str(&format!(":{c}"));
        }
    }
    s.push_str(": ");
    if !p.field.is_empty() {
        s.push_str(&p.field);
        s.push_str(": ");
    }
    s.push_str(&p.message);
    s
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    borehole: RawBorehole,
    tests: Vec<RawTest>,
    #[serde(default)]
    analysis: RawAnalysis,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBorehole {
    name: String,
    diameter_mm: f64,
    static_water_level_m: f64,
    pump_intake_depth_m: f64,
    submergence_margin_m: Option<f64>,
    datum_above_ground_m: Option<f64>,
    depth_m: Option<f64>,
    screen_top_m: Option<f64>,
    screen_bottom_m: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawTest {
    name: String,
    kind: String,
    file: String,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawAnalysis {
    pumping_days: Option<f64>,
    max_fraction_of_tested: Option<f64>,
    step_elapsed_min: Option<f64>,
}

/// The borehole as the test file describes it, SI units, depths below ground.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Borehole {
    pub name: String,
    pub diameter_m: f64,
    /// Static water level below ground, m.
    pub static_depth_m: f64,
    /// Pump intake below ground, m.
    pub intake_depth_m: f64,
    /// Water kept above the intake, m.
    pub submergence_margin_m: f64,
    /// Height of the measuring point (datum) above ground, m.
    pub datum_above_ground_m: f64,
    pub depth_m: Option<f64>,
    pub screen_top_m: Option<f64>,
    pub screen_bottom_m: Option<f64>,
}

/// Analysis settings, with the defaults stated in the README.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Settings {
    /// Days of continuous pumping for the safe-yield drawdown check.
    pub pumping_days: f64,
    /// Cap on the safe yield as a fraction of the tested rate.
    pub max_fraction_of_tested: f64,
    /// Common elapsed time in every step for Hantush–Bierschenk, s (None: the longest common).
    pub step_elapsed_s: Option<f64>,
}

/// Default days of continuous pumping in the safe-yield rule.
pub const DEFAULT_PUMPING_DAYS: f64 = 30.0;
/// Default cap on the safe yield: this fraction of the tested rate (common practice 0.6–0.8).
pub const DEFAULT_MAX_FRACTION: f64 = 0.7;
/// Default water kept above the intake, m (the scheme file's default).
pub const DEFAULT_SUBMERGENCE_M: f64 = 3.0;

/// Kind of test.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TestKind {
    Step,
    ConstantRate,
}

/// One reading, drawdown already relative to the well's rest level.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Reading {
    /// Time since pumping started, s.
    pub time_s: f64,
    /// Drawdown below the rest level, m.
    pub drawdown_m: f64,
    /// Line in the CSV file.
    pub line: usize,
}

/// The readings of one well in one test.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct WellRecord {
    /// Distance from the pumped well, m; None for the pumped well itself.
    pub distance_m: Option<f64>,
    pub readings: Vec<Reading>,
}

/// One test: its pumping schedule and the wells read.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct TestRecord {
    pub name: String,
    pub kind: TestKind,
    /// The CSV file as named in the YAML file.
    pub file: String,
    /// Rate changes: (time s, rate m³/s from then on, line), in time order.
    pub schedule: Vec<(f64, f64, usize)>,
    pub wells: Vec<WellRecord>,
    /// Column names of the CSV, which carry the units.
    pub columns: Vec<String>,
}

/// A pumping-test file read and checked.
#[derive(Debug, Clone, PartialEq)]
pub struct PumpTest {
    /// The YAML file as the user named it.
    pub label: String,
    pub borehole: Borehole,
    pub settings: Settings,
    pub tests: Vec<TestRecord>,
    /// Readings left out and other handling the user should see.
    pub notes: Vec<String>,
    /// Every file read, (name as given, bytes), the YAML first, for embedding.
    pub files: Vec<(String, Vec<u8>)>,
}

fn read_limited(path: &Path) -> std::io::Result<Vec<u8>> {
    let meta = std::fs::metadata(path)?;
    if meta.len() > MAX_FILE_BYTES {
        return Err(std::io::Error::other(format!(
            "the file has {} bytes; a pumping-test file may have at most {MAX_FILE_BYTES}",
            meta.len()
        )));
    }
    std::fs::read(path)
}

fn problem(field: &str, line: Option<usize>, column: Option<usize>, message: String) -> Problem {
    Problem {
        field: field.to_string(),
        line,
        column,
        message,
    }
}

/// Reads a pumping-test YAML file and the CSV records it names (relative to its folder).
pub fn load_file(path: &Path) -> Result<PumpTest, PumpTestError> {
    let label = path.display().to_string();
    let bytes = read_limited(path).map_err(|e| PumpTestError {
        problems: vec![(
            label.clone(),
            problem("", None, None, format!("cannot read the file: {e}")),
        )],
    })?;
    let base = path.parent().map(Path::to_path_buf).unwrap_or_default();
    load_bytes(&bytes, &label, &base, &|name: &str| {
        let p: PathBuf = base.join(name);
        read_limited(&p).map_err(|e| e.to_string())
    })
}

/// Reads a pumping-test YAML text; `read` fetches each CSV by the name the YAML gives.
pub fn load_bytes(
    bytes: &[u8],
    label: &str,
    _base: &Path,
    read: &dyn Fn(&str) -> Result<Vec<u8>, String>,
) -> Result<PumpTest, PumpTestError> {
    let fail = |p: Problem| PumpTestError {
        problems: vec![(label.to_string(), p)],
    };
    let text = std::str::from_utf8(bytes).map_err(|e| {
        fail(problem(
            "",
            None,
            None,
            format!("the file is not UTF-8 text ({e}); save it as UTF-8"),
        ))
    })?;
    let lines = LineMap::build(text);
    let value: serde_yaml::Value = serde_yaml::from_str(text).map_err(|e| {
        let (l, c) = e
            .location()
            .map(|l| (Some(l.line()), Some(l.column())))
            .unwrap_or((None, None));
        fail(problem("", l, c, format!("not valid YAML: {e}")))
    })?;
    let raw: RawFile = serde_path_to_error::deserialize(value).map_err(|e| {
        let path = e.path().to_string();
        let path = if path == "." { String::new() } else { path };
        let (p, _) = describe_serde_error(
            &path,
            &e.inner().to_string(),
            &lines,
            "the file needs `borehole:` (name, diameter_mm, static_water_level_m, pump_intake_depth_m) and `tests:` (name, kind, file for each)",
        );
        fail(p)
    })?;
    let mut problems: Vec<(String, Problem)> = Vec::new();
    let mut bad = |field: &str, message: String| {
        let (l, c) = lines
            .locate(field)
            .map_or((None, None), |(l, c)| (Some(l), Some(c)));
        problems.push((label.to_string(), problem(field, l, c, message)));
    };
    let b = &raw.borehole;
    let in_range = |v: f64, lo: f64, hi: f64| v.is_finite() && v >= lo && v <= hi;
    if !in_range(b.diameter_mm, 50.0, 1000.0) {
        bad(
            "borehole.diameter_mm",
            format!(
                "{} is outside 50 to 1000 mm; give the internal diameter of the borehole in mm",
                b.diameter_mm
            ),
        );
    }
    if !in_range(b.static_water_level_m, 0.0, 1000.0) {
        bad(
            "borehole.static_water_level_m",
            format!(
                "{} is outside 0 to 1000 m; give the rest water level in m below ground",
                b.static_water_level_m
            ),
        );
    }
    let margin = b.submergence_margin_m.unwrap_or(DEFAULT_SUBMERGENCE_M);
    if !in_range(margin, 0.0, 50.0) {
        bad(
            "borehole.submergence_margin_m",
            format!("{margin} is outside 0 to 50 m; give the water to keep above the intake"),
        );
    }
    if !in_range(b.pump_intake_depth_m, 0.0, 1000.0)
        || b.pump_intake_depth_m <= b.static_water_level_m + margin
    {
        bad(
            "borehole.pump_intake_depth_m",
            format!(
                "{} m must lie below the static level plus the submergence margin ({} m) and at most 1000 m",
                b.pump_intake_depth_m,
                b.static_water_level_m + margin
            ),
        );
    }
    let datum = b.datum_above_ground_m.unwrap_or(0.0);
    if !in_range(datum, -50.0, 50.0) {
        bad(
            "borehole.datum_above_ground_m",
            format!(
                "{datum} is outside −50 to 50 m; give the height of the measuring point above ground"
            ),
        );
    }
    for (key, v) in [
        ("borehole.depth_m", b.depth_m),
        ("borehole.screen_top_m", b.screen_top_m),
        ("borehole.screen_bottom_m", b.screen_bottom_m),
    ] {
        if let Some(v) = v
            && !in_range(v, 0.0, 2000.0)
        {
            bad(key, format!("{v} is outside 0 to 2000 m below ground"));
        }
    }
    if let (Some(t), Some(bt)) = (b.screen_top_m, b.screen_bottom_m)
        && bt <= t
    {
        bad(
            "borehole.screen_bottom_m",
            format!("{bt} m is not below the screen top ({t} m); give depths below ground"),
        );
    }
    let a = &raw.analysis;
    let days = a.pumping_days.unwrap_or(DEFAULT_PUMPING_DAYS);
    if !in_range(days, 0.01, 3650.0) {
        bad(
            "analysis.pumping_days",
            format!("{days} is outside 0.01 to 3650 days"),
        );
    }
    let frac = a.max_fraction_of_tested.unwrap_or(DEFAULT_MAX_FRACTION);
    if !(frac.is_finite() && frac > 0.0 && frac <= 1.0) {
        bad(
            "analysis.max_fraction_of_tested",
            format!("{frac} must be above 0 and at most 1"),
        );
    }
    if let Some(m) = a.step_elapsed_min
        && !in_range(m, 0.01, 10_000.0)
    {
        bad(
            "analysis.step_elapsed_min",
            format!("{m} is outside 0.01 to 10000 minutes"),
        );
    }
    if raw.tests.is_empty() {
        bad(
            "tests",
            "no tests are listed; add at least one with name, kind (step or constant_rate) and file".into(),
        );
    }
    let mut names = BTreeMap::new();
    let mut kinds = Vec::new();
    for (i, t) in raw.tests.iter().enumerate() {
        let kind = match t.kind.as_str() {
            "step" => Some(TestKind::Step),
            "constant_rate" => Some(TestKind::ConstantRate),
            other => {
                bad(
                    &format!("tests[{i}].kind"),
                    format!("`{other}` is not a kind of test; use `step` or `constant_rate`"),
                );
                None
            }
        };
        kinds.push(kind);
        if let Some(j) = names.insert(t.name.clone(), i) {
            bad(
                &format!("tests[{i}].name"),
                format!(
                    "the name `{}` is already used by test {}; give each test its own name",
                    t.name,
                    j + 1
                ),
            );
        }
        if t.file.trim().is_empty() {
            bad(
                &format!("tests[{i}].file"),
                "is empty; name the CSV file with the readings".into(),
            );
        }
    }
    let borehole = Borehole {
        name: b.name.clone(),
        diameter_m: b.diameter_mm / 1000.0,
        static_depth_m: b.static_water_level_m,
        intake_depth_m: b.pump_intake_depth_m,
        submergence_margin_m: margin,
        datum_above_ground_m: datum,
        depth_m: b.depth_m,
        screen_top_m: b.screen_top_m,
        screen_bottom_m: b.screen_bottom_m,
    };
    if !problems.is_empty() {
        return Err(PumpTestError { problems });
    }
    let mut files = vec![(label.to_string(), bytes.to_vec())];
    let mut tests = Vec::new();
    let mut notes = Vec::new();
    let mut all_problems = Vec::new();
    let mut cache: BTreeMap<String, Vec<u8>> = BTreeMap::new();
    for (i, t) in raw.tests.iter().enumerate() {
        let Some(kind) = kinds[i] else { continue };
        let csv = match cache.get(&t.file) {
            Some(b) => b.clone(),
            None => match read(&t.file) {
                Ok(b) => {
                    cache.insert(t.file.clone(), b.clone());
                    files.push((t.file.clone(), b.clone()));
                    b
                }
                Err(e) => {
                    let (l, c) = lines
                        .locate(&format!("tests[{i}].file"))
                        .map_or((None, None), |(l, c)| (Some(l), Some(c)));
                    all_problems.push((
                        label.to_string(),
                        problem(
                            &format!("tests[{i}].file"),
                            l,
                            c,
                            format!(
                                "cannot read `{}`: {e}; name a CSV file beside the YAML file",
                                t.file
                            ),
                        ),
                    ));
                    continue;
                }
            },
        };
        match parse_csv(&csv, &t.file, &t.name, kind, &borehole) {
            Ok((rec, mut n)) => {
                tests.push(rec);
                notes.append(&mut n);
            }
            Err(mut ps) => all_problems.append(&mut ps),
        }
    }
    if !all_problems.is_empty() {
        return Err(PumpTestError {
            problems: all_problems,
        });
    }
    // Units that differ between files are converted; say so.
    let rate_units: BTreeMap<String, Vec<String>> =
        tests.iter().fold(BTreeMap::new(), |mut m, t| {
            if let Some(u) = t.columns.iter().find(|c| c.starts_with("rate_")) {
                m.entry(u.clone())
                    .or_insert_with(Vec::new)
                    .push(t.file.clone());
            }
            m
        });
    if rate_units.len() > 1 {
        let parts: Vec<String> = rate_units
            .iter()
            .map(|(u, f)| format!("{u} in {}", f.join(", ")))
            .collect();
        notes.push(format!(
            "rates are given in different units ({}); each is converted by its column name to m³/h",
            parts.join("; ")
        ));
    }
    Ok(PumpTest {
        label: label.to_string(),
        borehole,
        settings: Settings {
            pumping_days: days,
            max_fraction_of_tested: frac,
            step_elapsed_s: a.step_elapsed_min.map(|m| m * 60.0),
        },
        tests,
        notes,
        files,
    })
}

/// Recognised columns: (name, factor to SI).
const TIME_COLUMNS: [(&str, f64); 3] = [
    ("elapsed_s", 1.0),
    ("elapsed_min", 60.0),
    ("elapsed_h", 3600.0),
];
const RATE_COLUMNS: [(&str, f64); 3] = [
    ("rate_m3_per_h", 1.0 / 3600.0),
    ("rate_l_per_s", 1.0 / 1000.0),
    ("rate_m3_per_day", 1.0 / 86_400.0),
];
const READING_COLUMNS: [&str; 2] = ["level_m", "drawdown_m"];
const OTHER_COLUMNS: [&str; 2] = ["distance_m", "test"];

/// Splits a CSV line into (1-based column, trimmed cell).
fn cells(line: &str) -> Vec<(usize, &str)> {
    let mut out = Vec::new();
    let mut start = 0;
    for (i, ch) in line.char_indices() {
        if ch == ',' {
            out.push((start, &line[start..i]));
            start = i + 1;
        }
    }
    out.push((start, &line[start..]));
    out.into_iter()
        .map(|(s, c)| {
            let lead = c.len() - c.trim_start().len();
            (line[..s + lead].chars().count() + 1, c.trim())
        })
        .collect()
}

/// One well's raw readings: distance, and (time s, value, line, column) per reading.
type RawWell = (Option<f64>, Vec<(f64, f64, usize, usize)>);

type CsvResult = Result<(TestRecord, Vec<String>), Vec<(String, Problem)>>;

/// Parses one CSV record for one test.
fn parse_csv(bytes: &[u8], file: &str, test: &str, kind: TestKind, bh: &Borehole) -> CsvResult {
    let err = |line: Option<usize>, col: Option<usize>, field: &str, msg: String| {
        vec![(file.to_string(), problem(field, line, col, msg))]
    };
    let text = std::str::from_utf8(bytes).map_err(|e| {
        err(
            None,
            None,
            "",
            format!("the file is not UTF-8 text ({e}); save it as UTF-8 CSV"),
        )
    })?;
    let mut rows = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l.trim_end_matches('\r')))
        .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'));
    let Some((hline, header)) = rows.next() else {
        return Err(err(
            None,
            None,
            "",
            "the file has no header line; start with e.g. `elapsed_min,rate_m3_per_h,level_m`"
                .into(),
        ));
    };
    let head = cells(header);
    let mut time_col = None;
    let mut rate_col = None;
    let mut read_col = None;
    let mut dist_col = None;
    let mut test_col = None;
    let mut problems = Vec::new();
    for (idx, (col, name)) in head.iter().enumerate() {
        if let Some((_, f)) = TIME_COLUMNS.iter().find(|(n, _)| n == name) {
            if time_col.is_some() {
                problems.push((
                    file.to_string(),
                    problem(
                        name,
                        Some(hline),
                        Some(*col),
                        "a second time column; keep one of elapsed_s, elapsed_min, elapsed_h"
                            .into(),
                    ),
                ));
            }
            time_col = Some((idx, *f));
        } else if let Some((_, f)) = RATE_COLUMNS.iter().find(|(n, _)| n == name) {
            if rate_col.is_some() {
                problems.push((file.to_string(), problem(name, Some(hline), Some(*col), "a second rate column; keep one of rate_m3_per_h, rate_l_per_s, rate_m3_per_day".into())));
            }
            rate_col = Some((idx, *f));
        } else if READING_COLUMNS.contains(name) {
            if read_col.is_some() {
                problems.push((
                    file.to_string(),
                    problem(
                        name,
                        Some(hline),
                        Some(*col),
                        "a second reading column; keep one of level_m or drawdown_m".into(),
                    ),
                ));
            }
            read_col = Some((idx, *name == "level_m"));
        } else if *name == "distance_m" {
            dist_col = Some(idx);
        } else if *name == "test" {
            test_col = Some(idx);
        } else {
            let all: Vec<&str> = TIME_COLUMNS
                .iter()
                .map(|c| c.0)
                .chain(RATE_COLUMNS.iter().map(|c| c.0))
                .chain(READING_COLUMNS)
                .chain(OTHER_COLUMNS)
                .collect();
            problems.push((
                file.to_string(),
                problem(
                    name,
                    Some(hline),
                    Some(*col),
                    format!(
                        "unknown column `{name}`; columns allowed (the unit is in the name): {}",
                        all.join(", ")
                    ),
                ),
            ));
        }
    }
    let (Some((tc, tf)), Some((rc, is_level))) = (time_col, read_col) else {
        problems.push((
            file.to_string(),
            problem(
                "",
                Some(hline),
                Some(1),
                "the header needs a time column (elapsed_s, elapsed_min or elapsed_h) and a reading column (level_m below the datum, or drawdown_m)".into(),
            ),
        ));
        return Err(problems);
    };
    let Some((qc, qf)) = rate_col else {
        problems.push((
            file.to_string(),
            problem(
                "",
                Some(hline),
                Some(1),
                "the header needs a rate column (rate_m3_per_h, rate_l_per_s or rate_m3_per_day): the pumped rate from each reading on".into(),
            ),
        ));
        return Err(problems);
    };
    if !problems.is_empty() {
        return Err(problems);
    }
    let columns: Vec<String> = head.iter().map(|(_, n)| n.to_string()).collect();
    let mut notes = Vec::new();
    // Per well (distance key in mm, 0 = pumped well): raw readings (time s, value, line).
    let mut wells: BTreeMap<i64, RawWell> = BTreeMap::new();
    let mut schedule: Vec<(f64, f64, usize)> = Vec::new();
    let mut n_rows = 0usize;
    for (line, text_line) in rows {
        n_rows += 1;
        if n_rows > MAX_ROWS {
            problems.push((
                file.to_string(),
                problem(
                    "",
                    Some(line),
                    None,
                    format!("more than {MAX_ROWS} readings; split the record"),
                ),
            ));
            break;
        }
        let cs = cells(text_line);
        let get = |i: usize| cs.get(i).copied();
        if let Some(tcol) = test_col {
            let this = get(tcol).map(|c| c.1).unwrap_or("");
            if this != test {
                continue;
            }
        }
        if cs.len() > head.len() {
            let (c, _) = cs[head.len()];
            problems.push((
                file.to_string(),
                problem(
                    "",
                    Some(line),
                    Some(c),
                    format!(
                        "{} cells but the header has {} columns; remove the extra cells",
                        cs.len(),
                        head.len()
                    ),
                ),
            ));
            continue;
        }
        let num = |i: usize,
                   name: &str,
                   problems: &mut Vec<(String, Problem)>|
         -> Option<Option<f64>> {
            match get(i) {
                None | Some((_, "")) => Some(None),
                Some((c, s)) => match s.parse::<f64>() {
                    Ok(v) if v.is_finite() => Some(Some(v)),
                    _ => {
                        problems.push((file.to_string(), problem(name, Some(line), Some(c), format!("`{s}` is not a number; write a plain decimal number such as 12.5"))));
                        None
                    }
                },
            }
        };
        let tname = columns[tc].clone();
        let Some(t) = num(tc, &tname, &mut problems) else {
            continue;
        };
        let Some(t) = t else {
            let c = get(tc).map(|x| x.0).unwrap_or(1);
            problems.push((
                file.to_string(),
                problem(
                    &tname,
                    Some(line),
                    Some(c),
                    "the time is missing; every reading needs its elapsed time".into(),
                ),
            ));
            continue;
        };
        let t_s = t * tf;
        let qname = columns[qc].clone();
        let Some(q) = num(qc, &qname, &mut problems) else {
            continue;
        };
        if let Some(q) = q {
            if q < 0.0 {
                let c = get(qc).map(|x| x.0).unwrap_or(1);
                problems.push((
                    file.to_string(),
                    problem(
                        &qname,
                        Some(line),
                        Some(c),
                        format!(
                            "{q} is negative; give the pumped rate (0 once the pump has stopped)"
                        ),
                    ),
                ));
                continue;
            }
            if t_s >= 0.0 {
                schedule.push((t_s, q * qf, line));
            }
        }
        let dist = match dist_col {
            None => None,
            Some(dc) => {
                let Some(d) = num(dc, "distance_m", &mut problems) else {
                    continue;
                };
                match d {
                    Some(d) if d < 0.0 => {
                        let c = get(dc).map(|x| x.0).unwrap_or(1);
                        problems.push((file.to_string(), problem("distance_m", Some(line), Some(c), format!("{d} is negative; give the distance of the observation well from the pumped well (blank or 0 for the pumped well)"))));
                        continue;
                    }
                    Some(d) if d > 0.0 => Some(d),
                    _ => None,
                }
            }
        };
        let rname = columns[rc].clone();
        let Some(v) = num(rc, &rname, &mut problems) else {
            continue;
        };
        let col = get(rc).map(|x| x.0).unwrap_or(1);
        if t_s < 0.0 {
            notes.push(format!(
                "{file}:{line}: reading at elapsed {t} before pumping started (0) is left out"
            ));
            continue;
        }
        let Some(v) = v else {
            notes.push(format!(
                "{file}:{line}:{col}: {rname}: blank reading; the row is left out"
            ));
            continue;
        };
        let key = dist.map_or(0, |d| (d * 1000.0).round() as i64);
        wells
            .entry(key)
            .or_insert((dist, Vec::new()))
            .1
            .push((t_s, v, line, col));
    }
    if !problems.is_empty() {
        return Err(problems);
    }
    // Schedule: time order, one rate per time.
    schedule.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.2.cmp(&b.2)));
    let mut sched: Vec<(f64, f64, usize)> = Vec::new();
    for s in schedule {
        match sched.last() {
            Some(last) if last.0 == s.0 && (last.1 - s.1).abs() > 1e-12 => {
                problems.push((file.to_string(), problem(&columns[qc], Some(s.2), None, format!("the rate at this time differs from the rate on line {} at the same time; give one rate per time", last.2))));
            }
            Some(last) if (last.1 - s.1).abs() <= 1e-12 => {}
            _ => sched.push(s),
        }
    }
    if sched.is_empty() || sched[0].0 > 0.0 || sched[0].1 <= 0.0 {
        problems.push((file.to_string(), problem(&columns[qc], Some(hline), None, "no pumped rate at elapsed time 0; give the rate on the first reading (time 0, when pumping started)".into())));
    }
    if wells.is_empty() {
        problems.push((
            file.to_string(),
            problem("", None, None, format!("no readings for test `{test}`")),
        ));
    }
    if !problems.is_empty() {
        return Err(problems);
    }
    let mut out_wells = Vec::new();
    for (_, (dist, rs)) in wells {
        for w in rs.windows(2) {
            if w[1].0 <= w[0].0 {
                let tname = &columns[tc];
                problems.push((file.to_string(), problem(tname, Some(w[1].2), Some(1), format!("elapsed time {} s is not after the previous reading of this well ({} s, line {}); sort the readings by time and remove repeats", w[1].0, w[0].0, w[0].2))));
            }
        }
        let rest = if is_level {
            match rs.iter().find(|r| r.0 == 0.0) {
                Some(r) => {
                    if dist.is_none() {
                        let yaml_rest = bh.static_depth_m + bh.datum_above_ground_m;
                        if (r.1 - yaml_rest).abs() > 0.05 {
                            notes.push(format!("{file}:{}: the level at time 0 ({} m below the datum) differs from the static level in the borehole section ({yaml_rest} m below the datum); drawdowns are taken from the level at time 0", r.2, r.1));
                        }
                    }
                    r.1
                }
                None => match dist {
                    None => bh.static_depth_m + bh.datum_above_ground_m,
                    Some(d) => {
                        problems.push((file.to_string(), problem("level_m", Some(rs[0].2), Some(rs[0].3), format!("the observation well at {d} m has no reading at elapsed time 0, so its rest level is unknown; add the level at time 0 or give drawdown_m"))));
                        continue;
                    }
                },
            }
        } else {
            0.0
        };
        out_wells.push(WellRecord {
            distance_m: dist,
            readings: rs
                .iter()
                .map(|r| Reading {
                    time_s: r.0,
                    drawdown_m: r.1 - rest,
                    line: r.2,
                })
                .collect(),
        });
    }
    if !problems.is_empty() {
        return Err(problems);
    }
    Ok((
        TestRecord {
            name: test.to_string(),
            kind,
            file: file.to_string(),
            schedule: sched,
            wells: out_wells,
            columns,
        },
        notes,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_carry_their_columns() {
        // Columns count characters from 1, after leading blanks, as an editor shows them.
        let c = cells("12, 3.5,,x");
        assert_eq!(c, vec![(1, "12"), (5, "3.5"), (9, ""), (10, "x")]);
        let c = cells("é,b");
        assert_eq!(c, vec![(1, "é"), (3, "b")]);
    }
}
