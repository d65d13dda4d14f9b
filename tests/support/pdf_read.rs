//! Reads a PDF back for the tests, with two independent readers behind one small interface:
//!
//! - [`RustReader`] (always available): `lopdf` parses the file structure (pages, media boxes,
//!   the info dictionary, the embedded-files name tree), `pdf-extract` extracts each page's text
//!   through the fonts' ToUnicode maps, and `hayro` rasterises every page. None of them shares
//!   code with the plan's writer (printpdf), so a page the writer got wrong fails here.
//! - [`Poppler`] (poppler-utils' `pdfinfo`, `pdftotext`, `pdfdetach`): a second reader written
//!   in another language. Tests that use it are `#[ignore]`d, so `cargo test` never needs it;
//!   `.ci/run` installs poppler-utils and runs them with `--ignored`. When the tools are missing
//!   such a test fails with the package to install: it never passes by skipping.

#![allow(dead_code)]

use std::collections::BTreeMap;
use std::path::Path;
use std::process::Command;

/// A4 in PDF points (ISO 216: 210 mm × 297 mm at 72 pt per 25.4 mm).
pub const A4_PT: (f64, f64) = (595.276, 841.89);

/// What the tests ask of a PDF reader.
pub trait PdfReader {
    /// Number of pages.
    fn page_count(&self, pdf: &Path) -> usize;
    /// Width and height of each page in pt.
    fn page_sizes(&self, pdf: &Path) -> Vec<(f64, f64)>;
    /// The text of each page (whitespace as the reader gives it).
    fn page_texts(&self, pdf: &Path) -> Vec<String>;
    /// The document information dictionary's text entries (Title, Subject, Producer, …).
    fn info(&self, pdf: &Path) -> BTreeMap<String, String>;
    /// The embedded files, name and bytes, in the order the reader lists them.
    fn attachments(&self, pdf: &Path) -> Vec<(String, Vec<u8>)>;
}

/// Pure-Rust reader: lopdf + pdf-extract + hayro.
pub struct RustReader;

fn load(pdf: &Path) -> lopdf::Document {
    lopdf::Document::load(pdf).unwrap_or_else(|e| panic!("lopdf cannot read {pdf:?}: {e}"))
}

fn text_of(obj: &lopdf::Object) -> Option<String> {
    match obj {
        lopdf::Object::String(bytes, _) => Some(decode_pdf_text(bytes)),
        lopdf::Object::Name(n) => Some(String::from_utf8_lossy(n).into_owned()),
        _ => None,
    }
}

/// PDF text strings: UTF-16BE with a byte-order mark, or PDFDocEncoding (Latin-1 for the
/// printable range, which is all the tests look at). ISO 32000-1:2008, 7.9.2.2.
fn decode_pdf_text(bytes: &[u8]) -> String {
    if bytes.starts_with(&[0xFE, 0xFF]) {
        let units: Vec<u16> = bytes[2..]
            .chunks(2)
            .map(|c| u16::from_be_bytes([c[0], *c.get(1).unwrap_or(&0)]))
            .collect();
        String::from_utf16_lossy(&units)
    } else if bytes.starts_with(&[0xEF, 0xBB, 0xBF]) {
        String::from_utf8_lossy(&bytes[3..]).into_owned()
    } else {
        bytes.iter().map(|&b| b as char).collect()
    }
}

/// Walks a name tree (ISO 32000-1:2008, 7.9.6): `Names` pairs in leaves, `Kids` below.
fn name_tree(
    doc: &lopdf::Document,
    node: &lopdf::Dictionary,
    out: &mut Vec<(String, lopdf::Object)>,
) {
    if let Ok(names) = node
        .get_deref(b"Names", doc)
        .and_then(lopdf::Object::as_array)
    {
        for pair in names.chunks(2) {
            if let [k, v] = pair {
                let key = match doc.dereference(k) {
                    Ok((_, o)) => text_of(o).unwrap_or_default(),
                    Err(_) => String::new(),
                };
                out.push((key, v.clone()));
            }
        }
    }
    if let Ok(kids) = node
        .get_deref(b"Kids", doc)
        .and_then(lopdf::Object::as_array)
    {
        for kid in kids {
            if let Ok((_, k)) = doc.dereference(kid)
                && let Ok(d) = k.as_dict()
            {
                name_tree(doc, d, out);
            }
        }
    }
}

impl PdfReader for RustReader {
    fn page_count(&self, pdf: &Path) -> usize {
        load(pdf).get_pages().len()
    }

