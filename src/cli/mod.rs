//! The command-line face. [`execute`] turns a command line into what the
//! binary prints on standard output and standard error and its exit code, so
//! tests run exactly what users run. Commands only translate arguments; the
//! work is done by the library modules.
//!
//! The contract:
//! * Every command and option is defined once, in [`spec`]: the parser accepts
//!   exactly those options and the help (`mortise help CMD`, `mortise CMD
//!   --help`, `-h`) is rendered from the same table.
//! * Exit codes ([`exit_code`]): 0 success; 1 bad data or a failed computation
//!   (anything from a file or a recipe, an output that cannot be written); 2 a
//!   bad command line (unknown command or option, missing operand, bad option
//!   value); 3 an internal error (a bug).
//! * With `--json` (inspect, convert, run, couple, audit) standard output holds
//!   exactly one JSON document, also on failure: `"command"`, `"ok"`,
//!   `"exit_code"`, the command's results (per file where it reads several, each
//!   with its own error) and, on failure, `"error"` (kind, file, location,
//!   field, message) and `"message"`. Standard error then holds only the
//!   one-line message.
//! * A usage error is one about the command line. The library cannot tell
//!   whether a value came from the command line or from a file or recipe; the
//!   CLI can, so an error of kind `Usage` raised while processing a file or a
//!   recipe is re-kinded here ([`as_data`]) and exits 1.
//!
//! For the test of exit code 3 through the binary, the environment variable
//! `MORTISE_TEST_FAULT` set to `panic` or `internal` makes a command panic or
//! fail with an internal error before it starts; any other value is refused.

mod args;
pub mod audit;
pub mod convert;
pub mod couple;
pub mod demo;
pub mod diagram;
pub mod inspect;
pub mod limits;
pub mod listen;
pub mod mat_opts;
pub mod orders;
pub mod run;
pub mod spec;
pub mod sweep;
pub mod time_data;

pub use args::Args;

use crate::error::{Error, ErrorKind, Result};
use spec::Command;

/// The caution printed with every prediction (one text for every face).
pub const CAUTION: &str = crate::predict::CAUTION;

/// What a command prints on standard output.
#[derive(Debug, Clone)]
pub enum Body {
    Text(String),
    /// The command's results; the envelope (`command`, `ok`, `exit_code`, `error`) is added by [`execute`].
    Json(serde_json::Map<String, serde_json::Value>),
}

/// What a command produced: its output, and the failure when anything failed
/// (the output then holds what did succeed and, in place, what did not).
#[derive(Debug, Clone)]
pub struct Done {
    pub body: Body,
    pub error: Option<Error>,
}

impl Done {
    pub fn text(s: String) -> Done {
        Done {
            body: Body::Text(s),
            error: None,
        }
    }
    /// JSON results; `v` must be an object (anything else is put under "result").
    pub fn json(v: serde_json::Value) -> Done {
        let map = match v {
            serde_json::Value::Object(m) => m,
            other => {
                let mut m = serde_json::Map::new();
                m.insert("result".into(), other);
                m
            }
        };
        Done {
            body: Body::Json(map),
            error: None,
        }
    }
    pub fn failed(mut self, error: Option<Error>) -> Done {
        self.error = error;
        self
    }
}

/// What one command line produced, as the binary prints it.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// Standard output (with `--json`: exactly one JSON document).
    pub stdout: String,
    /// Standard error (the failure in one message, without JSON).
    pub stderr: String,
    /// The failure, if any; its kind gives the exit code.
    pub error: Option<Error>,
}

impl Outcome {
    pub fn code(&self) -> i32 {
        self.error.as_ref().map_or(0, |e| exit_code(e.kind))
    }
}

/// The exit code of a failure of this kind: the one place kinds map to codes.
pub fn exit_code(kind: ErrorKind) -> i32 {
    match kind {
        ErrorKind::Usage => 2,
        ErrorKind::Internal => 3,
        ErrorKind::Parse
        | ErrorKind::Unit
        | ErrorKind::Dof
        | ErrorKind::Grid
        | ErrorKind::Quantity
        | ErrorKind::Numeric
        | ErrorKind::Missing
        | ErrorKind::Recipe
        | ErrorKind::Unsupported
        | ErrorKind::Io
        | ErrorKind::Budget
        | ErrorKind::Cancelled => 1,
    }
}

