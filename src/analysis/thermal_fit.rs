//! Least-squares first-order fit of a part's temperature readings, and the time to a limit.
//!
//! Model (lumped capacitance, Incropera & DeWitt):
//! T(t) = T_final − (T_final − T_start)·e^(−(t − t0)/τ), t0 the first reading's time.
//! For a fixed τ the model is linear in (T_start, T_final), so those come from a linear least
//! squares and only τ is searched, on ln τ over span/50 … 50·span: a coarse grid first (the
//! residual can have more than one dip on noisy data), then a golden-section refinement.

use crate::physics::thermal;
use serde::{Serialize, Serializer};

/// A fit from fewer readings than this is shown but not trusted: three readings determine the
/// three parameters exactly, leaving nothing to judge the fit by.
pub const MIN_READINGS: usize = 4;
/// Search range of τ as multiples of the readings' time span.
const TAU_MIN_PER_SPAN: f64 = 1.0 / 50.0;
const TAU_MAX_PER_SPAN: f64 = 50.0;
const GRID_POINTS: usize = 81;
/// Tolerance of the golden-section search on ln τ.
const LN_TAU_TOLERANCE: f64 = 1e-10;
/// A τ this close (in ln τ) to the upper search bound means the rise is still straight.
const UPPER_BOUND_LN_MARGIN: f64 = 0.01;
/// Poor-fit limits [practice]: rmse above 2 K, or above 10 % of the rise once it exceeds what a
/// hand-held thermometer resolves (about 0.5 K).
const MAX_RMSE_K: f64 = 2.0;
const MAX_RMSE_PER_RISE: f64 = 0.10;
const RMSE_RESOLUTION_K: f64 = 0.5;
/// The readings must cover half a time constant (39 % of the rise) before the steady state is
/// extrapolated [practice]: by then the curve's bend fixes τ well when the residual is small
/// (checked by the noisy-recovery test), and a bench user needs the warning while there is
/// still time to act — an undersized capacitor bank fails within one time constant.
const MIN_SPAN_PER_TAU: f64 = 0.5;

/// Whether a fit can be used to predict, or why not.
#[derive(Debug, Clone, PartialEq)]
pub enum FitTrust {
    Trusted,
    TooFewReadings {
        count: usize,
    },
    PoorFit {
        rmse_k: f64,
        rise_k: f64,
    },
    /// τ ran into the upper search bound: the rise is still linear, no steady state in sight.
    StillLinear,
    ShortSpan {
        span_s: f64,
        tau_s: f64,
    },
}

impl FitTrust {
    pub fn is_trusted(&self) -> bool {
        matches!(self, FitTrust::Trusted)
    }

    /// Why the fit is not trusted, in words for the page.
    pub fn caveat(&self) -> Option<String> {
        match self {
            FitTrust::Trusted => None,
            FitTrust::TooFewReadings { count } => Some(format!(
                "only {count} readings: at least {MIN_READINGS} are needed to judge a fit"
            )),
            FitTrust::PoorFit { rmse_k, rise_k } => Some(format!(
                "readings scatter {rmse_k:.2} K rms about the curve, too much for a {rise_k:.1} K change"
            )),
            FitTrust::StillLinear => Some(
                "the rise is still linear: the readings do not show where it levels off".into(),
            ),
            FitTrust::ShortSpan { span_s, tau_s } => Some(format!(
                "readings span {span_s:.0} s, less than one time constant ({tau_s:.0} s)"
            )),
        }
    }
}

/// A fitted first-order curve. `t0_s` is the first reading's time (not in the JSON: the page has
/// the readings).
#[derive(Debug, Clone, PartialEq)]
pub struct ThermalFit {
    pub t0_s: f64,
    pub t_start_c: f64,
    pub t_final_c: f64,
    pub tau_s: f64,
    pub rmse_k: f64,
    pub trust: FitTrust,
}

impl ThermalFit {
    pub fn is_trusted(&self) -> bool {
        self.trust.is_trusted()
    }

    /// The fitted temperature at time `t_s`.
    pub fn temperature_c(&self, t_s: f64) -> f64 {
        first_order_temperature_c(self.t_start_c, self.t_final_c, self.tau_s, t_s - self.t0_s)
    }

    /// Seconds from t0 until the fitted curve reaches `limit_c` (see [`time_to_limit_s`]).
    pub fn time_to_limit_s(&self, limit_c: f64) -> Option<f64> {
        time_to_limit_s(self.t_start_c, self.t_final_c, self.tau_s, limit_c)
    }
}

#[derive(Serialize)]
struct ThermalFitJson {
    t_start_c: f64,
    /// Null for an untrusted fit: a steady state the readings do not support is not stated.
    t_final_c: Option<f64>,
    tau_s: Option<f64>,
    rmse_k: f64,
    trustworthy: bool,
    caveat: Option<String>,
}

impl Serialize for ThermalFit {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        ThermalFitJson {
            t_start_c: self.t_start_c,
            t_final_c: self.is_trusted().then_some(self.t_final_c),
            tau_s: self.is_trusted().then_some(self.tau_s),
            rmse_k: self.rmse_k,
            trustworthy: self.trust.is_trusted(),
            caveat: self.trust.caveat(),
        }
        .serialize(serializer)
    }
}

/// First-order step response T(Δt) = T_final − (T_final − T_start)·e^(−Δt/τ)
/// (lumped capacitance; Incropera & DeWitt).
pub fn first_order_temperature_c(t_start_c: f64, t_final_c: f64, tau_s: f64, dt_s: f64) -> f64 {
    thermal::first_order_temperature_c(t_start_c, t_final_c - t_start_c, tau_s, dt_s)
}