    fn page_sizes(&self, pdf: &Path) -> Vec<(f64, f64)> {
        let doc = load(pdf);
        doc.get_pages()
            .values()
            .map(|&id| {
                let page = doc.get_dictionary(id).expect("page dictionary");
                let mb = page
                    .get_deref(b"MediaBox", &doc)
                    .and_then(lopdf::Object::as_array)
                    .expect("page has a MediaBox");
                let v: Vec<f64> = mb
                    .iter()
                    .map(|o| match o {
                        lopdf::Object::Integer(i) => *i as f64,
                        lopdf::Object::Real(r) => *r as f64,
                        other => panic!("MediaBox entry {other:?}"),
                    })
                    .collect();
                (v[2] - v[0], v[3] - v[1])
            })
            .collect()
    }

    fn page_texts(&self, pdf: &Path) -> Vec<String> {
        let bytes = std::fs::read(pdf).unwrap();
        pdf_extract::extract_text_from_mem_by_pages(&bytes)
            .unwrap_or_else(|e| panic!("pdf-extract cannot read {pdf:?}: {e}"))
    }

    fn info(&self, pdf: &Path) -> BTreeMap<String, String> {
        let doc = load(pdf);
        let mut out = BTreeMap::new();
        if let Ok(info) = doc
            .trailer
            .get_deref(b"Info", &doc)
            .and_then(lopdf::Object::as_dict)
        {
            for (k, v) in info.iter() {
                let v = doc.dereference(v).map(|(_, o)| o).unwrap_or(v);
                if let Some(t) = text_of(v) {
                    out.insert(String::from_utf8_lossy(k).into_owned(), t);
                }
            }
        }
        out
    }

    fn attachments(&self, pdf: &Path) -> Vec<(String, Vec<u8>)> {
        let doc = load(pdf);
        let Ok(catalog) = doc.catalog() else {
            return vec![];
        };
        let Ok(tree) = catalog
            .get_deref(b"Names", &doc)
            .and_then(lopdf::Object::as_dict)
            .and_then(|n| n.get_deref(b"EmbeddedFiles", &doc))
            .and_then(lopdf::Object::as_dict)
        else {
            return vec![];
        };
        let mut specs = Vec::new();
        name_tree(&doc, tree, &mut specs);
        specs
            .into_iter()
            .map(|(name, spec)| {
                let (_, spec) = doc.dereference(&spec).expect("file spec");
                let ef = spec
                    .as_dict()
                    .and_then(|d| d.get_deref(b"EF", &doc))
                    .and_then(lopdf::Object::as_dict)
                    .expect("file spec has EF");
                let stream = ef
                    .get_deref(b"F", &doc)
                    .or_else(|_| ef.get_deref(b"UF", &doc))
                    .and_then(lopdf::Object::as_stream)
                    .expect("embedded file stream");
                let bytes = stream
                    .decompressed_content()
                    .unwrap_or_else(|_| stream.content.clone());
                (name, bytes)
            })
            .collect()
    }
}

/// One rasterised page: its size in pixels, how many pixels carry ink, and the box they span.
#[derive(Debug)]
pub struct Raster {
    pub width_px: usize,
    pub height_px: usize,
    pub inked_px: usize,
    /// Inked bounding box (x0, y0, x1, y1) in pixels from the top left; `None` on a blank page.
    pub ink_box: Option<(usize, usize, usize, usize)>,
}

/// Rasterises every page with hayro at `px_per_pt` pixels per point on white.
pub fn rasterise(pdf: &Path, px_per_pt: f32) -> Vec<Raster> {
    use hayro::hayro_interpret::InterpreterSettings;
    use hayro::hayro_syntax::Pdf;
    use hayro::vello_cpu::color::palette::css::WHITE;
    use hayro::{PixmapSettings, RenderCache, RenderSettings, render};

    let bytes = std::fs::read(pdf).unwrap();
    let doc = Pdf::new(bytes).unwrap_or_else(|e| panic!("hayro cannot read {pdf:?}: {e:?}"));
    let cache = RenderCache::new();
    let settings = PixmapSettings {
        x_scale: px_per_pt,
        y_scale: px_per_pt,
        bg_color: WHITE,
    };
    doc.pages()
        .iter()
        .map(|page| {
            let pix = render(
                page,
                &cache,
                &InterpreterSettings::default(),
                &RenderSettings::default(),
                &settings,
            );
            let (w, h) = (pix.width() as usize, pix.height() as usize);
            let data = pix.data_as_u8_slice();
            let mut inked = 0;
            let mut bbox: Option<(usize, usize, usize, usize)> = None;
            for y in 0..h {
                for x in 0..w {
                    let o = (y * w + x) * 4;
                    // "ink": any channel clearly darker than white
                    if data[o] < 200 || data[o + 1] < 200 || data[o + 2] < 200 {
                        inked += 1;
                        bbox = Some(match bbox {
                            None => (x, y, x, y),
                            Some((x0, y0, x1, y1)) => (x0.min(x), y0.min(y), x1.max(x), y1.max(y)),
                        });
                    }
                }
            }
            Raster {
                width_px: w,
                height_px: h,
                inked_px: inked,
                ink_box: bbox,
            }
        })
        .collect()
}

