//! Repeatable pseudo-random numbers for generated sheets and for tests: Marsaglia's xorshift64
//! (G. Marsaglia, "Xorshift RNGs", Journal of Statistical Software 8 (14), 2003; shifts 13, 7, 17
//! from that paper's table). The same seed gives the same numbers on every machine; nothing here
//! is fit for anything that needs unpredictability.

/// Marsaglia's xorshift64 generator.
#[derive(Clone, Debug)]
pub struct XorShift(u64);

impl XorShift {
    /// A generator for `seed`, spread by a golden-ratio multiply so that nearby seeds start far
    /// apart (any seed works, zero included).
    pub fn new(seed: u64) -> Self {
        XorShift(seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) | 1)
    }

    /// A generator whose state is `state` as given; it must not be zero (the one fixed point),
    /// and is made odd if it is.
    pub fn from_state(state: u64) -> Self {
        XorShift(state.max(1))
    }

    /// The next 64 bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }

    /// A number in [0, 1) with 53 random bits.
    pub fn next_f64(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_sequence_is_marsaglias() {
        // From the paper's recurrence by hand for state 1: x ^= x << 13 gives 0x2001, x ^= x >> 7
        // gives 0x2041, x ^= x << 17 gives 0x4082_2041.
        let mut r = XorShift::from_state(1);
        assert_eq!(r.next_u64(), 0x4082_2041);
        let mut a = XorShift::new(7);
        let mut b = XorShift::new(7);
        let first: Vec<f64> = (0..1000).map(|_| a.next_f64()).collect();
        assert!(first.iter().all(|&x| (0.0..1.0).contains(&x)));
        assert!(
            first
                .iter()
                .zip((0..1000).map(|_| b.next_f64()))
                .all(|(x, y)| *x == y)
        );
        let mean = first.iter().sum::<f64>() / 1000.0;
        assert!((mean - 0.5).abs() < 0.05, "mean {mean}");
        assert_ne!(XorShift::new(8).next_f64(), first[0], "the seed matters");
    }
}
