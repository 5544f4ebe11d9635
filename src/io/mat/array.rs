//! `miMATRIX` elements: the array flags (class, complex, logical), the
//! dimensions and the name, then the contents: numeric arrays of every
//! numeric class and storage type converted to f64 (real and imaginary
//! parts), char arrays and cell arrays of char arrays as text. Structs,
//! objects, sparse arrays and function handles are named and refused.
//!
//! MATLAB stores arrays column-major: element (i, j, k) of a d0 × d1 × d2
//! array is value i + d0·(j + d1·k).

use super::element::{
    type_name, Cursor, Element, MI_DOUBLE, MI_INT16, MI_INT32, MI_INT64, MI_INT8, MI_MATRIX,
    MI_SINGLE, MI_UINT16, MI_UINT32, MI_UINT64, MI_UINT8, MI_UTF16, MI_UTF32, MI_UTF8,
};
use super::header::Endian;
use crate::error::{quote, Error, Result};
use crate::limits::{product, Limits};

/// The class of an array (mxCLASS codes of the format).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Class {
    Cell,
    Struct,
    Object,
    Char,
    Sparse,
    Double,
    Single,
    Int8,
    UInt8,
    Int16,
    UInt16,
    Int32,
    UInt32,
    Int64,
    UInt64,
    Function,
    /// Opaque objects: MATLAB `string` arrays, tables, datetimes.
    Opaque,
    Unknown(u8),
}

impl Class {
    fn from_code(c: u8) -> Class {
        match c {
            1 => Class::Cell,
            2 => Class::Struct,
            3 => Class::Object,
            4 => Class::Char,
            5 => Class::Sparse,
            6 => Class::Double,
            7 => Class::Single,
            8 => Class::Int8,
            9 => Class::UInt8,
            10 => Class::Int16,
            11 => Class::UInt16,
            12 => Class::Int32,
            13 => Class::UInt32,
            14 => Class::Int64,
            15 => Class::UInt64,
            16 => Class::Function,
            17 => Class::Opaque,
            o => Class::Unknown(o),
        }
    }
    /// The name MATLAB uses (`class(x)`).
    pub fn name(self) -> String {
        match self {
            Class::Cell => "cell".into(),
            Class::Struct => "struct".into(),
            Class::Object => "object".into(),
            Class::Char => "char".into(),
            Class::Sparse => "sparse".into(),
            Class::Double => "double".into(),
            Class::Single => "single".into(),
            Class::Int8 => "int8".into(),
            Class::UInt8 => "uint8".into(),
            Class::Int16 => "int16".into(),
            Class::UInt16 => "uint16".into(),
            Class::Int32 => "int32".into(),
            Class::UInt32 => "uint32".into(),
            Class::Int64 => "int64".into(),
            Class::UInt64 => "uint64".into(),
            Class::Function => "function handle".into(),
            Class::Opaque => "opaque object".into(),
            Class::Unknown(c) => format!("unknown class {c}"),
        }
    }
    pub fn is_numeric(self) -> bool {
        matches!(
            self,
            Class::Double
                | Class::Single
                | Class::Int8
                | Class::UInt8
                | Class::Int16
                | Class::UInt16
                | Class::Int32
                | Class::UInt32
                | Class::Int64
                | Class::UInt64
        )
    }
}

/// What an array is, before its contents are read.
#[derive(Debug, Clone, PartialEq)]
pub struct Head {
    pub name: String,
    pub class: Class,
    pub dims: Vec<usize>,
    pub complex: bool,
    pub logical: bool,
}

impl Head {
    /// "3×2×400".
    pub fn dims_text(&self) -> String {
        self.dims
            .iter()
            .map(|d| d.to_string())
            .collect::<Vec<_>>()
            .join("×")
    }
    /// "double, 3×2×400, complex".
    pub fn describe(&self) -> String {
        let class = if self.logical {
            "logical".to_string()
        } else {
            self.class.name()
        };
        if self.class.is_numeric() {
            format!(
                "{class}, {}, {}",
                self.dims_text(),
                if self.complex { "complex" } else { "real" }
            )
        } else {
            format!("{class}, {}", self.dims_text())
        }
    }
    /// The number of elements, or `None` when the product overflows.
    pub fn count(&self) -> Option<u64> {
        product(&self.dims)
    }
}

