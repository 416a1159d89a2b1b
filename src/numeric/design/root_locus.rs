//! Root locus: the closed-loop poles of `1 + k·L(s) = 0` for a SISO loop gain `L` over
//! gains `k ≥ 0`, traced as continuous branches on an adaptive gain grid.

use crate::numeric::linalg::eigen::eigenvalues;
use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::zeros::transmission_zeros;
use crate::numeric::{NumError, NumResult};
use nalgebra::{Complex, DMatrix};

type C64 = Complex<f64>;

/// Limits of [`root_locus_with`].
#[derive(Debug, Clone, PartialEq)]
pub struct RootLocusParams {
    /// Largest movement of any branch between neighbouring gains, as a fraction of the
    /// locus scale `R` (the largest open-loop pole or zero modulus, at least the smallest
    /// nonzero one, 1 when all are zero). Default 0.015.
    pub max_step: f64,
    /// Cap on the number of gains (default 4000); past it no interval is split.
    pub max_gains: usize,
    /// Gain intervals narrower than this relative width are not split (default 1e-10):
    /// at a breakaway point the poles move infinitely fast, so refinement must stop.
    pub min_relative_width: f64,
}

impl Default for RootLocusParams {
    fn default() -> Self {
        RootLocusParams {
            max_step: 0.015,
            max_gains: 4000,
            min_relative_width: 1e-10,
        }
    }
}

/// A traced root locus.
#[derive(Debug, Clone, PartialEq)]
pub struct RootLocus {
    /// Gains, ascending from 0.
    pub gains: Vec<f64>,
    /// `branches[b][i]`: branch `b`'s closed-loop pole at `gains[i]` (NaN where the loop
    /// is algebraically singular, `1 + k·D = 0`).
    pub branches: Vec<Vec<C64>>,
    /// Open-loop poles (the branches' starting points), house order.
    pub poles: Vec<C64>,
    /// Open-loop (transmission) zeros, where branches end as `k → ∞`.
    pub zeros: Vec<C64>,
    /// The closed-loop poles at `k = 1` (the loop as given), house order; empty when the
    /// loop is algebraically singular there (`1 + D = 0`).
    pub unit_gain: Vec<C64>,
}

/// The root locus with the default [`RootLocusParams`]; see [`root_locus_with`].
pub fn root_locus(loop_gain: &StateSpace) -> NumResult<RootLocus> {
    root_locus_with(loop_gain, &RootLocusParams::default())
}

