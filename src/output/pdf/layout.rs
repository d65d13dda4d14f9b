//! The layout pass: places the blocks of a [`Document`] on A4 portrait pages as positioned
//! primitives (text runs, lines, polylines, rectangles, clip regions). It owns every layout
//! decision: margins, type sizes, line breaking by real glyph advances, page breaks (headings
//! kept with what follows, tables split with repeated headers, charts kept whole), the footer
//! with "page i of n", and chart geometry (axes, 1-2-5 ticks, legends).
//!
//! Coordinates of the output are PDF points (1/72 in), origin at the bottom-left page corner,
//! y upwards — exactly what the render pass writes.

use super::PdfError;
use super::content::{
    Align, BarChart, Block, Chart, Document, LineChart, LineStyle, Series, Table,
};
use super::fonts::{Face, metrics};

/// One millimetre in pt.
pub const MM: f32 = 72.0 / 25.4;
/// A4 width in pt (210 mm).
pub const PAGE_W: f32 = 210.0 * MM;
/// A4 height in pt (297 mm).
pub const PAGE_H: f32 = 297.0 * MM;
/// Left, right and top margin in pt.
pub const MARGIN: f32 = 18.0 * MM;
/// Width of the text column in pt.
pub const TEXT_W: f32 = PAGE_W - 2.0 * MARGIN;
/// Lowest point (from the page top, pt) that body content may reach; the footer lies below.
const BODY_BOTTOM: f32 = PAGE_H - MARGIN - 8.0 * MM;
const X0: f32 = MARGIN;

/// A stroke: width in pt, grey level (0 black … 1 white), dash array in pt (empty = solid).
#[derive(Debug, Clone, PartialEq)]
pub struct Stroke {
    pub width_pt: f32,
    pub grey: f32,
    pub dash: Vec<f32>,
}

impl Stroke {
    fn solid(width_pt: f32, grey: f32) -> Self {
        Stroke {
            width_pt,
            grey,
            dash: Vec::new(),
        }
    }
}

/// A string placed at a baseline origin.
#[derive(Debug, Clone, PartialEq)]
pub struct TextRun {
    /// Baseline origin, pt from the page's bottom-left corner.
    pub x: f32,
    pub y: f32,
    pub size_pt: f32,
    pub face: Face,
    /// Fill grey level (0 black … 1 white).
    pub grey: f32,
    /// Counter-clockwise rotation about the origin, degrees.
    pub angle_deg: f32,
    pub text: String,
}

/// A positioned drawing primitive.
#[derive(Debug, Clone, PartialEq)]
pub enum Primitive {
    Text(TextRun),
    Line {
        from: (f32, f32),
        to: (f32, f32),
        stroke: Stroke,
    },
    Polyline {
        points: Vec<(f32, f32)>,
        stroke: Stroke,
    },
    /// Rectangle with lower-left corner (x, y); filled with a grey level and/or stroked.
    Rect {
        x: f32,
        y: f32,
        w: f32,
        h: f32,
        fill_grey: Option<f32>,
        stroke: Option<Stroke>,
    },
    /// Restrict following primitives to this rectangle until the matching `ClipEnd`.
    ClipStart {
        x: f32,
        y: f32,
        w: f32,
        h: f32,
    },
    ClipEnd,
}

/// One laid-out page.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Page {
    pub primitives: Vec<Primitive>,
}

/// The output of the layout pass: pages in order, footers included.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LaidOutDocument {
    pub pages: Vec<Page>,
}

// ---------------------------------------------------------------------------------------------
// Type scale (pt)

const BODY_SIZE: f32 = 10.0;
const BODY_LEAD: f32 = 13.5;
const TABLE_SIZE: f32 = 8.5;
const TABLE_LEAD: f32 = 10.5;
const CELL_PAD_X: f32 = 3.0;
const CELL_PAD_Y: f32 = 2.5;
const MONO_SIZE: f32 = 7.5;
const MONO_LEAD: f32 = 9.2;
const BLOCK_GAP: f32 = 7.0;

fn heading_style(level: u8) -> (f32, f32, f32) {
    // (size, space before, space after)
    match level {
        0 | 1 => (15.0, 14.0, 7.0),
        2 => (12.0, 11.0, 5.0),
        _ => (10.5, 8.0, 3.0),
    }
}

/// Width of `text` in pt; missing glyphs count as .notdef.
fn width(face: Face, size: f32, text: &str) -> Result<f32, PdfError> {
    Ok(metrics(face)?.width_pt(text, size))
}

/// Greedy line breaking of `text` into lines no wider than `max_w` pt, by glyph advances.
/// Breaks at spaces; a word wider than a line is split between characters. Explicit `\n`
/// starts a new line. Always returns at least one (possibly empty) line.
pub fn wrap(text: &str, face: Face, size: f32, max_w: f32) -> Result<Vec<String>, PdfError> {
    let m = metrics(face)?;
    let space = m.width_pt(" ", size);
    let mut lines = Vec::new();
    for para in text.split('\n') {
        let mut line = String::new();
        let mut line_w = 0.0f32;
        for word in para.split(' ').filter(|w| !w.is_empty()) {
            let ww = m.width_pt(word, size);
            let gap = if line.is_empty() { 0.0 } else { space };
            if line_w + gap + ww <= max_w {
                if !line.is_empty() {
                    line.push(' ');
                }
                line.push_str(word);
                line_w += gap + ww;
                continue;
            }
            if !line.is_empty() {
                lines.push(std::mem::take(&mut line));
                line_w = 0.0;
            }
            if ww <= max_w {
                line.push_str(word);
                line_w = ww;
            } else {
                for c in word.chars() {
                    let cw = m.width_pt(c.encode_utf8(&mut [0; 4]), size);
                    if line_w + cw > max_w && !line.is_empty() {
                        lines.push(std::mem::take(&mut line));
                        line_w = 0.0;
                    }
                    line.push(c);
                    line_w += cw;
                }
            }
        }
        lines.push(line);
    }
    Ok(lines)
}

// ---------------------------------------------------------------------------------------------
// Nice axis ticks

/// A 1-2-5 "nice" number near `x` > 0: with `round`, the nearest of {1,2,5,10}×10ⁿ, otherwise
/// the smallest not below `x`. Source: P. Heckbert, "Nice numbers for graph labels",
/// Graphics Gems (1990). Valid for finite x > 0.
fn nice_num(x: f64, round: bool) -> f64 {
    let exp = x.log10().floor();
    let f = x / 10f64.powf(exp);
    let nf = if round {
        if f < 1.5 {
            1.0
        } else if f < 3.0 {
            2.0
        } else if f < 7.0 {
            5.0
        } else {
            10.0
        }
    } else if f <= 1.0 {
        1.0
    } else if f <= 2.0 {
        2.0
    } else if f <= 5.0 {
        5.0
    } else {
        10.0
    };
    nf * 10f64.powf(exp)
}

