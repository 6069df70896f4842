//! An A/B store for the estimator's [`StateRecord`] on NOR flash, over the `embedded-storage`
//! 0.3 [`NorFlash`] traits, that survives a power cut at any moment of a save.
//!
//! ```text
//! save:    newest valid slot = A (sequence n)  ──►  erase B, write B = record n+1, read back
//! restore: read A and B ─► frame intact? ─► StateRecord::from_bytes ─► check(cfg) ─► newest
//!                                                                     (serial-number order)
//! ```
//!
//! ## Slots and frames
//!
//! Two slots, each a whole number of erase units. A slot holds one *frame*: the record padded
//! with zeros to `H` bytes (`H` = [`RECORD_LEN`] rounded up to the flash's read and write
//! units, at most [`HALF_MAX`]), then the bitwise complement of those `H` bytes. A save erases
//! the slot that does *not* hold the newest valid record, writes the record half, then the
//! complement half, then reads both back. A slot is valid when its second half is exactly the
//! complement of its first, the record passes [`StateRecord::from_bytes`] (CRC-32, ranges) and
//! [`StateRecord::check`] (this configuration's checksum, consistency). Of two valid slots the
//! one with the newer sequence number wins, compared in serial-number arithmetic (RFC 1982,
//! 32-bit): `a` is newer than `b` when `a − b mod 2³²` lies in `1 … 2³¹ − 1`, so `0` is newer
//! than `u32::MAX`. Each save takes the newest sequence plus one (wrapping), so the two valid
//! sequences always differ by one.
//!
//! ## What a power cut can leave, and why it is never loaded
//!
//! NOR flash erases to all ones and programs by clearing bits (a write ANDs into the cell).
//! * **Cut during the erase** of slot B: erasing only sets bits, and any bit set in a frame
//!   leaves a bit pair (record bit, complement bit) at (1, 1), which no intact frame has: B is
//!   refused *whatever subset of bits the erase reached*. If it reached none, B still holds
//!   the older record n − 1, which loses to A. Either way A (record n) is loaded.
//! * **Cut during the record half**: the complement half is still erased (all ones), so the
//!   pairs need a record half of all zeros, which a record never is (its magic): refused,
//!   whatever the interrupted words hold. A is loaded.
//! * **Cut during the complement half**: the record half is complete. B is valid only if the
//!   complement half reads back as its exact complement — then it *is* record n + 1, complete,
//!   and loading it is right; otherwise refused and A is loaded.
//! * **Cut after the write, before the read-back**: B holds record n + 1, complete.
//!
//! So after a cut, a restore returns the record of the interrupted save if it reached flash
//! whole, else the last record whose save completed — never a torn one, never an older one.
//! The frame rule needs no probability; the CRC-32 behind it adds detection of what the model
//! above does not cover (a cell that reads back at random, decayed bits): every error of up to
//! 32 adjacent bits, else all but 2⁻³² of them. The guarantee assumes the flash keeps what it
//! reports written, writes in the order asked, and that nothing else writes these slots; the
//! trait's contract that a cut write leaves "the rest of the page unchanged" keeps slot A
//! intact while B is written. Tested in `clampwise-tests` (`record_store_power_cut`): a
//! simulated flash cut at every byte of every erase and write of a save, and over 2·10⁴ random
//! saves.
//!
//! ```
//! use clampwise_core::record_store::{HALF_MAX, RecordStore};
//! # use embedded_storage::nor_flash::{ErrorType, NorFlash, NorFlashErrorKind, ReadNorFlash};
//! # struct Ram([u8; 1024]);
//! # impl ErrorType for Ram { type Error = NorFlashErrorKind; }
//! # impl ReadNorFlash for Ram {
//! #     const READ_SIZE: usize = 1;
//! #     fn read(&mut self, o: u32, b: &mut [u8]) -> Result<(), Self::Error> {
//! #         b.copy_from_slice(&self.0[o as usize..o as usize + b.len()]); Ok(()) }
//! #     fn capacity(&self) -> usize { 1024 }
//! # }
//! # impl NorFlash for Ram {
//! #     const WRITE_SIZE: usize = 4;
//! #     const ERASE_SIZE: usize = 256;
//! #     fn erase(&mut self, f: u32, t: u32) -> Result<(), Self::Error> {
//! #         self.0[f as usize..t as usize].fill(0xFF); Ok(()) }
//! #     fn write(&mut self, o: u32, b: &[u8]) -> Result<(), Self::Error> {
//! #         for (d, s) in self.0[o as usize..].iter_mut().zip(b) { *d &= s; } Ok(()) }
//! # }
//! // Slots at 0 and 256, one 256-byte erase unit each.
//! let store = RecordStore::new(Ram([0xFF; 1024]), [0, 256], 256)?;
//! assert!(store.frame_len() <= 2 * HALF_MAX);
//! # Ok::<(), clampwise_core::record_store::StoreError<NorFlashErrorKind>>(())
//! ```

