//! The estimator's slow state to and from a [`StateRecord`]: what a controller keeps across
//! power cycles (see [`crate::state_record`] for the format and the checks, and
//! [`crate::record_store`] for keeping it on NOR flash).
//!
//! The record is for power cycles: it carries the slow state only, so the samples after a
//! restore differ from an uninterrupted run while the filters settle. For exact resume on a
//! host (chunked replay, moving a device's work between workers) use the full-state snapshot,
//! [`crate::estimator::snapshot`]; it is not meant for flash wear-levelling.

use super::Estimator;
use crate::adapt::AdaptState;
use crate::config::{DeviceConfig, TableSet};
use crate::state_record::{RECORD_LEN, RecordError, StateRecord};
use crate::units::Ratio;
use crate::wear::WearState;

impl<'c, T: TableSet, const C: usize> Estimator<'c, T, C> {
    /// Resume from a saved state record (see [`Estimator::save`]): wear, bedding, temperatures
    /// and the adaptation's factor and covariance. Sensor filters and the stick/slip decision
    /// start afresh. Integer-only, cannot panic.
    ///
    /// # Errors
    /// The [`RecordError`] saying why the record was not loaded: corrupt, truncated or of
    /// another version ([`StateRecord::from_bytes`]), made for another configuration, or
    /// holding values this configuration cannot produce ([`StateRecord::check`]).
    pub fn restore(cfg: &'c DeviceConfig<T, C>, record: &[u8]) -> Result<Self, RecordError> {
        Self::resume(cfg, &StateRecord::from_bytes(record)?)
    }

    /// [`Estimator::restore`] from a decoded record.
    ///
    /// # Errors
    /// The [`RecordError`] of [`StateRecord::check`].
    pub fn resume(cfg: &'c DeviceConfig<T, C>, record: &StateRecord) -> Result<Self, RecordError> {
        record.check(cfg)?;
        let mut est = Self::new(cfg);
        est.state.thermal = record.thermal();
        est.state.wear = record.wear();
        if let Some(acfg) = cfg.adapt.as_ref() {
            est.state.adapt = Some(AdaptState::restore(
                acfg,
                record.adaptation_factor(),
                record.adaptation_covariance(),
            ));
        }
        Ok(est)
    }

    /// A state record to keep across power cycles, as bytes (write it to non-volatile memory
    /// with a rising `sequence`, or let [`crate::record_store::RecordStore`] do it).
    pub fn save(&self, sequence: u32) -> [u8; RECORD_LEN] {
        self.record(sequence).to_bytes()
    }

    /// The state record [`Estimator::save`] encodes: the configuration's checksum, the wear
    /// with the energy still pending in the thermal and wear sub-rate added (so no energy is
    /// lost), the temperatures of the last sub-rate update, the adaptation's factor and
    /// covariance (1 and 0 without adaptation). A thickness loss past the lining is kept at
    /// the lining's thickness, so the record stays loadable and the lining stays worn out.
    pub fn record(&self, sequence: u32) -> StateRecord {
        let cfg = self.cfg;
        let mut wear = self.state.wear;
        // No energy pending leaves the wear state as it is (`advance` skips it).
        wear.advance(&cfg.wear, self.state.sub_rate.pending_wear());
        let (energy, unbedded, loss) = wear.raw();
        // The initial thickness is positive (`WearConfig` holds 0 ≤ minimum < initial).
        let lining_q96 = u128::from(cfg.wear.initial_thickness().to_bits().unsigned_abs()) << 72;
        let wear = WearState::from_bits(energy, unbedded, loss.min(lining_q96)).unwrap_or(wear);
        let (factor, covariance) = self
            .state
            .adapt
            .map_or((Ratio::ONE, Ratio::ZERO), |a| (a.factor(), a.covariance()));
        StateRecord::new(
            sequence,
            cfg.checksum(),
            &wear,
            &self.state.thermal,
            factor,
            covariance,
        )
    }
}
