#!/usr/bin/env python3
"""Reference fixtures for state-space model properties -> models.json.

Run from the repository root:  python3 tests/reference/gen_models.py
Models are random (numpy.random.default_rng, fixed seeds) or made up for this
project; none is taken from a book or course. Regenerate only on purpose.
"""
import sys

sys.dont_write_bytecode = True

import os

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import mpmath
import numpy as np
import scipy.linalg as sla
import scipy.signal as sig

from _fixture import (EPS, case, cvec, mat, min_real_gap, mp_lyapunov, mp_matrix, mp_to_np,
                      sort_convention, conj_clean, vec, write_fixture)

CASES = []


# ------------------------------------------------------------------ model builders
def random_similarity(rng, n, cond_target=5.0):
    q1, _ = np.linalg.qr(rng.standard_normal((n, n)))
    q2, _ = np.linalg.qr(rng.standard_normal((n, n)))
    return q1 @ np.diag(np.linspace(1.0, cond_target, n)) @ q2


def stable_a(rng, n, pairs, cond_target=5.0):
    """Random stable A: `pairs` complex pairs sigma+-j omega (sigma in [-3,-0.2],
    omega in [0.5, 4]) and n - 2 pairs real poles in [-4, -0.3], hidden by a random
    similarity. Returns (A, nominal poles)."""
    blocks, poles = [], []
    for _ in range(pairs):
        s, w = -rng.uniform(0.2, 3.0), rng.uniform(0.5, 4.0)
        blocks.append(np.array([[s, w], [-w, s]]))
        poles += [complex(s, -w), complex(s, w)]
    for _ in range(n - 2 * pairs):
        p = -rng.uniform(0.3, 4.0)
        blocks.append(np.array([[p]]))
        poles.append(complex(p))
    t = random_similarity(rng, n, cond_target)
    return t @ sla.block_diag(*blocks) @ np.linalg.inv(t), poles


def sys_inputs(a, b, c, d, dt=0.0):
    return {"A": mat(a), "B": mat(b), "C": mat(c), "D": mat(d), "dt": float(dt)}


def freq_eval(a, b, c, d, s):
    return c @ np.linalg.solve(s * np.eye(a.shape[0]) - a, b) + d


# ------------------------------------------------------------------ transfer functions
def tf_case(name, a, b, c, d, note):
    n, m = b.shape
    p = c.shape[0]
    nums, den = [], None
    worst = 0.0
    for i in range(m):
        num, den_i = sig.ss2tf(a, b, c, d, input=i)
        num = np.atleast_2d(num)
        assert num.shape == (p, n + 1)
        den = den_i if den is None else den
        assert np.allclose(den, den_i, rtol=0, atol=0)
        nums.append(mat(num))
        for w in (0.3, 1.7, 9.0):
            g = freq_eval(a, b[:, [i]], c, d[:, [i]], 1j * w).ravel()
            h = np.array([np.polyval(num[k], 1j * w) / np.polyval(den, 1j * w) for k in range(p)])
            worst = max(worst, float(np.max(np.abs(g - h)) / max(1.0, np.max(np.abs(g)))))
    scale = max(max(abs(x) for row in nm for x in row) for nm in nums)
    CASES.append(case(
        name, "scipy.signal.ss2tf(A, B, C, D, input=i) for each input i",
        sys_inputs(a, b, c, d),
        {"denominator": vec(den), "numerators_per_input": nums},
        1e-10, 1e-11 * scale,
        "coefficient-wise; ss2tf computes numerators as poly(A - B_i C_k) - poly(A) + D poly(A), "
        "so a structurally zero leading coefficient carries roundoff (~1e-15 * scale)",
        cross_check={"max rel |num/den - (C (jwI-A)^-1 B + D)| at w = 0.3, 1.7, 9": worst},
        notes=note + ". Layout: denominator has n+1 coefficients (monic, highest power first); "
        "numerators_per_input[i] is a p x (n+1) matrix whose row k is the numerator from input i "
        "to output k, padded with leading zeros to n+1 coefficients"))


