//! The modal (real block-diagonal) realization and the real Jordan realization.
//!
//! Method: the ordered real Schur form `A = Q T Qᵀ` (standardised 2×2 blocks, Bai–Demmel
//! reordering into the eigenvalue convention's order), then block diagonalisation by
//! Sylvester equations between a leading cluster and the rest, merging a cluster with its
//! neighbour whenever the decoupling solution `X` grows beyond a bound (Bavely & Stewart
//! 1979, "An algorithm for computing reducing subspaces by block diagonalization", SIAM
//! J. Numer. Anal. 16(2)). The transform stays as well conditioned as the spectrum allows:
//! an ill-conditioned eigenvector matrix is never inverted. Each complex pair's block is
//! finally scaled to `[[σ, ω], [−ω, σ]]` (ω > 0) and each block's columns normalised.

use super::properties::{snap, Rounding};
use super::system::StateSpace;
use super::transform::{rcond, rcond_up_to_state_units, Transformed};
use crate::numeric::linalg::dense::balance_reducing_norm;
use crate::numeric::linalg::eigen::eigenvalues_with_bounds;
use crate::numeric::linalg::schur::{block_eigenvalue, RealSchur};
use crate::numeric::linalg::sylvester::solve_sylvester;
use crate::numeric::{NumError, NumResult};
use nalgebra::{Complex, DMatrix};

/// Largest accepted ‖X‖_F (relative to 1) of one decoupling step before clusters merge.
pub const DECOUPLING_BOUND: f64 = 1e5;

/// Eigenvalues closer than this (relative to max(1, |λ|)) start in one cluster.
pub const CLUSTER_TOLERANCE: f64 = 1e-9;

/// A complex pair whose imaginary part is below this (relative to 1 + |λ|) is a split
/// repeated real eigenvalue of a nearly defective matrix, not an oscillation.
pub const NEARLY_DEFECTIVE: f64 = 1e-6;

/// What a modal or Jordan realization has to say about its result; the script layer
/// words it.
#[derive(Debug, Clone, PartialEq)]
pub enum ModalNote {
    /// Repeated or nearly repeated eigenvalues (one per diagonal block of the cluster, the
    /// member with non-negative imaginary part) stay in one coupled `size`×`size` block.
    Coupled {
        /// The eigenvalues of the cluster's blocks.
        eigenvalues: Vec<Complex<f64>>,
        /// The order of the coupled block.
        size: usize,
    },
    /// A pole within its own rounding error of the stability boundary, shown on it (as
    /// `modes` reports it).
    OnBoundary(Rounding),
    /// The Jordan structure is numerically fragile: an arbitrarily small change of `A` can
    /// change it.
    FragileJordan,
}

/// A modal (or Jordan) realization and its transform.
#[derive(Debug, Clone)]
pub struct Modal {
    /// The new model (x = T z) with `T`, `T⁻¹` and the condition of `T` up to the units of
    /// the states.
    pub form: Transformed,
    /// Sizes of the diagonal blocks in order.
    pub blocks: Vec<usize>,
    /// What the caller should say about the result (coupled clusters, poles put on the
    /// boundary, a fragile Jordan structure); ill-conditioning is in `form.condition`.
    pub notes: Vec<ModalNote>,
}

/// A model without states is its own modal and Jordan realization (empty transform).
fn stateless(sys: &StateSpace) -> Modal {
    Modal {
        form: Transformed {
            system: sys.clone(),
            t: DMatrix::zeros(0, 0),
            t_inv: DMatrix::zeros(0, 0),
            condition: 1.0,
        },
        blocks: Vec::new(),
        notes: Vec::new(),
    }
}

fn key(z: &Complex<f64>) -> (f64, f64) {
    (z.re, z.im.abs())
}

