//! The plain f32 configurations of the two bench devices ([`crate::device`]), same numbers.

use clampwise_core::geometry::GeometryError;

use crate::device::{
    self, ADAPT, COUNTS_PER_NEWTON, FULL_FRICTION, MINIMAL_FRICTION, MU_SPEEDS, MU_TEMPERATURES,
    MU_VALUES, RADIUS_BEDDING, RADIUS_FORCES,
};
use crate::plain_diagnostics::PlainLimits;
use crate::plain_f32::{PlainAdapt, PlainCompensation, PlainConfig, PlainParts};

/// The full device in f32.
pub type PlainFull = PlainConfig<3, 3, 3, 6, 5>;
/// The minimal device in f32.
pub type PlainMinimal = PlainConfig<1, 2, 2, 3, 3>;

#[allow(clippy::cast_possible_truncation)]
fn sensor<const C: usize, const NF: usize, const NB: usize, const NT: usize, const NV: usize>(
    cfg: &mut PlainConfig<C, NF, NB, NT, NV>,
) {
    cfg.gain = (1.0 / COUNTS_PER_NEWTON) as f32;
    // 200 Hz at 1 kHz, as the fixed-point device.
    cfg.alpha = (1.0 - libm::exp(-2.0 * core::f64::consts::PI * 200.0 / 1000.0)) as f32;
    // The fixed-point devices' limits (crate::device::limits, channel).
    cfg.limits = PlainLimits {
        force_range: (-5_000.0, 250_000.0),
        rail_low: -(1 << 30) + 16,
        rail_high: (1 << 30) - 16,
        noise_band: 50.0,
        rate_per_sample: (400e6 * device::DT) as f32,
        stuck: None,
        raise_after: 3,
        clear_after: 10,
        max_hold: 2,
    };
    cfg.vote_tolerance = 500.0;
    cfg.faces = f32::from(device::FACES);
    cfg.touch_force = 100.0;
    cfg.tol_mu = 0.20;
    cfg.tol_radius = 0.01;
    cfg.force_uncertainty = 100.0;
    // The top of the core's clamp-force format (Q23.8): the fixed-point step saturates there.
    cfg.max_force = 8_388_607.0;
}

/// The full device: 3 channels with temperature compensation, fallback, two thermal nodes,
/// adaptation, root-sum-square uncertainty.
///
/// # Errors
/// Only if the device constants are wrong.
#[allow(clippy::cast_possible_truncation)]
pub fn full() -> Result<PlainFull, GeometryError> {
    let contact = device::contact()?;
    let arms = RADIUS_BEDDING.map(|b| contact.lever_arm(b));
    let mut row = [0.0; 3];
    for (o, a) in row.iter_mut().zip(arms) {
        *o = a?;
    }
    let thermal = device::thermal_params(true);
    let wear = device::wear_params();
    let mut cfg = PlainConfig::from_parts(&PlainParts {
        radius: (&RADIUS_FORCES, &RADIUS_BEDDING, &[row; 3]),
        mu: (&MU_TEMPERATURES, &MU_SPEEDS, &MU_VALUES),
        friction: &FULL_FRICTION,
        thermal: &thermal,
        wear: &wear,
        sample_period_s: device::DT,
        thermal_wear_every: device::THERMAL_WEAR_EVERY,
    });
    sensor(&mut cfg);
    cfg.compensation = Some(PlainCompensation {
        reference: 20.0,
        min: -40.0,
        max: 120.0,
        zero_per_kelvin: 0.5,
        span_per_kelvin: 1e-4,
    });
    cfg.fallback_gain = Some(5000.0);
    // 0.5 s at 1 kHz (500 samples) while the command spans 2 units, as the fixed-point device.
    cfg.limits.stuck = Some((500, 2.0));
    let (min, max, lambda, full_scale, min_excitation) = ADAPT;
    cfg.adapt = Some(PlainAdapt {
        min: min as f32,
        max: max as f32,
        lambda: lambda as f32,
        full_scale: full_scale as f32,
        min_excitation: min_excitation as f32,
        min_force: 500.0,
    });
    cfg.rss = true;
    Ok(cfg)
}

/// The minimal device: 1 channel, rotor node only, no adaptation, worst-case uncertainty.
///
/// # Errors
/// Only if the device constants are wrong.
pub fn minimal() -> Result<PlainMinimal, GeometryError> {
    let contact = device::contact()?;
    let row = [contact.lever_arm(0.0)?, contact.lever_arm(1.0)?];
    let thermal = device::thermal_params(false);
    let wear = device::wear_params();
    let mut cfg = PlainConfig::from_parts(&PlainParts {
        radius: (&[0.0, 250e3], &[0.0, 1.0], &[row; 2]),
        mu: (
            &[0.0, 200.0, 400.0],
            &[0.0, 50.0, 200.0],
            &[[0.40, 0.39, 0.37], [0.38, 0.37, 0.35], [0.30, 0.29, 0.27]],
        ),
        friction: &MINIMAL_FRICTION,
        thermal: &thermal,
        wear: &wear,
        sample_period_s: device::DT,
        thermal_wear_every: device::THERMAL_WEAR_EVERY,
    });
    sensor(&mut cfg);
    Ok(cfg)
}
