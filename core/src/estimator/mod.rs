//! The per-sample pipeline (work in progress).
mod torque;
mod uncertainty;
pub use uncertainty::Combination;