/// The ordered, block-diagonalised Schur form: (T, Y, block starts and sizes) with
/// `A = (Q Y) T (Q Y)⁻¹`, T block diagonal.
struct Decoupled {
    t: DMatrix<f64>,
    basis: DMatrix<f64>,
    blocks: Vec<(usize, usize)>,
    notes: Vec<ModalNote>,
}

fn decouple(a: &DMatrix<f64>) -> NumResult<Decoupled> {
    let n = a.nrows();
    let mut schur = RealSchur::new(a)?;
    // Sort the Schur blocks into the convention's order (ascending σ, then |ω|).
    let mut targets: Vec<Complex<f64>> = schur
        .blocks()
        .iter()
        .map(|&(s, k)| block_eigenvalue(&schur.t, s, k))
        .collect();
    targets.sort_by(|x, y| {
        key(x)
            .partial_cmp(&key(y))
            .unwrap_or(std::cmp::Ordering::Equal)
    });
    let near = |z: Complex<f64>, w: &Complex<f64>| {
        let zz = Complex::new(z.re, z.im.abs());
        (zz - w).norm() <= 1e-7 * (1.0 + w.norm())
    };
    for k in 0..targets.len() {
        let chosen = &targets[..=k];
        schur.reorder(|z| chosen.iter().any(|w| near(z, w)))?;
    }
    let blocks = schur.blocks();
    let mut t = schur.t.clone();
    let mut basis = schur.q.clone();
    let mut notes = Vec::new();
    // Group blocks into clusters, then decouple leading clusters from the rest.
    let mut out_blocks = Vec::new();
    let mut i = 0;
    while i < blocks.len() {
        let (s, k0) = blocks[i];
        let mut j = i + 1; // cluster = blocks[i..j]
        let lam = block_eigenvalue(&t, s, k0);
        while j < blocks.len() {
            let (sj, kj) = blocks[j];
            let mu = block_eigenvalue(&t, sj, kj);
            if (mu - lam).norm() <= CLUSTER_TOLERANCE * (1.0 + lam.norm()) {
                j += 1;
            } else {
                break;
            }
        }
        loop {
            let e = if j < blocks.len() { blocks[j].0 } else { n };
            if e == n {
                break;
            }
            let t11 = t.view((s, s), (e - s, e - s)).into_owned();
            let t22 = t.view((e, e), (n - e, n - e)).into_owned();
            let t12 = t.view((s, e), (e - s, n - e)).into_owned();
            let x = solve_sylvester(&t11, &(-&t22), &(-&t12));
            match x {
                Ok(x) if x.norm() <= DECOUPLING_BOUND => {
                    t.view_mut((s, e), (e - s, n - e)).fill(0.0);
                    let left = basis.columns(s, e - s).into_owned();
                    let mut right = basis.columns_mut(e, n - e);
                    right += left * x;
                    break;
                }
                _ => {
                    j += 1; // merge the next block into the cluster and retry
                }
            }
        }
        let e = if j < blocks.len() { blocks[j].0 } else { n };
        out_blocks.push((s, e - s));
        let tiny_pair = e - s == 2 && k0 == 2 && {
            let z = block_eigenvalue(&t, s, 2);
            z.im.abs() <= NEARLY_DEFECTIVE * (1.0 + z.norm())
        };
        if e - s > 2 || (e - s == 2 && k0 == 1) || tiny_pair {
            notes.push(ModalNote::Coupled {
                eigenvalues: (i..j)
                    .map(|b| block_eigenvalue(&t, blocks[b].0, blocks[b].1))
                    .collect(),
                size: e - s,
            });
        }
        i = j;
    }
    Ok(Decoupled {
        t,
        basis,
        blocks: out_blocks,
        notes,
    })
}

