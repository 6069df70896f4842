//! The optimised sensor conditioning against its plain definition, bit for bit.
//!
//! `clampwise_tests::plain::sensor` defines the conditioning plainly (every product in i128, one
//! state machine per debounce, every voting subset searched after a rank sort). Here both run
//! side by side over arbitrary configurations (1 to 4 channels, with and without temperature
//! compensation, stuck check and fallback; any gain, rails, limits, debounce counts and filter
//! coefficient the configuration accepts) and arbitrary sample sequences, and every field of
//! every `ForceReading` must be equal but two: the uncertainty, which the core widens to cover
//! the witnesses the vote cannot rule out and the actuator model's band when the two disagree,
//! must never be *smaller* than the plain definition's; and a force the model finds
//! implausible is degraded. The public building blocks (`vote`, `ChannelCalibration::force`) are compared over
//! any input the same way.
#![allow(
    clippy::unwrap_used,
    clippy::cast_possible_truncation,
    clippy::indexing_slicing,
    clippy::cast_sign_loss,
    clippy::cast_possible_wrap
)]

use clampwise_core::sensor::*;
use clampwise_core::units::{Celsius, Newtons, Seconds};
use clampwise_tests::plain::sensor::{self as plain_sensor, PlainSensor};
use proptest::prelude::*;

fn rails_strategy() -> impl Strategy<Value = AdcRails> {
    prop_oneof![
        4 => Just(AdcRails {
            low: -8_388_608,
            high: 8_388_607,
            margin: 8
        }),
        2 => Just(AdcRails {
            low: i32::MIN,
            high: i32::MAX,
            margin: 0
        }),
        1 => (any::<i32>(), any::<i32>(), 0u32..1000).prop_map(|(a, b, margin)| AdcRails {
            low: a.min(b),
            high: a.max(b),
            margin,
        }),
    ]
}

fn temperature_strategy() -> impl Strategy<Value = Option<TemperatureCompensation>> {
    prop_oneof![
        2 => Just(None),
        4 => (
            -60i32..60,
            1i32..120,
            1i32..120,
            -(1i64 << 36)..(1i64 << 36),
            -(1i32 << 18)..(1i32 << 18),
        )
            .prop_map(|(r, below, above, zero, span)| {
                Some(TemperatureCompensation {
                    reference: Celsius::from_num(r),
                    min: Celsius::from_num(r - below),
                    max: Celsius::from_num(r + above),
                    zero_per_kelvin: NewtonsPerKelvin::from_bits(zero),
                    span_per_kelvin: PerKelvin::from_bits(span),
                })
            }),
        // Anything at all; the configuration rejects what it cannot hold.
        1 => (
            any::<i32>(),
            any::<i32>(),
            any::<i32>(),
            any::<i64>(),
            any::<i32>()
        )
            .prop_map(|(r, lo, hi, zero, span)| {
                Some(TemperatureCompensation {
                    reference: Celsius::from_bits(r),
                    min: Celsius::from_bits(lo),
                    max: Celsius::from_bits(hi),
                    zero_per_kelvin: NewtonsPerKelvin::from_bits(zero),
                    span_per_kelvin: PerKelvin::from_bits(span),
                })
            }),
    ]
}

fn calibration_strategy() -> impl Strategy<Value = ChannelCalibration> {
    let gain = prop_oneof![
        4 => (1i64 << 20..1i64 << 34).prop_map(|g| g),
        1 => (1i64 << 20..1i64 << 34).prop_map(|g| -g),
        1 => any::<i64>(),
    ];
    let offset = prop_oneof![3 => -100_000i32..100_000, 1 => any::<i32>().prop_map(|o| o / 4)];
    (gain, offset, rails_strategy(), temperature_strategy()).prop_map(
        |(gain, offset, rails, temperature)| ChannelCalibration {
            gain: NewtonsPerCount::from_bits(gain),
            offset: Newtons::from_bits(offset),
            rails,
            temperature,
        },
    )
}

