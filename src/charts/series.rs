//! Drawing one series: its line, its markers and its direct label at the end of the line.

use std::fmt::Write;

use super::decimate::{MAX_POINTS_PER_SERIES, decimate_min_max};
use super::layout::{DIRECT_LABEL_CHARS, DIRECT_LABEL_SPACING, PlotArea};
use super::markers::marker_element;
use super::model::{Series, SeriesStyle};
use super::palette::{HALO_ATTRIBUTES, colour, dash_pattern};
use super::scale::LinearScale;
use super::svg::{PathData, escape_xml, num, shorten};

/// A line with markers shows at most this many of them, evenly spread: the line carries the
/// data, the markers only tell it apart from its neighbours.
const MAX_MARKERS_ON_A_LINE: usize = 40;

/// A direct label pushed further than this from its line's end gets a leader line back to it.
const LEADER_THRESHOLD: f64 = 3.0;

/// A series projected into viewBox units, ready to draw.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct ProjectedSeries {
    pub points: Vec<(f64, f64)>,
}

impl ProjectedSeries {
    /// Finite points only, thinned to [`MAX_POINTS_PER_SERIES`], mapped through the two scales.
    pub fn project(series: &Series, x: &LinearScale, y: &LinearScale) -> Self {
        let finite: Vec<(f64, f64)> = series.finite_points().collect();
        let thinned = decimate_min_max(&finite, x.domain, MAX_POINTS_PER_SERIES / 2);
        Self {
            points: thinned
                .iter()
                .map(|(px, py)| (x.map(*px), y.map(*py)))
                .collect(),
        }
    }

    /// Height of the line's last point: where its direct label goes.
    pub fn end_height(&self) -> Option<f64> {
        self.points.last().map(|(_, y)| *y)
    }
}

/// Stroke attributes of a series' line, shared with its legend sample.
pub(crate) fn line_attributes(series: &Series, position: usize) -> String {
    let mut attributes = format!(
        r#"stroke="{}" stroke-width="2" stroke-linejoin="round" stroke-linecap="round""#,
        colour(series.colour_index)
    );
    if series.style == SeriesStyle::Dashed {
        let _ = write!(
            attributes,
            r#" stroke-dasharray="{}""#,
            dash_pattern(position)
        );
    }
    attributes
}

/// Heights for direct labels: each at its line's end, pushed apart so none overlap, and kept
/// within the plot.
pub(crate) fn place_direct_labels(ends: &[Option<f64>], plot: &PlotArea) -> Vec<Option<f64>> {
    let mut order: Vec<(usize, f64)> = ends
        .iter()
        .enumerate()
        .filter_map(|(i, end)| end.map(|y| (i, y.clamp(plot.top, plot.bottom))))
        .collect();
    order.sort_by(|a, b| a.1.total_cmp(&b.1));
    for i in 1..order.len() {
        order[i].1 = order[i].1.max(order[i - 1].1 + DIRECT_LABEL_SPACING);
    }
    if let Some(last) = order.last_mut() {
        last.1 = last.1.min(plot.bottom);
    }
    for i in (0..order.len().saturating_sub(1)).rev() {
        order[i].1 = order[i].1.min(order[i + 1].1 - DIRECT_LABEL_SPACING);
    }
    let mut placed = vec![None; ends.len()];
    for (i, y) in order {
        placed[i] = Some(y);
    }
    placed
}