def tf_cases():
    rng = np.random.default_rng(1001)
    a, _ = stable_a(rng, 4, 1)
    b = rng.standard_normal((4, 1))
    c = rng.standard_normal((1, 4))
    tf_case("tf_siso_order4", a, b, c, np.zeros((1, 1)), "random stable SISO, D = 0")

    rng = np.random.default_rng(1002)
    a, _ = stable_a(rng, 3, 1)
    b = rng.standard_normal((3, 1))
    c = rng.standard_normal((1, 3))
    tf_case("tf_siso_order3_feedthrough", a, b, c, np.array([[0.7]]),
            "random stable SISO with D = 0.7")

    rng = np.random.default_rng(1003)
    a, _ = stable_a(rng, 5, 2)
    b = rng.standard_normal((5, 2))
    c = rng.standard_normal((3, 5))
    d = np.array([[0.0, 0.5], [0.0, 0.0], [-1.2, 0.0]])
    tf_case("tf_mimo_order5_2in_3out", a, b, c, d, "random stable MIMO, 2 inputs, 3 outputs")


# ------------------------------------------------------------------ transmission zeros
def pencil_zeros(a, b, c, d):
    n, m = b.shape
    p = c.shape[0]
    assert m == p
    mm = np.block([[a, b], [c, d]])
    nn = sla.block_diag(np.eye(n), np.zeros((p, m)))
    w = sla.eig(mm, nn, right=False, homogeneous_eigvals=True)
    alpha, beta = w[0], w[1]
    bound = 1e8 * (1.0 + np.linalg.norm(mm, 2))
    finite = [complex(al / be) for al, be in zip(alpha, beta)
              if abs(be) > 0 and abs(al) < bound * abs(be)]
    return sort_convention(conj_clean(finite, np.linalg.norm(mm, 2)))


def pencil_residual(a, b, c, d, z):
    """Smallest singular value of [[A - zI, B], [C, D]] over its largest (rank drop)."""
    n = a.shape[0]
    mm = np.block([[a - z * np.eye(n), b], [c, d]]).astype(complex)
    s = np.linalg.svd(mm, compute_uv=False)
    return float(s[-1] / s[0]) if mm.shape[0] == mm.shape[1] else None


def mp_siso_numerator_roots(a, b, c, d, dps=60):
    """First principles at high precision: numerator of C (sI-A)^-1 B + D from the
    Faddeev-LeVerrier adjugate expansion, then mpmath.polyroots."""
    n = a.shape[0]
    with mpmath.workdps(dps):
        am, bm, cm = mp_matrix(a), mp_matrix(b), mp_matrix(c)
        dd = mpmath.mpf(float(d[0, 0]))
        mk = mpmath.eye(n)
        cp = [mpmath.mpf(1)]
        adj = [mk]
        for k in range(1, n + 1):
            ck = -sum(((am * mk)[i, i] for i in range(n))) / k
            cp.append(ck)
            if k < n:
                mk = am * mk + ck * mpmath.eye(n)
                adj.append(mk)
        num = [mpmath.mpf(0)] + [(cm * adj[k] * bm)[0, 0] for k in range(n)]
        num = [x + dd * y for x, y in zip(num, cp)]
        while abs(num[0]) < mpmath.mpf(10) ** (-dps + 10):
            num = num[1:]
        if len(num) <= 1:
            return []
        r = mpmath.polyroots(num, maxsteps=500, extraprec=200)
        return sort_convention(conj_clean([complex(x) for x in r], 1.0))


def mp_feedthrough_zeros(a, b, c, d, dps=50):
    """First principles for invertible D: zeros are the eigenvalues of A - B D^-1 C."""
    with mpmath.workdps(dps):
        am, bm, cm, dm = (mp_matrix(x) for x in (a, b, c, d))
        e = mpmath.eig(am - bm * dm ** -1 * cm, left=False, right=False)
        return sort_convention(conj_clean([complex(x) for x in e], 1.0))


