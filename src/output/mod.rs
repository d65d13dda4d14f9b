//! Renderers: they only present results computed upstream.

pub mod pdf;
