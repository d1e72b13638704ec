//! Output: text, JSON, CSV, Markdown and LaTeX, and SVG figures. Nothing
//! here computes a statistic; it only lays out results.
//!
//! Commands lay out their results once as a [`doc::Doc`]; each format is one
//! file implementing [`doc::Exporter`]. JSON is the serde form of the
//! command's result struct.

pub mod balance_figure;
pub mod bundle;
pub mod check_text;
pub mod compare_doc;
pub mod csv;
pub mod curve_figure;
pub mod doc;
pub mod estimate_doc;
pub mod forest_figure;
pub mod graph_figure;
pub mod identify_text;
pub mod json;
pub mod latex;
pub mod markdown;
pub mod sensitivity_doc;
pub mod sensitivity_figure;
pub mod sensitivity_text;
pub mod subgroup_doc;
pub mod survival_figure;
pub mod svg;
pub mod text;

pub use doc::{Block, Cell, DataTable, Doc, Exporter, Stamp, Table};

/// The output formats of the table-producing commands.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Plain text for the terminal.
    Text,
    /// JSON (the serde form of the result).
    Json,
    /// Markdown.
    Markdown,
    /// A LaTeX article (tables as booktabs fragments inside).
    Latex,
    /// CSV tables.
    Csv,
}

impl Format {
    /// The exporter for a document format (None for JSON).
    pub fn exporter(self) -> Option<Box<dyn Exporter>> {
        match self {
            Format::Text => Some(Box::new(text::Text)),
            Format::Markdown => Some(Box::new(markdown::Markdown)),
            Format::Latex => Some(Box::new(latex::Latex)),
            Format::Csv => Some(Box::new(csv::Csv)),
            Format::Json => None,
        }
    }
}
