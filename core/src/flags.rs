//! The estimate's flags word: every condition a controller must know about, one bit each.
//!
//! A set flag never hides behind a plausible number: when force is lost the torque is absent,
//! not zero; when a table was entered out of range the value is the clamped end value *and*
//! [`Flags::OUT_OF_RANGE`] is set.

bitflags::bitflags! {
    /// Conditions raised by one [`step`](crate::estimator::Estimator::step).
    #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
    pub struct Flags: u32 {
        /// At least one force channel is flagged; the force comes from fewer channels.
        const SENSOR_DEGRADED = 1 << 0;
        /// No healthy force channel: force estimated from the actuator command (wider
        /// uncertainty).
        const FORCE_FALLBACK = 1 << 1;
        /// No force available at all: torque and capacity are not reported.
        const FORCE_LOST = 1 << 2;
        /// A force channel sits at an ADC rail.
        const FORCE_SATURATED = 1 << 3;
        /// A table (μ or friction radius) was entered outside its breakpoints; the clamped end
        /// value was used.
        const OUT_OF_RANGE = 1 << 4;
        /// An arithmetic result saturated at the limit of its fixed-point format.
        const ARITHMETIC_SATURATED = 1 << 5;
        /// Lining temperature above the fade-warning threshold: μ is falling.
        const FADE_WARNING = 1 << 6;
        /// Lining temperature above the over-temperature fault threshold.
        const OVER_TEMPERATURE = 1 << 7;
        /// A measured temperature was present but implausible; the thermal model was kept.
        const TEMPERATURE_REJECTED = 1 << 8;
        /// Online adaptation is configured and held its factor this step.
        const ADAPTATION_FROZEN = 1 << 9;
        /// Online adaptation is pressing against its band.
        const ADAPTATION_AT_LIMIT = 1 << 10;
        /// The lining has worn down to its minimum thickness.
        const LINING_WORN = 1 << 11;
        /// Standstill: the friction torque is set by the load and bounded by the reported
        /// holding capacity; no torque value is given.
        const TORQUE_BOUNDED = 1 << 12;
        /// The force from the channels lies farther from the actuator model's prediction than
        /// both allow: every channel may be wrong the same way (a shared excitation or gain
        /// fault). The ± covers the model's band as well this sample; it may be wide.
        const FORCE_IMPLAUSIBLE = 1 << 13;
        /// A shaft speed was not known this sample: the contact may be holding or slipping, so
        /// no torque is given and the state is `SlipUnknown`; the holding capacity is a bound
        /// over every slip speed and temperature of the μ table. No heat or wear is added while
        /// it lasts.
        const SPEED_UNKNOWN = 1 << 14;
        /// A contact whose torque is not linear in μ (a self-energising shoe, a differential
        /// band) has μ, within its tolerance, beyond the range its torque-gain table covers:
        /// at or near self-locking, where a small rise in μ gives an unbounded rise in torque.
        /// Torque and capacity are the table's edge values and the ± is the format's maximum:
        /// neither can be trusted.
        const SELF_LOCKING = 1 << 15;
    }
}

#[cfg(feature = "defmt")]
impl defmt::Format for Flags {
    fn format(&self, f: defmt::Formatter<'_>) {
        defmt::write!(f, "Flags({=u32:#x})", self.bits());
    }
}
