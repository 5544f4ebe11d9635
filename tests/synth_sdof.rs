//! Single-DOF and spring-combination checks of the lumped-network synthesis
//! against textbook closed forms.

#![allow(clippy::needless_range_loop)]

use mortise::synth::{Link, Mass, ModalModel, Mode, Network};
use mortise::{Direction, Dof};
use num_complex::Complex64;
use std::f64::consts::PI;

fn sdof(m: f64, k: f64, c: f64) -> Network {
    Network {
        component: "sdof".into(),
        dir: Direction::Z,
        masses: vec![Mass {
            node: "1".into(),
            mass: m,
            dir: None,
        }],
        links: vec![Link {
            a: "1".into(),
            b: None,
            k,
            c,
            eta: 0.0,
        }],
    }
}

fn grid(lo: f64, hi: f64, step: f64) -> Vec<f64> {
    let n = ((hi - lo) / step).round() as usize;
    (0..=n).map(|i| lo + i as f64 * step).collect()
}

#[test]
fn natural_frequency_peak_and_peak_magnitude() {
    // m = 1.5 kg, k = 6e4 N/m: ω_n = √(k/m) = 200 rad/s; ζ = 0.05, c = 2ζ√(km).
    let (m, k, zeta): (f64, f64, f64) = (1.5, 6.0e4, 0.05);
    let c = 2.0 * zeta * (k * m).sqrt();
    let step = 0.001;
    let freqs = grid(20.0, 45.0, step);
    let h = sdof(m, k, c).receptance(&freqs, &[], &[]).unwrap();
    let (kp, hp) = (0..h.n_lines())
        .map(|l| (l, h.get(l, 0, 0).norm()))
        .fold((0, 0.0), |a, b| if b.1 > a.1 { b } else { a });
    // Ewins, Modal Testing (2nd ed., 2000): receptance peak at ω_n√(1−2ζ²),
    // magnitude 1/(2kζ√(1−ζ²)).
    let wn = (k / m).sqrt();
    let f_peak = wn * (1.0 - 2.0 * zeta * zeta).sqrt() / (2.0 * PI);
    let h_peak = 1.0 / (2.0 * k * zeta * (1.0 - zeta * zeta).sqrt());
    let df = (freqs[kp] - f_peak).abs();
    let dh = (hp - h_peak).abs() / h_peak;
    println!(
        "peak at {} Hz, expected {f_peak} Hz (|Δ| = {df:.2e} Hz); |H| error {dh:.2e}",
        freqs[kp]
    );
    assert!(df <= step, "peak frequency off by {df} Hz");
    assert!(dh < 1e-6, "peak magnitude off by {dh}");
    // ω_n = √(k/m): the phase of the receptance passes −90° at ω_n exactly (textbook).
    let l90 = (0..h.n_lines())
        .min_by(|&a, &b| h.get(a, 0, 0).re.abs().total_cmp(&h.get(b, 0, 0).re.abs()))
        .unwrap();
    assert!((freqs[l90] - wn / (2.0 * PI)).abs() <= step);
    // passivity: Im H ≤ 0 on every line (e^{+iωt}; DESIGN.md conventions)
    assert!((0..h.n_lines()).all(|l| h.get(l, 0, 0).im <= 0.0));
}

#[test]
fn half_power_bandwidth() {
    // half-power bandwidth Δω ≈ 2ζω_n for light damping (Ewins, Modal Testing, 2nd ed.)
    let (m, k, zeta): (f64, f64, f64) = (1.5, 6.0e4, 0.01);
    let c = 2.0 * zeta * (k * m).sqrt();
    let step = 0.0005;
    let freqs = grid(28.0, 36.0, step);
    let h = sdof(m, k, c).receptance(&freqs, &[], &[]).unwrap();
    let mag: Vec<f64> = (0..h.n_lines()).map(|l| h.get(l, 0, 0).norm()).collect();
    let hmax = mag.iter().cloned().fold(0.0, f64::max);
    let lev = hmax / 2f64.sqrt();
    let cross: Vec<f64> = (1..mag.len())
        .filter(|&l| (mag[l - 1] - lev) * (mag[l] - lev) < 0.0)
        .map(|l| freqs[l - 1] + step * (lev - mag[l - 1]) / (mag[l] - mag[l - 1]))
        .collect();
    assert_eq!(cross.len(), 2);
    let bw = 2.0 * PI * (cross[1] - cross[0]);
    let want = 2.0 * zeta * (k / m).sqrt();
    let rel = (bw - want).abs() / want;
    println!("half-power bandwidth {bw:.5} rad/s, 2ζω_n = {want:.5} rad/s, rel. diff {rel:.2e}");
    assert!(rel < 0.01, "{rel}");
}

