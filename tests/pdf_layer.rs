//! End-to-end checks of the PDF layer: a sample plan with every block kind is rendered and read
//! back by readers outside this crate (`support/pdf_read.rs`: lopdf, pdf-extract and hayro in
//! every run; poppler-utils in the `#[ignore]`d `*_poppler` tests that `.ci/run` runs).

#[path = "support/pdf_read.rs"]
mod pdf_read;

use std::path::Path;
use std::process::Command;

use pdf_read::{A4_PT, PdfReader, Poppler, RustReader, assert_pages_render_inside, flat};

use tapplan::output::pdf::{
    Align, Attachment, BarChart, BarGroup, Block, Chart, Document, LineChart, LineStyle, Meta,
    Series, Table, document_to_pdf, extract_attachment, layout, list_attachments,
};

const YAML_NAME: &str = "kamba-ndogo.yaml";

fn yaml_lines() -> Vec<String> {
    let mut v = vec![
        "# Invented example scheme for tests".to_string(),
        "scheme:".to_string(),
        "  name: Kàmbà Ñdógo upper spring".to_string(),
        "  notes: \"a deliberately long line to force wrapping in the listing: the main runs \
         from the spring box along the ridge path to the tank above Ōkasa and on to the school\""
            .to_string(),
        "demand:".to_string(),
    ];
    for i in 0..295 {
        v.push(format!(
            "  - {{ hour: {i}, litres_per_person: {} }}",
            2 + i % 7
        ));
    }
    v
}

fn sample_document() -> Document {
    let hours: Vec<f64> = (0..=8760).step_by(6).map(f64::from).collect();
    let level: Vec<(f64, f64)> = hours
        .iter()
        .map(|h| (*h, 30.0 + 12.0 * (h / 8760.0 * std::f64::consts::TAU).sin()))
        .collect();
    let demand: Vec<(f64, f64)> = hours
        .iter()
        .map(|h| (*h, 18.0 + 5.0 * (h / 700.0).cos()))
        .collect();
    let supply: Vec<(f64, f64)> = hours
        .iter()
        .map(|h| (*h, 22.0 + (h / 1500.0).sin() * 9.0))
        .collect();
    let mut rows = Vec::new();
    for i in 1..=120 {
        rows.push(vec![
            format!("{i}"),
            format!(
                "Kiosk {} near the {} path",
                i,
                if i % 3 == 0 { "lower market" } else { "school" }
            ),
            format!("{:.1}", 1.5 + f64::from(i) * 0.25),
            format!("{}", 40 + i * 3),
        ]);
    }
    rows.push(vec![
        "121".into(),
        "Last row: Ōkasa clinic tap".into(),
        "99.9".into(),
        "777".into(),
    ]);
    let yaml = yaml_lines().join("\n");
    Document {
        title: "Water supply plan — Kàmbà Ñdógo".into(),
        footer_label: "Kàmbà Ñdógo upper spring scheme".into(),
        blocks: vec![
            Block::KeyFigures(vec![
                ("Tank volume".into(), "48 m³".into()),
                ("Pumps".into(), "2 (1 duty, 1 standby)".into()),
                ("Shortfall hours per year".into(), "37 h".into()),
                ("Reliability".into(), "99.6 %".into()),
                ("People served in 2045".into(), "2 310".into()),
            ]),
            Block::Heading {
                level: 1,
                text: "Summary".into(),
            },
            Block::Paragraph(
                "This plan covers the villages of Kàmbà Ñdógo and Ōkasa. Neighbouring \
                 settlements are listed under their own names: Вода-Горка (Cyrillic), \
                 Νέα Πηγή (Greek) and Çalış Köyü. The spring is captured in a masonry box and \
                 water flows by gravity to the tank; a solar pump lifts the balance in the dry \
                 months. All figures are for an invented example."
                    .into(),
            ),
            Block::BulletList(vec![
                "Repair the spring box before the rains.".into(),
                "Fence the tank site and plant a hedge along the north side so that goats \
                 cannot reach the overflow pipe or the valve chamber."
                    .into(),
                "Train two caretakers from Ōkasa.".into(),
            ]),
            Block::Heading {
                level: 2,
                text: "Tank level over the year".into(),
            },
            Block::Chart(Chart::Line(LineChart {
                title: "Tank level, demand and supply".into(),
                x_label: "hour of year (h)".into(),
                y_label: "volume (m³)".into(),
                series: vec![
                    Series {
                        name: "tank level".into(),
                        points: level,
                        style: LineStyle::Solid,
                        grey: 0.0,
                        width_pt: 1.2,
                    },
                    Series {
                        name: "daily demand".into(),
                        points: demand,
                        style: LineStyle::Dashed,
                        grey: 0.35,
                        width_pt: 0.9,
                    },
                    Series {
                        name: "supply".into(),
                        points: supply,
                        style: LineStyle::Dotted,
                        grey: 0.2,
                        width_pt: 1.0,
                    },
                ],
                x_range: None,
                y_range: None,
            })),
            Block::Chart(Chart::Bar(BarChart {
                title: "Monthly water balance".into(),
                x_label: "month".into(),
                y_label: "volume (m³)".into(),
                categories: [
                    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov",
                    "Dec",
                ]
                .iter()
                .map(|s| s.to_string())
                .collect(),
                groups: vec![
                    BarGroup {
                        name: "demand".into(),
                        values: (0..12).map(|m| 520.0 + 30.0 * f64::from(m % 4)).collect(),
                        grey: 0.25,
                    },
                    BarGroup {
                        name: "spring yield".into(),
                        values: (0..12)
                            .map(|m| 300.0 + 60.0 * f64::from((m + 6) % 12))
                            .collect(),
                        grey: 0.65,
                    },
                    BarGroup {
                        name: "pumped".into(),
                        values: (0..12).map(|m| 120.0 + 15.0 * f64::from(m % 3)).collect(),
                        grey: 0.95,
                    },
                ],
            })),
            Block::Heading {
                level: 2,
                text: "Tap stands".into(),
            },
            Block::Table(Table {
                caption: Some("Table 1: Tap stands and daily draw".into()),
                header: vec![
                    "No.".into(),
                    "Location".into(),
                    "Distance from tank (km)".into(),
                    "Draw (L/d)".into(),
                ],
                rows,
                column_align: vec![Align::Right, Align::Left, Align::Right, Align::Right],
                column_weights: Some(vec![0.6, 3.0, 1.4, 1.0]),
            }),
            Block::Spacer(4.0),
            Block::PageBreak,
            Block::Heading {
                level: 2,
                text: "Scheme file".into(),
            },
            Block::Preformatted(yaml_lines()),
        ],
        attachments: vec![Attachment {
            name: YAML_NAME.into(),
            mime: "application/yaml".into(),
            bytes: yaml.into_bytes(),
            description: "Scheme file this plan was made from".into(),
        }],
    }
}

