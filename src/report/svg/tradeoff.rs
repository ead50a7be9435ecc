//! The two charts of the outcome in the screen: the leakage–utility map
//! (features by leakage and outcome gain over the protected attribute) and
//! the removal plan's frontier (feature sets by leakage and outcome AUC).

use super::{
    Canvas, FeatureResult, Flag, Font, GRID, INK, LINE, Linear, MUTED, Thresholds, WIDTH, WholeSet,
    flag_colour, ticks, truncate, x_axis, y_axis,
};
use crate::report::format::{MapQuadrant, frontier_set};

const LEFT: f64 = 78.0;
const RIGHT: f64 = WIDTH - 24.0;
const TOP: f64 = 20.0;
const PLOT_HEIGHT: f64 = 300.0;
/// At most this many points carry a name on the map (the most leaking ones
/// outside the crowded "neither" corner); the table lists all.
const MAX_NAMED: usize = 16;
const NAME_CHARS: usize = 22;

/// A value with its 95% interval, as drawn.
#[derive(Clone, Copy)]
struct Span {
    value: f64,
    low: f64,
    high: f64,
}

/// A tick spacing giving at most six intervals over `span`.
fn tick_step(span: f64) -> f64 {
    [0.01, 0.02, 0.05, 0.1, 0.2]
        .into_iter()
        .find(|step| span / step <= 6.0)
        .unwrap_or(0.25)
}

/// An axis range covering `spans` (and `always`), widened to whole ticks.
fn range(spans: impl Iterator<Item = Span>, always: f64) -> (f64, f64, f64) {
    let (low, high) = spans.fold((always, always), |(l, h), s| (l.min(s.low), h.max(s.high)));
    let step = tick_step((high - low).max(0.01));
    let from = (low / step).floor() * step;
    let to = (high / step).ceil() * step;
    let to = if to - from < step { from + step } else { to };
    (from, to, step)
}

/// A point at (`x`, `y`) with both intervals as whiskers, and a tooltip.
fn point(canvas: &mut Canvas, scales: (&Linear, &Linear), at: (Span, Span), style: (&str, &str)) {
    let (xs, ys) = scales;
    let (x, y) = at;
    let (colour, tip) = style;
    let centre = (xs.at(x.value), ys.at(y.value));
    canvas.line(
        (xs.at(x.low), centre.1),
        (xs.at(x.high), centre.1),
        colour,
        1.2,
        false,
    );
    canvas.line(
        (centre.0, ys.at(y.low)),
        (centre.0, ys.at(y.high)),
        colour,
        1.2,
        false,
    );
    canvas.shape(&format!(
        r#"<circle cx="{:.1}" cy="{:.1}" r="4.5" fill="{colour}" stroke="white" stroke-width="1"><title>{}</title></circle>"#,
        centre.0,
        centre.1,
        super::escape_markup(tip)
    ));
}

/// Axes of a scatter chart, returning the scales.
fn axes(
    canvas: &mut Canvas,
    x: (f64, f64, f64),
    y: (f64, f64, f64),
    labels: (&str, &str),
) -> (Linear, Linear) {
    let bottom = TOP + PLOT_HEIGHT;
    let xs = Linear {
        from: (x.0, x.1),
        to: (LEFT, RIGHT),
    };
    let ys = Linear {
        from: (y.0, y.1),
        to: (bottom, TOP),
    };
    x_axis(canvas, &xs, bottom, TOP, &ticks(x.0, x.1, x.2), labels.0);
    y_axis(canvas, &ys, LEFT, RIGHT, &ticks(y.0, y.1, y.2), labels.1);
    (xs, ys)
}

