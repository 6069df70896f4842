//! Fixed-point quantity types: the unit is in the type name, not in a comment.
//!
//! Every per-sample quantity is a `fixed` Q format chosen so that the envelope of the design
//! (force to 200 kN, torque to 50 kN·m, −50…1000 °C, ±2000 rad/s) fits with room to spare and
//! the resolution is far below the 0.1 %-of-reading target at 5 % of full scale.
//!
//! | type | unit | Q format | range | resolution |
//! |---|---|---|---|---|
//! | [`Newtons`] | N | I24F8 | ±8.39 MN | 3.9 mN |
//! | [`NewtonMetres`] | N·m | I20F12 | ±524 kN·m | 0.24 mN·m |
//! | [`Metres`] | m | I8F24 | ±128 m | 60 nm |
//! | [`Celsius`] | °C | I16F16 | ±32 768 °C | 15 µK |
//! | [`RadPerSec`] | rad/s | I16F16 | ±32 768 rad/s | 15 µrad/s |
//! | [`Ratio`] | 1 (μ, bedding, factors) | I2F30 | ±2 | 0.93 ppb |
//! | [`Watts`] | W | I32F32 | ±2.1 GW | 0.23 nW |
//! | [`Joules`] | J | I48F16 | ±1.4·10¹⁴ J | 15 µJ |
//! | [`Seconds`] | s | I32F32 | ±2.1·10⁹ s | 0.23 ns |

use fixed::types::{I2F30, I8F24, I16F16, I20F12, I24F8, I32F32, I48F16};

/// Force in newtons (I24F8).
pub type Newtons = I24F8;
/// Torque in newton-metres (I20F12).
pub type NewtonMetres = I20F12;
/// Length in metres (I8F24).
pub type Metres = I8F24;
/// Temperature in degrees Celsius (I16F16).
pub type Celsius = I16F16;
/// Angular (slip) speed in radians per second (I16F16).
pub type RadPerSec = I16F16;
/// Dimensionless ratio: friction coefficient, bedding fraction, correction factors (I2F30).
pub type Ratio = I2F30;
/// Power in watts (I32F32).
pub type Watts = I32F32;
/// Energy in joules (I48F16): holds more than 10¹⁰ J (the life of a lining) at µJ resolution.
pub type Joules = I48F16;
/// Time in seconds (I32F32).
pub type Seconds = I32F32;
