//! Reading WAV files (RIFF `WAVE`, and RF64 for recordings over 4 GB),
//! block by block.
//!
//! RF64 (EBU Tech 3306): the file starts `RF64`, its 32-bit RIFF size is
//! 0xFFFFFFFF, and the first chunk, `ds64`, holds the 64-bit RIFF size
//! (bytes 20–27), data size (28–35) and sample count (36–43), then a table
//! of other chunks' sizes (skipped). A `data` chunk whose 32-bit size is
//! 0xFFFFFFFF takes the ds64 data size; one that gives another size must
//! agree with it. [`WavReader::with_length`] also checks both sizes against
//! the file's length; each refusal names the field's byte offset.
//!
//! Formats: PCM (tag 1) of 8 (unsigned), 16, 24 and 32 bits, IEEE float
//! (tag 3) of 32 and 64 bits, and `WAVE_FORMAT_EXTENSIBLE` (tag 0xFFFE)
//! whose sub-format GUID is PCM or float, with any number of channels.
//! Chunks other than `fmt ` and `data` (`LIST`, `fact`, ...) are skipped,
//! with the pad byte of odd-sized chunks. Samples come out as f64 at full
//! scale 1: PCM values divided by 2^(bits−1) (8-bit: (v − 128)/128), float
//! values as stored; a channel's calibration (what full scale is in a
//! physical unit) is applied by the caller.
//!
//! [`WavReader`] reads from any `std::io::Read` and keeps only the block
//! asked for, so a recording of any length is read in bounded memory.
//! Errors name the byte offset of the field they are about.

use crate::error::{Error, Result};
use std::io::Read;

/// Sample encoding.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SampleFormat {
    Pcm,
    Float,
}

/// What the header says.
#[derive(Debug, Clone, PartialEq)]
pub struct WavInfo {
    pub format: SampleFormat,
    pub channels: usize,
    pub sample_rate: u32,
    /// Bits per stored sample (container size).
    pub bits: u16,
    /// Bytes per frame (all channels of one instant).
    pub block_align: usize,
    /// Frames in the data chunk.
    pub frames: u64,
    /// Byte offset of the first sample.
    pub data_offset: u64,
    /// `WAVE_FORMAT_EXTENSIBLE` was used.
    pub extensible: bool,
    /// An RF64 file's 64-bit sizes (`None` for RIFF).
    pub ds64: Option<Ds64>,
}

impl WavInfo {
    pub fn duration_s(&self) -> f64 {
        self.frames as f64 / self.sample_rate as f64
    }
    pub fn describe(&self) -> String {
        format!(
            "{} channel(s), {} Hz, {}-bit {}{}, {} frames ({:.3} s)",
            self.channels,
            self.sample_rate,
            self.bits,
            match self.format {
                SampleFormat::Pcm => "PCM",
                SampleFormat::Float => "float",
            },
            if self.extensible { " (extensible)" } else { "" },
            self.frames,
            self.duration_s()
        )
    }
}

/// True when the bytes start like a WAV file (RIFF or RF64).
pub fn looks_like_wav(bytes: &[u8]) -> bool {
    bytes.len() >= 12
        && (&bytes[0..4] == b"RIFF" || &bytes[0..4] == b"RF64")
        && &bytes[8..12] == b"WAVE"
}

/// The 64-bit sizes of an RF64 file's `ds64` chunk (EBU Tech 3306), with
/// the byte offsets of their fields for messages.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Ds64 {
    /// The RIFF size: the file's length less 8.
    pub riff_size: u64,
    pub riff_size_at: u64,
    /// The data chunk's size.
    pub data_size: u64,
    pub data_size_at: u64,
}

/// A WAV file being read.
pub struct WavReader<R: Read> {
    src: R,
    file: String,
    pub info: WavInfo,
    /// Frames read so far.
    done: u64,
    raw: Vec<u8>,
}

fn u16le(b: &[u8], at: usize) -> u16 {
    u16::from_le_bytes([b[at], b[at + 1]])
}
fn u32le(b: &[u8], at: usize) -> u32 {
    u32::from_le_bytes([b[at], b[at + 1], b[at + 2], b[at + 3]])
}

