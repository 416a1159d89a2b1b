//! Model built-ins: construction, conversion, properties, transforms, structure,
//! equivalence, and model files (`files.rs`).

use crate::numeric::lti::system::{SignalNames, StateSpace};
use crate::numeric::lti::tf::TransferFunction as Tf;
use crate::numeric::lti::{
    balance, equivalence as eqv, modal, properties, realize, staircase, transform, zeros,
};
use crate::script::convert::{
    check_entries, complex_array, float_array, matrix_value, system_value, tf_value, to_str, Rr,
};
use crate::script::declare::{Call, Finite, Model, Param};
use crate::script::docs::Doc;
use crate::script::state;
use crate::script::types::{Complex, Matrix, System, TransferFunction};
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, Engine, Map, FLOAT, INT};

mod files;
pub use files::BUILTINS as FILE_BUILTINS;

/// The help page of the model properties registered by hand in [`register`] (the
/// functions are declared in `BUILTINS`).
pub const DOCS: &[Doc] = &[Doc {
    name: "A",
    family: "models",
    usage: "sys.A, sys.B, sys.C, sys.D → Matrix",
    summary: "the model's matrices",
    details: "Also sys.dt (0 when continuous), sys.order, sys.input_count, sys.output_count; \
              sys.input_names, sys.output_names, sys.state_names (the names from \
              name_signals, or u0, u1, … / y0, … / x0, … where none are given); for a \
              TransferFunction tf.num, tf.den, tf.dt.",
    example: "plant.A",
}];

/// Registers the model properties (`sys.A`, `tf.num`, …); the types themselves come from
/// the value-type registry (`types::KINDS`).
pub fn register(engine: &mut Engine) {
    // Getters.
    engine.register_get("A", |s: &mut System| matrix_value(s.0.a.clone()));
    engine.register_get("B", |s: &mut System| matrix_value(s.0.b.clone()));
    engine.register_get("C", |s: &mut System| matrix_value(s.0.c.clone()));
    engine.register_get("D", |s: &mut System| matrix_value(s.0.d.clone()));
    engine.register_get("dt", |s: &mut System| s.0.dt);
    engine.register_get("order", |s: &mut System| s.0.order() as INT);
    engine.register_get("input_count", |s: &mut System| s.0.inputs() as INT);
    engine.register_get("output_count", |s: &mut System| s.0.outputs() as INT);
    engine.register_get("input_names", |s: &mut System| {
        named_or_positional(&s.0.names.inputs, s.0.inputs(), "u")
    });
    engine.register_get("output_names", |s: &mut System| {
        named_or_positional(&s.0.names.outputs, s.0.outputs(), "y")
    });
    engine.register_get("state_names", |s: &mut System| {
        named_or_positional(&s.0.names.states, s.0.order(), "x")
    });
    engine.register_get("num", |t: &mut TransferFunction| {
        Dynamic::from_array(float_array(&t.0.num))
    });
    engine.register_get("den", |t: &mut TransferFunction| {
        Dynamic::from_array(float_array(&t.0.den))
    });
    engine.register_get("dt", |t: &mut TransferFunction| t.0.dt);
    engine.register_get("order", |t: &mut TransferFunction| t.0.order() as INT);
}

/// The feedthrough D of `state_space`: a matrix, or a plain 0 for the zero D of any size.
struct Feedthrough(Option<DMatrix<f64>>);

impl Param for Feedthrough {
    const KIND: &'static str = "matrix | 0";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        let x = v
            .as_int()
            .ok()
            .map(|i| i as f64)
            .or_else(|| v.as_float().ok());
        if x == Some(0.0) {
            return Ok(Feedthrough(None));
        }
        call.matrix(&v, arg).map(|d| Feedthrough(Some(d)))
    }
}

/// The sample time of a discrete model, in seconds: a finite number > 0.
struct SampleTime(f64);

impl Param for SampleTime {
    const KIND: &'static str = "seconds";
    fn from_arg(v: Dynamic, call: &Call, arg: &str) -> Rr<Self> {
        let dt = call.number(&v, arg)?;
        if !(dt > 0.0 && dt.is_finite()) {
            return Err(call.fail(format_args!(
                "{arg} must be a positive sample time in seconds, found {dt}\nhint: leave {arg} \
                 out for a continuous model"
            )));
        }
        Ok(SampleTime(dt))
    }
}

