//! Where the output lines go: stdout on the host, semihosting on a target.

/// Capacity of one output line.
pub const LINE_CAPACITY: usize = 200;

/// One output line, formatted in place (`core::fmt::Write`); longer text is cut off.
pub type Line = heapless::String<LINE_CAPACITY>;

/// A receiver of output lines (without the line end).
pub trait Sink {
    /// Emit one line.
    fn emit(&mut self, line: &str);
}
