//! Kernel benchmarks: medians of repeated runs of statebook's numerical kernels, start-up
//! and one demo analysis end to end. Plain harness (`harness = false`).
//!
//! ```text
//! cargo bench --bench kernels                      # human-readable table
//! cargo bench --bench kernels -- --json            # one JSON document on stdout
//! cargo bench --bench kernels -- --inputs F.json   # also write every input matrix to F
//! cargo bench --bench kernels -- --quick           # fewer repeats (smoke test)
//! cargo bench --bench kernels -- --only eig,expm   # only jobs whose name starts so
//! cargo bench --bench kernels -- --n 50,200         # only these sizes
//! cargo bench --bench kernels -- --only script      # the script-layer jobs (kernels/script.rs)
//! ```
//!
//! Inputs are seeded (splitmix64, Box–Muller normals) and well conditioned:
//! - eigenvalues: `A` with N(0, 1) entries;
//! - expm: `A = G/√n` (spectral radius ≈ 1, ‖A‖₁ ≈ 0.8·√n, so the [13/13] branch with a
//!   few squarings at n = 200);
//! - Lyapunov `A X + X Aᵀ + Q = 0`: stable `A = G/√n − 2I` (eigenvalues within ≈ 1 of −2),
//!   `Q = M Mᵀ/n + I`;
//! - Riccati `AᵀX + XA − XBR⁻¹BᵀX + Q = 0`: the same stable `A`, `B` n×m with
//!   m = max(2, n/10), `Q = I`, `R = I`;
//! - frequency response: the stable `A` with 2 inputs and 2 outputs, 1000 frequencies
//!   logarithmically spaced over 10⁻² … 10³ rad/s;
//! - simulation: a 10-state stable model (1 input, 1 output), zero-order hold at
//!   dt = 0.01 s, input `u_k = sin(0.01·k)`.
//!
//! With `--inputs F`, those matrices are written to F (row-major nested lists) so that
//! `benches/compare.py` runs scipy on exactly the same numbers.

use nalgebra::{Complex, DMatrix};
use serde_json::{json, Map, Value};
use statebook::numeric::design::lyapunov::solve_lyapunov;
use statebook::numeric::design::riccati::solve_riccati;
use statebook::numeric::freq::response::{dense_point, FrequencyEvaluator};
use statebook::numeric::linalg::{eigen, expm::expm};
use statebook::numeric::lti::system::StateSpace;
use statebook::numeric::time::simulate::{simulate, SimulationOptions};
use std::hint::black_box;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

#[path = "kernels/script.rs"]
mod script;

/// splitmix64 with Box–Muller normals (the generator of the crate's tests).
struct Rng(u64);

impl Rng {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }
    fn normal(&mut self) -> f64 {
        let u1 = self.uniform().max(1e-300);
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
    }
    fn matrix(&mut self, r: usize, c: usize) -> DMatrix<f64> {
        // Row-major fill so that the numbers do not depend on the storage order.
        let mut m = DMatrix::zeros(r, c);
        for i in 0..r {
            for j in 0..c {
                m[(i, j)] = self.normal();
            }
        }
        m
    }
}

fn stable(n: usize, seed: u64) -> DMatrix<f64> {
    let g = Rng(seed).matrix(n, n) / (n as f64).sqrt();
    g - DMatrix::identity(n, n) * 2.0
}

fn rows(m: &DMatrix<f64>) -> Value {
    Value::Array(
        (0..m.nrows())
            .map(|i| Value::Array((0..m.ncols()).map(|j| json!(m[(i, j)])).collect()))
            .collect(),
    )
}

struct Opts {
    json: bool,
    quick: bool,
    inputs: Option<PathBuf>,
    only: Vec<String>,
    sizes: Vec<usize>,
}

struct Bench {
    opts: Opts,
    results: Vec<Value>,
    inputs: Map<String, Value>,
}

/// Median wall time of `f`, with enough inner repetitions that one sample lasts ≥ 2 ms and
/// enough samples (5 … 41) to spend about `budget` seconds.
fn measure<F: FnMut()>(quick: bool, mut f: F) -> (Duration, usize, usize) {
    let t0 = Instant::now();
    f(); // warm-up (and first estimate)
    let once = t0.elapsed().max(Duration::from_nanos(50));
    let inner = ((2e-3 / once.as_secs_f64()).ceil() as usize).clamp(1, 100_000);
    let budget = if quick { 0.3 } else { 2.0 };
    let per_sample = once.as_secs_f64() * inner as f64;
    let least = if quick || per_sample > 0.3 { 3 } else { 7 };
    let samples = ((budget / per_sample) as usize).clamp(least, 41) | 1;
    let mut v: Vec<Duration> = (0..samples)
        .map(|_| {
            let t = Instant::now();
            for _ in 0..inner {
                f();
            }
            t.elapsed() / inner as u32
        })
        .collect();
    v.sort();
    (v[v.len() / 2], samples, inner)
}