fn make_system(
    call: &Call,
    a: DMatrix<f64>,
    b: DMatrix<f64>,
    c: DMatrix<f64>,
    d: Feedthrough,
    dt: f64,
) -> Rr<Dynamic> {
    let d = d.0.unwrap_or_else(|| DMatrix::zeros(c.nrows(), b.ncols()));
    StateSpace::new(a, b, c, d, dt)
        .map(system_value)
        .map_err(call.num())
}

/// Words a pole that was put on the stability boundary (`modes`, the modal forms): `how`
/// says where the result shows it.
fn warn_rounding(call: &Call, r: &properties::Rounding, how: &str) {
    // Every digit: the point is how far from the boundary the computed value lies.
    let z = r.computed;
    let computed = if z.im == 0.0 {
        format!("{:e}", z.re)
    } else {
        format!("{:e}{:+e}j", z.re, z.im)
    };
    call.warn(format_args!(
        "the pole computed as {computed} lies within its rounding error (±{:.1e}) of {}, and \
         {how}",
        r.error,
        r.boundary.describe()
    ));
}

/// Words the notes of a modal or Jordan realization.
fn warn_modal(call: &Call, notes: &[modal::ModalNote]) {
    let style = state::style(call.ctx());
    for n in notes {
        match n {
            modal::ModalNote::Coupled { eigenvalues, size } => {
                let vals: Vec<String> = eigenvalues
                    .iter()
                    .map(|z| crate::display::complex(z.re, z.im, style))
                    .collect();
                call.warn(format_args!(
                    "eigenvalues {} are repeated or too close to separate safely; their \
                     {size}×{size} block stays coupled (not diagonal)",
                    vals.join(", ")
                ));
            }
            modal::ModalNote::OnBoundary(r) => warn_rounding(call, r, "the form shows it there"),
            modal::ModalNote::FragileJordan => call.warn(
                "the Jordan form is numerically fragile — an arbitrarily small change of A can \
                 change its block structure; prefer modal_realization for computation",
            ),
        }
    }
}

/// Warns when a change of coordinates is ill-conditioned, with the rounding it may add.
fn warn_conditioning(call: &Call, tr: &transform::Transformed) {
    if tr.ill_conditioned() {
        call.warn(format_args!(
            "the transform T is ill-conditioned (condition number {:.2e}); the new model's \
             entries may carry errors up to about {:.0e} relative",
            tr.condition,
            tr.condition * f64::EPSILON
        ));
    }
}

/// The map `#{ system, transform }` of a change of coordinates, warning when `T` is
/// ill-conditioned: the one way every coordinate change reaches a script.
fn transformed(call: &Call, tr: transform::Transformed) -> Map {
    warn_conditioning(call, &tr);
    let mut m = Map::new();
    m.insert("system".into(), system_value(tr.system));
    m.insert("transform".into(), matrix_value(tr.t));
    m
}

/// The names `wire` accepts, as strings (see [`SignalNames::or_positional`]).
fn named_or_positional(given: &[String], count: usize, prefix: &str) -> Array {
    SignalNames::or_positional(given, count, prefix)
        .into_iter()
        .map(Dynamic::from)
        .collect()
}

fn names_of(call: &Call, v: &Dynamic, what: &str, count: usize) -> Rr<Vec<String>> {
    let Some(a) = v.read_lock::<Array>() else {
        return Err(call.fail(format_args!("{what} must be an array of strings")));
    };
    if a.len() != count {
        return Err(call.fail(format_args!(
            "{what} has {} names, but the model has {count}",
            a.len()
        )));
    }
    a.iter()
        .enumerate()
        .map(|(k, s)| to_str(s, call.name, &format!("{what}[{k}]")))
        .collect()
}

fn mode_map(m: &properties::Mode) -> Map {
    let mut out = Map::new();
    out.insert("pole".into(), Dynamic::from(Complex(m.pole)));
    out.insert("damping".into(), Dynamic::from_float(m.damping));
    out.insert(
        "natural_frequency".into(),
        Dynamic::from_float(m.natural_frequency),
    );
    out.insert("time_constant".into(), Dynamic::from_float(m.time_constant));
    out
}

