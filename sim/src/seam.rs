//! THE SEAM between the simulator and the core's estimator.
//!
//! Everything in the simulator (replay, compare, fit, demo, plots, benches) drives an estimator
//! only through [`SampleEstimator::step`]: one trace sample in, one [`EstimateRow`] out. Today
//! the implementation is [`TablesOnlyEstimator`], a **temporary** stand-in that uses the core's
//! fixed-point [`Table2`](clampwise_core::table::Table2) lookups and nothing else (no sensor
//! filtering or diagnostics beyond rails and range, no thermal, wear or adaptation state). When
//! `clampwise_core::estimator::Estimator` lands, the lead writes an adapter
//! `impl SampleEstimator for CoreEstimator` (convert [`TraceSample`] → `Inputs` with
//! [`channel_counts`] and the `from_num` conversions below, call `Estimator::step`, convert
//! `Estimate` → [`EstimateRow`] with `to_num`, which is exact for every fixed-point value) and
//! changes [`new_estimator`]. Nothing else in the simulator needs to change.
//!
//! The estimate rows carry f64 values converted from the fixed-point results with `to_num`:
//! every I32-based fixed value is exactly representable in f64, and the CSV writer prints the
//! shortest round-trip decimal, so the estimate file holds the core's bits exactly.

use clampwise_core::units::{Celsius, Metres, NewtonMetres, Newtons, RadPerSec, Ratio};

use crate::build_core::CoreTables;
use crate::config::{DeviceConfig, DeviceKind, Voting};

/// One force channel of a sample as it came from the trace.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub enum Channel {
    /// Column not present in the trace.
    #[default]
    Absent,
    /// Raw ADC counts (already an integer).
    Counts(i32),
    /// Calibrated force, N (the logger calibrated it).
    Newtons(f64),
}

/// One trace row after column mapping and unit conversion (SI units).
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct TraceSample {
    /// 1-based line in the source file.
    pub line: u64,
    /// Time, s.
    pub t_s: f64,
    /// Force channels 1–4.
    pub force: [Channel; 4],
    /// Valid bit of each channel (true when the trace has no valid column).
    pub force_valid: [bool; 4],
    /// Input shaft speed, rad/s.
    pub omega_in_rad_s: f64,
    /// Output shaft speed, rad/s (0 for a brake).
    pub omega_out_rad_s: f64,
    /// Actuator command, in the column's converted unit.
    pub command: Option<f64>,
    /// Measured lining/rotor temperature, °C.
    pub temp_c: Option<f64>,
    /// Ambient temperature, °C.
    pub ambient_c: Option<f64>,
    /// Reference torque (bench flange), N·m.
    pub torque_ref_nm: Option<f64>,
}

/// Operating state of an estimate.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum State {
    /// Slip above the stick threshold: torque = −sign(v)·N·μ·F·r_e (+ drag).
    Slipping,
    /// Below the stick threshold: torque is set by the load, bounded by ±capacity.
    Holding,
    /// Clamp force below the touch threshold: zero torque (plus drag).
    Released,
    /// No usable clamp force.
    Unavailable,
}

impl State {
    /// Spelling in estimate files.
    pub fn name(self) -> &'static str {
        match self {
            Self::Slipping => "slipping",
            Self::Holding => "holding",
            Self::Released => "released",
            Self::Unavailable => "unavailable",
        }
    }

    /// Parse the spelling of [`State::name`].
    pub fn parse(s: &str) -> Option<Self> {
        match s {
            "slipping" => Some(Self::Slipping),
            "holding" => Some(Self::Holding),
            "released" => Some(Self::Released),
            "unavailable" => Some(Self::Unavailable),
            _ => None,
        }
    }

    /// All states, in report order.
    pub const ALL: [State; 4] = [
        Self::Slipping,
        Self::Holding,
        Self::Released,
        Self::Unavailable,
    ];
}

