//! `mortise diagram RECIPE [-o FILE.svg]`: the assembly a recipe describes,
//! drawn by [`crate::plot::assembly_svg`] (the page draws the same); with
//! `--step ID`, the geometry of a to-virtual-points step, resolved by
//! [`crate::recipe::virtual_point_plan`] and drawn by
//! [`crate::plot::vpt_geometry_svg`].

use super::{as_data, Args, Done};
use crate::error::{Error, ErrorKind, Result};
use crate::io;
use crate::plot::assembly_svg;
use crate::recipe::{self, DirSource};
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
    if let Some(step) = args.value("step") {
        return vpt_geometry(args, path, &r, step, &limits);
    }
    // the options that only the geometry drawing uses
    for name in ["read-outside", "budget-gb", "work-budget"] {
        if args.flag(name) || args.value(name).is_some() {
            return Err(Error::usage(format!(
                "--{name} applies with --step only: the assembly is drawn without reading the files the recipe names"
            )));
        }
    }
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

/// `--step ID`: the geometry of a to-virtual-points step.
fn vpt_geometry(
    args: &Args,
    path: &str,
    r: &recipe::Recipe,
    step: &str,
    limits: &crate::limits::Limits,
) -> Result<Done> {
    let dir = Path::new(path)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    let folder = if args.flag("read-outside") {
        DirSource::anywhere(dir, *limits)
    } else {
        DirSource::confined(dir, *limits)
    };
    let (geom, plan) = recipe::virtual_point_plan(r, step, &folder, limits)
        .map_err(|e| as_data(e, ErrorKind::Recipe).in_file(path))?;
    let d = crate::plot::vpt_geometry_svg(step, &geom, &plan.points)?;
    match args.value("o") {
        None => Ok(Done::text(d.svg + "\n")),
        Some(out) => {
            std::fs::write(out, format!("{}\n", d.svg))
                .map_err(|e| Error::io(format!("cannot write '{out}': {e}")))?;
            let channels: usize = plan.points.iter().map(|p| p.sensors.len()).sum();
            let impacts: usize = plan.points.iter().map(|p| p.impacts.len()).sum();
            Ok(Done::text(format!(
                "wrote {out} ({} × {} px): step '{}', {} virtual point(s), {channels} sensor channel(s), {impacts} impact(s) in three views\n",
                d.width,
                d.height,
                crate::error::quote(step),
                plan.points.len()
            )))
        }
    }
}
