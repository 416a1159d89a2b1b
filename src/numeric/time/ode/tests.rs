use super::*;
use crate::assert_close;

fn opts(method: OdeMethod, rtol: f64, atol: f64) -> OdeOptions {
    OdeOptions {
        method,
        rtol,
        atol,
        ..OdeOptions::default()
    }
}

fn last(sol: &OdeSolution) -> Vec<f64> {
    sol.x.last().cloned().unwrap_or_default()
}

/// Robertson 1966 ("The solution of a set of reaction rate equations"), in the form of
/// Hairer & Wanner, Solving ODEs II, §IV.1.
fn robertson(_t: f64, y: &[f64], d: &mut [f64]) -> Result<(), String> {
    d[0] = -0.04 * y[0] + 1e4 * y[1] * y[2];
    d[2] = 3e7 * y[1] * y[1];
    d[1] = -d[0] - d[2];
    Ok(())
}

/// Van der Pol's oscillator x'' − μ(1 − x²)x' + x = 0 as a first-order system.
fn van_der_pol(mu: f64) -> impl FnMut(f64, &[f64], &mut [f64]) -> Result<(), String> {
    move |_t, y, d| {
        d[0] = y[1];
        d[1] = mu * (1.0 - y[0] * y[0]) * y[1] - y[0];
        Ok(())
    }
}

#[test]
fn exponential_decay_closed_form() {
    // x' = −2x, x(0) = 1 ⇒ x(t) = e^(−2t) (closed form).
    for method in [OdeMethod::Explicit, OdeMethod::Stiff, OdeMethod::Auto] {
        let mut f = |_t: f64, x: &[f64], d: &mut [f64]| {
            d[0] = -2.0 * x[0];
            Ok(())
        };
        let sol = integrate_ode(&mut f, &[1.0], 3.0, &opts(method, 1e-10, 1e-12)).unwrap();
        assert_eq!(sol.t[0], 0.0);
        assert_eq!(*sol.t.last().unwrap(), 3.0);
        for (t, x) in sol.t.iter().zip(&sol.x) {
            crate::assert_close!(x[0], (-2.0 * t).exp(), 1e-11, 2e-9);
        }
        assert_eq!(sol.stats.switched_to_stiff_at, None);
    }
}

#[test]
fn harmonic_oscillator_closed_form() {
    // x'' = −ω²x, x(0) = 1, x'(0) = 0 ⇒ x = cos ωt, x' = −ω sin ωt (closed form).
    let w = 3.0;
    for method in [OdeMethod::Explicit, OdeMethod::Stiff, OdeMethod::Auto] {
        let mut f = |_t: f64, x: &[f64], d: &mut [f64]| {
            d[0] = x[1];
            d[1] = -w * w * x[0];
            Ok(())
        };
        let sol = integrate_ode(&mut f, &[1.0, 0.0], 10.0, &opts(method, 1e-10, 1e-12)).unwrap();
        for (t, x) in sol.t.iter().zip(&sol.x) {
            // Global error grows linearly over ~5 periods: allow 1e-8.
            crate::assert_close!(x[0], (w * t).cos(), 1e-8, 0.0);
            crate::assert_close!(x[1], -w * (w * t).sin(), 3e-8, 0.0);
        }
        assert_eq!(sol.stats.switched_to_stiff_at, None, "{method:?}");
    }
}

#[test]
fn general_start_time_and_time_dependence() {
    // x' = cos t, x(1) = sin 1 ⇒ x = sin t (closed form).
    let mut f = |t: f64, _x: &[f64], d: &mut [f64]| {
        d[0] = t.cos();
        Ok(())
    };
    for (method, h0) in [
        (OdeMethod::Explicit, None),
        (OdeMethod::Stiff, None),
        (OdeMethod::Explicit, Some(1e-3)),
        (OdeMethod::Stiff, Some(0.5)),
    ] {
        let o = OdeOptions {
            initial_step: h0,
            ..opts(method, 1e-10, 1e-12)
        };
        let sol = integrate_ode_from(&mut f, 1.0, &[1f64.sin()], 7.0, &o).unwrap();
        assert_eq!(sol.t[0], 1.0);
        assert_eq!(*sol.t.last().unwrap(), 7.0);
        crate::assert_close!(last(&sol)[0], 7f64.sin(), 1e-9, 0.0);
    }
}

