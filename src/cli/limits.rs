//! `--budget-gb` and `--work-budget`: the resource budget of a command that
//! computes (run, couple, convert), read into [`Limits`]. The options are in
//! [`super::spec::LIMITS_GROUP`].

use super::Args;
use crate::error::Result;
use crate::limits::Limits;

/// The limits the command line asks for: the defaults, with `--budget-gb`
/// and `--work-budget` applied where given.
pub fn from_args(args: &Args) -> Result<Limits> {
    let mut l = Limits::default();
    if let Some(t) = args.value("budget-gb") {
        l = l.with_budget_gb(t)?;
    }
    if let Some(t) = args.value("work-budget") {
        l = l.with_work_budget(t)?;
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
