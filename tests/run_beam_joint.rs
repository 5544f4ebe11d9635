//! Two free–free steel beams joined end to end through `mortise run`: a recipe
//! synthesizes each beam (model "beam", Euler–Bernoulli finite elements,
//! receptance in Z and RY at both ends), couples them at the joined ends, and
//! the driving-point receptance at the free end is read back from the CSV that
//! `mortise run` wrote.
//!
//! Joined rigidly in translation and rotation they form one free–free beam of
//! length L1 + L2: its natural frequencies are f_n = λ_n²/(2πL²)·√(EI/(ρA))
//! with λ_n = 4.73004074, 7.85320462, 10.9956078 (R. D. Blevins, Formulas for
//! Natural Frequency and Mode Shape; values from memory, as listed in
//! /work/shared/REFERENCES.md). Joined in translation only (a hinge) they are
//! not one beam, and the peaks move.

mod common;

use mortise::io::{self, ImportOptions};
use mortise::FrfSet;
use serde_json::json;
use std::f64::consts::PI;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

// steel (common practice values) and a 30 mm × 10 mm flat bar, bending about its weak axis
const E: f64 = 210e9;
const RHO: f64 = 7850.0;
const B: f64 = 0.030;
const H: f64 = 0.010;
const L1: f64 = 0.7;
const L2: f64 = 0.5;
/// Loss factor of the modulus: light damping.
const ETA: f64 = 1e-3;

/// Free–free eigenvalues λ_n = β_n L (Blevins; from memory).
const LAMBDA: [f64; 3] = [4.73004074, 7.85320462, 10.9956078];

fn area() -> f64 {
    B * H
}
fn second_moment() -> f64 {
    B * H * H * H / 12.0
}

/// Handbook natural frequency of the joined free–free beam (Hz).
fn handbook(n: usize) -> f64 {
    let l = L1 + L2;
    LAMBDA[n] * LAMBDA[n] / (2.0 * PI * l * l) * (E * second_moment() / (RHO * area())).sqrt()
}

fn beam(component: &str, length: f64, elements: usize) -> serde_json::Value {
    json!({
        "model": "beam", "component": component,
        "young": E, "second_moment": second_moment(), "density": RHO, "area": area(),
        "length": length, "elements": elements, "loss_factor": ETA,
        "left": "free", "right": "free",
        "at": [0, elements]
    })
}

/// Run the recipe once; returns the output directory.
fn run() -> &'static PathBuf {
    static OUT: OnceLock<PathBuf> = OnceLock::new();
    OUT.get_or_init(|| {
        let dir = common::scratch("run_beam_joint");
        // geometric grid, 0.05 % per line, from below the first to above the
        // fourth free–free frequency of the joined beam
        let (f0, f1) = (0.4 * handbook(0), 2.2 * handbook(2));
        let mut lines = vec![f0];
        while *lines.last().unwrap() < f1 {
            lines.push(lines.last().unwrap() * 1.0005);
        }
        let (n1, n2) = (14, 10); // elements of 50 mm in both beams
        let recipe = json!({
            "format": "mortise-recipe", "version": 1,
            "title": "two free-free steel beams joined end to end",
            "grid": {"lines": lines},
            "components": {
                "left": {"synth": beam("left", L1, n1)},
                "right": {"synth": beam("right", L2, n2)}
            },
            "steps": [
                {"id": "joined", "op": "couple", "parts": ["left", "right"], "joints": [
                    {"a": format!("left:{n1}+Z"), "b": "right:0+Z", "type": "rigid"},
                    {"a": format!("left:{n1}+RY"), "b": "right:0+RY", "type": "rigid"}]},
                {"id": "hinged", "op": "couple", "parts": ["left", "right"], "joints": [
                    {"a": format!("left:{n1}+Z"), "b": "right:0+Z", "type": "rigid"}]},
                {"id": "joined_tip", "op": "select", "from": "joined",
                 "outputs": ["left:0+Z"], "inputs": ["left:0+Z"]},
                {"id": "hinged_tip", "op": "select", "from": "hinged",
                 "outputs": ["left:0+Z"], "inputs": ["left:0+Z"]}
            ],
            "outputs": ["joined_tip", "hinged_tip"]
        });
        let path = dir.join("beams.recipe.json");
        std::fs::write(&path, serde_json::to_string_pretty(&recipe).unwrap()).unwrap();
        let out = dir.join("out");
        let printed = mortise::cli::run_cli(&[
            "run".into(),
            path.to_str().unwrap().into(),
            "-o".into(),
            out.to_str().unwrap().into(),
        ])
        .unwrap();
        assert!(printed.contains("wrote 2 output(s)"), "{printed}");
        out
    })
}

