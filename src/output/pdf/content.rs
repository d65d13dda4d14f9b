//! The content model of a printed plan: a document is a title, a footer label, a sequence of
//! blocks (headings, paragraphs, tables, charts, listings …) and files to attach. It says what
//! to print, never where: placing it on pages is the layout pass's job.

/// A whole printable document.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Document {
    /// Printed large at the top of page 1.
    pub title: String,
    /// Left part of every page's footer (e.g. the scheme name).
    pub footer_label: String,
    /// The body, in reading order.
    pub blocks: Vec<Block>,
    /// Files embedded in the PDF (e.g. the scheme file the plan was made from).
    pub attachments: Vec<Attachment>,
}

/// One unit of content.
#[derive(Debug, Clone, PartialEq)]
pub enum Block {
    /// Section heading; level 1 is the largest. Never left alone at a page bottom.
    Heading { level: u8, text: String },
    /// Running text, wrapped to the text width.
    Paragraph(String),
    /// Large label/value boxes for a summary page, two per row.
    KeyFigures(Vec<(String, String)>),
    /// A table that may break across pages (header repeated, caption marked "(continued)").
    Table(Table),
    /// A chart; never split across pages.
    Chart(Chart),
    /// A monospace listing (e.g. a YAML file), line-numbered; long lines wrap.
    Preformatted(Vec<String>),
    /// A bulleted list of wrapped items.
    BulletList(Vec<String>),
    /// Start a new page.
    PageBreak,
    /// Vertical space, in mm.
    Spacer(f32),
}

/// Horizontal alignment of a table column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Align {
    #[default]
    Left,
    Center,
    Right,
}

/// A table of text cells.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Table {
    /// Printed above the table; repeated with " (continued)" on following pages.
    pub caption: Option<String>,
    /// Column headings; their count sets the column count.
    pub header: Vec<String>,
    /// Body rows; missing cells print empty, extra cells are ignored.
    pub rows: Vec<Vec<String>>,
    /// Per-column alignment; missing entries are `Left`.
    pub column_align: Vec<Align>,
    /// Relative column widths; `None` sizes columns from their content.
    pub column_weights: Option<Vec<f32>>,
}

/// A chart.
#[derive(Debug, Clone, PartialEq)]
pub enum Chart {
    Line(LineChart),
    Bar(BarChart),
}

/// Stroke pattern of a chart line.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum LineStyle {
    #[default]
    Solid,
    Dashed,
    Dotted,
}

/// One line of a line chart.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Legend text.
    pub name: String,
    /// (x, y) in the caller's units; drawn in the given order.
    pub points: Vec<(f64, f64)>,
    /// Dash pattern.
    pub style: LineStyle,
    /// Stroke grey level: 0 = black, 1 = white.
    pub grey: f32,
    /// Stroke width in pt.
    pub width_pt: f32,
}

/// An x/y line chart.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LineChart {
    pub title: String,
    /// Axis title with units, e.g. "hour of year".
    pub x_label: String,
    /// Axis title with units, e.g. "tank level (m³)".
    pub y_label: String,
    pub series: Vec<Series>,
    /// Fixed x range; `None` fits the data with nice 1-2-5 ticks.
    pub x_range: Option<(f64, f64)>,
    /// Fixed y range; `None` fits the data with nice 1-2-5 ticks.
    pub y_range: Option<(f64, f64)>,
}

/// One group of bars (one bar per category).
#[derive(Debug, Clone, PartialEq)]
pub struct BarGroup {
    /// Legend text.
    pub name: String,
    /// One value per category; missing values are not drawn.
    pub values: Vec<f64>,
    /// Fill grey level: 0 = black, 1 = white.
    pub grey: f32,
}

/// A grouped bar chart.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct BarChart {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    /// Category labels along the x axis.
    pub categories: Vec<String>,
    pub groups: Vec<BarGroup>,
}

/// A file embedded in the PDF.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Attachment {
    /// File name shown by PDF readers (and the key for extraction).
    pub name: String,
    /// MIME type, e.g. "application/yaml".
    pub mime: String,
    pub bytes: Vec<u8>,
    /// Short description shown by PDF readers.
    pub description: String,
}
