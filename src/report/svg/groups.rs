//! Charts of figures by group: rates with their intervals in panels (with a
//! reference line such as four-fifths of the highest rate) and one line per
//! group over score bands. Positions and colours only, no statistics.

use super::{
    Canvas, Font, GRID, INK, Linear, MUTED, SERIES, WIDTH, text_width, ticks, x_axis, y_axis,
};
use crate::report::format::{escape_markup, percent, truncate};

/// One group's rate with its interval.
#[derive(Debug, Clone)]
pub struct IntervalPoint {
    /// The group.
    pub label: String,
    /// The rate, in `0..=1`.
    pub value: f64,
    /// Lower end of the interval.
    pub low: f64,
    /// Upper end of the interval.
    pub high: f64,
}

/// A dashed vertical line across a panel, labelled.
#[derive(Debug, Clone)]
pub struct Reference {
    /// Where the line is drawn, in `0..=1`.
    pub value: f64,
    /// What the line is.
    pub label: String,
}

/// One panel of [`rate_panels`]: a rate per group.
#[derive(Debug, Clone)]
pub struct RatePanel {
    /// The rate's name, e.g. `selection rate`.
    pub name: String,
    /// One point per group shown (suppressed groups are left out).
    pub points: Vec<IntervalPoint>,
    /// An optional reference line.
    pub reference: Option<Reference>,
}

/// A point of a [`GroupLine`], with an optional interval on `y`.
#[derive(Debug, Clone, Copy)]
pub struct LinePoint {
    /// Position on the horizontal axis.
    pub x: f64,
    /// Position on the vertical axis.
    pub y: f64,
    /// `(low, high)` of `y`, drawn as a whisker.
    pub interval: Option<(f64, f64)>,
}

/// One group's line in [`group_lines`].
#[derive(Debug, Clone)]
pub struct GroupLine {
    /// The group, for the legend.
    pub label: String,
    /// The points in `x` order (suppressed cells are left out).
    pub points: Vec<LinePoint>,
}

/// Axis titles and ranges of [`group_lines`].
#[derive(Debug, Clone)]
pub struct LineAxes {
    /// Title of the horizontal axis.
    pub x_label: String,
    /// Title of the vertical axis.
    pub y_label: String,
    /// Range of the horizontal axis.
    pub x: (f64, f64),
    /// Range of the vertical axis.
    pub y: (f64, f64),
    /// Draw the dashed `y = x` line (a calibrated probability score lies on it).
    pub diagonal: bool,
}

const PANEL_HEADER: f64 = 24.0;
const PANEL_GAP: f64 = 10.0;
const ROW: f64 = 20.0;

/// Rates by group in stacked panels sharing one `0..1` axis: a dot at the
/// rate, the interval as a whisker, each panel's reference line dashed.
#[must_use]
pub fn rate_panels(title: &str, panels: &[RatePanel]) -> String {
    const TOP: f64 = 12.0;
    const LABEL_CHARS: usize = 24;
    let longest = panels
        .iter()
        .flat_map(|p| &p.points)
        .map(|p| text_width(&truncate(&p.label, LABEL_CHARS), 11.0))
        .fold(0.0, f64::max);
    let left = (longest + 30.0).clamp(90.0, 220.0);
    let body: f64 = panels
        .iter()
        .map(|p| PANEL_HEADER + p.points.len() as f64 * ROW + PANEL_GAP)
        .sum();
    let bottom = TOP + body;
    let mut canvas = Canvas::new("rates", bottom + 48.0, title);
    let scale = Linear {
        from: (0.0, 1.0),
        to: (left, WIDTH - 70.0),
    };
    x_axis(
        &mut canvas,
        &scale,
        bottom,
        TOP,
        &ticks(0.0, 1.0, 0.2),
        "rate (dot) with its exact 95% interval (whisker)",
    );
    let mut y = TOP;
    for (index, panel) in panels.iter().enumerate() {
        draw_panel(&mut canvas, &scale, panel, y, SERIES[index % SERIES.len()]);
        y += PANEL_HEADER + panel.points.len() as f64 * ROW + PANEL_GAP;
    }
    canvas.finish()
}