use core::fmt;

use embedded_storage::nor_flash::{NorFlash, NorFlashError};

use crate::config::{DeviceConfig, TableSet};
use crate::estimator::Estimator;
use crate::state_record::{RECORD_LEN, RecordError, StateRecord};

/// Largest half-frame: [`RECORD_LEN`] rounded up to the flash's read and write units must fit.
pub const HALF_MAX: usize = 128;

/// Whether sequence `a` is newer than `b` in 32-bit serial-number arithmetic (RFC 1982):
/// `a − b mod 2³²` in `1 … 2³¹ − 1`. At a distance of exactly 2³¹ neither is newer (RFC 1982
/// leaves it undefined; the store's two sequences never are that far apart).
///
/// ```
/// use clampwise_core::record_store::is_newer;
/// assert!(is_newer(1, 0));
/// assert!(is_newer(0, u32::MAX));
/// assert!(!is_newer(u32::MAX, 0));
/// assert!(!is_newer(7, 7));
/// assert!(!is_newer(1 << 31, 0) && !is_newer(0, 1 << 31));
/// ```
pub const fn is_newer(a: u32, b: u32) -> bool {
    let d = a.wrapping_sub(b);
    d != 0 && d < 1 << 31
}

/// Why a store could not be set up, or a save failed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum StoreError<E> {
    /// A slot does not start on an erase unit, or its length is not a whole number of them.
    NotEraseAligned,
    /// A slot is shorter than a frame ([`RecordStore::frame_len`]).
    SlotTooSmall,
    /// A slot runs past the end of the flash.
    OutOfBounds,
    /// The two slots overlap.
    SlotsOverlap,
    /// The flash's read or write unit does not fit a half-frame of [`HALF_MAX`] bytes.
    UnsupportedWordSize,
    /// The flash reported an error.
    Flash(E),
    /// The frame read back after a save is not the one written.
    Verify,
}

impl<E: NorFlashError> fmt::Display for StoreError<E> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NotEraseAligned => {
                f.write_str("record slot is not aligned to the flash's erase unit")
            }
            Self::SlotTooSmall => f.write_str("record slot is shorter than a record frame"),
            Self::OutOfBounds => f.write_str("record slot runs past the end of the flash"),
            Self::SlotsOverlap => f.write_str("the two record slots overlap"),
            Self::UnsupportedWordSize => {
                f.write_str("flash read or write unit is larger than a record half-frame")
            }
            Self::Flash(e) => write!(f, "flash error: {}", e.kind()),
            Self::Verify => {
                f.write_str("record read back after a save differs from the one written")
            }
        }
    }
}

impl<E: NorFlashError> core::error::Error for StoreError<E> {}

/// What a slot held when it was read.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum SlotState {
    /// Erased: all ones (nothing written since).
    Erased,
    /// The complement half is not the complement of the record half: a save or erase was cut.
    Torn,
    /// An intact frame whose record was refused.
    Rejected(RecordError),
    /// A valid record with this sequence number.
    Valid(u32),
}

/// Why no record was loaded.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum LoadError<E> {
    /// Neither slot holds a valid record; what each held.
    NoValidRecord {
        /// State of the first and the second slot.
        slots: [SlotState; 2],
    },
    /// The flash reported an error.
    Flash(E),
}

impl<E: NorFlashError> fmt::Display for LoadError<E> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NoValidRecord { slots } => {
                f.write_str("no valid state record")?;
                for (i, s) in slots.iter().enumerate() {
                    match s {
                        SlotState::Erased => write!(f, "; slot {i} erased"),
                        SlotState::Torn => write!(f, "; slot {i} torn (cut during a save)"),
                        SlotState::Rejected(e) => write!(f, "; slot {i}: {e}"),
                        SlotState::Valid(seq) => write!(f, "; slot {i} valid ({seq})"),
                    }?;
                }
                Ok(())
            }
            Self::Flash(e) => write!(f, "flash error: {}", e.kind()),
        }
    }
}

impl<E: NorFlashError> core::error::Error for LoadError<E> {}

/// The newest valid record found, and where.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct Newest {
    slot: usize,
    sequence: u32,
}