fn debounce_strategy() -> impl Strategy<Value = Debounce> {
    prop_oneof![
        8 => (1u16..5, 1u16..5),
        1 => (1u16..300, 1u16..300),
        1 => (1u16..=u16::MAX, 1u16..=u16::MAX),
    ]
    .prop_map(|(raise_after, clear_after)| Debounce {
        raise_after,
        clear_after,
    })
}

fn limits_strategy() -> impl Strategy<Value = DiagnosticLimits> {
    let stuck = prop_oneof![
        Just(None),
        (1i64 << 22..1i64 << 28, 1i32..1 << 17).prop_map(|(t, s)| Some(StuckCheck {
            time: Seconds::from_bits(t),
            command_span: ActuatorCommand::from_bits(s),
        })),
    ];
    let debounce = (
        debounce_strategy(),
        debounce_strategy(),
        debounce_strategy(),
        debounce_strategy(),
        debounce_strategy(),
        debounce_strategy(),
    )
        .prop_map(
            |(invalid, rail, range, rate, stuck, disagreement)| DebounceSet {
                invalid,
                rail,
                range,
                rate,
                stuck,
                disagreement,
            },
        );
    let rate = prop_oneof![
        3 => 1i64 << 40..1i64 << 60,
        1 => 1i64..=i64::MAX,
    ];
    let hold = prop_oneof![3 => 0u16..4, 1 => any::<u16>()];
    (
        -(1i32 << 28)..0,
        1i32 << 20..i32::MAX,
        rate,
        0i32..1 << 16,
        stuck,
        debounce,
        hold,
    )
        .prop_map(
            |(lo, hi, rate, noise, stuck, debounce, hold)| DiagnosticLimits {
                force_min: Newtons::from_bits(lo),
                force_max: Newtons::from_bits(hi),
                max_rate: NewtonsPerSecond::from_bits(rate),
                noise_band: Newtons::from_bits(noise),
                stuck,
                debounce,
                max_hold_samples: hold,
            },
        )
}

fn voting_strategy() -> impl Strategy<Value = VotingLimits> {
    (
        prop_oneof![3 => 1i32..1 << 20, 1 => 1i32..=i32::MAX],
        0i32..1 << 16,
    )
        .prop_map(|(t, u)| VotingLimits {
            tolerance: Newtons::from_bits(t),
            channel_uncertainty: Newtons::from_bits(u),
        })
}

fn fallback_strategy() -> impl Strategy<Value = Option<ActuatorTransfer>> {
    prop_oneof![
        Just(None),
        (
            any::<i64>(),
            any::<i32>(),
            0i32..1 << 20,
            1i32 << 16..i32::MAX
        )
            .prop_map(|(g, o, h, u)| Some(ActuatorTransfer {
                gain: NewtonsPerCommand::from_bits(g),
                offset: Newtons::from_bits(o),
                hysteresis: Newtons::from_bits(h),
                uncertainty: Newtons::from_bits(u),
                response_time: Seconds::ZERO,
            })),
        (1i64 << 36..1i64 << 44, -1000i32..1000, 0i32..1 << 20).prop_map(|(g, o, h)| Some(
            ActuatorTransfer {
                gain: NewtonsPerCommand::from_bits(g),
                offset: Newtons::from_bits(o),
                hysteresis: Newtons::from_bits(h),
                uncertainty: Newtons::from_bits(i32::MAX / 2),
                response_time: Seconds::ZERO,
            }
        )),
    ]
}

#[derive(Clone, Debug)]
struct Parts {
    rate: u32,
    /// Calibrations; with `same`, every channel takes the first (a shared temperature
    /// compensation is then evaluated once per sample).
    cals: [ChannelCalibration; 4],
    same: bool,
    alpha: i64,
    limits: DiagnosticLimits,
    voting: VotingLimits,
    fallback: Option<ActuatorTransfer>,
}

