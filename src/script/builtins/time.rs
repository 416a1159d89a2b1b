//! Time-domain built-ins: discretisation, linear simulation, standard responses, step
//! metrics, nonlinear ODEs and linearisation, and the `Response` type.

use crate::numeric::lti::system::StateSpace;
use crate::numeric::time::discretize::{self, Method};
use crate::numeric::time::linearize;
use crate::numeric::time::metrics::{self, StepMetrics};
use crate::numeric::time::ode::{self, OdeMethod, OdeOptions};
use crate::numeric::time::simulate::{self as sim, Hold, Horizon, SimulationOptions};
use crate::script::convert::{
    fail, float_array, num, system_value, to_count, to_f64, to_f64_vec, to_shared_matrix,
    to_shared_vec, to_str, to_system, type_name, Rr,
};
use crate::script::declare::Call;
use crate::script::docs::Doc;
use crate::script::state;
use crate::script::types::{Matrix, Response, Samples, Vector};
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, Engine, FnPtr, Map, NativeCallContext, FLOAT, INT};
use std::sync::Arc;

mod plots;
pub use plots::BUILTINS as PLOT_BUILTINS;

/// The page of the `Response` type and its properties, registered by hand in [`register`]
/// (the functions are declared in `BUILTINS`, the plots in `plots.rs`).
pub const DOCS: &[Doc] = &[Doc {
    name: "Response",
    family: "time domain",
    usage: "resp.t → array (s)\nresp.y → Matrix (one row per sample, one column per output)\n\
            resp.x → Matrix (states)\nresp.u → Matrix (inputs)",
    summary: "a time response: samples of time, outputs, states and inputs",
    details: "Returned by step_response, impulse_response, free_response, simulate and \
              integrate_ode. Row k of y, x and u belongs to time t[k].",
    example: "let r = step_response(plant, 5);\nr.y.get(r.y.rows - 1, 0)",
}];

/// States are kept by default unless samples × states exceeds this (8 MB of states).
pub const STATE_KEEP_LIMIT: usize = 1_000_000;

fn response_value(r: Response) -> Dynamic {
    Dynamic::from(r)
}

/// Wraps numeric responses of one model, one per input.
fn model_responses(sys: &StateSpace, rs: Vec<sim::Response>, kind: &str) -> Dynamic {
    let many = rs.len() > 1;
    let list: Vec<Dynamic> = rs
        .into_iter()
        .enumerate()
        .map(|(j, data)| {
            let label = many.then(|| {
                sys.names
                    .inputs
                    .get(j)
                    .cloned()
                    .unwrap_or_else(|| format!("input {j}"))
            });
            response_value(Response {
                data: data.into(),
                kind: kind.into(),
                outputs: sys.names.outputs.clone(),
                label,
                dt: sys.dt,
            })
        })
        .collect();
    if list.len() == 1 {
        list.into_iter().next().unwrap_or(Dynamic::UNIT)
    } else {
        Dynamic::from_array(list)
    }
}

fn horizon(sys: &StateSpace, t_final: Option<&Dynamic>, fname: &str) -> Rr<Horizon> {
    match t_final {
        None => sim::auto_horizon(sys).map_err(num(fname)),
        Some(v) => {
            let tf = to_f64(v, fname, "t_final")?;
            sim::horizon_with(sys, tf, false).map_err(num(fname))
        }
    }
}

fn step(s: &Dynamic, t_final: Option<&Dynamic>) -> Rr<Dynamic> {
    let f = "step_response";
    let sys = to_system(s, f, "sys")?;
    let h = horizon(&sys, t_final, f)?;
    let rs = sim::step_response(&sys, h).map_err(num(f))?;
    Ok(model_responses(&sys, rs, "step response"))
}

