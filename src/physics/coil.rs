//! Single-layer air-core work coil (H. A. Wheeler, Proc. IRE, 1928).

use std::f64::consts::PI;

/// Metres per inch, the unit Wheeler's formula was published in.
const METRES_PER_INCH: f64 = 0.0254;

/// Wheeler, Proc. IRE 1928: L[µH] = r²·N²/(9·r + 10·ℓ) with r the mean radius and ℓ the winding
/// length in inches; about 1 % for ℓ > 0.8·r (published). Here in SI.
pub fn wheeler_inductance_h(turns: f64, mean_diameter_m: f64, length_m: f64) -> f64 {
    let radius_in = mean_diameter_m / 2.0 / METRES_PER_INCH;
    let length_in = length_m / METRES_PER_INCH;
    1e-6 * radius_in * radius_in * turns * turns / (9.0 * radius_in + 10.0 * length_in)
}

/// Conductor length of the winding, N·π·D, plus both leads.
pub fn conductor_length_m(turns: f64, mean_diameter_m: f64, lead_length_m: f64) -> f64 {
    turns * PI * mean_diameter_m + lead_length_m
}
