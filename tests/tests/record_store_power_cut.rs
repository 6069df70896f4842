//! The A/B record store under power cuts: a simulated NOR flash (erase sets every bit, a write
//! ANDs into the cells) is cut at a chosen byte of the erase or of either write of a save, and
//! leaves what a real cut can: a partly erased slot, a partly programmed word, an undefined
//! word. After each cut the device "restarts" (a new store over the same cells) and restores.
//!
//! Asserted every time: restore returns the record of the interrupted save (only if it reached
//! flash whole) or the last record whose save completed, byte for byte — never a torn one,
//! never an older one, and no record at all only before the first save ever completed.
#![allow(
    clippy::panic,
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::cast_possible_truncation
)]

mod estimator_common;

use clampwise_core::estimator::{Estimator, Inputs};
use clampwise_core::record_store::{LoadError, RecordStore, SlotState, StoreError};
use clampwise_core::state_record::{RECORD_LEN, RecordError, StateRecord};
use clampwise_core::units::{NewtonMetres, RadPerSec};
use embedded_storage::nor_flash::{
    ErrorType, NorFlash, NorFlashError, NorFlashErrorKind, ReadNorFlash, check_erase, check_read,
    check_write,
};
use estimator_common::{Device, Spec, TestTables, annulus_contact, counts, device};

const ERASE: usize = 256;
const CAPACITY: usize = 4 * ERASE;
const SLOTS: [u32; 2] = [ERASE as u32, 3 * ERASE as u32];
/// Bytes an erase and the two half-frame writes of one save pass through: the slot, then two
/// halves of the record (88 bytes, a whole number of 4-byte words).
const SAVE_BYTES: usize = ERASE + 2 * RECORD_LEN;

/// SplitMix64 [pub: Steele, Lea, Flood, "Fast splittable pseudorandom number generators",
/// OOPSLA 2014]: a seeded generator, so every run tries the same cuts.
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
    fn byte(&mut self) -> u8 {
        self.next() as u8
    }
}

/// What a cut leaves in the byte (and the rest of the word, or of the operation) it hits.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Residue {
    /// A write clears a random part of the bits it was to clear, in the rest of the word; an
    /// erase sets a random part of the bits in the byte it reached.
    Partial,
    /// The rest of the word (write) or the byte (erase) reads back as anything.
    Undefined,
    /// Every byte the operation had not finished is hit partly: a write clears a random part
    /// of its bits everywhere after the cut, an erase sets a random part everywhere (an erase
    /// that does not run from the start of the page).
    Scattered,
}
const RESIDUES: [Residue; 3] = [Residue::Partial, Residue::Undefined, Residue::Scattered];

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct PowerCut;
impl NorFlashError for PowerCut {
    fn kind(&self) -> NorFlashErrorKind {
        NorFlashErrorKind::Other
    }
}

/// NOR flash in RAM that loses power after `budget` more bytes of erase or write.
struct CutFlash {
    cells: Vec<u8>,
    budget: Option<usize>,
    residue: Residue,
    off: bool,
    rng: Rng,
    /// Bytes of erase and write since the last `arm`: where in a save the cut fell.
    done: usize,
}

impl CutFlash {
    fn new(seed: u64) -> Self {
        Self {
            cells: vec![0xFF; CAPACITY],
            budget: None,
            residue: Residue::Partial,
            off: false,
            rng: Rng(seed),
            done: 0,
        }
    }
    /// Cut the power after `at` more bytes of erase or write (`None`: never).
    fn arm(&mut self, at: Option<usize>, residue: Residue) {
        self.budget = at;
        self.residue = residue;
        self.done = 0;
    }
    /// Power back on: the cells as the cut left them, no cut armed.
    fn restart(mut self) -> Self {
        self.off = false;
        self.budget = None;
        self
    }
    /// How many bytes of `len` run before the power goes; consumes the budget.
    fn take(&mut self, len: usize) -> Option<usize> {
        let cut = match self.budget {
            Some(b) if b < len => {
                self.budget = Some(0);
                self.off = true;
                Some(b)
            }
            Some(b) => {
                self.budget = Some(b - len);
                None
            }
            None => None,
        };
        self.done += cut.unwrap_or(len);
        cut
    }
}

impl ErrorType for CutFlash {
    type Error = PowerCut;
}

