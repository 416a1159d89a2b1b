#!/usr/bin/env python3
"""Reference fixtures for matrix equations and frequency-domain quantities -> freq.json.

Run from the repository root:  python3 tests/reference/gen_freq.py
Models are random (fixed seeds) or made up for this project. Regenerate only on
purpose (see README.md).
"""
import sys

sys.dont_write_bytecode = True

import os

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import mpmath
import numpy as np
import scipy.linalg as sla
import scipy.signal as sig
from scipy.integrate import quad
from scipy.optimize import brentq

from _fixture import (EPS, case, cmat, cvec, mat, mp_lyapunov, mp_matrix, mp_to_np,
                      sort_convention, vec, write_fixture)

CASES = []


def random_similarity(rng, n, cond_target=4.0):
    q1, _ = np.linalg.qr(rng.standard_normal((n, n)))
    q2, _ = np.linalg.qr(rng.standard_normal((n, n)))
    return q1 @ np.diag(np.linspace(1.0, cond_target, n)) @ q2


def hide(rng, blocks, cond_target=4.0):
    j = sla.block_diag(*[np.array(b, dtype=float) for b in blocks])
    t = random_similarity(rng, j.shape[0], cond_target)
    return t @ j @ np.linalg.inv(t)


def sys_inputs(a, b, c, d, dt=0.0):
    return {"A": mat(a), "B": mat(b), "C": mat(c), "D": mat(d), "dt": float(dt)}


def g_at(a, b, c, d, s):
    return c @ np.linalg.solve(s * np.eye(a.shape[0]) - a, b) + d


# ------------------------------------------------------------------ Lyapunov
def lyap_case(name, a, q, discrete, note):
    if discrete:
        x = sla.solve_discrete_lyapunov(a, q)
        fn = ("scipy.linalg.solve_discrete_lyapunov(A, Q): A X A^T - X + Q = 0 (scipy's own sign "
              "convention, passed as is)")
        res = np.linalg.norm(a @ x @ a.T - x + q) / np.linalg.norm(q)
    else:
        x = sla.solve_continuous_lyapunov(a, -q)
        fn = ("scipy.linalg.solve_continuous_lyapunov(A, -Q): scipy solves A X + X A^H = Q, so -Q "
              "gives the project's A X + X A^T + Q = 0")
        res = np.linalg.norm(a @ x + x @ a.T + q) / np.linalg.norm(q)
    xm = mp_to_np(mp_lyapunov(a, q, discrete))
    rel = float(np.abs(x - xm).max() / np.abs(xm).max())
    tol = max(1e-11, 100.0 * rel)
    CASES.append(case(
        name, fn, {"A": mat(a), "Q": mat(q)}, {"X": mat(x)},
        tol, tol * float(np.abs(x).max()),
        "scipy's relative error against an mpmath Kronecker solve is %.1e; allow 100x "
        "(at least 1e-11)" % rel,
        cross_check={"relative residual": float(res),
                     "max |X - X_mpmath| / max |X_mpmath|": rel}, notes=note))


def lyap_cases():
    rng = np.random.default_rng(3001)
    a = hide(rng, [[[-1e-3, 1.0], [-1.0, -1e-3]], [[-2.0, 30.0], [0.0, -3.0]], [[-0.5]]], 8.0)
    g = rng.standard_normal((5, 5))
    lyap_case("lyapunov_continuous_ill_conditioned", a, g @ g.T, False,
              "lightly damped pair -1e-3 +- 1j (so sep(A, -A^T) ~ 2e-3 and X ~ 1e3 |Q|), a "
              "non-normal 2x2 block and a random similarity with condition 8")
    rng = np.random.default_rng(3002)
    a = hide(rng, [[[0.995 * np.cos(0.3), 0.995 * np.sin(0.3)],
                    [-0.995 * np.sin(0.3), 0.995 * np.cos(0.3)]], [[0.6]], [[-0.4]]], 4.0)
    g = rng.standard_normal((4, 2))
    lyap_case("lyapunov_discrete_near_unit_circle", a, g @ g.T, True,
              "pair of modulus 0.995 at angle 0.3 rad, plus 0.6 and -0.4; Q = G G^T of rank 2")


