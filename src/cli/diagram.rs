//! `mortise diagram RECIPE [-o FILE.svg]`: the assembly a recipe describes,
//! drawn by [`crate::plot::assembly_svg`] (the page draws the same).

use super::{as_data, Args, Done};
use crate::error::{Error, ErrorKind, Result};
use crate::io;
use crate::plot::assembly_svg;
use crate::recipe;
use std::path::Path;

pub fn run(args: &Args) -> Result<Done> {
    let path = match args.positional.as_slice() {
        [p] => p,
        [] => return Err(Error::usage("diagram needs a RECIPE file")),
        more => {
            return Err(Error::usage(format!(
                "diagram takes one RECIPE; found {} operands ({})",
                more.len(),
                more.join(" ")
            )))
        }
    };
    let limits = super::limits::from_args(args)?;
    let bytes = io::disk::read_file(Path::new(path), path, &limits)?;
    if matches!(io::detect(&bytes, path), Ok(io::Format::Bundle)) {
        return Err(Error::recipe(
            "this is a bundle; diagram draws a recipe file (save the bundle's recipe as a file first)",
        )
        .in_file(path.as_str()));
    }
    let text = String::from_utf8(bytes).map_err(|e| {
        Error::parse("a recipe is UTF-8 text; this byte does not begin a UTF-8 character")
            .at_byte(e.utf8_error().valid_up_to())
            .in_file(path.as_str())
    })?;
    let r =
        recipe::parse(&text).map_err(|e| as_data(e, ErrorKind::Recipe).in_file(path.as_str()))?;
    let d = assembly_svg(&r)?;
    match args.value("o") {
        None => Ok(Done::text(d.svg + "\n")),
        Some(out) => {
            std::fs::write(out, format!("{}\n", d.svg))
                .map_err(|e| Error::io(format!("cannot write '{out}': {e}")))?;
            let count = |k: &str| d.items.iter().filter(|i| i.kind == k).count();
            Ok(Done::text(format!(
                "wrote {out} ({} × {} px): {} component(s), {} step(s), {} joint(s) drawn\n",
                d.width,
                d.height,
                count("component"),
                count("step"),
                count("joint")
            )))
        }
    }
}
