#![allow(dead_code)] // each test uses a part
//! Finds the numbers and keys of a block-style scheme file line by line, with the field path of
//! each, so tests can change one at a time and keep every other line (and its number) as it was.
//!
//! Understands what the samples use: `key: value`, `- key: value`, `- value`, flow lists
//! `[a, b]` and flow mappings `{k: v, k2: v2}` (one level), and `#` comments.

/// One place in the text: line index (0-based), byte range within the whole text, field path.
#[derive(Debug, Clone)]
pub struct Site {
    pub line: usize,
    pub start: usize,
    pub end: usize,
    /// Field path as the loader writes it, e.g. `pumps[0].curve[2].head_m`.
    pub path: String,
    /// The text at the site.
    pub text: String,
}

/// The numeric scalars and the keys of a file.
#[derive(Debug, Default)]
pub struct Sites {
    pub numbers: Vec<Site>,
    pub keys: Vec<Site>,
}

struct Frame {
    indent: usize,
    path: String,
    items: usize,
}

fn join(parent: &str, key: &str) -> String {
    if parent.is_empty() {
        key.to_string()
    } else {
        format!("{parent}.{key}")
    }
}

/// Content of a line without its comment (a `#` at the start or after a space).
fn strip_comment(line: &str) -> &str {
    let b = line.as_bytes();
    for i in 0..b.len() {
        if b[i] == b'#' && (i == 0 || b[i - 1] == b' ') {
            return &line[..i];
        }
    }
    line
}

fn is_number(s: &str) -> bool {
    let s = s.trim();
    !s.is_empty()
        && s.parse::<f64>().is_ok()
        && s.bytes()
            .all(|c| c.is_ascii_digit() || matches!(c, b'.' | b'-' | b'+' | b'e' | b'E'))
}

/// Splits `inner` (the text between brackets, starting at byte `base`) at top-level commas.
fn split_commas(text: &str, base: usize, end: usize) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = base;
    for (i, c) in text.bytes().enumerate().take(end).skip(base) {
        if c == b',' {
            out.push((start, i));
            start = i + 1;
        }
    }
    out.push((start, end));
    out
}

/// Trims a byte range of `text` to its non-space part.
fn trim(text: &str, (mut s, mut e): (usize, usize)) -> (usize, usize) {
    let b = text.as_bytes();
    while s < e && b[s] == b' ' {
        s += 1;
    }
    while e > s && b[e - 1] == b' ' {
        e -= 1;
    }
    (s, e)
}

impl Sites {
    fn site(&mut self, number: bool, text: &str, line: usize, (s, e): (usize, usize), path: &str) {
        let site = Site {
            line,
            start: s,
            end: e,
            path: path.to_string(),
            text: text[s..e].to_string(),
        };
        if number {
            self.numbers.push(site);
        } else {
            self.keys.push(site);
        }
    }

    /// A value at byte range (s, e) of field `path`: scalar, flow list or flow mapping.
    fn value(&mut self, text: &str, line: usize, range: (usize, usize), path: &str) {
        let (s, e) = trim(text, range);
        if s >= e {
            return;
        }
        let v = &text[s..e];
        if v.starts_with('[') && v.ends_with(']') {
            for (i, r) in split_commas(text, s + 1, e - 1).into_iter().enumerate() {
                let r = trim(text, r);
                self.value(text, line, r, &format!("{path}[{i}]"));
            }
        } else if v.starts_with('{') && v.ends_with('}') {
            for r in split_commas(text, s + 1, e - 1) {
                let (ps, pe) = trim(text, r);
                let Some(colon) = text[ps..pe].find(':') else {
                    continue;
                };
                let k = trim(text, (ps, ps + colon));
                let key = text[k.0..k.1].to_string();
                let p = join(path, &key);
                self.site(false, text, line, k, &p);
                self.value(text, line, (ps + colon + 1, pe), &p);
            }
        } else if is_number(v) {
            self.site(true, text, line, (s, e), path);
        }
    }
}

/// Walks the text line by line and lists every number and key with its field path.
pub fn sites(text: &str) -> Sites {
    let mut out = Sites::default();
    let mut stack: Vec<Frame> = Vec::new();
    let mut offset = 0;
    for (ln, raw_line) in text.split_inclusive('\n').enumerate() {
        let line_start = offset;
        offset += raw_line.len();
        let content = strip_comment(raw_line.trim_end_matches(['\n', '\r']));
        if content.trim().is_empty() || content.trim() == "---" {
            continue;
        }
        let mut indent = content.len() - content.trim_start().len();
        let mut pos = line_start + indent;
        let mut rest = content.trim_start();
        let mut dash_path = None;
        if rest == "-" || rest.starts_with("- ") {
            while stack.last().is_some_and(|f| f.indent >= indent) {
                stack.pop();
            }
            let parent = stack.last_mut().expect("a list item has a parent key");
            let p = format!("{}[{}]", parent.path, parent.items);
            parent.items += 1;
            stack.push(Frame {
                indent,
                path: p.clone(),
                items: 0,
            });
            let skip = rest.len() - rest[1..].trim_start().len();
            indent += skip;
            pos += skip;
            rest = &rest[skip..];
            dash_path = Some(p);
        }
        let end = line_start + content.len();
        let colon = rest
            .find(": ")
            .or_else(|| rest.ends_with(':').then(|| rest.len() - 1));
        match colon {
            Some(c) if !rest.starts_with('{') && !rest.starts_with('[') => {
                while stack.last().is_some_and(|f| f.indent >= indent) {
                    stack.pop();
                }
                let parent = stack.last().map(|f| f.path.clone()).unwrap_or_default();
                let key = rest[..c].trim();
                let p = join(&parent, key);
                out.site(false, text, ln, (pos, pos + key.len()), &p);
                let value_start = pos + c + 1;
                if text[value_start..end].trim().is_empty() {
                    stack.push(Frame {
                        indent,
                        path: p,
                        items: 0,
                    });
                } else {
                    out.value(text, ln, (value_start, end), &p);
                }
            }
            _ => {
                if let Some(p) = dash_path {
                    out.value(text, ln, (pos, end), &p);
                }
            }
        }
    }
    out
}

/// The text with byte range (start, end) replaced.
pub fn replace(text: &str, site: &Site, with: &str) -> String {
    format!("{}{}{}", &text[..site.start], with, &text[site.end..])
}

/// A misspelling of a key: two neighbouring different letters swapped (or an `x` appended
/// when the key has no such pair).
pub fn swap_letters(key: &str) -> String {
    let c: Vec<char> = key.chars().collect();
    let mid = c.len() / 2;
    for i in (mid..c.len().saturating_sub(1)).chain(0..mid) {
        if c[i] != c[i + 1] && c[i].is_alphabetic() && c[i + 1].is_alphabetic() {
            let mut d = c.clone();
            d.swap(i, i + 1);
            return d.into_iter().collect();
        }
    }
    format!("{key}x")
}
