//! Switch conduction loss and junction temperature (derived from the driver waveforms).

/// R_DS(on)(T) = R25·(1 + a/100)^(T − 25), a in %/K, a ≈ 0.5–0.7 %/K (common
/// practice of MOSFET power-loss application notes; no single published source checked).
pub fn rds_on_ohm(rds_on_25c_ohm: f64, tempco_pct_per_k: f64, junction_temp_c: f64) -> f64 {
    rds_on_25c_ohm * (1.0 + tempco_pct_per_k / 100.0).powf(junction_temp_c - 25.0)
}

/// P = I_in²·R_DS(on)/2 per switch: each carries about the whole supply current for half a period,
/// I_rms = I_in/√2 (derived from the drain waveform, V_p = π·V_in).
pub fn conduction_loss_w(supply_current_a: f64, rds_on_ohm: f64) -> f64 {
    supply_current_a * supply_current_a * rds_on_ohm / 2.0
}

/// What the junction settles at, or that it does not.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum JunctionState {
    /// The lowest fixed point of T_j = T_case + P(T_j)·R_thJC, below the limit.
    Settled { junction_temp_c: f64, loss_w: f64 },
    /// No fixed point below the limit: the loss grows faster with temperature than the heat can
    /// leave, or the settling point is above the limit.
    Runaway,
}

/// Solves T_j = T_c + R_thJC·P(T_j) with P(T) = I²·R25·b^(T−25)/2, b = 1 + a/100
/// (derived). g(T) = T_c + R_thJC·P(T) − T is convex and g(T_c) ≥ 0, so a root below the limit
/// exists exactly when g's minimum over [T_c, limit] is ≤ 0; the lowest root (the one the part
/// heats up to) is then bracketed by T_c and that minimum and found by bisection. Bounded work,
/// no iteration that could run forever.
pub fn junction_state(
    supply_current_a: f64,
    rds_on_25c_ohm: f64,
    tempco_pct_per_k: f64,
    case_temp_c: f64,
    rth_jc_k_per_w: f64,
    limit_c: f64,
) -> JunctionState {
    let loss_w = |t: f64| {
        conduction_loss_w(
            supply_current_a,
            rds_on_ohm(rds_on_25c_ohm, tempco_pct_per_k, t),
        )
    };
    let excess_k = |t: f64| case_temp_c + rth_jc_k_per_w * loss_w(t) - t;
    if case_temp_c >= limit_c {
        return JunctionState::Runaway;
    }
    let ln_b = (1.0 + tempco_pct_per_k / 100.0).ln();
    let p25_w = conduction_loss_w(supply_current_a, rds_on_25c_ohm);
    // Where g'(T) = R_thJC·P25·ln b·b^(T−25) − 1 vanishes; g falls all the way when ln b ≤ 0.
    let slope_k_per_k = rth_jc_k_per_w * p25_w * ln_b;
    let lowest_c = if ln_b > 0.0 && slope_k_per_k > 0.0 {
        (25.0 - slope_k_per_k.ln() / ln_b).clamp(case_temp_c, limit_c)
    } else {
        limit_c
    };
    let excess_at_lowest_k = excess_k(lowest_c);
    if excess_at_lowest_k.is_nan() || excess_at_lowest_k > 0.0 {
        return JunctionState::Runaway;
    }
    let (mut below_c, mut above_c) = (case_temp_c, lowest_c);
    for _ in 0..200 {
        let middle_c = 0.5 * (below_c + above_c);
        if excess_k(middle_c) > 0.0 {
            below_c = middle_c;
        } else {
            above_c = middle_c;
        }
        if above_c - below_c < 1e-12 * above_c.abs().max(1.0) {
            break;
        }
    }
    let junction_temp_c = 0.5 * (below_c + above_c);
    if junction_temp_c >= limit_c {
        return JunctionState::Runaway;
    }
    JunctionState::Settled {
        junction_temp_c,
        loss_w: loss_w(junction_temp_c),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_hot_enough_case_runs_away() {
        // Derived: at 100 A and 40 mΩ, 200 W into 0.8 K/W is already 160 K over the case.
        let state = junction_state(100.0, 0.040, 0.6, 25.0, 0.8, 150.0);
        assert_eq!(state, JunctionState::Runaway);
    }

    #[test]
    fn constant_resistance_settles_linearly() {
        // Derived: a = 0 gives T_j = T_c + P·R_th exactly: 2 W · 5 K/W over 40 °C is 50 °C.
        match junction_state(10.0, 0.040, 0.0, 40.0, 5.0, 150.0) {
            JunctionState::Settled {
                junction_temp_c,
                loss_w,
            } => {
                assert!((junction_temp_c - 50.0).abs() < 1e-9);
                assert!((loss_w - 2.0).abs() < 1e-12);
            }
            JunctionState::Runaway => panic!("should settle"),
        }
    }

    #[test]
    fn case_at_the_limit_has_no_fixed_point_below_it() {
        assert_eq!(
            junction_state(0.0, 0.040, 0.6, 150.0, 0.8, 150.0),
            JunctionState::Runaway
        );
    }
}
