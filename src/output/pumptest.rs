//! Renderers of a pumping-test report: terminal text, and the PDF page set (semi-log and
//! log–log plots of the readings with the fitted lines, drawn through the project's PDF
//! layer). They only present [`crate::pumptest::Report`]; nothing is recomputed here except
//! the fitted curves sampled for drawing.

use crate::output::pdf::{
    Align, Attachment, Block, Chart, Document, LineChart, LineStyle, Meta, PdfError, Series,
    Table as PdfTable, document_to_pdf,
};
use crate::output::table::new_table;
use crate::pumptest::{Report, WellAnalysis, plain};

/// Drawdowns below this are left off the log–log plot (reading precision), m.
const LOGLOG_MIN_M: f64 = 0.01;

fn m3h(q: f64) -> String {
    format!("{:.2}", q * 3600.0)
}

fn m2d(t: f64) -> String {
    plain(t * 86_400.0, 4)
}

fn minutes(s: f64) -> String {
    plain(s / 60.0, 4)
}

fn well_name(w: &WellAnalysis) -> String {
    match w.distance_m {
        None => "pumped well".into(),
        Some(d) => format!("observation well at {} m", plain(d, 4)),
    }
}

/// Rows of the constant-rate results: well, method, T, S, fit quality, validity.
fn constant_rate_rows(r: &Report) -> Vec<Vec<String>> {
    let mut rows = Vec::new();
    let Some(cr) = &r.constant_rate else {
        return rows;
    };
    for w in &cr.wells {
        let name = well_name(w);
        let apparent = if w.distance_m.is_none() {
            " (apparent)"
        } else {
            ""
        };
        if let Some(c) = &w.cooper_jacob {
            rows.push(vec![
                name.clone(),
                "Cooper–Jacob, late time".into(),
                m2d(c.t_m2_per_s),
                format!("{}{apparent}", plain(c.storativity, 3)),
                format!(
                    "rms {:.3} m, {} readings {}–{} min",
                    c.rms_m,
                    c.points_used,
                    minutes(c.first_time_s),
                    minutes(c.last_time_s)
                ),
                format!(
                    "u = {} at the first: {}",
                    plain(c.u_at_first, 2),
                    if c.u_valid {
                        "valid (< 0.05)"
                    } else {
                        "NOT valid (≥ 0.05)"
                    }
                ),
            ]);
        }
        if let Some(f) = &w.theis {
            rows.push(vec![
                name.clone(),
                "Theis, least squares".into(),
                m2d(f.t_m2_per_s),
                format!("{}{apparent}", plain(f.storativity, 3)),
                format!(
                    "rms {:.3} m, largest {:.3} m, {} readings",
                    f.rms_m, f.max_abs_residual_m, f.points_used
                ),
                if f.converged {
                    "converged".into()
                } else {
                    "NOT converged".into()
                },
            ]);
        }
        if let Some(rc) = &w.theis_recovery {
            rows.push(vec![
                name.clone(),
                "Theis recovery".into(),
                m2d(rc.t_m2_per_s),
                "–".into(),
                format!(
                    "rms {:.3} m, {} readings, t/t′ up to {}",
                    rc.rms_m,
                    rc.points_used,
                    plain(rc.largest_ratio, 3)
                ),
                format!("line meets t/t′ = 1 at {:.3} m", rc.intercept_m),
            ]);
        }
    }
    rows
}

const CR_HEADER: [&str; 6] = ["well", "method", "T (m²/day)", "S (–)", "fit", "validity"];
const STEP_HEADER: [&str; 7] = [
    "step",
    "rate (m³/h)",
    "start (min)",
    "s at Δt (m)",
    "correction (m)",
    "corrected s (m)",
    "s/Q (s/m²)",
];

fn step_rows(r: &Report) -> Vec<Vec<String>> {
    let Some(st) = &r.step else {
        return Vec::new();
    };
    st.hantush_bierschenk
        .points
        .iter()
        .zip(&st.steps)
        .enumerate()
        .map(|(i, (p, s))| {
            vec![
                format!("{}", i + 1),
                m3h(p.q_m3_per_s),
                minutes(s.1),
                format!("{:.3}", p.observed_m),
                format!("{:.3}", p.correction_m),
                format!("{:.3}", p.corrected_m),
                plain(p.specific_s_per_m2, 4),
            ]
        })
        .collect()
}

