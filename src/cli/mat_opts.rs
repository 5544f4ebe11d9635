//! The MAT-file options of `inspect` and `convert` (defined in
//! [`super::spec::MAT_OPTS`]): a [`MatMap`] from `--mat-*` and the shared
//! column-map options, or from a saved mapping (`--mat-map`). Options that
//! only a CSV column map uses are refused beside them, by name.

use super::Args;
use crate::error::{Error, Result};
use crate::frf::SignalKind;
use crate::io::csv::FreqUnit;
use crate::io::mat::{self, MatLayout, MatMap};
use crate::units::Quantity;
use std::path::Path;

/// Column-map options that mean nothing for a MAT-file.
const CSV_ONLY: &[&str] = &[
    "map",
    "delim",
    "skip",
    "header-line",
    "decimal",
    "freq-col",
    "re",
    "im",
    "mag",
    "phase",
    "value",
    "stiffness",
    "loss",
    "coh",
    "mag-db-ref",
    "phase-unit",
];

/// Options the MAT mapping shares with the column map.
const SHARED: &[&str] = &[
    "out-dof",
    "in-dof",
    "unit",
    "out-qty",
    "in-qty",
    "freq-unit",
    "time-convention",
    "set-name",
];

/// The MAT mapping the command line gives, or `None` when no `--mat-*`
/// option is given.
pub fn mat_map(args: &Args, signal: Option<SignalKind>) -> Result<Option<MatMap>> {
    let given: Vec<&str> = super::spec::MAT_OPTS
        .iter()
        .map(|o| o.name)
        .filter(|n| args.flag(n))
        .collect();
    if given.is_empty() {
        return Ok(None);
    }
    if let Some(c) = CSV_ONLY.iter().find(|n| args.flag(n)) {
        return Err(Error::usage(format!(
            "--{c} is a CSV column-map option; with the MAT-file options (--{}) it has no meaning",
            given[0]
        )));
    }
    if let Some(path) = args.value("mat-map") {
        if let Some(o) = given
            .iter()
            .chain(SHARED.iter())
            .find(|n| **n != "mat-map" && args.flag(n))
        {
            return Err(Error::usage(format!(
                "give either --mat-map or the MAT-file options (--{o}, ...), not both"
            )));
        }
        let bytes =
            crate::io::disk::read_file(Path::new(path), path, &super::limits::from_args(args)?)?;
        let value: serde_json::Value = serde_json::from_slice(&bytes).map_err(|e| {
            Error::parse(format!("not a MAT mapping: {e}"))
                .at_line(e.line().max(1))
                .in_file(path)
        })?;
        return mat::map_from_json(value)
            .map(Some)
            .map_err(|e| e.in_file(path));
    }
    let need = |name: &str, what: &str| -> Result<String> {
        args.value(name)
            .map(str::to_string)
            .ok_or_else(|| Error::usage(format!("the MAT-file options need --{name} ({what})")))
    };
    let freq = need("mat-freq", "the variable holding the frequencies")?;
    let frf = need("mat-frf", "the variable holding the FRFs")?;
    let layout = MatLayout::parse(&need(
        "mat-layout",
        "out-in-freq, freq-out-in, freq-frf or frf-freq",
    )?)
    .map_err(|e| Error::usage(format!("--mat-layout: {}", e.message)))?;
    let q = |name: &str| -> Result<Option<Quantity>> {
        args.value(name)
            .map(|v| {
                Quantity::parse(v).map_err(|e| Error::usage(format!("--{name}: {}", e.message)))
            })
            .transpose()
    };
    let out_qty = q("out-qty")?.ok_or_else(|| {
        Error::usage(
            "the MAT-file options need --out-qty (displacement, velocity, acceleration, force, ...)",
        )
    })?;
    let in_qty = q("in-qty")?;
    if in_qty.is_none() && signal.is_none() {
        return Err(Error::usage(
            "the MAT-file options need --in-qty (force, displacement, ...), or --signal for spectra",
        ));
    }
    let freq_unit = match args.value("freq-unit") {
        Some(u) => FreqUnit::parse(u)?,
        None => FreqUnit::Hz,
    };
    let conjugate = match args.value("time-convention") {
        None | Some("+iwt") | Some("+iωt") => false,
        Some("-iwt") | Some("-iωt") => true,
        Some(o) => {
            return Err(Error::usage(format!(
                "--time-convention '{o}': expected +iwt or -iwt"
            )))
        }
    };
    let list =
        |name: &str| -> Vec<String> { args.values(name).iter().map(|s| s.to_string()).collect() };
    Ok(Some(MatMap {
        freq,
        freq_unit,
        frf,
        layout,
        out_dofs: list("out-dof"),
        in_dofs: list("in-dof"),
        out_dofs_var: args.value("mat-out-dofs-var").map(str::to_string),
        in_dofs_var: args.value("mat-in-dofs-var").map(str::to_string),
        unit: args.value("unit").unwrap_or("").to_string(),
        out_qty,
        in_qty,
        conjugate,
        name: args.value("set-name").map(str::to_string),
    }))
}
