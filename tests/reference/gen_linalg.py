#!/usr/bin/env python3
"""Reference fixtures for dense linear algebra -> linalg.json.

Run from the repository root:  python3 tests/reference/gen_linalg.py
All matrices are random (numpy.random.default_rng with the fixed seeds below) or
made up for this project. Regenerate only on purpose (see README.md).
"""
import sys

sys.dont_write_bytecode = True

import os

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import mpmath
import numpy as np
import scipy.linalg as sla

from _fixture import (EPS, case, cmat, conj_clean, cvec, mat, min_real_gap, mp_matrix,
                      sort_convention, vec, write_fixture)

CASES = []


# ------------------------------------------------------------------ helpers
def eig_condition(a):
    """Eigenvalue condition numbers kappa_i = |x_i| |y_i| / |y_i^H x_i|."""
    w, vl, vr = sla.eig(a, left=True, right=True)
    kap = []
    for i in range(len(w)):
        x, y = vr[:, i], vl[:, i]
        kap.append(np.linalg.norm(x) * np.linalg.norm(y) / abs(np.vdot(y, x)))
    return np.array(kap)


def mp_eigenvalues(a, dps):
    with mpmath.workdps(dps):
        e = mpmath.eig(mp_matrix(a), left=False, right=False)
        vals = [complex(z) for z in e]
    scale = float(np.linalg.norm(a, 2))
    return sort_convention(conj_clean(vals, scale))


def max_sorted_diff(a, b):
    return float(max(abs(x - y) for x, y in zip(sort_convention(a), sort_convention(b))))


def eig_case(name, a, dps=None, note=None, extra_tol=None):
    n = a.shape[0]
    kap = eig_condition(a)
    norm = float(np.linalg.norm(a, 2))
    lapack = sort_convention(np.linalg.eigvals(a))
    if dps is not None:
        expected = mp_eigenvalues(a, dps)
        function = ("mpmath.eig(mp.dps=%d) on the exact binary64 entries of inputs.A, "
                    "each eigenvalue rounded to binary64, conjugate pairs made exact, "
                    "sorted by the project convention" % dps)
        cross = {"numpy.linalg.eigvals max |diff| (sorted)": max_sorted_diff(lapack, expected)}
    else:
        expected = lapack
        function = "numpy.linalg.eigvals (LAPACK dgeev), sorted by the project convention"
        cross = {}
    abs_tol = 10.0 * n * EPS * norm * float(kap.max())
    if extra_tol is not None:
        abs_tol = max(abs_tol, extra_tol)
    why = ("backward-stable eigensolver: |error| <~ 10 n eps ||A||_2 max(kappa_i) "
           "with kappa_i the eigenvalue condition numbers (max kappa = %.3g)" % kap.max())
    c = case(name, function, {"A": mat(a)}, {"eigenvalues": cvec(expected)},
             0.0, abs_tol, why,
             properties={"n": n, "norm2": norm, "max_eigenvalue_condition": float(kap.max()),
                         "min_real_part_gap": min_real_gap(expected)})
    if cross:
        c["cross_check"] = cross
    if note:
        c["notes"] = note
    CASES.append(c)


def random_similarity(rng, n, cond_target=10.0):
    """Random T with modest condition number: Q1 diag(s) Q2, s in [1, cond]."""
    q1, _ = np.linalg.qr(rng.standard_normal((n, n)))
    q2, _ = np.linalg.qr(rng.standard_normal((n, n)))
    s = np.linspace(1.0, cond_target, n)
    return q1 @ np.diag(s) @ q2