#[test]
fn robertson_stiff_reference() {
    // Reference: scipy 1.17.1, solve_ivp(robertson, (0, 40), [1, 0, 0], method="Radau",
    // rtol=1e-12, atol=1e-14) (script gen_ode_reference.py of this module's scratch
    // crate); agrees with the value 0.7158270687... of Hairer & Wanner, Solving ODEs II.
    let reference = [
        0.7158270687199094,
        9.185534764578342e-06,
        0.28416374574532854,
    ];
    let mut f = robertson;
    let start = std::time::Instant::now();
    let sol = integrate_ode(
        &mut f,
        &[1.0, 0.0, 0.0],
        40.0,
        &opts(OdeMethod::Stiff, 1e-8, 1e-12),
    )
    .unwrap();
    let elapsed = start.elapsed();
    let x = last(&sol);
    // Observed relative errors 1.4e-9, 4.1e-9, 3.6e-9.
    crate::assert_close!(x[0], reference[0], 0.0, 1e-8);
    crate::assert_close!(x[1], reference[1], 0.0, 2e-8);
    crate::assert_close!(x[2], reference[2], 0.0, 2e-8);
    // Mass conservation y1 + y2 + y3 = 1 (invariant of the kinetics).
    crate::assert_close!(x.iter().sum::<f64>(), 1.0, 1e-12, 0.0);
    let s = &sol.stats;
    assert!(s.steps < 200, "{s:?}");
    eprintln!("robertson rtol 1e-8: {s:?} in {elapsed:?}");
    // Default tolerances: still ~6 digits.
    let sol = integrate_ode(
        &mut f,
        &[1.0, 0.0, 0.0],
        40.0,
        &opts(OdeMethod::Stiff, 1e-6, 1e-9),
    )
    .unwrap();
    crate::assert_close!(last(&sol)[0], reference[0], 0.0, 1e-6);
    eprintln!("robertson rtol 1e-6: {:?}", sol.stats);
    // Auto switches. With atol = 1e-4·rtol it does so within ~60 steps; with the much
    // smaller atol = 1e-12 the PI controller settles at h·|λ| ≈ 3.0–3.24, just under the
    // published bound 3.25, and the switch comes late (t ≈ 2.35 after ~1660 explicit
    // steps, against ~27000 for the explicit method alone).
    for (rtol, atol, by) in [(1e-8, 1e-12, 3.0), (1e-6, 1e-10, 0.1)] {
        let sol = integrate_ode(
            &mut f,
            &[1.0, 0.0, 0.0],
            40.0,
            &opts(OdeMethod::Auto, rtol, atol),
        )
        .unwrap();
        crate::assert_close!(last(&sol)[0], reference[0], 0.0, 1e3 * rtol);
        let s = &sol.stats;
        assert!(s.switched_to_stiff_at.is_some_and(|t| t < by), "{s:?}");
        eprintln!("robertson auto rtol {rtol:e} atol {atol:e}: {s:?}");
    }
}

#[test]
fn van_der_pol_stiff_and_auto() {
    // Reference: scipy 1.17.1, solve_ivp(vdp, (0, 3000), [2, 0], method="Radau",
    // rtol=1e-12, atol=1e-14, t_eval=[1000, 2000, 3000]) with μ = 1000 (script
    // gen_ode_reference.py of this module's scratch crate).
    let reference = VDP_REFERENCE;
    let samples = vec![1000.0, 2000.0, 3000.0];
    let mut f = van_der_pol(1000.0);
    for method in [OdeMethod::Stiff, OdeMethod::Auto] {
        let o = OdeOptions {
            samples: Some(samples.clone()),
            ..opts(method, 1e-8, 1e-10)
        };
        let start = std::time::Instant::now();
        let sol = integrate_ode(&mut f, &[2.0, 0.0], 3000.0, &o).unwrap();
        eprintln!(
            "van der Pol {method:?}: {:?} in {:?}",
            sol.stats,
            start.elapsed()
        );
        assert_eq!(sol.t, samples);
        // Observed (stiff): |Δx0| ≤ 2.7e-8, relative Δx1 ≤ 6.5e-7.
        for (x, r) in sol.x.iter().zip(&reference) {
            crate::assert_close!(x[0], r[0], 3e-7, 0.0);
            crate::assert_close!(x[1], r[1], 0.0, 5e-6);
        }
        assert!(sol.stats.steps < 3000, "{:?}", sol.stats);
        if method == OdeMethod::Auto {
            assert!(sol.stats.switched_to_stiff_at.is_some_and(|t| t < 1.0));
        }
    }
}