fn figure_rows(r: &Report) -> Vec<(String, String)> {
    let f = &r.figures;
    let mut v = Vec::new();
    if let Some(t) = f.t_m2_per_s {
        v.push((
            "transmissivity".into(),
            format!("{} m²/day ({})", m2d(t), f.t_source),
        ));
    }
    if let Some(s) = f.storativity {
        v.push((
            "storativity".into(),
            format!("{} ({})", plain(s, 3), f.s_source),
        ));
    }
    if let Some(wl) = &f.well_losses {
        v.push((
            "B(Δt), Hantush–Bierschenk".into(),
            format!(
                "{} s/m² at Δt = {} min",
                plain(wl.b_total_s_per_m2, 4),
                minutes(wl.dt_s)
            ),
        ));
        if let Some(a) = wl.b_aquifer_s_per_m2 {
            v.push((
                "aquifer loss at the well face".into(),
                format!("{} s/m² (Theis at r_w, Δt)", plain(a, 4)),
            ));
        }
        v.push((
            "linear well loss B".into(),
            format!("{} s/m²", plain(wl.b_well_s_per_m2, 4)),
        ));
        v.push((
            "quadratic well loss C".into(),
            format!("{} s²/m⁵", plain(wl.c_s2_per_m5, 4)),
        ));
    }
    v.push((
        "tested yield".into(),
        format!("{} m³/h ({})", m3h(f.tested_m3_per_s), f.tested_source),
    ));
    v.push((
        "available drawdown".into(),
        format!(
            "{:.2} m (intake {} m − margin {} m − static level {} m)",
            f.available_drawdown_m,
            plain(r.borehole.intake_depth_m, 4),
            plain(r.borehole.submergence_margin_m, 3),
            plain(r.borehole.static_depth_m, 4)
        ),
    ));
    if let Some(sy) = &f.safe_yield {
        v.push((
            "rate at the drawdown limit".into(),
            format!(
                "{} m³/h after {} days",
                m3h(sy.q_drawdown_limit_m3_per_s),
                plain(r.settings.pumping_days, 3)
            ),
        ));
        v.push((
            "recommended safe yield".into(),
            format!(
                "{} m³/h ({} of the tested rate; set by {}); predicted drawdown {:.2} m",
                m3h(sy.q_m3_per_s),
                plain(f.safe_yield_fraction, 2),
                match sy.limit {
                    crate::physics::pumping_test::YieldLimit::Drawdown => "the drawdown limit",
                    crate::physics::pumping_test::YieldLimit::TestedFraction =>
                        "the cap on the tested rate",
                },
                sy.drawdown_at_recommended_m
            ),
        ));
    } else {
        v.push((
            "recommended safe yield".into(),
            format!(
                "{} m³/h ({} of the tested rate)",
                m3h(f.tested_m3_per_s * f.safe_yield_fraction),
                plain(f.safe_yield_fraction, 2)
            ),
        ));
    }
    v
}

