//! `mortise sweep RECIPE [--shard K/N] -o DIR`: the recipe's sweep (or, with
//! `--monte-carlo N --seed S`, the draws of a Monte Carlo of its uncertain
//! components), whole or one contiguous slice of its points, written as
//! DIR/NAME.sweep.csv; and
//! `mortise merge DIR... -o OUT`: shards folded into the file of the whole
//! sweep, byte for byte the one an unsharded run writes.

use super::{as_data, Args, Done};
use crate::error::{quote, Error, ErrorKind, Result};
use crate::io;
use crate::recipe;
use std::path::{Path, PathBuf};

/// `--shard K/N`, checked (K from 1 to N).
fn shard(args: &Args) -> Result<Option<(usize, usize)>> {
    let Some(t) = args.value("shard") else {
        return Ok(None);
    };
    let (k, n) = t
        .split_once('/')
        .and_then(|(k, n)| Some((k.trim().parse().ok()?, n.trim().parse().ok()?)))
        .ok_or_else(|| {
            Error::usage(format!(
                "--shard '{}': expected K/N, two whole numbers (for example 2/8)",
                quote(t)
            ))
        })?;
    // K and N checked with the slice rule
    recipe::shard_slice(0, k, n).map_err(|e| Error::usage(format!("--shard: {}", e.message)))?;
    Ok(Some((k, n)))
}

/// `--threads T`: 1 to 256 (default 2).
fn threads(args: &Args) -> Result<usize> {
    match args.value("threads") {
        None => Ok(2),
        Some(t) => t
            .trim()
            .parse::<usize>()
            .ok()
            .filter(|n| (1..=256).contains(n))
            .ok_or_else(|| {
                Error::usage(format!(
                    "--threads '{}': expected a whole number from 1 to 256",
                    quote(t)
                ))
            }),
    }
}

pub fn run(args: &Args) -> Result<Done> {
    let path = match args.positional.as_slice() {
        [p] => p,
        [] => return Err(Error::usage("sweep needs a RECIPE file")),
        more => {
            return Err(Error::usage(format!(
                "sweep takes one RECIPE; found {} operands",
                more.len()
            )))
        }
    };
    let out = PathBuf::from(
        args.value("o")
            .ok_or_else(|| Error::usage("sweep needs -o DIR"))?,
    );
    let shard = shard(args)?;
    let threads = threads(args)?;
    let limits = super::limits::from_args(args)?;
    let bytes = io::disk::read_file(Path::new(path), path, &limits)?;
    let sha = io::sha256_hex(&bytes);
    let folder = super::run::recipe_folder(path, args, limits);
    let text = String::from_utf8(bytes).map_err(|e| {
        Error::parse("a recipe is UTF-8 text; this byte does not begin a UTF-8 character")
            .at_byte(e.utf8_error().valid_up_to())
            .in_file(path.as_str())
    })?;
    let data = |e: Error| as_data(e, ErrorKind::Recipe).in_file(path.as_str());
    let r = recipe::parse(&text).map_err(data)?;
    let sw = if let Some(mc) = super::run::monte_carlo_options(args)? {
        // the draws of a Monte Carlo, as a sweep over the draw index
        let range = match shard {
            Some((k, n)) => Some(recipe::shard_slice(mc.draws, k, n)?),
            None => None,
        };
        recipe::monte_carlo_draws(&r, &folder, &limits, mc, range, threads).map_err(data)?
    } else {
        let spec = r.sweep.as_ref().ok_or_else(|| {
            data(Error::recipe(
                "the recipe has no \"sweep\" section ('mortise help recipe' describes it); give --monte-carlo N for a Monte Carlo of its uncertain components",
            )
            .field("sweep"))
        })?;
        let total = spec.points(&r).map_err(|e| data(e.within("sweep")))?.len();
        let range = match shard {
            Some((k, n)) => Some(recipe::shard_slice(total, k, n)?),
            None => None,
        };
        recipe::run_sweep(&r, &folder, &limits, range, threads).map_err(data)?
    };
    let file = super::run::write_sweep(&sw, &sha, &out)?;
    let mut s = format!(
        "sweep '{}' of {}: points {}..{} of {} written to {file}\n",
        sw.name, sw.parameter, sw.first, sw.end, sw.total
    );
    if shard.is_none() {
        for h in recipe::sweep_headline(&sw) {
            s.push_str(&h);
            s.push('\n');
        }
    }
    Ok(Done::text(s))
}

/// `mortise merge DIR... -o OUT`: every `*.sweep.csv` of each DIR.
pub fn merge(args: &Args) -> Result<Done> {
    if args.positional.is_empty() {
        return Err(Error::usage("merge needs one or more shard directories"));
    }
    let out = PathBuf::from(
        args.value("o")
            .ok_or_else(|| Error::usage("merge needs -o OUT (a directory)"))?,
    );
    let limits = super::limits::from_args(args)?;
    // by sweep name: the shard files found
    let mut found: std::collections::BTreeMap<String, Vec<(String, String)>> =
        std::collections::BTreeMap::new();
    for d in &args.positional {
        let entries = std::fs::read_dir(d).map_err(|e| {
            Error::io(format!("cannot list '{}': {e}", quote(d))).in_file(d.as_str())
        })?;
        let mut names: Vec<String> = entries
            .filter_map(|e| e.ok())
            .filter_map(|e| e.file_name().to_str().map(String::from))
            .filter(|n| n.ends_with(".sweep.csv"))
            .collect();
        names.sort();
        if names.is_empty() {
            return Err(Error::missing(format!(
                "'{}' holds no NAME.sweep.csv shard file",
                quote(d)
            ))
            .in_file(d.as_str()));
        }
        for n in names {
            let p = Path::new(d).join(&n);
            let shown = p.display().to_string();
            let b = io::disk::read_file(&p, &shown, &limits)?;
            let t = String::from_utf8(b).map_err(|e| {
                Error::parse("a sweep file is UTF-8 text")
                    .at_byte(e.utf8_error().valid_up_to())
                    .in_file(shown.as_str())
            })?;
            found.entry(n).or_default().push((shown, t));
        }
    }
    let mut s = String::new();
    for (name, shards) in &found {
        let merged = recipe::merge_sweep_csv(shards)?;
        std::fs::create_dir_all(&out)
            .map_err(|e| Error::io(format!("cannot create '{}': {e}", out.display())))?;
        let p = out.join(name);
        std::fs::write(&p, merged)
            .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
        s.push_str(&format!(
            "merged {} shard(s) into {}\n",
            shards.len(),
            p.display()
        ));
    }
    Ok(Done::text(s))
}
