//! Frequency domain: responses, margins, norms.

pub mod curves;
pub mod grid;
pub mod margins;
pub mod norms;
pub mod response;
