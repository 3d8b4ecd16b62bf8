//! Deterministic pseudo-noise for the readings: a xorshift64 generator seeded from the run's
//! name, so the scenario is the same on every machine and every start without a `rand` crate.

pub struct Xorshift64(u64);

impl Xorshift64 {
    /// Seeds from a label (FNV-1a), so each run has its own noise and adding a run elsewhere
    /// does not shift it.
    pub fn seeded(label: &str) -> Self {
        let mut hash: u64 = 0xcbf2_9ce4_8422_2325;
        for byte in label.bytes() {
            hash ^= u64::from(byte);
            hash = hash.wrapping_mul(0x0000_0100_0000_01b3);
        }
        // xorshift never leaves zero.
        Self(hash | 1)
    }

    fn next_u64(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        self.0 = x;
        x
    }

    /// Uniform in [−1, 1).
    pub fn symmetric(&mut self) -> f64 {
        // The top 53 bits give an exact f64 in [0, 1).
        let unit = (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64;
        2.0 * unit - 1.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_label_same_noise_and_bounded() {
        let mut a = Xorshift64::seeded("tool-room-heater/3");
        let mut b = Xorshift64::seeded("tool-room-heater/3");
        let mut c = Xorshift64::seeded("tool-room-heater/4");
        let xs: Vec<f64> = (0..1000).map(|_| a.symmetric()).collect();
        let ys: Vec<f64> = (0..1000).map(|_| b.symmetric()).collect();
        let zs: Vec<f64> = (0..1000).map(|_| c.symmetric()).collect();
        assert_eq!(xs, ys);
        assert_ne!(xs, zs);
        assert!(xs.iter().all(|x| (-1.0..1.0).contains(x)));
        let mean = xs.iter().sum::<f64>() / xs.len() as f64;
        assert!(mean.abs() < 0.1);
    }
}