/// Each feature with an outcome placed by its leakage AUC (x) and its
/// outcome gain over the protected attribute (y), both with intervals and
/// coloured by flag; the review line and zero gain split the plane into the
/// four readings of [`MapQuadrant`], each labelled in its corner.
#[must_use]
pub fn leakage_utility_map(
    title: &str,
    features: &[&FeatureResult],
    thresholds: &Thresholds,
) -> String {
    let placed: Vec<(&FeatureResult, Span, Span)> = features
        .iter()
        .filter_map(|f| {
            let o = f.outcome.as_ref()?;
            let gain = o.gain_over_protected?;
            let leakage = Span {
                value: f.auc?,
                low: f.auc_low.unwrap_or(f.auc?),
                high: f.auc_high.unwrap_or(f.auc?),
            };
            let gain = Span {
                value: gain,
                low: o.gain_low.unwrap_or(gain),
                high: o.gain_high.unwrap_or(gain),
            };
            Some((*f, leakage, gain))
        })
        .collect();
    let review = thresholds.review_auc_low;
    let x = range(
        placed.iter().map(|p| p.1).chain(std::iter::once(Span {
            value: 0.5,
            low: 0.5,
            high: review.max(0.5) + 0.05,
        })),
        0.5,
    );
    let y = range(placed.iter().map(|p| p.2), 0.0);
    let mut canvas = Canvas::new("map", TOP + PLOT_HEIGHT + 60.0, title);
    let (xs, ys) = axes(
        &mut canvas,
        x,
        y,
        (
            "leakage AUC (feature alone)",
            "outcome gain over the attribute",
        ),
    );
    let (review_x, zero_y) = (xs.at(review), ys.at(0.0));
    let alarm = flag_colour(Flag::Proxy);
    canvas.line(
        (review_x, TOP),
        (review_x, TOP + PLOT_HEIGHT),
        alarm,
        1.5,
        true,
    );
    canvas.line((LEFT, zero_y), (RIGHT, zero_y), INK, 1.2, true);
    canvas.text(
        (review_x + 4.0, TOP + PLOT_HEIGHT - 6.0),
        &format!("review line {review:.2}"),
        Font::new(10.0, "start").fill(alarm),
    );
    let corner = |quadrant: MapQuadrant| -> ((f64, f64), &'static str) {
        match quadrant {
            MapQuadrant::Keep => ((LEFT + 6.0, TOP + 12.0), "start"),
            MapQuadrant::Justify => ((RIGHT - 6.0, TOP + 12.0), "end"),
            MapQuadrant::Neither => ((LEFT + 6.0, TOP + PLOT_HEIGHT - 20.0), "start"),
            MapQuadrant::RemoveFirst => ((RIGHT - 6.0, TOP + PLOT_HEIGHT - 20.0), "end"),
        }
    };
    for quadrant in [
        MapQuadrant::Keep,
        MapQuadrant::Justify,
        MapQuadrant::Neither,
        MapQuadrant::RemoveFirst,
    ] {
        let (at, anchor) = corner(quadrant);
        canvas.text(at, quadrant.label(), Font::new(11.0, anchor).fill(MUTED));
    }
    let mut by_leakage: Vec<&(&FeatureResult, Span, Span)> = placed.iter().collect();
    by_leakage.sort_by(|a, b| b.1.value.total_cmp(&a.1.value));
    for (rank, (feature, leakage, gain)) in by_leakage.into_iter().enumerate() {
        let tip = format!(
            "{}: leakage AUC {:.3} [{:.3}, {:.3}], outcome gain {:+.3} [{:+.3}, {:+.3}]",
            feature.name, leakage.value, leakage.low, leakage.high, gain.value, gain.low, gain.high
        );
        let colour = flag_colour(feature.flag);
        point(&mut canvas, (&xs, &ys), (*leakage, *gain), (colour, &tip));
        let crowded = MapQuadrant::of(feature, thresholds) == Some(MapQuadrant::Neither);
        if rank < MAX_NAMED && !crowded {
            canvas.text(
                (xs.at(leakage.value) + 7.0, ys.at(gain.value) - 6.0),
                &truncate(&feature.name, NAME_CHARS),
                Font::new(10.0, "start"),
            );
        }
    }
    canvas.finish()
}

