//! Plain benchmark harness (no timed unit tests anywhere): medians of repeated runs.
//!
//! `cargo bench --bench core` prints one line per job. Jobs:
//! - eigenvalues and eigenvectors of a seeded random 200×200 matrix;
//! - whole-process start-up of `statebook run` on a one-line analysis file (needs the
//!   release binary: `cargo build --release` first).

use nalgebra::DMatrix;
use statebook::numeric::linalg::eigen;

mod common;
#[allow(unused_imports)]
use common::{median, time};

fn random(n: usize, seed: u64) -> DMatrix<f64> {
    let mut s = seed;
    DMatrix::from_fn(n, n, |_, _| {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((s >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
    })
}

fn main() {
    let a = random(200, 42);
    let t = time(9, || {
        let _ = std::hint::black_box(eigen::eigenvalues(&a));
    });
    println!(
        "eigenvalues 200×200                 median {:>9.2} ms",
        t.as_secs_f64() * 1e3
    );
    let t = time(9, || {
        let _ = std::hint::black_box(eigen::eigen(&a));
    });
    println!(
        "eigenvalues + eigenvectors 200×200  median {:>9.2} ms",
        t.as_secs_f64() * 1e3
    );

    let exe = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target/release/statebook");
    if exe.exists() {
        let dir = std::env::temp_dir().join("statebook-bench");
        let _ = std::fs::create_dir_all(&dir);
        let file = dir.join("one-line.sbook");
        let _ = std::fs::write(&file, "let x = 1 + 1;\n");
        let t = time(21, || {
            let _ = std::process::Command::new(&exe)
                .arg("run")
                .arg(&file)
                .output();
        });
        println!(
            "start-up: statebook run one-line    median {:>9.2} ms",
            t.as_secs_f64() * 1e3
        );
    } else {
        println!("start-up: skipped (build the release binary first)");
    }
}
