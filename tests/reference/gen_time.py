#!/usr/bin/env python3
"""Reference fixtures for discretization and time responses -> time.json.

Run from the repository root:  python3 tests/reference/gen_time.py
Models and signals are random (fixed seeds) or made up for this project.
Regenerate only on purpose (see README.md). Takes about a minute (the explicit
integrator on the stiff Robertson problem is the slow part).
"""
import sys

sys.dont_write_bytecode = True

import os

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import numpy as np
import scipy.linalg as sla
import scipy.signal as sig
from scipy.integrate import solve_ivp

from _fixture import case, cmat, mat, vec, write_fixture

CASES = []


def random_similarity(rng, n, cond_target=4.0):
    q1, _ = np.linalg.qr(rng.standard_normal((n, n)))
    q2, _ = np.linalg.qr(rng.standard_normal((n, n)))
    return q1 @ np.diag(np.linspace(1.0, cond_target, n)) @ q2


def stable_model(rng, blocks, m, p, d_scale=0.0):
    j = sla.block_diag(*[np.array(b, dtype=float) for b in blocks])
    n = j.shape[0]
    t = random_similarity(rng, n)
    a = t @ j @ np.linalg.inv(t)
    b = rng.standard_normal((n, m))
    c = rng.standard_normal((p, n))
    d = d_scale * rng.standard_normal((p, m))
    return a, b, c, d


def sys_inputs(a, b, c, d, dt=0.0):
    return {"A": mat(a), "B": mat(b), "C": mat(c), "D": mat(d), "dt": float(dt)}


def fr_discrete(a, b, c, d, dt, ws):
    n = a.shape[0]
    return [c @ np.linalg.solve(np.exp(1j * w * dt) * np.eye(n) - a, b) + d for w in ws]


def fr_continuous(a, b, c, d, ws):
    n = a.shape[0]
    return [c @ np.linalg.solve(1j * w * np.eye(n) - a, b) + d for w in ws]


# ------------------------------------------------------------------ discretization
W_CHECK = [0.1, 1.0, 3.0, 10.0]


def c2d_case(name, a, b, c, d, dt, method, function, note, prewarp=None):
    if prewarp is None:
        ad, bd, cd, dd, _ = sig.cont2discrete((a, b, c, d), dt, method=method)
    else:
        # first principles: Tustin with prewarp at w0 is the bilinear map with the
        # step dt' = 2 tan(w0 dt / 2) / w0, i.e. s = (w0 / tan(w0 dt/2)) (z - 1)/(z + 1)
        dtp = 2.0 * np.tan(prewarp * dt / 2.0) / prewarp
        ad, bd, cd, dd, _ = sig.cont2discrete((a, b, c, d), dtp, method="bilinear")
    fr = fr_discrete(ad, bd, cd, dd, dt, W_CHECK)
    inputs = dict(sys_inputs(a, b, c, d), sample_time=float(dt), method=method)
    extra = {}
    if prewarp is not None:
        inputs["prewarp"] = float(prewarp)
        h0 = fr_continuous(a, b, c, d, [prewarp])[0]
        hd0 = fr_discrete(ad, bd, cd, dd, dt, [prewarp])[0]
        extra["cross_check"] = {
            "max |Hd(exp(j w0 dt)) - H(j w0)| at the prewarp frequency": float(np.abs(h0 - hd0).max())}
    scale = float(max(np.abs(x).max() for x in (ad, bd, cd, dd)))
    CASES.append(case(
        name, function, inputs,
        {"A": mat(ad), "B": mat(bd), "C": mat(cd), "D": mat(dd), "dt": float(dt),
         "frequency_check_w": vec(W_CHECK),
         "frequency_response": [cmat(x) for x in fr]},
        1e-11, 1e-12 * scale,
        "matrix exponentials of a small, well-scaled block: near machine precision. The "
        "frequency_response entries (Hd(e^{j w dt}) at frequency_check_w, p x m each) do not "
        "depend on the realization and are the safer comparison for non-unique forms",
        notes=note, **extra))


