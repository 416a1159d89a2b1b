#!/usr/bin/env python3
"""statebook vs numpy/scipy on the same jobs, side by side in one run.

    python3 benches/compare.py            # full run (a few minutes)
    python3 benches/compare.py --quick    # fewer repeats, one round
    python3 benches/compare.py --rounds 5 # five interleaved rounds (default 3)
    python3 benches/compare.py --markdown benches/RESULTS.md   # also write the table

Inputs: the Rust harness (`cargo bench --bench kernels -- --json --inputs F`) generates
every matrix from its seeded generator and writes them to the temporary JSON file F; this
script reads F, so both sides see exactly the same numbers. Statebook kernels are timed in
Rust (medians of repeated runs inside one process); scipy kernels are timed here the same
way (medians, inner repetitions so that one sample lasts >= 2 ms). Whole-process start-up
is timed here for both sides with the same subprocess call.

Ratios are statebook / reference: below 1 means statebook is faster.

BLAS: OPENBLAS_CORETYPE / OPENBLAS_L2_SIZE, when set, pin OpenBLAS to a slow kernel; both
are removed (together) from the environment of the numpy run only, which happens in a
child process of this script. The kernel in use is reported (threadpoolctl).
"""

import json
import os
import platform
import subprocess
import sys
import tempfile
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
BLAS_VARS = ("OPENBLAS_CORETYPE", "OPENBLAS_L2_SIZE")


