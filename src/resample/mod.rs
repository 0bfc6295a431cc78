//! Seeded resampling and stability: which findings come back on other samples of the same process.

pub mod plan;
pub mod stability;

pub use plan::{PlanKind, ResamplePlan};
pub use stability::{ReplicateRecord, Stability};