/// [`decouple`] on the Parlett–Reinsch balanced `D⁻¹AD` (D an exact power-of-two
/// diagonal; Parlett & Reinsch 1969), with the basis brought back as `D·Y`: the modal basis
/// of a model with badly scaled states is computed in balanced coordinates, so the
/// realization keeps the transfer function whatever the units (unbalanced, states scaled
/// 1e∓4 lost four digits of the Markov parameters).
fn decouple_balanced(a: &DMatrix<f64>) -> NumResult<Decoupled> {
    let Some((b, scale)) = balance_reducing_norm(a) else {
        return decouple(a);
    };
    let mut d = decouple(&b)?;
    for (i, s) in scale.iter().enumerate() {
        let mut row = d.basis.row_mut(i);
        row *= *s;
    }
    Ok(d)
}

/// Scales each block: a complex pair to `[[σ, ω], [−ω, σ]]`, then every block's columns
/// to unit average norm. Returns the scaled block-diagonal matrix and basis.
fn scale_blocks(d: &mut Decoupled) {
    for &(s, k) in &d.blocks {
        if k == 2 {
            let (b, c) = (d.t[(s, s + 1)], d.t[(s + 1, s)]);
            if b * c < 0.0 {
                let mag = (-c / b).sqrt();
                let f = if b > 0.0 { mag } else { -mag };
                // D = diag(1, f): D⁻¹ M D.
                d.t[(s, s + 1)] *= f;
                d.t[(s + 1, s)] /= f;
                let mut col = d.basis.column_mut(s + 1);
                col *= f;
            }
        }
        let norm = d.basis.columns(s, k).norm() / (k as f64).sqrt();
        if norm > 0.0 && norm.is_finite() {
            let mut cols = d.basis.columns_mut(s, k);
            cols /= norm;
        }
    }
}

fn assemble(sys: &StateSpace, d: Decoupled, what: &str) -> NumResult<Modal> {
    let n = sys.order();
    let rc = rcond(&d.basis);
    if rc <= (n.max(1) as f64) * f64::EPSILON {
        return Err(NumError::Singular {
            what: format!("{what}: the modal basis"),
            rcond: rc,
        });
    }
    let lu = d.basis.clone().lu();
    let singular = || NumError::Singular {
        what: format!("{what}: the modal basis"),
        rcond: rc,
    };
    let b = lu.solve(&sys.b).ok_or_else(singular)?;
    let t_inv = lu.solve(&DMatrix::identity(n, n)).ok_or_else(singular)?;
    let c = &sys.c * &d.basis;
    let mut a = d.t.clone();
    // Exactly block diagonal: clear the rounding left outside the blocks.
    for i in 0..n {
        for j in 0..n {
            let inside = d
                .blocks
                .iter()
                .any(|&(s, k)| i >= s && i < s + k && j >= s && j < s + k);
            if !inside {
                a[(i, j)] = 0.0;
            }
        }
    }
    let mut notes = d.notes;
    onto_boundary(&mut a, &d.blocks, sys, &mut notes)?;
    let mut system = sys.with_matrices(a, b, c, sys.d.clone())?;
    system.names.states.clear();
    // The basis is judged up to the units of the states (its rows): a model with badly
    // scaled states has an accurate modal form (computed in balanced coordinates).
    let rcu = rcond_up_to_state_units(&d.basis, true);
    let condition = if rcu > 0.0 { 1.0 / rcu } else { f64::INFINITY };
    Ok(Modal {
        form: Transformed {
            system,
            t: d.basis,
            t_inv,
            condition,
        },
        blocks: d.blocks.iter().map(|&(_, k)| k).collect(),
        notes,
    })
}

