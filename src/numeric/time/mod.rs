//! Time-domain numerics: nonlinear ODE integration and linearisation.

mod dormand_prince;
pub mod linearize;
pub mod ode;
mod radau_iia;
