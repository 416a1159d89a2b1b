//! Time-domain numerics: nonlinear ODE integration and linearisation.

pub mod discretize;
mod dormand_prince;
pub mod linearize;
pub mod metrics;
pub mod ode;
mod radau_iia;
pub mod simulate;