def measure(f, quick):
    """Median seconds of f() (inner repetitions so one sample lasts >= 2 ms)."""
    t0 = time.perf_counter()
    f()
    once = max(time.perf_counter() - t0, 5e-8)
    inner = min(max(1, int(2e-3 / once + 0.999)), 100000)
    budget = 0.3 if quick else 2.0
    samples = min(max(int(budget / (once * inner)), 3 if quick else 7), 41) | 1
    v = []
    for _ in range(samples):
        t = time.perf_counter()
        for _ in range(inner):
            f()
        v.append((time.perf_counter() - t) / inner)
    v.sort()
    return v[len(v) // 2], samples, inner


# ---------------------------------------------------------------- reference (child) side
def reference(inputs_path, quick, with_sim=True):
    import numpy as np
    import scipy
    import scipy.linalg as sl
    import scipy.signal as ss

    blas = "unknown (threadpoolctl not installed)"
    try:
        from threadpoolctl import threadpool_info

        info = [i for i in threadpool_info() if i.get("user_api") == "blas"]
        blas = ", ".join(
            f"{i.get('internal_api')} {i.get('version')} kernel {i.get('architecture')} "
            f"threads {i.get('num_threads')}"
            for i in info
        )
    except ImportError:
        pass
    with open(inputs_path) as fh:
        inp = json.load(fh)
    M = lambda k: np.array(inp[k], dtype=float)
    out = []

    def rec(name, n, t, **extra):
        med, samples, inner = t
        out.append(dict(name=name, n=n, median_s=med, samples=samples, inner=inner, **extra))

    for n in (10, 50, 200, 500):
        a = M(f"eig_{n}")
        rec("eigenvalues", n, measure(lambda: np.linalg.eigvals(a), quick))
    for n in (10, 50, 200):
        a = M(f"expm_{n}")
        rec("expm", n, measure(lambda: sl.expm(a), quick))
    for n in (10, 50, 200):
        a, q = M(f"lyap_A_{n}"), M(f"lyap_Q_{n}")
        # scipy solves A X + X Aᴴ = Q; statebook solves A X + X Aᵀ + Q = 0.
        rec("lyapunov", n, measure(lambda: sl.solve_continuous_lyapunov(a, -q), quick))
    for n in (10, 50, 200):
        a, b = M(f"ric_A_{n}"), M(f"ric_B_{n}")
        m = b.shape[1]
        q, r = np.eye(n), np.eye(m)
        rec("riccati", n, measure(lambda: sl.solve_continuous_are(a, b, q, r), quick))
    w = np.array(inp["freq_w"])
    for n in (10, 50, 200):
        a, b, c = M(f"freq_A_{n}"), M(f"freq_B_{n}"), M(f"freq_C_{n}")
        eye = np.eye(n)

        # At n = 200 a dense solve per point takes about a millisecond: time every 10th
        # point and scale to all of them (as the Rust side does for its own dense solve).
        stride = 10 if n >= 200 else 1
        ws = w[::stride]
        scale = len(w) / len(ws)

        def loop():
            for x in ws:
                c @ np.linalg.solve(1j * x * eye - a, b)

        t = measure(loop, quick)
        rec("freq_dense", n, (t[0] * scale,) + t[1:], points=len(w), points_timed=len(ws))

        def batched():
            c @ np.linalg.solve(1j * ws[:, None, None] * eye - a, b)

        t = measure(batched, quick)
        rec("freq_dense_batched", n, (t[0] * scale,) + t[1:], points=len(w), points_timed=len(ws))
    if not with_sim:
        return dict(blas=blas, numpy=np.__version__, scipy=scipy.__version__,
                    python=platform.python_version(), results=out)
    a, b, c = M("sim_A"), M("sim_B"), M("sim_C")
    ad, bd, dt = M("sim_Ad"), M("sim_Bd"), inp["sim_dt"]
    d = np.zeros((1, 1))
    for steps in (100_000, 1_000_000):
        t = np.arange(steps) * dt
        u = np.sin(0.01 * np.arange(steps))
        rec("lsim", 10, measure(lambda: ss.lsim((a, b, c, d), u, t), quick), steps=steps)
        rec(
            "dlsim",
            10,
            measure(lambda: ss.dlsim((ad, bd, c, d, dt), u), quick),
            steps=steps,
        )
    return dict(
        blas=blas,
        numpy=np.__version__,
        scipy=scipy.__version__,
        python=platform.python_version(),
        results=out,
    )


# ---------------------------------------------------------------- driver side
def run_startup(cmd, quick, cwd=None):
    def f():
        subprocess.run(cmd, cwd=cwd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)

    return measure(f, quick)


def cargo_bench(name, extra, quick):
    args = ["cargo", "bench", "--quiet", "--bench", name, "--", "--json"] + extra
    if quick:
        args.append("--quick")
    p = subprocess.run(args, cwd=ROOT, capture_output=True, text=True)
    if p.returncode != 0:
        sys.stderr.write(p.stderr)
        raise SystemExit(f"{' '.join(args)} failed")
    line = [l for l in p.stdout.splitlines() if l.startswith("{")][-1]
    return json.loads(line)


def machine():
    model = "unknown"
    try:
        with open("/proc/cpuinfo") as fh:
            for line in fh:
                if line.startswith("model name"):
                    model = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    try:
        load = os.getloadavg()[0]
    except OSError:
        load = float("nan")
    return dict(nproc=os.cpu_count(), cpu=model, date=time.strftime("%Y-%m-%d %H:%M %Z"), load=load)


def fmt_t(s):
    if s is None:
        return "—"
    if s < 1e-3:
        return f"{s * 1e6:.1f} µs"
    if s < 1:
        return f"{s * 1e3:.2f} ms"
    return f"{s:.2f} s"


def run_round(inputs, quick, env):
    """One statebook kernel run and the reference runs right after it."""
    sb = cargo_bench("kernels", ["--inputs", inputs], quick)
    # Two reference runs: OpenBLAS single-threaded (statebook is single-threaded) and with
    # its default threads. Each job keeps the faster of the two (the stricter reference):
    # on a shared, loaded machine the threaded BLAS can be many times slower.
    refs = []
    for threads, extra in (("1", []), (None, ["--no-sim"])):
        e = dict(env)
        if threads:
            e["OPENBLAS_NUM_THREADS"] = threads
        else:
            e.pop("OPENBLAS_NUM_THREADS", None)
        p = subprocess.run(
            [sys.executable, os.path.abspath(__file__), "--reference", inputs]
            + (["--quick"] if quick else []) + extra,
            env=e,
            capture_output=True,
            text=True,
        )
        if p.returncode != 0:
            sys.stderr.write(p.stderr)
            raise SystemExit("reference run failed")
        r = json.loads(p.stdout.splitlines()[-1])
        for x in r["results"]:
            x["blas_threads"] = threads or "default"
        refs.append(r)
    ref = refs[0]
    best = {}
    for r in refs:
        for x in r["results"]:
            key = (x["name"], x["n"], x.get("steps"))
            if key not in best or x["median_s"] < best[key]["median_s"]:
                best[key] = x
    ref["results"] = list(best.values())
    ref["blas"] = " | ".join(sorted({r["blas"] for r in refs}))
    return sb, ref


def main():
    quick = "--quick" in sys.argv
    if len(sys.argv) >= 3 and sys.argv[1] == "--reference":
        print(json.dumps(reference(sys.argv[2], "--quick" in sys.argv[3:], "--no-sim" not in sys.argv[3:])))
        return
    md_path = None
    if "--markdown" in sys.argv:
        md_path = sys.argv[sys.argv.index("--markdown") + 1]

    exe = os.path.join(ROOT, "target", "release", "statebook")
    subprocess.run(["cargo", "build", "--release", "--quiet"], cwd=ROOT, check=True)
    tmp = tempfile.mkdtemp(prefix="statebook-compare-")
    inputs = os.path.join(tmp, "inputs.json")
    rounds = 1 if quick else 3
    if "--rounds" in sys.argv:
        rounds = max(1, int(sys.argv[sys.argv.index("--rounds") + 1]))
    env = dict(os.environ)
    removed = [v for v in BLAS_VARS if v in env]
    for v in BLAS_VARS:
        env.pop(v, None)
    per_round = []
    for k in range(rounds):
        sys.stderr.write(f"round {k + 1} of {rounds}\n")
        sb, ref = run_round(inputs, quick, env)
        per_round.append((sb, ref))
    # Start-up, both through the same subprocess call.
    trivial = os.path.join(tmp, "trivial.sbook")
    with open(trivial, "w") as fh:
        fh.write("let x = 1 + 1;\nprint(x);\n")
    st_sb = run_startup([exe, "run", trivial], quick, cwd=tmp)[0]
    st_py = run_startup([sys.executable, "-c", "import numpy, scipy.linalg, scipy.signal"], quick)[0]

    def build_rows(sb, ref):
        def sbget(name, n=None, **kw):
            for r in sb["results"]:
                if r.get("name") == name and (n is None or r.get("n") == n) and all(r.get(k) == v for k, v in kw.items()):
                    return r
            return None

        def refget(name, n=None, **kw):
            for r in ref["results"]:
                if r["name"] == name and (n is None or r["n"] == n) and all(r.get(k) == v for k, v in kw.items()):
                    return r
            return None

        rows = []  # (job, statebook s, reference s, reference name, target ratio or None)

        def add(job, s, r, refname, target):
            rows.append((job, s, r, refname, target))

        def thr(x):
            return f" (OpenBLAS threads: {x['blas_threads']})"

        add("start-up (trivial file vs python import)", st_sb, st_py, "python3 -c import numpy, scipy.linalg, scipy.signal", 1 / 20)
        for n in (10, 50, 200, 500):
            s, r = sbget("eigenvalues", n), refget("eigenvalues", n)
            add(f"eigenvalues n={n}", s and s["median_s"], r["median_s"], "numpy.linalg.eigvals" + thr(r), 1.0 if n <= 50 else 1.5 if n == 200 else None)
        for n in (10, 50, 200):
            s, r = sbget("expm", n), refget("expm", n)
            add(f"expm n={n}", s and s["median_s"], r["median_s"], "scipy.linalg.expm" + thr(r), 1.0 if n <= 50 else 1.5)
        for n in (10, 50, 200):
            s, r = sbget("lyapunov", n), refget("lyapunov", n)
            add(f"lyapunov n={n}", s and s["median_s"], r["median_s"], "solve_continuous_lyapunov" + thr(r), 1.0 if n <= 50 else 1.5)
        for n in (10, 50, 200):
            s, r = sbget("riccati", n), refget("riccati", n)
            add(f"riccati n={n}", s and s["median_s"], r["median_s"], "solve_continuous_are" + thr(r), 1.0 if n <= 50 else 1.5)
        for n in (10, 50, 200):
            s, r = sbget("freq_hessenberg", n), refget("freq_dense", n)
            add(f"freq 1000 pts n={n} (Hessenberg)", s and s["median_s"], r["median_s"], "numpy.linalg.solve per point" + thr(r), 1.0 if n <= 50 else 1.5)
            rb = refget("freq_dense_batched", n)
            add(f"freq 1000 pts n={n} (Hessenberg)", s and s["median_s"], rb["median_s"], "numpy.linalg.solve batched" + thr(rb), None)
            d = sbget("freq_dense", n)
            add(f"freq 1000 pts n={n} (Hessenberg vs own dense)", s and s["median_s"], d and d["median_s"], "statebook dense LU per point", 1 / 3 if n == 200 else None)
        for steps in (100_000, 1_000_000):
            loop = sbget("sim_reference_loop", 10, steps=steps)
            for sbname, refname, what in (("simulate", "lsim", "continuous, linear hold"),
                                          ("simulate_discrete", "dlsim", "discrete")):
                sim = sbget(sbname, 10, steps=steps)
                r = refget(refname, 10, steps=steps)
                job = f"simulate 10 states {steps:.0e} samples ({what})"
                add(job, sim and sim.get("median_s"), r["median_s"], f"scipy.signal.{refname}" + thr(r), 1 / 50)
                add(job, sim and sim.get("median_s"), loop and loop["median_s"], "reference loop (multiply-add limit)", 3.0)
        # The script layer (benches/kernels/script.rs): the same discrete simulation from
        # analysis text, t from linear_grid; growth of push; one small built-in per step.
        ssim = sbget("script_simulate_discrete", 10, steps=1_000_000)
        ksim = sbget("simulate_discrete", 10, steps=1_000_000)
        rd = refget("dlsim", 10, steps=1_000_000)
        job = "script simulate 10 states 1e+06 samples (discrete, t from linear_grid)"
        add(job, ssim and ssim["median_s"], rd["median_s"], "scipy.signal.dlsim" + thr(rd), 1 / 50)
        add(job, ssim and ssim["median_s"], ksim and ksim["median_s"], "statebook kernel job", 1.3)
        p5, p6 = sbget("script_push", 100_000), sbget("script_push", 1_000_000)
        add("script 1e6 push (vs 10 × 1e5 push: linear growth)", p6 and p6["median_s"],
            p5 and 10 * p5["median_s"], "10 × the 1e5-push job", 1.2)
        lc, lb = sbget("script_loop_call", 100_000), sbget("script_loop_bare", 100_000)
        add("script loop 1e5 steps calling A.get(0, 0)", lc and lc["median_s"], lb and lb["median_s"],
            "the same loop without the call", None)
        demo = sbget("demo_drive_shaft")
        add("demo drive-shaft-reduction end to end", demo and demo["median_s"], None, "—", None)
        return rows, sbget

    # Per job: medians over the rounds of each side and of the per-round ratio (each
    # round runs both sides within a few minutes, so slow drift on a shared machine
    # affects both), with the spread of the per-round ratios.
    tables = [build_rows(sb, ref) for sb, ref in per_round]
    sbget = tables[0][1]
    ref = per_round[0][1]

    def med(v):
        v = sorted(x for x in v if x is not None)
        return v[len(v) // 2] if v else None

    rows = []
    for i, (job, _, _, refname, target) in enumerate(tables[0][0]):
        col = [t[0][i] for t in tables]
        ss = [c[1] for c in col]
        rs = [c[2] for c in col]
        ratios = [a / b for a, b in zip(ss, rs) if a is not None and b]
        rows.append((job, med(ss), med(rs), refname, target, med(ratios), ratios))

    mach = machine()
    mac = sbget("mac_peak")
    head = [
        f"Machine: {mach['nproc']} cores, {mach['cpu']}; {mach['date']}; load average at the end {mach['load']:.1f}",
        f"Reference: Python {ref['python']}, numpy {ref['numpy']}, scipy {ref['scipy']}; BLAS {ref['blas']}",
        f"BLAS variables removed for the numpy run: {', '.join(removed) if removed else 'none were set'}",
    ]
    if mac:
        head.append(f"Multiply-add peak of this build (8 chains in L1): {mac['gmac_per_s']:.2f} G/s")
    lines = [
        "| job | statebook | reference | ratio | ratio per round | target | reference job |",
        "|---|---:|---:|---:|---:|---:|---|",
    ]
    for job, s, r, refname, target, ratio, ratios in rows:
        if target is None:
            tgt = ""
        elif ratio is None:
            tgt = "n/a"
        else:
            mark = "ok" if ratio <= target else "MISS"
            tgt = f"≤ {target:.3g} {mark}"
        lines.append(
            f"| {job} | {fmt_t(s) if s is not None else 'not available'} | {fmt_t(r)} | "
            f"{'' if ratio is None else f'{ratio:.3g}'} | "
            f"{' '.join(f'{x:.2g}' for x in ratios) if len(ratios) > 1 else ''} | {tgt} | {refname} |"
        )
    text = "\n".join(head) + "\n\n" + "\n".join(lines) + "\n"
    print(text)
    if md_path:
        with open(md_path, "w") as fh:
            fh.write("# Benchmark results\n\n")
            fh.write("Produced by `python3 benches/compare.py --markdown benches/RESULTS.md`. "
                     f"{len(per_round)} rounds, each running statebook's kernels and then the "
                     "reference on the same inputs; times are medians over the rounds, ratio "
                     "= statebook / reference, the median of the per-round ratios (below 1: "
                     "statebook faster).\n\n")
            fh.write(text)


if __name__ == "__main__":
    main()
