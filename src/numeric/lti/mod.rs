//! Linear time-invariant models: state space, transfer functions, realizations,
//! transforms, structure and equivalence.

pub mod balance;
pub mod delay;
pub mod equivalence;
pub mod modal;
pub mod properties;
pub mod realize;
pub mod staircase;
pub mod system;
pub mod tf;
pub mod transform;
pub mod zeros;
