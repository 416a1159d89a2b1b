//! The Francis double-shift QR iteration on a Hessenberg matrix (Francis 1961/62; the
//! deflation of Ahues & Tisseur 1997; organised as LAPACK's `dlahqr`), with its reflector
//! kernels and the shape checks of its result.

use super::*;

/// Francis double-shift QR iteration on an upper Hessenberg `h`, accumulating the
/// transformations into `z` (the method of LAPACK's `dlahqr` with `wantt = wantz = true`).
/// On success `h` is quasi-triangular with standardised 2×2 blocks; `Err` carries the row
/// at which `itmax` sweeps did not deflate, or `None` when the run's deadline passed (a
/// cancellation point once per QR sweep).
pub(super) fn francis_qr(
    h: &mut DMatrix<f64>,
    z: &mut DMatrix<f64>,
    itmax: usize,
    full: bool,
) -> Result<(), Option<usize>> {
    const DAT1: f64 = 0.75;
    const DAT2: f64 = -0.4375;
    const KEXSH: usize = 10;
    let n = h.nrows();
    if n < 2 {
        return Ok(());
    }
    for j in 0..n.saturating_sub(3) {
        h[(j + 2, j)] = 0.0;
        h[(j + 3, j)] = 0.0;
    }
    if n >= 3 {
        h[(n - 1, n - 3)] = 0.0;
    }
    let nz = z.nrows();
    let ulp = f64::EPSILON;
    let smlnum = f64::MIN_POSITIVE * (n as f64 / ulp);
    let mut kdefl = 0usize;
    let mut i = n - 1;
    loop {
        let mut l = 0;
        let mut deflated = false;
        for _its in 0..=itmax {
            if crate::budget::cancelled() {
                return Err(None);
            }
            // Look for a single small subdiagonal element (Ahues & Tisseur criterion).
            let mut k = i;
            while k > l {
                let hkk1 = h[(k, k - 1)].abs();
                if hkk1 <= smlnum {
                    break;
                }
                let mut tst = h[(k - 1, k - 1)].abs() + h[(k, k)].abs();
                if tst == 0.0 {
                    if k >= 2 {
                        tst += h[(k - 1, k - 2)].abs();
                    }
                    if k + 1 < n {
                        tst += h[(k + 1, k)].abs();
                    }
                }
                if hkk1 <= ulp * tst {
                    let ab = hkk1.max(h[(k - 1, k)].abs());
                    let ba = hkk1.min(h[(k - 1, k)].abs());
                    let diff = (h[(k - 1, k - 1)] - h[(k, k)]).abs();
                    let aa = h[(k, k)].abs().max(diff);
                    let bb = h[(k, k)].abs().min(diff);
                    let s = aa + ab;
                    if ba * (ab / s) <= smlnum.max(ulp * (bb * (aa / s))) {
                        break;
                    }
                }
                k -= 1;
            }
            l = k;
            if l > 0 {
                h[(l, l - 1)] = 0.0;
            }
            if l + 1 >= i {
                deflated = true;
                break;
            }
            kdefl += 1;
            // Shifts: exceptional every KEXSH sweeps without deflation, else Francis'.
            let (h11, h12, h21, h22) = if kdefl.is_multiple_of(2 * KEXSH) {
                let s = h[(i, i - 1)].abs() + h[(i - 1, i - 2)].abs();
                let h11 = DAT1 * s + h[(i, i)];
                (h11, DAT2 * s, s, h11)
            } else if kdefl.is_multiple_of(KEXSH) {
                let s = h[(l + 1, l)].abs() + h[(l + 2, l + 1)].abs();
                let h11 = DAT1 * s + h[(l, l)];
                (h11, DAT2 * s, s, h11)
            } else {
                (h[(i - 1, i - 1)], h[(i - 1, i)], h[(i, i - 1)], h[(i, i)])
            };
            let s = h11.abs() + h12.abs() + h21.abs() + h22.abs();
            let (rt1r, rt1i, rt2r, rt2i) = if s == 0.0 {
                (0.0, 0.0, 0.0, 0.0)
            } else {
                let (h11, h12, h21, h22) = (h11 / s, h12 / s, h21 / s, h22 / s);
                let tr = (h11 + h22) / 2.0;
                let det = (h11 - tr) * (h22 - tr) - h12 * h21;
                let rtdisc = det.abs().sqrt();
                if det >= 0.0 {
                    (tr * s, rtdisc * s, tr * s, -rtdisc * s)
                } else {
                    // Real shifts: use the one closer to h22, twice.
                    let (r1, r2) = (tr + rtdisc, tr - rtdisc);
                    let r = if (r1 - h22).abs() <= (r2 - h22).abs() {
                        r1 * s
                    } else {
                        r2 * s
                    };
                    (r, 0.0, r, 0.0)
                }
            };
            // Look for two consecutive small subdiagonal elements.
            let mut m = i - 2;
            let mut v = [0.0f64; 3];
            loop {
                let h21s = h[(m + 1, m)];
                let s = (h[(m, m)] - rt2r).abs() + rt2i.abs() + h21s.abs();
                let h21s = h21s / s;
                v[0] = h21s * h[(m, m + 1)] + (h[(m, m)] - rt1r) * ((h[(m, m)] - rt2r) / s)
                    - rt1i * (rt2i / s);
                v[1] = h21s * (h[(m, m)] + h[(m + 1, m + 1)] - rt1r - rt2r);
                v[2] = h21s * h[(m + 2, m + 1)];
                let s = v[0].abs() + v[1].abs() + v[2].abs();
                if s > 0.0 {
                    v = [v[0] / s, v[1] / s, v[2] / s];
                }
                if m == l {
                    break;
                }
                let h00 = h[(m, m - 1)].abs() * (v[1].abs() + v[2].abs());
                let h01 = v[0].abs()
                    * (h[(m - 1, m - 1)].abs() + h[(m, m)].abs() + h[(m + 1, m + 1)].abs());
                if h00 <= ulp * h01 {
                    break;
                }
                m -= 1;
            }
            // Double-shift QR sweep: chase the bulge from row m to row i. With `full`,
            // the reflectors are applied to all of H (rows k.. to column n, columns from
            // row 0) and to Z, as the Schur factor needs; without, only to the active
            // window l..=i, which is all the eigenvalues need (dlahqr's WANTT = false).
            let (c_end, r_start) = if full { (n, 0) } else { (i + 1, l) };
            for k in m..i {
                let nr = 3.min(i - k + 1);
                if k > m {
                    for (r, vr) in v.iter_mut().enumerate().take(nr) {
                        *vr = h[(k + r, k - 1)];
                    }
                }
                let t1 = larfg(&mut v[..nr]);
                if k > m {
                    h[(k, k - 1)] = v[0];
                    h[(k + 1, k - 1)] = 0.0;
                    if k + 1 < i {
                        h[(k + 2, k - 1)] = 0.0;
                    }
                } else if m > l {
                    h[(k, k - 1)] *= 1.0 - t1;
                }
                let v2 = v[1];
                let t2 = t1 * v2;
                if nr == 3 {
                    let v3 = v[2];
                    let t3 = t1 * v3;
                    let rv = [v2, v3, t1, t2, t3];
                    reflect3_rows(h.as_mut_slice(), n, k, k..c_end, rv);
                    reflect3_cols(h.as_mut_slice(), n, k, r_start..(k + 4).min(i + 1), rv);
                    reflect3_cols(z.as_mut_slice(), nz, k, 0..nz, rv);
                } else {
                    let rv = [v2, t1, t2];
                    reflect2_rows(h.as_mut_slice(), n, k, k..c_end, rv);
                    reflect2_cols(h.as_mut_slice(), n, k, r_start..i + 1, rv);
                    reflect2_cols(z.as_mut_slice(), nz, k, 0..nz, rv);
                }
            }
        }
        if !deflated {
            return Err(Some(i));
        }
        if full && l + 1 == i {
            // A 2×2 block split off: standardise it.
            standardize_block(h, z, l);
        }
        kdefl = 0;
        if l == 0 {
            return Ok(());
        }
        i = l - 1;
        if i == 0 {
            return Ok(());
        }
    }
}

