//! Helpers for the tests that run the real `mortise` binary: what it printed
//! on standard output and standard error, and its exit code, kept apart.
#![allow(dead_code)]

use mortise::frf::{Direction, Dof, FrfSet};
use mortise::io::{save, ExportFormat};
use mortise::units::Quantity;
use num_complex::Complex64;
use std::path::Path;
use std::process::Command;

/// What one run of the binary produced.
#[derive(Debug)]
pub struct Ran {
    pub stdout: String,
    pub stderr: String,
    pub code: i32,
}

impl Ran {
    /// Standard output as JSON; fails the test, showing both streams, when it is not.
    pub fn json(&self) -> serde_json::Value {
        serde_json::from_str(&self.stdout).unwrap_or_else(|e| {
            panic!(
                "stdout is not one JSON document ({e})\n--- stdout\n{}\n--- stderr\n{}",
                self.stdout, self.stderr
            )
        })
    }
}

/// Run `mortise ARGS` in `cwd` with extra environment variables.
pub fn mortise_in(cwd: &Path, args: &[&str], env: &[(&str, &str)]) -> Ran {
    let mut c = Command::new(env!("CARGO_BIN_EXE_mortise"));
    c.args(args)
        .current_dir(cwd)
        .env_remove("MORTISE_TEST_FAULT");
    for (k, v) in env {
        c.env(k, v);
    }
    let out = c.output().expect("the mortise binary runs");
    Ran {
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
        // None only when killed by a signal: never a valid exit code
        code: out.status.code().unwrap_or(-1),
    }
}

/// Run `mortise ARGS` in `cwd`.
pub fn mortise(cwd: &Path, args: &[&str]) -> Ran {
    mortise_in(cwd, args, &[])
}

/// Receptance of a grounded single-DOF oscillator, 1/(k − ω²m + iωc)
/// (e^{+iωt}), at DOF `component:1+Z`, on 1..=`n` Hz in steps of 1 Hz.
pub fn sdof(component: &str, m: f64, k: f64, c: f64, n: usize) -> FrfSet {
    let d = Dof::new(component, "1", Direction::Z);
    let f: Vec<f64> = (1..=n).map(|i| i as f64).collect();
    let mut h = FrfSet::zeros(
        component,
        f,
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    for l in 0..h.n_lines() {
        let w = h.omega(l);
        h.set(l, 0, 0, 1.0 / Complex64::new(k - w * w * m, w * c));
    }
    h
}

/// Write `set` to `path` in `fmt`.
pub fn write(path: &Path, set: &FrfSet, fmt: ExportFormat) {
    let bytes = save(std::slice::from_ref(set), fmt).unwrap();
    if let Some(d) = path.parent() {
        std::fs::create_dir_all(d).unwrap();
    }
    std::fs::write(path, bytes).unwrap();
}

/// A UFF 58 file whose line `line` (1-based) has a word that is not a number
/// in place of its first value.
pub fn corrupt_uff(good: &Path, bad: &Path, line: usize) {
    let text = std::fs::read_to_string(good).unwrap();
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let l = &mut lines[line - 1];
    *l = format!("  abc   {}", &l[8..]);
    std::fs::write(bad, lines.join("\n") + "\n").unwrap();
}