/// The closed-loop poles of the unity negative feedback loop `u = −k·y` around the SISO
/// loop gain `L = (A, B, C, D)` for `k ≥ 0`, as continuous branches.
///
/// **Mathematics.** With `u = −k y`, `y = C x + D u`: `y = C x/(1 + kD)` and the closed
/// loop is `A_k = A − k/(1 + kD)·B C`; its eigenvalues are the roots of
/// `1 + k·L(s) = 0` (Evans 1948, "Graphical analysis of control systems", Trans. AIEE 67).
/// At `k = 0` they are the open-loop poles; as `k → ∞` they tend to the finite zeros of
/// `L` or to infinity.
///
/// **Algorithm.** Gain range: `k = 0`, then `k_lo` found by dividing a start gain
/// `1/|L(jR)|` by 10 until every pole lies within `10⁻³R` of an open-loop pole, and `k_hi`
/// by multiplying by 10 until every pole lies within `0.05R` of a zero or beyond `4R` from
/// the origin (at most 20 decades each way), the last decade narrowed by bisection in
/// `ln k`; 60 log-spaced gains between them. Then every
/// interval whose poles (matched to their predecessors by a greedy nearest-pair
/// assignment) move by more than `max_step·R` is split at its geometric midpoint, until
/// the steps are small, the interval is narrower than `min_relative_width`, or
/// `max_gains` is reached — fast-moving stretches (near breakaway points and the start)
/// get many gains, slow ones few (common practice, no source). Eigenvalues by the
/// balanced real Schur form.
///
/// **Cost.** O(n³) per gain; typically a few hundred gains.
///
/// **Errors.** A loop gain that is not SISO or has no states; failures of the eigenvalue
/// or zero computations.
pub fn root_locus_with(loop_gain: &StateSpace, params: &RootLocusParams) -> NumResult<RootLocus> {
    let l = loop_gain;
    if l.inputs() != 1 || l.outputs() != 1 {
        return Err(NumError::invalid(
            "root locus",
            format!(
                "expected a single-input single-output loop gain, found {} outputs × {} inputs",
                l.outputs(),
                l.inputs()
            ),
        ));
    }
    if l.order() == 0 {
        return Err(NumError::invalid(
            "root locus",
            "the loop gain has no states, so the closed loop has no poles to trace",
        ));
    }
    let poles = eigenvalues(&l.a)?;
    let zeros = transmission_zeros(&l.a, &l.b, &l.c, &l.d)?;
    let mags: Vec<f64> = poles
        .iter()
        .chain(&zeros)
        .map(|z| z.norm())
        .filter(|m| m.is_finite())
        .collect();
    let big = mags.iter().fold(0.0f64, |m, &x| m.max(x));
    let r = if big > 0.0 { big } else { 1.0 };
    let bc = &l.b * &l.c;
    let d = l.d[(0, 0)];
    let at = |k: f64| -> NumResult<Vec<C64>> {
        let den = 1.0 + k * d;
        if den.abs() <= 1e-12 * (1.0 + (k * d).abs()) {
            return Ok(vec![C64::new(f64::NAN, f64::NAN); l.order()]);
        }
        let a: DMatrix<f64> = &l.a - &bc * (k / den);
        eigenvalues(&a)
    };
    let near = |p: &[C64], targets: &[C64], tol: f64| {
        p.iter()
            .all(|z| targets.iter().any(|t| (z - t).norm() <= tol))
    };
    // Start gain: one over the loop's gain at the scale frequency.
    let s_ref = if l.is_discrete() {
        C64::new(0.0, 1.0)
    } else {
        C64::new(0.0, r)
    };
    let g = crate::numeric::freq::response::FrequencyEvaluator::new(l)?.at_point(s_ref)[(0, 0)];
    let mut k0 = 1.0 / g.norm();
    if !(k0.is_finite() && k0 > 0.0) {
        k0 = 1.0;
    }
    let mut k_lo = k0;
    for _ in 0..20 {
        if near(&at(k_lo)?, &poles, 1e-3 * r) {
            break;
        }
        k_lo /= 10.0;
    }
    let done = |k: f64| -> NumResult<bool> {
        Ok(at(k)?
            .iter()
            .all(|z| z.norm() >= 4.0 * r || zeros.iter().any(|t| (z - t).norm() <= 0.05 * r)))
    };
    let mut k_hi = k0;
    let mut found = false;
    for _ in 0..20 {
        if done(k_hi)? {
            found = true;
            break;
        }
        k_hi *= 10.0;
    }
    // Narrow the last decade (bisection in log k) so the far branches stop near 4R
    // instead of up to ten times the gain beyond it.
    if found && k_hi > k0 {
        let (mut lo, mut hi) = ((k_hi / 10.0).ln(), k_hi.ln());
        for _ in 0..12 {
            let mid = 0.5 * (lo + hi);
            if done(mid.exp())? {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        k_hi = hi.exp();
    }
    let count = 60usize;
    let mut gains = vec![0.0];
    let (a, b) = (k_lo.ln(), k_hi.ln());
    for i in 0..count {
        gains.push((a + (b - a) * i as f64 / (count - 1) as f64).exp());
    }
    let mut values: Vec<Vec<C64>> = Vec::with_capacity(gains.len());
    values.push(poles.clone());
    for &k in &gains[1..] {
        let p = at(k)?;
        let prev = values.last().cloned().unwrap_or_default();
        values.push(matched(&prev, p));
    }
    // Adaptive refinement by bisection of fast intervals.
    let step = params.max_step * r;
    let mut i = 0;
    while i + 1 < gains.len() {
        if gains.len() >= params.max_gains {
            break;
        }
        let (k1, k2) = (gains[i], gains[i + 1]);
        let moved = values[i]
            .iter()
            .zip(&values[i + 1])
            .map(|(x, y)| (x - y).norm())
            .filter(|m| m.is_finite())
            .fold(0.0f64, f64::max);
        let narrow = k2 - k1 <= params.min_relative_width * k2;
        if moved > step && !narrow {
            let mid = if k1 > 0.0 { (k1 * k2).sqrt() } else { k2 / 2.0 };
            let p = matched(&values[i], at(mid)?);
            gains.insert(i + 1, mid);
            values.insert(i + 1, p);
            // Re-match the right neighbour to the new point so branches stay continuous.
            let right = values[i + 2].clone();
            values[i + 2] = matched(&values[i + 1], right);
        } else {
            i += 1;
        }
    }
    // Re-match the whole sequence once more from the start (insertions may have left a
    // later point matched against an older neighbour).
    for j in 1..values.len() {
        let cur = values[j].clone();
        values[j] = matched(&values[j - 1], cur);
    }
    let n = l.order();
    let branches = (0..n)
        .map(|b| values.iter().map(|v| v[b]).collect())
        .collect();
    let unit_gain: Vec<C64> = at(1.0)?.into_iter().filter(|z| !z.re.is_nan()).collect();
    Ok(RootLocus {
        gains,
        branches,
        poles,
        zeros,
        unit_gain,
    })
}

/// `next` reordered so that entry `b` is the value nearest to `prev[b]`: greedy
/// assignment of the globally closest remaining pairs (O(n³), fine for locus sizes).
/// NaN entries on either side are paired last, in order.
fn matched(prev: &[C64], next: Vec<C64>) -> Vec<C64> {
    let n = prev.len();
    if next.len() != n || prev.iter().any(|z| z.re.is_nan()) || next.iter().any(|z| z.re.is_nan()) {
        return next;
    }
    let mut out = vec![C64::new(f64::NAN, f64::NAN); n];
    let mut used_p = vec![false; n];
    let mut used_q = vec![false; n];
    for _ in 0..n {
        let mut best: Option<(f64, usize, usize)> = None;
        for (i, p) in prev.iter().enumerate() {
            if used_p[i] {
                continue;
            }
            for (j, q) in next.iter().enumerate() {
                if used_q[j] {
                    continue;
                }
                let dist = (p - q).norm();
                if best.is_none_or(|b| dist < b.0) {
                    best = Some((dist, i, j));
                }
            }
        }
        let Some((_, i, j)) = best else {
            break;
        };
        used_p[i] = true;
        used_q[j] = true;
        out[i] = next[j];
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn double_pole_breaks_away_at_the_midpoint() {
        // L = 1/((s+1)(s+3)): closed loop s² + 4s + 3 + k; real until k = 1, then
        // −2 ± j√(k − 1). Branches start at −1 and −3 and meet at −2.
        let l = StateSpace::new(
            DMatrix::from_row_slice(2, 2, &[0.0, 1.0, -3.0, -4.0]),
            DMatrix::from_row_slice(2, 1, &[0.0, 1.0]),
            DMatrix::from_row_slice(1, 2, &[1.0, 0.0]),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap();
        let rl = root_locus(&l).unwrap();
        assert_eq!(rl.branches.len(), 2);
        for (k, i) in rl.gains.iter().zip(0..) {
            let (p, q) = (rl.branches[0][i], rl.branches[1][i]);
            // Sum of poles is −4 for every k; product 3 + k.
            assert!(((p + q).re + 4.0).abs() < 1e-9, "k = {k}");
            assert!(((p * q).re - 3.0 - k).abs() < 1e-7 * (1.0 + k), "k = {k}");
        }
        // Continuity: no jumps larger than a few steps of the scale R = 3.
        for b in &rl.branches {
            for w in b.windows(2) {
                assert!((w[1] - w[0]).norm() < 0.2, "jump {:?} → {:?}", w[0], w[1]);
            }
        }
        // Upper branch ends far up the line Re s = −2.
        let last = rl
            .branches
            .iter()
            .map(|b| b[b.len() - 1])
            .collect::<Vec<_>>();
        assert!(last
            .iter()
            .any(|z| z.im > 10.0 && (z.re + 2.0).abs() < 1e-6));
    }
}
