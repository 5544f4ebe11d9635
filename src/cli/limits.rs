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
