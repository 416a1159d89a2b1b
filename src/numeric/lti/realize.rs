//! Conversions between transfer functions and state-space models, and the companion
//! (canonical) realizations of single-input single-output models.

use super::staircase::{balance_system, is_controllable, is_observable, minimal_realization};
use super::system::StateSpace;
use super::tf::TransferFunction;
use super::transform::{rcond_up_to_state_units, Transformed};
use super::zeros::transmission_zeros;
use crate::numeric::linalg::eigen::eigenvalues;
use crate::numeric::linalg::poly::{characteristic_polynomial, polynomial_from_roots};
use crate::numeric::{NumError, NumResult};
use nalgebra::{Complex, DMatrix};

mod grid;
pub use grid::{from_transfer_function_grid, GridRealization};

/// Highest order realized from a transfer function (its companion matrix is n×n).
pub const MAX_REALIZATION_ORDER: usize = 5000;

/// A minimal state-space realization of a transfer function.
///
/// With `den = sⁿ + a₁sⁿ⁻¹ + … + aₙ` and the numerator split as `b₀·den + (c₁sⁿ⁻¹ + … +
/// cₙ)`, the controllable companion form is `A = [−a₁ … −aₙ; I 0]` (first row, ones on the
/// subdiagonal), `B = e₁`, `C = [c₁ … cₙ]`, `D = b₀`. Common factors of numerator and
/// denominator make it non-minimal; an orthogonal staircase reduction
/// ([`minimal_realization`]) then removes the cancelled modes, so the result is always
/// minimal. Cost O(n³).
pub fn from_transfer_function(tf: &TransferFunction) -> NumResult<StateSpace> {
    let n = tf.order();
    if n > MAX_REALIZATION_ORDER {
        return Err(crate::numeric::NumError::TooLarge {
            what: format!("a realization of order {n}"),
            limit: MAX_REALIZATION_ORDER,
        });
    }
    let den = &tf.den;
    let mut num = vec![0.0; n + 1 - tf.num.len()];
    num.extend_from_slice(&tf.num);
    let b0 = num[0];
    let a = DMatrix::from_fn(n, n, |i, j| {
        if i == 0 {
            -den[j + 1]
        } else if i == j + 1 {
            1.0
        } else {
            0.0
        }
    });
    let b = DMatrix::from_fn(n, 1, |i, _| if i == 0 { 1.0 } else { 0.0 });
    let c = DMatrix::from_fn(1, n, |_, j| num[j + 1] - b0 * den[j + 1]);
    let d = DMatrix::from_element(1, 1, b0);
    let sc = balance_system(&a, &b, &c);
    let spread = sc.state.iter().fold(1.0f64, |m, s| m.max(*s).max(1.0 / s));
    let (a, b, c) = if spread > 4.0 {
        sc.apply_state(&a, &b, &c)
    } else {
        (a, b, c)
    };
    let min = minimal_realization(&a, &b, &c, &d, None)?;
    if min.removed == 0 {
        // Already minimal: keep the (balanced) companion form.
        return StateSpace::new(a, b, c, d, tf.dt);
    }
    StateSpace::new(min.a, min.b, min.c, min.d, tf.dt)
}

/// The transfer function of every channel, as a grid `[output][input]`.
///
/// Per channel (Varga & Sima 1981, "Numerically stable algorithm for transfer function
/// matrix evaluation", Int. J. Control — the pole/zero/gain route): a minimal realization
/// of the channel by orthogonal staircase reduction; its poles are the eigenvalues of the
/// reduced A; its zeros the transmission zeros of the reduced model (generalized
/// eigenvalues of the system pencil); the gain from one evaluation `k = G(s₀)·Π(s₀ −
/// pᵢ)/Π(s₀ − zᵢ)` at a real point away from every pole and zero. This avoids the
/// Faddeev–LeVerrier recursion, which loses all accuracy beyond order ~10.
pub fn to_transfer_function(sys: &StateSpace) -> NumResult<Vec<Vec<TransferFunction>>> {
    let mut grid = Vec::with_capacity(sys.outputs());
    for i in 0..sys.outputs() {
        let mut row = Vec::with_capacity(sys.inputs());
        for j in 0..sys.inputs() {
            row.push(channel_tf(&sys.channel(i, j)?)?);
        }
        grid.push(row);
    }
    Ok(grid)
}

