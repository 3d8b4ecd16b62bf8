//! What the run page shows of a run's analysis: operating point, efficiency by method, thermal
//! margins and fits, flags, live margins of an open run, and the charts with their numbers.

use crate::analysis::live::{LiveMargin, live_margins};
use crate::analysis::model_table::quantity_rows;
use crate::analysis::part_limits::LimitBasis;
use crate::analysis::reading::Reading;
use crate::analysis::run::{RunAnalysis, ThermalResult};
use crate::analysis::series::{decimate_min_max, samples};
use crate::analysis::thermal_fit::first_order_temperature_c;
use crate::channel::Channel;
use crate::charts::{
    AxisFormat, LineChart, Marker, Series, SeriesStyle, Threshold, XMarker, chart_table_rows,
    render_line_chart,
};
use crate::parts::Parts;
use crate::units::{Unit, eng};

use crate::web::revisions::model_panel::FlagView;
use crate::web::view::{maybe, minutes_seconds};

pub struct ThermalRow {
    pub channel: String,
    pub title: String,
    pub t_max: String,
    pub limit: String,
    pub limit_basis: &'static str,
    pub margin: String,
    pub fit: String,
    pub predicted_margin: String,
    pub time_to_limit: String,
    pub caveat: String,
    /// `ok`, `warning` or `failure`, for the row's class.
    pub standing: &'static str,
}

#[derive(serde::Serialize)]
pub struct LiveRow {
    pub title: String,
    pub now: String,
    pub margin: String,
    pub countdown: String,
    /// Seconds to the limit when the prediction was made (empty without one), so the page's
    /// script can count down between updates.
    pub seconds_to_limit: String,
    pub severity: &'static str,
}

/// A chart and the numbers behind it.
pub struct ChartView {
    pub id: String,
    pub title: String,
    pub svg: String,
    pub table: Vec<(String, Vec<(String, String)>)>,
}

pub struct AnalysisView {
    pub operating: Vec<(String, String)>,
    pub efficiency: Vec<(&'static str, String, &'static str)>,
    pub thermal: Vec<ThermalRow>,
    pub flags: Vec<FlagView>,
    pub model_rows: Vec<(String, String, String)>,
    pub live: Vec<LiveRow>,
    pub charts: Vec<ChartView>,
}

fn basis_text(basis: Option<LimitBasis>) -> &'static str {
    match basis {
        Some(LimitBasis::Rated) => "rated",
        Some(LimitBasis::AssumedCapacitorRating) => "assumed 85 °C (no rating given)",
        Some(LimitBasis::SwitchCaseAtLoss) => "case limit at this run's loss",
        Some(LimitBasis::SwitchJunctionMax) => "junction maximum (loss unknown)",
        None => "no limit given",
    }
}

fn channel_title(name: &str) -> String {
    name.parse::<Channel>()
        .map(Channel::title)
        .unwrap_or_else(|_| name.to_string())
}

fn thermal_row(t: &ThermalResult) -> ThermalRow {
    let celsius = |v: f64| format!("{v:.1} °C");
    let kelvin = |v: f64| format!("{v:.1} K");
    let trusted = t.fit.as_ref().is_some_and(|f| f.is_trusted());
    let standing = match t.margin_k {
        Some(m) if m <= 0.0 => "failure",
        Some(m) if m < 10.0 => "warning",
        _ => match t.predicted_margin_k {
            Some(p) if p <= 0.0 && trusted => "warning",
            _ => "ok",
        },
    };
    ThermalRow {
        channel: t.channel.clone(),
        title: channel_title(&t.channel)
            .trim_end_matches(" temperature")
            .to_string(),
        t_max: celsius(t.t_max_c),
        limit: t.limit_c.map(celsius).unwrap_or_else(|| "—".into()),
        limit_basis: basis_text(t.limit_basis),
        margin: t.margin_k.map(kelvin).unwrap_or_else(|| "—".into()),
        fit: t
            .fit
            .as_ref()
            .map(|f| {
                format!(
                    "{:.1} → {:.1} °C, τ {:.0} s, rms {:.2} K",
                    f.t_start_c, f.t_final_c, f.tau_s, f.rmse_k
                )
            })
            .unwrap_or_else(|| "—".into()),
        predicted_margin: t
            .predicted_margin_k
            .map(kelvin)
            .unwrap_or_else(|| "—".into()),
        time_to_limit: match (t.time_to_limit_s, trusted) {
            (Some(s), _) => minutes_seconds(s),
            (None, true) => "never (settles below)".into(),
            (None, false) => "—".into(),
        },
        caveat: t
            .fit
            .as_ref()
            .and_then(|f| f.trust.caveat())
            .unwrap_or_default(),
        standing,
    }
}

