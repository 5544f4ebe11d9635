//! A 3-DOF lumped network and a modal model checked against numpy / scipy
//! (tests/py/synth_ref.py): natural frequencies from scipy.linalg.eig(K, M),
//! receptances from numpy inversion of K + iK_h − ω²M + iωC per line, and
//! modal superposition with scipy.linalg.eigh modes.

#![allow(clippy::needless_range_loop)]

mod common;

use mortise::synth::{real_modes, Link, Mass, ModalModel, Mode, Network, SystemMatrices};
use mortise::{Direction, Dof, FrfSet};
use nalgebra::DMatrix;
use num_complex::Complex64;
use serde_json::{json, Value};

fn mat(m: &DMatrix<f64>) -> Value {
    json!((0..m.nrows())
        .map(|i| (0..m.ncols()).map(|j| m[(i, j)]).collect::<Vec<_>>())
        .collect::<Vec<_>>())
}

fn py(mode: &str, name: &str, s: &SystemMatrices, freqs: &[f64]) -> Value {
    let dir = common::scratch(name);
    let p = dir.join("in.json");
    let v =
        json!({"m": mat(&s.m), "k": mat(&s.k), "c": mat(&s.c), "kh": mat(&s.kh), "freqs": freqs});
    std::fs::write(&p, v.to_string()).unwrap();
    let out = common::run_py("synth_ref.py", &[mode, p.to_str().unwrap()]);
    serde_json::from_str(&out).unwrap()
}

fn three_dof() -> Network {
    let l = |a: &str, b: Option<&str>, k: f64, c: f64, eta: f64| Link {
        a: a.into(),
        b: b.map(|x| x.to_string()),
        k,
        c,
        eta,
    };
    Network {
        component: "net".into(),
        dir: Direction::Z,
        masses: vec![
            Mass {
                node: "a".into(),
                mass: 3.0,
                dir: None,
            },
            Mass {
                node: "b".into(),
                mass: 1.2,
                dir: Some(Direction::X),
            },
            Mass {
                node: "c".into(),
                mass: 0.7,
                dir: None,
            },
        ],
        links: vec![
            l("a", None, 2.0e5, 40.0, 0.0),
            l("a", Some("b"), 8.0e4, 0.0, 0.05),
            l("b", Some("c"), 5.0e4, 12.0, 0.02),
            l("c", None, 1.0e4, 0.0, 0.0),
            l("a", Some("c"), 3.0e4, 5.0, 0.0),
        ],
    }
}

fn passive_and_reciprocal(h: &FrfSet) -> (f64, f64) {
    // passivity: Im H_ii ≤ 0 (e^{+iωt}); reciprocity H_ij = H_ji (Maxwell–Betti; textbook)
    let mut worst_im = f64::NEG_INFINITY;
    let mut worst_rec = 0.0f64;
    for l in 0..h.n_lines() {
        let scale = (0..h.n_out())
            .map(|i| h.get(l, i, i).norm())
            .fold(0.0, f64::max);
        for i in 0..h.n_out() {
            worst_im = worst_im.max(h.get(l, i, i).im / scale);
            for j in 0..h.n_in() {
                worst_rec = worst_rec.max((h.get(l, i, j) - h.get(l, j, i)).norm() / scale);
            }
        }
    }
    (worst_im, worst_rec)
}

#[test]
fn three_dof_network_equals_numpy_inversion() {
    let net = three_dof();
    let s = net.matrices().unwrap();
    let freqs: Vec<f64> = (0..400).map(|i| 0.5 * i as f64).collect();
    let h = net.receptance(&freqs, &[], &[]).unwrap();
    assert_eq!(h.outputs[1].to_string(), "net:b+X");
    let r = py("direct", "synth_net3", &s, &freqs);
    let href = r["h"].as_array().unwrap();
    let mut worst = 0.0f64;
    for l in 0..freqs.len() {
        let scale = h.line(l).iter().map(|v| v.norm()).fold(0.0, f64::max);
        for e in 0..9 {
            let want = Complex64::new(
                href[l * 9 + e][0].as_f64().unwrap(),
                href[l * 9 + e][1].as_f64().unwrap(),
            );
            worst = worst.max((h.line(l)[e] - want).norm() / scale);
        }
    }
    println!("3-DOF receptance vs numpy.linalg.inv: worst relative difference {worst:.2e}");
    assert!(worst < 1e-10, "{worst}");
    // natural frequencies vs scipy.linalg.eig(K, M)
    let (lam, _) = real_modes(&s.k, &s.m).unwrap();
    let eig = r["eig_hz"].as_array().unwrap();
    for (r, want) in eig.iter().enumerate() {
        let f = lam[r].sqrt() / (2.0 * std::f64::consts::PI);
        let want = want.as_f64().unwrap();
        println!("mode {}: {f:.6} Hz, scipy {want:.6} Hz", r + 1);
        assert!((f - want).abs() < 1e-9 * want);
    }
    let (im, rec) = passive_and_reciprocal(&h);
    println!("worst Im H_ii / |H| = {im:.2e}, worst reciprocity error {rec:.2e}");
    assert!(im <= 0.0 && rec < 1e-12);
}

