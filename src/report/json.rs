//! `report.json`: the machine-readable contract, pretty-printed.

use super::{Renderer, Report};

pub struct JsonRenderer;

impl Renderer for JsonRenderer {
    fn file_name(&self) -> &'static str {
        "report.json"
    }

    fn render(&self, report: &Report) -> String {
        let mut text = serde_json::to_string_pretty(report)
            .unwrap_or_else(|e| format!("{{\"error\": \"cannot serialise report: {e}\"}}"));
        text.push('\n');
        text
    }
}