/// Loose axis labelling: returns (axis min, axis max, tick step) covering [lo, hi] with about
/// `target` ticks on 1-2-5 steps. Source: Heckbert, "Nice numbers for graph labels", Graphics
/// Gems (1990). A zero-width or non-finite range is widened to a unit-sized one.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> (f64, f64, f64) {
    let (mut lo, mut hi) = if lo.is_finite() && hi.is_finite() {
        (lo.min(hi), lo.max(hi))
    } else {
        (0.0, 1.0)
    };
    if hi - lo < 1e-12 * lo.abs().max(1.0) {
        let d = if lo.abs() > 0.0 { lo.abs() * 0.1 } else { 1.0 };
        lo -= d;
        hi += d;
    }
    let range = nice_num(hi - lo, false);
    let step = nice_num(range / (target.max(2) - 1) as f64, true);
    let a = (lo / step).floor() * step;
    let b = (hi / step).ceil() * step;
    (a, b, step)
}

/// Tick values from (min, max, step), inclusive of both ends.
fn tick_values(a: f64, b: f64, step: f64) -> Vec<f64> {
    let n = ((b - a) / step).round() as i64;
    (0..=n.clamp(0, 200)).map(|i| a + i as f64 * step).collect()
}

/// Label of a tick value with just enough decimals for the step; never "-0".
pub fn tick_label(v: f64, step: f64) -> String {
    let decimals = if step >= 1.0 {
        0
    } else {
        (-step.log10().floor()) as usize
    };
    let s = format!("{:.*}", decimals, v);
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

// ---------------------------------------------------------------------------------------------
// The page builder

struct Builder {
    pages: Vec<Page>,
    cur: Vec<Primitive>,
    /// Cursor: distance of the next content from the page top, pt.
    y: f32,
}

impl Builder {
    fn new() -> Self {
        Builder {
            pages: Vec::new(),
            cur: Vec::new(),
            y: MARGIN,
        }
    }

    fn at_top(&self) -> bool {
        self.y <= MARGIN + 0.01
    }

    fn new_page(&mut self) {
        self.pages.push(Page {
            primitives: std::mem::take(&mut self.cur),
        });
        self.y = MARGIN;
    }

    /// Start a new page unless `h` pt still fit below the cursor (or the page is empty).
    fn ensure(&mut self, h: f32) {
        if self.y + h > BODY_BOTTOM && !self.at_top() {
            self.new_page();
        }
    }

    /// Text with its baseline `baseline_from_top` pt below the page top.
    #[allow(clippy::too_many_arguments)]
    fn text(&mut self, x: f32, baseline_from_top: f32, size: f32, face: Face, grey: f32, s: &str) {
        if s.is_empty() {
            return;
        }
        self.cur.push(Primitive::Text(TextRun {
            x,
            y: PAGE_H - baseline_from_top,
            size_pt: size,
            face,
            grey,
            angle_deg: 0.0,
            text: s.to_string(),
        }));
    }

    /// Text aligned within [x, x + w].
    #[allow(clippy::too_many_arguments)]
    fn text_aligned(
        &mut self,
        x: f32,
        w: f32,
        baseline_from_top: f32,
        size: f32,
        face: Face,
        align: Align,
        s: &str,
    ) -> Result<(), PdfError> {
        let tw = width(face, size, s)?;
        let tx = match align {
            Align::Left => x,
            Align::Center => x + (w - tw) / 2.0,
            Align::Right => x + w - tw,
        };
        self.text(tx, baseline_from_top, size, face, 0.0, s);
        Ok(())
    }

    /// Horizontal rule at `from_top` pt below the page top.
    fn hrule(&mut self, x: f32, w: f32, from_top: f32, stroke: Stroke) {
        let y = PAGE_H - from_top;
        self.cur.push(Primitive::Line {
            from: (x, y),
            to: (x + w, y),
            stroke,
        });
    }

    /// Filled rectangle whose top edge is `top` pt below the page top.
    fn fill(&mut self, x: f32, top: f32, w: f32, h: f32, grey: f32) {
        self.cur.push(Primitive::Rect {
            x,
            y: PAGE_H - top - h,
            w,
            h,
            fill_grey: Some(grey),
            stroke: None,
        });
    }

    fn finish(mut self) -> Vec<Page> {
        if !self.cur.is_empty() || self.pages.is_empty() {
            self.new_page();
        }
        self.pages
    }
}

/// Baseline offset from a line box's top for a line of `size` in a box of `lead` pt.
fn baseline_in(lead: f32, size: f32) -> f32 {
    (lead - size) / 2.0 + 0.78 * size
}

// ---------------------------------------------------------------------------------------------
// Tables

struct PreparedTable {
    widths: Vec<f32>,
    header: Vec<Vec<String>>,
    rows: Vec<Vec<Vec<String>>>,
    align: Vec<Align>,
    caption: Option<String>,
}

fn cell_lines_height(cells: &[Vec<String>]) -> f32 {
    let n = cells.iter().map(|c| c.len()).max().unwrap_or(1).max(1);
    n as f32 * TABLE_LEAD + 2.0 * CELL_PAD_Y
}

fn column_widths(t: &Table, ncols: usize) -> Result<Vec<f32>, PdfError> {
    if let Some(wts) = &t.column_weights {
        let wts: Vec<f32> = (0..ncols)
            .map(|i| {
                wts.get(i)
                    .copied()
                    .filter(|w| w.is_finite() && *w > 0.0)
                    .unwrap_or(1.0)
            })
            .collect();
        let sum: f32 = wts.iter().sum();
        return Ok(wts.iter().map(|w| w / sum * TEXT_W).collect());
    }
    let rm = metrics(Face::Regular)?;
    let bm = metrics(Face::Bold)?;
    let mut min_w = vec![0.0f32; ncols];
    let mut max_w = vec![0.0f32; ncols];
    let mut measure = |i: usize, s: &str, bold: bool| {
        let m = if bold { bm } else { rm };
        let full = m.width_pt(s, TABLE_SIZE);
        let word = s
            .split_whitespace()
            .map(|w| m.width_pt(w, TABLE_SIZE))
            .fold(0.0, f32::max)
            .min(TEXT_W / ncols as f32 * 1.5);
        max_w[i] = max_w[i].max(full + 2.0 * CELL_PAD_X);
        min_w[i] = min_w[i].max(word + 2.0 * CELL_PAD_X);
    };
    for (i, h) in t.header.iter().enumerate() {
        measure(i, h, true);
    }
    for row in &t.rows {
        for (i, c) in row.iter().take(ncols).enumerate() {
            measure(i, c, false);
        }
    }
    let sum_max: f32 = max_w.iter().sum();
    let sum_min: f32 = min_w.iter().sum();
    if sum_max <= TEXT_W {
        return Ok(max_w.iter().map(|w| w / sum_max * TEXT_W).collect());
    }
    if sum_min >= TEXT_W {
        return Ok(min_w.iter().map(|w| w / sum_min * TEXT_W).collect());
    }
    let slack = TEXT_W - sum_min;
    let spread = (sum_max - sum_min).max(1e-3);
    Ok(min_w
        .iter()
        .zip(&max_w)
        .map(|(lo, hi)| lo + slack * (hi - lo) / spread)
        .collect())
}

fn prepare_table(t: &Table) -> Result<PreparedTable, PdfError> {
    let ncols = t
        .header
        .len()
        .max(t.rows.iter().map(|r| r.len()).max().unwrap_or(0))
        .max(1);
    let widths = column_widths(t, ncols)?;
    let wrap_row = |cells: &[String], face: Face| -> Result<Vec<Vec<String>>, PdfError> {
        (0..ncols)
            .map(|i| {
                let s = cells.get(i).map(String::as_str).unwrap_or("");
                wrap(s, face, TABLE_SIZE, widths[i] - 2.0 * CELL_PAD_X)
            })
            .collect()
    };
    let header = if t.header.is_empty() {
        Vec::new()
    } else {
        wrap_row(&t.header, Face::Bold)?
    };
    let rows = t
        .rows
        .iter()
        .map(|r| wrap_row(r, Face::Regular))
        .collect::<Result<Vec<_>, _>>()?;
    let align = (0..ncols)
        .map(|i| t.column_align.get(i).copied().unwrap_or_default())
        .collect();
    Ok(PreparedTable {
        widths,
        header,
        rows,
        align,
        caption: t.caption.clone(),
    })
}

const CAPTION_SIZE: f32 = 9.5;
const CAPTION_LEAD: f32 = 14.0;

impl PreparedTable {
    fn caption_h(&self) -> f32 {
        if self.caption.is_some() {
            CAPTION_LEAD
        } else {
            0.0
        }
    }
    fn header_h(&self) -> f32 {
        if self.header.is_empty() {
            0.0
        } else {
            cell_lines_height(&self.header)
        }
    }
    fn lead_h(&self) -> f32 {
        self.caption_h()
            + self.header_h()
            + self
                .rows
                .iter()
                .take(3)
                .map(|r| cell_lines_height(r))
                .sum::<f32>()
    }
}

fn draw_row(
    b: &mut Builder,
    t: &PreparedTable,
    cells: &[Vec<String>],
    face: Face,
    fill: Option<f32>,
    max_lines: usize,
) -> Result<(), PdfError> {
    let lines = cells
        .iter()
        .map(|c| c.len())
        .max()
        .unwrap_or(1)
        .clamp(1, max_lines.max(1));
    let h = lines as f32 * TABLE_LEAD + 2.0 * CELL_PAD_Y;
    if let Some(g) = fill {
        b.fill(X0, b.y, TEXT_W, h, g);
    }
    let mut x = X0;
    for (i, cell) in cells.iter().enumerate() {
        let w = t.widths[i];
        for (k, line) in cell.iter().take(lines).enumerate() {
            let mut s = line.clone();
            if k + 1 == lines && cell.len() > lines {
                s.push('…');
            }
            let base =
                b.y + CELL_PAD_Y + k as f32 * TABLE_LEAD + baseline_in(TABLE_LEAD, TABLE_SIZE);
            b.text_aligned(
                x + CELL_PAD_X,
                w - 2.0 * CELL_PAD_X,
                base,
                TABLE_SIZE,
                face,
                t.align[i],
                &s,
            )?;
        }
        x += w;
    }
    b.y += h;
    Ok(())
}

fn draw_table_head(b: &mut Builder, t: &PreparedTable, continued: bool) -> Result<(), PdfError> {
    if let Some(c) = &t.caption {
        let text = if continued {
            format!("{c} (continued)")
        } else {
            c.clone()
        };
        let base = b.y + baseline_in(CAPTION_LEAD, CAPTION_SIZE) - 1.5;
        b.text(X0, base, CAPTION_SIZE, Face::Bold, 0.0, &text);
        b.y += CAPTION_LEAD;
    }
    b.hrule(X0, TEXT_W, b.y, Stroke::solid(0.8, 0.0));
    if !t.header.is_empty() {
        let header = t.header.clone();
        draw_row(b, t, &header, Face::Bold, Some(0.85), usize::MAX)?;
        b.hrule(X0, TEXT_W, b.y, Stroke::solid(0.6, 0.0));
    }
    Ok(())
}

fn layout_table(b: &mut Builder, table: &Table) -> Result<(), PdfError> {
    if table.header.is_empty() && table.rows.is_empty() {
        return Ok(());
    }
    let t = prepare_table(table)?;
    b.ensure(t.lead_h());
    draw_table_head(b, &t, false)?;
    let head_h = t.caption_h() + t.header_h();
    // Lines a single row may use so that it fits on an otherwise empty page.
    let max_lines =
        (((BODY_BOTTOM - MARGIN - head_h - 2.0 * CELL_PAD_Y) / TABLE_LEAD).floor() as usize).max(1);
    for (i, row) in t.rows.iter().enumerate() {
        let lines = row
            .iter()
            .map(|c| c.len())
            .max()
            .unwrap_or(1)
            .clamp(1, max_lines);
        let h = lines as f32 * TABLE_LEAD + 2.0 * CELL_PAD_Y;
        if b.y + h > BODY_BOTTOM {
            b.hrule(X0, TEXT_W, b.y, Stroke::solid(0.8, 0.0));
            b.new_page();
            draw_table_head(b, &t, true)?;
        }
        let fill = (i % 2 == 1).then_some(0.94);
        draw_row(b, &t, row, Face::Regular, fill, max_lines)?;
    }
    b.hrule(X0, TEXT_W, b.y, Stroke::solid(0.8, 0.0));
    b.y += BLOCK_GAP + 3.0;
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// Key figures

const KF_LABEL: f32 = 8.5;
const KF_VALUE: f32 = 15.0;
const KF_GAP: f32 = 8.0;
const KF_PAD: f32 = 7.0;

/// Wrapped (label lines, value lines) of one key-figure box.
type KeyFigureLines = (Vec<String>, Vec<String>);

fn key_figure_rows(items: &[(String, String)]) -> Result<Vec<Vec<KeyFigureLines>>, PdfError> {
    let box_w = (TEXT_W - KF_GAP) / 2.0;
    let inner = box_w - 2.0 * KF_PAD;
    let mut rows = Vec::new();
    for pair in items.chunks(2) {
        let mut row = Vec::new();
        for (label, value) in pair {
            row.push((
                wrap(label, Face::Regular, KF_LABEL, inner)?,
                wrap(value, Face::Bold, KF_VALUE, inner)?,
            ));
        }
        rows.push(row);
    }
    Ok(rows)
}

fn kf_row_h(row: &[KeyFigureLines]) -> f32 {
    row.iter()
        .map(|(l, v)| 2.0 * KF_PAD + l.len() as f32 * 11.0 + 3.0 + v.len() as f32 * 19.0)
        .fold(0.0, f32::max)
}

fn layout_key_figures(b: &mut Builder, items: &[(String, String)]) -> Result<(), PdfError> {
    let box_w = (TEXT_W - KF_GAP) / 2.0;
    for row in key_figure_rows(items)? {
        let h = kf_row_h(&row);
        b.ensure(h);
        for (k, (label, value)) in row.iter().enumerate() {
            let x = X0 + k as f32 * (box_w + KF_GAP);
            b.fill(x, b.y, box_w, h, 0.92);
            b.cur.push(Primitive::Rect {
                x,
                y: PAGE_H - b.y - h,
                w: 2.2,
                h,
                fill_grey: Some(0.0),
                stroke: None,
            });
            let mut yy = b.y + KF_PAD;
            for l in label {
                b.text(
                    x + KF_PAD,
                    yy + baseline_in(11.0, KF_LABEL),
                    KF_LABEL,
                    Face::Regular,
                    0.3,
                    l,
                );
                yy += 11.0;
            }
            yy += 3.0;
            for v in value {
                b.text(
                    x + KF_PAD,
                    yy + baseline_in(19.0, KF_VALUE),
                    KF_VALUE,
                    Face::Bold,
                    0.0,
                    v,
                );
                yy += 19.0;
            }
        }
        b.y += h + KF_GAP;
    }
    b.y += BLOCK_GAP - KF_GAP;
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// Preformatted listing

struct Listing {
    /// (line number or None for a continuation, text)
    lines: Vec<(Option<usize>, String)>,
    gutter: f32,
}

fn prepare_listing(lines: &[String]) -> Result<Listing, PdfError> {
    let m = metrics(Face::Mono)?;
    let cw = m.width_pt("0", MONO_SIZE).max(0.1);
    let digits = lines.len().max(1).to_string().len();
    let gutter = cw * digits as f32 + 8.0;
    let max_chars = (((TEXT_W - gutter - 8.0) / cw).floor() as usize).max(8);
    let mut out = Vec::new();
    for (i, raw) in lines.iter().enumerate() {
        let line = raw.replace('\t', "    ");
        let chars: Vec<char> = line.trim_end().chars().collect();
        if chars.is_empty() {
            out.push((Some(i + 1), String::new()));
        }
        for (k, chunk) in chars.chunks(max_chars).enumerate() {
            out.push(((k == 0).then_some(i + 1), chunk.iter().collect()));
        }
    }
    Ok(Listing { lines: out, gutter })
}

fn layout_listing(b: &mut Builder, lines: &[String]) -> Result<(), PdfError> {
    let l = prepare_listing(lines)?;
    let cont_mark = if metrics(Face::Mono)?.glyph('↪') != 0 {
        "↪"
    } else {
        "+"
    };
    let mut seg_start: Option<(usize, f32)> = None;
    let close = |b: &mut Builder, seg: Option<(usize, f32)>| {
        if let Some((idx, top)) = seg {
            let h = b.y - top + 2.0;
            let rect = Primitive::Rect {
                x: X0,
                y: PAGE_H - top - h,
                w: TEXT_W,
                h,
                fill_grey: Some(0.95),
                stroke: None,
            };
            b.cur.insert(idx, rect);
            b.cur.push(Primitive::Line {
                from: (X0 + l.gutter - 3.0, PAGE_H - top),
                to: (X0 + l.gutter - 3.0, PAGE_H - top - h),
                stroke: Stroke::solid(0.4, 0.6),
            });
        }
    };
    b.ensure(3.0 * MONO_LEAD + 4.0);
    for (num, text) in &l.lines {
        if b.y + MONO_LEAD > BODY_BOTTOM {
            close(b, seg_start.take());
            b.new_page();
        }
        if seg_start.is_none() {
            b.y += 2.0;
            seg_start = Some((b.cur.len(), b.y - 2.0));
        }
        let base = b.y + baseline_in(MONO_LEAD, MONO_SIZE);
        let label = match num {
            Some(n) => n.to_string(),
            None => cont_mark.to_string(),
        };
        let lw = width(Face::Mono, MONO_SIZE, &label)?;
        b.text(
            X0 + l.gutter - 6.0 - lw,
            base,
            MONO_SIZE,
            Face::Mono,
            0.5,
            &label,
        );
        b.text(X0 + l.gutter + 2.0, base, MONO_SIZE, Face::Mono, 0.0, text);
        b.y += MONO_LEAD;
    }
    close(b, seg_start.take());
    b.y += 2.0 + BLOCK_GAP;
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// Charts

const CHART_H: f32 = 80.0 * MM;
const TICK_SIZE: f32 = 7.5;
const AXIS_TITLE: f32 = 8.5;
const LEGEND_SIZE: f32 = 8.0;
const LEGEND_ROW: f32 = 12.0;
const LEGEND_SAMPLE: f32 = 20.0;

fn dash_for(style: LineStyle, width: f32) -> Vec<f32> {
    match style {
        LineStyle::Solid => Vec::new(),
        LineStyle::Dashed => vec![5.0 * width.max(0.8), 2.5 * width.max(0.8)],
        LineStyle::Dotted => vec![width.max(0.8), 1.8 * width.max(0.8)],
    }
}

enum LegendMark {
    Line(Stroke),
    Swatch(f32),
}

/// Lays legend entries in rows across the text width; returns rows of (x offset, entry index).
fn legend_rows(names: &[String]) -> Result<Vec<Vec<(f32, usize)>>, PdfError> {
    let mut rows: Vec<Vec<(f32, usize)>> = vec![Vec::new()];
    let mut x = 0.0;
    for (i, n) in names.iter().enumerate() {
        let w = LEGEND_SAMPLE + 4.0 + width(Face::Regular, LEGEND_SIZE, n)? + 14.0;
        if x + w > TEXT_W && x > 0.0 {
            rows.push(Vec::new());
            x = 0.0;
        }
        if let Some(r) = rows.last_mut() {
            r.push((x, i));
        }
        x += w;
    }
    if names.is_empty() {
        rows.clear();
    }
    Ok(rows)
}

fn chart_height(names: &[String]) -> Result<f32, PdfError> {
    Ok(CHART_H + legend_rows(names)?.len().saturating_sub(1) as f32 * LEGEND_ROW)
}

/// Geometry shared by both chart kinds, in PDF coordinates (y up).
struct Frame {
    left: f32,
    right: f32,
    bottom: f32,
    top: f32,
}

impl Frame {
    fn w(&self) -> f32 {
        self.right - self.left
    }
    fn h(&self) -> f32 {
        self.top - self.bottom
    }
}

/// Title, y-axis ticks and title, x-axis title and legend; returns the plot frame.
#[allow(clippy::too_many_arguments)]
fn chart_frame(
    b: &mut Builder,
    title: &str,
    x_label: &str,
    y_label: &str,
    y_axis: (f64, f64, f64),
    legend: &[(String, LegendMark)],
    x_tick_rows: f32,
) -> Result<Frame, PdfError> {
    let names: Vec<String> = legend.iter().map(|(n, _)| n.clone()).collect();
    let rows = legend_rows(&names)?;
    let total_h = chart_height(&names)?;
    let top_y = b.y;
    let bottom_y = b.y + total_h;

    let title_lines = wrap(title, Face::Bold, 10.0, TEXT_W)?;
    let title_line = title_lines.first().cloned().unwrap_or_default();
    b.text(X0, top_y + 10.0, 10.0, Face::Bold, 0.0, &title_line);

    let (ya, yb, ys) = y_axis;
    let y_ticks = tick_values(ya, yb, ys);
    let mut tick_w = 0.0f32;
    for v in &y_ticks {
        tick_w = tick_w.max(width(Face::Regular, TICK_SIZE, &tick_label(*v, ys))?);
    }
    let legend_h = rows.len() as f32 * LEGEND_ROW;
    let frame = Frame {
        left: X0 + AXIS_TITLE + 6.0 + tick_w + 4.0,
        right: X0 + TEXT_W - 8.0,
        top: PAGE_H - (top_y + 22.0),
        bottom: PAGE_H - (bottom_y - legend_h - 4.0 - AXIS_TITLE - 6.0 - x_tick_rows * 9.0 - 4.0),
    };

    // Grid and y ticks.
    for v in &y_ticks {
        let y = frame.bottom + ((v - ya) / (yb - ya)) as f32 * frame.h();
        b.cur.push(Primitive::Line {
            from: (frame.left, y),
            to: (frame.right, y),
            stroke: Stroke::solid(0.3, 0.78),
        });
        let s = tick_label(*v, ys);
        let w = width(Face::Regular, TICK_SIZE, &s)?;
        b.cur.push(Primitive::Text(TextRun {
            x: frame.left - 3.0 - w,
            y: y - TICK_SIZE * 0.35,
            size_pt: TICK_SIZE,
            face: Face::Regular,
            grey: 0.0,
            angle_deg: 0.0,
            text: s,
        }));
    }
    // Rotated y-axis title, centred on the plot height.
    let yw = width(Face::Regular, AXIS_TITLE, y_label)?;
    b.cur.push(Primitive::Text(TextRun {
        x: X0 + AXIS_TITLE,
        y: frame.bottom + (frame.h() - yw) / 2.0,
        size_pt: AXIS_TITLE,
        face: Face::Regular,
        grey: 0.0,
        angle_deg: 90.0,
        text: y_label.to_string(),
    }));
    // x-axis title, centred under the plot.
    let xw = width(Face::Regular, AXIS_TITLE, x_label)?;
    let x_title_base = frame.bottom - 4.0 - x_tick_rows * 9.0 - 4.0 - AXIS_TITLE * 0.8;
    b.cur.push(Primitive::Text(TextRun {
        x: frame.left + (frame.w() - xw) / 2.0,
        y: x_title_base,
        size_pt: AXIS_TITLE,
        face: Face::Regular,
        grey: 0.0,
        angle_deg: 0.0,
        text: x_label.to_string(),
    }));
    // Legend rows below.
    for (r, row) in rows.iter().enumerate() {
        let yc = PAGE_H - (bottom_y - legend_h + r as f32 * LEGEND_ROW + LEGEND_ROW / 2.0);
        for (dx, i) in row {
            let x = X0 + dx;
            match &legend[*i].1 {
                LegendMark::Line(stroke) => b.cur.push(Primitive::Line {
                    from: (x, yc),
                    to: (x + LEGEND_SAMPLE, yc),
                    stroke: stroke.clone(),
                }),
                LegendMark::Swatch(g) => b.cur.push(Primitive::Rect {
                    x: x + LEGEND_SAMPLE - 9.0,
                    y: yc - 4.5,
                    w: 9.0,
                    h: 9.0,
                    fill_grey: Some(*g),
                    stroke: Some(Stroke::solid(0.5, 0.0)),
                }),
            }
            b.cur.push(Primitive::Text(TextRun {
                x: x + LEGEND_SAMPLE + 4.0,
                y: yc - LEGEND_SIZE * 0.35,
                size_pt: LEGEND_SIZE,
                face: Face::Regular,
                grey: 0.0,
                angle_deg: 0.0,
                text: legend[*i].0.clone(),
            }));
        }
    }
    Ok(frame)
}

fn frame_box(b: &mut Builder, f: &Frame) {
    b.cur.push(Primitive::Rect {
        x: f.left,
        y: f.bottom,
        w: f.w(),
        h: f.h(),
        fill_grey: None,
        stroke: Some(Stroke::solid(0.7, 0.0)),
    });
}

fn finite_range(vals: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    vals.filter(|v| v.is_finite())
        .fold(None, |acc, v| match acc {
            None => Some((v, v)),
            Some((a, b)) => Some((a.min(v), b.max(v))),
        })
}

fn series_stroke(s: &Series) -> Stroke {
    let w = if s.width_pt.is_finite() && s.width_pt > 0.0 {
        s.width_pt
    } else {
        1.0
    };
    Stroke {
        width_pt: w,
        grey: s.grey.clamp(0.0, 0.75),
        dash: dash_for(s.style, w),
    }
}

fn layout_line_chart(b: &mut Builder, c: &LineChart) -> Result<(), PdfError> {
    let (x_lo, x_hi) = c
        .x_range
        .or_else(|| finite_range(c.series.iter().flat_map(|s| s.points.iter().map(|p| p.0))))
        .unwrap_or((0.0, 1.0));
    let (y_lo, y_hi) = c
        .y_range
        .or_else(|| finite_range(c.series.iter().flat_map(|s| s.points.iter().map(|p| p.1))))
        .unwrap_or((0.0, 1.0));
    let y_axis = if c.y_range.is_some() {
        let (_, _, step) = nice_ticks(y_lo, y_hi, 6);
        (y_lo, y_hi, step)
    } else {
        nice_ticks(y_lo, y_hi, 6)
    };
    let x_axis = if c.x_range.is_some() {
        let (_, _, step) = nice_ticks(x_lo, x_hi, 8);
        (x_lo, x_hi, step)
    } else {
        nice_ticks(x_lo, x_hi, 8)
    };
    let legend: Vec<(String, LegendMark)> = c
        .series
        .iter()
        .map(|s| (s.name.clone(), LegendMark::Line(series_stroke(s))))
        .collect();
    let h = chart_height(&legend.iter().map(|l| l.0.clone()).collect::<Vec<_>>())?;
    b.ensure(h);
    let f = chart_frame(b, &c.title, &c.x_label, &c.y_label, y_axis, &legend, 1.0)?;

    let (xa, xb, xs) = x_axis;
    let (ya, yb, _) = y_axis;
    let xspan = if (xb - xa).abs() > 0.0 { xb - xa } else { 1.0 };
    let yspan = if (yb - ya).abs() > 0.0 { yb - ya } else { 1.0 };
    // x ticks at multiples of the step inside the axis range.
    let first = (xa / xs).ceil() * xs;
    let mut v = first;
    let mut n = 0;
    while v <= xb + xs * 1e-9 && n < 200 {
        let x = f.left + ((v - xa) / xspan) as f32 * f.w();
        b.cur.push(Primitive::Line {
            from: (x, f.bottom),
            to: (x, f.top),
            stroke: Stroke::solid(0.3, 0.85),
        });
        b.cur.push(Primitive::Line {
            from: (x, f.bottom),
            to: (x, f.bottom - 3.0),
            stroke: Stroke::solid(0.5, 0.0),
        });
        let s = tick_label(v, xs);
        let w = width(Face::Regular, TICK_SIZE, &s)?;
        b.cur.push(Primitive::Text(TextRun {
            x: x - w / 2.0,
            y: f.bottom - 4.0 - TICK_SIZE,
            size_pt: TICK_SIZE,
            face: Face::Regular,
            grey: 0.0,
            angle_deg: 0.0,
            text: s,
        }));
        v = first + (n + 1) as f64 * xs;
        n += 1;
    }
    b.cur.push(Primitive::ClipStart {
        x: f.left,
        y: f.bottom,
        w: f.w(),
        h: f.h(),
    });
    for s in &c.series {
        // A non-finite point breaks the line: no segment is drawn across missing data.
        let mut pts: Vec<(f32, f32)> = Vec::new();
        let flush = |b: &mut Builder, pts: &mut Vec<(f32, f32)>| {
            if pts.len() >= 2 {
                b.cur.push(Primitive::Polyline {
                    points: std::mem::take(pts),
                    stroke: series_stroke(s),
                });
            }
            pts.clear();
        };
        for p in &s.points {
            if p.0.is_finite() && p.1.is_finite() {
                pts.push((
                    f.left + ((p.0 - xa) / xspan) as f32 * f.w(),
                    f.bottom + ((p.1 - ya) / yspan) as f32 * f.h(),
                ));
            } else {
                flush(b, &mut pts);
            }
        }
        flush(b, &mut pts);
    }
    b.cur.push(Primitive::ClipEnd);
    frame_box(b, &f);
    b.y += h + BLOCK_GAP;
    Ok(())
}

fn layout_bar_chart(b: &mut Builder, c: &BarChart) -> Result<(), PdfError> {
    let (lo, hi) =
        finite_range(c.groups.iter().flat_map(|g| g.values.iter().copied())).unwrap_or((0.0, 1.0));
    let y_axis = nice_ticks(lo.min(0.0), hi.max(0.0), 6);
    let legend: Vec<(String, LegendMark)> = c
        .groups
        .iter()
        .map(|g| (g.name.clone(), LegendMark::Swatch(g.grey.clamp(0.0, 1.0))))
        .collect();
    let ncat = c.categories.len().max(1);
    let slot_w = (TEXT_W - 60.0) / ncat as f32;
    let cat_lines: Vec<Vec<String>> = c
        .categories
        .iter()
        .map(|s| wrap(s, Face::Regular, TICK_SIZE, slot_w - 2.0))
        .collect::<Result<_, _>>()?;
    let label_rows = cat_lines
        .iter()
        .map(|l| l.len())
        .max()
        .unwrap_or(1)
        .clamp(1, 3);
    let h = chart_height(&legend.iter().map(|l| l.0.clone()).collect::<Vec<_>>())?;
    b.ensure(h);
    let f = chart_frame(
        b,
        &c.title,
        &c.x_label,
        &c.y_label,
        y_axis,
        &legend,
        label_rows as f32,
    )?;
    let (ya, yb, _) = y_axis;
    let yspan = (yb - ya).max(1e-12);
    let to_y = |v: f64| f.bottom + ((v - ya) / yspan) as f32 * f.h();
    let slot = f.w() / ncat as f32;
    let ngroups = c.groups.len().max(1);
    let bar_w = slot * 0.78 / ngroups as f32;
    for (ci, lines) in cat_lines.iter().enumerate() {
        let x0 = f.left + ci as f32 * slot;
        for (gi, g) in c.groups.iter().enumerate() {
            let Some(v) = g.values.get(ci).copied().filter(|v| v.is_finite()) else {
                continue;
            };
            let (y1, y2) = (to_y(0.0), to_y(v));
            b.cur.push(Primitive::Rect {
                x: x0 + slot * 0.11 + gi as f32 * bar_w,
                y: y1.min(y2),
                w: bar_w,
                h: (y2 - y1).abs(),
                fill_grey: Some(g.grey.clamp(0.0, 1.0)),
                stroke: Some(Stroke::solid(0.5, 0.0)),
            });
        }
        for (k, line) in lines.iter().take(3).enumerate() {
            let w = width(Face::Regular, TICK_SIZE, line)?;
            b.cur.push(Primitive::Text(TextRun {
                x: x0 + (slot - w) / 2.0,
                y: f.bottom - 4.0 - TICK_SIZE - k as f32 * 9.0,
                size_pt: TICK_SIZE,
                face: Face::Regular,
                grey: 0.0,
                angle_deg: 0.0,
                text: line.clone(),
            }));
        }
    }
    // Zero line.
    if ya < 0.0 && yb > 0.0 {
        b.cur.push(Primitive::Line {
            from: (f.left, to_y(0.0)),
            to: (f.right, to_y(0.0)),
            stroke: Stroke::solid(0.8, 0.0),
        });
    }
    frame_box(b, &f);
    b.y += h + BLOCK_GAP;
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// Block dispatch

/// Height that must fit together with a heading so it is not stranded: the heading's own
/// height plus the first unbreakable piece of what follows.
fn lead_height(blocks: &[Block], i: usize) -> Result<f32, PdfError> {
    let Some(block) = blocks.get(i) else {
        return Ok(0.0);
    };
    Ok(match block {
        Block::Heading { level, text } => {
            let (size, before, after) = heading_style(*level);
            let n = wrap(text, Face::Bold, size, TEXT_W)?.len() as f32;
            before + n * size * 1.3 + after + lead_height(blocks, i + 1)?
        }
        Block::Paragraph(t) => {
            wrap(t, Face::Regular, BODY_SIZE, TEXT_W)?.len().min(2) as f32 * BODY_LEAD
        }
        Block::BulletList(items) => {
            if items.is_empty() {
                0.0
            } else {
                2.0 * BODY_LEAD
            }
        }
        Block::KeyFigures(items) => key_figure_rows(items)?
            .first()
            .map(|r| kf_row_h(r))
            .unwrap_or(0.0),
        Block::Table(t) => prepare_table(t)?.lead_h(),
        Block::Chart(Chart::Line(c)) => {
            chart_height(&c.series.iter().map(|s| s.name.clone()).collect::<Vec<_>>())?
        }
        Block::Chart(Chart::Bar(c)) => {
            chart_height(&c.groups.iter().map(|g| g.name.clone()).collect::<Vec<_>>())?
        }
        Block::Preformatted(_) => 3.0 * MONO_LEAD + 4.0,
        Block::PageBreak | Block::Spacer(_) => 0.0,
    })
}

fn layout_heading(
    b: &mut Builder,
    blocks: &[Block],
    i: usize,
    level: u8,
    text: &str,
) -> Result<(), PdfError> {
    let (size, before, after) = heading_style(level);
    let need = lead_height(blocks, i)?;
    b.ensure(need.min(BODY_BOTTOM - MARGIN));
    if !b.at_top() {
        b.y += before;
    }
    let lead = size * 1.3;
    for line in wrap(text, Face::Bold, size, TEXT_W)? {
        b.text(
            X0,
            b.y + baseline_in(lead, size),
            size,
            Face::Bold,
            0.0,
            &line,
        );
        b.y += lead;
    }
    if level <= 1 {
        b.hrule(X0, TEXT_W, b.y + 1.0, Stroke::solid(0.5, 0.4));
        b.y += 2.0;
    }
    b.y += after;
    Ok(())
}

fn layout_paragraph(
    b: &mut Builder,
    text: &str,
    indent: f32,
    bullet: bool,
) -> Result<(), PdfError> {
    let lines = wrap(text, Face::Regular, BODY_SIZE, TEXT_W - indent)?;
    // Widow/orphan-lite: keep the first two lines together.
    b.ensure(lines.len().min(2) as f32 * BODY_LEAD);
    for (k, line) in lines.iter().enumerate() {
        b.ensure(BODY_LEAD);
        let base = b.y + baseline_in(BODY_LEAD, BODY_SIZE);
        if bullet && k == 0 {
            b.text(X0 + 3.0, base, BODY_SIZE, Face::Regular, 0.0, "•");
        }
        b.text(X0 + indent, base, BODY_SIZE, Face::Regular, 0.0, line);
        b.y += BODY_LEAD;
    }
    Ok(())
}

fn add_footers(pages: &mut [Page], label: &str) -> Result<(), PdfError> {
    let n = pages.len();
    let base = PAGE_H - (PAGE_H - MARGIN + 1.0 * MM);
    let rule = base + 8.5;
    let label_line = wrap(label, Face::Regular, 8.0, TEXT_W * 0.7)?
        .into_iter()
        .next()
        .unwrap_or_default();
    for (i, p) in pages.iter_mut().enumerate() {
        let right = format!("page {} of {}", i + 1, n);
        let rw = width(Face::Regular, 8.0, &right)?;
        p.primitives.push(Primitive::Line {
            from: (X0, rule),
            to: (X0 + TEXT_W, rule),
            stroke: Stroke::solid(0.4, 0.5),
        });
        for (x, text) in [(X0, label_line.clone()), (X0 + TEXT_W - rw, right)] {
            if text.is_empty() {
                continue;
            }
            p.primitives.push(Primitive::Text(TextRun {
                x,
                y: base,
                size_pt: 8.0,
                face: Face::Regular,
                grey: 0.3,
                angle_deg: 0.0,
                text,
            }));
        }
    }
    Ok(())
}

/// Lays out `doc` on A4 portrait pages (210 × 297 mm, 18 mm margins), footers included.
/// Deterministic: the same document always gives the same primitives.
pub fn layout(doc: &Document) -> Result<LaidOutDocument, PdfError> {
    let mut b = Builder::new();
    if !doc.title.is_empty() {
        for line in wrap(&doc.title, Face::Bold, 20.0, TEXT_W)? {
            b.text(
                X0,
                b.y + baseline_in(25.0, 20.0),
                20.0,
                Face::Bold,
                0.0,
                &line,
            );
            b.y += 25.0;
        }
        b.y += 3.0;
        b.hrule(X0, TEXT_W, b.y, Stroke::solid(1.2, 0.0));
        b.y += 12.0;
    }
    for (i, block) in doc.blocks.iter().enumerate() {
        match block {
            Block::Heading { level, text } => layout_heading(&mut b, &doc.blocks, i, *level, text)?,
            Block::Paragraph(t) => {
                layout_paragraph(&mut b, t, 0.0, false)?;
                b.y += BLOCK_GAP - 1.0;
            }
            Block::BulletList(items) => {
                for item in items {
                    layout_paragraph(&mut b, item, 14.0, true)?;
                    b.y += 2.0;
                }
                b.y += BLOCK_GAP - 2.0;
            }
            Block::KeyFigures(items) => layout_key_figures(&mut b, items)?,
            Block::Table(t) => layout_table(&mut b, t)?,
            Block::Chart(Chart::Line(c)) => layout_line_chart(&mut b, c)?,
            Block::Chart(Chart::Bar(c)) => layout_bar_chart(&mut b, c)?,
            Block::Preformatted(lines) => layout_listing(&mut b, lines)?,
            Block::PageBreak => {
                if !b.at_top() || !b.cur.is_empty() {
                    b.new_page();
                }
            }
            Block::Spacer(mm) => {
                let h = if mm.is_finite() {
                    mm.max(0.0) * MM
                } else {
                    0.0
                };
                if b.y + h > BODY_BOTTOM {
                    b.new_page();
                } else {
                    b.y += h;
                }
            }
        }
    }
    let mut pages = b.finish();
    add_footers(&mut pages, &doc.footer_label)?;
    Ok(LaidOutDocument { pages })
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn a4_size_in_points() {
        // ISO 216: A4 is 210 × 297 mm; 1 in = 25.4 mm = 72 pt, so 595.28 × 841.89 pt.
        assert_relative_eq!(PAGE_W, 595.2756, epsilon = 1e-3);
        assert_relative_eq!(PAGE_H, 841.8898, epsilon = 1e-3);
    }

    #[test]
    fn heckbert_nice_ticks() {
        // Heckbert, "Nice numbers for graph labels", Graphics Gems (1990): data 105…543 with
        // about 5 ticks is labelled 100…600 in steps of 100 (from memory).
        let (a, b, s) = nice_ticks(105.0, 543.0, 5);
        assert_relative_eq!(a, 100.0);
        assert_relative_eq!(b, 600.0);
        assert_relative_eq!(s, 100.0);
        // 1-2-5 steps only (common practice).
        for (lo, hi) in [(0.0, 0.37), (-3.2, 17.9), (1000.0, 8760.0), (0.0, 1.0e6)] {
            let (a, b, s) = nice_ticks(lo, hi, 6);
            assert!(a <= lo && b >= hi);
            let mant = s / 10f64.powf(s.log10().floor());
            assert!(
                [1.0, 2.0, 5.0].iter().any(|m| (mant - m).abs() < 1e-9),
                "{s}"
            );
        }
        // Degenerate range still gives an axis.
        let (a, b, _) = nice_ticks(5.0, 5.0, 5);
        assert!(a < 5.0 && b > 5.0);
    }

    #[test]
    fn tick_labels() {
        assert_eq!(tick_label(0.5, 0.1), "0.5");
        assert_eq!(tick_label(-0.0000001, 0.2), "0.0");
        assert_eq!(tick_label(2000.0, 500.0), "2000");
    }

    #[test]
    fn wrap_respects_width() {
        let text = "Water from the upper spring reaches Kàmbà Ñdógo through a gravity main of \
                    galvanised pipe laid along the ridge path in the dry season.";
        let lines = wrap(text, Face::Regular, 10.0, 150.0).unwrap();
        assert!(lines.len() > 2);
        for l in &lines {
            assert!(
                width(Face::Regular, 10.0, l).unwrap() <= 150.0 + 1e-3,
                "{l}"
            );
        }
        assert_eq!(
            lines.join(" "),
            text.split_whitespace().collect::<Vec<_>>().join(" ")
        );
        let long = wrap(&"x".repeat(400), Face::Regular, 10.0, 100.0).unwrap();
        assert!(long.len() > 3);
    }

    fn table(rows: usize) -> Block {
        Block::Table(Table {
            caption: Some("Hours".into()),
            header: vec!["a".into(), "b".into()],
            rows: (0..rows).map(|i| vec![i.to_string(), "x".into()]).collect(),
            column_align: vec![Align::Right],
            column_weights: None,
        })
    }

    fn texts(p: &Page) -> Vec<String> {
        p.primitives
            .iter()
            .filter_map(|x| match x {
                Primitive::Text(t) => Some(t.text.clone()),
                _ => None,
            })
            .collect()
    }

    #[test]
    fn long_table_breaks_with_repeated_header() {
        let doc = Document {
            title: "T".into(),
            footer_label: "Scheme".into(),
            blocks: vec![table(200)],
            attachments: vec![],
        };
        let out = layout(&doc).unwrap();
        assert!(out.pages.len() >= 3);
        let p2 = texts(&out.pages[1]);
        assert!(p2.contains(&"Hours (continued)".to_string()));
        assert!(p2.contains(&"a".to_string()));
        let all: Vec<String> = out.pages.iter().flat_map(texts).collect();
        assert!(all.contains(&"199".to_string()));
        let n = out.pages.len();
        assert!(texts(&out.pages[n - 1]).contains(&format!("page {n} of {n}")));
        // Nothing below the body bottom except the footer.
        for p in &out.pages {
            for prim in &p.primitives {
                if let Primitive::Text(t) = prim
                    && t.size_pt != 8.0
                {
                    assert!(t.y >= PAGE_H - BODY_BOTTOM - 1.0, "{} at {}", t.text, t.y);
                }
            }
        }
    }

    #[test]
    fn heading_is_kept_with_next_block() {
        // 230 mm of space leaves about 23 mm: room for the heading alone, not for it together
        // with the caption, header and first rows of the table.
        let mut blocks = vec![Block::Spacer(230.0)];
        blocks.push(Block::Heading {
            level: 2,
            text: "Tank level".into(),
        });
        blocks.push(table(5));
        let doc = Document {
            title: String::new(),
            footer_label: String::new(),
            blocks,
            attachments: vec![],
        };
        let out = layout(&doc).unwrap();
        assert_eq!(out.pages.len(), 2);
        assert!(
            texts(&out.pages[1]).contains(&"Tank level".to_string()),
            "{:?}",
            out.pages.iter().map(texts).collect::<Vec<_>>()
        );
        assert!(!texts(&out.pages[0]).contains(&"Tank level".to_string()));
    }

    #[test]
    fn missing_data_breaks_the_line() {
        let doc = Document {
            blocks: vec![Block::Chart(Chart::Line(LineChart {
                title: "gap".into(),
                series: vec![Series {
                    name: "s".into(),
                    points: vec![
                        (0.0, 1.0),
                        (1.0, 2.0),
                        (2.0, f64::NAN),
                        (3.0, 1.0),
                        (4.0, 3.0),
                    ],
                    style: LineStyle::Solid,
                    grey: 0.0,
                    width_pt: 1.0,
                }],
                ..LineChart::default()
            }))],
            ..Document::default()
        };
        let out = layout(&doc).unwrap();
        let polylines: Vec<usize> = out.pages[0]
            .primitives
            .iter()
            .filter_map(|p| match p {
                Primitive::Polyline { points, .. } => Some(points.len()),
                _ => None,
            })
            .collect();
        assert_eq!(polylines, vec![2, 2]);
    }

    #[test]
    fn empty_document_has_one_page() {
        let out = layout(&Document::default()).unwrap();
        assert_eq!(out.pages.len(), 1);
    }
}
