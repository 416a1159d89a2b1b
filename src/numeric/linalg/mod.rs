//! Dense linear algebra: decompositions and matrix functions.

pub mod dense;
pub mod eigen;
pub mod expm;
pub mod hammarling;
pub(crate) mod kernels;
pub mod logm;
pub mod ops;
pub mod poly;
pub mod qz;
pub(crate) mod reflector;
pub mod schur;
pub mod sylvester;
