//! The 128-byte header of a level-5 MAT-file: descriptive text, subsystem
//! offset, version and the endian indicator; and what a file that is not
//! level 5 but looks like another MAT-file (level 4, v7.3/HDF5) is told.

use crate::error::{quote, Error, Result};

/// Length of the level-5 header.
pub const HEADER_LEN: usize = 128;

/// The HDF5 signature: at byte 0 of a plain HDF5 file, at byte 512 of a
/// v7.3 MAT-file (after its 512-byte user block).
const HDF5_SIGNATURE: &[u8] = b"\x89HDF\r\n\x1a\n";

/// How to save a file mortise reads, for the messages below.
pub const SAVE_HINT: &str =
    "save it as a level-5 MAT-file: in MATLAB `save(name, vars..., '-v7')` \
(or '-v6'), in Python `scipy.io.savemat(name, dict)`";

/// Byte order of the numbers in a file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Endian {
    Little,
    Big,
}

impl Endian {
    pub fn u16(self, b: [u8; 2]) -> u16 {
        match self {
            Endian::Little => u16::from_le_bytes(b),
            Endian::Big => u16::from_be_bytes(b),
        }
    }
    pub fn u32(self, b: [u8; 4]) -> u32 {
        match self {
            Endian::Little => u32::from_le_bytes(b),
            Endian::Big => u32::from_be_bytes(b),
        }
    }
    pub fn name(self) -> &'static str {
        match self {
            Endian::Little => "little-endian",
            Endian::Big => "big-endian",
        }
    }
}

/// What the header says.
#[derive(Debug, Clone, PartialEq)]
pub struct Header {
    /// The descriptive text, trailing spaces and NULs removed.
    pub text: String,
    pub endian: Endian,
}

/// True when the bytes start like a MAT-file of any level mortise names:
/// level-5 or v7.3 header text, an HDF5 file, or a level-4 matrix header.
pub fn looks_like_mat(bytes: &[u8]) -> bool {
    bytes.starts_with(b"MATLAB 5.0 MAT-file")
        || bytes.starts_with(b"MATLAB 7.3 MAT-file")
        || bytes.starts_with(HDF5_SIGNATURE)
        || level4(bytes).is_some()
}

/// A level-4 matrix header at byte 0: the type code MOPT (M machine 0-4,
/// O 0, P precision 0-5, T type 0-2), rows, columns, imaginary flag 0/1 and
/// a name length of 1 to 64 whose name is printable and ends in NUL. Returns
/// the name. A level-5 file never matches (its first bytes are text).
pub fn level4(bytes: &[u8]) -> Option<String> {
    if bytes.len() < 21 {
        return None;
    }
    for e in [Endian::Little, Endian::Big] {
        let w = |n: usize| {
            e.u32([
                bytes[4 * n],
                bytes[4 * n + 1],
                bytes[4 * n + 2],
                bytes[4 * n + 3],
            ])
        };
        let (mopt, _rows, _cols, imagf, namlen) = (w(0), w(1), w(2), w(3), w(4) as usize);
        let (m, o, p, t) = (mopt / 1000, (mopt / 100) % 10, (mopt / 10) % 10, mopt % 10);
        if mopt >= 5000 || o != 0 || p > 5 || t > 2 || imagf > 1 || !(1..=64).contains(&namlen) {
            continue;
        }
        // the machine code must agree with the byte order the header is read in
        let little = m == 0 || m == 2 || m == 3;
        if (e == Endian::Little) != little {
            continue;
        }
        let name = bytes.get(20..20 + namlen)?;
        if name[namlen - 1] != 0 || !name[..namlen - 1].iter().all(|b| b.is_ascii_graphic()) {
            continue;
        }
        return Some(String::from_utf8_lossy(&name[..namlen - 1]).into_owned());
    }
    None
}