fn impulse(ctx: &NativeCallContext, s: &Dynamic, t_final: Option<&Dynamic>) -> Rr<Dynamic> {
    let f = "impulse_response";
    let sys = to_system(s, f, "sys")?;
    let h = horizon(&sys, t_final, f)?;
    if !sys.is_discrete() && sys.d.iter().any(|&v| v != 0.0) {
        state::warn(
            ctx,
            "impulse_response: the feedthrough D contributes D·δ(t), an impulse at t = 0 that \
             cannot be sampled; it is left out of the response",
        );
    }
    let rs = sim::impulse_response(&sys, h).map_err(num(f))?;
    Ok(model_responses(&sys, rs, "impulse response"))
}

fn free(s: &Dynamic, x0: &Dynamic, t_final: Option<&Dynamic>) -> Rr<Dynamic> {
    let f = "free_response";
    let sys = to_system(s, f, "sys")?;
    let x0 = to_f64_vec(x0, f, "x0")?;
    let h = horizon(&sys, t_final, f)?;
    let data = sim::free_response(&sys, &x0, h).map_err(num(f))?;
    Ok(response_value(Response {
        data: data.into(),
        kind: "free response".into(),
        outputs: sys.names.outputs.clone(),
        label: None,
        dt: sys.dt,
    }))
}

/// The input of `simulate`: a Matrix (one row per sample; shared, not copied), a Vector
/// or an array of numbers (one input), or a function of t returning a number or an array
/// of m numbers.
fn input_matrix(call: &Call, u: &Dynamic, t: &[f64], m: usize) -> Rr<Arc<DMatrix<f64>>> {
    let n = t.len();
    if let Some(fp) = crate::script::convert::as_fnptr(u) {
        let mut out = DMatrix::zeros(n, m);
        for (k, &tk) in t.iter().enumerate() {
            let v: Dynamic = fp
                .call_within_context(call.ctx(), (tk as FLOAT,))
                .map_err(|e| {
                    call.fail(format_args!("the input function failed at t = {tk}: {e}"))
                })?;
            let row = if crate::script::convert::is_list(&v) {
                to_f64_vec(&v, call.name, &format!("u({tk})"))?
            } else {
                vec![to_f64(&v, call.name, &format!("u({tk})"))?]
            };
            if row.len() != m {
                return Err(call.fail(format_args!(
                    "the input function returned {} values at t = {tk}, expected {m} (one per \
                     input)",
                    row.len()
                )));
            }
            for (l, x) in row.into_iter().enumerate() {
                out[(k, l)] = x;
            }
        }
        return Ok(Arc::new(out));
    }
    let numbers = u.is::<Vector>()
        || u.read_lock::<Array>()
            .is_some_and(|a| a.first().is_some_and(|x| x.is::<INT>() || x.is::<FLOAT>()));
    if numbers {
        let v = to_shared_vec(u, call.name, "u")?;
        if m != 1 {
            return Err(call.fail(format_args!(
                "u: a list of numbers is one input, but the model has {m} inputs\nhint: pass a \
                 Matrix with one row per sample and one column per input"
            )));
        }
        if v.len() != n {
            return Err(call.fail(format_args!(
                "u: expected {n} values (one per sample of t), found {}",
                v.len()
            )));
        }
        return Ok(Arc::new(DMatrix::from_column_slice(n, 1, &v)));
    }
    if u.is::<INT>() || u.is::<FLOAT>() {
        return Err(call.fail(format_args!(
            "u must be a Matrix, an array or a function of t, found a number\nhint: for a \
             constant input write |t| {}",
            to_f64(u, call.name, "u")?
        )));
    }
    let mat = to_shared_matrix(u, call.name, "u")?;
    if mat.nrows() != n || mat.ncols() != m {
        return Err(call.fail(format_args!(
            "u: expected {n}×{m} (one row per sample of t, one column per input), found {}×{}",
            mat.nrows(),
            mat.ncols()
        )));
    }
    Ok(mat)
}

fn check_keys(m: &Map, fname: &str, known: &[&str]) -> Rr<()> {
    for k in m.keys() {
        if !known.contains(&k.as_str()) {
            return Err(fail(format!(
                "{fname}: unknown option '{k}' (known: {})",
                known.join(", ")
            )));
        }
    }
    Ok(())
}

