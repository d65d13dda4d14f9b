//! The printable plan: turns the sizing results (`Plan`), the prepared model (for the scheme
//! and the pump–system chart data it already holds), the scheme file's exact bytes and the
//! proposal checks into a [`Document`], in the order an engineer reads: the answer at a
//! glance, demand, source and pumping, the year, the design choice, checks, method notes and
//! cautions, and the scheme file as an appendix. Content assembly only: every figure comes
//! from the results passed in; the series drawn are those results regrouped (hour of day,
//! day, month), never recomputed physics.
//!
//! The PDF carries the scheme file (`scheme.yaml`, its exact bytes), a JSON of the key
//! figures (`figures.json`, with any command-line design overrides so the plan can be
//! repeated) and, for weather mode `file`, the weather file, so `tapplan verify` can rebuild
//! the plan and compare.

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use super::content::{
    Align, Attachment, BarChart, BarGroup, Block, Chart, Document, LineChart, LineStyle, Series,
    Table,
};
use super::{Meta, PdfError, document_to_pdf};
use crate::scheme::{DriveKind, Friction, JudgedOn, PumpKind, Scheme, WeatherMode};
use crate::simulate::{Hourly, Model, YearResult, daily_demand, fmt_g};
use crate::sizing::Plan;
use crate::weather::{DAYS_IN_MONTH, MONTH_NAMES};

/// Name of the embedded scheme file.
pub const SCHEME_ATTACHMENT: &str = "scheme.yaml";
/// Name of the embedded key figures.
pub const FIGURES_ATTACHMENT: &str = "figures.json";
/// Version of the `figures.json` layout.
pub const FIGURES_FORMAT: u32 = 1;

/// One proposal check as printed (filled by the rules module).
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct CheckRow {
    pub rule: String,
    pub status: String,
    pub value: String,
    pub limit: String,
    pub source: String,
}

/// Design overrides given on the command line, stored so `verify` can repeat them.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct OverridesRecord {
    pub tank_m3: Option<f64>,
    /// (pump type, units).
    pub pumps: Vec<(String, u32)>,
    pub array_kwp: Option<f64>,
}

/// Units of one pump type in the design.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PumpUnits {
    pub pump: String,
    pub units: u32,
}

/// The key figures embedded as `figures.json` (and compared by `verify`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Figures {
    pub format: u32,
    pub scheme: String,
    pub scheme_sha256: String,
    /// File name of the scheme as printed in the appendix.
    pub scheme_file_name: String,
    /// True when the design shown meets the target in the horizon year.
    pub target_met: bool,
    /// The design shown (chosen, or the best reachable when none meets the target).
    pub design: String,
    pub tank_m3: f64,
    pub units: Vec<PumpUnits>,
    pub array_kwp: Option<f64>,
    pub shortfall_hours_first_year: f64,
    pub shortfall_hours_horizon_year: f64,
    pub demand_met_percent_first_year: f64,
    pub demand_met_percent_horizon_year: f64,
    /// Life-cycle cost (net present value) of the design shown, when computed.
    pub npv: Option<f64>,
    pub currency: String,
    /// Design given on the command line instead of a search (None: the plan searched).
    pub overrides: Option<OverridesRecord>,
    /// Weather file as the scheme names it (relative to the scheme file), when embedded.
    pub weather_file: Option<String>,
    /// The rules' verdict on the design shown: the ids of the rules of severity fail it fails
    /// (empty: acceptable).
    #[serde(default)]
    pub failing_rules: Vec<String>,
    /// File name of the district rules file the plan followed, when one was given (embedded
    /// as [`RULES_ATTACHMENT`]).
    #[serde(default)]
    pub rules_file: Option<String>,
}

/// Attachment name of the district rules file a plan followed.
pub const RULES_ATTACHMENT: &str = "rules.yaml";

/// A district rules file a plan followed: its file name and exact bytes.
#[derive(Debug, Clone, Copy)]
pub struct RulesFile<'a> {
    pub name: &'a str,
    pub bytes: &'a [u8],
}

impl Figures {
    /// Names of the figures that differ from `other` (relative tolerance 1e-9 on numbers).
    pub fn differences(&self, other: &Figures) -> Vec<String> {
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-9 * (1.0 + a.abs().max(b.abs()));
        let mut d = Vec::new();
        let mut num = |name: &str, a: f64, b: f64| {
            if !close(a, b) {
                d.push(format!("{name}: {a} in the PDF, {b} now"));
            }
        };
        num("tank_m3", self.tank_m3, other.tank_m3);
        num(
            "shortfall_hours_first_year",
            self.shortfall_hours_first_year,
            other.shortfall_hours_first_year,
        );
        num(
            "shortfall_hours_horizon_year",
            self.shortfall_hours_horizon_year,
            other.shortfall_hours_horizon_year,
        );
        num(
            "demand_met_percent_first_year",
            self.demand_met_percent_first_year,
            other.demand_met_percent_first_year,
        );
        num(
            "demand_met_percent_horizon_year",
            self.demand_met_percent_horizon_year,
            other.demand_met_percent_horizon_year,
        );
        let opt = |v: Option<f64>| v.map_or("none".to_string(), |x| x.to_string());
        let same_opt = |a: Option<f64>, b: Option<f64>| match (a, b) {
            (Some(a), Some(b)) => close(a, b),
            (None, None) => true,
            _ => false,
        };
        if !same_opt(self.array_kwp, other.array_kwp) {
            d.push(format!(
                "array_kwp: {} in the PDF, {} now",
                opt(self.array_kwp),
                opt(other.array_kwp)
            ));
        }
        if !same_opt(self.npv, other.npv) {
            d.push(format!(
                "npv: {} in the PDF, {} now",
                opt(self.npv),
                opt(other.npv)
            ));
        }
        if self.units != other.units {
            let f = |u: &[PumpUnits]| {
                u.iter()
                    .map(|p| format!("{}={}", p.pump, p.units))
                    .collect::<Vec<_>>()
                    .join(" ")
            };
            d.push(format!(
                "units: {} in the PDF, {} now",
                f(&self.units),
                f(&other.units)
            ));
        }
        if self.failing_rules != other.failing_rules {
            let f = |v: &[String]| {
                if v.is_empty() {
                    "none".to_string()
                } else {
                    v.join(", ")
                }
            };
            d.push(format!(
                "failing_rules: {} in the PDF, {} now",
                f(&self.failing_rules),
                f(&other.failing_rules)
            ));
        }
        if self.target_met != other.target_met {
            d.push(format!(
                "target_met: {} in the PDF, {} now",
                self.target_met, other.target_met
            ));
        }
        for (name, a, b) in [
            ("scheme", &self.scheme, &other.scheme),
            ("scheme_sha256", &self.scheme_sha256, &other.scheme_sha256),
            (
                "scheme_file_name",
                &self.scheme_file_name,
                &other.scheme_file_name,
            ),
            ("design", &self.design, &other.design),
            ("currency", &self.currency, &other.currency),
        ] {
            if a != b {
                d.push(format!("{name}: {a:?} in the PDF, {b:?} now"));
            }
        }
        d
    }
}

/// A weather file to embed: its name as the scheme writes it, and its bytes.
#[derive(Debug, Clone, Copy)]
pub struct WeatherFile<'a> {
    pub name: &'a str,
    pub bytes: &'a [u8],
}

/// Everything the printed plan is made from.
pub struct PlanInputs<'a> {
    pub plan: &'a Plan,
    /// The prepared model (holds the scheme; read for the pump–system chart data).
    pub model: &'a Model,
    /// The judged weather year of the horizon year with its hourly series (the same run as
    /// `plan.report.horizon_year.years[representative]`, kept hourly).
    pub horizon_detail: &'a YearResult,
    /// File name of the scheme, as shown in the appendix.
    pub scheme_file_name: &'a str,
    /// The scheme file's exact bytes.
    pub scheme_bytes: &'a [u8],
    pub weather_file: Option<WeatherFile<'a>>,
    /// The district rules file the plan followed (None: the default rules).
    pub rules_file: Option<RulesFile<'a>>,
    /// Command-line design overrides (None: the plan is the result of the search).
    pub overrides: Option<OverridesRecord>,
    pub checks: &'a [CheckRow],
    /// Pumping-test pages of the boreholes whose test file the scheme names (blocks for the
    /// source section, and the test records to attach).
    pub pumping_tests: &'a crate::output::pumptest::PlanPages,
    /// The file's proposed design and the recommended one, summed up side by side (None when
    /// the file states no complete design or the plan shows a design given on the command
    /// line).
    pub comparison: Option<[crate::sizing::DesignSummary; 2]>,
}

/// SHA-256 of bytes, lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    let d = Sha256::digest(bytes);
    d.iter().map(|b| format!("{b:02x}")).collect()
}

fn pct(f: f64) -> String {
    format!("{:.1}", f * 100.0)
}

/// Whole number with thin grouping by spaces ("84 744").
fn grouped(v: f64) -> String {
    let neg = v < 0.0;
    let s = format!("{:.0}", v.abs());
    let mut out = String::new();
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i) % 3 == 0 {
            out.push(' ');
        }
        out.push(c);
    }
    if neg && out != "0" {
        out.insert(0, '−');
    }
    out
}

