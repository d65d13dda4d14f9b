//! PDF output: content -> layout -> bytes. `content` is what to print, `layout` places it on
//! A4 pages as positioned primitives, `render` writes those with printpdf (subset DejaVu
//! faces, reproducible ids), `attach` embeds files with lopdf. [`document_to_pdf`] runs all
//! three; the same input always gives the same bytes.

pub mod attach;
pub mod content;
pub mod fonts;
pub mod layout;
pub mod plan;
pub mod render;

pub use attach::{attach_files, extract_attachment, list_attachments};
pub use content::{
    Align, Attachment, BarChart, BarGroup, Block, Chart, Document, LineChart, LineStyle, Series,
    Table,
};
pub use layout::{LaidOutDocument, Page, Primitive, TextRun, layout};
pub use render::render;

/// Largest plan PDF `verify` reads, in bytes (64 MiB): a plan embeds its scheme (at most
/// 1 MiB) and its weather file (at most 50 MiB) beside a few pages.
pub const MAX_PLAN_PDF_BYTES: u64 = 64 * 1024 * 1024;

/// Document information written to the PDF info dictionary.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Meta {
    pub title: String,
    pub subject: String,
    pub author: String,
    /// Comma-separated keywords.
    pub keywords: String,
    /// Plan date as `YYYY-MM-DD` (from the scheme file, never the clock); written as the
    /// creation and modification date when given.
    pub date: Option<String>,
}

/// Errors of the PDF layer.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum PdfError {
    #[error("font problem: {0}; the embedded DejaVu fonts under assets/fonts/ may be damaged")]
    Font(String),
    #[error("PDF rendering failed: {0}")]
    Render(String),
    #[error(
        "reading or writing the PDF structure failed: {0}; pass bytes of a PDF this program wrote"
    )]
    Pdf(String),
    #[error("{0}")]
    Attachment(String),
    #[error(
        "plan date {0:?} is not a date like 2031-04-09 (YYYY-MM-DD); fix the date in the scheme file"
    )]
    BadDate(String),
}

/// Lays out `doc`, renders it with `meta` and embeds `doc.attachments`: the finished PDF file.
pub fn document_to_pdf(doc: &Document, meta: &Meta) -> Result<Vec<u8>, PdfError> {
    let laid = layout(doc)?;
    let bytes = render(&laid, meta)?;
    attach_files(bytes, &doc.attachments)
}
