//! # clampwise-core
//!
//! A `no_std`, allocation-free, panic-free, fixed-point core that turns clamp-force sensor
//! readings into live brake or clutch friction torque.
//!
//! **Caution.** The output is an *estimate*, validated only as far as its tests. It is not a
//! certified safety function. Validate it on the bench for each lining and geometry, and follow
//! the applicable functional-safety process (ISO 26262, IEC 61508, ISO 13849 or the machine's
//! own standard), local codes and licensed engineering practice.
//!
//! ## Data flow
//!
//! ```text
//! build time (f64, libm), on the host or in a build script:
//!   geometry::Disc + shape (annulus | sector | button | polygon) + faces n + cone α?
//!     = geometry::Contact ─► r_up, r_uw ─► lever arm (r_e / sin α) at each bedding
//!     ─► geometry::build_radius_table ─► RadiusTable (F × bedding → m) ─┐
//!   or a drum, block, band or cone-engagement model (geometry::brake, T = F·g(μ))
//!     ─► g(μ)/μ at μ breakpoints ─► RadiusTable (F × μ → m) ──────────┤ (Tables::over_mu)
//!   μ(T, v) table + stick/slip settings ─► friction::FrictionConfig ────┴► config::Tables
//!   config::DeviceParams { sample period (once), tables, thermal, wear, sensors, adaptation,
//!     limits, tolerances } ─► config::DeviceConfig::new ─► DeviceConfig<Tables, C>
//!   (a firmware: the same from raw bits, `from_bits` / `DeviceConfig::from_parts`, in `const`)
//!
//! per sample, estimator::Estimator::step (integers only, O(1), no allocation, no panic):
//!   raw counts[1..4] ─ sensor: calibrate → filter → diagnose → vote ─► clamp force F, health
//!   ω_in − ω_out ─► slip speed v ─ friction: stick/slip with hysteresis
//!   F, bedding ─ radius table ─► r_e;   T_lining, |v| ─ μ table × k (adapt) ─► μ
//!     (drum, band: F, μ ─ radius table ─► r(μ) = g(μ)/μ for each μ used; ± from the torque
//!     at both ends of μ's tolerance; Flags::SELF_LOCKING past the table's last μ)
//!   slipping : torque = −sign(v) · n · μ · F · r_e (+ drag)
//!   holding  : capacity = n · μ_s · F · r_e; torque not given, bounded by ± capacity
//!   released : F < touch force → torque = drag (0 for a dry contact)
//!   |T · v| ─► thermal (T_lining) and wear (energy, bedding, thickness)
//!   reference torque ─► adapt: bounded RLS correction k of μ, frozen on faults
//!   ─► Estimate { torque, capacity, ±, μ, r_e, F, T_lining, bedding, wear, state, flags }
//!
//! across power cycles (integers only, at start-up and every few seconds or minutes):
//!   Estimator::save ─► state_record::StateRecord (88 B, CRC-32, config checksum)
//!     ─► record_store::RecordStore (two NOR flash slots, A/B, power-cut safe)
//!     ─► RecordStore::restore: newest valid record, checked against the config
//!
//! exact resume on a host (chunked replay, moving a device between workers):
//!   Estimator::snapshot_into ─► estimator::snapshot (whole state, 51·C + 124 B, CRC-32,
//!     config checksum) ─► Estimator::from_snapshot: every later estimate as in one pass
//! ```
//!
//! The 88-byte state record carries only the slow state (the sensor filters and the stick/slip
//! decision start afresh after it) and is made for a device's power cycles; the snapshot
//! carries everything, for exact resume on a host, and is not meant for flash wear-levelling.
//!
//! Floats (via `libm`) appear only where tables and coefficients are built; the per-sample
//! path uses the fixed-point types of [`units`] and integer arithmetic only, so every target
//! gives the same bits.
//!
//! ## The contract: every reported number lies within its ±, or a flag says why not
//!
//! With [`estimator::Combination::WorstCase`] (the default), a reported torque or holding
//! capacity lies within its ± of the true value as long as the configured tolerances hold
//! (μ within `tolerances.mu`, r_e within `tolerances.radius`, a healthy channel within
//! `channel_uncertainty`) and at least one force channel the vote cannot rule out is healthy.
//! How each threat is met:
//!
//! | threat | what the estimate does |
//! |---|---|
//! | agreeing gauges up to twice the vote tolerance apart | the force ± reaches every used gauge |
//! | a healthy gauge out-voted by two that fail alike | the force ± reaches the out-voted gauge until a fault of its own (invalid, rail, range, rate, stuck) or the actuator model rules it out; `SENSOR_DEGRADED` |
//! | two gauges that disagree | the ± reaches both, or the actuator model picks one |
//! | every gauge wrong the same way (excitation, shared gain) | beyond the actuator model's band: [`flags::Flags::FORCE_IMPLAUSIBLE`], the ± covers the model's band as well |
//! | a force below the touch force that may not be | `Released`: the ± covers the friction torque the force's upper bound could carry |
//! | a speed that could not be read | `SlipUnknown` ([`flags::Flags::SPEED_UNKNOWN`]): no torque, the capacity a bound over every slip speed and temperature of the μ table, no heat or wear added |
//! | no usable force | `Unavailable` ([`flags::Flags::FORCE_LOST`]): neither torque nor capacity |
//! | an arithmetic limit | [`flags::Flags::ARITHMETIC_SATURATED`] |
//!
//! The uncertainty is the exact worst case of the product, T·(δμ + δr + δμ·δr) +
//! T_U·(1 + δμ)(1 + δr) with T_U the torque carried by the force's ± (see
//! `estimator::uncertainty`). Limits of what can be detected, stated: a common-mode error of
//! every gauge that stays inside the actuator model's band (`uncertainty + hysteresis`), or
//! any common-mode error on a device without an actuator model, is not seen; a single gauge
//! with neither a stuck check nor an actuator model cannot detect its own faults, so the
//! device configuration refuses it unless acknowledged. `RootSumSquare` gives a
//! standard-uncertainty style ±, not a bound.
//!
//! ## Units, ranges and resolutions
//!
//! | quantity | type | unit | Q format | range | resolution |
//! |---|---|---|---|---|---|
//! | clamp force, force uncertainty | [`units::Newtons`] | N | I24F8 | ±8.39 MN | 3.9 mN |
//! | torque, capacity, ± uncertainty, drag | [`units::NewtonMetres`] | N·m | I20F12 | ±524 kN·m | 0.24 mN·m |
//! | effective radius / lever arm, wear | [`units::Metres`] | m | I8F24 | ±128 m | 60 nm |
//! | lining and rotor temperature | [`units::Celsius`] | °C | I16F16 | ±32 768 °C | 15 µK |
//! | shaft and slip speed | [`units::RadPerSec`] | rad/s | I16F16 | ±32 768 rad/s | 15 µrad/s |
//! | μ, bedding, correction factor, tolerances | [`units::Ratio`] | 1 | I2F30 | ±2 | 0.93·10⁻⁹ |
//! | dissipated power | [`units::Watts`] | W | I32F32 | ±2.1 GW | 0.23 nW |
//! | dissipated energy | [`units::Joules`] | J | I48F16 | ±1.4·10¹⁴ J | 15 µJ |
//! | sample period | [`units::Seconds`] | s | I32F32 | ±2.1·10⁹ s | 0.23 ns |
//! | actuator command | [`sensor::ActuatorCommand`] | command unit | I16F16 | ±32 768 | 1.5·10⁻⁵ |
//! | raw force channel | `i32` | ADC counts | integer | any | 1 count |
//!
//! The design envelope (force to 200 kN, torque to 50 kN·m, −50…1000 °C, ±2000 rad/s) sits well
//! inside every range. The torque product n·k·μ·F·r_e runs in 128-bit integers and rounds once.
//!
//! ## Example: build a device and step it
//!
//! Everything a device needs comes from [`prelude`]; the sample period is stated once, in
//! [`config::DeviceParams`], and each model is built for it.
//!
//! ```
//! use clampwise_core::prelude::*;
//!
//! // A fictional test-rig brake (demo numbers): one annular face pair, 1 kHz loop.
//! let contact = Contact::new(Annulus::new(0.060, 0.100)?, 2, None)?;
//! let device = DeviceConfig::new(&DeviceParams {
//!     sample_period_s: 1e-3, thermal_wear_every: 1, faces: contact.faces(),
//!     tables: Tables::from_contact(
//!         &contact, &[0.0, 200e3], &[0.0, 1.0],                // r_e over force, bedding
//!         &[20.0, 400.0], &[0.0, 100.0], &[[0.40, 0.38], [0.30, 0.28]], // μ(°C, rad/s)
//!         &FrictionParams {
//!             static_to_kinetic: 1.2, stick_speed: 0.05, stick_hysteresis: 0.04,
//!             transition_speed: 0.5, viscous_drag: 0.0, no_load_drag: 0.0,
//!         },
//!     )?,
//!     thermal: ThermalParams {
//!         rotor_mass: 8.0, rotor_specific_heat: 460.0, rotor_share: 0.9,
//!         cooling: Cooling::TimeConstant(600.0), ambient: 20.0, lining: None,
//!         fade_warning: 350.0, over_temperature: 500.0, flag_hysteresis: 10.0, measured: None,
//!     },
//!     wear: WearParams {
//!         bedding_energy: 5e6, specific_wear_rate: 4e-14, lining_area: 8e-3,
//!         initial_thickness: 0.010, minimum_thickness: 0.002,
//!     },
//!     sensor: SensorParams {
//!         channels: [ChannelCalibration::linear(0.01, 0.0, AdcRails::signed_bits(24, 8))?],
//!         filter_cutoff_hz: 200.0,
//!         limits: DiagnosticLimits::new(-2000.0, 60_000.0, 5e6, 20.0)?,
//!         voting: VotingLimits::new(500.0, 100.0)?,
//!         fallback: None,
//!     },
//!     adapt: None,
//!     limits: Limits::new(100.0, 500.0)?,
//!     tolerances: Tolerances::worst_case(0.2, 0.01)?,
//! })?;
//!
//! let mut estimator = Estimator::new(&device);
//! let mut inputs = Inputs::<1>::at_rest(1_000_000); // 10 kN at 10 mN per count
//! inputs.input_speed = Some(RadPerSec::lit("50"));          // the disc turns: the pads slip
//! let mut estimate = estimator.step(&inputs);
//! for _ in 0..50 {
//!     estimate = estimator.step(&inputs);               // let the force filter settle
//! }
//! assert_eq!(estimate.state, ContactState::Slipping);
//! let torque = estimate.torque.unwrap().to_num::<f64>();   // ≈ −2 · 0.39 · 10 kN · 81.7 mm
//! assert!((torque + 637.0).abs() < 1.0, "{torque}");
//! # Ok::<(), Box<dyn core::error::Error>>(())
//! ```
//!
//! ## Friction, thermal and wear state: measured error of the fixed-point path
//!
//! Each model is checked against the f64 model of the same equations
//! (`clampwise_tests::f64_model`, in the tests crate) over the envelope (−50…1000 °C, ±2000 rad/s, 0…10 MW, dt 0.1…10 ms); worst cases measured:
//!
//! | model | quantity | worst case |
//! |---|---|---|
//! | [`friction`] | μ (kinetic, blended) / static μ | 2.1 / 1.8 LSB of `Ratio` (≤ 2·10⁻⁹) |
//! | [`friction`] | drag torque | 0.9 LSB of `NewtonMetres` (0.22 mN·m) |
//! | [`friction`] | stick/slip, direction, clamped | identical |
//! | [`thermal`] | rotor and lining temperature | 7.7·10⁻⁶ K (½ LSB of `Celsius`) |
//! | [`wear`] | energy / bedding / thickness loss | 1 LSB each (15 µJ / 9.3·10⁻¹⁰ / 60 nm) |
//!
//! ## The whole pipeline: measured error against the f64 model
//!
//! [`estimator::Estimator::step`] against the independent f64 pipeline
//! `clampwise_tests::f64_model::pipeline` (in the tests crate; same model, floats throughout,
//! given the same conditioned clamp force), `tests/tests/estimator_reference.rs`:
//!
//! | run | worst error |
//! |---|---|
//! | 10⁵ random cases (force to 200 kN, ±2000 rad/s, −50…1000 °C, bedding 0…1, 1–12 faces, radii 20 mm…1 m, flat and cone), readings above 5 % of full scale | **3.4·10⁻⁶ of reading** (target 10⁻³) |
//! | same, readings below 5 % of full scale | 4.4 mN·m |
//! | a braking event sample by sample (4000 samples, heating 245 K, adaptation on) | 6.5·10⁻⁷ of reading |
//! | contact state (slipping / holding / released) | identical in every sample |
//!
//! The worst case comes from the smallest radii (the radius table's 60 nm step is 2.3·10⁻⁶ of
//! a 22 mm lever arm). Products beyond the torque format (±524 kN·m) saturate and raise
//! [`flags::Flags::ARITHMETIC_SATURATED`].
#![cfg_attr(not(test), no_std)]
#![forbid(unsafe_code)]

pub mod adapt;
mod checksum;
pub mod config;
mod divide;
pub mod estimator;
pub mod flags;
pub mod friction;
pub mod geometry;
pub mod prelude;
pub mod record_store;
pub mod sae_j866;
pub mod sensor;
pub mod state_record;
pub mod table;
pub mod thermal;
pub mod units;
pub mod wear;
mod wide;
