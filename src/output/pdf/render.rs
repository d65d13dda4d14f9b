//! The render pass: turns a [`LaidOutDocument`] into PDF bytes with printpdf's plain drawing
//! operations. It owns font embedding (subset DejaVu faces under fixed resource names), the
//! info dictionary and the document id, and guarantees byte-identical output for identical
//! input: no clock, no random ids.

use std::collections::{BTreeMap, BTreeSet};

use lopdf::{Object, StringFormat};
use printpdf::{
    Color, FontId, Greyscale, Line, LineDashPattern, LinePoint, Mm, Op, PaintMode, PdfDocument,
    PdfFontHandle, PdfPage, PdfSaveOptions, Point, Pt, Rect, TextItem, TextMatrix, WindingOrder,
};
use sha2::{Digest, Sha256};

use super::fonts::{Face, metrics, subset_keep_ids};
use super::layout::{LaidOutDocument, Primitive, Stroke};
use super::{Meta, PdfError};

fn grey(g: f32) -> Color {
    Color::Greyscale(Greyscale {
        percent: g.clamp(0.0, 1.0),
        icc_profile: None,
    })
}

fn pt(x: f32, y: f32) -> Point {
    Point { x: Pt(x), y: Pt(y) }
}

fn stroke_ops(ops: &mut Vec<Op>, s: &Stroke) {
    ops.push(Op::SetOutlineColor { col: grey(s.grey) });
    ops.push(Op::SetOutlineThickness {
        pt: Pt(s.width_pt.max(0.0)),
    });
    ops.push(Op::SetLineDashPattern {
        dash: LineDashPattern::new(0.0, &s.dash),
    });
}

fn line_of(points: impl Iterator<Item = (f32, f32)>) -> Line {
    Line {
        points: points
            .map(|(x, y)| LinePoint {
                p: pt(x, y),
                bezier: false,
            })
            .collect(),
        is_closed: false,
    }
}

fn font_id(face: Face) -> FontId {
    FontId(face.pdf_name().to_string())
}

fn page_ops(prims: &[Primitive]) -> Vec<Op> {
    let mut ops = Vec::with_capacity(prims.len() * 4);
    for p in prims {
        match p {
            Primitive::Text(t) => {
                let a = t.angle_deg.to_radians();
                let (s, c) = (a.sin(), a.cos());
                ops.push(Op::StartTextSection);
                ops.push(Op::SetFont {
                    font: PdfFontHandle::External(font_id(t.face)),
                    size: Pt(t.size_pt),
                });
                ops.push(Op::SetFillColor { col: grey(t.grey) });
                ops.push(Op::SetTextMatrix {
                    matrix: if t.angle_deg == 0.0 {
                        TextMatrix::Translate(Pt(t.x), Pt(t.y))
                    } else {
                        TextMatrix::Raw([c, s, -s, c, t.x, t.y])
                    },
                });
                ops.push(Op::ShowText {
                    items: vec![TextItem::Text(t.text.clone())],
                });
                ops.push(Op::EndTextSection);
            }
            Primitive::Line { from, to, stroke } => {
                stroke_ops(&mut ops, stroke);
                ops.push(Op::DrawLine {
                    line: line_of([*from, *to].into_iter()),
                });
            }
            Primitive::Polyline { points, stroke } => {
                stroke_ops(&mut ops, stroke);
                ops.push(Op::SetLineJoinStyle {
                    join: printpdf::LineJoinStyle::Round,
                });
                ops.push(Op::DrawLine {
                    line: line_of(points.iter().copied()),
                });
                ops.push(Op::SetLineJoinStyle {
                    join: printpdf::LineJoinStyle::Miter,
                });
            }
            Primitive::Rect {
                x,
                y,
                w,
                h,
                fill_grey,
                stroke,
            } => {
                let mode = match (fill_grey, stroke) {
                    (Some(_), Some(_)) => PaintMode::FillStroke,
                    (Some(_), None) => PaintMode::Fill,
                    (None, Some(_)) => PaintMode::Stroke,
                    (None, None) => continue,
                };
                if let Some(g) = fill_grey {
                    ops.push(Op::SetFillColor { col: grey(*g) });
                }
                if let Some(s) = stroke {
                    stroke_ops(&mut ops, s);
                }
                ops.push(Op::DrawRectangle {
                    rectangle: Rect {
                        x: Pt(*x),
                        y: Pt(*y),
                        width: Pt(*w),
                        height: Pt(*h),
                        mode: Some(mode),
                        winding_order: Some(WindingOrder::NonZero),
                    },
                });
            }
            Primitive::ClipStart { x, y, w, h } => {
                ops.push(Op::SaveGraphicsState);
                ops.push(Op::DrawRectangle {
                    rectangle: Rect {
                        x: Pt(*x),
                        y: Pt(*y),
                        width: Pt(*w),
                        height: Pt(*h),
                        mode: Some(PaintMode::Clip),
                        winding_order: Some(WindingOrder::NonZero),
                    },
                });
            }
            Primitive::ClipEnd => ops.push(Op::RestoreGraphicsState),
        }
    }
    ops
}

/// A PDF text string: literal for ASCII, UTF-16BE with byte-order mark otherwise (ISO 32000-1
/// §7.9.2.2).
pub(crate) fn pdf_text(s: &str) -> Object {
    if s.is_ascii() {
        Object::String(s.as_bytes().to_vec(), StringFormat::Literal)
    } else {
        let mut b = vec![0xFE, 0xFF];
        for u in s.encode_utf16() {
            b.extend_from_slice(&u.to_be_bytes());
        }
        Object::String(b, StringFormat::Hexadecimal)
    }
}

