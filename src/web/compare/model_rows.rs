//! The model of each chosen revision at one common supply voltage, as rows: the quantities a
//! change of parts moves, and the count of the model's flags by severity. Pure.

use super::measured::severity_word;
use super::rows::{Cell, CompareRow};
use crate::analysis::flags::{Severity, flag_title};
use crate::analysis::model::{OperatingPoint, evaluate, validate};
use crate::analysis::model_table::quantity_rows;
use crate::parts::Parts;

/// Supply used when none of the chosen revisions has a nominal one, V.
pub const FALLBACK_SUPPLY_V: f64 = 24.0;

/// The quantities compared, by their JSON names, in this order.
pub const KEY_QUANTITIES: &[&str] = &[
    "resonant_frequency_hz",
    "operating_frequency_hz",
    "tank_rms_voltage_v",
    "tank_rms_current_a",
    "capacitor_rms_current_per_unit_a",
    "capacitor_loss_w",
    "switch_peak_voltage_v",
    "switch_voltage_margin",
    "choke_reactance_ratio",
    "coil_copper_loss_w",
];

/// The common supply when none is typed: the highest nominal supply among the revisions.
pub fn default_supply_v<'a>(parts: impl IntoIterator<Item = &'a Parts>) -> (f64, bool) {
    parts
        .into_iter()
        .filter_map(|p| p.supply.as_ref()?.nominal_voltage_v)
        .reduce(f64::max)
        .map_or((FALLBACK_SUPPLY_V, false), |v| (v, true))
}

/// The model's rows for each revision at `supply_voltage_v`. A revision the model refuses gets
/// the reason on its line instead of numbers.
pub fn model_rows(revisions: &[(String, &Parts)], supply_voltage_v: f64) -> Vec<CompareRow> {
    let op = OperatingPoint {
        supply_voltage_v,
        supply_current_a: None,
        frequency_hz: None,
        ambient_c: None,
        temperatures_c: Default::default(),
    };
    let reports: Vec<Result<_, String>> = revisions
        .iter()
        .map(|(_, parts)| {
            validate(parts, &op)
                .map(|()| evaluate(parts, &op))
                .map_err(|e| format!("not evaluated: {}", e.message))
        })
        .collect();
    let mut rows = Vec::new();
    for &name in KEY_QUANTITIES {
        let cells: Vec<(Cell, bool)> = revisions
            .iter()
            .zip(&reports)
            .map(|((label, _), report)| {
                let (value, known) = match report {
                    Ok(report) => {
                        let row = quantity_rows(report).into_iter().find(|r| r.name == name);
                        let known = row.as_ref().is_some_and(|r| r.value.is_some());
                        (row.map_or_else(|| "—".into(), |r| r.display()), known)
                    }
                    Err(reason) => (reason.clone(), false),
                };
                (Cell::plain(label.clone(), value), known)
            })
            .collect();
        if !cells.iter().any(|(_, known)| *known) {
            continue;
        }
        let title = reports
            .iter()
            .find_map(|r| r.as_ref().ok())
            .and_then(|report| quantity_rows(report).into_iter().find(|r| r.name == name))
            .map_or_else(|| name.to_string(), |r| r.title.to_string());
        rows.push(CompareRow::text(
            name,
            title,
            cells.into_iter().map(|(c, _)| c).collect(),
        ));
    }
    rows.push(CompareRow::text(
        "model-flags",
        "The model's flags",
        revisions
            .iter()
            .zip(&reports)
            .map(|((label, _), report)| match report {
                Ok(report) => {
                    let count =
                        |s: Severity| report.flags.iter().filter(|f| f.severity == s).count();
                    let words = [Severity::Failure, Severity::Warning, Severity::Note]
                        .into_iter()
                        .map(|s| {
                            let n = count(s);
                            let word = severity_word(s);
                            if n == 1 {
                                format!("1 {word}")
                            } else {
                                format!("{n} {word}s")
                            }
                        })
                        .collect::<Vec<_>>()
                        .join(" · ");
                    Cell {
                        details: report
                            .flags
                            .iter()
                            .map(|f| {
                                format!(
                                    "{} — {}: {}",
                                    flag_title(f.code),
                                    severity_word(f.severity),
                                    f.message
                                )
                            })
                            .collect(),
                        ..Cell::plain(label.clone(), words)
                    }
                }
                Err(reason) => Cell::plain(label.clone(), reason.clone()),
            })
            .collect(),
    ));
    rows
}