def zeros_case(name, a, b, c, d, note, count, cross=None, planted=None):
    z = pencil_zeros(a, b, c, d)
    assert len(z) == count, (name, z)
    res = max([pencil_residual(a, b, c, d, x) for x in z] + [0.0])
    cc = {"max sigma_min/sigma_max of [[A - zI, B], [C, D]] at the zeros": res}
    tol = 1e-9 * max([1.0] + [abs(x) for x in z])
    if cross is not None:
        diff = max([abs(x - y) for x, y in zip(z, cross)] + [0.0])
        assert len(cross) == len(z)
        cc["first-principles high-precision zeros max |diff|"] = diff
        tol = max(tol, 100.0 * diff)
    if planted is not None:
        cc["planted zeros (by construction)"] = cvec(planted)
    CASES.append(case(
        name, "scipy.linalg.eig(M, N) with M = [[A, B], [C, D]], N = [[I, 0], [0, 0]] "
        "(QZ), keeping finite eigenvalues, sorted by the project convention",
        sys_inputs(a, b, c, d), {"zeros": cvec(z)},
        0.0, tol, "zeros of a random model are moderately conditioned; QZ agrees with the "
        "independent computation in cross_check", cross_check=cc,
        properties={"zero_count": len(z), "min_real_part_gap": min_real_gap(z)}, notes=note))


def square_down_zeros(a, b, c, d, rng, tries=2):
    """First principles for non-square systems: the transmission zeros are among the
    zeros of every square-down W^T G (tall) or G W (wide); the common zeros of two
    random square-downs are the system's zeros (generically)."""
    n, m = b.shape
    p = c.shape[0]
    sets = []
    for _ in range(tries):
        if p > m:
            w = rng.standard_normal((p, m))
            sets.append(pencil_zeros(a, b, w.T @ c, w.T @ d))
        else:
            w = rng.standard_normal((m, p))
            sets.append(pencil_zeros(a, b @ w, c, d @ w))
    common = [z for z in sets[0] if min([abs(z - y) for y in sets[1]] + [np.inf]) < 1e-7]
    return common, sets


def nonsquare_case(name, a, b, c, d, planted, note, rng):
    n, m = b.shape
    p = c.shape[0]
    common, sets = square_down_zeros(a, b, c, d, rng)
    planted = sort_convention(planted)
    assert len(common) == len(planted), (name, common, sets)
    for x, y in zip(common, planted):
        assert abs(x - y) < 1e-7, (name, common, planted)
    mm = np.block([[a, b], [c, d]])
    normal = min(n + m, n + p)
    probe = {}
    for z in list(planted) + [0.37 + 0.91j]:
        s = np.linalg.svd(np.block([[a - z * np.eye(n), b], [c, d]]).astype(complex),
                          compute_uv=False)
        probe["%.4g%+.4gj" % (z.real, z.imag)] = float(s[normal - 1] / s[0])
    CASES.append(case(
        name, "first principles: zeros planted by construction (see notes); checked by the "
        "common finite zeros of two random square-downs (scipy.linalg.eig on their pencils) "
        "and by the rank drop of [[A - zI, B], [C, D]]",
        sys_inputs(a, b, c, d), {"zeros": cvec(planted)},
        0.0, 1e-8 * max([1.0] + [abs(x) for x in planted]),
        "simple planted zeros of a small model: a QZ/reduction method gets them to ~1e-12",
        cross_check={
            "common zeros of two random square-downs": cvec(common),
            "sigma_%d/sigma_1 of the pencil matrix at the planted zeros and at a generic "
            "point (normal rank %d)" % (normal, normal): probe},
        properties={"zero_count": len(planted)}, notes=note))


def companion_realization(num, den):
    """Controllable canonical form of num/den (den monic, deg num < deg den)."""
    den = np.asarray(den, float)
    n = len(den) - 1
    num = np.concatenate([np.zeros(n - len(num)), np.asarray(num, float)])
    a = np.zeros((n, n))
    a[:-1, 1:] = np.eye(n - 1)
    a[-1, :] = -den[::-1][:-1]
    b = np.zeros((n, 1))
    b[-1, 0] = 1.0
    c = num[::-1].reshape(1, n)
    return a, b, c