fn parts_strategy() -> impl Strategy<Value = Parts> {
    (
        prop_oneof![Just(1000u32), 1u32..100_000],
        (prop::array::uniform4(calibration_strategy()), any::<bool>()),
        prop_oneof![Just(1i64 << 60), (1i64 << 40)..(1i64 << 60)],
        limits_strategy(),
        voting_strategy(),
        fallback_strategy(),
    )
        .prop_map(
            |(rate, (cals, same), alpha, limits, voting, fallback)| Parts {
                rate,
                cals,
                same,
                alpha,
                limits,
                voting,
                fallback,
            },
        )
}

impl Parts {
    fn cal(&self, i: usize) -> &ChannelCalibration {
        &self.cals[if self.same { 0 } else { i }]
    }

    fn config<const C: usize>(&self) -> Option<SensorConfig<C>> {
        let filter = LowPass::from_bits(self.alpha, self.rate).ok()?;
        let cals: [ChannelCalibration; C] = core::array::from_fn(|i| *self.cal(i));
        SensorConfig::new(
            self.rate,
            cals,
            filter,
            self.limits,
            self.voting,
            self.fallback,
        )
        .ok()
    }
}

#[derive(Clone, Debug)]
struct Sample {
    /// Force (N) all channels see before their own deviation.
    base: i32,
    /// Per channel: deviation kind and amount.
    channels: [(u8, i32, bool); 4],
    command: Option<i32>,
    temperature: Option<i32>,
}

fn sample_strategy() -> impl Strategy<Value = Sample> {
    let channel = (0u8..40, any::<i32>(), prop::bool::weighted(0.97));
    (
        -3000i32..70_000,
        prop::array::uniform4(channel),
        prop_oneof![
            2 => Just(None),
            6 => (-100_000i32..100_000).prop_map(|d| Some((10 << 16) + d)),
            1 => any::<i32>().prop_map(Some),
        ],
        prop_oneof![
            3 => Just(None),
            3 => (-50i32 << 16..130 << 16).prop_map(Some),
            1 => any::<i32>().prop_map(Some),
        ],
    )
        .prop_map(|(base, channels, command, temperature)| Sample {
            base,
            channels,
            command,
            temperature,
        })
}

/// Counts that read `force` newtons through the calibration (ignoring the temperature), or a
/// deviation from them.
fn counts(cal: &ChannelCalibration, force: i64, kind: u8, x: i32) -> i32 {
    let gain = i128::from(cal.gain.to_bits());
    let q8 = i128::from(force) * 256 - i128::from(cal.offset.to_bits());
    let exact = if gain == 0 {
        0
    } else {
        ((q8 << 24) / gain).clamp(i128::from(i32::MIN), i128::from(i32::MAX)) as i32
    };
    match kind {
        0..=31 => exact.saturating_add(x % 64),
        32..=34 => exact.saturating_add(x % 100_000),
        35 => exact.saturating_add(x % 10_000_000),
        36 => cal.rails.low,
        37 => cal.rails.high,
        _ => x,
    }
}

/// The force all channels see (N): a slow drift with rare jumps (`sticky`: so the stuck check
/// fires and the rate check passes), or a fast one with frequent jumps.
fn next_level(level: i64, s: &Sample, sticky: bool) -> i64 {
    let b = i64::from(s.base);
    match (sticky, b % 25 == 0, b % 4 == 0) {
        (true, false, _) => level + b % 7 - 3,
        (false, false, false) => level + b % 200 - 100,
        _ => b,
    }
}

fn raw_for<const C: usize>(parts: &Parts, level: i64, s: &Sample) -> [RawChannel; C] {
    core::array::from_fn(|i| {
        let (kind, x, valid) = s.channels[i];
        RawChannel {
            counts: counts(parts.cal(i), level, kind, x),
            valid,
        }
    })
}