# ------------------------------------------------------------------ Riccati
def mp_care(a, b, q, r, dps=50):
    """First principles: X = U21 U11^-1 from the stable invariant subspace of the
    Hamiltonian [[A, -B R^-1 B^T], [-Q, -A^T]], in mpmath."""
    n = a.shape[0]
    with mpmath.workdps(dps):
        am, bm, qm, rm = (mp_matrix(x) for x in (a, b, q, r))
        g = bm * rm ** -1 * bm.T
        h = mpmath.zeros(2 * n, 2 * n)
        for i in range(n):
            for j in range(n):
                h[i, j] = am[i, j]
                h[i, n + j] = -g[i, j]
                h[n + i, j] = -qm[i, j]
                h[n + i, n + j] = -am[j, i]
        e, v = mpmath.eig(h, left=False, right=True)
        idx = [k for k in range(2 * n) if mpmath.re(e[k]) < 0]
        assert len(idx) == n
        u11 = mpmath.matrix(n, n)
        u21 = mpmath.matrix(n, n)
        for jj, k in enumerate(idx):
            for i in range(n):
                u11[i, jj] = v[i, k]
                u21[i, jj] = v[n + i, k]
        x = u21 * u11 ** -1
        return np.array([[float(mpmath.re(x[i, j])) for j in range(n)] for i in range(n)])


def mp_dare(a, b, q, r, dps=50):
    """First principles: stable eigenvectors (|lambda| < 1) of the symplectic matrix
    Z = [[A + G A^-T Q, -G A^-T], [-A^-T Q, A^-T]], G = B R^-1 B^T (A invertible)."""
    n = a.shape[0]
    with mpmath.workdps(dps):
        am, bm, qm, rm = (mp_matrix(x) for x in (a, b, q, r))
        g = bm * rm ** -1 * bm.T
        ait = (am ** -1).T
        z11 = am + g * ait * qm
        z12 = -g * ait
        z21 = -ait * qm
        z22 = ait
        z = mpmath.zeros(2 * n, 2 * n)
        for i in range(n):
            for j in range(n):
                z[i, j], z[i, n + j] = z11[i, j], z12[i, j]
                z[n + i, j], z[n + i, n + j] = z21[i, j], z22[i, j]
        e, v = mpmath.eig(z, left=False, right=True)
        idx = [k for k in range(2 * n) if abs(e[k]) < 1]
        assert len(idx) == n
        u11 = mpmath.matrix(n, n)
        u21 = mpmath.matrix(n, n)
        for jj, k in enumerate(idx):
            for i in range(n):
                u11[i, jj] = v[i, k]
                u21[i, jj] = v[n + i, k]
        x = u21 * u11 ** -1
        return np.array([[float(mpmath.re(x[i, j])) for j in range(n)] for i in range(n)])