def c2d_cases():
    rng = np.random.default_rng(2001)
    a, b, c, d = stable_model(rng, [[[-0.5, 2.0], [-2.0, -0.5]], [[-3.0]]], 2, 2, 0.4)
    dt = 0.1
    c2d_case("discretize_zoh_mimo", a, b, c, d, dt, "zoh",
             "scipy.signal.cont2discrete(method='zoh'): Ad = e^{A dt}, Bd = int_0^dt e^{A s} ds B, "
             "Cd = C, Dd = D (one block exponential, Van Loan 1978)",
             "random stable 3-state, 2-input, 2-output model with D != 0. The zoh realization is "
             "unique given the continuous one")
    c2d_case("discretize_foh_mimo", a, b, c, d, dt, "foh",
             "scipy.signal.cont2discrete(method='foh') (triangle hold): with one block exponential "
             "of [[A dt, B dt, 0], [0, 0, I], [0, 0, 0]] giving Phi, Gamma1, Gamma2: Ad = Phi, "
             "Bd = Gamma1 - Gamma2 + Phi Gamma2, Cd = C, Dd = D + C Gamma2",
             "same model; this state coordinate choice is scipy's: compare A exactly, and B, C, D "
             "through frequency_response if the Rust realization differs")
    c2d_case("discretize_tustin_mimo", a, b, c, d, dt, "tustin",
             "scipy.signal.cont2discrete(method='bilinear') (gbt, alpha = 0.5): Ad = (I - A dt/2)^-1 "
             "(I + A dt/2), Bd = (I - A dt/2)^-1 B dt, Cd = C (I - A dt/2)^-1, Dd = D + C Bd / 2",
             "same model. The Tustin realization is not unique (B and C can trade a factor): "
             "compare A exactly and the rest through frequency_response")
    c2d_case("discretize_tustin_prewarp_mimo", a, b, c, d, dt, "tustin", 
             "first principles + scipy: scipy 1.17 cont2discrete has no prewarp option; Tustin with "
             "prewarp w0 equals scipy.signal.cont2discrete(method='bilinear') called with the step "
             "dt' = 2 tan(w0 dt/2)/w0 (the map s = (w0/tan(w0 dt/2)) (z-1)/(z+1)); the result's "
             "sample time is dt",
             "same model, prewarp w0 = 3 rad/s: Hd(e^{j w0 dt}) = H(j w0) exactly (cross_check). "
             "Realization as scipy's bilinear with dt'", prewarp=3.0)
    rng = np.random.default_rng(2002)
    a2, b2, c2, _ = stable_model(rng, [[[-0.8, 1.5], [-1.5, -0.8]], [[-2.0]]], 1, 2, 0.0)
    d2 = np.zeros((2, 1))
    c2d_case("discretize_impulse_invariant", a2, b2, c2, d2, dt, "impulse",
             "scipy.signal.cont2discrete(method='impulse'): Ad = e^{A dt}, Bd = e^{A dt} B dt, "
             "Cd = C, Dd = C B dt (so that the discrete impulse response is dt * C e^{A k dt} B, "
             "including k = 0)",
             "random stable strictly proper model (D = 0, required by scipy). Note scipy's "
             "scaling: samples of dt * h(t), and a nonzero Dd = C B dt")
    a3 = np.array([[0.0, 1.0, 0.0], [0.0, 0.0, 1.0], [0.0, -2.0, -3.0]])
    b3 = np.array([[0.0], [0.0], [1.0]])
    c3 = np.array([[1.0, 0.5, 0.0]])
    d3 = np.zeros((1, 1))
    c2d_case("discretize_zoh_with_integrator", a3, b3, c3, d3, 0.5, "zoh",
             "scipy.signal.cont2discrete(method='zoh') (block exponential, no A^-1)",
             "made-up model with a pole at the origin (A singular): an implementation must not "
             "use A^-1 (e^{A dt} - I) B")


