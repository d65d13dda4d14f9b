//! Reading a scheme file: size and encoding limits, YAML syntax, unknown keys and wrong types.
//!
//! The first layer of checking. It reports every unknown key (with a "did you mean") and every
//! wrong-typed value it can reach, each with its line, before `validate` checks meaning.
//! Line numbers of fields come from a separate event pass over the YAML (`LineMap`), because the
//! serde value tree does not keep positions.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use yaml_rust2::parser::{Event, MarkedEventReceiver, Parser};
use yaml_rust2::scanner::Marker;

use super::raw::RawScheme;
use crate::error::{Problem, SchemeError};

/// Largest scheme file accepted (bytes). Hand-written schemes are a few kilobytes.
pub const MAX_FILE_BYTES: usize = 1024 * 1024;

/// Deepest nesting of YAML collections accepted. The format itself needs five.
pub const MAX_NESTING: usize = 32;

/// Most YAML nodes that aliases (`*name`) may add to the file when expanded. A scheme that
/// reuses a time window or a profile through an anchor adds tens of nodes; a "billion laughs"
/// file adds billions. The check runs on the event stream, before anything is expanded.
pub const MAX_ALIAS_EXPANSION_NODES: u64 = 10_000;

/// Where each field path starts in the file (1-based line and column).
#[derive(Debug, Default, Clone)]
pub struct LineMap {
    lines: BTreeMap<String, (usize, usize)>,
    /// Keys that appear twice in one mapping: (path, line, column) of the repeat.
    duplicates: Vec<(String, usize, usize)>,
    depth: usize,
    /// False when the event parser refused the text (the map is then empty).
    parsed: bool,
    /// Nodes in the file as written (an alias counts one).
    own_nodes: u64,
    /// Nodes once every alias is replaced by the node it names.
    expanded_nodes: u64,
    /// Where the first collection deeper than [`MAX_NESTING`] opens (line, column); reading
    /// stops there, so a deeply nested file costs time in proportion to its first levels only.
    too_deep: Option<(usize, usize)>,
    /// Tags (`!name`, `!!type`) in the file: (the tag as written, line, column).
    tags: Vec<(String, usize, usize)>,
    /// The event parser's refusal: (what it says, line, column).
    error: Option<(String, usize, usize)>,
}

impl LineMap {
    /// Builds the map with one pass over the YAML events. Best effort: a file the event parser
    /// refuses gives an empty map (the serde parse reports the syntax error itself).
    ///
    /// Reads the events one at a time and stops at the first collection nested deeper than
    /// [`MAX_NESTING`]: the parsers' cost grows with the square of the depth, so a deeply
    /// nested file is refused after reading only its first levels (time linear in the file).
    /// Only the first document is read (a second one is refused by the serde parse).
    pub fn build(text: &str) -> LineMap {
        let mut rec = LineRecorder::default();
        let mut parser = Parser::new_from_str(text);
        let mut too_deep = None;
        let error = loop {
            match parser.next_token() {
                Ok((ev, mark)) => {
                    let end = matches!(ev, Event::StreamEnd | Event::DocumentEnd);
                    if let Some(tag) = event_tag(&ev) {
                        let handle = match tag.handle.as_str() {
                            "tag:yaml.org,2002:" => "!!",
                            h => h,
                        };
                        rec.tags.push((
                            format!("{handle}{}", tag.suffix),
                            mark.line(),
                            mark.col() + 1,
                        ));
                    }
                    rec.on_event(ev, mark);
                    if rec.depth > MAX_NESTING {
                        too_deep = Some((mark.line(), mark.col() + 1));
                        break None;
                    }
                    if end {
                        break None;
                    }
                }
                Err(e) => {
                    let m = e.marker();
                    // the event parser's own depth limit
                    if e.info().contains("recursion limit") {
                        too_deep = Some((m.line(), m.col() + 1));
                    }
                    break Some((e.info().to_string(), m.line(), m.col() + 1));
                }
            }
        };
        LineMap {
            parsed: error.is_none() && too_deep.is_none(),
            lines: if error.is_none() {
                rec.lines
            } else {
                BTreeMap::new()
            },
            duplicates: if error.is_none() {
                rec.duplicates
            } else {
                Vec::new()
            },
            depth: rec.depth,
            own_nodes: rec.own_nodes,
            expanded_nodes: rec.expanded_nodes,
            too_deep,
            tags: rec.tags,
            error,
        }
    }