def zeros_cases():
    rng = np.random.default_rng(1101)
    a, _ = stable_a(rng, 4, 1)
    b = rng.standard_normal((4, 1))
    c = rng.standard_normal((1, 4))
    d = np.zeros((1, 1))
    zeros_case("zeros_siso_order4", a, b, c, d, "random stable SISO, D = 0: n - 1 = 3 zeros", 3,
               cross=mp_siso_numerator_roots(a, b, c, d))

    # planted non-minimum-phase zeros: numerator (s - 0.5)((s + 1)^2 + 4)
    rng = np.random.default_rng(1102)
    num = np.real(np.poly([0.5, -1 + 2j, -1 - 2j])) * 2.0
    den = np.real(np.poly([-0.4, -1.5, -2.5 + 1j, -2.5 - 1j]))
    a0, b0, c0 = companion_realization(num, den)
    t = random_similarity(rng, 4, 3.0)
    ti = np.linalg.inv(t)
    a, b, c = ti @ a0 @ t, ti @ b0, c0 @ t
    d = np.zeros((1, 1))
    zeros_case("zeros_siso_nonminimum_phase", a, b, c, d,
               "companion form of 2 (s - 0.5)((s+1)^2 + 4) / ((s+0.4)(s+1.5)((s+2.5)^2+1)) "
               "(made up), hidden by a random similarity x = T z", 3,
               cross=mp_siso_numerator_roots(a, b, c, d), planted=[0.5, -1 - 2j, -1 + 2j])

    rng = np.random.default_rng(1103)
    a, _ = stable_a(rng, 3, 1)
    b = rng.standard_normal((3, 1))
    c = rng.standard_normal((1, 3))
    d = np.array([[1.3]])
    zeros_case("zeros_siso_feedthrough", a, b, c, d,
               "random stable SISO with D = 1.3: n = 3 zeros (eigenvalues of A - B C / D)", 3,
               cross=mp_feedthrough_zeros(a, b, c, d))

    rng = np.random.default_rng(1104)
    a, _ = stable_a(rng, 5, 1)
    b = rng.standard_normal((5, 2))
    c = rng.standard_normal((2, 5))
    d = np.zeros((2, 2))
    # high-precision cross-check: with CB invertible, the zeros are the eigenvalues of
    # (I - B (CB)^-1 C) A other than the m structural zeros at the origin
    with mpmath.workdps(50):
        am, bm, cm = mp_matrix(a), mp_matrix(b), mp_matrix(c)
        pm = mpmath.eye(5) - bm * (cm * bm) ** -1 * cm
        e = [complex(x) for x in mpmath.eig(pm * am, left=False, right=False)]
    e = sorted(e, key=abs)[2:]
    zeros_case("zeros_mimo_square_2x2_order5", a, b, c, d,
               "random stable 2x2 MIMO, D = 0, CB invertible: n - m = 3 zeros", 3,
               cross=sort_convention(conj_clean(e, 1.0)))

    rng = np.random.default_rng(1105)
    a, _ = stable_a(rng, 4, 1)
    b = rng.standard_normal((4, 3))
    c = rng.standard_normal((3, 4))
    d = rng.standard_normal((3, 3))
    zeros_case("zeros_mimo_square_3x3_feedthrough", a, b, c, d,
               "random stable 3x3 MIMO with invertible D: n = 4 zeros", 4,
               cross=mp_feedthrough_zeros(a, b, c, d))

    # ---- non-square, planted by construction
    # tall 2x1: G(s) = [G1(s); G2(s)] h(s), h(s) = (s - 1.2)/(s + 0.9); G1, G2 random
    # strictly proper SISO blocks with distinct poles, so their only common zero is 1.2
    rng = np.random.default_rng(1106)
    z0, p0 = 1.2, 0.9
    a1, _ = stable_a(rng, 2, 1)
    a2, _ = stable_a(rng, 2, 0)
    b1, b2 = rng.standard_normal((2, 1)), rng.standard_normal((2, 1))
    c1, c2 = rng.standard_normal((1, 2)), rng.standard_normal((1, 2))
    # state (x_h, x1, x2); v = (-z0 - p0) x_h + u feeds both blocks
    a = np.zeros((5, 5))
    a[0, 0] = -p0
    a[1:3, 1:3] = a1
    a[3:5, 3:5] = a2
    a[1:3, [0]] = b1 * (-z0 - p0)
    a[3:5, [0]] = b2 * (-z0 - p0)
    b = np.vstack([[[1.0]], b1, b2])
    c = np.zeros((2, 5))
    c[0, 1:3] = c1
    c[1, 3:5] = c2
    d = np.zeros((2, 1))
    t = random_similarity(rng, 5, 3.0)
    ti = np.linalg.inv(t)
    nonsquare_case("zeros_tall_2x1_planted", ti @ a @ t, ti @ b, c @ t, d, [complex(z0)],
                   "tall (2 outputs, 1 input): [G1; G2] in series after h(s) = (s - 1.2)/(s + 0.9); "
                   "G1, G2 random strictly proper order-2 blocks with distinct poles, so the "
                   "only transmission zero is 1.2; hidden by a random similarity", rng)

    # wide 2x3: G(s) = diag(h(s), 1) F(s), F random 2x3 strictly proper order 4,
    # h(s) = (s + 2.5)/(s + 6) filters output 1, so rank G(-2.5) = 1 < 2
    rng = np.random.default_rng(1107)
    z0, p0 = -2.5, 6.0
    af, _ = stable_a(rng, 4, 1)
    bf = rng.standard_normal((4, 3))
    cf = rng.standard_normal((2, 4))
    a = np.zeros((5, 5))
    a[:4, :4] = af
    a[4, 4] = -p0
    a[4, :4] = cf[0]          # x_h' = -p0 x_h + y1_F
    b = np.vstack([bf, np.zeros((1, 3))])
    c = np.zeros((2, 5))
    c[0, :4] = cf[0]
    c[0, 4] = -z0 - p0        # y1 = y1_F + (-z0 - p0) x_h
    c[1, :4] = cf[1]
    d = np.zeros((2, 3))
    t = random_similarity(rng, 5, 3.0)
    ti = np.linalg.inv(t)
    nonsquare_case("zeros_wide_2x3_planted", ti @ a @ t, ti @ b, c @ t, d, [complex(z0)],
                   "wide (2 outputs, 3 inputs): F(s) random 2x3 order 4, then output 1 passes "
                   "h(s) = (s + 2.5)/(s + 6); a generic wide F has no zeros, so the only "
                   "transmission zero is -2.5; hidden by a random similarity", rng)

    rng = np.random.default_rng(1108)
    a, _ = stable_a(rng, 4, 1)
    b = rng.standard_normal((4, 1))
    c = rng.standard_normal((3, 4))
    d = np.zeros((3, 1))
    nonsquare_case("zeros_tall_3x1_none", a, b, c, d, [],
                   "generic random tall system (3 outputs, 1 input): no transmission zeros "
                   "(the three SISO numerators have no common root)", rng)