# ------------------------------------------------------------------ responses
def impulse_step_cases():
    rng = np.random.default_rng(2101)
    a, b, c, d = stable_model(rng, [[[-0.4, 1.8], [-1.8, -0.4]], [[-1.5]]], 2, 2, 0.5)
    t = np.linspace(0.0, 6.0, 61)
    ys_imp, ys_step = [], []
    worst_i, worst_s = 0.0, 0.0
    ainv = np.linalg.inv(a)
    for i in range(2):
        sysi = (a, b[:, [i]], c, d[:, [i]])
        _, yi = sig.impulse(sysi, T=t)
        _, ys = sig.step(sysi, T=t)
        yi, ys = np.atleast_2d(yi.T).T, np.atleast_2d(ys.T).T
        yi = yi.reshape(len(t), 2)
        ys = ys.reshape(len(t), 2)
        ys_imp.append(mat(yi))
        ys_step.append(mat(ys))
        for k, tk in enumerate(t):
            e = sla.expm(a * tk)
            worst_i = max(worst_i, float(np.abs(c @ e @ b[:, i] - yi[k]).max()))
            cf = c @ ainv @ (e - np.eye(3)) @ b[:, i] + d[:, i]
            worst_s = max(worst_s, float(np.abs(cf - ys[k]).max()))
    CASES.append(case(
        "impulse_response_mimo", "scipy.signal.impulse((A, B[:, i], C, D[:, i]), T=t) for each input "
        "i: y(t) = C e^{A t} B_i; the D delta is not represented (D is ignored)",
        dict(sys_inputs(a, b, c, d), t=vec(t)),
        {"per_input": ys_imp}, 1e-9, 1e-10,
        "scipy.signal.impulse agrees with C expm(A t) B to %.1e; allow for a Rust method "
        "that steps a discretization" % worst_i,
        cross_check={"max |y - C expm(A t) B_i|": worst_i},
        notes="per_input[i] has one row per sample of t and one column per output"))
    CASES.append(case(
        "step_response_mimo", "scipy.signal.step((A, B[:, i], C, D[:, i]), T=t) for each input i "
        "(unit step applied at t = 0, x0 = 0; includes D)",
        dict(sys_inputs(a, b, c, d), t=vec(t)),
        {"per_input": ys_step}, 1e-9, 1e-10,
        "agrees with the closed form C A^-1 (e^{A t} - I) B_i + D_i to %.1e" % worst_s,
        cross_check={"max |y - (C A^-1 (e^{At} - I) B_i + D_i)|": worst_s},
        notes="per_input[i] has one row per sample of t and one column per output"))


