//! A least-squares slope with its 95 % confidence range, so a trend across runs is stated only
//! with the spread the data allows.
//!
//! Standard error of the slope s_b = √(SSE/(n − 2) / Sxx) and the range b ± t·s_b, with t the
//! two-sided 95 % critical value of Student's t at n − 2 degrees of freedom (any regression
//! text; the table is from the NIST/SEMATECH e-Handbook of Statistical Methods, 2012,
//! section 1.3.6.7.2, "Critical values of the Student's t distribution").

use super::series::least_squares_line;

/// Two-sided 95 % critical values of Student's t for 1 to 30 degrees of freedom
/// (NIST/SEMATECH e-Handbook of Statistical Methods, 2012, table 1.3.6.7.2).
const T_95: [f64; 30] = [
    12.706, 4.303, 3.182, 2.776, 2.571, 2.447, 2.365, 2.306, 2.262, 2.228, 2.201, 2.179, 2.160,
    2.145, 2.131, 2.120, 2.110, 2.101, 2.093, 2.086, 2.080, 2.074, 2.069, 2.064, 2.060, 2.056,
    2.052, 2.048, 2.045, 2.042,
];

/// The two-sided 95 % critical value of Student's t at `dof` degrees of freedom; beyond the
/// table the same source's rows for 40, 60 and 100 degrees, then the normal 1.960.
pub fn student_t_95(dof: usize) -> Option<f64> {
    match dof {
        0 => None,
        1..=30 => Some(T_95[dof - 1]),
        31..=40 => Some(2.021),
        41..=60 => Some(2.000),
        61..=100 => Some(1.984),
        _ => Some(1.960),
    }
}

/// A slope and its 95 % confidence range.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SlopeRange {
    pub slope: f64,
    /// Half the width of the 95 % range: the slope lies in slope ± this.
    pub half_width: f64,
}

impl SlopeRange {
    pub fn low(&self) -> f64 {
        self.slope - self.half_width
    }

    pub fn high(&self) -> f64 {
        self.slope + self.half_width
    }

    /// Whether the range excludes zero: the data shows a slope at all.
    pub fn excludes_zero(&self) -> bool {
        self.low() > 0.0 || self.high() < 0.0
    }
}

/// The least-squares slope of (x, y) with its 95 % range. `None` for fewer than three points
/// (two points leave no residual to judge the slope by) or when all x are equal.
pub fn slope_range(points: &[(f64, f64)]) -> Option<SlopeRange> {
    let n = points.len();
    let t = student_t_95(n.checked_sub(2)?)?;
    let line = least_squares_line(points)?;
    let mean_x = points.iter().map(|p| p.0).sum::<f64>() / n as f64;
    let sxx: f64 = points.iter().map(|p| (p.0 - mean_x).powi(2)).sum();
    let sse: f64 = points
        .iter()
        .map(|p| (p.1 - line.intercept - line.slope * p.0).powi(2))
        .sum();
    let standard_error = (sse / (n - 2) as f64 / sxx).sqrt();
    standard_error.is_finite().then_some(SlopeRange {
        slope: line.slope,
        half_width: t * standard_error,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_values_match_the_published_rows() {
        // NIST/SEMATECH e-Handbook, table 1.3.6.7.2, column 0.975 (two-sided 95 %).
        assert_eq!(student_t_95(1), Some(12.706));
        assert_eq!(student_t_95(2), Some(4.303));
        assert_eq!(student_t_95(10), Some(2.228));
        assert_eq!(student_t_95(30), Some(2.042));
        assert_eq!(student_t_95(1000), Some(1.960));
        assert_eq!(student_t_95(0), None);
    }

    #[test]
    fn hand_worked_range() {
        // x 0, 1, 2, 3; y 20, 18.5, 17.4, 15.9. Slope −1.34 (Sxy −6.7 / Sxx 5), intercept 19.96.
        // Residuals 0.04, −0.12, 0.12, −0.04: SSE 0.032, s_b = √(0.032/2/5) = 0.056569;
        // t(2) = 4.303 → half width 0.24342.
        let r = slope_range(&[(0.0, 20.0), (1.0, 18.5), (2.0, 17.4), (3.0, 15.9)]).unwrap();
        assert!((r.slope + 1.34).abs() < 1e-12);
        assert!((r.half_width - 4.303 * (0.0032f64).sqrt()).abs() < 1e-12);
        assert!(r.excludes_zero());
    }

    #[test]
    fn two_points_state_no_range_and_scatter_includes_zero() {
        assert!(slope_range(&[(0.0, 1.0), (1.0, 5.0)]).is_none());
        assert!(slope_range(&[(1.0, 1.0), (1.0, 2.0), (1.0, 3.0)]).is_none());
        let noisy = slope_range(&[(0.0, 20.0), (1.0, 19.0), (2.0, 20.5), (3.0, 19.4)]).unwrap();
        assert!(!noisy.excludes_zero(), "{noisy:?}");
    }
}
