//! The state-space model: `x' = A x + B u`, `y = C x + D u` (continuous, `dt = 0`) or
//! `x[k+1] = A x[k] + B u[k]`, `y[k] = C x[k] + D u[k]` (discrete, sample time `dt > 0`).

use crate::numeric::check::{finite, shape_of, square};
use crate::numeric::{NumError, NumResult};
use nalgebra::DMatrix;

/// Optional names of a model's signals, used in display and plots.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SignalNames {
    /// One name per input (empty: unnamed).
    pub inputs: Vec<String>,
    /// One name per output (empty: unnamed).
    pub outputs: Vec<String>,
    /// One name per state (empty: unnamed).
    pub states: Vec<String>,
}

impl SignalNames {
    /// The given names when there is one per signal, else the positional names
    /// `<prefix>0, <prefix>1, …` (`u` inputs, `y` outputs, `x` states), by which scripts
    /// may always refer to unnamed signals.
    pub fn or_positional(given: &[String], count: usize, prefix: &str) -> Vec<String> {
        if given.len() == count {
            given.to_vec()
        } else {
            (0..count).map(|k| format!("{prefix}{k}")).collect()
        }
    }
}

/// A linear time-invariant state-space model.
#[derive(Debug, Clone, PartialEq)]
pub struct StateSpace {
    /// State matrix, n×n.
    pub a: DMatrix<f64>,
    /// Input matrix, n×m.
    pub b: DMatrix<f64>,
    /// Output matrix, p×n.
    pub c: DMatrix<f64>,
    /// Feedthrough matrix, p×m.
    pub d: DMatrix<f64>,
    /// Sample time in seconds; 0 for a continuous model.
    pub dt: f64,
    /// Signal names.
    pub names: SignalNames,
}

impl StateSpace {
    /// A validated model: A square, B with A's rows, C with A's columns, D p×m, all
    /// entries finite, `dt` finite and ≥ 0.
    pub fn new(
        a: DMatrix<f64>,
        b: DMatrix<f64>,
        c: DMatrix<f64>,
        d: DMatrix<f64>,
        dt: f64,
    ) -> NumResult<Self> {
        let n = square("A", &a)?;
        for (what, m) in [("A", &a), ("B", &b), ("C", &c), ("D", &d)] {
            finite(what, m)?;
        }
        if b.nrows() != n {
            return Err(NumError::shape(
                "B",
                format!("{n} rows like A ({n}×{n})"),
                shape_of(&b),
            ));
        }
        if c.ncols() != n {
            return Err(NumError::shape(
                "C",
                format!("{n} columns like A ({n}×{n})"),
                shape_of(&c),
            ));
        }
        let (p, m) = (c.nrows(), b.ncols());
        if d.nrows() != p || d.ncols() != m {
            return Err(NumError::shape(
                "D",
                format!("{p}×{m} (outputs of C × inputs of B)"),
                shape_of(&d),
            ));
        }
        if !(dt.is_finite() && dt >= 0.0) {
            return Err(NumError::invalid(
                "dt",
                format!("sample time must be ≥ 0 and finite, found {dt}"),
            ));
        }
        Ok(StateSpace {
            a,
            b,
            c,
            d,
            dt,
            names: SignalNames::default(),
        })
    }

    /// Number of states n.
    pub fn order(&self) -> usize {
        self.a.nrows()
    }

    /// Number of inputs m.
    pub fn inputs(&self) -> usize {
        self.b.ncols()
    }

    /// Number of outputs p.
    pub fn outputs(&self) -> usize {
        self.c.nrows()
    }

    /// Whether the model is discrete-time.
    pub fn is_discrete(&self) -> bool {
        self.dt > 0.0
    }

