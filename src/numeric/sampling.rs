//! Seeded pseudo-random samples for Monte Carlo studies, identical on every run and every
//! machine.
//!
//! # Generator
//! xoshiro256** (Blackman & Vigna 2018, "Scrambled linear pseudorandom number
//! generators"), its 256-bit state filled with the first four outputs of SplitMix64
//! (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number generators"), as the
//! xoshiro authors recommend. Both use only 64-bit integer shifts, rotations, xors and
//! wrapping multiplications, so their outputs are the same everywhere.
//!
//! Each named parameter draws from its own stream: SplitMix64 starts at
//! `seed XOR fnv1a64(name)` (FNV-1a, 64-bit, over the name's UTF-8 bytes). Adding a
//! parameter to a study therefore leaves the samples of the others unchanged, and the first
//! `n` samples of a count-`m` draw (`m ≥ n`) are the samples of a count-`n` draw.
//!
//! # From integers to numbers
//! - uniform on `[0, 1)`: the top 53 bits of one output times 2⁻⁵³ (exact);
//! - uniform on `[low, high]`: `low + (high − low)·u` (the upper end can be reached only
//!   through rounding);
//! - normal: the polar method (Marsaglia & Bray 1964, "A convenient method for generating
//!   normal variables"), which uses `u, v` uniform on `(−1, 1)`, rejects `s = u² + v² ∉
//!   (0, 1)`, and returns `u·f` then `v·f` with `f = √(−2 ln s / s)`.
//!
//! # Floating point
//! The path from integers to samples uses IEEE-754 basic operations (`+ − × ÷`, correctly
//! rounded in double precision everywhere Rust runs: SSE2 on x86-64, NEON/VFP on
//! AArch64 — Rust never contracts `a·b + c` into a fused multiply-add on its own), `sqrt`
//! (correctly rounded by IEEE-754) and a logarithm of our own, [`portable_ln`], written in
//! those basic operations, so that no platform maths library is involved. (A 32-bit x86
//! build that computes in x87 extended precision could differ; no supported target does.)

use crate::numeric::{NumError, NumResult};

/// SplitMix64: a 64-bit state advanced by the golden-ratio increment, output mixed by
/// two multiply–xorshift rounds. Used here only to seed [`Xoshiro256StarStar`].
#[derive(Debug, Clone)]
pub struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    /// A generator starting at `seed`.
    pub fn new(seed: u64) -> Self {
        SplitMix64 { state: seed }
    }

    /// The next 64-bit output.
    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
}

/// xoshiro256**: 256 bits of state, period 2²⁵⁶ − 1, 64-bit outputs.
#[derive(Debug, Clone)]
pub struct Xoshiro256StarStar {
    s: [u64; 4],
    spare_normal: Option<f64>,
}

impl Xoshiro256StarStar {
    /// A generator whose state is the first four outputs of SplitMix64 started at `seed`
    /// (never all zero, since SplitMix64 is a bijection of its counter).
    pub fn new(seed: u64) -> Self {
        let mut sm = SplitMix64::new(seed);
        let s = [sm.next_u64(), sm.next_u64(), sm.next_u64(), sm.next_u64()];
        Self::from_state(s)
    }

    /// A generator with the given raw state (must not be all zero; an all-zero state is
    /// replaced by SplitMix64's seeding from 0).
    pub fn from_state(s: [u64; 4]) -> Self {
        if s == [0; 4] {
            return Self::new(0);
        }
        Xoshiro256StarStar {
            s,
            spare_normal: None,
        }
    }

    /// The stream of one named parameter (see the module documentation).
    pub fn for_parameter(seed: u64, name: &str) -> Self {
        Self::new(seed ^ fnv1a64(name.as_bytes()))
    }

    /// The next 64-bit output.
    pub fn next_u64(&mut self) -> u64 {
        let result = self.s[1].wrapping_mul(5).rotate_left(7).wrapping_mul(9);
        let t = self.s[1] << 17;
        self.s[2] ^= self.s[0];
        self.s[3] ^= self.s[1];
        self.s[1] ^= self.s[2];
        self.s[0] ^= self.s[3];
        self.s[2] ^= t;
        self.s[3] = self.s[3].rotate_left(45);
        result
    }

    /// A uniform sample on `[0, 1)` with 53 random bits.
    pub fn next_unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / 9_007_199_254_740_992.0)
    }

    /// A standard normal sample (polar method; pairs are used in order).
    pub fn next_standard_normal(&mut self) -> f64 {
        if let Some(z) = self.spare_normal.take() {
            return z;
        }
        loop {
            let u = 2.0 * self.next_unit() - 1.0;
            let v = 2.0 * self.next_unit() - 1.0;
            let s = u * u + v * v;
            if s > 0.0 && s < 1.0 {
                let f = (-2.0 * portable_ln(s) / s).sqrt();
                self.spare_normal = Some(v * f);
                return u * f;
            }
        }
    }
}

/// FNV-1a, 64-bit (Fowler, Noll & Vo): offset basis 0xcbf29ce484222325, prime
/// 0x100000001b3.
pub fn fnv1a64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

