use super::*;

const CAP1: &str = "temp.tank_capacitor.1";

fn part(margin_k: f64, rise_k: f64, loss_w: Option<f64>) -> PartRunSummary {
    PartRunSummary {
        channel: CAP1.into(),
        part: Role::TankCapacitor,
        t_max_c: 85.0 - margin_k,
        limit_c: Some(85.0),
        margin_k: Some(margin_k),
        loss_w,
        rise_k: Some(rise_k),
        hot_time_s: 10.0,
    }
}

/// (duration s, margin K, rise K, loss W, capacitance drift) of one run.
type Row = (f64, f64, f64, Option<f64>, Option<f64>);

/// Runs of one revision, an hour apart.
fn history(rows: &[Row]) -> Vec<RunSummary> {
    rows.iter()
        .enumerate()
        .map(|(i, &(duration_s, margin, rise, loss, drift))| RunSummary {
            run_id: 100 + i as i64,
            revision_label: "r2".into(),
            started_at_unix_s: 1_700_000_000 + 3600 * i as i64,
            duration_s,
            parts: vec![part(margin, rise, loss)],
            inferred_capacitance_drift: drift,
        })
        .collect()
}

fn degrading(trends: &BuildTrends) -> Vec<&Flag> {
    trends
        .flags
        .iter()
        .filter(|f| f.code == "part-degrading")
        .collect()
}

#[test]
fn shrinking_margin_raises_part_degrading_and_slopes_match_hand_least_squares() {
    let runs = history(&[
        (600.0, 20.0, 30.0, None, None),
        (600.0, 18.5, 31.0, None, None),
        (1200.0, 17.4, 32.0, None, None),
        (600.0, 15.9, 33.0, None, None),
    ]);
    let trends = build_trends(&runs);
    let t = &trends.parts[0];
    // Hand-worked: x 0..3, x̄ 1.5; y 20, 18.5, 17.4, 15.9, ȳ 17.95;
    // Sxy = −1.5·2.05 − 0.5·0.55 + 0.5·(−0.55) + 1.5·(−2.05) = −6.7; Sxx = 5 → −1.34 K/run.
    // Residuals 0.04, −0.12, 0.12, −0.04: s_b = √(0.032/2/5), times t(2) = 4.303 (NIST/SEMATECH
    // e-Handbook of Statistical Methods, 2012, table 1.3.6.7.2).
    let MarginTrend::Stated {
        per_run_k,
        per_hour_k,
        runs,
        ..
    } = &t.margin_trend
    else {
        panic!(
            "50 min of running over 4 runs states a trend: {:?}",
            t.margin_trend
        )
    };
    assert_eq!(*runs, 4);
    assert!((per_run_k.slope + 1.34).abs() < 1e-12);
    assert!((per_run_k.half_width - 4.303 * 0.0032f64.sqrt()).abs() < 1e-12);
    // 50 minutes of running: no rate per hour is stated.
    assert!(per_hour_k.is_none());
    let text = t.margin_trend.text();
    assert!(
        text.starts_with("Margin −1.3\u{a0}K per run (95\u{a0}% range −1.6 to −1.1)"),
        "{text}"
    );
    assert!(text.contains("No rate per hour yet"), "{text}");
    assert_eq!(t.points[3].cumulative_running_s, 3000.0);
    assert_eq!((t.running_time_s, t.hot_time_s), (3000.0, 40.0));
    assert_eq!(trends.running_time_s, 3000.0);
    let flags = degrading(&trends);
    assert_eq!(flags.len(), 1);
    assert_eq!(flags[0].part, Some(Role::TankCapacitor));
    assert!(flags[0].message.contains("20.0 K to 15.9 K"));
}

#[test]
fn noisy_flat_margin_does_not() {
    // Scatter of a few tenths: steps −0.7, +0.8, −0.6, −0.3 are mostly negative, but the total
    // drop is 0.8 K, under 2 K.
    let runs = history(&[
        (600.0, 20.3, 30.0, None, None),
        (600.0, 19.6, 30.0, None, None),
        (600.0, 20.4, 30.0, None, None),
        (600.0, 19.8, 30.0, None, None),
        (600.0, 19.5, 30.0, None, None),
    ]);
    assert!(degrading(&build_trends(&runs)).is_empty());
}

