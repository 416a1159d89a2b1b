//! The sandbox through the binary, as a colleague's file would meet it: every refusal
//! (relative escape, absolute path, symlink out of the tree — file and folder —, import
//! escape, write escape) and the flags that widen it on purpose.

use std::path::{Path, PathBuf};
use std::process::Output;

use crate::common;
use common::cli::bin;

/// A fresh tree: `<tmp>/<name>/{project/, outside/}` with a model file outside.
fn tree(name: &str) -> (PathBuf, PathBuf) {
    let d = std::env::temp_dir().join(format!("statebook-sandbox-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    let project = d.join("project");
    let outside = d.join("outside");
    std::fs::create_dir_all(project.join("sub")).expect("project");
    std::fs::create_dir_all(&outside).expect("outside");
    let model = r#"{"format":"statebook-model","version":1,"kind":"state_space","A":[[-1.0]],"B":[[1.0]],"C":[[1.0]],"D":[[0.0]],"dt":0.0}"#;
    std::fs::write(outside.join("secret.json"), model).expect("model");
    std::fs::write(outside.join("evil.sbook"), "fn hello() { 42 }\n").expect("module");
    (project, outside)
}

fn run(project: &Path, body: &str, extra: &[&str]) -> Output {
    let f = project.join("analysis.sbook");
    std::fs::write(&f, format!("//== Test\n{body}\n")).expect("write");
    bin().args(extra).arg("run").arg(&f).output().expect("run")
}

fn refused(out: &Output, words: &str) {
    let e = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{e}");
    assert!(e.contains("outside the analysis folder"), "{e}");
    assert!(e.contains(words), "{e}");
}

fn allowed(out: &Output) {
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn relative_escape_is_refused() {
    let (p, _) = tree("relative");
    refused(
        &run(&p, r#"load_model("../outside/secret.json")"#, &[]),
        "--allow-read",
    );
    refused(
        &run(&p, r#"load_model("sub/../../outside/secret.json")"#, &[]),
        "--allow-read",
    );
}

#[test]
fn absolute_path_is_refused() {
    let (p, o) = tree("absolute");
    let abs = o.join("secret.json");
    refused(
        &run(
            &p,
            &format!("load_model({:?})", abs.display().to_string()),
            &[],
        ),
        "load_model",
    );
    refused(&run(&p, r#"load_model("/etc/passwd")"#, &[]), "load_model");
}

#[cfg(unix)]
#[test]
fn symlinks_out_of_the_tree_are_refused() {
    let (p, o) = tree("symlink");
    std::os::unix::fs::symlink(o.join("secret.json"), p.join("link.json")).expect("file link");
    std::os::unix::fs::symlink(&o, p.join("linkdir")).expect("dir link");
    std::os::unix::fs::symlink(o.join("evil.sbook"), p.join("mod.sbook")).expect("module link");
    refused(&run(&p, r#"load_model("link.json")"#, &[]), "link.json");
    refused(
        &run(&p, r#"load_model("linkdir/secret.json")"#, &[]),
        "linkdir",
    );
    refused(
        &run(
            &p,
            r#"save_model(state_space(-1, 1, 1, 0), "linkdir/new.json")"#,
            &[],
        ),
        "--allow-write",
    );
    assert!(!o.join("new.json").exists());
    refused(&run(&p, "import \"mod\" as m;\nm::hello()", &[]), "import");
    // A link that stays inside the tree is fine.
    std::os::unix::fs::symlink(p.join("sub"), p.join("inner-link")).expect("inner link");
    allowed(&run(
        &p,
        r#"save_model(state_space(-1, 1, 1, 0), "inner-link/m.json")"#,
        &[],
    ));
    assert!(p.join("sub/m.json").exists());
}

#[test]
fn import_escape_is_refused() {
    let (p, o) = tree("import");
    refused(
        &run(&p, "import \"../outside/evil\" as m;\nm::hello()", &[]),
        "import",
    );
    let abs = o.join("evil").display().to_string();
    refused(
        &run(&p, &format!("import {abs:?} as m;\nm::hello()"), &[]),
        "import",
    );
    // Computed module paths go through the same policy.
    refused(
        &run(
            &p,
            "let where = \"..\" + \"/outside/evil\";\nimport where as m;",
            &[],
        ),
        "import",
    );
    // Odd module names are plain errors, never a crash or a read outside.
    for odd in [
        "\"\"",
        "\"\\u0000x\"",
        "\"*\"",
        "\"~/x\"",
        "\"sub/\"",
        "\"..\"",
        "\"C:\\\\x\"",
    ] {
        let out = run(&p, &format!("import {odd} as m;"), &[]);
        assert_eq!(out.status.code(), Some(1), "import {odd}");
    }
    // And a module inside the tree imports fine.
    std::fs::write(p.join("sub/helpers.sbook"), "fn twice(x) { 2 * x }\n").expect("module");
    allowed(&run(
        &p,
        "import \"sub/helpers\" as h;\nrequire(h::twice(21) == 42, \"import\");",
        &[],
    ));
}

#[test]
fn write_escape_is_refused() {
    let (p, o) = tree("write");
    let save = |path: &str| format!("save_model(state_space(-1, 1, 1, 0), {path:?})");
    refused(&run(&p, &save("../outside/x.json"), &[]), "--allow-write");
    refused(
        &run(&p, &save(&o.join("y.json").display().to_string()), &[]),
        "--allow-write",
    );
    refused(
        &run(
            &p,
            r#"plot([0, 1], [0, 1]).save("../outside/fig.svg")"#,
            &[],
        ),
        "save",
    );
    assert!(
        !o.join("x.json").exists() && !o.join("y.json").exists() && !o.join("fig.svg").exists()
    );
    allowed(&run(&p, &save("sub/ok.json"), &[]));
    allowed(&run(&p, r#"plot([0, 1], [0, 1]).save("fig.svg")"#, &[]));
    assert!(p.join("sub/ok.json").exists() && p.join("fig.svg").exists());
}

#[test]
fn flags_widen_the_sandbox_on_purpose() {
    let (p, o) = tree("widen");
    let dir = o.display().to_string();
    allowed(&run(
        &p,
        r#"load_model("../outside/secret.json")"#,
        &["--allow-read", &dir],
    ));
    // Reading is not writing.
    refused(
        &run(
            &p,
            r#"save_model(state_space(-1, 1, 1, 0), "../outside/w.json")"#,
            &["--allow-read", &dir],
        ),
        "--allow-write",
    );
    allowed(&run(
        &p,
        r#"save_model(state_space(-1, 1, 1, 0), "../outside/w.json"); load_model("../outside/w.json")"#,
        &["--allow-write", &dir],
    ));
    assert!(o.join("w.json").exists());
    allowed(&run(
        &p,
        "import \"../outside/evil\" as m;\nrequire(m::hello() == 42, \"m\");",
        &["--allow-read", &dir],
    ));
}

#[test]
fn no_way_round_the_engine() {
    let (p, _) = tree("engine");
    for code in [
        "eval(\"1\")",
        "Engine::new()",
        "compile(\"1\")",
        "system(\"ls\")",
        "env(\"HOME\")",
    ] {
        let out = run(&p, code, &[]);
        assert_eq!(out.status.code(), Some(1), "{code} must fail");
    }
}

#[test]
fn repl_sandbox_is_the_working_directory() {
    let (p, o) = tree("repl");
    let out = common::cli::repl_piped(
        &p,
        "save_model(state_space(-1, 1, 1, 0), \"here.json\")\nload_model(\"../outside/secret.json\")\n",
    );
    let e = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{e}");
    assert!(p.join("here.json").exists(), "{e}");
    assert!(e.contains("outside the analysis folder"), "{e}");
    assert!(o.join("secret.json").exists());
}
