//! Thinning long series before drawing, without losing spikes.

/// No series is drawn with more points than this: a 640-unit-wide chart cannot show more, and
/// 10 000-point paths make pages heavy on a phone.
pub const MAX_POINTS_PER_SERIES: usize = 600;

/// Keeps, for each of `columns` equal slices of `x_range`, only the lowest and the highest point
/// (in their original order), so a one-sample spike survives while the count drops to at most
/// `2 × columns`. Series at or under `2 × columns` points are returned unchanged. Points outside
/// `x_range` go to the nearest end column. Suited to lines over ordered x; a scatter thinned this
/// way keeps only its envelope.
pub fn decimate_min_max(
    points: &[(f64, f64)],
    x_range: (f64, f64),
    columns: usize,
) -> Vec<(f64, f64)> {
    let columns = columns.max(1);
    if points.len() <= 2 * columns {
        return points.to_vec();
    }
    let (x_lo, x_hi) = x_range;
    let width = x_hi - x_lo;
    // For each column, the indices of its lowest and highest point.
    let mut extremes: Vec<Option<(usize, usize)>> = vec![None; columns];
    for (i, (x, y)) in points.iter().enumerate() {
        let fraction = if width > 0.0 { (x - x_lo) / width } else { 0.0 };
        let column = ((fraction * columns as f64) as usize).min(columns - 1);
        let slot = &mut extremes[column];
        match slot {
            None => *slot = Some((i, i)),
            Some((low, high)) => {
                if *y < points[*low].1 {
                    *low = i;
                }
                if *y > points[*high].1 {
                    *high = i;
                }
            }
        }
    }
    let mut kept = Vec::with_capacity(2 * columns);
    for (low, high) in extremes.into_iter().flatten() {
        kept.push(points[low.min(high)]);
        if low != high {
            kept.push(points[low.max(high)]);
        }
    }
    kept
}

#[cfg(test)]
mod tests {
    use super::*;

    fn wavy_run(count: usize) -> Vec<(f64, f64)> {
        (0..count)
            .map(|i| (i as f64, 40.0 + (i as f64 / 300.0).sin()))
            .collect()
    }

    #[test]
    fn caps_the_count_and_keeps_a_single_spike() {
        let mut points = wavy_run(10_000);
        points[5_123].1 = 400.0;
        let kept = decimate_min_max(&points, (0.0, 9_999.0), MAX_POINTS_PER_SERIES / 2);
        assert!(kept.len() <= MAX_POINTS_PER_SERIES, "{} points", kept.len());
        assert!(kept.len() > MAX_POINTS_PER_SERIES / 2);
        assert!(kept.contains(&(5_123.0, 400.0)));
    }

    #[test]
    fn keeps_a_downward_spike_too() {
        let mut points = wavy_run(10_000);
        points[77].1 = -5.0;
        let kept = decimate_min_max(&points, (0.0, 9_999.0), 300);
        assert!(kept.contains(&(77.0, -5.0)));
    }

    #[test]
    fn keeps_order_along_x() {
        let kept = decimate_min_max(&wavy_run(10_000), (0.0, 9_999.0), 300);
        assert!(kept.windows(2).all(|pair| pair[0].0 < pair[1].0));
    }

    #[test]
    fn short_series_are_untouched() {
        let points = wavy_run(600);
        assert_eq!(decimate_min_max(&points, (0.0, 599.0), 300), points);
    }
}
