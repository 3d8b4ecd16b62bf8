//! Fixtures and selector helpers shared by the chart tests.

use eddybench::charts::{
    AxisFormat, LineChart, Marker, Series, SeriesStyle, Threshold, XMarker, render_line_chart,
};
use scraper::{ElementRef, Html, Selector};

/// A five-minute bench run: two part temperatures, the switch limit and the predicted time to it.
pub fn bench_run_chart() -> LineChart {
    let seconds = (0..=30).map(|i| f64::from(i) * 10.0);
    LineChart {
        title: String::from("Part temperatures, run 12"),
        x_label: String::from("time (s)"),
        y_label: String::from("temperature (°C)"),
        series: vec![
            Series {
                label: String::from("switch Q1"),
                points: seconds
                    .clone()
                    .map(|t| (t, 24.0 + 50.0 * (1.0 - (-t / 140.0).exp())))
                    .collect(),
                style: SeriesStyle::Line,
                marker: Marker::Circle,
                colour_index: 0,
            },
            Series {
                label: String::from("tank capacitor C1"),
                points: seconds
                    .map(|t| (t, 23.5 + 20.0 * (1.0 - (-t / 200.0).exp())))
                    .collect(),
                style: SeriesStyle::Dashed,
                marker: Marker::Square,
                colour_index: 1,
            },
        ],
        thresholds: vec![Threshold {
            label: String::from("limit 85 °C"),
            y: 85.0,
        }],
        x_markers: vec![XMarker {
            label: String::from("limit in 4:10"),
            x: 250.0,
        }],
        x_format: AxisFormat::MinutesSeconds,
        y_min: None,
        y_max: None,
        id: String::from("run-12-temps"),
    }
}

pub fn series(label: &str, points: Vec<(f64, f64)>, style: SeriesStyle) -> Series {
    Series {
        label: label.to_string(),
        points,
        style,
        marker: Marker::Circle,
        colour_index: 0,
    }
}

pub fn chart_of(series: Vec<Series>) -> LineChart {
    LineChart {
        title: String::from("test chart"),
        x_label: String::from("time (s)"),
        y_label: String::from("value (V)"),
        series,
        id: String::from("test"),
        ..LineChart::default()
    }
}

pub fn render(chart: &LineChart) -> Html {
    Html::parse_fragment(&render_line_chart(chart))
}

pub fn select<'a>(doc: &'a Html, css: &str) -> Vec<ElementRef<'a>> {
    let selector = Selector::parse(css).expect("valid selector");
    doc.select(&selector).collect()
}

pub fn texts(doc: &Html, css: &str) -> Vec<String> {
    select(doc, css)
        .iter()
        .map(|e| e.text().collect::<String>())
        .collect()
}

pub fn attr(element: &ElementRef, name: &str) -> String {
    element
        .value()
        .attr(name)
        .unwrap_or_else(|| panic!("missing attribute {name}"))
        .to_string()
}

/// The (x, y) vertices of a path drawn with `M` and `L` commands only.
pub fn path_points(d: &str) -> Vec<(f64, f64)> {
    d.split(' ')
        .filter(|part| !part.is_empty())
        .map(|part| {
            let (x, y) = part[1..].split_once(',').expect("x,y pair");
            (x.parse().unwrap(), y.parse().unwrap())
        })
        .collect()
}
