//! Design built-ins: matrix equations (`solve_lyapunov*`, `solve_riccati*`), pole
//! assignment, LQ regulator and estimator, state feedback, closed loops and the model
//! operators `* + -`. The numerics are `crate::numeric::design` (Lyapunov equations in
//! `design::lyapunov`).

use crate::numeric::design::{compensator, interconnect, lq, lyapunov, pole_assignment, riccati};
use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::tf::TransferFunction as Tf;
use crate::numeric::NumError;
use crate::script::convert::{
    complex_array, fail, matrix_value, system_value, tf_value, to_complex_vec, type_name, Rr,
};
use crate::script::declare::{Call, Model, Models, Param};
use crate::script::docs::Doc;
use crate::script::types::{Matrix, System, TransferFunction};
use nalgebra::DMatrix;
use rhai::{Dynamic, Engine, Map, FLOAT, INT};

/// The help page of the model operators, registered by hand in [`register_operators`]
/// (the named built-ins are declared in `BUILTINS`).
pub const DOCS: &[Doc] = &[
    Doc { name: "*", family: "design",
        usage: "g * h → System | TransferFunction\ng + h\ng - h\n-g\nk * g",
        summary: "model operators: g * h series (h first, then g); g + h, g - h parallel; -g",
        details: "Operands: System, TransferFunction, a number or a Matrix (static gains). \
                  g * h needs h's outputs to match g's inputs; g ± h needs equal sizes; a \
                  number k in k * g scales every output, in g + k it is a 1×1 static gain. \
                  Models must share their sample time (continuous with continuous). Two \
                  transfer functions (or a transfer function and a number) give a \
                  TransferFunction by polynomial arithmetic, without cancelling common \
                  factors; any System operand gives a System whose states are g's then h's.",
        example: "let c = transfer_function([2, 1], [1, 0]);   // PI controller\nlet p = transfer_function([1], [1, 3]);\nlet loop_gain = c * p;" },
];

/// Condition number of the closed-loop eigenvectors above which `assign_poles` warns.
const POLE_CONDITION_WARNING: f64 = 1e5;

/// Condition number of `U₁₁` above which the Riccati solvers warn.
const RICCATI_CONDITION_WARNING: f64 = 1e8;

// ------------------------------------------------------------------ operators

/// An operand of a model operator.
enum Operand {
    Ss(StateSpace),
    Tf(Tf),
    /// A static gain matrix (takes the sample time of the other operand).
    Gain(DMatrix<f64>),
    /// A plain number.
    Scalar(f64),
}

impl Operand {
    fn of(v: &Dynamic) -> Option<Operand> {
        if let Some(s) = v.read_lock::<System>() {
            return Some(Operand::Ss(s.0.clone()));
        }
        if let Some(t) = v.read_lock::<TransferFunction>() {
            return Some(Operand::Tf(t.0.clone()));
        }
        if let Some(m) = v.read_lock::<Matrix>() {
            return Some(Operand::Gain((*m.0).clone()));
        }
        if let Ok(x) = v.as_float() {
            return Some(Operand::Scalar(x));
        }
        v.as_int().ok().map(|i| Operand::Scalar(i as f64))
    }

    fn dt(&self) -> Option<f64> {
        match self {
            Operand::Ss(s) => Some(s.dt),
            Operand::Tf(t) => Some(t.dt),
            _ => None,
        }
    }

    /// As a transfer function, when it is one or a scalar (1×1) gain.
    fn as_tf(&self, dt: f64) -> Option<Result<Tf, NumError>> {
        match self {
            Operand::Tf(t) => Some(Ok(t.clone())),
            Operand::Scalar(k) => Some(Tf::new(&[*k], &[1.0], dt)),
            Operand::Gain(m) if m.nrows() == 1 && m.ncols() == 1 => {
                Some(Tf::new(&[m[(0, 0)]], &[1.0], dt))
            }
            _ => None,
        }
    }

    /// As a state-space model (a gain becomes a static model with sample time `dt`).
    fn as_ss(&self, dt: f64) -> Result<StateSpace, NumError> {
        match self {
            Operand::Ss(s) => Ok(s.clone()),
            Operand::Tf(t) => crate::numeric::lti::realize::from_transfer_function(t),
            Operand::Gain(m) => static_gain(m.clone(), dt),
            Operand::Scalar(k) => static_gain(DMatrix::from_element(1, 1, *k), dt),
        }
    }
}

