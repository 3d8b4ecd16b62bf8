//! The SVG's structure: series, legend, reference lines, axes and accessibility hooks.

mod common;

use common::chart_fixtures::{attr, bench_run_chart, render, select, texts};
use eddybench::charts::render_line_chart;

#[test]
fn one_series_group_per_series_named_by_its_label() {
    let doc = render(&bench_run_chart());
    let groups = select(&doc, "g.series");
    let names: Vec<String> = groups.iter().map(|g| attr(g, "data-series")).collect();
    assert_eq!(names, vec!["switch Q1", "tank capacitor C1"]);
    assert_eq!(select(&doc, "g.series path.series-line").len(), 2);
}

#[test]
fn a_label_that_would_be_cut_leaves_the_naming_to_the_legend() {
    // "tank capacitor C1" is longer than a line end has room for: rather than "tank capacito…",
    // no series gets an end label and the legend names both in full.
    let doc = render(&bench_run_chart());
    assert!(texts(&doc, "g.series text.series-label").is_empty());
    assert_eq!(
        texts(&doc, "g.legend text.legend-label"),
        vec!["switch Q1", "tank capacitor C1"]
    );
}

#[test]
fn short_labels_far_apart_sit_at_their_line_ends() {
    let mut chart = bench_run_chart();
    chart.series[1].label = "C1".into();
    let doc = render(&chart);
    assert_eq!(
        texts(&doc, "g.series text.series-label"),
        vec!["switch Q1", "C1"]
    );
}

#[test]
fn legend_has_one_entry_per_series_with_a_sample() {
    let doc = render(&bench_run_chart());
    assert_eq!(select(&doc, "g.legend").len(), 1);
    assert_eq!(
        texts(&doc, "g.legend .legend-entry text.legend-label"),
        vec!["switch Q1", "tank capacitor C1"]
    );
    assert_eq!(
        select(&doc, "g.legend .legend-entry line.legend-line").len(),
        2
    );
}

#[test]
fn dashed_series_carry_their_dash_in_line_and_legend() {
    let doc = render(&bench_run_chart());
    let lines = select(&doc, "path.series-line");
    assert_eq!(lines[0].value().attr("stroke-dasharray"), None);
    let dash = attr(&lines[1], "stroke-dasharray");
    let legend_lines = select(&doc, "line.legend-line");
    assert_eq!(attr(&legend_lines[1], "stroke-dasharray"), dash);
}

#[test]
fn threshold_is_a_dashed_labelled_line() {
    let doc = render(&bench_run_chart());
    let groups = select(&doc, "g.threshold");
    assert_eq!(groups.len(), 1);
    assert_eq!(attr(&groups[0], "data-label"), "limit 85 °C");
    assert_eq!(
        texts(&doc, "g.threshold text.threshold-label"),
        vec!["limit 85 °C"]
    );
    let line = &select(&doc, "g.threshold line.threshold-line")[0];
    assert!(line.value().attr("stroke-dasharray").is_some());
    assert_eq!(attr(line, "y1"), attr(line, "y2"));
}

#[test]
fn x_marker_is_a_labelled_vertical_line() {
    let doc = render(&bench_run_chart());
    assert_eq!(select(&doc, "g.x-marker").len(), 1);
    assert_eq!(
        texts(&doc, "g.x-marker text.x-marker-label"),
        vec!["limit in 4:10"]
    );
    let line = &select(&doc, "g.x-marker line.x-marker-line")[0];
    assert_eq!(attr(line, "x1"), attr(line, "x2"));
    assert_ne!(attr(line, "y1"), attr(line, "y2"));
}

#[test]
fn axis_titles_carry_their_units() {
    let doc = render(&bench_run_chart());
    assert_eq!(texts(&doc, "g.x-axis text.axis-title"), vec!["time (s)"]);
    assert_eq!(
        texts(&doc, "g.y-axis text.axis-title"),
        vec!["temperature (°C)"]
    );
}

