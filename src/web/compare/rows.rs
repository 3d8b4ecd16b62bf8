//! The compare page's unit of layout: a row with a title and one line per revision, so that a
//! phone reads it top to bottom and nothing scrolls sideways. A measured row judges each
//! revision against the chosen baseline (see `analysis::comparison`): better or worse only
//! beyond the combined uncertainty and under comparable conditions.

use crate::analysis::comparison::{Direction, RunValue, Summary, Verdict, judge_runs};

/// One revision's line of a row.
#[derive(Debug, Clone, PartialEq)]
pub struct Cell {
    pub revision: String,
    pub value: String,
    /// The verdict against the baseline in words, empty when there is none.
    pub mark: String,
    /// `baseline`, `better`, `worse`, `unclear`, `not-comparable` or empty.
    pub mark_class: &'static str,
    /// Longer text behind the value (flag messages), shown in a `<details>` when present.
    pub details: Vec<String>,
}

impl Cell {
    pub fn plain(revision: impl Into<String>, value: impl Into<String>) -> Cell {
        Cell {
            revision: revision.into(),
            value: value.into(),
            mark: String::new(),
            mark_class: "",
            details: Vec::new(),
        }
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct CompareRow {
    /// Stable name for the row's `data-row`, e.g. `median-efficiency-calorimetric`.
    pub key: String,
    pub title: String,
    /// How to read the row, e.g. "higher is better"; empty when neutral.
    pub hint: &'static str,
    pub cells: Vec<Cell>,
}

/// One revision's runs in a judged row.
pub struct Entry {
    pub revision: String,
    pub runs: Vec<RunValue>,
}

/// How a judged row shows its numbers: a value, and a difference or uncertainty (unsigned).
pub struct Shown<'a> {
    pub value: &'a dyn Fn(f64) -> String,
    pub difference: &'a dyn Fn(f64) -> String,
}

impl CompareRow {
    /// A row of numbers shown by `show`, never marked (a count, a frequency).
    pub fn numbers(
        key: impl Into<String>,
        title: impl Into<String>,
        values: &[(String, Option<f64>)],
        show: impl Fn(f64) -> String,
    ) -> CompareRow {
        CompareRow {
            key: key.into(),
            title: title.into(),
            hint: "",
            cells: values
                .iter()
                .map(|(revision, v)| Cell::plain(revision, v.map_or_else(|| "—".into(), &show)))
                .collect(),
        }
    }

    /// A row of measured values, each judged against the baseline's (like with like, see
    /// [`judge_runs`]).
    pub fn judged(
        key: impl Into<String>,
        title: impl Into<String>,
        entries: &[Entry],
        baseline: usize,
        how: Summary,
        shown: Shown,
    ) -> CompareRow {
        let value_of = |e: &Entry| (how.pick)(&e.runs.iter().map(|r| r.value).collect::<Vec<_>>());
        let base = entries.get(baseline);
        let cells = entries
            .iter()
            .enumerate()
            .map(|(i, entry)| {
                let mut cell = Cell::plain(
                    &entry.revision,
                    value_of(entry).map_or_else(|| "—".into(), shown.value),
                );
                let Some(base) = base.filter(|b| value_of(b).is_some()) else {
                    return cell;
                };
                let (mark, class) = if i == baseline {
                    ("baseline".to_string(), "baseline")
                } else if value_of(entry).is_some() {
                    let (verdict, on) = judge_runs(&base.runs, &entry.runs, how);
                    let (words, class) = verdict_words(&verdict, &base.revision, shown.difference);
                    match on {
                        Some(on) => (format!("{words} ({on})"), class),
                        None => (words, class),
                    }
                } else {
                    (String::new(), "")
                };
                cell.mark = mark;
                cell.mark_class = class;
                cell
            })
            .collect();
        CompareRow {
            key: key.into(),
            title: title.into(),
            hint: match how.direction {
                Direction::Higher => "higher is better",
                Direction::Lower => "lower is better",
            },
            cells,
        }
    }

