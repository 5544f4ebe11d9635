//! The demo scenario's parts: labels, kinds, completeness, passivity and
//! reciprocity, and physical checks against textbook relations.

#![allow(clippy::needless_range_loop)]

use mortise::demo::{self, DemoParts};
use mortise::frf::SignalKind;
use mortise::{FrfKind, FrfSet};
use nalgebra::DMatrix;
use num_complex::Complex64;
use std::f64::consts::PI;
use std::sync::OnceLock;

fn parts() -> &'static DemoParts {
    static P: OnceLock<DemoParts> = OnceLock::new();
    P.get_or_init(|| demo::scenario(&demo::grid()).unwrap())
}

fn labels(d: &[mortise::Dof]) -> Vec<String> {
    d.iter().map(|x| x.to_string()).collect()
}

#[test]
fn labels_kinds_and_grid() {
    let p = parts();
    let seats = ["casing:s1+Z", "casing:s2+Z", "casing:s3+Z", "casing:s4+Z"];
    assert_eq!(labels(&p.casing.outputs), seats);
    assert_eq!(labels(&p.casing.inputs), seats);
    assert_eq!(labels(&p.blocked_forces.outputs), seats);
    assert_eq!(
        labels(&p.bracket.outputs),
        [
            "bracket:s1+Z",
            "bracket:s2+Z",
            "bracket:s3+Z",
            "bracket:s4+Z",
            "bracket:a1+X",
            "bracket:a2+X",
            "bracket:a3+X",
            "bracket:a4+X"
        ]
    );
    let anchors = ["wall:a1+X", "wall:a2+X", "wall:a3+X", "wall:a4+X"];
    assert_eq!(labels(&p.wall.outputs), anchors);
    assert_eq!(labels(&p.vibro.inputs), anchors);
    assert_eq!(labels(&p.vibro.outputs), ["room:bed"]);
    assert_eq!(labels(&p.isolator_axial.outputs), ["isolator:1+Z"]);
    assert_eq!(labels(&p.isolator_shear.outputs), ["isolator:1+X"]);
    for (s, k) in [
        (&p.casing, FrfKind::Receptance),
        (&p.bracket, FrfKind::Receptance),
        (&p.wall, FrfKind::Receptance),
        (&p.vibro, FrfKind::VibroAcoustic),
        (&p.isolator_axial, FrfKind::DynamicStiffness),
        (&p.isolator_shear, FrfKind::DynamicStiffness),
        (&p.isolator_axial_soft, FrfKind::DynamicStiffness),
        (&p.isolator_shear_soft, FrfKind::DynamicStiffness),
    ] {
        assert_eq!(s.kind(), k, "{}", s.name);
        s.validate().unwrap();
        assert!(s.is_complete());
        assert_eq!(s.freqs, demo::grid());
        assert!(s.signal.is_none());
    }
    assert_eq!(p.blocked_forces.signal, Some(SignalKind::Peak));
    for (name, s) in p.all() {
        assert_eq!(name, s.name);
    }
    p.blocked_forces.validate().unwrap();
    assert_eq!(demo::grid().len(), 991);
    assert!(demo::scenario(&[0.0, 1.0]).is_err());
}

#[test]
fn deterministic() {
    let g: Vec<f64> = (10..=200).map(|f| f as f64).collect();
    assert_eq!(demo::scenario(&g).unwrap(), demo::scenario(&g).unwrap());
}

fn passive_reciprocal(h: &FrfSet) {
    // passivity Im H_ii ≤ 0 (e^{+iωt}) and reciprocity H_ij = H_ji (Maxwell–Betti; textbook)
    let mut worst = 0.0f64;
    for l in 0..h.n_lines() {
        let scale = h.line(l).iter().map(|v| v.norm()).fold(0.0, f64::max);
        for i in 0..h.n_out() {
            assert!(
                h.get(l, i, i).im <= 0.0,
                "{} {} at {} Hz",
                h.name,
                h.outputs[i],
                h.freqs[l]
            );
            for j in 0..h.n_in() {
                worst = worst.max((h.get(l, i, j) - h.get(l, j, i)).norm() / scale);
            }
        }
    }
    println!("{}: worst reciprocity error {worst:.2e}", h.name);
    assert!(worst < 1e-10);
}

#[test]
fn structures_are_passive_and_reciprocal() {
    let p = parts();
    passive_reciprocal(&p.casing);
    passive_reciprocal(&p.bracket);
    passive_reciprocal(&p.wall);
    // the two brackets are separate bodies
    for l in 0..p.bracket.n_lines() {
        assert_eq!(p.bracket.get(l, 0, 2), Complex64::new(0.0, 0.0));
        assert_eq!(p.bracket.get(l, 4, 7), Complex64::new(0.0, 0.0));
    }
    // isolators: Im K ≥ 0 (a passive spring dissipates with e^{+iωt})
    for s in [&p.isolator_axial, &p.isolator_shear] {
        assert!(s.data.iter().all(|v| v.im > 0.0 && v.re > 0.0));
    }
}

