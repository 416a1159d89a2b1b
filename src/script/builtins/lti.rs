//! Model built-ins: construction, conversion, properties, transforms, structure,
//! equivalence, and model files.

use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::tf::TransferFunction as Tf;
use crate::numeric::lti::{
    balance, equivalence as eqv, modal, properties, realize, staircase, transform, zeros,
};
use crate::script::convert::{
    complex_array, fail, matrix_value, num, system_value, to_count, to_f64, to_f64_vec, to_matrix,
    to_str, to_system, type_name, Rr,
};
use crate::script::state;
use crate::script::types::{Complex, System, TransferFunction};
use nalgebra::DMatrix;
use rhai::{Array, Dynamic, Engine, Map, NativeCallContext, INT};

mod docs;
mod files;
pub use docs::DOCS;

fn d_matrix(v: &Dynamic, p: usize, m: usize) -> Rr<DMatrix<f64>> {
    // A plain 0 stands for the zero feedthrough of any size.
    if let Some(x) = v
        .as_int()
        .ok()
        .map(|i| i as f64)
        .or_else(|| v.as_float().ok())
    {
        if x == 0.0 {
            return Ok(DMatrix::zeros(p, m));
        }
    }
    to_matrix(v, "state_space", "D")
}

fn make_system(a: &Dynamic, b: &Dynamic, c: &Dynamic, d: &Dynamic, dt: f64) -> Rr<Dynamic> {
    let f = "state_space";
    let a = to_matrix(a, f, "A")?;
    let b = to_matrix(b, f, "B")?;
    let c = to_matrix(c, f, "C")?;
    let d = d_matrix(d, c.nrows(), b.ncols())?;
    StateSpace::new(a, b, c, d, dt)
        .map(system_value)
        .map_err(num(f))
}

fn tf_value(t: Tf) -> Dynamic {
    Dynamic::from(TransferFunction(t))
}

fn warn_all(ctx: &NativeCallContext, w: &[String]) {
    for m in w {
        state::warn(ctx, m.clone());
    }
}

fn realization(system: StateSpace, t: DMatrix<f64>) -> Map {
    let mut m = Map::new();
    m.insert("system".into(), system_value(system));
    m.insert("transform".into(), matrix_value(t));
    m
}