fn meta() -> Meta {
    Meta {
        title: "Water supply plan — Kàmbà Ñdógo".into(),
        subject: "Tank and pump sizing".into(),
        author: "tapplan".into(),
        keywords: "water, tank, village".into(),
        date: Some("2031-04-09".into()),
    }
}

fn write_pdf(dir: &Path, bytes: &[u8]) -> std::path::PathBuf {
    let p = dir.join("plan.pdf");
    std::fs::write(&p, bytes).unwrap();
    if let Ok(keep) = std::env::var("PDF_LAYER_KEEP") {
        std::fs::write(keep, bytes).unwrap();
    }
    p
}

#[test]
fn same_input_gives_identical_bytes() {
    let doc = sample_document();
    let a = document_to_pdf(&doc, &meta()).unwrap();
    let b = document_to_pdf(&doc, &meta()).unwrap();
    assert_eq!(a, b);
    // A different title changes the file (the id is content-derived, not fixed).
    let mut m2 = meta();
    m2.title.push('!');
    assert_ne!(a, document_to_pdf(&doc, &m2).unwrap());
}

#[test]
fn same_bytes_across_processes() {
    // Run this same test binary twice as child processes, each writing its PDF.
    let dir = tempfile::tempdir().unwrap();
    if let Ok(path) = std::env::var("PDF_LAYER_CHILD_OUT") {
        std::fs::write(path, document_to_pdf(&sample_document(), &meta()).unwrap()).unwrap();
        return;
    }
    let exe = std::env::current_exe().unwrap();
    let mut outs = Vec::new();
    for k in 0..2 {
        let p = dir.path().join(format!("child{k}.pdf"));
        let out = Command::new(&exe)
            .args(["same_bytes_across_processes", "--exact"])
            .env("PDF_LAYER_CHILD_OUT", &p)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        outs.push(std::fs::read(&p).unwrap());
    }
    assert!(!outs[0].is_empty());
    assert_eq!(outs[0], outs[1]);
    assert_eq!(
        outs[0],
        document_to_pdf(&sample_document(), &meta()).unwrap()
    );
}