# ------------------------------------------------------------------ Lyapunov
def lyap_cases():
    rng = np.random.default_rng(1201)
    a, _ = stable_a(rng, 5, 2)
    g = rng.standard_normal((5, 5))
    q = g @ g.T
    x = sla.solve_continuous_lyapunov(a, -q)
    res = float(np.linalg.norm(a @ x + x @ a.T + q) / np.linalg.norm(q))
    CASES.append(case(
        "lyapunov_continuous_random_5x5",
        "scipy.linalg.solve_continuous_lyapunov(A, -Q) (Bartels-Stewart); scipy solves "
        "A X + X A^H = Q, so passing -Q gives the project's A X + X A^T + Q = 0",
        {"A": mat(a), "Q": mat(q)}, {"X": mat(x)}, 1e-10, 1e-10 * float(np.abs(x).max()),
        "stable, moderately separated spectrum: sep(A, -A^T) is not small",
        cross_check={"||A X + X A^T + Q||_F / ||Q||_F": res}))

    rng = np.random.default_rng(1202)
    a, _ = stable_a(rng, 4, 1)
    a = 0.9 * a / np.max(np.abs(np.linalg.eigvals(a)))   # spectral radius 0.9
    g = rng.standard_normal((4, 4))
    q = g @ g.T
    x = sla.solve_discrete_lyapunov(a, q)
    res = float(np.linalg.norm(a @ x @ a.T - x + q) / np.linalg.norm(q))
    CASES.append(case(
        "lyapunov_discrete_random_4x4",
        "scipy.linalg.solve_discrete_lyapunov(A, Q) (direct Kronecker method for n < 10), "
        "which solves A X A^H - X + Q = 0: the project's convention as is",
        {"A": mat(a), "Q": mat(q)}, {"X": mat(x)}, 1e-10, 1e-10 * float(np.abs(x).max()),
        "Schur-stable with spectral radius 0.9: well conditioned",
        cross_check={"||A X A^T - X + Q||_F / ||Q||_F": res}))

    CASES.append(case(
        "lyapunov_continuous_scalar", "first principles: -2a x + q = 0 gives x = q / (2a)",
        {"A": [[-1.25]], "Q": [[3.0]]}, {"X": [[1.2]]}, 1e-14, 1e-14,
        "closed form", cross_check={"scipy.linalg.solve_continuous_lyapunov(A, -Q)":
                                    mat(sla.solve_continuous_lyapunov(np.array([[-1.25]]),
                                                                      -np.array([[3.0]])))}))


