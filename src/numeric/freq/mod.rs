//! Frequency domain: responses, margins, norms.

pub mod grid;
pub mod margins;
pub mod norms;
pub mod response;