/// `simulate(sys, t, u[, x0[, options]])`: the time grid and the input are read where
/// they are (a Vector's or a Matrix's numbers are shared, not copied).
fn simulate(
    call: &Call,
    s: &Dynamic,
    t: &Dynamic,
    u: &Dynamic,
    x0: Option<&Dynamic>,
    options: Option<&Map>,
) -> Rr<Dynamic> {
    let sys = call.system(s, "sys")?;
    let t = to_shared_vec(t, call.name, "t")?;
    sim::uniform_step(&t).map_err(call.num())?;
    let x0 = match x0 {
        Some(v) if !v.is_unit() => Some(to_f64_vec(v, call.name, "x0")?),
        _ => None,
    };
    let mut opts = SimulationOptions {
        hold: None,
        keep_states: t.len().saturating_mul(sys.order()) <= STATE_KEEP_LIMIT,
    };
    if let Some(m) = options {
        check_keys(m, call.name, &["hold", "states"])?;
        if let Some(h) = m.get("hold") {
            opts.hold = Some(match to_str(h, call.name, "option hold")?.as_str() {
                "zoh" => Hold::Zoh,
                "linear" => Hold::Linear,
                other => {
                    return Err(call.fail(format_args!(
                        "hold must be \"zoh\" or \"linear\", found \"{other}\""
                    )))
                }
            });
        }
        if let Some(v) = m.get("states") {
            opts.keep_states = v.as_bool().map_err(|_| {
                call.fail(format_args!(
                    "option states must be true or false, found {}",
                    type_name(v)
                ))
            })?;
        }
    }
    let u = input_matrix(call, u, &t, sys.inputs())?;
    let (y, x) = sim::simulate_outputs(&sys, &t, &u, x0.as_deref(), opts).map_err(call.num())?;
    // The response keeps the caller's grid and input themselves.
    let samples = Samples {
        t,
        u,
        y: Arc::new(y),
        x: x.map(Arc::new),
    };
    Ok(response_value(Response {
        data: samples,
        kind: "simulation".into(),
        outputs: sys.names.outputs.clone(),
        label: None,
        dt: sys.dt,
    }))
}

fn method_of(v: &Dynamic) -> Rr<Method> {
    let f = "discretize";
    let (name, prewarp) = if let Some(m) = v.read_lock::<Map>() {
        check_keys(&m, f, &["method", "prewarp"])?;
        let name = match m.get("method") {
            Some(x) => to_str(x, f, "method")?,
            None => "zoh".into(),
        };
        let pw = m
            .get("prewarp")
            .map(|x| to_f64(x, f, "prewarp"))
            .transpose()?;
        (name, pw)
    } else {
        (to_str(v, f, "method")?, None)
    };
    if prewarp.is_some() && name != "tustin" {
        return Err(fail(format!(
            "{f}: prewarp applies to the tustin method only, found method \"{name}\""
        )));
    }
    Ok(match name.as_str() {
        "zoh" => Method::Zoh,
        "foh" => Method::Foh,
        "tustin" => Method::Tustin { prewarp },
        "impulse" => Method::Impulse,
        "matched" => Method::Matched,
        other => {
            return Err(fail(format!(
                "{f}: unknown method \"{other}\" (known: zoh, foh, tustin, impulse, matched)"
            )))
        }
    })
}

fn discretize_fn(s: &Dynamic, dt: &Dynamic, method: Method) -> Rr<Dynamic> {
    let f = "discretize";
    let sys = to_system(s, f, "sys")?;
    let dt = to_f64(dt, f, "dt")?;
    discretize::discretize(&sys, dt, method)
        .map(system_value)
        .map_err(num(f))
}

fn metrics_map(m: &StepMetrics, pair: Option<(usize, usize)>) -> Map {
    let mut out = Map::new();
    if let Some((i, j)) = pair {
        out.insert("input".into(), Dynamic::from_int(j as INT));
        out.insert("output".into(), Dynamic::from_int(i as INT));
    }
    for (k, v) in [
        ("rise_time", m.rise_time),
        ("settling_time", m.settling_time),
        ("overshoot", m.overshoot),
        ("peak", m.peak),
        ("peak_time", m.peak_time),
        ("final_value", m.final_value),
    ] {
        out.insert(k.into(), Dynamic::from_float(v));
    }
    if let Some(note) = m.note {
        out.insert("note".into(), note.into());
    }
    out
}

