//! The step loop of one device shape: [`BLOCKS`] blocks of [`BLOCK_SAMPLES`] samples, one
//! output line per block.
//!
//! Besides each estimate, a block's hash covers:
//! * the full-state snapshot every [`SNAPSHOT_EVERY`] samples (filters, debounce counters,
//!   sub-rate sums: the state, not only the outputs);
//! * a cut in the middle of each block: the state record saved (`Estimator::save`) and restored
//!   (`Estimator::restore`), the restored estimator's record saved again and compared; the
//!   snapshot taken and resumed and compared the same way. The run goes on from the restored
//!   record in odd blocks (a power cycle) and from the resumed snapshot in even blocks;
//! * in the arbitrary-bits segment, every [`FUZZ_EVERY`] samples, a corrupted record and a
//!   corrupted snapshot (random bytes changed, the snapshot's CRC made good half the time)
//!   given to the decoders: what they return (the record again, or the error's variant and values).
//!
//! After the blocks, a `faults,<shape>,…` line ([`crate::coverage`]).
//!
//! Block line: `blk,<shape>,<block>,crc=<hex>,` then the samples per contact state, the union
//! of the estimate flags, the cut's counters (`record_diff`, `snapshot_diff`: restored state
//! that differs from what was saved; `refused`: saved bytes the decoder refused) and the
//! samples whose adaptation correction is not 1 (`adapted`).

use core::fmt::Write as _;
use core::hint::black_box;

use clampwise_core::config::{DeviceConfig, TableSet};
use clampwise_core::estimator::{Estimate, Estimator, snapshot_len};
use clampwise_core::state_record::RECORD_LEN;
use clampwise_core::units::Ratio;
use crc::{CRC_32_ISO_HDLC, Crc, NoTable};
use oorandom::Rand32;

use crate::coverage::FaultCoverage;
use crate::digest::{BlockDigest, state_code};
pub use crate::scenario::BLOCK_SAMPLES;
use crate::scenario::{Plant, Scenario, Segment};
use crate::sink::{Line, Sink};

/// Blocks per shape (10⁵ samples).
pub const BLOCKS: u32 = 10;
/// Samples between two snapshots hashed.
pub const SNAPSHOT_EVERY: u32 = 250;
/// Samples between two decoder fuzz cases in the arbitrary-bits segment.
pub const FUZZ_EVERY: u32 = 25;
/// Where in a block the state is saved and restored.
const CUT_AT: u32 = BLOCK_SAMPLES / 2;
/// The largest snapshot (four channels).
const SNAPSHOT_MAX: usize = snapshot_len(4);

/// The snapshot's CRC, to make a corrupted snapshot's checksum good again.
const SNAPSHOT_CRC: Crc<u32, NoTable> = Crc::<u32, NoTable>::new(&CRC_32_ISO_HDLC);

/// What a block counts besides its hash.
#[derive(Default)]
struct Tally {
    states: [u32; 5],
    flags: u32,
    record_diff: u32,
    snapshot_diff: u32,
    refused: u32,
    /// Samples whose adaptation correction is not 1.
    adapted: u32,
}

impl Tally {
    fn add(&mut self, e: &Estimate) {
        if let Some(n) = self.states.get_mut(usize::from(state_code(e.state))) {
            *n += 1;
        }
        self.flags |= e.flags.bits();
        self.adapted += u32::from(e.correction != Ratio::ONE);
    }
}

/// Run one shape and emit its lines; `false` if the run could not start (initial record
/// refused).
pub fn run_shape<T: TableSet, const C: usize, S: Sink>(
    name: &str,
    cfg: &'static DeviceConfig<T, C>,
    initial: Option<&[u8; RECORD_LEN]>,
    plant: &Plant<C>,
    seed: u64,
    sink: &mut S,
) -> bool {
    // Opaque to the optimiser: the step, save and restore are compiled for any configuration of
    // this type, so the link-time panic check covers all their branches.
    let cfg: &'static DeviceConfig<T, C> = black_box(cfg);
    let start = match initial {
        Some(record) => Estimator::restore(cfg, record),
        None => Ok(Estimator::new(cfg)),
    };
    let mut line = Line::new();
    let _ = write!(
        line,
        "shape,{name},channels={C},checksum=0x{:08x},samples={},sub_rate={},adaptation={}",
        cfg.checksum(),
        BLOCKS * BLOCK_SAMPLES,
        cfg.thermal_wear_every(),
        if cfg.adapt().is_some() { "on" } else { "off" },
    );
    sink.emit(&line);
    let Ok(mut est) = start else {
        sink.emit("error,initial record refused");
        return false;
    };
    let mut scenario = Scenario::new(plant, seed ^ name_hash(name));
    let mut last_torque = None;
    let mut coverage = FaultCoverage::<C>::new();
    for block in 0..BLOCKS {
        let mut digest = BlockDigest::new();
        let mut tally = Tally::default();
        for at in 0..BLOCK_SAMPLES {
            if at == CUT_AT {
                est = cut(cfg, est, block, &mut digest, &mut tally);
            }
            let (segment, faulty) = (scenario.segment(), scenario.faulty_channel());
            let fuzz = segment == Segment::Arbitrary && at.is_multiple_of(FUZZ_EVERY);
            let inputs = scenario.next(last_torque);
            coverage.observe(cfg.sensor(), &inputs, segment, faulty);
            let e = est.step(&inputs);
            digest.estimate(&e);
            tally.add(&e);
            last_torque = e.torque;
            if at.is_multiple_of(SNAPSHOT_EVERY) {
                let mut buf = [0u8; SNAPSHOT_MAX];
                let n = est.snapshot_into(&mut buf).unwrap_or(0);
                digest.bytes(buf.get(..n).unwrap_or(&[]));
            }
            if fuzz {
                fuzz_decoders(cfg, &est, scenario.rng(), &mut digest);
            }
        }
        coverage.end_block();
        emit_block(sink, name, block, digest.finish(), &tally);
    }
    coverage.emit(cfg.sensor(), name, sink);
    true
}

