//! Outputs, with no terminal: the text and JSON report and the A/B
//! comparison, sweep columns (CSV/JSON), the spread and helper tables, the
//! Markdown note, plot-ready traces, the view registry and the SVG figures.

pub mod figure;
pub mod helper_tables;
pub(crate) mod ink;
pub mod kick;
pub(crate) mod labels;
pub mod note;
pub mod report;
pub mod settling;
pub mod spread_text;
pub mod svg;
pub mod svg_linear;
pub mod sweep_table;
pub mod tighten_text;
pub mod traces;
pub mod views;
