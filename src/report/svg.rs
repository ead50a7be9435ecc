//! Inline SVG charts for the HTML report, drawn from report values alone
//! (positions and colours only, no statistics). Each chart is a fixed-width
//! `viewBox` that the page scales down to fit A4; every chart carries a
//! `<title>` and axis labels, and every text is escaped.

use super::format::{escape_markup, signed, truncate};
use super::page::{Tone, VERDICTS, verdict_tone};
use super::{FeatureResult, Flag, PairResult, Thresholds, WholeSet};
use std::collections::BTreeMap;
use std::fmt::Write;

pub mod groups;
pub mod tradeoff;

/// Width of every chart in user units (the page scales it to its column).
const WIDTH: f64 = 680.0;
/// At most this many feature bars; the rest are listed in the table only.
pub const MAX_BARS: usize = 40;
/// At most this many features in the pair heat map.
pub const MAX_HEATMAP_FEATURES: usize = 24;
/// At most this many feature curves on the ROC chart (plus the whole set).
pub const MAX_ROC_CURVES: usize = 8;
/// Cells show their value when the heat map has at most this many features.
const HEATMAP_VALUES_UP_TO: usize = 10;

const INK: &str = "#1f2933";
const MUTED: &str = "#5f6b77";
const GRID: &str = "#dde2e7";
const BAND: &str = "#b9cfe4";
const LINE: &str = "#24598f";
const NOT_COMPUTED_FILL: &str = "#e6e6e6";
const DIAGONAL_FILL: &str = "#ffffff";
const NEUTRAL: [u8; 3] = [0xf6, 0xf3, 0xec];
const WARM: [u8; 3] = [0xb4, 0x3c, 0x1c];
const COOL: [u8; 3] = [0x3a, 0x6c, 0x93];
/// Distinct line colours for ROC curves, chosen to stay apart in print.
const SERIES: [&str; MAX_ROC_CURVES] = [
    "#c2185b", "#e08e0b", "#2e7d32", "#6a4fa3", "#00838f", "#8d6e63", "#d84315", "#546e7a",
];

/// The report palette for a verdict (the page stylesheet uses the same colours).
fn flag_colour(flag: Flag) -> &'static str {
    match verdict_tone(flag) {
        Tone::Alarm => "#b3261e",
        Tone::Caution => "#d98c00",
        Tone::Calm => "#5e8f6e",
        Tone::Muted => "#8a8f98",
    }
}

/// Maps a value range onto a pixel range, clamping outside values.
struct Linear {
    from: (f64, f64),
    to: (f64, f64),
}

impl Linear {
    fn at(&self, value: f64) -> f64 {
        let (d0, d1) = self.from;
        let t = ((value - d0) / (d1 - d0)).clamp(0.0, 1.0);
        self.to.0 + t * (self.to.1 - self.to.0)
    }
}

/// How a text is placed and styled.
#[derive(Clone, Copy)]
struct Font {
    size: f64,
    anchor: &'static str,
    fill: &'static str,
    rotate: f64,
    class: &'static str,
}

impl Font {
    const fn new(size: f64, anchor: &'static str) -> Self {
        Self {
            size,
            anchor,
            fill: INK,
            rotate: 0.0,
            class: "",
        }
    }

    const fn axis_label() -> Self {
        Self {
            size: 12.0,
            anchor: "middle",
            fill: INK,
            rotate: 0.0,
            class: "axis-label",
        }
    }

    const fn fill(self, fill: &'static str) -> Self {
        Self { fill, ..self }
    }

    const fn rotate(self, rotate: f64) -> Self {
        Self { rotate, ..self }
    }
}

/// Rough rendered width of `text` in a sans-serif font of `size`.
fn text_width(text: &str, size: f64) -> f64 {
    text.chars().count() as f64 * size * 0.56
}

/// An SVG document under construction.
struct Canvas {
    out: String,
}

impl Canvas {
    fn new(kind: &str, height: f64, title: &str) -> Self {
        let mut out = String::new();
        let _ = write!(
            out,
            r#"<svg class="chart chart-{kind}" viewBox="0 0 {WIDTH} {height:.0}" width="{WIDTH}" height="{height:.0}" role="img" font-family="inherit"><title>{}</title>"#,
            escape_markup(title)
        );
        Self { out }
    }

