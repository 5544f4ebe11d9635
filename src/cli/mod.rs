//! The command-line face. Each command is a function from arguments to the
//! text it prints, so tests call exactly what a user runs. Commands only
//! translate arguments; the work is done by the library modules.

mod args;
pub mod audit;
pub mod convert;
pub mod couple;
pub mod demo;
pub mod inspect;
pub mod run;

pub use args::Args;

use crate::error::{Error, Result};

pub const USAGE: &str = "\
mortise: FRF coupling and transfer-path prediction, offline

usage:
  mortise inspect FILE... [--json] [column-map options]
  mortise convert IN... -o OUT [--to uff|uff-binary|csv|bundle] [--kind KIND] [--units si]
                 [--grid finest|coarsest|START:STOP:STEP] [--interp re-im|log-mag-phase]
                 [column-map options]
  mortise run RECIPE -o OUTDIR
  mortise couple A.uff B.csv --join 'A:1+Z=B:1+Z' ... -o OUT
  mortise audit FILE... [--json] [--tolerance-db X] [--coherence-min X]
                 [--reciprocity-tol X] [--condition-max X] [--pair A,B]
  mortise demo [-o DIR] [--check]
  mortise help [COMMAND]

column-map options (inspect and convert; for CSV/TSV not in mortise's own layout):
  --map MAP.json | --delim auto|comma|semicolon|tab|space --skip N --header-line N
  --decimal point|comma --freq-col C --freq-unit hz|khz|rad/s
  per FRF: --out-dof D --in-dof D and (--re C --im C | --mag C --phase C | --value C
           | --stiffness C --loss C) [--coh C]
  --mag-db-ref R --phase-unit deg|rad --unit U --out-qty Q --in-qty Q
  --signal peak|rms|autopower|psd --time-convention +iwt|-iwt --set-name NAME --component NAME
  (C is a 1-based column number or a header name; 'mortise inspect --help' explains each)

Every prediction is an engineering estimate under a linear, small-amplitude
model of the data supplied; it does not replace measurement, local
regulations, or the judgement of a licensed professional.
";

/// The caution printed with every prediction (one text for every face).
pub const CAUTION: &str = crate::predict::CAUTION;

/// Run one command line (without the program name); returns what to print.
pub fn run_cli(argv: &[String]) -> Result<String> {
    let Some((cmd, rest)) = argv.split_first() else {
        return Ok(USAGE.to_string());
    };
    let args = Args::parse(rest)?;
    match cmd.as_str() {
        "inspect" => inspect::run(&args),
        "convert" => convert::run(&args),
        "run" => run::run(&args),
        "couple" => couple::run(&args),
        "audit" => audit::run(&args),
        "demo" => demo::run(&args),
        "help" | "--help" | "-h" => Ok(USAGE.to_string()),
        "--version" | "version" => Ok(format!("mortise {}\n", crate::VERSION)),
        other => Err(Error::usage(format!(
            "unknown command '{other}'\n\n{USAGE}"
        ))),
    }
}