/// The map of `minimal_realization`, warning when a removal changed the input–output
/// behaviour.
fn minimal_map(call: &Call, sys: &StateSpace, tol: Option<f64>) -> Rr<Map> {
    let r = eqv::minimal_checked(sys, tol).map_err(call.num())?;
    let k = &r.minimal;
    if let Some(e) = &r.changed_behaviour {
        let (what, m) = r.deciding_staircase();
        let keep = r.keeping_tolerance();
        call.warn(format_args!(
            "removing {} of {} states changes the input–output behaviour: the reduced \
             model's Markov parameters differ by {:.1e} relative and its frequency response by \
             {:.1e} ({:.1e} times the rounding-aware tolerance). The {what} staircase \
             dropped a coupling of singular value {:.2e}, {:.1e} times the rank threshold \
             {:.2e}: the model is close to, not at, a lower order. Keep the full model, or \
             pass a smaller relative tolerance, e.g. minimal_realization(sys, {keep:.0e})",
            k.removed,
            sys.order(),
            e.markov_error,
            e.frequency_error,
            e.margin,
            m.largest_dropped,
            m.largest_dropped / m.threshold,
            m.threshold,
        ));
    }
    let mut m = Map::new();
    m.insert("system".into(), system_value(r.system));
    m.insert("removed".into(), Dynamic::from_int(k.removed as INT));
    m.insert(
        "uncontrollable_removed".into(),
        Dynamic::from_int(k.uncontrollable_removed as INT),
    );
    m.insert(
        "unobservable_removed".into(),
        Dynamic::from_int(k.unobservable_removed as INT),
    );
    Ok(m)
}