/// Pages, page size, metadata and the text of every page, read back by `reader`.
fn reads_pages_text_and_metadata(reader: &dyn PdfReader) {
    let doc = sample_document();
    let pages = layout(&doc).unwrap().pages.len();
    let bytes = document_to_pdf(&doc, &meta()).unwrap();
    assert!(bytes.len() < 300_000, "plan is {} bytes", bytes.len());
    let dir = tempfile::tempdir().unwrap();
    let pdf = write_pdf(dir.path(), &bytes);

    let count = reader.page_count(&pdf);
    assert_eq!(count, pages);
    // Cover+summary, charts, the 121-row table over ≥ 3 pages, 300 listing lines over ≥ 4.
    assert!((9..=14).contains(&count), "{count} pages");
    for (w, h) in reader.page_sizes(&pdf) {
        assert!(
            (w - A4_PT.0).abs() < 0.01 && (h - A4_PT.1).abs() < 0.01,
            "{w} × {h} pt is not A4"
        );
    }
    let info = reader.info(&pdf);
    assert_eq!(
        info.get("Title").map(String::as_str),
        Some("Water supply plan — Kàmbà Ñdógo"),
        "{info:?}"
    );
    assert_eq!(
        info.get("Subject").map(String::as_str),
        Some("Tank and pump sizing"),
        "{info:?}"
    );

    let texts = reader.page_texts(&pdf);
    assert_eq!(texts.len(), count);
    for (i, t) in texts.iter().enumerate() {
        assert!(
            flat(t).contains(&format!("page {} of {count}", i + 1)),
            "page {} lacks its footer",
            i + 1
        );
    }
    let text = flat(&texts.join("\n"));
    for needle in [
        "Kàmbà Ñdógo",
        "Ōkasa",
        "Вода-Горка",
        "Νέα Πηγή",
        "Çalış Köyü",
        "Last row: Ōkasa clinic tap",
        "Table 1: Tap stands and daily draw (continued)",
        "hour of year (h)",
        "litres_per_person",
        "volume (m³)",
    ] {
        assert!(text.contains(needle), "text lacks {needle:?}");
    }
    // The header row is repeated on every page the table spans.
    assert!(text.matches("Distance from tank").count() >= 3);
}

#[test]
fn reads_back_pages_text_and_metadata() {
    reads_pages_text_and_metadata(&RustReader);
}

#[test]
#[ignore = "needs poppler-utils; .ci/run runs it with --ignored"]
fn reads_back_pages_text_and_metadata_poppler() {
    reads_pages_text_and_metadata(&Poppler);
}

#[test]
fn every_page_renders_inside_the_margins() {
    let bytes = document_to_pdf(&sample_document(), &meta()).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let pdf = write_pdf(dir.path(), &bytes);
    // 18 mm sides and top (layout's margin), 14 mm at the foot (the footer line).
    assert_pages_render_inside(&pdf, 18.0 * 72.0 / 25.4, 14.0 * 72.0 / 25.4);
}

/// The attachment comes back byte for byte through our own reader and `reader`.
fn attachment_round_trips(reader: &dyn PdfReader) {
    let doc = sample_document();
    let bytes = document_to_pdf(&doc, &meta()).unwrap();
    assert_eq!(
        list_attachments(&bytes).unwrap(),
        vec![YAML_NAME.to_string()]
    );
    let got = extract_attachment(&bytes, YAML_NAME)
        .unwrap()
        .expect("attached");
    assert_eq!(got, doc.attachments[0].bytes);
    assert_eq!(extract_attachment(&bytes, "other.yaml").unwrap(), None);

    let dir = tempfile::tempdir().unwrap();
    let pdf = write_pdf(dir.path(), &bytes);
    let back = reader.attachments(&pdf);
    assert_eq!(
        back.len(),
        1,
        "{:?}",
        back.iter().map(|a| &a.0).collect::<Vec<_>>()
    );
    assert_eq!(back[0].0, YAML_NAME);
    assert_eq!(back[0].1, doc.attachments[0].bytes);
}

