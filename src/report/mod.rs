//! The report contract and its renderers. [`layout`] turns a finished
//! [`Report`] into a format-neutral [`page::Page`]; the Markdown, HTML and
//! terminal backends turn a page into bytes. None computes a statistic.

pub mod contract;
pub mod explanation;
pub(crate) mod format;
pub mod html;
pub mod json;
pub(crate) mod layout;
pub mod markdown;
pub mod page;
#[cfg(test)]
pub(crate) mod sample;
pub(crate) mod svg;
pub mod terminal;

pub use contract::*;

/// One output format.
pub trait Renderer {
    /// File name used inside a report folder, e.g. `report.json`.
    fn file_name(&self) -> &'static str;
    /// The whole document.
    fn render(&self, report: &Report) -> String;
}

/// Every page format renders a report through its page.
impl<B: page::Backend> Renderer for B {
    fn file_name(&self) -> &'static str {
        B::FILE_NAME
    }

    fn render(&self, report: &Report) -> String {
        self.render_page(&layout::report_page(report))
    }
}
