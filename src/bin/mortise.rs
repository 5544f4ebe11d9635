//! The `mortise` command. All work is in the library (`mortise::cli`); this
//! prints what it produced and exits with its code (0 success, 1 bad data or
//! a failed computation, 2 a bad command line, 3 an internal error: see
//! `mortise::cli::exit_code`). A panic is a bug: it is reported as an
//! internal error (exit 3), in the JSON document when `--json` was asked for.

use std::io::Write as _;
use std::sync::Mutex;

static PANIC: Mutex<Option<String>> = Mutex::new(None);

fn main() {
    let argv: Vec<std::ffi::OsString> = std::env::args_os().skip(1).collect();
    std::panic::set_hook(Box::new(|info| {
        let what = match (
            info.payload().downcast_ref::<&str>(),
            info.payload().downcast_ref::<String>(),
        ) {
            (Some(s), _) => s.to_string(),
            (_, Some(s)) => s.clone(),
            _ => "a panic".to_string(),
        };
        let at = info
            .location()
            .map(|l| format!(" at {}:{}", l.file(), l.line()))
            .unwrap_or_default();
        if let Ok(mut p) = PANIC.lock() {
            *p = Some(format!("{what}{at}"));
        }
    }));
    let outcome = std::panic::catch_unwind(|| mortise::cli::execute_os(argv.clone()))
        .unwrap_or_else(|_| {
            let what = PANIC
                .lock()
                .ok()
                .and_then(|mut p| p.take())
                .unwrap_or_else(|| "a panic".to_string());
            let text: Vec<String> = argv
                .iter()
                .map(|a| a.to_string_lossy().into_owned())
                .collect();
            mortise::cli::panic_outcome(&text, &what)
        });
    // a closed pipe (e.g. `| head`) is not an error of the command
    let _ = std::io::stdout().write_all(outcome.stdout.as_bytes());
    let _ = std::io::stdout().flush();
    let _ = std::io::stderr().write_all(outcome.stderr.as_bytes());
    std::process::exit(outcome.code());
}