# ------------------------------------------------------------------ eigenvalues
def eigen_cases():
    rng = np.random.default_rng(101)
    eig_case("eig_random_5x5", rng.standard_normal((5, 5)), dps=50)

    rng = np.random.default_rng(102)
    blocks = [np.array([[-1.0, 2.0], [-2.0, -1.0]]),
              np.array([[-0.3, 5.0], [-5.0, -0.3]]),
              np.array([[0.5, 0.7], [-0.7, 0.5]]),
              np.array([[-2.0]])]
    j = sla.block_diag(*blocks)
    t = random_similarity(rng, 7, 5.0)
    a = t @ j @ np.linalg.inv(t)
    eig_case("eig_complex_pairs_7x7", a, dps=50,
             note="made-up real block-diagonal form with eigenvalues -1+-2j, -0.3+-5j, "
                  "0.5+-0.7j, -2, hidden by a random similarity (cond 5); expected values are "
                  "the exact eigenvalues of the stored (rounded) matrix")

    rng = np.random.default_rng(103)
    eig_case("eig_random_40x40", rng.standard_normal((40, 40)) / np.sqrt(40.0), dps=30)

    rng = np.random.default_rng(104)
    eig_case("eig_random_100x100", rng.standard_normal((100, 100)) / 10.0, dps=None,
             note="too large for a quick mpmath reference; LAPACK's value with a "
                  "conditioning-based tolerance")

    # nearly defective: Jordan block of size 3 at -0.5 plus 1e-10 in its corner
    rng = np.random.default_rng(105)
    jb = np.array([[-0.5, 1.0, 0.0], [0.0, -0.5, 1.0], [1e-10, 0.0, -0.5]])
    j = sla.block_diag(jb, np.array([[-2.0]]), np.array([[-3.0, 1.0], [-1.0, -3.0]]))
    q, _ = np.linalg.qr(rng.standard_normal((6, 6)))
    a = q @ j @ q.T
    eig_case("eig_nearly_defective_6x6", a, dps=60,
             note="orthogonal similarity of a 3x3 Jordan block at -0.5 whose corner entry "
                  "is 1e-10 (eigenvalues -0.5 + 1e-10^(1/3) * cube roots of unity, radius "
                  "~4.6e-4), plus -2 and -3+-1j. The three clustered eigenvalues have "
                  "condition numbers ~1e6-1e7: an algorithm accurate to eps in backward "
                  "sense gets them only to about 1e-9; the expected accuracy is limited by "
                  "conditioning, not by the reference (mpmath at 60 digits)")

    # widely spread magnitudes: D A0 D^-1 with D from 1e-6 to 1e6
    rng = np.random.default_rng(106)
    a0 = rng.standard_normal((6, 6))
    d = np.logspace(-6, 6, 6)
    a = np.diag(d) @ a0 @ np.diag(1.0 / d)
    kap0 = eig_condition(a0)
    tol = 10.0 * 6 * EPS * np.linalg.norm(a0, 2) * kap0.max() * 10.0
    eig_case("eig_spread_magnitudes_6x6", a, dps=60, extra_tol=None,
             note="D A0 D^-1 with D = diag(logspace(-6, 6, 6)) and A0 random normal: entries "
                  "span ~1e-12..1e12 but the eigenvalues are those of A0. A solver with "
                  "balancing (LAPACK dgebal) gets them to about %.1e; an unbalanced solver "
                  "may lose many digits, which is what this case is for" % tol)
    # the conditioning-based tolerance of the unbalanced matrix is meaningless here:
    # use the balanced one
    CASES[-1]["tolerance"] = {
        "rel": 0.0, "abs": float(tol),
        "why": "eigenvalues are invariant under the diagonal similarity; with balancing the "
               "error is ~10 n eps ||A0|| max kappa(A0) (x10 for the rounding of the "
               "scaled entries)"}


# ------------------------------------------------------------------ singular values
def svd_cases():
    for name, seed, shape in [("svd_square_6x6", 201, (6, 6)),
                              ("svd_tall_8x5", 202, (8, 5)),
                              ("svd_wide_4x7", 203, (4, 7))]:
        rng = np.random.default_rng(seed)
        a = rng.standard_normal(shape)
        s = np.linalg.svd(a, compute_uv=False)
        with mpmath.workdps(40):
            smp = mpmath.svd_r(mp_matrix(a), compute_uv=False)
            smp = sorted([float(x) for x in smp], reverse=True)
        CASES.append(case(
            name, "numpy.linalg.svd(A, compute_uv=False) (LAPACK dgesdd), descending",
            {"A": mat(a)}, {"singular_values": vec(s)},
            0.0, 10.0 * max(shape) * EPS * s[0],
            "singular values are perfectly conditioned: |error| <= c max(m,n) eps sigma_1",
            cross_check={"mpmath.svd_r(mp.dps=40) max |diff|":
                         float(np.max(np.abs(np.array(smp) - s)))}))


# ------------------------------------------------------------------ expm
def mp_expm(a, dps=60):
    with mpmath.workdps(dps):
        e = mpmath.expm(mp_matrix(a))
        return np.array([[float(e[i, j]) for j in range(e.cols)] for i in range(e.rows)])


