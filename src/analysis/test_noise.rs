//! A tiny seeded Gaussian generator for tests (SplitMix64 and the Box–Muller transform), so
//! noisy-data tests are reproducible without another dependency.

pub struct Noise {
    state: u64,
}

impl Noise {
    pub fn seeded(seed: u64) -> Self {
        Noise { state: seed }
    }

    /// SplitMix64 (Steele, Lea & Flood, OOPSLA 2014), mapped to (0, 1).
    fn uniform(&mut self) -> f64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        ((z >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }

    /// Normal deviate with standard deviation `sigma` (Box & Muller, 1958).
    pub fn gaussian(&mut self, sigma: f64) -> f64 {
        let (u1, u2) = (self.uniform(), self.uniform());
        sigma * (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }

    /// Uniform in [lo, hi).
    pub fn between(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.uniform()
    }
}
