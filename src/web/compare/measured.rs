//! Measured results of each chosen revision from its runs' kept digests: runs, efficiency by
//! method, the hottest reading and the least margin of each part, frequency, failures and flags.
//! Pure: digests in, rows out.

use std::collections::BTreeMap;

use super::rows::{Better, Cell, CompareRow};
use crate::analysis::flags::Severity;
use crate::analysis::run_summary::{RunDigest, StoredEfficiency};
use crate::analysis::series::median;
use crate::parts::Role;
use crate::units::{Unit, eng};

/// One chosen revision and what its runs left.
pub struct RevisionRuns<'a> {
    pub label: String,
    /// Oldest first.
    pub digests: Vec<&'a RunDigest>,
    /// The digests of the runs with a load: an idle run heats nothing, so it has no efficiency.
    pub loaded: Vec<&'a RunDigest>,
    /// Runs that ended with a part failed.
    pub part_failed: usize,
}

/// Reads one method's efficiency from a digest.
pub type EfficiencyOf = fn(&StoredEfficiency) -> Option<f64>;

/// The efficiency methods, in the order a page trusts them, with the accessor of each.
pub const METHODS: [(&str, EfficiencyOf); 3] = [
    ("calorimetric", |e| e.calorimetric),
    ("differential", |e| e.differential),
    ("model", |e| e.model),
];

fn percent(v: f64) -> String {
    format!("{:.1} %", v * 100.0)
}

/// The rows of the measured-results section.
pub fn measured_rows(revisions: &[RevisionRuns]) -> Vec<CompareRow> {
    let per = |f: &dyn Fn(&RevisionRuns) -> Option<f64>| -> Vec<(String, Option<f64>)> {
        revisions.iter().map(|r| (r.label.clone(), f(r))).collect()
    };
    let mut rows = vec![CompareRow::numbers(
        "runs",
        "Runs logged",
        Better::Neither,
        &per(&|r| Some(r.digests.len() as f64)),
        |v| format!("{v}"),
    )];
    for (method, of) in METHODS {
        let values = |r: &RevisionRuns| -> Vec<f64> {
            r.loaded.iter().filter_map(|d| of(&d.efficiency)).collect()
        };
        if revisions.iter().all(|r| values(r).is_empty()) {
            continue;
        }
        rows.push(CompareRow::numbers(
            format!("best-efficiency-{method}"),
            format!("Best efficiency ({method})"),
            Better::Higher,
            &per(&|r| values(r).into_iter().reduce(f64::max)),
            percent,
        ));
        rows.push(CompareRow::numbers(
            format!("median-efficiency-{method}"),
            format!("Median efficiency ({method})"),
            Better::Higher,
            &per(&|r| median(values(r))),
            percent,
        ));
    }
    let roles: Vec<Role> = revisions
        .iter()
        .flat_map(|r| {
            r.digests
                .iter()
                .flat_map(|d| d.trend.parts.iter().map(|p| p.part))
        })
        .collect::<std::collections::BTreeSet<_>>()
        .into_iter()
        .collect();
    for role in roles {
        let parts = |r: &RevisionRuns| -> Vec<(f64, Option<f64>)> {
            r.digests
                .iter()
                .flat_map(|d| d.trend.parts.iter())
                .filter(|p| p.part == role)
                .map(|p| (p.t_max_c, p.margin_k))
                .collect()
        };
        rows.push(CompareRow::numbers(
            format!("t-max-{}", role.key()),
            format!("{}: hottest reading", role.title()),
            Better::Lower,
            &per(&|r| parts(r).into_iter().map(|(t, _)| t).reduce(f64::max)),
            |v| format!("{v:.1} °C"),
        ));
        rows.push(CompareRow::numbers(
            format!("margin-{}", role.key()),
            format!("{}: least margin to its limit", role.title()),
            Better::Higher,
            &per(&|r| parts(r).into_iter().filter_map(|(_, m)| m).reduce(f64::min)),
            |v| format!("{v:.1} K"),
        ));
    }
    rows.push(CompareRow::numbers(
        "median-frequency",
        "Median operating frequency",
        Better::Neither,
        &per(&|r| median(r.digests.iter().filter_map(|d| d.frequency_hz))),
        |v| eng(v, Unit::Hertz).to_string(),
    ));
    let failed_row = CompareRow::numbers(
        "part-failed-runs",
        "Runs that ended with a part failed",
        Better::Lower,
        &per(&|r| (!r.digests.is_empty()).then_some(r.part_failed as f64)),
        |v| format!("{v}"),
    );
    rows.push(failed_row);
    let worst: Vec<BTreeMap<&str, (Severity, &str)>> =
        revisions.iter().map(|r| worst_flags(&r.digests)).collect();
    let count_at = |severity: Severity| -> Vec<(String, Option<f64>)> {
        revisions
            .iter()
            .zip(&worst)
            .map(|(r, w)| {
                let n = w.values().filter(|(s, _)| *s == severity).count();
                (r.label.clone(), (!r.digests.is_empty()).then_some(n as f64))
            })
            .collect()
    };
    rows.push(CompareRow::numbers(
        "failure-flags",
        "Kinds of flag raised at failure",
        Better::Lower,
        &count_at(Severity::Failure),
        |v| format!("{v}"),
    ));
    rows.push(CompareRow::numbers(
        "warning-flags",
        "Kinds of flag raised at warning",
        Better::Lower,
        &count_at(Severity::Warning),
        |v| format!("{v}"),
    ));
    rows.push(CompareRow::text(
        "flags",
        "Flags, worst per code",
        revisions
            .iter()
            .zip(&worst)
            .map(|(r, w)| {
                let mut listed: Vec<(&str, Severity, &str)> =
                    w.iter().map(|(code, (s, m))| (*code, *s, *m)).collect();
                listed.sort_by_key(|(code, s, _)| (std::cmp::Reverse(*s), *code));
                Cell {
                    revision: r.label.clone(),
                    value: if listed.is_empty() {
                        "none".into()
                    } else {
                        listed
                            .iter()
                            .map(|(code, s, _)| format!("{code} ({})", severity_word(*s)))
                            .collect::<Vec<_>>()
                            .join(", ")
                    },
                    better: false,
                    details: listed
                        .iter()
                        .map(|(code, s, m)| format!("{} {code}: {m}", severity_word(*s)))
                        .collect(),
                }
            })
            .collect(),
    ));
    rows
}

pub fn severity_word(s: Severity) -> &'static str {
    match s {
        Severity::Note => "note",
        Severity::Warning => "warning",
        Severity::Failure => "failure",
    }
}

/// Per flag code, its worst severity over the runs and the message it was raised with then.
fn worst_flags<'a>(digests: &[&'a RunDigest]) -> BTreeMap<&'a str, (Severity, &'a str)> {
    let mut worst: BTreeMap<&str, (Severity, &str)> = BTreeMap::new();
    for flag in digests.iter().flat_map(|d| d.flags.iter()) {
        let entry = worst
            .entry(flag.code.as_str())
            .or_insert((flag.severity, flag.message.as_str()));
        if flag.severity > entry.0 {
            *entry = (flag.severity, flag.message.as_str());
        }
    }
    worst
}