/// The natural logarithm in IEEE basic operations only, so that it gives the same bits on
/// every platform (within about 2 ulp of the true value).
///
/// `x = m·2ᵉ` with `m ∈ [√½, √2)` read from the bits (subnormals scaled by 2⁵⁴ first);
/// `ln m = 2 atanh(t)`, `t = (m − 1)/(m + 1)`, `|t| ≤ 0.1716`, summed as the odd series
/// `2(t + t³/3 + … + t²⁵/25)` (the next term is below 2⁻⁶⁴ relative); `e·ln 2` in two
/// parts (the high part has trailing zero bits, so `e·ln2_hi` is exact).
/// `ln(0) = −∞`, `ln(x < 0) = NaN`, `ln(∞) = ∞`, `ln(NaN) = NaN`.
pub fn portable_ln(x: f64) -> f64 {
    // ln 2 split as in fdlibm: the high part has 32 trailing zero bits.
    const LN2_HI: f64 = f64::from_bits(0x3fe6_2e42_fee0_0000);
    const LN2_LO: f64 = f64::from_bits(0x3dea_39ef_3579_3c76);
    if x.is_nan() || x < 0.0 {
        return f64::NAN;
    }
    if x == 0.0 {
        return f64::NEG_INFINITY;
    }
    if x.is_infinite() {
        return f64::INFINITY;
    }
    let mut bits = x.to_bits();
    let mut e = ((bits >> 52) & 0x7ff) as i64;
    if e == 0 {
        bits = (x * 18_014_398_509_481_984.0).to_bits(); // 2⁵⁴
        e = ((bits >> 52) & 0x7ff) as i64 - 54;
    }
    e -= 1023;
    let mut m = f64::from_bits((bits & 0x000f_ffff_ffff_ffff) | 0x3ff0_0000_0000_0000);
    if m > std::f64::consts::SQRT_2 {
        m *= 0.5;
        e += 1;
    }
    let t = (m - 1.0) / (m + 1.0);
    let t2 = t * t;
    let mut p = 1.0 / 25.0;
    for k in (1..12).rev() {
        p = 1.0 / (2 * k + 1) as f64 + t2 * p;
    }
    let ln_m = 2.0 * t + 2.0 * t * (t2 * p);
    let e = e as f64;
    e * LN2_HI + (e * LN2_LO + ln_m)
}

/// How one parameter is drawn.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Distribution {
    /// Uniform between two finite ends, `low ≤ high`.
    Uniform {
        /// Lower end.
        low: f64,
        /// Upper end.
        high: f64,
    },
    /// Normal with a finite mean and a standard deviation `std ≥ 0`.
    Normal {
        /// Mean.
        mean: f64,
        /// Standard deviation.
        std: f64,
    },
}

impl Distribution {
    /// Checks the ends or moments.
    pub fn check(&self, what: &str) -> NumResult<()> {
        let bad = |why: String| {
            Err(NumError::InvalidArgument {
                what: what.to_string(),
                why,
            })
        };
        match *self {
            Distribution::Uniform { low, high } => {
                if !(low.is_finite() && high.is_finite()) {
                    return bad(format!("expected finite ends, found [{low}, {high}]"));
                }
                if low > high {
                    return bad(format!("expected low ≤ high, found [{low}, {high}]"));
                }
            }
            Distribution::Normal { mean, std } => {
                if !mean.is_finite() {
                    return bad(format!("expected a finite mean, found {mean}"));
                }
                if !(std.is_finite() && std >= 0.0) {
                    return bad(format!("expected a finite std ≥ 0, found {std}"));
                }
            }
        }
        Ok(())
    }
}