/// The sub-format GUIDs' common tail (KSDATAFORMAT_SUBTYPE_*: the format
/// tag in the first two bytes, then 00 00 00 00 10 00 80 00 00 AA 00 38 9B 71).
const GUID_TAIL: [u8; 14] = [
    0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71,
];

impl<R: Read> WavReader<R> {
    /// Reads the header up to the start of the samples.
    pub fn new(mut src: R, file: &str) -> Result<WavReader<R>> {
        let err = |at: u64, field: &str, msg: String| {
            Error::parse(msg)
                .in_file(file)
                .at_byte(at as usize)
                .field(field.to_string())
        };
        let mut head = [0u8; 12];
        read_exact(&mut src, &mut head, file, 0, "RIFF header")?;
        let rf64 = &head[0..4] == b"RF64";
        if !(&head[0..4] == b"RIFF" || rf64) || &head[8..12] != b"WAVE" {
            return Err(err(
                0,
                "RIFF header",
                "not a WAV file: expected 'RIFF' (or 'RF64') at byte 0 and 'WAVE' at byte 8".into(),
            ));
        }
        let mut pos: u64 = 12;
        let mut ds64: Option<Ds64> = None;
        if rf64 {
            let mut ch = [0u8; 8];
            read_exact(&mut src, &mut ch, file, pos, "ds64 chunk")?;
            let size = u32le(&ch, 4) as u64;
            if &ch[0..4] != b"ds64" || size < 28 {
                return Err(err(
                    pos,
                    "ds64 chunk",
                    format!(
                        "an RF64 file starts with a 'ds64' chunk of 28 bytes or more; found '{}' of {size} bytes",
                        String::from_utf8_lossy(&ch[0..4]).escape_default()
                    ),
                ));
            }
            let mut b = [0u8; 28];
            read_exact(&mut src, &mut b, file, pos + 8, "ds64 chunk")?;
            let u64le = |at: usize| {
                u64::from_le_bytes([
                    b[at],
                    b[at + 1],
                    b[at + 2],
                    b[at + 3],
                    b[at + 4],
                    b[at + 5],
                    b[at + 6],
                    b[at + 7],
                ])
            };
            ds64 = Some(Ds64 {
                riff_size: u64le(0),
                riff_size_at: pos + 8,
                data_size: u64le(8),
                data_size_at: pos + 16,
            });
            // the rest of the chunk (the table of other chunks' sizes) and its pad byte
            let skip = size - 28 + (size & 1);
            let n =
                std::io::copy(&mut (&mut src).take(skip), &mut std::io::sink()).map_err(|e| {
                    Error::io(format!("cannot read: {e}"))
                        .in_file(file)
                        .at_byte((pos + 36) as usize)
                })?;
            if n < skip {
                return Err(err(
                    pos + 4,
                    "ds64 chunk",
                    format!("the 'ds64' chunk declares {size} bytes but the file ends inside it"),
                ));
            }
            pos += 8 + size + (size & 1);
        }
        let mut fmt: Option<(u64, Vec<u8>)> = None;
        loop {
            let mut ch = [0u8; 8];
            let got = read_upto(&mut src, &mut ch, file, pos)?;
            if got < 8 {
                return Err(err(
                    pos,
                    "data chunk",
                    if fmt.is_none() {
                        "the file ends before a 'fmt ' chunk".into()
                    } else {
                        "the file ends before a 'data' chunk".into()
                    },
                ));
            }
            let id = [ch[0], ch[1], ch[2], ch[3]];
            let size = u32le(&ch, 4) as u64;
            let body = pos + 8;
            match &id {
                b"fmt " => {
                    if !matches!(size, 16 | 18 | 40) {
                        return Err(err(
                            pos + 4,
                            "fmt chunk size",
                            format!(
                                "the 'fmt ' chunk declares {size} bytes; expected 16 (PCM), 18 or 40 (extensible)"
                            ),
                        ));
                    }
                    let mut b = vec![0u8; size as usize];
                    read_exact(&mut src, &mut b, file, body, "fmt chunk")?;
                    fmt = Some((body, b));
                    pos = body + size;
                }
                b"data" => {
                    let Some((at, b)) = fmt.take() else {
                        return Err(err(
                            pos,
                            "fmt chunk",
                            "the 'data' chunk comes before any 'fmt ' chunk".into(),
                        ));
                    };
                    let size = match ds64 {
                        None => size,
                        Some(d) if size == 0xFFFF_FFFF || size == d.data_size => d.data_size,
                        Some(d) => {
                            return Err(err(
                                d.data_size_at,
                                "ds64 data size",
                                format!(
                                    "the 'ds64' chunk gives the data size {} bytes, the 'data' chunk (byte {}) {size}; they disagree",
                                    d.data_size,
                                    pos + 4
                                ),
                            ))
                        }
                    };
                    let mut info = parse_fmt(&b, at, body, size, file)?;
                    info.ds64 = ds64;
                    return Ok(WavReader {
                        src,
                        file: file.to_string(),
                        info,
                        done: 0,
                        raw: Vec::new(),
                    });
                }
                _ => {
                    let skip = size + (size & 1);
                    let n = std::io::copy(&mut (&mut src).take(skip), &mut std::io::sink())
                        .map_err(|e| {
                            Error::io(format!("cannot read: {e}"))
                                .in_file(file)
                                .at_byte(body as usize)
                        })?;
                    if n < skip {
                        return Err(err(
                            pos + 4,
                            "chunk size",
                            format!(
                                "chunk '{}' declares {size} bytes but the file ends {n} bytes after its header",
                                String::from_utf8_lossy(&id).escape_default()
                            ),
                        ));
                    }
                    pos = body + skip;
                }
            }
        }
    }