def expm_case(name, a, note, closed_form=None):
    e = sla.expm(a)
    emp = mp_expm(a)
    rel = float(np.linalg.norm(e - emp, 2) / np.linalg.norm(emp, 2))
    cross = {"mpmath.expm(mp.dps=60) relative 2-norm diff": rel}
    if closed_form is not None:
        cross["closed form relative 2-norm diff"] = float(
            np.linalg.norm(e - closed_form, 2) / np.linalg.norm(closed_form, 2))
    tol_rel = max(1e-12, 100.0 * rel)
    CASES.append(case(
        name, "scipy.linalg.expm (scaling and squaring Pade, Al-Mohy & Higham 2009)",
        {"A": mat(a)}, {"expm": mat(e)},
        tol_rel, tol_rel * float(np.linalg.norm(e, 2)),
        "compare in norm: ||E - E_ref||_2 <= rel ||E_ref||_2 (abs = rel * ||E_ref||_2 for "
        "elementwise use); scipy agrees with mpmath to %.1e" % rel,
        cross_check=cross, notes=note))


def expm_cases():
    rng = np.random.default_rng(301)
    expm_case("expm_random_5x5", 0.7 * rng.standard_normal((5, 5)), "random normal * 0.7")

    w, t = 2.5, 1.3
    g = np.array([[0.0, -w * t], [w * t, 0.0]])
    cf = np.array([[np.cos(w * t), -np.sin(w * t)], [np.sin(w * t), np.cos(w * t)]])
    expm_case("expm_rotation_generator_2x2", g,
              "skew generator [[0,-theta],[theta,0]], theta = 2.5*1.3 = 3.25: exp is the "
              "rotation by theta (closed form cos/sin in cross_check)", closed_form=cf)

    k = np.array([0.3, -0.5, 0.8])
    th = float(np.linalg.norm(k))
    kh = np.array([[0, -k[2], k[1]], [k[2], 0, -k[0]], [-k[1], k[0], 0]])
    u = kh / th
    rod = np.eye(3) + np.sin(th) * u + (1 - np.cos(th)) * (u @ u)
    expm_case("expm_rotation_generator_3x3", kh,
              "cross-product matrix of the made-up axis vector (0.3, -0.5, 0.8); the "
              "exponential is a rotation (Rodrigues' formula in cross_check)", closed_form=rod)

    a = np.array([[-1.0, 1.0e4, 0.0, 0.0],
                  [0.0, -2.0, 3.0e3, 0.0],
                  [0.0, 0.0, -40.0, 1.0e2],
                  [0.0, 0.0, 0.0, -300.0]])
    rng = np.random.default_rng(302)
    a = a + 1e-3 * rng.standard_normal((4, 4)) * np.abs(a).max() * 1e-6
    expm_case("expm_badly_scaled_4x4", a,
              "made-up stiff, strongly non-normal upper-triangular-ish matrix (norm ~1e4, "
              "eigenvalues near -1, -2, -40, -300) with a tiny random fill-in: many squarings")

    rng = np.random.default_rng(303)
    b = rng.standard_normal((5, 5))
    d = np.diag([1e-3, 1e-1, 1.0, 1e1, 1e3])
    a = d @ b @ np.linalg.inv(d) - 8.0 * np.eye(5)
    expm_case("expm_diagonally_scaled_5x5", a,
              "D B D^-1 - 8 I with B random normal, D = diag(1e-3 .. 1e3): entries span "
              "1e-6..1e6")