def lsim_cases():
    rng = np.random.default_rng(2201)
    a, b, c, d = stable_model(rng, [[[-0.6, 2.2], [-2.2, -0.6]], [[-1.2]]], 2, 2, 0.3)
    t = np.linspace(0.0, 8.0, 81)
    u = np.column_stack([np.sin(1.3 * t) + 0.5 * (t >= 2.0),
                         np.minimum(0.25 * t, 1.0) - 0.8 * (t >= 5.0)])
    x0 = np.array([0.4, -0.2, 0.1])
    for interp, hold in [(True, "linear"), (False, "zoh")]:
        _, y, x = sig.lsim((a, b, c, d), u, t, X0=x0, interp=interp)
        # independent check: integrate x' = A x + B u_hold(t) with the hold made explicit
        def uh(tt, interp=interp):
            if interp:
                return np.array([np.interp(tt, t, u[:, j]) for j in range(u.shape[1])])
            k = min(int(np.searchsorted(t, tt, side="right")) - 1, len(t) - 1)
            return u[k]
        xs = [x0]
        for k in range(len(t) - 1):
            mid = 0.5 * (t[k] + t[k + 1])
            r = solve_ivp(lambda tt, xx: a @ xx + b @ (uh(tt) if interp else uh(mid)),
                          (t[k], t[k + 1]), xs[-1], method="DOP853", rtol=1e-13, atol=1e-15)
            xs.append(r.y[:, -1])
        ode_diff = float(np.abs(np.array(xs) - x).max())
        CASES.append(case(
            "simulate_continuous_%s_hold" % hold,
            "scipy.signal.lsim((A, B, C, D), U, T, X0, interp=%s) — interp=%s is the %s hold: %s"
            % (interp, interp, hold,
               "u varies linearly between samples (exact solution for the piecewise-linear "
               "input)" if interp else
               "u[k] is held constant on [t_k, t_k+1) (exact zero-order-hold solution)"),
            dict(sys_inputs(a, b, c, d), t=vec(t), u=mat(u), x0=vec(x0), hold=hold),
            {"y": mat(y), "x": mat(x)}, 1e-9, 1e-10,
            "exact-discretization solution computed with block exponentials; error ~1e-14 "
            "relative, allowing for a different (equally exact) stepping",
            cross_check={"max |x - x_ode| with the hold made explicit (solve_ivp DOP853, rtol "
                         "1e-13, interval by interval)": ode_diff},
            notes="made-up input: u1 = sin(1.3 t) + 0.5 step at t = 2, u2 = min(0.25 t, 1) - 0.8 "
                  "step at t = 5 (both steps fall on samples). y and x have one row per sample "
                  "(x includes x(0) = x0)"))
    _, y, x = sig.lsim((a, b, c, d), np.zeros_like(u), t, X0=x0, interp=False)
    worst = max(float(np.abs(sla.expm(a * tk) @ x0 - x[k]).max()) for k, tk in enumerate(t))
    CASES.append(case(
        "free_response_continuous", "scipy.signal.lsim with U = 0 and X0 (x(t) = e^{A t} x0, y = C x)",
        dict(sys_inputs(a, b, c, d), t=vec(t), x0=vec(x0)), {"y": mat(y), "x": mat(x)},
        1e-10, 1e-12, "agrees with expm(A t) x0 to %.1e" % worst,
        cross_check={"max |x - expm(A t) x0|": worst}))

    # discrete
    rng = np.random.default_rng(2202)
    ac, bc, cc, dc = stable_model(rng, [[[-0.3, 1.1], [-1.1, -0.3]], [[-0.9]]], 1, 2, 0.2)
    dt = 0.2
    ad, bd, cd, dd, _ = sig.cont2discrete((ac, bc, cc, dc), dt, method="zoh")
    n = 40
    td = dt * np.arange(n)
    ud = np.column_stack([np.cos(0.7 * td) + (td >= 3.0)])
    x0 = np.array([1.0, 0.0, -0.5])
    _, y, x = sig.dlsim((ad, bd, cd, dd, dt), ud, x0=x0)
    CASES.append(case(
        "simulate_discrete", "scipy.signal.dlsim((A, B, C, D, dt), U, x0=x0): x[k+1] = A x[k] + B u[k], "
        "y[k] = C x[k] + D u[k], one step per sample",
        dict(sys_inputs(ad, bd, cd, dd, dt), u=mat(ud), x0=vec(x0), t=vec(td)),
        {"y": mat(y), "x": mat(x)}, 1e-12, 1e-13,
        "a plain recurrence: only roundoff",
        notes="discrete model = zoh of a random stable model at dt = 0.2; made-up input "
              "cos(0.7 t) + step at t = 3. x has one row per sample, x[0] = x0 (the state after "
              "the last input is not included)"))


# ------------------------------------------------------------------ ODEs
def integrate_segments(fun, jac, t_samples, y0, method):
    """Integrate sample to sample so that every stored state is the end of a real
    step sequence (no dense-output interpolation error)."""
    ys = [np.array(y0, float)]
    nfev = 0
    for t0, t1 in zip(t_samples[:-1], t_samples[1:]):
        kw = {"jac": jac} if method == "Radau" else {}
        r = solve_ivp(fun, (t0, t1), ys[-1], method=method, rtol=1e-12, atol=1e-14, **kw)
        assert r.success, r.message
        nfev += r.nfev
        ys.append(r.y[:, -1])
    return np.array(ys), nfev


