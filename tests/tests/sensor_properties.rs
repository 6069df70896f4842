//! Properties of the sensor conditioning over arbitrary inputs: any counts, valid bits,
//! command and temperature bit patterns, for 1 to 4 channels.
//!
//! - it never panics (release build with overflow checks on);
//! - it never reports `Health::Ok` while any channel carries a flag, and never uses a channel
//!   with a raised diagnostic or a stale value;
//! - a force from the channels lies within the plausible range (only accepted samples reach
//!   the filters, whose output stays within the range of their inputs);
//! - source, health and force are consistent with each other.
#![allow(
    clippy::unwrap_used,
    clippy::cast_possible_truncation,
    clippy::indexing_slicing,
    clippy::cast_sign_loss
)]

mod sensor_common;

use clampwise_core::sensor::*;
use clampwise_core::units::{Celsius, Newtons};
use proptest::prelude::*;
use sensor_common::*;

#[derive(Clone, Debug)]
struct Sample {
    raw: [RawChannel; 4],
    command: Option<i32>,
    temperature: Option<i32>,
}

fn counts_strategy() -> impl Strategy<Value = i32> {
    // Mostly near a plausible 10 kN with small or large deviations (so the vote, holds and
    // flags are exercised), sometimes any bit pattern at all.
    prop_oneof![
        4 => (-2_000i32..2_000).prop_map(|d| 1_000_000 + d),
        3 => (-300_000i32..300_000).prop_map(|d| 1_000_000 + d),
        2 => any::<i32>(),
        1 => Just(RAIL_HIGH),
    ]
}

fn sample_strategy() -> impl Strategy<Value = Sample> {
    let raw = (counts_strategy(), prop::bool::weighted(0.9))
        .prop_map(|(counts, valid)| RawChannel { counts, valid });
    (
        prop::array::uniform4(raw),
        prop_oneof![
            Just(None),
            (-100_000i32..100_000).prop_map(|d| Some((10 << 16) + d)),
            any::<i32>().prop_map(Some),
        ],
        prop_oneof![
            3 => Just(None),
            2 => (-40i32 << 16..125 << 16).prop_map(Some),
            1 => any::<i32>().prop_map(Some),
        ],
    )
        .prop_map(|(raw, command, temperature)| Sample {
            raw,
            command,
            temperature,
        })
}

fn with_temperature(cal: ChannelCalibration) -> ChannelCalibration {
    ChannelCalibration {
        temperature: Some(TemperatureCompensation {
            reference: Celsius::lit("20"),
            min: Celsius::lit("-40"),
            max: Celsius::lit("125"),
            zero_per_kelvin: NewtonsPerKelvin::lit("0.8"),
            span_per_kelvin: PerKelvin::lit("-0.0002"),
        }),
        ..cal
    }
}

fn configs<const C: usize>() -> [SensorConfig<C>; 2] {
    let mut cals = [CAL; C];
    if let Some(c) = cals.last_mut() {
        *c = with_temperature(*c);
    }
    let quick = DiagnosticLimits {
        debounce: DebounceSet::uniform(Debounce::IMMEDIATE),
        max_hold_samples: 0,
        ..LIMITS
    };
    [
        SensorConfig::new(FS, cals, filter(), LIMITS, VOTING, Some(TRANSFER)).unwrap(),
        SensorConfig::new(FS, cals, filter(), quick, VOTING, None).unwrap(),
    ]
}

fn check<const C: usize>(samples: &[Sample]) -> Result<(), TestCaseError> {
    for cfg in configs::<C>() {
        let mut state = SensorState::<C>::new();
        let limits = cfg.limits();
        for s in samples {
            let raw: [RawChannel; C] = core::array::from_fn(|i| s.raw[i]);
            let cmd = s.command.map(ActuatorCommand::from_bits);
            let temp = s.temperature.map(Celsius::from_bits);
            let r = state.update(&cfg, &raw, cmd, temp);

            for f in &r.channel_flags[C..] {
                prop_assert!(f.is_empty());
            }
            if r.health == Health::Ok {
                prop_assert!(r.channel_flags.iter().all(|f| f.is_empty()), "{r:?}");
                prop_assert!(!r.temperature_clamped);
            }
            match r.source {
                ForceSource::Channels { mask } => {
                    prop_assert!(!mask.is_empty());
                    prop_assert_eq!(mask.bits() & !ChannelMask::first(C).bits(), 0);
                    prop_assert!(r.health != Health::Lost);
                    for (ch, f) in r.channel_flags.iter().enumerate() {
                        if mask.contains(ch) {
                            prop_assert!(!f.intersects(ChannelFlags::UNUSABLE), "{r:?}");
                            if r.health == Health::Ok {
                                prop_assert!(f.is_empty());
                            }
                        }
                    }
                    let force = r.force.unwrap();
                    prop_assert!(force >= limits.force_min && force <= limits.force_max);
                    prop_assert!(r.uncertainty >= cfg.voting().channel_uncertainty);
                }
                ForceSource::ActuatorFallback => {
                    prop_assert!(cmd.is_some() && cfg.fallback().is_some());
                    prop_assert_eq!(r.health, Health::Lost);
                    prop_assert!(r.force.is_some());
                    prop_assert_eq!(r.uncertainty, cfg.fallback().unwrap().stated_uncertainty());
                }
                ForceSource::Unavailable => {
                    prop_assert_eq!(r.health, Health::Lost);
                    prop_assert_eq!(r.force, None);
                    prop_assert_eq!(r.uncertainty, Newtons::MAX);
                }
            }
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(512))]

    #[test]
    fn one_channel(samples in prop::collection::vec(sample_strategy(), 1..200)) {
        check::<1>(&samples)?;
    }

    #[test]
    fn two_channels(samples in prop::collection::vec(sample_strategy(), 1..200)) {
        check::<2>(&samples)?;
    }

    #[test]
    fn three_channels(samples in prop::collection::vec(sample_strategy(), 1..200)) {
        check::<3>(&samples)?;
    }

    #[test]
    fn four_channels(samples in prop::collection::vec(sample_strategy(), 1..200)) {
        check::<4>(&samples)?;
    }
}

/// The strategies must reach the interesting states, or the properties above say little.
#[test]
fn the_inputs_reach_every_health_and_source() {
    use proptest::strategy::ValueTree;
    use proptest::test_runner::TestRunner;
    let mut runner = TestRunner::deterministic();
    let cfg = &configs::<3>()[0];
    let mut state = SensorState::<3>::new();
    let mut seen = [false; 7];
    for _ in 0..20_000 {
        let s = sample_strategy().new_tree(&mut runner).unwrap().current();
        let raw: [RawChannel; 3] = core::array::from_fn(|i| s.raw[i]);
        let r = state.update(
            cfg,
            &raw,
            s.command.map(ActuatorCommand::from_bits),
            s.temperature.map(Celsius::from_bits),
        );
        seen[0] |= r.health == Health::Ok;
        seen[1] |= r.health == Health::Degraded;
        seen[2] |= r.source == ForceSource::ActuatorFallback;
        seen[3] |= r.source == ForceSource::Unavailable;
        seen[4] |= r.agreement == Agreement::Majority;
        seen[5] |= r
            .channel_flags
            .iter()
            .any(|f| f.contains(ChannelFlags::REJECTED));
        seen[6] |= r.temperature_clamped;
    }
    assert!(seen.iter().all(|&s| s), "{seen:?}");
}