# ------------------------------------------------------------------ inverse, det, solve
def dense_cases():
    rng = np.random.default_rng(401)
    n = 6
    q1, _ = np.linalg.qr(rng.standard_normal((n, n)))
    q2, _ = np.linalg.qr(rng.standard_normal((n, n)))
    a = q1 @ np.diag(np.linspace(1.0, 10.0, n)) @ q2 + 0.0
    b = rng.standard_normal((n, 2))
    cond = float(np.linalg.cond(a))
    inv = np.linalg.inv(a)
    with mpmath.workdps(50):
        amp = mp_matrix(a)
        det_mp = float(mpmath.det(amp))
        inv_mp = amp ** -1
        inv_mp = np.array([[float(inv_mp[i, j]) for j in range(n)] for i in range(n)])
        x_mp = amp ** -1 * mp_matrix(b)
        x_mp = np.array([[float(x_mp[i, j]) for j in range(2)] for i in range(n)])
    tol = 10.0 * n * EPS * cond
    CASES.append(case(
        "inverse_well_conditioned_6x6", "numpy.linalg.inv (LAPACK dgesv on I)",
        {"A": mat(a)}, {"inverse": mat(inv)}, tol, tol * float(np.linalg.norm(inv, 2)),
        "well conditioned (cond_2 = %.3g): relative error <~ 10 n eps cond" % cond,
        cross_check={"mpmath (dps 50) inverse max |diff|": float(np.abs(inv - inv_mp).max())},
        properties={"condition_number_2": cond}))
    det = float(np.linalg.det(a))
    CASES.append(case(
        "determinant_well_conditioned_6x6", "numpy.linalg.det (LU)",
        {"A": mat(a)}, {"determinant": det}, tol, tol * abs(det),
        "LU determinant of a well conditioned matrix: relative error <~ 10 n eps cond",
        cross_check={"mpmath.det (dps 50) relative diff": abs(det - det_mp) / abs(det_mp)}))
    x = np.linalg.solve(a, b)
    CASES.append(case(
        "solve_well_conditioned_6x6_two_rhs", "numpy.linalg.solve(A, B) (A X = B, LAPACK dgesv)",
        {"A": mat(a), "B": mat(b)}, {"X": mat(x)}, tol, tol * float(np.abs(x).max()),
        "relative error <~ 10 n eps cond for a well conditioned A",
        cross_check={"mpmath (dps 50) max |diff|": float(np.abs(x - x_mp).max())}))

    # determinant with a known value: made-up integer upper triangular times unit lower
    l = np.array([[1, 0, 0, 0], [2, 1, 0, 0], [-1, 3, 1, 0], [4, -2, 5, 1]], dtype=float)
    u = np.array([[2, 1, -1, 3], [0, -3, 2, 1], [0, 0, 0.5, 4], [0, 0, 0, 5]], dtype=float)
    a = l @ u
    CASES.append(case(
        "determinant_integer_4x4", "first principles: A = L U with unit lower L and upper U "
        "(made-up integers), det = prod(diag U) = 2*(-3)*0.5*5 = -15; numpy.linalg.det agrees",
        {"A": mat(a)}, {"determinant": -15.0}, 1e-13, 1e-12,
        "exactly representable inputs; LU roundoff only",
        cross_check={"numpy.linalg.det": float(np.linalg.det(a))}))


# ------------------------------------------------------------------ characteristic polynomial
def mp_charpoly(a, dps=80):
    """Faddeev-LeVerrier in mpmath at high precision on the exact binary64 entries:
    coefficients of det(sI - A), highest power first, leading 1."""
    n = a.shape[0]
    with mpmath.workdps(dps):
        am = mp_matrix(a)
        m = mpmath.zeros(n, n)
        c = [mpmath.mpf(1)]
        eye = mpmath.eye(n)
        for k in range(1, n + 1):
            m = am * m + c[-1] * eye
            ck = -sum(((am * m)[i, i] for i in range(n))) / k
            c.append(ck)
        return [float(x) for x in c]


def charpoly_case(name, a, note):
    c = mp_charpoly(a)
    cnp = np.poly(a)
    scale = float(np.max(np.abs(c)))
    diff = float(np.max(np.abs(np.array(c) - cnp)))
    CASES.append(case(
        name, "first principles: Faddeev-LeVerrier recursion in mpmath (mp.dps=80) on the exact "
        "binary64 entries of A, coefficients of det(sI - A) rounded to binary64, highest power "
        "first (numpy.poly(A), which expands from computed eigenvalues, in cross_check)",
        {"A": mat(a)}, {"coefficients": vec(c)},
        0.0, max(1e-12 * scale, 100.0 * diff),
        "coefficients are exact to rounding; an eigenvalue- or Hessenberg-based float "
        "implementation errs by ~n eps times the coefficient scale (max |c_k| = %.3g)" % scale,
        cross_check={"numpy.poly(A) max |diff|": diff}, notes=note))