fn judged_words(j: JudgedOn, n: usize) -> String {
    if n <= 1 {
        return "one simulated year (the drive does not depend on the weather)".into();
    }
    match j {
        JudgedOn::Median => format!("median of {n} weather years"),
        JudgedOn::P90 => format!("1-in-10 (90th percentile) of {n} weather years"),
    }
}

/// The key figures of a plan.
pub fn figures(inp: &PlanInputs) -> Figures {
    let p = inp.plan;
    let s = &inp.model.scheme;
    let r = &p.report;
    let npv = p
        .chosen
        .as_ref()
        .or_else(|| p.alternatives.iter().find(|a| a.design == r.design))
        .map(|c| c.cost.npv);
    Figures {
        format: FIGURES_FORMAT,
        scheme: s.info.name.clone(),
        scheme_sha256: sha256_hex(inp.scheme_bytes),
        scheme_file_name: inp.scheme_file_name.to_string(),
        target_met: p.chosen.is_some(),
        design: r.design_text.clone(),
        tank_m3: r.design.tank_m3,
        units: s
            .pumps
            .iter()
            .zip(&r.design.units)
            .map(|(pp, n)| PumpUnits {
                pump: pp.name.clone(),
                units: *n,
            })
            .collect(),
        array_kwp: s.uses_solar().then_some(r.design.array_w / 1000.0),
        shortfall_hours_first_year: r.first_year.judged_shortfall_hours,
        shortfall_hours_horizon_year: r.horizon_year.judged_shortfall_hours,
        demand_met_percent_first_year: r.first_year.judged_demand_met_fraction * 100.0,
        demand_met_percent_horizon_year: r.horizon_year.judged_demand_met_fraction * 100.0,
        npv,
        currency: s.info.currency.clone(),
        overrides: inp.overrides.clone(),
        weather_file: inp.weather_file.map(|w| w.name.to_string()),
        failing_rules: p
            .verdict
            .as_ref()
            .map(|v| v.failing_rules.clone())
            .unwrap_or_default(),
        rules_file: inp.rules_file.map(|r| r.name.to_string()),
    }
}

/// The PDF metadata of a plan (date from the scheme file, never the clock).
pub fn plan_meta(s: &Scheme) -> Meta {
    Meta {
        title: format!("Water supply plan — {}", s.info.name),
        subject: "Tank, pump and drive sizing with shortfall hours".into(),
        author: s
            .info
            .prepared_by
            .clone()
            .unwrap_or_else(|| "tapplan".into()),
        keywords: "water supply, storage tank, pumps, shortfall hours".into(),
        date: Some(s.info.plan_date.clone()),
    }
}

/// The finished plan PDF.
pub fn plan_pdf(inp: &PlanInputs) -> Result<Vec<u8>, PdfError> {
    document_to_pdf(&plan_document(inp), &plan_meta(&inp.model.scheme))
}

fn heading(level: u8, text: impl Into<String>) -> Block {
    Block::Heading {
        level,
        text: text.into(),
    }
}

fn para(text: impl Into<String>) -> Block {
    Block::Paragraph(text.into())
}

fn table(caption: &str, header: &[&str], rows: Vec<Vec<String>>, align: &[Align]) -> Block {
    Block::Table(Table {
        caption: Some(caption.to_string()),
        header: header.iter().map(|h| h.to_string()).collect(),
        rows,
        column_align: align.to_vec(),
        column_weights: None,
    })
}

fn weighted(mut b: Block, w: &[f32]) -> Block {
    if let Block::Table(t) = &mut b {
        t.column_weights = Some(w.to_vec());
    }
    b
}

fn series(name: &str, points: Vec<(f64, f64)>, style: LineStyle, grey: f32, w: f32) -> Series {
    Series {
        name: name.to_string(),
        points,
        style,
        grey,
        width_pt: w,
    }
}

/// The measured table of a displacement pump as flow–power lines, one per head, with the
/// year's operating band outlined, and a paragraph that states how the table is read.
fn displacement_table_chart(
    b: &mut Vec<Block>,
    c: &crate::simulate::curves::DisplacementChart,
    units: u32,
    year: i32,
) {
    let lpm = |q: f64| q * 60_000.0;
    let count = c.rows.len().max(2) - 1;
    let mut ser: Vec<Series> = c
        .rows
        .iter()
        .enumerate()
        .map(|(k, (head, pts))| {
            let mut line: Vec<(f64, f64)> = pts.iter().map(|(w, q)| (*w, lpm(*q))).collect();
            if c.fixed_speed {
                // one point per head: a short mark at that point
                if let Some(&(w, q)) = line.first() {
                    line = vec![(w * 0.98, q), (w * 1.02, q)];
                }
            }
            series(
                &format!("{head:.0} m"),
                line,
                LineStyle::Solid,
                (0.65 * k as f64 / count as f64) as f32,
                1.2,
            )
        })
        .collect();
    let mut band_text = String::from("The pump did not run in this year.");
    if let Some(band) = &c.band {
        ser.push(series(
            &format!("operating band {year}"),
            band.outline.iter().map(|(w, q)| (*w, lpm(*q))).collect(),
            LineStyle::Dashed,
            0.0,
            1.6,
        ));
        band_text = format!(
            "In {year} it pumped in {} hours, at heads from {:.1} to {:.1} m and from {:.0} to {:.0} W per unit (the dashed outline: the table's flow over that range of power at the lowest and the highest head).",
            band.hours,
            band.head_range_m.0,
            band.head_range_m.1,
            band.power_range_w.0,
            band.power_range_w.1
        );
    }
    ser.push(series(
        &format!("rated power {:.0} W", c.rated_power_w),
        {
            let top = c
                .rows
                .iter()
                .flat_map(|(_, p)| p.iter().map(|(_, q)| lpm(*q)))
                .fold(0.0, f64::max);
            vec![(c.rated_power_w, 0.0), (c.rated_power_w, top * 1.05)]
        },
        LineStyle::Dotted,
        0.4,
        0.8,
    ));
    b.push(Block::Chart(Chart::Line(LineChart {
        title: format!("Measured table of {} (per unit; {units} installed)", c.pump),
        x_label: "drive input power per unit (W)".into(),
        y_label: "flow per unit (L/min)".into(),
        series: ser,
        x_range: Some((0.0, c.rated_power_w * 1.1)),
        y_range: None,
    })));
    b.push(para(format!(
        "{} is a positive-displacement pump read from its measured table{}: one line per measured head, flow against drive input power. Between measured points the flow is taken on the straight line (in power along a head, and in head between heads); nothing is extrapolated. Below a head's start power the pump does not run; below the lowest measured head the lowest line is used and between the highest measured head and the stall head ({:.0} m) the flow falls to zero, both counted as hours outside the table. The static lift is {:.1} m; the operating point of each hour is where the table's flow meets the system curve, with the units sharing the drive's power equally. {band_text}",
        c.pump,
        c.measured_at_setting_depth_m
            .map_or(String::new(), |d| format!(" (measured at a setting depth of {d:.0} m)")),
        c.stall_head_m,
        c.static_lift_m,
    )));
}

fn months3() -> Vec<String> {
    MONTH_NAMES.iter().map(|m| m[..3].to_string()).collect()
}

/// Mean over the days of the year of each clock hour of a series.
fn average_day(v: &[f64]) -> [f64; 24] {
    let mut out = [0.0; 24];
    let days = v.len() / 24;
    if days == 0 {
        return out;
    }
    for (h, x) in v.iter().enumerate().take(days * 24) {
        out[h % 24] += x;
    }
    for o in out.iter_mut() {
        *o /= days as f64;
    }
    out
}

/// Daily minimum of an hourly series.
fn daily_min(v: &[f64]) -> Vec<f64> {
    v.chunks(24)
        .map(|d| d.iter().copied().fold(f64::INFINITY, f64::min))
        .collect()
}

/// Sum of an hourly series by month (365-day calendar).
fn monthly_sum(v: &[f64]) -> [f64; 12] {
    let mut out = [0.0; 12];
    let mut h0 = 0usize;
    for (m, d) in DAYS_IN_MONTH.iter().enumerate() {
        let h1 = (h0 + *d as usize * 24).min(v.len());
        out[m] = v[h0.min(h1)..h1].iter().sum();
        h0 = h1;
    }
    out
}

fn pump_line(s: &Scheme, units: &[u32]) -> String {
    let v: Vec<String> = s
        .pumps
        .iter()
        .zip(units)
        .filter(|(_, n)| **n > 0)
        .map(|(p, n)| format!("{n} × {} ({})", p.name, p.drive.name()))
        .collect();
    if v.is_empty() {
        "none".into()
    } else {
        v.join(", ")
    }
}

