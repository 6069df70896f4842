//! The C API called from Rust: the demo device through `cw_device_init` (its checksum
//! verified), stepped sample by sample against the core's own estimator on the device the
//! simulator builds, and every error path the header documents.
#![allow(clippy::unwrap_used, clippy::indexing_slicing, unsafe_code)]

use clampwise_capi::*;
use clampwise_core::config::LeverAxis;
use clampwise_core::estimator::{Combination, ContactState, Estimator, Inputs};
use clampwise_core::flags::Flags;
use clampwise_core::sensor::RawChannel;
use clampwise_core::units::RadPerSec;
use clampwise_device::build_core::{ChannelDevice, CoreDevice};
use clampwise_device::config::LoadedConfig;

type HostDevice<const C: usize> = clampwise_device::build_core::Device<C>;

/// A table's arrays at their exact sizes, as `clampwise tables --emit-c` writes them: the
/// breakpoints of each axis and the grid row by row (kept for the whole test run, as C keeps
/// them in flash), with the lengths.
fn exact_table(
    x: impl Iterator<Item = i32>,
    y: impl Iterator<Item = i32>,
    rows: impl Iterator<Item = Vec<i32>>,
) -> (*const i32, *const i32, *const i32, u8, u8) {
    let xs: Vec<i32> = x.collect();
    let ys: Vec<i32> = y.collect();
    let zs: Vec<i32> = rows.flatten().collect();
    let (nx, ny) = (
        u8::try_from(xs.len()).unwrap(),
        u8::try_from(ys.len()).unwrap(),
    );
    let keep = |v: Vec<i32>| Box::leak(v.into_boxed_slice()).as_ptr();
    (keep(xs), keep(ys), keep(zs), nx, ny)
}

