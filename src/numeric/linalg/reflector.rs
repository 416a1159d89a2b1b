//! Elementary orthogonal transformations shared by the Schur and QZ iterations:
//! Householder reflectors and plane (Givens) rotations, generated as LAPACK's `dlarfg` and
//! `dlartg` do (Golub & Van Loan, Matrix Computations, 4th ed., §5.1).

/// Fortran's SIGN(x, y): |x| with the sign of y.
pub(crate) fn sign(x: f64, y: f64) -> f64 {
    x.abs().copysign(y)
}

/// Elementary reflector `I − τ·u·uᵀ`, `u = (1, v[1..])`, mapping `v` to `(β, 0, …)`
/// (LAPACK's `dlarfg`, with its rescaling when β would underflow). Overwrites `v[0]` with β
/// and `v[1..]` with the tail of `u`; returns τ (0 when the tail is already zero, `v` then
/// unchanged). The one Householder generator of the Schur and QZ iterations.
pub(crate) fn larfg(v: &mut [f64]) -> f64 {
    let nr = v.len();
    if nr < 2 {
        return 0.0;
    }
    let norm_tail = |v: &[f64]| v[1..].iter().fold(0.0f64, |s, x| s.hypot(*x));
    // Entries within 2^±500: plain square roots of sums of squares cannot overflow or
    // underflow, and cost far less than `hypot` (which guards the general case).
    let amax = v.iter().fold(0.0f64, |m, x| m.max(x.abs()));
    let safe = (2f64.powi(-500)..=2f64.powi(500)).contains(&amax);
    let mut xnorm = if safe {
        v[1..].iter().map(|x| x * x).sum::<f64>().sqrt()
    } else {
        norm_tail(v)
    };
    if xnorm == 0.0 {
        return 0.0;
    }
    let mut alpha = v[0];
    let mut beta = if safe {
        -sign((alpha * alpha + xnorm * xnorm).sqrt(), alpha)
    } else {
        -sign(alpha.hypot(xnorm), alpha)
    };
    let safmin = f64::MIN_POSITIVE / (0.5 * f64::EPSILON);
    let rsafmn = 1.0 / safmin;
    let mut knt = 0;
    if beta.abs() < safmin {
        while beta.abs() < safmin && knt < 20 {
            knt += 1;
            for x in v[1..].iter_mut() {
                *x *= rsafmn;
            }
            beta *= rsafmn;
            alpha *= rsafmn;
        }
        xnorm = norm_tail(v);
        beta = -sign(alpha.hypot(xnorm), alpha);
    }
    let tau = (beta - alpha) / beta;
    let scal = 1.0 / (alpha - beta);
    for x in v[1..].iter_mut() {
        *x *= scal;
    }
    for _ in 0..knt {
        beta *= safmin;
    }
    v[0] = beta;
    tau
}

/// The plane rotation `(c, s)` with `c·f + s·g = r`, `−s·f + c·g = 0`, `c² + s² = 1`
/// (`r = hypot(f, g)`, computed without overflow).
pub(crate) fn givens(f: f64, g: f64) -> (f64, f64) {
    if g == 0.0 {
        (1.0, 0.0)
    } else if f == 0.0 {
        (0.0, 1.0)
    } else {
        let r = f.hypot(g);
        (f / r, g / r)
    }
}