/// See `van_der_pol_stiff_and_auto` for the source.
const VDP_REFERENCE: [[f64; 2]; 3] = [
    [-1.8636462548078994, 0.0007535430865435301],
    [1.706167732170514, -0.0008928097010238945],
    [-1.5106069367440127, 0.0011783800007311082],
];

#[test]
fn samples_use_dense_output() {
    // x'' = −x from (1, 0) ⇒ (cos t, −sin t) (closed form), at requested times that do
    // not coincide with steps, including both ends and a repeated time.
    let samples = vec![0.0, 0.1, 0.1, 1.234, 2.5, 4.0, 6.0];
    for method in [OdeMethod::Explicit, OdeMethod::Stiff] {
        let mut f = |_t: f64, x: &[f64], d: &mut [f64]| {
            d[0] = x[1];
            d[1] = -x[0];
            Ok(())
        };
        let o = OdeOptions {
            samples: Some(samples.clone()),
            ..opts(method, 1e-9, 1e-12)
        };
        let sol = integrate_ode(&mut f, &[1.0, 0.0], 6.0, &o).unwrap();
        assert_eq!(sol.t, samples);
        for (t, x) in sol.t.iter().zip(&sol.x) {
            crate::assert_close!(x[0], t.cos(), 2e-8, 0.0);
            crate::assert_close!(x[1], -t.sin(), 2e-8, 0.0);
        }
    }
}

#[test]
fn max_step_is_respected() {
    let mut f = |_t: f64, _x: &[f64], d: &mut [f64]| {
        d[0] = 1.0;
        Ok(())
    };
    for method in [OdeMethod::Explicit, OdeMethod::Stiff] {
        let o = OdeOptions {
            max_step: Some(0.25),
            ..opts(method, 1e-6, 1e-9)
        };
        let sol = integrate_ode(&mut f, &[0.0], 3.0, &o).unwrap();
        assert!(sol
            .t
            .windows(2)
            .all(|w| w[1] - w[0] <= 0.25 * (1.0 + 1e-12)));
        // x' = 1 ⇒ x = t, reproduced exactly by both methods up to rounding.
        crate::assert_close!(last(&sol)[0], 3.0, 1e-13, 0.0);
    }
}

#[test]
fn rhs_error_propagates_with_time() {
    let mut f = |t: f64, x: &[f64], d: &mut [f64]| {
        if t > 0.5 {
            return Err("division by zero".to_string());
        }
        d[0] = -x[0];
        Ok(())
    };
    for method in [OdeMethod::Explicit, OdeMethod::Stiff] {
        let e = integrate_ode(&mut f, &[1.0], 1.0, &opts(method, 1e-6, 1e-9)).unwrap_err();
        let m = e.to_string();
        assert!(
            m.starts_with("integrate_ode: the right-hand side failed at t = "),
            "{m}"
        );
        assert!(m.ends_with("division by zero"), "{m}");
    }
}

#[test]
fn wrong_length_reported_by_wrapper() {
    // A script wrapper that receives the wrong number of values reports it as an error.
    let mut f = |_t: f64, _x: &[f64], d: &mut [f64]| {
        let v = [1.0];
        if v.len() != d.len() {
            return Err(format!(
                "expected {} derivative values, found {}",
                d.len(),
                v.len()
            ));
        }
        d.copy_from_slice(&v);
        Ok(())
    };
    let e = integrate_ode(&mut f, &[1.0, 2.0], 1.0, &OdeOptions::default()).unwrap_err();
    assert_eq!(
        e.to_string(),
        "integrate_ode: the right-hand side failed at t = 0e0: expected 2 derivative \
         values, found 1"
    );
}

