//! Stack measurement by painting, for the QEMU mode (QEMU models no cycle counter and rustc's
//! stack-size output is nightly-only, so the stack is measured by what it overwrote).
//!
//! * [`paint_free_stack`] fills the RAM between the end of the static data (`__sheap`) and the
//!   current stack pointer with a pattern; [`peak_use`] later finds the lowest overwritten word:
//!   the deepest the whole program reached, measured from the top of RAM (`_stack_start`).
//! * [`StackProbe`] wraps a processing step: before each call it paints a window below the
//!   stack pointer, after it finds how deep the call went. Its maximum over a replay is the
//!   step's stack use, from the call instruction down.
//!
//! Both are exact to the word on the painted region, and blind to a word that happens to be
//! written with the pattern itself (0xA5C3_5A3C, not a value the code stores).
#![allow(unsafe_code)]

use clampwise_firmware_example::app::{Inputs, Processor};

const PAINT: u32 = 0xA5C3_5A3C;
/// Window painted below the call site for each probed step.
const PROBE_WINDOW: usize = 4096;
/// Left unpainted just below the stack pointer of the painting code.
const GUARD: usize = 64;

unsafe extern "C" {
    /// End of .bss/.uninit: the lowest address the stack may grow to (cortex-m-rt link.x).
    static __sheap: u32;
    /// Initial stack pointer, the top of RAM (cortex-m-rt link.x).
    static _stack_start: u32;
}

fn heap_start() -> usize {
    (&raw const __sheap) as usize
}

fn stack_top() -> usize {
    (&raw const _stack_start) as usize
}

#[inline(always)]
fn stack_pointer() -> usize {
    let sp: usize;
    // SAFETY: reads the stack pointer into a register; no memory access.
    unsafe {
        core::arch::asm!("mov {}, sp", out(reg) sp, options(nomem, nostack, preserves_flags))
    };
    sp
}

/// Fill `[low, high)` (word-aligned) with the pattern.
///
/// # Safety
/// The range must be RAM below the current stack pointer that nothing live uses.
#[inline(always)]
unsafe fn paint(low: usize, high: usize) {
    let mut p = low;
    while p < high {
        // SAFETY: per the caller, p is in free RAM below the stack pointer.
        unsafe { core::ptr::write_volatile(p as *mut u32, PAINT) };
        p = p.saturating_add(4);
    }
}

/// The lowest word in `[low, high)` that no longer holds the pattern, or `high`.
fn lowest_touched(low: usize, high: usize) -> usize {
    let mut p = low;
    while p < high {
        // SAFETY: [low, high) is RAM inside the memory map, read as aligned words.
        if unsafe { core::ptr::read_volatile(p as *const u32) } != PAINT {
            return p;
        }
        p = p.saturating_add(4);
    }
    high
}

/// A painted region, `[low, high)`.
#[derive(Clone, Copy, Debug)]
pub struct Painted {
    low: usize,
    high: usize,
}

impl Painted {
    /// Size of the painted region in bytes.
    pub fn len_bytes(&self) -> u32 {
        u32::try_from(self.high.saturating_sub(self.low)).unwrap_or(u32::MAX)
    }
}

/// Paint all free stack RAM. Must be inlined into `main` before anything else runs.
#[inline(always)]
pub fn paint_free_stack() -> Painted {
    let low = (heap_start() + 3) & !3;
    let high = stack_pointer().saturating_sub(GUARD) & !3;
    // SAFETY: between the end of the statics and just below the stack pointer nothing is live
    // (no heap, no other stack); interrupts are not enabled yet.
    unsafe { paint(low, high) };
    Painted { low, high }
}

/// Deepest stack use since [`paint_free_stack`], bytes from the top of RAM.
pub fn peak_use(painted: Painted) -> u32 {
    let touched = lowest_touched(painted.low, painted.high);
    u32::try_from(stack_top().saturating_sub(touched)).unwrap_or(u32::MAX)
}

/// Calls the wrapped step from a freshly painted stack and keeps the deepest use.
#[derive(Debug)]
pub struct StackProbe<P> {
    inner: P,
    deepest: u32,
}

impl<P> StackProbe<P> {
    /// Wrap a processing step.
    pub const fn new(inner: P) -> Self {
        Self { inner, deepest: 0 }
    }

    /// Deepest stack use of one step so far, bytes below the caller's stack pointer (a value of
    /// the probe window's size means the step went at least that deep).
    pub const fn deepest(&self) -> u32 {
        self.deepest
    }
}

/// A real call, so the step's frame lies below the painted stack pointer.
#[inline(never)]
fn call_step<P: Processor<CH>, const CH: usize>(p: &mut P, inputs: &Inputs<CH>) -> P::Estimate {
    p.step(inputs)
}

impl<P: Processor<CH>, const CH: usize> Processor<CH> for StackProbe<P> {
    type Estimate = P::Estimate;

    #[inline(never)]
    fn step(&mut self, inputs: &Inputs<CH>) -> P::Estimate {
        let sp = stack_pointer() & !3;
        let low = sp.saturating_sub(PROBE_WINDOW).max((heap_start() + 3) & !3);
        // SAFETY: below this function's stack pointer nothing is live; painting is inline, so
        // it makes no call that would use that RAM meanwhile.
        unsafe { paint(low, sp) };
        let estimate = call_step(&mut self.inner, inputs);
        let used = u32::try_from(sp - lowest_touched(low, sp)).unwrap_or(u32::MAX);
        self.deepest = self.deepest.max(used);
        estimate
    }
}

clampwise_firmware_example::forward_persist!(StackProbe, inner);
