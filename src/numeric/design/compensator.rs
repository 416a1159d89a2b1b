//! Building blocks of state-space designs: the observer-based compensator and the plant
//! augmented with integrators for servo design.

use crate::numeric::check;
use crate::numeric::lti::system::{SignalNames, StateSpace};
use crate::numeric::{NumError, NumResult};
use nalgebra::DMatrix;

/// The observer-based compensator of a plant with state-feedback gain `K` (m×n) and
/// estimator gain `L` (n×p): input the plant's measured outputs y, output `K x̂`, so that
/// the plant input is `u = −K x̂` (negative feedback: `close_loop(plant, compensator)`).
///
/// **Mathematics.** The estimator `x̂' = A x̂ + B u + L (y − C x̂ − D u)` with `u = −K x̂`
/// is `x̂' = (A − BK − LC + LDK) x̂ + L y`. A discrete plant gets the same equations as a
/// difference equation, `x̂[k+1] = (A − BK − LC + LDK) x̂[k] + L y[k]`: the **predictor**
/// form, in which `u[k]` uses the estimate from the measurements up to `y[k−1]`. By the
/// separation principle the loop's poles are those of `A − BK` and of `A − LC`.
///
/// **Errors.** Shapes of K and L; non-finite entries.
pub fn estimator_controller(
    sys: &StateSpace,
    k: &DMatrix<f64>,
    l: &DMatrix<f64>,
) -> NumResult<StateSpace> {
    let (n, m, p) = (sys.order(), sys.inputs(), sys.outputs());
    check::dims("K", k, m, n)?;
    check::dims("L", l, n, p)?;
    check::finite("K", k)?;
    check::finite("L", l)?;
    let a = &sys.a - &sys.b * k - l * &sys.c + l * &sys.d * k;
    let mut out = StateSpace::new(a, l.clone(), k.clone(), DMatrix::zeros(m, p), sys.dt)?;
    out.names = SignalNames {
        inputs: sys.names.outputs.clone(),
        outputs: Vec::new(),
        states: sys
            .names
            .states
            .iter()
            .map(|s| format!("{s}_estimate"))
            .collect(),
    };
    Ok(out)
}

/// The plant with integrators of the chosen outputs appended to its state, for servo
/// design: `lq_regulator` (or pole assignment) on the result gives a gain `[K_x, K_z]`
/// whose integral part removes the steady error of those outputs.
///
/// **Mathematics.** With `C_s`, `D_s` the rows of the chosen outputs, continuous time:
/// `z' = C_s x + D_s u` (`z` the integrals); discrete time: the running sum
/// `z[k+1] = z[k] + C_s x[k] + D_s u[k]` (multiply the integral gain by dt for a rate in
/// seconds). The augmented model is `A = [A 0; C_s I_d]` (`I_d` = 0 continuous, I
/// discrete), `B = [B; D_s]`, outputs `[y; z]` (C = `[C 0; 0 I]`, D = `[D; 0]`); its
/// states are the plant's, then one per chosen output, named `integral_<output>`.
///
/// **Errors.** No output chosen; an index out of range or chosen twice.
pub fn with_integral_action(sys: &StateSpace, outputs: &[usize]) -> NumResult<StateSpace> {
    let (n, m, p) = (sys.order(), sys.inputs(), sys.outputs());
    if outputs.is_empty() {
        return Err(NumError::invalid(
            "outputs",
            "expected at least one output to integrate, found none",
        ));
    }
    for (k, &o) in outputs.iter().enumerate() {
        if o >= p {
            return Err(NumError::invalid(
                "outputs",
                format!(
                    "output {o} does not exist: the model has {p} outputs (0 to {})",
                    p.saturating_sub(1)
                ),
            ));
        }
        if outputs[..k].contains(&o) {
            return Err(NumError::invalid(
                "outputs",
                format!("output {o} is chosen twice"),
            ));
        }
    }
    let q = outputs.len();
    let discrete = sys.dt > 0.0;
    let mut a = DMatrix::zeros(n + q, n + q);
    a.view_mut((0, 0), (n, n)).copy_from(&sys.a);
    let mut b = DMatrix::zeros(n + q, m);
    b.view_mut((0, 0), (n, m)).copy_from(&sys.b);
    let mut c = DMatrix::zeros(p + q, n + q);
    c.view_mut((0, 0), (p, n)).copy_from(&sys.c);
    let mut d = DMatrix::zeros(p + q, m);
    d.view_mut((0, 0), (p, m)).copy_from(&sys.d);
    for (k, &o) in outputs.iter().enumerate() {
        a.view_mut((n + k, 0), (1, n)).copy_from(&sys.c.row(o));
        b.view_mut((n + k, 0), (1, m)).copy_from(&sys.d.row(o));
        if discrete {
            a[(n + k, n + k)] = 1.0;
        }
        c[(p + k, n + k)] = 1.0;
    }
    let mut out = StateSpace::new(a, b, c, d, sys.dt)?;
    let output_name = |o: usize| {
        sys.names
            .outputs
            .get(o)
            .cloned()
            .unwrap_or_else(|| format!("y{o}"))
    };
    let integrals: Vec<String> = outputs
        .iter()
        .map(|&o| format!("integral_{}", output_name(o)))
        .collect();
    out.names = SignalNames {
        inputs: sys.names.inputs.clone(),
        outputs: if sys.names.outputs.is_empty() {
            Vec::new()
        } else {
            sys.names
                .outputs
                .iter()
                .cloned()
                .chain(integrals.iter().cloned())
                .collect()
        },
        states: if sys.names.states.len() == n {
            sys.names.states.iter().cloned().chain(integrals).collect()
        } else {
            Vec::new()
        },
    };
    Ok(out)
}

