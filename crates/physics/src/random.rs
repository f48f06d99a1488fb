//! A small, seeded, reproducible pseudo-random generator for the Monte Carlo of
//! docs/model.md "Uncertainty" (section 13), written here so that the native CLI
//! and the WebAssembly page draw the same numbers bit for bit.
//!
//! - Uniform 64-bit words: xoshiro256** (Blackman & Vigna 2021, "Scrambled linear
//!   pseudorandom number generators", ACM Trans. Math. Softw. 47, 36; the generator
//!   published in 2018), its 256-bit state filled by SplitMix64 (Steele, Lea & Flood
//!   2014, "Fast splittable pseudorandom number generators", OOPSLA '14), as its
//!   authors recommend.
//! - Independent streams per sample: the state of sample `i` under seed `s` is
//!   SplitMix64 seeded with a hash of (s, i) ([`Rng::for_sample`]), so the draws of a
//!   sample do not depend on the order or the thread the samples run in.
//! - Uniform doubles in [0, 1): the top 53 bits times 2^-53 (Vigna's recommended
//!   conversion).
//! - Normal: Marsaglia's polar method (Marsaglia & Bray 1964, SIAM Review 6, 260),
//!   which needs only `ln` and `sqrt`, both through [`crate::math`] (libm), so the
//!   numbers are identical on every platform.
//! - Gamma: Marsaglia & Tsang 2000 (ACM Trans. Math. Softw. 26, 363), with the
//!   boost G(a) = G(a + 1) U^(1/a) for shape a < 1 (their section 6).
//! - Dirichlet: independent gammas normalised to sum 1 (e.g. Devroye 1986,
//!   "Non-Uniform Random Variate Generation", chapter XI.4).

use crate::math::{exp10, ln, pow, sqrt};

/// The SplitMix64 increment (the golden-ratio constant 2^64 / phi, Steele et al. 2014).
const GOLDEN_GAMMA: u64 = 0x9E37_79B9_7F4A_7C15;

/// The SplitMix64 output function (Steele et al. 2014, the "mix64" variant of Stafford's
/// variant 13): a bijection of 64-bit words with good avalanche.
pub fn mix64(mut z: u64) -> u64 {
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// A SplitMix64 generator (Steele et al. 2014), used to fill xoshiro's state.
#[derive(Debug, Clone)]
pub struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    /// A generator starting at `seed`.
    pub fn new(seed: u64) -> SplitMix64 {
        SplitMix64 { state: seed }
    }

    /// The next 64-bit word.
    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(GOLDEN_GAMMA);
        mix64(self.state)
    }
}

/// xoshiro256** with the distributions the Monte Carlo needs (see the module docs).
#[derive(Debug, Clone)]
pub struct Rng {
    s: [u64; 4],
    /// The second normal deviate of the last polar pair, if not used yet.
    spare_normal: Option<f64>,
}

impl Rng {
    /// A generator whose state is filled by SplitMix64 from `seed`.
    pub fn seeded(seed: u64) -> Rng {
        let mut sm = SplitMix64::new(seed);
        let mut s = [0u64; 4];
        for w in &mut s {
            *w = sm.next_u64();
        }
        // An all-zero state is the one fixed point of xoshiro; SplitMix64 output cannot produce
        // four zero words in a row from one seed, but guard anyway.
        if s == [0; 4] {
            s[0] = GOLDEN_GAMMA;
        }
        Rng {
            s,
            spare_normal: None,
        }
    }

    /// The independent stream of sample `index` under `seed`: SplitMix64 seeded with
    /// mix64(mix64(seed) ^ mix64(index + gamma)) (two rounds of the bijection, so neighbouring
    /// seeds and indices give unrelated states).
    pub fn for_sample(seed: u64, index: u64) -> Rng {
        let key = mix64(mix64(seed) ^ mix64(index.wrapping_add(GOLDEN_GAMMA)));
        Rng::seeded(key)
    }

    /// The next 64-bit word (xoshiro256**, Blackman & Vigna 2021).
    pub fn next_u64(&mut self) -> u64 {
        let s = &mut self.s;
        let result = s[1].wrapping_mul(5).rotate_left(7).wrapping_mul(9);
        let t = s[1] << 17;
        s[2] ^= s[0];
        s[3] ^= s[1];
        s[1] ^= s[2];
        s[0] ^= s[3];
        s[2] ^= t;
        s[3] = s[3].rotate_left(45);
        result
    }

    /// A uniform double in [0, 1): the top 53 bits times 2^-53.
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A uniform double in (0, 1) (never 0, for logarithms).
    pub fn uniform_open(&mut self) -> f64 {
        loop {
            let u = self.uniform();
            if u > 0.0 {
                return u;
            }
        }
    }