/// The report as terminal text: tables, figures, rule, notes and the scheme block.
pub fn text(r: &Report, scheme_block: &str) -> String {
    let mut s = String::new();
    let b = &r.borehole;
    s.push_str(&format!("Pumping test of {} ({})\n", b.name, r.file));
    s.push_str(&format!(
        "Borehole: diameter {} mm, static level {} m, intake {} m, margin {} m below ground\n\n",
        plain(b.diameter_m * 1000.0, 4),
        plain(b.static_depth_m, 4),
        plain(b.intake_depth_m, 4),
        plain(b.submergence_margin_m, 3)
    ));
    if let Some(cr) = &r.constant_rate {
        s.push_str(&format!(
            "Constant-rate test `{}` ({}): {} m³/h for {} h\n",
            cr.test,
            cr.file,
            m3h(cr.rate_m3_per_s),
            plain(cr.pumping_time_s / 3600.0, 4)
        ));
        let mut t = new_table(&CR_HEADER);
        for row in constant_rate_rows(r) {
            t.add_row(row);
        }
        s.push_str(&format!("{t}\n\n"));
    }
    if let Some(st) = &r.step {
        let hb = &st.hantush_bierschenk;
        s.push_str(&format!(
            "Step-drawdown test `{}` ({}): Hantush–Bierschenk at Δt = {} min; correction with {}\n",
            st.test,
            st.file,
            minutes(hb.dt_s),
            st.correction_t_source
        ));
        let mut t = new_table(&STEP_HEADER);
        for row in step_rows(r) {
            t.add_row(row);
        }
        s.push_str(&format!("{t}\n"));
        s.push_str(&format!(
            "s/Q = B + C·Q: B = {} s/m², C = {} s²/m⁵{}\n\n",
            plain(hb.b_s_per_m2, 4),
            plain(hb.c_s2_per_m5, 4),
            hb.r_squared
                .map(|v| format!(", R² = {v:.4}"))
                .unwrap_or_else(|| " (two steps: the line is exact)".into())
        ));
    }
    let mut t = new_table(&["figure", "value"]);
    for (k, v) in figure_rows(r) {
        t.add_row(vec![k, v]);
    }
    s.push_str(&format!("{t}\n"));
    if !r.figures.efficiency.is_empty() {
        let mut t = new_table(&["well efficiency at", "rate (m³/h)", "efficiency (%)"]);
        for (what, q, e) in &r.figures.efficiency {
            t.add_row(vec![what.clone(), m3h(*q), format!("{:.0}", e * 100.0)]);
        }
        s.push_str(&format!("{t}\n"));
    }
    s.push_str(&format!(
        "Safe-yield rule: {}.\n",
        r.figures.safe_yield_rule
    ));
    s.push_str("\nAssumptions:\n");
    for a in &r.assumptions {
        s.push_str(&format!("  - {a}\n"));
    }
    if !r.notes.is_empty() {
        s.push_str("\nNotes:\n");
        for n in &r.notes {
            s.push_str(&format!("  note: {n}\n"));
        }
    }
    s.push_str("\nBorehole block for the scheme file (paste under the scheme's top level):\n\n");
    s.push_str(scheme_block);
    s
}

/// Times from t0 to t1 (s) spaced evenly in log time, for drawing curves.
fn log_times(t0: f64, t1: f64, n: usize) -> Vec<f64> {
    let (a, b) = (t0.max(1e-3).ln(), t1.max(t0 * 1.0001).ln());
    (0..n)
        .map(|i| (a + (b - a) * i as f64 / (n - 1) as f64).exp())
        .collect()
}

fn series(name: String, points: Vec<(f64, f64)>, style: LineStyle, grey: f32, w: f32) -> Series {
    Series {
        name,
        points,
        style,
        grey,
        width_pt: w,
    }
}

