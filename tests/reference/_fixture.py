"""Shared helpers for the reference-fixture generators (see README.md).

Every generator builds a list of cases with `case(...)` and writes them with
`write_fixture(...)`. Conversions:
  real matrix     -> array of rows of floats
  complex number  -> [re, im]
  complex vector  -> array of [re, im]
  complex matrix  -> array of rows of [re, im]
Floats are written with Python's repr (the shortest text that round-trips to the
same binary64 value, at most 17 significant digits), so a Rust reader gets the
exact double the generator held.
"""
import json
import math
import os
import sys

import mpmath
import numpy as np
import scipy

EPS = float(np.finfo(float).eps)
HERE = os.path.dirname(os.path.abspath(__file__))


def libraries():
    return {
        "python": sys.version.split()[0],
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "mpmath": mpmath.__version__,
    }


# ---------------------------------------------------------------- conversions
def _f(x):
    x = float(x)
    if not math.isfinite(x):
        raise ValueError("non-finite value in fixture: %r" % x)
    return x


def real(x):
    return _f(x)


def vec(v):
    return [_f(x) for x in np.asarray(v, dtype=float).ravel()]


def mat(a):
    a = np.asarray(a, dtype=float)
    if a.ndim == 1:
        a = a.reshape(1, -1)
    assert a.ndim == 2
    return [[_f(x) for x in row] for row in a]


def cnum(z):
    z = complex(z)
    return [_f(z.real), _f(z.imag)]


def cvec(v):
    return [cnum(z) for z in np.asarray(v, dtype=complex).ravel()]


def cmat(a):
    a = np.asarray(a, dtype=complex)
    assert a.ndim == 2
    return [[cnum(z) for z in row] for row in a]


def mp_matrix(a):
    """Exact conversion of a float64 numpy matrix to an mpmath matrix."""
    a = np.asarray(a, dtype=float)
    m = mpmath.matrix(a.shape[0], a.shape[1])
    for i in range(a.shape[0]):
        for j in range(a.shape[1]):
            m[i, j] = mpmath.mpf(float(a[i, j]))
    return m


# ---------------------------------------------------------------- ordering
def sort_convention(values, tol=1e-12):
    """Project ordering: ascending real part, then ascending imaginary part;
    real parts that agree within tol*max(1,|lambda|) count as equal."""
    vals = sorted((complex(v) for v in values), key=lambda z: (z.real, z.imag))
    out, group = [], []
    for z in vals:
        if group and abs(z.real - group[0].real) > tol * max(1.0, abs(z), abs(group[0])):
            out.extend(sorted(group, key=lambda w: w.imag))
            group = []
        group.append(z)
    out.extend(sorted(group, key=lambda w: w.imag))
    return out


def min_real_gap(values):
    """Smallest gap between distinct real parts (conjugate pairs share one).
    Tells the Rust side how safe an index-by-index comparison of sorted values is."""
    re = sorted(set(round(complex(v).real, 14) for v in values))
    if len(re) < 2:
        return None
    return float(min(b - a for a, b in zip(re, re[1:])))


def conj_clean(values, scale):
    """Make exact conjugate pairs / exactly-real values out of values that are
    real or conjugate-paired up to roundoff (from mpmath or LAPACK)."""
    vals = [complex(v) for v in values]
    out = []
    used = [False] * len(vals)
    for i, z in enumerate(vals):
        if used[i]:
            continue
        used[i] = True
        if abs(z.imag) <= 1e-30 * max(1.0, scale) or abs(z.imag) == 0.0:
            out.append(complex(z.real, 0.0))
            continue
        # find partner
        best, bj = None, None
        for j in range(i + 1, len(vals)):
            if not used[j]:
                d = abs(vals[j] - z.conjugate())
                if best is None or d < best:
                    best, bj = d, j
        if bj is not None and best <= 1e-8 * max(1.0, abs(z)):
            used[bj] = True
            re = 0.5 * (z.real + vals[bj].real)
            im = 0.5 * (abs(z.imag) + abs(vals[bj].imag))
            out.extend([complex(re, -im), complex(re, im)])
        else:
            out.append(z)
    return out