    fn line(&mut self, from: (f64, f64), to: (f64, f64), stroke: &str, width: f64, dashed: bool) {
        let dash = if dashed {
            r#" stroke-dasharray="5 4""#
        } else {
            ""
        };
        let _ = write!(
            self.out,
            r#"<line x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{stroke}" stroke-width="{width}"{dash}/>"#,
            from.0, from.1, to.0, to.1
        );
    }

    fn rect(&mut self, at: (f64, f64), size: (f64, f64), fill: &str, tooltip: Option<&str>) {
        let _ = write!(
            self.out,
            r#"<rect x="{:.1}" y="{:.1}" width="{:.1}" height="{:.1}" fill="{fill}">"#,
            at.0,
            at.1,
            size.0.max(0.0),
            size.1.max(0.0)
        );
        if let Some(tip) = tooltip {
            let _ = write!(self.out, "<title>{}</title>", escape_markup(tip));
        }
        self.out.push_str("</rect>");
    }

    fn text(&mut self, at: (f64, f64), content: &str, font: Font) {
        let rotate = if font.rotate == 0.0 {
            String::new()
        } else {
            format!(
                r#" transform="rotate({} {:.1} {:.1})""#,
                font.rotate, at.0, at.1
            )
        };
        let class = if font.class.is_empty() {
            String::new()
        } else {
            format!(r#" class="{}""#, font.class)
        };
        let _ = write!(
            self.out,
            r#"<text x="{:.1}" y="{:.1}" font-size="{}" text-anchor="{}" fill="{}"{rotate}{class}>{}</text>"#,
            at.0,
            at.1,
            font.size,
            font.anchor,
            font.fill,
            escape_markup(content)
        );
    }

    /// A path or polygon given as raw SVG, built only from numbers.
    fn shape(&mut self, element: &str) {
        self.out.push_str(element);
    }

    fn finish(mut self) -> String {
        self.out.push_str("</svg>");
        self.out
    }
}

/// Values from `from` to `to` (inclusive) every `step`.
fn ticks(from: f64, to: f64, step: f64) -> Vec<f64> {
    let count = ((to - from) / step).round() as usize;
    (0..=count).map(|i| from + i as f64 * step).collect()
}

/// Horizontal axis at height `y` over the span of `scale`, with gridlines up to `grid_top`.
fn x_axis(canvas: &mut Canvas, scale: &Linear, y: f64, grid_top: f64, ticks: &[f64], label: &str) {
    for &t in ticks {
        let x = scale.at(t);
        canvas.line((x, grid_top), (x, y), GRID, 1.0, false);
        canvas.line((x, y), (x, y + 4.0), INK, 1.0, false);
        canvas.text((x, y + 16.0), &format!("{t:.2}"), Font::new(10.0, "middle"));
    }
    canvas.line((scale.to.0, y), (scale.to.1, y), INK, 1.0, false);
    let middle = (scale.to.0 + scale.to.1) / 2.0;
    canvas.text((middle, y + 34.0), label, Font::axis_label());
}

/// Vertical axis at `x` over the span of `scale`, with gridlines up to `grid_right`.
fn y_axis(
    canvas: &mut Canvas,
    scale: &Linear,
    x: f64,
    grid_right: f64,
    ticks: &[f64],
    label: &str,
) {
    for &t in ticks {
        let y = scale.at(t);
        canvas.line((x, y), (grid_right, y), GRID, 1.0, false);
        canvas.line((x - 4.0, y), (x, y), INK, 1.0, false);
        canvas.text(
            (x - 7.0, y + 3.5),
            &format!("{t:.2}"),
            Font::new(10.0, "end"),
        );
    }
    canvas.line((x, scale.to.0), (x, scale.to.1), INK, 1.0, false);
    let middle = (scale.to.0 + scale.to.1) / 2.0;
    canvas.text((x - 42.0, middle), label, Font::axis_label().rotate(-90.0));
}

/// A small diamond centred on `at`: the "accepted by policy" mark.
fn diamond(canvas: &mut Canvas, at: (f64, f64)) {
    let (x, y) = at;
    canvas.shape(&format!(
        r#"<path d="M{x:.1} {:.1}L{:.1} {y:.1}L{x:.1} {:.1}L{:.1} {y:.1}Z" fill="{INK}"/>"#,
        y - 5.0,
        x + 5.0,
        y + 5.0,
        x - 5.0
    ));
}

/// Flag swatches, the interval whisker and the accepted mark, in one row at `y`.
fn bar_legend(canvas: &mut Canvas, y: f64) {
    let mut x = 20.0;
    for flag in VERDICTS {
        canvas.rect((x, y - 9.0), (14.0, 10.0), flag_colour(flag), None);
        canvas.text((x + 19.0, y), flag.as_str(), Font::new(11.0, "start"));
        x += 30.0 + text_width(flag.as_str(), 11.0);
    }
    canvas.line((x, y - 4.0), (x + 24.0, y - 4.0), INK, 1.5, false);
    canvas.line((x, y - 8.0), (x, y), INK, 1.5, false);
    canvas.line((x + 24.0, y - 8.0), (x + 24.0, y), INK, 1.5, false);
    let whisker = "95% interval (fitting included)";
    canvas.text((x + 30.0, y), whisker, Font::new(11.0, "start"));
    x += 46.0 + text_width(whisker, 11.0);
    diamond(canvas, (x, y - 4.0));
    canvas.text(
        (x + 10.0, y),
        "accepted by policy",
        Font::new(11.0, "start"),
    );
}

/// Ranked leakage bars: one bar per feature from chance (0.5) to its AUC,
/// its 95% interval as a whisker, coloured by flag, accepted features
/// marked, dashed lines at the flag thresholds (which apply to the lower bound).
#[must_use]
pub fn leakage_bars(title: &str, features: &[&FeatureResult], thresholds: &Thresholds) -> String {
    const ROW: f64 = 20.0;
    const TOP: f64 = 52.0;
    const NAME_CHARS: usize = 30;
    let drawn: Vec<&FeatureResult> = features
        .iter()
        .copied()
        .filter(|f| f.auc.is_some())
        .take(MAX_BARS)
        .collect();
    let longest = drawn
        .iter()
        .map(|f| text_width(&truncate(&f.name, NAME_CHARS), 11.0))
        .fold(0.0, f64::max);
    let left = (longest + 40.0).clamp(100.0, 240.0);
    let plot_bottom = TOP + drawn.len() as f64 * ROW;
    let mut canvas = Canvas::new("leakage", plot_bottom + 48.0, title);
    bar_legend(&mut canvas, 16.0);
    let scale = Linear {
        from: (0.5, 1.0),
        to: (left, WIDTH - 70.0),
    };
    x_axis(
        &mut canvas,
        &scale,
        plot_bottom,
        TOP - 6.0,
        &ticks(0.5, 1.0, 0.1),
        "AUC of the best surrogate (0.5 = chance)",
    );
    for (label, value) in [
        ("review", thresholds.review_auc_low),
        ("proxy", thresholds.proxy_auc_low),
    ] {
        let x = scale.at(value);
        canvas.line((x, TOP - 8.0), (x, plot_bottom), MUTED, 1.0, true);
        canvas.text(
            (x, TOP - 12.0),
            label,
            Font::new(10.0, "middle").fill(MUTED),
        );
    }
    for (row, feature) in drawn.iter().enumerate() {
        let centre = TOP + (row as f64 + 0.5) * ROW;
        feature_bar(&mut canvas, &scale, feature, centre, NAME_CHARS);
    }
    canvas.text(
        (12.0, (TOP + plot_bottom) / 2.0),
        "feature",
        Font::axis_label().rotate(-90.0),
    );
    canvas.finish()
}

/// One row of [`leakage_bars`].
fn feature_bar(
    canvas: &mut Canvas,
    scale: &Linear,
    feature: &FeatureResult,
    centre: f64,
    name_chars: usize,
) {
    let Some(auc) = feature.auc else { return };
    let low = feature.auc_low.unwrap_or(auc);
    let high = feature.auc_high.unwrap_or(auc);
    let tooltip = format!(
        "{}: AUC {}, {}",
        feature.name,
        super::format::auc_interval(feature.auc, feature.auc_low, feature.auc_high),
        feature.flag.as_str()
    );
    let start = scale.at(0.5);
    canvas.text(
        (start - 8.0, centre + 4.0),
        &truncate(&feature.name, name_chars),
        Font::new(11.0, "end"),
    );
    canvas.rect(
        (start, centre - 6.0),
        (scale.at(auc) - start, 12.0),
        flag_colour(feature.flag),
        Some(&tooltip),
    );
    let (x_low, x_high) = (scale.at(low), scale.at(high));
    canvas.line((x_low, centre), (x_high, centre), INK, 1.5, false);
    canvas.line(
        (x_low, centre - 4.0),
        (x_low, centre + 4.0),
        INK,
        1.5,
        false,
    );
    canvas.line(
        (x_high, centre - 4.0),
        (x_high, centre + 4.0),
        INK,
        1.5,
        false,
    );
    canvas.text(
        (x_high + 6.0, centre + 4.0),
        &format!("{auc:.3}"),
        Font::new(10.0, "start").fill(MUTED),
    );
    if super::format::is_accepted(feature) {
        diamond(canvas, (x_high + 44.0, centre));
    }
}

/// One curve of [`roc_curves`].
#[derive(Debug, Clone)]
pub struct RocSeries<'a> {
    /// Legend text: the feature name or the whole set.
    pub label: &'a str,
    /// Shown beside the label in the legend.
    pub auc: Option<f64>,
    /// (false positive rate, true positive rate) points in drawing order.
    pub points: &'a [[f64; 2]],
    /// Drawn heavier (the whole feature set).
    pub emphasis: bool,
}