/// The description of a host device, every field from the core's getters (what
/// `clampwise tables --emit-c` writes as C).
fn desc_of<const C: usize>(cfg: &HostDevice<C>) -> cw_device_desc {
    let mut d = cw_device_desc {
        channels: u8::try_from(C).unwrap(),
        thermal_wear_every: cfg.thermal_wear_every(),
        faces: cfg.faces(),
        sample_period_q32: cfg.sample_period().to_bits(),
        ..Default::default()
    };
    let r = cfg.tables().radius();
    let (x, y, z, nx, ny) = exact_table(
        r.x_breakpoints().iter().map(|v| v.to_bits()),
        r.y_breakpoints().iter().map(|v| v.to_bits()),
        r.rows()
            .map(|row| row.iter().map(|v| v.to_bits()).collect()),
    );
    d.radius = cw_radius_table {
        lever_axis: match cfg.tables().axis() {
            LeverAxis::Bedding => 0,
            LeverAxis::Mu => 1,
        },
        forces_len: nx,
        second_len: ny,
        force_q8: x,
        second_q30: y,
        radius_q24: z,
    };
    let f = cfg.tables().friction();
    let mu = f.mu_kinetic();
    let (x, y, z, nx, ny) = exact_table(
        mu.x_breakpoints().iter().map(|v| v.to_bits()),
        mu.y_breakpoints().iter().map(|v| v.to_bits()),
        mu.rows()
            .map(|row| row.iter().map(|v| v.to_bits()).collect()),
    );
    // The band's width as the emitter finds it: 2·(slip threshold − stick speed), or one
    // less; the checksum at init tells which.
    let half = f.slip_threshold().to_bits() - f.stick_speed().to_bits();
    d.friction = cw_friction {
        mu: cw_mu_table {
            temperatures_len: nx,
            speeds_len: ny,
            temperature_q16: x,
            speed_q16: y,
            mu_q30: z,
        },
        static_to_kinetic_q30: f.static_to_kinetic().to_bits(),
        stick_speed_q16: f.stick_speed().to_bits(),
        stick_hysteresis_q16: 2 * half,
        transition_speed_q16: f.transition_speed().to_bits(),
        viscous_drag_q16: f.viscous_drag().to_bits(),
        no_load_drag_q12: f.no_load_drag().to_bits(),
    };
    let t = cfg.thermal().to_raw();
    d.thermal = cw_thermal {
        dt_q32: t.dt.to_bits(),
        k_q62: t.k_q62,
        gamma_q62: t.gamma_q62,
        two_node: u8::from(t.two_node),
        has_measured: u8::from(t.measured.is_some()),
        ambient_q16: t.ambient.to_bits(),
        fade_warning_q16: t.fade_warning.to_bits(),
        over_temperature_q16: t.over_temperature.to_bits(),
        flag_hysteresis_q16: t.flag_hysteresis.to_bits(),
        measured_min_q16: t.measured.map_or(0, |m| m.min.to_bits()),
        measured_max_q16: t.measured.map_or(0, |m| m.max.to_bits()),
        measured_max_step_q16: t.measured.map_or(0, |m| m.max_step),
    };
    let w = cfg.wear().to_raw();
    d.wear = cw_wear {
        dt_q63: w.dt_q63,
        e0_q48: cw_u128::of(w.e0_q48),
        bedding_recip: cw_u128::of(w.bedding_recip),
        wear_mant: w.wear_mant,
        wear_shift: w.wear_shift,
        initial_thickness_q24: w.initial_thickness.to_bits(),
        minimum_thickness_q24: w.minimum_thickness.to_bits(),
    };
    let s = cfg.sensor();
    d.sensor.sample_rate_hz = s.sample_rate_hz();
    for (out, c) in d.sensor.channels.iter_mut().zip(s.channels()) {
        let tc = c.temperature;
        *out = cw_channel {
            gain_q32: c.gain.to_bits(),
            offset_q8: c.offset.to_bits(),
            rail_low: c.rails.low,
            rail_high: c.rails.high,
            rail_margin: c.rails.margin,
            has_temperature: u8::from(tc.is_some()),
            tc_reference_q16: tc.map_or(0, |t| t.reference.to_bits()),
            tc_min_q16: tc.map_or(0, |t| t.min.to_bits()),
            tc_max_q16: tc.map_or(0, |t| t.max.to_bits()),
            tc_zero_per_kelvin_q32: tc.map_or(0, |t| t.zero_per_kelvin.to_bits()),
            tc_span_per_kelvin_q30: tc.map_or(0, |t| t.span_per_kelvin.to_bits()),
        };
    }
    d.sensor.filter_alpha_q60 = s.filter().coefficient_bits();
    let l = s.limits();
    d.sensor.force_min_q8 = l.force_min.to_bits();
    d.sensor.force_max_q8 = l.force_max.to_bits();
    d.sensor.max_rate_q32 = l.max_rate.to_bits();
    d.sensor.noise_band_q8 = l.noise_band.to_bits();
    if let Some(st) = l.stuck {
        d.sensor.has_stuck = 1;
        d.sensor.stuck_time_q32 = st.time.to_bits();
        d.sensor.stuck_command_span_q16 = st.command_span.to_bits();
    }
    let deb = |x: clampwise_core::sensor::Debounce| cw_debounce {
        raise_after: x.raise_after,
        clear_after: x.clear_after,
    };
    d.sensor.debounce_invalid = deb(l.debounce.invalid);
    d.sensor.debounce_rail = deb(l.debounce.rail);
    d.sensor.debounce_range = deb(l.debounce.range);
    d.sensor.debounce_rate = deb(l.debounce.rate);
    d.sensor.debounce_stuck = deb(l.debounce.stuck);
    d.sensor.debounce_disagreement = deb(l.debounce.disagreement);
    d.sensor.max_hold_samples = l.max_hold_samples;
    d.sensor.voting_tolerance_q8 = s.voting().tolerance.to_bits();
    d.sensor.voting_channel_uncertainty_q8 = s.voting().channel_uncertainty.to_bits();
    if let Some(a) = s.fallback() {
        d.sensor.has_fallback = 1;
        d.sensor.fallback_gain_q32 = a.gain.to_bits();
        d.sensor.fallback_offset_q8 = a.offset.to_bits();
        d.sensor.fallback_hysteresis_q8 = a.hysteresis.to_bits();
        d.sensor.fallback_uncertainty_q8 = a.uncertainty.to_bits();
        d.sensor.fallback_response_time_q32 = a.response_time.to_bits();
    }
    if let Some(a) = cfg.adapt() {
        let a = a.to_raw();
        d.has_adapt = 1;
        d.adapt = cw_adapt {
            min_factor_q30: a.min_factor.to_bits(),
            max_factor_q30: a.max_factor.to_bits(),
            forgetting_q30: a.forgetting.to_bits(),
            torque_full_scale_q12: a.torque_full_scale.to_bits(),
            min_excitation_q30: a.min_excitation.to_bits(),
            initial_covariance_q30: a.initial_covariance.to_bits(),
            min_covariance_q30: a.min_covariance.to_bits(),
            max_covariance_q30: a.max_covariance.to_bits(),
        };
    }
    d.touch_force_q8 = cfg.limits().touch_force.to_bits();
    d.adapt_min_force_q8 = cfg.limits().adapt_min_force.to_bits();
    d.mu_tolerance_q30 = cfg.tolerances().mu.to_bits();
    d.radius_tolerance_q30 = cfg.tolerances().radius.to_bits();
    d.combination = match cfg.tolerances().combination {
        Combination::WorstCase => 0,
        Combination::RootSumSquare => 1,
    };
    d.checksum = cfg.checksum();
    d
}

