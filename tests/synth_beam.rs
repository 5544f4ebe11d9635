//! Euler–Bernoulli beam finite elements against handbook eigenvalues
//! (R. D. Blevins, Formulas for Natural Frequency and Mode Shape; values from
//! memory as listed in /work/shared/REFERENCES.md) and against
//! scipy.linalg.eigh of the same K and M (tests/py/synth_ref.py).

#![allow(clippy::needless_range_loop)]

mod common;

use mortise::synth::beam::{beam_frequency, clamped_free_lambda, free_free_lambda};
use mortise::synth::{Beam, BeamEnd, SystemMatrices};
use mortise::{Direction, FrfSet};
use nalgebra::DMatrix;
use serde_json::{json, Value};
use std::f64::consts::PI;

// steel flat bar 40 mm × 8 mm, 1.2 m long
const E: f64 = 2.1e11;
const RHO: f64 = 7850.0;
const A: f64 = 0.040 * 0.008;
const I: f64 = 0.040 * 0.008 * 0.008 * 0.008 / 12.0;
const L: f64 = 1.2;

fn beam(left: BeamEnd, right: BeamEnd, eta: f64) -> Beam {
    Beam {
        component: "bar".into(),
        young: E,
        second_moment: I,
        density: RHO,
        area: A,
        length: L,
        elements: 30,
        loss_factor: eta,
        rayleigh: None,
        left,
        right,
    }
}

fn mat(m: &DMatrix<f64>) -> Value {
    json!((0..m.nrows())
        .map(|i| (0..m.ncols()).map(|j| m[(i, j)]).collect::<Vec<_>>())
        .collect::<Vec<_>>())
}

