//! Small display helpers shared by pages.

use crate::store::{Outcome, Run};
use crate::units::{Unit, eng};

/// `2026-12-01 17:40 UTC`: unambiguous on every phone.
pub fn date_time(unix_s: i64) -> String {
    let format = time::macros::format_description!("[year]-[month]-[day] [hour]:[minute] UTC");
    time::OffsetDateTime::from_unix_timestamp(unix_s)
        .ok()
        .and_then(|t| t.format(&format).ok())
        .unwrap_or_default()
}

/// `2:30` for 150 s; `1:02:03` past an hour.
pub fn minutes_seconds(t_s: f64) -> String {
    let total = t_s.max(0.0).round() as i64;
    let (h, m, s) = (total / 3600, (total / 60) % 60, total % 60);
    if h > 0 {
        format!("{h}:{m:02}:{s:02}")
    } else {
        format!("{m}:{s:02}")
    }
}

/// A span of time in words, so it cannot be read as a clock time: `13 min 30 s`, `1 h 2 min`.
pub fn duration_text(seconds: f64) -> String {
    let total = seconds.max(0.0).round() as i64;
    let (h, m, s) = (total / 3600, (total / 60) % 60, total % 60);
    match (h, m) {
        (0, 0) => format!("{s} s"),
        (0, _) => format!("{m} min {s} s"),
        _ => format!("{h} h {m} min"),
    }
}

/// A value or an em dash when absent.
pub fn maybe(value: Option<f64>, unit: Unit) -> String {
    value.map_or_else(|| "—".to_string(), |v| eng(v, unit).to_string())
}

pub fn load_title(load: &str) -> &'static str {
    match load {
        "none" => "No load (idle)",
        "ferrous" => "Ferrous workpiece",
        "non_ferrous" => "Non-ferrous workpiece",
        "water" => "Water calorimeter",
        _ => "Unknown load",
    }
}

/// A line of a runs table.
pub struct RunLine {
    pub id: i64,
    pub revision: String,
    pub started: String,
    pub load: &'static str,
    pub supply: String,
    pub outcome: String,
    pub failed: bool,
    pub reading_count: i64,
}

impl RunLine {
    pub fn from_run(run: &Run) -> RunLine {
        let outcome = run.outcome.as_deref().and_then(Outcome::parse);
        RunLine {
            id: run.id.0,
            revision: run.revision_label(),
            started: date_time(run.started_at),
            load: load_title(&run.load),
            supply: maybe(run.supply_setting_v, Unit::Volt),
            outcome: match outcome {
                Some(o) => o.title().to_string(),
                None => "In progress".to_string(),
            },
            failed: outcome == Some(Outcome::PartFailed),
            reading_count: run.reading_count,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats_times() {
        assert_eq!(minutes_seconds(150.0), "2:30");
        assert_eq!(minutes_seconds(3723.0), "1:02:03");
        assert_eq!(date_time(0), "1970-01-01 00:00 UTC");
        assert_eq!(duration_text(810.0), "13 min 30 s");
        assert_eq!(duration_text(42.0), "42 s");
        assert_eq!(duration_text(3725.0), "1 h 2 min");
    }
}
