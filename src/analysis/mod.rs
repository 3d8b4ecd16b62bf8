//! Pure analysis: the driver model of a revision at an operating point, its flags, each run's
//! analysis (thermal fits, margins, efficiency) and a build's trends across runs. No I/O.

/// Efficiency three ways: calorimetric, differential, model.
pub mod efficiency;
/// The order of the run page's entry fields.
pub mod entry_order;
/// The check of an event mark on a run's timeline.
pub mod event_mark;
/// Findings about parts, with severity and the source of each limit.
pub mod flags;
/// Time a part spent near its limit.
pub mod hot_time;
/// The thresholds the flags use, with their sources.
pub mod limits;
/// Margins of an open run, for the bench.
pub mod live;
/// The operating point, the report, and `validate` / `evaluate`.
pub mod model;
/// The model's quantities as titled rows with units.
pub mod model_table;
/// The steady part of a run and its operating point.
pub mod operating_point;
/// The temperature limit of each part for a run's margins.
pub mod part_limits;
/// One timestamped value on a channel.
pub mod reading;
/// The check of one set of readings logged at the bench.
pub mod reading_set;
/// A finished run's analysis.
pub mod run;
/// Rules that raise a run's flags.
pub mod run_flags;
/// What build pages keep of each run.
pub mod run_summary;
/// Checks of a sender's id and a reading's time since the start.
pub mod sent_entry;
/// Medians, least-squares lines and per-channel samples.
pub mod series;
/// First-order thermal fit and time to a limit.
pub mod thermal_fit;
/// Margins and degradation across a build's runs.
pub mod trends;
/// Refusal of inputs the model cannot or should not evaluate.
pub mod validate;

#[cfg(test)]
mod test_noise;

pub use flags::{Flag, Severity};
pub use model::{ModelReport, OperatingPoint, PartTemperatures, evaluate};
pub use validate::{InputError, validate};
