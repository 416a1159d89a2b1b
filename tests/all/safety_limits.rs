//! Limits and the panic guard, through the library: each limit stops its runaway with a
//! clear error, within loose time bounds, and a panicking built-in becomes an internal
//! error that names its line instead of a crash.

use statebook::sandbox::Limits;
use statebook::{Session, SessionOptions};
use std::time::{Duration, Instant};

fn session(limits: Limits) -> Session {
    Session::new(&SessionOptions {
        root: std::env::temp_dir(),
        limits,
        ..SessionOptions::default()
    })
}

fn error_of(s: &mut Session, code: &str) -> statebook::script::diagnostic::ScriptError {
    match s.eval(code) {
        Ok(v) => panic!("expected an error from {code:?}, got {v:?}"),
        Err(e) => e,
    }
}

#[test]
fn endless_loops_stop_by_default_within_seconds() {
    for code in [
        "loop {}",
        "let x = 0; loop { x += 1; }",
        "let i = 0; while i < 10 { }",
    ] {
        let t = Instant::now();
        let e = error_of(&mut session(Limits::default()), code);
        assert!(
            e.message.contains("operation limit"),
            "{code}: {}",
            e.message
        );
        assert!(
            t.elapsed() < Duration::from_secs(30),
            "{code}: {:?}",
            t.elapsed()
        );
    }
}

#[test]
fn deep_recursion_is_an_error_not_a_stack_overflow() {
    let code = "fn deep(n) { let a = [n, #{x: [n]}]; 1 + (2 * (3 + deep(n + 1))) }\ndeep(0)";
    let e = error_of(&mut session(Limits::default()), code);
    assert!(e.message.contains("nested too deeply"), "{}", e.message);
    // Raised on purpose, the deeper limit still fits the evaluation's stack.
    let e = error_of(
        &mut session(Limits {
            call_depth: 5_000,
            ..Limits::default()
        }),
        code,
    );
    assert!(e.message.contains("nested too deeply"), "{}", e.message);
}

#[test]
fn string_and_array_sizes_are_limited() {
    let mut s = session(Limits::default());
    let e = error_of(&mut s, "let s = \"x\"; loop { s += s; }");
    let hints = e.hints.join("\n");
    assert!(
        e.message.contains("string") && hints.contains("--max-string-size"),
        "{} / {hints}",
        e.message
    );
    let e = error_of(&mut s, "let a = [1]; loop { a += a; }");
    assert!(e.message.contains("array"), "{}", e.message);
    let mut small = session(Limits {
        string_size: 100,
        array_size: 100,
        ..Limits::default()
    });
    let e = error_of(&mut small, "let a = []; for i in 0..1000 { a.push(i); }");
    assert!(e.message.contains("array"), "{}", e.message);
}

#[test]
fn matrix_size_is_refused_before_allocating() {
    let mut s = session(Limits::default());
    for code in [
        "zero_matrix(100000, 100000)",
        "filled(100000, 100000, 1.5)",
        "identity(100000)",
        "column(linear_grid(0, 1, 100000)) * row(linear_grid(0, 1, 100000))",
        "diagonal(linear_grid(0, 1, 100000))",
        "let Z = zero_matrix(4000, 4000); block([[Z, Z], [Z, Z]])",
    ] {
        let t = Instant::now();
        let e = error_of(&mut s, code);
        assert!(e.message.contains("size limit"), "{code}: {}", e.message);
        assert!(t.elapsed() < Duration::from_secs(30), "{code}");
    }
    let mut tight = session(Limits {
        matrix_entries: 10,
        ..Limits::default()
    });
    let e = error_of(
        &mut tight,
        "matrix([[1, 2, 3, 4], [5, 6, 7, 8], [9, 10, 11, 12]])",
    );
    assert!(e.message.contains("3×4"), "{}", e.message);
}