/// An element's data as words of `size` bytes, checked.
fn words<'a>(c: &Cursor<'a>, el: &Element<'a>, size: usize, what: &str) -> Result<&'a [u8]> {
    if el.data.len() % size != 0 {
        return Err(c.err(
            Error::parse(format!(
                "{} bytes of {}; expected a multiple of {size}",
                el.data.len(),
                type_name(el.ty)
            ))
            .field(what.to_string()),
            el.at + 4,
        ));
    }
    Ok(el.data)
}

/// Read the array flags, dimensions and name from a cursor at the start of
/// a `miMATRIX` element's data. `what` names the array for messages.
pub fn head(c: &mut Cursor<'_>, what: &str) -> Result<Head> {
    let flags = c.next(&format!("{what}, array flags"))?;
    if flags.ty != MI_UINT32 || flags.data.len() != 8 {
        return Err(c.err(
            Error::parse(format!(
                "array flags of {} bytes of {}; expected 8 bytes of miUINT32",
                flags.data.len(),
                type_name(flags.ty)
            ))
            .field(format!("{what}, array flags")),
            flags.at,
        ));
    }
    let word = c
        .endian
        .u32([flags.data[0], flags.data[1], flags.data[2], flags.data[3]]);
    let class = Class::from_code((word & 0xff) as u8);
    let complex = word & 0x800 != 0;
    let logical = word & 0x200 != 0;
    let dims_el = c.next(&format!("{what}, dimensions"))?;
    if dims_el.ty != MI_INT32 {
        return Err(c.err(
            Error::parse(format!(
                "dimensions stored as {}; expected miINT32",
                type_name(dims_el.ty)
            ))
            .field(format!("{what}, dimensions")),
            dims_el.at,
        ));
    }
    let raw = words(c, &dims_el, 4, &format!("{what}, dimensions"))?;
    if raw.len() < 8 {
        return Err(c.err(
            Error::parse(format!(
                "{} dimension(s); expected at least 2",
                raw.len() / 4
            ))
            .field(format!("{what}, dimensions")),
            dims_el.at,
        ));
    }
    let mut dims = Vec::with_capacity(raw.len() / 4);
    for (n, w) in raw.chunks_exact(4).enumerate() {
        let d = c.endian.u32([w[0], w[1], w[2], w[3]]) as i32;
        if d < 0 {
            return Err(c.err(
                Error::parse(format!("dimension {} is {d}; expected 0 or more", n + 1))
                    .field(format!("{what}, dimensions")),
                dims_el.data_at + 4 * n,
            ));
        }
        dims.push(d as usize);
    }
    let name_el = c.next(&format!("{what}, name"))?;
    if name_el.ty != MI_INT8 && name_el.ty != MI_UINT8 {
        return Err(c.err(
            Error::parse(format!(
                "array name stored as {}; expected miINT8 text",
                type_name(name_el.ty)
            ))
            .field(format!("{what}, name")),
            name_el.at,
        ));
    }
    let name = String::from_utf8_lossy(name_el.data).into_owned();
    Ok(Head {
        name,
        class,
        dims,
        complex,
        logical,
    })
}

