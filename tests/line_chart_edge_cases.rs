//! Awkward input: no data, one reading, flat or non-finite values, huge series, hostile labels,
//! fixed ranges and the non-numeric axis formats.

mod common;

use common::chart_fixtures::{attr, chart_of, path_points, render, select, series, texts};
use eddybench::charts::{
    AxisFormat, MAX_POINTS_PER_SERIES, Marker, SeriesStyle, Threshold, chart_table_rows,
    format_minutes_seconds, render_line_chart,
};

fn assert_all_numbers_finite(svg: &str) {
    assert!(
        !svg.contains("NaN") && !svg.contains("inf"),
        "non-finite output: {svg}"
    );
}

#[test]
fn chart_without_series_shows_axes_and_says_no_data() {
    let chart = chart_of(vec![]);
    let svg = render_line_chart(&chart);
    let doc = render(&chart);
    assert_eq!(texts(&doc, "text.no-data"), vec!["no data"]);
    assert!(texts(&doc, "g.x-axis text.tick-label").len() >= 2);
    assert!(texts(&doc, "g.y-axis text.tick-label").len() >= 2);
    assert!(select(&doc, "g.series").is_empty());
    assert_all_numbers_finite(&svg);
}

#[test]
fn empty_series_keep_their_group_and_legend_entry() {
    let doc = render(&chart_of(vec![series("coil", vec![], SeriesStyle::Line)]));
    assert_eq!(select(&doc, "g.series").len(), 1);
    assert_eq!(select(&doc, "g.legend .legend-entry").len(), 1);
    assert!(select(&doc, "path.series-line").is_empty());
    assert_eq!(texts(&doc, "text.no-data"), vec!["no data"]);
}

#[test]
fn a_single_reading_is_drawn_as_a_marker() {
    let chart = chart_of(vec![series(
        "choke L1",
        vec![(60.0, 41.0)],
        SeriesStyle::Line,
    )]);
    let svg = render_line_chart(&chart);
    let doc = render(&chart);
    assert!(select(&doc, "path.series-line").is_empty());
    assert_eq!(select(&doc, "g.series .series-marker").len(), 1);
    assert!(select(&doc, "text.no-data").is_empty());
    assert_all_numbers_finite(&svg);
}

#[test]
fn flat_values_get_a_padded_axis() {
    let flat = (0..10).map(|i| (f64::from(i), 25.0)).collect();
    let chart = chart_of(vec![series("ambient", flat, SeriesStyle::Line)]);
    let doc = render(&chart);
    let labels = texts(&doc, "g.y-axis text.tick-label");
    let values: Vec<f64> = labels.iter().map(|l| l.parse().unwrap()).collect();
    assert!(
        values.first().unwrap() < &25.0 && values.last().unwrap() > &25.0,
        "{labels:?}"
    );
    assert_all_numbers_finite(&render_line_chart(&chart));
}

#[test]
fn non_finite_points_are_skipped() {
    let points = vec![
        (0.0, 30.0),
        (10.0, f64::NAN),
        (f64::INFINITY, 31.0),
        (20.0, f64::NEG_INFINITY),
        (30.0, 32.0),
    ];
    let chart = chart_of(vec![series(
        "switch Q2",
        points,
        SeriesStyle::LineAndPoints,
    )]);
    let svg = render_line_chart(&chart);
    let doc = render(&chart);
    let path = &select(&doc, "path.series-line")[0];
    assert_eq!(path_points(&attr(path, "d")).len(), 2);
    assert_eq!(select(&doc, ".series-marker").len(), 2);
    assert_eq!(chart_table_rows(&chart)[0].1.len(), 2);
    assert_all_numbers_finite(&svg);
}

#[test]
fn ten_thousand_readings_are_thinned_but_a_spike_survives() {
    let mut points: Vec<(f64, f64)> = (0..10_000)
        .map(|i| {
            (
                f64::from(i) * 0.1,
                400.0 + (f64::from(i) / 50.0).sin() * 20.0,
            )
        })
        .collect();
    points[6_001].1 = 1000.0;
    let chart = chart_of(vec![series("supply current", points, SeriesStyle::Line)]);
    let doc = render(&chart);
    let drawn = path_points(&attr(&select(&doc, "path.series-line")[0], "d"));
    assert!(
        drawn.len() <= MAX_POINTS_PER_SERIES,
        "{} points drawn",
        drawn.len()
    );

    // The y axis tops out at 1000, so the spike must reach the top tick's height.
    let ticks = select(&doc, "g.y-axis text.tick-label");
    let top = ticks
        .iter()
        .find(|t| t.text().collect::<String>() == "1000")
        .unwrap();
    let top_height: f64 = attr(top, "y").parse::<f64>().unwrap() - 5.0;
    let highest = drawn.iter().map(|(_, y)| *y).fold(f64::INFINITY, f64::min);
    assert!(
        (highest - top_height).abs() <= 0.2,
        "spike at {highest}, top at {top_height}"
    );
}