#[test]
fn wall_clock_timeout_stops_a_run() {
    let mut s = session(Limits {
        operations: 0, // no operation limit: only the clock stops it
        timeout_seconds: 0.5,
        ..Limits::default()
    });
    let t = Instant::now();
    let e = error_of(&mut s, "let x = 0.0; loop { x += 1.0; }");
    assert!(e.message.contains("--timeout"), "{}", e.message);
    assert!(t.elapsed() < Duration::from_secs(30));
}

#[test]
fn eval_is_not_available() {
    let mut s = session(Limits::default());
    let e = error_of(&mut s, "eval(\"1 + 1\")");
    assert!(e.message.contains("eval"), "{}", e.message);
}

#[test]
fn a_panicking_builtin_is_an_internal_error_naming_its_line() {
    let mut s = session(Limits::default());
    let _ = s
        .engine_mut()
        .register_fn("broken_for_tests", |x: i64| -> i64 {
            if x > 2 {
                panic!("deliberate test panic")
            }
            x
        });
    let _ = s.eval("let a = 1;").expect("first piece");
    let code =
        "let b = broken_for_tests(1);\nlet c = 2;\n\nlet d = broken_for_tests(7);\nlet e = 3;";
    let e = error_of(&mut s, code);
    assert!(e.internal, "{e:?}");
    assert!(e.message.contains("internal error"), "{}", e.message);
    assert!(e.message.contains("deliberate test panic"), "{}", e.message);
    assert_eq!(e.line, Some(4), "{e:?}");
    // The session goes on, with the state from before the failing piece.
    assert_eq!(s.eval("a + 1").expect("after").as_int().ok(), Some(2));
    let r = s.eval("fn f(n) { if n == 0 { broken_for_tests(9) } else { f(n - 1) } }\nf(3)");
    let e = r.expect_err("panics inside script functions too");
    assert!(e.internal && e.line.is_some(), "{e:?}");
}

#[test]
fn deeply_nested_data_is_refused_by_the_encoders_and_shown_shortened() {
    let mut s = session(Limits::default());
    let _ = s
        .eval("let a = []; for i in 0..2000 { a = [a]; }")
        .expect("build");
    let e = error_of(&mut s, "to_json(a)");
    assert!(e.message.contains("deeper than 256"), "{}", e.message);
    let e = error_of(&mut s, "record(\"a\", a)");
    assert!(e.message.contains("deeper than 256"), "{}", e.message);
    let v = s.eval("a").expect("value");
    let shown = s.display(&v);
    assert!(shown.contains('…') && shown.len() < 200, "{shown}");
}

#[test]
fn printing_and_comparing_deeply_nested_data_never_overflows() {
    let mut s = session(Limits::default());
    let t = Instant::now();
    let _ = s
        .eval("let a = []; for i in 0..3000 { a = [a]; } let m = #{}; for i in 0..1000 { m = #{ x: m }; }")
        .expect("build");
    let _ = s
        .eval("print(a); print(m); let t = `${a} ${m}`; debug(a);")
        .expect("print");
    let printed = s.take_outputs();
    assert!(format!("{printed:?}").contains("[…]"), "{printed:?}");
    let e = error_of(&mut s, "a == a");
    assert!(e.message.contains("deeper than"), "{}", e.message);
    let e = error_of(&mut s, "m != m");
    assert!(e.message.contains("deeper than"), "{}", e.message);
    // Ordinary data prints and compares as before.
    let v = s
        .eval("let b = [1, 2.5, \"x\", [true, #{k: 1}]]; `${b}` + (b == [1, 2.5, \"x\", [true, #{k: 1}]])")
        .expect("ordinary");
    assert_eq!(
        v.into_string().ok().as_deref(),
        Some("[1, 2.5, \"x\", [true, #{\"k\": 1}]]true")
    );
    let _ = s.eval("a = 0; m = 0;").expect("drop");
    assert!(t.elapsed() < Duration::from_secs(60), "{:?}", t.elapsed());
}
