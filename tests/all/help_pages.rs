//! Every registered built-in has a help page, every page names something registered, and
//! every page's example runs. The help is the user's documentation: a name without a page
//! or an example that fails is a defect of the help (as `help sweep` calling a missing
//! `array.min()`, or `polynomial_value` without a page, once were).

use statebook::notebook::{files, run};
use statebook::script::docs;
use statebook::{Session, SessionOptions};
use std::collections::BTreeSet;

/// Names the engine has registered (native functions and the embedded library), with
/// property getters and setters as their property name.
fn registered() -> BTreeSet<String> {
    let mut s = Session::new(&SessionOptions::default());
    s.engine_mut()
        .collect_fn_metadata(None, |info| Some(info.metadata.name.to_string()), false)
        .into_iter()
        .map(|n| {
            n.strip_prefix("get$")
                .or_else(|| n.strip_prefix("set$"))
                .unwrap_or(&n)
                .to_string()
        })
        .collect()
}

/// Operators and engine plumbing: documented on the operator pages where they differ from
/// ordinary arithmetic (`^`, `%`), not one page per symbol; and `sleep`, registered only
/// to refuse the core package's version in an analysis.
fn exempt(name: &str) -> bool {
    name.chars().all(|c| "+-*/<>=!&|".contains(c))
        || matches!(
            name,
            "to_string" | "to_debug" | "debug" | "index$get$" | "index$set$" | "sleep"
        )
}

#[test]
fn every_registered_name_has_a_help_page() {
    let missing: Vec<String> = registered()
        .into_iter()
        .filter(|n| !exempt(n) && docs::find(n).is_none())
        .collect();
    assert!(missing.is_empty(), "no help page for: {missing:?}");
}

#[test]
fn every_help_page_names_something_registered() {
    let names = registered();
    // Pages of value types and of operators have no function of that name.
    let types_and_operators = ["Table", "Response", "Vector", "^", "%", "pi"];
    let stray: Vec<&str> = docs::all()
        .iter()
        .map(|d| d.name)
        .filter(|n| !names.contains(*n) && !types_and_operators.contains(n))
        .collect();
    assert!(
        stray.is_empty(),
        "help pages for names that do not exist: {stray:?}"
    );
}

#[test]
fn every_help_example_runs() {
    let dir = std::env::temp_dir().join(format!("statebook-help-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    // Examples may use a model called `plant` (and `sys`) without building it.
    let prelude = "let plant = state_space([[0, 1], [-4, -0.8]], [[0], [1]], [[1, 0]], 0);\n\
                   let sys = plant;\n";
    let mut failures = Vec::new();
    for d in docs::all() {
        if d.example.trim().is_empty() {
            failures.push(format!("{}: no example", d.name));
            continue;
        }
        let mut session = Session::new(&SessionOptions {
            root: dir.clone(),
            ..SessionOptions::default()
        });
        let text = format!("//== {}\n{prelude}{}\n", d.name, d.example);
        let prov = files::provenance("help-example.sbook", "");
        let r = run::run_text(&mut session, &text, "help-example.sbook", prov);
        if let Some(e) = run::first_error(&r) {
            failures.push(format!("{}: {e}", d.name));
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
    assert!(
        failures.is_empty(),
        "help examples that fail:\n{}",
        failures.join("\n\n")
    );
}

#[test]
fn every_declared_form_is_found_on_its_page() {
    // A page may group related names (`failures`, `successes`, `filter`): `help NAME` of
    // every form must open the page that declares it.
    for table in statebook::script::builtins::DECLARED {
        for b in table.iter() {
            for f in b.forms {
                let page = docs::find(f.name).map(|d| d.name);
                assert_eq!(
                    page,
                    Some(b.name),
                    "`help {}` does not open the page `{}` that declares it",
                    f.name,
                    b.name
                );
            }
            assert!(
                docs::FAMILIES.contains(&b.family),
                "`{}` is in an unknown family `{}`",
                b.name,
                b.family
            );
        }
    }
}

/// An expression giving a value of a method receiver's type.
fn receiver_of(ty: &str) -> &'static str {
    match ty {
        "Table" => "sweep(#{ k: [1, 2] }, |p| #{ y: p.k })",
        "Figure" => "plot([0, 1], [0, 1])",
        "Matrix" => "identity(2)",
        other => panic!("no test receiver for the type {other}"),
    }
}

/// A declared built-in words its errors once: called with arguments of the wrong kind
/// (`()` for each), it fails with `name: …`, never `name: name: …`.
#[test]
fn declared_built_ins_word_argument_errors_once() {
    let dir = std::env::temp_dir().join(format!("statebook-wording-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let mut problems = Vec::new();
    for table in statebook::script::builtins::DECLARED {
        for b in table.iter() {
            for f in b.forms {
                if f.args.is_empty() || f.args.iter().all(|(_, k)| *k == "value") {
                    continue;
                }
                let units = vec!["()"; f.args.len()].join(", ");
                // A method form is called on a real receiver of its type.
                let text = match f.receiver {
                    None => format!("//== call\n{}({units});\n", f.name),
                    Some((_, ty)) => format!(
                        "//== call\nlet r = {};\nr.{}({units});\n",
                        receiver_of(ty),
                        f.name
                    ),
                };
                let mut session = Session::new(&SessionOptions {
                    root: dir.clone(),
                    ..SessionOptions::default()
                });
                let prov = files::provenance("wording.sbook", "");
                let r = run::run_text(&mut session, &text, "wording.sbook", prov);
                let Some(e) = run::first_error(&r) else {
                    problems.push(format!("{}({units}) did not fail", b.name));
                    continue;
                };
                let e = e.to_string();
                let doubled = format!("{0}: {0}:", f.name);
                if !e.contains(&format!("{}: ", f.name)) || e.contains(&doubled) {
                    problems.push(format!("{}({units}): {e}", f.name));
                }
            }
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}
