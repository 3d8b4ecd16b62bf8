//! Trends across a build's runs: margin and rise per watt per part, capacitance drift,
//! running and hot time, and the `part-degrading` flag.
//!
//! A part that loses margin run after run on the same revision, or whose rise per watt of loss
//! grows (a rising thermal resistance at the same loss), is degrading; a
//! tank capacitance that drifts one way run after run is a capacitor on its way to failing
//! [practice]. Degradation is judged within one revision, where the parts are the same.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::analysis::flags::{Flag, Severity};
use crate::analysis::hot_time::hot_time_s;
use crate::analysis::model::ModelReport;
use crate::analysis::reading::Reading;
use crate::analysis::run::RunAnalysis;
use crate::analysis::series::{least_squares_line, samples};
use crate::analysis::slope_range::{SlopeRange, slope_range};
use crate::channel::Channel;
use crate::parts::Role;
use crate::units::signed;

/// Runs of one revision needed before a trend counts.
pub const MIN_RUNS_FOR_TREND: usize = 3;
/// Running time a margin trend needs before it is stated [practice: a rate per hour taken from
/// minutes of running is an extrapolation, not a measurement].
pub const MIN_RUNNING_S_FOR_TREND: f64 = 1800.0;
/// Running time before a trend is also stated per hour of running [practice, as above].
pub const MIN_RUNNING_S_FOR_HOURLY: f64 = 3600.0;
/// Total loss of margin over those runs that counts as degrading [practice: beyond the scatter of
/// hand-held readings].
pub const DEGRADING_MARGIN_DROP_K: f64 = 2.0;
/// Total growth of the rise per watt that counts as degrading [practice].
pub const DEGRADING_RISE_PER_WATT_GROWTH: f64 = 0.10;
/// Total one-way drift of the inferred capacitance that counts as degrading [practice].
pub const DEGRADING_CAPACITANCE_DRIFT: f64 = 0.02;

/// One part channel in one run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PartRunSummary {
    pub channel: String,
    pub part: Role,
    pub t_max_c: f64,
    pub limit_c: Option<f64>,
    pub margin_k: Option<f64>,
    /// The model's loss in this part, when it predicts one.
    pub loss_w: Option<f64>,
    /// t_max − ambient.
    pub rise_k: Option<f64>,
    /// Seconds above 80 % of the way from ambient to the limit (see `hot_time`).
    pub hot_time_s: f64,
}

/// What trends need of one run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunSummary {
    pub run_id: i64,
    pub revision_label: String,
    pub started_at_unix_s: i64,
    pub duration_s: f64,
    pub parts: Vec<PartRunSummary>,
    /// (C_inferred − C_nominal)/C_nominal from the model.
    pub inferred_capacitance_drift: Option<f64>,
}

/// One run on a part's trend.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrendPoint {
    pub run_id: i64,
    pub revision_label: String,
    /// The build's running time up to the end of this run.
    pub cumulative_running_s: f64,
    pub margin_k: Option<f64>,
    pub rise_per_watt_k_per_w: Option<f64>,
}

/// A part channel's history across the build's runs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PartTrend {
    pub channel: String,
    pub part: Role,
    pub points: Vec<TrendPoint>,
    /// The margin's trend, stated only when the runs support one.
    pub margin_trend: MarginTrend,
    pub rise_per_watt_slope_k_per_w_per_run: Option<f64>,
    /// Running time of the runs that recorded this channel.
    pub running_time_s: f64,
    pub hot_time_s: f64,
}

/// A margin trend with its 95 % ranges, or why none is stated.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "status", rename_all = "snake_case")]
pub enum MarginTrend {
    /// Fewer than [`MIN_RUNS_FOR_TREND`] runs with a margin, or less running than
    /// [`MIN_RUNNING_S_FOR_TREND`].
    NotEnoughData { runs: usize, running_s: f64 },
    Stated {
        runs: usize,
        running_s: f64,
        /// K per run, least squares against the run's place in the build, with its 95 % range.
        #[serde(serialize_with = "range_json")]
        per_run_k: SlopeRange,
        /// K per hour of running, only after [`MIN_RUNNING_S_FOR_HOURLY`].
        #[serde(serialize_with = "optional_range_json")]
        per_hour_k: Option<SlopeRange>,
    },
}

fn range_json<S: serde::Serializer>(r: &SlopeRange, s: S) -> Result<S::Ok, S::Error> {
    [r.low(), r.slope, r.high()].serialize(s)
}