/// One panel of [`rate_panels`] starting at height `top`.
fn draw_panel(
    canvas: &mut Canvas,
    scale: &Linear,
    panel: &RatePanel,
    top: f64,
    colour: &'static str,
) {
    let rows_top = top + PANEL_HEADER;
    let rows_bottom = rows_top + panel.points.len() as f64 * ROW;
    canvas.text((8.0, top + 16.0), &panel.name, Font::new(12.0, "start"));
    if let Some(reference) = &panel.reference {
        let x = scale.at(reference.value);
        canvas.line((x, top + 20.0), (x, rows_bottom), MUTED, 1.2, true);
        let past_middle = reference.value > 0.5;
        let (dx, anchor) = if past_middle {
            (-4.0, "end")
        } else {
            (4.0, "start")
        };
        canvas.text(
            (x + dx, top + 16.0),
            &reference.label,
            Font::new(10.0, anchor).fill(MUTED),
        );
    }
    for (row, point) in panel.points.iter().enumerate() {
        let centre = rows_top + (row as f64 + 0.5) * ROW;
        canvas.text(
            (scale.to.0 - 8.0, centre + 4.0),
            &truncate(&point.label, 24),
            Font::new(11.0, "end"),
        );
        whisker(canvas, (scale.at(point.low), scale.at(point.high)), centre);
        canvas.shape(&format!(
            r#"<circle cx="{:.1}" cy="{centre:.1}" r="4.5" fill="{colour}"><title>{}</title></circle>"#,
            scale.at(point.value),
            escape_markup(&format!(
                "{}: {} [{}, {}]",
                point.label,
                percent(point.value),
                percent(point.low),
                percent(point.high)
            ))
        ));
        canvas.text(
            (scale.at(point.high) + 6.0, centre + 4.0),
            &percent(point.value),
            Font::new(10.0, "start").fill(MUTED),
        );
    }
}

/// A horizontal interval with end caps at height `y`.
fn whisker(canvas: &mut Canvas, (low, high): (f64, f64), y: f64) {
    canvas.line((low, y), (high, y), INK, 1.5, false);
    for x in [low, high] {
        canvas.line((x, y - 4.0), (x, y + 4.0), INK, 1.5, false);
    }
}

/// One line per group over a shared horizontal axis, each point with its
/// interval as a vertical whisker when given, a legend on the right.
#[must_use]
pub fn group_lines(title: &str, axes: &LineAxes, lines: &[GroupLine]) -> String {
    const LEFT: f64 = 64.0;
    const TOP: f64 = 16.0;
    const PLOT_WIDTH: f64 = 420.0;
    const PLOT_HEIGHT: f64 = 280.0;
    let widen = |(from, to): (f64, f64)| {
        if to > from {
            (from, to)
        } else {
            (from - 0.5, to + 0.5)
        }
    };
    let (x_range, y_range) = (widen(axes.x), widen(axes.y));
    let mut canvas = Canvas::new("lines", TOP + PLOT_HEIGHT + 52.0, title);
    let x = Linear {
        from: x_range,
        to: (LEFT, LEFT + PLOT_WIDTH),
    };
    let y = Linear {
        from: y_range,
        to: (TOP + PLOT_HEIGHT, TOP),
    };
    x_axis(
        &mut canvas,
        &x,
        TOP + PLOT_HEIGHT,
        TOP,
        &round_ticks(x_range),
        &axes.x_label,
    );
    y_axis(
        &mut canvas,
        &y,
        LEFT,
        LEFT + PLOT_WIDTH,
        &round_ticks(y_range),
        &axes.y_label,
    );
    let legend_x = LEFT + PLOT_WIDTH + 24.0;
    let mut legend_y = TOP + 12.0;
    if axes.diagonal {
        let (from, to) = (x_range.0.max(y_range.0), x_range.1.min(y_range.1));
        canvas.line(
            (x.at(from), y.at(from)),
            (x.at(to), y.at(to)),
            MUTED,
            1.0,
            true,
        );
        legend_entry(
            &mut canvas,
            (legend_x, legend_y),
            (MUTED, 1.0, true),
            "y = x",
        );
        legend_y += 20.0;
    }
    for (index, line) in lines.iter().enumerate() {
        let colour = SERIES[index % SERIES.len()];
        draw_line(&mut canvas, (&x, &y), line, colour);
        let label = truncate(&line.label, 24);
        legend_entry(
            &mut canvas,
            (legend_x, legend_y),
            (colour, 2.0, false),
            &label,
        );
        legend_y += 20.0;
    }
    canvas.finish()
}