fn response_metrics(r: &Response, input: usize, many: bool) -> Rr<Vec<Map>> {
    let f = "step_metrics";
    let d = &r.data;
    let mut out = Vec::new();
    for i in 0..d.y.ncols() {
        let y: Vec<f64> = d.y.column(i).iter().copied().collect();
        let last = y.last().copied().unwrap_or(f64::NAN);
        let m = metrics::step_metrics_of(&d.t, &y, last, r.dt == 0.0).map_err(num(f))?;
        out.push(metrics_map(
            &m,
            (many || d.y.ncols() > 1).then_some((i, input)),
        ));
    }
    Ok(out)
}

fn step_metrics(v: &Dynamic, t_final: Option<&Dynamic>) -> Rr<Dynamic> {
    let f = "step_metrics";
    let single = |mut maps: Vec<Map>| -> Dynamic {
        if maps.len() == 1 {
            Dynamic::from_map(maps.remove(0))
        } else {
            Dynamic::from_array(maps.into_iter().map(Dynamic::from_map).collect())
        }
    };
    if let Some(r) = v.read_lock::<Response>() {
        return Ok(single(response_metrics(&r, 0, false)?));
    }
    if let Some(a) = v.read_lock::<Array>() {
        let mut maps = Vec::new();
        for (k, item) in a.iter().enumerate() {
            let Some(r) = item.read_lock::<Response>() else {
                return Err(fail(format!(
                    "{f}: element {k} must be a Response, found {}",
                    type_name(item)
                )));
            };
            maps.extend(response_metrics(&r, k, true)?);
        }
        return Ok(single(maps));
    }
    let sys = to_system(v, f, "sys_or_response").map_err(|_| {
        fail(format!(
            "{f}: expected a System, TransferFunction or Response, found {}",
            type_name(v)
        ))
    })?;
    let tf = t_final.map(|x| to_f64(x, f, "t_final")).transpose()?;
    let ch = metrics::model_step_metrics(&sys, tf).map_err(num(f))?;
    let siso = sys.inputs() == 1 && sys.outputs() == 1;
    Ok(single(
        ch.iter()
            .map(|c| metrics_map(&c.metrics, (!siso).then_some((c.output, c.input))))
            .collect(),
    ))
}

/// Calls a script function with numbers/arrays and reads back an array of numbers (a
/// plain number counts as one value).
fn call_vector(
    ctx: &NativeCallContext,
    fp: &FnPtr,
    args: impl rhai::FuncArgs,
) -> Result<Vec<f64>, String> {
    let v: Dynamic = fp
        .call_within_context(ctx, args)
        .map_err(|e| e.to_string())?;
    if let Ok(x) = v.as_float() {
        return Ok(vec![x]);
    }
    if let Ok(i) = v.as_int() {
        return Ok(vec![i as f64]);
    }
    if let Some(a) = v.read_lock::<Array>() {
        return a
            .iter()
            .enumerate()
            .map(|(k, x)| {
                x.as_float()
                    .or_else(|_| x.as_int().map(|i| i as f64))
                    .map_err(|_| {
                        format!(
                            "value {k} of the returned array is {}, expected a number",
                            type_name(x)
                        )
                    })
            })
            .collect();
    }
    if let Some(x) = v.read_lock::<Vector>() {
        return Ok(x.0.to_vec());
    }
    if let Some(m) = v.read_lock::<crate::script::types::Matrix>() {
        if m.0.ncols() == 1 || m.0.nrows() == 1 {
            return Ok(m.0.iter().copied().collect());
        }
    }
    Err(format!(
        "expected an array of numbers as the function's value, found {}",
        type_name(&v)
    ))
}

