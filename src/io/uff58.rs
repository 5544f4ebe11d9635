//! Universal File Format dataset 58 (ASCII) and 58b (binary). (Being built.)

use crate::error::{Error, Result};
use crate::frf::FrfSet;

/// Read every dataset 58/58b in a file and group them into FRF sets (one per
/// function type, quantity pair and grid); returns the sets and warnings.
/// DOFs get the component namespace `component`.
pub fn read(bytes: &[u8], file: &str, component: &str) -> Result<(Vec<FrfSet>, Vec<String>)> {
    let _ = (bytes, component);
    Err(Error::unsupported("UFF 58 reading is not built yet").in_file(file))
}

/// Write sets as UFF 58 (ASCII) or 58b (binary, double precision), one dataset per present entry.
pub fn write(sets: &[FrfSet], binary: bool) -> Result<Vec<u8>> {
    let _ = (sets, binary);
    Err(Error::unsupported("UFF 58 writing is not built yet"))
}
