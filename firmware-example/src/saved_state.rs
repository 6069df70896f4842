//! The estimator's saved state: its state record (wear, bedding, temperatures, adaptation) kept
//! on NOR flash in the core's A/B [`RecordStore`], restored at start, saved every
//! [`SAVE_INTERVAL_MS`] and on request.
//!
//! ```text
//! start:    RecordStore::load ─ valid? ─► resume the estimator from it      (# state,restore=record)
//!                               └ none ──► keep the new / commissioning one (# state,restore=none,…)
//! running:  every sample SavedState::after_sample: interval elapsed or request() ─► save
//! ```
//!
//! What a power cut during a save can leave, and why a restore still returns the last (or the
//! interrupted, if it reached flash whole) record and never a torn or older one, is stated in
//! [`clampwise_core::record_store`]. Here the flash is the stub's [`RamFlash`]; on a board it is
//! the HAL's `NorFlash` over two reserved pages of the internal flash (or an external one),
//! given to [`SavedState::new`] with the pages' offsets.
//!
//! A save erases one slot: with two slots each page is erased once every two saves. At a
//! save every 10 minutes a page rated for 10⁴ erase cycles lasts about 140 days of running;
//! choose the interval (and the number of pages a board spreads the slots over) for the
//! flash's endurance, and save on request at shutdown or after a long braking event. A save
//! runs between two samples here: an erase on real flash takes milliseconds, so a board runs
//! it from its idle loop or a low-priority task, never from the control interrupt.
//!
//! ```
//! use clampwise_firmware_example::generated::{DEVICE, SAMPLE_PERIOD_NS};
//! use clampwise_firmware_example::processor::EstimatorStep;
//! use clampwise_firmware_example::saved_state::{DemoFlash, SLOTS, SLOT_LEN, SavedState, Start};
//!
//! let mut saved = SavedState::new(DemoFlash::new(), SLOTS, SLOT_LEN, 1, SAMPLE_PERIOD_NS)?;
//! let mut step = EstimatorStep::new(&DEVICE);
//! // Erased flash: no record, the estimator starts new (and the start says why).
//! assert!(matches!(saved.restore(&mut step), Start::Fresh(_)));
//! saved.request();
//! assert_eq!(saved.service(&step), Some(Ok(0)));
//! // A restart over the same flash resumes from sequence 0.
//! let mut again = SavedState::new(saved.into_flash(), SLOTS, SLOT_LEN, 1, SAMPLE_PERIOD_NS)?;
//! assert_eq!(again.restore(&mut EstimatorStep::new(&DEVICE)), Start::Restored { sequence: 0 });
//! # Ok::<(), clampwise_core::record_store::StoreError<embedded_storage::nor_flash::NorFlashErrorKind>>(())
//! ```

use clampwise_core::state_record::RecordError;
// The types of `Persist`'s signatures, named here so `forward_persist!` can reach them.
use clampwise_core::record_store::SlotState;
pub use clampwise_core::record_store::{LoadError, RecordStore, StoreError};
pub use clampwise_core::state_record::StateRecord;
pub use embedded_storage::nor_flash::NorFlash;

use crate::line::Line;
use crate::stub::RamFlash;

/// How often the state is saved while running, ms. The demo trace lasts 0.4 s, so it saves
/// every 100 ms; a board saves every few minutes (see the flash endurance in the module docs).
pub const SAVE_INTERVAL_MS: u32 = 100;
/// Bytes per slot: one erase unit of the stub flash.
pub const SLOT_LEN: u32 = 256;
/// Byte offsets of the two slots in the stub flash.
pub const SLOTS: [u32; 2] = [0, SLOT_LEN];
/// The stub's flash: two slots.
pub type DemoFlash = RamFlash<512>;