/// An error raised while processing data (a file, a recipe) is a data error:
/// `Usage` becomes `kind`; other kinds are kept.
pub fn as_data(mut e: Error, kind: ErrorKind) -> Error {
    if e.kind == ErrorKind::Usage {
        e.kind = kind;
    }
    e
}

/// An internal error (a bug).
pub fn internal(message: impl Into<String>) -> Error {
    Error::new(ErrorKind::Internal, message)
}

/// The JSON form of an error: its fields, and the message as printed.
pub fn error_json(e: &Error) -> serde_json::Value {
    serde_json::to_value(e).unwrap_or_else(|_| serde_json::json!({ "kind": "internal" }))
}

/// Run one command line (without the program name); returns standard output,
/// or the failure. (A command that fails part-way returns only the failure
/// here; [`execute`] keeps both.)
pub fn run_cli(argv: &[String]) -> Result<String> {
    let o = execute(argv);
    match o.error {
        None => Ok(o.stdout),
        Some(e) => Err(e),
    }
}

/// [`execute`] for arguments as the operating system gives them.
pub fn execute_os(argv: impl IntoIterator<Item = std::ffi::OsString>) -> Outcome {
    let mut v = Vec::new();
    for (i, a) in argv.into_iter().enumerate() {
        match a.into_string() {
            Ok(s) => v.push(s),
            Err(a) => {
                let e = Error::usage(format!(
                    "argument {} ({}) is not valid UTF-8; mortise takes file names and values in UTF-8",
                    i + 1,
                    a.to_string_lossy()
                ));
                return finish(None, false, Err(e));
            }
        }
    }
    execute(&v)
}

/// Whether a command line asks for JSON output from a command that has it.
pub fn wants_json(argv: &[String]) -> bool {
    argv.split_first().is_some_and(|(name, rest)| {
        spec::command(name).is_some_and(|c| c.takes_json()) && rest.iter().any(|a| a == "--json")
    })
}

/// The outcome of a panic (a bug): an internal error, in JSON when asked for.
pub fn panic_outcome(argv: &[String], what: &str) -> Outcome {
    let e = internal(format!(
        "internal error (a bug in mortise; please report it with the command line): {what}"
    ));
    let cmd = argv.first().and_then(|n| spec::command(n));
    finish(cmd, wants_json(argv), Err(e))
}

fn fault_injection() -> Result<()> {
    match std::env::var_os("MORTISE_TEST_FAULT") {
        None => Ok(()),
        Some(v) if v == "panic" => panic!("fault injected by MORTISE_TEST_FAULT=panic"),
        Some(v) if v == "internal" => Err(internal(
            "internal error injected by MORTISE_TEST_FAULT=internal",
        )),
        Some(v) => Err(Error::usage(format!(
            "MORTISE_TEST_FAULT='{}': expected panic or internal (a test hook; unset it)",
            v.to_string_lossy()
        ))),
    }
}

/// Run one command line (without the program name).
pub fn execute(argv: &[String]) -> Outcome {
    let Some((name, rest)) = argv.split_first() else {
        return finish(
            None,
            false,
            Err(Error::usage(format!(
                "no command given\n\n{}",
                spec::general_help()
            ))),
        );
    };
    match name.as_str() {
        "--help" | "-h" => return finish(Some(&spec::HELP), false, help(rest)),
        "--version" => {
            return finish(
                Some(&spec::VERSION),
                false,
                Args::parse(rest, &spec::VERSION).and_then(|a| version(&a)),
            )
        }
        _ => {}
    }
    let Some(cmd) = spec::command(name) else {
        return finish(
            None,
            false,
            Err(Error::usage(format!(
                "unknown command '{name}'; the commands are {} ('mortise help' lists them)",
                spec::COMMANDS
                    .iter()
                    .map(|c| c.name)
                    .collect::<Vec<_>>()
                    .join(", ")
            ))),
        );
    };
    let json = wants_json(argv);
    let result = fault_injection()
        .and_then(|()| Args::parse(rest, cmd))
        .and_then(|args| {
            if args.help {
                return Ok(Done::text(cmd.help()));
            }
            match cmd.name {
                "inspect" => inspect::run(&args),
                "convert" => convert::run(&args),
                "run" => run::run(&args),
                "sweep" => sweep::run(&args),
                "merge" => sweep::merge(&args),
                "couple" => couple::run(&args),
                "audit" => audit::run(&args),
                "demo" => demo::run(&args),
                "diagram" => diagram::run(&args),
                "listen" => listen::run(&args),
                "spectrum" => time_data::run(&args, false),
                "estimate" => time_data::run(&args, true),
                "orders" => orders::run(&args),
                "help" => help(&args.positional),
                "version" => version(&args),
                other => Err(internal(format!("command '{other}' has no handler"))),
            }
        });
    finish(Some(cmd), json, result)
}

