//! Whether one set of runs did better than another: only when the runs were made under
//! comparable conditions and the difference is larger than the two values' combined
//! uncertainty.
//!
//! Combined standard uncertainty of a difference u = √(u₁² + u₂²) for independent values
//! (JCGM 100:2008, *Evaluation of measurement data — Guide to the expression of uncertainty in
//! measurement*, §5.1.2). Each value's uncertainty joins the instrument's with the scatter of the
//! runs behind it: the standard error s/√n (the same guide, §4.2.3, a Type A evaluation).

use serde::Serialize;

/// Supplies further apart than this fraction make two sets of runs not comparable [practice:
/// the tank voltage, and with it every loss, follows the supply, so 5 % of supply is already
/// about 10 % of loss].
pub const SUPPLY_MATCH_FRACTION: f64 = 0.05;

/// Uncertainty of one hand-held part-temperature reading, K [practice: a thermocouple or
/// infrared thermometer on a small part repeats to about a kelvin between runs].
pub const TEMPERATURE_UNCERTAINTY_K: f64 = 1.0;

/// Uncertainty of an efficiency from bench meters, as a fraction [practice: two percentage
/// points for supply meters and a kitchen-scale water mass].
pub const EFFICIENCY_UNCERTAINTY: f64 = 0.02;

/// The conditions a set of runs was made under.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Conditions {
    /// The median supply voltage of the runs, when measured.
    pub supply_voltage_v: Option<f64>,
    /// The load kinds of the runs, in words ("steel", "no load"), sorted, each once.
    pub loads: Vec<String>,
}

impl Conditions {
    /// Conditions of runs given as (supply voltage, load in words).
    pub fn of_runs<'a>(runs: impl IntoIterator<Item = (Option<f64>, &'a str)>) -> Conditions {
        let mut supplies = Vec::new();
        let mut loads: Vec<String> = Vec::new();
        for (supply, load) in runs {
            supplies.extend(supply.filter(|v| v.is_finite()));
            if !loads.iter().any(|l| l == load) {
                loads.push(load.to_string());
            }
        }
        loads.sort();
        Conditions {
            supply_voltage_v: super::series::median(supplies),
            loads,
        }
    }
}

/// Why two sets of runs cannot be compared, in words; `None` when they can.
pub fn not_comparable_because(base: &Conditions, other: &Conditions) -> Option<String> {
    if base.loads != other.loads {
        return Some(format!(
            "different loads ({} against {})",
            base.loads.join(" and "),
            other.loads.join(" and ")
        ));
    }
    if base.loads.len() > 1 {
        return Some(format!("mixed loads ({})", base.loads.join(" and ")));
    }
    match (base.supply_voltage_v, other.supply_voltage_v) {
        (Some(a), Some(b)) if (a - b).abs() > SUPPLY_MATCH_FRACTION * a.abs().max(b.abs()) => {
            Some(format!(
                "supplies more than {:.0}\u{a0}% apart ({} against {})",
                SUPPLY_MATCH_FRACTION * 100.0,
                volts(a),
                volts(b)
            ))
        }
        (Some(_), Some(_)) => None,
        _ => Some("the supply voltage was not logged".into()),
    }
}

fn volts(v: f64) -> String {
    format!("{v:.1}\u{a0}V")
}

/// A value from a set of runs with its standard uncertainty, in the value's unit.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Measured {
    pub value: f64,
    pub uncertainty: f64,
}

impl Measured {
    /// A value taken from per-run values (its median, best or worst): the instrument's
    /// uncertainty joined with the runs' standard error when there are two or more.
    pub fn from_runs(value: f64, per_run: &[f64], instrument: f64) -> Measured {
        let n = per_run.len();
        let scatter = if n >= 2 {
            let mean = per_run.iter().sum::<f64>() / n as f64;
            let variance = per_run.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
            variance / n as f64
        } else {
            0.0
        };
        Measured {
            value,
            uncertainty: (instrument * instrument + scatter).sqrt(),
        }
    }
}

/// Which way is better.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Direction {
    Higher,
    Lower,
}

