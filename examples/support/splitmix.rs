//! splitmix64, the small pseudo-random generator behind the invented demo
//! and bench data (Steele, Lea & Flood 2014, "Fast splittable pseudorandom
//! number generators", OOPSLA), with uniform and Box-Muller normal draws.
//! Shared by `examples/make_demo_data.rs` and `benches/report_scale.rs`.

use std::f64::consts::PI;

/// splitmix64: a tiny, well-mixed 64-bit generator.
pub struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    /// A generator started at `seed`.
    pub fn new(seed: u64) -> Self {
        Self { state: seed }
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1), using the top 53 bits.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Standard normal via Box-Muller (one value per call, for simplicity).
    pub fn normal(&mut self) -> f64 {
        // 1 - u lies in (0, 1], so the logarithm is finite.
        let u1 = 1.0 - self.uniform();
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * PI * u2).cos()
    }
}
