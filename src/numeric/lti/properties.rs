//! Poles, stability, modes and steady-state gain of a model.

use super::system::StateSpace;
use crate::numeric::linalg::eigen::{eigenvalues, eigenvalues_with_bounds, BoundedEigenvalue};
use crate::numeric::{NumError, NumResult};
use nalgebra::{Complex, DMatrix};

/// The poles: eigenvalues of A, ordered by the convention (ascending real part, then
/// imaginary part). Balanced real Schur form; see [`eigenvalues`].
pub fn poles(sys: &StateSpace) -> NumResult<Vec<Complex<f64>>> {
    eigenvalues(&sys.a)
}

/// Whether every pole lies strictly inside the stability region: `Re p < 0` for a
/// continuous model, `|p| < 1` for a discrete one. Poles on the boundary (integrators,
/// undamped oscillators, `|p| = 1`) count as not stable, and so does a pole that lies
/// within its own rounding error of the boundary (see [`stability`]).
pub fn is_stable(sys: &StateSpace) -> NumResult<bool> {
    Ok(stability(sys)?.stable)
}

/// The stability verdict of [`stability`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stability {
    /// Every pole is inside the stability region by more than its rounding error.
    pub stable: bool,
    /// The first pole inside the region but within its rounding error of the boundary
    /// (counted as not stable): the computed data cannot tell it from a marginal pole.
    pub undecided: Option<BoundedEigenvalue>,
}

/// Stability with each pole judged against its own rounding error
/// ([`eigenvalues_with_bounds`]: condition number times the backward error of the
/// balanced Schur form). A rigid-body pole computed as −8e−12 with an error bound of
/// 2e−10 is not evidence of stability; it is reported in [`Stability::undecided`]. The
/// test compares each pole with its own error, so it does not depend on state units.
pub fn stability(sys: &StateSpace) -> NumResult<Stability> {
    let discrete = sys.is_discrete();
    let mut out = Stability {
        stable: true,
        undecided: None,
    };
    for b in eigenvalues_with_bounds(&sys.a)? {
        let (inside, clear) = if discrete {
            (b.value.norm() < 1.0, b.value.norm() + b.error < 1.0)
        } else {
            (b.value.re < 0.0, b.value.re + b.error < 0.0)
        };
        if !clear {
            out.stable = false;
            if inside && out.undecided.is_none() {
                out.undecided = Some(b);
            }
        }
    }
    Ok(out)
}

/// One mode of a model: a real pole or a complex pair (listed once, by its member with
/// positive imaginary part).
#[derive(Debug, Clone, PartialEq)]
pub struct Mode {
    /// The pole (in `s`, or in `z` for a discrete model); where the computed pole lay
    /// within its rounding error of a boundary, the point on the boundary (see `rounding`).
    pub pole: Complex<f64>,
    /// Damping ratio ζ = −Re(s)/|s| of the equivalent continuous pole `s` (for a discrete
    /// pole, `s = ln(z)/dt`); 1 for a real stable pole, −1 for a real unstable one, and 1
    /// by convention for a pole at the origin.
    pub damping: f64,
    /// Natural frequency ωn = |s| in rad/s.
    pub natural_frequency: f64,
    /// Time constant τ = −1/Re(s) in seconds: positive for decaying modes, negative for
    /// growing ones (the e-folding time of growth), infinite on the stability boundary.
    pub time_constant: f64,
    /// Set when the computed pole was indistinguishable from a boundary point.
    pub rounding: Option<Rounding>,
}

/// A computed pole that lay within its own rounding error of the stability boundary, and
/// was therefore reported on it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rounding {
    /// The pole as computed.
    pub computed: Complex<f64>,
    /// Its rounding-error bound ([`eigenvalues_with_bounds`]).
    pub error: f64,
    /// Where it was put.
    pub boundary: Boundary,
}

/// The boundary points a pole can be indistinguishable from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Boundary {
    /// s = 0 (continuous) or z = 0 (discrete).
    Origin,
    /// Re s = 0: an undamped oscillation.
    ImaginaryAxis,
    /// z = 1: a discrete integrator.
    One,
    /// |z| = 1: an undamped discrete oscillation.
    UnitCircle,
}

impl Boundary {
    /// The words a message uses for it.
    pub fn describe(self) -> &'static str {
        match self {
            Boundary::Origin => "the origin",
            Boundary::ImaginaryAxis => "the imaginary axis (undamped)",
            Boundary::One => "z = 1 (an integrator)",
            Boundary::UnitCircle => "the unit circle (undamped)",
        }
    }
}

/// The boundary point a computed pole is indistinguishable from, if any: within `error`
/// of the origin, of the imaginary axis (continuous), of z = 1 or of the unit circle
/// (discrete).
pub(crate) fn snap(
    z: Complex<f64>,
    error: f64,
    discrete: bool,
) -> Option<(Complex<f64>, Boundary)> {
    let zero = Complex::new(0.0, 0.0);
    if z.norm() <= error {
        return Some((zero, Boundary::Origin));
    }
    if !discrete {
        return (z.im != 0.0 && z.re.abs() <= error)
            .then(|| (Complex::new(0.0, z.im), Boundary::ImaginaryAxis));
    }
    let one = Complex::new(1.0, 0.0);
    if (z - one).norm() <= error {
        return Some((one, Boundary::One));
    }
    (z.im != 0.0 && (z.norm() - 1.0).abs() <= error).then(|| (z / z.norm(), Boundary::UnitCircle))
}

