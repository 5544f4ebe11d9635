//! Parsing a large file's datasets 58 on several threads, with the result
//! of the one-thread parse, bit for bit and remark for remark.
//!
//! The file is cut at K − 1 guessed dataset starts: from K − 1 evenly spaced
//! byte offsets, the first place where an end tag `-1` is followed by a
//! start tag `-1` and a dataset number 58 (ASCII or 58b). Each guessed start
//! gets a thread that parses datasets 58 from there, assuming the line
//! number 1 + the line feeds before it, until it passes the next guess, meets
//! any other dataset (those can change what follows: units, geometry) or an
//! error (the walk on the main thread parses that dataset itself and reports
//! the error with its place, as the one-thread parse would).
//!
//! The walk in `scan.rs` parses from the start as ever; where it arrives at
//! a segment's start **at the same byte and the same line number**, it takes
//! the segment's datasets and remarks and jumps to its end. A cursor is only
//! its byte offset and line number, and a dataset 58 is parsed from the
//! cursor and nothing else, so the taken datasets are the ones the walk
//! would have parsed (the units of a dataset 164 before them are applied
//! when they are taken, as to the walk's own). A guess that was not a
//! dataset start (bytes in a 58b payload that look like tags) is never
//! arrived at, and a line count that differs (a lone CR ends a text line,
//! and is not counted here) does not match: the walk tells that segment's
//! thread to stop, without waiting for it, and parses the part itself.
//!
//! Natively only (the page's WebAssembly has one thread), for files of at
//! least [`MIN_SEGMENT`] bytes per thread, and only where the guessed start
//! is an ASCII dataset 58: 58b is read too fast for a second thread to pay.

use super::records::Dataset58;
use super::scan::{next_head, Head};
use super::text::{count_lf, Cursor};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::thread::{Scope, ScopedJoinHandle};

/// Bytes per thread below which a file is parsed on one thread (the
/// threads' start costs less than a millisecond; a segment of this size
/// takes about 40 ms to parse).
pub(super) const MIN_SEGMENT: usize = 8 << 20;

/// At most this many segments (threads), whatever the machine has.
const MAX_SEGMENTS: usize = 8;

/// How many segments a file of `len` bytes is parsed in: the machine's
/// threads, fewer when the file is small, 1 meaning the walk alone.
pub(super) fn count(len: usize) -> usize {
    if cfg!(target_arch = "wasm32") {
        return 1;
    }
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    threads.min(MAX_SEGMENTS).min(len / MIN_SEGMENT).max(1)
}

/// Datasets 58 parsed from a guessed start.
pub(super) struct Segment {
    /// byte offset and line number where the parse started
    pub(super) start: usize,
    pub(super) start_line: usize,
    pub(super) datasets: Vec<Dataset58>,
    /// the remarks their parse made, in order
    pub(super) remarks: Vec<String>,
    /// byte offset and line number after the last dataset's end tag
    pub(super) end: usize,
    pub(super) end_line: usize,
    /// the line of the last dataset's end tag
    pub(super) last_end: Option<usize>,
}

/// Between the walk and one segment's thread: the walk tells it to stop;
/// it tells the walk the line number it assumed (0 until counted), so that
/// a segment the walk cannot take is stopped, not waited for.
#[derive(Default)]
pub(super) struct Signal {
    stop: AtomicBool,
    line: AtomicUsize,
}

impl Signal {
    /// One signal per segment of a parse in `k`.
    pub(super) fn many(k: usize) -> Vec<Signal> {
        (0..k).map(|_| Signal::default()).collect()
    }
}

/// The segments being parsed, in file order.
pub(super) struct Plan<'scope> {
    /// each segment's start, its signal and its thread
    pending: std::collections::VecDeque<(usize, &'scope Signal, ScopedJoinHandle<'scope, Segment>)>,
    signals: &'scope [Signal],
}