#[test]
fn labels_are_escaped_everywhere() {
    let hostile = r#"C<1> & "C2" <script>alert(1)</script>"#;
    let mut chart = chart_of(vec![series(
        hostile,
        vec![(0.0, 1.0), (1.0, 2.0)],
        SeriesStyle::Line,
    )]);
    chart.title = hostile.to_string();
    chart.x_label = String::from("x <&\">");
    chart.thresholds.push(Threshold {
        label: hostile.to_string(),
        y: 1.5,
    });
    let svg = render_line_chart(&chart);
    assert!(!svg.contains("<script") && !svg.contains("<1>"));
    assert!(svg.contains("x &lt;&amp;&quot;&gt;"));
    let doc = render(&chart);
    assert!(select(&doc, "script").is_empty());
    assert_eq!(attr(&select(&doc, "g.series")[0], "data-series"), hostile);
    assert_eq!(attr(&select(&doc, "g.threshold")[0], "data-label"), hostile);
    assert_eq!(texts(&doc, "g.x-axis text.axis-title"), vec!["x <&\">"]);
    assert_eq!(texts(&doc, "title"), vec![hostile]);
}

#[test]
fn large_magnitudes_get_a_k_suffix() {
    let points = (0..=10)
        .map(|i| (f64::from(i), 150_000.0 + f64::from(i) * 1000.0))
        .collect();
    let mut chart = chart_of(vec![series("tank frequency", points, SeriesStyle::Line)]);
    chart.y_label = String::from("frequency (Hz)");
    let doc = render(&chart);
    let labels = texts(&doc, "g.y-axis text.tick-label");
    assert_eq!(labels.first().map(String::as_str), Some("150k"));
    assert_eq!(labels.last().map(String::as_str), Some("160k"));
}

#[test]
fn a_threshold_outside_a_fixed_range_is_still_named() {
    let mut chart = chart_of(vec![series(
        "coil",
        vec![(0.0, 30.0), (60.0, 50.0)],
        SeriesStyle::Line,
    )]);
    chart.y_min = Some(0.0);
    chart.y_max = Some(60.0);
    chart.thresholds.push(Threshold {
        label: String::from("limit 120 °C"),
        y: 120.0,
    });
    let doc = render(&chart);
    assert!(select(&doc, "g.threshold line").is_empty());
    assert_eq!(
        texts(&doc, "g.threshold text"),
        vec!["limit 120 °C (above chart)"]
    );
    let labels = texts(&doc, "g.y-axis text.tick-label");
    assert_eq!(
        (labels[0].as_str(), labels.last().unwrap().as_str()),
        ("0", "60")
    );
}

#[test]
fn markers_differ_in_shape_not_only_colour() {
    let mut first = series("run A", vec![(0.0, 1.0), (1.0, 2.0)], SeriesStyle::Points);
    let mut second = series("run B", vec![(0.0, 2.0), (1.0, 3.0)], SeriesStyle::Points);
    first.marker = Marker::Circle;
    second.marker = Marker::Square;
    second.colour_index = 1;
    let doc = render(&chart_of(vec![first, second]));
    assert_eq!(
        select(&doc, "g.series[data-series='run A'] circle.series-marker").len(),
        2
    );
    assert_eq!(
        select(&doc, "g.series[data-series='run B'] rect.series-marker").len(),
        2
    );
    assert!(select(&doc, "path.series-line").is_empty());
}

#[test]
fn category_axis_labels_each_run() {
    let runs: Vec<String> = ["r1 #1", "r2 #3", "r2 #5"].map(String::from).to_vec();
    let points = vec![(0.0, 71.0), (1.0, 74.5), (2.0, 78.0)];
    let mut chart = chart_of(vec![series(
        "efficiency",
        points,
        SeriesStyle::LineAndPoints,
    )]);
    chart.x_label = String::from("run");
    chart.x_format = AxisFormat::Category(runs);
    let doc = render(&chart);
    assert_eq!(
        texts(&doc, "g.x-axis text.tick-label"),
        vec!["r1 #1", "r2 #3", "r2 #5"]
    );
    let rows = &chart_table_rows(&chart)[0].1;
    assert_eq!(rows[2], (String::from("r2 #5"), String::from("78")));
}

#[test]
fn table_rows_use_the_axis_formats() {
    let mut chart = chart_of(vec![series(
        "switch Q1",
        vec![(150.0, 40.25), (3723.0, 152_345.0)],
        SeriesStyle::Line,
    )]);
    chart.x_format = AxisFormat::MinutesSeconds;
    let rows = chart_table_rows(&chart);
    assert_eq!(rows.len(), 1);
    assert_eq!(rows[0].0, "switch Q1");
    assert_eq!(
        rows[0].1,
        vec![
            (String::from("2:30"), String::from("40.25")),
            (String::from("1:02:03"), String::from("152k")),
        ]
    );
    assert_eq!(format_minutes_seconds(150.0), "2:30");
    assert_eq!(format_minutes_seconds(3723.0), "1:02:03");

    chart.x_format = AxisFormat::Date;
    chart.series[0].points = vec![(1_764_460_800.0, 1.0)];
    assert_eq!(chart_table_rows(&chart)[0].1[0].0, "11-30");
}