def charpoly_cases():
    rng = np.random.default_rng(501)
    charpoly_case("charpoly_random_5x5", rng.standard_normal((5, 5)), "random normal")
    a = np.array([[2.0, -1.0, 0.0, 3.0],
                  [1.0, 0.0, 4.0, -2.0],
                  [0.0, 5.0, -1.0, 1.0],
                  [-3.0, 2.0, 1.0, 1.0]])
    charpoly_case("charpoly_integer_4x4", a,
                  "made-up integer matrix: the exact coefficients are integers")
    rng = np.random.default_rng(502)
    t = random_similarity(rng, 6, 4.0)
    a = t @ np.diag([-1.0, -2.0, -3.0, -4.0, 0.5, 6.0]) @ np.linalg.inv(t)
    charpoly_case("charpoly_planted_spectrum_6x6", a,
                  "random similarity of diag(-1,-2,-3,-4,0.5,6): coefficients close to "
                  "those of prod(s - lambda_i) (to the rounding of the stored matrix)")


# ------------------------------------------------------------------ polynomial roots
def roots_case(name, coeffs, note, dps=60):
    coeffs = [float(x) for x in coeffs]
    with mpmath.workdps(dps):
        r = mpmath.polyroots([mpmath.mpf(x) for x in coeffs], maxsteps=2000, extraprec=400)
        r = [complex(z) for z in r]
    scale = max(abs(z) for z in r)
    expected = sort_convention(conj_clean(r, scale))
    npr = sort_convention(np.roots(coeffs))
    diff = max_sorted_diff(npr, expected)
    CASES.append(case(
        name, "mpmath.polyroots(mp.dps=%d, extraprec=400) on the exact binary64 coefficients, "
        "rounded to binary64, sorted by the project convention (numpy.roots in cross_check)" % dps,
        {"coefficients": vec(coeffs)}, {"roots": cvec(expected)},
        0.0, max(10.0 * diff, 1e-13 * max(1.0, scale)),
        "companion-matrix (numpy.roots) error observed %.2e; a float implementation should "
        "do as well, allowing 10x" % diff,
        cross_check={"numpy.roots max |diff| (sorted)": diff},
        properties={"min_real_part_gap": min_real_gap(expected)}, notes=note))


def roots_cases():
    rng = np.random.default_rng(601)
    roots_case("roots_random_degree7", rng.standard_normal(8), "random normal coefficients")
    planted = [-1 + 2j, -1 - 2j, -0.2 + 0.9j, -0.2 - 0.9j, 3.0, -4.0]
    roots_case("roots_planted_pairs_degree6", np.real(np.poly(planted)),
               "coefficients of prod(s - r) for made-up roots -1+-2j, -0.2+-0.9j, 3, -4 "
               "(rounded); expected roots are those of the stored coefficients")
    planted = [1e-3, -2e-2, 0.5, -7.0, 40.0, -3e2]
    roots_case("roots_wide_magnitudes_degree6", np.real(np.poly(planted)),
               "made-up roots 1e-3, -2e-2, 0.5, -7, 40, -300")
    planted = [1.5, 1.5, 1.5, -2.0]
    roots_case("roots_triple_cluster_degree4", np.real(np.poly(planted)),
               "coefficients of (s-1.5)^3 (s+2), all exactly representable, so the stored "
               "polynomial has an exact triple root 1.5; a float root finder splits it by "
               "~eps^(1/3) ~ 1e-5 (accuracy limited by conditioning; any order of the three "
               "computed cluster roots matches within the tolerance)")
    roots_case("roots_with_zero_root_degree4", [2.0, -3.0, 1.0, 0.0, 0.0],
               "2 s^4 - 3 s^3 + s^2 = s^2 (2s - 1)(s - 1): roots 0, 0, 0.5, 1 (exact)")


# ------------------------------------------------------------------ logm
def logm_case(name, a, note, closed_form=None):
    l = sla.logm(a)
    if np.iscomplexobj(l):
        assert np.abs(l.imag).max() < 1e-12, name
        l = l.real
    resid = float(np.linalg.norm(sla.expm(l) - a, 2) / np.linalg.norm(a, 2))
    cross = {"||expm(logm(A)) - A|| / ||A||": resid}
    if closed_form is not None:
        cross["closed form max |diff|"] = float(np.abs(l - closed_form).max())
    CASES.append(case(
        name, "scipy.linalg.logm (inverse scaling and squaring, Al-Mohy & Higham 2012); real part "
        "(imaginary part below 1e-12)", {"A": mat(a)}, {"logm": mat(l)},
        1e-11, 1e-11 * max(1.0, float(np.linalg.norm(l, 2))),
        "principal logarithm of a matrix with no eigenvalues on the closed negative real axis, "
        "moderately conditioned", cross_check=cross, notes=note))