    /// How many nodes aliases add when expanded (0 without aliases).
    pub fn alias_expansion_nodes(&self) -> u64 {
        self.expanded_nodes.saturating_sub(self.own_nodes)
    }

    /// The first repeated key, if any: (path, line, column).
    pub fn first_duplicate(&self) -> Option<&(String, usize, usize)> {
        self.duplicates.first()
    }

    /// Line and column of a field path, or of its nearest recorded parent.
    pub fn locate(&self, path: &str) -> Option<(usize, usize)> {
        let mut p = path.to_string();
        loop {
            if let Some(v) = self.lines.get(&p) {
                return Some(*v);
            }
            let cut = p.rfind(['.', '['])?;
            p.truncate(cut);
            if p.is_empty() {
                return None;
            }
        }
    }

    /// The most nested collection depth seen.
    pub fn max_depth(&self) -> usize {
        self.depth
    }
}

enum Frame {
    Map {
        path: String,
        expect_key: bool,
        key: String,
    },
    Seq {
        path: String,
        index: usize,
    },
    /// A complex key or an ignored subtree.
    Skip,
}

/// The tag of a node event, if it has one.
fn event_tag(ev: &Event) -> Option<&yaml_rust2::parser::Tag> {
    match ev {
        Event::Scalar(_, _, _, t) | Event::SequenceStart(_, t) | Event::MappingStart(_, t) => {
            t.as_ref()
        }
        _ => None,
    }
}

#[derive(Default)]
struct LineRecorder {
    tags: Vec<(String, usize, usize)>,
    stack: Vec<Frame>,
    lines: BTreeMap<String, (usize, usize)>,
    duplicates: Vec<(String, usize, usize)>,
    depth: usize,
    depth_exceeded: bool,
    own_nodes: u64,
    expanded_nodes: u64,
    /// Expanded size of each anchor seen so far, by anchor id.
    anchor_nodes: BTreeMap<usize, u64>,
    /// Open collections: (anchor id or 0, expanded node count before the collection).
    open: Vec<(usize, u64)>,
}

impl LineRecorder {
    /// Counts nodes as written and as expanded, so alias bombs are found without expanding.
    fn count_nodes(&mut self, ev: &Event) {
        match ev {
            Event::Scalar(_, _, anchor, _) => {
                self.own_nodes += 1;
                self.expanded_nodes = self.expanded_nodes.saturating_add(1);
                if *anchor > 0 {
                    self.anchor_nodes.insert(*anchor, 1);
                }
            }
            Event::MappingStart(anchor, _) | Event::SequenceStart(anchor, _) => {
                self.own_nodes += 1;
                self.open.push((*anchor, self.expanded_nodes));
                self.expanded_nodes = self.expanded_nodes.saturating_add(1);
            }
            Event::MappingEnd | Event::SequenceEnd => {
                if let Some((anchor, before)) = self.open.pop()
                    && anchor > 0
                {
                    self.anchor_nodes
                        .insert(anchor, self.expanded_nodes.saturating_sub(before));
                }
            }
            Event::Alias(anchor) => {
                self.own_nodes += 1;
                let n = self.anchor_nodes.get(anchor).copied().unwrap_or(1);
                self.expanded_nodes = self.expanded_nodes.saturating_add(n);
            }
            _ => {}
        }
    }
}

fn join(parent: &str, key: &str) -> String {
    if parent.is_empty() {
        key.to_string()
    } else {
        format!("{parent}.{key}")
    }
}