/// Puts each 1×1 or standard 2×2 block whose eigenvalue lies within its own rounding error
/// of the stability boundary exactly on it — the origin or the imaginary axis; z = 1, the
/// origin or the unit circle when discrete — as [`super::properties::modes`] reports such
/// poles, with a note giving the computed value and its bound. The bound is that of the
/// nearest eigenvalue of the given `A` ([`eigenvalues_with_bounds`]), so the decision does
/// not depend on the units of the states. The change is within rounding of the computed
/// form: a rigid-body mode shows as 0, not as 6.8e-17.
fn onto_boundary(
    a: &mut DMatrix<f64>,
    blocks: &[(usize, usize)],
    sys: &StateSpace,
    notes: &mut Vec<ModalNote>,
) -> NumResult<()> {
    let bounded = eigenvalues_with_bounds(&sys.a)?;
    for &(s, k) in blocks {
        let z = match k {
            1 => Complex::new(a[(s, s)], 0.0),
            2 if a[(s, s)] == a[(s + 1, s + 1)] && a[(s, s + 1)] * a[(s + 1, s)] < 0.0 => {
                Complex::new(a[(s, s)], (-a[(s, s + 1)] * a[(s + 1, s)]).sqrt())
            }
            _ => continue,
        };
        let Some(error) = bounded
            .iter()
            .min_by(|x, y| (x.value - z).norm().total_cmp(&(y.value - z).norm()))
            .map(|x| x.error)
        else {
            continue;
        };
        let Some((on, boundary)) = snap(z, error, sys.is_discrete()) else {
            continue;
        };
        if on == z {
            continue;
        }
        if k == 1 {
            a[(s, s)] = on.re;
        } else if on.im != 0.0 {
            // Keep the standard form [[σ, ω], [−ω, σ]] scaled onto the boundary point.
            let f = on.im / z.im;
            a[(s, s)] = on.re;
            a[(s + 1, s + 1)] = on.re;
            a[(s, s + 1)] *= f;
            a[(s + 1, s)] *= f;
        } else {
            continue;
        }
        notes.push(ModalNote::OnBoundary(Rounding {
            computed: z,
            error,
            boundary,
        }));
    }
    Ok(())
}

/// The modal realization: real poles on the diagonal, each complex pair as a 2×2 block
/// `[[σ, ω], [−ω, σ]]`, blocks in the eigenvalue convention's order (ascending σ); a
/// cluster of repeated or nearly repeated eigenvalues stays one coupled block (with a
/// warning). Cost O(n³) plus O(n) Schur reorderings.
pub fn modal_realization(sys: &StateSpace) -> NumResult<Modal> {
    if sys.order() == 0 {
        return Ok(stateless(sys));
    }
    let mut d = decouple_balanced(&sys.a)?;
    scale_blocks(&mut d);
    assemble(sys, d, "modal_realization")
}

/// The real Jordan realization: like the modal form, but each cluster of a repeated real
/// eigenvalue λ is put in Jordan form (λ on the diagonal, ones on the superdiagonal of
/// each chain). The chain structure is decided from the numerical ranks of powers of
/// `N = T_k − λI` restricted to the cluster (singular values above `1e-8·‖T_k‖`), which
/// is exactly the decision that makes the Jordan form fragile: an arbitrarily small
/// perturbation can change it. Repeated complex pairs are refused.
pub fn jordan_realization(sys: &StateSpace) -> NumResult<Modal> {
    if sys.order() == 0 {
        return Ok(stateless(sys));
    }
    let mut d = decouple_balanced(&sys.a)?;
    // Chains are read off the Schur blocks as they are: the standard-form scaling of a
    // 2×2 block (scale_blocks, applied at the end) would shrink the coupling of a nearly
    // defective pair to the size of its rounding-level imaginary part.
    let mut new_blocks = Vec::new();
    for &(s, k) in &d.blocks.clone() {
        let real_cluster = k > 2
            || (k == 2 && {
                let z = block_eigenvalue(&d.t, s, 2);
                d.t[(s, s + 1)] * d.t[(s + 1, s)] >= 0.0
                    || z.im.abs() <= NEARLY_DEFECTIVE * (1.0 + z.norm())
            });
        if !real_cluster {
            new_blocks.push((s, k));
            continue;
        }
        let blk = d.t.view((s, s), (k, k)).into_owned();
        let ev = crate::numeric::linalg::eigen::eigenvalues(&blk)?;
        if ev
            .iter()
            .any(|z| z.im.abs() > NEARLY_DEFECTIVE * (1.0 + z.norm()))
            && !one_defective_eigenvalue(&ev, blk.norm())
        {
            return Err(NumError::invalid(
                "jordan_realization",
                "repeated complex eigenvalue pairs are not supported in the real Jordan form; \
                 use modal_realization, which keeps such a cluster as one coupled block",
            ));
        }
        let lam = ev.iter().map(|z| z.re).sum::<f64>() / k as f64;
        let (chains, v) = jordan_chains(&blk, lam)?;
        // New basis for the cluster: basis[:, s..s+k] · V.
        let old = d.basis.columns(s, k).into_owned();
        d.basis.columns_mut(s, k).copy_from(&(old * &v));
        let mut j = DMatrix::zeros(k, k);
        let mut at = 0;
        for len in &chains {
            for i in 0..*len {
                j[(at + i, at + i)] = lam;
                if i + 1 < *len {
                    j[(at + i, at + i + 1)] = 1.0;
                }
            }
            new_blocks.push((s + at, *len));
            at += len;
        }
        d.t.view_mut((s, s), (k, k)).copy_from(&j);
    }
    d.blocks = new_blocks;
    scale_blocks(&mut d);
    let mut out = assemble(sys, d, "jordan_realization")?;
    out.notes.insert(0, ModalNote::FragileJordan);
    Ok(out)
}

