//! The rules that raise a run's flags, and how flags are merged and ordered.

use std::collections::HashMap;

use crate::analysis::flags::{Flag, Severity};
use crate::analysis::limits;
use crate::analysis::model::OperatingPoint;
use crate::analysis::part_limits::LimitBasis;
use crate::analysis::reading::Reading;
use crate::analysis::run::{RunInput, ThermalResult};
use crate::channel::Channel;
use crate::parts::Role;

/// Within this fraction of the configured current limit the supply is taken to be limiting.
pub const SUPPLY_LIMIT_BAND: f64 = 0.02;
/// Supply current above which the driver is drawing power (not just gate bias).
pub const DRAWING_CURRENT_A: f64 = 0.1;
/// A predicted crossing within the run's duration plus this is worth a warning: the next run of
/// the same length, or this one left on a minute longer, gets there.
pub const TIME_TO_LIMIT_GRACE_S: f64 = 60.0;

const SOURCE_CAP: &str = "Film capacitors are usually rated 85 °C (makers' data); their life halves for \
     about every 8 K more (Kong & Lee, IEEE Transactions on Dielectrics and Electrical Insulation, 2004)";
const SOURCE_FIT: &str = "A first-order heating curve fitted to the readings (lumped capacitance: \
     Incropera & DeWitt, Fundamentals of Heat and Mass Transfer)";

/// All of a run's flags: the model's and the run rules', one per code and part, worst first.
pub fn run_flags(
    input: &RunInput,
    op: Option<&OperatingPoint>,
    thermal: &[ThermalResult],
    duration_s: Option<f64>,
    model_flags: Vec<Flag>,
) -> Vec<Flag> {
    let current_limit_a = input
        .supply_current_limit_a
        .or_else(|| input.parts.supply.as_ref()?.current_limit_a);
    // Measured findings first: among equals the first is kept, and a measured maximum says more
    // (which unit, how hot it got) than the model's reading of the latest temperature.
    let mut flags = Vec::new();
    flags.extend(supply_limit_flag(
        op.and_then(|op| op.supply_current_a),
        current_limit_a,
    ));
    flags.extend(no_oscillation_flag(input.readings));
    flags.extend(overtemp_flags(thermal));
    flags.extend(limit_assumed_flag(thermal));
    flags.extend(time_to_limit_flags(thermal, duration_s.unwrap_or(0.0)));
    flags.extend(model_flags);
    merge_flags(flags)
}