/// Flag bits of [`EstimateRow::flags`].
pub mod flags {
    /// A force channel failed (rail, invalid bit).
    pub const SENSOR: u32 = 1 << 0;
    /// A force reading outside its plausible range, or an input outside the envelope.
    pub const RANGE: u32 = 1 << 1;
    /// A result saturated its fixed-point type or the torque limit.
    pub const SATURATION: u32 = 1 << 2;
    /// Lining temperature at or above the fade threshold.
    pub const FADE: u32 = 1 << 3;
    /// Lining temperature at or above the over-temperature threshold.
    pub const OVER_TEMPERATURE: u32 = 1 << 4;
    /// Adaptation frozen (or disabled).
    pub const ADAPTATION_FROZEN: u32 = 1 << 5;
    /// A table input lay outside its breakpoints (edge value used).
    pub const TABLE_CLAMPED: u32 = 1 << 6;
    /// Clamp force from the actuator command (no healthy channel).
    pub const FORCE_FALLBACK: u32 = 1 << 7;
    /// No temperature measured: ambient assumed.
    pub const TEMPERATURE_ASSUMED: u32 = 1 << 8;
    /// No clamp force at all.
    pub const NO_FORCE: u32 = 1 << 9;
    /// Names of the bits, for reports and plots.
    pub const NAMES: [(u32, &str); 10] = [
        (SENSOR, "sensor"),
        (RANGE, "range"),
        (SATURATION, "saturation"),
        (FADE, "fade"),
        (OVER_TEMPERATURE, "over_temperature"),
        (ADAPTATION_FROZEN, "adaptation_frozen"),
        (TABLE_CLAMPED, "table_clamped"),
        (FORCE_FALLBACK, "force_fallback"),
        (TEMPERATURE_ASSUMED, "temperature_assumed"),
        (NO_FORCE, "no_force"),
    ];
}

/// One estimate, in SI units, converted exactly from the estimator's fixed-point output.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EstimateRow {
    /// Source line of the sample.
    pub line: u64,
    /// Time, s (copied from the sample).
    pub t_s: f64,
    /// Friction torque, N·m, opposing slip; `None` while holding or unavailable (the torque is
    /// then set by the load, within ±capacity, and no number is made up).
    pub torque_nm: Option<f64>,
    /// Holding capacity N·μ_s·F·r_e, N·m (≥ 0).
    pub capacity_nm: f64,
    /// ± uncertainty of torque (or of capacity while holding), N·m.
    pub uncertainty_nm: f64,
    /// μ used.
    pub mu: f64,
    /// Effective radius used, m.
    pub radius_m: f64,
    /// Clamp force used, N.
    pub clamp_force_n: f64,
    /// Slip speed ω_in − ω_out, rad/s.
    pub slip_speed_rad_s: f64,
    /// Lining temperature used, °C.
    pub lining_temp_c: f64,
    /// Bedding, 0 … 1.
    pub bedding: f64,
    /// Lining wear, m.
    pub wear_m: f64,
    /// Operating state.
    pub state: State,
    /// Flag bits, see [`flags`].
    pub flags: u32,
    /// Reference torque copied from the sample, N·m.
    pub torque_ref_nm: Option<f64>,
}

/// What the simulator needs from an estimator: one step per trace sample.
pub trait SampleEstimator {
    /// Process one sample (samples arrive in trace order, one per configured sample period).
    fn step(&mut self, s: &TraceSample) -> EstimateRow;
}

/// Build the estimator every subcommand uses. **Swap point**: returns the temporary
/// [`TablesOnlyEstimator`] until the core's `Estimator` lands.
pub fn new_estimator(
    config: &DeviceConfig,
    tables: &CoreTables,
) -> Box<dyn SampleEstimator + Send> {
    Box::new(TablesOnlyEstimator::new(config, tables))
}