/// Whether the k computed eigenvalues `ev` of a cluster are one defective real eigenvalue
/// split by rounding. A k×k Jordan block perturbed by δ has eigenvalues on a circle of
/// radius about δ^(1/k) around λ (Lidskii 1966; Moro, Burke & Overton 1997, "On the
/// Lidskii–Vishik–Lyusternik perturbation theory for eigenvalues of matrices with
/// arbitrary Jordan structure", SIAM J. Matrix Anal. Appl. 18(4)); with the backward
/// error δ = ε‖T_k‖ of the Schur form, a triple eigenvalue splits by ~ε^(1/3)‖T_k‖ ≈ 6e-6
/// relative, far beyond a fixed tolerance. The cluster is accepted when its mean is real
/// and every eigenvalue lies within 100·ε^(1/k)·scale of it.
fn one_defective_eigenvalue(ev: &[Complex<f64>], norm: f64) -> bool {
    let k = ev.len();
    if k < 2 {
        return false;
    }
    let mean = ev.iter().sum::<Complex<f64>>() / k as f64;
    let scale = norm.max(mean.norm()).max(f64::MIN_POSITIVE);
    let radius = 100.0 * f64::EPSILON.powf(1.0 / k as f64) * scale;
    mean.im.abs() <= 100.0 * f64::EPSILON * scale && ev.iter().all(|z| (z - mean).norm() <= radius)
}