fn run<const C: usize>(
    parts: &Parts,
    samples: &[Sample],
    sticky: bool,
) -> Result<(), TestCaseError> {
    let cfg = parts.config::<C>();
    prop_assume!(cfg.is_some());
    let Some(cfg) = cfg else { return Ok(()) };
    let mut optimised = SensorState::<C>::new();
    let mut plain = PlainSensor::<C>::new();
    let mut level = 10_000i64;
    for (k, s) in samples.iter().enumerate() {
        level = next_level(level, s, sticky);
        let raw = raw_for::<C>(parts, level, s);
        let command = s.command.map(ActuatorCommand::from_bits);
        let temperature = s.temperature.map(Celsius::from_bits);
        let want = plain.update(&cfg, &raw, command, temperature);
        let got = optimised.update(&cfg, &raw, command, temperature);
        prop_assert!(
            got.uncertainty >= want.uncertainty,
            "sample {}: ± {} below the plain definition's {}",
            k,
            got.uncertainty,
            want.uncertainty
        );
        let mut same = got;
        same.uncertainty = want.uncertainty;
        same.implausible = false;
        if got.implausible && want.health == Health::Ok {
            prop_assert_eq!(got.health, Health::Degraded);
            same.health = Health::Ok;
        }
        prop_assert_eq!(same, want, "sample {}: {:?}", k, raw);
    }
    Ok(())
}

proptest! {
    // A third to a half of the drawn configurations are invalid (rejected, not run).
    #![proptest_config(ProptestConfig {
        cases: 400,
        max_global_rejects: 100_000,
        ..ProptestConfig::default()
    })]

    #[test]
    fn one_channel_matches_the_definition(
        parts in parts_strategy(),
        samples in prop::collection::vec(sample_strategy(), 1..300),
        sticky in any::<bool>(),
    ) {
        run::<1>(&parts, &samples, sticky)?;
    }

    #[test]
    fn two_channels_match_the_definition(
        parts in parts_strategy(),
        samples in prop::collection::vec(sample_strategy(), 1..300),
        sticky in any::<bool>(),
    ) {
        run::<2>(&parts, &samples, sticky)?;
    }

    #[test]
    fn three_channels_match_the_definition(
        parts in parts_strategy(),
        samples in prop::collection::vec(sample_strategy(), 1..300),
        sticky in any::<bool>(),
    ) {
        run::<3>(&parts, &samples, sticky)?;
    }

    #[test]
    fn four_channels_match_the_definition(
        parts in parts_strategy(),
        samples in prop::collection::vec(sample_strategy(), 1..300),
        sticky in any::<bool>(),
    ) {
        run::<4>(&parts, &samples, sticky)?;
    }
}

fn candidate() -> impl Strategy<Value = Option<Newtons>> {
    // Clustered values (so agreeing sets, ties and exact half-way models occur), or anything.
    prop_oneof![
        1 => Just(None),
        4 => (0i32..64).prop_map(|v| Some(Newtons::from_bits(v * 50))),
        1 => any::<i32>().prop_map(|v| Some(Newtons::from_bits(v))),
        1 => prop_oneof![Just(i32::MIN), Just(i32::MAX)].prop_map(|v| Some(Newtons::from_bits(v))),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: 20_000,
        max_global_rejects: 20_000,
        ..ProptestConfig::default()
    })]

    // The vote with its fast path and pruned search against every-subset search.
    #[test]
    fn vote_matches_the_definition(
        c in prop::collection::vec(candidate(), 0..=4),
        tol in prop_oneof![
            4 => (0i32..400).prop_map(|t| t * 5),
            1 => any::<i32>(),
            1 => Just(i32::MAX),
        ],
        model in prop_oneof![
            Just(None),
            (0i32..64).prop_map(|v| Some(Newtons::from_bits(v * 25))),
            any::<i32>().prop_map(|v| Some(Newtons::from_bits(v))),
        ],
    ) {
        let tol = Newtons::from_bits(tol);
        prop_assert_eq!(vote(&c, tol, model), plain_sensor::vote(&c, tol, model));
    }

    // Counts → newtons on any counts and temperature, for any calibration the configuration
    // accepts.
    #[test]
    fn calibration_matches_the_definition(
        cal in calibration_strategy(),
        counts in prop_oneof![any::<i32>(), -10_000_000i32..10_000_000],
        t in prop_oneof![Just(None), any::<i32>().prop_map(Some), (-60i32 << 16..150 << 16).prop_map(Some)],
    ) {
        prop_assume!(cal.validate(0).is_ok());
        let t = t.map(Celsius::from_bits);
        let got = cal.force(counts, t);
        let (bits, saturated, clamped) = plain_sensor::calibrate(&cal, counts, t);
        prop_assert_eq!(
            (got.force.to_bits(), got.saturated, got.temperature_clamped),
            (bits, saturated, clamped)
        );
    }
}