#[test]
fn one_bad_run_is_not_a_trend() {
    // A single big drop then recovery: total drop 3 K but only one step of three negative.
    let runs = history(&[
        (600.0, 20.0, 30.0, None, None),
        (600.0, 14.0, 30.0, None, None),
        (600.0, 16.0, 30.0, None, None),
        (600.0, 17.0, 30.0, None, None),
    ]);
    assert!(degrading(&build_trends(&runs)).is_empty());
}

#[test]
fn margin_trend_is_judged_within_a_revision() {
    let mut runs = history(&[
        (600.0, 20.0, 30.0, None, None),
        (600.0, 17.0, 30.0, None, None),
        (600.0, 14.0, 30.0, None, None),
    ]);
    // The same fall spread over two revisions (a design change) is not degradation.
    runs[2].revision_label = "r3".into();
    assert!(degrading(&build_trends(&runs)).is_empty());
}

#[test]
fn rising_rise_per_watt_raises_part_degrading() {
    // Rise 30, 31, 33, 36 K at 2 W → 15, 15.5, 16.5, 18 K/W; hand-worked slope: ȳ 16.25,
    // Sxy = 1.875 + 0.375 + 0.125 + 2.625 = 5.0, Sxx 5 → 1.0 K/W per run; growth 20 %.
    let runs = history(&[
        (600.0, 20.0, 30.0, Some(2.0), None),
        (600.0, 20.0, 31.0, Some(2.0), None),
        (600.0, 20.0, 33.0, Some(2.0), None),
        (600.0, 20.0, 36.0, Some(2.0), None),
    ]);
    let trends = build_trends(&runs);
    let t = &trends.parts[0];
    assert!((t.rise_per_watt_slope_k_per_w_per_run.unwrap() - 1.0).abs() < 1e-12);
    assert_eq!(t.points[1].rise_per_watt_k_per_w, Some(15.5));
    assert!(degrading(&trends)[0].message.contains("rise per watt"));
}

#[test]
fn drifting_capacitance_raises_part_degrading() {
    let runs = history(&[
        (600.0, 20.0, 30.0, None, Some(-0.005)),
        (600.0, 20.0, 30.0, None, Some(-0.014)),
        (600.0, 20.0, 30.0, None, Some(-0.022)),
        (600.0, 20.0, 30.0, None, Some(-0.031)),
    ]);
    let flags = build_trends(&runs).flags;
    assert_eq!(flags.len(), 1);
    assert!(
        flags[0].message.contains("capacitance"),
        "{}",
        flags[0].message
    );
}

#[test]
fn wandering_or_small_capacitance_drift_does_not() {
    let wandering = history(&[
        (600.0, 20.0, 30.0, None, Some(-0.005)),
        (600.0, 20.0, 30.0, None, Some(-0.030)),
        (600.0, 20.0, 30.0, None, Some(-0.010)),
        (600.0, 20.0, 30.0, None, Some(-0.035)),
    ]);
    assert!(build_trends(&wandering).flags.is_empty());
    let small = history(&[
        (600.0, 20.0, 30.0, None, Some(-0.005)),
        (600.0, 20.0, 30.0, None, Some(-0.010)),
        (600.0, 20.0, 30.0, None, Some(-0.015)),
    ]);
    assert!(build_trends(&small).flags.is_empty());
}

#[test]
fn runs_are_ordered_by_start_time() {
    let mut runs = history(&[
        (600.0, 20.0, 30.0, None, None),
        (600.0, 18.0, 30.0, None, None),
        (600.0, 16.0, 30.0, None, None),
    ]);
    runs.reverse();
    let t = &build_trends(&runs).parts[0];
    assert_eq!(t.points[0].run_id, 100);
    // Three runs of ten minutes are the half hour a trend needs; the slope runs oldest first.
    let MarginTrend::Stated { per_run_k, .. } = &t.margin_trend else {
        panic!("{:?}", t.margin_trend)
    };
    assert!((per_run_k.slope + 2.0).abs() < 1e-12);
}