impl MarkedEventReceiver for LineRecorder {
    fn on_event(&mut self, ev: Event, mark: Marker) {
        self.count_nodes(&ev);
        let pos = (mark.line(), mark.col() + 1);
        let starts_node = matches!(
            ev,
            Event::Scalar(..)
                | Event::MappingStart(..)
                | Event::SequenceStart(..)
                | Event::Alias(..)
        );
        if matches!(ev, Event::MappingEnd | Event::SequenceEnd) {
            self.stack.pop();
            return;
        }
        if !starts_node {
            return;
        }
        // Where does this node sit?
        let node_path: Option<String> = match self.stack.last_mut() {
            None => Some(String::new()),
            Some(Frame::Skip) => None,
            Some(Frame::Map {
                path,
                expect_key,
                key,
            }) => {
                if *expect_key {
                    if let Event::Scalar(ref k, ..) = ev {
                        *key = k.clone();
                        *expect_key = false;
                        let p = join(path, k);
                        match self.lines.entry(p) {
                            std::collections::btree_map::Entry::Occupied(e) => {
                                self.duplicates.push((e.key().clone(), pos.0, pos.1));
                            }
                            std::collections::btree_map::Entry::Vacant(e) => {
                                e.insert(pos);
                            }
                        }
                        return;
                    }
                    // complex key: skip its subtree, and its value
                    *expect_key = false;
                    *key = String::from("?");
                    None
                } else {
                    *expect_key = true;
                    Some(join(path, key))
                }
            }
            Some(Frame::Seq { path, index }) => {
                let p = format!("{path}[{index}]");
                *index += 1;
                Some(p)
            }
        };
        if let Some(p) = node_path.as_ref().filter(|p| !p.is_empty()) {
            self.lines.entry(p.clone()).or_insert(pos);
        }
        if self.stack.len() > MAX_NESTING {
            self.depth_exceeded = true;
        }
        if matches!(ev, Event::MappingStart(..) | Event::SequenceStart(..)) {
            self.depth = self.depth.max(self.stack.len() + 1);
        }
        match ev {
            Event::MappingStart(..) => self.stack.push(match node_path {
                Some(path) if !self.depth_exceeded => Frame::Map {
                    path,
                    expect_key: true,
                    key: String::new(),
                },
                _ => Frame::Skip,
            }),
            Event::SequenceStart(..) => self.stack.push(match node_path {
                Some(path) if !self.depth_exceeded => Frame::Seq { path, index: 0 },
                _ => Frame::Skip,
            }),
            _ => {}
        }
    }
}

/// The text of a scheme file and where it came from.
#[derive(Debug, Clone)]
pub struct Source {
    /// The file as the user named it (used in messages).
    pub label: String,
    /// Folder that relative paths inside the scheme are resolved against.
    pub base_dir: PathBuf,
    pub text: String,
}

fn whole_file_problem(message: String) -> Problem {
    Problem {
        field: String::new(),
        line: None,
        column: None,
        message,
    }
}

/// Reads a file with the size and encoding limits applied.
pub fn read_source(path: &Path) -> Result<Source, SchemeError> {
    let label = path.display().to_string();
    let fail = |m: String| SchemeError {
        file: label.clone(),
        problems: vec![whole_file_problem(m)],
    };
    use crate::input::{ReadError, read_limited};
    let bytes = read_limited(path, MAX_FILE_BYTES as u64).map_err(|e| {
        fail(match e {
            ReadError::NotAFile(kind) => {
                format!("this is {kind}, not a regular file; give the path of a scheme file (.yaml)")
            }
            ReadError::TooLarge { .. } => format!(
                "the file is larger than {MAX_FILE_BYTES} bytes; a scheme file may be at most {MAX_FILE_BYTES} bytes (1 MiB) — is this the right file?"
            ),
            e => e.to_string(),
        })
    })?;
    let base_dir = path
        .parent()
        .map(|p| p.to_path_buf())
        .unwrap_or_else(|| PathBuf::from("."));
    source_from_bytes(&bytes, &label, &base_dir)
}