    /// A row of text, never marked.
    pub fn text(key: impl Into<String>, title: impl Into<String>, cells: Vec<Cell>) -> CompareRow {
        CompareRow {
            key: key.into(),
            title: title.into(),
            hint: "",
            cells,
        }
    }
}

/// A verdict against the baseline in words, and its class for the page.
fn verdict_words(
    verdict: &Verdict,
    baseline: &str,
    show_difference: &dyn Fn(f64) -> String,
) -> (String, &'static str) {
    let signed = |d: f64| {
        let sign = if d < 0.0 { '−' } else { '+' };
        format!("{sign}{}", show_difference(d.abs()))
    };
    match verdict {
        Verdict::Better {
            difference,
            combined,
        } => (
            format!(
                "✓ better than {baseline}: {}, beyond the ±{} uncertainty",
                signed(*difference),
                show_difference(*combined)
            ),
            "better",
        ),
        Verdict::Worse {
            difference,
            combined,
        } => (
            format!(
                "worse than {baseline}: {}, beyond the ±{} uncertainty",
                signed(*difference),
                show_difference(*combined)
            ),
            "worse",
        ),
        Verdict::NoClearDifference {
            difference,
            combined,
        } => (
            format!(
                "no clear difference from {baseline}: {} is within ±{}",
                signed(*difference),
                show_difference(*combined)
            ),
            "unclear",
        ),
        Verdict::NotComparable { why } => (
            format!("not comparable with {baseline}: {why}"),
            "not-comparable",
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::comparison::TEMPERATURE_UNCERTAINTY_K;

    fn kelvin(v: f64) -> String {
        format!("{v:.1}\u{a0}K")
    }

    fn row(values: &[(f64, f64)]) -> Vec<(String, &'static str)> {
        let entries: Vec<Entry> = values
            .iter()
            .enumerate()
            .map(|(i, (supply, v))| Entry {
                revision: format!("r{}", i + 1),
                runs: vec![RunValue {
                    supply_voltage_v: Some(*supply),
                    load: "ferrous workpiece".into(),
                    value: *v,
                }],
            })
            .collect();
        let how = Summary {
            pick: |v| v.iter().copied().reduce(f64::max),
            instrument: TEMPERATURE_UNCERTAINTY_K,
            direction: Direction::Lower,
        };
        let shown = Shown {
            value: &kelvin,
            difference: &kelvin,
        };
        CompareRow::judged("k", "t", &entries, 0, how, shown)
            .cells
            .into_iter()
            .map(|c| (c.mark, c.mark_class))
            .collect()
    }

    #[test]
    fn marks_against_the_baseline_only_beyond_the_uncertainty() {
        let marks = row(&[(24.0, 60.0), (24.0, 59.8), (24.0, 50.0), (36.0, 40.0)]);
        assert_eq!(marks[0], ("baseline".to_string(), "baseline"));
        assert_eq!(marks[1].1, "unclear", "{}", marks[1].0);
        assert!(
            marks[1].0.contains("−0.2\u{a0}K is within ±2.8\u{a0}K"),
            "{}",
            marks[1].0
        );
        assert_eq!(marks[2].1, "better", "{}", marks[2].0);
        assert!(marks[2].0.starts_with("✓ better than r1: −10.0\u{a0}K"));
        assert_eq!(marks[3].1, "not-comparable");
        assert!(marks[3].0.contains("24.0\u{a0}V against 36.0\u{a0}V"));
    }

    #[test]
    fn neutral_rows_are_never_marked() {
        let r = CompareRow::numbers(
            "k",
            "t",
            &[("r1".into(), Some(1.0)), ("r2".into(), None)],
            |v| format!("{v}"),
        );
        assert!(r.cells.iter().all(|c| c.mark.is_empty()));
        assert_eq!(r.cells[1].value, "—");
    }
}