/// ROC curves of the best surrogates (at most [`MAX_ROC_CURVES`] features
/// plus the emphasised whole set) with the chance diagonal and a legend.
#[must_use]
pub fn roc_curves(title: &str, series: &[RocSeries]) -> String {
    const SIDE: f64 = 360.0;
    const LEFT: f64 = 64.0;
    const TOP: f64 = 16.0;
    let mut canvas = Canvas::new("roc", TOP + SIDE + 52.0, title);
    let x = Linear {
        from: (0.0, 1.0),
        to: (LEFT, LEFT + SIDE),
    };
    let y = Linear {
        from: (0.0, 1.0),
        to: (TOP + SIDE, TOP),
    };
    let grid = ticks(0.0, 1.0, 0.2);
    x_axis(
        &mut canvas,
        &x,
        TOP + SIDE,
        TOP,
        &grid,
        "false positive rate",
    );
    y_axis(
        &mut canvas,
        &y,
        LEFT,
        LEFT + SIDE,
        &grid,
        "true positive rate",
    );
    canvas.line(
        (x.at(0.0), y.at(0.0)),
        (x.at(1.0), y.at(1.0)),
        MUTED,
        1.0,
        true,
    );
    let legend_x = LEFT + SIDE + 24.0;
    canvas.line(
        (legend_x, TOP + 8.0),
        (legend_x + 22.0, TOP + 8.0),
        MUTED,
        1.0,
        true,
    );
    canvas.text(
        (legend_x + 28.0, TOP + 12.0),
        "chance",
        Font::new(11.0, "start"),
    );
    let mut feature_colours = SERIES.iter().cycle();
    for (row, curve) in series.iter().enumerate() {
        let (colour, width) = if curve.emphasis {
            (INK, 2.6)
        } else {
            (*feature_colours.next().unwrap_or(&LINE), 1.6)
        };
        let points: Vec<String> = curve
            .points
            .iter()
            .map(|[fpr, tpr]| format!("{:.1},{:.1}", x.at(*fpr), y.at(*tpr)))
            .collect();
        canvas.shape(&format!(
            r#"<polyline points="{}" fill="none" stroke="{colour}" stroke-width="{width}"/>"#,
            points.join(" ")
        ));
        let ly = TOP + 30.0 + row as f64 * 20.0;
        canvas.line(
            (legend_x, ly - 4.0),
            (legend_x + 22.0, ly - 4.0),
            colour,
            width,
            false,
        );
        let auc = curve.auc.map(|a| format!(" {a:.3}")).unwrap_or_default();
        canvas.text(
            (legend_x + 28.0, ly),
            &format!("{}{auc}", truncate(curve.label, 24)),
            Font::new(11.0, "start"),
        );
    }
    canvas.finish()
}