/// Words of a numeric element as f64, `expected` of them.
fn numbers(c: &Cursor<'_>, el: &Element<'_>, expected: usize, what: &str) -> Result<Vec<f64>> {
    let e = c.endian;
    let size = match el.ty {
        MI_INT8 | MI_UINT8 => 1,
        MI_INT16 | MI_UINT16 => 2,
        MI_INT32 | MI_UINT32 | MI_SINGLE => 4,
        MI_DOUBLE | MI_INT64 | MI_UINT64 => 8,
        other => {
            return Err(c.err(
                Error::parse(format!(
                    "numeric data stored as {}; expected one of the numeric types (miINT8 … miUINT64, miSINGLE, miDOUBLE)",
                    type_name(other)
                ))
                .field(what.to_string()),
                el.at,
            ))
        }
    };
    let raw = words(c, el, size, what)?;
    let n = raw.len() / size;
    if n != expected {
        return Err(c.err(
            Error::parse(format!("{n} values stored; the dimensions give {expected}"))
                .field(what.to_string()),
            el.at,
        ));
    }
    let b2 = |w: &[u8]| [w[0], w[1]];
    let b4 = |w: &[u8]| [w[0], w[1], w[2], w[3]];
    let b8 = |w: &[u8]| {
        let a = [w[0], w[1], w[2], w[3], w[4], w[5], w[6], w[7]];
        match e {
            Endian::Little => u64::from_le_bytes(a),
            Endian::Big => u64::from_be_bytes(a),
        }
    };
    let chunks = raw.chunks_exact(size);
    let mut out = Vec::with_capacity(n);
    match el.ty {
        MI_INT8 => out.extend(chunks.map(|w| w[0] as i8 as f64)),
        MI_UINT8 => out.extend(chunks.map(|w| w[0] as f64)),
        MI_INT16 => out.extend(chunks.map(|w| e.u16(b2(w)) as i16 as f64)),
        MI_UINT16 => out.extend(chunks.map(|w| e.u16(b2(w)) as f64)),
        MI_INT32 => out.extend(chunks.map(|w| e.u32(b4(w)) as i32 as f64)),
        MI_UINT32 => out.extend(chunks.map(|w| e.u32(b4(w)) as f64)),
        MI_SINGLE => out.extend(chunks.map(|w| f32::from_bits(e.u32(b4(w))) as f64)),
        MI_DOUBLE => out.extend(chunks.map(|w| f64::from_bits(b8(w)))),
        _ => {
            // 64-bit integers: refuse a value f64 cannot hold exactly
            for (k, w) in chunks.enumerate() {
                let bits = b8(w);
                let (x, exact) = if el.ty == MI_INT64 {
                    let v = bits as i64;
                    (v as f64, (v as f64) as i128 == v as i128)
                } else {
                    (bits as f64, (bits as f64) as u128 == bits as u128)
                };
                if !exact {
                    return Err(c.err(
                        Error::numeric(format!(
                            "value {} is a 64-bit integer beyond 2^53, which a double cannot hold exactly",
                            k + 1
                        ))
                        .field(what.to_string()),
                        el.data_at + 8 * k,
                    ));
                }
                out.push(x);
            }
        }
    }
    Ok(out)
}

/// A numeric array's values as f64, real and (when complex) imaginary parts.
#[derive(Debug, Clone, PartialEq)]
pub struct Numeric {
    pub re: Vec<f64>,
    pub im: Option<Vec<f64>>,
}

/// Read the contents of a numeric array whose head was just read. The
/// element count is checked against the memory budget before reading.
pub fn numeric(c: &mut Cursor<'_>, h: &Head, limits: &Limits, what: &str) -> Result<Numeric> {
    let at = c.pos;
    let count = h.count();
    limits
        .check_values(&format!("{what} ({})", h.dims_text()), count)
        .map_err(|e| c.err(e, at))?;
    let n = count
        .and_then(|n| usize::try_from(n).ok())
        .unwrap_or(usize::MAX);
    let re_el = c.next(&format!("{what}, real part"))?;
    let re = numbers(c, &re_el, n, &format!("{what}, real part"))?;
    let im = if h.complex {
        let im_el = c.next(&format!("{what}, imaginary part"))?;
        Some(numbers(c, &im_el, n, &format!("{what}, imaginary part"))?)
    } else {
        None
    };
    Ok(Numeric { re, im })
}

/// Text of a char array's data element.
fn char_units(c: &Cursor<'_>, el: &Element<'_>, what: &str) -> Result<Vec<char>> {
    let e = c.endian;
    let bad = |m: String| c.err(Error::parse(m).field(what.to_string()), el.at);
    Ok(match el.ty {
        MI_UTF8 => match std::str::from_utf8(el.data) {
            Ok(s) => s.chars().collect(),
            Err(_) => return Err(bad("char data marked miUTF8 are not valid UTF-8".into())),
        },
        MI_INT8 | MI_UINT8 => el.data.iter().map(|&b| b as char).collect(),
        MI_UINT16 | MI_UTF16 => {
            let units: Vec<u16> = words(c, el, 2, what)?
                .chunks_exact(2)
                .map(|w| e.u16([w[0], w[1]]))
                .collect();
            // MATLAB stores one UTF-16 unit per character; a lone surrogate is shown as U+FFFD
            units
                .iter()
                .map(|&u| char::from_u32(u as u32).unwrap_or('\u{fffd}'))
                .collect()
        }
        MI_UTF32 => words(c, el, 4, what)?
            .chunks_exact(4)
            .map(|w| char::from_u32(e.u32([w[0], w[1], w[2], w[3]])).unwrap_or('\u{fffd}'))
            .collect(),
        other => {
            return Err(bad(format!(
                "char data stored as {}; expected miUTF8, miUINT16 or miUTF16",
                type_name(other)
            )))
        }
    })
}

