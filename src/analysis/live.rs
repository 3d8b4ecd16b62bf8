//! Margins of an open run, so the bench user stops before a part reaches its limit.

use serde::Serialize;

use crate::analysis::flags::Severity;
use crate::analysis::model::evaluate;
use crate::analysis::operating_point::operating_point;
use crate::analysis::part_limits::part_limit;
use crate::analysis::reading::Reading;
use crate::analysis::series::{part_channels, samples};
use crate::analysis::thermal_fit::fit_first_order;
use crate::channel::Channel;
use crate::parts::Parts;

/// Warn this long before a predicted crossing [practice]: time to notice, switch the supply off
/// and let the part's heat spread before it peaks.
pub const LIVE_WARNING_S: f64 = 120.0;
/// Warn this close to the limit even without a trustworthy prediction [practice].
pub const LIVE_WARNING_MARGIN_K: f64 = 5.0;

/// One part channel's standing during an open run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LiveMargin {
    pub channel: String,
    pub title: String,
    /// The latest reading.
    pub t_now_c: f64,
    pub limit_c: Option<f64>,
    pub margin_k: Option<f64>,
    /// Seconds from `now_s` until the fitted curve reaches the limit, once the fit is
    /// trustworthy; 0 when the part is already at or over it.
    pub seconds_to_limit: Option<f64>,
    pub severity: Severity,
}

/// Live margins of every part channel, the switch limit at the loss the model predicts for the
/// run so far. Most urgent first.
pub fn live_margins(
    parts: &Parts,
    readings: &[Reading],
    supply_setting_v: Option<f64>,
    now_s: f64,
) -> Vec<LiveMargin> {
    let switch_loss_w = operating_point(readings, supply_setting_v)
        .and_then(|op| evaluate(parts, &op).switch_conduction_loss_w);
    live_margins_at_loss(parts, readings, switch_loss_w, now_s)
}

/// Live margins with a given switch conduction loss (per switch). Most urgent first.
pub fn live_margins_at_loss(
    parts: &Parts,
    readings: &[Reading],
    switch_loss_w: Option<f64>,
    now_s: f64,
) -> Vec<LiveMargin> {
    let mut margins: Vec<LiveMargin> = part_channels(readings)
        .into_iter()
        .filter_map(|c| live_margin(parts, c, &samples(readings, c), switch_loss_w, now_s))
        .collect();
    margins.sort_by(|a, b| {
        b.severity.cmp(&a.severity).then_with(|| {
            let m = |x: &LiveMargin| x.margin_k.unwrap_or(f64::INFINITY);
            m(a).total_cmp(&m(b))
        })
    });
    margins
}

/// One channel's live margin from its (time s, °C) samples.
pub fn live_margin(
    parts: &Parts,
    channel: Channel,
    samples: &[(f64, f64)],
    switch_loss_w: Option<f64>,
    now_s: f64,
) -> Option<LiveMargin> {
    let role = channel.role()?;
    let t_now_c = samples.last()?.1;
    let limit_c = part_limit(parts, role, switch_loss_w).map(|l| l.limit_c);
    let margin_k = limit_c.map(|l| l - t_now_c);
    let seconds_to_limit = match (limit_c, margin_k) {
        (_, Some(m)) if m <= 0.0 => Some(0.0),
        (Some(l), _) => fit_first_order(samples)
            .filter(|f| f.is_trusted())
            .and_then(|f| Some(f.t0_s + f.time_to_limit_s(l)? - now_s))
            .map(|s| s.max(0.0)),
        _ => None,
    };
    let severity = severity_of(margin_k, seconds_to_limit);
    Some(LiveMargin {
        channel: channel.to_string(),
        title: channel.title(),
        t_now_c,
        limit_c,
        margin_k,
        seconds_to_limit,
        severity,
    })
}

fn severity_of(margin_k: Option<f64>, seconds_to_limit: Option<f64>) -> Severity {
    match margin_k {
        Some(m) if m <= 0.0 => Severity::Failure,
        Some(m)
            if m < LIVE_WARNING_MARGIN_K
                || seconds_to_limit.is_some_and(|s| s <= LIVE_WARNING_S) =>
        {
            Severity::Warning
        }
        _ => Severity::Note,
    }
}