/// The strategies must reach every outcome, or the equality above says little: each
/// agreement, health and source, each flag, holds, saturation and clamped temperatures.
#[test]
fn the_inputs_reach_every_outcome() {
    use proptest::strategy::ValueTree;
    use proptest::test_runner::TestRunner;
    let mut runner = TestRunner::deterministic();
    let mut seen = std::collections::BTreeMap::<String, u32>::new();
    let mut mark = |k: String| *seen.entry(k).or_default() += 1;
    let mut configs = 0;
    while configs < 400 {
        let parts = parts_strategy().new_tree(&mut runner).unwrap().current();
        let Some(cfg) = parts.config::<3>() else {
            continue;
        };
        configs += 1;
        let samples = prop::collection::vec(sample_strategy(), 300)
            .new_tree(&mut runner)
            .unwrap()
            .current();
        let mut state = SensorState::<3>::new();
        let mut level = 10_000i64;
        for (k, s) in samples.iter().enumerate() {
            level = next_level(level, s, configs % 2 == 0);
            let raw = raw_for::<3>(&parts, level, s);
            let r = state.update(
                &cfg,
                &raw,
                s.command.map(ActuatorCommand::from_bits),
                s.temperature.map(Celsius::from_bits),
            );
            mark(format!("{:?}", r.agreement));
            mark(format!("{:?}", r.health));
            mark(format!("{:?}", core::mem::discriminant(&r.source)));
            for f in r.channel_flags {
                for (name, _) in f.iter_names() {
                    mark(name.to_owned());
                }
            }
            if r.saturated {
                mark("saturated".into());
            }
            if r.temperature_clamped {
                mark("temperature clamped".into());
            }
            if matches!(r.source, ForceSource::Channels { .. })
                && r.uncertainty > cfg.voting().channel_uncertainty
                && r.agreement != Agreement::Unresolved
            {
                mark("held".into());
            }
            if k > 0 && r.channel_flags.iter().all(|f| f.is_empty()) {
                mark("clean".into());
            }
        }
    }
    let want = [
        "NoChannels",
        "Single",
        "Unanimous",
        "Majority",
        "ModelTieBreak",
        "Unresolved",
        "Ok",
        "Degraded",
        "Lost",
        "INVALID",
        "RAIL_LOW",
        "RAIL_HIGH",
        "OUT_OF_RANGE",
        "RATE",
        "STUCK",
        "DISAGREE",
        "REJECTED",
        "STALE",
        "saturated",
        "temperature clamped",
        "held",
        "clean",
    ];
    let missing: Vec<_> = want.iter().filter(|w| !seen.contains_key(**w)).collect();
    assert!(
        missing.is_empty(),
        "never reached: {missing:?}; seen {seen:?}"
    );
    // Three sources (channels, fallback, unavailable).
    assert_eq!(
        seen.keys()
            .filter(|k| k.starts_with("Discriminant"))
            .count(),
        3,
        "{seen:?}"
    );
}
