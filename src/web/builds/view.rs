//! What a build page shows of its runs: the health of each part of the current revision (worst
//! first), and the charts across runs, all from kept run digests.

use std::collections::BTreeMap;

use crate::analysis::flags::Severity;
use crate::analysis::run_summary::{RunDigest, StoredFlag};
use crate::analysis::trends::{BuildTrends, build_trends};
use crate::channel::Channel;
use crate::charts::{
    AxisFormat, LineChart, Marker, Series, SeriesStyle, XMarker, chart_table_rows,
    render_line_chart,
};
use crate::parts::Role;

use crate::web::runs::view::ChartView;
use crate::web::view::duration_text;

/// One part's standing, in words and numbers.
pub struct PartHealth {
    pub title: String,
    pub severity: &'static str,
    pub headline: String,
    pub latest_margin: String,
    pub trend: String,
    pub running: String,
    /// Evidence that the part is wearing out across runs, always shown.
    pub degrading: Vec<String>,
    pub details: Vec<String>,
    rank: (u8, i64),
}

pub struct BuildHealth {
    pub revision: String,
    pub run_count: usize,
    pub parts: Vec<PartHealth>,
    pub build_flags: Vec<(String, &'static str, String)>,
}

fn severity_word(s: Severity) -> &'static str {
    match s {
        Severity::Note => "note",
        Severity::Warning => "warning",
        Severity::Failure => "failure",
    }
}

fn channel_title(name: &str) -> String {
    name.parse::<Channel>()
        .map(|c| c.title())
        .unwrap_or_else(|_| name.to_string())
        .trim_end_matches(" temperature")
        .to_string()
}