impl Bench {
    fn wanted_n(&self, name: &str, n: usize) -> bool {
        self.wanted(name) && (self.opts.sizes.is_empty() || self.opts.sizes.contains(&n))
    }

    fn wanted(&self, name: &str) -> bool {
        self.opts.only.is_empty() || self.opts.only.iter().any(|p| name.starts_with(p.as_str()))
    }

    fn record(&mut self, name: &str, n: usize, t: (Duration, usize, usize), extra: Value) {
        let (med, samples, inner) = t;
        if !self.opts.json {
            let n_s = if n > 0 {
                format!("n = {n}")
            } else {
                String::new()
            };
            let x = if extra.is_null() {
                String::new()
            } else {
                format!("  {extra}")
            };
            println!(
                "{name:<28} {n_s:<9} median {:>12.4} ms   ({samples}×{inner}){x}",
                med.as_secs_f64() * 1e3
            );
        }
        let mut o = json!({"name": name, "n": n, "median_s": med.as_secs_f64(),
                           "samples": samples, "inner": inner});
        if let Value::Object(e) = extra {
            if let Value::Object(m) = &mut o {
                m.extend(e);
            }
        }
        self.results.push(o);
    }

    fn unavailable(&mut self, name: &str, why: &str) {
        if !self.opts.json {
            println!("{name:<28} not available: {why}");
        }
        self.results
            .push(json!({"name": name, "available": false, "note": why}));
    }

    fn input(&mut self, key: String, v: impl FnOnce() -> Value) {
        if self.opts.inputs.is_some() {
            self.inputs.insert(key, v());
        }
    }
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let mut opts = Opts {
        json: false,
        quick: false,
        inputs: None,
        only: Vec::new(),
        sizes: Vec::new(),
    };
    let mut it = args.iter();
    while let Some(a) = it.next() {
        match a.as_str() {
            "--json" => opts.json = true,
            "--quick" => opts.quick = true,
            "--inputs" => opts.inputs = it.next().map(PathBuf::from),
            "--only" => {
                opts.only = it
                    .next()
                    .map(|s| s.split(',').map(str::to_string).collect())
                    .unwrap_or_default()
            }
            "--n" => {
                opts.sizes = it
                    .next()
                    .map(|s| s.split(',').filter_map(|x| x.parse().ok()).collect())
                    .unwrap_or_default()
            }
            _ => {} // cargo passes --bench
        }
    }
    let mut b = Bench {
        opts,
        results: Vec::new(),
        inputs: Map::new(),
    };
    let q = b.opts.quick;