/// Fixed-point calibration of one channel: F = (counts − offset) · gain.
#[derive(Clone, Copy, Debug)]
pub struct ChannelCal {
    /// Gain in N per count, Q32.32 bits.
    pub gain_q32: i64,
    /// Offset in counts, Q24.8 bits.
    pub offset_q8: i64,
    /// Rails (a reading at or beyond is a fault).
    pub rail_low: i64,
    /// Upper rail.
    pub rail_high: i64,
    /// Plausible force range.
    pub range_low: Newtons,
    /// Upper end of the plausible range.
    pub range_high: Newtons,
    /// Float gain and offset, for converting a calibrated column back to counts.
    pub gain_f64: f64,
    /// Float offset, counts.
    pub offset_f64: f64,
}

/// Raw counts of each channel, as the core's `Inputs` take them: counts columns pass through,
/// calibrated (N) columns are turned back into the counts the ADC would have given (rounded).
/// `None` for an absent channel or one whose valid bit is clear.
pub fn channel_counts(s: &TraceSample, cal: &[ChannelCal]) -> [Option<i32>; 4] {
    let mut out = [None; 4];
    for (((o, ch), &valid), c) in out.iter_mut().zip(&s.force).zip(&s.force_valid).zip(cal) {
        if !valid {
            continue;
        }
        *o = match *ch {
            Channel::Absent => None,
            Channel::Counts(n) => Some(n),
            Channel::Newtons(f) => {
                let counts = (f / c.gain_f64 + c.offset_f64).round();
                Some(if counts >= f64::from(i32::MAX) {
                    i32::MAX
                } else if counts <= f64::from(i32::MIN) {
                    i32::MIN
                } else {
                    // In range by the two tests above.
                    #[allow(clippy::cast_possible_truncation)]
                    let c = counts as i32;
                    c
                })
            }
        };
    }
    out
}

/// TEMPORARY estimator (see the module docs): torque = −sign(v)·N·μ(T,|v|)·F·r_e(F, bedding₀)
/// with the core's fixed-point tables; holding capacity N·μ·(μ_s/μ_k)·F·r_e below the stick
/// threshold (with hysteresis); zero torque plus drag below the touch force. Channels are
/// calibrated and voted (median or mean) after rail and range checks; the actuator command is
/// the fallback. Temperature is the measured one, or ambient (flagged). Uncertainty is the
/// worst-case sum of the relative tolerances of μ, force and r_e. Bedding and wear stay at
/// their configured initial values.
#[derive(Debug, Clone)]
pub struct TablesOnlyEstimator {
    tables: CoreTables,
    cal: Vec<ChannelCal>,
    voting: Voting,
    faces: i128,
    static_ratio: Ratio,
    stick: RadPerSec,
    release: RadPerSec,
    drag: NewtonMetres,
    drag_viscous_q12: i64,
    touch: Newtons,
    max_torque: NewtonMetres,
    ambient: Celsius,
    fade: Celsius,
    over_temperature: Celsius,
    bedding: Ratio,
    wear_m: f64,
    tol_mu_f: (Ratio, Ratio, Ratio, Ratio),
    fallback: Option<(i64, Newtons)>,
    brake: bool,
    holding: bool,
    adaptation_frozen: bool,
}

fn sat<T: fixed::traits::Fixed>(v: f64) -> T {
    T::saturating_from_num(if v.is_nan() { 0.0 } else { v })
}

/// Round-to-nearest right shift of a signed 128-bit value.
fn shr_round(v: i128, s: u32) -> i128 {
    (v + (1i128 << (s - 1))) >> s
}

fn narrow_i32(v: i128) -> (i32, bool) {
    match i32::try_from(v) {
        Ok(x) => (x, false),
        Err(_) => (if v < 0 { i32::MIN } else { i32::MAX }, true),
    }
}