fn static_gain(d: DMatrix<f64>, dt: f64) -> Result<StateSpace, NumError> {
    let (p, m) = (d.nrows(), d.ncols());
    StateSpace::new(
        DMatrix::zeros(0, 0),
        DMatrix::zeros(0, m),
        DMatrix::zeros(p, 0),
        d,
        dt,
    )
}

#[derive(Clone, Copy)]
enum Op {
    Series,
    Add,
    Subtract,
}

/// `a op b` for two operands of which at least one is a model.
fn combine(op: Op, a: &Dynamic, b: &Dynamic) -> Rr<Dynamic> {
    let sym = match op {
        Op::Series => "*",
        Op::Add => "+",
        Op::Subtract => "-",
    };
    let (Some(x), Some(y)) = (Operand::of(a), Operand::of(b)) else {
        return Err(fail(format!(
            "g {sym} h: cannot combine {} and {}",
            type_name(a),
            type_name(b)
        )));
    };
    let dt = x.dt().or(y.dt()).unwrap_or(0.0);
    let err = |e: NumError| fail(e.to_string());
    // A plain number times a model: a gain on every output (any size).
    if let Op::Series = op {
        match (&x, &y) {
            (Operand::Scalar(k), Operand::Tf(t)) | (Operand::Tf(t), Operand::Scalar(k)) => {
                return t.scaled(*k).map(tf_value).map_err(err);
            }
            (Operand::Scalar(k), Operand::Ss(s)) | (Operand::Ss(s), Operand::Scalar(k)) => {
                return interconnect::scale(s, *k).map(system_value).map_err(err);
            }
            _ => {}
        }
    }
    if let (Some(g), Some(h)) = (x.as_tf(dt), y.as_tf(dt)) {
        let (g, h) = (g.map_err(err)?, h.map_err(err)?);
        let r = match op {
            Op::Series => g.series(&h),
            Op::Add => g.parallel(&h, 1.0),
            Op::Subtract => g.parallel(&h, -1.0),
        };
        return r.map(tf_value).map_err(err);
    }
    let (g, h) = (x.as_ss(dt).map_err(err)?, y.as_ss(dt).map_err(err)?);
    let r = match op {
        Op::Series => interconnect::series(&g, &h),
        Op::Add => interconnect::parallel(&g, &h, interconnect::Sign::Plus),
        Op::Subtract => interconnect::parallel(&g, &h, interconnect::Sign::Minus),
    };
    r.map(system_value).map_err(err)
}

/// The forward model of `close_loop`: a System or a TransferFunction (kept as one, so
/// that two transfer functions give a transfer function).
struct Forward(Operand);

impl Param for Forward {
    const KIND: &'static str = "System | TransferFunction";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        Operand::of(&v)
            .filter(|o| matches!(o, Operand::Ss(_) | Operand::Tf(_)))
            .map(Forward)
            .ok_or_else(|| {
                call.fail(format_args!(
                    "{arg} must be a System or a TransferFunction, found {}",
                    type_name(&v)
                ))
            })
    }
}

/// The feedback path of `close_loop`: a model or a static gain (number or Matrix).
struct FeedbackPath(Operand);

impl Param for FeedbackPath {
    const KIND: &'static str = "System | TransferFunction | number | Matrix";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        Operand::of(&v).map(FeedbackPath).ok_or_else(|| {
            call.fail(format_args!(
                "{arg} must be a System, TransferFunction, number or Matrix, found {}",
                type_name(&v)
            ))
        })
    }
}

/// Poles to assign: an array of numbers or Complex values.
struct Poles(Vec<nalgebra::Complex<f64>>);

impl Param for Poles {
    const KIND: &'static str = "[number | Complex]";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        to_complex_vec(&v, call.name, arg).map(Poles)
    }
}

/// The loop around `g` with feedback path `h` (unity feedback without one).
fn close_loop(call: &Call, g: Operand, h: Option<Operand>) -> Rr<Dynamic> {
    let dt = g.dt().unwrap_or(0.0);
    if let Operand::Tf(t) = &g {
        let ht = match &h {
            None => Some(Tf::new(&[1.0], &[1.0], dt).map_err(call.num())?),
            Some(h) => h.as_tf(dt).transpose().map_err(call.num())?,
        };
        if let Some(ht) = ht {
            return t.negative_feedback(&ht).map(tf_value).map_err(call.num());
        }
    }
    let gs = g.as_ss(dt).map_err(call.num())?;
    let r = match h {
        None => interconnect::unity_feedback(&gs),
        Some(h) => {
            let hs = h.as_ss(dt).map_err(call.num())?;
            interconnect::feedback(&gs, &hs, interconnect::Sign::Minus)
        }
    };
    r.map(system_value).map_err(call.num())
}