/// Blocks of the pumping-test pages: tables and the plots. Used alone (the page set, `level`
/// 1, with the scheme block) and on the plan's source page (`level` 2, without it).
pub fn blocks(r: &Report, scheme_block: Option<&str>, level: u8) -> Vec<Block> {
    let mut out = Vec::new();
    let b = &r.borehole;
    let sub = level + 1;
    out.push(Block::Heading {
        level,
        text: format!("Pumping test of {}", b.name),
    });
    out.push(Block::Paragraph(format!(
        "Records in {}. Borehole diameter {} mm; static water level {} m, pump intake {} m below ground, {} m of water kept above the intake.",
        r.file,
        plain(b.diameter_m * 1000.0, 4),
        plain(b.static_depth_m, 4),
        plain(b.intake_depth_m, 4),
        plain(b.submergence_margin_m, 3)
    )));
    out.push(Block::Table(PdfTable {
        caption: Some("Figures for the scheme file".into()),
        header: vec!["figure".into(), "value".into()],
        rows: figure_rows(r)
            .into_iter()
            .map(|(k, v)| vec![k, v])
            .collect(),
        column_align: vec![Align::Left, Align::Left],
        column_weights: Some(vec![1.0, 2.6]),
    }));
    out.push(Block::Paragraph(format!(
        "Safe-yield rule: {}.",
        r.figures.safe_yield_rule
    )));
    if let Some(cr) = &r.constant_rate {
        out.push(Block::Heading {
            level: sub,
            text: format!(
                "Constant-rate test: {} m³/h for {} h",
                m3h(cr.rate_m3_per_s),
                plain(cr.pumping_time_s / 3600.0, 4)
            ),
        });
        out.push(Block::Table(PdfTable {
            caption: Some("Fitted parameters, fit quality and validity".into()),
            header: CR_HEADER.iter().map(|s| s.to_string()).collect(),
            rows: constant_rate_rows(r),
            column_align: vec![Align::Left; 6],
            column_weights: Some(vec![1.2, 1.2, 0.8, 0.9, 1.7, 1.3]),
        }));
        let q = cr.rate_m3_per_s;
        let mut semi = Vec::new();
        let mut loglog = Vec::new();
        for (i, w) in cr.wells.iter().enumerate() {
            let grey = if i == 0 { 0.0 } else { 0.45 };
            let name = well_name(w);
            let data: Vec<(f64, f64)> = w
                .pumping
                .iter()
                .map(|(t, s)| ((t / 60.0).log10(), *s))
                .collect();
            semi.push(series(
                format!("{name}: readings"),
                data,
                LineStyle::Dotted,
                grey,
                1.6,
            ));
            loglog.push(series(
                format!("{name}: readings"),
                w.pumping
                    .iter()
                    .filter(|(_, s)| *s >= LOGLOG_MIN_M)
                    .map(|(t, s)| ((t / 60.0).log10(), s.log10()))
                    .collect(),
                LineStyle::Dotted,
                grey,
                1.6,
            ));
            let (t0, t1) = (
                w.pumping.first().map_or(1.0, |p| p.0),
                w.pumping.last().map_or(2.0, |p| p.0),
            );
            if let Some(c) = &w.cooper_jacob {
                let pts = [c.first_time_s.min(t0), t1]
                    .iter()
                    .map(|&t| {
                        let (sdd, _) = crate::physics::aquifer::cooper_jacob_drawdown_m(
                            q,
                            c.t_m2_per_s,
                            c.storativity,
                            w.r_m,
                            t,
                        );
                        ((t / 60.0).log10(), sdd)
                    })
                    .collect();
                semi.push(series(
                    format!("{name}: Cooper–Jacob line"),
                    pts,
                    LineStyle::Solid,
                    grey,
                    0.9,
                ));
            }
            if let Some(f) = &w.theis {
                let curve: Vec<(f64, f64)> = log_times(t0, t1, 60)
                    .into_iter()
                    .map(|t| (t, crate::pumptest::fitted_theis_m(q, f, w.r_m, t)))
                    .collect();
                semi.push(series(
                    format!("{name}: Theis fit"),
                    curve
                        .iter()
                        .map(|(t, s)| ((t / 60.0).log10(), *s))
                        .collect(),
                    LineStyle::Dashed,
                    grey,
                    0.9,
                ));
                loglog.push(series(
                    format!("{name}: Theis fit"),
                    curve
                        .iter()
                        .filter(|(_, s)| *s >= LOGLOG_MIN_M)
                        .map(|(t, s)| ((t / 60.0).log10(), s.log10()))
                        .collect(),
                    LineStyle::Dashed,
                    grey,
                    0.9,
                ));
            }
        }
        out.push(Block::Chart(Chart::Line(LineChart {
            title: "Semi-log plot: drawdown against time".into(),
            x_label:
                "time since pumping started, log₁₀ min (1 = 10 min, 2 = 100 min, 3 = 1000 min)"
                    .into(),
            y_label: "drawdown (m)".into(),
            series: semi,
            x_range: None,
            y_range: None,
        })));
        out.push(Block::Chart(Chart::Line(LineChart {
            title: "Log–log plot: drawdown against time".into(),
            x_label: "time since pumping started, log₁₀ min (1 = 10 min, 2 = 100 min)".into(),
            y_label: "drawdown, log₁₀ m (0 = 1 m, −1 = 0.1 m)".into(),
            series: loglog,
            x_range: None,
            y_range: None,
        })));
        let mut rec = Vec::new();
        for (i, w) in cr.wells.iter().enumerate() {
            if w.recovery.is_empty() {
                continue;
            }
            let grey = if i == 0 { 0.0 } else { 0.45 };
            let tp = cr.pumping_time_s;
            rec.push(series(
                format!("{}: residual drawdown", well_name(w)),
                w.recovery
                    .iter()
                    .map(|(t, s)| (((tp + t) / t).log10(), *s))
                    .collect(),
                LineStyle::Dotted,
                grey,
                1.6,
            ));
            if let Some(rc) = &w.theis_recovery {
                let slope = rc.slope_m_per_log_cycle;
                let xmax = rc.largest_ratio.log10();
                rec.push(series(
                    format!("{}: recovery line", well_name(w)),
                    vec![(0.0, rc.intercept_m), (xmax, rc.intercept_m + slope * xmax)],
                    LineStyle::Solid,
                    grey,
                    0.9,
                ));
            }
        }
        if !rec.is_empty() {
            out.push(Block::Chart(Chart::Line(LineChart {
                title: "Theis recovery: residual drawdown against t/t′".into(),
                x_label: "t/t′ (since pumping started / since it stopped), log₁₀ (1 = 10)".into(),
                y_label: "residual drawdown (m)".into(),
                series: rec,
                x_range: None,
                y_range: None,
            })));
        }
    }
    if let Some(st) = &r.step {
        let hb = &st.hantush_bierschenk;
        out.push(Block::Heading {
            level: sub,
            text: format!(
                "Step-drawdown test: Hantush–Bierschenk at Δt = {} min",
                minutes(hb.dt_s)
            ),
        });
        out.push(Block::Paragraph(format!(
            "Each step is read Δt after its start and corrected for the earlier steps by Cooper–Jacob superposition, with the {}.",
            st.correction_t_source
        )));
        out.push(Block::Table(PdfTable {
            caption: Some("Drawdown of each step at Δt, corrected for the earlier steps".into()),
            header: STEP_HEADER.iter().map(|s| s.to_string()).collect(),
            rows: step_rows(r),
            column_align: vec![Align::Right; 7],
            column_weights: None,
        }));
        out.push(Block::Chart(Chart::Line(LineChart {
            title: "Step test: drawdown in the pumped well against time".into(),
            x_label: "time since the test started (min)".into(),
            y_label: "drawdown (m)".into(),
            series: vec![series(
                "readings".into(),
                st.readings.iter().map(|(t, s)| (t / 60.0, *s)).collect(),
                LineStyle::Solid,
                0.0,
                0.9,
            )],
            x_range: None,
            y_range: None,
        })));
        let qs: Vec<f64> = hb.points.iter().map(|p| p.q_m3_per_s).collect();
        let (qlo, qhi) = qs
            .iter()
            .fold((f64::MAX, 0.0_f64), |(a, b), q| (a.min(*q), b.max(*q)));
        out.push(Block::Chart(Chart::Line(LineChart {
            title: "Hantush–Bierschenk plot: s/Q against Q".into(),
            x_label: "rate Q (m³/h)".into(),
            y_label: "specific drawdown s/Q (s/m²)".into(),
            series: vec![
                series(
                    "steps (corrected)".into(),
                    hb.points
                        .iter()
                        .map(|p| (p.q_m3_per_s * 3600.0, p.specific_s_per_m2))
                        .collect(),
                    LineStyle::Dotted,
                    0.0,
                    1.6,
                ),
                series(
                    "fitted line B + C·Q".into(),
                    [qlo * 0.9, qhi * 1.05]
                        .iter()
                        .map(|q| (q * 3600.0, hb.b_s_per_m2 + hb.c_s2_per_m5 * q))
                        .collect(),
                    LineStyle::Solid,
                    0.3,
                    0.9,
                ),
            ],
            x_range: None,
            y_range: None,
        })));
    }
    if !r.figures.efficiency.is_empty() {
        out.push(Block::Table(PdfTable {
            caption: Some("Well efficiency (aquifer loss / total drawdown at Δt)".into()),
            header: vec!["at".into(), "rate (m³/h)".into(), "efficiency (%)".into()],
            rows: r
                .figures
                .efficiency
                .iter()
                .map(|(w, q, e)| vec![w.clone(), m3h(*q), format!("{:.0}", e * 100.0)])
                .collect(),
            column_align: vec![Align::Left, Align::Right, Align::Right],
            column_weights: None,
        }));
    }
    out.push(Block::Heading {
        level: sub,
        text: "Assumptions and notes".into(),
    });
    let mut items: Vec<String> = r.assumptions.clone();
    items.extend(r.notes.iter().map(|n| format!("note: {n}")));
    out.push(Block::BulletList(items));
    if let Some(block) = scheme_block {
        out.push(Block::Heading {
            level: sub,
            text: "Borehole block for the scheme file".into(),
        });
        out.push(Block::Preformatted(
            block.lines().map(str::to_string).collect(),
        ));
    }
    out
}

