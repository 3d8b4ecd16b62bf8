//! Putting a line chart together: layout, axes, grid, reference lines, series and legend.

use std::fmt::Write;

use super::accessible::describe;
use super::axis::{Axis, x_axis, y_axis};
use super::layout::{
    DIRECT_LABEL_CHARS, FONT_SIZE, PlotArea, TITLE_BASELINE, TITLE_FONT_SIZE, VIEW_HEIGHT,
    VIEW_WIDTH, X_TICK_LABEL_OFFSET, X_TITLE_OFFSET, Y_TICK_LABEL_GAP, Y_TITLE_BASELINE,
};
use super::legend::{LEFT_MARGIN, layout_legend, render_legend};
use super::model::LineChart;
use super::palette::{GRID_COLOUR, INK};
use super::reference_lines::{render_thresholds, render_x_markers};
use super::scale::LinearScale;
use super::series::{ProjectedSeries, place_direct_labels, render_series};
use super::svg::{escape_xml, num, sanitize_id};

/// A direct label moved further than this from its line's end to clear a neighbour means the
/// ends crowd.
const DIRECT_LABEL_NUDGE: f64 = 3.0;

/// Length of the tick marks that stick out of the axes.
const TICK_LENGTH: f64 = 5.0;

/// The chart as one complete `<svg>` element, scaled to the width of its container.
pub fn render_line_chart(chart: &LineChart) -> String {
    let id = sanitize_id(&chart.id);
    let extent = chart.data_extent();
    let legend = layout_legend(&chart.series);

    let threshold_ys = chart.thresholds.iter().map(|t| t.y);
    let y_range = span(extent.map(|e| e.y), threshold_ys);
    let height = PlotArea::around(legend.rows, 0, 0).height();
    let y = y_axis(y_range, chart.y_min, chart.y_max, height);

    let widest_y_tick = y
        .ticks
        .iter()
        .map(|t| t.label.chars().count())
        .max()
        .unwrap_or(1);
    let direct_label_chars = chart
        .series
        .iter()
        .filter(|s| s.finite_points().next().is_some())
        .map(|s| s.label.chars().count())
        .max()
        .unwrap_or(0);
    let x_range = span(extent.map(|e| e.x), chart.x_markers.iter().map(|m| m.x));
    let frame = |gutter_chars: usize| {
        let plot = PlotArea::around(legend.rows, widest_y_tick, gutter_chars);
        let x = x_axis(&chart.x_format, x_range, plot.width());
        let x_scale = LinearScale {
            domain: x.domain,
            range: (plot.left, plot.right),
        };
        let y_scale = LinearScale {
            domain: y.domain,
            range: (plot.bottom, plot.top),
        };
        let projected: Vec<ProjectedSeries> = chart
            .series
            .iter()
            .map(|s| ProjectedSeries::project(s, &x_scale, &y_scale))
            .collect();
        (plot, x, x_scale, y_scale, projected)
    };
    // Labels at the line ends when they fit as they are; when they would be cut or pushed off
    // their lines (the ends crowd), the legend alone names the series and the plot takes the room.
    let (mut plot, mut x, mut x_scale, mut y_scale, mut projected) = frame(direct_label_chars);
    let ends: Vec<Option<f64>> = projected.iter().map(ProjectedSeries::end_height).collect();
    let mut label_heights = place_direct_labels(&ends, &plot);
    let crowded = ends.iter().zip(&label_heights).any(|(end, placed)| {
        matches!((end, placed), (Some(e), Some(p)) if (e.clamp(plot.top, plot.bottom) - p).abs() > DIRECT_LABEL_NUDGE)
    });
    if crowded || direct_label_chars > DIRECT_LABEL_CHARS {
        (plot, x, x_scale, y_scale, projected) = frame(0);
        label_heights = vec![None; chart.series.len()];
    }

    let mut out = String::with_capacity(16 * 1024);
    open_svg(&mut out, chart, &id, &describe(chart, extent), &plot);
    render_legend(&mut out, &chart.series, &legend);
    render_grid(&mut out, &x, &y, &x_scale, &y_scale, &plot);
    render_axes(&mut out, chart, &x, &y, &x_scale, &y_scale, &plot);
    render_thresholds(&mut out, &chart.thresholds, &y_scale, &plot);
    render_x_markers(&mut out, &chart.x_markers, &x_scale, &plot);

    let clip_id = format!("{id}-plot");
    for (position, series) in chart.series.iter().enumerate() {
        render_series(
            &mut out,
            series,
            position,
            &projected[position],
            label_heights[position],
            &plot,
            &clip_id,
        );
    }
    if extent.is_none() {
        let _ = write!(
            out,
            r#"<text class="no-data" x="{}" y="{}" text-anchor="middle">no data</text>"#,
            num((plot.left + plot.right) / 2.0),
            num((plot.top + plot.bottom) / 2.0)
        );
    }
    out.push_str("</svg>\n");
    // One element per line, so page source and snapshot diffs stay readable. Safe because every
    // `<` and `>` in text and attribute values is escaped, so "><" only ever sits between tags,
    // and no text element has children that a new line could split.
    out.replace("><", ">\n<")
}