/// Every page renders, is not blank, and its ink stays `side_pt` inside the left, right and top
/// edges and `bottom_pt` above the bottom edge (less one pixel of anti-aliasing).
pub fn assert_pages_render_inside(pdf: &Path, side_pt: f64, bottom_pt: f64) {
    let scale = 0.5_f32;
    let rasters = rasterise(pdf, scale);
    assert!(!rasters.is_empty(), "{pdf:?}: no page rendered");
    let m = (side_pt * scale as f64).floor() as usize;
    let b = (bottom_pt * scale as f64).floor() as usize;
    for (i, r) in rasters.iter().enumerate() {
        let (x0, y0, x1, y1) = r
            .ink_box
            .unwrap_or_else(|| panic!("{pdf:?}: page {} renders blank", i + 1));
        assert!(
            r.inked_px > 200,
            "{pdf:?}: page {} has only {} inked pixels",
            i + 1,
            r.inked_px
        );
        let inside =
            x0 + 1 >= m && y0 + 1 >= m && x1 + m <= r.width_px + 1 && y1 + b <= r.height_px + 1;
        assert!(
            inside,
            "{pdf:?}: page {} has ink at {:?} outside the margins ({side_pt} pt, bottom \
             {bottom_pt} pt) of {}×{} px",
            i + 1,
            (x0, y0, x1, y1),
            r.width_px,
            r.height_px
        );
    }
}

/// poppler-utils, run as separate processes.
pub struct Poppler;

fn tool(name: &str) -> Command {
    let found = Command::new(name).arg("-v").output().is_ok();
    assert!(
        found,
        "`{name}` not found: this test reads the PDF with poppler-utils \
         (apt-get update && apt-get install -y poppler-utils); .ci/run installs it"
    );
    Command::new(name)
}

fn run(cmd: &mut Command) -> Vec<u8> {
    let out = cmd.output().expect("tool runs");
    assert!(
        out.status.success(),
        "{cmd:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
}

fn pdfinfo(pdf: &Path) -> String {
    String::from_utf8(run(tool("pdfinfo").args(["-enc", "UTF-8"]).arg(pdf))).unwrap()
}

impl PdfReader for Poppler {
    fn page_count(&self, pdf: &Path) -> usize {
        pdfinfo(pdf)
            .lines()
            .find_map(|l| l.strip_prefix("Pages:"))
            .map(|v| v.trim().parse().unwrap())
            .expect("pdfinfo prints Pages")
    }

    fn page_sizes(&self, pdf: &Path) -> Vec<(f64, f64)> {
        let n = self.page_count(pdf);
        let out = String::from_utf8(run(tool("pdfinfo")
            .args(["-f", "1", "-l", &n.to_string()])
            .arg(pdf)))
        .unwrap();
        out.lines()
            .filter(|l| l.starts_with("Page") && l.contains("size:"))
            .map(|l| {
                let v: Vec<f64> = l
                    .split("size:")
                    .nth(1)
                    .unwrap()
                    .split_whitespace()
                    .filter_map(|w| w.parse().ok())
                    .collect();
                (v[0], v[1])
            })
            .collect()
    }

    fn page_texts(&self, pdf: &Path) -> Vec<String> {
        (1..=self.page_count(pdf))
            .map(|p| {
                let p = p.to_string();
                String::from_utf8(run(tool("pdftotext")
                    .args(["-f", &p, "-l", &p, "-layout", "-enc", "UTF-8"])
                    .arg(pdf)
                    .arg("-")))
                .unwrap()
            })
            .collect()
    }

    fn info(&self, pdf: &Path) -> BTreeMap<String, String> {
        pdfinfo(pdf)
            .lines()
            .filter_map(|l| {
                let (k, v) = l.split_once(':')?;
                Some((k.trim().to_string(), v.trim().to_string()))
            })
            .collect()
    }

    fn attachments(&self, pdf: &Path) -> Vec<(String, Vec<u8>)> {
        let list = String::from_utf8(run(tool("pdfdetach").arg("-list").arg(pdf))).unwrap();
        let dir = tempfile::tempdir().unwrap();
        list.lines()
            .skip(1)
            .filter_map(|l| {
                let (num, name) = l.split_once(": ")?;
                let num = num.trim();
                num.parse::<usize>().ok()?;
                let out = dir.path().join(format!("att{num}"));
                run(tool("pdfdetach")
                    .args(["-save", num, "-o"])
                    .arg(&out)
                    .arg(pdf));
                Some((name.to_string(), std::fs::read(out).unwrap()))
            })
            .collect()
    }
}

/// Whitespace folded to single spaces, so the readers' line layouts compare.
pub fn flat(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}