/// The pumping-test page set as PDF bytes, with the test files attached.
pub fn pdf(
    r: &Report,
    scheme_block: &str,
    files: &[(String, Vec<u8>)],
) -> Result<Vec<u8>, PdfError> {
    let doc = Document {
        title: format!("Pumping test — {}", r.borehole.name),
        footer_label: r.borehole.name.clone(),
        blocks: blocks(r, Some(scheme_block), 1),
        attachments: files
            .iter()
            .map(|(name, bytes)| Attachment {
                name: attachment_name(name),
                mime: if name.ends_with(".csv") {
                    "text/csv".into()
                } else {
                    "application/yaml".into()
                },
                bytes: bytes.clone(),
                description: "pumping-test record".into(),
            })
            .collect(),
    };
    document_to_pdf(
        &doc,
        &Meta {
            title: format!("Pumping test — {}", r.borehole.name),
            subject: "pumping-test analysis".into(),
            author: "tapplan".into(),
            keywords: "pumping test, Theis, Cooper–Jacob, Hantush–Bierschenk".into(),
            date: None,
        },
    )
}

/// Name under which a test file travels inside a PDF.
pub fn attachment_name(name: &str) -> String {
    let base = std::path::Path::new(name)
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| name.to_string());
    format!("pumptest-{base}")
}

