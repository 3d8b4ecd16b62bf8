//! The two axes of a chart: the span each covers and its labelled ticks, per axis format.

use super::format::{format_date, minutes_seconds_tick_labels, plain_tick_labels};
use super::model::AxisFormat;
use super::scale::{
    Step, default_flat_padding, nice_step, nice_ticks, ticks_covering, widen_if_flat,
};

#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Tick {
    pub value: f64,
    pub label: String,
}

#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Axis {
    pub domain: (f64, f64),
    pub ticks: Vec<Tick>,
}

/// Readable tick steps for elapsed time, in seconds: whole minutes and hours rather than 1-2-5.
const TIME_STEPS_S: [i64; 19] = [
    1, 2, 5, 10, 15, 20, 30, 60, 120, 300, 600, 900, 1200, 1800, 3600, 7200, 10_800, 21_600, 43_200,
];
/// Readable tick steps for dates, in days: days, a week, a fortnight, about a month and a quarter.
const DATE_STEPS_DAYS: [i64; 7] = [1, 2, 7, 14, 28, 91, 182];
const SECONDS_PER_DAY: i64 = 86_400;
/// A flat time axis (one reading) is widened by at least this much each side.
const MIN_TIME_PADDING_S: f64 = 30.0;

/// Room one x tick label needs, in viewBox units, before the next may start.
const X_TICK_SPACING: f64 = 80.0;
/// Room one y tick needs vertically.
const Y_TICK_SPACING: f64 = 50.0;

/// The y axis: fitted to `data_range` (data and thresholds) with nice ends, unless the caller
/// fixed an end. A fixed pair that is empty or reversed is ignored.
pub(crate) fn y_axis(
    data_range: Option<(f64, f64)>,
    fixed_min: Option<f64>,
    fixed_max: Option<f64>,
    plot_height: f64,
) -> Axis {
    let target = tick_target(plot_height, Y_TICK_SPACING);
    let (lo, hi) = data_range.unwrap_or((0.0, 1.0));
    let fitted = nice_ticks(lo, hi, target);
    let fitted_domain = (fitted.values[0], fitted.values[fitted.values.len() - 1]);
    let domain = (
        fixed_min
            .filter(|v| v.is_finite())
            .unwrap_or(fitted_domain.0),
        fixed_max
            .filter(|v| v.is_finite())
            .unwrap_or(fitted_domain.1),
    );
    if domain == fitted_domain || domain.0 >= domain.1 {
        return plain_axis(fitted_domain, fitted.values, fitted.step);
    }
    let ticks = nice_ticks(domain.0, domain.1, target);
    let inside = within(domain, ticks.values);
    plain_axis(domain, inside, ticks.step)
}

/// The x axis for `format`, fitted to `data_range` (data and x markers).
pub(crate) fn x_axis(format: &AxisFormat, data_range: Option<(f64, f64)>, plot_width: f64) -> Axis {
    let (lo, hi) = data_range.unwrap_or((0.0, 1.0));
    let target = tick_target(plot_width, X_TICK_SPACING);
    match format {
        AxisFormat::Plain => {
            let ticks = nice_ticks(lo, hi, target);
            let domain = (ticks.values[0], ticks.values[ticks.values.len() - 1]);
            plain_axis(domain, ticks.values, ticks.step)
        }
        AxisFormat::MinutesSeconds => {
            let padding = default_flat_padding(lo).max(MIN_TIME_PADDING_S);
            let (lo, hi) = widen_if_flat(lo, hi, padding);
            let step = time_step((hi - lo) / target as f64);
            let values = ticks_covering(lo, hi, step);
            let labels = minutes_seconds_tick_labels(&values, step.size());
            labelled_axis(values, labels)
        }
        AxisFormat::Date => {
            let (lo, hi) = widen_if_flat(lo, hi, SECONDS_PER_DAY as f64);
            let step = date_step((hi - lo) / target as f64);
            let values = ticks_covering(lo, hi, step);
            let labels = values.iter().map(|v| format_date(*v)).collect();
            labelled_axis(values, labels)
        }
        AxisFormat::Category(labels) => category_axis(labels, hi, plot_width),
    }
}

/// One slot per category, each centred on its index, labelled every so many categories so that
/// labels do not overlap.
fn category_axis(labels: &[String], highest_index: f64, plot_width: f64) -> Axis {
    let from_data = if highest_index.is_finite() && highest_index >= 0.0 {
        highest_index.round() as usize + 1
    } else {
        0
    };
    let count = labels.len().max(from_data).max(1);
    let widest = labels.iter().map(|l| l.chars().count()).max().unwrap_or(1);
    let label_room = widest as f64 * super::layout::CHAR_WIDTH + 12.0;
    let fits = ((plot_width / label_room).floor() as usize).max(1);
    let stride = count.div_ceil(fits);
    let ticks = (0..count)
        .step_by(stride)
        .map(|i| Tick {
            value: i as f64,
            label: super::format::category_label(labels, i as f64),
        })
        .collect();
    Axis {
        domain: (-0.5, count as f64 - 0.5),
        ticks,
    }
}

