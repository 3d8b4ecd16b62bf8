//! Charts that overlay the chosen revisions, one series each with its own marker: the worst
//! tank-capacitor margin of each run, by run number within its revision, and the tank
//! capacitor's temperature over each revision's latest run. Pure: data in, SVG out.

use super::measured::RevisionRuns;
use crate::charts::{
    AxisFormat, LineChart, Marker, Series, SeriesStyle, Threshold, chart_table_rows,
    render_line_chart,
};
use crate::parts::Role;
use crate::web::runs::view::ChartView;

const MARKERS: [Marker; 4] = [
    Marker::Circle,
    Marker::Square,
    Marker::Triangle,
    Marker::Diamond,
];

/// A chart with the heading of its table's first column.
pub struct Figure {
    pub chart: ChartView,
    pub x_heading: &'static str,
    /// A line under the chart, when its series need more words than fit beside them.
    pub caption: String,
}

impl Figure {
    pub fn new(chart: ChartView, x_heading: &'static str) -> Figure {
        Figure {
            chart,
            x_heading,
            caption: String::new(),
        }
    }

    fn of(chart: &LineChart, x_heading: &'static str) -> Figure {
        Figure::new(
            ChartView {
                id: chart.id.clone(),
                title: chart.title.clone(),
                svg: render_line_chart(chart),
                table: chart_table_rows(chart),
            },
            x_heading,
        )
    }
}

fn series(k: usize, label: String, points: Vec<(f64, f64)>) -> Series {
    Series {
        label,
        points,
        style: SeriesStyle::LineAndPoints,
        marker: MARKERS[k % MARKERS.len()],
        colour_index: k,
    }
}

/// The least tank-capacitor margin of each run, x = the run's number within its revision.
pub fn margin_chart(slug: &str, revisions: &[RevisionRuns]) -> Option<Figure> {
    let all: Vec<Series> = revisions
        .iter()
        .enumerate()
        .map(|(k, r)| {
            let points = r
                .digests
                .iter()
                .enumerate()
                .filter_map(|(i, d)| {
                    let worst = d
                        .trend
                        .parts
                        .iter()
                        .filter(|p| p.part == Role::TankCapacitor)
                        .filter_map(|p| p.margin_k)
                        .reduce(f64::min)?;
                    Some((i as f64, worst))
                })
                .collect();
            series(k, r.label.clone(), points)
        })
        .collect();
    if all.iter().all(|s| s.points.is_empty()) {
        return None;
    }
    let most_runs = revisions.iter().map(|r| r.digests.len()).max().unwrap_or(0);
    let chart = LineChart {
        title: "Least tank-capacitor margin, run by run".into(),
        x_label: "run within its revision".into(),
        y_label: "margin to the limit (K)".into(),
        series: all,
        thresholds: vec![Threshold {
            label: "at the limit".into(),
            y: 0.0,
        }],
        x_format: AxisFormat::Category((1..=most_runs).map(|n| format!("run {n}")).collect()),
        id: format!("{slug}-compare-margins"),
        ..LineChart::default()
    };
    Some(Figure::of(&chart, "Run"))
}

/// One revision's latest run with a tank-capacitor temperature: its hottest unit's curve.
pub struct LatestCurve {
    pub revision: String,
    pub run_id: i64,
    pub channel_title: String,
    /// (seconds since the run's start, °C).
    pub points: Vec<(f64, f64)>,
    pub limit_c: Option<f64>,
}

/// The tank capacitor's temperature over each revision's latest run, overlaid.
pub fn latest_temperature_chart(slug: &str, curves: &[LatestCurve]) -> Option<Figure> {
    if curves.iter().all(|c| c.points.is_empty()) {
        return None;
    }
    // Revisions that share a limit share its line.
    let mut limits: Vec<(f64, Vec<&str>)> = Vec::new();
    for curve in curves {
        let Some(limit) = curve.limit_c else { continue };
        match limits.iter_mut().find(|(y, _)| (y - limit).abs() < 0.05) {
            Some((_, whose)) => whose.push(&curve.revision),
            None => limits.push((limit, vec![&curve.revision])),
        }
    }
    let thresholds = limits
        .into_iter()
        .map(|(y, whose)| Threshold {
            label: format!("{} limit {y:.0} °C", whose.join(", ")),
            y,
        })
        .collect();
    let chart = LineChart {
        title: "Tank capacitor on each latest run".into(),
        x_label: "time since start (m:ss)".into(),
        y_label: "temperature (°C)".into(),
        series: curves
            .iter()
            .enumerate()
            .map(|(k, c)| series(k, format!("{} #{}", c.revision, c.run_id), c.points.clone()))
            .collect(),
        thresholds,
        x_format: AxisFormat::MinutesSeconds,
        id: format!("{slug}-compare-latest-tank"),
        ..LineChart::default()
    };
    let mut figure = Figure::of(&chart, "Time");
    figure.caption = format!(
        "The hottest logged unit of each: {}.",
        curves
            .iter()
            .map(|c| format!("{} run {}, {}", c.revision, c.run_id, c.channel_title))
            .collect::<Vec<_>>()
            .join("; ")
    );
    Some(figure)
}
