//! statebook: a notebook-style scripting language for engineers who work with linear
//! state-space models. Plain-text analysis files run from the shell, a REPL explores, and
//! a self-contained HTML report carries the analysis to a colleague.
//!
//! Layers (data flows one way): text → [`notebook`] → [`script`] (engine and bindings) →
//! [`numeric`] (pure numerics) → values → [`display`] / [`report`] / [`plot`].
#![deny(missing_docs)]

pub mod budget;
pub mod display;
pub mod guard;
pub mod notebook;
pub mod numeric;
pub mod plot;
pub mod repl;
pub mod report;
pub mod safe_fs;
pub mod sandbox;
pub mod script;

pub use script::session::{Session, SessionOptions};

#[cfg(test)]
mod layers {
    //! The layer rule of ARCHITECTURE.md, checked on the source: a layer never imports a
    //! layer above it (numeric ← script ← notebook ← report/repl).

    fn sources(dir: &std::path::Path, out: &mut Vec<std::path::PathBuf>) {
        for e in std::fs::read_dir(dir).into_iter().flatten().flatten() {
            let p = e.path();
            if p.is_dir() {
                sources(&p, out);
            } else if p.extension().is_some_and(|x| x == "rs") {
                out.push(p);
            }
        }
    }

    #[test]
    fn no_layer_imports_a_layer_above_it() {
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
        let rules: [(&str, &[&str]); 3] = [
            (
                "numeric",
                &["script", "notebook", "report", "repl", "display", "plot"],
            ),
            ("script", &["notebook", "report", "repl"]),
            ("notebook", &["report", "repl"]),
        ];
        let mut bad = Vec::new();
        for (layer, above) in rules {
            let mut files = Vec::new();
            sources(&root.join(layer), &mut files);
            assert!(!files.is_empty(), "no sources under src/{layer}");
            for f in files {
                let text = std::fs::read_to_string(&f).unwrap_or_default();
                for up in above {
                    if text.contains(&format!("crate::{up}::")) {
                        bad.push(format!("{} imports crate::{up}", f.display()));
                    }
                }
            }
        }
        assert!(bad.is_empty(), "layer cycle:\n{}", bad.join("\n"));
    }
}