fn negated(g: &Dynamic) -> Rr<Dynamic> {
    match Operand::of(g) {
        Some(Operand::Ss(s)) => interconnect::negate(&s)
            .map(system_value)
            .map_err(|e| fail(e.to_string())),
        Some(Operand::Tf(t)) => t
            .scaled(-1.0)
            .map(tf_value)
            .map_err(|e| fail(e.to_string())),
        _ => Err(fail(format!("-g: cannot negate {}", type_name(g)))),
    }
}

fn register_operators(engine: &mut Engine) {
    macro_rules! ops {
        ($a:ty, $b:ty) => {
            engine.register_fn("*", |a: $a, b: $b| {
                combine(Op::Series, &Dynamic::from(a), &Dynamic::from(b))
            });
            engine.register_fn("+", |a: $a, b: $b| {
                combine(Op::Add, &Dynamic::from(a), &Dynamic::from(b))
            });
            engine.register_fn("-", |a: $a, b: $b| {
                combine(Op::Subtract, &Dynamic::from(a), &Dynamic::from(b))
            });
        };
    }
    ops!(System, System);
    ops!(System, TransferFunction);
    ops!(TransferFunction, System);
    ops!(TransferFunction, TransferFunction);
    ops!(System, FLOAT);
    ops!(FLOAT, System);
    ops!(System, INT);
    ops!(INT, System);
    ops!(TransferFunction, FLOAT);
    ops!(FLOAT, TransferFunction);
    ops!(TransferFunction, INT);
    ops!(INT, TransferFunction);
    ops!(System, Matrix);
    ops!(Matrix, System);
    ops!(TransferFunction, Matrix);
    ops!(Matrix, TransferFunction);
    engine.register_fn("-", |g: System| negated(&Dynamic::from(g)));
    engine.register_fn("-", |g: TransferFunction| negated(&Dynamic::from(g)));
}

/// Registers the model operators (the named design built-ins are declared in
/// `BUILTINS`).
pub fn register(engine: &mut Engine) {
    register_operators(engine);
}

/// A warning when the Riccati solution is ill-determined, or when an ill-conditioned `R`
/// costs digits: the solvers form `G = BR⁻¹Bᵀ`, whose relative error is about
/// `ε·cond₂(R)`, and `X` inherits it (measured: `R` of condition 1e12, rotated, gives `X`
/// with relative error 3e-6 against a 80-digit Newton solution).
fn riccati_warning(call: &Call, cond: f64, r: &DMatrix<f64>) {
    if cond > RICCATI_CONDITION_WARNING {
        call.warn(format_args!(
            "the solution is ill-determined (condition of the invariant-subspace basis \
             {cond:.2e}); small changes in the data may change X a lot"
        ));
    }
    if let Ok(sv) = crate::numeric::linalg::dense::singular_values(r) {
        let (hi, lo) = (sv.first().copied(), sv.last().copied());
        if let (Some(hi), Some(lo)) = (hi, lo) {
            let r_cond = if lo > 0.0 { hi / lo } else { f64::INFINITY };
            if r_cond > RICCATI_CONDITION_WARNING {
                call.warn(format_args!(
                    "R has condition {r_cond:.2e}: forming B R⁻¹ Bᵀ may cost up to about \
                     {:.0} of the 16 significant digits of X",
                    r_cond.log10().min(16.0)
                ));
            }
        }
    }
}