    /// [`WavReader::new`] on a source of `length` bytes: an RF64 file's
    /// ds64 sizes are checked against it (the RIFF size is the length less
    /// 8; the data ends inside the file), each refusal naming the field's
    /// byte offset.
    pub fn with_length(src: R, file: &str, length: u64) -> Result<WavReader<R>> {
        let r = WavReader::new(src, file)?;
        if let Some(d) = r.info.ds64 {
            if d.riff_size.checked_add(8) != Some(length) {
                return Err(Error::parse(format!(
                    "the 'ds64' chunk gives the RIFF size {} bytes (a file of {} bytes), but the file has {length} bytes",
                    d.riff_size,
                    d.riff_size as u128 + 8
                ))
                .in_file(file)
                .at_byte(d.riff_size_at as usize)
                .field("ds64 RIFF size"));
            }
            let end = r.info.data_offset as u128 + d.data_size as u128;
            if end > length as u128 {
                return Err(Error::parse(format!(
                    "the 'ds64' chunk gives the data size {} bytes from byte {}, ending at byte {end}, but the file has {length} bytes",
                    d.data_size, r.info.data_offset
                ))
                .in_file(file)
                .at_byte(d.data_size_at as usize)
                .field("ds64 data size"));
            }
        }
        Ok(r)
    }

    /// Up to `max_frames` frames, interleaved, full scale 1; empty at the end.
    pub fn read_frames(&mut self, max_frames: usize) -> Result<Vec<f64>> {
        let left = self.info.frames - self.done;
        let n = (max_frames as u64).min(left) as usize;
        if n == 0 {
            return Ok(Vec::new());
        }
        let ba = self.info.block_align;
        self.raw.resize(n * ba, 0);
        let at = self.info.data_offset + self.done * ba as u64;
        let got = read_upto(&mut self.src, &mut self.raw, &self.file, at)?;
        if got < n * ba {
            let end = at + got as u64;
            return Err(Error::parse(format!(
                "the data chunk declares {} frames of {ba} bytes from byte {}, but the file ends at byte {end}{}",
                self.info.frames,
                self.info.data_offset,
                if got % ba != 0 { ", inside a frame" } else { "" }
            ))
            .in_file(&self.file)
            .at_byte(end as usize)
            .field("data chunk size"));
        }
        self.done += n as u64;
        let bytes = (self.info.bits / 8) as usize;
        let mut out = Vec::with_capacity(n * self.info.channels);
        for frame in self.raw.chunks_exact(ba) {
            for c in 0..self.info.channels {
                let s = &frame[c * bytes..(c + 1) * bytes];
                out.push(match (self.info.format, bytes) {
                    (SampleFormat::Pcm, 1) => (s[0] as f64 - 128.0) / 128.0,
                    (SampleFormat::Pcm, 2) => i16::from_le_bytes([s[0], s[1]]) as f64 / 32768.0,
                    (SampleFormat::Pcm, 3) => {
                        (i32::from_le_bytes([0, s[0], s[1], s[2]]) >> 8) as f64 / 8388608.0
                    }
                    (SampleFormat::Pcm, _) => {
                        i32::from_le_bytes([s[0], s[1], s[2], s[3]]) as f64 / 2147483648.0
                    }
                    (SampleFormat::Float, 4) => f32::from_le_bytes([s[0], s[1], s[2], s[3]]) as f64,
                    (SampleFormat::Float, _) => {
                        f64::from_le_bytes([s[0], s[1], s[2], s[3], s[4], s[5], s[6], s[7]])
                    }
                });
            }
        }
        Ok(out)
    }