    /// A uniform double in [low, high).
    pub fn uniform_in(&mut self, low: f64, high: f64) -> f64 {
        low + (high - low) * self.uniform()
    }

    /// A uniform index in 0..n (n >= 1), by Lemire's multiply-shift with rejection
    /// (Lemire 2019, ACM Trans. Model. Comput. Simul. 29, 3), so every index is equally likely.
    pub fn index(&mut self, n: usize) -> usize {
        let n = n.max(1) as u64;
        let threshold = n.wrapping_neg() % n;
        loop {
            let m = (self.next_u64() as u128) * (n as u128);
            if (m as u64) >= threshold {
                return (m >> 64) as usize;
            }
        }
    }

    /// A standard normal deviate (mean 0, variance 1) by Marsaglia's polar method: draw
    /// (v1, v2) uniform in the unit disk, s = v1^2 + v2^2, then v1 sqrt(-2 ln s / s) and
    /// v2 sqrt(-2 ln s / s) are independent N(0, 1) (the second is kept for the next call).
    pub fn normal(&mut self) -> f64 {
        if let Some(z) = self.spare_normal.take() {
            return z;
        }
        loop {
            let v1 = 2.0 * self.uniform() - 1.0;
            let v2 = 2.0 * self.uniform() - 1.0;
            let s = v1 * v1 + v2 * v2;
            if s > 0.0 && s < 1.0 {
                let f = sqrt(-2.0 * ln(s) / s);
                self.spare_normal = Some(v2 * f);
                return v1 * f;
            }
        }
    }

    /// A normal deviate of mean `mean` and standard deviation `sigma`.
    pub fn normal_with(&mut self, mean: f64, sigma: f64) -> f64 {
        mean + sigma * self.normal()
    }

    /// A log-normal deviate with median `median` and a width of `sigma_dex` in log10:
    /// median 10^(sigma_dex N(0, 1)).
    pub fn lognormal_dex(&mut self, median: f64, sigma_dex: f64) -> f64 {
        median * exp10(sigma_dex * self.normal())
    }

    /// A Gamma(shape, 1) deviate (shape > 0) by Marsaglia & Tsang 2000: for a >= 1, with
    /// d = a - 1/3 and c = 1/sqrt(9 d), draw x ~ N(0, 1), v = (1 + c x)^3 (v > 0), u ~ U(0, 1),
    /// accept d v if u < 1 - 0.0331 x^4 or ln u < x^2/2 + d (1 - v + ln v). For a < 1,
    /// G(a) = G(a + 1) u^(1/a). Returns 0 for shape <= 0 (a degenerate component).
    pub fn gamma(&mut self, shape: f64) -> f64 {
        if !(shape > 0.0) {
            return 0.0;
        }
        if shape < 1.0 {
            let g = self.gamma(shape + 1.0);
            let u = self.uniform_open();
            return g * pow(u, 1.0 / shape);
        }
        let d = shape - 1.0 / 3.0;
        let c = 1.0 / sqrt(9.0 * d);
        loop {
            let (x, v) = loop {
                let x = self.normal();
                let v = 1.0 + c * x;
                if v > 0.0 {
                    break (x, v * v * v);
                }
            };
            let u = self.uniform_open();
            let x2 = x * x;
            if u < 1.0 - 0.0331 * x2 * x2 {
                return d * v;
            }
            if ln(u) < 0.5 * x2 + d * (1.0 - v + ln(v)) {
                return d * v;
            }
        }
    }