impl TablesOnlyEstimator {
    /// Build from a validated config and its tables.
    pub fn new(c: &DeviceConfig, tables: &CoreTables) -> Self {
        let cal = c
            .sensors
            .iter()
            .map(|s| ChannelCal {
                // Host-side, once: floats allowed here.
                #[allow(clippy::cast_possible_truncation)]
                gain_q32: (s.gain_n_per_count * 4_294_967_296.0).round() as i64,
                #[allow(clippy::cast_possible_truncation)]
                offset_q8: (s.offset_counts * 256.0).round() as i64,
                rail_low: s.rail_low_counts,
                rail_high: s.rail_high_counts,
                range_low: sat(s.range_low_n),
                range_high: sat(s.range_high_n),
                gain_f64: s.gain_n_per_count,
                offset_f64: s.offset_counts,
            })
            .collect();
        let f = &c.friction;
        let force_tol = c
            .sensors
            .iter()
            .map(|s| s.tolerance_ratio)
            .fold(0.0, f64::max);
        Self {
            tables: tables.clone(),
            cal,
            voting: c.sensing.voting,
            faces: i128::from(c.contact.faces),
            static_ratio: sat(f.static_ratio),
            stick: sat(f.stick_speed_rad_s),
            release: sat(f.stick_speed_rad_s + f.stick_hysteresis_rad_s),
            drag: sat(f.drag_torque_nm),
            #[allow(clippy::cast_possible_truncation)]
            drag_viscous_q12: (f.drag_viscous_nm_per_rad_s * 4096.0).round() as i64,
            touch: sat(c.limits.touch_force_n),
            max_torque: sat(c.limits.max_torque_nm),
            ambient: sat(c.thermal.ambient_c),
            fade: sat(c.thermal.fade_c),
            over_temperature: sat(c.thermal.over_temperature_c),
            bedding: sat(c.wear.initial_bedding_ratio),
            wear_m: c.wear.initial_wear_m,
            tol_mu_f: (
                sat(f.mu_tolerance_ratio),
                sat(force_tol),
                sat(c.contact.radius_tolerance_ratio),
                sat(c.actuator.as_ref().map_or(0.0, |a| a.tolerance_ratio)),
            ),
            fallback: c.actuator.as_ref().map(|a| {
                #[allow(clippy::cast_possible_truncation)]
                let g = (a.force_n_per_command * 256.0).round() as i64;
                (g, sat(a.force_offset_n))
            }),
            brake: c.device.kind == DeviceKind::Brake,
            holding: true,
            adaptation_frozen: !c.adaptation.enabled,
        }
    }

    /// Calibrate, check and vote the channels: (force, used fallback, flags).
    fn clamp_force(&self, s: &TraceSample) -> (Option<Newtons>, bool, u32) {
        let mut flags = 0;
        let counts = channel_counts(s, &self.cal);
        let mut healthy = [Newtons::ZERO; 4];
        let mut n = 0usize;
        for ((count, c), &valid) in counts.iter().zip(&self.cal).zip(&s.force_valid) {
            let Some(raw) = *count else {
                if !valid {
                    flags |= flags::SENSOR;
                }
                continue;
            };
            let raw = i64::from(raw);
            if raw <= c.rail_low || raw >= c.rail_high {
                flags |= flags::SENSOR;
                continue;
            }
            let q8 = (i128::from(raw) << 8) - i128::from(c.offset_q8);
            let (bits, saturated) = narrow_i32(shr_round(q8 * i128::from(c.gain_q32), 32));
            let f = Newtons::from_bits(bits);
            if saturated || f < c.range_low || f > c.range_high {
                flags |= flags::SENSOR | flags::RANGE;
                continue;
            }
            if let Some(slot) = healthy.get_mut(n) {
                *slot = f;
                n += 1;
            }
        }
        let used = healthy.get_mut(..n).unwrap_or(&mut []);
        if used.is_empty() {
            let fb = match (self.fallback, s.command) {
                (Some((g_q8, off)), Some(cmd)) => {
                    let cmd_q16 = i128::from(sat::<fixed::types::I16F16>(cmd).to_bits());
                    let (bits, _) = narrow_i32(
                        shr_round(cmd_q16 * i128::from(g_q8), 16) + i128::from(off.to_bits()),
                    );
                    Some(Newtons::from_bits(bits))
                }
                _ => None,
            };
            return (
                fb,
                fb.is_some(),
                flags
                    | if fb.is_some() {
                        flags::FORCE_FALLBACK
                    } else {
                        flags::NO_FORCE
                    },
            );
        }
        used.sort_unstable();
        let sum: i64 = used.iter().map(|f| i64::from(f.to_bits())).sum();
        let len = i64::try_from(used.len()).unwrap_or(1);
        let bits = match self.voting {
            Voting::Mean => sum / len,
            Voting::Median => {
                let mid = used.len() / 2;
                let hi = used.get(mid).map_or(0, |f| i64::from(f.to_bits()));
                if used.len() % 2 == 1 {
                    hi
                } else {
                    let lo = used.get(mid - 1).map_or(0, |f| i64::from(f.to_bits()));
                    (lo + hi) / 2
                }
            }
        };
        (
            Some(Newtons::from_bits(i32::try_from(bits).unwrap_or(0))),
            false,
            flags,
        )
    }

