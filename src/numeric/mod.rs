//! Pure numerics on nalgebra types: no rhai, no I/O, no printing.
//!
//! Every public routine checks its arguments (shapes, finiteness) before computing, returns
//! `Result<_, NumError>`, and names its algorithm and a published reference in its doc
//! comment.

pub mod check;
pub mod design;
pub mod error;
pub mod freq;
pub mod linalg;
pub mod lti;
pub mod order;
pub mod sampling;
pub mod stats;
#[doc(hidden)]
pub mod testing;
pub mod time;

pub use error::{NumError, NumResult};
