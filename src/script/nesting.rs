//! Display and equality of arrays and maps that stay bounded on pathological nesting.
//!
//! The engine's own versions recurse once per level of nesting through the function
//! dispatcher (~2 KiB of native stack a level), so `print` or `==` on an array nested a
//! few tens of thousands deep would overflow even a large stack. These replacements
//! behave the same on ordinary data (same text, same results) but show levels beyond
//! [`MAX_SHOWN_DEPTH`] as `[…]`/`#{…}` and refuse to compare values nested deeper than
//! [`crate::script::json::MAX_NESTING`].

use super::convert::{fail, Rr};
use super::json::{nested_deeper_than, MAX_NESTING};
use rhai::{Array, Dynamic, Engine, Map, NativeCallContext};
use std::cell::Cell;

/// Deepest level of nested arrays and maps that `print` and `to_string` spell out.
pub const MAX_SHOWN_DEPTH: usize = 64;

thread_local! {
    static DEPTH: Cell<usize> = const { Cell::new(0) };
}

/// Runs `f` one level deeper, or returns `None` past the shown depth.
fn deeper(f: impl FnOnce() -> String) -> Option<String> {
    let d = DEPTH.with(Cell::get);
    if d >= MAX_SHOWN_DEPTH {
        return None;
    }
    DEPTH.with(|c| c.set(d + 1));
    let s = f();
    DEPTH.with(|c| c.set(d));
    Some(s)
}

fn debug_of(ctx: &NativeCallContext, x: &mut Dynamic) -> String {
    match ctx.call_native_fn_raw("to_debug", true, &mut [x]) {
        Ok(r) => r
            .into_immutable_string()
            .map(|s| s.to_string())
            .unwrap_or_default(),
        Err(_) => x.type_name().to_string(),
    }
}

fn format_array(ctx: &NativeCallContext, a: &mut Array) -> String {
    deeper(|| {
        let items: Vec<String> = a.iter_mut().map(|x| debug_of(ctx, x)).collect();
        format!("[{}]", items.join(", "))
    })
    .unwrap_or_else(|| "[…]".into())
}

fn format_map(ctx: &NativeCallContext, m: &mut Map) -> String {
    deeper(|| {
        let items: Vec<String> = m
            .iter_mut()
            .map(|(k, v)| format!("{:?}: {}", k.as_str(), debug_of(ctx, v)))
            .collect();
        format!("#{{{}}}", items.join(", "))
    })
    .unwrap_or_else(|| "#{…}".into())
}

fn too_deep<'a>(items: impl Iterator<Item = &'a Dynamic>) -> Rr<()> {
    let mut items = items;
    if items.any(|x| nested_deeper_than(x, MAX_NESTING - 1)) {
        return Err(fail(format!(
            "==: values nested deeper than {MAX_NESTING} levels cannot be compared"
        )));
    }
    Ok(())
}

fn equal_items(ctx: &NativeCallContext, x: &mut Dynamic, y: &mut Dynamic) -> Rr<bool> {
    match ctx.call_native_fn_raw("==", true, &mut [x, y]) {
        Ok(r) => Ok(r.as_bool().unwrap_or(false)),
        Err(e) if matches!(*e, rhai::EvalAltResult::ErrorFunctionNotFound(..)) => {
            if x.type_id() == y.type_id() {
                Err(e)
            } else {
                Ok(false)
            }
        }
        Err(e) => Err(e),
    }
}

fn arrays_equal(ctx: &NativeCallContext, a: &mut Array, b: Array) -> Rr<bool> {
    if a.len() != b.len() {
        return Ok(false);
    }
    too_deep(a.iter().chain(b.iter()))?;
    let mut b = b;
    for (x, y) in a.iter_mut().zip(b.iter_mut()) {
        if !equal_items(ctx, x, y)? {
            return Ok(false);
        }
    }
    Ok(true)
}

fn maps_equal(ctx: &NativeCallContext, a: &mut Map, mut b: Map) -> Rr<bool> {
    if a.len() != b.len() {
        return Ok(false);
    }
    too_deep(a.values().chain(b.values()))?;
    for (k, x) in a.iter_mut() {
        let Some(y) = b.get_mut(k) else {
            return Ok(false);
        };
        if !equal_items(ctx, x, y)? {
            return Ok(false);
        }
    }
    Ok(true)
}

/// Registers the bounded display and equality of arrays and maps.
pub fn register(e: &mut Engine) {
    for name in ["print", "to_string", "debug", "to_debug"] {
        e.register_fn(name, |ctx: NativeCallContext, a: &mut Array| {
            format_array(&ctx, a)
        });
        e.register_fn(name, |ctx: NativeCallContext, m: &mut Map| {
            format_map(&ctx, m)
        });
    }
    e.register_fn("==", |ctx: NativeCallContext, a: &mut Array, b: Array| {
        arrays_equal(&ctx, a, b)
    });
    e.register_fn("!=", |ctx: NativeCallContext, a: &mut Array, b: Array| {
        arrays_equal(&ctx, a, b).map(|q| !q)
    });
    e.register_fn("==", |ctx: NativeCallContext, a: &mut Map, b: Map| {
        maps_equal(&ctx, a, b)
    });
    e.register_fn("!=", |ctx: NativeCallContext, a: &mut Map, b: Map| {
        maps_equal(&ctx, a, b).map(|q| !q)
    });
}

/// Drops values without recursing once per level of nesting: arrays, maps, closures'
/// captured values and shared cells are taken apart onto a work list first. Dropping
/// 300 000 closures that each capture the previous one recursed through every level and
/// overflowed the stack.
pub fn drop_flat(values: impl IntoIterator<Item = Dynamic>) {
    let mut work: Vec<Dynamic> = values.into_iter().collect();
    // A shared cell held only here gives up its value; one still held elsewhere gives a
    // shallow copy (the engine offers no reference count), so data shared many times
    // could be visited many times: past this many values the rest drop as usual.
    let mut visits: usize = 0;
    while let Some(v) = work.pop() {
        visits += 1;
        if visits > 20_000_000 {
            break;
        }
        let v = v.flatten();
        if v.is_fnptr() {
            if let Some(mut f) = v.try_cast::<rhai::FnPtr>() {
                work.extend(f.iter_curry_mut().map(std::mem::take));
            }
        } else if v.is_array() {
            if let Ok(a) = v.into_array() {
                work.extend(a);
            }
        } else if v.is_map() {
            if let Some(m) = v.try_cast::<Map>() {
                work.extend(m.into_values());
            }
        }
    }
}
