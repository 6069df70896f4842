//! The recorded-trace replay: the application wired to the HAL stub and the generated
//! constants. The firmware runs this under QEMU and the host runs the very same function, so
//! their output lines can be compared byte for byte.
//!
//! Output, one line each:
//! * `# clampwise-fw …` — a caution, then the trace name, sample count, channels, period and
//!   the generated checksum;
//! * `# est,…` — the names of the sample line's fields;
//! * `est,<sample>,<valid_mask>,<fault_out>,<warning_out>,<processor fields…>` per sample, all
//!   integers (fixed-point values as their raw bits);
//! * `end,samples=…,…` — the loop's counters and the output pins' level changes.
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
//! assert_eq!(lines.0, summary.samples as usize + 4);
//! ```

use core::fmt;

use crate::adc::Channel;
use crate::app::{
    ControlLoop, FaultPolarity, LoopConfig, LoopConfigError, Ports, Processor, Summary,
};
use crate::generated::{
    self, BEDDING, BEDDING_BREAKPOINTS, CHANNELS, FAULT_RELEASE_SAMPLES, FORCE_BREAKPOINTS, GAINS,
    GENERATED_CRC32, OFFSETS_COUNTS, RADIUS_TABLE, SAMPLE_PERIOD_NS, TRACE, TRACE_NAME,
};
use crate::line::{Line, LineSink};
use crate::processor::{ForceRadius, ForceRadiusError};
use crate::stub::{StubPin, TraceAdc, TraceClock, TraceDelay, TraceSpeeds};

/// The interim processing step with this build's configuration and table.
pub type DemoProcessor = ForceRadius<'static, CHANNELS, FORCE_BREAKPOINTS, BEDDING_BREAKPOINTS>;

/// Why a replay could not run.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum ReplayError {
    /// The generated constants do not match their checksum.
    Checksum {
        /// CRC-32 recomputed from the constants in flash.
        computed: u32,
        /// CRC-32 the build script computed.
        expected: u32,
    },
    /// The loop configuration was rejected.
    Config(LoopConfigError),
    /// The trace is longer than a `u32` sample counter.
    TraceTooLong,
}

impl fmt::Display for ReplayError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Checksum { computed, expected } => write!(
                f,
                "generated tables: checksum 0x{computed:08x} does not match 0x{expected:08x}"
            ),
            Self::Config(e) => write!(f, "loop configuration: {e}"),
            Self::TraceTooLong => write!(f, "trace: more samples than a u32 counts"),
        }
    }
}

impl core::error::Error for ReplayError {}

/// The interim processing step built from the generated configuration.
///
/// # Errors
/// When the generated gains, offsets or bedding are out of range (the build script checks them
/// too, so this only fires on a generator bug).
pub fn demo_processor() -> Result<DemoProcessor, ForceRadiusError> {
    ForceRadius::new(GAINS, OFFSETS_COUNTS, BEDDING, &RADIUS_TABLE)
}

/// Channels `0..CH` in order, or `None` for more than the ADC has.
fn first_channels<const CH: usize>() -> Option<[Channel; CH]> {
    let mut out = [Channel::new(0)?; CH];
    for (i, c) in out.iter_mut().enumerate() {
        *c = Channel::new(u8::try_from(i).ok()?)?;
    }
    Some(out)
}