fn scipy_eigh(name: &str, s: &SystemMatrices) -> Vec<f64> {
    let dir = common::scratch(name);
    let p = dir.join("km.json");
    std::fs::write(&p, json!({"m": mat(&s.m), "k": mat(&s.k)}).to_string()).unwrap();
    let out = common::run_py("synth_ref.py", &["eigh", p.to_str().unwrap()]);
    let v: Value = serde_json::from_str(&out).unwrap();
    v["eig_hz"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn check(name: &str, b: &Beam, rigid: usize, lambdas: &[f64]) {
    let fe = b.natural_frequencies(rigid + lambdas.len()).unwrap();
    let sp = scipy_eigh(name, &b.matrices().unwrap());
    for r in 0..rigid {
        assert!(fe[r] < 1e-3, "{name}: rigid-body mode {r} at {} Hz", fe[r]);
    }
    for (n, &lam) in lambdas.iter().enumerate() {
        let want = beam_frequency(lam, E, I, RHO, A, L);
        let got = fe[rigid + n];
        let rel = (got - want).abs() / want;
        let rel_sp = (got - sp[rigid + n]).abs() / want;
        println!("{name} mode {}: FE {got:.4} Hz, handbook {want:.4} Hz (rel. {rel:.2e}), scipy eigh rel. {rel_sp:.2e}", n + 1);
        assert!(rel < 0.005, "{name} mode {}: {rel}", n + 1);
        assert!(rel_sp < 1e-8, "{name} mode {} vs scipy: {rel_sp}", n + 1);
    }
}

#[test]
fn free_free_eigenvalues() {
    // λ_n = 4.73004074, 7.85320462, 10.9956078, 14.1371655 (Blevins; from memory)
    check(
        "ff",
        &beam(BeamEnd::Free, BeamEnd::Free, 0.0),
        2,
        &[4.73004074, 7.85320462, 10.9956078, 14.1371655],
    );
}

#[test]
fn clamped_free_eigenvalues() {
    // λ_n = 1.87510407, 4.69409113, 7.85475744 (Blevins; from memory)
    check(
        "cf",
        &beam(BeamEnd::Clamped, BeamEnd::Free, 0.0),
        0,
        &[1.87510407, 4.69409113, 7.85475744],
    );
}

#[test]
fn pinned_pinned_eigenvalues() {
    // λ_n = nπ (Blevins; from memory)
    check(
        "pp",
        &beam(BeamEnd::Pinned, BeamEnd::Pinned, 0.0),
        0,
        &[PI, 2.0 * PI, 3.0 * PI],
    );
}

#[test]
fn transcendental_roots_match_handbook() {
    // the helpers solve cos λ cosh λ = ±1; compare with the handbook values (Blevins; from memory)
    for (n, want) in [4.73004074, 7.85320462, 10.9956078, 14.1371655]
        .iter()
        .enumerate()
    {
        assert!((free_free_lambda(n + 1) - want).abs() < 2e-7, "{n}");
    }
    for (n, want) in [1.87510407, 4.69409113, 7.85475744].iter().enumerate() {
        assert!((clamped_free_lambda(n + 1) - want).abs() < 2e-7, "{n}");
    }
}

fn peak_near(h: &FrfSet, i: usize) -> f64 {
    let l = (0..h.n_lines())
        .max_by(|&a, &b| h.get(a, i, i).norm().total_cmp(&h.get(b, i, i).norm()))
        .unwrap();
    h.freqs[l]
}

#[test]
fn receptance_peaks_sit_on_the_handbook_frequencies() {
    // a lightly damped free–free bar (η = 0.002): the driving-point receptance
    // at the end peaks at the first flexible frequencies (Blevins; from memory).
    let b = beam(BeamEnd::Free, BeamEnd::Free, 0.002);
    for lam in [4.73004074, 7.85320462] {
        let f0 = beam_frequency(lam, E, I, RHO, A, L);
        let step = f0 * 1e-4;
        let freqs: Vec<f64> = (0..=400).map(|i| f0 * 0.98 + i as f64 * step).collect();
        let h = b.receptance(&freqs, &[]).unwrap();
        assert_eq!(h.outputs.len(), 4, "Z and RY at both ends");
        let fp = peak_near(&h, 0);
        let rel = (fp - f0).abs() / f0;
        println!("peak {fp:.4} Hz, handbook {f0:.4} Hz, rel. {rel:.2e} (grid step 1e-4 relative)");
        assert!(rel < 0.005);
    }
}

#[test]
fn beam_receptance_is_passive_and_reciprocal() {
    // Im H_ii ≤ 0 (passivity, e^{+iωt}); H_ij = H_ji (Maxwell–Betti reciprocity); textbook
    let mut b = beam(BeamEnd::Clamped, BeamEnd::Pinned, 0.01);
    b.rayleigh = Some(mortise::synth::Rayleigh {
        alpha: 2.0,
        beta: 1e-6,
    });
    let freqs: Vec<f64> = (0..500).map(|i| 2.0 * i as f64).collect();
    let h = b.receptance(&freqs, &[0, 10, 30]).unwrap();
    // clamped node 0 has no DOFs; pinned node 30 keeps only RY
    let labels: Vec<String> = h.outputs.iter().map(|d| d.to_string()).collect();
    assert_eq!(labels, ["bar:10+Z", "bar:10+RY", "bar:30+RY"]);
    for l in 0..h.n_lines() {
        let scale = h.line(l).iter().map(|v| v.norm()).fold(0.0, f64::max);
        for i in 0..3 {
            assert!(h.get(l, i, i).im <= 0.0);
            for j in 0..3 {
                assert!((h.get(l, i, j) - h.get(l, j, i)).norm() <= 1e-12 * scale);
            }
        }
    }
    let ff = beam(BeamEnd::Free, BeamEnd::Free, 0.0);
    let e = ff.receptance(&[0.0, 1.0], &[]).unwrap_err();
    assert!(e.message.contains("0 Hz"), "{}", e.message);
}

#[test]
fn inclined_free_frame_has_beam_and_bar_frequencies() {
    // A straight free–free member at 30° in the X–Z plane: its bending modes are
    // the beam's, λ_n = 4.73004074, 7.85320462 (Blevins; from memory), and its
    // axial modes those of a free–free bar, f_n = n/(2L)·√(E/ρ) (textbook).
    use mortise::synth::{real_modes, Frame, FrameMember, FrameNode};
    let (c, s) = (30f64.to_radians().cos(), 30f64.to_radians().sin());
    let f = Frame {
        component: "f".into(),
        nodes: vec![
            FrameNode {
                name: "p".into(),
                x: 0.0,
                z: 0.0,
            },
            FrameNode {
                name: "q".into(),
                x: L * c,
                z: L * s,
            },
        ],
        members: vec![FrameMember {
            a: "p".into(),
            b: "q".into(),
            elements: 40,
            young: E,
            second_moment: I,
            density: RHO,
            area: A,
        }],
        supports: vec![],
        loss_factor: 0.0,
        rayleigh: None,
    };
    let sm = f.matrices().unwrap();
    let (lam, phi) = real_modes(&sm.k, &sm.m).unwrap();
    let hz: Vec<f64> = lam.iter().map(|l| l.max(0.0).sqrt() / (2.0 * PI)).collect();
    assert!(
        hz[..3].iter().all(|&x| x < 1e-2),
        "three rigid-body modes: {:?}",
        &hz[..4]
    );
    // sort the flexible modes into axial and bending by the share of motion along the member
    let (mut axial, mut bending) = (Vec::new(), Vec::new());
    for r in 3..hz.len() {
        let (mut ua, mut ut) = (0.0, 0.0);
        for (k, d) in sm.dofs.iter().enumerate() {
            if d.dir == Direction::X {
                let (x, z) = (phi[(k, r)], phi[(k + 1, r)]);
                ua += (c * x + s * z).powi(2);
                ut += (s * x - c * z).powi(2);
            }
        }
        if ua > 0.9 * (ua + ut) {
            axial.push(hz[r]);
        } else if ua < 0.1 * (ua + ut) {
            bending.push(hz[r]);
        }
    }
    for (n, lam) in [4.73004074, 7.85320462].iter().enumerate() {
        let want = beam_frequency(*lam, E, I, RHO, A, L);
        let rel = (bending[n] - want).abs() / want;
        println!(
            "bending {want:.3} Hz: frame {:.3} Hz, rel. {rel:.2e}",
            bending[n]
        );
        assert!(rel < 0.005);
    }
    for n in 1..=2 {
        let want = n as f64 / (2.0 * L) * (E / RHO).sqrt();
        let rel = (axial[n - 1] - want).abs() / want;
        println!(
            "axial {want:.1} Hz: frame {:.1} Hz, rel. {rel:.2e}",
            axial[n - 1]
        );
        assert!(rel < 0.005);
    }
}