/// What the plan adds for boreholes whose scheme entry names a pumping-test file.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PlanPages {
    /// Blocks for the plan's source section.
    pub blocks: Vec<Block>,
    /// The test files, attached as `pumptest/` + their path relative to the scheme's folder.
    pub attachments: Vec<Attachment>,
}

/// Prefix of the attachment names of pumping-test files in a plan.
pub const PLAN_ATTACHMENT_PREFIX: &str = "pumptest/";

fn relative_name(path: &std::path::Path, base: &std::path::Path) -> String {
    path.strip_prefix(base)
        .unwrap_or(path)
        .to_string_lossy()
        .replace('\\', "/")
}

/// Reads and analyses the pumping-test file of every borehole that names one, for the plan.
pub fn plan_pages(loaded: &crate::scheme::Loaded) -> Result<PlanPages, crate::error::Error> {
    use crate::error::Error;
    let mut pages = PlanPages::default();
    let base = &loaded.source.base_dir;
    for bh in &loaded.scheme.boreholes {
        let Some(path) = &bh.pumping_test_file else {
            continue;
        };
        let yaml_name = relative_name(path, base);
        if !path.is_file() {
            pages.blocks.push(Block::Paragraph(format!(
                "The scheme names the pumping-test file {yaml_name} for borehole {}, but it is not beside the scheme file; the scheme's figures are used as written and the test cannot be shown.",
                bh.name
            )));
            continue;
        }
        let test = crate::pumptest::load_file(path).map_err(|e| {
            Error::Input(format!(
                "the pumping-test file of borehole {} cannot be used:\n{e}",
                bh.name
            ))
        })?;
        let mut report = crate::pumptest::analyse(&test).map_err(|e| {
            Error::Input(format!(
                "the pumping-test file of borehole {} cannot be analysed:\n{e}",
                bh.name
            ))
        })?;
        // The name relative to the scheme, so a re-run from elsewhere prints the same.
        report.file = yaml_name.clone();
        pages.blocks.push(Block::Paragraph(format!(
            "The figures of borehole {} come from the pumping test in {yaml_name}; the records travel inside this PDF.",
            bh.name
        )));
        pages.blocks.push(Block::Table(PdfTable {
            caption: Some(format!(
                "Borehole {}: the scheme file's figures against the pumping test",
                bh.name
            )),
            header: vec![
                "figure".into(),
                "scheme file".into(),
                "pumping test".into(),
                "agreement".into(),
            ],
            rows: comparison_rows(bh, &report),
            column_align: vec![Align::Left, Align::Right, Align::Right, Align::Left],
            column_weights: Some(vec![1.6, 1.0, 1.0, 1.0]),
        }));
        pages.blocks.extend(blocks(&report, None, 2));
        let dir = std::path::Path::new(&yaml_name)
            .parent()
            .map(|p| p.to_string_lossy().replace('\\', "/"))
            .unwrap_or_default();
        for (i, (name, bytes)) in test.files.iter().enumerate() {
            let rel = if i == 0 {
                yaml_name.clone()
            } else if dir.is_empty() {
                name.replace('\\', "/")
            } else {
                format!("{dir}/{}", name.replace('\\', "/"))
            };
            let att = Attachment {
                name: format!("{PLAN_ATTACHMENT_PREFIX}{rel}"),
                mime: if rel.ends_with(".csv") {
                    "text/csv".into()
                } else {
                    "application/yaml".into()
                },
                bytes: bytes.clone(),
                description: format!("Pumping-test record of borehole {}", bh.name),
            };
            if !pages.attachments.iter().any(|a| a.name == att.name) {
                pages.attachments.push(att);
            }
        }
    }
    Ok(pages)
}