impl<'scope> Plan<'scope> {
    /// No segments: the walk parses everything.
    pub(super) fn none() -> Plan<'scope> {
        Plan {
            pending: Default::default(),
            signals: &[],
        }
    }

    /// Guess k − 1 dataset starts in `bytes` and start a thread on each,
    /// with one of `signals` ([`Signal::many`]).
    pub(super) fn start<'env>(
        sc: &'scope Scope<'scope, 'env>,
        bytes: &'env [u8],
        file: &'env str,
        k: usize,
        signals: &'env [Signal],
    ) -> Plan<'scope> {
        let mut starts: Vec<usize> = Vec::with_capacity(k);
        for i in 1..k {
            let from = (bytes.len() / k) * i;
            let after = starts.last().map_or(0, |&s| s + 1);
            // a 58b start is not taken: 58b is read at about 1 GB/s, where a
            // second parsing thread (its page faults beside the hash
            // thread's work) cost more than it saved: 0.20 s → 0.23–0.30 s
            // on the benchmark's 81 MB file
            if let Some((s, false)) = guess_start(bytes, from.max(after)) {
                starts.push(s);
            }
        }
        let mut pending = std::collections::VecDeque::new();
        for (i, &s) in starts.iter().enumerate() {
            let stop = starts.get(i + 1).copied().unwrap_or(usize::MAX);
            let Some(sig) = signals.get(i) else { break };
            let h = sc.spawn(move || parse_from(bytes, file, s, stop, sig));
            pending.push_back((s, sig, h));
        }
        Plan { pending, signals }
    }

    /// The segment that starts exactly at byte `pos` on line `line`, when
    /// one was parsed from there and holds datasets. Segments starting
    /// before `pos` (the walk passed them), or at `pos` on another line, are
    /// told to stop and dropped.
    pub(super) fn take_at(&mut self, pos: usize, line: usize) -> Option<Segment> {
        loop {
            let &(s, sig, _) = self.pending.front()?;
            if s > pos {
                return None;
            }
            let assumed = sig.line.load(Ordering::Acquire);
            if s < pos || (assumed != 0 && assumed != line) {
                sig.stop.store(true, Ordering::Relaxed);
                self.pending.pop_front();
                continue;
            }
            let (_, _, h) = self.pending.pop_front()?;
            // a thread that panicked (it cannot on bytes) gives nothing:
            // the walk parses its part itself
            let seg = h.join().ok()?;
            #[cfg(test)]
            if seg.start_line == line && !seg.datasets.is_empty() {
                tests::TAKEN.fetch_add(1, Ordering::Relaxed);
            }
            return (seg.start == pos && seg.start_line == line && !seg.datasets.is_empty())
                .then_some(seg);
        }
    }
}

impl Drop for Plan<'_> {
    /// The walk ended (done or an error): threads still parsing stop.
    fn drop(&mut self) {
        for sig in self.signals {
            sig.stop.store(true, Ordering::Relaxed);
        }
    }
}

/// The first guessed dataset start at or after the line following byte
/// `from`: a line `-1` (the start tag) followed by a dataset number 58; the
/// start tag's byte offset, and true for 58b. (The end tag before it may
/// share its line with a 58b payload, so it is not looked at.)
fn guess_start(bytes: &[u8], from: usize) -> Option<(usize, bool)> {
    let rest = bytes.get(from..)?;
    let first = from + rest.iter().position(|&b| b == b'\n')? + 1;
    let mut c = Cursor {
        b: bytes,
        pos: first,
        line: 1,
    };
    let mut tag: Option<usize> = None;
    loop {
        let at = c.pos;
        let l = c.next_line()?;
        let t = l.bytes.trim_ascii();
        let is58 = t.starts_with(b"58") && matches!(t.get(2), None | Some(b' ' | b'b' | b'B'));
        if let (Some(s), true) = (tag, is58) {
            return Some((s, t.len() > 2 && t[2] != b' '));
        }
        tag = (t == b"-1").then_some(at);
    }
}