/// How a value compares with the baseline's.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "verdict", rename_all = "snake_case")]
pub enum Verdict {
    Better {
        difference: f64,
        combined: f64,
    },
    Worse {
        difference: f64,
        combined: f64,
    },
    /// The difference is within the combined uncertainty.
    NoClearDifference {
        difference: f64,
        combined: f64,
    },
    NotComparable {
        why: String,
    },
}

/// Coverage factor of the combined uncertainty for a verdict: k = 2, about 95 % for a normal
/// distribution (JCGM 100:2008, §6.2).
pub const COVERAGE_FACTOR: f64 = 2.0;

/// Judges `other` against `base`: better or worse only when the runs are comparable and the
/// difference exceeds k = 2 times the combined uncertainty.
pub fn judge(
    base: Measured,
    base_conditions: &Conditions,
    other: Measured,
    other_conditions: &Conditions,
    direction: Direction,
) -> Verdict {
    if let Some(why) = not_comparable_because(base_conditions, other_conditions) {
        return Verdict::NotComparable { why };
    }
    let difference = other.value - base.value;
    let combined = COVERAGE_FACTOR * base.uncertainty.hypot(other.uncertainty);
    let improved = match direction {
        Direction::Higher => difference > 0.0,
        Direction::Lower => difference < 0.0,
    };
    if difference.abs() <= combined || !difference.is_finite() {
        Verdict::NoClearDifference {
            difference,
            combined,
        }
    } else if improved {
        Verdict::Better {
            difference,
            combined,
        }
    } else {
        Verdict::Worse {
            difference,
            combined,
        }
    }
}

/// One run's value of a compared quantity, with the conditions it was made under.
#[derive(Debug, Clone, PartialEq)]
pub struct RunValue {
    pub supply_voltage_v: Option<f64>,
    /// The load in words ("no load", "ferrous workpiece").
    pub load: String,
    pub value: f64,
}

/// How the value of a set of runs is taken from its runs' values, and how uncertain a reading is.
#[derive(Clone, Copy)]
pub struct Summary {
    pub pick: fn(&[f64]) -> Option<f64>,
    pub instrument: f64,
    pub direction: Direction,
}

