//! Plain friction update: two full table lookups by division ([`super::table`]), saturating
//! arithmetic throughout, the correction always multiplied. The definition
//! [`clampwise_core::friction::FrictionState::update`] must match bit for bit, written from the
//! model's equations (module docs of [`clampwise_core::friction`]) on the public accessors of the
//! configuration only.

use clampwise_core::friction::{FrictionConfig, FrictionSample};
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec, Ratio};

use super::table::lookup2;

const ONE_Q30: i64 = 1 << 30;

fn ratio_from_i64(v: i64) -> (Ratio, bool) {
    match i32::try_from(v) {
        Ok(b) => (Ratio::from_bits(b), false),
        Err(_) => (
            Ratio::from_bits(if v < 0 { i32::MIN } else { i32::MAX }),
            true,
        ),
    }
}

fn mul_q30(a: i64, b: i64) -> i64 {
    a.saturating_mul(b).saturating_add(ONE_Q30 >> 1) >> 30
}

fn smoothstep_q30(speed: i32, v_t: i32, recip: i64) -> i64 {
    if speed >= v_t {
        return ONE_Q30;
    }
    let s = (i64::from(speed).saturating_mul(recip) >> 16).clamp(0, ONE_Q30);
    let s2 = s.saturating_mul(s) >> 30;
    (s2.saturating_mul((3 * ONE_Q30).saturating_sub(s.saturating_mul(2))) >> 30).clamp(0, ONE_Q30)
}

fn drag<const NT: usize, const NV: usize>(
    cfg: &FrictionConfig<NT, NV>,
    speed: i32,
    phi: i64,
    v: i32,
) -> (NewtonMetres, bool) {
    if v == 0 {
        return (NewtonMetres::ZERO, false);
    }
    let viscous = i64::from(cfg.viscous_drag().to_bits())
        .saturating_mul(i64::from(speed))
        .saturating_add(1 << 19)
        >> 20;
    let no_load = i64::from(cfg.no_load_drag().to_bits())
        .saturating_mul(phi)
        .saturating_add(ONE_Q30 >> 1)
        >> 30;
    let magnitude = viscous.saturating_add(no_load);
    let signed = if v > 0 {
        magnitude.saturating_neg()
    } else {
        magnitude
    };
    match i32::try_from(signed) {
        Ok(b) => (NewtonMetres::from_bits(b), false),
        Err(_) => (
            NewtonMetres::from_bits(if signed < 0 { -i32::MAX } else { i32::MAX }),
            true,
        ),
    }
}

/// One sample, as [`clampwise_core::friction::FrictionState::update`]; `slipping` is the
/// stick/slip state, updated in place.
pub fn update<const NT: usize, const NV: usize>(
    slipping: &mut bool,
    cfg: &FrictionConfig<NT, NV>,
    slip_speed: RadPerSec,
    lining_temp: Celsius,
    correction: Ratio,
) -> FrictionSample {
    let v = slip_speed.to_bits();
    let speed = v.saturating_abs();
    *slipping = if *slipping {
        speed >= cfg.stick_threshold().to_bits()
    } else {
        speed > cfg.slip_threshold().to_bits()
    };
    let mut saturated = correction.to_bits() < 0;
    let corr = i64::from(correction.to_bits().max(0));
    let t = cfg.mu_kinetic();
    let (x, y) = (t.x_breakpoints(), t.y_breakpoints());
    let z: Vec<&[Ratio]> = t.rows().collect();
    let z = z.as_slice();
    let running = lookup2(x, y, z, lining_temp, RadPerSec::from_bits(speed));
    let standstill = lookup2(x, y, z, lining_temp, y.first().copied().unwrap_or_default());
    let (mu_k, sat_k) = ratio_from_i64(mul_q30(i64::from(running.0), corr));
    let mu_s_corr = mul_q30(i64::from(standstill.0), corr);
    let (mu_s, sat_s) = ratio_from_i64(mul_q30(
        mu_s_corr,
        i64::from(cfg.static_to_kinetic().to_bits()),
    ));
    saturated |= sat_k || sat_s;
    let v_t = cfg.transition_speed().to_bits();
    // 1/v_t as 2⁴⁶/v_t (v_t > 0, validated): the reciprocal the model's smoothstep is defined
    // with.
    let phi = smoothstep_q30(speed, v_t, (1i64 << 46) / i64::from(v_t));
    let mk = i64::from(mu_k.to_bits());
    let ms = i64::from(mu_s.to_bits());
    let (mu, _) = ratio_from_i64(
        mk.saturating_add(mul_q30(ms.saturating_sub(mk), ONE_Q30.saturating_sub(phi))),
    );
    let (drag_torque, sat_d) = drag(cfg, speed, phi, v);
    saturated |= sat_d;
    let direction = if *slipping {
        if v > 0 { -1 } else { 1 }
    } else {
        0
    };
    FrictionSample {
        mu_kinetic: mu,
        mu_static: mu_s,
        transition_span: Ratio::from_bits(
            i32::try_from(mu.to_bits().abs_diff(mu_k.to_bits())).unwrap_or(i32::MAX),
        ),
        slipping: *slipping,
        direction,
        drag_torque,
        clamped: running.1 || standstill.1,
        saturated,
    }
}