/// Jordan chains of a k×k block with the single eigenvalue `lam`: returns the chain
/// lengths and the basis V (columns: each chain as [N^{l−1}v, …, Nv, v]).
fn jordan_chains(blk: &DMatrix<f64>, lam: f64) -> NumResult<(Vec<usize>, DMatrix<f64>)> {
    let k = blk.nrows();
    let nmat = blk - DMatrix::identity(k, k) * lam;
    let tol = 1e-8 * blk.norm().max(1.0);
    let rank = |m: &DMatrix<f64>| {
        m.clone()
            .singular_values()
            .iter()
            .filter(|&&s| s > tol)
            .count()
    };
    // Powers and their ranks until zero.
    let mut powers = vec![DMatrix::identity(k, k)];
    let mut ranks = vec![k];
    while *ranks.last().unwrap_or(&0) > 0 && powers.len() <= k {
        let next = &nmat * powers.last().unwrap_or(&DMatrix::identity(k, k));
        ranks.push(rank(&next));
        powers.push(next);
    }
    let top = ranks.len() - 1; // N^top ≈ 0
    let mut chosen: Vec<DMatrix<f64>> = Vec::new(); // columns chosen so far (span)
    let mut chains = Vec::new();
    let mut cols: Vec<nalgebra::DVector<f64>> = Vec::new();
    for level in (1..=top).rev() {
        // Vectors v with N^level v = 0 but N^{level−1} v ≠ 0, independent of what the
        // chains chosen so far span (together with ker N^{level−1}).
        let count = (ranks[level - 1] - ranks[level])
            - if level < top {
                ranks[level] - ranks[level + 1]
            } else {
                0
            };
        if count == 0 {
            continue;
        }
        // Candidates: vectors of ker N^level ordered by how far N^{level−1} keeps them from
        // zero (right singular vectors of N^{level−1}·P, P a basis of ker N^level), so the
        // chains are as well conditioned as the block allows.
        let svd = crate::numeric::linalg::dense::verified_svd(&powers[level])?;
        let vt = svd.v_t.unwrap_or_else(|| DMatrix::identity(k, k));
        let null_cols: Vec<nalgebra::DVector<f64>> = (0..k)
            .filter(|&i| svd.singular_values.get(i).copied().unwrap_or(0.0) <= tol)
            .map(|i| vt.row(i).transpose())
            .collect();
        if null_cols.is_empty() {
            continue;
        }
        let p = DMatrix::from_columns(&null_cols);
        let mp = &powers[level - 1] * &p;
        let inner = crate::numeric::linalg::dense::verified_svd(&mp)?;
        let ivt = inner
            .v_t
            .unwrap_or_else(|| DMatrix::identity(p.ncols(), p.ncols()));
        let null: Vec<nalgebra::DVector<f64>> = (0..ivt.nrows())
            .map(|i| &p * ivt.row(i).transpose())
            .collect();
        let mut picked = 0;
        for cand in null {
            if picked == count {
                break;
            }
            // Must not be in ker N^{level−1} + span(chosen chain vectors).
            let mut span: Vec<nalgebra::DVector<f64>> = cols.clone();
            let lower = crate::numeric::linalg::dense::verified_svd(&powers[level - 1])?;
            if let Some(vt) = lower.v_t {
                for i in 0..k {
                    if lower.singular_values.get(i).copied().unwrap_or(0.0) <= tol {
                        span.push(vt.row(i).transpose());
                    }
                }
            }
            let r_before = rank_of(&span, tol, k);
            span.push(cand.clone());
            if rank_of(&span, tol, k) > r_before {
                let mut chain: Vec<nalgebra::DVector<f64>> = Vec::new();
                let mut v = cand.clone();
                for _ in 0..level {
                    chain.push(v.clone());
                    v = &nmat * v;
                }
                chain.reverse();
                cols.extend(chain.iter().cloned());
                chosen.push(DMatrix::from_columns(&chain));
                chains.push(level);
                picked += 1;
            }
        }
    }
    if cols.len() != k {
        return Err(NumError::no_solution(
            "jordan_realization",
            format!("the Jordan chains of the eigenvalue {lam} could not be separated numerically"),
        ));
    }
    Ok((chains, DMatrix::from_columns(&cols)))
}

