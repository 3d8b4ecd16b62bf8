//! Nice tick values and the linear map from data values to viewBox units.
//!
//! Ticks step by 1, 2 or 5 times a power of ten, and the axis is widened to whole steps so the
//! first and last gridlines sit on the ends of the axis.

/// Tick values chosen for an axis, with the step between them.
#[derive(Debug, Clone, PartialEq)]
pub struct Ticks {
    pub values: Vec<f64>,
    pub step: f64,
}

/// A tick step of `multiple × 10^exponent`, kept as integers so that tick values come out as the
/// closest floating-point number to the decimal (0.3, not 0.30000000000000004).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Step {
    pub multiple: i64,
    pub exponent: i32,
}

impl Step {
    pub fn whole(multiple: i64) -> Self {
        Self {
            multiple,
            exponent: 0,
        }
    }

    pub fn size(self) -> f64 {
        self.nth(1)
    }

    fn nth(self, k: i64) -> f64 {
        let units = (k * self.multiple) as f64;
        if self.exponent >= 0 {
            units * 10f64.powi(self.exponent)
        } else {
            units / 10f64.powi(-self.exponent)
        }
    }
}

/// An axis never gets more gridlines than this, whatever the caller asks.
const MAX_TICKS: i64 = 200;

/// Tolerance when deciding whether a value already sits on a tick, relative to the step.
const ON_TICK_EPSILON: f64 = 1e-9;

/// Nice ticks covering `lo..=hi` with about `target_count` intervals.
///
/// The ends are widened to whole steps; a zero-width range is first padded by 10 % of its value
/// (or by 1 around zero); non-finite input falls back to 0–1.
pub fn nice_ticks(lo: f64, hi: f64, target_count: usize) -> Ticks {
    let (lo, hi) = widen_if_flat(lo, hi, default_flat_padding(lo));
    let (lo, hi) = at_least_relative_span(lo, hi);
    let step = nice_step((hi - lo) / target_count.max(1) as f64);
    Ticks {
        values: ticks_covering(lo, hi, step),
        step: step.size(),
    }
}

/// The narrowest axis, relative to the size of its values. A range narrower than this is the
/// scatter of a fit or a reading's last digit; ticks finer than it would print five or more
/// significant figures the data does not support. A tenth of a percent of drift (of frequency or
/// capacitance) still fills the axis.
const MIN_RELATIVE_SPAN: f64 = 1e-3;

/// `lo..hi` widened about its middle to at least [`MIN_RELATIVE_SPAN`] of its magnitude.
fn at_least_relative_span(lo: f64, hi: f64) -> (f64, f64) {
    let least = lo.abs().max(hi.abs()) * MIN_RELATIVE_SPAN;
    if hi - lo >= least {
        return (lo, hi);
    }
    let middle = (lo + hi) / 2.0;
    (middle - least / 2.0, middle + least / 2.0)
}

/// Ordered, finite and not flat: what every scale needs before choosing a step.
pub(crate) fn widen_if_flat(lo: f64, hi: f64, padding: f64) -> (f64, f64) {
    if !lo.is_finite() || !hi.is_finite() {
        return (0.0, 1.0);
    }
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let magnitude = lo.abs().max(hi.abs());
    if hi - lo <= magnitude * 1e-9 {
        let middle = (lo + hi) / 2.0;
        (middle - padding, middle + padding)
    } else {
        (lo, hi)
    }
}

/// Padding for a flat range of plain numbers: 10 % of the value, or 1 around zero.
pub(crate) fn default_flat_padding(value: f64) -> f64 {
    if value == 0.0 || !value.is_finite() {
        1.0
    } else {
        value.abs() / 10.0
    }
}

/// The smallest step of 1, 2 or 5 × 10^n that is at least `raw`.
pub(crate) fn nice_step(raw: f64) -> Step {
    if !raw.is_finite() || raw <= 0.0 {
        return Step::whole(1);
    }
    let mut exponent = raw.log10().floor() as i32;
    loop {
        for multiple in [1, 2, 5] {
            let step = Step { multiple, exponent };
            if step.size() >= raw * (1.0 - ON_TICK_EPSILON) {
                return step;
            }
        }
        exponent += 1;
    }
}

/// Multiples of `step` from the last one at or below `lo` to the first one at or above `hi`.
pub(crate) fn ticks_covering(lo: f64, hi: f64, step: Step) -> Vec<f64> {
    let size = step.size();
    let first = (lo / size + ON_TICK_EPSILON).floor() as i64;
    let last = (hi / size - ON_TICK_EPSILON).ceil() as i64;
    let last = last.max(first + 1).min(first + MAX_TICKS);
    (first..=last).map(|k| step.nth(k)).collect()
}

/// Maps a data interval onto a viewBox interval; the output interval may run backwards (y axes).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct LinearScale {
    pub domain: (f64, f64),
    pub range: (f64, f64),
}

impl LinearScale {
    pub fn map(&self, value: f64) -> f64 {
        let (d0, d1) = self.domain;
        let (r0, r1) = self.range;
        r0 + (value - d0) / (d1 - d0) * (r1 - r0)
    }