/// Health of the parts of the current revision from its runs' digests (oldest first): one row
/// per part role, led by its worst unit.
pub fn build_health(revision: &str, digests: &[&RunDigest]) -> BuildHealth {
    let summaries: Vec<_> = digests.iter().map(|d| d.trend.clone()).collect();
    let trends: BuildTrends = build_trends(&summaries);
    let latest_flags: Vec<&StoredFlag> = digests
        .last()
        .map(|d| d.flags.iter().collect())
        .unwrap_or_default();
    let mut by_role: BTreeMap<Role, Vec<&crate::analysis::trends::PartTrend>> = BTreeMap::new();
    for trend in &trends.parts {
        by_role.entry(trend.part).or_default().push(trend);
    }
    let mut parts: Vec<PartHealth> = by_role
        .into_iter()
        .map(|(role, units)| {
            let latest = |t: &crate::analysis::trends::PartTrend| t.points.last().and_then(|p| p.margin_k);
            // The unit with the least margin on the latest run leads the row.
            let worst_unit = units
                .iter()
                .min_by(|a, b| latest(a).unwrap_or(f64::MAX).total_cmp(&latest(b).unwrap_or(f64::MAX)))
                .copied()
                .expect("a role in the map has a unit");
            let margin = latest(worst_unit);
            let mut findings: Vec<(Severity, String)> = trends
                .flags
                .iter()
                .filter(|f| f.part == Some(role))
                .map(|f| (f.severity, f.message.clone()))
                .chain(latest_flags.iter().filter(|f| f.part == Some(role)).map(|f| (f.severity, f.message.clone())))
                .collect();
            findings.sort_by_key(|(s, _)| std::cmp::Reverse(*s));
            let margin_severity = match margin {
                Some(m) if m <= 0.0 => Some(Severity::Failure),
                Some(m) if m < 10.0 => Some(Severity::Warning),
                _ => None,
            };
            let flag_severity = findings.first().map(|(s, _)| *s).filter(|s| *s > Severity::Note);
            let severity = flag_severity.max(margin_severity);
            let unit_title = channel_title(&worst_unit.channel);
            let margin_text = match margin {
                Some(m) => format!("{unit_title}: {m:.1} K of margin on the latest run."),
                None => format!("{unit_title}: no limit known."),
            };
            let headline = match findings.first() {
                Some((s, message)) if *s > Severity::Note => message.clone(),
                _ => margin_text.clone(),
            };
            let trend_text = match (worst_unit.margin_slope_k_per_run, worst_unit.margin_slope_k_per_hour) {
                (Some(per_run), Some(per_hour)) if worst_unit.points.len() >= 2 => {
                    format!("{unit_title} margin {per_run:+.1} K per run, {per_hour:+.0} K per hour of running")
                }
                _ => "one run so far: no trend yet".into(),
            };
            let count = units.len();
            let degrading: Vec<String> = trends
                .flags
                .iter()
                .filter(|f| f.part == Some(role) && f.code == "part-degrading")
                .map(|f| f.message.clone())
                .collect();
            PartHealth {
                rank: (severity.map_or(0, |s| s as u8 + 1), margin.map_or(i64::MAX, |m| (m * 10.0) as i64)),
                severity: severity.map_or("ok", severity_word),
                title: if count > 1 { format!("{} ({count} logged)", role.title()) } else { role.title().to_string() },
                headline,
                latest_margin: margin.map(|m| format!("{m:.1} K ({unit_title})")).unwrap_or_else(|| "—".into()),
                trend: trend_text,
                running: format!(
                    "{} running, {} hot (above 80 % of the way to its limit)",
                    duration_text(worst_unit.running_time_s),
                    duration_text(units.iter().map(|u| u.hot_time_s).fold(0.0, f64::max))
                ),
                degrading,
                details: std::iter::once(margin_text).chain(findings.into_iter().map(|(_, m)| m)).collect(),
            }
        })
        .collect();
    // Worst first; among equals the smallest margin first.
    parts.sort_by(|a, b| b.rank.0.cmp(&a.rank.0).then(a.rank.1.cmp(&b.rank.1)));
    let build_flags = trends
        .flags
        .iter()
        .filter(|f| f.part.is_none())
        .map(|f| {
            (
                f.code.to_string(),
                severity_word(f.severity),
                f.message.clone(),
            )
        })
        .collect();
    BuildHealth {
        revision: revision.to_string(),
        run_count: digests.len(),
        parts,
        build_flags,
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

/// Charts across runs, oldest first, one category per run labelled by revision and run id.
pub fn build_charts(slug: &str, digests: &[RunDigest]) -> Vec<ChartView> {
    if digests.is_empty() {
        return Vec::new();
    }
    let labels: Vec<String> = digests
        .iter()
        .map(|d| format!("{} #{}", d.trend.revision_label, d.trend.run_id))
        .collect();
    let mut revision_marks = Vec::new();
    for (i, d) in digests.iter().enumerate() {
        if i == 0 || digests[i - 1].trend.revision_label != d.trend.revision_label {
            revision_marks.push(XMarker {
                label: d.trend.revision_label.clone(),
                x: i as f64,
            });
        }
    }
    // Per role, the worst unit of each run.
    let per_role = |value: &dyn Fn(&crate::analysis::trends::PartRunSummary) -> Option<f64>,
                    worst_is_min: bool| {
        let mut by_role: BTreeMap<Role, Vec<(f64, f64)>> = BTreeMap::new();
        for (i, d) in digests.iter().enumerate() {
            let mut best: BTreeMap<Role, f64> = BTreeMap::new();
            for p in &d.trend.parts {
                if let Some(v) = value(p) {
                    let e = best.entry(p.part).or_insert(v);
                    *e = if worst_is_min { e.min(v) } else { e.max(v) };
                }
            }
            for (role, v) in best {
                by_role.entry(role).or_default().push((i as f64, v));
            }
        }
        by_role
            .into_iter()
            .enumerate()
            .map(|(k, (role, points))| Series {
                label: role.title().into(),
                points,
                style: SeriesStyle::LineAndPoints,
                marker: MARKERS[k % 6],
                colour_index: k,
            })
            .collect::<Vec<_>>()
    };
    let chart = |id: &str, title: &str, y_label: &str, series: Vec<Series>| {
        let chart = LineChart {
            title: title.into(),
            x_label: "run (revision #run)".into(),
            y_label: y_label.into(),
            series,
            thresholds: Vec::new(),
            x_markers: revision_marks.clone(),
            x_format: AxisFormat::Category(labels.clone()),
            y_min: None,
            y_max: None,
            id: format!("{slug}-{id}"),
        };
        ChartView {
            id: chart.id.clone(),
            title: chart.title.clone(),
            svg: render_line_chart(&chart),
            table: chart_table_rows(&chart),
        }
    };
    let series_of = |label: &str, k: usize, f: &dyn Fn(&RunDigest) -> Option<f64>| Series {
        label: label.into(),
        points: digests
            .iter()
            .enumerate()
            .filter_map(|(i, d)| Some((i as f64, f(d)?)))
            .collect(),
        style: SeriesStyle::LineAndPoints,
        marker: MARKERS[k % 6],
        colour_index: k,
    };
    vec![
        chart(
            "margins",
            "Margin to the limit, worst unit of each part",
            "margin (K)",
            per_role(&|p| p.margin_k, true),
        ),
        chart(
            "rise-per-watt",
            "Temperature rise per watt of loss",
            "rise per watt (K/W)",
            per_role(
                &|p| {
                    p.rise_k
                        .zip(p.loss_w)
                        .and_then(|(r, w)| (w > 0.0).then(|| r / w))
                },
                false,
            ),
        ),
        chart(
            "efficiency",
            "Efficiency by method",
            "efficiency (%)",
            vec![
                series_of("calorimetric", 0, &|d| {
                    d.efficiency.calorimetric.map(|e| e * 100.0)
                }),
                series_of("differential", 1, &|d| {
                    d.efficiency.differential.map(|e| e * 100.0)
                }),
                series_of("model", 2, &|d| d.efficiency.model.map(|e| e * 100.0)),
            ],
        ),
        chart(
            "frequency",
            "Operating frequency",
            "frequency (kHz)",
            vec![series_of("frequency", 0, &|d| {
                d.frequency_hz.map(|f| f / 1e3)
            })],
        ),
        chart(
            "capacitance",
            "Tank capacitance inferred from frequency",
            "capacitance (µF)",
            vec![series_of("inferred capacitance", 1, &|d| {
                d.inferred_tank_capacitance_f.map(|c| c * 1e6)
            })],
        ),
    ]
}
