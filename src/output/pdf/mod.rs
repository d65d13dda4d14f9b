//! PDF output: content -> layout -> bytes.
