//! Data elements: the 8-byte tag (type and size, or the 4-byte small form
//! whose size sits in the tag's upper half), the data and its padding to 8
//! bytes, and `miCOMPRESSED` elements inflated under the memory budget.
//!
//! Every size read is checked against the bytes that remain before anything
//! is sliced or allocated. Offsets in errors are file offsets; inside a
//! compressed element they are the element's own file offset, and the
//! message adds the byte inside its inflated data.

use super::header::Endian;
use crate::error::{Error, Result};
use crate::limits::{bytes_text, Limits};

pub const MI_INT8: u32 = 1;
pub const MI_UINT8: u32 = 2;
pub const MI_INT16: u32 = 3;
pub const MI_UINT16: u32 = 4;
pub const MI_INT32: u32 = 5;
pub const MI_UINT32: u32 = 6;
pub const MI_SINGLE: u32 = 7;
pub const MI_DOUBLE: u32 = 9;
pub const MI_INT64: u32 = 12;
pub const MI_UINT64: u32 = 13;
pub const MI_MATRIX: u32 = 14;
pub const MI_COMPRESSED: u32 = 15;
pub const MI_UTF8: u32 = 16;
pub const MI_UTF16: u32 = 17;
pub const MI_UTF32: u32 = 18;

/// The name of a data type code, for messages.
pub fn type_name(t: u32) -> String {
    match t {
        MI_INT8 => "miINT8".into(),
        MI_UINT8 => "miUINT8".into(),
        MI_INT16 => "miINT16".into(),
        MI_UINT16 => "miUINT16".into(),
        MI_INT32 => "miINT32".into(),
        MI_UINT32 => "miUINT32".into(),
        MI_SINGLE => "miSINGLE".into(),
        MI_DOUBLE => "miDOUBLE".into(),
        MI_INT64 => "miINT64".into(),
        MI_UINT64 => "miUINT64".into(),
        MI_MATRIX => "miMATRIX".into(),
        MI_COMPRESSED => "miCOMPRESSED".into(),
        MI_UTF8 => "miUTF8".into(),
        MI_UTF16 => "miUTF16".into(),
        MI_UTF32 => "miUTF32".into(),
        other => format!("unknown type {other}"),
    }
}

/// Where bytes come from: the file itself, or the inflated data of the
/// compressed element at a file offset.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Origin {
    File,
    Inflated { at: usize },
}

impl Origin {
    /// An error at `pos` of these bytes, with the file offset and, inside
    /// inflated data, the byte there.
    pub fn err(self, e: Error, pos: usize) -> Error {
        match self {
            Origin::File => e.at_byte(pos),
            Origin::Inflated { at } => {
                let m = format!(
                    "{} (at byte {pos} of the data inflated from the compressed element at byte {at})",
                    e.message
                );
                Error { message: m, ..e }.at_byte(at)
            }
        }
    }
}

/// A span of bytes read as data elements.
#[derive(Debug, Clone, Copy)]
pub struct Cursor<'a> {
    pub bytes: &'a [u8],
    pub pos: usize,
    pub endian: Endian,
    pub origin: Origin,
}

/// One data element.
#[derive(Debug, Clone, Copy)]
pub struct Element<'a> {
    pub ty: u32,
    pub data: &'a [u8],
    /// Offset of the tag in the cursor's bytes.
    pub at: usize,
    /// Offset of the data in the cursor's bytes.
    pub data_at: usize,
}

impl<'a> Cursor<'a> {
    pub fn new(bytes: &'a [u8], pos: usize, endian: Endian, origin: Origin) -> Self {
        Cursor {
            bytes,
            pos,
            endian,
            origin,
        }
    }
    pub fn at_end(&self) -> bool {
        self.pos >= self.bytes.len()
    }
    pub fn err(&self, e: Error, pos: usize) -> Error {
        self.origin.err(e, pos)
    }
    fn word(&self, at: usize) -> u32 {
        let b = &self.bytes[at..at + 4];
        self.endian.u32([b[0], b[1], b[2], b[3]])
    }

    /// The next element; `what` names it for messages ("variable 2",
    /// "dimensions of 'H'").
    pub fn next(&mut self, what: &str) -> Result<Element<'a>> {
        let at = self.pos;
        let left = self.bytes.len().saturating_sub(at);
        if left < 8 {
            return Err(self.err(
                Error::parse(format!(
                    "{left} bytes left where an 8-byte data element tag was expected"
                ))
                .field(format!("{what}, tag")),
                at,
            ));
        }
        let first = self.word(at);
        if first >> 16 != 0 {
            // small data element: size in the upper half, data in bytes 4..8
            let ty = first & 0xffff;
            let size = (first >> 16) as usize;
            if size > 4 {
                return Err(self.err(
                    Error::parse(format!(
                        "small data element of {size} bytes; expected at most 4 (or a tag type below 65536)"
                    ))
                    .field(format!("{what}, tag")),
                    at,
                ));
            }
            self.pos = at + 8;
            return Ok(Element {
                ty,
                data: &self.bytes[at + 4..at + 4 + size],
                at,
                data_at: at + 4,
            });
        }
        let ty = first;
        let size = self.word(at + 4) as usize;
        let start = at + 8;
        if size > left - 8 {
            return Err(self.err(
                Error::parse(format!(
                    "the tag gives {size} bytes of {}, but only {} bytes follow",
                    type_name(ty),
                    left - 8
                ))
                .field(format!("{what}, size")),
                at + 4,
            ));
        }
        let end = start + size;
        // elements are padded to 8 bytes, except compressed ones; tolerate a
        // missing pad at the very end
        self.pos = if ty == MI_COMPRESSED {
            end
        } else {
            end.div_ceil(8) * 8
        }
        .min(self.bytes.len().max(end));
        Ok(Element {
            ty,
            data: &self.bytes[start..end],
            at,
            data_at: start,
        })
    }
}