/// Checks size and encoding of bytes already in memory.
pub fn source_from_bytes(
    bytes: &[u8],
    label: &str,
    base_dir: &Path,
) -> Result<Source, SchemeError> {
    let fail = |m: String| SchemeError {
        file: label.to_string(),
        problems: vec![whole_file_problem(m)],
    };
    if bytes.len() > MAX_FILE_BYTES {
        return Err(fail(format!(
            "the file is {} bytes; a scheme file may be at most {} bytes (1 MiB)",
            bytes.len(),
            MAX_FILE_BYTES
        )));
    }
    let text = match std::str::from_utf8(bytes) {
        Ok(t) => t,
        Err(e) => {
            let upto = &bytes[..e.valid_up_to()];
            let line = upto.iter().filter(|b| **b == b'\n').count() + 1;
            return Err(SchemeError {
                file: label.to_string(),
                problems: vec![Problem {
                    field: String::new(),
                    line: Some(line),
                    column: None,
                    message: format!(
                        "the file is not UTF-8 text (invalid byte at offset {}); save it as UTF-8",
                        e.valid_up_to()
                    ),
                }],
            });
        }
    };
    if text.contains('\0') {
        return Err(fail(
            "the file contains NUL bytes: it is binary, not a YAML scheme file".into(),
        ));
    }
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    Ok(Source {
        label: label.to_string(),
        base_dir: base_dir.to_path_buf(),
        text: text.to_string(),
    })
}

/// Levenshtein distance, for "did you mean".
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let cost = usize::from(ca != *cb);
            cur[j + 1] = (prev[j] + cost).min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// The closest known key, if it is close enough to be a likely typo.
pub fn closest<'a>(unknown: &str, known: &[&'a str]) -> Option<&'a str> {
    let limit = (unknown.chars().count() / 3).max(2);
    known
        .iter()
        .map(|k| (edit_distance(unknown, k), *k))
        .filter(|(d, _)| *d <= limit)
        .min()
        .map(|(_, k)| k)
}

fn backticked(s: &str) -> Vec<&str> {
    s.split('`').skip(1).step_by(2).collect()
}

