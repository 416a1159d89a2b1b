//! Feedback design: Riccati equations, pole assignment, LQ regulator and estimator,
//! interconnection of models.

pub mod compensator;
pub mod interconnect;
pub mod lq;
pub mod lyapunov;
pub mod pole_assignment;
pub mod riccati;
pub mod root_locus;
pub mod wire;
