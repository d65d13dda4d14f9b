//! Typed library errors. Messages tell the user what is wrong and what would be right.

use std::fmt;

/// One problem found in a scheme file, with where it is.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Problem {
    /// Field path such as `pumps[1].curve[3].head_m` (empty for whole-file problems).
    pub field: String,
    /// 1-based line in the file, when known.
    pub line: Option<usize>,
    /// 1-based column, when known.
    pub column: Option<usize>,
    /// What is wrong and what would be right.
    pub message: String,
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (self.line, self.column) {
            (Some(l), Some(c)) => write!(f, "line {l}, column {c}: ")?,
            (Some(l), None) => write!(f, "line {l}: ")?,
            _ => {}
        }
        if !self.field.is_empty() {
            write!(f, "{}: ", self.field)?;
        }
        f.write_str(&self.message)
    }
}

/// Everything wrong with one scheme file. Reported whole, never just the first problem.
#[derive(Debug, Clone)]
pub struct SchemeError {
    /// The file as the user named it.
    pub file: String,
    pub problems: Vec<Problem>,
}

impl fmt::Display for SchemeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write_problems(f, &self.file, &self.problems, "found")
    }
}

/// Writes a file's problems, one a line as `file:line:col: field: message`, under a heading
/// `file: N problems <what>`.
pub fn write_problems(
    f: &mut fmt::Formatter<'_>,
    file: &str,
    problems: &[Problem],
    what: &str,
) -> fmt::Result {
    let n = problems.len();
    writeln!(
        f,
        "{file}: {n} problem{} {what}",
        if n == 1 { "" } else { "s" }
    )?;
    for p in problems {
        write!(f, "  {file}")?;
        if let Some(l) = p.line {
            write!(f, ":{l}")?;
            if let Some(c) = p.column {
                write!(f, ":{c}")?;
            }
        }
        write!(f, ": ")?;
        if !p.field.is_empty() {
            write!(f, "{}: ", p.field)?;
        }
        writeln!(f, "{}", p.message)?;
    }
    Ok(())
}

impl std::error::Error for SchemeError {}

/// Errors of the library as a whole.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    #[error("{0}")]
    Scheme(#[from] SchemeError),
    #[error("{0}")]
    Input(String),
    #[error("{0}")]
    Simulation(String),
}