pub fn live_row(m: &LiveMargin) -> LiveRow {
    LiveRow {
        title: m.title.clone(),
        now: format!("{:.1} °C", m.t_now_c),
        margin: m
            .margin_k
            .map(|k| format!("{k:.1} K to its {:.0} °C limit", m.limit_c.unwrap_or(0.0)))
            .unwrap_or_else(|| "no limit given".into()),
        seconds_to_limit: m
            .seconds_to_limit
            .filter(|s| *s > 0.0)
            .map(|s| format!("{s:.0}"))
            .unwrap_or_default(),
        countdown: match m.seconds_to_limit {
            Some(0.0) => "AT OR OVER ITS LIMIT".into(),
            Some(s) => format!("limit in about {}", minutes_seconds(s)),
            None => "no trustworthy prediction yet".into(),
        },
        severity: match m.severity {
            crate::analysis::flags::Severity::Note => "note",
            crate::analysis::flags::Severity::Warning => "warning",
            crate::analysis::flags::Severity::Failure => "failure",
        },
    }
}

const MARKERS: [Marker; 6] = [
    Marker::Circle,
    Marker::Square,
    Marker::Triangle,
    Marker::Diamond,
    Marker::Cross,
    Marker::Plus,
];

/// Buckets a chart's series is thinned to (min/max per bucket): about as many as a phone has
/// pixels across its plot, so the page stays small however long the run.
const CHART_BUCKETS: usize = 150;

/// A channel's readings as a chart draws them: every extreme kept, the count bounded.
fn chart_points(readings: &[Reading], channel: Channel) -> Vec<(f64, f64)> {
    decimate_min_max(&samples(readings, channel), CHART_BUCKETS)
}

/// The run's event marks as vertical lines on a chart.
fn mark_lines(marks: &[(f64, String)]) -> Vec<XMarker> {
    marks
        .iter()
        .map(|(t_s, text)| XMarker {
            label: text.clone(),
            x: *t_s,
        })
        .collect()
}

fn short_title(name: &str) -> String {
    channel_title(name)
        .trim_end_matches(" temperature")
        .to_string()
}

/// Temperatures against time, one chart per part role so that a bank of capacitors stays
/// readable on a phone: each unit's readings, the fitted curve of the hottest unit (dashed), the
/// role's limit, and the predicted crossing when the fit says there is one.
fn temperature_charts(
    run_id: i64,
    analysis: &RunAnalysis,
    readings: &[Reading],
    marks: &[(f64, String)],
) -> Vec<ChartView> {
    let mut roles: Vec<crate::parts::Role> = analysis.thermal.iter().map(|t| t.part).collect();
    roles.dedup();
    roles.sort();
    roles.dedup();
    roles
        .into_iter()
        .filter_map(|role| {
            let units: Vec<&ThermalResult> =
                analysis.thermal.iter().filter(|t| t.part == role).collect();
            let hottest = units
                .iter()
                .copied()
                .max_by(|a, b| a.t_max_c.total_cmp(&b.t_max_c))?;
            let mut series = Vec::new();
            let mut x_markers = mark_lines(marks);
            for (i, t) in units.iter().enumerate() {
                let Ok(channel) = t.channel.parse::<Channel>() else {
                    continue;
                };
                series.push(Series {
                    label: short_title(&t.channel),
                    points: chart_points(readings, channel),
                    style: SeriesStyle::LineAndPoints,
                    marker: MARKERS[i % MARKERS.len()],
                    colour_index: i,
                });
            }
            if let Some(fit) = hottest.fit.as_ref().filter(|f| f.is_trusted()) {
                let last = series
                    .iter()
                    .flat_map(|s| s.points.last())
                    .map(|p| p.0)
                    .fold(fit.t0_s, f64::max);
                let end = last.max(hottest.time_to_limit_s.map_or(0.0, |s| fit.t0_s + s));
                let curve = (0..=60)
                    .map(|k| {
                        let time = fit.t0_s + (end - fit.t0_s) * f64::from(k) / 60.0;
                        (
                            time,
                            first_order_temperature_c(
                                fit.t_start_c,
                                fit.t_final_c,
                                fit.tau_s,
                                time - fit.t0_s,
                            ),
                        )
                    })
                    .collect();
                let label = format!("{} fit", short_title(&hottest.channel));
                series.push(Series {
                    label,
                    points: curve,
                    style: SeriesStyle::Dashed,
                    marker: Marker::Plus,
                    colour_index: units.len(),
                });
                if let Some(s) = hottest.time_to_limit_s {
                    x_markers.push(XMarker {
                        label: format!("limit at {}", minutes_seconds(fit.t0_s + s)),
                        x: fit.t0_s + s,
                    });
                }
            }
            let thresholds = hottest
                .limit_c
                .map(|limit| {
                    vec![Threshold {
                        label: format!("limit {limit:.0} °C"),
                        y: limit,
                    }]
                })
                .unwrap_or_default();
            let title = if units.len() > 1 {
                format!("{} temperatures", role.title())
            } else {
                format!("{} temperature", role.title())
            };
            let chart = LineChart {
                title,
                x_label: "time since start (m:ss)".into(),
                y_label: "temperature (°C)".into(),
                series,
                thresholds,
                x_markers,
                x_format: AxisFormat::MinutesSeconds,
                y_min: None,
                y_max: None,
                id: format!("run-{run_id}-temp-{}", role.key()).replace('_', "-"),
            };
            Some(ChartView {
                id: chart.id.clone(),
                title: chart.title.clone(),
                svg: render_line_chart(&chart),
                table: chart_table_rows(&chart),
            })
        })
        .collect()
}

