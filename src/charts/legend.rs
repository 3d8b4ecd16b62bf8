//! The legend: one entry per series with its line sample and marker, wrapped into rows.

use std::fmt::Write;

use super::layout::{CHAR_WIDTH, LEGEND_FIRST_ROW, LEGEND_ROW_HEIGHT, VIEW_WIDTH};
use super::markers::marker_element;
use super::model::Series;
use super::palette::colour;
use super::series::line_attributes;
use super::svg::{escape_xml, num, shorten};

/// Left edge shared by the chart title and the legend.
pub(crate) const LEFT_MARGIN: f64 = 8.0;
const SAMPLE_LENGTH: f64 = 28.0;
const SAMPLE_TO_TEXT: f64 = 6.0;
const ENTRY_SPACING: f64 = 18.0;
const LEGEND_LABEL_CHARS: usize = 32;

/// Where each legend entry starts (left end of its sample, row centre line).
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct LegendLayout {
    pub origins: Vec<(f64, f64)>,
    pub rows: usize,
}

pub(crate) fn layout_legend(series: &[Series]) -> LegendLayout {
    let mut origins = Vec::with_capacity(series.len());
    let (mut x, mut row) = (LEFT_MARGIN, 0usize);
    for s in series {
        let width = entry_width(&s.label);
        if x > LEFT_MARGIN && x + width > VIEW_WIDTH - LEFT_MARGIN {
            x = LEFT_MARGIN;
            row += 1;
        }
        origins.push((x, LEGEND_FIRST_ROW + row as f64 * LEGEND_ROW_HEIGHT));
        x += width + ENTRY_SPACING;
    }
    LegendLayout {
        origins,
        rows: row + 1,
    }
}

fn entry_width(label: &str) -> f64 {
    let chars = shorten(label, LEGEND_LABEL_CHARS).chars().count();
    SAMPLE_LENGTH + SAMPLE_TO_TEXT + chars as f64 * CHAR_WIDTH
}

pub(crate) fn render_legend(out: &mut String, series: &[Series], layout: &LegendLayout) {
    out.push_str(r#"<g class="legend">"#);
    for (position, (s, (x, y))) in series.iter().zip(&layout.origins).enumerate() {
        let label = escape_xml(&s.label);
        let _ = write!(out, r#"<g class="legend-entry" data-series="{label}">"#);
        if s.style.draws_line() {
            let _ = write!(
                out,
                r#"<line class="legend-line" x1="{}" y1="{row}" x2="{}" y2="{row}" {}/>"#,
                num(*x),
                num(x + SAMPLE_LENGTH),
                line_attributes(s, position),
                row = num(*y)
            );
        }
        if s.style.draws_markers() {
            let centre = x + SAMPLE_LENGTH / 2.0;
            out.push_str(&marker_element(
                s.marker,
                centre,
                *y,
                colour(s.colour_index),
                "legend-marker",
            ));
        }
        let _ = write!(
            out,
            r#"<text class="legend-label" x="{}" y="{}">{}</text></g>"#,
            num(x + SAMPLE_LENGTH + SAMPLE_TO_TEXT),
            num(y + 5.0),
            escape_xml(&shorten(&s.label, LEGEND_LABEL_CHARS))
        );
    }
    out.push_str("</g>");
}

#[cfg(test)]
mod tests {
    use super::*;

    fn named(label: &str) -> Series {
        Series {
            label: label.to_string(),
            ..Series::default()
        }
    }

    #[test]
    fn short_labels_share_one_row() {
        let layout = layout_legend(&[named("switch Q1"), named("switch Q2"), named("coil")]);
        assert_eq!(layout.rows, 1);
        assert!(layout.origins.windows(2).all(|p| p[0].0 < p[1].0));
    }

    #[test]
    fn long_labels_wrap_to_new_rows() {
        let long = "tank capacitor bank C1–C6 (case)";
        let layout = layout_legend(&[named(long), named(long), named(long)]);
        // About 300 units each: at most one fits beside another on the 480-wide view.
        assert!(layout.rows >= 2, "{}", layout.rows);
        let (x, y) = layout.origins[2];
        assert_eq!(x, LEFT_MARGIN);
        assert!(y > layout.origins[0].1);
    }
}
