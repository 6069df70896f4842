//! Integration tests for clampwise live in `tests/tests/`: each file checks one area against a
//! source outside the project (named beside every check).
//!
//! The library holds the test oracles those files share, named by role:
//!
//! - [`f64_model`]: an independent f64 model of the core's equations, to measure the
//!   fixed-point path against (also used by the accuracy envelope in clampwise-benches).
//! - [`plain`]: plain implementations the optimised fixed-point code must match bit for bit.

pub mod f64_model;
pub mod plain;