fn optional_range_json<S: serde::Serializer>(
    r: &Option<SlopeRange>,
    s: S,
) -> Result<S::Ok, S::Error> {
    r.map(|r| [r.low(), r.slope, r.high()]).serialize(s)
}

impl MarginTrend {
    /// The trend in words with its range, or why there is none yet.
    pub fn text(&self) -> String {
        let minutes = |s: f64| (s / 60.0).round();
        match self {
            MarginTrend::NotEnoughData { runs, running_s } => format!(
                "No trend yet: {runs} run{} and {:.0} min of running; a trend needs at least \
                 {MIN_RUNS_FOR_TREND} runs and {:.0} min.",
                if *runs == 1 { "" } else { "s" },
                minutes(*running_s),
                minutes(MIN_RUNNING_S_FOR_TREND),
            ),
            MarginTrend::Stated {
                runs,
                per_run_k,
                per_hour_k,
                ..
            } => {
                let range = |r: &SlopeRange, per: &str| {
                    format!(
                        "{}\u{a0}K {per} (95\u{a0}% range {} to {})",
                        signed(r.slope, 1),
                        signed(r.low(), 1),
                        signed(r.high(), 1)
                    )
                };
                let hourly = per_hour_k.map_or_else(
                    || ". No rate per hour yet: less than an hour of running".to_string(),
                    |r| format!(", {}", range(&r, "per hour of running")),
                );
                let unclear = if per_run_k.excludes_zero() {
                    ""
                } else {
                    " The range includes zero: no clear change yet."
                };
                format!(
                    "Margin {} over {runs} runs{hourly}.{unclear}",
                    range(per_run_k, "per run")
                )
            }
        }
    }
}