    /// A model with the same time domain and new matrices (names dropped where the sizes
    /// changed).
    pub fn with_matrices(
        &self,
        a: DMatrix<f64>,
        b: DMatrix<f64>,
        c: DMatrix<f64>,
        d: DMatrix<f64>,
    ) -> NumResult<Self> {
        let mut s = StateSpace::new(a, b, c, d, self.dt)?;
        if s.inputs() == self.inputs() {
            s.names.inputs = self.names.inputs.clone();
        }
        if s.outputs() == self.outputs() {
            s.names.outputs = self.names.outputs.clone();
        }
        Ok(s)
    }

    /// The Markov parameters `D, CB, CAB, …, CA^{count−2}B` (`count` matrices).
    ///
    /// These are the impulse-response coefficients of the model; a similarity
    /// transformation leaves them unchanged. Cost O(count·n²·m).
    pub fn markov_parameters(&self, count: usize) -> Vec<DMatrix<f64>> {
        let mut out = Vec::with_capacity(count);
        if count == 0 {
            return out;
        }
        out.push(self.d.clone());
        let mut akb = self.b.clone();
        for _ in 1..count {
            out.push(&self.c * &akb);
            akb = &self.a * &akb;
        }
        out
    }

    /// The single-input single-output channel from input `j` to output `i`.
    pub fn channel(&self, i: usize, j: usize) -> NumResult<StateSpace> {
        if i >= self.outputs() || j >= self.inputs() {
            return Err(NumError::invalid(
                "channel",
                format!(
                    "({i}, {j}) is outside the model's {} outputs × {} inputs",
                    self.outputs(),
                    self.inputs()
                ),
            ));
        }
        StateSpace::new(
            self.a.clone(),
            self.b.columns(j, 1).into_owned(),
            self.c.rows(i, 1).into_owned(),
            DMatrix::from_element(1, 1, self.d[(i, j)]),
            self.dt,
        )
    }

    /// Words for the time domain: "continuous" or "discrete (dt = 0.01 s)".
    pub fn domain_words(&self) -> String {
        if self.is_discrete() {
            format!("discrete (dt = {} s)", self.dt)
        } else {
            "continuous".into()
        }
    }
}

/// Checks that two models share a time domain and sample time, for operations that
/// combine them. Sample times must agree to 1e-12 relative.
pub fn same_domain(what: &str, a: &StateSpace, b: &StateSpace) -> NumResult<()> {
    let tol = 1e-12 * a.dt.abs().max(b.dt.abs());
    if (a.dt - b.dt).abs() > tol {
        return Err(NumError::invalid(
            what,
            format!(
                "the models have different time domains: {} and {}; convert one explicitly \
                 (discretize or to_continuous)",
                a.domain_words(),
                b.domain_words()
            ),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shapes_are_checked_with_words() {
        let a = DMatrix::<f64>::zeros(2, 2);
        let e = StateSpace::new(
            a.clone(),
            DMatrix::zeros(3, 1),
            DMatrix::zeros(1, 2),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("B: expected 2 rows"), "{e}");
        let e = StateSpace::new(
            a,
            DMatrix::zeros(2, 1),
            DMatrix::zeros(1, 2),
            DMatrix::zeros(2, 1),
            0.0,
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("D: expected 1×1"), "{e}");
    }

    #[test]
    fn markov_parameters_of_a_chain() {
        // x1' = x2, x2' = u, y = x1: D = 0, CB = 0, CAB = 1 (double integrator).
        let s = StateSpace::new(
            DMatrix::from_row_slice(2, 2, &[0.0, 1.0, 0.0, 0.0]),
            DMatrix::from_column_slice(2, 1, &[0.0, 1.0]),
            DMatrix::from_row_slice(1, 2, &[1.0, 0.0]),
            DMatrix::zeros(1, 1),
            0.0,
        )
        .unwrap();
        let m = s.markov_parameters(4);
        assert_eq!(m.len(), 4);
        assert_eq!(
            (m[0][(0, 0)], m[1][(0, 0)], m[2][(0, 0)], m[3][(0, 0)]),
            (0.0, 0.0, 1.0, 0.0)
        );
    }
}