/// Keeps the worst flag of each (code, part), the first of equals, then sorts worst first
/// (stable, so the rules' order stays among equals).
pub fn merge_flags(flags: Vec<Flag>) -> Vec<Flag> {
    let mut kept: Vec<Flag> = Vec::new();
    let mut index: HashMap<(&'static str, Option<Role>), usize> = HashMap::new();
    for flag in flags {
        match index.get(&(flag.code, flag.part)) {
            Some(&i) if kept[i].severity >= flag.severity => {}
            Some(&i) => kept[i] = flag,
            None => {
                index.insert((flag.code, flag.part), kept.len());
                kept.push(flag);
            }
        }
    }
    kept.sort_by_key(|f| std::cmp::Reverse(f.severity));
    kept
}

/// `supply-limit`: the steady supply current sits within 2 % of (or above) the configured limit.
pub fn supply_limit_flag(
    median_current_a: Option<f64>,
    current_limit_a: Option<f64>,
) -> Option<Flag> {
    let (i_a, limit_a) = median_current_a.zip(current_limit_a.filter(|l| *l > 0.0))?;
    (i_a >= (1.0 - SUPPLY_LIMIT_BAND) * limit_a).then(|| Flag {
        code: "supply-limit",
        severity: Severity::Warning,
        part: Some(Role::Supply),
        message: format!(
            "The steady supply current, {i_a:.2} A, sits at the supply's {limit_a:.2} A limit: \
             the supply is limiting and the oscillation may not have started."
        ),
        source: "Common practice: a driver that does not start pulls its supply into current limit",
    })
}

/// `no-oscillation`: the driver drew current (> 0.1 A) but no frequency was recorded.
pub fn no_oscillation_flag(readings: &[Reading]) -> Option<Flag> {
    let max_current_a = readings
        .iter()
        .filter(|r| r.channel == Channel::SupplyCurrent && r.value.is_finite())
        .map(|r| r.value)
        .max_by(f64::total_cmp)?;
    let frequency_recorded = readings
        .iter()
        .any(|r| r.channel == Channel::Frequency && r.value > 0.0);
    (max_current_a > DRAWING_CURRENT_A && !frequency_recorded).then(|| Flag {
        code: "no-oscillation",
        // A warning, not a failure: a run logged without a frequency meter looks the same.
        severity: Severity::Warning,
        part: None,
        message: format!(
            "The supply delivered up to {max_current_a:.2} A but no frequency was recorded: \
             the driver may not be oscillating, with both switches conducting into the chokes. \
             One frequency reading settles it."
        ),
        source: "Common practice: a stalled cross-coupled driver shorts the supply through the chokes",
    })
}

fn title_of(result: &ThermalResult) -> String {
    result
        .channel
        .parse::<Channel>()
        .map_or_else(|_| result.channel.clone(), |c| c.title())
}

/// `cap-overtemp` for tank capacitors (failure at or above the limit, warning within 10 K) and
/// `part-overtemp` (failure) for other parts at or above theirs, from the measured maximum.
pub fn overtemp_flags(thermal: &[ThermalResult]) -> Vec<Flag> {
    // Least margin first (the hotter first among equals): one flag is kept per part kind, and
    // it must name the unit that went furthest past its limit, not the first one listed.
    let mut by_margin: Vec<&ThermalResult> = thermal.iter().collect();
    by_margin.sort_by(|a, b| {
        let margin = |r: &ThermalResult| r.margin_k.unwrap_or(f64::INFINITY);
        margin(a)
            .total_cmp(&margin(b))
            .then(b.t_max_c.total_cmp(&a.t_max_c))
    });
    by_margin
        .into_iter()
        .filter_map(|r| {
            let (limit_c, margin_k) = r.limit_c.zip(r.margin_k)?;
            let title = title_of(r);
            let t_max = r.t_max_c;
            if r.part == Role::TankCapacitor {
                let severity = if margin_k <= 0.0 {
                    Severity::Failure
                } else if margin_k < limits::CAP_TEMP_WARNING_BAND_K.value {
                    Severity::Warning
                } else {
                    return None;
                };
                return Some(Flag {
                    code: "cap-overtemp",
                    severity,
                    part: Some(r.part),
                    message: format!(
                        "{title} reached {t_max:.1} °C against its {limit_c:.0} °C limit \
                         (margin {margin_k:.1} K); its life halves for about every 8 K more (Kong & Lee 2004)."
                    ),
                    source: SOURCE_CAP,
                });
            }
            (margin_k <= 0.0).then(|| Flag {
                code: "part-overtemp",
                severity: Severity::Failure,
                part: Some(r.part),
                message: format!(
                    "{title} reached {t_max:.1} °C, at or above its {limit_c:.0} °C limit."
                ),
                source: "The part's rating; for a switch case, the junction maximum less the loss times the \
                 junction-to-case thermal resistance",
            })
        })
        .collect()
}

/// A note when a tank capacitor's limit was assumed because the revision gives no rating.
pub fn limit_assumed_flag(thermal: &[ThermalResult]) -> Option<Flag> {
    thermal
        .iter()
        .any(|r| r.limit_basis == Some(LimitBasis::AssumedCapacitorRating))
        .then(|| Flag {
            code: "cap-limit-assumed",
            severity: Severity::Note,
            part: Some(Role::TankCapacitor),
            message: "No rated temperature is given for the tank capacitors: 85 °C is assumed."
                .into(),
            source: "Film capacitors are usually rated 85 °C (makers' data)",
        })
}

/// `time-to-limit`: a trustworthy fit reaches the limit within the run's duration + 60 s
/// (warning), or later (note). Parts already over the limit have their overtemp flag instead.
/// The soonest crossing per part is reported.
pub fn time_to_limit_flags(thermal: &[ThermalResult], duration_s: f64) -> Vec<Flag> {
    let mut soonest: Vec<&ThermalResult> = thermal
        .iter()
        .filter(|r| r.time_to_limit_s.is_some() && r.margin_k.is_some_and(|m| m > 0.0))
        .collect();
    soonest.sort_by(|a, b| {
        a.time_to_limit_s
            .unwrap_or(f64::INFINITY)
            .total_cmp(&b.time_to_limit_s.unwrap_or(f64::INFINITY))
    });
    soonest
        .into_iter()
        .filter_map(|r| {
            let t_s = r.time_to_limit_s?;
            let limit_c = r.limit_c?;
            let t_final = r.fit.as_ref()?.t_final_c;
            let soon = t_s <= duration_s + TIME_TO_LIMIT_GRACE_S;
            let title = title_of(r);
            Some(Flag {
                code: "time-to-limit",
                severity: if soon {
                    Severity::Warning
                } else {
                    Severity::Note
                },
                part: Some(r.part),
                message: format!(
                    "{title} is heading for {t_final:.1} °C and would reach its {limit_c:.0} °C \
                     limit {t_s:.0} s after its first reading (this run lasted {duration_s:.0} s)."
                ),
                source: SOURCE_FIT,
            })
        })
        .collect()
}