fn function_arg(v: &Dynamic, fname: &str, arg: &str) -> Rr<FnPtr> {
    if let Some(fp) = crate::script::convert::as_fnptr(v) {
        return Ok(fp);
    }
    if v.is_string() {
        let name = v.to_string();
        return FnPtr::new(name.as_str()).map_err(|e| fail(format!("{fname}: {arg}: {e}")));
    }
    Err(fail(format!(
        "{fname}: {arg} must be a function (a closure |t, x| … or Fn(\"name\")), found {}",
        type_name(v)
    )))
}

fn ode_options(m: &Map, t_final: f64) -> Rr<OdeOptions> {
    let f = "integrate_ode";
    check_keys(m, f, &["method", "rtol", "atol", "max_step", "samples"])?;
    let mut o = OdeOptions::default();
    if let Some(v) = m.get("method") {
        o.method = match to_str(v, f, "method")?.as_str() {
            "auto" => OdeMethod::Auto,
            "explicit" => OdeMethod::Explicit,
            "stiff" => OdeMethod::Stiff,
            other => {
                return Err(fail(format!(
                    "{f}: method must be \"auto\", \"explicit\" or \"stiff\", found \"{other}\""
                )))
            }
        };
    }
    if let Some(v) = m.get("rtol") {
        o.rtol = to_f64(v, f, "rtol")?;
    }
    if let Some(v) = m.get("atol") {
        o.atol = to_f64(v, f, "atol")?;
    }
    if let Some(v) = m.get("max_step") {
        o.max_step = Some(to_f64(v, f, "max_step")?);
    }
    if let Some(v) = m.get("samples") {
        o.samples = Some(if crate::script::convert::is_list(v) {
            to_f64_vec(v, f, "samples")?
        } else {
            let count = to_count(v, f, "samples")?;
            if !(2..=1_000_000).contains(&count) {
                return Err(fail(format!(
                    "{f}: samples as a count must be between 2 and 1000000, found {count}"
                )));
            }
            if !(t_final.is_finite() && t_final > 0.0) {
                return Err(fail(format!(
                    "{f}: t_final must be a positive time in seconds, found {t_final}"
                )));
            }
            (0..count)
                .map(|k| t_final * k as f64 / (count - 1) as f64)
                .collect()
        });
    }
    Ok(o)
}

fn integrate(
    ctx: &NativeCallContext,
    fv: &Dynamic,
    x0: &Dynamic,
    t_final: &Dynamic,
    options: Option<&Map>,
) -> Rr<Dynamic> {
    let f = "integrate_ode";
    let fp = function_arg(fv, f, "f")?;
    let x0 = to_f64_vec(x0, f, "x0")?;
    let t_final = to_f64(t_final, f, "t_final")?;
    if !(t_final.is_finite() && t_final > 0.0) {
        return Err(fail(format!(
            "{f}: t_final must be a positive time in seconds, found {t_final}"
        )));
    }
    let opts = match options {
        Some(m) => ode_options(m, t_final)?,
        None => OdeOptions::default(),
    };
    let n = x0.len();
    let mut rhs = |t: f64, x: &[f64], dx: &mut [f64]| -> Result<(), String> {
        let v = call_vector(ctx, &fp, (t as FLOAT, Dynamic::from_array(float_array(x))))?;
        if v.len() != dx.len() {
            return Err(format!(
                "f returned {} values, expected {} (one per state)",
                v.len(),
                dx.len()
            ));
        }
        dx.copy_from_slice(&v);
        Ok(())
    };
    let sol = ode::integrate_ode(&mut rhs, &x0, t_final, &opts).map_err(num(f))?;
    let rows = sol.t.len();
    let x = DMatrix::from_fn(rows, n, |i, j| sol.x[i][j]);
    if let Some(ts) = sol.stats.switched_to_stiff_at {
        state::warn(
            ctx,
            format!(
                "integrate_ode: the problem turned stiff near t = {ts:.4e}; switched to the stiff \
                 method for the rest of the interval"
            ),
        );
    }
    Ok(response_value(Response {
        data: sim::Response {
            t: sol.t,
            y: x.clone(),
            x: Some(x),
            u: DMatrix::zeros(rows, 0),
        }
        .into(),
        kind: "ODE solution".into(),
        outputs: (0..n).map(|i| format!("x[{i}]")).collect(),
        label: None,
        dt: 0.0,
    }))
}