fn demo() -> CoreDevice {
    let cfg = LoadedConfig::from_str(clampwise_device::DEMO_CONFIG, "demo.toml").unwrap();
    CoreDevice::build(&cfg.config).unwrap()
}

fn new_device() -> Box<cw_device> {
    // Zeroed storage: no magic word, so "not initialised" until cw_device_init.
    Box::new(cw_device {
        opaque: [0; CW_DEVICE_WORDS],
    })
}

fn new_estimator() -> Box<cw_estimator> {
    Box::new(cw_estimator {
        opaque: [0; CW_ESTIMATOR_WORDS],
    })
}

/// A device description that `cw_device_init` accepts: the stick/slip band width is the one
/// of the two candidates whose checksum matches.
fn accepted_desc(dev: &mut cw_device) -> cw_device_desc {
    accepted_desc_of(&demo(), dev)
}

/// [`accepted_desc`] for any three-channel device.
fn accepted_desc_of(core: &CoreDevice, dev: &mut cw_device) -> cw_device_desc {
    let ChannelDevice::Three(cfg) = &core.device else {
        unreachable!("a three-channel device")
    };
    let mut desc = desc_of(cfg);
    let first = unsafe { cw_device_init(dev, &desc) };
    if first != cw_status::CW_OK {
        desc.friction.stick_hysteresis_q16 -= 1;
    }
    assert_eq!(unsafe { cw_device_init(dev, &desc) }, cw_status::CW_OK);
    desc
}

fn inputs_of(k: i32) -> cw_inputs {
    cw_inputs {
        counts: [k * 9_000, k * 9_100, k * 8_900, 0],
        valid_mask: if k % 11 == 0 { 0b101 } else { 0b111 },
        present: CW_HAS_INPUT_SPEED | CW_HAS_OUTPUT_SPEED,
        input_speed_q16: RadPerSec::from_num(3).to_bits(),
        output_speed_q16: 0,
        ..Default::default()
    }
}

