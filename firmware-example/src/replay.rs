//! The recorded-trace replay: the application wired to the HAL stub and the generated
//! constants. The firmware runs this under QEMU and the host runs the very same function, so
//! their output lines can be compared byte for byte.
//!
//! Output, one line each:
//! * `# clampwise-fw …` — a caution, then the trace name, sample count, channels, period and
//!   the generated checksum;
//! * `# state,restore=…` — how the estimator started: from the saved record (its sequence), or
//!   without one and what each slot of the saved-state flash held (the stub's flash starts
//!   erased, so the replay starts `restore=none,slot0=erased,slot1=erased`);
//! * `# est,…` — the names of the sample line's fields;
//! * `est,<sample>,<valid_mask>,<fault_out>,<warning_out>,<processor fields…>` per sample, all
//!   integers (fixed-point values as their raw bits);
//! * `end,samples=…,…` — the loop's counters and the output pins' level changes;
//! * `state,saves=…,save_errors=…,last_sequence=…,reload_sequence=…,reload_same=…` — the
//!   saved state: saves every [`SAVE_INTERVAL_MS`] and one on request at the end, then a
//!   restart over the same flash: the sequence it restores and whether the restored state is
//!   the running one (1) or not (0).
//!
//! ```
//! use clampwise_firmware_example::line::LineSink;
//! use clampwise_firmware_example::replay::{demo_processor, replay};
//!
//! struct Count(usize);
//! impl LineSink for Count {
//!     fn emit(&mut self, _line: &[u8]) { self.0 += 1; }
//! }
//! let mut lines = Count(0);
//! let summary = replay(demo_processor().unwrap(), &mut lines).unwrap();
//! assert_eq!(lines.0, summary.samples as usize + 6);
//! ```

use core::fmt;

use clampwise_core::state_record::RecordError;

use crate::adc::Channel;
use crate::app::{
    ControlLoop, FaultPolarity, LoopConfig, LoopConfigError, Ports, Processor, Summary,
};
use crate::generated::{
    self, CONFIG_NAME, DEVICE_CHANNELS, DEVICE_CHECKSUM, DEVICE_CONFIG, DEVICE_INITIAL_RECORD,
    Device, DeviceTables, SAMPLE_PERIOD_NS, TRACE, TRACE_NAME,
};
use crate::line::{Line, LineSink};
use crate::processor::EstimatorStep;
use crate::saved_state::{
    DemoFlash, Persist, SAVE_INTERVAL_MS, SLOT_LEN, SLOTS, SavedState, Start,
};
use crate::stub::{StubPin, TraceAdc, TraceAuxiliary, TraceClock, TraceDelay, TraceSpeeds};
use clampwise_core::record_store::StoreError;
use embedded_storage::nor_flash::NorFlashErrorKind;

/// The core's estimator on this build's device configuration.
pub type DemoProcessor = EstimatorStep<'static, DeviceTables, DEVICE_CHANNELS>;

/// Clean samples (20 ms at 1 kHz) before a latched fault output is released: the
/// application's policy, not part of the device configuration.
pub const FAULT_RELEASE_SAMPLES: u16 = 20;

/// Why a replay could not run.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum ReplayError {
    /// The device configuration in flash does not match the checksum the host computed.
    Checksum {
        /// CRC-32 recomputed from the configuration in flash.
        computed: u32,
        /// CRC-32 the build script computed from the TOML file.
        expected: u32,
    },
    /// The loop configuration was rejected.
    Config(LoopConfigError),
    /// The trace is longer than a `u32` sample counter.
    TraceTooLong,
    /// The saved-state slots do not fit the flash.
    SavedState(StoreError<NorFlashErrorKind>),
}

impl fmt::Display for ReplayError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Checksum { computed, expected } => write!(
                f,
                "device configuration: checksum 0x{computed:08x} does not match 0x{expected:08x}"
            ),
            Self::Config(e) => write!(f, "loop configuration: {e}"),
            Self::TraceTooLong => write!(f, "trace: more samples than a u32 counts"),
            Self::SavedState(e) => write!(f, "saved state: {e}"),
        }
    }
}

impl core::error::Error for ReplayError {}

/// The estimator on the device configuration kept in flash, started where the config says
/// (a new lining at ambient, or the generated initial state record).
///
/// # Errors
/// The core's [`RecordError`] when the initial state record in flash is rejected (the build
/// script checked it, so only changed flash gets here).
pub fn demo_processor() -> Result<DemoProcessor, RecordError> {
    // Opaque to the optimiser: the step is compiled for any configuration of this type, not
    // folded around the demo's values, so the link-time panic check covers every branch of it
    // (adaptation, fallback, temperature compensation …), not only those the demo uses.
    let config: &'static Device = core::hint::black_box(&DEVICE_CONFIG);
    EstimatorStep::resume(config, DEVICE_INITIAL_RECORD.as_ref().map(|r| &r[..]))
}

