//! Renderers: they only present results computed upstream. Terminal tables, CSV, JSON and PDF
//! are sibling printers over the same results; `files` writes any of them safely.

pub mod csv;
pub mod files;
pub mod pdf;
pub mod pumptest;
pub mod table;