    /// Every remaining frame, channel after channel.
    pub fn read_all(&mut self) -> Result<Vec<Vec<f64>>> {
        let ch = self.info.channels;
        let mut out = vec![Vec::new(); ch];
        loop {
            let block = self.read_frames(1 << 16)?;
            if block.is_empty() {
                return Ok(out);
            }
            for (c, v) in out.iter_mut().enumerate() {
                v.extend(block.iter().skip(c).step_by(ch));
            }
        }
    }
}

fn parse_fmt(b: &[u8], at: u64, data_at: u64, data_size: u64, file: &str) -> Result<WavInfo> {
    let err = |off: u64, field: &str, msg: String| {
        Error::parse(msg)
            .in_file(file)
            .at_byte((at + off) as usize)
            .field(field.to_string())
    };
    let tag = u16le(b, 0);
    let channels = u16le(b, 2) as usize;
    let rate = u32le(b, 4);
    let block_align = u16le(b, 12) as usize;
    let bits = u16le(b, 14);
    if channels == 0 {
        return Err(err(2, "channels", "0 channels; expected at least 1".into()));
    }
    if rate == 0 {
        return Err(err(
            4,
            "sample rate",
            "sample rate 0 Hz; expected a positive rate".into(),
        ));
    }
    let (format, extensible) = match tag {
        1 => (SampleFormat::Pcm, false),
        3 => (SampleFormat::Float, false),
        0xFFFE => {
            if b.len() < 40 {
                return Err(err(
                    0,
                    "format tag",
                    format!(
                        "WAVE_FORMAT_EXTENSIBLE needs a 40-byte 'fmt ' chunk, this one has {}",
                        b.len()
                    ),
                ));
            }
            let valid = u16le(b, 18);
            if valid != 0 && valid != bits {
                return Err(err(
                    18,
                    "valid bits",
                    format!(
                        "{valid} valid bits in {bits}-bit containers are not read; expected equal sizes"
                    ),
                ));
            }
            if b[26..40] != GUID_TAIL {
                return Err(err(24, "sub-format", "unknown sub-format GUID; expected PCM or IEEE float".into()));
            }
            match u16le(b, 24) {
                1 => (SampleFormat::Pcm, true),
                3 => (SampleFormat::Float, true),
                t => {
                    return Err(err(
                        24,
                        "sub-format",
                        format!("sub-format {t}; expected 1 (PCM) or 3 (IEEE float)"),
                    ))
                }
            }
        }
        t => {
            return Err(err(
                0,
                "format tag",
                format!(
                    "format tag {t} (compressed or unknown); expected 1 (PCM), 3 (IEEE float) or 0xFFFE (extensible)"
                ),
            ))
        }
    };
    let ok_bits = match format {
        SampleFormat::Pcm => matches!(bits, 8 | 16 | 24 | 32),
        SampleFormat::Float => matches!(bits, 32 | 64),
    };
    if !ok_bits {
        return Err(err(
            14,
            "bits per sample",
            format!(
                "{bits} bits per sample; expected {}",
                match format {
                    SampleFormat::Pcm => "8, 16, 24 or 32 for PCM",
                    SampleFormat::Float => "32 or 64 for float",
                }
            ),
        ));
    }
    let expect = channels * (bits as usize / 8);
    if block_align != expect {
        return Err(err(
            12,
            "block align",
            format!(
                "block align {block_align} bytes; {channels} channel(s) of {bits} bits need {expect}"
            ),
        ));
    }
    if data_size % block_align as u64 != 0 {
        return Err(Error::parse(format!(
            "the data chunk declares {data_size} bytes, not whole frames of {block_align}"
        ))
        .in_file(file)
        .at_byte((data_at - 4) as usize)
        .field("data chunk size"));
    }
    Ok(WavInfo {
        format,
        channels,
        sample_rate: rate,
        bits,
        block_align,
        frames: data_size / block_align as u64,
        data_offset: data_at,
        extensible,
        ds64: None,
    })
}