/// Colour of a gain on the diverging scale `-limit..limit`.
fn gain_colour(gain: f64, limit: f64) -> (String, bool) {
    let t = (gain / limit).clamp(-1.0, 1.0);
    let target = if t >= 0.0 { WARM } else { COOL };
    let mix = |i: usize| {
        let (a, b) = (f64::from(NEUTRAL[i]), f64::from(target[i]));
        (a + (b - a) * t.abs()).round() as u8
    };
    (
        format!("#{:02x}{:02x}{:02x}", mix(0), mix(1), mix(2)),
        t.abs() > 0.55,
    )
}

/// Features in order of first appearance in `pairs`, at most `limit`.
fn pair_features<'a>(pairs: &[&'a PairResult], limit: usize) -> Vec<&'a str> {
    let mut names: Vec<&str> = Vec::new();
    for name in pairs.iter().flat_map(|p| p.features.iter()) {
        if names.len() < limit && !names.contains(&name.as_str()) {
            names.push(name);
        }
    }
    names
}

/// Gain at which the heat map's colour saturates.
const HEATMAP_GAIN_SCALE: f64 = 0.25;

/// Heat map of pair gains (pair AUC minus the better single AUC) over the
/// features that appear in `pairs` (give them largest gain first; at most
/// [`MAX_HEATMAP_FEATURES`] are kept). Warm cells are joint-only leakage.
#[must_use]
pub fn pair_heatmap(title: &str, pairs: &[&PairResult]) -> String {
    const NAME_CHARS: usize = 22;
    let names = pair_features(pairs, MAX_HEATMAP_FEATURES);
    let gains: BTreeMap<(&str, &str), f64> = pairs
        .iter()
        .flat_map(|p| {
            let (a, b) = (p.features[0].as_str(), p.features[1].as_str());
            // Only a gain whose interval lies above 0 is shown as joint leakage.
            let gain = if p.gain_is_resolved() { p.gain } else { 0.0 };
            [((a, b), gain), ((b, a), gain)]
        })
        .collect();
    // A fixed scale, so that small gains never look warm by stretching.
    let limit = HEATMAP_GAIN_SCALE;
    let n = names.len().max(1) as f64;
    let label = names
        .iter()
        .map(|s| text_width(&truncate(s, NAME_CHARS), 10.0))
        .fold(40.0, f64::max);
    let left = label + 34.0;
    // Column labels slant up to the right by about 0.72 of their length.
    let room = WIDTH - left - label * 0.72 - 8.0;
    let cell = (room / n).clamp(12.0, 44.0);
    let top = label * 0.72 + 20.0;
    let grid_bottom = top + n * cell;
    let mut canvas = Canvas::new("pairs", grid_bottom + 96.0, title);
    for (i, name) in names.iter().enumerate() {
        let short = truncate(name, NAME_CHARS);
        let centre = i as f64 * cell + cell / 2.0;
        canvas.text(
            (left - 6.0, top + centre + 3.5),
            &short,
            Font::new(10.0, "end"),
        );
        canvas.text(
            (left + centre + 3.0, top - 6.0),
            &short,
            Font::new(10.0, "start").rotate(-45.0),
        );
    }
    let show_values = names.len() <= HEATMAP_VALUES_UP_TO;
    for (i, row) in names.iter().enumerate() {
        for (j, column) in names.iter().enumerate() {
            let at = (left + j as f64 * cell, top + i as f64 * cell);
            heat_cell(
                &mut canvas,
                at,
                cell,
                (row, column),
                gains.get(&(row, column)),
                limit,
                show_values,
            );
        }
    }
    canvas.text(
        (12.0, top + n * cell / 2.0),
        "feature",
        Font::axis_label().rotate(-90.0),
    );
    canvas.text(
        (left + n * cell / 2.0, grid_bottom + 20.0),
        "feature",
        Font::axis_label(),
    );
    heat_legend(&mut canvas, grid_bottom + 54.0, limit);
    canvas.finish()
}

