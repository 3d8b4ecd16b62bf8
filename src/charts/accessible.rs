//! What a screen reader gets instead of the picture: the chart's `<desc>` text, and the numbers
//! behind it for a table on the page.

use super::format::format_value;
use super::model::{Extent, LineChart, Series};

/// Per series, its label and its finite (x, y) points written as the axes write them.
///
/// Text is returned unescaped, for a template that escapes it. Points are not thinned: the
/// table is where every reading stays available.
pub fn chart_table_rows(chart: &LineChart) -> Vec<(String, Vec<(String, String)>)> {
    chart
        .series
        .iter()
        .map(|series| {
            let rows = series
                .finite_points()
                .map(|(x, y)| (chart.x_format.format(x), format_value(y)))
                .collect();
            (series.label.clone(), rows)
        })
        .collect()
}

/// One paragraph: which series there are, the span of the data on each axis with its unit, and
/// the reference lines.
pub(crate) fn describe(chart: &LineChart, extent: Option<Extent>) -> String {
    let mut sentences = Vec::new();
    if chart.series.is_empty() {
        sentences.push(String::from("Line chart with no series."));
    } else {
        let names: Vec<&str> = chart
            .series
            .iter()
            .map(|s: &Series| s.label.as_str())
            .collect();
        sentences.push(format!("Line chart of {}.", names.join(", ")));
    }
    match extent {
        None => sentences.push(String::from("No data.")),
        Some(extent) => sentences.push(format!(
            "{} from {} to {}; {} from {} to {}.",
            axis_name(&chart.x_label, "x"),
            chart.x_format.format(extent.x.0),
            chart.x_format.format(extent.x.1),
            axis_name(&chart.y_label, "y"),
            format_value(extent.y.0),
            format_value(extent.y.1),
        )),
    }
    for threshold in chart.thresholds.iter().filter(|t| t.y.is_finite()) {
        sentences.push(format!(
            "Threshold {} at {}.",
            threshold.label,
            format_value(threshold.y)
        ));
    }
    for marker in chart.x_markers.iter().filter(|m| m.x.is_finite()) {
        sentences.push(format!(
            "Marker {} at {}.",
            marker.label,
            chart.x_format.format(marker.x)
        ));
    }
    sentences.join(" ")
}

fn axis_name<'a>(label: &'a str, fallback: &'a str) -> &'a str {
    if label.trim().is_empty() {
        fallback
    } else {
        label
    }
}