/// The rows of a char array whose head was just read, trailing blanks
/// removed (a char matrix pads shorter rows with spaces).
pub fn char_rows(c: &mut Cursor<'_>, h: &Head, what: &str) -> Result<Vec<String>> {
    if h.dims.len() != 2 {
        return Err(c.err(
            Error::parse(format!(
                "a char array of {} dimensions ({}); expected a row of text or a matrix of rows",
                h.dims.len(),
                h.dims_text()
            ))
            .field(what.to_string()),
            c.pos,
        ));
    }
    let (rows, cols) = (h.dims[0], h.dims[1]);
    let n = rows.saturating_mul(cols);
    if n == 0 {
        // MATLAB writes an empty string with no data element
        if !c.at_end() {
            c.next(&format!("{what}, text"))?;
        }
        return Ok(vec![String::new(); rows]);
    }
    let el = c.next(&format!("{what}, text"))?;
    let chars = char_units(c, &el, &format!("{what}, text"))?;
    if chars.len() != n {
        return Err(c.err(
            Error::parse(format!(
                "{} characters stored; the dimensions {rows}×{cols} give {n}",
                chars.len()
            ))
            .field(format!("{what}, text")),
            el.at,
        ));
    }
    Ok((0..rows)
        .map(|r| {
            (0..cols)
                .map(|k| chars[r + rows * k])
                .collect::<String>()
                .trim_end_matches([' ', '\0'])
                .to_string()
        })
        .collect())
}

/// A list of texts: a cell array of char rows (in MATLAB's linear order),
/// or a char matrix (one text per row). Every cell must hold one row of
/// text.
pub fn strings(c: &mut Cursor<'_>, h: &Head, limits: &Limits, what: &str) -> Result<Vec<String>> {
    match h.class {
        Class::Char => char_rows(c, h, what),
        Class::Cell => {
            let at = c.pos;
            let count = h.count();
            limits
                .check_values(&format!("{what} ({})", h.dims_text()), count)
                .map_err(|e| c.err(e, at))?;
            let n = count.and_then(|n| usize::try_from(n).ok()).unwrap_or(usize::MAX);
            // each cell takes at least an 8-byte tag: refuse a count the bytes cannot hold
            if n > c.bytes.len().saturating_sub(c.pos) / 8 {
                return Err(c.err(
                    Error::parse(format!(
                        "{n} cells, but only {} bytes follow",
                        c.bytes.len().saturating_sub(c.pos)
                    ))
                    .field(format!("{what}, dimensions")),
                    at,
                ));
            }
            let mut out = Vec::with_capacity(n);
            for k in 0..n {
                let cw = format!("{what}, cell {}", k + 1);
                let el = c.next(&cw)?;
                if el.ty != MI_MATRIX {
                    return Err(c.err(
                        Error::parse(format!(
                            "cell stored as {}; expected miMATRIX",
                            type_name(el.ty)
                        ))
                        .field(cw),
                        el.at,
                    ));
                }
                if el.data.is_empty() {
                    out.push(String::new());
                    continue;
                }
                let mut inner = Cursor {
                    bytes: &c.bytes[..el.data_at + el.data.len()],
                    pos: el.data_at,
                    ..*c
                };
                let ch = head(&mut inner, &cw)?;
                if ch.class != Class::Char {
                    return Err(c.err(
                        Error::parse(format!(
                            "the cell holds a {} array; expected text (a char row)",
                            ch.describe()
                        ))
                        .field(cw),
                        el.at,
                    ));
                }
                let rows = char_rows(&mut inner, &ch, &cw)?;
                match rows.len() {
                    0 => out.push(String::new()),
                    1 => out.extend(rows),
                    r => {
                        return Err(c.err(
                            Error::parse(format!(
                                "the cell holds {r} rows of text; expected one"
                            ))
                            .field(cw),
                            el.at,
                        ))
                    }
                }
            }
            Ok(out)
        }
        other => Err(c.err(
            Error::usage(format!(
                "variable '{}' is a {} array; expected DOF labels as a cell array of strings or a char matrix",
                quote(&h.name),
                other.name()
            )),
            c.pos,
        )),
    }
}
