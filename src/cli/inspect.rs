//! `mortise inspect` (being built).

use super::Args;
use crate::error::{Error, Result};

pub fn run(args: &Args) -> Result<String> {
    let _ = args;
    Err(Error::unsupported("'inspect' is not built yet"))
}