    /// N·μ·F·r_e in N·m bits (Q12), with the saturation flag.
    fn torque_bits(&self, mu: Ratio, f: Newtons, r: Metres) -> (i32, bool) {
        // Q30 · Q8 · Q24 = Q62 → Q12: shift by 50. |μ| < 2, |F| < 2²³, |r| < 2⁷: fits i128.
        let p = i128::from(mu.to_bits())
            * i128::from(f.to_bits())
            * i128::from(r.to_bits())
            * self.faces;
        narrow_i32(shr_round(p, 50))
    }

    fn drag_bits(&self, v_abs: RadPerSec) -> i128 {
        // Q12 + Q12·Q16 → Q12.
        i128::from(self.drag.to_bits())
            + shr_round(
                i128::from(self.drag_viscous_q12) * i128::from(v_abs.to_bits()),
                16,
            )
    }
}

impl SampleEstimator for TablesOnlyEstimator {
    fn step(&mut self, s: &TraceSample) -> EstimateRow {
        // Boundary conversion f64 → fixed (the core's `Inputs` are fixed-point); from here on
        // integer arithmetic only.
        let w_in: RadPerSec = sat(s.omega_in_rad_s);
        let w_out: RadPerSec = if self.brake {
            RadPerSec::ZERO
        } else {
            sat(s.omega_out_rad_s)
        };
        let (temp, measured) = match s.temp_c {
            Some(t) => (sat::<Celsius>(t), true),
            None => (s.ambient_c.map_or(self.ambient, sat), false),
        };

        let mut fl = if measured {
            0
        } else {
            flags::TEMPERATURE_ASSUMED
        };
        if self.adaptation_frozen {
            fl |= flags::ADAPTATION_FROZEN;
        }
        let v = w_in.saturating_sub(w_out);
        let v_abs = v.saturating_abs();
        let (force, fallback, force_flags) = self.clamp_force(s);
        fl |= force_flags;
        if temp >= self.fade {
            fl |= flags::FADE;
        }
        if temp >= self.over_temperature {
            fl |= flags::OVER_TEMPERATURE;
        }
        let mu = self.tables.mu.lookup(temp, v_abs).value;
        let mu_clamped = self.tables.mu_clamped(temp, v_abs);
        let base = EstimateRow {
            line: s.line,
            t_s: s.t_s,
            torque_nm: None,
            capacity_nm: 0.0,
            uncertainty_nm: 0.0,
            mu: mu.to_num(),
            radius_m: 0.0,
            clamp_force_n: 0.0,
            slip_speed_rad_s: v.to_num(),
            lining_temp_c: temp.to_num(),
            bedding: self.bedding.to_num(),
            wear_m: self.wear_m,
            state: State::Unavailable,
            flags: fl,
            torque_ref_nm: s.torque_ref_nm,
        };
        let Some(f) = force else {
            return base;
        };
        let r = self.tables.radius.lookup(f, self.bedding).value;
        // Table edges matter only while engaged: a released brake's force noise around zero
        // is not a table-range event.
        if f >= self.touch && (mu_clamped || self.tables.radius_clamped(f)) {
            fl |= flags::TABLE_CLAMPED;
        }
        let sign: i128 = if v.is_negative() { 1 } else { -1 };
        // Hysteresis: leave holding above stick + h, enter holding below stick.
        self.holding = if self.holding {
            v_abs <= self.release
        } else {
            v_abs < self.stick
        };
        let (kinetic, sat_k) = self.torque_bits(mu, f, r);
        let mu_s = Ratio::from_bits(
            narrow_i32(shr_round(
                i128::from(mu.to_bits()) * i128::from(self.static_ratio.to_bits()),
                30,
            ))
            .0,
        );
        let (capacity, sat_s) = self.torque_bits(mu_s, f, r);
        let tol = {
            let (tm, tf, tr, ta) = self.tol_mu_f;
            let tf = if fallback { ta } else { tf };
            i128::from(tm.to_bits()) + i128::from(tf.to_bits()) + i128::from(tr.to_bits())
        };
        let unc = |t: i32| narrow_i32(shr_round(i128::from(t).abs() * tol, 30)).0;
        let mut row = EstimateRow {
            radius_m: r.to_num(),
            clamp_force_n: f.to_num(),
            capacity_nm: NewtonMetres::from_bits(capacity).to_num(),
            ..base
        };
        if f < self.touch {
            let (drag, _) =
                narrow_i32(sign * self.drag_bits(v_abs) * i128::from(v_abs != RadPerSec::ZERO));
            row.state = State::Released;
            row.capacity_nm = 0.0;
            row.torque_nm = Some(NewtonMetres::from_bits(drag).to_num());
        } else if self.holding {
            row.state = State::Holding;
            row.uncertainty_nm = NewtonMetres::from_bits(unc(capacity)).to_num();
            if sat_s {
                fl |= flags::SATURATION;
            }
        } else {
            let (t, sat_d) = narrow_i32(sign * (i128::from(kinetic) + self.drag_bits(v_abs)));
            let limited = t.clamp(-self.max_torque.to_bits(), self.max_torque.to_bits());
            if sat_k || sat_d || limited != t {
                fl |= flags::SATURATION;
            }
            row.state = State::Slipping;
            row.torque_nm = Some(NewtonMetres::from_bits(limited).to_num());
            row.uncertainty_nm = NewtonMetres::from_bits(unc(limited)).to_num();
        }
        row.flags = fl;
        row
    }
}