# ------------------------------------------------------------------ Gramians and HSV
def hsv_from(wc, wo):
    ev = np.linalg.eigvals(wc @ wo)
    assert np.abs(ev.imag).max() < 1e-10 * np.abs(ev).max()
    return np.sqrt(np.sort(np.abs(ev.real))[::-1])


def gramian_case(name, a, b, c, d, dt, note):
    disc = dt != 0.0
    if not disc:
        wc = sla.solve_continuous_lyapunov(a, -b @ b.T)
        wo = sla.solve_continuous_lyapunov(a.T, -c.T @ c)
        fn = ("Gramians: scipy.linalg.solve_continuous_lyapunov, A Wc + Wc A^T + B B^T = 0 and "
              "A^T Wo + Wo A + C^T C = 0 (passing -B B^T, -C^T C). ")
    else:
        wc = sla.solve_discrete_lyapunov(a, b @ b.T)
        wo = sla.solve_discrete_lyapunov(a.T, c.T @ c)
        fn = ("Gramians: scipy.linalg.solve_discrete_lyapunov, A Wc A^T - Wc + B B^T = 0 and "
              "A^T Wo A - Wo + C^T C = 0. ")
    fn += ("Hankel singular values: sqrt(eig(Wc Wo)), descending, computed in mpmath "
           "(mp.dps=50) from Gramians solved in mpmath (Kronecker form, see _fixture.mp_lyapunov) "
           "on the exact binary64 inputs")
    wc, wo = 0.5 * (wc + wc.T), 0.5 * (wo + wo.T)
    with mpmath.workdps(50):
        wcm = mp_lyapunov(a, b @ b.T, disc)
        wom = mp_lyapunov(a.T, c.T @ c, disc)
        e = mpmath.eig(wcm * wom, left=False, right=False)
        hsv = sorted([float(mpmath.sqrt(abs(mpmath.re(x)))) for x in e], reverse=True)
        wc_err = float(mpmath.mnorm(mp_matrix(wc) - wcm, 1) / mpmath.mnorm(wcm, 1))
        wo_err = float(mpmath.mnorm(mp_matrix(wo) - wom, 1) / mpmath.mnorm(wom, 1))
    hsv = np.array(hsv)
    hsv_eig = hsv_from(wc, wo)
    lc, lo = np.linalg.cholesky(wc), np.linalg.cholesky(wo)
    hsv_sqrt = np.linalg.svd(lo.T @ lc, compute_uv=False)
    gscale = float(max(np.abs(wc).max(), np.abs(wo).max()))
    CASES.append(case(
        name, fn, sys_inputs(a, b, c, d, dt),
        {"controllability_gramian": mat(wc), "observability_gramian": mat(wo),
         "hankel_singular_values": vec(hsv)},
        1e-10, 1e-12 * gscale,
        "Gramians to rel 1e-10 of their largest entry (scipy agrees with mpmath, cross_check)",
        per_key_tolerance={"hankel_singular_values": {
            "rel": 1e-9, "abs": 1e-13 * float(hsv[0]),
            "why": "the square-root method (svd of Lo^T Lc, Cholesky factors) meets this; "
                   "sqrt(eig(Wc Wo)) in binary64 is only accurate to ~sqrt(eps) sigma_1 for the "
                   "small values (see cross_check)"}},
        cross_check={
            "scipy Gramians relative 1-norm error vs mpmath (Wc, Wo)": [wc_err, wo_err],
            "binary64 sqrt(eig(Wc Wo)) max |diff|": float(np.abs(hsv_eig - hsv).max()),
            "binary64 square-root method svd(Lo^T Lc) max |diff|":
                float(np.abs(hsv_sqrt - hsv).max())},
        notes=note))