impl ReadNorFlash for CutFlash {
    const READ_SIZE: usize = 1;
    fn read(&mut self, offset: u32, bytes: &mut [u8]) -> Result<(), PowerCut> {
        check_read(self, offset, bytes.len()).expect("store reads inside the flash");
        if self.off {
            return Err(PowerCut);
        }
        let at = offset as usize;
        bytes.copy_from_slice(&self.cells[at..at + bytes.len()]);
        Ok(())
    }
    fn capacity(&self) -> usize {
        CAPACITY
    }
}

impl NorFlash for CutFlash {
    const WRITE_SIZE: usize = 4;
    const ERASE_SIZE: usize = ERASE;

    fn erase(&mut self, from: u32, to: u32) -> Result<(), PowerCut> {
        check_erase(self, from, to).expect("store erases whole units");
        if self.off {
            return Err(PowerCut);
        }
        let (from, to) = (from as usize, to as usize);
        let Some(k) = self.take(to - from) else {
            self.cells[from..to].fill(0xFF);
            return Ok(());
        };
        self.cells[from..from + k].fill(0xFF);
        let hit = from + k;
        match self.residue {
            Residue::Partial => self.cells[hit] |= self.rng.byte(),
            Residue::Undefined => self.cells[hit] = self.rng.byte(),
            Residue::Scattered => {
                for i in hit..to {
                    let set = self.rng.byte() & self.rng.byte();
                    self.cells[i] |= set;
                }
            }
        }
        Err(PowerCut)
    }

    fn write(&mut self, offset: u32, bytes: &[u8]) -> Result<(), PowerCut> {
        check_write(self, offset, bytes.len()).expect("store writes whole words");
        if self.off {
            return Err(PowerCut);
        }
        let at = offset as usize;
        let Some(k) = self.take(bytes.len()) else {
            for (cell, b) in self.cells[at..].iter_mut().zip(bytes) {
                *cell &= b;
            }
            return Ok(());
        };
        for (cell, b) in self.cells[at..at + k].iter_mut().zip(bytes) {
            *cell &= b;
        }
        let word_end = (k / Self::WRITE_SIZE + 1) * Self::WRITE_SIZE;
        let end = match self.residue {
            Residue::Scattered => bytes.len(),
            _ => word_end.min(bytes.len()),
        };
        for (i, &b) in bytes.iter().enumerate().take(end).skip(k) {
            let cell = &mut self.cells[at + i];
            *cell = match self.residue {
                Residue::Undefined => self.rng.byte(),
                // Clear a random part of the bits this byte was to clear.
                _ => *cell & (b | self.rng.byte()),
            };
        }
        Err(PowerCut)
    }
}

type Dev = Device<1>;

/// A device with adaptation, so that every field of the record moves between saves.
fn dev() -> Dev {
    device::<1>(&Spec {
        adapt: true,
        ..Spec::default()
    })
}

/// Run the estimator for a few samples of braking so the next save holds a new state.
fn brake(est: &mut Estimator<'_, TestTables, 1>, rng: &mut Rng) {
    let force = 3_000.0 + rng.below(20_000) as f64;
    let speed = rng.below(200) as f64 - 20.0;
    for _ in 0..1 + rng.below(40) {
        let mut inputs = Inputs::<1>::at_rest(counts(force));
        inputs.input_speed = Some(RadPerSec::from_num(speed));
        let probe = est.clone().step(&inputs);
        inputs.reference_torque = probe.torque.map(|t| t * NewtonMetres::from_num(0.9));
        est.step(&inputs);
    }
}

/// What the test knows: the last record whose save completed (or that a restore showed to be
/// whole), and the estimator that keeps running.
struct Run<'d> {
    dev: &'d Dev,
    est: Estimator<'d, TestTables, 1>,
    store: Option<RecordStore<CutFlash>>,
    last: Option<StateRecord>,
    rng: Rng,
}

impl<'d> Run<'d> {
    fn new(dev: &'d Dev, seed: u64) -> Self {
        let store = RecordStore::new(CutFlash::new(seed ^ 0x5EED), SLOTS, ERASE as u32).unwrap();
        Self {
            dev,
            est: Estimator::new(dev),
            store: Some(store),
            last: None,
            rng: Rng(seed),
        }
    }

    fn flash(&mut self) -> &mut CutFlash {
        self.store.as_mut().unwrap().flash_mut()
    }

