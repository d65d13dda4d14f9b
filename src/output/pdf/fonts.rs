//! The embedded typefaces of the PDF layer: the font bytes (DejaVu Sans, Sans Bold, Sans Mono,
//! shipped under `assets/fonts/` with their licence), their metrics for line breaking (advance
//! widths read from `hmtx` through printpdf's font parser), and a glyph-keeping subsetter that
//! empties the outlines of every glyph a document does not use, so an embedded face stays small.

use std::collections::BTreeSet;
use std::sync::OnceLock;

use super::PdfError;

static SANS_TTF: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSans.ttf");
static SANS_BOLD_TTF: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSans-Bold.ttf");
static MONO_TTF: &[u8] = include_bytes!("../../../assets/fonts/DejaVuSansMono.ttf");

/// One of the three faces a laid-out page may use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Face {
    /// DejaVu Sans: body text, table cells, chart labels.
    Regular,
    /// DejaVu Sans Bold: headings, table headers, key-figure values.
    Bold,
    /// DejaVu Sans Mono: preformatted listings.
    Mono,
}

impl Face {
    /// All faces, in a fixed order (resource names and embedding order follow it).
    pub const ALL: [Face; 3] = [Face::Regular, Face::Bold, Face::Mono];

    /// The PDF resource name and /BaseFont of this face (fixed, so output is reproducible).
    pub fn pdf_name(self) -> &'static str {
        match self {
            Face::Regular => "DejaVuSans",
            Face::Bold => "DejaVuSans-Bold",
            Face::Mono => "DejaVuSansMono",
        }
    }

    /// The complete TrueType file of this face.
    pub fn ttf_bytes(self) -> &'static [u8] {
        match self {
            Face::Regular => SANS_TTF,
            Face::Bold => SANS_BOLD_TTF,
            Face::Mono => MONO_TTF,
        }
    }

    fn index(self) -> usize {
        match self {
            Face::Regular => 0,
            Face::Bold => 1,
            Face::Mono => 2,
        }
    }
}

/// Parsed metrics of one face (character map and advance widths in font units).
pub struct FaceMetrics {
    /// printpdf's parse of the whole font (cmap, hmtx, head, hhea).
    pub parsed: printpdf::ParsedFont,
    /// Font units per em (2048 for DejaVu).
    pub units_per_em: f32,
}

static FACES: OnceLock<Result<Vec<FaceMetrics>, String>> = OnceLock::new();

/// Metrics of `face`, parsed once per process.
pub fn metrics(face: Face) -> Result<&'static FaceMetrics, PdfError> {
    let all = FACES.get_or_init(|| {
        Face::ALL
            .iter()
            .map(|f| {
                let mut warnings = Vec::new();
                let parsed = printpdf::ParsedFont::from_bytes(f.ttf_bytes(), 0, &mut warnings)
                    .ok_or_else(|| format!("embedded font {} could not be parsed", f.pdf_name()))?;
                let units_per_em = f32::from(parsed.units_per_em.max(1));
                Ok(FaceMetrics {
                    parsed,
                    units_per_em,
                })
            })
            .collect()
    });
    match all {
        Ok(v) => Ok(&v[face.index()]),
        Err(e) => Err(PdfError::Font(e.clone())),
    }
}

impl FaceMetrics {
    /// Glyph id of `c`, 0 (.notdef) when the face lacks it.
    pub fn glyph(&self, c: char) -> u16 {
        self.parsed.lookup_glyph_index(c as u32).unwrap_or(0)
    }

    /// Advance width of `text` set at `size_pt`, in pt: Σ hmtx advance / unitsPerEm × size.
    /// No kerning (the renderer does not kern either), so the two always agree.
    pub fn width_pt(&self, text: &str, size_pt: f32) -> f32 {
        let units: u32 = text
            .chars()
            .map(|c| u32::from(self.parsed.get_glyph_width(self.glyph(c)).unwrap_or(0)))
            .sum();
        units as f32 / self.units_per_em * size_pt
    }

    /// Ascender height above the baseline at `size_pt`, in pt (hhea ascender).
    pub fn ascent_pt(&self, size_pt: f32) -> f32 {
        f32::from(self.parsed.font_metrics.ascent) / self.units_per_em * size_pt
    }
}

fn be_u16(d: &[u8], at: usize) -> Option<u16> {
    Some(u16::from_be_bytes([*d.get(at)?, *d.get(at + 1)?]))
}

fn be_u32(d: &[u8], at: usize) -> Option<u32> {
    Some(u32::from_be_bytes([
        *d.get(at)?,
        *d.get(at + 1)?,
        *d.get(at + 2)?,
        *d.get(at + 3)?,
    ]))
}

/// Tables carried into the subset. Layout tables (GSUB, GPOS, kern, …) are dropped: the PDF
/// content addresses glyphs by id and never shapes. `post` is replaced by a version-3 header.
const KEEP_TABLES: [&[u8; 4]; 11] = [
    b"OS/2", b"cmap", b"cvt ", b"fpgm", b"gasp", b"glyf", b"head", b"hhea", b"hmtx", b"maxp",
    b"prep",
];

