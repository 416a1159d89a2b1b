//! The script-visible value types. Each wraps a numeric-layer value; the wrappers are
//! what rhai stores in a `Dynamic`.

mod complex;
mod matrix;
mod model;
mod response;

pub use complex::{Complex, ComplexMatrix};
pub use matrix::Matrix;
pub use model::{Figure, System, TransferFunction};
pub use response::Response;
