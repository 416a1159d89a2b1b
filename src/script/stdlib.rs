//! The standard library written in the statebook language itself (`stdlib/*.sbook`),
//! embedded at build time, compiled into every engine, and documented by its `///` blocks
//! so that `help` lists its functions like built-ins.

use super::docs::Doc;
use rhai::{Engine, Module, Scope};
use std::sync::OnceLock;

/// The embedded modules: (name, source).
pub const MODULES: &[(&str, &str)] = &[(
    "engineering",
    include_str!("../../stdlib/engineering.sbook"),
)];

/// Compiles the standard library into `engine`'s global namespace.
///
/// The sources are part of the binary and tested, so a failure here is a build defect;
/// it is reported on stderr once and the session continues without that module.
pub fn load(engine: &mut Engine) {
    for (name, src) in MODULES {
        match engine.compile(src) {
            Ok(ast) => match Module::eval_ast_as_new(Scope::new(), &ast, engine) {
                Ok(m) => {
                    engine.register_global_module(m.into());
                }
                Err(e) => eprintln!("internal error: stdlib module {name}: {e}"),
            },
            Err(e) => eprintln!("internal error: stdlib module {name}: {e}"),
        }
    }
}

/// Help entries parsed from the `///` blocks (usage, summary, details…, `example:` line).
pub fn docs() -> Vec<Doc> {
    static DOCS: OnceLock<Vec<Doc>> = OnceLock::new();
    DOCS.get_or_init(|| MODULES.iter().flat_map(|(_, src)| parse(src)).collect())
        .clone()
}

fn parse(src: &'static str) -> Vec<Doc> {
    let mut out = Vec::new();
    let mut block: Vec<&'static str> = Vec::new();
    for line in src.lines() {
        let t = line.trim_start();
        if let Some(rest) = t.strip_prefix("///") {
            block.push(rest.strip_prefix(' ').unwrap_or(rest));
            continue;
        }
        if let Some(sig) = t.strip_prefix("fn ") {
            let name = sig.split('(').next().unwrap_or("").trim();
            if !name.is_empty() && block.len() >= 2 {
                let mut details: Vec<&str> = Vec::new();
                let mut example = "";
                for l in &block[2..] {
                    if let Some(ex) = l.strip_prefix("example:") {
                        example = ex.trim();
                    } else {
                        details.push(l);
                    }
                }
                out.push(Doc {
                    name,
                    family: "library",
                    usage: block[0],
                    summary: block[1],
                    details: leak(&details.join("\n")),
                    example,
                });
            }
        }
        block.clear();
    }
    out
}

fn leak(s: &str) -> &'static str {
    // Parsed once per process (see the OnceLock above), so this is bounded.
    Box::leak(s.to_string().into_boxed_str())
}