#[cfg(test)]
mod tests {
    // Bit-exact comparisons are the point here (sign symmetry, breakpoints).
    #![allow(clippy::unwrap_used, clippy::indexing_slicing, clippy::float_cmp)]
    use super::*;
    use crate::config::LoadedConfig;
    use approx::assert_relative_eq;

    fn demo() -> (DeviceConfig, CoreTables) {
        let c = LoadedConfig::from_str(include_str!("../configs/demo-hoist-brake.toml"), "d")
            .unwrap()
            .config;
        let t = CoreTables::build(&c).unwrap();
        (c, t)
    }

    fn sample(f_n: f64, w: f64, t: f64) -> TraceSample {
        TraceSample {
            force: [
                Channel::Newtons(f_n),
                Channel::Newtons(f_n),
                Channel::Newtons(f_n),
                Channel::Absent,
            ],
            force_valid: [true; 4],
            omega_in_rad_s: w,
            temp_c: Some(t),
            ..TraceSample::default()
        }
    }

    #[test]
    fn steady_slip_matches_published_formula() {
        // [pub: Shigley ch. 16] T = N·μ·F·r_e; r_e uniform pressure (new pads, bedding 0) for
        // the demo sector 0.52–0.68 m: ⅔(Ro³−Ri³)/(Ro²−Ri²) [calc]; μ(200 °C, 2 rad/s) = 0.40
        // is a table breakpoint.
        let (c, t) = demo();
        let mut e = TablesOnlyEstimator::new(&c, &t);
        let row = e.step(&sample(40_000.0, 2.0, 200.0));
        let r_up =
            2.0 / 3.0 * (0.68f64.powi(3) - 0.52f64.powi(3)) / (0.68f64.powi(2) - 0.52f64.powi(2));
        let expected = -2.0 * 0.40 * 40_000.0 * r_up;
        assert_eq!(row.state, State::Slipping);
        // Resolution: force rounds to counts of 0.01 N, μ and r to their LSBs; torque LSB 0.24 mN·m.
        assert_relative_eq!(row.torque_nm.unwrap(), expected, max_relative = 1e-6);
        assert_relative_eq!(
            row.uncertainty_nm,
            expected.abs() * (0.20 + 0.02 + 0.01),
            max_relative = 1e-6
        );
    }

