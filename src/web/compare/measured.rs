//! Measured results of each chosen revision from its runs' kept digests: runs, efficiency by
//! method, the hottest reading and the least margin of each part, frequency, failures and flags.
//! Pure: digests in, rows out.

use std::collections::BTreeMap;

use super::rows::{Cell, CompareRow, Entry, Shown};
use crate::analysis::comparison::{
    Conditions, Direction, EFFICIENCY_UNCERTAINTY, RunValue, Summary, TEMPERATURE_UNCERTAINTY_K,
};
use crate::analysis::flags::{Severity, flag_title};
use crate::analysis::run_summary::{RunDigest, StoredEfficiency};
use crate::analysis::series::median;
use crate::parts::Role;
use crate::units::{Unit, eng_precise};

/// One chosen revision and what its runs left.
pub struct RevisionRuns<'a> {
    pub label: String,
    /// Oldest first.
    pub digests: Vec<&'a RunDigest>,
    /// The load of each run in words ("no load", "ferrous workpiece"), beside `digests`.
    pub loads: Vec<&'static str>,
    /// Supply and loads of all its runs.
    pub conditions: Conditions,
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
    format!("{:.1}\u{a0}%", v * 100.0)
}

fn points(v: f64) -> String {
    format!("{:.1} points", v * 100.0)
}

fn celsius(v: f64) -> String {
    format!("{v:.1}\u{a0}°C")
}

fn kelvin(v: f64) -> String {
    format!("{v:.1}\u{a0}K")
}

/// Each revision's runs' values of one quantity, with their conditions.
fn entries(revisions: &[RevisionRuns], value: &dyn Fn(&RunDigest) -> Option<f64>) -> Vec<Entry> {
    revisions
        .iter()
        .map(|r| Entry {
            revision: r.label.clone(),
            runs: r
                .digests
                .iter()
                .zip(&r.loads)
                .filter_map(|(d, load)| {
                    Some(RunValue {
                        supply_voltage_v: d.supply_voltage_v,
                        load: (*load).to_string(),
                        value: value(d)?,
                    })
                })
                .collect(),
        })
        .collect()
}

fn highest(v: &[f64]) -> Option<f64> {
    v.iter().copied().reduce(f64::max)
}

fn lowest(v: &[f64]) -> Option<f64> {
    v.iter().copied().reduce(f64::min)
}

fn middle(v: &[f64]) -> Option<f64> {
    median(v.iter().copied())
}

/// The rows of the measured-results section, each judged against `baseline` (an index into
/// `revisions`).
pub fn measured_rows(revisions: &[RevisionRuns], baseline: usize) -> Vec<CompareRow> {
    let per = |f: &dyn Fn(&RevisionRuns) -> Option<f64>| -> Vec<(String, Option<f64>)> {
        revisions.iter().map(|r| (r.label.clone(), f(r))).collect()
    };
    let mut rows = vec![CompareRow::numbers(
        "runs",
        "Runs logged",
        &per(&|r| Some(r.digests.len() as f64)),
        |v| format!("{v}"),
    )];
    rows.push(CompareRow::text(
        "conditions",
        "Conditions (median supply, loads)",
        revisions
            .iter()
            .map(|r| Cell::plain(&r.label, conditions_text(&r.conditions)))
            .collect(),
    ));
    for (method, of) in METHODS {
        // Idle runs carry no efficiency (see `analysis::run::run_efficiency`).
        let efficiency = move |d: &RunDigest| of(&d.efficiency);
        let per_revision = entries(revisions, &efficiency);
        if per_revision.iter().all(|e| e.runs.is_empty()) {
            continue;
        }
        for (key, title, pick) in [
            ("best", "Best", highest as fn(&[f64]) -> Option<f64>),
            ("median", "Median", middle),
        ] {
            rows.push(CompareRow::judged(
                format!("{key}-efficiency-{method}"),
                format!("{title} efficiency ({method})"),
                &per_revision,
                baseline,
                Summary {
                    pick,
                    instrument: EFFICIENCY_UNCERTAINTY,
                    direction: Direction::Higher,
                },
                Shown {
                    value: &percent,
                    difference: &points,
                },
            ));
        }
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
        // Per run, the role's hottest unit and its least margin.
        let hottest = move |d: &RunDigest| {
            d.trend
                .parts
                .iter()
                .filter(|p| p.part == role)
                .map(|p| p.t_max_c)
                .reduce(f64::max)
        };
        let least_margin = move |d: &RunDigest| {
            d.trend
                .parts
                .iter()
                .filter(|p| p.part == role)
                .filter_map(|p| p.margin_k)
                .reduce(f64::min)
        };
        rows.push(CompareRow::judged(
            format!("t-max-{}", role.key()),
            format!("{}: hottest reading", role.title()),
            &entries(revisions, &hottest),
            baseline,
            Summary {
                pick: highest,
                instrument: TEMPERATURE_UNCERTAINTY_K,
                direction: Direction::Lower,
            },
            Shown {
                value: &celsius,
                difference: &kelvin,
            },
        ));
        rows.push(CompareRow::judged(
            format!("margin-{}", role.key()),
            format!("{}: least margin to its limit", role.title()),
            &entries(revisions, &least_margin),
            baseline,
            Summary {
                pick: lowest,
                instrument: TEMPERATURE_UNCERTAINTY_K,
                direction: Direction::Higher,
            },
            Shown {
                value: &kelvin,
                difference: &kelvin,
            },
        ));
    }
    rows.push(CompareRow::numbers(
        "median-frequency",
        "Median operating frequency",
        &per(&|r| median(r.digests.iter().filter_map(|d| d.frequency_hz))),
        |v| eng_precise(v, Unit::Hertz).to_string(),
    ));
    rows.push(CompareRow::numbers(
        "part-failed-runs",
        "Runs that ended with a part failed",
        &per(&|r| (!r.digests.is_empty()).then_some(r.part_failed as f64)),
        |v| format!("{v}"),
    ));
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
        "Kinds of finding at failure",
        &count_at(Severity::Failure),
        |v| format!("{v}"),
    ));
    rows.push(CompareRow::numbers(
        "warning-flags",
        "Kinds of finding at warning",
        &count_at(Severity::Warning),
        |v| format!("{v}"),
    ));
    rows.push(CompareRow::text(
        "flags",
        "Findings, the worst of each kind",
        revisions
            .iter()
            .zip(&worst)
            .map(|(r, w)| {
                let mut listed: Vec<(&str, Severity, &str)> =
                    w.iter().map(|(code, (s, m))| (*code, *s, *m)).collect();
                listed.sort_by_key(|(code, s, _)| (std::cmp::Reverse(*s), *code));
                let mut cell = Cell::plain(
                    &r.label,
                    if listed.is_empty() {
                        "none".to_string()
                    } else {
                        listed
                            .iter()
                            .map(|(code, s, _)| {
                                format!("{} ({})", flag_title(code), severity_word(*s))
                            })
                            .collect::<Vec<_>>()
                            .join(", ")
                    },
                );
                cell.details = listed
                    .iter()
                    .map(|(code, s, m)| {
                        format!("{} — {}: {m}", flag_title(code), severity_word(*s))
                    })
                    .collect();
                cell
            })
            .collect(),
    ));
    rows
}

/// "24.0 V, steel" in words for the conditions row.
fn conditions_text(c: &Conditions) -> String {
    let supply = c.supply_voltage_v.map_or_else(
        || "supply not logged".to_string(),
        |v| format!("{v:.1}\u{a0}V"),
    );
    if c.loads.is_empty() {
        supply
    } else {
        format!("{supply}, {}", c.loads.join(" and "))
    }
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