#[test]
fn the_c_api_steps_exactly_as_the_core() {
    let core = demo();
    let ChannelDevice::Three(cfg) = &core.device else {
        unreachable!()
    };
    let mut dev = new_device();
    let desc = accepted_desc(&mut dev);
    let mut checksum = 0;
    assert_eq!(
        unsafe { cw_device_checksum(&*dev, &mut checksum) },
        cw_status::CW_OK
    );
    assert_eq!(checksum, cfg.checksum());
    assert_eq!(desc.checksum, cfg.checksum());

    let mut est = new_estimator();
    assert_eq!(
        unsafe { cw_estimator_init(&mut *est, &*dev) },
        cw_status::CW_OK
    );
    let mut bare = Estimator::new(cfg);
    for k in 0..400 {
        let c = inputs_of(k);
        let mut out = cw_estimate::default();
        assert_eq!(
            unsafe { cw_estimator_step(&mut *est, &c, &mut out) },
            cw_status::CW_OK
        );
        let mut force_channels = [RawChannel {
            counts: 0,
            valid: false,
        }; 3];
        for (i, ch) in force_channels.iter_mut().enumerate() {
            if c.valid_mask & (1 << i) != 0 {
                *ch = RawChannel {
                    counts: c.counts[i],
                    valid: true,
                };
            }
        }
        let e = bare.step(&Inputs {
            force_channels,
            input_speed: Some(RadPerSec::from_num(3)),
            output_speed: Some(RadPerSec::ZERO),
            ..Inputs::at_rest(0)
        });
        assert_eq!(out, clampwise_capi::io::c_estimate(&e), "sample {k}");
        assert_eq!(out.torque_q12, e.torque.map_or(0, |t| t.to_bits()));
        assert_eq!(out.flags, e.flags.bits());
    }
    let mut record = [0u8; CW_RECORD_LEN as usize];
    assert_eq!(
        unsafe { cw_estimator_save(&*est, 7, record.as_mut_ptr(), CW_RECORD_LEN) },
        cw_status::CW_OK
    );
    assert_eq!(record, bare.save(7), "the saved record is the core's");
}

#[test]
fn every_error_path_returns_its_status() {
    let mut dev = new_device();
    let mut est = new_estimator();
    let mut out = cw_estimate::default();
    let inputs = inputs_of(1);
    let mut checksum = 0;
    unsafe {
        assert_eq!(
            cw_device_checksum(&*dev, &mut checksum),
            cw_status::CW_ERR_NOT_INITIALISED
        );
        assert_eq!(
            cw_estimator_init(&mut *est, &*dev),
            cw_status::CW_ERR_NOT_INITIALISED
        );
        assert_eq!(
            cw_estimator_step(&mut *est, &inputs, &mut out),
            cw_status::CW_ERR_NOT_INITIALISED
        );
        assert_eq!(
            cw_device_init(std::ptr::null_mut(), std::ptr::null()),
            cw_status::CW_ERR_NULL
        );
    }
    let desc = accepted_desc(&mut dev);
    unsafe {
        let mut bad = desc;
        bad.checksum ^= 0x8000_0000;
        assert_eq!(cw_device_init(&mut *dev, &bad), cw_status::CW_ERR_CHECKSUM);
        let mut bad = desc;
        bad.channels = 0;
        assert_eq!(cw_device_init(&mut *dev, &bad), cw_status::CW_ERR_CHANNELS);
        let mut bad = desc;
        bad.friction.mu.temperatures_len = 9;
        assert_eq!(cw_device_init(&mut *dev, &bad), cw_status::CW_ERR_MU_TABLE);
        let mut bad = desc;
        bad.wear.dt_q63 = 0;
        assert_eq!(cw_device_init(&mut *dev, &bad), cw_status::CW_ERR_WEAR);
        let mut bad = desc;
        bad.combination = 2;
        assert_eq!(cw_device_init(&mut *dev, &bad), cw_status::CW_ERR_DEVICE);
        let mut bad = desc;
        bad.radius.lever_axis = 2;
        assert_eq!(
            cw_device_init(&mut *dev, &bad),
            cw_status::CW_ERR_RADIUS_TABLE
        );
        // Built in place: after a refused build the storage holds no device.
        assert_eq!(
            cw_device_checksum(&*dev, &mut checksum),
            cw_status::CW_ERR_NOT_INITIALISED
        );

        assert_eq!(cw_device_init(&mut *dev, &desc), cw_status::CW_OK);
        assert_eq!(cw_estimator_init(&mut *est, &*dev), cw_status::CW_OK);
        assert_eq!(
            cw_estimator_step(&mut *est, std::ptr::null(), &mut out),
            cw_status::CW_ERR_NULL
        );
        let mut four = inputs;
        four.valid_mask = 0b1000;
        let sentinel = cw_estimate {
            torque_q12: 12_345,
            ..Default::default()
        };
        out = sentinel;
        assert_eq!(
            cw_estimator_step(&mut *est, &four, &mut out),
            cw_status::CW_ERR_INPUTS
        );
        assert_eq!(out, sentinel, "untouched on an error");

        let mut record = [0u8; CW_RECORD_LEN as usize];
        assert_eq!(
            cw_estimator_save(&*est, 1, record.as_mut_ptr(), CW_RECORD_LEN - 1),
            cw_status::CW_ERR_BUFFER
        );
        assert_eq!(
            cw_estimator_save(&*est, 1, record.as_mut_ptr(), CW_RECORD_LEN),
            cw_status::CW_OK
        );
        let mut restored = new_estimator();
        assert_eq!(
            cw_estimator_restore(&mut *restored, &*dev, record.as_ptr(), CW_RECORD_LEN),
            cw_status::CW_OK
        );
        record[0] ^= 1;
        assert_eq!(
            cw_estimator_restore(&mut *restored, &*dev, record.as_ptr(), CW_RECORD_LEN),
            cw_status::CW_ERR_RECORD_FORMAT
        );
    }
}