/// Parses the YAML and fills the raw types, collecting every unknown key and wrong type.
pub fn parse_raw(src: &Source) -> Result<(RawScheme, LineMap), SchemeError> {
    let fail = |problems: Vec<Problem>| SchemeError {
        file: src.label.clone(),
        problems,
    };
    if src.text.trim().is_empty() {
        return Err(fail(vec![whole_file_problem(
            "the file is empty; start from a template with `tapplan new FILE`".into(),
        )]));
    }
    let lines = LineMap::build(&src.text);
    let structure = structure_problems(&src.text, &lines);
    if !structure.is_empty() {
        return Err(fail(structure));
    }
    let mut value: serde_yaml::Value = match serde_yaml::from_str(&src.text) {
        Ok(v) => v,
        Err(e)
            if e.to_string().contains("duplicate entry") && lines.first_duplicate().is_some() =>
        {
            let (field, line, column) = lines.first_duplicate().cloned().expect("duplicate");
            return Err(fail(vec![Problem {
                field: field.clone(),
                line: Some(line),
                column: Some(column),
                message: format!(
                    "this key appears twice in the same section; keep one `{}`",
                    field.rsplit('.').next().unwrap_or(&field)
                ),
            }]));
        }
        Err(e) => {
            let (line, column) = e
                .location()
                .map(|l| (Some(l.line()), Some(l.column())))
                .unwrap_or((None, None));
            return Err(fail(vec![yaml_problem(&e.to_string(), line, column)]));
        }
    };
    if let Some((tag, path)) = first_tagged(&value, String::new()) {
        let (line, column) = lines
            .locate(&path)
            .map_or((None, None), |(l, c)| (Some(l), Some(c)));
        return Err(fail(vec![tag_problem(&tag, line, column)]));
    }
    if lines.max_depth() > MAX_NESTING {
        return Err(fail(vec![whole_file_problem(format!(
            "the YAML is nested {} levels deep; a scheme needs at most a handful (limit {MAX_NESTING})",
            lines.max_depth()
        ))]));
    }
    if value.is_null() {
        return Err(fail(vec![whole_file_problem(
            "the file is empty (only comments or blank lines); start from a template with `tapplan new FILE`".into(),
        )]));
    }
    if !value.is_mapping() {
        return Err(fail(vec![Problem {
            field: String::new(),
            line: Some(1),
            column: None,
            message: "a scheme file is a YAML mapping with sections `scheme`, `demand`, `pumps`, `tank`, `targets`, …; start from a template with `tapplan new FILE`".into(),
        }]));
    }
    let mut problems: Vec<Problem> = Vec::new();
    let mut removed: Vec<String> = Vec::new();
    for _ in 0..200 {
        match serde_path_to_error::deserialize::<_, RawScheme>(value.clone()) {
            Ok(raw) => {
                if problems.is_empty() {
                    return Ok((raw, lines));
                }
                return Err(fail(problems));
            }
            Err(err) => {
                let path = err.path().to_string();
                let path = if path == "." { String::new() } else { path };
                let msg = err.into_inner().to_string();
                let (problem, removable) = describe_serde_error(
                    &path,
                    &msg,
                    &lines,
                    "see the file format in README.md or start from `tapplan new`",
                );
                // a key removed for its wrong type is then "missing": already reported
                if msg.starts_with("missing field") && removed.contains(&problem.field) {
                    return Err(fail(problems));
                }
                let stop = match &removable {
                    Some(p) => {
                        removed.push(p.clone());
                        !remove_path(&mut value, p)
                    }
                    None => true,
                };
                problems.push(problem);
                if stop {
                    return Err(fail(problems));
                }
            }
        }
    }
    Err(fail(problems))
}

/// Problems of the YAML's structure found by the event pass, before any serde parse reads the
/// text: nesting past the limit, tags, aliases that name nothing or expand too far, and deep
/// brackets in a text the event pass refused. Empty when the serde parse may go ahead.
pub fn structure_problems(text: &str, lines: &LineMap) -> Vec<Problem> {
    if let Some((line, column)) = lines.too_deep {
        return vec![Problem {
            field: String::new(),
            line: Some(line),
            column: Some(column),
            message: format!(
                "the YAML is nested more than {MAX_NESTING} levels deep here; a scheme or rules file needs at most a handful of levels — close the brackets or indentation opened above"
            ),
        }];
    }
    if !lines.tags.is_empty() {
        return lines
            .tags
            .iter()
            .take(MAX_TAGS_REPORTED)
            .map(|(tag, line, column)| tag_problem(tag, Some(*line), Some(*column)))
            .collect();
    }
    if let Some(problem) = alias_problem(text, lines) {
        return vec![problem];
    }
    if let Some(problem) = unread_depth_problem(text, lines) {
        return vec![problem];
    }
    Vec::new()
}

/// Most tags reported from one file (each on its own line).
const MAX_TAGS_REPORTED: usize = 20;

/// A tag refused: the file format has no use for them, and the YAML readers drop or reinterpret
/// them silently (`!!binary` text, `!!set` mappings, `!unit` annotations).
pub(crate) fn tag_problem(tag: &str, line: Option<usize>, column: Option<usize>) -> Problem {
    Problem {
        field: String::new(),
        line,
        column,
        message: format!(
            "the YAML tag `{}` is not allowed in a scheme or rules file; remove it and write the plain value (units go in the key's name, e.g. `_m`)",
            crate::text::escape_controls(tag)
        ),
    }
}

