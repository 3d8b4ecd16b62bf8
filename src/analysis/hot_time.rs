//! Time a part spends close to its limit.
//!
//! "Hot" means above 80 % of the way from ambient to the part's limit,
//! T_hot = T_amb + 0.8·(T_lim − T_amb) [practice]: measured in kelvin of rise rather than in °C,
//! so the threshold means the same for a part rated 85 °C and one rated 150 °C.

/// Fraction of the way from ambient to the limit above which a part counts as hot.
pub const HOT_FRACTION: f64 = 0.8;

/// The hot threshold T_amb + 0.8·(T_lim − T_amb).
pub fn hot_threshold_c(limit_c: f64, ambient_c: f64) -> f64 {
    ambient_c + HOT_FRACTION * (limit_c - ambient_c)
}

/// Seconds the readings spent above the hot threshold. The temperature between two readings is
/// taken as the straight line joining them (the trapezoid reconstruction), so an interval that
/// crosses the threshold counts the part of it above the crossing. Samples are (time s, °C) in
/// time order; non-finite samples are skipped.
pub fn hot_time_s(samples: &[(f64, f64)], limit_c: f64, ambient_c: f64) -> f64 {
    let threshold = hot_threshold_c(limit_c, ambient_c);
    let clean: Vec<(f64, f64)> = samples
        .iter()
        .copied()
        .filter(|(t, v)| t.is_finite() && v.is_finite())
        .collect();
    clean
        .windows(2)
        .map(|w| time_above_on_segment_s(w[0], w[1], threshold))
        .sum()
}

/// Time above `threshold` on the straight segment from `a` to `b`.
fn time_above_on_segment_s(a: (f64, f64), b: (f64, f64), threshold: f64) -> f64 {
    let dt = b.0 - a.0;
    if dt.is_nan() || dt <= 0.0 {
        return 0.0;
    }
    let (ha, hb) = (a.1 - threshold, b.1 - threshold);
    match (ha > 0.0, hb > 0.0) {
        (true, true) => dt,
        (false, false) => 0.0,
        // Above for the fraction of the interval on the hot side of the crossing.
        (true, false) => dt * ha / (ha - hb),
        (false, true) => dt * hb / (hb - ha),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hand_worked_example() {
        // Hand-worked [derived]: limit 85 °C, ambient 25 °C → threshold 25 + 0.8·60 = 73 °C.
        // 60→70 °C over 0–10 s: 0 s; 70→80 over 10–20: crosses at 13 s, 7 s; 80→76 over 20–30:
        // 10 s; 76→70 over 30–40: crosses at 35 s, 5 s. Total 22 s.
        let samples = [
            (0.0, 60.0),
            (10.0, 70.0),
            (20.0, 80.0),
            (30.0, 76.0),
            (40.0, 70.0),
        ];
        assert!((hot_threshold_c(85.0, 25.0) - 73.0).abs() < 1e-12);
        assert!((hot_time_s(&samples, 85.0, 25.0) - 22.0).abs() < 1e-9);
    }

    #[test]
    fn never_hot_and_always_hot() {
        let samples = [(0.0, 30.0), (60.0, 40.0)];
        assert_eq!(hot_time_s(&samples, 85.0, 25.0), 0.0);
        assert_eq!(hot_time_s(&samples, 30.0, 20.0), 60.0);
        assert_eq!(hot_time_s(&[(0.0, 90.0)], 85.0, 25.0), 0.0);
    }
}