crate::builtins! {
    /// a state-space model x' = Ax + Bu, y = Cx + Du (discrete with sample time dt)
    ///
    /// A n×n, B n×m, C p×n, D p×m (a plain 0 means the zero D). dt in seconds; leave it
    /// out for a continuous model. From a TransferFunction: a minimal realization. From a
    /// grid [[g11, g12], [g21, g22]] (rows are outputs, columns inputs; a number is a
    /// static gain; one sample time): each entry realized on its own, assembled, and
    /// reduced to minimal order by the staircase, kept only when equivalent to the
    /// assembled model. Every built-in that takes a model takes such a grid.
    ///
    /// example:
    ///     let plant = state_space([[0, 1], [-4, -0.8]], [[0], [1]], [[1, 0]], 0);
    ///     let g = transfer_function([1], [1, 1]);
    ///     let two_by_two = state_space([[g, 0.5], [0, g]]);
    ///     two_by_two.order   // 2
    #[family = "models"]
    fn state_space(call, A: DMatrix<f64>, B: DMatrix<f64>, C: DMatrix<f64>, D: Feedthrough)
        -> Dynamic as "System"
    {
        make_system(&call, A, B, C, D, 0.0)
    }
    fn state_space(
        call,
        A: DMatrix<f64>,
        B: DMatrix<f64>,
        C: DMatrix<f64>,
        D: Feedthrough,
        dt: SampleTime,
    ) -> Dynamic as "System" {
        make_system(&call, A, B, C, D, dt.0)
    }
    fn state_space(call, tf: Model) -> Dynamic as "System" {
        Ok(system_value(tf))
    }

    /// a rational approximation of the transport delay e^(−s·seconds) (Padé)
    ///
    /// seconds > 0; order 1 to 10 (numerator and denominator degree). All-pass: the gain is
    /// exact, only the phase is approximate. Its error stays below 0.1° up to
    /// ω·seconds = 1 (order 2), 2 (order 3), 3 (order 5), and grows fast beyond: check it
    /// at the loop's crossover with delay_phase_error. The poles are near −order/seconds:
    /// a short delay gives fast poles, so a simulation needs a small enough step.
    ///
    /// example:
    ///     let d = delay_approximation(0.05, 3);
    ///     let with_delay = transfer_function([4], [1, 2]) * d;
    #[family = "models"]
    fn delay_approximation(call, seconds: FLOAT, order: usize) -> Dynamic as "TransferFunction" {
        crate::numeric::lti::delay::pade(seconds, order)
            .map(tf_value)
            .map_err(call.num())
    }

    /// the phase error in degrees of delay_approximation(seconds, order) at a frequency
    ///
    /// frequency in rad/s. The approximation's phase minus the delay's −frequency·seconds,
    /// wrapped into (−180°, 180°]; positive means the approximation lags less than the
    /// delay (optimistic margins).
    ///
    /// example:
    ///     delay_phase_error(0.05, 3, 40)   // at ω·τ = 2: about 0.06°
    #[family = "models"]
    fn delay_phase_error(call, seconds: FLOAT, order: usize, frequency: FLOAT) -> FLOAT {
        // The same checks as the approximation itself.
        crate::numeric::lti::delay::pade(seconds, order).map_err(call.num())?;
        Ok(crate::numeric::lti::delay::phase_error_deg(seconds, order, frequency))
    }

    /// a rational transfer function, coefficients highest power first
    ///
    /// The denominator is scaled to be monic. Must be proper (numerator degree ≤
    /// denominator degree). With dt (seconds) the variable is z.
    ///
    /// example:
    ///     let g = transfer_function([2, 1], [1, 3, 2]);
    #[family = "models"]
    fn transfer_function(call, num: Vec<f64>, den: Vec<f64>) -> Dynamic as "TransferFunction" {
        Tf::new(&num, &den, 0.0).map(tf_value).map_err(call.num())
    }
    fn transfer_function(call, num: Vec<f64>, den: Vec<f64>, dt: SampleTime)
        -> Dynamic as "TransferFunction"
    {
        Tf::new(&num, &den, dt.0).map(tf_value).map_err(call.num())
    }

    /// the transfer function of each channel (grid [output][input] for MIMO)
    ///
    /// Per channel: a minimal realization, its poles (eigenvalues) and zeros (generalized
    /// eigenvalues of the system pencil), and the gain from one evaluation — numerically
    /// sound at any order.
    ///
    /// example:
    ///     to_transfer_function(state_space([[-2]], [[1]], [[3]], 0))   // 3/(s + 2)
    #[family = "models"]
    fn to_transfer_function(call, sys: Model)
        -> Dynamic as "TransferFunction (SISO) | [[TransferFunction]]"
    {
        let grid = realize::to_transfer_function(&sys).map_err(call.num())?;
        if sys.inputs() == 1 && sys.outputs() == 1 {
            if let Some(t) = grid.into_iter().next().and_then(|r| r.into_iter().next()) {
                return Ok(tf_value(t));
            }
            return Err(call.fail("empty model"));
        }
        Ok(Dynamic::from_array(
            grid.into_iter()
                .map(|row| Dynamic::from_array(row.into_iter().map(tf_value).collect()))
                .collect(),
        ))
    }

    /// the single-input single-output model from one input to one output
    ///
    /// 0-based indices. As a method: sys.channel(output, input).
    ///
    /// example:
    ///     let m = state_space([[-1]], [[1, 2]], [[1]], [[0, 0]]);
    ///     channel(m, 0, 1)
    #[family = "models"]
    fn channel(call, sys: Model, output: usize, input: usize) -> Dynamic as "System" {
        sys.channel(output, input)
            .map(system_value)
            .map_err(call.num())
    }

    /// a copy of the model with names for its signals (used in display and plots)
    ///
    /// names: #{ inputs, outputs, states }, each entry an array of strings, one per
    /// signal; any may be left out.
    ///
    /// example:
    ///     let p = name_signals(plant, #{ inputs: ["force"], outputs: ["position"] });
    #[family = "models"]
    fn name_signals(call, sys: Model, names: Map) -> Dynamic as "System" {
        let mut sys = sys;
        for k in names.keys() {
            if !["inputs", "outputs", "states"].contains(&k.as_str()) {
                return Err(call.fail(format_args!(
                    "unknown key '{k}' (use inputs, outputs, states)"
                )));
            }
        }
        if let Some(v) = names.get("inputs") {
            sys.names.inputs = names_of(&call, v, "inputs", sys.inputs())?;
        }
        if let Some(v) = names.get("outputs") {
            sys.names.outputs = names_of(&call, v, "outputs", sys.outputs())?;
        }
        if let Some(v) = names.get("states") {
            sys.names.states = names_of(&call, v, "states", sys.order())?;
        }
        Ok(system_value(sys))
    }

    /// the poles (eigenvalues of A), ascending real part then imaginary part
    ///
    /// example:
    ///     poles(plant)
    #[family = "models"]
    fn poles(call, sys: Model) -> Array as "[Complex]" {
        properties::poles(&sys)
            .map(|v| complex_array(&v))
            .map_err(call.num())
    }

    /// transmission zeros, square or non-square models
    ///
    /// Finite generalized eigenvalues of the system pencil [[A, B], [C, D]] −
    /// λ[[I, 0], [0, 0]] after the reduction of Emami-Naeini & Van Dooren 1982, computed by
    /// the QZ algorithm. For a non-minimal model the uncontrollable or unobservable modes
    /// appear as (decoupling) zeros. When a rank decision of the reduction lies within the
    /// rounding that earlier steps propagate (a model close to a rank drop), a warning
    /// gives the figures: zeros may then be missing or spurious.
    ///
    /// example:
    ///     zeros(transfer_function([1, 2], [1, 3, 5]))   // [-2+0j]
    #[family = "models"]
    fn zeros(call, sys: Model) -> Array as "[Complex]" {
        let (z, ambiguity) = zeros::transmission_zeros_checked(&sys.a, &sys.b, &sys.c, &sys.d)
            .map_err(call.num())?;
        if let Some(a) = ambiguity {
            call.warn(format_args!(
                "a rank decision of the zero reduction is within rounding: a singular value \
                 of {:.2e} was kept against a threshold of {:.2e}, but earlier steps may have \
                 put up to {:.2e} of rounding into it; zeros may be missing or spurious (the \
                 model is close to a rank drop: check with a rescaled or exact copy)",
                a.singular_value, a.threshold, a.noise
            ));
        }
        Ok(complex_array(&z))
    }

    /// steady-state gain D − CA⁻¹B (discrete: D + C(I − A)⁻¹B)
    ///
    /// A pole at the origin (z = 1 when discrete) in a channel makes that entry ±inf, the
    /// sign of the ramp a positive step produces; uncontrollable or unobservable
    /// integrators do not count.
    ///
    /// example:
    ///     dc_gain(transfer_function([4], [1, 2]))   // 2
    #[family = "models"]
    fn dc_gain(call, sys: Model) -> Matrix {
        properties::dc_gain(&sys).map(Matrix::from).map_err(call.num())
    }

    /// every pole strictly in the left half plane (|z| < 1 when discrete)
    ///
    /// Poles on the boundary (integrators, undamped modes) count as not stable, and so
    /// does a pole within its own rounding error of the boundary, with a warning giving
    /// the computed value and its error bound.
    ///
    /// example:
    ///     is_stable(plant)
    #[family = "models"]
    fn is_stable(call, sys: Model) -> bool {
        let s = properties::stability(&sys).map_err(call.num())?;
        if let Some(b) = s.undecided {
            call.warn(format_args!(
                "the pole computed as {} lies within its rounding error (±{:.1e}) of the \
                 stability boundary, so the model is not counted as stable",
                crate::display::complex(b.value.re, b.value.im, crate::script::state::style(call.ctx())),
                b.error,
            ));
        }
        Ok(s.stable)
    }

    /// damping ratio, natural frequency (rad/s) and time constant (s) of each mode
    ///
    /// A complex pair is listed once (its member with positive imaginary part). Discrete
    /// poles are mapped by s = ln(z)/dt. time_constant = −1/Re(s): negative for a growing
    /// mode, inf on the stability boundary. A pole that lies within its own rounding error
    /// of the origin or the imaginary axis (z = 0, z = 1 or the unit circle when discrete)
    /// is listed there, with a warning giving the computed value and its error bound.
    ///
    /// example:
    ///     modes(plant)
    #[family = "models"]
    fn modes(call, sys: Model)
        -> Array as "[#{ pole, damping, natural_frequency, time_constant }]"
    {
        let m = properties::modes(&sys).map_err(call.num())?;
        for r in m.iter().filter_map(|x| x.rounding) {
            warn_rounding(&call, &r, "is listed there");
        }
        Ok(m.iter().map(|x| Dynamic::from_map(mode_map(x))).collect())
    }

    /// the first count Markov parameters D, CB, CAB, CA²B, …
    ///
    /// count: at most 100000.
    ///
    /// example:
    ///     markov_parameters(plant, 4)
    #[family = "models"]
    fn markov_parameters(call, sys: Model, count: usize) -> Array as "[Matrix]" {
        if count > 100_000 {
            return Err(call.fail("count must be at most 100000"));
        }
        let each = sys.d.nrows() * sys.d.ncols();
        check_entries(call.name, count, each)?;
        Ok(sys
            .markov_parameters(count)
            .into_iter()
            .map(matrix_value)
            .collect())
    }

    /// the model in new coordinates x = T z: (T⁻¹AT, T⁻¹B, CT, D)
    ///
    /// Refuses a singular or numerically singular T; warns when cond(T) > 1e8.
    ///
    /// example:
    ///     transform_state(plant, [[1, 0], [1, 1]])
    #[family = "transforms"]
    fn transform_state(call, sys: Model, T: DMatrix<f64>) -> Dynamic as "System" {
        let tr = transform::transform_state(&sys, &T).map_err(call.num())?;
        warn_conditioning(&call, &tr);
        Ok(system_value(tr.system))
    }

    /// real block-diagonal form: real poles on the diagonal, pairs as [[σ, ω], [−ω, σ]]
    ///
    /// Ordered real Schur form, then block diagonalisation by Sylvester equations (Bavely
    /// & Stewart 1979); repeated or nearly repeated eigenvalues stay in one coupled block
    /// with a warning, rather than inverting an ill-conditioned eigenvector matrix. Blocks
    /// in ascending real part.
    ///
    /// example:
    ///     let m = modal_realization(plant);
    ///     m.system.A
    #[family = "transforms"]
    fn modal_realization(call, sys: Model) -> Map as "#{ system, transform }" {
        let m = modal::modal_realization(&sys).map_err(call.num())?;
        warn_modal(&call, &m.notes);
        Ok(transformed(&call, m.form))
    }

    /// controllable companion form (SISO): first row −a₁…−aₙ, B = e₁
    ///
    /// Requires a controllable single-input single-output model; warns when T is
    /// ill-conditioned (companion forms are, at high order).
    ///
    /// example:
    ///     controllable_realization(plant).system
    #[family = "transforms"]
    fn controllable_realization(call, sys: Model) -> Map as "#{ system, transform }" {
        let tr = realize::controllable_companion(&sys).map_err(call.num())?;
        Ok(transformed(&call, tr))
    }

    /// observable companion form (SISO): first column −a₁…−aₙ, C = e₁ᵀ
    ///
    /// Requires an observable single-input single-output model; warns when T is
    /// ill-conditioned.
    ///
    /// example:
    ///     observable_realization(plant).system
    #[family = "transforms"]
    fn observable_realization(call, sys: Model) -> Map as "#{ system, transform }" {
        let tr = realize::observable_companion(&sys).map_err(call.num())?;
        Ok(transformed(&call, tr))
    }

    /// real Jordan form (always warns: the Jordan structure is numerically fragile)
    ///
    /// Like modal_realization, with each cluster of a repeated real eigenvalue put into
    /// Jordan chains (ones on the superdiagonal), decided by numerical ranks.
    ///
    /// example:
    ///     jordan_realization(plant)
    #[family = "transforms"]
    fn jordan_realization(call, sys: Model) -> Map as "#{ system, transform }" {
        let m = modal::jordan_realization(&sys).map_err(call.num())?;
        warn_modal(&call, &m.notes);
        Ok(transformed(&call, m.form))
    }

    /// balanced form: both Gramians equal diag(Hankel singular values)
    ///
    /// Square-root method on Cholesky factors of the Gramians (Hammarling 1982; Laub,
    /// Heath, Paige & Ward 1987). Needs a stable, minimal model.
    ///
    /// example:
    ///     balanced_realization(plant).hankel_singular_values
    #[family = "transforms"]
    fn balanced_realization(call, sys: Model)
        -> Map as "#{ system, transform, hankel_singular_values }"
    {
        let b = balance::balanced_realization(&sys.a, &sys.b, &sys.c, &sys.d, sys.dt)
            .map_err(call.num())?;
        let hsv = float_array(&b.hankel_singular_values);
        let mut m = transformed(&call, b.transformed(&sys).map_err(call.num())?);
        m.insert("hankel_singular_values".into(), Dynamic::from_array(hsv));
        Ok(m)
    }

    /// a reduced model of the given order, with the error bound 2·Σ discarded σ
    ///
    /// error_bound bounds the largest frequency-response error (H∞ norm of the
    /// difference; Glover 1984). Needs a stable model.
    ///
    /// example:
    ///     let r = balanced_truncation(plant, 2);
    ///     r.error_bound
    #[family = "transforms"]
    fn balanced_truncation(call, sys: Model, order: usize)
        -> Map as "#{ system, hankel_singular_values, error_bound }"
    {
        let r = balance::balanced_truncation(&sys.a, &sys.b, &sys.c, &sys.d, sys.dt, order)
            .map_err(call.num())?;
        let mut new = StateSpace::new(r.a, r.b, r.c, r.d, sys.dt).map_err(call.num())?;
        new.names.inputs = sys.names.inputs.clone();
        new.names.outputs = sys.names.outputs.clone();
        let mut m = Map::new();
        m.insert("system".into(), system_value(new));
        m.insert(
            "hankel_singular_values".into(),
            Dynamic::from_array(float_array(&r.hankel_singular_values)),
        );
        m.insert("error_bound".into(), Dynamic::from_float(r.error_bound));
        Ok(m)
    }

    /// removes uncontrollable and unobservable states (orthogonal staircase)
    ///
    /// Controllability then observability staircase (Van Dooren 1981, Varga 1981) on the
    /// balanced model; rank decisions by SVD relative to ‖[A B]‖ (resp. ‖[A; C]‖), never
    /// by powers of A. tolerance: the relative rank threshold (default √ε ≈ 1.5e-8).
    /// Every removal is checked: when the reduced model's Markov parameters or frequency
    /// response differ from the given model's beyond the data's rounding, a warning gives
    /// the figures (the model is close to, not at, a lower order; a smaller tolerance
    /// keeps the states).
    ///
    /// example:
    ///     minimal_realization(plant).removed
    #[family = "transforms"]
    fn minimal_realization(call, sys: Model)
        -> Map as "#{ system, removed, uncontrollable_removed, unobservable_removed }"
    {
        minimal_map(&call, &sys, None)
    }
    fn minimal_realization(call, sys: Model, tolerance: Finite) -> Map {
        minimal_map(&call, &sys, Some(tolerance.0))
    }

    /// coordinates that separate the four controllable/observable parts
    ///
    /// State order: controllable-observable, controllable-unobservable,
    /// uncontrollable-observable, uncontrollable-unobservable; the map gives each part's
    /// dimension.
    ///
    /// example:
    ///     kalman_decomposition(plant)
    #[family = "transforms"]
    fn kalman_decomposition(call, sys: Model)
        -> Map as "#{ system, transform, controllable_observable, controllable_unobservable, uncontrollable_observable, uncontrollable_unobservable }"
    {
        let k = staircase::kalman_decomposition(&sys.a, &sys.b, &sys.c, &sys.d, None)
            .map_err(call.num())?;
        let mut m = transformed(&call, k.transformed(&sys).map_err(call.num())?);
        let sizes = k.sizes.as_array();
        for (name, v) in [
            ("controllable_observable", sizes[0]),
            ("controllable_unobservable", sizes[1]),
            ("uncontrollable_observable", sizes[2]),
            ("uncontrollable_unobservable", sizes[3]),
        ] {
            m.insert(name.into(), Dynamic::from_int(v as INT));
        }
        Ok(m)
    }

    /// [B, AB, …, Aⁿ⁻¹B] (for display; decisions use the staircase)
    ///
    /// example:
    ///     controllability_matrix(plant)
    #[family = "transforms"]
    fn controllability_matrix(call, sys: Model) -> Matrix {
        staircase::controllability_matrix(&sys.a, &sys.b)
            .map(Matrix::from)
            .map_err(call.num())
    }

    /// [C; CA; …; CAⁿ⁻¹] (for display; decisions use the staircase)
    ///
    /// example:
    ///     observability_matrix(plant)
    #[family = "transforms"]
    fn observability_matrix(call, sys: Model) -> Matrix {
        staircase::observability_matrix(&sys.a, &sys.c)
            .map(Matrix::from)
            .map_err(call.num())
    }

    /// whether every mode can be moved by the inputs
    ///
    /// Orthogonal controllability staircase with SVD rank decisions at
    /// 10·max(n, m)·ε·‖[A B]‖; see uncontrollable_modes for which modes fail.
    ///
    /// example:
    ///     is_controllable(plant)
    #[family = "transforms"]
    fn is_controllable(call, sys: Model) -> bool {
        staircase::is_controllable(&sys.a, &sys.b, None).map_err(call.num())
    }

    /// whether every mode shows in the outputs
    ///
    /// Dual of is_controllable.
    ///
    /// example:
    ///     is_observable(plant)
    #[family = "transforms"]
    fn is_observable(call, sys: Model) -> bool {
        staircase::is_observable(&sys.a, &sys.c, None).map_err(call.num())
    }

    /// the eigenvalues of the uncontrollable part
    ///
    /// example:
    ///     uncontrollable_modes(plant)
    #[family = "transforms"]
    fn uncontrollable_modes(call, sys: Model) -> Array as "[Complex]" {
        staircase::uncontrollable_modes(&sys.a, &sys.b, None)
            .map(|v| complex_array(&v))
            .map_err(call.num())
    }

    /// the eigenvalues of the unobservable part
    ///
    /// example:
    ///     unobservable_modes(plant)
    #[family = "transforms"]
    fn unobservable_modes(call, sys: Model) -> Array as "[Complex]" {
        staircase::unobservable_modes(&sys.a, &sys.c, None)
            .map(|v| complex_array(&v))
            .map_err(call.num())
    }

    /// Wc solving A Wc + Wc Aᵀ + B Bᵀ = 0 (discrete: A Wc Aᵀ − Wc + B Bᵀ = 0)
    ///
    /// Bartels–Stewart on the real Schur form; needs a stable model.
    ///
    /// example:
    ///     controllability_gramian(plant)
    #[family = "transforms"]
    fn controllability_gramian(call, sys: Model) -> Matrix {
        balance::controllability_gramian(&sys.a, &sys.b, sys.dt)
            .map(Matrix::from)
            .map_err(call.num())
    }

    /// Wo solving Aᵀ Wo + Wo A + Cᵀ C = 0 (discrete analogue)
    ///
    /// Bartels–Stewart on the real Schur form; needs a stable model.
    ///
    /// example:
    ///     observability_gramian(plant)
    #[family = "transforms"]
    fn observability_gramian(call, sys: Model) -> Matrix {
        balance::observability_gramian(&sys.a, &sys.c, sys.dt)
            .map(Matrix::from)
            .map_err(call.num())
    }

    /// √eig(Wc·Wo), descending, from Cholesky factors of the Gramians
    ///
    /// example:
    ///     hankel_singular_values(plant)
    #[family = "transforms"]
    fn hankel_singular_values(call, sys: Model) -> Array as "[float]" {
        balance::hankel_singular_values(&sys.a, &sys.b, &sys.c, sys.dt)
            .map(|v| float_array(&v))
            .map_err(call.num())
    }

    /// whether two models have the same input–output behaviour, and why
    ///
    /// Compares time-scaled Markov parameters up to a.order + b.order (tolerance 1e-8
    /// relative) and cross-checks the frequency responses on a grid covering every pole
    /// (1e-6). Where the data are ill-conditioned (a model reached through a badly
    /// conditioned transform), a quantity's tolerance rises to 30·n·ε times its
    /// sensitivity to rounding-level changes of A, B, C, and the reason says how far the
    /// data resolve it. margin is the largest difference over its tolerance (≤ 1 when
    /// equivalent); between 0.1 and 10 the reason calls the verdict borderline. When both
    /// models are minimal and of equal order, transform is the T with
    /// b = transform_state(a, T); otherwise ().
    ///
    /// example:
    ///     equivalence(plant, modal_realization(plant).system).equivalent   // true
    #[family = "equivalence"]
    fn equivalence(call, a: Model, b: Model)
        -> Map as "#{ equivalent, reason, markov_error, frequency_error, margin, transform }"
    {
        let e = eqv::equivalence(&a, &b).map_err(call.num())?;
        let mut m = Map::new();
        m.insert("equivalent".into(), Dynamic::from_bool(e.equivalent));
        m.insert("reason".into(), Dynamic::from(e.reason));
        m.insert("markov_error".into(), Dynamic::from_float(e.markov_error));
        m.insert(
            "frequency_error".into(),
            Dynamic::from_float(e.frequency_error),
        );
        m.insert("margin".into(), Dynamic::from_float(e.margin));
        m.insert(
            "transform".into(),
            e.transform.map(matrix_value).unwrap_or(Dynamic::UNIT),
        );
        Ok(m)
    }

    /// the T with b = transform_state(a, T), or an error saying why none exists
    ///
    /// example:
    ///     find_transform(plant, balanced_realization(plant).system)
    #[family = "equivalence"]
    fn find_transform(call, a: Model, b: Model) -> Matrix {
        eqv::find_transform(&a, &b).map(Matrix::from).map_err(call.num())
    }
}