/// Channels `0..CH` in order, or `None` for more than the ADC has.
fn first_channels<const CH: usize>() -> Option<[Channel; CH]> {
    let mut out = [Channel::new(0)?; CH];
    for (i, c) in out.iter_mut().enumerate() {
        *c = Channel::new(u8::try_from(i).ok()?)?;
    }
    Some(out)
}

/// The saved-state store of the demo over the stub's flash.
fn demo_store(flash: &mut DemoFlash) -> Result<SavedState<&mut DemoFlash>, ReplayError> {
    SavedState::new(flash, SLOTS, SLOT_LEN, SAVE_INTERVAL_MS, SAMPLE_PERIOD_NS)
        .map_err(ReplayError::SavedState)
}

/// Replay the whole recorded trace through `processor`, emitting every line to `sink`: restore
/// its state from the saved-state flash at start (keeping it as given when there is no valid
/// record), save every [`SAVE_INTERVAL_MS`] and once on request at the end, then restart over
/// the same flash and check that what a restart restores is the running state.
///
/// # Errors
/// [`ReplayError`] before the first sample; once running, faults are counted, not returned.
pub fn replay<P, S>(mut processor: P, sink: &mut S) -> Result<Summary, ReplayError>
where
    P: Processor<DEVICE_CHANNELS> + Persist,
    S: LineSink,
{
    let computed = generated::checksum();
    if computed != DEVICE_CHECKSUM {
        return Err(ReplayError::Checksum {
            computed,
            expected: DEVICE_CHECKSUM,
        });
    }
    let samples = u32::try_from(TRACE.len()).map_err(|_| ReplayError::TraceTooLong)?;
    let channels = first_channels::<DEVICE_CHANNELS>().ok_or(ReplayError::Config(
        LoopConfigError::ChannelCount {
            count: DEVICE_CHANNELS,
        },
    ))?;
    let config = LoopConfig::new(
        channels,
        SAMPLE_PERIOD_NS,
        FAULT_RELEASE_SAMPLES,
        FaultPolarity::ActiveLow,
    )
    .map_err(ReplayError::Config)?;

    let mut line = Line::new();
    line.push_str(
        "# clampwise-fw: an estimate, not a certified safety function; validate on the bench",
    );
    sink.emit(line.as_bytes());
    let mut line = Line::new();
    line.push_str("# clampwise-fw,config=");
    line.push_str(CONFIG_NAME);
    line.push_str(",trace=");
    line.push_str(TRACE_NAME);
    line.key_value("samples", i64::from(samples));
    line.key_value(
        "channels",
        i64::try_from(DEVICE_CHANNELS).unwrap_or(i64::MAX),
    );
    line.key_value("period_ns", i64::from(SAMPLE_PERIOD_NS));
    line.key_hex32("device_crc32", DEVICE_CHECKSUM);
    sink.emit(line.as_bytes());

    // Power-on: the stub's flash is erased; a board's keeps the records of earlier runs.
    // Borrowed by each store, so the 512 bytes are not moved (and copied) into it.
    let mut flash = DemoFlash::new();
    let mut saved = demo_store(&mut flash)?;
    let start = saved.restore(&mut processor);
    let mut line = Line::new();
    line.push_str("# state");
    start.write_fields(&mut line);
    sink.emit(line.as_bytes());

    let clock = TraceClock::new(SAMPLE_PERIOD_NS);
    let ports = Ports {
        adc: TraceAdc::new(&clock, &TRACE),
        fault: StubPin::new(),
        warning: StubPin::new(),
        delay: TraceDelay::new(&clock),
        speeds: TraceSpeeds::new(&clock, &TRACE),
        auxiliary: TraceAuxiliary::new(&clock, &TRACE),
    };
    let mut app = ControlLoop::new(ports, processor, config);
    app.write_header(sink);
    for _ in 0..samples {
        let _ = app.tick(sink);
        // Between samples, in the period's slack (a board: its idle loop).
        let _ = saved.after_sample(app.processor());
    }
    // The application's save on request (here: at the end of the run, as at a shutdown).
    saved.request();
    let _ = saved.service(app.processor());
    let summary = *app.summary();
    let (ports, processor) = app.release();

    let mut line = Line::new();
    line.push_str("end");
    summary.write_fields(&mut line);
    line.key_value("fault_pin_changes", i64::from(ports.fault.changes()));
    line.key_value("warning_pin_changes", i64::from(ports.warning.changes()));
    sink.emit(line.as_bytes());

    // Restart over the same flash: a new estimator resumes from the newest record.
    let mut line = Line::new();
    line.push_str("state");
    saved.write_fields(&mut line);
    let mut again = demo_store(&mut flash)?;
    let reload = demo_processor()
        .ok()
        .map(|mut p| (again.restore(&mut p), p));
    let (sequence, same) = match reload {
        Some((Start::Restored { sequence }, p)) => (
            i64::from(sequence),
            p.state_record(sequence) == processor.state_record(sequence),
        ),
        _ => (-1, false),
    };
    line.key_value("reload_sequence", sequence);
    line.key_value("reload_same", i64::from(same));
    sink.emit(line.as_bytes());
    Ok(summary)
}