def riccati_case(name, a, b, q, r, discrete, note):
    if discrete:
        x = sla.solve_discrete_are(a, b, q, r)
        k = np.linalg.solve(r + b.T @ x @ b, b.T @ x @ a)
        res = a.T @ x @ a - x - a.T @ x @ b @ k + q
        xm = mp_dare(a, b, q, r)
        fn = ("scipy.linalg.solve_discrete_are(A, B, Q, R): A^T X A - X - A^T X B (R + B^T X B)^-1 "
              "B^T X A + Q = 0; gain K = (R + B^T X B)^-1 B^T X A; closed_loop_poles = eig(A - B K)")
    else:
        x = sla.solve_continuous_are(a, b, q, r)
        k = np.linalg.solve(r, b.T @ x)
        res = a.T @ x + x @ a - x @ b @ k + q
        xm = mp_care(a, b, q, r)
        fn = ("scipy.linalg.solve_continuous_are(A, B, Q, R): A^T X + X A - X B R^-1 B^T X + Q = 0; "
              "gain K = R^-1 B^T X; closed_loop_poles = eig(A - B K)")
    poles = sort_convention(np.linalg.eigvals(a - b @ k))
    rel = float(np.abs(x - xm).max() / np.abs(xm).max())
    tol = max(1e-10, 100.0 * rel)
    CASES.append(case(
        name, fn, {"A": mat(a), "B": mat(b), "Q": mat(q), "R": mat(r), "dt": 1.0 if discrete else 0.0},
        {"X": mat(x), "K": mat(k), "closed_loop_poles": cvec(poles)},
        tol, tol * float(np.abs(x).max()),
        "scipy's relative error against the mpmath invariant-subspace solution is %.1e; allow "
        "100x (at least 1e-10). K and the poles inherit it; compare poles with abs = rel * "
        "max|pole|" % rel,
        cross_check={"max |X - X_mpmath| / max |X_mpmath| (invariant subspace at 50 digits)": rel,
                     "relative residual": float(np.linalg.norm(res) / max(1.0, np.linalg.norm(x)))},
        notes=note))


def riccati_cases():
    rng = np.random.default_rng(3101)
    a = rng.standard_normal((4, 4))
    b = rng.standard_normal((4, 2))
    c = rng.standard_normal((2, 4))
    q = c.T @ c + 0.1 * np.eye(4)
    r = np.diag([1.0, 0.5])
    riccati_case("riccati_continuous_random", a, b, q, r, False,
                 "random A (eigenvalues in both half planes), B 4x2, Q = C^T C + 0.1 I, "
                 "R = diag(1, 0.5)")
    a = np.array([[0.0, 1.0], [0.0, 0.0]])
    b = np.array([[0.0], [1.0]])
    q = np.diag([4.0, 1.0])
    r = np.array([[0.25]])
    riccati_case("riccati_continuous_double_integrator", a, b, q, r, False,
                 "double integrator with Q = diag(4, 1), R = 0.25 (made-up weights). Closed form "
                 "(first principles): K = [sqrt(q1/r), sqrt(q2/r + 2 sqrt(q1/r))] = [4, sqrt(12)]")
    CASES[-1]["cross_check"]["closed form K = [4, sqrt(12)]"] = [4.0, float(np.sqrt(12.0))]
    rng = np.random.default_rng(3102)
    a = hide(rng, [[[0.8]], [[-1.0, 2.0], [-2.0, -1.0]]], 3.0)
    b = rng.standard_normal((3, 1))
    # make the unstable mode nearly uncontrollable: project B almost onto the stable modes
    w, vl = sla.eig(a, left=True, right=False)[0], sla.eig(a, left=True, right=False)[1]
    iu = int(np.argmax(w.real))
    y = np.real(vl[:, iu])
    b = b - np.outer(y, y @ b) / (y @ y) + 1e-4 * y.reshape(3, 1) / np.linalg.norm(y)
    q = np.eye(3)
    r = np.array([[1.0]])
    riccati_case("riccati_continuous_nearly_unstabilizable", a, b, q, r, False,
                 "unstable mode 0.8 reached by B only through a 1e-4 component: stabilizable but "
                 "barely, so X ~ 1e8 and the equation is ill conditioned")
    rng = np.random.default_rng(3103)
    a = rng.standard_normal((3, 3)) * 0.8
    b = rng.standard_normal((3, 1))
    q = np.diag([1.0, 2.0, 0.5])
    r = np.array([[0.3]])
    riccati_case("riccati_discrete_random", a, b, q, r, True,
                 "random A (0.8 * normal), B 3x1, Q = diag(1, 2, 0.5), R = 0.3; dt is "
                 "irrelevant to the equation (recorded as 1)")
    rng = np.random.default_rng(3104)
    a = hide(rng, [[[1.02 * np.cos(0.5), 1.02 * np.sin(0.5)],
                    [-1.02 * np.sin(0.5), 1.02 * np.cos(0.5)]], [[0.3]], [[-0.9]]], 5.0)
    b = rng.standard_normal((4, 2))
    c = rng.standard_normal((1, 4))
    q = c.T @ c + 1e-6 * np.eye(4)
    r = np.diag([1e-4, 1e2])
    riccati_case("riccati_discrete_ill_conditioned", a, b, q, r, True,
                 "unstable pair of modulus 1.02, rank-one-plus-1e-6 Q, input weights spread over "
                 "six decades (R = diag(1e-4, 1e2)), similarity condition 5")