/// The closed-loop functions of a plant `P` (p outputs, m inputs) under negative feedback
/// by a controller `K` (m outputs, p inputs): `u = −K y` (plus disturbances).
#[derive(Debug, Clone)]
pub struct LoopFunctions {
    /// At the plant output (p×p): the loop `L_o = P K`.
    pub loop_output: StateSpace,
    /// `S_o = (I + P K)⁻¹`: output disturbance → output, reference → error.
    pub sensitivity: StateSpace,
    /// `T_o = P K (I + P K)⁻¹ = I − S_o`: reference → output, sensor noise → output (−).
    pub complementary: StateSpace,
    /// `K S_o` (m×p): reference or sensor noise → plant input (the actuator's effort).
    pub control_sensitivity: StateSpace,
    /// `S_o P` (p×m): input (load) disturbance → output.
    pub load_sensitivity: StateSpace,
    /// At the plant input (m×m): the loop `L_i = K P`.
    pub loop_input: StateSpace,
    /// `S_i = (I + K P)⁻¹`.
    pub sensitivity_input: StateSpace,
    /// `T_i = K P (I + K P)⁻¹`.
    pub complementary_input: StateSpace,
}

/// The loop functions of `plant` under the controller `controller` (see
/// [`LoopFunctions`]), each a state-space model written down from the signal equations by
/// [`series`](crate::numeric::design::interconnect::series) and
/// [`feedback`](crate::numeric::design::interconnect::feedback): their orders add up, no
/// state is cancelled.
///
/// **Errors.** The controller's inputs must match the plant's outputs and its outputs the
/// plant's inputs; one time domain; an algebraic loop (`I + D_P D_K` singular).
pub fn loop_functions(plant: &StateSpace, controller: &StateSpace) -> NumResult<LoopFunctions> {
    use crate::numeric::design::interconnect::{feedback, series, Sign};
    if controller.inputs() != plant.outputs() || controller.outputs() != plant.inputs() {
        return Err(NumError::shape(
            "loop_functions (plant, controller)",
            format!(
                "a controller with {} inputs (the plant's outputs) and {} outputs (its inputs)",
                plant.outputs(),
                plant.inputs()
            ),
            format!(
                "{} inputs and {} outputs",
                controller.inputs(),
                controller.outputs()
            ),
        ));
    }
    let identity = |k: usize| {
        StateSpace::new(
            DMatrix::zeros(0, 0),
            DMatrix::zeros(0, k),
            DMatrix::zeros(k, 0),
            DMatrix::identity(k, k),
            plant.dt,
        )
    };
    let (ip, im) = (identity(plant.outputs())?, identity(plant.inputs())?);
    let loop_output = series(plant, controller)?;
    let loop_input = series(controller, plant)?;
    let sensitivity = feedback(&ip, &loop_output, Sign::Minus)?;
    let complementary = feedback(&loop_output, &ip, Sign::Minus)?;
    let sensitivity_input = feedback(&im, &loop_input, Sign::Minus)?;
    let complementary_input = feedback(&loop_input, &im, Sign::Minus)?;
    Ok(LoopFunctions {
        control_sensitivity: series(controller, &sensitivity)?,
        load_sensitivity: series(&sensitivity, plant)?,
        loop_output,
        sensitivity,
        complementary,
        loop_input,
        sensitivity_input,
        complementary_input,
    })
}

#[cfg(test)]
mod loop_tests {
    use super::*;
    use crate::numeric::freq::response::FrequencyEvaluator;
    use crate::numeric::testing::siso;
    use nalgebra::Complex;