/// Parse datasets 58 from byte `start` (assumed line 1 + the line feeds
/// before it) until the cursor reaches `stop`, another dataset, an error,
/// or `sig` says stop. The line number assumed is told through `sig` first.
fn parse_from(bytes: &[u8], file: &str, start: usize, stop: usize, sig: &Signal) -> Segment {
    let start_line = 1 + count_lf(&bytes[..start.min(bytes.len())]);
    sig.line.store(start_line, Ordering::Release);
    let mut c = Cursor {
        b: bytes,
        pos: start,
        line: start_line,
    };
    let mut seg = Segment {
        start,
        start_line,
        datasets: Vec::new(),
        remarks: Vec::new(),
        end: start,
        end_line: start_line,
        last_end: None,
    };
    let mut any_text = false;
    while c.pos < stop && !sig.stop.load(Ordering::Relaxed) {
        let mut remarks = Vec::new();
        let Ok(Some(Head {
            start: ds_start,
            line: h,
            num: 58,
            binary,
        })) = next_head(&mut c, file, seg.last_end, &mut remarks, &mut any_text)
        else {
            break;
        };
        // values copied (a segment is ASCII, where nothing is left in the
        // file; a 58b dataset met on the way is copied as the walk may)
        let Ok(ds) =
            super::parse::parse_58(&mut c, file, ds_start, &h, binary, false, &mut remarks)
        else {
            break;
        };
        seg.datasets.push(ds);
        seg.remarks.append(&mut remarks);
        seg.last_end = Some(c.line.saturating_sub(1));
        seg.end = c.pos;
        seg.end_line = c.line;
    }
    seg
}

#[cfg(test)]
mod tests {
    use super::super::records::{AsciiLayout, Layout};
    use super::super::scan::parse_in;
    use super::super::write::write_with;
    use super::*;
    use crate::frf::{Direction, Dof, FrfSet};
    use crate::units::Quantity;
    use num_complex::Complex64;
    use std::sync::atomic::AtomicUsize;

    /// Segments the walk took (counted so that a test knows the threads'
    /// work was used, not only thrown away).
    pub(super) static TAKEN: AtomicUsize = AtomicUsize::new(0);

    /// 4 × 3 receptances on 300 lines, as ASCII or 58b.
    fn file(layout: Layout) -> Vec<u8> {
        let freqs: Vec<f64> = (0..300).map(|k| 2.0 + 0.5 * k as f64).collect();
        let outs: Vec<Dof> = (1..=4)
            .map(|n| Dof::new("c", &n.to_string(), Direction::Z))
            .collect();
        let ins: Vec<Dof> = (5..=7)
            .map(|n| Dof::new("c", &n.to_string(), Direction::X))
            .collect();
        let mut s = FrfSet::zeros(
            "frame",
            freqs,
            outs,
            ins,
            Quantity::Displacement,
            Quantity::Force,
        );
        for k in 0..300 {
            for i in 0..4 {
                for j in 0..3 {
                    // bytes 10 and 13 (LF, CR) turn up in the 58b payloads
                    let x = (k * 12 + i * 3 + j) as f64;
                    s.set(
                        k,
                        i,
                        j,
                        Complex64::new((x * 0.37).sin() * 1e-6, x.cos() * 1e-7),
                    );
                }
            }
        }
        write_with(std::slice::from_ref(&s), layout).unwrap()
    }

    /// The parse on 1 thread and on k threads: the same datasets and
    /// remarks, or the same error.
    fn same_on_threads(bytes: &[u8]) -> std::result::Result<usize, String> {
        let one = parse_in(bytes, "f.uff", &mut |_| {}, 1, false);
        for k in [2, 3, 5] {
            let many = parse_in(bytes, "f.uff", &mut |_| {}, k, false);
            match (&one, &many) {
                (Ok(a), Ok(b)) => {
                    assert_eq!(a.datasets, b.datasets, "k = {k}");
                    assert_eq!(a.remarks, b.remarks, "k = {k}");
                    assert_eq!(a.units.len(), b.units.len(), "k = {k}");
                }
                (Err(a), Err(b)) => assert_eq!(a.to_string(), b.to_string(), "k = {k}"),
                _ => panic!("k = {k}: {:?} against {:?}", one.is_ok(), many.is_ok()),
            }
        }
        one.map(|p| p.datasets.len()).map_err(|e| e.to_string())
    }

