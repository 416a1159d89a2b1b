//! Frequency domain: responses, margins, norms.

pub mod response;
