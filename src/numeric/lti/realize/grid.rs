//! A minimal state-space model of a grid of transfer functions (a MIMO transfer matrix).

use super::from_transfer_function;
use crate::numeric::lti::equivalence::minimal_checked;
use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::tf::TransferFunction;
use crate::numeric::{NumError, NumResult};
use nalgebra::DMatrix;

/// A realization of a transfer-function grid, and what the reduction to minimal order did.
#[derive(Debug, Clone)]
pub struct GridRealization {
    /// The model: minimal, or the assembled one when its reduction would have changed the
    /// input–output behaviour (`reduction_refused`).
    pub system: StateSpace,
    /// States of the assembled realization (the sum of the entries' orders).
    pub assembled_order: usize,
    /// Whether the staircase's reduction was refused because the reduced model was not
    /// equivalent to the assembled one (an entry is close to, not at, a lower order).
    pub reduction_refused: bool,
}

/// A minimal realization of the `p`×`m` grid `g[i][j]` (output i, input j).
///
/// **Method.** Each entry is realized on its own (minimal controllable companion form,
/// balanced, as [`from_transfer_function`]); the realizations are assembled block-
/// diagonally — entry (i, j)'s states are driven by input j and read by output i — which
/// realizes the grid exactly but repeats every pole shared by entries of one row or
/// column. The orthogonal staircase ([`minimal_checked`], controllability then
/// observability) removes the repeats; its result is kept only when `equivalence` finds
/// it equivalent to the assembled model (time-scaled Markov parameters and frequency
/// response), else the assembled model is returned and `reduction_refused` says so.
/// The entries must share one sample time (0: continuous).
///
/// **Cost.** O(N³) for the staircase with N the sum of the entries' orders.
///
/// **Errors.** An empty or ragged grid; entries with different sample times.
pub fn from_transfer_function_grid(g: &[Vec<TransferFunction>]) -> NumResult<GridRealization> {
    let p = g.len();
    let m = g.first().map_or(0, Vec::len);
    if p == 0 || m == 0 {
        return Err(NumError::invalid(
            "grid",
            "expected at least one row and one column of transfer functions",
        ));
    }
    if let Some((i, row)) = g.iter().enumerate().find(|(_, r)| r.len() != m) {
        return Err(NumError::invalid(
            "grid",
            format!(
                "row {i} has {} entries, row 0 has {m}: every row needs one per input",
                row.len()
            ),
        ));
    }
    let dt = g[0][0].dt;
    for (i, row) in g.iter().enumerate() {
        for (j, t) in row.iter().enumerate() {
            if t.dt != dt {
                return Err(NumError::invalid(
                    "grid",
                    format!(
                        "entry ({i}, {j}) has sample time {} s, entry (0, 0) has {dt} s: one \
                         grid is one model",
                        t.dt
                    ),
                ));
            }
        }
    }
    let parts: Vec<Vec<StateSpace>> = g
        .iter()
        .map(|row| row.iter().map(from_transfer_function).collect())
        .collect::<NumResult<_>>()?;
    let n: usize = parts.iter().flatten().map(StateSpace::order).sum();
    let (mut a, mut b, mut c) = (
        DMatrix::zeros(n, n),
        DMatrix::zeros(n, m),
        DMatrix::zeros(p, n),
    );
    let mut d = DMatrix::zeros(p, m);
    let mut at = 0;
    for (i, row) in parts.iter().enumerate() {
        for (j, s) in row.iter().enumerate() {
            let k = s.order();
            a.view_mut((at, at), (k, k)).copy_from(&s.a);
            b.view_mut((at, j), (k, 1)).copy_from(&s.b);
            c.view_mut((i, at), (1, k)).copy_from(&s.c);
            d[(i, j)] = s.d[(0, 0)];
            at += k;
        }
    }
    let assembled = StateSpace::new(a, b, c, d, dt)?;
    let checked = minimal_checked(&assembled, None)?;
    let reduction_refused = checked.changed_behaviour.is_some();
    Ok(GridRealization {
        system: if reduction_refused {
            assembled
        } else {
            checked.system
        },
        assembled_order: n,
        reduction_refused,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assert_close;
    use crate::numeric::freq::response::FrequencyEvaluator;
    use crate::numeric::linalg::poly::polynomial_eval;
    use crate::numeric::lti::realize::to_transfer_function;
    use nalgebra::Complex;

    fn tf(num: &[f64], den: &[f64]) -> TransferFunction {
        TransferFunction::new(num, den, 0.0).expect("a valid test entry")
    }

    /// G(s) at one point, from the model.
    fn response(sys: &StateSpace, s: Complex<f64>) -> DMatrix<Complex<f64>> {
        FrequencyEvaluator::new(sys).expect("evaluator").at_point(s)
    }

    fn value(t: &TransferFunction, s: Complex<f64>) -> Complex<f64> {
        polynomial_eval(&t.num, s) / polynomial_eval(&t.den, s)
    }

    #[test]
    fn a_two_by_two_process_is_realized_minimally_and_maps_back() {
        // Invented test data: a 2×2 process whose columns share poles (s + 1) and (s + 3).
        let g = vec![
            vec![tf(&[2.0], &[1.0, 1.0]), tf(&[1.0], &[1.0, 3.0])],
            vec![tf(&[1.0], &[1.0, 1.0]), tf(&[1.0, 0.5], &[1.0, 4.0, 3.0])],
        ];
        let r = from_transfer_function_grid(&g).expect("realized");
        assert_eq!(r.assembled_order, 5);
        assert!(!r.reduction_refused);
        // McMillan degree: column 0 needs only the pole at −1 (rank one residue), column 1
        // the poles at −3 and −1 … the minimal order is 3.
        assert_eq!(r.system.order(), 3, "minimal order");
        for w in [0.0, 0.3, 2.0, 17.0] {
            let s = Complex::new(0.05, w);
            let got = response(&r.system, s);
            for i in 0..2 {
                for j in 0..2 {
                    let want = value(&g[i][j], s);
                    assert!(
                        (got[(i, j)] - want).norm() <= 1e-12 * (1.0 + want.norm()),
                        "entry ({i}, {j}) at s = {s}: {} vs {want}",
                        got[(i, j)]
                    );
                }
            }
        }
        let back = to_transfer_function(&r.system).expect("back");
        let v = value(&back[1][1], Complex::new(0.0, 1.0));
        let want = value(&g[1][1], Complex::new(0.0, 1.0));
        assert_close!(v.re, want.re, 1e-12, 1e-10);
        assert_close!(v.im, want.im, 1e-12, 1e-10);
    }

    #[test]
    fn rescaled_frequencies_give_the_same_order() {
        // The same grid with its time axis rescaled (poles × 1e4): a kHz model in rad/s.
        for k in [1e-3, 1.0, 1e4] {
            let g = vec![
                vec![tf(&[2.0 * k], &[1.0, k]), tf(&[k], &[1.0, 3.0 * k])],
                vec![
                    tf(&[k], &[1.0, k]),
                    tf(&[k, 0.5 * k * k], &[1.0, 4.0 * k, 3.0 * k * k]),
                ],
            ];
            let r = from_transfer_function_grid(&g).expect("realized");
            assert_eq!(r.system.order(), 3, "time scale {k}");
        }
    }

    #[test]
    fn ragged_grids_and_mixed_sample_times_are_refused() {
        let one = tf(&[1.0], &[1.0, 1.0]);
        let e = from_transfer_function_grid(&[vec![one.clone(), one.clone()], vec![one.clone()]])
            .unwrap_err();
        assert!(e.to_string().contains("row 1 has 1 entries"), "{e}");
        let sampled = TransferFunction::new(&[1.0], &[1.0, -0.5], 0.1).expect("tf");
        let e = from_transfer_function_grid(&[vec![one, sampled]]).unwrap_err();
        assert!(e.to_string().contains("sample time"), "{e}");
        assert!(from_transfer_function_grid(&[]).is_err());
    }
}