/// Two record slots on a NOR flash (see the module docs for the guarantee).
#[derive(Debug)]
pub struct RecordStore<F> {
    flash: F,
    slots: [u32; 2],
    /// Bytes per slot, a whole number of erase units.
    slot_len: u32,
    /// Bytes per half-frame: [`RECORD_LEN`] rounded up to the read and write units.
    half: usize,
    /// `None` until the slots have been read; then the checksum of the configuration they
    /// were checked against and the newest valid one for it, if any.
    newest: Option<(u32, Option<Newest>)>,
}

impl<F: NorFlash> RecordStore<F> {
    /// A store over `flash` with its two slots at byte offsets `slots`, each `slot_len` bytes
    /// (a whole number of erase units, at least [`RecordStore::frame_len`]).
    ///
    /// # Errors
    /// [`StoreError::UnsupportedWordSize`], [`StoreError::NotEraseAligned`],
    /// [`StoreError::SlotTooSmall`], [`StoreError::OutOfBounds`], [`StoreError::SlotsOverlap`].
    pub fn new(flash: F, slots: [u32; 2], slot_len: u32) -> Result<Self, StoreError<F::Error>> {
        let unit = F::READ_SIZE.max(F::WRITE_SIZE).max(1);
        if unit % F::READ_SIZE.max(1) != 0 || unit % F::WRITE_SIZE.max(1) != 0 {
            return Err(StoreError::UnsupportedWordSize);
        }
        let half = RECORD_LEN.div_ceil(unit).saturating_mul(unit);
        if half > HALF_MAX {
            return Err(StoreError::UnsupportedWordSize);
        }
        let erase = F::ERASE_SIZE.max(1);
        let len = usize::try_from(slot_len).unwrap_or(usize::MAX);
        let aligned = |at: u32| usize::try_from(at).is_ok_and(|a| a % erase == 0);
        if !slots.iter().all(|&s| aligned(s)) || len % erase != 0 || len == 0 {
            return Err(StoreError::NotEraseAligned);
        }
        if len < 2 * half {
            return Err(StoreError::SlotTooSmall);
        }
        let capacity = flash.capacity();
        let fits = |at: u32| {
            usize::try_from(at)
                .ok()
                .and_then(|a| a.checked_add(len))
                .is_some_and(|end| end <= capacity)
        };
        if !slots.iter().all(|&s| fits(s)) {
            return Err(StoreError::OutOfBounds);
        }
        let [a, b] = slots;
        if a.abs_diff(b) < slot_len {
            return Err(StoreError::SlotsOverlap);
        }
        Ok(Self {
            flash,
            slots,
            slot_len,
            half,
            newest: None,
        })
    }

    /// Bytes a frame takes in a slot: twice the record rounded up to the read and write units.
    pub const fn frame_len(&self) -> usize {
        2 * self.half
    }

    /// The flash, e.g. for other data outside the two slots. Writing the slots through it
    /// leaves the store's idea of the newest record stale: build a new store after that.
    pub fn flash_mut(&mut self) -> &mut F {
        &mut self.flash
    }

    /// The flash, e.g. to hand it back to the HAL.
    pub fn into_inner(self) -> F {
        self.flash
    }

    /// Read both slots and return the newest valid record for `cfg`.
    ///
    /// # Errors
    /// [`LoadError::NoValidRecord`] with what each slot held (erased, torn, or the
    /// [`RecordError`] that refused it, e.g. [`RecordError::ConfigMismatch`] after a change
    /// of configuration); [`LoadError::Flash`].
    pub fn load<T: TableSet, const C: usize>(
        &mut self,
        cfg: &DeviceConfig<T, C>,
    ) -> Result<StateRecord, LoadError<F::Error>> {
        let mut states = [SlotState::Erased; 2];
        let mut records = [None; 2];
        for ((state, record), at) in states.iter_mut().zip(records.iter_mut()).zip(self.slots) {
            match self.read_slot(at, cfg).map_err(LoadError::Flash)? {
                Ok(rec) => {
                    *state = SlotState::Valid(rec.sequence());
                    *record = Some(rec);
                }
                Err(s) => *state = s,
            }
        }
        let newest = match records {
            [Some(a), Some(b)] if is_newer(b.sequence(), a.sequence()) => Some((1, b)),
            [Some(a), _] => Some((0, a)),
            [None, Some(b)] => Some((1, b)),
            [None, None] => None,
        };
        let found = newest.map(|(slot, r)| Newest {
            slot,
            sequence: r.sequence(),
        });
        self.newest = Some((cfg.checksum(), found));
        newest
            .map(|(_, r)| r)
            .ok_or(LoadError::NoValidRecord { slots: states })
    }