    /// A Dirichlet deviate with parameters `alpha` (each >= 0), written into `out` (same
    /// length): independent Gamma(alpha_i) normalised to sum 1. A zero alpha gives a zero
    /// component; all zero (or a zero sum, which needs every draw to underflow) gives the
    /// normalised alpha back.
    pub fn dirichlet(&mut self, alpha: &[f64], out: &mut [f64]) {
        let mut sum = 0.0;
        for (o, &a) in out.iter_mut().zip(alpha) {
            *o = self.gamma(a);
            sum += *o;
        }
        if sum > 0.0 {
            for o in out.iter_mut() {
                *o /= sum;
            }
        } else {
            let total: f64 = alpha.iter().sum();
            for (o, &a) in out.iter_mut().zip(alpha) {
                *o = if total > 0.0 { a / total } else { 0.0 };
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The first outputs of SplitMix64 seeded with 1234567: the test vector widely quoted for the
    /// reference C implementation (splitmix64.c, public domain; from memory), and reproduced by an
    /// independent Python implementation of Steele et al. 2014's algorithm.
    #[test]
    fn splitmix64_test_vector() {
        let mut sm = SplitMix64::new(1234567);
        let got: Vec<u64> = (0..5).map(|_| sm.next_u64()).collect();
        assert_eq!(
            got,
            vec![
                6457827717110365317,
                3203168211198807973,
                9817491932198370423,
                4593380528125082431,
                16408922859458223821
            ]
        );
    }

    #[test]
    fn xoshiro_state_update_matches_the_published_algorithm() {
        // xoshiro256** from state (1, 2, 3, 4): first output rotl(2 * 5, 7) * 9 = 11520,
        // the second 0, the third 1509978240, the fourth 1215971899390074240 (from an independent
        // Python implementation of the published update: t = s1 << 17; s2 ^= s0; s3 ^= s1;
        // s1 ^= s2; s0 ^= s3; s2 ^= t; s3 = rotl(s3, 45); the first three also by hand).
        let mut r = Rng {
            s: [1, 2, 3, 4],
            spare_normal: None,
        };
        assert_eq!(r.next_u64(), 11520);
        assert_eq!(r.next_u64(), 0);
        assert_eq!(r.next_u64(), 1509978240);
        assert_eq!(r.next_u64(), 1215971899390074240);
    }

    #[test]
    fn streams_are_reproducible_and_distinct() {
        let a: Vec<u64> = {
            let mut r = Rng::for_sample(42, 7);
            (0..4).map(|_| r.next_u64()).collect()
        };
        let b: Vec<u64> = {
            let mut r = Rng::for_sample(42, 7);
            (0..4).map(|_| r.next_u64()).collect()
        };
        let c: Vec<u64> = {
            let mut r = Rng::for_sample(42, 8);
            (0..4).map(|_| r.next_u64()).collect()
        };
        let d: Vec<u64> = {
            let mut r = Rng::for_sample(43, 7);
            (0..4).map(|_| r.next_u64()).collect()
        };
        assert_eq!(a, b);
        assert_ne!(a, c);
        assert_ne!(a, d);
    }

    /// Moments of 200 000 draws against the exact moments of each distribution, within 5
    /// standard errors of the estimate (the exact moments: mean/variance of U(0,1) 1/2, 1/12;
    /// N(0,1) 0, 1; Gamma(a) a, a; Dirichlet(alpha) alpha_i / sum). The KS tests against
    /// scipy.stats are in tests/python/check_random_draws.py.
    #[test]
    fn moments_of_the_draws() {
        let n = 200_000;
        let mut r = Rng::seeded(2024);
        let mean_var = |xs: &[f64]| {
            let m = xs.iter().sum::<f64>() / xs.len() as f64;
            let v = xs.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (xs.len() - 1) as f64;
            (m, v)
        };
        let u: Vec<f64> = (0..n).map(|_| r.uniform()).collect();
        let (m, v) = mean_var(&u);
        assert!((m - 0.5).abs() < 5.0 * (1.0f64 / 12.0 / n as f64).sqrt());
        assert!((v - 1.0 / 12.0).abs() < 0.002);
        let z: Vec<f64> = (0..n).map(|_| r.normal()).collect();
        let (m, v) = mean_var(&z);
        assert!(m.abs() < 5.0 / (n as f64).sqrt(), "normal mean {m}");
        assert!(
            (v - 1.0).abs() < 5.0 * (2.0 / n as f64).sqrt(),
            "normal var {v}"
        );
        for &a in &[0.3, 1.0, 2.5, 30.0] {
            let g: Vec<f64> = (0..n).map(|_| r.gamma(a)).collect();
            let (m, v) = mean_var(&g);
            assert!(
                (m - a).abs() < 5.0 * (a / n as f64).sqrt(),
                "gamma({a}) mean {m}"
            );
            // Var of the sample variance of a gamma: (mu4 - sigma^4)/n with mu4 = 3a^2 + 6a.
            let se_v = ((3.0 * a * a + 6.0 * a - a * a) / n as f64).sqrt();
            assert!((v - a).abs() < 5.0 * se_v, "gamma({a}) var {v}");
        }
        let alpha = [6.0, 2.0, 0.0, 2.0];
        let mut sums = [0.0; 4];
        let mut out = [0.0; 4];
        for _ in 0..n {
            r.dirichlet(&alpha, &mut out);
            assert!((out.iter().sum::<f64>() - 1.0).abs() < 1e-12);
            assert_eq!(out[2], 0.0);
            for i in 0..4 {
                sums[i] += out[i];
            }
        }
        for i in 0..4 {
            let expect = alpha[i] / 10.0;
            assert!((sums[i] / n as f64 - expect).abs() < 0.003, "dirichlet {i}");
        }
    }

    #[test]
    fn index_covers_every_option_evenly() {
        let mut r = Rng::seeded(5);
        let mut counts = [0usize; 3];
        for _ in 0..30_000 {
            counts[r.index(3)] += 1;
        }
        for c in counts {
            assert!(
                (c as f64 - 10_000.0).abs()
                    < 5.0 * (30_000.0f64 * (1.0 / 3.0) * (2.0 / 3.0)).sqrt()
            );
        }
    }
}