/// A processing step whose state can be saved to and restored from a [`RecordStore`].
pub trait Persist {
    /// The state record the step would save with this sequence number.
    fn state_record(&self, sequence: u32) -> StateRecord;
    /// Save the state into the store; the sequence written.
    ///
    /// # Errors
    /// The store's [`StoreError`].
    fn save_state<F: NorFlash>(
        &self,
        store: &mut RecordStore<F>,
    ) -> Result<u32, StoreError<F::Error>>;
    /// Replace the state with the store's newest valid record; its sequence.
    ///
    /// # Errors
    /// The store's [`LoadError`]; the state is then unchanged.
    fn restore_state<F: NorFlash>(
        &mut self,
        store: &mut RecordStore<F>,
    ) -> Result<u32, LoadError<F::Error>>;
}

/// `impl Persist for $wrapper<P>` that forwards every method to its `$field: P`: for the
/// probes and recorders that wrap a processor (stack and cycle probes, test recorders).
///
/// ```
/// use clampwise_firmware_example::forward_persist;
/// struct Logged<P> {
///     inner: P,
/// }
/// forward_persist!(Logged, inner);
/// ```
#[macro_export]
macro_rules! forward_persist {
    ($wrapper:ident, $field:ident) => {
        impl<P: $crate::saved_state::Persist> $crate::saved_state::Persist for $wrapper<P> {
            fn state_record(&self, sequence: u32) -> $crate::saved_state::StateRecord {
                self.$field.state_record(sequence)
            }
            fn save_state<F: $crate::saved_state::NorFlash>(
                &self,
                store: &mut $crate::saved_state::RecordStore<F>,
            ) -> Result<u32, $crate::saved_state::StoreError<F::Error>> {
                self.$field.save_state(store)
            }
            fn restore_state<F: $crate::saved_state::NorFlash>(
                &mut self,
                store: &mut $crate::saved_state::RecordStore<F>,
            ) -> Result<u32, $crate::saved_state::LoadError<F::Error>> {
                self.$field.restore_state(store)
            }
        }
    };
}

impl<P: Persist> Persist for &mut P {
    fn state_record(&self, sequence: u32) -> StateRecord {
        (**self).state_record(sequence)
    }
    fn save_state<F: NorFlash>(
        &self,
        store: &mut RecordStore<F>,
    ) -> Result<u32, StoreError<F::Error>> {
        (**self).save_state(store)
    }
    fn restore_state<F: NorFlash>(
        &mut self,
        store: &mut RecordStore<F>,
    ) -> Result<u32, LoadError<F::Error>> {
        (**self).restore_state(store)
    }
}

/// How the estimator started.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Start<E> {
    /// From the saved record with this sequence number.
    Restored {
        /// Sequence of the record.
        sequence: u32,
    },
    /// Without a saved record (new lining, or the commissioning record), and why: a condition
    /// to flag, since the wear, bedding and temperatures start from defaults.
    Fresh(LoadError<E>),
}

impl<E> Start<E> {
    /// Append the start to an output line: `,restore=record,sequence=N`, or `,restore=none`
    /// and what each slot held (`erased`, `torn`, or the rule that refused its record).
    pub fn write_fields(&self, line: &mut Line) {
        match self {
            Self::Restored { sequence } => {
                line.push_str(",restore=record");
                line.key_value("sequence", i64::from(*sequence));
            }
            Self::Fresh(LoadError::NoValidRecord { slots }) => {
                line.push_str(",restore=none");
                for (name, slot) in ["slot0", "slot1"].iter().zip(slots) {
                    line.push_str(",");
                    line.push_str(name);
                    line.push_str("=");
                    line.push_str(slot_name(slot));
                }
            }
            Self::Fresh(_) => line.push_str(",restore=none,flash=error"),
        }
    }
}

/// A short name for what a slot held.
pub const fn slot_name(slot: &SlotState) -> &'static str {
    match slot {
        SlotState::Erased => "erased",
        SlotState::Torn => "torn",
        SlotState::Valid(_) => "valid",
        SlotState::Rejected(e) => match e {
            RecordError::ConfigMismatch { .. } => "other_config",
            RecordError::UnsupportedVersion { .. } => "other_version",
            RecordError::Checksum { .. } => "crc",
            RecordError::BeddingContradictsEnergy { .. }
            | RecordError::ThicknessLossBeyondLining { .. }
            | RecordError::ThicknessLossContradictsEnergy { .. }
            | RecordError::TwoTemperaturesOneNode
            | RecordError::CorrectionOutOfBand { .. }
            | RecordError::CovarianceOutOfRange { .. } => "inconsistent",
            _ => "malformed",
        },
    }
}