def ode_cases():
    mu = 5.0

    def vdp(t, y):
        return [y[1], mu * (1.0 - y[0] ** 2) * y[1] - y[0]]

    def vdp_jac(t, y):
        return [[0.0, 1.0], [-2.0 * mu * y[0] * y[1] - 1.0, mu * (1.0 - y[0] ** 2)]]

    def rob(t, y):
        return [-0.04 * y[0] + 1e4 * y[1] * y[2],
                0.04 * y[0] - 1e4 * y[1] * y[2] - 3e7 * y[1] ** 2,
                3e7 * y[1] ** 2]

    def rob_jac(t, y):
        return [[-0.04, 1e4 * y[2], 1e4 * y[1]],
                [0.04, -1e4 * y[2] - 6e7 * y[1], -1e4 * y[1]],
                [0.0, 6e7 * y[1], 0.0]]

    problems = [
        ("vanderpol_mu5", vdp, vdp_jac, [2.0, 0.0], np.linspace(0.0, 40.0, 81),
         "van der Pol oscillator x1' = x2, x2' = mu (1 - x1^2) x2 - x1 with mu = 5, x(0) = (2, 0), "
         "t in [0, 40] (about 3.5 limit-cycle periods; moderately stiff in the slow phases)"),
        ("robertson", rob, rob_jac, [1.0, 0.0, 0.0],
         np.concatenate([[0.0], np.logspace(-5, np.log10(40.0), 30)]),
         "Robertson's chemical kinetics: y1' = -0.04 y1 + 1e4 y2 y3, y2' = 0.04 y1 - 1e4 y2 y3 - "
         "3e7 y2^2, y3' = 3e7 y2^2, y(0) = (1, 0, 0), t to 40 at log-spaced samples (stiff; "
         "y1 + y2 + y3 = 1 is conserved)"),
    ]
    for name, f, jac, y0, ts, desc in problems:
        results = {}
        for method in ("DOP853", "Radau"):
            ys, nfev = integrate_segments(f, jac, ts, y0, method)
            results[method] = (ys, nfev)
        diff = np.abs(results["DOP853"][0] - results["Radau"][0])
        scale = np.maximum(np.abs(results["Radau"][0]), 1e-14)
        agree_abs = float(diff.max())
        agree_rel = float((diff / np.maximum(scale, 1e-6)).max())
        for method in ("DOP853", "Radau"):
            ys, nfev = results[method]
            other = "Radau" if method == "DOP853" else "DOP853"
            CASES.append(case(
                "%s_%s" % (name, method.lower()),
                "scipy.integrate.solve_ivp(method='%s', rtol=1e-12, atol=1e-14%s), integrated "
                "sample to sample (each stored state is the end point of a run, not dense output)"
                % (method, ", jac=analytic" if method == "Radau" else ""),
                {"problem": name, "x0": vec(y0), "t": vec(ts), "rtol": 1e-12, "atol": 1e-14},
                {"x": mat(ys)},
                1e-6, 1e-9,
                "suggested for a Rust integrator run at rtol 1e-10 / atol 1e-12 (global error "
                "grows along the trajectory); the reference itself agrees with %s to %.1e abs "
                "(max over samples and states)" % (other, agree_abs),
                cross_check={"max |x_DOP853 - x_Radau|": agree_abs,
                             "max |x_DOP853 - x_Radau| / max(|x|, 1e-6)": agree_rel,
                             "function evaluations": int(nfev)},
                notes=desc + ". x has one row per sample of t, one column per state."))


if __name__ == "__main__":
    c2d_cases()
    impulse_step_cases()
    lsim_cases()
    ode_cases()
    write_fixture("time.json", "gen_time.py", CASES,
                  "discretization, continuous and discrete simulation, impulse and step "
                  "responses, nonlinear ODE integration references")