def logm_cases():
    rng = np.random.default_rng(701)
    logm_case("logm_near_identity_4x4", np.eye(4) + 0.2 * rng.standard_normal((4, 4)),
              "I + 0.2 * random normal")
    rng = np.random.default_rng(702)
    x = 0.5 * rng.standard_normal((4, 4))
    assert np.abs(np.linalg.eigvals(x).imag).max() < np.pi
    a = sla.expm(x)
    logm_case("logm_of_exponential_4x4", a,
              "A = expm(X) for X = 0.5 * random normal (|Im eig X| < pi), so logm(A) ~ X "
              "(X in cross_check's closed form)", closed_form=x)
    rng = np.random.default_rng(703)
    g = rng.standard_normal((5, 5))
    spd = g @ g.T + 0.5 * np.eye(5)
    w, v = np.linalg.eigh(spd)
    logm_case("logm_symmetric_positive_definite_5x5", spd,
              "G G^T + 0.5 I: log = V diag(log w) V^T (closed form from numpy.linalg.eigh)",
              closed_form=v @ np.diag(np.log(w)) @ v.T)
    r = np.array([[1.0, 0.0, 0.0], [0.0, 0.6, -0.8], [0.0, 0.8, 0.6]])
    s = np.diag([2.0, 1.0, 0.5])
    rng = np.random.default_rng(704)
    t = random_similarity(rng, 3, 3.0)
    a = t @ (r @ s) @ np.linalg.inv(t)
    logm_case("logm_complex_pair_3x3", a,
              "similarity of a made-up scaled rotation: eigenvalues 2 and a complex pair of "
              "modulus ~0.7 in the right half plane")


# ------------------------------------------------------------------ rank
def rank_case(name, a, note):
    r = int(np.linalg.matrix_rank(a))
    s = np.linalg.svd(a, compute_uv=False)
    tol = max(a.shape) * EPS * s[0]
    with mpmath.workdps(50):
        smp = sorted([float(x) for x in mpmath.svd_r(mp_matrix(a), compute_uv=False)], reverse=True)
    # the decision must be far from the threshold for the fixture to be robust
    above = [x for x in smp if x > tol]
    below = [x for x in smp if x <= tol]
    assert len(above) == r, name
    if below:
        assert max(below) < tol / 10 and min(above) > tol * 10, (name, smp, tol)
    CASES.append(case(
        name, "numpy.linalg.matrix_rank (SVD, tol = max(m,n) eps sigma_1, the project default)",
        {"A": mat(a)}, {"rank": r}, 0.0, 0.0,
        "exact integer; the singular values are at least 10x away from the threshold",
        properties={"singular_values_mpmath": vec(smp), "default_threshold": float(tol)},
        notes=note))


def rank_cases():
    rng = np.random.default_rng(801)
    a = rng.standard_normal((8, 3)) @ rng.standard_normal((3, 6))
    rank_case("rank_deficient_8x6_rank3", a, "product of random 8x3 and 3x6 factors")
    rng = np.random.default_rng(802)
    a = rng.standard_normal((3, 2)) @ rng.standard_normal((2, 7))
    rank_case("rank_deficient_3x7_rank2", a, "product of random 3x2 and 2x7 factors")
    rng = np.random.default_rng(803)
    u, _ = np.linalg.qr(rng.standard_normal((5, 4)))
    v, _ = np.linalg.qr(rng.standard_normal((4, 4)))
    a = u @ np.diag([3.0, 1.0, 1e-4, 1e-9]) @ v.T
    rank_case("rank_full_small_singular_value_5x4", a,
              "planted singular values 3, 1, 1e-4, 1e-9: full rank 4 (1e-9 >> 5 eps 3)")


if __name__ == "__main__":
    eigen_cases()
    svd_cases()
    expm_cases()
    dense_cases()
    charpoly_cases()
    roots_cases()
    logm_cases()
    rank_cases()
    write_fixture("linalg.json", "gen_linalg.py", CASES,
                  "dense linear algebra references: eigenvalues, singular values, matrix "
                  "exponential and logarithm, inverse/determinant/solve, characteristic "
                  "polynomial, polynomial roots, rank")
