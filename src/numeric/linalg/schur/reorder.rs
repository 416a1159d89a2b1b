//! Reordering a real Schur form: adjacent block swaps by the direct method of Bai & Demmel
//! 1993 (as LAPACK's `dlaexc`/`dtrsen`), with their stability test.

use super::*;

/// A swap refused by the stability test.
#[derive(Debug, Clone, Copy)]
pub(super) struct SwapRejected {
    pub(super) row: usize,
    pub(super) second: usize,
    pub(super) error: f64,
    pub(super) threshold: f64,
}

/// Moves the block of size `nb` at `from` up to `to` (a block boundary) by adjacent swaps.
pub(super) fn move_block(
    t: &mut DMatrix<f64>,
    q: &mut DMatrix<f64>,
    from: usize,
    nb: usize,
    to: usize,
) -> Result<(), SwapRejected> {
    let mut here = from;
    while here > to {
        let nbnext = if here >= 2 && t[(here - 1, here - 2)] != 0.0 {
            2
        } else {
            1
        };
        let j1 = here - nbnext;
        swap(t, q, j1, nbnext, nb)?;
        here = j1;
        if nb == 2 && t[(here + 1, here)] == 0.0 {
            // The moved pair turned out real and split: move its two halves in turn.
            move_block(t, q, here, 1, to)?;
            return move_block(t, q, here + 1, 1, to + 1);
        }
    }
    Ok(())
}

/// Swaps the adjacent diagonal blocks `T₁₁` (n1×n1 at `j1`) and `T₂₂` (n2×n2 at `j1 + n1`)
/// by an orthogonal similarity, updating `T` and `Q` (Bai & Demmel 1993; LAPACK `dlaexc`).
pub(super) fn swap(
    t: &mut DMatrix<f64>,
    q: &mut DMatrix<f64>,
    j1: usize,
    n1: usize,
    n2: usize,
) -> Result<(), SwapRejected> {
    let n = t.nrows();
    let nq = q.nrows();
    let eps = f64::EPSILON;
    let smlnum = f64::MIN_POSITIVE / eps;
    if n1 == 1 && n2 == 1 {
        // Two 1×1 blocks: the rotation taking (t₁₂, t₂₂ − t₁₁) to (r, 0). Always stable.
        let (t11, t22) = (t[(j1, j1)], t[(j1 + 1, j1 + 1)]);
        let (f, g) = (t[(j1, j1 + 1)], t22 - t11);
        let (cs, sn) = if g == 0.0 {
            (1.0, 0.0)
        } else {
            let r = f.hypot(g);
            (f / r, g / r)
        };
        rotate_rows(t, j1, j1 + 1, (j1 + 2)..n, cs, sn);
        rotate_cols(t, j1, j1 + 1, 0..j1, cs, sn);
        t[(j1, j1)] = t22;
        t[(j1 + 1, j1 + 1)] = t11;
        rotate_cols(q, j1, j1 + 1, 0..nq, cs, sn);
        return Ok(());
    }
    let nd = n1 + n2;
    let d = t.view((j1, j1), (nd, nd)).clone_owned();
    let dnorm = d.amax();
    let thresh = (10.0 * eps * dnorm).max(smlnum);
    let (x, gamma) = small_sylvester(&d, n1, n2);
    // The columns of [−X; γI] span the invariant subspace of T₂₂.
    let mut m = DMatrix::zeros(nd, n2);
    for j in 0..n2 {
        for i in 0..n1 {
            m[(i, j)] = -x[(i, j)];
        }
        m[(n1 + j, j)] = gamma;
    }
    let qs = householder_basis(&m);
    let dp = qs.transpose() * &d * &qs;
    // Weak test: the block that must vanish, and moved 1×1 eigenvalues.
    let mut weak = 0.0f64;
    for i in n2..nd {
        for j in 0..n2 {
            weak = weak.max(dp[(i, j)].abs());
        }
    }
    let mut dt = dp.clone();
    for i in n2..nd {
        for j in 0..n2 {
            dt[(i, j)] = 0.0;
        }
    }
    if n1 == 1 {
        weak = weak.max((dp[(nd - 1, nd - 1)] - d[(0, 0)]).abs());
        dt[(nd - 1, nd - 1)] = d[(0, 0)];
    }
    if n2 == 1 {
        weak = weak.max((dp[(0, 0)] - d[(nd - 1, nd - 1)]).abs());
        dt[(0, 0)] = d[(nd - 1, nd - 1)];
    }
    let reject = |error: f64, threshold: f64| SwapRejected {
        row: j1,
        second: j1 + n1,
        error,
        threshold,
    };
    if weak.is_nan() || weak > thresh {
        return Err(reject(weak, thresh));
    }
    // Strong test: the accepted (zeroed) block must reproduce D.
    let strong = (&d - &qs * &dt * qs.transpose()).norm();
    let strong_thresh = (20.0 * eps * d.norm()).max(smlnum);
    if strong.is_nan() || strong > strong_thresh {
        return Err(reject(strong, strong_thresh));
    }
    // Accept: apply to the whole of T and Q.
    let rows = t.view((j1, j1), (nd, n - j1)).clone_owned();
    t.view_mut((j1, j1), (nd, n - j1))
        .copy_from(&(qs.transpose() * rows));
    let cols = t.view((0, j1), (j1 + nd, nd)).clone_owned();
    t.view_mut((0, j1), (j1 + nd, nd)).copy_from(&(cols * &qs));
    t.view_mut((j1, j1), (nd, nd)).copy_from(&dt);
    let qc = q.columns(j1, nd).clone_owned();
    q.columns_mut(j1, nd).copy_from(&(qc * &qs));
    if n2 == 2 {
        standardize_block(t, q, j1);
    }
    if n1 == 2 {
        standardize_block(t, q, j1 + n2);
    }
    Ok(())
}

