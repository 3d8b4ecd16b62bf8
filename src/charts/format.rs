//! Turning numbers into tick labels and table cells: plain numbers with SI prefixes,
//! minutes and seconds, dates, and category labels.

use super::model::AxisFormat;

/// Prefixes for powers of 1000, from 10^-9 to 10^9.
const SI_PREFIXES: [(i32, &str); 7] = [
    (-3, "n"),
    (-2, "µ"),
    (-1, "m"),
    (0, ""),
    (1, "k"),
    (2, "M"),
    (3, "G"),
];

/// Magnitudes at or above this get a k (or larger) prefix: "150k" reads better than "150000".
const LARGE_MAGNITUDE: f64 = 10_000.0;
/// Magnitudes below this (and not zero) get an m (or smaller) prefix.
const SMALL_MAGNITUDE: f64 = 0.01;

const SECONDS_PER_DAY: i64 = 86_400;

/// One value for a table or description: four significant figures, or three with a prefix
/// (152345 → "152k", 0.0047 → "4.7m", 23.456 → "23.46").
pub fn format_value(value: f64) -> String {
    if !value.is_finite() {
        return String::from("–");
    }
    let magnitude = value.abs();
    if magnitude >= LARGE_MAGNITUDE || (magnitude > 0.0 && magnitude < SMALL_MAGNITUDE) {
        let power = engineering_power(magnitude);
        let scaled = value / 1000f64.powi(power);
        let decimals = decimals_for_significant(scaled, 3);
        return format!("{}{}", trimmed(scaled, decimals), prefix_for(power));
    }
    trimmed(value, decimals_for_significant(value, 4))
}

/// Seconds as `m:ss`, or `h:mm:ss` from an hour on (150 → "2:30", 3723 → "1:02:03").
pub fn format_minutes_seconds(seconds: f64) -> String {
    format_minutes_seconds_with_decimals(seconds, 0)
}

/// Unix seconds as the UTC month and day, `MM-DD` (1764460800 → "11-30").
pub fn format_date(unix_seconds: f64) -> String {
    let (_, month, day) = utc_date(unix_seconds);
    format!("{month:02}-{day:02}")
}

impl AxisFormat {
    /// One x value written as this axis writes it, e.g. for a table cell.
    pub fn format(&self, value: f64) -> String {
        match self {
            Self::Plain => format_value(value),
            Self::MinutesSeconds => format_minutes_seconds(value),
            Self::Date => format_date(value),
            Self::Category(labels) => category_label(labels, value),
        }
    }
}

/// The label of category `index`, or the number itself when it names no category.
pub(crate) fn category_label(labels: &[String], index: f64) -> String {
    let rounded = index.round();
    if rounded >= 0.0 && (rounded as usize) < labels.len() {
        labels[rounded as usize].clone()
    } else {
        format_value(index)
    }
}

/// Labels for plain ticks: one prefix for the whole axis, and as many decimals as the step needs,
/// so neighbouring labels never print the same.
pub(crate) fn plain_tick_labels(values: &[f64], step: f64) -> Vec<String> {
    let largest = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let power = if largest >= LARGE_MAGNITUDE || (largest > 0.0 && largest < SMALL_MAGNITUDE) {
        engineering_power(largest)
    } else {
        0
    };
    let unit = 1000f64.powi(power);
    let decimals = decimals_for_step(step / unit);
    values
        .iter()
        .map(|v| format!("{}{}", fixed(v / unit, decimals), prefix_for(power)))
        .collect()
}

/// Labels for ticks in seconds; steps under a second show tenths or hundredths.
pub(crate) fn minutes_seconds_tick_labels(values: &[f64], step: f64) -> Vec<String> {
    let decimals = if step < 1.0 {
        decimals_for_step(step)
    } else {
        0
    };
    values
        .iter()
        .map(|v| format_minutes_seconds_with_decimals(*v, decimals))
        .collect()
}

fn format_minutes_seconds_with_decimals(seconds: f64, decimals: usize) -> String {
    if !seconds.is_finite() {
        return String::from("–");
    }
    let scale = 10f64.powi(decimals as i32);
    let rounded = (seconds.abs() * scale).round() / scale;
    let sign = if seconds < 0.0 && rounded > 0.0 {
        "-"
    } else {
        ""
    };
    let whole = rounded.trunc() as i64;
    let (hours, minutes, secs) = (whole / 3600, whole / 60 % 60, whole % 60);
    let fraction = if decimals > 0 {
        let digits = fixed(rounded.fract(), decimals);
        digits.trim_start_matches('0').to_string()
    } else {
        String::new()
    };
    if hours > 0 {
        format!("{sign}{hours}:{minutes:02}:{secs:02}{fraction}")
    } else {
        format!("{sign}{minutes}:{secs:02}{fraction}")
    }
}

/// (year, month, day) in UTC for unix seconds.
fn utc_date(unix_seconds: f64) -> (i64, u32, u32) {
    let days = (unix_seconds.floor() as i64).div_euclid(SECONDS_PER_DAY);
    civil_from_days(days)
}