fn windows_text(w: &[crate::scheme::Window]) -> String {
    w.iter()
        .map(|w| format!("{:02}–{:02} h", w.start_hour, w.end_hour))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The whole printable plan.
pub fn plan_document(inp: &PlanInputs) -> Document {
    let mut blocks = Vec::new();
    page_one(inp, &mut blocks);
    blocks.push(Block::PageBreak);
    demand_section(inp, &mut blocks);
    source_section(inp, &mut blocks);
    year_section(inp, &mut blocks);
    choice_section(inp, &mut blocks);
    checks_section(inp, &mut blocks);
    method_section(inp, &mut blocks);
    appendix(inp, &mut blocks);

    let s = &inp.model.scheme;
    let fig = figures(inp);
    let mut fig_json = serde_json::to_string_pretty(&fig).unwrap_or_else(|_| "{}".into());
    fig_json.push('\n');
    let mut attachments = vec![
        Attachment {
            name: SCHEME_ATTACHMENT.into(),
            mime: "application/yaml".into(),
            bytes: inp.scheme_bytes.to_vec(),
            description: format!(
                "Scheme file this plan was made from ({})",
                inp.scheme_file_name
            ),
        },
        Attachment {
            name: FIGURES_ATTACHMENT.into(),
            mime: "application/json".into(),
            bytes: fig_json.into_bytes(),
            description: "Key figures of the plan, for tapplan verify".into(),
        },
    ];
    attachments.extend(inp.pumping_tests.attachments.iter().cloned());
    if let Some(r) = inp.rules_file {
        attachments.push(Attachment {
            name: RULES_ATTACHMENT.into(),
            mime: "application/yaml".into(),
            bytes: r.bytes.to_vec(),
            description: format!("District rules file {} the plan followed", r.name),
        });
    }
    if let Some(w) = inp.weather_file {
        attachments.push(Attachment {
            name: weather_attachment_name(w.name),
            mime: "text/plain".into(),
            bytes: w.bytes.to_vec(),
            description: format!("Weather file {} named by the scheme", w.name),
        });
    }
    Document {
        title: format!("Water supply plan — {}", s.info.name),
        footer_label: s.info.name.clone(),
        blocks,
        attachments,
    }
}

/// The attachment name of the weather file: `weather-` and its file name.
pub fn weather_attachment_name(name: &str) -> String {
    let base = std::path::Path::new(name)
        .file_name()
        .map(|f| f.to_string_lossy().into_owned())
        .unwrap_or_else(|| "file".into());
    format!("weather-{base}")
}

fn page_one(inp: &PlanInputs, b: &mut Vec<Block>) {
    let p = inp.plan;
    let s = &inp.model.scheme;
    let r = &p.report;
    let d = &r.design;
    let cur = &s.info.currency;
    b.push(para(format!(
        "Place: latitude {:.3}°, longitude {:.3}°, elevation {:.0} m.  Plan date: {}.  Design horizon: {} years, {} to {}.{}",
        s.info.latitude_deg,
        s.info.longitude_deg,
        s.info.elevation_m,
        s.info.plan_date,
        s.info.horizon_years,
        s.info.base_year,
        s.horizon_year(),
        s.info
            .prepared_by
            .as_ref()
            .map_or(String::new(), |w| format!("  Prepared by: {w}."))
    )));
    let verdict = if p.chosen.is_some() {
        "MET".to_string()
    } else {
        "NOT MET".to_string()
    };
    let cost = p
        .chosen
        .as_ref()
        .or_else(|| p.alternatives.iter().find(|a| a.design == *d))
        .map(|c| c.cost.clone());
    let mut kf = vec![
        (
            "Storage tank".to_string(),
            format!("{} m³", fmt_g(d.tank_m3)),
        ),
        ("Pumps".to_string(), pump_line(s, &d.units)),
    ];
    if s.uses_solar() && d.array_w > 0.0 {
        kf.push(("PV array".into(), format!("{:.2} kWp", d.array_w / 1000.0)));
    } else if let Some(g) = &s.generator {
        kf.push((
            "Generator".into(),
            format!(
                "{:.1} kW, {}",
                g.rated_w / 1000.0,
                windows_text(&g.run_hours)
            ),
        ));
    } else if let Some(g) = &s.grid {
        kf.push((
            "Mains supply".into(),
            format!(
                "{:.1} kW, {}",
                g.available_w / 1000.0,
                windows_text(&g.supply_hours)
            ),
        ));
    } else {
        kf.push(("Drive".into(), "no fuel or power bought".into()));
    }
    kf.push(("Target in the horizon year".into(), verdict));
    if let Some(v) = &p.verdict {
        kf.push((
            "Rules (the verdict of tapplan check)".into(),
            if v.acceptable {
                "no failing rule".to_string()
            } else {
                format!("FAILS {}", v.failing_rules.join(", "))
            },
        ));
        if !v.warning_rules.is_empty() {
            kf.push(("Rules that warn".into(), v.warning_rules.join(", ")));
        }
    }
    kf.push((
        format!(
            "First year {}: shortfall hours, demand met",
            r.first_year.year
        ),
        format!(
            "{:.0} h short · {} % met",
            r.first_year.judged_shortfall_hours,
            pct(r.first_year.judged_demand_met_fraction)
        ),
    ));
    kf.push((
        format!(
            "Horizon year {}: shortfall hours, demand met",
            r.horizon_year.year
        ),
        format!(
            "{:.0} h short · {} % met",
            r.horizon_year.judged_shortfall_hours,
            pct(r.horizon_year.judged_demand_met_fraction)
        ),
    ));
    match &cost {
        Some(c) => {
            kf.push((
                "Life-cycle cost (present worth)".into(),
                format!("{} {cur}", grouped(c.npv)),
            ));
            kf.push((
                "Cost per m³ delivered".into(),
                c.levelised_per_m3
                    .map_or("–".into(), |v| format!("{v:.2} {cur}/m³")),
            ));
        }
        None => match p.unreachable.as_ref().and_then(|u| u.present_worth) {
            Some(pw) => {
                kf.push((
                    "Life-cycle cost of the best design found (does NOT meet the target)".into(),
                    format!("{} {cur}", grouped(pw)),
                ));
            }
            None => {
                kf.push((
                    "Life-cycle cost".into(),
                    "not computed: no design was costed".into(),
                ));
            }
        },
    }
    b.push(Block::KeyFigures(kf));

    let judged = judged_words(p.judged_on, p.weather_years);
    let mut verdict_text = match (&p.chosen, &p.unreachable) {
        (Some(c), _) => format!(
            "Target: {}. This design meets it: {:.0} shortfall hours and {} % of demand met in the horizon year, judged on the {}.",
            p.target_text,
            c.judged_shortfall_hours,
            pct(c.judged_demand_met_fraction),
            judged
        ),
        (None, Some(u)) if inp.overrides.is_some() => format!(
            "Target: {}. The given design, {}, does NOT meet it: {:.0} shortfall hours and {} % of demand met in the horizon year ({}). What limits it: {}.",
            p.target_text,
            u.best_design,
            u.best_shortfall_hours,
            pct(u.best_demand_met_fraction),
            judged,
            u.limited_by
        ),
        (None, Some(u)) => format!(
            "Target: {}. {} The best reachable design, {}, gives {:.0} shortfall hours and {} % of demand met in the horizon year ({}). What limits it: {}.",
            p.target_text,
            "NO DESIGN in the searched ranges meets it.",
            u.best_design,
            u.best_shortfall_hours,
            pct(u.best_demand_met_fraction),
            judged,
            u.limited_by
        ),
        (None, None) => format!("Target: {}. It is not met.", p.target_text),
    };
    if inp.overrides.is_some() {
        verdict_text.push_str(" The design was given on the command line; no search was run.");
    } else if let Some(t) = p.next_smaller_tank_m3 {
        verdict_text.push_str(&format!(
            " The next smaller tank ({} m³) with the same pumps and drive does not meet it.",
            fmt_g(t)
        ));
    }
    if let Some(v) = p.verdict.as_ref().filter(|v| !v.acceptable) {
        verdict_text.push_str(&format!(
            " It is NOT ACCEPTABLE as it stands: it fails the rule(s) {} (see Proposal checks){}.",
            v.failing_rules.join(", "),
            if inp.overrides.is_none() && p.chosen.is_some() {
                "; no design the search found passes them, so the cheapest that meets the target is shown"
            } else {
                ""
            }
        ));
    }
    b.push(para(verdict_text));
    if let Some(c) = &inp.comparison {
        b.push(proposed_beside_recommended(
            c,
            &inp.model.scheme.info.currency,
        ));
    }
    b.push(para(
        "Caution: a planning aid, not a certified design. Test the water before use, protect the source, have elevated tanks designed by a structural engineer and the electrics installed by qualified people; local codes and licensed practice prevail (see Cautions).",
    ));
    b.push(typical_day_chart(inp));
    b.push(para(format!(
        "The chart averages each clock hour over the 365 days of the horizon year {}, {}, the year the design is judged on. Single days swing further than this average.",
        inp.horizon_detail.year,
        if inp.plan.weather_years > 1 {
            format!("in its judged weather year ({})", inp.horizon_detail.weather)
        } else {
            "one simulated year (the supply does not depend on the weather)".to_string()
        }
    )));
}

/// The file's proposed design beside the recommended one: the figures an officer compares.
fn proposed_beside_recommended(c: &[crate::sizing::DesignSummary; 2], cur: &str) -> Block {
    let [prop, rec] = c;
    let same = prop.design == rec.design;
    let row = |name: &str, f: &dyn Fn(&crate::sizing::DesignSummary) -> String| {
        vec![name.to_string(), f(prop), f(rec)]
    };
    let rules = |d: &crate::sizing::DesignSummary| {
        if d.verdict.failing_rules.is_empty() {
            "none".to_string()
        } else {
            d.verdict.failing_rules.join(", ")
        }
    };
    let rows = vec![
        row("design", &|d| d.design_text.clone()),
        row("shortfall hours, horizon year (h)", &|d| {
            format!("{:.0}", d.judged_shortfall_hours)
        }),
        row("demand met, horizon year (%)", &|d| {
            pct(d.judged_demand_met_fraction)
        }),
        row("water per person (L/person/day)", &|d| {
            format!("{:.1}", d.litres_per_person_day)
        }),
        row("meets the target", &|d| {
            if d.meets_target { "yes" } else { "no" }.to_string()
        }),
        row(&format!("capital ({cur})"), &|d| grouped(d.capital)),
        row(&format!("present worth ({cur})"), &|d| {
            grouped(d.present_worth)
        }),
        row(&format!("cost per m³ ({cur}/m³)"), &|d| {
            d.cost_per_m3.map_or("–".into(), |v| format!("{v:.2}"))
        }),
        row("rules failed", &rules),
        row("rules that warn", &|d| {
            if d.verdict.warning_rules.is_empty() {
                "none".to_string()
            } else {
                d.verdict.warning_rules.join(", ")
            }
        }),
    ];
    let caption = if same {
        "The design in the file and the recommended design (the same design)"
    } else {
        "The design in the file beside the recommended design"
    };
    weighted(
        table(
            caption,
            &["", "proposed in the file", "recommended"],
            rows,
            &[Align::Left, Align::Right, Align::Right],
        ),
        &[1.3, 1.0, 1.0],
    )
}

fn typical_day_chart(inp: &PlanInputs) -> Block {
    let y = inp.horizon_detail;
    let empty = Hourly::default();
    let hr = y.hourly.as_ref().unwrap_or(&empty);
    let lvl = average_day(&hr.tank_level_m3);
    let dem = average_day(&hr.demand_m3);
    let pumped = average_day(&hr.pumped_m3);
    // levels are at the end of each hour; demand and pumping are hourly totals drawn as steps
    let mut level_pts: Vec<(f64, f64)> = vec![(0.0, lvl[23])];
    level_pts.extend((0..24).map(|h| (h as f64 + 1.0, lvl[h])));
    let step = |v: &[f64; 24]| -> Vec<(f64, f64)> {
        let mut pts = Vec::new();
        for (h, x) in v.iter().enumerate() {
            pts.push((h as f64, *x));
            pts.push((h as f64 + 1.0, *x));
        }
        pts
    };
    Block::Chart(Chart::Line(LineChart {
        title: format!("Average day of {}: tank level, demand and pumping", y.year),
        x_label: "hour of day (h)".into(),
        y_label: "volume (m³; level, or m³ in the hour)".into(),
        series: vec![
            series(
                "tank level at the end of the hour (m³)",
                level_pts,
                LineStyle::Solid,
                0.0,
                1.6,
            ),
            series(
                "demand in the hour (m³)",
                step(&dem),
                LineStyle::Dashed,
                0.3,
                1.0,
            ),
            series(
                "pumped in the hour (m³)",
                step(&pumped),
                LineStyle::Dotted,
                0.15,
                1.2,
            ),
        ],
        x_range: Some((0.0, 24.0)),
        y_range: None,
    }))
}

fn demand_section(inp: &PlanInputs, b: &mut Vec<Block>) {
    let s = &inp.model.scheme;
    let r = &inp.plan.report;
    let h = s.info.horizon_years;
    b.push(heading(1, "Demand"));
    b.push(para(format!(
        "{} people in {}, growing {} at {:.1} % a year; {:.0} L per person per day; losses {:.0} % of the water supplied; daily profile `{}`.",
        grouped(s.demand.population),
        s.info.base_year,
        match s.demand.growth_method {
            crate::scheme::GrowthMethod::Geometric => "geometrically",
            crate::scheme::GrowthMethod::Arithmetic => "arithmetically",
        },
        s.demand.growth_rate_per_year * 100.0,
        s.demand.per_capita_m3_per_day * 1000.0,
        s.demand.losses_fraction * 100.0,
        s.demand.profile_name
    )));
    b.push(Block::Chart(Chart::Line(LineChart {
        title: "Population projection to the horizon".into(),
        x_label: "year".into(),
        y_label: "population (people)".into(),
        series: vec![series(
            "population",
            r.horizon
                .iter()
                .map(|x| (x.year as f64, x.population))
                .collect(),
            LineStyle::Solid,
            0.0,
            1.4,
        )],
        x_range: None,
        y_range: None,
    })));
    let d0 = daily_demand(s, 0);
    let d1 = daily_demand(s, h);
    let mut rows = vec![vec![
        format!("people ({:.0} → {:.0})", d0.population, d1.population),
        format!("{:.1}", d0.domestic_m3_per_day),
        format!("{:.1}", d1.domestic_m3_per_day),
    ]];
    for (k, u) in s.demand.other_users.iter().enumerate() {
        rows.push(vec![
            format!(
                "{} ({} {}, {:.0} L each{})",
                u.name,
                fmt_g(u.count),
                u.unit,
                u.allowance_m3_per_unit_day * 1000.0,
                if u.grows_with_population {
                    ", grows"
                } else {
                    ""
                }
            ),
            format!("{:.1}", d0.other_m3_per_day.get(k).map_or(0.0, |x| x.1)),
            format!("{:.1}", d1.other_m3_per_day.get(k).map_or(0.0, |x| x.1)),
        ]);
    }
    rows.push(vec![
        "consumed".into(),
        format!("{:.1}", d0.consumed_m3_per_day),
        format!("{:.1}", d1.consumed_m3_per_day),
    ]);
    rows.push(vec![
        format!(
            "losses ({:.0} % of supplied)",
            s.demand.losses_fraction * 100.0
        ),
        format!("{:.1}", d0.supplied_m3_per_day - d0.consumed_m3_per_day),
        format!("{:.1}", d1.supplied_m3_per_day - d1.consumed_m3_per_day),
    ]);
    rows.push(vec![
        "supplied from the tank (average month)".into(),
        format!("{:.1}", d0.supplied_m3_per_day),
        format!("{:.1}", d1.supplied_m3_per_day),
    ]);
    let y0 = format!("{} (m³/day)", d0.year);
    let y1 = format!("{} (m³/day)", d1.year);
    b.push(weighted(
        table(
            "Demand by user category",
            &["user category", &y0, &y1],
            rows,
            &[Align::Left, Align::Right, Align::Right],
        ),
        &[3.0, 1.0, 1.0],
    ));
    b.push(Block::Chart(Chart::Bar(BarChart {
        title: "Daily pattern of use: share of the day's demand in each hour".into(),
        x_label: "hour of day (starting hour)".into(),
        y_label: "share of daily demand (%)".into(),
        categories: (0..24).map(|h| format!("{h}")).collect(),
        groups: vec![BarGroup {
            name: format!("profile `{}`", s.demand.profile_name),
            values: s.demand.profile.iter().map(|f| f * 100.0).collect(),
            grey: 0.45,
        }],
    })));
    b.push(Block::Chart(Chart::Bar(BarChart {
        title: "Monthly pattern: factor on the daily demand".into(),
        x_label: "month".into(),
        y_label: "factor (–)".into(),
        categories: months3(),
        groups: vec![BarGroup {
            name: "monthly factor".into(),
            values: s.demand.monthly_factors.to_vec(),
            grey: 0.6,
        }],
    })));
}

fn source_section(inp: &PlanInputs, b: &mut Vec<Block>) {
    let m = inp.model;
    let s = &m.scheme;
    let r = &inp.plan.report;
    let d = &r.design;
    let hy = inp.horizon_detail;
    b.push(heading(1, "Source and pumping"));
    if let Some(rm) = &s.rising_main {
        b.push(para(format!(
            "Rising main: {:.0} m of {} at {:.1} mm internal diameter, {}, fittings ΣK = {:.1}. Tank inlet at {:.1} m above sea level.",
            rm.length_m,
            rm.material,
            rm.internal_diameter_m * 1000.0,
            match rm.friction {
                Friction::ColebrookWhite { roughness_m } => format!(
                    "Colebrook–White friction with roughness {:.3} mm",
                    roughness_m * 1000.0
                ),
                Friction::HazenWilliams { c } => format!("Hazen–Williams friction with C = {c:.0}"),
            },
            rm.fittings_k_total,
            s.tank.inlet_elevation_m
        )));
    }
    // pump types
    let rows: Vec<Vec<String>> = s
        .pumps
        .iter()
        .zip(&d.units)
        .map(|(p, n)| {
            vec![
                p.name.clone(),
                p.drive.name().to_string(),
                p.source_name.clone(),
                n.to_string(),
                p.max_units.to_string(),
                match &p.kind {
                    PumpKind::Curve { points, .. } => format!("curve, {} points", points.len()),
                    PumpKind::Displacement {
                        rows, fixed_speed, ..
                    } => format!(
                        "displacement table, {} heads{}",
                        rows.len(),
                        if *fixed_speed { ", fixed speed" } else { "" }
                    ),
                    PumpKind::Hand { .. } => "hand pump".into(),
                    PumpKind::Ram { efficiency, .. } => {
                        format!("ram, efficiency {:.0} %", efficiency * 100.0)
                    }
                },
            ]
        })
        .collect();
    b.push(weighted(
        table(
            "Pump types",
            &[
                "pump type",
                "drive",
                "source",
                "units in design",
                "most units",
                "kind",
            ],
            rows,
            &[
                Align::Left,
                Align::Left,
                Align::Left,
                Align::Right,
                Align::Right,
                Align::Left,
            ],
        ),
        &[1.6, 1.0, 1.4, 1.0, 0.9, 1.6],
    ));

    // boreholes: yield, drawdown at the operating flow, intake
    let mut any_curve = false;
    for (bi, bh) in s.boreholes.iter().enumerate() {
        // this borehole's own figures of the judged horizon year
        let by = hy.boreholes.get(bi).cloned().unwrap_or_default();
        let mut rows = vec![
            vec![
                "rest (static) water level".to_string(),
                format!("{:.1} m below ground", bh.static_depth_m),
            ],
            vec![
                "tested yield; safe yield".into(),
                format!(
                    "{:.1} m³/h; {:.1} m³/h ({:.0} %)",
                    bh.tested_yield_m3_per_s * 3600.0,
                    bh.safe_yield_m3_per_s() * 3600.0,
                    bh.safe_yield_fraction * 100.0
                ),
            ],
            vec![
                "aquifer".into(),
                match (bh.transmissivity_m2_per_s, bh.storativity) {
                    (Some(t), Some(st)) => format!(
                        "T = {:.1} m²/day, S = {:.2e} (Theis drawdown modelled)",
                        t * 86400.0,
                        st
                    ),
                    _ => "not given: aquifer drawdown not modelled".into(),
                },
            ],
            vec![
                "well loss (Jacob)".into(),
                format!(
                    "B = {:.0} s/m², C = {:.0} s²/m⁵",
                    bh.well_loss_b_s_per_m2, bh.well_loss_c_s2_per_m5
                ),
            ],
            vec![
                "pump intake; lowest allowed level".into(),
                format!(
                    "{:.1} m; {:.1} m below ground (submergence margin {:.1} m)",
                    bh.intake_depth_m,
                    bh.intake_depth_m - bh.submergence_margin_m,
                    bh.submergence_margin_m
                ),
            ],
        ];
        for (pi, p) in s.pumps.iter().enumerate() {
            if p.source_index != bi || !matches!(p.kind, PumpKind::Curve { .. }) {
                continue;
            }
            let n = d.units[pi];
            if n == 0 {
                continue;
            }
            let Some(c) = m.pump_system_curves(pi, n, by.deepest_dynamic_level_m, 2) else {
                continue;
            };
            if let Some((q, h)) = c.operating_no_past {
                rows.push(vec![
                    format!("operating flow of {n} × {} at full speed", p.name),
                    format!("{:.2} m³/h at {:.1} m head", q * 3600.0, h),
                ]);
                if let Some(l) = c.pumping_level_no_past_m {
                    rows.push(vec![
                        "pumping level at that flow (no earlier pumping)".into(),
                        format!(
                            "{:.1} m below ground: drawdown {:.1} m, {:.1} m above the allowed limit",
                            l,
                            l - bh.static_depth_m,
                            c.lowest_allowed_level_m - l
                        ),
                    ]);
                }
                if q > bh.safe_yield_m3_per_s() {
                    rows.push(vec![
                        "safe-yield cap".into(),
                        format!(
                            "the full-speed flow exceeds the safe yield: pumping held at {:.1} m³/h",
                            bh.safe_yield_m3_per_s() * 3600.0
                        ),
                    ]);
                }
            }
        }
        rows.push(vec![
            format!("water drawn from it in {} (simulated)", hy.year),
            format!("{} m³", grouped(by.pumped_m3)),
        ]);
        if let Some(dl) = by.deepest_dynamic_level_m {
            rows.push(vec![
                format!("deepest pumping level in {} (simulated)", hy.year),
                format!(
                    "{:.1} m below ground; least margin to the limit {}",
                    dl,
                    by.drawdown_margin_m
                        .map_or("–".into(), |v| format!("{v:.1} m"))
                ),
            ]);
        }
        rows.push(vec![
            format!("hours held at safe yield; dry-run stops ({})", hy.year),
            format!("{} h; {} h", by.yield_capped_hours, by.dry_run_stop_hours),
        ]);
        b.push(weighted(
            table(
                &format!("Borehole {}", bh.name),
                &["item", "value"],
                rows,
                &[Align::Left, Align::Left],
            ),
            &[1.6, 2.4],
        ));
    }
    for st in &s.streams {
        b.push(para(format!(
            "Stream {}: {:.1} L/s may be diverted (monthly factors {}), usable fall {:.1} m.",
            st.name,
            st.flow_m3_per_s * 1000.0,
            st.monthly_flow_factors
                .iter()
                .map(|f| format!("{f:.2}"))
                .collect::<Vec<_>>()
                .join(" "),
            st.usable_fall_m
        )));
    }

    // pump and system curves
    for (pi, p) in s.pumps.iter().enumerate() {
        let n = d.units[pi];
        if n == 0 {
            continue;
        }
        let only_motor = s
            .pumps
            .iter()
            .zip(&d.units)
            .filter(|(q, u)| {
                **u > 0 && !matches!(q.kind, PumpKind::Hand { .. } | PumpKind::Ram { .. })
            })
            .count()
            == 1;
        let hourly = hy.hourly.as_ref().filter(|_| only_motor);
        if let Some(c) = m.displacement_chart(pi, hourly) {
            any_curve = true;
            displacement_table_chart(b, &c, n, hy.year);
            continue;
        }
        let Some(c) = m.pump_system_curves(pi, n, hy.deepest_dynamic_level_m, 41) else {
            continue;
        };
        any_curve = true;
        let top_head = c
            .pump_curve
            .iter()
            .map(|x| x.1)
            .fold(c.static_lift_m, f64::max);
        let to_h = |v: &[(f64, f64)]| -> Vec<(f64, f64)> {
            v.iter().map(|(q, h)| (q * 3600.0, *h)).collect()
        };
        let mut ser = vec![
            series(
                &format!("{n} × {} at full speed", p.name),
                to_h(&c.pump_curve),
                LineStyle::Solid,
                0.0,
                1.6,
            ),
            series(
                "system, no earlier pumping",
                to_h(&c.system_no_past),
                LineStyle::Dashed,
                0.25,
                1.1,
            ),
        ];
        if c.past_drawdown_m > 0.05 {
            ser.push(series(
                &format!(
                    "system at the deepest level of {} (+{:.1} m)",
                    hy.year, c.past_drawdown_m
                ),
                to_h(&c.system_with_past),
                LineStyle::Dotted,
                0.1,
                1.3,
            ));
        }
        for (name, op, grey) in [
            (
                "operating point, no earlier pumping",
                c.operating_no_past,
                0.45,
            ),
            (
                "operating point at the deepest level",
                c.operating_with_past.filter(|_| c.past_drawdown_m > 0.05),
                0.6,
            ),
        ] {
            if let Some((q, h)) = op {
                ser.push(series(
                    name,
                    vec![(q * 3600.0, 0.0), (q * 3600.0, h), (0.0, h)],
                    LineStyle::Dotted,
                    grey,
                    0.8,
                ));
            }
        }
        b.push(Block::Chart(Chart::Line(LineChart {
            title: format!("Pump and system curves: {n} × {}", p.name),
            x_label: "total flow (m³/h)".into(),
            y_label: "head (m)".into(),
            series: ser,
            x_range: None,
            // the pump's range of head, with room above: the system curve beyond is clipped
            y_range: Some((0.0, top_head * 1.3)),
        })));
        b.push(para(format!(
            "The static lift from the rest water level to the tank inlet is {:.1} m. The inlet is at the top of the tank, so the tank level does not change the static head; what moves the system curve during the year is the aquifer drawdown left by earlier pumping (Theis superposition). The dashed curve has none; the dotted one adds the {:.1} m that, at full speed, puts the pumping level at the deepest level simulated in {} ({}). The operating point is where the pump curve crosses the system curve; {}",
            c.static_lift_m,
            c.past_drawdown_m,
            hy.year,
            hy.deepest_dynamic_level_m
                .map_or("no pumping".into(), |v| format!("{v:.1} m below ground")),
            if p.drive == DriveKind::Solar {
                "a solar pump runs below full speed most of the day, and its curve then scales down by the affinity laws."
            } else {
                "a fixed-speed pump runs at this point whenever it runs."
            }
        )));
    }
    if !any_curve {
        b.push(para(
            "No motor pump with a performance curve is in the design, so there is no pump–system curve to draw.",
        ));
    }

    // energy budget
    let months = &hy.months;
    let used: Vec<f64> = months.iter().map(|t| t.energy_kwh).collect();
    if used.iter().any(|v| *v > 0.0) {
        let avail = hy
            .hourly
            .as_ref()
            .map(|h| monthly_sum(&h.drive_power_available_w))
            .unwrap_or([0.0; 12]);
        let mut groups = Vec::new();
        if avail.iter().any(|v| *v > 0.0) {
            groups.push(BarGroup {
                name: "available from the drive (kWh)".into(),
                values: avail.iter().map(|w| w / 1000.0).collect(),
                grey: 0.85,
            });
        }
        groups.push(BarGroup {
            name: "used by the pumps (kWh)".into(),
            values: used,
            grey: 0.3,
        });
        b.push(Block::Chart(Chart::Bar(BarChart {
            title: format!(
                "Energy budget by month, horizon year {} ({})",
                hy.year, hy.weather
            ),
            x_label: "month".into(),
            y_label: "energy (kWh)".into(),
            categories: months3(),
            groups,
        })));
        b.push(para(
            "Available energy is the drive's output summed over the hours it could run (the PV array's DC output at the controller, the generator's rating over its shifts, the mains connection over its hours); the pumps use less when the tank is full or the yield caps the flow.",
        ));
    }
    b.extend(inp.pumping_tests.blocks.iter().cloned());
}

fn year_section(inp: &PlanInputs, b: &mut Vec<Block>) {
    let r = &inp.plan.report;
    let y0 = &r.year;
    let y1 = inp.horizon_detail;
    let s = &inp.model.scheme;
    b.push(heading(1, "The year"));
    b.push(para(if inp.plan.weather_years > 1 {
        format!(
            "Hour by hour over the first year {} (weather: {}) and the horizon year {} (weather: {}), each the judged year of its ensemble. A shortfall hour is an hour in which the tank ran dry and some demand went unmet.",
            y0.year, y0.weather, y1.year, y1.weather
        )
    } else {
        format!(
            "Hour by hour over the first year {} and the horizon year {} (the supply does not depend on the weather, so one year each is simulated). A shortfall hour is an hour in which the tank ran dry and some demand went unmet.",
            y0.year, y1.year
        )
    }));
    let mut cats = months3();
    cats.truncate(12);
    b.push(Block::Chart(Chart::Bar(BarChart {
        title: "Shortfall hours by month".into(),
        x_label: "month".into(),
        y_label: "shortfall (h)".into(),
        categories: cats.clone(),
        groups: vec![
            BarGroup {
                name: format!("{}", y0.year),
                values: y0.months.iter().map(|t| t.shortfall_hours as f64).collect(),
                grey: 0.75,
            },
            BarGroup {
                name: format!("{}", y1.year),
                values: y1.months.iter().map(|t| t.shortfall_hours as f64).collect(),
                grey: 0.25,
            },
        ],
    })));
    b.push(Block::Chart(Chart::Bar(BarChart {
        title: "Unmet demand by month".into(),
        x_label: "month".into(),
        y_label: "unmet volume (m³)".into(),
        categories: cats,
        groups: vec![
            BarGroup {
                name: format!("{}", y0.year),
                values: y0.months.iter().map(|t| t.unmet_m3).collect(),
                grey: 0.75,
            },
            BarGroup {
                name: format!("{}", y1.year),
                values: y1.months.iter().map(|t| t.unmet_m3).collect(),
                grey: 0.25,
            },
        ],
    })));
    let usable = r.design.tank_m3 * s.tank.usable_fraction;
    let mut ser = Vec::new();
    for (y, style, grey, w) in [
        (y0, LineStyle::Dashed, 0.45, 0.9),
        (y1, LineStyle::Solid, 0.0, 1.1),
    ] {
        if let Some(h) = &y.hourly {
            ser.push(series(
                &format!("{} daily minimum", y.year),
                daily_min(&h.tank_level_m3)
                    .iter()
                    .enumerate()
                    .map(|(d, v)| (d as f64 + 1.0, *v))
                    .collect(),
                style,
                grey,
                w,
            ));
        }
    }
    ser.push(series(
        &format!("usable volume {usable:.1} m³"),
        vec![(1.0, usable), (365.0, usable)],
        LineStyle::Dotted,
        0.3,
        0.8,
    ));
    b.push(Block::Chart(Chart::Line(LineChart {
        title: "Tank level over the year: lowest level of each day".into(),
        x_label: "day of year".into(),
        y_label: "tank level (m³)".into(),
        series: ser,
        x_range: Some((1.0, 365.0)),
        y_range: Some((0.0, (usable * 1.1).max(1.0))),
    })));
    let fuel = y1.annual.generator_fuel_l > 0.0 || y0.annual.generator_fuel_l > 0.0;
    let mut rows = Vec::new();
    for (k, t) in y1.months.iter().enumerate() {
        let t0 = &y0.months[k];
        let mut row = vec![
            MONTH_NAMES[k][..3].to_string(),
            format!("{:.0}", t0.pump_run_hours),
            format!("{:.0}", t.pump_run_hours),
            format!("{:.0}", t.pumped_m3),
            format!("{:.0}", t0.energy_kwh),
            format!("{:.0}", t.energy_kwh),
        ];
        if fuel {
            row.push(format!("{:.0}", t.generator_fuel_l));
        }
        rows.push(row);
    }
    let mut total = vec![
        "year".to_string(),
        format!("{:.0}", y0.annual.pump_run_hours),
        format!("{:.0}", y1.annual.pump_run_hours),
        format!("{:.0}", y1.annual.pumped_m3),
        format!("{:.0}", y0.annual.energy_kwh),
        format!("{:.0}", y1.annual.energy_kwh),
    ];
    if fuel {
        total.push(format!("{:.0}", y1.annual.generator_fuel_l));
    }
    rows.push(total);
    let h = [
        "month".to_string(),
        format!("run {} (h)", y0.year),
        format!("run {} (h)", y1.year),
        format!("pumped {} (m³)", y1.year),
        format!("energy {} (kWh)", y0.year),
        format!("energy {} (kWh)", y1.year),
        format!("fuel {} (L)", y1.year),
    ];
    let ncol = if fuel { 7 } else { 6 };
    let hdr: Vec<&str> = h.iter().take(ncol).map(|x| x.as_str()).collect();
    let mut align = vec![Align::Left];
    align.extend(std::iter::repeat_n(Align::Right, ncol - 1));
    b.push(table(
        "Pump run hours and energy by month",
        &hdr,
        rows,
        &align,
    ));
    let a = &y1.annual;
    b.push(para(format!(
        "Horizon year {}: demand {:.0} m³, delivered {:.0} m³, unmet {:.1} m³, overflow {:.1} m³; longest dry spell {} h; specific energy {}; delivered domestic water {:.1} L per person per day. Storage is {:.2} days of average base-year demand.",
        y1.year,
        a.demand_m3,
        a.delivered_m3,
        a.unmet_m3,
        a.overflow_m3,
        y1.longest_dry_spell_hours,
        y1.specific_energy_kwh_per_m3
            .map_or("–".into(), |v| format!("{v:.3} kWh/m³")),
        y1.delivered_m3_per_person_day * 1000.0,
        r.storage_days_of_average_demand
    )));
    // reliability over the weather years
    if r.horizon_year.years_run > 1 {
        let e0 = &r.first_year;
        let e1 = &r.horizon_year;
        let rows = vec![
            vec![
                "median shortfall (h)".into(),
                format!("{:.0}", e0.median_shortfall_hours),
                format!("{:.0}", e1.median_shortfall_hours),
            ],
            vec![
                "1-in-10 shortfall (h)".into(),
                format!("{:.0}", e0.p90_shortfall_hours),
                format!("{:.0}", e1.p90_shortfall_hours),
            ],
            vec![
                "worst-year shortfall (h)".into(),
                format!("{:.0}", e0.worst_shortfall_hours),
                format!("{:.0}", e1.worst_shortfall_hours),
            ],
            vec![
                "median demand met (%)".into(),
                pct(e0.median_demand_met_fraction),
                pct(e1.median_demand_met_fraction),
            ],
            vec![
                "1-in-10 demand met (%)".into(),
                pct(e0.p10_demand_met_fraction),
                pct(e1.p10_demand_met_fraction),
            ],
            vec![
                "weather years missing the target (allowed)".into(),
                format!("{} ({})", e0.years_failing, e0.years_allowed_to_fail),
                format!("{} ({})", e1.years_failing, e1.years_allowed_to_fail),
            ],
        ];
        let h0 = format!("{}", e0.year);
        let h1 = format!("{}", e1.year);
        b.push(weighted(
            table(
                &format!("Reliability over {} weather years", e1.years_run),
                &["figure", &h0, &h1],
                rows,
                &[Align::Left, Align::Right, Align::Right],
            ),
            &[2.5, 1.0, 1.0],
        ));
    }
    let rows: Vec<Vec<String>> = r
        .horizon
        .iter()
        .map(|x| {
            vec![
                x.year.to_string(),
                format!("{:.0}", x.population),
                format!("{:.1}", x.demand_m3_per_day),
                format!("{:.0}", x.shortfall_hours),
                pct(x.demand_met_fraction),
                if x.meets_target { "met" } else { "NOT met" }.into(),
            ]
        })
        .collect();
    b.push(table(
        "Year by year to the horizon (judged weather year of each)",
        &[
            "year",
            "population",
            "demand (m³/day)",
            "shortfall (h)",
            "demand met (%)",
            "target",
        ],
        rows,
        &[
            Align::Left,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Right,
            Align::Left,
        ],
    ));
}

fn choice_section(inp: &PlanInputs, b: &mut Vec<Block>) {
    let p = inp.plan;
    let s = &inp.model.scheme;
    let cur = &s.info.currency;
    b.push(heading(1, "The design choice"));
    b.push(para(format!(
        "The search looks for the least life-cycle cost design that meets the target ({}), judged on the {}.",
        p.target_text,
        judged_words(p.judged_on, p.weather_years)
    )));
    if !p.alternatives.is_empty() {
        let rows = p
            .alternatives
            .iter()
            .enumerate()
            .map(|(k, a)| {
                vec![
                    (k + 1).to_string(),
                    a.design_text.clone(),
                    format!("{:.0}", a.judged_shortfall_hours),
                    pct(a.judged_demand_met_fraction),
                    if a.meets_target { "yes" } else { "no" }.into(),
                    a.first_failing_year.map_or("–".into(), |y| y.to_string()),
                    grouped(a.cost.capital),
                    grouped(a.cost.npv),
                ]
            })
            .collect();
        let cap = format!("capital ({cur})");
        let npv = format!("NPV ({cur})");
        b.push(weighted(
            table(
                "Ranked alternatives: the cheapest design for each pump count",
                &[
                    "#",
                    "design",
                    "shortfall (h/yr)",
                    "met (%)",
                    "meets",
                    "first fails",
                    &cap,
                    &npv,
                ],
                rows,
                &[
                    Align::Right,
                    Align::Left,
                    Align::Right,
                    Align::Right,
                    Align::Left,
                    Align::Right,
                    Align::Right,
                    Align::Right,
                ],
            ),
            &[0.5, 3.6, 1.0, 0.8, 0.7, 0.8, 1.0, 1.0],
        ));
    }
    if !p.front.is_empty() {
        let pts: Vec<(f64, f64)> = p
            .front
            .iter()
            .map(|f| (f.judged_shortfall_hours, f.npv))
            .collect();
        let lo = pts.iter().map(|x| x.1).fold(f64::INFINITY, f64::min);
        let hi = pts.iter().map(|x| x.1).fold(f64::NEG_INFINITY, f64::max);
        let mut ser = vec![series(
            "tank sizes around the chosen one",
            pts.clone(),
            LineStyle::Solid,
            0.0,
            1.4,
        )];
        if let Some(t) = s.targets.max_shortfall_hours_per_year {
            ser.push(series(
                &format!("target: {t:.0} shortfall h/year"),
                vec![(t, lo), (t, hi)],
                LineStyle::Dashed,
                0.4,
                1.0,
            ));
        }
        if let Some(c) = &p.chosen {
            ser.push(series(
                "chosen design",
                vec![
                    (c.judged_shortfall_hours, lo),
                    (c.judged_shortfall_hours, c.cost.npv),
                    (0.0, c.cost.npv),
                ],
                LineStyle::Dotted,
                0.2,
                1.0,
            ));
        }
        b.push(Block::Chart(Chart::Line(LineChart {
            title: "Cost–reliability front (same pumps and drive, other tank sizes)".into(),
            x_label: "shortfall in the horizon year (h/year)".into(),
            y_label: format!("life-cycle cost ({cur})"),
            series: ser,
            x_range: None,
            y_range: None,
        })));
        let rows = p
            .front
            .iter()
            .map(|f| {
                vec![
                    f.design_text.clone(),
                    format!("{:.0}", f.judged_shortfall_hours),
                    pct(f.judged_demand_met_fraction),
                    grouped(f.npv),
                ]
            })
            .collect();
        let npv = format!("NPV ({cur})");
        b.push(weighted(
            table(
                "Cost–reliability front",
                &["design", "shortfall (h/yr)", "met (%)", &npv],
                rows,
                &[Align::Left, Align::Right, Align::Right, Align::Right],
            ),
            &[3.4, 1.0, 0.8, 1.0],
        ));
    }
    if !p.staging.is_empty() {
        let rows = p
            .staging
            .iter()
            .map(|st| {
                vec![
                    st.start_with.clone(),
                    st.fails_from_year
                        .map_or("does not fail".into(), |y| y.to_string()),
                    st.then_add.clone(),
                    grouped(st.capital_saving_pw),
                ]
            })
            .collect();
        let pw = format!("saved by waiting, PW ({cur})");
        b.push(weighted(
            table(
                "Horizon staging: build less now, add the rest when the smaller design first fails",
                &["start with", "first fails", "then add", &pw],
                rows,
                &[Align::Left, Align::Right, Align::Left, Align::Right],
            ),
            &[3.2, 0.9, 1.4, 1.2],
        ));
    }
    if !p.sensitivity.is_empty() {
        let rows = p
            .sensitivity
            .iter()
            .map(|r| {
                if r.applicable {
                    vec![
                        r.case.clone(),
                        format!("{:.0}", r.judged_shortfall_hours),
                        pct(r.judged_demand_met_fraction),
                        if r.meets_target { "yes" } else { "no" }.into(),
                        grouped(r.npv),
                    ]
                } else {
                    vec![
                        r.case.clone(),
                        "not applicable".into(),
                        "–".into(),
                        "–".into(),
                        "–".into(),
                    ]
                }
            })
            .collect();
        let npv = format!("NPV ({cur})");
        b.push(weighted(
            table(
                "Sensitivity of the design shown, horizon year",
                &["case", "shortfall (h/yr)", "met (%)", "meets", &npv],
                rows,
                &[
                    Align::Left,
                    Align::Right,
                    Align::Right,
                    Align::Left,
                    Align::Right,
                ],
            ),
            &[2.4, 1.1, 0.8, 0.7, 1.0],
        ));
    }
    if let Some(md) = &p.mean_days {
        b.push(heading(2, "Mean days against the weather ensemble"));
        b.push(para(md.explanation.clone()));
    } else if s.uses_solar() {
        b.push(para(
            match s.weather.mode {
                WeatherMode::MeanDays => "The solar drive is simulated on mean days only (weather mode `mean_days`): every day of a month is its average, so runs of cloudy days are not represented and the tank may be undersized for them.",
                _ => "The mean-day comparison was not computed for this plan.",
            },
        ));
    }
    let st = &p.stats;
    b.push(heading(2, "Search statistics"));
    b.push(para(format!(
        "{} pump sets × {} array sizes × {} tank sizes = {} designs in the ranges; {} ensemble checks and {} year-simulations were run (bisection over tank sizes, branch and bound over array sizes and a cost lower bound avoid the rest).",
        st.pump_sets,
        st.array_sizes,
        st.tank_sizes,
        grouped(st.designs_in_ranges as f64),
        grouped(st.designs_evaluated as f64),
        grouped(st.year_simulations as f64)
    )));
    if !p.notes.is_empty() {
        b.push(Block::BulletList(
            p.notes.iter().map(|n| format!("Note: {n}")).collect(),
        ));
    }
}

fn checks_section(inp: &PlanInputs, b: &mut Vec<Block>) {
    b.push(heading(1, "Checks"));
    if inp.checks.is_empty() {
        b.push(para("checks not run"));
        return;
    }
    let rows = inp
        .checks
        .iter()
        .map(|c| {
            vec![
                c.rule.clone(),
                c.status.clone(),
                c.value.clone(),
                c.limit.clone(),
                c.source.clone(),
            ]
        })
        .collect();
    b.push(weighted(
        table(
            "Proposal checks",
            &["rule", "status", "value", "limit", "source"],
            rows,
            &[Align::Left; 5],
        ),
        &[1.3, 0.7, 1.0, 1.0, 2.2],
    ));
}

fn method_section(inp: &PlanInputs, b: &mut Vec<Block>) {
    let s = &inp.model.scheme;
    let r = &inp.plan.report;
    b.push(heading(1, "Method notes"));
    let mut m = vec![
        "Tank balance: hourly steps over a 365-day year for the base year and every year to the horizon; shortfall hours count hours with unmet demand.".to_string(),
        "Demand: geometric or arithmetic population growth; per-person and per-unit allowances; losses as a share of the water supplied; a 24-hour profile and monthly factors.".into(),
        "Rising main friction: Colebrook–White (Darcy–Weisbach) solved by Newton iteration from the explicit Swamee–Jain start (Swamee & Jain 1976), or Hazen–Williams; fittings by ΣK·v²/2g.".into(),
        "Aquifer drawdown: Theis (1935) with superposition in time of the hourly pumping (Kruseman & de Ridder, Analysis and Evaluation of Pumping Test Data, 1994); well loss by Jacob's law BQ + CQ² (Jacob 1947).".into(),
        "Pump curves: monotone piecewise-cubic interpolation of the measured points (Fritsch & Carlson 1980); other speeds and parallel units by the affinity laws (Karassik et al., Pump Handbook); operating point where the pump curve meets the system curve.".into(),
    ];
    if s.uses_solar() {
        m.push("Sun geometry, extraterrestrial irradiation and the clearness index after Duffie & Beckman, Solar Engineering of Thermal Processes (3rd ed., 2006).".into());
        m.push("Daily to hourly irradiation: Collares-Pereira & Rabl (1979) for global and Liu & Jordan (1960) for diffuse, each day's 24 hourly values rescaled so they sum exactly to the day's total (the formulas evaluated at hour midpoints miss it slightly: under 1 % at the equator); diffuse fraction by Erbs et al. (1982); isotropic-sky transposition to the tilted array (Liu & Jordan); cell temperature by the NOCT model; PV power linear in irradiance with a temperature coefficient and a derate chain.".into());
        match &s.weather.mode {
            WeatherMode::Synthetic { seed, years } => m.push(format!(
                "Weather: {years} synthetic years (seed {seed}) of daily clearness with day-to-day persistence: a Gaussian AR(1) sequence (Graham, Hollands & Unny 1988) mapped through the Bendt, Collares-Pereira & Rabl (1981) distribution of daily clearness, each month rescaled to the given monthly mean."
            )),
            WeatherMode::File { .. } => m.push("Weather: the hourly weather file named in the scheme (embedded in this PDF), one weather year per calendar year in the file.".into()),
            WeatherMode::MeanDays => m.push("Weather: mean days (every day of a month is its monthly mean day).".into()),
        }
    }
    m.push("Costs: present worth of capital, replacements, salvage, maintenance and energy with end-of-year cash flows (Newnan, Eschenbach & Lavelle, Engineering Economic Analysis, ch. 5); operation in the years between the first and the horizon year is interpolated linearly; cost per m³ is the NPV over the discounted delivered volume.".into());
    m.push("Search: least cost over pump sets, array sizes and tank sizes; the smallest adequate tank by bisection and, over array sizes, branch and bound, stopping wherever a cost lower bound shows no cheaper design can follow (shortfall assumed not to rise with tank or array size, nor, when the population grows, to fall from year to year; during the search a weather year's verdict may be inferred from its verdicts at other sizes and years); the first year a design misses the target by bisection over the years; the chosen design and the next smaller tank are confirmed from simulated weather years only.".into());
    b.push(Block::BulletList(m));
    b.push(heading(2, "Assumptions and operating rules"));
    let mut a: Vec<String> = r.rules.clone();
    for w in &s.warnings {
        a.push(format!("Warning from the scheme check: {w}"));
    }
    b.push(Block::BulletList(a));
    b.push(heading(2, "Cautions"));
    b.push(Block::BulletList(vec![
        "Test the water quality (microbiological and chemical) before the supply is used, and again in service.".into(),
        "Protect the source: wellhead seal, apron and drainage, and safe distance from latrines and livestock.".into(),
        "Elevated tanks and their stands must be designed by a qualified structural engineer.".into(),
        "PV arrays, generators and mains connections must be installed and earthed by qualified electricians; isolate before maintenance.".into(),
        "Figures depend on the inputs: confirm the borehole yield by a pumping test and the pump curve with the supplier before ordering.".into(),
    ]));
    b.push(para(
        "This plan is a planning aid. It defers to local codes, water-quality standards and licensed professional practice, and it does not certify any design, product or installation.",
    ));
}

fn appendix(inp: &PlanInputs, b: &mut Vec<Block>) {
    b.push(Block::PageBreak);
    b.push(heading(1, "Appendix: the scheme file"));
    b.push(para(format!(
        "File {} ({} bytes), SHA-256 {}. The file is embedded in this PDF as `{}` with the key figures as `{}`{}. `tapplan verify` re-runs the plan from them and compares.",
        inp.scheme_file_name,
        inp.scheme_bytes.len(),
        sha256_hex(inp.scheme_bytes),
        SCHEME_ATTACHMENT,
        FIGURES_ATTACHMENT,
        inp.weather_file.map_or(String::new(), |w| format!(
            " and the weather file {} as `{}`",
            w.name,
            weather_attachment_name(w.name)
        ))
    )));
    if let Some(o) = &inp.overrides {
        let mut parts = Vec::new();
        if let Some(t) = o.tank_m3 {
            parts.push(format!("--tank-m3 {}", fmt_g(t)));
        }
        for (n, u) in &o.pumps {
            parts.push(format!("--pumps {n}={u}"));
        }
        if let Some(k) = o.array_kwp {
            parts.push(format!("--array-kwp {}", fmt_g(k)));
        }
        b.push(para(format!(
            "Design given on the command line: {}.",
            parts.join(" ")
        )));
    }
    let text = String::from_utf8_lossy(inp.scheme_bytes);
    let lines: Vec<String> = text.lines().map(|l| l.replace('\t', "    ")).collect();
    b.push(Block::Preformatted(lines));
}

/// A finished plan: the PDF bytes and its key figures.
#[derive(Debug, Clone)]
pub struct PlanRun {
    pub pdf: Vec<u8>,
    pub figures: Figures,
    /// True when the design shown meets the target in the horizon year.
    pub target_met: bool,
    /// True when the design shown fails no rule of severity fail (the verdict of `check`).
    pub acceptable: bool,
}

/// The whole `plan` pipeline for a loaded scheme: prepare the model, size the scheme (or
/// evaluate the design given by `overrides`), keep the horizon year's judged weather year
/// hourly, read the weather file when the mode is `file`, and assemble and render the PDF.
/// `scheme_bytes` are the file's exact bytes (embedded and hashed); `scheme_file_name` is
/// printed in the appendix. Same inputs, same bytes.
pub fn run_plan(
    loaded: &crate::scheme::Loaded,
    scheme_bytes: &[u8],
    scheme_file_name: &str,
    overrides: Option<&crate::simulate::DesignOverrides>,
    rules: &crate::rules::RuleSet,
    rules_file: Option<RulesFile<'_>>,
) -> Result<PlanRun, crate::error::Error> {
    use crate::error::Error;
    let s = &loaded.scheme;
    let m = Model::new(s)?;
    let mut plan = match overrides {
        Some(o) => {
            let d = crate::simulate::resolve_design(s, o).map_err(Error::Input)?;
            crate::sizing::evaluate_fixed(&m, &d)?
        }
        None => crate::sizing::size_with_rules(&m, rules)?,
    };
    plan.verdict = Some(crate::sizing::judge(s, &plan.report, rules));
    // the plan shows the year-by-year table (a fixed design's report already has it)
    crate::sizing::complete_horizon(&m, &mut plan);
    let detail = m.run_year(
        &plan.report.design,
        s.info.horizon_years,
        plan.report.horizon_year.representative,
        true,
    );
    let weather = match &s.weather.mode {
        WeatherMode::File { path } => {
            let bytes = std::fs::read(path).map_err(|e| {
                Error::Input(format!(
                    "could not read the weather file '{}' to embed it: {e}",
                    path.display()
                ))
            })?;
            let name = path
                .strip_prefix(&loaded.source.base_dir)
                .unwrap_or(path)
                .to_string_lossy()
                .replace('\\', "/");
            Some((name, bytes))
        }
        _ => None,
    };
    // the proposal checks of the design the plan presents
    let checks: Vec<CheckRow> = crate::rules::evaluate(s, &plan.report, rules)
        .into_iter()
        .map(|o| CheckRow {
            rule: o.id,
            status: o.status.name().to_string(),
            value: o.value.unwrap_or_else(|| "-".into()),
            limit: o.limit,
            source: o.source,
        })
        .collect();
    let pumping_tests = crate::output::pumptest::plan_pages(loaded)?;
    let comparison = match (overrides, crate::simulate::Design::from_scheme(s)) {
        (None, Ok(file_design)) => Some([
            crate::sizing::summarise_design(&m, &file_design, rules),
            crate::sizing::summarise_design(&m, &plan.report.design, rules),
        ]),
        _ => None,
    };
    let record = overrides.map(|o| OverridesRecord {
        tank_m3: o.tank_m3,
        pumps: o.pumps.clone(),
        array_kwp: o.array_kwp,
    });
    let inp = PlanInputs {
        plan: &plan,
        model: &m,
        horizon_detail: &detail,
        scheme_file_name,
        scheme_bytes,
        weather_file: weather
            .as_ref()
            .map(|(n, b)| WeatherFile { name: n, bytes: b }),
        rules_file,
        overrides: record,
        checks: &checks,
        pumping_tests: &pumping_tests,
        comparison,
    };
    let pdf = plan_pdf(&inp).map_err(|e| Error::Input(format!("could not make the PDF: {e}")))?;
    Ok(PlanRun {
        pdf,
        figures: figures(&inp),
        target_met: plan.chosen.is_some(),
        acceptable: plan.verdict.as_ref().is_none_or(|v| v.acceptable),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_matches_the_published_test_vector() {
        // FIPS 180-2, Appendix B.1: SHA-256("abc").
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn regrouping_helpers() {
        // two days: hour h has value h on day 1 and h + 2 on day 2 -> mean h + 1
        let v: Vec<f64> = (0..48)
            .map(|i| (i % 24) as f64 + if i >= 24 { 2.0 } else { 0.0 })
            .collect();
        let a = average_day(&v);
        assert_eq!(a[0], 1.0);
        assert_eq!(a[23], 24.0);
        assert_eq!(daily_min(&v), vec![0.0, 2.0]);
        let ones = vec![1.0; 8760];
        let m = monthly_sum(&ones);
        assert_eq!(m[0], 31.0 * 24.0);
        assert_eq!(m[1], 28.0 * 24.0);
        assert_eq!(m.iter().sum::<f64>(), 8760.0);
        assert_eq!(grouped(84744.4), "84 744");
        assert_eq!(grouped(999.0), "999");
        assert_eq!(grouped(1_000_000.0), "1 000 000");
    }

    #[test]
    fn figure_differences_are_named() {
        let f = Figures {
            format: 1,
            scheme: "x".into(),
            scheme_sha256: "a".into(),
            scheme_file_name: "x.yaml".into(),
            target_met: true,
            design: "d".into(),
            tank_m3: 60.0,
            units: vec![PumpUnits {
                pump: "P".into(),
                units: 2,
            }],
            array_kwp: Some(6.0),
            shortfall_hours_first_year: 1.0,
            shortfall_hours_horizon_year: 10.0,
            demand_met_percent_first_year: 99.0,
            demand_met_percent_horizon_year: 98.0,
            npv: Some(1000.0),
            currency: "USD".into(),
            overrides: None,
            weather_file: None,
            failing_rules: Vec::new(),
            rules_file: None,
        };
        assert!(f.differences(&f.clone()).is_empty());
        let mut g = f.clone();
        g.tank_m3 = 65.0;
        g.units[0].units = 3;
        let d = f.differences(&g);
        assert_eq!(d.len(), 2, "{d:?}");
        assert!(d[0].starts_with("tank_m3"));
        assert!(d[1].starts_with("units"));
    }
}