#[test]
fn modal_superposition_equals_direct_inversion() {
    // undamped 3-DOF plus proportional damping C = αM + βK: the real modes
    // decouple it exactly, ζ_r = α/(2ω_r) + βω_r/2 (Rayleigh damping; textbook).
    let mut net = three_dof();
    for l in &mut net.links {
        l.c = 0.0;
        l.eta = 0.0;
    }
    let mut s = net.matrices().unwrap();
    let (alpha, beta) = (3.0, 2.0e-5);
    s.c = &s.m * alpha + &s.k * beta;
    let freqs: Vec<f64> = (1..300).map(|i| 0.5 * i as f64).collect();
    let r = py("direct", "synth_modal_direct", &s, &freqs);
    let e = py("eigh", "synth_modal_eigh", &s, &freqs);
    let eig: Vec<f64> = e["eig_hz"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    let phi = e["phi"].as_array().unwrap();
    let modes: Vec<Mode> = (0..3)
        .map(|r| {
            let wr = 2.0 * std::f64::consts::PI * eig[r];
            Mode {
                freq: eig[r],
                zeta: alpha / (2.0 * wr) + beta * wr / 2.0,
                eta: 0.0,
                modal_mass: 1.0,
                shape: (0..3).map(|i| phi[i][r].as_f64().unwrap()).collect(),
            }
        })
        .collect();
    let model = ModalModel {
        name: "m".into(),
        dofs: s.dofs.clone(),
        modes,
        residuals: vec![],
        complex_modes: vec![],
    };
    let h = model.receptance(&freqs).unwrap();
    let href = r["h"].as_array().unwrap();
    let mut worst = 0.0f64;
    for l in 0..freqs.len() {
        let scale = h.line(l).iter().map(|v| v.norm()).fold(0.0, f64::max);
        for e in 0..9 {
            let want = Complex64::new(
                href[l * 9 + e][0].as_f64().unwrap(),
                href[l * 9 + e][1].as_f64().unwrap(),
            );
            worst = worst.max((h.line(l)[e] - want).norm() / scale);
        }
    }
    println!("modal superposition (scipy eigh modes) vs numpy direct inversion: {worst:.2e}");
    assert!(worst < 1e-9, "{worst}");
    // our own modes give the same model
    let own = ModalModel::from_matrices("own", &s, &s.dofs, 3, 0.0).unwrap();
    for r in 0..3 {
        assert!((own.modes[r].freq - eig[r]).abs() < 1e-9 * eig[r]);
    }
    let (im, rec) = passive_and_reciprocal(&h);
    assert!(im <= 0.0 && rec < 1e-12);
}

#[test]
fn truncated_modes_with_residuals_approach_the_full_model() {
    // Dropping the top mode and standing in for it with a residual stiffness
    // 1/K_r = φ_i φ_j/ω_3² (its static contribution; Ewins, Modal Testing, residual terms)
    // must bring the low-band receptance closer to the full model.
    let mut net = three_dof();
    for l in &mut net.links {
        l.c = 0.0;
        l.eta = 0.0;
    }
    let s = net.matrices().unwrap();
    let full = ModalModel::from_matrices("full", &s, &s.dofs, 3, 0.02).unwrap();
    let mut trunc = full.clone();
    let top = trunc.modes.pop().unwrap();
    let w3 = 2.0 * std::f64::consts::PI * top.freq;
    let with_res = {
        let mut t = trunc.clone();
        for i in 0..3 {
            for j in i..3 {
                t.residuals.push(mortise::synth::Residual {
                    output: s.dofs[i].clone(),
                    input: s.dofs[j].clone(),
                    stiffness: Some(w3 * w3 / (top.shape[i] * top.shape[j])),
                    mass: None,
                });
            }
        }
        t
    };
    // a band well below the dropped mode: the static stand-in errs by about (ω/ω_3)²
    let freqs: Vec<f64> = (1..=12).map(|i| i as f64).collect();
    let (hf, ht, hr) = (
        full.receptance(&freqs).unwrap(),
        trunc.receptance(&freqs).unwrap(),
        with_res.receptance(&freqs).unwrap(),
    );
    let err = |h: &FrfSet| {
        (0..freqs.len())
            .map(|l| {
                (0..9)
                    .map(|e| (h.line(l)[e] - hf.line(l)[e]).norm())
                    .fold(0.0, f64::max)
            })
            .fold(0.0, f64::max)
    };
    let (et, er) = (err(&ht), err(&hr));
    println!(
        "top mode at {:.1} Hz; worst error truncated {et:.3e}, with residual {er:.3e}",
        top.freq
    );
    assert!(er < 0.1 * et, "{er} vs {et}");
    let _ = Dof::new("x", "1", Direction::Z);
}
