//! American Wire Gauge (ASTM B258).

/// Largest gauge number the ASTM B258 series defines.
pub const MAX_AWG: u32 = 56;

/// d = 0.127 mm · 92^((36 − n)/39), ASTM B258 (published).
pub fn awg_diameter_m(gauge: u32) -> f64 {
    0.127e-3 * 92f64.powf((36.0 - f64::from(gauge)) / 39.0)
}