    #[test]
    fn sensitivity_and_complementary_add_to_one_and_match_the_formulas() {
        // Invented plant 1/(s² + 0.8 s + 4) under a PD-like controller (2 s + 5)/(0.1 s + 1).
        let p = siso(&[0.0, 1.0, -4.0, -0.8], &[0.0, 1.0], &[1.0, 0.0], 0.0);
        let k = siso(&[-10.0], &[1.0], &[-150.0], 20.0);
        let f = loop_functions(&p, &k).expect("loop functions");
        let at = |s: &StateSpace, w: f64| {
            FrequencyEvaluator::new(s)
                .expect("evaluator")
                .at_frequency(w)[(0, 0)]
        };
        for w in [0.1, 2.0, 30.0] {
            let (pw, kw) = (at(&p, w), at(&k, w));
            let one = Complex::new(1.0, 0.0);
            let s = one / (one + pw * kw);
            let close =
                |a: Complex<f64>, b: Complex<f64>| (a - b).norm() <= 1e-10 * (1.0 + b.norm());
            assert!(close(at(&f.sensitivity, w), s), "S at {w}");
            assert!(close(at(&f.complementary, w), one - s), "T at {w}");
            assert!(close(at(&f.control_sensitivity, w), kw * s), "KS at {w}");
            assert!(close(at(&f.load_sensitivity, w), s * pw), "SP at {w}");
            assert!(
                close(at(&f.sensitivity_input, w), s),
                "SISO: S_i = S_o at {w}"
            );
        }
        assert!(loop_functions(&p, &siso(&[-1.0], &[1.0], &[1.0], 0.0)).is_ok());
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::design::interconnect::{feedback, Sign};
    use crate::numeric::design::pole_assignment::assign_poles;
    use crate::numeric::linalg::eigen::eigenvalues;
    use crate::numeric::testing::siso;
    use nalgebra::Complex;

    fn sorted(mut v: Vec<Complex<f64>>) -> Vec<Complex<f64>> {
        v.sort_by(|a, b| a.re.total_cmp(&b.re).then(a.im.total_cmp(&b.im)));
        v
    }

    #[test]
    fn the_loop_with_the_compensator_has_the_separated_poles() {
        // An invented lightly damped plant with a feedthrough, at three time scales.
        for scale in [1e-3, 1.0, 1e3] {
            let plant = siso(
                &[0.0, scale, -4.0 * scale, -0.4 * scale],
                &[0.0, scale],
                &[1.0, 0.2],
                0.1,
            );
            let k = assign_poles(
                &plant.a,
                &plant.b,
                &[
                    Complex::new(-2.0 * scale, 0.0),
                    Complex::new(-3.0 * scale, 0.0),
                ],
            )
            .expect("K")
            .gain;
            let lt = assign_poles(
                &plant.a.transpose(),
                &plant.c.transpose(),
                &[
                    Complex::new(-8.0 * scale, 0.0),
                    Complex::new(-9.0 * scale, 0.0),
                ],
            )
            .expect("L")
            .gain;
            let comp = estimator_controller(&plant, &k, &lt.transpose()).expect("compensator");
            let loop_ = feedback(&plant, &comp, Sign::Minus).expect("loop");
            let got = sorted(eigenvalues(&loop_.a).expect("poles"));
            let want = [-9.0, -8.0, -3.0, -2.0];
            for (g, w) in got.iter().zip(want) {
                assert!(
                    (g.re - w * scale).abs() <= 1e-8 * scale && g.im.abs() <= 1e-8 * scale,
                    "scale {scale}: {got:?}"
                );
            }
        }
    }

    #[test]
    fn integral_action_adds_one_integrator_per_chosen_output() {
        let plant = siso(&[-1.0], &[1.0], &[2.0], 0.5);
        let aug = with_integral_action(&plant, &[0]).expect("augmented");
        assert_eq!((aug.order(), aug.outputs()), (2, 2));
        assert_eq!(aug.a[(1, 0)], 2.0);
        assert_eq!(aug.a[(1, 1)], 0.0, "continuous: a pure integrator");
        assert_eq!(aug.b[(1, 0)], 0.5, "the feedthrough is integrated too");
        assert_eq!(aug.c[(1, 1)], 1.0);
        let sampled = StateSpace::new(
            plant.a.clone(),
            plant.b.clone(),
            plant.c.clone(),
            plant.d.clone(),
            0.1,
        )
        .expect("discrete");
        assert_eq!(
            with_integral_action(&sampled, &[0]).expect("aug").a[(1, 1)],
            1.0
        );
        assert!(with_integral_action(&plant, &[]).is_err());
        assert!(with_integral_action(&plant, &[1]).is_err());
        assert!(with_integral_action(&plant, &[0, 0]).is_err());
    }
}