/// One cell of [`pair_heatmap`]; the diagonal and pairs not computed are grey.
fn heat_cell(
    canvas: &mut Canvas,
    at: (f64, f64),
    cell: f64,
    names: (&str, &str),
    gain: Option<&f64>,
    limit: f64,
    show_value: bool,
) {
    let size = (cell - 1.0, cell - 1.0);
    if names.0 == names.1 {
        canvas.rect(at, size, DIAGONAL_FILL, None);
        return;
    }
    let Some(&gain) = gain else {
        canvas.rect(at, size, NOT_COMPUTED_FILL, None);
        return;
    };
    let (fill, dark) = gain_colour(gain, limit);
    let tooltip = format!("{} + {}: gain {}", names.0, names.1, signed(gain, 3));
    canvas.rect(at, size, &fill, Some(&tooltip));
    if show_value {
        let font = Font::new(9.5, "middle").fill(if dark { "#ffffff" } else { INK });
        canvas.text(
            (at.0 + cell / 2.0, at.1 + cell / 2.0 + 3.0),
            &signed(gain, 3),
            font,
        );
    }
}

/// Discrete colour scale from `-limit` to `limit` under its caption, then
/// the swatches of the diagonal and of pairs not computed.
fn heat_legend(canvas: &mut Canvas, y: f64, limit: f64) {
    const STEPS: usize = 11;
    const STEP_WIDTH: f64 = 22.0;
    let left = 60.0;
    canvas.text(
        (left, y - 6.0),
        "gain in AUC over the better single feature",
        Font::new(11.0, "start"),
    );
    for i in 0..STEPS {
        let value = limit * (2.0 * i as f64 / (STEPS - 1) as f64 - 1.0);
        let (fill, _) = gain_colour(value, limit);
        canvas.rect(
            (left + i as f64 * STEP_WIDTH, y),
            (STEP_WIDTH, 12.0),
            &fill,
            None,
        );
    }
    let right = left + STEPS as f64 * STEP_WIDTH;
    for (x, value) in [(left, -limit), ((left + right) / 2.0, 0.0), (right, limit)] {
        canvas.text((x, y + 26.0), &signed(value, 3), Font::new(10.0, "middle"));
    }
    let mut x = right + 40.0;
    for (fill, label) in [
        (NOT_COMPUTED_FILL, "not computed"),
        (DIAGONAL_FILL, "same feature"),
    ] {
        canvas.rect((x, y), (12.0, 12.0), fill, None);
        canvas.shape(&format!(
            r#"<rect x="{x:.1}" y="{y:.1}" width="12" height="12" fill="none" stroke="{GRID}"/>"#
        ));
        canvas.text((x + 18.0, y + 10.0), label, Font::new(11.0, "start"));
        x += 30.0 + text_width(label, 11.0);
    }
}