/// Inflate a compressed element's zlib stream, at most the memory budget
/// (or `cap` bytes, for a look at a variable's first bytes: then a longer
/// stream is cut there, not refused). `at` is the element's file offset.
pub fn inflate(data: &[u8], at: usize, limits: &Limits, cap: Option<usize>) -> Result<Vec<u8>> {
    use miniz_oxide::inflate::{decompress_to_vec_zlib_with_limit, TINFLStatus};
    let budget = usize::try_from(limits.memory_bytes).unwrap_or(usize::MAX);
    let max = cap.map_or(budget, |c| c.min(budget));
    match decompress_to_vec_zlib_with_limit(data, max) {
        Ok(v) => Ok(v),
        Err(e) if e.status == TINFLStatus::HasMoreOutput && cap.is_some() => Ok(e.output),
        Err(e) if e.status == TINFLStatus::HasMoreOutput => Err(Error::new(
            crate::error::ErrorKind::Budget,
            format!(
                "the compressed element of {} inflates to more than the memory budget of {} (raise it with --budget-gb or the page's settings)",
                bytes_text(data.len() as u64),
                bytes_text(limits.memory_bytes)
            ),
        )
        .at_byte(at)
        .field("miCOMPRESSED data")),
        Err(e) => Err(Error::parse(format!(
            "the compressed data do not inflate ({}); expected a complete zlib stream (is the file cut short or damaged?)",
            match e.status {
                TINFLStatus::FailedCannotMakeProgress => "the stream ends early".to_string(),
                TINFLStatus::Adler32Mismatch => "its Adler-32 checksum does not match".to_string(),
                TINFLStatus::BadParam | TINFLStatus::Failed => "invalid deflate data".to_string(),
                other => format!("{other:?}"),
            }
        ))
        .at_byte(at)
        .field("miCOMPRESSED data")),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_and_normal_elements_and_padding() {
        // small: miINT32 of 4 bytes = 7; then normal miDOUBLE of 8 bytes; then miINT8 of 3 + pad
        let mut b = Vec::new();
        b.extend_from_slice(&((4u32 << 16) | MI_INT32).to_le_bytes());
        b.extend_from_slice(&7i32.to_le_bytes());
        b.extend_from_slice(&MI_DOUBLE.to_le_bytes());
        b.extend_from_slice(&8u32.to_le_bytes());
        b.extend_from_slice(&2.5f64.to_le_bytes());
        b.extend_from_slice(&MI_INT8.to_le_bytes());
        b.extend_from_slice(&3u32.to_le_bytes());
        b.extend_from_slice(b"abc\0\0\0\0\0");
        let mut c = Cursor::new(&b, 0, Endian::Little, Origin::File);
        let e = c.next("x").unwrap();
        assert_eq!((e.ty, e.data), (MI_INT32, &7i32.to_le_bytes()[..]));
        let e = c.next("x").unwrap();
        assert_eq!((e.ty, e.data), (MI_DOUBLE, &2.5f64.to_le_bytes()[..]));
        let e = c.next("x").unwrap();
        assert_eq!((e.ty, e.data), (MI_INT8, &b"abc"[..]));
        assert!(c.at_end());
    }

    #[test]
    fn sizes_beyond_the_end_are_refused_with_their_offset() {
        let mut b = Vec::new();
        b.extend_from_slice(&MI_DOUBLE.to_le_bytes());
        b.extend_from_slice(&4000u32.to_le_bytes());
        b.extend_from_slice(&[0; 16]);
        let mut c = Cursor::new(&b, 0, Endian::Little, Origin::File);
        let e = c.next("variable 1").unwrap_err();
        assert!(
            e.message.contains("4000 bytes") && e.message.contains("16 bytes follow"),
            "{e}"
        );
        assert_eq!(e.location, Some(crate::error::Location::Byte(4)));
        let mut c = Cursor::new(&b[..5], 0, Endian::Little, Origin::File);
        assert!(c.next("v").unwrap_err().message.contains("5 bytes left"));
    }

    #[test]
    fn inflate_refuses_damage_and_caps_a_look() {
        let raw: Vec<u8> = (0..1000u32).flat_map(|x| (x % 7).to_le_bytes()).collect();
        let z = miniz_oxide::deflate::compress_to_vec_zlib(&raw, 6);
        let l = Limits::default();
        assert_eq!(inflate(&z, 0, &l, None).unwrap(), raw);
        assert_eq!(inflate(&z, 0, &l, Some(100)).unwrap(), raw[..100]);
        let e = inflate(&z[..z.len() / 2], 40, &l, None).unwrap_err();
        assert!(e.message.contains("do not inflate"), "{e}");
        assert_eq!(e.location, Some(crate::error::Location::Byte(40)));
        let small = Limits {
            memory_bytes: 100,
            ..l
        };
        let e = inflate(&z, 0, &small, None).unwrap_err();
        assert_eq!(e.kind, crate::error::ErrorKind::Budget);
    }
}