fn version(args: &Args) -> Result<Done> {
    if let Some(p) = args.positional.first() {
        return Err(Error::usage(format!(
            "'mortise version' takes no operand; found '{p}'"
        )));
    }
    Ok(Done::text(format!("mortise {}\n", crate::VERSION)))
}

/// `mortise help [COMMAND | recipe]`.
fn help(operands: &[String]) -> Result<Done> {
    match operands {
        [] => Ok(Done::text(spec::general_help())),
        [what] if what == "recipe" => Ok(Done::text(recipe_help())),
        [what] => match spec::command(what) {
            Some(c) => Ok(Done::text(c.help())),
            None => Err(Error::usage(format!(
                "no help on '{what}'; 'mortise help' takes one of {}, recipe",
                spec::COMMANDS
                    .iter()
                    .map(|c| c.name)
                    .collect::<Vec<_>>()
                    .join(", ")
            ))),
        },
        [_, extra, ..] => Err(Error::usage(format!(
            "'mortise help' takes one operand; found '{extra}' after it"
        ))),
    }
}

/// `mortise help recipe`. A placeholder until the recipe module provides the
/// schema's help text.
fn recipe_help() -> String {
    crate::recipe::schema_help()
}

/// Turn a command's result into what is printed.
fn finish(cmd: Option<&Command>, json: bool, result: Result<Done>) -> Outcome {
    let (body, error) = match result {
        Ok(d) => (Some(d.body), d.error),
        Err(e) => (None, Some(e)),
    };
    let name = cmd.map_or("", |c| c.name);
    let stdout = match body {
        Some(Body::Text(s)) => s,
        Some(Body::Json(m)) => envelope(name, m, error.as_ref()),
        None if json => envelope(name, serde_json::Map::new(), error.as_ref()),
        None => String::new(),
    };
    let stderr = match &error {
        None => String::new(),
        Some(e) => {
            let mut s = format!("mortise: {e}\n");
            if e.kind == ErrorKind::Usage && !name.is_empty() && name != "help" {
                s.push_str(&format!("(see 'mortise help {name}')\n"));
            }
            s
        }
    };
    Outcome {
        stdout,
        stderr,
        error,
    }
}

fn envelope(
    name: &str,
    results: serde_json::Map<String, serde_json::Value>,
    error: Option<&Error>,
) -> String {
    let mut m = serde_json::Map::new();
    m.insert("command".into(), name.into());
    m.insert("ok".into(), error.is_none().into());
    m.insert(
        "exit_code".into(),
        error.map_or(0, |e| exit_code(e.kind)).into(),
    );
    if let Some(e) = error {
        m.insert("error".into(), error_json(e));
        m.insert("message".into(), e.to_string().into());
    }
    for (k, v) in results {
        m.entry(k).or_insert(v);
    }
    let mut s = serde_json::to_string_pretty(&serde_json::Value::Object(m)).unwrap_or_else(|e| {
        format!("{{\"ok\": false, \"exit_code\": 3, \"message\": \"JSON output failed: {e}\"}}")
    });
    s.push('\n');
    s
}

