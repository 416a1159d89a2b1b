//! Test support shared by the unit and the integration tests: seeded random matrices and
//! the one `assert_close!` macro (STYLE.md § Tests). Public only so that `tests/all` can
//! use the same macro; not part of the API.

use crate::numeric::lti::system::StateSpace;
use nalgebra::DMatrix;

/// A continuous single-input, single-output model from row-major `a` (n×n, n = `b.len()`),
/// the input column `b`, the output row `c` and the feedthrough `d`.
pub fn siso(a: &[f64], b: &[f64], c: &[f64], d: f64) -> StateSpace {
    let n = b.len();
    StateSpace::new(
        DMatrix::from_row_slice(n, n, a),
        DMatrix::from_column_slice(n, 1, b),
        DMatrix::from_row_slice(1, n, c),
        DMatrix::from_element(1, 1, d),
        0.0,
    )
    .expect("a valid test model")
}

/// A small, fast, seeded generator (SplitMix64, Steele, Lea & Flood 2014) so that tests are
/// reproducible on every machine without a random-number crate.
#[derive(Debug, Clone)]
pub struct Rng(u64);

impl Rng {
    /// A generator with the given seed.
    pub fn new(seed: u64) -> Self {
        Rng(seed)
    }

    /// Next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Standard normal (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        let u1 = self.uniform().max(1e-300);
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }

    /// A rows×cols matrix of standard normal entries.
    pub fn matrix(&mut self, rows: usize, cols: usize) -> DMatrix<f64> {
        DMatrix::from_fn(rows, cols, |_, _| self.normal())
    }

    /// A random n×n matrix shifted so that every eigenvalue has real part ≤ −0.5.
    pub fn stable(&mut self, n: usize) -> DMatrix<f64> {
        let r = self.matrix(n, n);
        if n == 0 {
            return r;
        }
        let abscissa = r
            .complex_eigenvalues()
            .iter()
            .map(|z| z.re)
            .fold(f64::MIN, f64::max);
        r - DMatrix::identity(n, n) * (abscissa + 0.5)
    }

    /// A random n×n matrix scaled so that its spectral radius is `radius`.
    pub fn schur_stable(&mut self, n: usize, radius: f64) -> DMatrix<f64> {
        let r = self.matrix(n, n);
        if n == 0 {
            return r;
        }
        let rho = r
            .complex_eigenvalues()
            .iter()
            .map(|z| z.norm())
            .fold(0.0, f64::max);
        r * (radius / rho)
    }
}

/// Asserts that two matrices (or scalars via 1×1) agree entrywise within
/// `abs + rel·max(|a|, |b|)`; defaults are 100·ε for both. A fifth and further arguments
/// are a format string and its values naming the case.
#[macro_export]
macro_rules! assert_close {
    ($a:expr, $b:expr) => {
        $crate::assert_close!($a, $b, 100.0 * f64::EPSILON, 100.0 * f64::EPSILON)
    };
    ($a:expr, $b:expr, $abs:expr, $rel:expr) => {{
        let a = &$a;
        let b = &$b;
        let (abs, rel): (f64, f64) = ($abs, $rel);
        $crate::numeric::testing::close_report(a, b, abs, rel)
            .map_err(|m| panic!("{} vs {}: {}", stringify!($a), stringify!($b), m))
            .ok();
    }};
    ($a:expr, $b:expr, $abs:expr, $rel:expr, $($context:tt)+) => {{
        let a = &$a;
        let b = &$b;
        let (abs, rel): (f64, f64) = ($abs, $rel);
        $crate::numeric::testing::close_report(a, b, abs, rel)
            .map_err(|m| {
                panic!(
                    "{}: {} vs {}: {}",
                    format_args!($($context)+),
                    stringify!($a),
                    stringify!($b),
                    m
                )
            })
            .ok();
    }};
}

/// Types that `assert_close!` compares.
pub trait Closeness {
    /// Flattened values and a shape string.
    fn values(&self) -> (Vec<f64>, String);
}

impl Closeness for DMatrix<f64> {
    fn values(&self) -> (Vec<f64>, String) {
        (
            self.iter().copied().collect(),
            format!("{}×{}", self.nrows(), self.ncols()),
        )
    }
}

impl Closeness for f64 {
    fn values(&self) -> (Vec<f64>, String) {
        (vec![*self], "scalar".into())
    }
}

impl Closeness for Vec<f64> {
    fn values(&self) -> (Vec<f64>, String) {
        (self.clone(), format!("len {}", self.len()))
    }
}

/// Compares two values; `Err` carries a description of the worst entry.
pub fn close_report<A: Closeness, B: Closeness>(
    a: &A,
    b: &B,
    abs: f64,
    rel: f64,
) -> Result<(), String> {
    let (va, sa) = a.values();
    let (vb, sb) = b.values();
    if va.len() != vb.len() {
        return Err(format!("shapes differ: {sa} vs {sb}"));
    }
    for (k, (x, y)) in va.iter().zip(vb.iter()).enumerate() {
        let tol = abs + rel * x.abs().max(y.abs());
        let within = (x - y).abs() <= tol; // false for NaN
        if !within {
            return Err(format!(
                "entry {k}: {x:e} vs {y:e} (difference {:e}, tolerance {tol:e})",
                (x - y).abs()
            ));
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    #[test]
    #[should_panic(expected = "case 3: 1.0 vs 2.0")]
    fn assert_close_names_the_case_when_it_fails() {
        crate::assert_close!(1.0, 2.0, 0.0, 1e-3, "case {}", 3);
    }

    #[test]
    fn assert_close_passes_within_its_tolerance() {
        crate::assert_close!(1.0, 1.0 + 1e-9, 0.0, 1e-8, "case {}", 4);
        crate::assert_close!(0.0, 1e-13, 1e-12, 0.0);
    }
}
