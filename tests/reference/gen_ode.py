"""Reference values for src/numeric/time/ode.rs (statebook). Run: python3 gen_ode_reference.py"""
import numpy as np, scipy
from scipy.integrate import solve_ivp

def robertson(t, y):
    return [-0.04 * y[0] + 1e4 * y[1] * y[2],
            0.04 * y[0] - 1e4 * y[1] * y[2] - 3e7 * y[1] ** 2,
            3e7 * y[1] ** 2]

def vdp(mu):
    return lambda t, y: [y[1], mu * (1 - y[0] ** 2) * y[1] - y[0]]

print("numpy", np.__version__, "scipy", scipy.__version__)
r = solve_ivp(robertson, (0, 40), [1, 0, 0], method="Radau", rtol=1e-12, atol=1e-14,
              t_eval=[0.4, 4, 40])
print("robertson", r.status, [[repr(v) for v in row] for row in r.y.T])
r = solve_ivp(vdp(1000.0), (0, 3000), [2, 0], method="Radau", rtol=1e-12, atol=1e-14,
              t_eval=[1000, 2000, 3000])
print("vdp1000", r.status, [[repr(v) for v in row] for row in r.y.T])