crate::builtins! {
    /// models with independent inputs and outputs side by side (block diagonal)
    ///
    /// models: an array of models (Systems, TransferFunctions or grids) of one time
    /// domain. The inputs are those of the first model, then of the second, …; likewise
    /// the outputs and the states. Signal names are kept; when some models name their
    /// signals, the unnamed ones are called u<k>, y<k>, x<k> by their position.
    ///
    /// example:
    ///     let drive = transfer_function([3], [1, 2]);
    ///     let both = side_by_side([plant, drive]);
    ///     both.input_count   // 2
    #[family = "design"]
    fn side_by_side(call, models: Models) -> Dynamic as "System" {
        interconnect::side_by_side(&models.0)
            .map(system_value)
            .map_err(call.num())
    }

    /// the solution X of the continuous Lyapunov equation A X + X Aᵀ + Q = 0
    ///
    /// A n×n, Q n×n symmetric. Unique when no two eigenvalues of A add up to 0; for a
    /// stable A and Q ⪰ 0, X ⪰ 0 (e.g. the controllability Gramian for Q = B Bᵀ).
    /// Bartels–Stewart method on the real Schur form.
    ///
    /// example:
    ///     solve_lyapunov([[-2]], [[4]])   // [[1]]: −2x − 2x + 4 = 0
    #[family = "design"]
    fn solve_lyapunov(call, A: DMatrix<f64>, Q: DMatrix<f64>) -> Matrix {
        lyapunov::solve_lyapunov(&A, &Q)
            .map(Matrix::from)
            .map_err(call.num())
    }

    /// the solution X of the discrete Lyapunov equation A X Aᵀ − X + Q = 0
    ///
    /// A n×n, Q n×n symmetric. Unique when no product of two eigenvalues of A is 1.
    ///
    /// example:
    ///     solve_lyapunov_discrete([[0.5]], [[3]])   // [[4]]: 0.25x − x + 3 = 0
    #[family = "design"]
    fn solve_lyapunov_discrete(call, A: DMatrix<f64>, Q: DMatrix<f64>) -> Matrix {
        lyapunov::solve_lyapunov_discrete(&A, &Q)
            .map(Matrix::from)
            .map_err(call.num())
    }

    /// the stabilizing solution X of the continuous Riccati equation AᵀX + XA − XBR⁻¹BᵀX + Q = 0
    ///
    /// A n×n, B n×m, Q n×n symmetric positive semidefinite, R m×m symmetric positive
    /// definite. X makes A − BR⁻¹BᵀX stable; when none exists the error names the
    /// uncontrollable or unobservable mode. Schur method (Laub 1979) plus one Newton step;
    /// warns when X is ill-determined. See lq_regulator for the gain and poles.
    ///
    /// example:
    ///     solve_riccati([[0, 1], [0, 0]], [[0], [1]], identity(2), [[1]])
    #[family = "design"]
    fn solve_riccati(call, A: DMatrix<f64>, B: DMatrix<f64>, Q: DMatrix<f64>, R: DMatrix<f64>)
        -> Matrix
    {
        let sol = riccati::solve_riccati(&A, &B, &Q, &R).map_err(call.num())?;
        riccati_warning(&call, sol.u11_condition, &R);
        Ok(Matrix::from(sol.x))
    }

    /// the stabilizing solution X of the discrete Riccati equation AᵀXA − X − AᵀXB(R + BᵀXB)⁻¹BᵀXA + Q = 0
    ///
    /// Shapes and conditions as solve_riccati; X makes A − BK Schur-stable with
    /// K = (R + BᵀXB)⁻¹BᵀXA. Structure-preserving doubling plus Newton steps.
    ///
    /// example:
    ///     solve_riccati_discrete([[1, 0.1], [0, 1]], [[0], [0.1]], identity(2), [[1]])
    #[family = "design"]
    fn solve_riccati_discrete(
        call,
        A: DMatrix<f64>,
        B: DMatrix<f64>,
        Q: DMatrix<f64>,
        R: DMatrix<f64>,
    ) -> Matrix {
        let sol = riccati::solve_riccati_discrete(&A, &B, &Q, &R).map_err(call.num())?;
        riccati_warning(&call, sol.u11_condition, &R);
        Ok(Matrix::from(sol.x))
    }

    /// a state-feedback gain K with eig(A − B K) = poles
    ///
    /// poles: an array of exactly n numbers or Complex values, closed under conjugation
    /// (each complex pole with its conjugate). (A, B) must be controllable. One input:
    /// orthogonal deflation (Miminis & Paige 1982); several inputs: the robust method of
    /// Kautsky, Nichols & Van Dooren 1985, which keeps the closed-loop eigenvectors well
    /// conditioned. Warns when the eigenvector condition number exceeds 1e5: the placed
    /// poles are then sensitive to small model errors. Apply K with with_state_feedback.
    ///
    /// example:
    ///     let K = assign_poles(plant, [complex(-1, 1), complex(-1, -1)]);
    #[family = "design"]
    fn assign_poles(call, sys: Model, poles: Poles) -> Matrix {
        let r = pole_assignment::assign_poles(&sys.a, &sys.b, &poles.0).map_err(call.num())?;
        if r.eigenvector_condition > POLE_CONDITION_WARNING {
            call.warn(format_args!(
                "the closed-loop eigenvector matrix has condition number {:.2e}; the placed \
                 poles are sensitive to small model errors\nhint: move the poles apart or \
                 less far from the open-loop ones",
                r.eigenvector_condition
            ));
        }
        Ok(Matrix::from(r.gain))
    }

    /// the linear-quadratic state-feedback regulator u = −K x
    ///
    /// Minimises ∫ (xᵀQx + uᵀRu) dt (discrete: the sum). Q n×n symmetric ⪰ 0, R m×m
    /// symmetric ≻ 0. gain: K (m×n); riccati: the stabilizing Riccati solution X (cost
    /// x₀ᵀXx₀); closed_loop_poles: eig(A − BK). A discrete model gets the discrete
    /// regulator.
    ///
    /// example:
    ///     let lq = lq_regulator(plant, identity(2), [[1]]);
    ///     lq.gain
    #[family = "design"]
    fn lq_regulator(call, sys: Model, Q: DMatrix<f64>, R: DMatrix<f64>)
        -> Map as "#{ gain, riccati, closed_loop_poles }"
    {
        let lq = lq::lq_regulator(&sys, &Q, &R).map_err(call.num())?;
        let mut m = Map::new();
        m.insert("gain".into(), matrix_value(lq.gain));
        m.insert("riccati".into(), matrix_value(lq.riccati));
        m.insert(
            "closed_loop_poles".into(),
            Dynamic::from_array(complex_array(&lq.closed_loop_poles)),
        );
        Ok(m)
    }

    /// the steady-state Kalman estimator gain L for process noise W and sensor noise V
    ///
    /// Noise model x' = Ax + Bu + w, y = Cx + Du + v with cov w = W (n×n, ⪰ 0) and
    /// cov v = V (p×p, ≻ 0). Estimator x̂' = Ax̂ + Bu + L(y − Cx̂ − Du). gain: L (n×p);
    /// covariance: the steady error covariance P; estimator_poles: eig(A − LC). Discrete
    /// models: predictor form (P the a priori covariance).
    ///
    /// example:
    ///     let kf = lq_estimator(plant, identity(2) * 0.1, [[0.01]]);
    ///     kf.estimator_poles
    #[family = "design"]
    fn lq_estimator(call, sys: Model, W: DMatrix<f64>, V: DMatrix<f64>)
        -> Map as "#{ gain, covariance, estimator_poles }"
    {
        let e = lq::lq_estimator(&sys, &W, &V).map_err(call.num())?;
        let mut m = Map::new();
        m.insert("gain".into(), matrix_value(e.gain));
        m.insert("covariance".into(), matrix_value(e.covariance));
        m.insert(
            "estimator_poles".into(),
            Dynamic::from_array(complex_array(&e.estimator_poles)),
        );
        Ok(m)
    }

    /// the observer-based compensator of a plant: input y, output K x̂
    ///
    /// K: the state-feedback gain (m×n, e.g. lq_regulator(…).gain), L: the estimator gain
    /// (n×p, e.g. lq_estimator(…).gain). The estimate follows x̂' = (A − BK − LC + LDK)x̂ +
    /// Ly and the plant input is u = −Kx̂, so close_loop(plant, compensator) is the
    /// regulated loop, with the poles of A − BK and of A − LC. A discrete plant gets the
    /// predictor form (u[k] uses the estimate from y up to step k−1).
    ///
    /// example:
    ///     let K = assign_poles(plant, [-2, -3]);
    ///     let L = transpose(assign_poles(state_space(transpose(plant.A), transpose(plant.C), transpose(plant.B), 0), [-8, -9]));
    ///     let closed = close_loop(plant, estimator_controller(plant, K, L));
    ///     poles(closed)
    #[family = "design"]
    fn estimator_controller(call, sys: Model, K: DMatrix<f64>, L: DMatrix<f64>) -> Dynamic as "System" {
        compensator::estimator_controller(&sys, &K, &L)
            .map(system_value)
            .map_err(call.num())
    }

    /// the closed-loop functions of a plant under negative feedback u = −K y
    ///
    /// At the plant output (the usual meaning for one loop): loop = P K, sensitivity
    /// S = (I + P K)⁻¹ (disturbance at the output → output), complementary T = I − S
    /// (reference → output), control_sensitivity K S (reference or noise → actuator),
    /// load_sensitivity S P (load disturbance at the plant input → output). input: the
    /// same three at the plant input (loop K P, its S and T), which differ from the output
    /// ones for MIMO loops. Each is a System written down from the signal equations (the
    /// orders add up; nothing is cancelled).
    ///
    /// example:
    ///     let f = loop_functions(plant, transfer_function([2, 5], [0.1, 1]));
    ///     hinf_norm(f.sensitivity).value   // the peak of |S|
    #[family = "design"]
    fn loop_functions(call, plant: Model, controller: Model)
        -> Map as "#{ loop, sensitivity, complementary, control_sensitivity, load_sensitivity, input }"
    {
        let f = compensator::loop_functions(&plant, &controller).map_err(call.num())?;
        let mut m = Map::new();
        m.insert("loop".into(), system_value(f.loop_output));
        m.insert("sensitivity".into(), system_value(f.sensitivity));
        m.insert("complementary".into(), system_value(f.complementary));
        m.insert("control_sensitivity".into(), system_value(f.control_sensitivity));
        m.insert("load_sensitivity".into(), system_value(f.load_sensitivity));
        let mut input = Map::new();
        input.insert("loop".into(), system_value(f.loop_input));
        input.insert("sensitivity".into(), system_value(f.sensitivity_input));
        input.insert("complementary".into(), system_value(f.complementary_input));
        m.insert("input".into(), Dynamic::from_map(input));
        Ok(m)
    }

    /// the plant with integrators of the chosen outputs appended, for servo design
    ///
    /// outputs: an output index or an array of them (0-based). Continuous: z' = y_i;
    /// discrete: the running sum z[k+1] = z[k] + y_i[k]. The new states come after the
    /// plant's, and the integrals are added as outputs after the plant's. A regulator
    /// designed on the result (lq_regulator, assign_poles) removes the steady error of those
    /// outputs.
    ///
    /// example:
    ///     let servo = with_integral_action(plant, 0);
    ///     let lq = lq_regulator(servo, identity(3), [[1]]);
    ///     lq.gain
    #[family = "design"]
    fn with_integral_action(call, sys: Model, outputs: Dynamic) -> Dynamic as "System" {
        let list: Vec<usize> = if crate::script::convert::is_list(&outputs) {
            let v = crate::script::convert::to_f64_vec(&outputs, call.name, "outputs")?;
            v.iter()
                .map(|&x| {
                    crate::script::convert::to_count(&Dynamic::from_float(x), call.name, "outputs")
                })
                .collect::<Result<_, _>>()?
        } else {
            vec![crate::script::convert::to_count(&outputs, call.name, "outputs")?]
        };
        compensator::with_integral_action(&sys, &list)
            .map(system_value)
            .map_err(call.num())
    }

    /// the model under state feedback u = −K x + r, with r the new input
    ///
    /// K: m×n (inputs × states). The result is x' = (A − BK)x + Br, y = (C − DK)x + Dr:
    /// same states, inputs (now the reference r) and outputs. No estimator is involved:
    /// the full state is assumed measured.
    ///
    /// example:
    ///     let K = assign_poles(plant, [-2, -3]);
    ///     let cl = with_state_feedback(plant, K);
    ///     poles(cl)
    #[family = "design"]
    fn with_state_feedback(call, sys: Model, K: DMatrix<f64>) -> Dynamic as "System" {
        interconnect::state_feedback(&sys, &K)
            .map(system_value)
            .map_err(call.num())
    }

    /// the negative feedback loop y = G(u − H y) around a forward model G
    ///
    /// Without feedback_path: unity feedback H = I (G square). feedback_path: a System,
    /// TransferFunction, number or Matrix (a static gain), with as many inputs as G has
    /// outputs and as many outputs as G has inputs. The result is (I + GH)⁻¹G; its states
    /// are those of G then those of H. Two transfer functions give a TransferFunction
    /// G/(1 + GH) (no cancellation), anything else a System. An error when I + D_G D_H is
    /// singular (an algebraic loop).
    ///
    /// example:
    ///     let g = transfer_function([1], [1, 1, 0]);
    ///     close_loop(g)   // 1/(s² + s + 1)
    #[family = "design"]
    fn close_loop(call, forward: Forward) -> Dynamic as "System | TransferFunction" {
        close_loop(&call, forward.0, None)
    }
    fn close_loop(call, forward: Forward, feedback_path: FeedbackPath)
        -> Dynamic as "System | TransferFunction"
    {
        close_loop(&call, forward.0, Some(feedback_path.0))
    }
}