/// A margin computed at `from_s` as it stands at `now_s`, with no new reading in between: the
/// predicted crossing is `now_s − from_s` closer and the severity is rated again. This lets a
/// page keep the fits of an open run until a reading arrives instead of refitting every view.
pub fn margin_at(margin: &LiveMargin, from_s: f64, now_s: f64) -> LiveMargin {
    let seconds_to_limit = margin
        .seconds_to_limit
        .map(|s| (s - (now_s - from_s)).max(0.0));
    LiveMargin {
        seconds_to_limit,
        severity: severity_of(margin.margin_k, seconds_to_limit),
        ..margin.clone()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::thermal_fit::first_order_temperature_c;
    use crate::parts::Role;

    const CAP: Channel = Channel::PartTemp {
        role: Role::TankCapacitor,
        index: None,
    };
    const COIL: Channel = Channel::PartTemp {
        role: Role::WorkCoil,
        index: None,
    };

    /// A capacitor heading for 25 + 80 = 105 °C with τ 100 s, read every 10 s up to `until_s`.
    fn heating(until_s: f64) -> Vec<Reading> {
        (0..=(until_s / 10.0) as usize)
            .map(|k| {
                let t = 10.0 * k as f64;
                Reading::new(t, CAP, first_order_temperature_c(25.0, 105.0, 100.0, t))
            })
            .collect()
    }

    #[test]
    fn predicts_seconds_from_now() {
        // Derived (lumped model): 85 °C is reached at −100·ln(1 − 60/80) = 100·ln 4 = 138.63 s.
        // At 120 s (readings over 1.2 τ) that is 18.63 s away: a warning.
        let r = heating(120.0);
        let m = live_margins_at_loss(&Parts::default(), &r, None, 120.0);
        assert_eq!(m.len(), 1);
        let m = &m[0];
        assert_eq!(m.limit_c, Some(85.0));
        assert!((m.t_now_c - first_order_temperature_c(25.0, 105.0, 100.0, 120.0)).abs() < 1e-12);
        assert!((m.seconds_to_limit.unwrap() - (100.0 * 4f64.ln() - 120.0)).abs() < 1e-3);
        assert_eq!(m.severity, Severity::Warning);
        assert_eq!(m.title, "Tank capacitor temperature");
    }

    #[test]
    fn a_kept_margin_counts_down_as_a_fresh_fit_would() {
        // The same readings fitted at 0 s and moved on to 120 s, against a fit made at 120 s.
        let r = heating(120.0);
        let early = &live_margins_at_loss(&Parts::default(), &r, None, 0.0)[0];
        let fresh = &live_margins_at_loss(&Parts::default(), &r, None, 120.0)[0];
        let moved = margin_at(early, 0.0, 120.0);
        assert!((moved.seconds_to_limit.unwrap() - fresh.seconds_to_limit.unwrap()).abs() < 1e-9);
        assert_eq!(moved.severity, fresh.severity);
        assert_eq!(
            margin_at(early, 0.0, 1e4).seconds_to_limit,
            Some(0.0),
            "never below 0"
        );
    }

    #[test]
    fn no_prediction_before_the_fit_is_trustworthy() {
        // 40 s of readings against τ 100 s: not yet one time constant.
        let m = &live_margins_at_loss(&Parts::default(), &heating(40.0), None, 40.0)[0];
        assert_eq!(m.seconds_to_limit, None);
        assert!(m.margin_k.unwrap() > LIVE_WARNING_MARGIN_K);
        assert_eq!(m.severity, Severity::Note);
    }

    #[test]
    fn over_the_limit_is_a_failure_now() {
        let r = heating(200.0);
        let m = &live_margins_at_loss(&Parts::default(), &r, None, 200.0)[0];
        assert!(m.margin_k.unwrap() < 0.0);
        assert_eq!(m.seconds_to_limit, Some(0.0));
        assert_eq!(m.severity, Severity::Failure);
    }

    #[test]
    fn parts_without_a_limit_are_listed_last_as_notes() {
        let mut r = heating(120.0);
        r.push(Reading::new(60.0, COIL, 70.0));
        let m = live_margins_at_loss(&Parts::default(), &r, None, 120.0);
        assert_eq!(m.len(), 2);
        assert_eq!(m[1].channel, "temp.work_coil");
        assert_eq!((m[1].limit_c, m[1].severity), (None, Severity::Note));
    }
}