/// The feature sets the removal plan visits, placed by leakage AUC (x) and
/// outcome AUC (y) with intervals and joined in plan order; the outcome AUC
/// the tolerance allows is a dashed line and the named set is ringed.
#[must_use]
pub fn frontier(title: &str, whole: &WholeSet, max_loss: f64) -> String {
    let spans = |a: &crate::report::AucInterval| Span {
        value: a.auc,
        low: a.auc_low,
        high: a.auc_high,
    };
    let points: Vec<(Span, Span)> = whole
        .frontier
        .iter()
        .map(|p| (spans(&p.leakage), spans(&p.outcome)))
        .collect();
    let Some(full) = points.first() else {
        return String::new();
    };
    let floor = full.1.value - max_loss;
    let x = range(points.iter().map(|p| p.0), 0.5);
    let y = range(points.iter().map(|p| p.1), floor.clamp(0.0, 1.0));
    let mut canvas = Canvas::new("frontier", TOP + PLOT_HEIGHT + 60.0, title);
    let (xs, ys) = axes(
        &mut canvas,
        x,
        y,
        (
            "leakage AUC of the set (whole-set attacker)",
            "outcome AUC of the set",
        ),
    );
    let floor_y = ys.at(floor);
    canvas.line((LEFT, floor_y), (RIGHT, floor_y), INK, 1.2, true);
    canvas.text(
        (RIGHT - 4.0, floor_y - 5.0),
        &format!("full set's outcome AUC − {max_loss:.3}"),
        Font::new(10.0, "end").fill(MUTED),
    );
    let path: Vec<String> = points
        .iter()
        .map(|(l, o)| format!("{:.1},{:.1}", xs.at(l.value), ys.at(o.value)))
        .collect();
    canvas.shape(&format!(
        r#"<polyline points="{}" fill="none" stroke="{GRID}" stroke-width="2"/>"#,
        path.join(" ")
    ));
    for (point_data, (leakage, outcome)) in whole.frontier.iter().zip(&points) {
        let label = if point_data.steps == 0 {
            "all".to_owned()
        } else {
            point_data.steps.to_string()
        };
        let tip = format!(
            "{}: leakage AUC {:.3} [{:.3}, {:.3}], outcome AUC {:.3} [{:.3}, {:.3}]",
            frontier_set(point_data),
            leakage.value,
            leakage.low,
            leakage.high,
            outcome.value,
            outcome.low,
            outcome.high
        );
        point(&mut canvas, (&xs, &ys), (*leakage, *outcome), (LINE, &tip));
        let at = (xs.at(leakage.value), ys.at(outcome.value));
        canvas.text((at.0 + 7.0, at.1 - 7.0), &label, Font::new(11.0, "start"));
        if whole.recommended_within_tolerance.as_ref() == Some(point_data) {
            canvas.shape(&format!(
                r#"<circle cx="{:.1}" cy="{:.1}" r="9" fill="none" stroke="{INK}" stroke-width="1.5"/>"#,
                at.0, at.1
            ));
            canvas.text(
                (at.0 - 12.0, at.1 + 20.0),
                "named set",
                Font::new(10.0, "start"),
            );
        }
    }
    canvas.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn axis_ranges_cover_every_interval_on_whole_ticks() {
        let spans = [
            Span {
                value: 0.6,
                low: 0.55,
                high: 0.66,
            },
            Span {
                value: 0.9,
                low: 0.88,
                high: 0.93,
            },
        ];
        let (from, to, step) = range(spans.into_iter(), 0.5);
        assert!(from <= 0.5 && to >= 0.93, "{from} {to}");
        assert!(((to - from) / step - ((to - from) / step).round()).abs() < 1e-9);
        assert!((to - from) / step <= 7.0);
    }
}