/// Days since 1970-01-01 to a proleptic Gregorian date, counting in 400-year eras that start on
/// 1 March so the leap day falls at the end of each year (H. Hinnant's `civil_from_days`).
fn civil_from_days(days_since_epoch: i64) -> (i64, u32, u32) {
    let z = days_since_epoch + 719_468;
    let era = z.div_euclid(146_097);
    let day_of_era = z.rem_euclid(146_097);
    let year_of_era =
        (day_of_era - day_of_era / 1460 + day_of_era / 36_524 - day_of_era / 146_096) / 365;
    let day_of_year = day_of_era - (365 * year_of_era + year_of_era / 4 - year_of_era / 100);
    let month_from_march = (5 * day_of_year + 2) / 153;
    let day = (day_of_year - (153 * month_from_march + 2) / 5 + 1) as u32;
    let month = if month_from_march < 10 {
        month_from_march + 3
    } else {
        month_from_march - 9
    } as u32;
    let year = year_of_era + era * 400 + i64::from(month <= 2);
    (year, month, day)
}

/// The power of 1000 that leaves between 1 and 1000 in front of the prefix, within n..G.
fn engineering_power(magnitude: f64) -> i32 {
    ((magnitude.log10() / 3.0).floor() as i32).clamp(-3, 3)
}

fn prefix_for(power: i32) -> &'static str {
    SI_PREFIXES
        .iter()
        .find(|(p, _)| *p == power)
        .map_or("", |(_, prefix)| prefix)
}

fn decimals_for_significant(value: f64, significant: i32) -> usize {
    if value == 0.0 {
        return 0;
    }
    let leading = value.abs().log10().floor() as i32;
    (significant - 1 - leading).clamp(0, 12) as usize
}

fn decimals_for_step(step: f64) -> usize {
    if step <= 0.0 || !step.is_finite() {
        return 0;
    }
    (-(step.log10() + 1e-9).floor()).clamp(0.0, 12.0) as usize
}

/// Fixed decimals, without a minus sign on a value that rounds to zero.
fn fixed(value: f64, decimals: usize) -> String {
    let text = format!("{value:.decimals$}");
    if text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.') {
        text[1..].to_string()
    } else {
        text
    }
}

/// Fixed decimals with trailing zeros (and a bare point) removed.
fn trimmed(value: f64, decimals: usize) -> String {
    let text = fixed(value, decimals);
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn minutes_and_seconds() {
        assert_eq!(format_minutes_seconds(150.0), "2:30");
        assert_eq!(format_minutes_seconds(3723.0), "1:02:03");
        assert_eq!(format_minutes_seconds(0.0), "0:00");
        assert_eq!(format_minutes_seconds(59.6), "1:00");
        assert_eq!(format_minutes_seconds(-30.0), "-0:30");
    }

    #[test]
    fn sub_second_tick_labels_keep_their_fraction() {
        let labels = minutes_seconds_tick_labels(&[0.0, 0.5, 1.0], 0.5);
        assert_eq!(labels, vec!["0:00.0", "0:00.5", "0:01.0"]);
    }

    #[test]
    fn dates_are_utc_month_and_day() {
        assert_eq!(format_date(0.0), "01-01");
        assert_eq!(format_date(1_764_460_800.0), "11-30");
        assert_eq!(format_date(1_764_460_800.0 + 86_399.0), "11-30");
        // 2024-02-29, a leap day.
        assert_eq!(format_date(1_709_164_800.0), "02-29");
        assert_eq!(utc_date(-1.0), (1969, 12, 31));
    }

    #[test]
    fn large_values_get_a_k_with_three_significant_figures() {
        assert_eq!(format_value(150_000.0), "150k");
        assert_eq!(format_value(152_345.0), "152k");
        assert_eq!(format_value(15_234.0), "15.2k");
        assert_eq!(format_value(-150_000.0), "-150k");
        assert_eq!(format_value(2_500_000.0), "2.5M");
    }

    #[test]
    fn ordinary_and_small_values() {
        assert_eq!(format_value(85.0), "85");
        assert_eq!(format_value(23.456), "23.46");
        assert_eq!(format_value(0.47), "0.47");
        assert_eq!(format_value(9999.0), "9999");
        assert_eq!(format_value(0.0047), "4.7m");
        assert_eq!(format_value(0.0), "0");
        assert_eq!(format_value(-0.00001), "-10µ");
        assert_eq!(format_value(f64::NAN), "–");
    }

    #[test]
    fn plain_ticks_share_one_prefix_and_enough_decimals() {
        let labels = plain_tick_labels(&[150_000.0, 152_000.0, 154_000.0], 2000.0);
        assert_eq!(labels, vec!["150k", "152k", "154k"]);
        let fine = plain_tick_labels(&[150_000.0, 150_500.0, 151_000.0], 500.0);
        assert_eq!(fine, vec!["150.0k", "150.5k", "151.0k"]);
        let decimals = plain_tick_labels(&[-0.2, 0.0, 0.2], 0.2);
        assert_eq!(decimals, vec!["-0.2", "0.0", "0.2"]);
        assert_eq!(plain_tick_labels(&[20.0, 40.0], 20.0), vec!["20", "40"]);
    }

    #[test]
    fn category_labels_by_index() {
        let labels = vec![String::from("r1 #1"), String::from("r2 #5")];
        let format = AxisFormat::Category(labels);
        assert_eq!(format.format(1.0), "r2 #5");
        assert_eq!(format.format(0.2), "r1 #1");
        assert_eq!(format.format(7.0), "7");
        assert_eq!(format.format(-1.0), "-1");
    }
}