/// Low and high of a data span widened to take in extra values (threshold or marker positions).
fn span(data: Option<(f64, f64)>, extra: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    extra
        .filter(|v| v.is_finite())
        .fold(data, |range, v| match range {
            None => Some((v, v)),
            Some((lo, hi)) => Some((lo.min(v), hi.max(v))),
        })
}

/// The root element with its accessible name and description, the plot clip, and the title.
fn open_svg(out: &mut String, chart: &LineChart, id: &str, description: &str, plot: &PlotArea) {
    let _ = write!(
        out,
        r#"<svg xmlns="http://www.w3.org/2000/svg" id="{id}" class="chart line-chart" viewBox="0 0 {w} {h}" width="100%" preserveAspectRatio="xMidYMid meet" role="img" aria-labelledby="{id}-title {id}-desc" font-family="system-ui, -apple-system, 'Segoe UI', Roboto, sans-serif" font-size="{FONT_SIZE}">"#,
        w = VIEW_WIDTH,
        h = VIEW_HEIGHT
    );
    let _ = write!(
        out,
        r#"<title id="{id}-title">{}</title><desc id="{id}-desc">{}</desc>"#,
        escape_xml(&chart.title),
        escape_xml(description)
    );
    let _ = write!(
        out,
        r#"<defs><clipPath id="{id}-plot"><rect x="{}" y="{}" width="{}" height="{}"/></clipPath></defs>"#,
        num(plot.left),
        num(plot.top),
        num(plot.width()),
        num(plot.height())
    );
    if !chart.title.trim().is_empty() {
        let _ = write!(
            out,
            r#"<text class="chart-title" x="{LEFT_MARGIN}" y="{TITLE_BASELINE}" font-size="{TITLE_FONT_SIZE}" font-weight="bold">{}</text>"#,
            escape_xml(&chart.title)
        );
    }
}

fn render_grid(
    out: &mut String,
    x: &Axis,
    y: &Axis,
    x_scale: &LinearScale,
    y_scale: &LinearScale,
    plot: &PlotArea,
) {
    let _ = write!(
        out,
        r#"<g class="grid" stroke="{GRID_COLOUR}" stroke-width="1">"#
    );
    for tick in &y.ticks {
        let h = num(y_scale.map(tick.value));
        let _ = write!(
            out,
            r#"<line x1="{}" y1="{h}" x2="{}" y2="{h}"/>"#,
            num(plot.left),
            num(plot.right)
        );
    }
    for tick in &x.ticks {
        let a = num(x_scale.map(tick.value));
        let _ = write!(
            out,
            r#"<line x1="{a}" y1="{}" x2="{a}" y2="{}"/>"#,
            num(plot.top),
            num(plot.bottom)
        );
    }
    out.push_str("</g>");
}

fn render_axes(
    out: &mut String,
    chart: &LineChart,
    x: &Axis,
    y: &Axis,
    x_scale: &LinearScale,
    y_scale: &LinearScale,
    plot: &PlotArea,
) {
    let (left, right, top, bottom) = (
        num(plot.left),
        num(plot.right),
        num(plot.top),
        num(plot.bottom),
    );

    let _ = write!(
        out,
        r#"<g class="axis x-axis"><line class="axis-line" x1="{left}" y1="{bottom}" x2="{right}" y2="{bottom}" stroke="{INK}"/>"#
    );
    for tick in &x.ticks {
        let a = num(x_scale.map(tick.value));
        let _ = write!(
            out,
            r#"<line class="tick" x1="{a}" y1="{bottom}" x2="{a}" y2="{}" stroke="{INK}"/><text class="tick-label" x="{a}" y="{}" text-anchor="middle">{}</text>"#,
            num(plot.bottom + TICK_LENGTH),
            num(plot.bottom + X_TICK_LABEL_OFFSET),
            escape_xml(&tick.label)
        );
    }
    let _ = write!(
        out,
        r#"<text class="axis-title" x="{}" y="{}" text-anchor="middle">{}</text></g>"#,
        num((plot.left + plot.right) / 2.0),
        num(plot.bottom + X_TITLE_OFFSET),
        escape_xml(&chart.x_label)
    );

    let _ = write!(
        out,
        r#"<g class="axis y-axis"><line class="axis-line" x1="{left}" y1="{top}" x2="{left}" y2="{bottom}" stroke="{INK}"/>"#
    );
    for tick in &y.ticks {
        let h = y_scale.map(tick.value);
        let _ = write!(
            out,
            r#"<line class="tick" x1="{}" y1="{hh}" x2="{left}" y2="{hh}" stroke="{INK}"/><text class="tick-label" x="{}" y="{}" text-anchor="end">{}</text>"#,
            num(plot.left - TICK_LENGTH),
            num(plot.left - Y_TICK_LABEL_GAP),
            num(h + 5.0),
            escape_xml(&tick.label),
            hh = num(h)
        );
    }
    let middle = num((plot.top + plot.bottom) / 2.0);
    let _ = write!(
        out,
        r#"<text class="axis-title" x="{Y_TITLE_BASELINE}" y="{middle}" text-anchor="middle" transform="rotate(-90 {Y_TITLE_BASELINE} {middle})">{}</text></g>"#,
        escape_xml(&chart.y_label)
    );
}