def gramian_cases():
    rng = np.random.default_rng(1301)
    a, _ = stable_a(rng, 5, 2)
    b = rng.standard_normal((5, 2))
    c = rng.standard_normal((2, 5))
    gramian_case("gramians_continuous_mimo_order5", a, b, c, np.zeros((2, 2)), 0.0,
                 "random stable continuous 2x2 model")

    # graded Hankel singular values: modes weakly reachable/observable
    rng = np.random.default_rng(1302)
    poles = [-0.5, -1.0, -2.0, -3.5, -5.0, -7.0]
    weights = np.array([1.0, 0.3, 3e-2, 3e-3, 3e-4, 3e-5])
    a0 = np.diag(poles)
    b0 = (weights * rng.uniform(0.5, 1.5, 6)).reshape(6, 1)
    c0 = (weights * rng.uniform(0.5, 1.5, 6)).reshape(1, 6)
    t = random_similarity(rng, 6, 2.0)
    ti = np.linalg.inv(t)
    gramian_case("gramians_continuous_graded_order6", ti @ a0 @ t, ti @ b0, c0 @ t,
                 np.zeros((1, 1)), 0.0,
                 "modes -0.5..-7 whose input and output couplings fall from 1 to 3e-5: Hankel "
                 "singular values spread over ~9 decades (a balanced-truncation test model)")

    rng = np.random.default_rng(1303)
    a, _ = stable_a(rng, 4, 1)
    a = 0.85 * a / np.max(np.abs(np.linalg.eigvals(a)))
    b = rng.standard_normal((4, 1))
    c = rng.standard_normal((2, 4))
    gramian_case("gramians_discrete_order4", a, b, c, np.zeros((2, 1)), 0.1,
                 "random Schur-stable discrete model (spectral radius 0.85), dt = 0.1")


# ------------------------------------------------------------------ Markov parameters
def markov_cases():
    for name, seed, n, m, p, dt in [("markov_continuous_mimo_order4", 1401, 4, 2, 3, 0.0),
                                    ("markov_discrete_siso_order3", 1402, 3, 1, 1, 0.05)]:
        rng = np.random.default_rng(seed)
        a, _ = stable_a(rng, n, 1)
        if dt:
            a = 0.8 * a / np.max(np.abs(np.linalg.eigvals(a)))
        b = rng.standard_normal((n, m))
        c = rng.standard_normal((p, n))
        d = rng.standard_normal((p, m))
        count = 8
        mk = [d]
        ak = np.eye(n)
        for _ in range(count - 1):
            mk.append(c @ ak @ b)
            ak = ak @ a
        scale = max(float(np.abs(x).max()) for x in mk)
        CASES.append(case(
            name, "first principles: numpy matrix products D, C B, C A B, ..., C A^(k-2) B",
            dict(sys_inputs(a, b, c, d, dt), count=count),
            {"markov_parameters": [mat(x) for x in mk]}, 1e-12, 1e-13 * scale,
            "a few matrix products"))


def dc_gain_case():
    rng = np.random.default_rng(1501)
    a, _ = stable_a(rng, 4, 1)
    b = rng.standard_normal((4, 2))
    c = rng.standard_normal((3, 4))
    d = rng.standard_normal((3, 2))
    g = d - c @ np.linalg.solve(a, b)
    CASES.append(case(
        "dc_gain_continuous_mimo", "first principles: D - C A^-1 B (numpy.linalg.solve)",
        sys_inputs(a, b, c, d), {"dc_gain": mat(g)}, 1e-12, 1e-12 * float(np.abs(g).max()),
        "well-conditioned A"))


if __name__ == "__main__":
    tf_cases()
    zeros_cases()
    lyap_cases()
    gramian_cases()
    markov_cases()
    dc_gain_case()
    write_fixture("models.json", "gen_models.py", CASES,
                  "state-space model references: transfer functions, transmission zeros, "
                  "Lyapunov equations, Gramians, Hankel singular values, Markov parameters, "
                  "DC gain")
