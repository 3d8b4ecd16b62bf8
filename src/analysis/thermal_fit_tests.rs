use proptest::prelude::*;

use super::*;
use crate::analysis::test_noise::Noise;

/// Worked example of the lumped model [published, Incropera & DeWitt]: T_a 25 °C, ΔT_ss 50 K,
/// τ 300 s.
fn reference_curve(t_s: f64) -> f64 {
    first_order_temperature_c(25.0, 75.0, 300.0, t_s)
}

fn sampled(every_s: f64, until_s: f64, mut f: impl FnMut(f64) -> f64) -> Vec<(f64, f64)> {
    let n = (until_s / every_s).round() as usize;
    (0..=n)
        .map(|i| {
            let t = i as f64 * every_s;
            (t, f(t))
        })
        .collect()
}

#[test]
fn reference_example_points() {
    // Lumped model: 34.0635, 41.4840, 47.5594 °C at 60, 120, 180 s.
    for (t, expected) in [(60.0, 34.0635), (120.0, 41.4840), (180.0, 47.5594)] {
        assert!((reference_curve(t) - expected).abs() < 5e-5);
    }
    // Lumped model: 65 °C at 482.83 s; 80 °C never.
    let t = time_to_limit_s(25.0, 75.0, 300.0, 65.0).unwrap();
    assert!((t - 482.83).abs() < 0.005, "{t}");
    assert_eq!(time_to_limit_s(25.0, 75.0, 300.0, 80.0), None);
}

#[test]
fn fit_of_the_reference_example_published_points() {
    // The example's start (25 °C at 0 s) and its three points on the lumped model.
    let points = [
        (0.0, 25.0),
        (60.0, 34.0635),
        (120.0, 41.4840),
        (180.0, 47.5594),
    ];
    let fit = fit_first_order(&points).unwrap();
    let t65 = fit.time_to_limit_s(65.0).unwrap();
    assert!(
        (t65 - 482.83).abs() < 0.1,
        "65 °C at {t65} s, the lumped model says 482.83 s"
    );
    assert_eq!(fit.time_to_limit_s(80.0), None, "lumped model: 80 °C never");
    // 180 s of readings for a 300 s time constant (0.6 τ): enough to be trusted.
    assert!(fit.is_trusted(), "{:?}", fit.trust);
    // 120 s (0.4 τ) is not: the bend of the curve does not fix τ yet.
    let early = sampled(10.0, 120.0, reference_curve);
    let early_fit = fit_first_order(&early).unwrap();
    assert!(
        matches!(early_fit.trust, FitTrust::ShortSpan { .. }),
        "{:?}",
        early_fit.trust
    );
}

#[test]
fn fit_of_the_reference_example_sampled_over_five_time_constants() {
    let points = sampled(15.0, 1500.0, reference_curve);
    let fit = fit_first_order(&points).unwrap();
    assert!(fit.is_trusted(), "{:?}", fit.trust);
    assert!((fit.tau_s - 300.0).abs() < 300.0 * 1e-6, "{}", fit.tau_s);
    assert!((fit.t_start_c - 25.0).abs() < 25.0 * 1e-6);
    assert!((fit.t_final_c - 75.0).abs() < 75.0 * 1e-6);
    assert!((fit.time_to_limit_s(65.0).unwrap() - 482.83).abs() < 0.1);
}

#[test]
fn recovers_a_synthetic_curve_exactly_without_noise() {
    // Derived: samples of the model itself, off a non-zero t0, every 7 s over 900 s.
    let truth = |t: f64| first_order_temperature_c(31.5, 88.0, 173.0, t - 40.0);
    let points: Vec<(f64, f64)> = sampled(7.0, 900.0, |t| truth(t + 40.0))
        .into_iter()
        .map(|(t, v)| (t + 40.0, v))
        .collect();
    let fit = fit_first_order(&points).unwrap();
    assert_eq!(fit.t0_s, 40.0);
    assert!(((fit.tau_s - 173.0) / 173.0).abs() < 1e-6, "{}", fit.tau_s);
    assert!(((fit.t_start_c - 31.5) / 31.5).abs() < 1e-6);
    assert!(((fit.t_final_c - 88.0) / 88.0).abs() < 1e-6);
    assert!(fit.rmse_k < 1e-6);
    assert!(fit.is_trusted());
}

#[test]
fn recovers_a_synthetic_curve_through_noise() {
    // Derived: the model plus seeded Gaussian noise, σ 0.3 K, a reading every 5 s for 10 min.
    let mut noise = Noise::seeded(20_240_917);
    let points = sampled(5.0, 600.0, |t| {
        first_order_temperature_c(24.0, 71.0, 150.0, t) + noise.gaussian(0.3)
    });
    let fit = fit_first_order(&points).unwrap();
    assert!(fit.is_trusted(), "{:?}", fit.trust);
    assert!((fit.t_final_c - 71.0).abs() < 1.0, "{}", fit.t_final_c);
    assert!(((fit.tau_s - 150.0) / 150.0).abs() < 0.10, "{}", fit.tau_s);
    assert!(fit.rmse_k > 0.2 && fit.rmse_k < 0.4, "{}", fit.rmse_k);
}