# ---------------------------------------------------------------- cases
def case(name, function, inputs, expected, rel, abs_, why, **extra):
    c = {
        "name": name,
        "function": function,
        "inputs": inputs,
        "expected": expected,
        "tolerance": {"rel": _f(rel), "abs": _f(abs_), "why": why},
    }
    for k, v in extra.items():
        c[k] = v
    return c


# ---------------------------------------------------------------- output
def _is_num(x):
    return isinstance(x, (int, float)) and not isinstance(x, bool)


def _flat(x):
    """True for values printed on one line: numbers, strings, and lists of
    numbers or of [re, im] pairs."""
    if _is_num(x) or isinstance(x, (str, bool)) or x is None:
        return True
    if isinstance(x, list):
        return all(_is_num(e) for e in x) or all(
            isinstance(e, list) and len(e) == 2 and all(_is_num(t) for t in e) for e in x
        )
    return False


def _dump(x, ind, out):
    pad = "  " * ind
    if isinstance(x, dict):
        if not x:
            out.append("{}")
            return
        out.append("{\n")
        items = list(x.items())
        for k, (key, val) in enumerate(items):
            out.append(pad + "  " + json.dumps(key) + ": ")
            _dump(val, ind + 1, out)
            out.append(",\n" if k + 1 < len(items) else "\n")
        out.append(pad + "}")
    elif isinstance(x, list):
        if _flat(x) or not x:
            out.append(json.dumps(x, separators=(", ", ": ")))
            return
        out.append("[\n")
        for k, val in enumerate(x):
            out.append(pad + "  ")
            _dump(val, ind + 1, out)
            out.append(",\n" if k + 1 < len(x) else "\n")
        out.append(pad + "]")
    else:
        out.append(json.dumps(x))


def write_fixture(filename, generator, cases, description):
    names = [c["name"] for c in cases]
    assert len(names) == len(set(names)), "duplicate case names"
    doc = {
        "generator": generator,
        "description": description,
        "libraries": libraries(),
        "cases": cases,
    }
    # check that the document is plain JSON (no NaN/inf) before writing
    json.dumps(doc, allow_nan=False)
    out = []
    _dump(doc, 0, out)
    path = os.path.join(HERE, filename)
    with open(path, "w") as fh:
        fh.write("".join(out) + "\n")
    size = os.path.getsize(path)
    print("wrote %s: %d cases, %.1f kB" % (path, len(cases), size / 1024.0))
    assert size < 2 * 1024 * 1024, "fixture larger than 2 MB"


# ---------------------------------------------------------------- high-precision solvers
def mp_lyapunov(a, q, discrete=False, dps=50):
    """First principles at high precision: solve A X + X A^T + Q = 0 (continuous) or
    A X A^T - X + Q = 0 (discrete) as a Kronecker-form linear system in mpmath on the
    exact binary64 entries. Returns an mpmath matrix (at the working precision)."""
    n = a.shape[0]
    with mpmath.workdps(dps):
        am, qm = mp_matrix(a), mp_matrix(q)
        k = mpmath.zeros(n * n, n * n)
        r = mpmath.zeros(n * n, 1)
        for i in range(n):
            for j in range(n):
                row = i * n + j
                r[row] = -qm[i, j]
                if discrete:
                    for s in range(n):
                        for t in range(n):
                            k[row, s * n + t] += am[i, s] * am[j, t]
                    k[row, row] -= 1
                else:
                    for s in range(n):
                        k[row, s * n + j] += am[i, s]
                        k[row, i * n + s] += am[j, s]
        x = mpmath.lu_solve(k, r)
        out = mpmath.matrix(n, n)
        for i in range(n):
            for j in range(n):
                out[i, j] = x[i * n + j]
        return out


def mp_to_np(m):
    return np.array([[float(m[i, j]) for j in range(m.cols)] for i in range(m.rows)])
