//! Linear time-invariant models: state space, transfer functions, realizations,
//! transforms, structure and equivalence.

pub mod balance;
pub mod system;
pub mod tf;
pub mod transform;
pub mod zeros;