fn rank_of(v: &[nalgebra::DVector<f64>], tol: f64, k: usize) -> usize {
    if v.is_empty() {
        return 0;
    }
    let m = DMatrix::from_columns(v);
    let _ = k;
    m.singular_values().iter().filter(|&&s| s > tol).count()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::testing::Rng;

    fn model(a: DMatrix<f64>, rng: &mut Rng) -> StateSpace {
        let n = a.nrows();
        StateSpace::new(
            a,
            rng.matrix(n, 2),
            rng.matrix(2, n),
            DMatrix::zeros(2, 2),
            0.0,
        )
        .unwrap()
    }

    fn same_markov(a: &StateSpace, b: &StateSpace) {
        for (p, q) in a
            .markov_parameters(8)
            .iter()
            .zip(b.markov_parameters(8).iter())
        {
            let scale = 1.0 + p.norm();
            assert!(
                (p - q).norm() <= 1e-8 * scale,
                "Markov parameters differ: {p} vs {q}"
            );
        }
    }

    #[test]
    fn a_rigid_body_pole_shows_exactly_at_the_origin_at_every_state_scaling() {
        // Two inertias on a stiff shaft (invented): the absolute angle gives a pole at
        // exactly 0 that the Schur form computes only to rounding level (5.6e-12 here).
        // The modal form must show it as 0 with a note, whatever the state units, and keep
        // the Markov parameters; a slow genuine pole (−1e-7) must stay where it is.
        let k = 3.8e4;
        let a = DMatrix::from_row_slice(
            4,
            4,
            &[
                0.0,
                1.0,
                0.0,
                0.0,
                -k / 1.2,
                -40.0 / 1.2,
                k / 1.2,
                40.0 / 1.2,
                0.0,
                0.0,
                0.0,
                1.0,
                k / 4.5,
                40.0 / 4.5,
                -k / 4.5,
                -41.5 / 4.5,
            ],
        );
        let b = DMatrix::from_column_slice(4, 1, &[0.0, 1.0 / 1.2, 0.0, 0.0]);
        let c = DMatrix::from_row_slice(1, 4, &[0.0, 0.0, 0.0, 1.0]);
        let sys = StateSpace::new(a, b, c, DMatrix::zeros(1, 1), 0.0).unwrap();
        let mut noted = 0;
        for e in [-4, -2, 0, 2, 4] {
            let s = 10f64.powi(e);
            let t = DMatrix::from_diagonal(&nalgebra::DVector::from_vec(vec![1.0, s, 1.0 / s, s]));
            let scaled = crate::numeric::lti::transform::transform_state(&sys, &t)
                .unwrap()
                .system;
            let m = modal_realization(&scaled).unwrap();
            let d = m.form.system.a.diagonal();
            let zeros = d.iter().filter(|&&x| x == 0.0).count();
            assert_eq!(zeros, 1, "scaling 1e{e}: diagonal {d:?}");
            noted += m
                .notes
                .iter()
                .filter(|w| matches!(w, ModalNote::OnBoundary(_)))
                .count();
            let v = crate::numeric::lti::equivalence::equivalence(&scaled, &m.form.system).unwrap();
            assert!(v.equivalent, "scaling 1e{e}: {}", v.reason);
        }
        assert!(noted >= 1, "a moved pole is noted");
        let slow = StateSpace::new(
            DMatrix::from_row_slice(2, 2, &[-1e-7, 0.0, 0.0, -2.0]),
            DMatrix::from_element(2, 1, 1.0),
            DMatrix::from_element(1, 2, 1.0),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap();
        let m = modal_realization(&slow).unwrap();
        assert!(m.form.system.a.diagonal().iter().any(|&x| x == -1e-7));
        assert!(m.notes.is_empty());
    }

    #[test]
    fn random_models_become_block_diagonal_with_standard_pairs() {
        let mut rng = Rng::new(11);
        for &n in &[1usize, 2, 3, 6, 10] {
            let sys = model(rng.matrix(n, n), &mut rng);
            let m = modal_realization(&sys).unwrap();
            let a = &m.form.system.a;
            let mut at = 0;
            for &k in &m.blocks {
                if k == 2 {
                    // [[σ, ω], [−ω, σ]] with ω > 0.
                    assert!((a[(at, at)] - a[(at + 1, at + 1)]).abs() < 1e-10);
                    assert!(a[(at, at + 1)] > 0.0);
                    assert!((a[(at, at + 1)] + a[(at + 1, at)]).abs() < 1e-9 * (1.0 + a.norm()));
                }
                at += k;
            }
            // Eigenvalues on the diagonal blocks, in ascending real part.
            let mut prev = f64::NEG_INFINITY;
            at = 0;
            for &k in &m.blocks {
                assert!(a[(at, at)] >= prev - 1e-9);
                prev = a[(at, at)];
                at += k;
            }
            same_markov(&sys, &m.form.system);
        }
    }

    #[test]
    fn jordan_chain_survives_a_rounding_level_complex_split() {
        // A Schur-form pair [[λ, b], [c, λ]] with b·c < 0 at rounding level: eigenvalues
        // λ ± i·√(−bc) ≈ λ ± 1e-8 i, numerically one defective eigenvalue. The chain must
        // be found from the block as it is, before any standard-form scaling shrinks b.
        let mut rng = Rng::new(9);
        let a = DMatrix::from_row_slice(2, 2, &[-1.0, -0.9, 1.2e-16, -1.0]);
        let sys = model(a, &mut rng);
        let jr = jordan_realization(&sys).unwrap();
        let ja = &jr.form.system.a;
        assert_eq!(jr.blocks, vec![2], "{ja}");
        assert!(
            (ja[(0, 0)] + 1.0).abs() < 1e-12 && (ja[(0, 1)] - 1.0).abs() < 1e-12,
            "{ja}"
        );
        same_markov(&sys, &jr.form.system);
    }

    #[test]
    fn jordan_of_a_rotated_triple_block() {
        // A 3×3 Jordan block at −2 behind an orthogonal-ish similarity: the Schur form's
        // eigenvalues split by ~ε^(1/3) into a complex pair and a real one, which used to be
        // refused as "repeated complex pairs".
        let j = DMatrix::from_row_slice(3, 3, &[-2.0, 1.0, 0.0, 0.0, -2.0, 1.0, 0.0, 0.0, -2.0]);
        let mut complex_splits = 0;
        for seed in 0..40 {
            let mut rng = Rng::new(seed);
            let q = rng.matrix(3, 3).qr().q();
            let a = q.transpose() * &j * &q;
            let ev = crate::numeric::linalg::eigen::eigenvalues(&a).unwrap();
            complex_splits += ev.iter().any(|z| z.im.abs() > NEARLY_DEFECTIVE * 3.0) as usize;
            let sys = model(a, &mut rng);
            let jr = jordan_realization(&sys).unwrap_or_else(|e| panic!("seed {seed}: {e}"));
            assert_eq!(jr.blocks, vec![3], "seed {seed}: {}", jr.form.system.a);
            for i in 0..3 {
                assert!(
                    (jr.form.system.a[(i, i)] + 2.0).abs() < 1e-4,
                    "{}",
                    jr.form.system.a
                );
            }
            same_markov(&sys, &jr.form.system);
        }
        // The sweep must contain the case that used to be refused.
        assert!(complex_splits > 0, "no seed split into a complex pair");
    }

    #[test]
    fn repeated_eigenvalue_stays_coupled_and_warns() {
        // A Jordan block hidden by a similarity: eigenvalue −1 twice, defective.
        let mut rng = Rng::new(5);
        let j = DMatrix::from_row_slice(3, 3, &[-1.0, 1.0, 0.0, 0.0, -1.0, 0.0, 0.0, 0.0, -3.0]);
        let t = rng.matrix(3, 3) + DMatrix::identity(3, 3) * 3.0;
        let a = t.clone().try_inverse().unwrap() * j * &t;
        let sys = model(a, &mut rng);
        let m = modal_realization(&sys).unwrap();
        assert_eq!(m.blocks, vec![1, 2]);
        assert!(m
            .notes
            .iter()
            .any(|n| matches!(n, ModalNote::Coupled { .. })));
        same_markov(&sys, &m.form.system);
        let jr = jordan_realization(&sys).unwrap();
        let ja = &jr.form.system.a;
        assert!(
            (ja[(1, 1)] + 1.0).abs() < 1e-6 && (ja[(1, 2)] - 1.0).abs() < 1e-9,
            "{ja}"
        );
        same_markov(&sys, &jr.form.system);
    }
}