    /// One save, cut after `cut` bytes (`None`: not cut), then a check of what a restart
    /// restores. Returns the bytes the save passed through before the cut.
    fn cycle(&mut self, cut: Option<usize>, residue: Residue) -> usize {
        brake(&mut self.est, &mut self.rng);
        let mut store = self.store.take().unwrap();
        store.flash_mut().arm(cut, residue);
        let expected_seq = self.last.map_or(0, |r| r.sequence().wrapping_add(1));
        let in_progress = self.est.record(expected_seq);
        let saved = store.save(&self.est);
        let mut flash = store.into_inner();
        let reached = flash.done;
        match saved {
            Ok(seq) => {
                assert_eq!(seq, expected_seq);
                assert_eq!(reached, SAVE_BYTES, "a save passes every byte of the slot");
                self.last = Some(in_progress);
            }
            Err(StoreError::Flash(PowerCut)) => {
                assert!(cut.is_some_and(|c| c < SAVE_BYTES), "cut at {cut:?}");
            }
            Err(e) => panic!("save failed without a cut: {e:?}"),
        }
        // Restart: a new store over the cells as the cut left them.
        flash = flash.restart();
        let mut store = RecordStore::new(flash, SLOTS, ERASE as u32).unwrap();
        match (store.load(self.dev), self.last) {
            (Ok(got), Some(last)) if got == last => {}
            (Ok(got), _) if got == in_progress => self.last = Some(got),
            (Ok(got), last) => panic!(
                "restored seq {} (not the last {:?} nor the interrupted {}) after a cut at \
                 {cut:?} ({residue:?})",
                got.sequence(),
                last.map(|r| r.sequence()),
                expected_seq
            ),
            (Err(LoadError::NoValidRecord { .. }), None) => {}
            (Err(e), last) => panic!(
                "nothing restored after a cut at {cut:?} ({residue:?}); last complete \
                 {:?}: {e:?}",
                last.map(|r| r.sequence())
            ),
        }
        // Keep running from what was restored, as a device would.
        if let Some(last) = self.last {
            self.est = Estimator::resume(self.dev, &last).unwrap();
        }
        self.store = Some(store);
        reached
    }
}

// Every byte of a save — each byte of the erase and of both writes — is the cut position of at
// least one save, with each kind of residue.
#[test]
fn a_cut_at_every_byte_of_a_save_restores_the_last_or_the_interrupted_record() {
    let dev = dev();
    let mut run = Run::new(&dev, 1);
    run.cycle(None, Residue::Partial);
    let mut tried = vec![[false; 3]; SAVE_BYTES];
    for (r, &residue) in RESIDUES.iter().enumerate() {
        for at in 0..SAVE_BYTES {
            let reached = run.cycle(Some(at), residue);
            assert_eq!(reached, at, "the cut fell where it was aimed");
            tried[reached][r] = true;
            // A save without a cut in between, so the slots alternate.
            if at % 3 == 0 {
                run.cycle(None, residue);
            }
        }
    }
    assert!(tried.iter().all(|t| t.iter().all(|&x| x)));
}

// 2·10⁴ saves, each cut at a random byte with a random residue (one in eight runs through),
// starting four saves before the sequence wraps from u32::MAX to 0.
#[test]
fn twenty_thousand_random_cuts_never_restore_a_torn_or_older_record() {
    let dev = dev();
    let mut run = Run::new(&dev, 0x00C0_FFEE);
    // Start close to the wrap: a complete record with sequence u32::MAX − 3 in the first slot.
    let start = run.est.save(u32::MAX - 3);
    write_frame(run.flash(), SLOTS[0], &start);
    run.store = Some(
        RecordStore::new(run.store.take().unwrap().into_inner(), SLOTS, ERASE as u32).unwrap(),
    );
    run.last = Some(run.store.as_mut().unwrap().load(&dev).unwrap());
    let mut cuts = vec![0u32; SAVE_BYTES + 1];
    let mut wrapped = false;
    for _ in 0..20_000 {
        let cut = (run.rng.below(8) != 0).then(|| run.rng.below(SAVE_BYTES));
        let residue = RESIDUES[run.rng.below(3)];
        cuts[run.cycle(cut, residue)] += 1;
        wrapped |= run.last.is_some_and(|r| r.sequence() < 1000);
    }
    assert!(wrapped, "the sequence crossed u32::MAX → 0");
    assert!(cuts.iter().all(|&n| n > 0), "every cut position was tried");
}