#[test]
fn a_trend_needs_three_runs_and_half_an_hour() {
    // Two runs of five minutes each losing 44 K: no trend is stated, let alone "+528 K per hour".
    let two = history(&[
        (300.0, 60.0, 30.0, None, None),
        (300.0, 16.0, 30.0, None, None),
    ]);
    let t = &build_trends(&two).parts[0];
    assert_eq!(
        t.margin_trend,
        MarginTrend::NotEnoughData {
            runs: 2,
            running_s: 600.0
        }
    );
    assert!(
        t.margin_trend
            .text()
            .starts_with("No trend yet: 2 runs and 10 min")
    );
    // Three short runs: still not enough running.
    let three_short = history(&[
        (300.0, 20.0, 30.0, None, None),
        (300.0, 18.0, 30.0, None, None),
        (300.0, 16.0, 30.0, None, None),
    ]);
    assert!(matches!(
        build_trends(&three_short).parts[0].margin_trend,
        MarginTrend::NotEnoughData { runs: 3, .. }
    ));
}

#[test]
fn a_long_history_states_an_hourly_rate_with_its_range() {
    // Four runs of 30 min: 2 h of running, margin 20, 18, 16.2, 14 K.
    let runs = history(&[
        (1800.0, 20.0, 30.0, None, None),
        (1800.0, 18.0, 30.0, None, None),
        (1800.0, 16.2, 30.0, None, None),
        (1800.0, 14.0, 30.0, None, None),
    ]);
    let t = &build_trends(&runs).parts[0];
    let MarginTrend::Stated {
        per_run_k,
        per_hour_k: Some(per_hour),
        ..
    } = &t.margin_trend
    else {
        panic!("{:?}", t.margin_trend)
    };
    // Runs are half an hour apart, so the hourly slope is twice the per-run slope, range too.
    assert!((per_hour.slope - 2.0 * per_run_k.slope).abs() < 1e-9);
    assert!((per_hour.half_width - 2.0 * per_run_k.half_width).abs() < 1e-9);
    assert!(per_run_k.low() < per_run_k.slope && per_run_k.slope < per_run_k.high());
    assert!(t.margin_trend.text().contains("per hour of running"));
}

#[test]
fn a_scattered_margin_says_no_clear_change() {
    let runs = history(&[
        (900.0, 20.0, 30.0, None, None),
        (900.0, 19.0, 30.0, None, None),
        (900.0, 20.5, 30.0, None, None),
        (900.0, 19.4, 30.0, None, None),
    ]);
    let text = build_trends(&runs).parts[0].margin_trend.text();
    assert!(text.contains("no clear change yet"), "{text}");
}

#[test]
fn rise_per_watt_needs_a_loss() {
    // Derived, ΔT = P·R_th: 30 K over 2 W is 15 K/W.
    assert_eq!(rise_per_watt_k_per_w(30.0, 2.0), Some(15.0));
    assert_eq!(rise_per_watt_k_per_w(30.0, 0.0), None);
}

#[test]
fn summary_of_an_analysed_run() {
    use crate::analysis::run::{Load, RunInput, analyse_run};
    use crate::parts::Parts;
    // Ambient 25 °C, unrated capacitor (85 °C assumed) → hot above 25 + 0.8·60 = 73 °C.
    // Readings 60, 70, 80, 76, 70 °C every 10 s: hot for 7 + 10 + 5 = 22 s (as in hot_time.rs).
    let cap = Channel::PartTemp {
        role: Role::TankCapacitor,
        index: Some(1),
    };
    let mut readings = Vec::new();
    for (k, t_c) in [60.0, 70.0, 80.0, 76.0, 70.0].into_iter().enumerate() {
        let t_s = 10.0 * k as f64;
        readings.push(Reading::new(t_s, cap, t_c));
        readings.push(Reading::new(t_s, Channel::AmbientTemp, 25.0));
    }
    let parts = Parts::default();
    let input = RunInput {
        parts: &parts,
        readings: &readings,
        supply_setting_v: Some(24.0),
        supply_current_limit_a: None,
        load: Load::Ferrous,
        water_mass_kg: None,
        vessel_heat_capacity_j_per_k: None,
        idle_reference: None,
    };
    let summary = summarise_run(
        7,
        "r1",
        1_700_000_000,
        &parts,
        &readings,
        &analyse_run(&input),
    );
    assert_eq!(summary.duration_s, 40.0);
    let p = &summary.parts[0];
    assert_eq!((p.channel.as_str(), p.t_max_c), (CAP1, 80.0));
    assert_eq!((p.margin_k, p.rise_k), (Some(5.0), Some(55.0)));
    assert!((p.hot_time_s - 22.0).abs() < 1e-9);
}