/// The margin trend of a part's history: stated with its ranges once there are enough runs and
/// running time.
fn margin_trend(history: &[Sample]) -> MarginTrend {
    let per_run: Vec<(f64, f64)> = history
        .iter()
        .filter_map(|s| Some((s.ordinal, s.part.margin_k?)))
        .collect();
    let running_s: f64 = history.iter().map(|s| s.run.duration_s.max(0.0)).sum();
    let runs = per_run.len();
    let stated = (runs >= MIN_RUNS_FOR_TREND && running_s >= MIN_RUNNING_S_FOR_TREND)
        .then(|| slope_range(&per_run))
        .flatten();
    match stated {
        Some(per_run_k) => MarginTrend::Stated {
            runs,
            running_s,
            per_run_k,
            per_hour_k: (running_s >= MIN_RUNNING_S_FOR_HOURLY)
                .then(|| {
                    let per_hour: Vec<(f64, f64)> = history
                        .iter()
                        .filter_map(|s| Some((s.cumulative_s / 3600.0, s.part.margin_k?)))
                        .collect();
                    slope_range(&per_hour)
                })
                .flatten(),
        },
        None => MarginTrend::NotEnoughData { runs, running_s },
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BuildTrends {
    pub running_time_s: f64,
    pub parts: Vec<PartTrend>,
    pub flags: Vec<Flag>,
}

/// Thermal resistance seen by the part in this run: rise over loss, K/W [derived: steady
/// first-order model, ΔT = P·R_th].
pub fn rise_per_watt_k_per_w(rise_k: f64, loss_w: f64) -> Option<f64> {
    (loss_w > 0.0 && rise_k.is_finite()).then(|| rise_k / loss_w)
}

/// The model's loss in ONE part of `role` (one capacitor of the bank, one choke, one switch):
/// the heat behind that part's temperature rise. Equal units share the bank's and the chokes'
/// losses equally (current divides in proportion to capacitance).
pub fn part_loss_w(model: &ModelReport, parts: &crate::parts::Parts, role: Role) -> Option<f64> {
    let per_unit = |total: Option<f64>, count: u32| total.map(|w| w / f64::from(count.max(1)));
    match role {
        Role::Switch => model.switch_conduction_loss_w,
        Role::TankCapacitor => per_unit(model.capacitor_loss_w, parts.quantity(role)),
        Role::Choke => per_unit(model.choke_dc_loss_w, parts.quantity(role)),
        Role::WorkCoil => model.coil_copper_loss_w,
        Role::GateResistor => model.gate_resistor_power_w,
        _ => None,
    }
}

/// A run's summary for trends, from its analysis and readings. Hot time is judged from the
/// run's median ambient, else from the channel's first reading (a cold start sits at ambient).
pub fn summarise_run(
    run_id: i64,
    revision_label: &str,
    started_at_unix_s: i64,
    parts: &crate::parts::Parts,
    readings: &[Reading],
    analysis: &RunAnalysis,
) -> RunSummary {
    let ambient_c = analysis
        .operating_point
        .as_ref()
        .and_then(|op| op.ambient_c);
    let parts = analysis
        .thermal
        .iter()
        .map(|t| {
            let channel_samples = t
                .channel
                .parse::<Channel>()
                .map(|c| samples(readings, c))
                .unwrap_or_default();
            let start_c = ambient_c.or(channel_samples.first().map(|s| s.1));
            let hot = t
                .limit_c
                .zip(start_c)
                .map_or(0.0, |(limit, amb)| hot_time_s(&channel_samples, limit, amb));
            PartRunSummary {
                channel: t.channel.clone(),
                part: t.part,
                t_max_c: t.t_max_c,
                limit_c: t.limit_c,
                margin_k: t.margin_k,
                loss_w: analysis
                    .model
                    .as_ref()
                    .and_then(|m| part_loss_w(m, parts, t.part)),
                rise_k: ambient_c.map(|a| t.t_max_c - a),
                hot_time_s: hot,
            }
        })
        .collect();
    RunSummary {
        run_id,
        revision_label: revision_label.to_string(),
        started_at_unix_s,
        duration_s: analysis.duration_s.unwrap_or(0.0),
        parts,
        inferred_capacitance_drift: analysis.model.as_ref().and_then(|m| m.capacitance_drift),
    }
}

/// One part's value in one run, with where the run sits in the build.
struct Sample<'a> {
    ordinal: f64,
    cumulative_s: f64,
    run: &'a RunSummary,
    part: &'a PartRunSummary,
}

/// Trends of a build's runs, given in any order (sorted here by start time, then id).
pub fn build_trends(runs: &[RunSummary]) -> BuildTrends {
    let mut ordered: Vec<&RunSummary> = runs.iter().collect();
    ordered.sort_by_key(|r| (r.started_at_unix_s, r.run_id));
    let mut cumulative_s = 0.0;
    let mut by_channel: BTreeMap<(Role, String), Vec<Sample>> = BTreeMap::new();
    for (i, run) in ordered.iter().enumerate() {
        cumulative_s += run.duration_s.max(0.0);
        for part in &run.parts {
            by_channel
                .entry((part.part, part.channel.clone()))
                .or_default()
                .push(Sample {
                    ordinal: i as f64,
                    cumulative_s,
                    run,
                    part,
                });
        }
    }
    let mut flags = Vec::new();
    let parts = by_channel
        .into_iter()
        .map(|((role, channel), history)| {
            flags.extend(degrading_part_flags(role, &channel, &history));
            part_trend(role, channel, &history)
        })
        .collect();
    flags.extend(capacitance_drift_flags(&ordered));
    BuildTrends {
        running_time_s: cumulative_s,
        parts,
        flags: distinct_flags(flags),
    }
}

fn rise_per_watt(part: &PartRunSummary) -> Option<f64> {
    rise_per_watt_k_per_w(part.rise_k?, part.loss_w?)
}

fn slope(points: impl Iterator<Item = (f64, Option<f64>)>) -> Option<f64> {
    let points: Vec<(f64, f64)> = points.filter_map(|(x, y)| Some((x, y?))).collect();
    least_squares_line(&points).map(|l| l.slope)
}

fn part_trend(part: Role, channel: String, history: &[Sample]) -> PartTrend {
    PartTrend {
        margin_trend: margin_trend(history),
        rise_per_watt_slope_k_per_w_per_run: slope(
            history.iter().map(|s| (s.ordinal, rise_per_watt(s.part))),
        ),
        running_time_s: history.iter().map(|s| s.run.duration_s.max(0.0)).sum(),
        hot_time_s: history.iter().map(|s| s.part.hot_time_s).sum(),
        points: history
            .iter()
            .map(|s| TrendPoint {
                run_id: s.run.run_id,
                revision_label: s.run.revision_label.clone(),
                cumulative_running_s: s.cumulative_s,
                margin_k: s.part.margin_k,
                rise_per_watt_k_per_w: rise_per_watt(s.part),
            })
            .collect(),
        part,
        channel,
    }
}

/// Whether values (ordinal, value) in run order move steadily one way: at least three of them,
/// a least-squares slope of `direction`'s sign, and more than half of the steps that way.
fn steady_trend(values: &[(f64, f64)], direction: f64) -> bool {
    if values.len() < MIN_RUNS_FOR_TREND {
        return false;
    }
    let with_trend = values
        .windows(2)
        .filter(|w| (w[1].1 - w[0].1) * direction > 0.0)
        .count();
    let slope_ok = least_squares_line(values).is_some_and(|l| l.slope * direction > 0.0);
    slope_ok && 2 * with_trend > values.len() - 1
}

/// Groups a part's history by revision, keeping run order.
fn by_revision<'a>(history: &'a [Sample<'a>]) -> BTreeMap<&'a str, Vec<&'a Sample<'a>>> {
    let mut groups: BTreeMap<&str, Vec<&Sample>> = BTreeMap::new();
    for s in history {
        groups
            .entry(s.run.revision_label.as_str())
            .or_default()
            .push(s);
    }
    groups
}

fn degrading_part_flags(role: Role, channel: &str, history: &[Sample]) -> Vec<Flag> {
    let title = channel
        .parse::<Channel>()
        .map_or_else(|_| channel.to_string(), |c| c.title());
    let mut flags = Vec::new();
    for (revision, runs) in by_revision(history) {
        let margins: Vec<(f64, f64)> = runs
            .iter()
            .filter_map(|s| Some((s.ordinal, s.part.margin_k?)))
            .collect();
        if let (Some(first), Some(last)) = (margins.first(), margins.last()) {
            let drop_k = first.1 - last.1;
            if steady_trend(&margins, -1.0) && drop_k > DEGRADING_MARGIN_DROP_K {
                flags.push(degrading(
                    role,
                    format!(
                        "{title}: margin fell from {:.1} K to {:.1} K over {} runs of {revision}.",
                        first.1,
                        last.1,
                        margins.len()
                    ),
                ));
            }
        }
        let rpw: Vec<(f64, f64)> = runs
            .iter()
            .filter_map(|s| Some((s.ordinal, rise_per_watt(s.part)?)))
            .collect();
        if let (Some(first), Some(last)) = (rpw.first(), rpw.last()) {
            let growth = (last.1 - first.1) / first.1;
            let rising = first.1 > 0.0 && steady_trend(&rpw, 1.0);
            if rising && growth > DEGRADING_RISE_PER_WATT_GROWTH {
                flags.push(degrading(role, format!(
                    "{title}: rise per watt grew from {:.2} to {:.2} K/W over {} runs of {revision} \
                     (a rising thermal resistance at the same loss).",
                    first.1, last.1, rpw.len()
                )));
            }
        }
    }
    flags
}

/// Inferred capacitance moving one way in every step over ≥ 3 runs of a revision, > 2 % in all.
fn capacitance_drift_flags(ordered: &[&RunSummary]) -> Vec<Flag> {
    let mut groups: BTreeMap<&str, Vec<f64>> = BTreeMap::new();
    for run in ordered {
        if let Some(d) = run.inferred_capacitance_drift.filter(|d| d.is_finite()) {
            groups
                .entry(run.revision_label.as_str())
                .or_default()
                .push(d);
        }
    }
    groups
        .into_iter()
        .filter_map(|(revision, drifts)| {
            let steps: Vec<f64> = drifts.windows(2).map(|w| w[1] - w[0]).collect();
            let monotonic = steps.iter().all(|s| *s > 0.0) || steps.iter().all(|s| *s < 0.0);
            let total = drifts.last()? - drifts.first()?;
            (drifts.len() >= MIN_RUNS_FOR_TREND
                && monotonic
                && total.abs() > DEGRADING_CAPACITANCE_DRIFT)
                .then(|| {
                    degrading(Role::TankCapacitor, format!(
                        "Inferred tank capacitance drifted {:+.1} % to {:+.1} % of nominal over {} runs of {revision}.",
                        100.0 * drifts[0],
                        100.0 * drifts[drifts.len() - 1],
                        drifts.len()
                    ))
                })
        })
        .collect()
}

fn degrading(part: Role, message: String) -> Flag {
    Flag {
        code: "part-degrading",
        severity: Severity::Warning,
        part: Some(part),
        message,
        source: "Common practice: a part losing margin or drifting run after run on the same revision \
                 is wearing out",
    }
}

#[cfg(test)]
#[path = "trends_tests.rs"]
mod tests;

/// Worst first, each finding once. Unlike a run's flags, two `part-degrading` findings about one
/// part (a falling margin and a drifting capacitance) are different evidence: both are kept.
fn distinct_flags(mut flags: Vec<Flag>) -> Vec<Flag> {
    flags.sort_by_key(|f| std::cmp::Reverse(f.severity));
    let mut seen = std::collections::HashSet::new();
    flags.retain(|f| seen.insert((f.code, f.part, f.message.clone())));
    flags
}