/// A copy of `a` scaled by an exact power of two so that its largest entry lies in
/// [2⁻⁵⁰⁰, 2⁵⁰⁰] (the QR iteration's products then neither overflow nor underflow), and
/// the factor that undoes it.
pub(super) fn scaled_into_safe_range(a: &DMatrix<f64>) -> (DMatrix<f64>, f64) {
    let amax = a.amax();
    let mut work = a.clone();
    if amax > 0.0 && amax.is_finite() && !(2f64.powi(-500)..=2f64.powi(500)).contains(&amax) {
        // In two factors each: 2^±e alone over- or underflows for subnormal or huge
        // entries (2^1030 is infinite), and the undo factor 2^e may be subnormal itself.
        let e = amax.log2().floor() as i32;
        let (f1, f2) = crate::numeric::linalg::dense::pow2_factors(-e);
        work *= f1;
        work *= f2;
        return (work, crate::numeric::linalg::dense::times_pow2(1.0, e));
    }
    (work, 1.0)
}

/// Applies `I − τ·u·uᵀ`, `u = (1, v2, v3)`, from the left to rows `k..k+3` over the
/// columns `cols` of a column-major matrix with `nrows` rows (`rv = [v2, v3, τ, τ·v2,
/// τ·v3]`). Each column's three entries are contiguous.
pub(super) fn reflect3_rows(
    data: &mut [f64],
    nrows: usize,
    k: usize,
    cols: Range<usize>,
    rv: [f64; 5],
) {
    let [v2, v3, t1, t2, t3] = rv;
    if cols.is_empty() {
        return;
    }
    for col in data[cols.start * nrows..cols.end * nrows].chunks_exact_mut(nrows) {
        let c = &mut col[k..k + 3];
        let sum = c[0] + v2 * c[1] + v3 * c[2];
        c[0] -= sum * t1;
        c[1] -= sum * t2;
        c[2] -= sum * t3;
    }
}