/// A legend row at `at`: a line sample drawn with `(colour, width, dashed)`, then `label`.
fn legend_entry(canvas: &mut Canvas, at: (f64, f64), stroke: (&str, f64, bool), label: &str) {
    let (x, y) = at;
    let (colour, width, dashed) = stroke;
    canvas.line((x, y - 4.0), (x + 22.0, y - 4.0), colour, width, dashed);
    canvas.text((x + 28.0, y), label, Font::new(11.0, "start"));
}

/// About five ticks inside `range` at a round step (1, 2, 2.5 or 5 times a power of ten).
fn round_ticks((from, to): (f64, f64)) -> Vec<f64> {
    let raw = (to - from) / 5.0;
    let magnitude = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * magnitude)
        .find(|&s| s >= raw)
        .unwrap_or(10.0 * magnitude);
    let first = (from / step).ceil() * step;
    let last = (to / step).floor() * step;
    ticks(first, last, step)
}

/// One group's polyline, its points and their whiskers.
fn draw_line(canvas: &mut Canvas, (x, y): (&Linear, &Linear), line: &GroupLine, colour: &str) {
    let points: Vec<String> = line
        .points
        .iter()
        .map(|p| format!("{:.1},{:.1}", x.at(p.x), y.at(p.y)))
        .collect();
    canvas.shape(&format!(
        r#"<polyline points="{}" fill="none" stroke="{colour}" stroke-width="1.8"/>"#,
        points.join(" ")
    ));
    for p in &line.points {
        let (px, py) = (x.at(p.x), y.at(p.y));
        if let Some((low, high)) = p.interval {
            canvas.line((px, y.at(low)), (px, y.at(high)), colour, 1.0, false);
        }
        canvas.shape(&format!(
            r#"<circle cx="{px:.1}" cy="{py:.1}" r="3" fill="{colour}" stroke="{GRID}"/>"#
        ));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(label: &str, value: f64) -> IntervalPoint {
        IntervalPoint {
            label: label.into(),
            value,
            low: value - 0.1,
            high: value + 0.1,
        }
    }

    #[test]
    fn panels_draw_every_group_the_reference_and_escape_labels() {
        let panels = [RatePanel {
            name: "selection rate".into(),
            points: vec![point("a<b>", 0.5), point("c", 0.25)],
            reference: Some(Reference {
                value: 0.4,
                label: "four-fifths of the highest (common practice)".into(),
            }),
        }];
        let svg = rate_panels("Rates", &panels);
        assert_eq!(svg.matches("<circle").count(), 2);
        assert!(svg.contains("four-fifths of the highest"));
        assert!(svg.contains("a&lt;b&gt;") && !svg.contains("a<b>"));
        assert!(svg.contains(r#"class="axis-label""#));
    }

    #[test]
    fn ticks_fall_on_round_steps_inside_the_range() {
        let t = round_ticks((0.15, 0.99));
        assert_eq!(t.len(), 4);
        assert!(
            (t[0] - 0.2).abs() < 1e-12 && (t[3] - 0.8).abs() < 1e-12,
            "{t:?}"
        );
        assert_eq!(round_ticks((0.0, 1.0)).len(), 6);
    }

    #[test]
    fn lines_draw_the_diagonal_and_a_legend_entry_per_group() {
        let axes = LineAxes {
            x_label: "score".into(),
            y_label: "outcome rate".into(),
            x: (0.0, 1.0),
            y: (0.0, 1.0),
            diagonal: true,
        };
        let line = |label: &str| GroupLine {
            label: label.into(),
            points: vec![
                LinePoint {
                    x: 0.2,
                    y: 0.3,
                    interval: Some((0.1, 0.5)),
                },
                LinePoint {
                    x: 0.8,
                    y: 0.7,
                    interval: None,
                },
            ],
        };
        let svg = group_lines("Calibration", &axes, &[line("a"), line("b")]);
        assert_eq!(svg.matches("<polyline").count(), 2);
        assert!(svg.contains("y = x"));
        assert!(svg.starts_with("<svg") && svg.ends_with("</svg>"));
    }
}
