//! The scheme file: its serde model (`raw`), loading with limits and line numbers (`load`),
//! meaning checks (`validate`) and the checked SI model the engine uses (`model`).

pub mod load;
pub mod model;
pub mod raw;
pub mod validate;

use std::path::Path;

pub use model::*;

use crate::error::SchemeError;

/// A scheme with the text it was read from (for the SHA-256 and the PDF appendix).
#[derive(Debug, Clone)]
pub struct Loaded {
    pub scheme: Scheme,
    pub source: load::Source,
    /// Where each field is in the file, for problems found after validation.
    pub lines: load::LineMap,
}

impl Loaded {
    /// A problem found after validation (preparing a run, a search's limits), as a problem of
    /// the file: a message that starts with a field path (`pumps[1].curve: …`) gets that
    /// field's line and column.
    pub fn problem(&self, message: &str) -> SchemeError {
        let (field, rest) = match message.split_once(": ") {
            Some((f, rest))
                if !f.is_empty()
                    && f.chars().all(|c| {
                        c.is_ascii_alphanumeric() || matches!(c, '_' | '.' | '[' | ']')
                    }) =>
            {
                (f.to_string(), rest.to_string())
            }
            _ => (String::new(), message.to_string()),
        };
        let at = if field.is_empty() {
            None
        } else {
            self.lines.locate(&field)
        };
        SchemeError {
            file: self.source.label.clone(),
            problems: vec![crate::error::Problem {
                field,
                line: at.map(|a| a.0),
                column: at.map(|a| a.1),
                message: rest,
            }],
        }
    }
}

/// Reads, parses and validates a scheme file.
pub fn load_file(path: &Path) -> Result<Loaded, SchemeError> {
    let source = load::read_source(path)?;
    load_source(source)
}

/// Parses and validates scheme text already in memory (`label` names it in messages).
pub fn load_str(text: &str, label: &str, base_dir: &Path) -> Result<Loaded, SchemeError> {
    let source = load::source_from_bytes(text.as_bytes(), label, base_dir)?;
    load_source(source)
}

/// Parses and validates bytes (any bytes: refused cleanly when not a scheme).
pub fn load_bytes(bytes: &[u8], label: &str, base_dir: &Path) -> Result<Loaded, SchemeError> {
    let source = load::source_from_bytes(bytes, label, base_dir)?;
    load_source(source)
}

fn load_source(source: load::Source) -> Result<Loaded, SchemeError> {
    let (raw, lines) = load::parse_raw(&source)?;
    match validate::validate(&raw, &lines, &source.base_dir) {
        Ok(scheme) => Ok(Loaded {
            scheme,
            source,
            lines,
        }),
        Err(problems) => Err(SchemeError {
            file: source.label.clone(),
            problems,
        }),
    }
}

#[cfg(test)]
mod loaded_tests {
    use super::*;

    /// A message that starts with a field path gets the field's line (counted in the text);
    /// any other message is a whole-file problem.
    #[test]
    fn later_problems_get_the_line_of_the_field_they_name() {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples/kessa-ridge-solar.yaml");
        let text = std::fs::read_to_string(&path).unwrap();
        let l = load_str(&text, "k.yaml", Path::new(".")).unwrap();
        let line = text
            .lines()
            .position(|t| t.trim_start().starts_with("pumps:"))
            .unwrap()
            + 1;
        let e = l.problem("pumps: the pump ranges give 900 combinations of units");
        assert_eq!(e.problems[0].field, "pumps");
        assert_eq!(e.problems[0].line, Some(line));
        assert!(
            e.to_string()
                .contains(&format!("k.yaml:{line}:1: pumps: the pump ranges"))
        );
        let e = l.problem("the ranges hold 5 designs: too many");
        assert_eq!(e.problems[0].field, "");
        assert_eq!(e.problems[0].line, None);
    }
}
