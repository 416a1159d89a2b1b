//! Frequency-domain numerics and Lyapunov solvers against the fixtures in
//! `tests/reference/freq.json` (schema in `tests/reference/README.md`), through the
//! public numeric API. Where each expected value comes from is recorded per case in the
//! fixture's `function` field and repeated beside each test:
//! - `frequency_response_*`: direct complex LU solves by `numpy.linalg.solve` per point;
//! - `lyapunov_*`: `scipy.linalg.solve_continuous_lyapunov` / `solve_discrete_lyapunov`;
//! - `h2_norm_*`: Gramians from scipy's Lyapunov solvers, or a closed form;
//! - `hinf_norm_*`: a dense σ_max sweep plus golden-section refinement (first principles);
//! - `margins_*`: `scipy.optimize.brentq` on ln|L| and the continuous phase.
//!
//! Tolerances are the fixture's own (`tolerance`, `per_key_tolerance`). The Riccati cases
//! are checked in `tests/reference_design.rs`.

use crate::common;

use common::fixtures::{self, Tolerance};
use serde_json::Value;
use statebook::numeric::design::lyapunov::{solve_lyapunov, solve_lyapunov_discrete};
use statebook::numeric::freq::margins::loop_margins;
use statebook::numeric::freq::norms::{h2_norm, hinf_norm};
use statebook::numeric::freq::response::{dense_point, frequency_response, point_of};
use statebook::numeric::lti::realize::from_transfer_function;
use statebook::numeric::lti::system::StateSpace;
use statebook::numeric::lti::tf::TransferFunction;

fn model_of(case: &Value) -> StateSpace {
    let m = fixtures::model(&case["inputs"]);
    StateSpace::new(m.a, m.b, m.c, m.d, m.dt).unwrap_or_else(|e| panic!("fixture model: {e}"))
}

// ---------------------------------------------------------------- frequency response

/// Expected: `C (sI − A)⁻¹ B + D` by numpy.linalg.solve at each w (s = jw or e^{jw·dt}).
fn check_response(name: &str) {
    let fx = fixtures::load("freq");
    let case = fixtures::case(&fx, name);
    let sys = model_of(case);
    let w = fixtures::f64_vec(&case["inputs"]["w"]);
    let want = fixtures::complex_matrix_vec(&case["expected"]["response"]);
    let got = frequency_response(&sys, &w).unwrap_or_else(|e| panic!("{name}: {e}"));
    let tol = fixtures::tolerance(case);
    assert_eq!(got.len(), want.len(), "{name}: number of frequencies");
    for (k, (g, e)) in got.iter().zip(&want).enumerate() {
        tol.assert_complex_matrix_close(g, e, &format!("{name} at w[{k}] = {}", w[k]));
        // The dense reference path of our own agrees too (the benchmark's baseline).
        let d = dense_point(&sys, point_of(w[k], sys.dt)).expect("regular point");
        tol.assert_complex_matrix_close(&d, e, &format!("{name} dense at w[{k}]"));
    }
}

#[test]
fn frequency_response_continuous_mimo() {
    check_response("frequency_response_continuous_mimo");
}

#[test]
fn frequency_response_continuous_lightly_damped() {
    check_response("frequency_response_continuous_lightly_damped");
}

#[test]
fn frequency_response_discrete_mimo() {
    check_response("frequency_response_discrete_mimo");
}

// ---------------------------------------------------------------- Lyapunov

/// Expected: scipy.linalg.solve_continuous_lyapunov(A, −Q) / solve_discrete_lyapunov(A, Q).
fn check_lyapunov(name: &str, discrete: bool) {
    let fx = fixtures::load("freq");
    let case = fixtures::case(&fx, name);
    let a = fixtures::matrix(&case["inputs"]["A"]);
    let q = fixtures::matrix(&case["inputs"]["Q"]);
    let want = fixtures::matrix(&case["expected"]["X"]);
    let got = if discrete {
        solve_lyapunov_discrete(&a, &q)
    } else {
        solve_lyapunov(&a, &q)
    }
    .unwrap_or_else(|e| panic!("{name}: {e}"));
    fixtures::tolerance_for(case, "X").assert_matrix_close(&got, &want, name);
}

#[test]
fn lyapunov_continuous_ill_conditioned() {
    check_lyapunov("lyapunov_continuous_ill_conditioned", false);
}

#[test]
fn lyapunov_discrete_near_unit_circle() {
    check_lyapunov("lyapunov_discrete_near_unit_circle", true);
}

// ---------------------------------------------------------------- norms

/// Expected: √trace(C W Cᵀ (+ D Dᵀ)) with W from scipy's Lyapunov solvers, or k/√(2a).
fn check_h2(name: &str) {
    let fx = fixtures::load("freq");
    let case = fixtures::case(&fx, name);
    let want = fixtures::f64_of(&case["expected"]["h2_norm"]);
    let got = h2_norm(&model_of(case)).unwrap_or_else(|e| panic!("{name}: {e}"));
    fixtures::tolerance_for(case, "h2_norm").assert_close(got, want, name);
}

#[test]
fn h2_norm_continuous_mimo() {
    check_h2("h2_norm_continuous_mimo");
}

#[test]
fn h2_norm_first_order_closed_form() {
    check_h2("h2_norm_first_order_closed_form");
}

