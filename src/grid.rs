//! Frequency grids: checks, overlap of several grids, resampling to a common
//! grid (never extrapolating).

use crate::error::{Error, Result};

/// A grid must be non-empty, finite, non-negative and strictly increasing.
pub fn check_grid(freqs: &[f64]) -> Result<()> {
    if freqs.is_empty() {
        return Err(Error::grid(
            "the frequency grid is empty; expected at least one line",
        ));
    }
    for (k, &f) in freqs.iter().enumerate() {
        if !f.is_finite() || f < 0.0 {
            return Err(Error::grid(format!(
                "frequency line {} is {f}; expected a finite, non-negative value in Hz",
                k + 1
            )));
        }
        if k > 0 && f <= freqs[k - 1] {
            return Err(Error::grid(format!(
                "frequency line {} ({f} Hz) does not exceed line {} ({} Hz); expected strictly increasing frequencies",
                k + 1,
                k,
                freqs[k - 1]
            )));
        }
    }
    Ok(())
}