#[test]
fn cooling_curve_fits_and_never_reaches_a_higher_limit() {
    let points = sampled(10.0, 800.0, |t| {
        first_order_temperature_c(90.0, 30.0, 120.0, t)
    });
    let fit = fit_first_order(&points).unwrap();
    assert!(fit.is_trusted());
    assert!((fit.t_final_c - 30.0).abs() < 1e-4);
    assert_eq!(fit.time_to_limit_s(100.0), None);
    // Started above 85 °C: already at the limit at t0.
    assert_eq!(fit.time_to_limit_s(85.0), Some(0.0));
}

#[test]
fn flat_readings_give_a_flat_fit_without_nan() {
    let points = sampled(10.0, 300.0, |_| 41.0);
    let fit = fit_first_order(&points).unwrap();
    for x in [fit.t_start_c, fit.t_final_c, fit.tau_s, fit.rmse_k] {
        assert!(x.is_finite());
    }
    assert!((fit.t_final_c - 41.0).abs() < 1e-9);
    assert_eq!(fit.time_to_limit_s(85.0), None);
}

#[test]
fn three_readings_are_not_trusted() {
    let fit = fit_first_order(&[(0.0, 25.0), (60.0, 34.0), (120.0, 41.0)]).unwrap();
    assert_eq!(fit.trust, FitTrust::TooFewReadings { count: 3 });
    assert!(fit.trust.caveat().unwrap().contains("3 readings"));
}

#[test]
fn a_span_much_shorter_than_tau_is_not_trusted() {
    // Derived: τ 2000 s watched for 120 s is close to a straight line.
    let points = sampled(10.0, 120.0, |t| {
        first_order_temperature_c(25.0, 95.0, 2000.0, t)
    });
    let fit = fit_first_order(&points).unwrap();
    assert!(!fit.is_trusted(), "{fit:?}");
}

#[test]
fn a_straight_rise_runs_into_the_bound_and_says_so() {
    let points = sampled(10.0, 120.0, |t| 25.0 + 0.1 * t);
    let fit = fit_first_order(&points).unwrap();
    assert_eq!(fit.trust, FitTrust::StillLinear);
}

#[test]
fn noisy_junk_is_not_trusted() {
    let mut noise = Noise::seeded(7);
    let points = sampled(10.0, 600.0, |_| noise.between(20.0, 60.0));
    let fit = fit_first_order(&points).unwrap();
    assert!(
        matches!(fit.trust, FitTrust::PoorFit { .. }),
        "{:?}",
        fit.trust
    );
}

#[test]
fn too_little_data_gives_no_fit() {
    assert!(fit_first_order(&[]).is_none());
    assert!(fit_first_order(&[(5.0, 30.0)]).is_none());
    assert!(fit_first_order(&[(5.0, 30.0), (5.0, 31.0)]).is_none());
    assert!(fit_first_order(&[(f64::NAN, 30.0), (5.0, f64::INFINITY)]).is_none());
}

#[test]
fn serializes_trust_as_a_flag_and_a_caveat() {
    let fit = fit_first_order(&[(0.0, 25.0), (60.0, 34.0), (120.0, 41.0)]).unwrap();
    let json = serde_json::to_value(&fit).unwrap();
    assert_eq!(json["trustworthy"], false);
    assert!(json["caveat"].as_str().unwrap().contains("readings"));
    assert!(json.get("tau_s").is_some() && json.get("trust").is_none());
    // Not trusted: no steady state and no time constant are stated, only the start.
    assert!(json["t_final_c"].is_null() && json["tau_s"].is_null());
    assert_eq!(json["t_start_c"].as_f64().map(f64::is_finite), Some(true));
}

proptest! {
    #[test]
    fn any_finite_readings_give_finite_numbers(
        values in prop::collection::vec(-40.0f64..400.0, 2..40),
        step_s in 0.5f64..120.0,
    ) {
        let points: Vec<(f64, f64)> =
            values.iter().enumerate().map(|(i, &v)| (i as f64 * step_s, v)).collect();
        let fit = fit_first_order(&points).unwrap();
        prop_assert!(fit.t_start_c.is_finite() && fit.t_final_c.is_finite());
        prop_assert!(fit.tau_s.is_finite() && fit.tau_s > 0.0 && fit.rmse_k.is_finite());
        if let Some(t) = fit.time_to_limit_s(85.0) {
            prop_assert!(t.is_finite() && t >= 0.0);
        }
    }
}