#[test]
fn h2_norm_discrete() {
    check_h2("h2_norm_discrete");
}

/// Expected: dense σ_max sweep with golden-section refinement (first principles); the
/// frequency is `null` when the supremum is approached as ω → ∞.
fn check_hinf(name: &str) {
    let fx = fixtures::load("freq");
    let case = fixtures::case(&fx, name);
    let want = fixtures::f64_of(&case["expected"]["value"]);
    let (value, w) = hinf_norm(&model_of(case)).unwrap_or_else(|e| panic!("{name}: {e}"));
    fixtures::tolerance_for(case, "value").assert_close(value, want, &format!("{name} value"));
    match fixtures::opt_f64(&case["expected"]["frequency"]) {
        None => assert!(w.is_infinite(), "{name}: frequency {w}, expected ∞"),
        Some(want_w) => fixtures::tolerance_for(case, "frequency").assert_close(
            w,
            want_w,
            &format!("{name} frequency"),
        ),
    }
}

#[test]
fn hinf_norm_siso_resonant() {
    check_hinf("hinf_norm_siso_resonant");
}

#[test]
fn hinf_norm_mimo() {
    check_hinf("hinf_norm_mimo");
}

#[test]
fn hinf_norm_first_order_dc_peak() {
    check_hinf("hinf_norm_first_order_dc_peak");
}

#[test]
fn hinf_norm_discrete() {
    check_hinf("hinf_norm_discrete");
}

// ---------------------------------------------------------------- margins

/// Expected: brentq on ln|L(jω)| = 0 and on the continuous phase = −180° (scipy). The
/// fixture writes `null` for a margin that does not exist: an infinite gain margin (we
/// report ∞), a missing phase crossover (we report NaN, `()` in scripts), and the delay
/// margin of an unstable loop (we report 0: no added delay is needed to destabilise it).
fn check_margins(name: &str) {
    let fx = fixtures::load("freq");
    let case = fixtures::case(&fx, name);
    let num = fixtures::f64_vec(&case["inputs"]["numerator"]);
    let den = fixtures::f64_vec(&case["inputs"]["denominator"]);
    let tf = TransferFunction::new(&num, &den, 0.0).expect("fixture transfer function");
    let l = from_transfer_function(&tf).expect("realization");
    let m = loop_margins(&l).unwrap_or_else(|e| panic!("{name}: {e}"));
    let tol = fixtures::tolerance(case);
    let e = &case["expected"];
    let pairs = [
        ("gain_margin", m.gain_margin),
        ("gain_margin_db", m.gain_margin_db),
        ("phase_margin", m.phase_margin),
        ("gain_crossover", m.gain_crossover),
        ("phase_crossover", m.phase_crossover),
        ("delay_margin", m.delay_margin),
    ];
    for (key, got) in pairs {
        let what = format!("{name} {key}");
        match fixtures::opt_f64(&e[key]) {
            Some(want) => tol.assert_close(got, want, &what),
            None => match key {
                "gain_margin" | "gain_margin_db" => {
                    assert!(got == f64::INFINITY, "{what}: got {got}, expected ∞")
                }
                "phase_crossover" | "gain_crossover" => {
                    assert!(got.is_nan(), "{what}: got {got}, expected none (NaN)")
                }
                "delay_margin" => {
                    assert!(
                        !m.stable_closed_loop,
                        "{what}: null only for an unstable loop"
                    );
                    assert_eq!(got, 0.0, "{what}: an unstable loop has delay margin 0");
                }
                _ => unreachable!(),
            },
        }
    }
    // "Single crossovers only", as the fixture notes say.
    assert!(
        m.gain_crossovers.len() <= 1 && m.phase_crossovers.len() <= 1,
        "{name}"
    );
}

#[test]
fn margins_third_order_lag() {
    check_margins("margins_third_order_lag");
}

#[test]
fn margins_integrator_with_zero() {
    check_margins("margins_integrator_with_zero");
}

#[test]
fn margins_unstable_closed_loop() {
    check_margins("margins_unstable_closed_loop");
}

#[test]
fn margins_integrator_zero_three_poles() {
    check_margins("margins_integrator_zero_three_poles");
}

#[test]
fn every_case_is_covered() {
    let fx = fixtures::load("freq");
    let covered = [
        "frequency_response_continuous_mimo",
        "frequency_response_continuous_lightly_damped",
        "frequency_response_discrete_mimo",
        "lyapunov_continuous_ill_conditioned",
        "lyapunov_discrete_near_unit_circle",
        "h2_norm_continuous_mimo",
        "h2_norm_first_order_closed_form",
        "h2_norm_discrete",
        "hinf_norm_siso_resonant",
        "hinf_norm_mimo",
        "hinf_norm_first_order_dc_peak",
        "hinf_norm_discrete",
        "margins_third_order_lag",
        "margins_integrator_with_zero",
        "margins_unstable_closed_loop",
        "margins_integrator_zero_three_poles",
    ];
    for n in fixtures::case_names(&fx) {
        if n.starts_with("riccati_") {
            continue; // tests/reference_design.rs
        }
        assert!(
            covered.contains(&n.as_str()),
            "fixture case {n} has no test here"
        );
    }
    let _ = Tolerance::new(0.0, 0.0);
}
