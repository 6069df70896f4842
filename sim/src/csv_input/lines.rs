//! A buffered line splitter over any reader: the fast path of [`super::CsvIn`].
//!
//! A plain numeric log is lines of unquoted fields; finding each line end with `memchr` and
//! each separator in the line costs a few instructions a byte, against a full CSV state machine's
//! twenty. The caller hands a line with anything else in it (a quote, a lone carriage return) to
//! the `csv` crate, from that line on, through [`LineReader::into_rest`].

use std::io::{self, Read};

/// Bytes asked of the source at a time.
const CHUNK: usize = 1 << 16;

/// Lines of a byte stream, their terminators (`\n`, or `\r\n`) taken off.
pub(super) struct LineReader {
    source: Box<dyn Read + Send>,
    buf: Vec<u8>,
    /// Start of the next line in `buf`.
    start: usize,
    /// End of the bytes read into `buf`.
    end: usize,
    /// Where the search for the next `\n` resumes (≥ `start`), so a line split across reads is
    /// not searched twice.
    scanned: usize,
    /// Bytes of the stream before `buf[0]`.
    base: u64,
    /// 1-based line number of the next line.
    next_line: u64,
    /// The bytes of the line last returned, in `buf`.
    current: std::ops::Range<usize>,
    eof: bool,
}

/// One line: its number, its bytes without the terminator, and whether it had one.
pub(super) struct Line {
    pub number: u64,
    /// Where the line starts in the stream (bytes), for handing over to the `csv` reader.
    pub offset: u64,
    pub terminated: bool,
}

impl LineReader {
    /// Lines of `first` (bytes already read from the stream, starting at stream byte `offset`,
    /// line `line`) and then of `source`.
    pub(super) fn new(
        source: Box<dyn Read + Send>,
        first: Vec<u8>,
        offset: u64,
        line: u64,
    ) -> Self {
        let end = first.len();
        Self {
            source,
            buf: first,
            start: 0,
            end,
            scanned: 0,
            base: offset,
            next_line: line,
            current: 0..0,
            eof: false,
        }
    }

    /// Bytes of the stream consumed so far (up to the start of the next line).
    pub(super) fn position(&self) -> u64 {
        self.base + self.start as u64
    }

    /// The next line, or `None` at the end of the stream; its bytes from [`Self::current`].
    pub(super) fn next_line(&mut self) -> io::Result<Option<Line>> {
        loop {
            let unscanned = self.buf.get(self.scanned..self.end).unwrap_or_default();
            if let Some(i) = memchr::memchr(b'\n', unscanned) {
                let nl = self.scanned + i;
                let range = self.start..strip_cr(&self.buf, self.start, nl);
                return Ok(Some(self.take(range, nl + 1, true)));
            }
            self.scanned = self.end;
            if self.eof {
                if self.start == self.end {
                    return Ok(None);
                }
                let range = self.start..strip_cr(&self.buf, self.start, self.end);
                return Ok(Some(self.take(range, self.end, false)));
            }
            self.fill()?;
        }
    }

    /// The bytes of the line [`Self::next_line`] returned last, without its terminator.
    pub(super) fn current(&self) -> &[u8] {
        self.buf.get(self.current.clone()).unwrap_or_default()
    }

    fn take(&mut self, range: std::ops::Range<usize>, next: usize, terminated: bool) -> Line {
        let line = Line {
            number: self.next_line,
            offset: self.base + self.start as u64,
            terminated,
        };
        self.next_line += 1;
        self.start = next;
        self.scanned = next;
        self.current = range;
        line
    }

    /// Read more of the source behind the bytes not yet returned, moving them to the front.
    fn fill(&mut self) -> io::Result<()> {
        if self.start > 0 {
            self.buf.copy_within(self.start..self.end, 0);
            self.base += self.start as u64;
            self.end -= self.start;
            self.scanned -= self.start;
            self.start = 0;
        }
        // Grow only for a line longer than the buffer: memory follows the longest line.
        if self.buf.len() < self.end + CHUNK {
            self.buf.resize(self.end + CHUNK, 0);
        }
        let room = self.buf.get_mut(self.end..).unwrap_or_default();
        let n = loop {
            match self.source.read(room) {
                Ok(n) => break n,
                Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
                Err(e) => return Err(e),
            }
        };
        if n == 0 {
            self.eof = true;
        }
        self.end += n;
        Ok(())
    }

    /// The stream from byte `offset` (a line start not yet consumed past, as
    /// [`Line::offset`] gives it) to its end, for another reader.
    pub(super) fn into_rest(self, offset: u64) -> Box<dyn Read + Send> {
        let from = usize::try_from(offset.saturating_sub(self.base)).unwrap_or(usize::MAX);
        let held = self.buf.get(from..self.end).unwrap_or_default().to_vec();
        Box::new(io::Cursor::new(held).chain(self.source))
    }
}

/// End of a line's bytes `buf[start..end]` without one trailing carriage return.
fn strip_cr(buf: &[u8], start: usize, end: usize) -> usize {
    if end > start && buf.get(end - 1) == Some(&b'\r') {
        end - 1
    } else {
        end
    }
}