/// The saved-state store of the application: when to save, and counters for the report.
#[derive(Debug)]
pub struct SavedState<F> {
    store: RecordStore<F>,
    interval_samples: u32,
    since_save: u32,
    requested: bool,
    saves: u32,
    errors: u32,
    last_sequence: Option<u32>,
}

impl<F: NorFlash> SavedState<F> {
    /// A saved-state store on `flash` with its two slots at `slots`, `slot_len` bytes each,
    /// saving every `interval_ms` (at least every sample) of a loop with period `period_ns`.
    ///
    /// # Errors
    /// The core's [`StoreError`] when the slots do not fit the flash.
    pub fn new(
        flash: F,
        slots: [u32; 2],
        slot_len: u32,
        interval_ms: u32,
        period_ns: u32,
    ) -> Result<Self, StoreError<F::Error>> {
        let samples =
            u64::from(interval_ms).saturating_mul(1_000_000) / u64::from(period_ns.max(1));
        Ok(Self {
            store: RecordStore::new(flash, slots, slot_len)?,
            interval_samples: u32::try_from(samples).unwrap_or(u32::MAX).max(1),
            since_save: 0,
            requested: false,
            saves: 0,
            errors: 0,
            last_sequence: None,
        })
    }

    /// At start: resume `processor` from the newest valid record, or leave it as it is (new
    /// or commissioned) and say why there was none.
    pub fn restore<P: Persist>(&mut self, processor: &mut P) -> Start<F::Error> {
        match processor.restore_state(&mut self.store) {
            Ok(sequence) => {
                self.last_sequence = Some(sequence);
                Start::Restored { sequence }
            }
            Err(e) => Start::Fresh(e),
        }
    }

    /// Ask for a save at the next [`SavedState::service`] (the application's "save now":
    /// shutdown, end of a braking event, a service command).
    pub const fn request(&mut self) {
        self.requested = true;
    }

    /// After each sample: count it, and save when the interval has passed or a save was
    /// requested. `None` when no save was due.
    pub fn after_sample<P: Persist>(
        &mut self,
        processor: &P,
    ) -> Option<Result<u32, StoreError<F::Error>>> {
        self.since_save = self.since_save.saturating_add(1);
        if self.since_save >= self.interval_samples {
            self.requested = true;
        }
        self.service(processor)
    }

    /// Save now if a save is due or requested. A failed save is counted and tried again at
    /// the next interval.
    pub fn service<P: Persist>(
        &mut self,
        processor: &P,
    ) -> Option<Result<u32, StoreError<F::Error>>> {
        if !self.requested {
            return None;
        }
        self.requested = false;
        self.since_save = 0;
        let result = processor.save_state(&mut self.store);
        match result {
            Ok(sequence) => {
                self.saves = self.saves.saturating_add(1);
                self.last_sequence = Some(sequence);
            }
            Err(_) => self.errors = self.errors.saturating_add(1),
        }
        Some(result)
    }

    /// Saves that completed.
    pub const fn saves(&self) -> u32 {
        self.saves
    }

    /// Saves that failed.
    pub const fn errors(&self) -> u32 {
        self.errors
    }

    /// Sequence of the newest record restored or saved.
    pub const fn last_sequence(&self) -> Option<u32> {
        self.last_sequence
    }

    /// Append the counters to an output line: `,saves=N,save_errors=N,last_sequence=N` (−1
    /// for none).
    pub fn write_fields(&self, line: &mut Line) {
        line.key_value("saves", i64::from(self.saves));
        line.key_value("save_errors", i64::from(self.errors));
        line.key_value("last_sequence", self.last_sequence.map_or(-1, i64::from));
    }

    /// The flash back (e.g. for a restart over the same flash).
    pub fn into_flash(self) -> F {
        self.store.into_inner()
    }
}
