//! Merging FRF sets of one component spread over several files or datasets
//! (one per reference, as a roving-hammer test delivers them). (Being built.)

use crate::error::{Error, Result};
use crate::frf::FrfSet;

/// Merge sets with the same grid and quantities into one matrix over the union
/// of their DOFs; entries no set provides stay missing. Returns the merged set
/// and remarks naming duplicates (kept: the first) and gaps.
pub fn merge(sets: Vec<FrfSet>) -> Result<(FrfSet, Vec<String>)> {
    let _ = sets;
    Err(Error::unsupported("merging is not built yet"))
}