#[cfg(test)]
mod tests {
    #![allow(
        clippy::unwrap_used,
        clippy::indexing_slicing,
        clippy::cast_possible_truncation
    )]
    use super::*;
    use crate::adc::AdcFault;
    use crate::stub::TraceCell;
    use clampwise_core::flags::Flags;

    #[derive(Default)]
    struct Collect(Vec<String>);
    impl LineSink for Collect {
        fn emit(&mut self, line: &[u8]) {
            self.0.push(String::from_utf8(line.to_vec()).unwrap());
        }
    }

    /// The replay's sample lines, split into fields (`None` for an empty field).
    fn rows() -> Vec<Vec<Option<i64>>> {
        let mut out = Collect::default();
        replay(demo_processor().unwrap(), &mut out).unwrap();
        out.0
            .iter()
            .filter(|l| l.starts_with("est,"))
            .map(|l| l.split(',').skip(1).map(|f| f.parse().ok()).collect())
            .collect()
    }

    /// Column of a named field in the sample lines (after the `est` tag).
    fn column(name: &str) -> usize {
        let fixed = ["sample", "valid_mask", "fault_out", "warning_out"];
        fixed
            .iter()
            .chain(<clampwise_core::estimator::Estimate as crate::app::Outcome>::FIELD_NAMES)
            .position(|n| *n == name)
            .unwrap()
    }

    fn all_invalid(s: &crate::stub::TraceSample<DEVICE_CHANNELS>) -> bool {
        s.counts.iter().all(|c| !matches!(c, TraceCell::Counts(_)))
    }

    #[test]
    fn adc_faults_match_the_trace_cells() {
        let mut out = Collect::default();
        let summary = replay(demo_processor().unwrap(), &mut out).unwrap();
        assert_eq!(summary.samples as usize, TRACE.len());
        assert_eq!(out.0.len(), TRACE.len() + 6);
        // Independent tally straight from the trace: every invalid cell is a not-ready frame.
        let invalid = TRACE
            .iter()
            .flat_map(|s| s.counts.iter())
            .filter(|c| **c == TraceCell::NotReady)
            .count() as u32;
        assert!(invalid > 0, "the demo trace plants dropouts");
        assert_eq!(summary.adc_faults[AdcFault::NotReady.index()], invalid);
        assert_eq!(summary.adc_fault_total(), invalid);
        assert_eq!(summary.speed_errors, 0);
        assert_eq!(summary.truncated_lines, 0);
        // Valid mask per sample: bit i set iff channel i's cell is clean.
        let rows = rows();
        for (row, s) in rows.iter().zip(TRACE.iter()) {
            let mask = s
                .counts
                .iter()
                .enumerate()
                .filter(|(_, c)| matches!(c, TraceCell::Counts(_)))
                .fold(0, |m, (i, _)| m | (1 << i));
            assert_eq!(row[column("valid_mask")], Some(mask));
        }
    }

    #[test]
    fn with_every_channel_out_the_force_falls_back_or_is_lost() {
        let rows = rows();
        let has = |k: usize, f: Flags| rows[k][column("flags")].unwrap() & i64::from(f.bits()) != 0;
        // A channel that failed comes back only after `clear_after` clean samples (its invalid
        // flag's debounce), so whenever no channel is usable, every channel failed within that
        // window. The force then comes from the actuator command (fallback) if the trace has
        // one this sample, and is lost (no torque, no capacity: the fault output) if not.
        let clear = usize::from(DEVICE_CONFIG.sensor().limits().debounce.invalid.clear_after);
        let mut no_channel = 0;
        for k in 0..rows.len() {
            let (lost, fallback) = (has(k, Flags::FORCE_LOST), has(k, Flags::FORCE_FALLBACK));
            if !(lost || fallback) {
                continue;
            }
            no_channel += 1;
            for ch in 0..DEVICE_CHANNELS {
                let failed = TRACE[k.saturating_sub(clear)..=k]
                    .iter()
                    .any(|s| !matches!(s.counts[ch], TraceCell::Counts(_)));
                assert!(
                    failed,
                    "sample {k}: no channel used, channel {ch} clean throughout"
                );
            }
            let command = TRACE[k].auxiliary.actuator_command.is_some();
            assert_eq!(fallback, command, "sample {k}: fallback iff a command");
            assert_eq!(lost, !command, "sample {k}: lost iff no command");
            if lost {
                assert_eq!(rows[k][column("state")], Some(3), "unavailable");
                assert_eq!(rows[k][column("torque_bits")], None);
            }
        }
        // The demo trace plants a stretch of all channels out longer than any hold.
        let longest = TRACE
            .iter()
            .fold((0, 0), |(run, best), s| {
                let run = if all_invalid(s) { run + 1 } else { 0 };
                (run, best.max(run))
            })
            .1;
        let hold = usize::from(DEVICE_CONFIG.sensor().limits().max_hold_samples);
        assert!(longest > hold + 1, "trace: {longest} samples all out");
        assert!(no_channel > 0);
    }

    #[test]
    fn fault_output_follows_lost_force_with_release_delay() {
        let rows = rows();
        let lost: Vec<bool> = rows
            .iter()
            .map(|r| r[column("flags")].unwrap() & i64::from(Flags::FORCE_LOST.bits()) != 0)
            .collect();
        let release = usize::from(FAULT_RELEASE_SAMPLES);
        for (k, row) in rows.iter().enumerate() {
            // Asserted iff a lost-force sample (or the start) lies within the last `release`
            // samples, this one included.
            let from = k.saturating_sub(release - 1);
            let recent_loss = k < release - 1 || lost[from..=k].iter().any(|&l| l);
            assert_eq!(
                row[column("fault_out")] == Some(1),
                recent_loss,
                "sample {k}"
            );
            let fade = row[column("flags")].unwrap() & i64::from(Flags::FADE_WARNING.bits()) != 0;
            assert_eq!(row[column("warning_out")] == Some(1), fade, "sample {k}");
        }
    }

    #[test]
    fn slipping_torque_opposes_the_slip_and_stays_within_capacity() {
        // [calc] slipping: T = −sign(v)·n·μ·F·r_e, and |T| ≤ n·μ_s·F·r_e (μ_s ≥ μ_k here).
        let rows = rows();
        let mut slipping = 0;
        for (row, s) in rows.iter().zip(TRACE.iter()) {
            if row[column("state")] == Some(0) {
                slipping += 1;
                let t = row[column("torque_bits")].unwrap();
                let cap = row[column("holding_capacity_bits")].unwrap();
                let v = s.omega_in.to_bits() - s.omega_out.to_bits();
                assert!(t.signum() == -i64::from(v.signum()) || t == 0, "{row:?}");
                assert!(t.abs() <= cap, "{row:?}");
            }
        }
        assert!(slipping > 0, "the demo trace slips");
    }

    #[test]
    fn header_names_every_field() {
        let mut out = Collect::default();
        replay(demo_processor().unwrap(), &mut out).unwrap();
        assert!(out.0[3].starts_with("# est,"));
        let names = out.0[3].split(',').count();
        for l in out.0.iter().filter(|l| l.starts_with("est,")) {
            assert_eq!(l.split(',').count(), names, "{l}");
        }
        assert!(out.0[0].contains("not a certified safety function"));
        assert!(out.0[1].contains(&format!("device_crc32=0x{DEVICE_CHECKSUM:08x}")));
        assert!(out.0[out.0.len() - 2].starts_with("end,samples="));
    }

    // The saved state over a run: the stub flash starts erased, so the start says so; one save
    // per SAVE_INTERVAL_MS of samples plus the one on request at the end, sequences from 0;
    // a restart over the same flash restores the last and it is the running state.
    #[test]
    fn the_state_is_saved_on_schedule_and_a_restart_restores_it() {
        let mut out = Collect::default();
        replay(demo_processor().unwrap(), &mut out).unwrap();
        assert_eq!(out.0[2], "# state,restore=none,slot0=erased,slot1=erased");
        let per_save = SAVE_INTERVAL_MS as usize * 1_000_000 / SAMPLE_PERIOD_NS as usize;
        let saves = TRACE.len() / per_save + 1;
        assert_eq!(
            out.0.last().unwrap(),
            &format!(
                "state,saves={saves},save_errors=0,last_sequence={},reload_sequence={},reload_same=1",
                saves - 1,
                saves - 1
            )
        );
    }
}