#[test]
fn casing_carries_the_units_mass() {
    // Newton's second law: far below the flexible modes, moving the four seats
    // together takes Σ F = −ω² m with m the unit's 90 kg (rigid-body mass line; textbook).
    let h = demo::casing_model().receptance(&[0.5]).unwrap();
    let z = DMatrix::from_row_slice(4, 4, h.line(0))
        .try_inverse()
        .unwrap();
    let w = 2.0 * PI * 0.5;
    let total: Complex64 = z.iter().sum();
    let m = -total.re / (w * w);
    println!("apparent mass at 0.5 Hz: {m:.3} kg");
    assert!((m - 90.0).abs() < 0.01 * 90.0, "{m}");
}

#[test]
fn isolators_isolate_at_the_running_speed() {
    // mounted natural frequency f0 = (1/2π)√(4k/m); isolation needs f > √2·f0
    // (transmissibility below one; any vibration textbook).
    let p = parts();
    let k10 = p.isolator_axial.get(0, 0, 0).re;
    let f0 = (4.0 * k10 / 90.0).sqrt() / (2.0 * PI);
    let f0_soft = (4.0 * p.isolator_axial_soft.get(0, 0, 0).re / 90.0).sqrt() / (2.0 * PI);
    println!(
        "mounted natural frequency {f0:.1} Hz (soft {f0_soft:.1} Hz); static deflection {:.2} mm",
        90.0 * 9.80665 / 4.0 / k10 * 1e3
    );
    assert!(2f64.sqrt() * f0 < demo::RUNNING_HZ);
    assert!((f0_soft / f0 - demo::SOFT_FACTOR.sqrt()).abs() < 1e-12);
    // stiffness quoted in N/mm in the scenario: about 150 N/mm, rising with frequency
    let kn = |l: usize| p.isolator_axial.get(l, 0, 0).re / 1e3;
    assert!(kn(0) > 100.0 && kn(0) < 200.0 && kn(990) > kn(0));
}

#[test]
fn wall_mobility_averages_to_the_infinite_plate_value() {
    // The band average of Re(driving-point mobility) of a finite plate tends
    // to the infinite plate's 1/(8√(m''D)), with D → √(D_y D_z) for an
    // orthotropic plate (L. Cremer, M. Heckl, Structure-Borne Sound; from memory).
    let p = parts();
    let y_inf = 1.0 / (8.0 * (35.0f64).sqrt() * (1.2e3f64 * 2.0e5).powf(0.25));
    let y = p.wall.to_kind("mobility").unwrap();
    for i in 0..4 {
        let band: Vec<f64> = (0..y.n_lines())
            .filter(|&l| y.freqs[l] >= 200.0)
            .map(|l| y.get(l, i, i).re)
            .collect();
        let mean = band.iter().sum::<f64>() / band.len() as f64;
        println!(
            "anchor {}: mean Re Y {mean:.3e} m/(N·s), infinite plate {y_inf:.3e} (ratio {:.2})",
            i + 1,
            mean / y_inf
        );
        assert!(mean / y_inf > 0.7 && mean / y_inf < 1.3);
    }
}

#[test]
fn vibro_acoustic_transfer_is_in_a_plausible_window() {
    // sanity window (common practice for a lightweight wall into a small room):
    // between 1e-4 and 10 Pa/N on every line, never zero
    let p = parts();
    let mut lo = f64::INFINITY;
    let mut hi = 0.0f64;
    for v in &p.vibro.data {
        lo = lo.min(v.norm());
        hi = hi.max(v.norm());
    }
    println!("|vibro| from {lo:.2e} to {hi:.2e} Pa/N");
    assert!(lo > 1e-4 && hi < 10.0);
}

#[test]
fn blocked_forces_sit_on_the_harmonics() {
    let p = parts();
    let b = &p.blocked_forces;
    let lines: Vec<f64> = (0..b.n_lines())
        .filter(|&l| b.get(l, 0, 0).norm() > 0.0)
        .map(|l| b.freqs[l])
        .collect();
    assert_eq!(lines, (1..=17).map(|n| 58.0 * n as f64).collect::<Vec<_>>());
    let f1: Vec<f64> = (0..4).map(|i| b.get(48, i, 0).norm()).collect();
    println!("fundamental (58 Hz) seat forces, N peak: {f1:.2?}");
    assert!(f1.iter().all(|&f| f > 0.5 && f < 20.0));
}
