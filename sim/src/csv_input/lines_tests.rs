//! The line splitter against the `csv` crate: the same rows, lines, cells, errors and
//! positions for any mix of plain rows, blank lines, comments, CRLF, quoted cells, lone carriage
//! returns, short and long rows and a last line without a terminator.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing)]

use super::*;
use proptest::prelude::*;
use std::sync::atomic::{AtomicU64, Ordering};

/// Every row (line, cells) or error (as text) and the unterminated-line report.
fn read_all(path: &str, lines: bool) -> Rows {
    let mut r = CsvIn::open_reading(path, DialectChoice::default(), lines).unwrap();
    let mut out = Vec::new();
    // A field-count error consumes its row, so reading goes on; a bounded number of rounds
    // keeps a broken reader from looping.
    for _ in 0..10_000 {
        match r.next_row() {
            Ok(None) => break,
            Ok(Some(row)) => {
                let cells = (0..row.bounds.len())
                    .map(|c| row.bytes(c).to_vec())
                    .collect();
                out.push(Ok((row.line, cells)));
            }
            Err(e) => out.push(Err(e.to_string())),
        }
    }
    (out, r.unterminated_last_line())
}

type Rows = (Vec<Result<(u64, Vec<Vec<u8>>), String>>, Option<u64>);

/// The rows without their line numbers, the errors without their location prefix.
fn unlocated(rows: Rows) -> Vec<Result<Vec<Vec<u8>>, String>> {
    rows.0
        .into_iter()
        .map(|r| match r {
            Ok((_, cells)) => Ok(cells),
            Err(m) => Err(m.rsplit(": ").next().unwrap_or_default().to_string()),
        })
        .collect()
}

static FILES: AtomicU64 = AtomicU64::new(0);

fn temp_file(text: &[u8]) -> String {
    let n = FILES.fetch_add(1, Ordering::Relaxed);
    let path = std::env::temp_dir().join(format!("clampwise-lines-{}-{n}.csv", std::process::id()));
    std::fs::write(&path, text).unwrap();
    path.display().to_string()
}

fn cell() -> impl Strategy<Value = String> {
    prop_oneof![
        4 => "-?[0-9]{1,6}(\\.[0-9]{1,4})?",
        1 => Just(String::new()),
        1 => Just(" 7 ".to_string()),
        1 => Just("\"1.5\"".to_string()),
        1 => Just("\"a,b\"".to_string()),
        1 => Just("x#y".to_string()),
    ]
}

fn line() -> impl Strategy<Value = String> {
    prop_oneof![
        8 => prop::collection::vec(cell(), 1..5).prop_map(|c| c.join(",")),
        1 => Just(String::new()),
        1 => Just("# a comment, with a comma".to_string()),
        1 => Just("1,\r2,3".to_string()),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]
    #[test]
    fn the_line_splitter_reads_what_the_csv_crate_reads(
        body in prop::collection::vec((line(), prop::bool::ANY), 0..12),
        terminated in prop::bool::ANY,
    ) {
        let mut text = String::from("# preamble\nt_s,b,c\n");
        let n = body.len();
        // The csv crate reads a last comment line with no terminator as a row; the line
        // splitter skips it as a comment. Not compared.
        let terminated = terminated || body.last().is_some_and(|(l, _)| l.starts_with('#'));
        for (i, (l, crlf)) in body.iter().enumerate() {
            text.push_str(l);
            if i + 1 < n || terminated {
                text.push_str(if *crlf { "\r\n" } else { "\n" });
            }
        }
        let path = temp_file(text.as_bytes());
        let fast = read_all(&path, true);
        let reference = read_all(&path, false);
        std::fs::remove_file(&path).ok();
        // The csv crate places a record that follows a CRLF or a blank line on the line before
        // it (see `crlf_lines_are_located_on_their_own_line`): the two agree on all but the
        // locations, and the line splitter's locations are checked against the lines written.
        let located: Vec<u64> = fast
            .0
            .iter()
            .map(|r| match r {
                Ok((line, _)) => *line,
                Err(m) => m.split(": line ").nth(1).and_then(|t| t.split(',').next()).and_then(|n| n.parse().ok()).unwrap_or(0),
            })
            .collect();
        // Line 3 is the first body line; rows up to the first line the csv crate takes over.
        let written: Vec<u64> = body
            .iter()
            .take_while(|(l, _)| !l.contains('"') && !l.contains('\r'))
            .enumerate()
            .filter(|(_, (l, _))| !l.is_empty() && !l.starts_with('#'))
            .map(|(i, _)| i as u64 + 3)
            .collect();
        prop_assert_eq!(&located[..written.len()], &written[..], "{:?}", text);
        prop_assert_eq!(unlocated(fast), unlocated(reference), "{:?}", text);
    }
}

#[test]
fn a_line_longer_than_the_buffer_and_a_switch_far_into_the_file() {
    // [practice] lines of any length; the hand-over to the csv crate keeps line numbers.
    let mut text = String::from("t_s,b\n");
    text.push_str(&format!("{},2\n", "1".repeat(200_000)));
    for i in 0..5000 {
        text.push_str(&format!("{i}.5,{i}\n"));
    }
    text.push_str("\"9\",9\n7,7\n");
    let path = temp_file(text.as_bytes());
    let fast = read_all(&path, true);
    let reference = read_all(&path, false);
    std::fs::remove_file(&path).ok();
    assert_eq!(fast.0.len(), 5003);
    assert_eq!(fast, reference);
}

#[test]
fn crlf_lines_are_located_on_their_own_line() {
    // [calc] lines counted by hand: header 1, rows 2, 3 and 4. The csv crate alone says 1, 2
    // and 3 for these rows (it starts a record after a CRLF at the line feed, before counting
    // it); the line splitter, which reads every plain file, names the right lines.
    let path = temp_file(b"t_s,b\r\n1,2\r\n3\r\n5,6\r\n");
    let (rows, _) = read_all(&path, true);
    std::fs::remove_file(&path).ok();
    assert_eq!(rows.len(), 3);
    assert_eq!(rows[0], Ok((2, vec![b"1".to_vec(), b"2".to_vec()])));
    assert!(
        rows[1]
            .as_ref()
            .is_err_and(|m| m.contains("line 3, column 2")),
        "{rows:?}"
    );
    assert_eq!(rows[2], Ok((4, vec![b"5".to_vec(), b"6".to_vec()])));
}
