//! Small statistics over readings: per-channel samples, medians, least-squares lines.

use std::collections::BTreeSet;

use crate::analysis::reading::Reading;
use crate::channel::Channel;

/// The (time, value) samples of one channel, finite values only, sorted by time.
pub fn samples(readings: &[Reading], channel: Channel) -> Vec<(f64, f64)> {
    let mut out: Vec<(f64, f64)> = readings
        .iter()
        .filter(|r| r.channel == channel && r.t_s.is_finite() && r.value.is_finite())
        .map(|r| (r.t_s, r.value))
        .collect();
    out.sort_by(|a, b| a.0.total_cmp(&b.0));
    out
}

/// A series thinned to at most about `buckets` × 4 points for a chart, keeping every extreme:
/// the time span is cut into equal buckets and each keeps its first, lowest, highest and last
/// point (in time order), so a spike or a dip survives however many readings there are. A
/// series that is short already comes back as it is. `points` must be in time order.
pub fn decimate_min_max(points: &[(f64, f64)], buckets: usize) -> Vec<(f64, f64)> {
    if buckets == 0 || points.len() <= buckets * 4 {
        return points.to_vec();
    }
    let (start, end) = (points[0].0, points[points.len() - 1].0);
    let width = (end - start) / buckets as f64;
    if width <= 0.0 || !width.is_finite() {
        return points.to_vec();
    }
    let mut out = Vec::with_capacity(buckets * 4);
    let mut at = 0;
    while at < points.len() {
        let bucket = (((points[at].0 - start) / width) as usize).min(buckets - 1);
        let mut stop = at;
        while stop < points.len()
            && (((points[stop].0 - start) / width) as usize).min(buckets - 1) == bucket
        {
            stop += 1;
        }
        let span = &points[at..stop];
        let low = span.iter().min_by(|a, b| a.1.total_cmp(&b.1)).copied();
        let high = span.iter().max_by(|a, b| a.1.total_cmp(&b.1)).copied();
        let mut kept: Vec<(f64, f64)> = [Some(span[0]), low, high, Some(span[span.len() - 1])]
            .into_iter()
            .flatten()
            .collect();
        kept.sort_by(|a, b| a.0.total_cmp(&b.0));
        kept.dedup();
        out.extend(kept);
        at = stop;
    }
    out
}

/// The part-temperature channels that have at least one reading, in channel order.
pub fn part_channels(readings: &[Reading]) -> BTreeSet<Channel> {
    readings
        .iter()
        .filter(|r| r.channel.role().is_some() && r.value.is_finite())
        .map(|r| r.channel)
        .collect()
}

/// First and last reading time of a run.
pub fn time_span(readings: &[Reading]) -> Option<(f64, f64)> {
    let times = readings.iter().map(|r| r.t_s).filter(|t| t.is_finite());
    let (lo, hi) = times.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), t| {
        (lo.min(t), hi.max(t))
    });
    (lo <= hi).then_some((lo, hi))
}

/// Median of the finite values; the mean of the middle two for an even count.
pub fn median(values: impl IntoIterator<Item = f64>) -> Option<f64> {
    let mut v: Vec<f64> = values.into_iter().filter(|x| x.is_finite()).collect();
    if v.is_empty() {
        return None;
    }
    v.sort_by(f64::total_cmp);
    let mid = v.len() / 2;
    Some(if v.len() % 2 == 1 {
        v[mid]
    } else {
        0.5 * (v[mid - 1] + v[mid])
    })
}

/// A straight line y = intercept + slope·x.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Line {
    pub slope: f64,
    pub intercept: f64,
}

/// Ordinary least-squares line through (x, y) points (any statistics text: slope = Sxy/Sxx).
/// `None` for fewer than two points or when all x are equal.
pub fn least_squares_line(points: &[(f64, f64)]) -> Option<Line> {
    if points.len() < 2 {
        return None;
    }
    let n = points.len() as f64;
    let mean_x = points.iter().map(|p| p.0).sum::<f64>() / n;
    let mean_y = points.iter().map(|p| p.1).sum::<f64>() / n;
    let (sxx, sxy) = points.iter().fold((0.0, 0.0), |(sxx, sxy), &(x, y)| {
        let dx = x - mean_x;
        (sxx + dx * dx, sxy + dx * (y - mean_y))
    });
    if !sxx.is_finite() || sxx <= 0.0 {
        return None;
    }
    let slope = sxy / sxx;
    Some(Line {
        slope,
        intercept: mean_y - slope * mean_x,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_of_odd_and_even_counts() {
        assert_eq!(median([3.0, 1.0, 2.0]), Some(2.0));
        assert_eq!(median([4.0, 1.0, 3.0, 2.0]), Some(2.5));
        assert_eq!(median([f64::NAN, 5.0]), Some(5.0));
        assert_eq!(median(std::iter::empty()), None);
    }

    #[test]
    fn least_squares_line_by_hand() {
        // Hand-worked: x 0,1,2,3; y 1,3,4,8 → x̄ 1.5, ȳ 4, Sxy = 4.5 + 0.5 + 0 + 6 = 11,
        // Sxx = 5 → slope 2.2, intercept 4 − 2.2·1.5 = 0.7.
        let line = least_squares_line(&[(0.0, 1.0), (1.0, 3.0), (2.0, 4.0), (3.0, 8.0)]).unwrap();
        assert!((line.slope - 2.2).abs() < 1e-12);
        assert!((line.intercept - 0.7).abs() < 1e-12);
        assert!(least_squares_line(&[(1.0, 1.0), (1.0, 2.0)]).is_none());
    }
}

#[cfg(test)]
mod decimation_tests {
    use super::decimate_min_max;

    #[test]
    fn a_long_series_keeps_every_extreme_and_its_ends() {
        let mut points: Vec<(f64, f64)> = (0..100_000)
            .map(|i| (f64::from(i), 20.0 + f64::from(i % 7)))
            .collect();
        points[54_321].1 = 99.0;
        points[77_777].1 = -5.0;
        let thin = decimate_min_max(&points, 200);
        assert!(thin.len() <= 800, "{} points", thin.len());
        assert!(thin.contains(&(54_321.0, 99.0)) && thin.contains(&(77_777.0, -5.0)));
        assert_eq!(thin.first(), points.first());
        assert_eq!(thin.last(), points.last());
        assert!(thin.windows(2).all(|w| w[0].0 < w[1].0), "time order");
    }

    #[test]
    fn a_short_series_is_left_alone() {
        let points = vec![(0.0, 1.0), (1.0, 2.0), (2.0, 1.5)];
        assert_eq!(decimate_min_max(&points, 200), points);
        assert_eq!(decimate_min_max(&[], 200), Vec::<(f64, f64)>::new());
    }
}