/// Applies the reflector of [`reflect3_rows`] from the right to columns `k..k+3` over the
/// rows `rows` (three contiguous column slices).
pub(super) fn reflect3_cols(
    data: &mut [f64],
    nrows: usize,
    k: usize,
    rows: Range<usize>,
    rv: [f64; 5],
) {
    let [v2, v3, t1, t2, t3] = rv;
    if nrows == 0 || rows.is_empty() {
        return;
    }
    let (c0, rest) = data[k * nrows..(k + 3) * nrows].split_at_mut(nrows);
    let (c1, c2) = rest.split_at_mut(nrows);
    reflect3_slices(
        &mut c0[rows.clone()],
        &mut c1[rows.clone()],
        &mut c2[rows],
        [v2, v3, t1, t2, t3],
    );
}

/// The three-column reflector update on slices of one length. Separate slice arguments
/// tell the compiler they do not overlap, so it vectorises the loop (the same loop over
/// slices split inside the caller stayed scalar).
#[inline]
pub(super) fn reflect3_slices(x: &mut [f64], y: &mut [f64], z: &mut [f64], rv: [f64; 5]) {
    let [v2, v3, t1, t2, t3] = rv;
    let len = x.len();
    let (y, z) = (&mut y[..len], &mut z[..len]);
    for i in 0..len {
        let sum = x[i] + v2 * y[i] + v3 * z[i];
        x[i] -= sum * t1;
        y[i] -= sum * t2;
        z[i] -= sum * t3;
    }
}

/// Two-column version of [`reflect3_slices`] (`rv = [v2, τ, τ·v2]`).
#[inline]
pub(super) fn reflect2_slices(x: &mut [f64], y: &mut [f64], rv: [f64; 3]) {
    let [v2, t1, t2] = rv;
    let len = x.len();
    let y = &mut y[..len];
    for i in 0..len {
        let sum = x[i] + v2 * y[i];
        x[i] -= sum * t1;
        y[i] -= sum * t2;
    }
}

/// Two-row version of [`reflect3_rows`] (`rv = [v2, τ, τ·v2]`).
pub(super) fn reflect2_rows(
    data: &mut [f64],
    nrows: usize,
    k: usize,
    cols: Range<usize>,
    rv: [f64; 3],
) {
    let [v2, t1, t2] = rv;
    if cols.is_empty() {
        return;
    }
    for col in data[cols.start * nrows..cols.end * nrows].chunks_exact_mut(nrows) {
        let c = &mut col[k..k + 2];
        let sum = c[0] + v2 * c[1];
        c[0] -= sum * t1;
        c[1] -= sum * t2;
    }
}

/// Two-column version of [`reflect3_cols`].
pub(super) fn reflect2_cols(
    data: &mut [f64],
    nrows: usize,
    k: usize,
    rows: Range<usize>,
    rv: [f64; 3],
) {
    let [v2, t1, t2] = rv;
    if nrows == 0 || rows.is_empty() {
        return;
    }
    let (c0, c1) = data[k * nrows..(k + 2) * nrows].split_at_mut(nrows);
    reflect2_slices(&mut c0[rows.clone()], &mut c1[rows], [v2, t1, t2]);
}

/// Zeroes every entry below the first subdiagonal (the QR iteration leaves them at zero in
/// exact arithmetic).
pub(super) fn clean_below_quasi_diagonal(t: &mut DMatrix<f64>) {
    let n = t.nrows();
    for j in 0..n {
        for i in (j + 2)..n {
            t[(i, j)] = 0.0;
        }
    }
}

/// Checks the quasi-triangular shape: zeros below the subdiagonal and no two consecutive
/// non-zero subdiagonal entries. `Err` carries the first offending position.
pub(super) fn quasi_triangular(t: &DMatrix<f64>) -> Result<(), (usize, usize)> {
    let n = t.nrows();
    for j in 0..n {
        for i in (j + 2)..n {
            if t[(i, j)] != 0.0 {
                return Err((i, j));
            }
        }
    }
    for k in 1..n.saturating_sub(1) {
        if t[(k, k - 1)] != 0.0 && t[(k + 1, k)] != 0.0 {
            return Err((k + 1, k));
        }
    }
    Ok(())
}