/// The first node of a parsed value that carries a tag: (tag, field path).
pub(crate) fn first_tagged(v: &serde_yaml::Value, path: String) -> Option<(String, String)> {
    match v {
        serde_yaml::Value::Tagged(t) => Some((t.tag.to_string(), path)),
        serde_yaml::Value::Sequence(items) => items
            .iter()
            .enumerate()
            .find_map(|(i, x)| first_tagged(x, format!("{path}[{i}]"))),
        serde_yaml::Value::Mapping(m) => m.iter().find_map(|(k, x)| {
            let key = match k {
                serde_yaml::Value::String(s) => s.clone(),
                _ => "?".into(),
            };
            first_tagged(x, join(&path, &key))
        }),
        _ => None,
    }
}

/// A YAML syntax error from the serde parse, in plain words.
pub(crate) fn yaml_problem(msg: &str, line: Option<usize>, column: Option<usize>) -> Problem {
    // "path: invalid type: integer `1e30…` as u128, expected any YAML value at line …"
    let message = match msg.find("invalid type: integer `") {
        Some(i) if msg.contains("expected any YAML value") => {
            let path = msg[..i].trim_end_matches([' ', ':']);
            let digits = backticked(&msg[i..]).first().copied().unwrap_or("?");
            let at = if path.is_empty() {
                String::new()
            } else {
                format!("{path}: ")
            };
            format!(
                "{at}the whole number `{digits}` is too large to read (whole numbers stop near 1.8e19; write a larger one as 2.5e20); give a value in the key's allowed range"
            )
        }
        _ => format!("not valid YAML: {msg}"),
    };
    Problem {
        field: String::new(),
        line,
        column,
        message,
    }
}

/// When the event parser refused the text, its collections were not counted; before the
/// serde parse reads it (in time growing with the square of the depth), refuse a text whose
/// brackets alone open more than [`MAX_NESTING`] levels, reporting the event parser's error.
fn unread_depth_problem(text: &str, lines: &LineMap) -> Option<Problem> {
    let (info, line, column) = lines.error.as_ref()?;
    let mut depth = 0usize;
    let mut deepest = 0usize;
    for b in text.bytes() {
        match b {
            b'[' | b'{' => {
                depth += 1;
                deepest = deepest.max(depth);
            }
            b']' | b'}' => depth = depth.saturating_sub(1),
            _ => {}
        }
    }
    (deepest > MAX_NESTING).then(|| Problem {
        field: String::new(),
        line: Some(*line),
        column: Some(*column),
        message: format!(
            "not valid YAML: {info} (and brackets nested up to {deepest} levels deep; a scheme needs at most a handful)"
        ),
    })
}

/// Refuses YAML whose aliases would expand too far, before the serde parse expands them.
fn alias_problem(text: &str, lines: &LineMap) -> Option<Problem> {
    if let Some((info, line, column)) = &lines.error
        && info.contains("unknown anchor")
    {
        let name: String = text
            .lines()
            .nth(line.saturating_sub(1))
            .unwrap_or("")
            .chars()
            .skip(column.saturating_sub(1))
            .skip_while(|c| *c == '*')
            .take_while(|c| !c.is_whitespace() && !matches!(c, ',' | '[' | ']' | '{' | '}'))
            .take(80)
            .collect();
        let name = crate::text::escape_controls(&name);
        return Some(Problem {
            field: String::new(),
            line: Some(*line),
            column: Some(*column),
            message: format!(
                "the alias `*{name}` names no anchor: no `&{name}` comes before it; define the anchor on the value to repeat, or write the value out"
            ),
        });
    }
    if lines.parsed {
        let added = lines.alias_expansion_nodes();
        return (added > MAX_ALIAS_EXPANSION_NODES).then(|| {
            whole_file_problem(format!(
                "the YAML aliases (`*name`) would expand to {added} more values; a scheme may add at most {MAX_ALIAS_EXPANSION_NODES} through aliases — write the values out instead of repeating anchors"
            ))
        });
    }
    // The event pass refused the text, so its aliases were not counted: refuse any alias
    // rather than let the serde parse expand an unchecked one.
    let has_alias = text.as_bytes().windows(2).enumerate().any(|(i, w)| {
        w[0] == b'*'
            && (w[1].is_ascii_alphanumeric() || w[1] == b'_' || w[1] == b'-')
            && (i == 0
                || matches!(
                    text.as_bytes()[i - 1],
                    b' ' | b'\t' | b'\n' | b'[' | b'{' | b','
                ))
    });
    has_alias.then(|| {
        let (info, line, column) = lines
            .error
            .clone()
            .map_or((String::new(), None, None), |(i, l, c)| (i, Some(l), Some(c)));
        Problem {
            field: String::new(),
            line,
            column,
            message: format!(
                "not valid YAML: {info}; the file uses aliases (`*name`), which are checked only in a file that reads without error — mend this first"
            ),
        }
    })
}