#[test]
fn a_record_saved_for_another_device_is_refused_by_its_own_status() {
    // The crane drum example (another configuration, also three channels) saves a record; the
    // demo device must not take it up.
    let drum_text = include_str!("../../sim/configs/example-crane-drum-brake.toml");
    let drum = CoreDevice::build(
        &LoadedConfig::from_str(drum_text, "drum.toml")
            .unwrap()
            .config,
    )
    .unwrap();
    let mut drum_dev = new_device();
    accepted_desc_of(&drum, &mut drum_dev);
    let mut est = new_estimator();
    let mut record = [0u8; CW_RECORD_LEN as usize];
    unsafe {
        assert_eq!(cw_estimator_init(&mut *est, &*drum_dev), cw_status::CW_OK);
        assert_eq!(
            cw_estimator_save(&*est, 3, record.as_mut_ptr(), CW_RECORD_LEN),
            cw_status::CW_OK
        );
    }
    let mut demo_dev = new_device();
    accepted_desc(&mut demo_dev);
    let mut restored = new_estimator();
    assert_eq!(
        unsafe { cw_estimator_restore(&mut *restored, &*demo_dev, record.as_ptr(), CW_RECORD_LEN) },
        cw_status::CW_ERR_RECORD_DEVICE
    );
    // The same record goes back into the device that saved it.
    assert_eq!(
        unsafe { cw_estimator_restore(&mut *restored, &*drum_dev, record.as_ptr(), CW_RECORD_LEN) },
        cw_status::CW_OK
    );
}