/// One `<g class="series">`: the clipped line and markers, then the label outside the clip.
pub(crate) fn render_series(
    out: &mut String,
    series: &Series,
    position: usize,
    projected: &ProjectedSeries,
    label_height: Option<f64>,
    plot: &PlotArea,
    clip_id: &str,
) {
    let label = escape_xml(&series.label);
    let stroke = colour(series.colour_index);
    let _ = write!(
        out,
        r#"<g class="series series-{position}" data-series="{label}"><g clip-path="url(#{clip_id})">"#
    );
    let points = &projected.points;
    let lonely = points.len() == 1;
    if series.style.draws_line() && points.len() >= 2 {
        let _ = write!(
            out,
            r#"<path class="series-line" d="{}" fill="none" {}/>"#,
            PathData::polyline(points).as_str(),
            line_attributes(series, position)
        );
    }
    // A single reading has no line to draw, so it is shown as a marker whatever the style.
    if series.style.draws_markers() || lonely {
        for (x, y) in marker_positions(series.style, points) {
            out.push_str(&marker_element(
                series.marker,
                x,
                y,
                stroke,
                "series-marker",
            ));
        }
    }
    out.push_str("</g>");
    if let (Some((end_x, end_y)), Some(label_y)) = (points.last(), label_height) {
        // Right after the line's end, so it reads as part of the line; the plot's right gutter
        // keeps room for it when the line runs to the edge.
        let end = (end_x.min(plot.right), end_y.clamp(plot.top, plot.bottom));
        let text_x = end.0 + 10.0;
        if (label_y - end.1).abs() > LEADER_THRESHOLD {
            let _ = write!(
                out,
                r#"<line class="series-label-leader" x1="{}" y1="{}" x2="{}" y2="{}" stroke="{stroke}" stroke-width="1"/>"#,
                num(end.0 + 2.0),
                num(end.1),
                num(text_x - 2.0),
                num(label_y)
            );
        }
        let _ = write!(
            out,
            r#"<text class="series-label" x="{}" y="{}" {HALO_ATTRIBUTES}>{}</text>"#,
            num(text_x),
            num(label_y + 5.0),
            escape_xml(&shorten(&series.label, DIRECT_LABEL_CHARS))
        );
    }
    out.push_str("</g>");
}

fn marker_positions(style: SeriesStyle, points: &[(f64, f64)]) -> Vec<(f64, f64)> {
    if style != SeriesStyle::LineAndPoints || points.len() <= MAX_MARKERS_ON_A_LINE {
        return points.to_vec();
    }
    let stride = points.len().div_ceil(MAX_MARKERS_ON_A_LINE);
    let mut chosen: Vec<(f64, f64)> = points.iter().copied().step_by(stride).collect();
    if let Some(last) = points.last()
        && chosen.last() != Some(last)
    {
        chosen.push(*last);
    }
    chosen
}

#[cfg(test)]
mod tests {
    use super::*;

    const PLOT: PlotArea = PlotArea {
        left: 60.0,
        top: 56.0,
        right: 540.0,
        bottom: 312.0,
    };

    #[test]
    fn crowded_labels_are_pushed_apart_in_order() {
        let placed = place_direct_labels(&[Some(100.0), Some(101.0), None, Some(99.0)], &PLOT);
        let (a, b, d) = (placed[0].unwrap(), placed[1].unwrap(), placed[3].unwrap());
        assert_eq!(placed[2], None);
        assert!(d < a && a < b);
        assert!(a - d >= DIRECT_LABEL_SPACING && b - a >= DIRECT_LABEL_SPACING);
    }

    #[test]
    fn labels_at_the_bottom_stay_inside_the_plot() {
        let placed = place_direct_labels(&[Some(400.0), Some(312.0)], &PLOT);
        assert!(placed.iter().flatten().all(|y| *y <= PLOT.bottom));
        assert!((placed[0].unwrap() - placed[1].unwrap()).abs() >= DIRECT_LABEL_SPACING);
    }

    #[test]
    fn markers_on_long_lines_are_thinned_but_keep_the_end() {
        let points: Vec<(f64, f64)> = (0..500).map(|i| (i as f64, 0.0)).collect();
        let chosen = marker_positions(SeriesStyle::LineAndPoints, &points);
        assert!(chosen.len() <= MAX_MARKERS_ON_A_LINE + 1);
        assert_eq!(chosen.last(), Some(&(499.0, 0.0)));
        assert_eq!(marker_positions(SeriesStyle::Points, &points).len(), 500);
    }
}
