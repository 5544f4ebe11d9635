//! `mortise demo [-o DIR] [--check]`: write the demo scenario's supplier files
//! and its recipe ([`crate::demo_files`]), synthesized deterministically by
//! mortise itself; with `--check`, compare with the files in DIR instead and
//! fail if any differs (so the committed files stay what the code makes).
//! Every value is invented.

use super::{Args, Done};
use crate::demo_files::files;
use crate::error::{Error, Result};
use std::fmt::Write as _;
use std::path::PathBuf;

pub fn run(args: &Args) -> Result<Done> {
    if let Some(p) = args.positional.first() {
        return Err(Error::usage(format!(
            "demo takes no operand; found '{p}' (the directory is given with -o DIR)"
        )));
    }
    let dir = PathBuf::from(args.value("o").unwrap_or("sample-frf"));
    let check = args.flag("check");
    let mut out = String::new();
    if !check {
        std::fs::create_dir_all(&dir)
            .map_err(|e| Error::io(format!("cannot create '{}': {e}", dir.display())))?;
    }
    let mut stale = Vec::new();
    for (name, bytes) in files()? {
        let p = dir.join(&name);
        if check {
            match std::fs::read(&p) {
                Ok(old) if old == bytes => {}
                _ => stale.push(name.clone()),
            }
            continue;
        }
        std::fs::write(&p, &bytes)
            .map_err(|e| Error::io(format!("cannot write '{}': {e}", p.display())))?;
        let _ = writeln!(out, "wrote {} ({} bytes)", p.display(), bytes.len());
    }
    if check {
        if !stale.is_empty() {
            return Err(Error::io(format!(
                "demo files in '{}' differ from what this build synthesizes: {}; run `mortise demo -o {}` and commit them",
                dir.display(),
                stale.join(", "),
                dir.display()
            )));
        }
        let _ = writeln!(out, "demo files in {} are current", dir.display());
    }
    Ok(Done::text(out))
}