#[test]
fn flag_and_state_codes_are_the_cores() {
    for (c, f) in [
        (CW_FLAG_SENSOR_DEGRADED, Flags::SENSOR_DEGRADED),
        (CW_FLAG_FORCE_FALLBACK, Flags::FORCE_FALLBACK),
        (CW_FLAG_FORCE_LOST, Flags::FORCE_LOST),
        (CW_FLAG_FORCE_SATURATED, Flags::FORCE_SATURATED),
        (CW_FLAG_OUT_OF_RANGE, Flags::OUT_OF_RANGE),
        (CW_FLAG_ARITHMETIC_SATURATED, Flags::ARITHMETIC_SATURATED),
        (CW_FLAG_FADE_WARNING, Flags::FADE_WARNING),
        (CW_FLAG_OVER_TEMPERATURE, Flags::OVER_TEMPERATURE),
        (CW_FLAG_TEMPERATURE_REJECTED, Flags::TEMPERATURE_REJECTED),
        (CW_FLAG_ADAPTATION_FROZEN, Flags::ADAPTATION_FROZEN),
        (CW_FLAG_ADAPTATION_AT_LIMIT, Flags::ADAPTATION_AT_LIMIT),
        (CW_FLAG_LINING_WORN, Flags::LINING_WORN),
        (CW_FLAG_TORQUE_BOUNDED, Flags::TORQUE_BOUNDED),
        (CW_FLAG_FORCE_IMPLAUSIBLE, Flags::FORCE_IMPLAUSIBLE),
        (CW_FLAG_SPEED_UNKNOWN, Flags::SPEED_UNKNOWN),
        (CW_FLAG_SELF_LOCKING, Flags::SELF_LOCKING),
    ] {
        assert_eq!(c, f.bits(), "{f:?}");
    }
    let all = Flags::all().bits();
    assert_eq!(
        all,
        (CW_FLAG_SELF_LOCKING << 1) - 1,
        "every core flag has a C name"
    );
    // The firmware example's output line numbers the states the same way.
    for (s, code) in [
        (ContactState::Slipping, 0),
        (ContactState::Holding, 1),
        (ContactState::Released, 2),
        (ContactState::Unavailable, 3),
        (ContactState::SlipUnknown, 4),
    ] {
        assert_eq!(clampwise_capi::io::state_code(s) as u8, code);
    }
}

#[test]
fn the_lever_axes_are_those_of_the_features() {
    let expected =
        u8::from(cfg!(feature = "axis-bedding")) | u8::from(cfg!(feature = "axis-mu")) << 1;
    assert_eq!(cw_lever_axes_supported(), expected);
    // The demo device's radius table runs over bedding, the drum brake's over μ: each builds
    // exactly when its axis is in, and is refused by its own status when it is not.
    let drum_text = include_str!("../../sim/configs/example-crane-drum-brake.toml");
    let drum = CoreDevice::build(
        &LoadedConfig::from_str(drum_text, "drum.toml")
            .unwrap()
            .config,
    )
    .unwrap();
    for (core, axis) in [(demo(), 0u8), (drum, 1u8)] {
        let ChannelDevice::Three(cfg) = &core.device else {
            unreachable!("a three-channel device")
        };
        let desc = desc_of(cfg);
        assert_eq!(desc.radius.lever_axis, axis);
        let mut dev = new_device();
        let status = unsafe { cw_device_init(&mut *dev, &desc) };
        if expected & (1 << axis) == 0 {
            assert_eq!(status, cw_status::CW_ERR_LEVER_AXIS, "axis {axis}");
        } else {
            assert_ne!(status, cw_status::CW_ERR_LEVER_AXIS, "axis {axis}");
        }
    }
}

#[test]
fn the_radius_table_capacity_is_the_hosts() {
    use clampwise_device::build_core::{RADIUS_BEDDING_POINTS, RADIUS_SECOND_POINTS};
    // A library of the bedding axis alone holds the host's bedding breakpoints (new and
    // bedded); one that takes μ devices holds the host's whole second axis.
    let expected = if cfg!(feature = "axis-mu") {
        RADIUS_SECOND_POINTS
    } else {
        RADIUS_BEDDING_POINTS
    };
    assert_eq!(clampwise_capi::device::RADIUS_SECOND_CAPACITY, expected);
    assert_eq!(CW_RADIUS_SECOND_MAX, RADIUS_SECOND_POINTS);
}

#[test]
fn every_status_has_its_own_message() {
    let mut seen = std::collections::HashSet::new();
    for s in cw_status::ALL {
        assert_eq!(cw_status::from_code(s as i32), Some(s));
        let text = unsafe { std::ffi::CStr::from_ptr(cw_status_message(s as i32)) };
        assert!(!text.is_empty() && seen.insert(text.to_owned()), "{s:?}");
    }
    let unknown = unsafe { std::ffi::CStr::from_ptr(cw_status_message(-1)) };
    assert_eq!(unknown.to_str().unwrap(), "unknown status");
}