/// The failure of a command that handles several files, `failed` of `total`
/// of which could not be used: the first failure's kind, its message, and
/// where the others are reported.
pub fn files_failed(failures: &[&Error], total: usize, reported_in: &str) -> Option<Error> {
    let first = failures.first()?;
    if total == 1 {
        return Some((*first).clone());
    }
    Some(Error::new(
        first.kind,
        format!(
            "{} of {total} file(s) could not be used (each is reported {reported_in}); the first: {first}",
            failures.len()
        ),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn v(s: &[&str]) -> Vec<String> {
        s.iter().map(|x| x.to_string()).collect()
    }

    #[test]
    fn every_option_of_every_command_is_in_its_help() {
        for c in spec::COMMANDS {
            let h = c.help();
            assert!(h.contains(&format!("usage: mortise {}", c.name)), "{h}");
            assert!(h.contains("example:\n  mortise "), "{h}");
            for o in c.options() {
                let spelled = if o.name == "help" {
                    "-h, --help".to_string()
                } else if o.is_flag() {
                    o.spelled()
                } else {
                    format!("{} {}", o.spelled(), o.value)
                };
                let line = h
                    .lines()
                    .find(|l| l.trim_start().starts_with(&spelled))
                    .unwrap_or_else(|| panic!("{}: {spelled} missing from\n{h}", c.name));
                // a meaning on the same line or the next
                assert!(
                    line.trim().len() > spelled.len() || h.contains(&format!("{line}\n    ")),
                    "{}: {spelled} has no meaning",
                    c.name
                );
                // and the parser takes it (one definition)
                let mut argv = vec![o.spelled()];
                if !o.is_flag() {
                    argv.push("x".into());
                }
                Args::parse(&argv, c).unwrap_or_else(|e| panic!("{}: {e}", c.name));
            }
            // help is reachable three ways, all the same text
            for form in [
                v(&["help", c.name]),
                v(&[c.name, "--help"]),
                v(&[c.name, "-h"]),
            ] {
                let o = execute(&form);
                assert_eq!(o.code(), 0, "{form:?}: {}", o.stderr);
                assert_eq!(o.stdout, h, "{form:?}");
            }
            // the general help lists it with its one line
            let g = spec::general_help();
            assert!(
                g.lines()
                    .any(|l| l.starts_with(&format!("  {:<10}", c.name))),
                "{g}"
            );
        }
    }

    #[test]
    fn audit_defaults_in_help_are_the_code_defaults() {
        let d = crate::audit::AuditOptions::default();
        for (opt, x) in [
            ("tolerance-db", d.linearity_tol_db),
            ("coherence-min", d.coherence_min),
            ("reciprocity-tol", d.reciprocity_tol),
            ("condition-max", d.condition_max),
        ] {
            let help = spec::AUDIT.option(opt).map_or("", |o| o.help);
            let help = help.split_whitespace().collect::<Vec<_>>().join(" ");
            assert!(help.contains(&format!("(default {x})")), "{opt}: {help}");
        }
    }

    #[test]
    fn exit_codes_by_kind() {
        assert_eq!(exit_code(ErrorKind::Usage), 2);
        assert_eq!(exit_code(ErrorKind::Internal), 3);
        assert_eq!(exit_code(ErrorKind::Recipe), 1);
        assert_eq!(exit_code(ErrorKind::Io), 1);
        let e = as_data(Error::usage("x"), ErrorKind::Recipe);
        assert_eq!(e.kind, ErrorKind::Recipe);
        let e = as_data(Error::dof("x"), ErrorKind::Recipe);
        assert_eq!(e.kind, ErrorKind::Dof);
    }

    #[test]
    fn help_routes() {
        let o = execute(&v(&["help"]));
        assert!(o.stdout.contains("mortise help COMMAND"), "{}", o.stdout);
        assert_eq!(execute(&v(&["--help"])).stdout, o.stdout);
        let r = execute(&v(&["help", "recipe"]));
        assert_eq!(r.code(), 0);
        // the schema generated from the recipe definitions
        assert!(r.stdout.contains("blocked-forces") && r.stdout.contains("spring-damper"));
        assert_eq!(execute(&v(&["help", "bogus"])).code(), 2);
        assert_eq!(execute(&v(&["help", "run", "x"])).code(), 2);
        assert_eq!(execute(&v(&[])).code(), 2);
        let u = execute(&v(&["frobnicate"]));
        assert_eq!(u.code(), 2);
        assert!(u.stderr.contains("unknown command 'frobnicate'"));
        assert!(execute(&v(&["--version"])).stdout.starts_with("mortise "));
        assert_eq!(execute(&v(&["version", "x"])).code(), 2);
    }
}
