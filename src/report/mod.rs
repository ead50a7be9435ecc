//! The report contract and its renderers. Renderers turn a finished
//! [`Report`] into bytes; they compute no statistics.

pub mod contract;
pub mod explanation;
pub mod format;
pub mod html;
pub mod json;
pub mod markdown;
#[cfg(test)]
pub(crate) mod sample;
pub mod svg;
pub mod terminal;

pub use contract::*;

/// One output format.
pub trait Renderer {
    /// File name used inside a report folder, e.g. `report.json`.
    fn file_name(&self) -> &'static str;
    /// The whole document.
    fn render(&self, report: &Report) -> String;
}