#[test]
fn attachment_round_trips_through_an_outside_reader() {
    attachment_round_trips(&RustReader);
}

#[test]
#[ignore = "needs poppler-utils; .ci/run runs it with --ignored"]
fn attachment_round_trips_through_poppler() {
    attachment_round_trips(&Poppler);
}

#[test]
fn duplicate_attachment_names_are_rejected() {
    let mut doc = sample_document();
    doc.attachments.push(doc.attachments[0].clone());
    let err = document_to_pdf(&doc, &meta()).unwrap_err();
    assert!(err.to_string().contains("distinct name"), "{err}");
}

#[test]
fn bad_date_is_rejected_with_fix() {
    let mut m = meta();
    m.date = Some("April 2031".into());
    let err = document_to_pdf(&sample_document(), &m).unwrap_err();
    assert!(err.to_string().contains("YYYY-MM-DD"), "{err}");
}

/// A document of empty, huge and non-finite blocks.
fn odd_bytes() -> Vec<u8> {
    let huge_cell = "word ".repeat(3000);
    let doc = Document {
        title: String::new(),
        footer_label: String::new(),
        blocks: vec![
            Block::Heading {
                level: 0,
                text: "Edge cases".into(),
            },
            Block::Heading {
                level: 9,
                text: "Deep heading".into(),
            },
            Block::Table(Table::default()),
            Block::Table(Table {
                caption: Some("One giant row".into()),
                header: vec!["a".into()],
                rows: vec![vec![huge_cell, "ignored extra cell".into()], vec![]],
                column_align: vec![],
                column_weights: Some(vec![f32::NAN]),
            }),
            Block::Chart(Chart::Line(LineChart {
                title: "No data".into(),
                ..LineChart::default()
            })),
            Block::Chart(Chart::Line(LineChart {
                title: "Clipped and non-finite".into(),
                x_label: "x (-)".into(),
                y_label: "y (-)".into(),
                series: vec![Series {
                    name: "s".into(),
                    points: vec![(0.0, -5.0), (1.0, f64::NAN), (2.0, 50.0), (3.0, 0.5)],
                    style: LineStyle::Dotted,
                    grey: 2.0,
                    width_pt: -1.0,
                }],
                x_range: Some((0.0, 3.0)),
                y_range: Some((0.0, 1.0)),
            })),
            Block::Chart(Chart::Bar(BarChart {
                title: "Negative bars".into(),
                categories: vec!["a".into(), "b".into()],
                groups: vec![BarGroup {
                    name: "g".into(),
                    values: vec![-3.0],
                    grey: 0.5,
                }],
                ..BarChart::default()
            })),
            Block::Chart(Chart::Bar(BarChart::default())),
            Block::Preformatted(vec![]),
            Block::BulletList(vec![]),
            Block::KeyFigures(vec![]),
            Block::Spacer(f32::NAN),
            Block::Spacer(1.0e9),
            Block::PageBreak,
            Block::PageBreak,
            Block::Paragraph(String::new()),
        ],
        attachments: vec![],
    };
    document_to_pdf(&doc, &Meta::default()).unwrap()
}

#[test]
fn odd_input_still_renders() {
    let bytes = odd_bytes();
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("odd.pdf");
    std::fs::write(&p, &bytes).unwrap();
    if let Ok(keep) = std::env::var("PDF_LAYER_KEEP_ODD") {
        std::fs::write(keep, &bytes).unwrap();
    }
    assert!(RustReader.page_count(&p) >= 2);
    assert_eq!(RustReader.page_texts(&p).len(), RustReader.page_count(&p));
    assert!(
        pdf_read::rasterise(&p, 0.25).len() >= 2,
        "every page rasterises"
    );
    assert!(RustReader.attachments(&p).is_empty());
    assert!(list_attachments(&bytes).unwrap().is_empty());
}

#[test]
#[ignore = "needs poppler-utils; .ci/run runs it with --ignored"]
fn odd_input_still_renders_poppler() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("odd.pdf");
    std::fs::write(&p, odd_bytes()).unwrap();
    let n = Poppler.page_count(&p);
    assert!(n >= 2, "{n} pages");
}
