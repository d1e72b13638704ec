//! Output: text, JSON, CSV, Markdown and LaTeX tables, and SVG figures.
//! Nothing here computes a statistic; it only lays out results.

pub mod graph_figure;
pub mod identify_text;
pub mod svg;