fn channel_chart(
    run_id: i64,
    readings: &[Reading],
    channel: Channel,
    scale: f64,
    y_label: &str,
    title: &str,
    marks: &[(f64, String)],
) -> Option<ChartView> {
    let points: Vec<(f64, f64)> = chart_points(readings, channel)
        .into_iter()
        .map(|(t, v)| (t, v * scale))
        .collect();
    if points.is_empty() {
        return None;
    }
    let chart = LineChart {
        title: title.into(),
        x_label: "time since start (m:ss)".into(),
        y_label: y_label.into(),
        series: vec![Series {
            label: title.into(),
            points,
            style: SeriesStyle::LineAndPoints,
            marker: Marker::Circle,
            colour_index: 0,
        }],
        x_format: AxisFormat::MinutesSeconds,
        x_markers: mark_lines(marks),
        id: format!("run-{run_id}-{channel}").replace('.', "-"),
        ..LineChart::default()
    };
    Some(ChartView {
        id: chart.id.clone(),
        title: chart.title.clone(),
        svg: render_line_chart(&chart),
        table: chart_table_rows(&chart),
    })
}

impl AnalysisView {
    pub fn build(
        run_id: i64,
        parts: &Parts,
        analysis: &RunAnalysis,
        readings: &[Reading],
        open_at_s: Option<f64>,
        marks: &[(f64, String)],
    ) -> AnalysisView {
        let mut operating = Vec::new();
        if let Some(op) = &analysis.operating_point {
            operating.push((
                "Supply voltage (median, steady part)".into(),
                eng(op.supply_voltage_v, Unit::Volt).to_string(),
            ));
            operating.push((
                "Supply current (median, steady part)".into(),
                maybe(op.supply_current_a, Unit::Ampere),
            ));
            operating.push((
                "Frequency (median)".into(),
                maybe(op.frequency_hz, Unit::Hertz),
            ));
            if let Some(ambient) = op.ambient_c {
                operating.push(("Ambient".into(), format!("{ambient:.1} °C")));
            }
        }
        if let Some(duration) = analysis.duration_s {
            operating.push(("Logged span".into(), minutes_seconds(duration)));
        }
        let percent = |v: Option<f64>| {
            v.map(|e| format!("{:.1} %", e * 100.0))
                .unwrap_or_else(|| "—".into())
        };
        let efficiency = vec![
            (
                "Calorimetric",
                percent(analysis.efficiency.calorimetric),
                "water temperature rise × (water + vessel heat capacity), over input power",
            ),
            (
                "Differential",
                percent(analysis.efficiency.differential),
                "input power less an idle run's of the same revision (scaled by V²), over input power",
            ),
            (
                "Model",
                percent(analysis.efficiency.model),
                "input power less the model's loss budget (proximity effect not included)",
            ),
        ];
        let model_rows = analysis
            .model
            .as_ref()
            .map(|m| {
                quantity_rows(m)
                    .into_iter()
                    .filter(|r| r.value.is_some())
                    .map(|r| (r.name.to_string(), r.title.to_string(), r.display()))
                    .collect()
            })
            .unwrap_or_default();
        let live = match open_at_s {
            Some(now_s) => {
                let setting = analysis
                    .operating_point
                    .as_ref()
                    .map(|op| op.supply_voltage_v);
                live_margins(parts, readings, setting, now_s)
                    .iter()
                    .map(live_row)
                    .collect()
            }
            None => Vec::new(),
        };
        let mut charts = Vec::new();
        charts.extend(temperature_charts(run_id, analysis, readings, marks));
        charts.extend(channel_chart(
            run_id,
            readings,
            Channel::SupplyCurrent,
            1.0,
            "supply current (A)",
            "Supply current",
            marks,
        ));
        charts.extend(channel_chart(
            run_id,
            readings,
            Channel::Frequency,
            1e-3,
            "frequency (kHz)",
            "Frequency",
            marks,
        ));
        AnalysisView {
            operating,
            efficiency,
            thermal: analysis.thermal.iter().map(thermal_row).collect(),
            flags: analysis.flags.iter().map(FlagView::from_flag).collect(),
            model_rows,
            live,
            charts,
        }
    }
}