    pub fn contains(&self, value: f64) -> bool {
        let (d0, d1) = self.domain;
        value >= d0.min(d1) && value <= d0.max(d1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A step is nice when it is 1, 2 or 5 times a power of ten.
    fn is_nice_step(step: f64) -> bool {
        let mantissa = step / 10f64.powf(step.log10().floor());
        [1.0, 2.0, 5.0, 10.0]
            .iter()
            .any(|m| (mantissa - m).abs() < 1e-9)
    }

    fn assert_nice_cover(lo: f64, hi: f64, ticks: &Ticks) {
        assert!(is_nice_step(ticks.step), "step {} is not 1-2-5", ticks.step);
        assert!(
            ticks.values.len() >= 2 && ticks.values.len() <= 12,
            "{ticks:?}"
        );
        assert!(ticks.values[0] <= lo, "first tick above {lo}: {ticks:?}");
        assert!(
            *ticks.values.last().unwrap() >= hi,
            "last tick below {hi}: {ticks:?}"
        );
        for value in &ticks.values {
            let steps = value / ticks.step;
            assert!(
                (steps - steps.round()).abs() < 1e-9,
                "{value} not on a step"
            );
        }
    }

    #[test]
    fn zero_to_one_steps_by_a_fifth() {
        let ticks = nice_ticks(0.0, 1.0, 5);
        assert_eq!(ticks.values, vec![0.0, 0.2, 0.4, 0.6, 0.8, 1.0]);
        assert_nice_cover(0.0, 1.0, &ticks);
    }

    #[test]
    fn zero_to_seven_point_three_steps_by_two() {
        let ticks = nice_ticks(0.0, 7.3, 5);
        assert_eq!(ticks.values, vec![0.0, 2.0, 4.0, 6.0, 8.0]);
    }

    #[test]
    fn bench_temperatures_step_by_twenty() {
        let ticks = nice_ticks(23.1, 87.9, 5);
        assert_eq!(ticks.values, vec![20.0, 40.0, 60.0, 80.0, 100.0]);
        assert_nice_cover(23.1, 87.9, &ticks);
    }

    #[test]
    fn tank_frequencies_step_by_two_thousand() {
        let ticks = nice_ticks(150_000.0, 160_000.0, 5);
        assert_eq!(ticks.step, 2000.0);
        assert_eq!(ticks.values.first(), Some(&150_000.0));
        assert_eq!(ticks.values.last(), Some(&160_000.0));
        assert_nice_cover(150_000.0, 160_000.0, &ticks);
    }

    #[test]
    fn negative_ranges_are_covered() {
        let ticks = nice_ticks(-7.3, -0.2, 5);
        assert_eq!(ticks.values, vec![-8.0, -6.0, -4.0, -2.0, 0.0]);
        let across_zero = nice_ticks(-12.0, 31.0, 5);
        assert_nice_cover(-12.0, 31.0, &across_zero);
        assert!(across_zero.values.contains(&0.0));
    }

    #[test]
    fn decimal_ticks_are_exact_decimals() {
        let ticks = nice_ticks(0.1, 0.7, 6);
        assert_eq!(ticks.values, vec![0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7]);
    }

    #[test]
    fn a_range_under_a_thousandth_of_its_size_is_widened_to_four_figures() {
        let scatter = nice_ticks(0.88003, 0.88017, 5);
        assert!(scatter.step >= 1e-4, "step {}", scatter.step);
        assert_nice_cover(0.88003, 0.88017, &scatter);
        let drift = nice_ticks(125_500.0, 125_900.0, 5);
        assert_eq!(drift.step, 100.0, "a 0.3 % drift keeps its own scale");
    }

    #[test]
    fn zero_width_ranges_are_padded() {
        let flat = nice_ticks(25.0, 25.0, 5);
        assert_nice_cover(25.0, 25.0, &flat);
        assert!(flat.values[0] < 25.0 && *flat.values.last().unwrap() > 25.0);
        let at_zero = nice_ticks(0.0, 0.0, 5);
        assert!(at_zero.values[0] <= -1.0 && *at_zero.values.last().unwrap() >= 1.0);
    }

    #[test]
    fn reversed_and_non_finite_ranges_are_handled() {
        assert_eq!(nice_ticks(7.3, 0.0, 5), nice_ticks(0.0, 7.3, 5));
        assert_eq!(
            nice_ticks(f64::NAN, 3.0, 5).values,
            vec![0.0, 0.2, 0.4, 0.6, 0.8, 1.0]
        );
    }

    #[test]
    fn tick_count_stays_bounded() {
        assert!(nice_ticks(0.0, 1e12, 1_000_000).values.len() <= MAX_TICKS as usize + 1);
    }

    #[test]
    fn scale_maps_domain_ends_to_range_ends() {
        let y = LinearScale {
            domain: (20.0, 100.0),
            range: (300.0, 60.0),
        };
        assert_eq!(y.map(20.0), 300.0);
        assert_eq!(y.map(100.0), 60.0);
        assert_eq!(y.map(60.0), 180.0);
        assert!(y.contains(85.0) && !y.contains(101.0));
    }
}