fn linearize_fn(
    ctx: &NativeCallContext,
    fv: &Dynamic,
    gv: &Dynamic,
    x0: &Dynamic,
    u0: &Dynamic,
) -> Rr<Dynamic> {
    let name = "linearize_at";
    let fp = function_arg(fv, name, "f")?;
    let gp = function_arg(gv, name, "g")?;
    let x0 = to_f64_vec(x0, name, "x0")?;
    let u0 = to_f64_vec(u0, name, "u0")?;
    let call = |fp: &FnPtr, x: &[f64], u: &[f64]| {
        call_vector(
            ctx,
            fp,
            (
                Dynamic::from_array(float_array(x)),
                Dynamic::from_array(float_array(u)),
            ),
        )
    };
    let mut f = |x: &[f64], u: &[f64]| call(&fp, x, u);
    let mut g = |x: &[f64], u: &[f64]| call(&gp, x, u);
    let (a, b, c, d) = linearize::linearize_at(&mut f, &mut g, &x0, &u0).map_err(num(name))?;
    StateSpace::new(a, b, c, d, 0.0)
        .map(system_value)
        .map_err(num(name))
}

/// Registers the properties of a `Response` (`resp.t`, `resp.y`, …); the time-domain
/// functions are declared in `BUILTINS`.
pub fn register(engine: &mut Engine) {
    engine.register_get("t", |r: &mut Response| Vector(r.data.t.clone()));
    engine.register_get("y", |r: &mut Response| Matrix(r.data.y.clone()));
    engine.register_get("u", |r: &mut Response| Matrix(r.data.u.clone()));
    engine.register_get("x", |r: &mut Response| -> Rr<Dynamic> {
        match &r.data.x {
            Some(x) => Ok(Dynamic::from(Matrix(x.clone()))),
            None => Err(fail(
                "response: the states were not kept for this run (samples × states above \
                 1000000, or states: false)\nhint: pass #{ states: true } to simulate",
            )),
        }
    });
}

