//! `mortise demo` (being built).

use super::Args;
use crate::error::{Error, Result};

pub fn run(args: &Args) -> Result<String> {
    let _ = args;
    Err(Error::unsupported("'demo' is not built yet"))
}