    // Eigenvalues.
    for &n in &[10usize, 50, 200, 500] {
        let a = Rng(100 + n as u64).matrix(n, n);
        b.input(format!("eig_{n}"), || rows(&a));
        if b.wanted_n("eigenvalues", n) {
            let t = measure(q, || {
                black_box(eigen::eigenvalues(black_box(&a)).ok());
            });
            b.record("eigenvalues", n, t, Value::Null);
        }
    }
    // Matrix exponential.
    for &n in &[10usize, 50, 200] {
        let a = Rng(200 + n as u64).matrix(n, n) / (n as f64).sqrt();
        b.input(format!("expm_{n}"), || rows(&a));
        if b.wanted_n("expm", n) {
            let t = measure(q, || {
                black_box(expm(black_box(&a)).ok());
            });
            b.record("expm", n, t, Value::Null);
        }
    }
    // Continuous Lyapunov.
    for &n in &[10usize, 50, 200] {
        let a = stable(n, 300 + n as u64);
        let m = Rng(350 + n as u64).matrix(n, n);
        let qm = &m * m.transpose() / n as f64 + DMatrix::identity(n, n);
        b.input(format!("lyap_A_{n}"), || rows(&a));
        b.input(format!("lyap_Q_{n}"), || rows(&qm));
        if b.wanted_n("lyapunov", n) {
            let x = solve_lyapunov(&a, &qm).expect("Lyapunov input is well posed");
            let res = (&a * &x + &x * a.transpose() + &qm).norm() / qm.norm();
            let t = measure(q, || {
                black_box(solve_lyapunov(black_box(&a), black_box(&qm)).ok());
            });
            b.record("lyapunov", n, t, json!({"residual": res}));
        }
    }
    // Continuous Riccati.
    for &n in &[10usize, 50, 200] {
        let m = (n / 10).max(2);
        let a = stable(n, 400 + n as u64);
        let bm = Rng(450 + n as u64).matrix(n, m);
        let qm = DMatrix::<f64>::identity(n, n);
        let r = DMatrix::<f64>::identity(m, m);
        b.input(format!("ric_A_{n}"), || rows(&a));
        b.input(format!("ric_B_{n}"), || rows(&bm));
        if b.wanted_n("riccati", n) {
            let sol = solve_riccati(&a, &bm, &qm, &r).expect("Riccati input is well posed");
            let t = measure(q, || {
                black_box(solve_riccati(black_box(&a), &bm, &qm, &r).ok());
            });
            b.record("riccati", n, t, json!({"residual": sol.residual, "m": m}));
        }
    }
    // Frequency response at 1000 points.
    let w: Vec<f64> = (0..1000)
        .map(|k| 10f64.powf(-2.0 + 5.0 * k as f64 / 999.0))
        .collect();
    b.input("freq_w".into(), || json!(w));
    for &n in &[10usize, 50, 200] {
        let a = stable(n, 500 + n as u64);
        let mut rng = Rng(550 + n as u64);
        let (bm, cm) = (rng.matrix(n, 2), rng.matrix(2, n));
        b.input(format!("freq_A_{n}"), || rows(&a));
        b.input(format!("freq_B_{n}"), || rows(&bm));
        b.input(format!("freq_C_{n}"), || rows(&cm));
        let sys = StateSpace::new(a, bm, cm, DMatrix::zeros(2, 2), 0.0).expect("valid model");
        if b.wanted_n("freq", n) {
            let t = measure(q, || {
                let ev = FrequencyEvaluator::new(black_box(&sys)).expect("valid model");
                for &x in &w {
                    black_box(ev.at_frequency(x));
                }
            });
            b.record("freq_hessenberg", n, t, json!({"points": w.len()}));
            // The dense solve at n = 200 takes seconds per 1000 points: time every 10th
            // point and scale to 1000.
            let stride = if n >= 200 { 10 } else { 1 };
            let sub: Vec<f64> = w.iter().step_by(stride).copied().collect();
            let (t, s, i) = measure(q, || {
                for &x in &sub {
                    black_box(dense_point(black_box(&sys), Complex::new(0.0, x)));
                }
            });
            let scaled = t * (w.len() as u32) / (sub.len() as u32);
            b.record(
                "freq_dense",
                n,
                (scaled, s, i),
                json!({"points": w.len(), "points_timed": sub.len()}),
            );
        }
    }
    // Simulation, and a reference loop measuring the multiply-add limit for the same model.
    simulation(&mut b);

    // Start-up and the demo, through the release binary.
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let exe = root.join("target/release/statebook");
    if b.wanted("startup") || b.wanted("demo") {
        if exe.exists() {
            let dir = std::env::temp_dir().join("statebook-bench");
            let _ = std::fs::create_dir_all(&dir);
            let file = dir.join("trivial.sbook");
            let _ = std::fs::write(&file, "let x = 1 + 1;\nprint(x);\n");
            let run = |f: &Path| {
                let out = std::process::Command::new(&exe)
                    .arg("run")
                    .arg(f)
                    .current_dir(&dir)
                    .output();
                matches!(out, Ok(o) if o.status.success())
            };
            if b.wanted("startup") {
                let ok = run(&file);
                let t = measure(q, || {
                    run(&file);
                });
                b.record("startup", 0, t, json!({"ok": ok}));
            }
            let demo = root.join("demo-scripts/drive-shaft-reduction.sbook");
            if b.wanted("demo") {
                let ok = run(&demo);
                let t = measure(q, || {
                    run(&demo);
                });
                b.record("demo_drive_shaft", 0, t, json!({"ok": ok}));
            }
        } else {
            b.unavailable(
                "startup",
                "build the release binary first (cargo build --release)",
            );
        }
    }

    if let Some(p) = &b.opts.inputs {
        let doc = Value::Object(b.inputs.clone());
        if let Err(e) = std::fs::write(p, doc.to_string()) {
            eprintln!("cannot write {}: {e}", p.display());
        }
    }
    if b.opts.json {
        println!("{}", json!({"suite": "kernels", "results": b.results}));
    }
}