    /// A segment parsed from the guessed start in the middle gives the
    /// one-thread parse's datasets from there, on the same lines.
    fn middle_segment_matches(bytes: &[u8]) {
        let all = parse_in(bytes, "f.uff", &mut |_| {}, 1, false)
            .unwrap()
            .datasets;
        let (s, _) = guess_start(bytes, bytes.len() / 2).unwrap();
        let seg = parse_from(bytes, "f.uff", s, usize::MAX, &Signal::default());
        assert!(!seg.datasets.is_empty());
        let first = all
            .iter()
            .position(|d| d.line == seg.start_line)
            .expect("the segment starts at a dataset's start tag");
        assert_eq!(&all[first..], &seg.datasets[..]);
        assert_eq!(seg.end, bytes.len());
    }

    // common practice: a parallel parse must equal the sequential one
    #[test]
    fn ascii_lf_crlf_and_58b_parse_alike_on_several_threads() {
        let ascii = file(Layout::Ascii(AsciiLayout::Standard));
        let bin = file(Layout::Binary);
        let crlf: Vec<u8> = String::from_utf8(ascii.clone())
            .unwrap()
            .replace('\n', "\r\n")
            .into_bytes();
        assert!(bin.contains(&b'\r') && bin.contains(&b'\n'));
        // lone CRs end the lines of the first third: the line a segment
        // assumes (1 + the LFs before it) is not the walk's, and the segment
        // is stopped and parsed again by the walk
        let mut mixed = ascii.clone();
        let third = mixed.len() / 3;
        for b in &mut mixed[..third] {
            if *b == b'\n' {
                *b = b'\r';
            }
        }
        assert_eq!(same_on_threads(&mixed), Ok(12));
        for (f, text) in [(&ascii, true), (&bin, false), (&crlf, true)] {
            let before = TAKEN.load(Ordering::Relaxed);
            assert_eq!(same_on_threads(f), Ok(12));
            // (58b is parsed on one thread, see Plan::start)
            if text {
                assert!(TAKEN.load(Ordering::Relaxed) >= before + 3);
            }
            middle_segment_matches(f);
        }
    }

    #[test]
    fn units_lone_tags_blank_lines_and_errors_alike_on_several_threads() {
        let units = "    -1\n   164\n         1     SI (meter newton)         2\n   1.0D+00   1.0D+00   1.0D+00\n   2.7315D+02\n    -1\n";
        for bytes in [
            file(Layout::Ascii(AsciiLayout::Standard)),
            file(Layout::Binary),
        ] {
            let text = bytes.clone();
            let (cut, _) = guess_start(&text, text.len() / 2).unwrap();
            // a dataset 164 where the second thread would start
            let mut f = text[..cut].to_vec();
            f.extend_from_slice(units.as_bytes());
            f.extend_from_slice(&text[cut..]);
            assert_eq!(same_on_threads(&f), Ok(12));
            // a lone tag and blank lines there
            let mut f = text[..cut].to_vec();
            f.extend_from_slice(b"\n   \n    -1\n");
            f.extend_from_slice(&text[cut..]);
            assert_eq!(same_on_threads(&f), Ok(12));
            // an error in the last dataset (its end tag spoilt): the same
            // message and place
            let mut f = text.clone();
            let end = f.windows(6).rposition(|w| w == b"    -1").unwrap();
            f[end + 5] = b'7';
            let r = same_on_threads(&f);
            assert!(r.is_err(), "{r:?}");
            // a file cut inside a dataset in the second half
            assert!(same_on_threads(&text[..text.len() - 50]).is_err());
        }
    }

    #[test]
    fn a_start_is_guessed_after_an_end_tag_and_before_a_58() {
        let f = b"    -1\n    58\nx\n    -1\n    -1\n    58b\ny\n    -1\n";
        assert_eq!(guess_start(f, 0), Some((23, true)));
        assert_eq!(&f[23..29], b"    -1");
        // a 151 after the tags is not a guess
        let g = b"    -1\n  151\nx\n    -1\n    -1\n   151\n";
        assert_eq!(guess_start(g, 0), None);
        let h = b"    -1\n    58\nx\n    -1\n    -1\n    58  \ny\n    -1\n";
        assert_eq!(guess_start(h, 0), Some((23, false)));
        // nothing after the last line feed
        assert_eq!(guess_start(f, f.len() - 1), None);
    }
}
