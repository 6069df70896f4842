//! [`DeviceConfig::checksum`]: a CRC-32 over every number of a device configuration.

use crc::{CRC_32_ISO_HDLC, Crc, Digest, NoTable};

use crate::config::{DeviceConfig, TableSet};
use crate::estimator::Combination;
use crate::sensor::{Debounce, DiagnosticLimits};

const CRC32: Crc<u32, NoTable> = Crc::<u32, NoTable>::new(&CRC_32_ISO_HDLC);

struct Feed<'a>(Digest<'a, u32, NoTable>);

impl Feed<'_> {
    fn bytes(&mut self, b: &[u8]) {
        self.0.update(b);
    }
    fn u8(&mut self, v: u8) {
        self.bytes(&[v]);
    }
    fn flag(&mut self, v: bool) {
        self.u8(u8::from(v));
    }
    fn i32(&mut self, v: i32) {
        self.bytes(&v.to_le_bytes());
    }
    fn u32(&mut self, v: u32) {
        self.bytes(&v.to_le_bytes());
    }
    fn i64(&mut self, v: i64) {
        self.bytes(&v.to_le_bytes());
    }
    fn u64(&mut self, v: u64) {
        self.bytes(&v.to_le_bytes());
    }
    fn u128(&mut self, v: u128) {
        self.bytes(&v.to_le_bytes());
    }
    fn debounce(&mut self, d: Debounce) {
        self.bytes(&d.raise_after.to_le_bytes());
        self.bytes(&d.clear_after.to_le_bytes());
    }
    fn limits(&mut self, l: &DiagnosticLimits) {
        self.i32(l.force_min.to_bits());
        self.i32(l.force_max.to_bits());
        self.i64(l.max_rate.to_bits());
        self.i32(l.noise_band.to_bits());
        self.flag(l.stuck.is_some());
        if let Some(s) = &l.stuck {
            self.i64(s.time.to_bits());
            self.i32(s.command_span.to_bits());
        }
        let d = &l.debounce;
        for one in [d.invalid, d.rail, d.range, d.rate, d.stuck, d.disagreement] {
            self.debounce(one);
        }
        self.bytes(&l.max_hold_samples.to_le_bytes());
    }
}