/// Reads as much of `buf` as the source holds; the count read.
fn read_upto<R: Read>(src: &mut R, buf: &mut [u8], file: &str, at: u64) -> Result<usize> {
    let mut got = 0;
    while got < buf.len() {
        match src.read(&mut buf[got..]) {
            Ok(0) => break,
            Ok(n) => got += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => {
                return Err(Error::io(format!("cannot read: {e}"))
                    .in_file(file)
                    .at_byte((at + got as u64) as usize))
            }
        }
    }
    Ok(got)
}

fn read_exact<R: Read>(src: &mut R, buf: &mut [u8], file: &str, at: u64, what: &str) -> Result<()> {
    let got = read_upto(src, buf, file, at)?;
    if got < buf.len() {
        return Err(Error::parse(format!(
            "the file ends inside the {what} ({} of {} bytes)",
            got,
            buf.len()
        ))
        .in_file(file)
        .at_byte((at + got as u64) as usize)
        .field(what.to_string()));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_what_listen_writes() {
        let w = crate::listen::float_wav(8000, &[0.0, 0.5, -0.25]);
        let mut r = WavReader::new(std::io::Cursor::new(w), "t.wav").unwrap();
        assert_eq!(r.info.channels, 1);
        assert_eq!(r.info.frames, 3);
        assert_eq!(r.read_all().unwrap(), vec![vec![0.0, 0.5, -0.25]]);
    }
}

/// The SHA-256 of a file read as a stream, gathered while the blocks pass
/// (so a streamed recording's provenance names its bytes without a second
/// read of the samples): [`Hashing`] feeds it, [`StreamHash::finish`] adds
/// the bytes after those read (chunks after `data`) and gives the hex digest.
#[derive(Debug, Clone, Default)]
pub struct StreamHash(std::rc::Rc<std::cell::RefCell<(sha2::Sha256, u64)>>);

/// A reader passing bytes through to [`StreamHash`].
pub struct Hashing<R: Read> {
    inner: R,
    hash: StreamHash,
}

/// `inner` read through a hash: the reader and the hash it feeds.
pub fn hashing<R: Read>(inner: R) -> (Hashing<R>, StreamHash) {
    let hash = StreamHash::default();
    (
        Hashing {
            inner,
            hash: hash.clone(),
        },
        hash,
    )
}

impl<R: Read> Read for Hashing<R> {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        use sha2::Digest;
        let n = self.inner.read(buf)?;
        let mut s = self.hash.0.borrow_mut();
        s.0.update(&buf[..n]);
        s.1 += n as u64;
        Ok(n)
    }
}

impl StreamHash {
    /// Bytes hashed so far.
    pub fn len(&self) -> u64 {
        self.0.borrow().1
    }

    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// The digest (lower-case hex) after the rest of the file, `rest`
    /// (the same file from the byte after those hashed), is read through
    /// in blocks.
    pub fn finish<R: Read>(self, mut rest: R, file: &str) -> Result<String> {
        use sha2::Digest;
        let mut buf = vec![0u8; 1 << 16];
        loop {
            let n = rest.read(&mut buf).map_err(|e| {
                Error::io(format!("cannot read to the end for its SHA-256: {e}")).in_file(file)
            })?;
            if n == 0 {
                break;
            }
            self.0.borrow_mut().0.update(&buf[..n]);
        }
        let s = self.0.borrow().0.clone();
        Ok(s.finalize().iter().map(|b| format!("{b:02x}")).collect())
    }
}
