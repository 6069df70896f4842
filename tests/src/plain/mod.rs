//! Plain implementations: the straightforward definitions the core's optimised per-sample code
//! must match bit for bit (every product widened and saturated, every lookup by division, every
//! voting subset searched). Test oracles written on the core's public API only, so they share
//! no code with the implementation under test; never in the per-sample path.
//!
//! - [`table`]: 1-D and 2-D table lookups by division.
//! - [`friction`]: the friction update on two full lookups.
//! - [`sensor`]: the sensor conditioning (calibration, debounce, diagnostics, voting).

pub mod friction;
pub mod sensor;
pub mod table;
