//! `wire`: models interconnected by signal name ([`crate::numeric::design::wire`]).

use crate::numeric::design::wire::{self, Part, WireSpec};
use crate::script::convert::{self, system_value, to_str, Rr};
use crate::script::declare::Call;
use rhai::{Array, Dynamic, Map};

/// The strings of `spec[key]` (an array of strings, or one string), or none when absent.
fn lines(call: &Call, spec: &Map, key: &str) -> Rr<Vec<String>> {
    let Some(v) = spec.get(key) else {
        return Ok(Vec::new());
    };
    if v.is_string() {
        return Ok(vec![to_str(v, call.name, key)?]);
    }
    let Some(a) = v.read_lock::<Array>() else {
        return Err(call.fail(format_args!(
            "spec.{key} must be an array of strings, found {}",
            convert::type_name(v)
        )));
    };
    a.iter()
        .enumerate()
        .map(|(k, s)| to_str(s, call.name, &format!("spec.{key}[{k}]")))
        .collect()
}

fn wire_models(call: &Call, parts: &Map, spec: &Map) -> Rr<Dynamic> {
    for k in spec.keys() {
        if !["inputs", "connect", "outputs"].contains(&k.as_str()) {
            return Err(call.fail(format_args!(
                "unknown key '{k}' in spec (use inputs, connect, outputs)"
            )));
        }
    }
    let parts = parts
        .iter()
        .map(|(name, v)| {
            convert::to_system(v, call.name, &format!("parts.{name}")).map(|model| Part {
                name: name.to_string(),
                model,
            })
        })
        .collect::<Rr<Vec<_>>>()?;
    let spec = WireSpec {
        inputs: lines(call, spec, "inputs")?,
        connections: lines(call, spec, "connect")?,
        outputs: lines(call, spec, "outputs")?,
    };
    let wired = wire::wire(&parts, &spec).map_err(call.num())?;
    for note in &wired.notes {
        call.warn(note);
    }
    Ok(system_value(wired.model))
}

crate::builtins! {
    /// models interconnected by signal name: connections, summing junctions, kept outputs
    ///
    /// parts: a map of named models, #{ plant: p, ctrl: k }. A part's signals are
    /// part.name with the names from name_signals, or part.u0, part.u1, … (inputs) and
    /// part.y0, … (outputs) where the part leaves them unnamed; a part with one input or
    /// one output may be called by its bare name.
    ///
    /// spec: #{ inputs, connect, outputs }, each an array of strings. inputs names the
    /// external inputs of the result. connect has one equation per part input,
    /// "part.input = sum", where sum adds and subtracts part outputs and external inputs,
    /// each optionally times a number ("ctrl.e = r - 0.5*plant.y"). outputs lists what the
    /// result outputs: a signal ("plant.position", named position), a named sum
    /// ("error = r - plant.position"), or the value arriving at a part input
    /// ("plant.force").
    ///
    /// Every part input must be driven exactly once; unknown names, inputs driven twice or
    /// not at all, and algebraic loops without a solution are errors naming the signals.
    /// Part outputs used nowhere and external inputs that drive nothing are warnings. The
    /// states are the parts' states in the map's (alphabetical) order of part names,
    /// named part.state; the result is not reduced to a minimal model.
    ///
    /// example:
    ///     let g = name_signals(transfer_function([2], [1, 3, 0]),
    ///         #{ inputs: ["force"], outputs: ["position"] });
    ///     let k = transfer_function([4, 1], [0.1, 1]);
    ///     let cl = wire(#{ plant: g, ctrl: k }, #{
    ///         inputs: ["r"],
    ///         connect: ["ctrl = r - plant.position", "plant.force = ctrl"],
    ///         outputs: ["plant.position", "plant.force"],
    ///     });
    ///     cl.output_names   // ["position", "force"]
    #[family = "design"]
    fn wire(call, parts: Map, spec: Map) -> Dynamic as "System" {
        wire_models(&call, &parts, &spec)
    }
}
