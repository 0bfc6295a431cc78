//! The measured core: ranks, predictor scaling, exact nearest neighbours, T_n and ξ_n.

pub mod coefficient;
pub mod neighbors;
pub mod permutation;
pub mod ranks;
pub mod scaling;
pub mod xi;

pub use coefficient::{conditional_dependence, Ratio, TargetRanks};
pub use scaling::Scaling;