#[test]
fn time_axis_ticks_read_as_minutes_and_seconds() {
    let doc = render(&bench_run_chart());
    assert_eq!(
        texts(&doc, "g.x-axis text.tick-label"),
        // Whole minutes, spaced for the narrow view.
        vec!["0:00", "2:00", "4:00", "6:00"]
    );
}

#[test]
fn y_ticks_are_evenly_spaced_nice_numbers_that_reach_the_limit() {
    let doc = render(&bench_run_chart());
    let values: Vec<f64> = texts(&doc, "g.y-axis text.tick-label")
        .iter()
        .map(|t| t.parse().expect("plain number"))
        .collect();
    let step = values[1] - values[0];
    assert!(
        [1.0, 2.0, 5.0, 10.0, 20.0, 50.0].contains(&step),
        "step {step}"
    );
    assert!(values.windows(2).all(|p| (p[1] - p[0] - step).abs() < 1e-9));
    assert!(
        *values.last().unwrap() >= 85.0,
        "threshold must be inside: {values:?}"
    );
}

#[test]
fn svg_is_scalable_and_names_itself_for_screen_readers() {
    let doc = render(&bench_run_chart());
    let svg = &select(&doc, "svg")[0];
    assert_eq!(attr(svg, "viewBox"), "0 0 480 360");
    assert_eq!(attr(svg, "width"), "100%");
    assert!(svg.value().attr("preserveAspectRatio").is_some());
    assert_eq!(attr(svg, "role"), "img");
    let ids: Vec<String> = attr(svg, "aria-labelledby")
        .split(' ')
        .map(String::from)
        .collect();
    assert_eq!(ids, vec!["run-12-temps-title", "run-12-temps-desc"]);
    assert_eq!(
        texts(&doc, "svg > title#run-12-temps-title"),
        vec!["Part temperatures, run 12"]
    );
    let desc = texts(&doc, "svg > desc#run-12-temps-desc").remove(0);
    for expected in [
        "switch Q1",
        "tank capacitor C1",
        "time (s) from 0:00 to 5:00",
        "temperature (°C) from 23.5 to",
        "limit 85 °C",
        "limit in 4:10",
    ] {
        assert!(desc.contains(expected), "desc lacks {expected:?}: {desc}");
    }
}

#[test]
fn nothing_needs_an_inline_style_or_a_script() {
    let svg = render_line_chart(&bench_run_chart());
    let doc = scraper::Html::parse_fragment(&svg);
    assert!(select(&doc, "[style]").is_empty());
    assert!(select(&doc, "style, script, foreignObject").is_empty());
    // Nothing is fetched: the namespace is the only URL in the document.
    let without_namespace = svg.replace(r#"xmlns="http://www.w3.org/2000/svg""#, "");
    assert!(
        !without_namespace.contains("//"),
        "external reference in {svg}"
    );
}

#[test]
fn text_is_at_least_twelve_css_pixels_on_a_phone() {
    // 358 px of a 390 px screen carry the 480-unit view: 16.1 units make 12 px.
    let doc = render(&bench_run_chart());
    let sizes: Vec<f64> = select(&doc, "[font-size]")
        .iter()
        .map(|e| attr(e, "font-size").parse().unwrap())
        .collect();
    assert!(!sizes.is_empty());
    assert!(sizes.iter().all(|s| s * 358.0 / 480.0 >= 12.0), "{sizes:?}");
}

#[test]
fn chart_ids_keep_two_charts_on_one_page_apart() {
    let mut other = bench_run_chart();
    other.id = String::from("run 13\"><b>");
    let doc = render(&other);
    let svg = &select(&doc, "svg")[0];
    assert_eq!(attr(svg, "id"), "run-13---b-");
    assert_eq!(select(&doc, "title#run-13---b--title").len(), 1);
    assert!(select(&doc, "b").is_empty());
    let clip = &select(&doc, "g.series > g")[0];
    assert_eq!(attr(clip, "clip-path"), "url(#run-13---b--plot)");
}
