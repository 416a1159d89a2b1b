//! The standard form of 2×2 diagonal blocks (the method of LAPACK's `dlanv2`) and the plane
//! rotations that put a quasi-triangular `T` in it.

use super::*;

/// The standardised 2×2 block `[a b; c d]`, the rotation `(cs, sn)` with
/// `[a₀ b₀; c₀ d₀] = [cs −sn; sn cs]·[a b; c d]·[cs sn; −sn cs]`, and the eigenvalues.
pub(super) struct Standard2 {
    pub(super) a: f64,
    pub(super) b: f64,
    pub(super) c: f64,
    pub(super) d: f64,
    pub(super) cs: f64,
    pub(super) sn: f64,
    pub(super) rt1: Complex<f64>,
    pub(super) rt2: Complex<f64>,
}

/// Schur factorisation of a real 2×2 matrix in standard form, by the method of LAPACK's
/// `dlanv2`: either upper triangular (real eigenvalues, `c = 0`) or `a = d`, `b·c < 0`.
pub(super) fn lanv2(a: f64, b: f64, c: f64, d: f64) -> Standard2 {
    const MULTPL: f64 = 4.0;
    let eps = f64::EPSILON;
    // 2^±485: the square root of SAFMIN/EPS in powers of the radix, as dlanv2 uses.
    let safmn2 = 2f64.powi(-485);
    let safmx2 = 1.0 / safmn2;
    let (mut a, mut b, mut c, mut d) = (a, b, c, d);
    let (mut cs, mut sn);
    if c == 0.0 {
        cs = 1.0;
        sn = 0.0;
    } else if b == 0.0 {
        // Swap rows and columns.
        cs = 0.0;
        sn = 1.0;
        std::mem::swap(&mut a, &mut d);
        b = -c;
        c = 0.0;
    } else if a - d == 0.0 && b.signum() != c.signum() {
        cs = 1.0;
        sn = 0.0;
    } else {
        let temp = a - d;
        let mut p = 0.5 * temp;
        let bcmax = b.abs().max(c.abs());
        let bcmis = b.abs().min(c.abs()) * sign(1.0, b) * sign(1.0, c);
        let scale = p.abs().max(bcmax);
        let mut z = (p / scale) * p + (bcmax / scale) * bcmis;
        if z >= MULTPL * eps {
            // Real eigenvalues: compute a and d.
            z = p + sign(scale.sqrt() * z.sqrt(), p);
            a = d + z;
            d -= (bcmax / z) * bcmis;
            let tau = c.hypot(z);
            cs = z / tau;
            sn = c / tau;
            b -= c;
            c = 0.0;
        } else {
            // Complex or (almost) equal real eigenvalues: make the diagonal equal.
            let mut sigma = b + c;
            let mut temp = temp;
            for _ in 0..=20 {
                let scale = temp.abs().max(sigma.abs());
                if scale >= safmx2 {
                    sigma *= safmn2;
                    temp *= safmn2;
                } else if scale <= safmn2 {
                    sigma *= safmx2;
                    temp *= safmx2;
                } else {
                    break;
                }
            }
            p = 0.5 * temp;
            let tau = sigma.hypot(temp);
            cs = (0.5 * (1.0 + sigma.abs() / tau)).sqrt();
            sn = -(p / (tau * cs)) * sign(1.0, sigma);
            // [aa bb; cc dd] = [a b; c d]·[cs −sn; sn cs]
            let aa = a * cs + b * sn;
            let bb = -a * sn + b * cs;
            let cc = c * cs + d * sn;
            let dd = -c * sn + d * cs;
            // [a b; c d] = [cs sn; −sn cs]·[aa bb; cc dd]
            a = aa * cs + cc * sn;
            b = bb * cs + dd * sn;
            c = -aa * sn + cc * cs;
            d = -bb * sn + dd * cs;
            let temp = 0.5 * (a + d);
            a = temp;
            d = temp;
            if c != 0.0 {
                if b != 0.0 {
                    if b.signum() == c.signum() {
                        // Real eigenvalues: reduce to upper triangular form.
                        let sab = b.abs().sqrt();
                        let sac = c.abs().sqrt();
                        p = sign(sab * sac, c);
                        let tau = 1.0 / (b + c).abs().sqrt();
                        a = temp + p;
                        d = temp - p;
                        b -= c;
                        c = 0.0;
                        let cs1 = sab * tau;
                        let sn1 = sac * tau;
                        let temp = cs * cs1 - sn * sn1;
                        sn = cs * sn1 + sn * cs1;
                        cs = temp;
                    }
                } else {
                    b = -c;
                    c = 0.0;
                    let temp = cs;
                    cs = -sn;
                    sn = temp;
                }
            }
        }
    }
    let (rt1, rt2) = if c == 0.0 {
        (Complex::new(a, 0.0), Complex::new(d, 0.0))
    } else {
        let wi = b.abs().sqrt() * c.abs().sqrt();
        (Complex::new(a, wi), Complex::new(a, -wi))
    };
    Standard2 {
        a,
        b,
        c,
        d,
        cs,
        sn,
        rt1,
        rt2,
    }
}

/// Plane rotation of rows `r1`, `r2` over columns `cols`: `x ← cs·x + sn·y`,
/// `y ← cs·y − sn·x`.
pub(super) fn rotate_rows(
    m: &mut DMatrix<f64>,
    r1: usize,
    r2: usize,
    cols: std::ops::Range<usize>,
    cs: f64,
    sn: f64,
) {
    for j in cols {
        let (x, y) = (m[(r1, j)], m[(r2, j)]);
        m[(r1, j)] = cs * x + sn * y;
        m[(r2, j)] = cs * y - sn * x;
    }
}

/// Plane rotation of columns `c1`, `c2` over rows `rows` (same convention as
/// [`rotate_rows`]).
pub(super) fn rotate_cols(
    m: &mut DMatrix<f64>,
    c1: usize,
    c2: usize,
    rows: std::ops::Range<usize>,
    cs: f64,
    sn: f64,
) {
    for i in rows {
        let (x, y) = (m[(i, c1)], m[(i, c2)]);
        m[(i, c1)] = cs * x + sn * y;
        m[(i, c2)] = cs * y - sn * x;
    }
}

/// Puts the 2×2 block at `(k, k)` in standard form and updates the rest of `T` and `Q`.
pub(super) fn standardize_block(t: &mut DMatrix<f64>, q: &mut DMatrix<f64>, k: usize) {
    let n = t.nrows();
    let s = lanv2(t[(k, k)], t[(k, k + 1)], t[(k + 1, k)], t[(k + 1, k + 1)]);
    t[(k, k)] = s.a;
    t[(k, k + 1)] = s.b;
    t[(k + 1, k)] = s.c;
    t[(k + 1, k + 1)] = s.d;
    rotate_rows(t, k, k + 1, (k + 2)..n, s.cs, s.sn);
    rotate_cols(t, k, k + 1, 0..k, s.cs, s.sn);
    let nq = q.nrows();
    rotate_cols(q, k, k + 1, 0..nq, s.cs, s.sn);
}

/// Standardises every 2×2 block of a quasi-triangular `T` (a standard block is left exactly
/// unchanged).
pub(super) fn standardize_all(t: &mut DMatrix<f64>, q: &mut DMatrix<f64>) {
    let n = t.nrows();
    let mut k = 0;
    while k + 1 < n {
        if t[(k + 1, k)] != 0.0 {
            standardize_block(t, q, k);
            k += 2;
        } else {
            k += 1;
        }
    }
}
