//! Errors of the numerical layer, in the user's terms.
//!
//! Every function in [`crate::numeric`] returns `Result<_, NumError>`. The variants carry
//! the data a user needs to fix the call (shapes, the offending value, the iteration cap),
//! and their `Display` follows the house style: lowercase, no trailing period,
//! "expected … found …". The script layer adds the source position.

use std::fmt;

/// What went wrong in a numerical routine.
#[derive(Debug, Clone, PartialEq)]
pub enum NumError {
    /// A square matrix was required.
    NotSquare {
        /// Which argument (e.g. "A").
        what: String,
        /// Rows found.
        rows: usize,
        /// Columns found.
        cols: usize,
    },
    /// Two operands have incompatible shapes.
    ShapeMismatch {
        /// The operation or argument, e.g. "matrix product" or "B".
        what: String,
        /// What was expected, in words (e.g. "3×1" or "3 rows").
        expected: String,
        /// What was found.
        found: String,
    },
    /// A matrix is singular or numerically singular.
    Singular {
        /// Which matrix.
        what: String,
        /// Reciprocal condition estimate (0 when exactly singular).
        rcond: f64,
    },
    /// An entry is NaN or infinite.
    NotFinite {
        /// Which argument.
        what: String,
        /// Row of the first offending entry.
        row: usize,
        /// Column of the first offending entry.
        col: usize,
        /// The value found.
        value: f64,
    },
    /// An iteration did not converge.
    NoConvergence {
        /// Which algorithm.
        what: String,
        /// Iterations spent.
        iterations: usize,
    },
    /// An argument is outside its domain (a negative count, an empty array, …).
    InvalidArgument {
        /// Which argument.
        what: String,
        /// Why it is invalid, in words.
        why: String,
    },
    /// The problem has no solution of the kind asked for (e.g. no stabilising Riccati
    /// solution); the message names the cause.
    NoSolution {
        /// Which problem.
        what: String,
        /// The cause.
        why: String,
    },
    /// The run's wall-clock deadline (`--timeout`) passed while a long computation was
    /// running; it stopped at its next cancellation point (once per sweep or iteration).
    Cancelled {
        /// Which computation.
        what: String,
    },
    /// A request exceeds a size limit before any memory is allocated.
    TooLarge {
        /// What was requested.
        what: String,
        /// The limit in force.
        limit: usize,
    },
}

impl NumError {
    /// Shortcut for [`NumError::InvalidArgument`].
    pub fn invalid(what: impl Into<String>, why: impl Into<String>) -> Self {
        NumError::InvalidArgument {
            what: what.into(),
            why: why.into(),
        }
    }

    /// Shortcut for [`NumError::ShapeMismatch`].
    pub fn shape(
        what: impl Into<String>,
        expected: impl Into<String>,
        found: impl Into<String>,
    ) -> Self {
        NumError::ShapeMismatch {
            what: what.into(),
            expected: expected.into(),
            found: found.into(),
        }
    }

    /// A cancellation point of a long computation: [`NumError::Cancelled`] once the run's
    /// deadline has passed (`crate::budget::cancelled`, one relaxed atomic load).
    pub fn deadline(what: &str) -> NumResult<()> {
        if crate::budget::cancelled() {
            Err(NumError::Cancelled { what: what.into() })
        } else {
            Ok(())
        }
    }

    /// Shortcut for [`NumError::NoSolution`].
    pub fn no_solution(what: impl Into<String>, why: impl Into<String>) -> Self {
        NumError::NoSolution {
            what: what.into(),
            why: why.into(),
        }
    }
}

impl fmt::Display for NumError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            NumError::NotSquare { what, rows, cols } => {
                write!(f, "{what}: expected a square matrix, found {rows}×{cols}")
            }
            NumError::ShapeMismatch {
                what,
                expected,
                found,
            } => {
                write!(f, "{what}: expected {expected}, found {found}")
            }
            NumError::Singular { what, rcond } => {
                if *rcond == 0.0 {
                    write!(f, "{what} is singular")
                } else {
                    write!(
                        f,
                        "{what} is numerically singular (reciprocal condition number {rcond:.3e})"
                    )
                }
            }
            NumError::NotFinite {
                what,
                row,
                col,
                value,
            } => {
                write!(
                    f,
                    "{what}: entry ({row}, {col}) is {value}, expected a finite number"
                )
            }
            NumError::NoConvergence { what, iterations } => {
                write!(f, "{what} did not converge after {iterations} iterations")
            }
            NumError::InvalidArgument { what, why } => write!(f, "{what}: {why}"),
            NumError::NoSolution { what, why } => write!(f, "{what} has no solution: {why}"),
            NumError::Cancelled { what } => write!(
                f,
                "{what} was stopped: the run's deadline (--timeout) passed while it was running"
            ),
            NumError::TooLarge { what, limit } => {
                write!(f, "{what} exceeds the size limit of {limit}")
            }
        }
    }
}

impl std::error::Error for NumError {}

/// Result alias of the numerical layer.
pub type NumResult<T> = Result<T, NumError>;
