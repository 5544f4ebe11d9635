//! Helpers shared by the integration tests.
#![allow(dead_code)]

use std::path::PathBuf;
use std::process::Command;

/// The Python interpreter of the cross-check venv: `$MORTISE_PYTHON`, or
/// `.venv/bin/python` at the crate root (made by `./build.sh test`).
pub fn python() -> PathBuf {
    if let Ok(p) = std::env::var("MORTISE_PYTHON") {
        return PathBuf::from(p);
    }
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(".venv/bin/python")
}

/// Run a script from tests/py with arguments; panics with its stderr on failure
/// (a cross-check that cannot run is a failed test, never a skipped one).
pub fn run_py(script: &str, args: &[&str]) -> String {
    let py = python();
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/py")
        .join(script);
    let out = Command::new(&py)
        .arg(&path)
        .args(args)
        .output()
        .unwrap_or_else(|e| {
            panic!(
                "cannot start {}: {e}; run ./build.sh test, which makes the venv",
                py.display()
            )
        });
    assert!(
        out.status.success(),
        "{} {} failed:\n{}",
        py.display(),
        script,
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// A fresh scratch directory under target/.
pub fn scratch(name: &str) -> PathBuf {
    let d = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("target/test-scratch")
        .join(name);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}
