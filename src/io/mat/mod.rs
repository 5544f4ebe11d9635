//! Level-5 MAT-files: what MATLAB's `save -v7` / `-v6` and
//! `scipy.io.savemat` write.
//!
//! A 128-byte header (text starting `MATLAB 5.0 MAT-file`, version 0x0100,
//! endian indicator `IM` little-endian or `MI` big-endian; [`header`]), then
//! data elements (an 8-byte tag of type and size, or a 4-byte small element,
//! padded to 8 bytes; `miCOMPRESSED` holds one zlib-compressed element;
//! [`element`]). Each variable is a `miMATRIX`: array flags (class,
//! complex, logical), dimensions, name, then its contents ([`array`]):
//! numeric arrays of every class and storage type are converted to f64;
//! char arrays and cell arrays of char rows give text (DOF labels);
//! structs, objects, sparse arrays and function handles are refused by name.
//!
//! A MAT-file carries no DOFs, quantities or units, so it is read through a
//! [`MatMap`] (the `"mat"` import option, [`map`]): which variable is the
//! frequency vector, which the FRF array (2-D: one FRF per column or row;
//! 3-D: outputs × inputs × lines or lines × outputs × inputs), the DOF
//! labels (given, or a cell array of strings in the file), quantities and
//! unit ([`read()`]). Without a mapping, [`variables`] lists what the file
//! holds and [`mapping_needed`] says so.
//!
//! Refused plainly: v7.3 files (HDF5) and level-4 files, each with how to
//! save a level-5 file. Every size from the file is checked against the
//! bytes that remain and against the memory budget ([`crate::limits`])
//! before anything is allocated; errors carry the byte offset (inside a
//! compressed element: the element's offset and the byte inside its
//! inflated data), the field and what was expected.

pub mod array;
pub mod element;
pub mod header;
pub mod map;
pub mod read;

pub use map::{map_from_json, MatLayout, MatMap};
pub use read::{mapping_needed, read, variables, VarInfo};

/// Whether the bytes are a MAT-file (of any level or version: the reader
/// then reads level 5 and names the others).
pub fn sniff(bytes: &[u8]) -> bool {
    header::looks_like_mat(bytes)
}