/// The verdict on `other` against `base`, like with like: only the runs of the load kinds both
/// have are compared (runs with a workpiece against runs with a workpiece). Also returns the
/// loads the verdict rests on, when some runs were left out.
pub fn judge_runs(
    base: &[RunValue],
    other: &[RunValue],
    how: Summary,
) -> (Verdict, Option<String>) {
    let shared: Vec<&str> = {
        let mut loads: Vec<&str> = base
            .iter()
            .map(|r| r.load.as_str())
            .filter(|l| other.iter().any(|o| o.load == *l))
            .collect();
        loads.sort();
        loads.dedup();
        loads
    };
    if shared.is_empty() {
        let words = |runs: &[RunValue]| {
            Conditions::of_runs(runs.iter().map(|r| (None, r.load.as_str())))
                .loads
                .join(" and ")
        };
        return (
            Verdict::NotComparable {
                why: format!("different loads ({} against {})", words(base), words(other)),
            },
            None,
        );
    }
    let side = |runs: &[RunValue]| {
        let kept: Vec<&RunValue> = runs
            .iter()
            .filter(|r| shared.contains(&r.load.as_str()))
            .collect();
        let values: Vec<f64> = kept.iter().map(|r| r.value).collect();
        let conditions =
            Conditions::of_runs(kept.iter().map(|r| (r.supply_voltage_v, r.load.as_str())));
        let measured = (how.pick)(&values).map(|v| Measured::from_runs(v, &values, how.instrument));
        (measured, conditions, kept.len() < runs.len())
    };
    let (base_value, base_conditions, base_cut) = side(base);
    let (other_value, other_conditions, other_cut) = side(other);
    let qualifier = (base_cut || other_cut).then(|| format!("runs with {}", shared.join(" and ")));
    match (base_value, other_value) {
        (Some(b), Some(o)) => (
            judge(b, &base_conditions, o, &other_conditions, how.direction),
            qualifier,
        ),
        _ => (
            Verdict::NotComparable {
                why: "no value to compare".into(),
            },
            None,
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(supply_v: f64, load: &str) -> Conditions {
        Conditions::of_runs([(Some(supply_v), load)])
    }

    fn reading(value: f64) -> Measured {
        Measured::from_runs(value, &[value], TEMPERATURE_UNCERTAINTY_K)
    }

    #[test]
    fn a_fifth_of_a_kelvin_is_not_better() {
        // 2·√(1² + 1²) = 2.83 K of combined expanded uncertainty (JCGM 100:2008 §5.1.2, §6.2).
        let steel = at(24.0, "steel");
        let v = judge(
            reading(60.0),
            &steel,
            reading(59.8),
            &steel,
            Direction::Lower,
        );
        let Verdict::NoClearDifference {
            difference,
            combined,
        } = v
        else {
            panic!("{v:?}")
        };
        assert!((difference + 0.2).abs() < 1e-9);
        assert!((combined - 2.0 * 2f64.sqrt()).abs() < 1e-12);
        assert!(matches!(
            judge(
                reading(60.0),
                &steel,
                reading(55.0),
                &steel,
                Direction::Lower
            ),
            Verdict::Better { .. }
        ));
        assert!(matches!(
            judge(
                reading(60.0),
                &steel,
                reading(65.0),
                &steel,
                Direction::Lower
            ),
            Verdict::Worse { .. }
        ));
    }

    #[test]
    fn runs_at_24_and_36_volts_are_not_comparable() {
        let v = judge(
            reading(60.0),
            &at(24.0, "steel"),
            reading(40.0),
            &at(36.0, "steel"),
            Direction::Lower,
        );
        let Verdict::NotComparable { why } = v else {
            panic!("{v:?}")
        };
        assert!(why.contains("24.0\u{a0}V against 36.0\u{a0}V"), "{why}");
        // Within 5 %: 24 V and 25 V are comparable.
        assert!(not_comparable_because(&at(24.0, "steel"), &at(25.0, "steel")).is_none());
    }

    #[test]
    fn different_or_mixed_loads_are_not_comparable() {
        let why = not_comparable_because(&at(24.0, "steel"), &at(24.0, "no load")).unwrap();
        assert!(why.contains("different loads"), "{why}");
        let mixed = Conditions::of_runs([(Some(24.0), "steel"), (Some(24.0), "no load")]);
        assert!(
            not_comparable_because(&mixed, &mixed)
                .unwrap()
                .contains("mixed")
        );
        let unlogged = Conditions::of_runs([(None, "steel")]);
        assert!(not_comparable_because(&unlogged, &unlogged).is_some());
    }

    #[test]
    fn like_is_compared_with_like() {
        let run = |load: &str, value| RunValue {
            supply_voltage_v: Some(24.0),
            load: load.into(),
            value,
        };
        let how = Summary {
            pick: |v| v.iter().copied().reduce(f64::max),
            instrument: TEMPERATURE_UNCERTAINTY_K,
            direction: Direction::Lower,
        };
        // Idle runs only against idle and loaded runs: the idle runs are compared.
        let base = [run("no load", 105.7)];
        let other = [run("no load", 40.0), run("ferrous workpiece", 25.0)];
        let (verdict, on) = judge_runs(&base, &other, how);
        assert!(matches!(verdict, Verdict::Better { .. }), "{verdict:?}");
        assert_eq!(on.as_deref(), Some("runs with no load"));
        // Nothing in common: not comparable.
        let (verdict, _) = judge_runs(&base, &[run("water", 30.0)], how);
        assert!(
            matches!(verdict, Verdict::NotComparable { ref why } if why.contains("different loads"))
        );
    }

    #[test]
    fn scatter_between_runs_widens_the_uncertainty() {
        // Runs 50, 52, 54 K: s = 2, s/√3 = 1.1547; with 1 K instrument √(1 + 4/3) = 1.5275 K.
        let m = Measured::from_runs(52.0, &[50.0, 52.0, 54.0], 1.0);
        assert!((m.uncertainty - (1.0f64 + 4.0 / 3.0).sqrt()).abs() < 1e-12);
    }
}
