//! `--budget-gb`, `--work-budget` (the commands that compute: run, couple,
//! convert; [`super::spec::LIMITS_GROUP`]) and `--max-file-mb` (every
//! command that reads files), read into [`Limits`].

use super::Args;
use crate::error::{Error, Result};
use crate::limits::Limits;

/// The limits the command line asks for: the defaults, with `--budget-gb`,
/// `--work-budget` and `--max-file-mb` applied where the command takes
/// them and they are given.
pub fn from_args(args: &Args) -> Result<Limits> {
    let mut l = Limits::default();
    if args.takes("budget-gb") {
        if let Some(t) = args.value("budget-gb") {
            l = l.with_budget_gb(t)?;
        }
    }
    if args.takes("work-budget") {
        if let Some(t) = args.value("work-budget") {
            l = l.with_work_budget(t)?;
        }
    }
    if args.takes("max-file-mb") {
        if let Some(v) = args.value("max-file-mb") {
            let mb = v
                .trim()
                .parse::<f64>()
                .ok()
                .filter(|x| x.is_finite() && *x > 0.0)
                .ok_or_else(|| {
                    Error::usage(format!(
                        "--max-file-mb '{}': expected a number of MB above 0",
                        crate::error::quote(v)
                    ))
                })?;
            // saturating: a budget beyond u64 is no budget
            l.file_bytes = (mb * 1e6) as u64;
        }
    }
    Ok(l)
}

/// Bytes one output holds while it is written, per complex value: the
/// value (16) and its text (measured peak of `mortise convert`: 97 bytes per
/// value for UFF 58 ASCII, 64 for our CSV; DEVELOPERS.md), rounded up.
pub const WRITE_BYTES_PER_VALUE: u64 = 128;

/// Work counted per complex value written as text: UFF 58 ASCII writes
/// about 5 µs per value here, which at the rate the work budget assumes
/// (about 5·10⁹ estimated operations per second natively; DEVELOPERS.md)
/// is 25,000 operations.
pub const WRITE_WORK_PER_VALUE: f64 = 25_000.0;

/// Refuse writing `sets` (one file per set, one after another) when the
/// largest one's text would not fit the memory budget beside the values,
/// or writing them all would exceed the work budget.
pub fn check_written(sets: &[crate::frf::FrfSet], limits: &Limits) -> Result<()> {
    let values = |s: &crate::frf::FrfSet| s.data.len() as u64;
    let total = sets.iter().fold(0u64, |a, s| a.saturating_add(values(s)));
    let largest = sets.iter().map(values).max().unwrap_or(0);
    limits.check_bytes(
        &format!("writing the outputs ({total} values; the largest, {largest} values, as text)"),
        total
            .checked_mul(crate::limits::COMPLEX_BYTES)
            .and_then(|b| b.checked_add(largest.checked_mul(WRITE_BYTES_PER_VALUE)?)),
    )?;
    limits.check_work(
        &format!("writing {total} values as text"),
        total as f64 * WRITE_WORK_PER_VALUE,
    )
}