/// Program a whole frame (record, then its complement) as the store lays it out.
fn write_frame(flash: &mut CutFlash, at: u32, record: &[u8; RECORD_LEN]) {
    let complement: Vec<u8> = record.iter().map(|b| !b).collect();
    flash.erase(at, at + ERASE as u32).unwrap();
    flash.write(at, record).unwrap();
    flash.write(at + RECORD_LEN as u32, &complement).unwrap();
}

// Sequence numbers in serial-number order across the wrap: after u32::MAX comes 0, and 0 wins.
#[test]
fn the_sequence_wraps_from_max_to_zero_and_the_newest_still_wins() {
    let dev = dev();
    let mut est = Estimator::new(&dev);
    let mut flash = CutFlash::new(7);
    write_frame(&mut flash, SLOTS[0], &est.save(u32::MAX - 1));
    write_frame(&mut flash, SLOTS[1], &est.save(u32::MAX));
    let mut store = RecordStore::new(flash, SLOTS, ERASE as u32).unwrap();
    assert_eq!(store.load(&dev).unwrap().sequence(), u32::MAX);
    let mut rng = Rng(3);
    brake(&mut est, &mut rng);
    assert_eq!(store.save(&est).unwrap(), 0, "u32::MAX + 1 wraps to 0");
    let mut store = RecordStore::new(store.into_inner(), SLOTS, ERASE as u32).unwrap();
    let got = store.load(&dev).unwrap();
    assert_eq!(got, est.record(0), "0 is newer than u32::MAX");
    assert_eq!(store.save(&est).unwrap(), 1);
    assert_eq!(store.load(&dev).unwrap().sequence(), 1);
}

#[test]
fn an_empty_flash_and_a_foreign_configuration_give_typed_reasons() {
    let dev = dev();
    let mut store = RecordStore::new(CutFlash::new(9), SLOTS, ERASE as u32).unwrap();
    assert_eq!(
        store.load(&dev).unwrap_err(),
        LoadError::NoValidRecord {
            slots: [SlotState::Erased; 2]
        }
    );
    let est = Estimator::new(&dev);
    assert_eq!(store.save(&est).unwrap(), 0);
    let other = device::<1>(&Spec {
        adapt: true,
        contact: annulus_contact(4, None),
        ..Spec::default()
    });
    assert_eq!(
        store.load(&other).unwrap_err(),
        LoadError::NoValidRecord {
            slots: [
                SlotState::Rejected(RecordError::ConfigMismatch {
                    record: dev.checksum(),
                    config: other.checksum()
                }),
                SlotState::Erased
            ]
        }
    );
    // A save cut 40 bytes into its record half leaves the second slot torn (its complement half
    // still erased), whatever the CRC of the bytes it holds.
    store.flash_mut().arm(Some(ERASE + 40), Residue::Partial);
    assert_eq!(store.save(&est), Err(StoreError::Flash(PowerCut)));
    let mut store = RecordStore::new(store.into_inner().restart(), SLOTS, ERASE as u32).unwrap();
    assert!(matches!(
        store.load(&other).unwrap_err(),
        LoadError::NoValidRecord {
            slots: [
                SlotState::Rejected(RecordError::ConfigMismatch { .. }),
                SlotState::Torn
            ]
        }
    ));
    assert_eq!(store.load(&dev).unwrap(), est.record(0));
    // The other configuration starts its own records in the slot after the refused one's.
    let fresh = Estimator::new(&other);
    let mut store = RecordStore::new(store.into_inner(), SLOTS, ERASE as u32).unwrap();
    assert_eq!(store.save(&fresh).unwrap(), 0);
    assert_eq!(store.load(&other).unwrap(), fresh.record(0));
}

#[test]
fn slots_must_fit_the_flash_geometry() {
    let store = |slots: [u32; 2], len: u32| {
        RecordStore::new(CutFlash::new(0), slots, len)
            .map(|_| ())
            .unwrap_err()
    };
    assert_eq!(store([1, 512], 256), StoreError::NotEraseAligned);
    assert_eq!(store([0, 512], 200), StoreError::NotEraseAligned);
    assert_eq!(store([0, 256], 512), StoreError::SlotsOverlap);
    assert_eq!(store([0, 1024], 256), StoreError::OutOfBounds);
}