/// Solves `T₁₁X − XT₂₂ = γ·T₁₂` for the blocks of `d = [T₁₁ T₁₂; 0 T₂₂]` (orders n1, n2 ≤ 2)
/// through the Kronecker form `(I⊗T₁₁ − T₂₂ᵀ⊗I)·vec X = γ·vec T₁₂`, by Gaussian elimination
/// with complete pivoting; pivots below `max(ε·max|Tᵢᵢ|, SAFMIN/ε)` are raised to that floor
/// and `γ ≤ 1` guards against overflow (the approach of LAPACK's `dlasy2`).
pub(super) fn small_sylvester(d: &DMatrix<f64>, n1: usize, n2: usize) -> (DMatrix<f64>, f64) {
    let eps = f64::EPSILON;
    let smlnum = f64::MIN_POSITIVE / eps;
    let nk = n1 * n2;
    let mut k = DMatrix::<f64>::zeros(nk, nk);
    let mut rhs = vec![0.0; nk];
    let mut diag_max = 0.0f64;
    for i in 0..n1 {
        for kk in 0..n1 {
            diag_max = diag_max.max(d[(i, kk)].abs());
        }
    }
    for i in 0..n2 {
        for kk in 0..n2 {
            diag_max = diag_max.max(d[(n1 + i, n1 + kk)].abs());
        }
    }
    let smin = (eps * diag_max).max(smlnum);
    for j in 0..n2 {
        for i in 0..n1 {
            let row = i + j * n1;
            rhs[row] = d[(i, n1 + j)];
            for kk in 0..n1 {
                k[(row, kk + j * n1)] += d[(i, kk)];
            }
            for kk in 0..n2 {
                k[(row, i + kk * n1)] -= d[(n1 + kk, n1 + j)];
            }
        }
    }
    // Complete pivoting; col_perm[c] is the unknown held in column c.
    let mut col_perm: Vec<usize> = (0..nk).collect();
    for p in 0..nk {
        let (mut pi, mut pj, mut big) = (p, p, -1.0);
        for j in p..nk {
            for i in p..nk {
                if k[(i, j)].abs() > big {
                    big = k[(i, j)].abs();
                    pi = i;
                    pj = j;
                }
            }
        }
        if pi != p {
            k.swap_rows(pi, p);
            rhs.swap(pi, p);
        }
        if pj != p {
            k.swap_columns(pj, p);
            col_perm.swap(pj, p);
        }
        if k[(p, p)].abs() < smin {
            k[(p, p)] = smin;
        }
        for i in (p + 1)..nk {
            let l = k[(i, p)] / k[(p, p)];
            k[(i, p)] = 0.0;
            for j in (p + 1)..nk {
                k[(i, j)] -= l * k[(p, j)];
            }
            rhs[i] -= l * rhs[p];
        }
    }
    let mut gamma = 1.0;
    let bmax = rhs.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if (0..nk).any(|i| 8.0 * smlnum * rhs[i].abs() > k[(i, i)].abs()) {
        gamma = 0.125 / bmax;
        for v in rhs.iter_mut() {
            *v *= gamma;
        }
    }
    let mut y = vec![0.0; nk];
    for i in (0..nk).rev() {
        let mut s = rhs[i];
        for j in (i + 1)..nk {
            s -= k[(i, j)] * y[j];
        }
        y[i] = s / k[(i, i)];
    }
    let mut x = DMatrix::zeros(n1, n2);
    for (c, &unknown) in col_perm.iter().enumerate() {
        x[(unknown % n1, unknown / n1)] = y[c];
    }
    (x, gamma)
}

/// The full orthogonal factor `Q` (rows×rows) of a Householder QR factorisation of `m`
/// (`Qᵀm` upper triangular).
pub(super) fn householder_basis(m: &DMatrix<f64>) -> DMatrix<f64> {
    let (rows, cols) = m.shape();
    let mut a = m.clone();
    let mut q = DMatrix::identity(rows, rows);
    for c in 0..cols.min(rows) {
        let mut v: Vec<f64> = (c..rows).map(|i| a[(i, c)]).collect();
        let vmax = v.iter().fold(0.0f64, |s, x| s.max(x.abs()));
        if vmax == 0.0 {
            continue;
        }
        for x in v.iter_mut() {
            *x /= vmax;
        }
        let alpha = v.iter().map(|x| x * x).sum::<f64>().sqrt();
        v[0] += sign(alpha, v[0]);
        let vv: f64 = v.iter().map(|x| x * x).sum();
        // a ← (I − 2vvᵀ/vᵀv)·a on rows c.., q ← q·(I − 2vvᵀ/vᵀv) on columns c..
        for j in c..cols {
            let s: f64 = (0..v.len()).map(|i| v[i] * a[(c + i, j)]).sum::<f64>() * 2.0 / vv;
            for (i, vi) in v.iter().enumerate() {
                a[(c + i, j)] -= s * vi;
            }
        }
        for i in 0..rows {
            let s: f64 = (0..v.len()).map(|l| q[(i, c + l)] * v[l]).sum::<f64>() * 2.0 / vv;
            for (l, vl) in v.iter().enumerate() {
                q[(i, c + l)] -= s * vl;
            }
        }
    }
    q
}
