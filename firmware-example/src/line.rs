//! One output line of integer fields, formatted without `core::fmt`.
//!
//! Host and target format their lines with this same code, so a difference between the QEMU
//! output and the host replay can only come from the numbers. Formatting by hand (rather than
//! `write!`) keeps `core::fmt`, and its panic paths, out of the firmware image: the link-time
//! panic check (see `panic-check.sh`) covers the whole image, printing included.
//!
//! ```
//! use clampwise_firmware_example::line::Line;
//! let mut line = Line::new();
//! line.push_str("est");
//! line.field(-42);
//! line.field(i64::MIN);
//! assert_eq!(line.as_bytes(), b"est,-42,-9223372036854775808");
//! assert!(!line.is_truncated());
//! ```

/// Capacity of a line in bytes: a sample line with four channels and a dozen 64-bit fields fits.
pub const LINE_CAPACITY: usize = 256;

/// A bounded line buffer. Text that does not fit is dropped and the line marked truncated
/// (never a panic, never an allocation).
#[derive(Clone, Debug, Default)]
pub struct Line {
    buf: heapless::Vec<u8, LINE_CAPACITY>,
    truncated: bool,
}

impl Line {
    /// An empty line.
    pub const fn new() -> Self {
        Self {
            buf: heapless::Vec::new(),
            truncated: false,
        }
    }

    /// Append raw text.
    pub fn push_str(&mut self, s: &str) {
        self.push_bytes(s.as_bytes());
    }

    fn push_bytes(&mut self, bytes: &[u8]) {
        if self.buf.extend_from_slice(bytes).is_err() {
            self.truncated = true;
        }
    }

    /// Append a signed decimal integer.
    pub fn push_int(&mut self, value: i64) {
        // 20 digits hold u64::MAX; the sign goes in front.
        let mut digits = [0u8; 20];
        let mut n = value.unsigned_abs();
        let mut start = digits.len();
        for slot in digits.iter_mut().rev() {
            // The remainder is below 10, so the narrowing is exact.
            *slot = b'0' + (n % 10) as u8;
            n /= 10;
            start -= 1;
            if n == 0 {
                break;
            }
        }
        if value < 0 {
            self.push_bytes(b"-");
        }
        self.push_bytes(digits.get(start..).unwrap_or(&[]));
    }

    /// Append `,` and a signed decimal integer.
    pub fn field(&mut self, value: i64) {
        self.push_bytes(b",");
        self.push_int(value);
    }

    /// Append a lone `,`: a field with no value (an estimate that has none, e.g. no torque
    /// while holding).
    pub fn empty_field(&mut self) {
        self.push_bytes(b",");
    }

    /// Append `,name=value`.
    pub fn key_value(&mut self, name: &str, value: i64) {
        self.push_bytes(b",");
        self.push_str(name);
        self.push_bytes(b"=");
        self.push_int(value);
    }

    /// Append `,name=0x` and `value` as eight hex digits.
    pub fn key_hex32(&mut self, name: &str, value: u32) {
        self.push_bytes(b",");
        self.push_str(name);
        self.push_bytes(b"=0x");
        let mut hex = [0u8; 8];
        for (i, slot) in hex.iter_mut().enumerate() {
            let shift = 28 - 4 * i;
            // Masked to four bits, so the narrowing is exact.
            let nibble = ((value >> shift) & 0xF) as u8;
            *slot = if nibble < 10 {
                b'0' + nibble
            } else {
                b'a' + nibble - 10
            };
        }
        self.push_bytes(&hex);
    }

    /// The line's bytes, without a line terminator.
    pub fn as_bytes(&self) -> &[u8] {
        &self.buf
    }

    /// True when some text did not fit.
    pub const fn is_truncated(&self) -> bool {
        self.truncated
    }
}

/// Where output lines go: semihosting under QEMU, defmt on a probe, stdout on the host.
pub trait LineSink {
    /// Emit one complete line (`line` carries no terminator).
    fn emit(&mut self, line: &[u8]);
}

/// A sink that drops every line (for runs that only measure).
#[derive(Clone, Copy, Debug, Default)]
pub struct Discard;

impl LineSink for Discard {
    fn emit(&mut self, _line: &[u8]) {}
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn hex_is_lower_case_and_zero_padded() {
        let mut l = Line::new();
        l.push_str("end");
        l.key_hex32("crc", 0x00AB_0F10);
        assert_eq!(l.as_bytes(), b"end,crc=0x00ab0f10");
    }

    #[test]
    fn overflow_truncates_instead_of_panicking() {
        let mut l = Line::new();
        for _ in 0..100 {
            l.field(i64::MAX);
        }
        assert!(l.is_truncated());
        assert!(l.as_bytes().len() <= LINE_CAPACITY);
    }

    proptest! {
        // Reference: the standard library's integer formatting.
        #[test]
        fn decimal_matches_std(v in any::<i64>()) {
            let mut l = Line::new();
            l.push_int(v);
            prop_assert_eq!(core::str::from_utf8(l.as_bytes()).unwrap(), v.to_string());
        }

        #[test]
        fn hex_matches_std(v in any::<u32>()) {
            let mut l = Line::new();
            l.key_hex32("x", v);
            prop_assert_eq!(core::str::from_utf8(l.as_bytes()).unwrap(), format!(",x=0x{v:08x}"));
        }
    }
}