#[test]
fn static_receptance_is_flexibility() {
    // static receptance 1/k (textbook)
    let h = sdof(1.5, 6.0e4, 30.0)
        .receptance(&[0.0, 0.01], &[], &[])
        .unwrap();
    assert!((h.get(0, 0, 0) - Complex64::new(1.0 / 6.0e4, 0.0)).norm() < 1e-18);
    assert!((h.get(1, 0, 0).re - 1.0 / 6.0e4).abs() < 1e-9 / 6.0e4 * 1e3);
}

#[test]
fn springs_in_series_and_parallel() {
    // two springs in series: 1/k = 1/k₁ + 1/k₂; in parallel: k = k₁ + k₂ (textbook)
    let (k1, k2, m) = (3.0e5, 1.2e5, 4.0);
    let series = Network {
        component: "s".into(),
        dir: Direction::Z,
        masses: vec![
            Mass {
                node: "mid".into(),
                mass: 0.0,
                dir: None,
            },
            Mass {
                node: "top".into(),
                mass: m,
                dir: None,
            },
        ],
        links: vec![
            Link {
                a: "mid".into(),
                b: None,
                k: k1,
                c: 0.0,
                eta: 0.0,
            },
            Link {
                a: "mid".into(),
                b: Some("top".into()),
                k: k2,
                c: 0.0,
                eta: 0.0,
            },
        ],
    };
    let ks = 1.0 / (1.0 / k1 + 1.0 / k2);
    let freqs = [0.0, 7.0, 40.0];
    let h = series.receptance(&freqs, &["top"], &["top"]).unwrap();
    for (l, f) in freqs.iter().enumerate() {
        let w = 2.0 * PI * f;
        let want = 1.0 / (ks - w * w * m);
        let rel = (h.get(l, 0, 0).re - want).abs() / want.abs();
        assert!(
            rel < 1e-12 && h.get(l, 0, 0).im.abs() < 1e-20,
            "series at {f} Hz: {rel}"
        );
    }
    let parallel = Network {
        component: "p".into(),
        dir: Direction::Z,
        masses: vec![Mass {
            node: "top".into(),
            mass: m,
            dir: None,
        }],
        links: vec![
            Link {
                a: "top".into(),
                b: None,
                k: k1,
                c: 0.0,
                eta: 0.0,
            },
            Link {
                a: "top".into(),
                b: Some("ground".into()),
                k: k2,
                c: 0.0,
                eta: 0.0,
            },
        ],
    };
    let h = parallel.receptance(&freqs, &[], &[]).unwrap();
    for (l, f) in freqs.iter().enumerate() {
        let w = 2.0 * PI * f;
        let want = 1.0 / (k1 + k2 - w * w * m);
        assert!((h.get(l, 0, 0).re - want).abs() < 1e-12 * want.abs());
    }
}

#[test]
fn hysteretic_sdof_and_modal_form_agree() {
    // hysteretic SDOF: H = 1/(k(1 + iη) − ω²m); resonance peak 1/(kη) at ω_n exactly
    // (Ewins, Modal Testing, 2nd ed., structural damping).
    let (m, k, eta): (f64, f64, f64) = (2.0, 5.0e4, 0.04);
    let net = Network {
        component: "h".into(),
        dir: Direction::Z,
        masses: vec![Mass {
            node: "1".into(),
            mass: m,
            dir: None,
        }],
        links: vec![Link {
            a: "1".into(),
            b: None,
            k,
            c: 0.0,
            eta,
        }],
    };
    let fn_ = (k / m).sqrt() / (2.0 * PI);
    let freqs = [fn_ * 0.5, fn_, fn_ * 2.0];
    let h = net.receptance(&freqs, &[], &[]).unwrap();
    assert!((h.get(1, 0, 0) - Complex64::new(0.0, -1.0 / (k * eta))).norm() < 1e-12 / (k * eta));
    let modal = ModalModel {
        name: "h".into(),
        dofs: vec![Dof::new("h", "1", Direction::Z)],
        modes: vec![Mode {
            freq: fn_,
            zeta: 0.0,
            eta,
            modal_mass: m,
            shape: vec![1.0],
        }],
        residuals: vec![],
        complex_modes: vec![],
    };
    let g = modal.receptance(&freqs).unwrap();
    for l in 0..3 {
        assert!((g.get(l, 0, 0) - h.get(l, 0, 0)).norm() < 1e-12 * h.get(l, 0, 0).norm());
    }
}