/// Turns one serde error into a problem; returns the path to remove to continue checking.
/// `missing_hint` follows the message about a missing required key (what the section needs).
pub fn describe_serde_error(
    path: &str,
    msg: &str,
    lines: &LineMap,
    missing_hint: &str,
) -> (Problem, Option<String>) {
    let locate = |p: &str| lines.locate(p);
    if let Some(rest) = msg.strip_prefix("unknown field ") {
        let names = backticked(rest);
        let unknown = names.first().copied().unwrap_or("?");
        let known: Vec<&str> = names.iter().skip(1).copied().collect();
        let field = if path.is_empty() {
            unknown.to_string()
        } else if path == unknown || path.ends_with(&format!(".{unknown}")) {
            path.to_string()
        } else {
            format!("{path}.{unknown}")
        };
        let mut message = format!("unknown key `{unknown}`");
        if let Some(s) = closest(unknown, &known) {
            message.push_str(&format!("; did you mean `{s}`?"));
        }
        message.push_str(&format!("; keys allowed here: {}", known.join(", ")));
        let (line, column) = locate(&field).map_or((None, None), |(l, c)| (Some(l), Some(c)));
        return (
            Problem {
                field: field.clone(),
                line,
                column,
                message,
            },
            Some(field),
        );
    }
    if let Some(rest) = msg.strip_prefix("missing field ") {
        let names = backticked(rest);
        let missing = names.first().copied().unwrap_or("?");
        let field = if path.is_empty() {
            missing.to_string()
        } else {
            format!("{path}.{missing}")
        };
        let (line, column) = locate(path).map_or((None, None), |(l, c)| (Some(l), Some(c)));
        return (
            Problem {
                field,
                line,
                column,
                message: format!(
                    "required key `{missing}` is missing{}; {missing_hint}",
                    if path.is_empty() {
                        String::new()
                    } else {
                        format!(" from `{path}`")
                    }
                ),
            },
            None,
        );
    }
    let (line, column) = locate(path).map_or((None, None), |(l, c)| (Some(l), Some(c)));
    let message = if msg.starts_with("unknown variant ") {
        let ticks = backticked(msg);
        let given = ticks.first().copied().unwrap_or("?");
        let allowed: Vec<&str> = ticks.iter().skip(1).copied().collect();
        let mut m = format!("`{given}` is not known here");
        if let Some(s) = closest(given, &allowed) {
            m.push_str(&format!("; did you mean `{s}`?"));
        }
        m.push_str(&format!("; use one of: {}", allowed.join(", ")));
        m
    } else if msg.contains("untagged enum RawProfile") {
        "give a built-in profile name (communal_taps, yard_taps, flat) or a list of 24 hourly factors".to_string()
    } else if let Some(rest) = msg.strip_prefix("invalid type: ")
        && let Some(key) = rest
            .strip_suffix(", expected field identifier")
            .and_then(|k| k.split('`').nth(1))
    {
        format!(
            "`{}` is not a key name: keys are words such as `name` or `capacity_m3` (see the file format in README.md)",
            crate::text::escape_controls(key)
        )
    } else if let Some(rest) = msg.strip_prefix("invalid type: string \"")
        && let Some((text, _)) = rest.split_once('"')
        && text.trim().parse::<f64>().is_ok_and(|v| v.is_infinite())
    {
        format!(
            "`{text}` is a number too large to hold (beyond about 1.8e308); give a value in the key's allowed range"
        )
    } else if let Some(rest) = msg.strip_prefix("invalid type: ") {
        format!("wrong kind of value: {}", plain_types(rest))
    } else {
        msg.to_string()
    };
    let removable = if path.ends_with(']') || path.is_empty() || path.ends_with('?') {
        None
    } else {
        Some(path.to_string())
    };
    // a key that is not a name (a number): name it in the field path and find its line
    let (field, line, column) = match (path.strip_suffix('?'), message.split('`').nth(1)) {
        (Some(parent), Some(key)) if message.contains("is not a key name") => {
            let f = format!("{parent}{key}");
            let (l, c) = locate(&f).map_or((line, column), |(l, c)| (Some(l), Some(c)));
            (f, l, c)
        }
        _ => (path.to_string(), line, column),
    };
    (
        Problem {
            field,
            line,
            column,
            message,
        },
        removable,
    )
}