/// Read the header, or refuse a file that is not a level-5 MAT-file with a
/// message saying what it is and how to save one mortise reads.
pub fn parse(bytes: &[u8]) -> Result<Header> {
    if bytes.starts_with(HDF5_SIGNATURE)
        || bytes.starts_with(b"MATLAB 7.3 MAT-file")
        || bytes.get(512..520) == Some(HDF5_SIGNATURE)
    {
        return Err(Error::unsupported(format!(
            "this is a MAT-file version 7.3, which is an HDF5 file; mortise reads level-5 MAT-files; {SAVE_HINT}"
        ))
        .at_byte(0)
        .field("MAT-file header"));
    }
    if let Some(name) = level4(bytes) {
        return Err(Error::unsupported(format!(
            "this is a level-4 MAT-file (first matrix '{}'); mortise reads level-5 MAT-files; {SAVE_HINT}",
            quote(&name)
        ))
        .at_byte(0)
        .field("MAT-file header"));
    }
    if bytes.len() < HEADER_LEN {
        return Err(Error::parse(format!(
            "the file ends after {} bytes, inside the 128-byte MAT-file header",
            bytes.len()
        ))
        .at_byte(bytes.len())
        .field("MAT-file header"));
    }
    let indicator = &bytes[126..128];
    let endian = match indicator {
        b"IM" => Endian::Little,
        b"MI" => Endian::Big,
        _ => {
            return Err(Error::parse(format!(
            "endian indicator {:02x} {:02x}; expected 'IM' (little-endian) or 'MI' (big-endian)",
            indicator[0], indicator[1]
        ))
            .at_byte(126)
            .field("MAT-file header"))
        }
    };
    let version = endian.u16([bytes[124], bytes[125]]);
    if version == 0x0200 {
        return Err(Error::unsupported(format!(
            "the header gives version 0x0200 (MAT-file 7.3, an HDF5 file); mortise reads level-5 MAT-files; {SAVE_HINT}"
        ))
        .at_byte(124)
        .field("MAT-file header, version"));
    }
    if version != 0x0100 {
        return Err(Error::unsupported(format!(
            "the header gives version 0x{version:04x}; expected 0x0100 (a level-5 MAT-file)"
        ))
        .at_byte(124)
        .field("MAT-file header, version"));
    }
    let text = String::from_utf8_lossy(&bytes[..116])
        .trim_end_matches(['\0', ' '])
        .to_string();
    Ok(Header { text, endian })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn header(ind: &[u8; 2], version: [u8; 2]) -> Vec<u8> {
        let mut b = vec![b' '; 128];
        b[..19].copy_from_slice(b"MATLAB 5.0 MAT-file");
        b[116..124].fill(0);
        b[124..126].copy_from_slice(&version);
        b[126..128].copy_from_slice(ind);
        b
    }

    #[test]
    fn both_byte_orders() {
        assert_eq!(
            parse(&header(b"IM", [0, 1])).unwrap().endian,
            Endian::Little
        );
        assert_eq!(parse(&header(b"MI", [1, 0])).unwrap().endian, Endian::Big);
        let e = parse(&header(b"XY", [0, 1])).unwrap_err();
        assert!(e.message.contains("endian indicator"), "{e}");
        assert_eq!(e.location, Some(crate::error::Location::Byte(126)));
    }

    #[test]
    fn v73_and_truncated_and_level4() {
        let e = parse(&header(b"IM", [0, 2])).unwrap_err();
        assert!(
            e.message.contains("7.3") && e.message.contains("-v7"),
            "{e}"
        );
        let e = parse(&header(b"IM", [0, 1])[..60]).unwrap_err();
        assert!(e.message.contains("ends after 60 bytes"), "{e}");
        // level 4: double (0000), 1×1, real, name "x"
        let mut l4 = Vec::new();
        for w in [0u32, 1, 1, 0, 2] {
            l4.extend_from_slice(&w.to_le_bytes());
        }
        l4.extend_from_slice(b"x\0");
        l4.extend_from_slice(&1.5f64.to_le_bytes());
        assert_eq!(level4(&l4).as_deref(), Some("x"));
        assert!(looks_like_mat(&l4));
        let e = parse(&l4).unwrap_err();
        assert!(e.message.contains("level-4"), "{e}");
        assert!(!looks_like_mat(b"-1\n58\n"));
    }
}
