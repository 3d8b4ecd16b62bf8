//! Reference lines: horizontal thresholds (a part's limit) and vertical x markers (a predicted
//! time to that limit). Both are black and dashed, unlike any series, and labelled in words.

use std::fmt::Write;

use super::layout::PlotArea;
use super::model::{Threshold, XMarker};
use super::palette::{HALO_ATTRIBUTES, INK};
use super::scale::LinearScale;
use super::svg::{escape_xml, num};

const THRESHOLD_DASH: &str = "6 4";
const X_MARKER_DASH: &str = "2 4";
/// Label rows for x markers, stacked from the top of the plot so neighbours do not overlap.
const X_MARKER_LABEL_ROW: f64 = 16.0;

pub(crate) fn render_thresholds(
    out: &mut String,
    thresholds: &[Threshold],
    y: &LinearScale,
    plot: &PlotArea,
) {
    for threshold in thresholds.iter().filter(|t| t.y.is_finite()) {
        let label = escape_xml(&threshold.label);
        let _ = write!(out, r#"<g class="threshold" data-label="{label}">"#);
        // On the left: bench curves rise towards their limit, so the left end is the clear one,
        // and predicted-limit x markers sit towards the right.
        let text_x = num(plot.left + 4.0);
        if y.contains(threshold.y) {
            let height = y.map(threshold.y);
            let _ = write!(
                out,
                r#"<line class="threshold-line" x1="{}" y1="{h}" x2="{}" y2="{h}" stroke="{INK}" stroke-width="1.5" stroke-dasharray="{THRESHOLD_DASH}"/>"#,
                num(plot.left),
                num(plot.right),
                h = num(height)
            );
            // Above the line, unless that would leave the plot.
            let text_y = if height - plot.top < 18.0 {
                height + 16.0
            } else {
                height - 5.0
            };
            let _ = write!(
                out,
                r#"<text class="threshold-label" x="{text_x}" y="{}" text-anchor="start" {HALO_ATTRIBUTES}>{label}</text>"#,
                num(text_y)
            );
        } else {
            // Outside a fixed y range: say so in words rather than drop the limit silently.
            let above = threshold.y > y.domain.0.max(y.domain.1);
            let (text_y, side) = if above {
                (plot.top + 16.0, "above chart")
            } else {
                (plot.bottom - 6.0, "below chart")
            };
            let _ = write!(
                out,
                r#"<text class="threshold-label" x="{text_x}" y="{}" text-anchor="start" {HALO_ATTRIBUTES}>{label} ({side})</text>"#,
                num(text_y)
            );
        }
        out.push_str("</g>");
    }
}

pub(crate) fn render_x_markers(
    out: &mut String,
    markers: &[XMarker],
    x: &LinearScale,
    plot: &PlotArea,
) {
    let drawable = markers
        .iter()
        .filter(|m| m.x.is_finite() && x.contains(m.x));
    for (row, marker) in drawable.enumerate() {
        let label = escape_xml(&marker.label);
        let across = x.map(marker.x);
        let _ = write!(
            out,
            r#"<g class="x-marker" data-label="{label}"><line class="x-marker-line" x1="{a}" y1="{}" x2="{a}" y2="{}" stroke="{INK}" stroke-width="1.5" stroke-dasharray="{X_MARKER_DASH}"/>"#,
            num(plot.top),
            num(plot.bottom),
            a = num(across)
        );
        // Labels on the right third of the plot run leftwards so they stay inside it.
        let (text_x, anchor) = if across > plot.left + plot.width() * 0.66 {
            (across - 4.0, "end")
        } else {
            (across + 4.0, "start")
        };
        let text_y = plot.top + X_MARKER_LABEL_ROW * (row as f64 + 1.0);
        let _ = write!(
            out,
            r#"<text class="x-marker-label" x="{}" y="{}" text-anchor="{anchor}" {HALO_ATTRIBUTES}>{label}</text></g>"#,
            num(text_x),
            num(text_y)
        );
    }
}
