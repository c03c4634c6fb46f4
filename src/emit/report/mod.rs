//! The review report: one model ([`model::Report`]) built from the
//! analyses, rendered as JSON, Markdown or self-contained HTML.

pub mod build;
pub mod diagram;
pub mod fmt;
pub mod html;
pub mod index;
pub mod markdown;
pub mod model;
pub mod plots;
pub mod render;
pub mod svg;

pub use build::{chain_report, failed_report, summary_row, BuildOptions};
pub use model::{Report, SCHEMA_VERSION};
pub use render::{render, Rendered, ReportFormat};