/// Serde's type names in plain words.
fn plain_types(msg: &str) -> String {
    let mut out = msg.to_string();
    for (from, to) in [
        ("expected f64", "expected a number"),
        ("expected u32", "expected a whole number"),
        ("expected a boolean", "expected true or false"),
        ("unit value", "an empty value"),
        ("expected a string", "expected text"),
    ] {
        out = out.replace(from, to);
    }
    if let Some(i) = out.find("expected struct Raw") {
        out.truncate(i);
        out.push_str("expected a section of keys (a mapping)");
    }
    out
}

/// Removes the mapping entry at a dotted path (`a.b[2].c`). Returns false if not found.
fn remove_path(value: &mut serde_yaml::Value, path: &str) -> bool {
    let mut segs: Vec<Seg> = Vec::new();
    for part in path.split('.') {
        let (name, rest) = match part.find('[') {
            Some(i) => (&part[..i], &part[i..]),
            None => (part, ""),
        };
        if !name.is_empty() {
            segs.push(Seg::Key(name.to_string()));
        }
        for idx in rest.split('[').filter(|s| !s.is_empty()) {
            match idx.trim_end_matches(']').parse() {
                Ok(i) => segs.push(Seg::Index(i)),
                Err(_) => return false,
            }
        }
    }
    let Some(Seg::Key(last)) = segs.pop() else {
        return false;
    };
    let mut cur = value;
    for s in segs {
        cur = match (s, cur) {
            (Seg::Key(k), serde_yaml::Value::Mapping(m)) => match m.get_mut(k.as_str()) {
                Some(v) => v,
                None => return false,
            },
            (Seg::Index(i), serde_yaml::Value::Sequence(v)) => match v.get_mut(i) {
                Some(v) => v,
                None => return false,
            },
            _ => return false,
        };
    }
    match cur {
        serde_yaml::Value::Mapping(m) => m.remove(last.as_str()).is_some(),
        _ => false,
    }
}

enum Seg {
    Key(String),
    Index(usize),
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_map_finds_nested_fields() {
        let text = "a:\n  b: 1\n  c:\n    - x: 2\n    - x: 3\n      y: 4\n";
        let m = LineMap::build(text);
        assert_eq!(m.locate("a.b"), Some((2, 3)));
        assert_eq!(m.locate("a.c[1].y"), Some((6, 7)));
        assert_eq!(m.locate("a.c[1].zz").map(|p| p.0), Some(5));
    }

    #[test]
    fn closest_key_suggests_typos_only() {
        let known = ["population", "growth", "per_capita_l_per_day"];
        assert_eq!(closest("popluation", &known), Some("population"));
        assert_eq!(closest("xyz", &known), None);
    }
}