impl<T: TableSet, const C: usize> DeviceConfig<T, C> {
    /// CRC-32/ISO-HDLC over every number of the configuration, so that two copies of it (the
    /// one a host built from a TOML file and the one a firmware keeps in flash) can be shown
    /// to hold the same numbers, and a configuration in flash can be checked at start-up.
    ///
    /// The digest runs over the little-endian raw bits of every stored value, in the order of
    /// the parts: sample period, log₂ of the thermal and wear sub-rate, faces, radius table (x breakpoints, y breakpoints, values row
    /// by row), friction (μ table likewise, static ratio, slip and stick thresholds,
    /// transition speed, viscous and no-load drag), thermal ([`ThermalRaw`] field by field),
    /// wear ([`WearRaw`]), sensor (sample rate; per channel gain, offset, rails, temperature
    /// compensation; filter coefficient and rate; diagnostic limits with their debounce
    /// counts; voting; fallback), adaptation ([`AdaptRaw`]), limits and tolerances. An
    /// `Option` is a tag byte (0 `None`, 1 `Some`) and then its value, a `bool` one byte, an
    /// enum one byte. Values the constructors derive from these (reciprocals, per-sample rate
    /// limits, stuck windows) are not hashed. Integers only, so every target gives the same
    /// digest; bitwise CRC (no table), as it runs once at start-up.
    ///
    /// [`ThermalRaw`]: crate::thermal::ThermalRaw
    /// [`WearRaw`]: crate::wear::WearRaw
    /// [`AdaptRaw`]: crate::adapt::AdaptRaw
    ///
    /// ```
    /// # use clampwise_core::config::{DeviceConfig, DeviceParts, Limits, Tables, Tolerances};
    /// # use clampwise_core::estimator::Combination;
    /// # use clampwise_core::friction::{FrictionConfig, FrictionParams, MuTable};
    /// # use clampwise_core::geometry::{Annulus, Contact, Shape, build_radius_table};
    /// # use clampwise_core::sensor::*;
    /// # use clampwise_core::thermal::{Cooling, ThermalConfig, ThermalParams};
    /// # use clampwise_core::units::{Newtons, Ratio, Seconds};
    /// # use clampwise_core::wear::{WearConfig, WearParams};
    /// # let contact = Contact::new(Shape::Annulus(Annulus::new(0.060, 0.100)?), 2, None)?;
    /// # let radius = build_radius_table::<2, 2>(&contact, &[0.0, 200e3], &[0.0, 1.0])?;
    /// # let mu = MuTable::<1, 1>::new(&[20.0], &[0.0], &[[0.40]])?;
    /// # let friction = FrictionConfig::new(mu, &FrictionParams { static_to_kinetic: 1.2,
    /// #     stick_speed: 0.05, stick_hysteresis: 0.04, transition_speed: 0.5,
    /// #     viscous_drag: 0.0, no_load_drag: 0.0 })?;
    /// # let thermal = ThermalConfig::new(&ThermalParams { rotor_mass: 8.0,
    /// #     rotor_specific_heat: 460.0, rotor_share: 0.9, cooling: Cooling::TimeConstant(600.0),
    /// #     ambient: 20.0, lining: None, fade_warning: 350.0, over_temperature: 500.0,
    /// #     flag_hysteresis: 10.0, measured: None }, 1e-3)?;
    /// # let wear = WearConfig::new(&WearParams { bedding_energy: 5e6,
    /// #     specific_wear_rate: 4e-14, lining_area: 8e-3, initial_thickness: 0.010,
    /// #     minimum_thickness: 0.002 }, 1e-3)?;
    /// # let channel = ChannelCalibration { gain: NewtonsPerCount::lit("0.01"),
    /// #     offset: Newtons::ZERO, rails: AdcRails { low: -8_388_608, high: 8_388_607, margin: 8 },
    /// #     temperature: None };
    /// # let limits = DiagnosticLimits { force_min: Newtons::lit("-2000"),
    /// #     force_max: Newtons::lit("60000"), max_rate: NewtonsPerSecond::lit("5000000"),
    /// #     noise_band: Newtons::lit("20"), stuck: None,
    /// #     debounce: DebounceSet::uniform(Debounce { raise_after: 3, clear_after: 10 }),
    /// #     max_hold_samples: 2 };
    /// # let voting = VotingLimits { tolerance: Newtons::lit("500"),
    /// #     channel_uncertainty: Newtons::lit("100") };
    /// # let sensor = SensorConfig::new(1000, [channel], LowPass::new(200.0, 1000)?, limits,
    /// #     voting, None)?;
    /// let parts = DeviceParts {
    ///     sample_period: Seconds::lit("0.001"), thermal_wear_every: 1, faces: 2,
    ///     tables: Tables::new(radius, friction), thermal, wear,
    ///     sensor, adapt: None,
    ///     limits: Limits { touch_force: Newtons::lit("100"), adapt_min_force: Newtons::lit("500") },
    ///     tolerances: Tolerances { mu: Ratio::lit("0.2"), radius: Ratio::lit("0.01"),
    ///         combination: Combination::WorstCase },
    /// };
    /// let a = DeviceConfig::from_parts(parts)?;
    /// let b = DeviceConfig::from_parts(DeviceParts { faces: 4, ..parts })?;
    /// assert_eq!(a.checksum(), DeviceConfig::from_parts(parts)?.checksum());
    /// assert_ne!(a.checksum(), b.checksum());
    /// # Ok::<(), Box<dyn core::error::Error>>(())
    /// ```
    pub fn checksum(&self) -> u32 {
        let mut f = Feed(CRC32.digest());
        f.i64(self.sample_period.to_bits());
        f.u8(self.thermal_wear_shift);
        f.u8(self.faces);
        self.tables.feed_bits(&mut |b| f.bytes(b));

        let th = self.thermal.to_raw();
        f.i64(th.dt.to_bits());
        th.k_q62.iter().flatten().for_each(|&k| f.i64(k));
        th.gamma_q62.iter().for_each(|&g| f.i64(g));
        f.flag(th.two_node);
        for t in [
            th.ambient,
            th.fade_warning,
            th.over_temperature,
            th.flag_hysteresis,
        ] {
            f.i32(t.to_bits());
        }
        f.flag(th.measured.is_some());
        if let Some(m) = th.measured {
            f.i32(m.min.to_bits());
            f.i32(m.max.to_bits());
            f.i32(m.max_step);
        }

        let w = self.wear.to_raw();
        f.u64(w.dt_q63);
        f.u128(w.e0_q48);
        f.u128(w.bedding_recip);
        f.u64(w.wear_mant);
        f.u32(w.wear_shift);
        f.i32(w.initial_thickness.to_bits());
        f.i32(w.minimum_thickness.to_bits());

        let s = &self.sensor;
        f.u32(s.sample_rate_hz());
        for ch in s.channels() {
            f.i64(ch.gain.to_bits());
            f.i32(ch.offset.to_bits());
            f.i32(ch.rails.low);
            f.i32(ch.rails.high);
            f.u32(ch.rails.margin);
            f.flag(ch.temperature.is_some());
            if let Some(t) = &ch.temperature {
                f.i32(t.reference.to_bits());
                f.i32(t.min.to_bits());
                f.i32(t.max.to_bits());
                f.i64(t.zero_per_kelvin.to_bits());
                f.i32(t.span_per_kelvin.to_bits());
            }
        }
        f.i64(s.filter().coefficient_bits());
        f.u32(s.filter().sample_rate_hz());
        f.limits(s.limits());
        f.i32(s.voting().tolerance.to_bits());
        f.i32(s.voting().channel_uncertainty.to_bits());
        f.flag(s.fallback().is_some());
        if let Some(a) = s.fallback() {
            f.i64(a.gain.to_bits());
            f.i32(a.offset.to_bits());
            f.i32(a.hysteresis.to_bits());
            f.i32(a.uncertainty.to_bits());
            f.i64(a.response_time.to_bits());
        }

        f.flag(self.adapt.is_some());
        if let Some(a) = &self.adapt {
            let r = a.to_raw();
            for v in [r.min_factor, r.max_factor, r.forgetting] {
                f.i32(v.to_bits());
            }
            f.i32(r.torque_full_scale.to_bits());
            for v in [
                r.min_excitation,
                r.initial_covariance,
                r.min_covariance,
                r.max_covariance,
            ] {
                f.i32(v.to_bits());
            }
        }

        f.i32(self.limits.touch_force.to_bits());
        f.i32(self.limits.adapt_min_force.to_bits());
        f.i32(self.tolerances.mu.to_bits());
        f.i32(self.tolerances.radius.to_bits());
        f.u8(match self.tolerances.combination {
            Combination::WorstCase => 0,
            Combination::RootSumSquare => 1,
        });
        f.0.finalize()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn crc_is_the_catalogued_crc32() {
        // [pub] Greg Cook, "Catalogue of parametrised CRC algorithms": CRC-32/ISO-HDLC,
        // check value over "123456789" = 0xCBF43926.
        assert_eq!(CRC32.checksum(b"123456789"), 0xCBF4_3926);
    }
}