fn channel_tf(ch: &StateSpace) -> NumResult<TransferFunction> {
    let min = minimal_realization(&ch.a, &ch.b, &ch.c, &ch.d, None)?;
    let n = min.a.nrows();
    let d = min.d[(0, 0)];
    if n == 0 {
        return TransferFunction::new(&[d], &[1.0], ch.dt);
    }
    let poles = eigenvalues(&min.a)?;
    let zeros = transmission_zeros(&min.a, &min.b, &min.c, &min.d)?;
    let den = polynomial_from_roots(&poles)?;
    let zpoly = polynomial_from_roots(&zeros)?;
    let scale = poles
        .iter()
        .chain(zeros.iter())
        .map(|z| z.norm())
        .fold(1.0, f64::max);
    // A real evaluation point at distance ≥ 0.5·scale from every pole and zero.
    let mut s0 = 2.0 * scale;
    for _ in 0..8 {
        if poles
            .iter()
            .chain(zeros.iter())
            .all(|z| (Complex::new(s0, 0.0) - z).norm() >= 0.5 * scale)
        {
            break;
        }
        s0 *= 1.7;
    }
    let s = Complex::new(s0, 0.0);
    let mi = DMatrix::<Complex<f64>>::identity(n, n) * s - min.a.map(|x| Complex::new(x, 0.0));
    let x = mi
        .lu()
        .solve(&min.b.map(|x| Complex::new(x, 0.0)))
        .ok_or_else(|| NumError::Singular {
            what: "sI − A at the gain evaluation point".into(),
            rcond: 0.0,
        })?;
    let g = (min.c.map(|x| Complex::new(x, 0.0)) * x)[(0, 0)] + d;
    let pz = poles
        .iter()
        .fold(Complex::new(1.0, 0.0), |acc, p| acc * (s - p));
    let zz = zeros
        .iter()
        .fold(Complex::new(1.0, 0.0), |acc, z| acc * (s - z));
    let k = (g * pz / zz).re;
    let num: Vec<f64> = zpoly.iter().map(|c| c * k).collect();
    TransferFunction::new(&num, &den, ch.dt)
}

fn require_siso(sys: &StateSpace, what: &str) -> NumResult<()> {
    if sys.inputs() != 1 || sys.outputs() != 1 {
        return Err(NumError::invalid(
            what,
            format!(
                "companion forms are defined here for single-input single-output models; this \
                 one has {} inputs and {} outputs\nhint: take one channel, e.g. \
                 channel(sys, 0, 0), or use modal_realization or balanced_realization",
                sys.inputs(),
                sys.outputs()
            ),
        ));
    }
    Ok(())
}