    /// [`RecordStore::load`], then an estimator resumed from the record.
    ///
    /// # Errors
    /// As [`RecordStore::load`].
    pub fn restore<'c, T: TableSet, const C: usize>(
        &mut self,
        cfg: &'c DeviceConfig<T, C>,
    ) -> Result<Estimator<'c, T, C>, LoadError<F::Error>> {
        let record = self.load(cfg)?;
        // `load` has run the same check: `resume` cannot refuse this record.
        Estimator::resume(cfg, &record).map_err(|e| LoadError::NoValidRecord {
            slots: [SlotState::Rejected(e); 2],
        })
    }

    /// Save the estimator's state: erase the slot that does not hold the newest valid record,
    /// write the new record (sequence = newest + 1, wrapping; 0 when there is none) and its
    /// complement, read them back. Returns the sequence written. Reads both slots first unless
    /// a [`RecordStore::load`] or a save for the same configuration has.
    ///
    /// # Errors
    /// [`StoreError::Flash`], [`StoreError::Verify`]. On an error the newest valid record is
    /// unchanged and the next save goes to the same slot.
    pub fn save<T: TableSet, const C: usize>(
        &mut self,
        estimator: &Estimator<'_, T, C>,
    ) -> Result<u32, StoreError<F::Error>> {
        let config = estimator.config();
        let checksum = config.checksum();
        let newest = match self.newest {
            Some((c, n)) if c == checksum => n,
            // Not read yet, or read for another configuration: what is valid depends on it.
            _ => match self.load(config) {
                Ok(_) | Err(LoadError::NoValidRecord { .. }) => self.newest.and_then(|(_, n)| n),
                Err(LoadError::Flash(e)) => return Err(StoreError::Flash(e)),
            },
        };
        let (slot, sequence) = newest.map_or((0, 0), |n| (n.slot ^ 1, n.sequence.wrapping_add(1)));
        let at = self.slots.get(slot).copied().unwrap_or(0);
        let record = estimator.save(sequence);
        self.write_frame(at, &record)?;
        self.newest = Some((checksum, Some(Newest { slot, sequence })));
        Ok(sequence)
    }

    fn write_frame(
        &mut self,
        at: u32,
        record: &[u8; RECORD_LEN],
    ) -> Result<(), StoreError<F::Error>> {
        let half = self.half;
        let mut first = [0u8; HALF_MAX];
        if let Some(dst) = first.get_mut(..RECORD_LEN) {
            dst.copy_from_slice(record);
        }
        let mut second = first;
        second.iter_mut().for_each(|b| *b = !*b);
        let (first, second) = (
            first.get(..half).unwrap_or(&[]),
            second.get(..half).unwrap_or(&[]),
        );
        // `new` checked that a slot holds a frame and lies inside the flash, so the offsets
        // below stay in the slot and do not saturate.
        let half_u32 = u32::try_from(half).unwrap_or(u32::MAX);
        self.flash
            .erase(at, at.saturating_add(self.slot_len))
            .map_err(StoreError::Flash)?;
        self.flash.write(at, first).map_err(StoreError::Flash)?;
        self.flash
            .write(at.saturating_add(half_u32), second)
            .map_err(StoreError::Flash)?;
        let mut back = [0u8; HALF_MAX];
        for (offset, want) in [(at, first), (at.saturating_add(half_u32), second)] {
            let got = back.get_mut(..half).unwrap_or(&mut []);
            self.flash.read(offset, got).map_err(StoreError::Flash)?;
            if got != want {
                return Err(StoreError::Verify);
            }
        }
        Ok(())
    }

    /// Read one slot: `Ok(Ok(record))` if valid, `Ok(Err(state))` if not.
    fn read_slot<T: TableSet, const C: usize>(
        &mut self,
        at: u32,
        cfg: &DeviceConfig<T, C>,
    ) -> Result<Result<StateRecord, SlotState>, F::Error> {
        let half = self.half;
        let half_u32 = u32::try_from(half).unwrap_or(u32::MAX);
        let mut first = [0u8; HALF_MAX];
        let mut second = [0u8; HALF_MAX];
        let (a, b) = (
            first.get_mut(..half).unwrap_or(&mut []),
            second.get_mut(..half).unwrap_or(&mut []),
        );
        self.flash.read(at, a)?;
        self.flash.read(at.saturating_add(half_u32), b)?;
        if a.iter().chain(b.iter()).all(|&x| x == 0xFF) {
            return Ok(Err(SlotState::Erased));
        }
        if a.iter().zip(b.iter()).any(|(&x, &y)| x != !y) {
            return Ok(Err(SlotState::Torn));
        }
        let record = a.get(..RECORD_LEN).unwrap_or(&[]);
        Ok(StateRecord::from_bytes(record)
            .and_then(|r| r.check(cfg).map(|()| r))
            .map_err(SlotState::Rejected))
    }
}
