//! `System`, `TransferFunction`, `Response` and `Figure` as scripts see them.

use crate::numeric::lti::system::StateSpace;
use crate::numeric::lti::tf::TransferFunction as Tf;

/// A state-space model, as scripts see it.
#[derive(Debug, Clone, PartialEq)]
pub struct System(pub StateSpace);

/// A transfer function, as scripts see it.
#[derive(Debug, Clone, PartialEq)]
pub struct TransferFunction(pub Tf);

/// A figure, as scripts see it.
#[derive(Debug, Clone, PartialEq)]
pub struct Figure(pub crate::plot::Figure);