/// The controllable companion realization of a SISO model and its `T` (x = T z).
///
/// With the characteristic polynomial `sⁿ + a₁sⁿ⁻¹ + … + aₙ` (from a Hessenberg
/// reduction), `T` has columns `t₁ = B`, `t_{k+1} = A t_k + a_k B`, which makes
/// `T⁻¹AT` the companion matrix with first row `[−a₁ … −aₙ]` and ones below the
/// diagonal, and `T⁻¹B = e₁` (the recursion is the Krylov construction; Cayley–Hamilton
/// closes it). Requires a controllable model, decided by the staircase on the balanced
/// system matrix ([`is_controllable`]), so a change of state units alone never refuses it.
/// Companion forms are inherently ill-conditioned for large n or badly scaled states; the
/// condition number of `T` (up to the units of the states) is returned for a warning.
pub fn controllable_companion(sys: &StateSpace) -> NumResult<Transformed> {
    require_siso(sys, "controllable_realization")?;
    let n = sys.order();
    let a = characteristic_polynomial(&sys.a)?;
    let mut t = DMatrix::zeros(n, n);
    if n > 0 {
        t.set_column(0, &sys.b.column(0));
        for (k, &ak) in a.iter().enumerate().take(n).skip(1) {
            let next = &sys.a * t.column(k - 1) + sys.b.column(0) * ak;
            t.set_column(k, &next);
        }
    }
    // Controllability is decided by the balanced staircase (independent of the units of
    // the states), not by the conditioning of the Krylov basis, which a mere change of
    // units can make as poor as one likes; its condition up to those units is returned
    // for a warning.
    let rc = rcond_up_to_state_units(&t, true);
    if !is_controllable(&sys.a, &sys.b, None)? || rc == 0.0 {
        return Err(NumError::no_solution(
            "controllable_realization",
            format!(
                "the model is not controllable (reciprocal condition of the Krylov basis \
                 {rc:.2e}), so no controllable companion form exists\nhint: \
                 minimal_realization(sys) removes the uncontrollable part first"
            ),
        ));
    }
    let ac = DMatrix::from_fn(n, n, |i, j| {
        if i == 0 {
            -a[j + 1]
        } else if i == j + 1 {
            1.0
        } else {
            0.0
        }
    });
    let bc = DMatrix::from_fn(n, 1, |i, _| if i == 0 { 1.0 } else { 0.0 });
    let cc = &sys.c * &t;
    let t_inv = t.clone().try_inverse().ok_or_else(|| NumError::Singular {
        what: "T".into(),
        rcond: rc,
    })?;
    Transformed::from_parts(sys, (ac, bc, cc), t, t_inv)
}

/// The observable companion realization of a SISO model and its `T` (x = T z).
///
/// Dual of [`controllable_companion`]: `S = T⁻¹` has rows `s₁ = C`, `s_{k+1} = s_k A +
/// a_k C`, giving `T⁻¹AT` with first column `[−a₁ … −aₙ]ᵀ` and ones above the diagonal,
/// and `CT = e₁ᵀ`. Requires an observable model ([`is_observable`], balanced).
pub fn observable_companion(sys: &StateSpace) -> NumResult<Transformed> {
    require_siso(sys, "observable_realization")?;
    let n = sys.order();
    let a = characteristic_polynomial(&sys.a)?;
    let mut s = DMatrix::zeros(n, n);
    if n > 0 {
        s.set_row(0, &sys.c.row(0));
        for (k, &ak) in a.iter().enumerate().take(n).skip(1) {
            let next = s.row(k - 1) * &sys.a + sys.c.row(0) * ak;
            s.set_row(k, &next);
        }
    }
    // Decided by the balanced staircase, as in controllable_companion.
    let rc = rcond_up_to_state_units(&s, false);
    if !is_observable(&sys.a, &sys.c, None)? || rc == 0.0 {
        return Err(NumError::no_solution(
            "observable_realization",
            format!(
                "the model is not observable (reciprocal condition of the observability basis \
                 {rc:.2e}), so no observable companion form exists\nhint: \
                 minimal_realization(sys) removes the unobservable part first"
            ),
        ));
    }
    let t = s.clone().try_inverse().ok_or_else(|| NumError::Singular {
        what: "T".into(),
        rcond: rc,
    })?;
    let ao = DMatrix::from_fn(n, n, |i, j| {
        if j == 0 {
            -a[i + 1]
        } else if j == i + 1 {
            1.0
        } else {
            0.0
        }
    });
    let bo = &s * &sys.b;
    let co = DMatrix::from_fn(1, n, |_, j| if j == 0 { 1.0 } else { 0.0 });
    let mut new = sys.with_matrices(ao, bo, co, sys.d.clone())?;
    new.names.states.clear();
    Ok(Transformed {
        system: new,
        t,
        t_inv: s,
        condition: 1.0 / rc,
    })
}