/// Scheme figure against the test's, with agreement within 5 %.
pub fn comparison_rows(bh: &crate::scheme::Borehole, r: &Report) -> Vec<Vec<String>> {
    let f = &r.figures;
    let agree = |a: Option<f64>, b: Option<f64>| match (a, b) {
        (Some(a), Some(b)) if a == 0.0 && b.abs() < 1e-12 => "agree".to_string(),
        (Some(a), Some(b)) if a != 0.0 && ((b - a) / a).abs() <= 0.05 => {
            "agree (within 5 %)".to_string()
        }
        (Some(_), Some(_)) => "DIFFER by more than 5 %".to_string(),
        _ => "–".to_string(),
    };
    let show = |v: Option<f64>, sig: i32| v.map_or("–".to_string(), |v| plain(v, sig));
    let wl = f.well_losses.as_ref();
    let rows: Vec<(&str, Option<f64>, Option<f64>, i32)> = vec![
        (
            "transmissivity (m²/day)",
            bh.transmissivity_m2_per_s.map(|t| t * 86_400.0),
            f.t_m2_per_s.map(|t| t * 86_400.0),
            3,
        ),
        ("storativity", bh.storativity, f.storativity, 2),
        (
            "linear well loss B (s/m²)",
            Some(bh.well_loss_b_s_per_m2),
            wl.map(|w| w.b_well_s_per_m2.max(0.0)),
            3,
        ),
        (
            "quadratic well loss C (s²/m⁵)",
            Some(bh.well_loss_c_s2_per_m5),
            wl.map(|w| w.c_s2_per_m5.max(0.0)),
            3,
        ),
        (
            "tested yield (m³/h)",
            Some(bh.tested_yield_m3_per_s * 3600.0),
            Some(f.tested_m3_per_s * 3600.0),
            3,
        ),
        (
            "safe-yield fraction",
            Some(bh.safe_yield_fraction),
            Some(f.safe_yield_fraction),
            2,
        ),
    ];
    rows.into_iter()
        .map(|(k, a, b, sig)| vec![k.to_string(), show(a, sig), show(b, sig), agree(a, b)])
        .collect()
}