/// One point of the removal chart: before any removal, then after each.
struct Step {
    label: String,
    auc: f64,
    low: f64,
    high: f64,
}

/// The removal plan as a step chart: whole-set AUC before any removal and
/// after each greedy removal, its 95% interval as a band, the target as a
/// dashed line.
#[must_use]
pub fn removal_steps(title: &str, whole: &WholeSet, target_auc: f64) -> String {
    const LEFT: f64 = 70.0;
    const RIGHT: f64 = WIDTH - 90.0;
    const TOP: f64 = 16.0;
    const PLOT_HEIGHT: f64 = 230.0;
    const NAME_CHARS: usize = 24;
    let start = Step {
        label: "all features".to_owned(),
        auc: whole.auc,
        low: whole.auc_low,
        high: whole.auc_high,
    };
    let steps: Vec<Step> = std::iter::once(start)
        .chain(whole.removal_plan.iter().map(|s| Step {
            label: format!("− {}", truncate(&s.remove, NAME_CHARS)),
            auc: s.auc_after,
            low: s.auc_low,
            high: s.auc_high,
        }))
        .collect();
    let lowest = steps.iter().map(|s| s.low).fold(target_auc, f64::min);
    let floor = ((lowest - 0.02) * 10.0).floor().min(5.0) / 10.0;
    let longest = steps
        .iter()
        .map(|s| text_width(&s.label, 10.0))
        .fold(0.0, f64::max);
    let plot_bottom = TOP + PLOT_HEIGHT;
    let label_depth = longest * 0.6;
    let mut canvas = Canvas::new("removal", plot_bottom + label_depth + 56.0, title);
    let band = (RIGHT - LEFT) / steps.len() as f64;
    let y = Linear {
        from: (floor, 1.0),
        to: (plot_bottom, TOP),
    };
    y_axis(
        &mut canvas,
        &y,
        LEFT,
        RIGHT,
        &ticks(floor, 1.0, 0.1),
        "whole-set AUC",
    );
    canvas.line((LEFT, plot_bottom), (RIGHT, plot_bottom), INK, 1.0, false);
    step_band_and_line(&mut canvas, &steps, &y, LEFT, band);
    let target_y = y.at(target_auc);
    let target_colour = flag_colour(Flag::Proxy);
    canvas.line(
        (LEFT, target_y),
        (RIGHT, target_y),
        target_colour,
        1.5,
        true,
    );
    canvas.text(
        (RIGHT + 6.0, target_y + 4.0),
        &format!("target {target_auc:.2}"),
        Font::new(11.0, "start").fill(target_colour),
    );
    for (i, step) in steps.iter().enumerate() {
        let x = LEFT + (i as f64 + 0.5) * band;
        canvas.text(
            (x, plot_bottom + 14.0),
            &step.label,
            Font::new(10.0, "end").rotate(-35.0),
        );
    }
    canvas.text(
        ((LEFT + RIGHT) / 2.0, plot_bottom + label_depth + 44.0),
        "features removed, in greedy order",
        Font::axis_label(),
    );
    canvas.finish()
}