crate::builtins! {
    /// the discrete model with sample time dt (zero-order hold unless a method is given)
    ///
    /// dt in seconds (> 0); sys must be continuous (discretizing a discrete model is an
    /// error). method: "zoh" (input held between samples), "foh" (triangle hold: input
    /// linear between samples; states ξ[k] = x(t_k) − Γ₂u[k]), "tustin" (bilinear map;
    /// prewarp w in rad/s, 0 < w < π/dt, makes the frequency response exact at w),
    /// "impulse" (impulse invariance: hd[k] = dt·h(k·dt), so Bd = e^{A dt} B dt and Dd = C
    /// B dt; needs D = 0), "matched" (single-input single-output: poles and finite zeros
    /// mapped by z = e^{s dt}, zeros at infinity to z = −1, low-frequency gain matched).
    /// Hold methods use one block matrix exponential (Van Loan 1978).
    ///
    /// example:
    ///     let plant = state_space([[0, 1], [-4, -0.8]], [[0], [1]], [[1, 0]], 0);
    ///     let pd = discretize(plant, 0.05);
    ///     let pt = discretize(plant, 0.05, #{ method: "tustin", prewarp: 2 });
    #[family = "time domain"]
    fn discretize(call, sys: Dynamic, dt: Dynamic) -> Dynamic as "System" {
        discretize_fn(&sys, &dt, Method::Zoh)
    }
    fn discretize(call, sys: Dynamic, dt: Dynamic, method: Dynamic) -> Dynamic as "System" {
        discretize_fn(&sys, &dt, method_of(&method)?)
    }

    /// the continuous model whose zero-order hold is sysd (matrix logarithm)
    ///
    /// Inverts discretize(sys, dt): [A B] is the top of log([Ad Bd; 0 I])/dt. Fails, naming
    /// the eigenvalue, when Ad has an eigenvalue on the closed negative real axis (0
    /// included): then no real continuous model has this hold. Poles come back with |Im s|
    /// < π/dt (faster oscillations are aliased).
    ///
    /// example:
    ///     let back = to_continuous(discretize(plant, 0.05));
    #[family = "time domain"]
    fn to_continuous(call, sysd: Dynamic) -> Dynamic as "System" {
        let sys = to_system(&sysd, call.name, "sys")?;
        discretize::to_continuous(&sys)
            .map(system_value)
            .map_err(call.num())
    }

    /// the response to a unit step on each input, from rest
    ///
    /// t_final in seconds. Several inputs give an array of Responses, one per input.
    /// Samples are exact (discretised state transition, no ODE solver). Automatic horizon
    /// when t_final is omitted: 7 time constants of the slowest stable pole (7/|Re s|), 4
    /// e-folding times of an unstable one, 3 periods of an undamped oscillation, 10 s when
    /// only integrators remain; the step aims at 20 samples per fastest time scale 1/|s|,
    /// with 201 to 10001 samples. A discrete model uses its dt (poles mapped by s =
    /// ln(z)/dt for the rule).
    ///
    /// example:
    ///     let r = step_response(plant);
    ///     show(r);
    ///     plot_response(r)
    #[family = "time domain"]
    fn step_response(call, sys: Dynamic) -> Dynamic as "Response" {
        step(&sys, None)
    }
    fn step_response(call, sys: Dynamic, t_final: Dynamic) -> Dynamic as "Response" {
        step(&sys, Some(&t_final))
    }

    /// the response to a unit impulse on each input
    ///
    /// Continuous: the free motion from x(0⁺) = B (y = C e^{At} B); the feedthrough's
    /// D·δ(t) cannot be sampled and is left out (with a warning when D ≠ 0). Discrete: the
    /// unit pulse u[0] = 1. Horizon rule as step_response.
    ///
    /// example:
    ///     impulse_response(plant, 10)
    #[family = "time domain"]
    fn impulse_response(call, sys: Dynamic) -> Dynamic as "Response" {
        impulse(call.ctx(), &sys, None)
    }
    fn impulse_response(call, sys: Dynamic, t_final: Dynamic) -> Dynamic as "Response" {
        impulse(call.ctx(), &sys, Some(&t_final))
    }

    /// the motion from initial state x0 with zero input
    ///
    /// x0: array of n numbers. t_final in seconds (automatic horizon when omitted).
    ///
    /// example:
    ///     free_response(plant, [1, 0], 20)
    #[family = "time domain"]
    fn free_response(call, sys: Dynamic, x0: Dynamic) -> Dynamic as "Response" {
        free(&sys, &x0, None)
    }
    fn free_response(call, sys: Dynamic, x0: Dynamic, t_final: Dynamic) -> Dynamic as "Response" {
        free(&sys, &x0, Some(&t_final))
    }

    /// the response to an input sampled at uniform times t
    ///
    /// t: uniform, increasing times ≥ 0 in seconds (linear_grid). u: a Matrix with one row
    /// per sample and one column per input, an array (one input), or a function of t
    /// returning a number or an array. x0: initial state at t[0] (() for zero). Continuous
    /// models: hold "linear" (default; u linear between samples, exact for piecewise-linear
    /// u) or "zoh" (u[k] held until t[k+1]). Discrete models step x[k+1] = A x[k] + B u[k]
    /// once per sample; t's step must equal dt. states: keep .x (default true unless
    /// samples × states exceeds 1000000; .x then errors).
    ///
    /// example:
    ///     let t = linear_grid(0, 10, 501);
    ///     let r = simulate(plant, t, |t| sin(2 * t));
    ///     r.y
    #[family = "time domain"]
    fn simulate(call, sys: Dynamic, t: Dynamic, u: Dynamic) -> Dynamic as "Response" {
        simulate(&call, &sys, &t, &u, None, None)
    }
    fn simulate(call, sys: Dynamic, t: Dynamic, u: Dynamic, x0: Dynamic) -> Dynamic as "Response" {
        simulate(&call, &sys, &t, &u, Some(&x0), None)
    }
    fn simulate(
        call, sys: Dynamic, t: Dynamic, u: Dynamic, x0: Dynamic, options: Map,
    ) -> Dynamic as "Response" {
        simulate(&call, &sys, &t, &u, Some(&x0), Some(&options))
    }

    /// 10–90 % rise time, 2 % settling time, overshoot (%), peak and final value
    ///
    /// Times in seconds, measured from the start; changes relative to the initial value.
    /// Crossings refined by interpolation, the peak by a parabola. From a model: an
    /// accurate step response (20001 exact samples) with the final value from dc_gain; the
    /// model must be stable (an error names the pole otherwise). From a Response: the final
    /// value is its last sample (run it long enough). Several inputs/outputs give a table
    /// with input and output indices. Undefined entries (no change, never reaching 90 %,
    /// still outside the band at the end) are NaN.
    ///
    /// example:
    ///     step_metrics(plant).overshoot
    #[family = "time domain"]
    fn step_metrics(call, sys_or_response: Dynamic)
        -> Dynamic as "#{ rise_time, settling_time, overshoot, peak, peak_time, final_value }"
    {
        step_metrics(&sys_or_response, None)
    }
    fn step_metrics(call, sys: Dynamic, t_final: Dynamic)
        -> Dynamic as "#{ rise_time, settling_time, overshoot, peak, peak_time, final_value }"
    {
        step_metrics(&sys, Some(&t_final))
    }

    /// solves x' = f(t, x), x(0) = x0 up to t_final (adaptive, explicit or stiff)
    ///
    /// f: a closure |t, x| … or Fn("name") returning an array of n numbers. method: "auto"
    /// (default: Dormand–Prince 5(4), switching to Radau IIA when stiffness is detected),
    /// "explicit", "stiff". rtol (default 1e-6), atol (1e-9), max_step in seconds, samples
    /// (an array of times, or a count of uniform samples). The last row of .x is the state
    /// at t_final. Errors name the time reached: a failing or non-finite f, a wrong number
    /// of values, step size underflow.
    ///
    /// example:
    ///     let r = integrate_ode(|t, x| [x[1], -x[0]], [1, 0], 10, #{ samples: 101 });
    ///     r.x
    #[family = "time domain"]
    fn integrate_ode(call, f: Dynamic, x0: Dynamic, t_final: Dynamic) -> Dynamic as "Response" {
        integrate(call.ctx(), &f, &x0, &t_final, None)
    }
    fn integrate_ode(
        call, f: Dynamic, x0: Dynamic, t_final: Dynamic, options: Map,
    ) -> Dynamic as "Response" {
        integrate(call.ctx(), &f, &x0, &t_final, Some(&options))
    }

    /// the linear model of dx = f(x, u), y = g(x, u) about the point (x0, u0)
    ///
    /// f and g: closures |x, u| … returning arrays. A = ∂f/∂x, B = ∂f/∂u, C = ∂g/∂x, D =
    /// ∂g/∂u by central differences with steps ε^(1/3)·max(|v|, 1) per variable (error
    /// about 1e-10 relative). The model is in deviations from (x0, u0).
    ///
    /// example:
    ///     let f = |x, u| [x[1], -sin(x[0]) + u[0]];
    ///     let g = |x, u| [x[0]];
    ///     linearize_at(f, g, [0, 0], [0])
    #[family = "time domain"]
    fn linearize_at(call, f: Dynamic, g: Dynamic, x0: Dynamic, u0: Dynamic) -> Dynamic as "System" {
        linearize_fn(call.ctx(), &f, &g, &x0, &u0)
    }
}

/// JSON of a response: `{t, y, x, u}` (x is null when the states were not kept).
pub fn response_json(r: &Response) -> serde_json::Value {
    use crate::script::json::{float, matrix};
    let d = &r.data;
    serde_json::json!({
        "t": serde_json::Value::Array(d.t.iter().map(|&v| float(v)).collect()),
        "y": matrix(&d.y),
        "x": d.x.as_ref().map(|x| matrix(x)).unwrap_or(serde_json::Value::Null),
        "u": matrix(&d.u),
    })
}