#[test]
fn nan_derivative_is_reported() {
    let mut f = |t: f64, _x: &[f64], d: &mut [f64]| {
        d[0] = if t > 0.25 { f64::NAN } else { 1.0 };
        Ok(())
    };
    for method in [OdeMethod::Explicit, OdeMethod::Stiff] {
        let e = integrate_ode(&mut f, &[1.0], 1.0, &opts(method, 1e-6, 1e-9)).unwrap_err();
        let m = e.to_string();
        assert!(m.contains("returned NaN in component 0 at t = "), "{m}");
    }
    // An unwritten component is NaN too.
    let mut g = |_t: f64, _x: &[f64], d: &mut [f64]| {
        d[0] = 1.0;
        Ok(())
    };
    let e = integrate_ode(&mut g, &[1.0, 1.0], 1.0, &OdeOptions::default()).unwrap_err();
    assert!(
        e.to_string()
            .contains("returned NaN in component 1 at t = 0e0"),
        "{e}"
    );
}

#[test]
fn blow_up_gives_step_size_underflow() {
    // x' = x², x(0) = 1 ⇒ x = 1/(1 − t), singular at t = 1 (closed form).
    let mut f = |_t: f64, x: &[f64], d: &mut [f64]| {
        d[0] = x[0] * x[0];
        Ok(())
    };
    for method in [OdeMethod::Explicit, OdeMethod::Stiff, OdeMethod::Auto] {
        let e = integrate_ode(&mut f, &[1.0], 2.0, &opts(method, 1e-6, 1e-9)).unwrap_err();
        let m = e.to_string();
        assert!(
            m.starts_with("integrate_ode: step size underflow at t = "),
            "{m}"
        );
        // The time named is just below the singularity.
        let t: f64 = m["integrate_ode: step size underflow at t = ".len()..]
            .split(' ')
            .next()
            .and_then(|s| s.parse().ok())
            .unwrap_or(0.0);
        assert_close!(t, 1.0, 1e-6, 0.0, "{m}");
    }
}

#[test]
fn too_many_steps() {
    let mut f = van_der_pol(1000.0);
    let o = OdeOptions {
        max_steps: 50,
        ..opts(OdeMethod::Explicit, 1e-6, 1e-9)
    };
    let e = integrate_ode(&mut f, &[2.0, 0.0], 3000.0, &o).unwrap_err();
    assert!(
        matches!(&e, NumError::NoConvergence { iterations: 50, what } if what.contains("stopped at t = ")),
        "{e}"
    );
}

#[test]
fn invalid_arguments() {
    let mut f = |_t: f64, x: &[f64], d: &mut [f64]| {
        d[0] = x[0];
        Ok(())
    };
    let d = OdeOptions::default();
    assert!(matches!(
        integrate_ode(&mut f, &[f64::NAN], 1.0, &d),
        Err(NumError::NotFinite { .. })
    ));
    assert!(integrate_ode(&mut f, &[], 1.0, &d).is_err());
    assert!(integrate_ode(&mut f, &[1.0], -1.0, &d).is_err());
    assert!(integrate_ode(&mut f, &[1.0], f64::INFINITY, &d).is_err());
    for o in [
        OdeOptions {
            rtol: 0.0,
            ..d.clone()
        },
        OdeOptions {
            rtol: 1e-17,
            ..d.clone()
        },
        OdeOptions {
            atol: 0.0,
            ..d.clone()
        },
        OdeOptions {
            atol: f64::NAN,
            ..d.clone()
        },
        OdeOptions {
            max_step: Some(-1.0),
            ..d.clone()
        },
        OdeOptions {
            initial_step: Some(0.0),
            ..d.clone()
        },
        OdeOptions {
            max_steps: 0,
            ..d.clone()
        },
        OdeOptions {
            samples: Some(vec![0.5, 0.2]),
            ..d.clone()
        },
        OdeOptions {
            samples: Some(vec![0.5, 1.5]),
            ..d.clone()
        },
        OdeOptions {
            samples: Some(vec![-0.1]),
            ..d.clone()
        },
    ] {
        assert!(
            matches!(
                integrate_ode(&mut f, &[1.0], 1.0, &o),
                Err(NumError::InvalidArgument { .. })
            ),
            "{o:?}"
        );
    }
    // t_final == t0: the initial state alone.
    let sol = integrate_ode(&mut f, &[1.0], 0.0, &d).unwrap();
    assert_eq!((sol.t, sol.x), (vec![0.0], vec![vec![1.0]]));
}

#[test]
fn time_format() {
    assert_eq!(fmt_t(0.32), "3.2e-1");
    assert_eq!(fmt_t(0.0), "0e0");
    assert_eq!(fmt_t(40.0), "4e1");
    assert_eq!(fmt_t(1.0 / 3.0), "3.33333e-1");
}