/// Points of a step function: a flat segment across band `i` at `values[i]`.
fn step_points(values: impl Iterator<Item = f64>, y: &Linear, left: f64, band: f64) -> Vec<String> {
    values
        .enumerate()
        .flat_map(|(i, v)| {
            let (a, b) = (left + i as f64 * band, left + (i as f64 + 1.0) * band);
            [
                format!("{a:.1},{:.1}", y.at(v)),
                format!("{b:.1},{:.1}", y.at(v)),
            ]
        })
        .collect()
}

/// Interval band, step line and labelled points of [`removal_steps`].
fn step_band_and_line(canvas: &mut Canvas, steps: &[Step], y: &Linear, left: f64, band: f64) {
    let upper = step_points(steps.iter().map(|s| s.high), y, left, band);
    let mut lower = step_points(steps.iter().map(|s| s.low), y, left, band);
    lower.reverse();
    canvas.shape(&format!(
        r#"<polygon points="{} {}" fill="{BAND}" fill-opacity="0.7"/>"#,
        upper.join(" "),
        lower.join(" ")
    ));
    let line = step_points(steps.iter().map(|s| s.auc), y, left, band);
    canvas.shape(&format!(
        r#"<polyline points="{}" fill="none" stroke="{LINE}" stroke-width="2.2"/>"#,
        line.join(" ")
    ));
    for (i, step) in steps.iter().enumerate() {
        let centre = (left + (i as f64 + 0.5) * band, y.at(step.auc));
        canvas.shape(&format!(
            r#"<circle cx="{:.1}" cy="{:.1}" r="3.5" fill="{LINE}"><title>{}: AUC {:.3} [{:.3}, {:.3}]</title></circle>"#,
            centre.0,
            centre.1,
            escape_markup(&step.label),
            step.auc,
            step.low,
            step.high
        ));
        canvas.text(
            (centre.0, centre.1 - 8.0),
            &format!("{:.3}", step.auc),
            Font::new(10.0, "middle"),
        );
    }
}