/// The modes of a model in pole order, each complex pair once.
///
/// A pole that lies within its own rounding error (its condition number times the
/// backward error of the balanced Schur form, [`eigenvalues_with_bounds`]) of the origin,
/// the imaginary axis, z = 1 or the unit circle is reported on that boundary, with the
/// computed value kept in [`Mode::rounding`]: a rigid-body mode computed as `+8e-12` is an
/// integrator, not a mode growing with a time constant of −1e11 s. The test compares each
/// pole with its own error, so it does not depend on the units of the states.
pub fn modes(sys: &StateSpace) -> NumResult<Vec<Mode>> {
    let p = eigenvalues_with_bounds(&sys.a)?;
    let mut out = Vec::new();
    for b in p {
        if b.value.im < 0.0 {
            continue;
        }
        let (z, rounding) = match snap(b.value, b.error, sys.is_discrete()) {
            // A pole computed exactly on the boundary needs no note.
            Some((z, boundary)) if z != b.value => (
                z,
                Some(Rounding {
                    computed: b.value,
                    error: b.error,
                    boundary,
                }),
            ),
            _ => (b.value, None),
        };
        let s = if sys.is_discrete() {
            if z.norm() == 0.0 {
                // A pole at z = 0 is infinitely fast (deadbeat): s = −∞.
                out.push(Mode {
                    pole: z,
                    damping: 1.0,
                    natural_frequency: f64::INFINITY,
                    time_constant: 0.0,
                    rounding,
                });
                continue;
            }
            z.ln() / sys.dt
        } else {
            z
        };
        // On the boundary exactly (ln of a unit-modulus z may keep a rounding-level real part).
        let s = match rounding.map(|r| r.boundary) {
            Some(Boundary::ImaginaryAxis | Boundary::UnitCircle) => Complex::new(0.0, s.im),
            _ => s,
        };
        let wn = s.norm();
        let damping = if wn == 0.0 { 1.0 } else { -s.re / wn };
        let time_constant = if s.re == 0.0 {
            f64::INFINITY
        } else {
            -1.0 / s.re
        };
        out.push(Mode {
            pole: z,
            damping,
            natural_frequency: wn,
            time_constant,
            rounding,
        });
    }
    Ok(out)
}

/// The steady-state gain: `D − C A⁻¹ B` (continuous) or `D + C (I − A)⁻¹ B` (discrete).
///
/// A pole at the origin (continuous) or at z = 1 (discrete) makes the gain unbounded:
/// every entry of a channel that the integrating mode reaches is then ±∞, the sign
/// being that of the response to a constant positive input (its slope); entries the
/// integrator does not reach keep their finite value. Channels are judged on their
/// minimal realization, so an uncontrollable or unobservable integrator does not count.
pub fn dc_gain(sys: &StateSpace) -> NumResult<DMatrix<f64>> {
    let n = sys.order();
    let (p, m) = (sys.outputs(), sys.inputs());
    if n == 0 {
        return Ok(sys.d.clone());
    }
    let shifted = if sys.is_discrete() {
        DMatrix::identity(n, n) - &sys.a
    } else {
        -sys.a.clone()
    };
    if let Some(x) = well_conditioned_solve(&shifted, &sys.b) {
        return Ok(&sys.d + &sys.c * x);
    }
    // Singular: decide channel by channel on a minimal realization.
    let mut g = DMatrix::zeros(p, m);
    for i in 0..p {
        for j in 0..m {
            let ch = sys.channel(i, j)?;
            let min = super::staircase::minimal_realization(&ch.a, &ch.b, &ch.c, &ch.d, None)?;
            let k = min.a.nrows();
            let sh = if sys.is_discrete() {
                DMatrix::identity(k, k) - &min.a
            } else {
                -min.a.clone()
            };
            g[(i, j)] = match well_conditioned_solve(&sh, &min.b) {
                Some(x) => (&min.d + &min.c * x)[(0, 0)],
                None => {
                    // Slope of the ramp that a step produces: the residue at the integrator,
                    // approximated from the response at a small positive s.
                    let s = 1e-8 * (1.0 + min.a.norm());
                    let z = if sys.is_discrete() { 1.0 + s } else { s };
                    let mi = DMatrix::identity(k, k) * z - &min.a;
                    let val = well_conditioned_solve(&mi, &min.b)
                        .map(|x| (&min.c * x)[(0, 0)])
                        .unwrap_or(1.0);
                    if val >= 0.0 {
                        f64::INFINITY
                    } else {
                        f64::NEG_INFINITY
                    }
                }
            };
        }
    }
    Ok(g)
}

/// Solves M X = B unless M is numerically singular (reciprocal condition below n·ε).
fn well_conditioned_solve(m: &DMatrix<f64>, b: &DMatrix<f64>) -> Option<DMatrix<f64>> {
    let n = m.nrows();
    if n == 0 {
        // No states (a static model or channel): x is empty, and nalgebra's SVD panics on
        // an empty matrix.
        return Some(DMatrix::zeros(0, b.ncols()));
    }
    let sv = m.clone().singular_values();
    let smax = sv.iter().cloned().fold(0.0, f64::max);
    let smin = sv.iter().cloned().fold(f64::INFINITY, f64::min);
    if smax == 0.0 || smin <= (n as f64) * f64::EPSILON * smax {
        return None;
    }
    m.clone().lu().solve(b)
}

/// Checks a pole list for conjugate closure (used by design routines).
pub fn conjugate_closed(p: &[Complex<f64>], tol: f64) -> NumResult<()> {
    for z in p {
        if z.im != 0.0 {
            let has = p
                .iter()
                .any(|w| (w - z.conj()).norm() <= tol * (1.0 + z.norm()));
            if !has {
                return Err(NumError::invalid(
                    "poles",
                    format!("{z} has no conjugate partner; complex poles must come in pairs"),
                ));
            }
        }
    }
    Ok(())
}