    #[test]
    fn holding_reports_capacity_not_torque() {
        let (c, t) = demo();
        let mut e = TablesOnlyEstimator::new(&c, &t);
        let row = e.step(&sample(40_000.0, 0.0, 20.0));
        assert_eq!(row.state, State::Holding);
        assert!(row.torque_nm.is_none());
        let r_up = t.radii_m.0;
        assert_relative_eq!(
            row.capacity_nm,
            2.0 * 0.42 * 1.25 * 40_000.0 * r_up,
            max_relative = 1e-6
        );
    }

    #[test]
    fn stick_slip_hysteresis() {
        let (c, t) = demo();
        let mut e = TablesOnlyEstimator::new(&c, &t);
        // stick 0.02, hysteresis 0.01: holding until |v| > 0.03, slipping until |v| < 0.02.
        let states: Vec<State> = [0.0, 0.025, 0.031, 0.025, 0.019, 0.025]
            .iter()
            .map(|&w| e.step(&sample(40_000.0, w, 20.0)).state)
            .collect();
        use State::*;
        assert_eq!(
            states,
            [Holding, Holding, Slipping, Slipping, Holding, Holding]
        );
    }

    #[test]
    fn direction_reversal_flips_sign() {
        let (c, t) = demo();
        let mut e = TablesOnlyEstimator::new(&c, &t);
        let fwd = e.step(&sample(30_000.0, 5.0, 100.0)).torque_nm.unwrap();
        let rev = e.step(&sample(30_000.0, -5.0, 100.0)).torque_nm.unwrap();
        assert!(fwd < 0.0);
        assert_eq!(fwd, -rev);
    }

    #[test]
    fn released_and_faults() {
        let (c, t) = demo();
        let mut e = TablesOnlyEstimator::new(&c, &t);
        let r = e.step(&sample(100.0, 5.0, 20.0));
        assert_eq!((r.state, r.torque_nm), (State::Released, Some(0.0)));
        // One channel on the rail: the other two still vote; flagged.
        let mut s = sample(30_000.0, 5.0, 20.0);
        s.force[1] = Channel::Counts(8_388_607);
        let r = e.step(&s);
        assert_eq!(r.state, State::Slipping);
        assert!(r.flags & flags::SENSOR != 0);
        assert_relative_eq!(r.clamp_force_n, 30_000.0, max_relative = 1e-6);
        // No channel and a command: fallback.
        let mut s = sample(0.0, 5.0, 20.0);
        s.force_valid = [false; 4];
        s.command = Some(0.5);
        let r = e.step(&s);
        assert!(r.flags & flags::FORCE_FALLBACK != 0);
        assert_relative_eq!(r.clamp_force_n, 30_000.0, max_relative = 1e-6);
        s.command = None;
        assert_eq!(e.step(&s).state, State::Unavailable);
    }
}