fn names_of(v: &Dynamic, what: &str, count: usize) -> Rr<Vec<String>> {
    let Some(a) = v.read_lock::<Array>() else {
        return Err(fail(format!(
            "name_signals: {what} must be an array of strings"
        )));
    };
    if a.len() != count {
        return Err(fail(format!(
            "name_signals: {what} has {} names, but the model has {count}",
            a.len()
        )));
    }
    a.iter()
        .enumerate()
        .map(|(k, s)| to_str(s, "name_signals", &format!("{what}[{k}]")))
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

/// Registers the model built-ins.
pub fn register(engine: &mut Engine) {
    engine.register_type_with_name::<System>("System");
    engine.register_type_with_name::<TransferFunction>("TransferFunction");

    // Construction and conversion.
    engine.register_fn(
        "state_space",
        |a: Dynamic, b: Dynamic, c: Dynamic, d: Dynamic| make_system(&a, &b, &c, &d, 0.0),
    );
    engine.register_fn(
        "state_space",
        |a: Dynamic, b: Dynamic, c: Dynamic, d: Dynamic, dt: Dynamic| -> Rr<Dynamic> {
            let dt = to_f64(&dt, "state_space", "dt")?;
            if !(dt > 0.0 && dt.is_finite()) {
                return Err(fail(format!(
                    "state_space: dt must be a positive sample time in seconds, found {dt}\nhint: \
                     leave dt out for a continuous model"
                )));
            }
            make_system(&a, &b, &c, &d, dt)
        },
    );
    engine.register_fn("state_space", |g: Dynamic| -> Rr<Dynamic> {
        to_system(&g, "state_space", "tf").map(system_value)
    });
    engine.register_fn(
        "transfer_function",
        |n: Dynamic, d: Dynamic| -> Rr<Dynamic> {
            let f = "transfer_function";
            Tf::new(&to_f64_vec(&n, f, "num")?, &to_f64_vec(&d, f, "den")?, 0.0)
                .map(tf_value)
                .map_err(num(f))
        },
    );
    engine.register_fn(
        "transfer_function",
        |n: Dynamic, d: Dynamic, dt: Dynamic| -> Rr<Dynamic> {
            let f = "transfer_function";
            let dt = to_f64(&dt, f, "dt")?;
            if !(dt > 0.0 && dt.is_finite()) {
                return Err(fail(format!(
                    "transfer_function: dt must be a positive sample time, found {dt}"
                )));
            }
            Tf::new(&to_f64_vec(&n, f, "num")?, &to_f64_vec(&d, f, "den")?, dt)
                .map(tf_value)
                .map_err(num(f))
        },
    );
    engine.register_fn("to_transfer_function", |s: Dynamic| -> Rr<Dynamic> {
        let f = "to_transfer_function";
        let sys = to_system(&s, f, "sys")?;
        let grid = realize::to_transfer_function(&sys).map_err(num(f))?;
        if sys.inputs() == 1 && sys.outputs() == 1 {
            if let Some(t) = grid.into_iter().next().and_then(|r| r.into_iter().next()) {
                return Ok(tf_value(t));
            }
            return Err(fail("to_transfer_function: empty model"));
        }
        Ok(Dynamic::from_array(
            grid.into_iter()
                .map(|row| Dynamic::from_array(row.into_iter().map(tf_value).collect()))
                .collect(),
        ))
    });
    engine.register_fn(
        "channel",
        |s: Dynamic, i: Dynamic, j: Dynamic| -> Rr<Dynamic> {
            let f = "channel";
            let sys = to_system(&s, f, "sys")?;
            let (i, j) = (to_count(&i, f, "output")?, to_count(&j, f, "input")?);
            sys.channel(i, j).map(system_value).map_err(num(f))
        },
    );
    engine.register_fn("name_signals", |s: Dynamic, names: Map| -> Rr<Dynamic> {
        let mut sys = to_system(&s, "name_signals", "sys")?;
        for k in names.keys() {
            if !["inputs", "outputs", "states"].contains(&k.as_str()) {
                return Err(fail(format!(
                    "name_signals: unknown key '{k}' (use inputs, outputs, states)"
                )));
            }
        }
        if let Some(v) = names.get("inputs") {
            sys.names.inputs = names_of(v, "inputs", sys.inputs())?;
        }
        if let Some(v) = names.get("outputs") {
            sys.names.outputs = names_of(v, "outputs", sys.outputs())?;
        }
        if let Some(v) = names.get("states") {
            sys.names.states = names_of(v, "states", sys.order())?;
        }
        Ok(system_value(sys))
    });

    // Getters.
    engine.register_get("A", |s: &mut System| matrix_value(s.0.a.clone()));
    engine.register_get("B", |s: &mut System| matrix_value(s.0.b.clone()));
    engine.register_get("C", |s: &mut System| matrix_value(s.0.c.clone()));
    engine.register_get("D", |s: &mut System| matrix_value(s.0.d.clone()));
    engine.register_get("dt", |s: &mut System| s.0.dt);
    engine.register_get("order", |s: &mut System| s.0.order() as INT);
    engine.register_get("input_count", |s: &mut System| s.0.inputs() as INT);
    engine.register_get("output_count", |s: &mut System| s.0.outputs() as INT);
    engine.register_get("num", |t: &mut TransferFunction| {
        Dynamic::from_array(crate::script::convert::float_array(&t.0.num))
    });
    engine.register_get("den", |t: &mut TransferFunction| {
        Dynamic::from_array(crate::script::convert::float_array(&t.0.den))
    });
    engine.register_get("dt", |t: &mut TransferFunction| t.0.dt);
    engine.register_get("order", |t: &mut TransferFunction| t.0.order() as INT);

    // Properties.
    engine.register_fn("poles", |s: Dynamic| -> Rr<Array> {
        let sys = to_system(&s, "poles", "sys")?;
        properties::poles(&sys)
            .map(|v| complex_array(&v))
            .map_err(num("poles"))
    });
    engine.register_fn("zeros", |s: Dynamic| -> Rr<Array> {
        let sys = to_system(&s, "zeros", "sys")?;
        zeros::transmission_zeros(&sys.a, &sys.b, &sys.c, &sys.d)
            .map(|v| complex_array(&v))
            .map_err(num("zeros"))
    });
    engine.register_fn("dc_gain", |s: Dynamic| -> Rr<Dynamic> {
        let sys = to_system(&s, "dc_gain", "sys")?;
        properties::dc_gain(&sys)
            .map(matrix_value)
            .map_err(num("dc_gain"))
    });
    engine.register_fn("is_stable", |s: Dynamic| -> Rr<bool> {
        let sys = to_system(&s, "is_stable", "sys")?;
        properties::is_stable(&sys).map_err(num("is_stable"))
    });
    engine.register_fn("modes", |s: Dynamic| -> Rr<Array> {
        let sys = to_system(&s, "modes", "sys")?;
        let m = properties::modes(&sys).map_err(num("modes"))?;
        Ok(m.iter().map(|x| Dynamic::from_map(mode_map(x))).collect())
    });
    engine.register_fn("markov_parameters", |s: Dynamic, k: Dynamic| -> Rr<Array> {
        let sys = to_system(&s, "markov_parameters", "sys")?;
        let k = to_count(&k, "markov_parameters", "count")?;
        if k > 100_000 {
            return Err(fail("markov_parameters: count must be at most 100000"));
        }
        let each = sys.d.nrows() * sys.d.ncols();
        crate::script::convert::check_entries("markov_parameters", k, each)?;
        Ok(sys
            .markov_parameters(k)
            .into_iter()
            .map(matrix_value)
            .collect())
    });

    // Transforms.
    engine.register_fn(
        "transform_state",
        |ctx: NativeCallContext, s: Dynamic, t: Dynamic| -> Rr<Dynamic> {
            let f = "transform_state";
            let sys = to_system(&s, f, "sys")?;
            let t = to_matrix(&t, f, "T")?;
            let (new, cond) = transform::transform_state(&sys, &t).map_err(num(f))?;
            warn_all(
                &ctx,
                &transform::condition_warning(f, cond)
                    .into_iter()
                    .collect::<Vec<_>>(),
            );
            Ok(system_value(new))
        },
    );
    engine.register_fn(
        "modal_realization",
        |ctx: NativeCallContext, s: Dynamic| -> Rr<Map> {
            let f = "modal_realization";
            let m = modal::modal_realization(&to_system(&s, f, "sys")?).map_err(num(f))?;
            warn_all(&ctx, &m.warnings);
            Ok(realization(m.system, m.t))
        },
    );
    engine.register_fn(
        "jordan_realization",
        |ctx: NativeCallContext, s: Dynamic| -> Rr<Map> {
            let f = "jordan_realization";
            let m = modal::jordan_realization(&to_system(&s, f, "sys")?).map_err(num(f))?;
            warn_all(&ctx, &m.warnings);
            Ok(realization(m.system, m.t))
        },
    );
    engine.register_fn(
        "controllable_realization",
        |ctx: NativeCallContext, s: Dynamic| -> Rr<Map> {
            let f = "controllable_realization";
            let (sys, t, cond) =
                realize::controllable_companion(&to_system(&s, f, "sys")?).map_err(num(f))?;
            warn_all(
                &ctx,
                &transform::condition_warning(f, cond)
                    .into_iter()
                    .collect::<Vec<_>>(),
            );
            Ok(realization(sys, t))
        },
    );
    engine.register_fn(
        "observable_realization",
        |ctx: NativeCallContext, s: Dynamic| -> Rr<Map> {
            let f = "observable_realization";
            let (sys, t, cond) =
                realize::observable_companion(&to_system(&s, f, "sys")?).map_err(num(f))?;
            warn_all(
                &ctx,
                &transform::condition_warning(f, cond)
                    .into_iter()
                    .collect::<Vec<_>>(),
            );
            Ok(realization(sys, t))
        },
    );
    engine.register_fn(
        "balanced_realization",
        |ctx: NativeCallContext, s: Dynamic| -> Rr<Map> {
            let f = "balanced_realization";
            let sys = to_system(&s, f, "sys")?;
            let b = balance::balanced_realization(&sys.a, &sys.b, &sys.c, &sys.d, sys.dt)
                .map_err(num(f))?;
            let new = sys.with_matrices(b.a, b.b, b.c, b.d).map_err(num(f))?;
            let cond = 1.0 / realize_rcond(&b.t);
            warn_all(
                &ctx,
                &transform::condition_warning(f, cond)
                    .into_iter()
                    .collect::<Vec<_>>(),
            );
            let mut m = realization(new, b.t);
            m.insert(
                "hankel_singular_values".into(),
                Dynamic::from_array(crate::script::convert::float_array(
                    &b.hankel_singular_values,
                )),
            );
            Ok(m)
        },
    );
    engine.register_fn(
        "balanced_truncation",
        |s: Dynamic, order: Dynamic| -> Rr<Map> {
            let f = "balanced_truncation";
            let sys = to_system(&s, f, "sys")?;
            let order = to_count(&order, f, "order")?;
            let r = balance::balanced_truncation(&sys.a, &sys.b, &sys.c, &sys.d, sys.dt, order)
                .map_err(num(f))?;
            let mut new = StateSpace::new(r.a, r.b, r.c, r.d, sys.dt).map_err(num(f))?;
            new.names.inputs = sys.names.inputs.clone();
            new.names.outputs = sys.names.outputs.clone();
            let mut m = Map::new();
            m.insert("system".into(), system_value(new));
            m.insert(
                "hankel_singular_values".into(),
                Dynamic::from_array(crate::script::convert::float_array(
                    &r.hankel_singular_values,
                )),
            );
            m.insert("error_bound".into(), Dynamic::from_float(r.error_bound));
            Ok(m)
        },
    );
    engine.register_fn("minimal_realization", |s: Dynamic| -> Rr<Map> {
        let f = "minimal_realization";
        let sys = to_system(&s, f, "sys")?;
        let r =
            staircase::minimal_realization(&sys.a, &sys.b, &sys.c, &sys.d, None).map_err(num(f))?;
        let new = sys.with_matrices(r.a, r.b, r.c, r.d).map_err(num(f))?;
        let mut m = Map::new();
        m.insert("system".into(), system_value(new));
        m.insert("removed".into(), Dynamic::from_int(r.removed as INT));
        m.insert(
            "uncontrollable_removed".into(),
            Dynamic::from_int(r.uncontrollable_removed as INT),
        );
        m.insert(
            "unobservable_removed".into(),
            Dynamic::from_int(r.unobservable_removed as INT),
        );
        Ok(m)
    });
    engine.register_fn(
        "kalman_decomposition",
        |ctx: NativeCallContext, s: Dynamic| -> Rr<Map> {
            let f = "kalman_decomposition";
            let sys = to_system(&s, f, "sys")?;
            let k = staircase::kalman_decomposition(&sys.a, &sys.b, &sys.c, &sys.d, None)
                .map_err(num(f))?;
            let new = sys.with_matrices(k.a, k.b, k.c, k.d).map_err(num(f))?;
            let cond = 1.0 / realize_rcond(&k.t);
            warn_all(
                &ctx,
                &transform::condition_warning(f, cond)
                    .into_iter()
                    .collect::<Vec<_>>(),
            );
            let mut m = realization(new, k.t);
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
        },
    );

    // Structure.
    engine.register_fn("controllability_matrix", |s: Dynamic| -> Rr<Dynamic> {
        let f = "controllability_matrix";
        let sys = to_system(&s, f, "sys")?;
        staircase::controllability_matrix(&sys.a, &sys.b)
            .map(matrix_value)
            .map_err(num(f))
    });
    engine.register_fn("observability_matrix", |s: Dynamic| -> Rr<Dynamic> {
        let f = "observability_matrix";
        let sys = to_system(&s, f, "sys")?;
        staircase::observability_matrix(&sys.a, &sys.c)
            .map(matrix_value)
            .map_err(num(f))
    });
    engine.register_fn("is_controllable", |s: Dynamic| -> Rr<bool> {
        let f = "is_controllable";
        let sys = to_system(&s, f, "sys")?;
        staircase::is_controllable(&sys.a, &sys.b, None).map_err(num(f))
    });
    engine.register_fn("is_observable", |s: Dynamic| -> Rr<bool> {
        let f = "is_observable";
        let sys = to_system(&s, f, "sys")?;
        staircase::is_observable(&sys.a, &sys.c, None).map_err(num(f))
    });
    engine.register_fn("uncontrollable_modes", |s: Dynamic| -> Rr<Array> {
        let f = "uncontrollable_modes";
        let sys = to_system(&s, f, "sys")?;
        staircase::uncontrollable_modes(&sys.a, &sys.b, None)
            .map(|v| complex_array(&v))
            .map_err(num(f))
    });
    engine.register_fn("unobservable_modes", |s: Dynamic| -> Rr<Array> {
        let f = "unobservable_modes";
        let sys = to_system(&s, f, "sys")?;
        staircase::unobservable_modes(&sys.a, &sys.c, None)
            .map(|v| complex_array(&v))
            .map_err(num(f))
    });
    engine.register_fn("controllability_gramian", |s: Dynamic| -> Rr<Dynamic> {
        let f = "controllability_gramian";
        let sys = to_system(&s, f, "sys")?;
        balance::controllability_gramian(&sys.a, &sys.b, sys.dt)
            .map(matrix_value)
            .map_err(num(f))
    });
    engine.register_fn("observability_gramian", |s: Dynamic| -> Rr<Dynamic> {
        let f = "observability_gramian";
        let sys = to_system(&s, f, "sys")?;
        balance::observability_gramian(&sys.a, &sys.c, sys.dt)
            .map(matrix_value)
            .map_err(num(f))
    });
    engine.register_fn("hankel_singular_values", |s: Dynamic| -> Rr<Array> {
        let f = "hankel_singular_values";
        let sys = to_system(&s, f, "sys")?;
        balance::hankel_singular_values(&sys.a, &sys.b, &sys.c, sys.dt)
            .map(|v| crate::script::convert::float_array(&v))
            .map_err(num(f))
    });

    // Equivalence.
    engine.register_fn("equivalence", |a: Dynamic, b: Dynamic| -> Rr<Map> {
        let f = "equivalence";
        let (a, b) = (to_system(&a, f, "a")?, to_system(&b, f, "b")?);
        let e = eqv::equivalence(&a, &b).map_err(num(f))?;
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
    });
    engine.register_fn("find_transform", |a: Dynamic, b: Dynamic| -> Rr<Dynamic> {
        let f = "find_transform";
        let (a, b) = (to_system(&a, f, "a")?, to_system(&b, f, "b")?);
        eqv::find_transform(&a, &b)
            .map(matrix_value)
            .map_err(num(f))
    });

    files::register(engine);
    let _ = type_name;
}

fn realize_rcond(t: &DMatrix<f64>) -> f64 {
    transform::rcond(t).max(f64::MIN_POSITIVE)
}