fn load(path: &Path) -> FrfSet {
    let bytes = std::fs::read(path).unwrap();
    let mut l = io::load(&bytes, path.to_str().unwrap(), &ImportOptions::default()).unwrap();
    l.sets.remove(0)
}

/// The frequencies of the local maxima of |H| of a 1×1 set, each refined by
/// the vertex of the parabola through the three lines around it in
/// (f², 1/|H|²): for one mode with a loss factor, H = 1/(k(1 + iη) − ω²m),
/// 1/|H|² = (k − ω²m)² + (ηk)² is exactly quadratic in ω² with its minimum at
/// ω² = k/m (single-DOF receptance, D. J. Ewins, Modal Testing, 2000).
fn peaks(s: &FrfSet) -> Vec<f64> {
    assert_eq!((s.n_out(), s.n_in()), (1, 1));
    let mag: Vec<f64> = (0..s.n_lines()).map(|k| s.get(k, 0, 0).norm()).collect();
    let mut out = Vec::new();
    for k in 1..mag.len() - 1 {
        if mag[k] > mag[k - 1] && mag[k] >= mag[k + 1] {
            let x: Vec<f64> = (k - 1..=k + 1).map(|i| s.freqs[i] * s.freqs[i]).collect();
            let y: Vec<f64> = (k - 1..=k + 1).map(|i| 1.0 / (mag[i] * mag[i])).collect();
            // Newton form of the parabola through (x0,y0), (x1,y1), (x2,y2)
            let d01 = (y[1] - y[0]) / (x[1] - x[0]);
            let d12 = (y[2] - y[1]) / (x[2] - x[1]);
            let a = (d12 - d01) / (x[2] - x[0]);
            let b = d01 - a * (x[0] + x[1]);
            out.push((-b / (2.0 * a)).sqrt());
        }
    }
    out
}

fn errors_pct(found: &[f64]) -> Vec<f64> {
    (0..3)
        .map(|n| 100.0 * (found[n] - handbook(n)) / handbook(n))
        .collect()
}

#[test]
fn rigid_joint_gives_the_free_free_beam_of_the_joined_length() {
    let s = load(&run().join("joined_tip.csv"));
    let f = peaks(&s);
    assert!(f.len() >= 3, "peaks found: {f:?}");
    let err = errors_pct(&f);
    for n in 0..3 {
        eprintln!(
            "mode {}: peak {:.4} Hz, handbook {:.4} Hz, error {:+.4} %",
            n + 1,
            f[n],
            handbook(n),
            err[n]
        );
        // free–free eigenvalues of the joined length L1 + L2 (Blevins, from memory)
        assert!(err[n].abs() < 0.5, "mode {}: {:+.3} %", n + 1, err[n]);
    }
}

#[test]
fn hinge_without_moment_gives_other_frequencies() {
    let hinged = peaks(&load(&run().join("hinged_tip.csv")));
    assert!(hinged.len() >= 3, "peaks found: {hinged:?}");
    let err = errors_pct(&hinged);
    for n in 0..3 {
        eprintln!(
            "hinged, peak {}: {:.4} Hz against the joined beam's {:.4} Hz ({:+.2} %)",
            n + 1,
            hinged[n],
            handbook(n),
            err[n]
        );
    }
    // A hinge carries the shear force but no bending moment, so the two beams
    // are not one continuous beam: the free–free eigenvalues of L1 + L2 (Blevins,
    // from memory) no longer apply, and at least one of the first three
    // frequencies is far off.
    assert!(
        err.iter().any(|e| e.abs() > 5.0),
        "hinged frequencies within 5 % of the continuous beam: {err:?}"
    );
    // Releasing one constraint lowers every natural frequency but not below the
    // next lower one of the constrained system (Rayleigh's theorem of
    // constraint, interlacing of eigenvalues; textbook). The hinge adds a third
    // rigid-body motion (folding), so its n-th flexible frequency lies between
    // the joined beam's n-th and (n+1)-th: f_n ≤ f_hinge,n ≤ f_n+1.
    let joined = peaks(&load(&run().join("joined_tip.csv")));
    for n in 0..3 {
        assert!(
            joined[n] <= hinged[n] && hinged[n] <= joined[n + 1],
            "peak {}: hinged {} Hz not between {} and {} Hz",
            n + 1,
            hinged[n],
            joined[n],
            joined[n + 1]
        );
    }
}
