//! What the criterion bench, the callgrind binary and the Cortex-M counter all run: the four
//! step variants, each behind a function that is never inlined (one call per sample for
//! callgrind and the QEMU counter), over the same seeded input sequence. The host runs keep
//! [`INPUTS`] pre-generated samples and reset the state to its start whenever the sequence
//! wraps, so the lining does not heat without end over millions of samples and every pass sees
//! the same operating points.

use clampwise_core::config::Tables;
use clampwise_core::estimator::{Estimate, Estimator, Inputs};

use crate::baseline::{PlainFull, PlainMinimal};
use crate::plain_f32::{PlainEstimate, PlainEstimator, PlainInputs};
use crate::workload::Workload;

/// Seed of the bench input sequence.
pub const SEED: u64 = 0x00C1_A4B5_7E1A;
/// Pre-generated inputs per pass on the host (a power of two).
pub const INPUTS: usize = 4096;

/// The four variants, in the order the reports list them.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Variant {
    /// Fixed point, fully featured device.
    FixedFull,
    /// Plain f32, fully featured device.
    F32Full,
    /// Fixed point, minimal device.
    FixedMinimal,
    /// Plain f32, minimal device.
    F32Minimal,
}

impl Variant {
    /// Every variant.
    pub const ALL: [Self; 4] = [
        Self::FixedFull,
        Self::F32Full,
        Self::FixedMinimal,
        Self::F32Minimal,
    ];

    /// Name used on command lines and in reports.
    pub const fn name(self) -> &'static str {
        match self {
            Self::FixedFull => "fixed-full",
            Self::F32Full => "f32-full",
            Self::FixedMinimal => "fixed-minimal",
            Self::F32Minimal => "f32-minimal",
        }
    }

    /// Parse a [`Variant::name`].
    pub fn parse(s: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|v| v.name() == s)
    }
}

/// Fill `out` with the first `out.len()` samples of the bench sequence, as `make` builds them.
pub fn fill<T>(out: &mut [T], make: impl Fn(&crate::workload::Sample) -> T) {
    let mut w = Workload::new(SEED);
    for o in out.iter_mut() {
        *o = make(&w.next_sample());
    }
}

/// One step of the fully featured fixed-point device. Not inlined, so that callgrind and the
/// QEMU counter see one call per sample.
#[inline(never)]
pub fn step_fixed_full(
    est: &mut Estimator<'_, Tables<3, 3, 6, 5>, 3>,
    inputs: &Inputs<3>,
) -> Estimate {
    est.step(inputs)
}

/// One step of the minimal fixed-point device (not inlined).
#[inline(never)]
pub fn step_fixed_minimal(
    est: &mut Estimator<'_, Tables<2, 2, 3, 3>, 1>,
    inputs: &Inputs<1>,
) -> Estimate {
    est.step(inputs)
}

/// One step of the fully featured f32 baseline (not inlined).
#[inline(never)]
pub fn step_f32_full(
    est: &mut PlainEstimator<3>,
    cfg: &PlainFull,
    inputs: &PlainInputs<3>,
) -> PlainEstimate {
    est.step(cfg, inputs)
}

/// One step of the minimal f32 baseline (not inlined).
#[inline(never)]
pub fn step_f32_minimal(
    est: &mut PlainEstimator<1>,
    cfg: &PlainMinimal,
    inputs: &PlainInputs<1>,
) -> PlainEstimate {
    est.step(cfg, inputs)
}