fn time_step(raw_s: f64) -> Step {
    if raw_s < 1.0 {
        return nice_step(raw_s);
    }
    if let Some(seconds) = TIME_STEPS_S.iter().find(|s| **s as f64 >= raw_s) {
        return Step::whole(*seconds);
    }
    whole_multiple_of(nice_step(raw_s / 3600.0), 3600)
}

fn date_step(raw_s: f64) -> Step {
    let raw_days = raw_s / SECONDS_PER_DAY as f64;
    if let Some(days) = DATE_STEPS_DAYS.iter().find(|d| **d as f64 >= raw_days) {
        return Step::whole(days * SECONDS_PER_DAY);
    }
    whole_multiple_of(nice_step(raw_days / 365.0), 365 * SECONDS_PER_DAY)
}

/// `step × unit` as a whole step; steps under one unit round up to one unit.
fn whole_multiple_of(step: Step, unit: i64) -> Step {
    let units = step.size().ceil().max(1.0) as i64;
    Step::whole(units * unit)
}

fn tick_target(length: f64, spacing: f64) -> usize {
    ((length / spacing).floor() as usize).clamp(2, 10)
}

fn within(domain: (f64, f64), values: Vec<f64>) -> Vec<f64> {
    let slack = (domain.1 - domain.0) * 1e-9;
    values
        .into_iter()
        .filter(|v| *v >= domain.0 - slack && *v <= domain.1 + slack)
        .collect()
}

fn plain_axis(domain: (f64, f64), values: Vec<f64>, step: f64) -> Axis {
    let labels = plain_tick_labels(&values, step);
    Axis {
        domain,
        ticks: values
            .into_iter()
            .zip(labels)
            .map(|(value, label)| Tick { value, label })
            .collect(),
    }
}

fn labelled_axis(values: Vec<f64>, labels: Vec<String>) -> Axis {
    let domain = (values[0], values[values.len() - 1]);
    Axis {
        domain,
        ticks: values
            .into_iter()
            .zip(labels)
            .map(|(value, label)| Tick { value, label })
            .collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn labels(axis: &Axis) -> Vec<&str> {
        axis.ticks.iter().map(|t| t.label.as_str()).collect()
    }

    #[test]
    fn run_time_ticks_fall_on_whole_minutes() {
        let axis = x_axis(&AxisFormat::MinutesSeconds, Some((0.0, 290.0)), 480.0);
        assert_eq!(
            labels(&axis),
            vec!["0:00", "1:00", "2:00", "3:00", "4:00", "5:00"]
        );
        assert_eq!(axis.domain, (0.0, 300.0));
    }

    #[test]
    fn long_runs_tick_in_hours() {
        let axis = x_axis(&AxisFormat::MinutesSeconds, Some((0.0, 40_000.0)), 480.0);
        assert_eq!(axis.ticks[1].label, "2:00:00");
    }

    #[test]
    fn date_ticks_fall_on_midnights() {
        let start = 1_764_460_800.0; // 2025-11-30
        let axis = x_axis(
            &AxisFormat::Date,
            Some((start, start + 3.5 * 86_400.0)),
            480.0,
        );
        assert_eq!(
            labels(&axis),
            vec!["11-30", "12-01", "12-02", "12-03", "12-04"]
        );
    }

    #[test]
    fn one_date_is_widened_to_days_not_years() {
        let day = 1_764_460_800.0 + 3600.0;
        let axis = x_axis(&AxisFormat::Date, Some((day, day)), 480.0);
        assert!(axis.domain.1 - axis.domain.0 <= 3.0 * 86_400.0, "{axis:?}");
    }

    #[test]
    fn category_ticks_label_each_run() {
        let runs: Vec<String> = ["r1 #1", "r1 #2", "r2 #5"].map(String::from).to_vec();
        let axis = x_axis(&AxisFormat::Category(runs), Some((0.0, 2.0)), 480.0);
        assert_eq!(labels(&axis), vec!["r1 #1", "r1 #2", "r2 #5"]);
        assert_eq!(axis.domain, (-0.5, 2.5));
    }

    #[test]
    fn many_categories_are_labelled_sparsely() {
        let runs: Vec<String> = (0..60).map(|i| format!("r3 #{i}")).collect();
        let axis = x_axis(&AxisFormat::Category(runs), Some((0.0, 59.0)), 480.0);
        assert!(axis.ticks.len() < 15, "{} labels", axis.ticks.len());
        assert_eq!(axis.ticks[0].label, "r3 #0");
    }

    #[test]
    fn fixed_y_ends_are_kept_exactly() {
        let axis = y_axis(Some((23.1, 61.0)), Some(0.0), Some(120.0), 250.0);
        assert_eq!(axis.domain, (0.0, 120.0));
        assert!(
            axis.ticks
                .iter()
                .all(|t| t.value >= 0.0 && t.value <= 120.0)
        );
    }

    #[test]
    fn reversed_fixed_y_ends_are_ignored() {
        let axis = y_axis(Some((23.1, 61.0)), Some(90.0), Some(10.0), 250.0);
        assert_eq!(axis.domain, (20.0, 70.0));
    }
}