/// Save and restore mid-run; the estimator the run goes on with.
fn cut<'c, T: TableSet, const C: usize>(
    cfg: &'c DeviceConfig<T, C>,
    est: Estimator<'c, T, C>,
    block: u32,
    digest: &mut BlockDigest,
    tally: &mut Tally,
) -> Estimator<'c, T, C> {
    let record = est.save(block);
    digest.bytes(&record);
    let restored = match Estimator::restore(cfg, &record) {
        Ok(r) => {
            let again = r.save(block);
            digest.bytes(&again);
            tally.record_diff += u32::from(again != record);
            Some(r)
        }
        Err(e) => {
            digest.record_error(&e);
            tally.refused += 1;
            None
        }
    };
    let mut snap = [0u8; SNAPSHOT_MAX];
    let n = est.snapshot_into(&mut snap).unwrap_or(0);
    let snap = snap.get(..n).unwrap_or(&[]);
    digest.bytes(snap);
    let resumed = match Estimator::from_snapshot(cfg, snap) {
        Ok(r) => {
            let mut again = [0u8; SNAPSHOT_MAX];
            let m = r.snapshot_into(&mut again).unwrap_or(0);
            tally.snapshot_diff += u32::from(again.get(..m) != Some(snap));
            Some(r)
        }
        Err(e) => {
            digest.snapshot_error(&e);
            tally.refused += 1;
            None
        }
    };
    let next = if block % 2 == 1 { restored } else { resumed };
    next.unwrap_or(est)
}

/// Corrupt a record and a snapshot of `est` at random and hash what the decoders make of them.
fn fuzz_decoders<T: TableSet, const C: usize>(
    cfg: &DeviceConfig<T, C>,
    est: &Estimator<'_, T, C>,
    rng: &mut Rand32,
    digest: &mut BlockDigest,
) {
    let mut record = est.save(rng.rand_u32());
    corrupt(&mut record, rng);
    match Estimator::restore(cfg, &record) {
        Ok(r) => digest.bytes(&r.save(0)),
        Err(e) => digest.record_error(&e),
    }
    let mut snap = [0u8; SNAPSHOT_MAX];
    let n = est.snapshot_into(&mut snap).unwrap_or(0);
    let body = n.saturating_sub(4);
    if let Some(bytes) = snap.get_mut(..body) {
        corrupt(bytes, rng);
    }
    if rng.rand_u32() & 1 == 0 {
        let crc = SNAPSHOT_CRC.checksum(snap.get(..body).unwrap_or(&[]));
        if let Some(tail) = snap.get_mut(body..).and_then(|t| t.first_chunk_mut::<4>()) {
            *tail = crc.to_le_bytes();
        }
    }
    match Estimator::from_snapshot(cfg, snap.get(..n).unwrap_or(&[])) {
        Ok(r) => {
            let mut again = [0u8; SNAPSHOT_MAX];
            let m = r.snapshot_into(&mut again).unwrap_or(0);
            digest.bytes(again.get(..m).unwrap_or(&[]));
        }
        Err(e) => digest.snapshot_error(&e),
    }
}

/// Change one to four random bytes to random values.
fn corrupt(bytes: &mut [u8], rng: &mut Rand32) {
    let len = u32::try_from(bytes.len()).unwrap_or(u32::MAX);
    if len == 0 {
        return;
    }
    for _ in 0..=rng.rand_range(0..4) {
        let at = usize::try_from(rng.rand_range(0..len)).unwrap_or(0);
        if let Some(b) = bytes.get_mut(at) {
            *b = rng.rand_u32().to_le_bytes()[0];
        }
    }
}

fn emit_block<S: Sink>(sink: &mut S, name: &str, block: u32, crc: u32, t: &Tally) {
    let [slipping, holding, released, unknown, unavailable] = t.states;
    let mut line = Line::new();
    let _ = write!(
        line,
        "blk,{name},{block},crc={crc:08x},slipping={slipping},holding={holding},\
         released={released},slip-unknown={unknown},unavailable={unavailable},flags=0x{:04x},\
         record_diff={},snapshot_diff={},refused={},adapted={}",
        t.flags, t.record_diff, t.snapshot_diff, t.refused, t.adapted
    );
    sink.emit(&line);
}

/// FNV-1a of a shape's name, mixed into the seed.
fn name_hash(name: &str) -> u64 {
    name.bytes().fold(0xcbf2_9ce4_8422_2325, |h, b| {
        (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3)
    })
}