/// `count` samples of the parameter `name` from its own stream of `seed`.
pub fn sample(dist: Distribution, name: &str, count: usize, seed: u64) -> NumResult<Vec<f64>> {
    dist.check(name)?;
    let mut g = Xoshiro256StarStar::for_parameter(seed, name);
    Ok((0..count)
        .map(|_| match dist {
            Distribution::Uniform { low, high } => low + (high - low) * g.next_unit(),
            Distribution::Normal { mean, std } => mean + std * g.next_standard_normal(),
        })
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    // SplitMix64 from state 0: the reference outputs of the published algorithm
    // (Steele, Lea & Flood 2014; the same sequence Java's SplittableRandom(0) mixes).
    #[test]
    fn splitmix64_reference_outputs() {
        let mut g = SplitMix64::new(0);
        assert_eq!(g.next_u64(), 0xe220_a839_7b1d_cdaf);
        assert_eq!(g.next_u64(), 0x6e78_9e6a_a1b9_65f4);
        assert_eq!(g.next_u64(), 0x06c4_5d18_8009_454f);
    }

    // xoshiro256** from the raw state [1, 2, 3, 4]: the reference outputs of the
    // authors' C code (Blackman & Vigna 2018), worked by hand for the first two.
    #[test]
    fn xoshiro_reference_outputs() {
        let mut g = Xoshiro256StarStar::from_state([1, 2, 3, 4]);
        assert_eq!(g.next_u64(), 11520);
        assert_eq!(g.next_u64(), 0);
        assert_eq!(g.next_u64(), 1_509_978_240);
        assert_eq!(g.next_u64(), 1_215_971_899_390_074_240);
    }

    #[test]
    fn fnv1a64_reference_values() {
        // The published FNV test values: "" → offset basis, "a" → 0xaf63dc4c8601ec8c.
        assert_eq!(fnv1a64(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a64(b"a"), 0xaf63_dc4c_8601_ec8c);
    }

    #[test]
    fn portable_ln_agrees_with_the_platform_within_2_ulp() {
        let mut g = Xoshiro256StarStar::new(7);
        let mut xs = vec![
            1.0,
            2.0,
            0.5,
            std::f64::consts::E,
            1e-300,
            5e-324,
            1e300,
            0.999_999,
        ];
        for _ in 0..20_000 {
            // log-uniform over the whole double range
            let e = (g.next_unit() * 2000.0 - 1000.0) as i32;
            xs.push((1.0 + g.next_unit()) * 2f64.powi(e));
        }
        for x in xs {
            let a = portable_ln(x);
            let b = x.ln();
            let ulp = f64::EPSILON * b.abs().max(f64::MIN_POSITIVE);
            assert!(
                (a - b).abs() <= 2.0 * ulp || (a - b).abs() < 1e-300,
                "ln({x:e}): {a:e} vs {b:e}"
            );
        }
        assert_eq!(portable_ln(1.0), 0.0);
        assert!(portable_ln(-1.0).is_nan());
        assert_eq!(portable_ln(0.0), f64::NEG_INFINITY);
    }

    // Pinned outputs: these exact bits are the contract "identical across runs and
    // machines". If this test changes, every seeded study changes: do not update it
    // casually.
    #[test]
    fn pinned_samples() {
        let u = sample(
            Distribution::Uniform {
                low: 0.0,
                high: 1.0,
            },
            "k",
            3,
            42,
        )
        .unwrap();
        let n = sample(
            Distribution::Normal {
                mean: 0.0,
                std: 1.0,
            },
            "k",
            3,
            42,
        )
        .unwrap();
        let bits: Vec<u64> = u.iter().chain(n.iter()).map(|x| x.to_bits()).collect();
        assert_eq!(bits, PINNED, "{u:?} {n:?}");
    }
    // 0.18939254201442257, 0.9670442510936159, 0.25681930230278394 (uniform on [0, 1));
    // -0.1596765103578637, -0.27732598431250727, -3.2259165016372817 (standard normal).
    const PINNED: &[u64] = &[
        4595991605743678660,
        4606885579803028394,
        4598298065174515394,
        13818293009725691201,
        13822039517571121583,
        13837818573832144214,
    ];

    #[test]
    fn moments_are_plausible() {
        let n = 200_000;
        let u = sample(
            Distribution::Uniform {
                low: 2.0,
                high: 4.0,
            },
            "a",
            n,
            1,
        )
        .unwrap();
        let z = sample(
            Distribution::Normal {
                mean: 1.0,
                std: 0.5,
            },
            "b",
            n,
            1,
        )
        .unwrap();
        let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len() as f64;
        let var = |v: &[f64]| {
            let m = mean(v);
            v.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (v.len() - 1) as f64
        };
        // Uniform on [2, 4]: mean 3, variance 4/12; normal: mean 1, variance 0.25.
        // Tolerances are about five standard errors.
        assert!((mean(&u) - 3.0).abs() < 0.007);
        assert!((var(&u) - 1.0 / 3.0).abs() < 0.005);
        assert!((mean(&z) - 1.0).abs() < 0.006);
        assert!((var(&z) - 0.25).abs() < 0.004);
        assert!(u.iter().all(|&x| (2.0..=4.0).contains(&x)));
    }

    #[test]
    fn streams_are_per_parameter_and_prefix_stable() {
        let d = Distribution::Uniform {
            low: 0.0,
            high: 1.0,
        };
        let a10 = sample(d, "a", 10, 5).unwrap();
        let a4 = sample(d, "a", 4, 5).unwrap();
        let b4 = sample(d, "b", 4, 5).unwrap();
        assert_eq!(&a10[..4], &a4[..]);
        assert_ne!(a4, b4);
        assert_ne!(a4, sample(d, "a", 4, 6).unwrap());
    }

    #[test]
    fn bad_ranges_are_refused() {
        assert!(sample(
            Distribution::Uniform {
                low: 2.0,
                high: 1.0
            },
            "k",
            3,
            0
        )
        .is_err());
        assert!(sample(
            Distribution::Normal {
                mean: 0.0,
                std: -1.0
            },
            "k",
            3,
            0
        )
        .is_err());
        assert!(sample(
            Distribution::Normal {
                mean: f64::NAN,
                std: 1.0
            },
            "k",
            3,
            0
        )
        .is_err());
        assert_eq!(
            sample(
                Distribution::Normal {
                    mean: 2.0,
                    std: 0.0
                },
                "k",
                2,
                0
            )
            .unwrap(),
            vec![2.0, 2.0]
        );
    }
}