fn table_checksum(data: &[u8]) -> u32 {
    data.chunks(4).fold(0u32, |acc, chunk| {
        let mut w = [0u8; 4];
        w[..chunk.len()].copy_from_slice(chunk);
        acc.wrapping_add(u32::from_be_bytes(w))
    })
}

/// Glyph-keeping TrueType subset: every glyph keeps its id, but the outline data of glyphs not
/// in `used` (nor referenced by a used composite glyph, nor .notdef) is emptied, the `loca`
/// table is rewritten in the long format and unneeded tables are dropped.
///
/// Format: OpenType spec, "glyf", "loca", "head" tables and the table directory (checksums,
/// `checkSumAdjustment` = 0xB1B0AFBA − whole-file sum). Valid for TrueType-outline (`glyf`)
/// fonts only; CFF fonts are rejected with an error.
pub fn subset_keep_ids(ttf: &[u8], used: &BTreeSet<u16>) -> Result<Vec<u8>, PdfError> {
    let bad = |what: &str| PdfError::Font(format!("font subsetting failed: {what}"));
    let num_tables = usize::from(be_u16(ttf, 4).ok_or_else(|| bad("truncated header"))?);
    let mut tables: Vec<([u8; 4], &[u8])> = Vec::with_capacity(num_tables);
    for i in 0..num_tables {
        let rec = 12 + 16 * i;
        let tag: [u8; 4] = ttf
            .get(rec..rec + 4)
            .and_then(|t| t.try_into().ok())
            .ok_or_else(|| bad("truncated table directory"))?;
        let off = be_u32(ttf, rec + 8).ok_or_else(|| bad("truncated table record"))? as usize;
        let len = be_u32(ttf, rec + 12).ok_or_else(|| bad("truncated table record"))? as usize;
        let data = ttf
            .get(off..off + len)
            .ok_or_else(|| bad("table outside file"))?;
        tables.push((tag, data));
    }
    let find = |tag: &[u8; 4]| tables.iter().find(|(t, _)| t == tag).map(|(_, d)| *d);
    let head = find(b"head").ok_or_else(|| bad("no head table"))?;
    let maxp = find(b"maxp").ok_or_else(|| bad("no maxp table"))?;
    let loca = find(b"loca").ok_or_else(|| bad("no loca table (CFF fonts unsupported)"))?;
    let glyf = find(b"glyf").ok_or_else(|| bad("no glyf table (CFF fonts unsupported)"))?;
    let long_loca = be_u16(head, 50).ok_or_else(|| bad("short head"))? == 1;
    let num_glyphs = usize::from(be_u16(maxp, 4).ok_or_else(|| bad("short maxp"))?);

    let offset = |gid: usize| -> Option<usize> {
        if long_loca {
            be_u32(loca, gid * 4).map(|v| v as usize)
        } else {
            be_u16(loca, gid * 2).map(|v| usize::from(v) * 2)
        }
    };
    let glyph_data = |gid: usize| -> Option<&[u8]> {
        let (a, b) = (offset(gid)?, offset(gid + 1)?);
        if b < a {
            return None;
        }
        glyf.get(a..b)
    };

    // Closure over composite glyph components.
    let mut keep: BTreeSet<u16> = used
        .iter()
        .copied()
        .filter(|&g| usize::from(g) < num_glyphs)
        .collect();
    keep.insert(0);
    let mut stack: Vec<u16> = keep.iter().copied().collect();
    while let Some(gid) = stack.pop() {
        let data = glyph_data(usize::from(gid)).ok_or_else(|| bad("bad loca entry"))?;
        if data.len() < 10 || (be_u16(data, 0).unwrap_or(0) as i16) >= 0 {
            continue;
        }
        let mut at = 10;
        loop {
            let flags = be_u16(data, at).ok_or_else(|| bad("truncated composite glyph"))?;
            let comp = be_u16(data, at + 2).ok_or_else(|| bad("truncated composite glyph"))?;
            if usize::from(comp) < num_glyphs && keep.insert(comp) {
                stack.push(comp);
            }
            at += 4 + if flags & 0x0001 != 0 { 4 } else { 2 };
            at += if flags & 0x0008 != 0 {
                2
            } else if flags & 0x0040 != 0 {
                4
            } else if flags & 0x0080 != 0 {
                8
            } else {
                0
            };
            if flags & 0x0020 == 0 {
                break;
            }
        }
    }

    let mut new_glyf = Vec::new();
    let mut new_loca = Vec::with_capacity((num_glyphs + 1) * 4);
    for gid in 0..num_glyphs {
        new_loca.extend_from_slice(&(new_glyf.len() as u32).to_be_bytes());
        if keep.contains(&(gid as u16)) {
            let data = glyph_data(gid).ok_or_else(|| bad("bad loca entry"))?;
            new_glyf.extend_from_slice(data);
            while new_glyf.len() % 4 != 0 {
                new_glyf.push(0);
            }
        }
    }
    new_loca.extend_from_slice(&(new_glyf.len() as u32).to_be_bytes());

    let mut new_head = head.to_vec();
    new_head[8..12].copy_from_slice(&[0; 4]);
    new_head[50..52].copy_from_slice(&1u16.to_be_bytes());
    // post version 3.0: no glyph names.
    let mut post = find(b"post").map(|p| p.to_vec()).unwrap_or_default();
    post.resize(32, 0);
    post[0..4].copy_from_slice(&0x0003_0000u32.to_be_bytes());

    let mut out_tables: Vec<([u8; 4], Vec<u8>)> = Vec::new();
    for (tag, data) in &tables {
        let new = match tag {
            b"glyf" => new_glyf.clone(),
            b"loca" => new_loca.clone(),
            b"head" => new_head.clone(),
            b"post" => post.clone(),
            t if KEEP_TABLES.contains(&t) => data.to_vec(),
            _ => continue,
        };
        out_tables.push((*tag, new));
    }
    if !out_tables.iter().any(|(t, _)| t == b"loca") {
        out_tables.push((*b"loca", new_loca));
    }
    out_tables.sort_by_key(|a| a.0);

    let n = out_tables.len() as u16;
    let mut entry_selector = 0u16;
    while (1u16 << (entry_selector + 1)) <= n {
        entry_selector += 1;
    }
    let search_range = (1u16 << entry_selector) * 16;
    let mut out = Vec::new();
    out.extend_from_slice(&0x0001_0000u32.to_be_bytes());
    out.extend_from_slice(&n.to_be_bytes());
    out.extend_from_slice(&search_range.to_be_bytes());
    out.extend_from_slice(&entry_selector.to_be_bytes());
    out.extend_from_slice(&(n * 16 - search_range).to_be_bytes());
    let mut data_off = 12 + 16 * out_tables.len();
    let mut head_at = None;
    let mut body = Vec::new();
    for (tag, data) in &out_tables {
        out.extend_from_slice(tag);
        out.extend_from_slice(&table_checksum(data).to_be_bytes());
        out.extend_from_slice(&(data_off as u32).to_be_bytes());
        out.extend_from_slice(&(data.len() as u32).to_be_bytes());
        if tag == b"head" {
            head_at = Some(data_off);
        }
        body.extend_from_slice(data);
        while body.len() % 4 != 0 {
            body.push(0);
        }
        data_off = 12 + 16 * out_tables.len() + body.len();
    }
    out.extend_from_slice(&body);
    if let Some(h) = head_at {
        let adj = 0xB1B0_AFBAu32.wrapping_sub(table_checksum(&out));
        out[h + 8..h + 12].copy_from_slice(&adj.to_be_bytes());
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn advance_widths_match_hmtx() {
        // DejaVu Sans 2.37 hmtx: 'M' advance 1767, space 651 font units at 2048 upm (from
        // memory; confirmed by reading cmap format 4 + hmtx with a separate Python `struct`
        // script, not with this crate's code).
        let m = metrics(Face::Regular).unwrap();
        assert_relative_eq!(m.units_per_em, 2048.0);
        assert_relative_eq!(m.width_pt("M", 2048.0), 1767.0, epsilon = 0.5);
        assert_relative_eq!(m.width_pt(" ", 2048.0), 651.0, epsilon = 0.5);
        // Monospace: every glyph the same advance (1233 units in DejaVu Sans Mono, same check).
        let mono = metrics(Face::Mono).unwrap();
        assert_relative_eq!(
            mono.width_pt("iiii", 10.0),
            mono.width_pt("WWWW", 10.0),
            epsilon = 1e-4
        );
    }

    #[test]
    fn subset_is_small_and_keeps_glyph_ids() {
        let m = metrics(Face::Regular).unwrap();
        let used: BTreeSet<u16> = "Kàmbà Ñdógo Ōkasa Вода Νερό"
            .chars()
            .map(|c| m.glyph(c))
            .collect();
        assert!(!used.contains(&0), "all sample letters are in DejaVu Sans");
        let sub = subset_keep_ids(Face::Regular.ttf_bytes(), &used).unwrap();
        assert!(
            sub.len() < Face::Regular.ttf_bytes().len() / 4,
            "{}",
            sub.len()
        );
        let mut w = Vec::new();
        let reparsed = printpdf::ParsedFont::from_bytes(&sub, 0, &mut w).expect("subset parses");
        for c in "Kàmbà Ñdógo".chars() {
            assert_eq!(reparsed.lookup_glyph_index(c as u32), Some(m.glyph(c)));
        }
        // Whole-file checksum rule of the OpenType table directory.
        assert_eq!(table_checksum(&sub), 0xB1B0_AFBA);
    }

    #[test]
    fn subset_rejects_garbage() {
        assert!(subset_keep_ids(b"nonsense", &BTreeSet::new()).is_err());
    }
}