# ------------------------------------------------------------------ frequency responses
def fr_case(name, a, b, c, d, dt, ws, note):
    n = a.shape[0]
    if dt == 0.0:
        g = [g_at(a, b, c, d, 1j * w) for w in ws]
        fn = "first principles: C (j w I - A)^-1 B + D by numpy.linalg.solve (complex LU) at each w"
    else:
        g = [g_at(a, b, c, d, np.exp(1j * w * dt)) for w in ws]
        fn = ("first principles: C (z I - A)^-1 B + D with z = exp(j w dt), numpy.linalg.solve "
              "(complex LU) at each w")
    with mpmath.workdps(40):
        am, bm, cm, dm = (mp_matrix(x) for x in (a, b, c, d))
        worst = 0.0
        for w, gk in list(zip(ws, g))[:: max(1, len(ws) // 6)]:
            s = mpmath.mpc(0, w) if dt == 0.0 else mpmath.exp(mpmath.mpc(0, w * dt))
            gm = cm * (s * mpmath.eye(n) - am) ** -1 * bm + dm
            e = max(abs(complex(gm[i, j]) - gk[i, j]) for i in range(gm.rows) for j in range(gm.cols))
            worst = max(worst, e / max(1.0, float(np.abs(gk).max())))
    scale = max(float(np.abs(x).max()) for x in g)
    CASES.append(case(
        name, fn, dict(sys_inputs(a, b, c, d, dt), w=vec(ws)),
        {"response": [cmat(x) for x in g]},
        1e-11, 1e-13 * scale,
        "a complex linear solve per frequency; sI - A is moderately conditioned on the grid "
        "(mpmath spot checks: max rel error %.1e)" % worst,
        cross_check={"mpmath (40 digits) spot checks at every ~6th w, max rel error": worst},
        notes=note + ". response[k] is the p x m complex matrix at w[k]"))


def fr_cases():
    rng = np.random.default_rng(3201)
    a = hide(rng, [[[-0.3, 1.7], [-1.7, -0.3]], [[-1.0]], [[-4.0]]])
    b = rng.standard_normal((4, 3))
    c = rng.standard_normal((2, 4))
    d = 0.2 * rng.standard_normal((2, 3))
    fr_case("frequency_response_continuous_mimo", a, b, c, d, 0.0,
            np.concatenate([[0.0], np.logspace(-2, 2, 25)]),
            "random stable model, 3 inputs, 2 outputs, w = 0 and 25 log-spaced points 1e-2..1e2")
    rng = np.random.default_rng(3202)
    zeta, wn = 0.01, 2.0
    a = hide(rng, [[[-zeta * wn, wn * np.sqrt(1 - zeta ** 2)],
                    [-wn * np.sqrt(1 - zeta ** 2), -zeta * wn]], [[-0.7]]])
    b = rng.standard_normal((3, 1))
    c = rng.standard_normal((1, 3))
    d = np.zeros((1, 1))
    ws = np.concatenate([np.linspace(1.9, 2.1, 21), [0.1, 1.0, 10.0]])
    fr_case("frequency_response_continuous_lightly_damped", a, b, c, d, 0.0, ws,
            "made-up resonance zeta = 0.01 at wn = 2 rad/s plus a pole at -0.7; w densely around "
            "the peak")
    rng = np.random.default_rng(3203)
    dt = 0.05
    ac = hide(rng, [[[-0.5, 3.0], [-3.0, -0.5]], [[-2.0]]])
    b = rng.standard_normal((3, 2))
    c = rng.standard_normal((2, 3))
    d = 0.1 * rng.standard_normal((2, 2))
    ad = sla.expm(ac * dt)
    fr_case("frequency_response_discrete_mimo", ad, b, c, d, dt,
            np.linspace(0.0, np.pi / dt, 21),
            "discrete model A = expm(Ac dt) of a random stable Ac, dt = 0.05, random B, C, D; w "
            "from 0 to the Nyquist frequency pi/dt")


# ------------------------------------------------------------------ H2 norm
def h2_cases():
    rng = np.random.default_rng(3301)
    a = hide(rng, [[[-0.4, 2.0], [-2.0, -0.4]], [[-1.3]], [[-3.0]]])
    b = rng.standard_normal((4, 2))
    c = rng.standard_normal((3, 4))
    d = np.zeros((3, 2))
    wc = sla.solve_continuous_lyapunov(a, -b @ b.T)
    wo = sla.solve_continuous_lyapunov(a.T, -c.T @ c)
    h2 = float(np.sqrt(np.trace(c @ wc @ c.T)))
    h2o = float(np.sqrt(np.trace(b.T @ wo @ b)))
    f = lambda w: np.linalg.norm(g_at(a, b, c, d, 1j * w), "fro") ** 2
    integral = sum(quad(f, lo, hi, limit=200, epsabs=1e-14, epsrel=1e-13)[0]
                   for lo, hi in [(0, 1), (1, 3), (3, 10), (10, np.inf)])
    h2q = float(np.sqrt(integral / np.pi))
    CASES.append(case(
        "h2_norm_continuous_mimo", "first principles: sqrt(trace(C Wc C^T)), Wc from "
        "scipy.linalg.solve_continuous_lyapunov (A Wc + Wc A^T + B B^T = 0); D = 0",
        sys_inputs(a, b, c, d), {"h2_norm": h2}, 1e-11, 0.0,
        "Gramian-based; the observability-Gramian and frequency-integral values agree (cross_check)",
        cross_check={"sqrt(trace(B^T Wo B))": h2o,
                     "sqrt((1/pi) int_0^inf ||G(jw)||_F^2 dw) by scipy.integrate.quad": h2q}))
    CASES.append(case(
        "h2_norm_first_order_closed_form", "first principles: G(s) = k/(s + a) has H2 norm "
        "k / sqrt(2 a); k = 3, a = 2 gives 1.5",
        sys_inputs(np.array([[-2.0]]), np.array([[1.0]]), np.array([[3.0]]), np.zeros((1, 1))),
        {"h2_norm": 1.5}, 1e-14, 0.0, "closed form"))
    rng = np.random.default_rng(3302)
    dt = 0.1
    ac = hide(rng, [[[-0.6, 1.2], [-1.2, -0.6]], [[-2.5]]])
    ad = sla.expm(ac * dt)
    b = rng.standard_normal((3, 1))
    c = rng.standard_normal((2, 3))
    d = 0.3 * rng.standard_normal((2, 1))
    wc = sla.solve_discrete_lyapunov(ad, b @ b.T)
    h2 = float(np.sqrt(np.trace(c @ wc @ c.T + d @ d.T)))
    imp = [d] + [c @ np.linalg.matrix_power(ad, k) @ b for k in range(0, 4000)]
    h2s = float(np.sqrt(sum(np.sum(x ** 2) for x in imp)))
    CASES.append(case(
        "h2_norm_discrete", "first principles: sqrt(trace(C Wc C^T + D D^T)), Wc from "
        "scipy.linalg.solve_discrete_lyapunov (A Wc A^T - Wc + B B^T = 0)",
        sys_inputs(ad, b, c, d, dt), {"h2_norm": h2}, 1e-11, 0.0,
        "Gramian-based; equals the 2-norm of the impulse response sequence (cross_check)",
        cross_check={"sqrt(sum_k ||h_k||_F^2) over 4000 Markov parameters": h2s},
        notes="discrete model expm(Ac dt) of a random stable Ac, dt = 0.1, D != 0. No 1/dt "
              "scaling: the norm of the sequence D, CB, CAB, ..."))


# ------------------------------------------------------------------ H-infinity norm
def sigma_max(a, b, c, d, w, dt):
    s = 1j * w if dt == 0.0 else np.exp(1j * w * dt)
    return float(np.linalg.svd(g_at(a, b, c, d, s), compute_uv=False)[0])


def golden_max(f, lo, hi, tol=1e-13):
    gr = (np.sqrt(5.0) - 1.0) / 2.0
    x1, x2 = hi - gr * (hi - lo), lo + gr * (hi - lo)
    f1, f2 = f(x1), f(x2)
    while hi - lo > tol * max(1.0, abs(hi)):
        if f1 < f2:
            lo, x1, f1 = x1, x2, f2
            x2 = lo + gr * (hi - lo)
            f2 = f(x2)
        else:
            hi, x2, f2 = x2, x1, f1
            x1 = hi - gr * (hi - lo)
            f1 = f(x1)
    return (x1, f1) if f1 > f2 else (x2, f2)


def hinf_sweep(a, b, c, d, dt):
    ev = np.linalg.eigvals(a)
    if dt == 0.0:
        grid = np.concatenate([[0.0], np.logspace(-4, 4, 4001),
                               np.abs(ev.imag), np.abs(ev)])
    else:
        ny = np.pi / dt
        grid = np.concatenate([np.linspace(0.0, ny, 4001), np.abs(np.angle(ev)) / dt])
        grid = grid[grid <= ny]
    grid = np.unique(grid)
    vals = np.array([sigma_max(a, b, c, d, w, dt) for w in grid])
    k = int(np.argmax(vals))
    best_w, best = float(grid[k]), float(vals[k])
    lo = grid[max(k - 1, 0)]
    hi = grid[min(k + 1, len(grid) - 1)]
    if hi > lo:
        w, v = golden_max(lambda x: sigma_max(a, b, c, d, x, dt), lo, hi)
        if v > best:
            best_w, best = float(w), float(v)
    dinf = float(np.linalg.svd(d, compute_uv=False)[0]) if dt == 0.0 else None
    if dinf is not None and dinf > best:
        return dinf, None, len(grid)
    return best, best_w, len(grid)


def hamiltonian_has_imaginary(a, b, c, d, gamma):
    r = gamma ** 2 * np.eye(d.shape[1]) - d.T @ d
    ri = np.linalg.inv(r)
    a_ = a + b @ ri @ d.T @ c
    h = np.block([[a_, b @ ri @ b.T],
                  [-c.T @ (np.eye(d.shape[0]) + d @ ri @ d.T) @ c, -a_.T]])
    e = np.linalg.eigvals(h)
    return bool(np.any(np.abs(e.real) < 1e-7 * np.linalg.norm(h, 2)))


def hinf_case(name, a, b, c, d, dt, note):
    value, freq, npts = hinf_sweep(a, b, c, d, dt)
    cross = {}
    if dt != 0.0:
        wd = np.linspace(0.0, np.pi / dt, 200001)
        cross["max over an independent linspace(0, pi/dt, 200001) sweep"] = float(
            max(sigma_max(a, b, c, d, w, dt) for w in wd))
    if dt == 0.0:
        cross["Hamiltonian has imaginary-axis eigenvalues at gamma = 0.999999 * value"] = \
            hamiltonian_has_imaginary(a, b, c, d, value * (1 - 1e-6))
        cross["Hamiltonian has imaginary-axis eigenvalues at gamma = 1.000001 * value"] = \
            hamiltonian_has_imaginary(a, b, c, d, value * (1 + 1e-6))
        assert cross["Hamiltonian has imaginary-axis eigenvalues at gamma = 0.999999 * value"]
        assert not cross["Hamiltonian has imaginary-axis eigenvalues at gamma = 1.000001 * value"]
    CASES.append(case(
        name, "first principles: dense sweep of sigma_max(G) (numpy.linalg.svd of direct complex "
        "solves) over %d frequencies (%s, plus |Im lambda| and |lambda| of the poles), then "
        "golden-section refinement between the neighbours of the best grid point%s"
        % (npts, "0 and logspace(-4, 4, 4001)" if dt == 0.0 else "linspace(0, pi/dt, 4001)",
           "; w = infinity (sigma_max(D)) also considered" if dt == 0.0 else ""),
        sys_inputs(a, b, c, d, dt), {"value": value, "frequency": freq},
        1e-9, 0.0,
        "the peak value is flat in w, so the value is accurate to ~1e-14; the frequency only "
        "to ~sqrt(eps) relative: compare frequency with rel 1e-5",
        per_key_tolerance={"frequency": {"rel": 1e-5, "abs": 1e-8,
                                         "why": "argmax of a smooth peak is determined to ~sqrt(eps)"}},
        cross_check=cross, notes=note + ". frequency in rad/s (null if the supremum is at "
        "w = infinity)"))


def hinf_cases():
    rng = np.random.default_rng(3401)
    zeta, wn = 0.05, 3.0
    a = hide(rng, [[[-zeta * wn, wn * np.sqrt(1 - zeta ** 2)],
                    [-wn * np.sqrt(1 - zeta ** 2), -zeta * wn]], [[-1.0]]])
    b = rng.standard_normal((3, 1))
    c = rng.standard_normal((1, 3))
    hinf_case("hinf_norm_siso_resonant", a, b, c, np.zeros((1, 1)), 0.0,
              "made-up resonance zeta = 0.05, wn = 3 plus a pole at -1; peak near 3 rad/s")
    rng = np.random.default_rng(3402)
    a = hide(rng, [[[-0.2, 1.0], [-1.0, -0.2]], [[-0.5, 4.0], [-4.0, -0.5]], [[-2.0]]])
    b = rng.standard_normal((5, 2))
    c = rng.standard_normal((2, 5))
    d = 0.3 * rng.standard_normal((2, 2))
    hinf_case("hinf_norm_mimo", a, b, c, d, 0.0,
              "random stable 2x2 model with two lightly damped pairs and D != 0")
    hinf_case("hinf_norm_first_order_dc_peak",
              np.array([[-2.0]]), np.array([[1.0]]), np.array([[3.0]]), np.zeros((1, 1)), 0.0,
              "G = 3/(s + 2): the supremum 1.5 is at w = 0 (closed form, first principles)")
    rng = np.random.default_rng(3403)
    dt = 0.1
    ac = hide(rng, [[[-0.3, 5.0], [-5.0, -0.3]], [[-1.5]]])
    b = rng.standard_normal((3, 1))
    c = rng.standard_normal((2, 3))
    d = 0.1 * rng.standard_normal((2, 1))
    hinf_case("hinf_norm_discrete", sla.expm(ac * dt), b, c, d, dt,
              "discrete model expm(Ac dt) of a random stable Ac with a pair at -0.3 +- 5j, dt = 0.1; "
              "sup over w in [0, pi/dt] of sigma_max(G(e^{j w dt}))")


# ------------------------------------------------------------------ margins
def margin_case(name, num, den, note):
    num, den = np.asarray(num, float), np.asarray(den, float)
    zs, ps = np.roots(num), np.roots(den)
    k = num[np.nonzero(num)[0][0]] / den[0]

    def lval(w):
        return np.polyval(num, 1j * w) / np.polyval(den, 1j * w)

    def phase(w):
        # continuous phase: sum of factor angles, each in (-180, 180]
        s = 1j * w
        ph = np.sum(np.angle(s - zs)) - np.sum(np.angle(s - ps)) + (0.0 if k > 0 else np.pi)
        return np.degrees(ph)

    ws = np.logspace(-4, 4, 20001)
    mag = np.array([np.log(abs(lval(w))) for w in ws])
    ph = np.array([phase(w) for w in ws])
    gc = [brentq(lambda w: np.log(abs(lval(w))), ws[i], ws[i + 1], xtol=1e-15, rtol=1e-15)
          for i in range(len(ws) - 1) if mag[i] * mag[i + 1] < 0]
    pc = [brentq(lambda w: phase(w) + 180.0, ws[i], ws[i + 1], xtol=1e-15, rtol=1e-15)
          for i in range(len(ws) - 1) if (ph[i] + 180.0) * (ph[i + 1] + 180.0) < 0]
    assert len(gc) == 1 and len(pc) <= 1, (name, gc, pc)
    wc = gc[0]
    pm = 180.0 + phase(wc)
    if pc:
        wp = pc[0]
        gm = 1.0 / abs(lval(wp))
        gm_db = 20.0 * np.log10(gm)
    else:
        wp, gm, gm_db = None, None, None
    dm = np.radians(pm) / wc if pm > 0 else None
    CASES.append(case(
        name, "first principles: brentq root-finding (scipy.optimize.brentq, xtol 1e-15) on "
        "ln|L(jw)| = 0 and on the continuous phase angle(L(jw)) = -180 deg, bracketed by a "
        "sweep over logspace(-4, 4, 20001); phase = sum of zero angles - sum of pole angles "
        "(each in (-180, 180], numpy.roots), so it is continuous in w",
        {"numerator": vec(num), "denominator": vec(den)},
        {"gain_margin": gm, "gain_margin_db": gm_db, "phase_margin": float(pm),
         "gain_crossover": float(wc), "phase_crossover": wp, "delay_margin": dm},
        1e-9, 1e-9, "roots of smooth functions found to ~1e-15; the values are exact to ~1e-13",
        notes=note + ". Conventions: gain_margin = 1/|L(j w_pc)| as a ratio (null = infinite: "
        "the phase never reaches -180 deg), gain_margin_db = 20 log10(gain_margin), "
        "phase_margin = 180 + angle L(j w_gc) in degrees (continuous phase), delay_margin = "
        "phase_margin in rad / w_gc in s (null when phase_margin <= 0). Single crossovers only"))


def margin_cases():
    margin_case("margins_third_order_lag", [12.0], np.poly([-0.5, -2.0, -4.0]),
                "L(s) = 12 / ((s + 0.5)(s + 2)(s + 4)) (made up); stable closed loop. Closed form for "
                "the gain margin: den(jw) = -6.5 w^2 + 4 + j (11 w - w^3), real at w = sqrt(11), "
                "|L| = 12/67.5, gain margin 5.625")
    margin_case("margins_integrator_with_zero", [3.0, 3.0], np.poly([0.0, -2.0, -6.0]),
                "L(s) = 3 (s + 1) / (s (s + 2)(s + 6)) (made up): type 1, a zero pulls the phase "
                "back, so it never reaches -180 deg (infinite gain margin)")
    margin_case("margins_unstable_closed_loop", [40.0], np.poly([-1.0, -1.0, -1.0]),
                "L(s) = 40 / (s + 1)^3: phase crossover at sqrt(3) rad/s where |L| = 5, so "
                "gain margin 0.2 (-13.98 dB, closed form) and a negative phase margin")
    margin_case("margins_integrator_zero_three_poles", [8.0, 4.0], np.poly([0.0, -1.0, -2.0, -5.0]),
                "L(s) = 8 (s + 0.5) / (s (s + 1)(s + 2)(s + 5)) (made up): type 1, phase from "
                "-90 to -270 deg, one phase crossover")


if __name__ == "__main__":
    lyap_cases()
    riccati_cases()
    fr_cases()
    h2_cases()
    hinf_cases()
    margin_cases()
    write_fixture("freq.json", "gen_freq.py", CASES,
                  "matrix equation and frequency-domain references: Lyapunov and Riccati "
                  "solutions, frequency responses, H2 and H-infinity norms, loop margins")