/// Replay the whole recorded trace through `processor`, emitting every line to `sink`.
///
/// # Errors
/// [`ReplayError`] before the first sample; once running, faults are counted, not returned.
pub fn replay<P, S>(processor: P, sink: &mut S) -> Result<Summary, ReplayError>
where
    P: Processor<CHANNELS>,
    S: LineSink,
{
    let computed = generated::checksum();
    if computed != GENERATED_CRC32 {
        return Err(ReplayError::Checksum {
            computed,
            expected: GENERATED_CRC32,
        });
    }
    let samples = u32::try_from(TRACE.len()).map_err(|_| ReplayError::TraceTooLong)?;
    let channels =
        first_channels::<CHANNELS>().ok_or(ReplayError::Config(LoopConfigError::ChannelCount {
            count: CHANNELS,
        }))?;
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
    line.push_str("# clampwise-fw,trace=");
    line.push_str(TRACE_NAME);
    line.key_value("samples", i64::from(samples));
    line.key_value("channels", i64::try_from(CHANNELS).unwrap_or(i64::MAX));
    line.key_value("period_ns", i64::from(SAMPLE_PERIOD_NS));
    line.key_hex32("generated_crc32", GENERATED_CRC32);
    sink.emit(line.as_bytes());

    let clock = TraceClock::new(SAMPLE_PERIOD_NS);
    let ports = Ports {
        adc: TraceAdc::new(&clock, &TRACE),
        fault: StubPin::new(),
        warning: StubPin::new(),
        delay: TraceDelay::new(&clock),
        speeds: TraceSpeeds::new(&clock, &TRACE),
    };
    let mut app = ControlLoop::new(ports, processor, config);
    app.write_header(sink);
    let summary = app.run(samples, sink);
    let (ports, _) = app.release();

    let mut line = Line::new();
    line.push_str("end");
    summary.write_fields(&mut line);
    line.key_value("fault_pin_changes", i64::from(ports.fault.changes()));
    line.key_value("warning_pin_changes", i64::from(ports.warning.changes()));
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

    #[derive(Default)]
    struct Collect(Vec<String>);
    impl LineSink for Collect {
        fn emit(&mut self, line: &[u8]) {
            self.0.push(String::from_utf8(line.to_vec()).unwrap());
        }
    }

    #[test]
    fn replay_counts_match_the_planted_faults_of_the_trace() {
        let mut out = Collect::default();
        let summary = replay(demo_processor().unwrap(), &mut out).unwrap();
        assert_eq!(summary.samples as usize, TRACE.len());
        assert_eq!(out.0.len(), TRACE.len() + 4);

        // Independent tally straight from the trace cells.
        let count = |want: fn(&TraceCell) -> bool| {
            TRACE
                .iter()
                .flat_map(|s| s.counts.iter())
                .filter(|c| want(c))
                .count() as u32
        };
        let idx = |f: AdcFault| summary.adc_faults[f.index()];
        assert_eq!(
            idx(AdcFault::NotReady),
            count(|c| *c == TraceCell::NotReady)
        );
        assert_eq!(
            idx(AdcFault::Overrange),
            count(|c| *c == TraceCell::Overrange)
        );
        assert_eq!(idx(AdcFault::Crc), count(|c| *c == TraceCell::BadCrc));
        assert_eq!(
            idx(AdcFault::ReferenceMissing),
            count(|c| *c == TraceCell::ReferenceMissing)
        );
        let lost = TRACE
            .iter()
            .filter(|s| s.counts.iter().all(|c| !matches!(c, TraceCell::Counts(_))))
            .count() as u32;
        assert_eq!(summary.force_lost_samples, lost);
        assert_eq!(summary.speed_errors, 0);
        assert_eq!(summary.truncated_lines, 0);
        assert_eq!(
            summary.warning_samples, 0,
            "the interim step has no fade model"
        );
    }

    #[test]
    fn fault_output_follows_lost_force_with_release_delay() {
        let mut out = Collect::default();
        replay(demo_processor().unwrap(), &mut out).unwrap();
        let rows: Vec<Vec<i64>> = out
            .0
            .iter()
            .filter(|l| l.starts_with("est,"))
            .map(|l| l.split(',').skip(1).map(|f| f.parse().unwrap()).collect())
            .collect();
        let release = usize::from(FAULT_RELEASE_SAMPLES);
        for (k, row) in rows.iter().enumerate() {
            // Fault asserted iff a lost-force sample (or the start) lies within the last
            // `release` samples, this one included.
            let from = k.saturating_sub(release - 1);
            let recent_loss = k < release - 1
                || TRACE[from..=k]
                    .iter()
                    .any(|s| s.counts.iter().all(|c| !matches!(c, TraceCell::Counts(_))));
            assert_eq!(row[2] == 1, recent_loss, "sample {k}: {row:?}");
        }
    }

    #[test]
    fn header_names_every_field() {
        let mut out = Collect::default();
        replay(demo_processor().unwrap(), &mut out).unwrap();
        let names = out.0[2].split(',').count();
        for l in out.0.iter().filter(|l| l.starts_with("est,")) {
            assert_eq!(l.split(',').count(), names, "{l}");
        }
        assert!(out.0[0].contains("not a certified safety function"));
        assert!(out.0.last().unwrap().starts_with("end,samples="));
    }
}