/// Time from the start of a first-order curve to a limit, t = −τ·ln(1 − (T_lim − T_start)/ΔT)
/// (derived). Zero when the curve starts at or above the limit; `None` when the limit is not
/// strictly between T_start and T_final (the curve never gets there, or it cools).
pub fn time_to_limit_s(t_start_c: f64, t_final_c: f64, tau_s: f64, limit_c: f64) -> Option<f64> {
    if tau_s <= 0.0 {
        return (t_start_c >= limit_c).then_some(0.0);
    }
    thermal::time_to_limit_s(t_start_c, t_final_c - t_start_c, tau_s, limit_c)
}

/// The linear least-squares part of the fit for one τ.
struct LinearPart {
    t_start_c: f64,
    t_final_c: f64,
    sse: f64,
}

/// For fixed τ, T = T_final + (T_start − T_final)·u with u = e^(−Δt/τ): a straight line in u.
fn solve_for_tau(points: &[(f64, f64)], tau_s: f64) -> LinearPart {
    let n = points.len() as f64;
    let u = |dt: f64| (-dt / tau_s).exp();
    let mean_u = points.iter().map(|p| u(p.0)).sum::<f64>() / n;
    let mean_t = points.iter().map(|p| p.1).sum::<f64>() / n;
    let (suu, sut) = points.iter().fold((0.0, 0.0), |(suu, sut), &(dt, t)| {
        let du = u(dt) - mean_u;
        (suu + du * du, sut + du * (t - mean_t))
    });
    // With all u equal the amplitude is undetermined: take a flat curve.
    let amplitude = if suu > 1e-300 { sut / suu } else { 0.0 };
    let t_final_c = mean_t - amplitude * mean_u;
    let sse = points
        .iter()
        .map(|&(dt, t)| {
            let r = t - (t_final_c + amplitude * u(dt));
            r * r
        })
        .sum();
    LinearPart {
        t_start_c: t_final_c + amplitude,
        t_final_c,
        sse,
    }
}

/// Golden-section minimum of `f` on [a, b] (Kiefer, 1953).
fn golden_section_min(f: impl Fn(f64) -> f64, mut a: f64, mut b: f64, tolerance: f64) -> f64 {
    let inv_phi = (5f64.sqrt() - 1.0) / 2.0;
    let mut c = b - inv_phi * (b - a);
    let mut d = a + inv_phi * (b - a);
    let (mut fc, mut fd) = (f(c), f(d));
    for _ in 0..200 {
        if (b - a).abs() <= tolerance {
            break;
        }
        if fc < fd {
            b = d;
            d = c;
            fd = fc;
            c = b - inv_phi * (b - a);
            fc = f(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + inv_phi * (b - a);
            fd = f(d);
        }
    }
    0.5 * (a + b)
}

/// Fits the first-order curve to (time s, temperature °C) samples in any order. Non-finite
/// samples are dropped. `None` when fewer than two distinct times remain.
pub fn fit_first_order(samples: &[(f64, f64)]) -> Option<ThermalFit> {
    let mut clean: Vec<(f64, f64)> = samples
        .iter()
        .copied()
        .filter(|(t, v)| t.is_finite() && v.is_finite())
        .collect();
    clean.sort_by(|a, b| a.0.total_cmp(&b.0));
    let t0_s = clean.first()?.0;
    let span_s = clean.last()?.0 - t0_s;
    if span_s.is_nan() || span_s <= 0.0 {
        return None;
    }
    let points: Vec<(f64, f64)> = clean.iter().map(|&(t, v)| (t - t0_s, v)).collect();

    let sse_at = |ln_tau: f64| solve_for_tau(&points, ln_tau.exp()).sse;
    let ln_lo = (span_s * TAU_MIN_PER_SPAN).ln();
    let ln_hi = (span_s * TAU_MAX_PER_SPAN).ln();
    let step = (ln_hi - ln_lo) / (GRID_POINTS - 1) as f64;
    let grid: Vec<f64> = (0..GRID_POINTS)
        .map(|i| sse_at(ln_lo + step * i as f64))
        .collect();
    let best = grid
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))
        .map_or(0, |(i, _)| i);
    let a = ln_lo + step * best.saturating_sub(1) as f64;
    let b = ln_lo + step * (best + 1).min(GRID_POINTS - 1) as f64;
    let refined = golden_section_min(sse_at, a, b, LN_TAU_TOLERANCE);
    let grid_ln = ln_lo + step * best as f64;
    let ln_tau = if sse_at(refined) <= grid[best] {
        refined
    } else {
        grid_ln
    };

    let tau_s = ln_tau.exp();
    let linear = solve_for_tau(&points, tau_s);
    let rmse_k = (linear.sse / points.len() as f64).sqrt();
    let rise_k = (linear.t_final_c - linear.t_start_c).abs();
    let trust = if points.len() < MIN_READINGS {
        FitTrust::TooFewReadings {
            count: points.len(),
        }
    } else if rmse_k > MAX_RMSE_K
        || (rmse_k > RMSE_RESOLUTION_K && rmse_k > MAX_RMSE_PER_RISE * rise_k)
    {
        FitTrust::PoorFit { rmse_k, rise_k }
    } else if ln_tau >= ln_hi - UPPER_BOUND_LN_MARGIN {
        FitTrust::StillLinear
    } else if span_s < MIN_SPAN_PER_TAU * tau_s {
        FitTrust::ShortSpan { span_s, tau_s }
    } else {
        FitTrust::Trusted
    };
    Some(ThermalFit {
        t0_s,
        t_start_c: linear.t_start_c,
        t_final_c: linear.t_final_c,
        tau_s,
        rmse_k,
        trust,
    })
}

#[cfg(test)]
#[path = "thermal_fit_tests.rs"]
mod tests;
