//! The compare page's unit of layout: a row with a title and one line per revision, so that a
//! phone reads it top to bottom and nothing scrolls sideways. The better value of a row is
//! marked when the row has a direction and one revision alone has it.

/// Which way is better for a row's numbers.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Better {
    Higher,
    Lower,
    /// Not a contest (a frequency, a count of runs).
    Neither,
}

/// One revision's line of a row.
#[derive(Debug, Clone, PartialEq)]
pub struct Cell {
    pub revision: String,
    pub value: String,
    pub better: bool,
    /// Longer text behind the value (flag messages), shown in a `<details>` when present.
    pub details: Vec<String>,
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

impl CompareRow {
    /// A row of numbers, shown by `show`, with the better one marked. Values are compared as
    /// shown (rounded), so two lines that read the same are a tie and neither is marked.
    pub fn numbers(
        key: impl Into<String>,
        title: impl Into<String>,
        better: Better,
        values: &[(String, Option<f64>)],
        show: impl Fn(f64) -> String,
    ) -> CompareRow {
        let shown: Vec<Option<String>> = values.iter().map(|(_, v)| v.map(&show)).collect();
        let numbers: Vec<Option<f64>> = values.iter().map(|(_, v)| *v).collect();
        let marks = mark_better(&numbers, &shown, better);
        CompareRow {
            key: key.into(),
            title: title.into(),
            hint: match better {
                Better::Higher => "higher is better",
                Better::Lower => "lower is better",
                Better::Neither => "",
            },
            cells: values
                .iter()
                .zip(shown)
                .zip(marks)
                .map(|(((revision, _), text), better)| Cell {
                    revision: revision.clone(),
                    value: text.unwrap_or_else(|| "—".into()),
                    better,
                    details: Vec::new(),
                })
                .collect(),
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

/// Marks the one best value: at least two revisions must have one, and the best must be alone
/// (a tie, judged on the shown text, marks nobody).
pub fn mark_better(values: &[Option<f64>], shown: &[Option<String>], better: Better) -> Vec<bool> {
    let mut marks = vec![false; values.len()];
    let present: Vec<usize> = (0..values.len()).filter(|&i| values[i].is_some()).collect();
    if better == Better::Neither || present.len() < 2 {
        return marks;
    }
    let key = |i: usize| {
        let v = values[i].expect("present");
        if better == Better::Higher { v } else { -v }
    };
    let best = present
        .iter()
        .copied()
        .max_by(|&a, &b| key(a).total_cmp(&key(b)))
        .expect("two present");
    let tied = present
        .iter()
        .filter(|&&i| i != best)
        .any(|&i| shown[i] == shown[best] || key(i) >= key(best));
    if !tied {
        marks[best] = true;
    }
    marks
}

#[cfg(test)]
mod tests {
    use super::*;

    fn row(better: Better, values: &[Option<f64>]) -> Vec<bool> {
        let values: Vec<(String, Option<f64>)> = values
            .iter()
            .enumerate()
            .map(|(i, v)| (format!("r{}", i + 1), *v))
            .collect();
        CompareRow::numbers("k", "t", better, &values, |v| format!("{v:.1}"))
            .cells
            .iter()
            .map(|c| c.better)
            .collect()
    }

    #[test]
    fn marks_the_one_best_value_in_its_direction() {
        assert_eq!(row(Better::Higher, &[Some(0.8), Some(0.9)]), [false, true]);
        assert_eq!(
            row(Better::Lower, &[Some(80.0), Some(60.0), None]),
            [false, true, false]
        );
    }

    #[test]
    fn ties_single_values_and_neutral_rows_are_unmarked() {
        assert_eq!(row(Better::Higher, &[Some(0.9), Some(0.9)]), [false, false]);
        // 80.01 and 80.04 both read 80.0: a tie as shown.
        assert_eq!(
            row(Better::Lower, &[Some(80.01), Some(80.04)]),
            [false, false]
        );
        assert_eq!(row(Better::Higher, &[Some(0.9), None]), [false, false]);
        assert_eq!(
            row(Better::Neither, &[Some(1.0), Some(2.0)]),
            [false, false]
        );
    }
}