/// The 10-state simulation model and the multiply-add reference loops.
fn simulation(b: &mut Bench) {
    let n = 10;
    let dt = 0.01;
    let a = stable(n, 600);
    let mut rng = Rng(650);
    let (bm, cm) = (rng.matrix(n, 1), rng.matrix(1, n));
    // Zero-order hold by one exponential of [[A, B], [0, 0]]·dt (Van Loan 1978).
    let mut blk = DMatrix::zeros(n + 1, n + 1);
    blk.view_mut((0, 0), (n, n)).copy_from(&(&a * dt));
    blk.view_mut((0, n), (n, 1)).copy_from(&(&bm * dt));
    let e = expm(&blk).expect("finite");
    let ad = e.view((0, 0), (n, n)).into_owned();
    let bd = e.view((0, n), (n, 1)).into_owned();
    b.input("sim_A".into(), || rows(&a));
    b.input("sim_B".into(), || rows(&bm));
    b.input("sim_C".into(), || rows(&cm));
    b.input("sim_Ad".into(), || rows(&ad));
    b.input("sim_Bd".into(), || rows(&bd));
    b.input("sim_dt".into(), || json!(dt));
    script::script_layer(b, &ad, &bd, &cm, dt);
    if !b.wanted("sim") && !b.wanted("mac") {
        return;
    }
    // statebook's own simulation, outputs only (the default for long runs): the
    // continuous model with its default linear hold (scipy's lsim interpolates linearly
    // too) and the discrete model stepped once per sample (against dlsim).
    let sys = StateSpace::new(a.clone(), bm.clone(), cm.clone(), DMatrix::zeros(1, 1), 0.0)
        .expect("valid model");
    let sysd = StateSpace::new(ad.clone(), bd.clone(), cm.clone(), DMatrix::zeros(1, 1), dt)
        .expect("valid");
    for &steps in &[100_000usize, 1_000_000] {
        let t: Vec<f64> = (0..steps).map(|k| k as f64 * dt).collect();
        let u = DMatrix::from_fn(steps, 1, |k, _| (0.01 * k as f64).sin());
        let options = SimulationOptions {
            hold: None,
            keep_states: false,
        };
        for (name, model) in [("simulate", &sys), ("simulate_discrete", &sysd)] {
            let mut resident = 0usize;
            let tm = measure(b.opts.quick, || {
                let r = simulate(model, &t, &u, None, options).expect("simulation");
                resident = r.y.len() + r.x.as_ref().map_or(0, |x| x.len());
                black_box(r.y[(steps - 1, 0)]);
            });
            b.record(
                name,
                n,
                tm,
                json!({"steps": steps, "stored_values": resident}),
            );
        }
    }
    // Row-major copies for the reference loop.
    let adr: Vec<[f64; 10]> = (0..n)
        .map(|i| std::array::from_fn(|j| ad[(i, j)]))
        .collect();
    let bdv: Vec<f64> = bd.iter().copied().collect();
    let cv: Vec<f64> = cm.iter().copied().collect();
    let macs_per_step = (n * n + n + n + 1) as f64;
    for &steps in &[100_000usize, 1_000_000] {
        let u: Vec<f64> = (0..steps).map(|k| (0.01 * k as f64).sin()).collect();
        let mut y = vec![0.0; steps];
        let t = measure(b.opts.quick, || {
            let mut x = [0.0f64; 10];
            for k in 0..steps {
                let uk = u[k];
                let mut yk = 0.0;
                for j in 0..10 {
                    yk += cv[j] * x[j];
                }
                y[k] = yk; // D = 0 (one multiply-add counted anyway)
                let mut xn = [0.0f64; 10];
                for i in 0..10 {
                    let r = &adr[i];
                    let mut s = bdv[i] * uk;
                    for j in 0..10 {
                        s += r[j] * x[j];
                    }
                    xn[i] = s;
                }
                x = xn;
            }
            black_box(&y);
        });
        let rate = macs_per_step * steps as f64 / t.0.as_secs_f64() / 1e9;
        b.record(
            "sim_reference_loop",
            n,
            t,
            json!({"steps": steps, "gmac_per_s": rate}),
        );
    }
    // Peak multiply-add throughput of this build on in-cache data (8 independent chains).
    let xs: Vec<f64> = (0..1024).map(|k| 1.0 + k as f64 * 1e-6).collect();
    let ys: Vec<f64> = (0..1024).map(|k| 1.0 - k as f64 * 1e-6).collect();
    let reps = 2000;
    let t = measure(b.opts.quick, || {
        let mut acc = [0.0f64; 8];
        for _ in 0..reps {
            for (cx, cy) in xs.chunks_exact(8).zip(ys.chunks_exact(8)) {
                for l in 0..8 {
                    acc[l] += cx[l] * cy[l];
                }
            }
        }
        black_box(acc);
    });
    let rate = (reps * 1024) as f64 / t.0.as_secs_f64() / 1e9;
    b.record("mac_peak", 0, t, json!({"gmac_per_s": rate}));
}