/// `YYYY-MM-DD` → PDF date `D:YYYYMMDD` (ISO 32000-1 §7.9.4).
fn pdf_date(date: &str) -> Result<String, PdfError> {
    let bad = || PdfError::BadDate(date.to_string());
    let parts: Vec<&str> = date.split('-').collect();
    if parts.len() != 3
        || parts[0].len() != 4
        || parts[1].len() != 2
        || parts[2].len() != 2
        || !parts.iter().all(|p| p.chars().all(|c| c.is_ascii_digit()))
    {
        return Err(bad());
    }
    let (m, d): (u32, u32) = (
        parts[1].parse().map_err(|_| bad())?,
        parts[2].parse().map_err(|_| bad())?,
    );
    if !(1..=12).contains(&m) || !(1..=31).contains(&d) {
        return Err(bad());
    }
    Ok(format!("D:{}{}{}", parts[0], parts[1], parts[2]))
}

/// Renders laid-out pages to PDF bytes. Fonts are subset to the glyphs used (glyph ids kept),
/// the document id is a SHA-256 of the laid-out content and `meta`, and no date is written
/// except `meta.date`. Same input → same bytes, in any process.
pub fn render(doc: &LaidOutDocument, meta: &Meta) -> Result<Vec<u8>, PdfError> {
    let creation = meta.date.as_deref().map(pdf_date).transpose()?;

    // Glyphs used per face.
    let mut used: BTreeMap<Face, BTreeSet<u16>> = BTreeMap::new();
    for page in &doc.pages {
        for p in &page.primitives {
            if let Primitive::Text(t) = p {
                let m = metrics(t.face)?;
                let set = used.entry(t.face).or_default();
                set.extend(t.text.chars().map(|c| m.glyph(c)));
            }
        }
    }

    let mut pdf = PdfDocument::new(&meta.title);
    for (face, glyphs) in &used {
        let mut parsed = metrics(*face)?.parsed.clone();
        parsed.original_bytes = subset_keep_ids(face.ttf_bytes(), glyphs)?;
        // Subset tag (ISO 32000-1 §9.6.4): six capitals, here derived from the glyph set so
        // it is reproducible.
        let mut th = Sha256::new();
        for g in glyphs {
            th.update(g.to_be_bytes());
        }
        let tag: String = th.finalize()[..6]
            .iter()
            .map(|b| char::from(b'A' + b % 26))
            .collect();
        parsed.font_name = Some(format!("{tag}+{}", face.pdf_name()));
        pdf.resources
            .fonts
            .map
            .insert(font_id(*face), printpdf::PdfFont::new(parsed));
    }
    pdf.pages = doc
        .pages
        .iter()
        .map(|p| PdfPage::new(Mm(210.0), Mm(297.0), page_ops(&p.primitives)))
        .collect();

    let opts = PdfSaveOptions {
        optimize: true,
        subset_fonts: false,
        secure: true,
        image_optimization: None,
    };
    let mut warnings = Vec::new();
    let mut lo = printpdf::serialize::to_lopdf_doc(&pdf, &opts, &mut warnings);
    if let Some(w) = warnings
        .iter()
        .find(|w| w.severity == printpdf::PdfParseErrorSeverity::Error)
    {
        return Err(PdfError::Render(w.msg.clone()));
    }

    // Deterministic info dictionary and document id.
    let mut info = lopdf::Dictionary::new();
    info.set("Title", pdf_text(&meta.title));
    if !meta.subject.is_empty() {
        info.set("Subject", pdf_text(&meta.subject));
    }
    if !meta.author.is_empty() {
        info.set("Author", pdf_text(&meta.author));
    }
    if !meta.keywords.is_empty() {
        info.set("Keywords", pdf_text(&meta.keywords));
    }
    info.set("Creator", pdf_text("tapplan"));
    info.set("Producer", pdf_text("tapplan PDF layer (printpdf, lopdf)"));
    if let Some(d) = &creation {
        info.set("CreationDate", pdf_text(d));
        info.set("ModDate", pdf_text(d));
    }
    let info_id = lo.add_object(Object::Dictionary(info));
    lo.trailer.set("Info", Object::Reference(info_id));
    let mut h = Sha256::new();
    h.update(format!("{doc:?}|{meta:?}").as_bytes());
    let digest = h.finalize();
    let id = Object::String(digest[..16].to_vec(), StringFormat::Hexadecimal);
    lo.trailer.set("ID", Object::Array(vec![id.clone(), id]));
    lo.prune_objects();
    lo.renumber_objects();
    lo.compress();
    let mut out = Vec::new();
    lo.save_to(&mut out)
        .map_err(|e| PdfError::Render(format!("writing PDF failed: {e}")))?;
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dates_are_checked() {
        assert_eq!(pdf_date("2031-04-09").unwrap(), "D:20310409");
        assert!(pdf_date("9 April").is_err());
        assert!(pdf_date("2031-13-01").is_err());
    }

    #[test]
    fn text_strings_use_utf16_for_non_ascii() {
        match pdf_text("Ōkasa") {
            Object::String(b, _) => assert_eq!(&b[..4], &[0xFE, 0xFF, 0x01, 0x4C]),
            _ => panic!("not a string"),
        }
    }
}
