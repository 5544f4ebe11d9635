//! `mortise audit` end to end: sets written with mortise::io::save in each
//! export format, read back by the command (passes once io lands).

mod common;

use mortise::cli::run_cli;
use mortise::frf::{Direction, Dof, FrfSet};
use mortise::io::{save, ExportFormat};
use mortise::units::Quantity;
use num_complex::Complex64;

fn argv(s: &[&str]) -> Vec<String> {
    s.iter().map(|x| x.to_string()).collect()
}

/// Two masses on springs, receptance (K − ω²M + iωC)⁻¹ (e^{+iωt}); `k2` the coupling spring.
fn two_dof(name: &str, k2: f64) -> FrfSet {
    let d: Vec<Dof> = (1..=2)
        .map(|i| Dof::new("seat", &i.to_string(), Direction::Z))
        .collect();
    let f: Vec<f64> = (1..=1000).map(|i| i as f64 * 0.1).collect();
    let mut h = FrfSet::zeros(
        name,
        f,
        d.clone(),
        d,
        Quantity::Displacement,
        Quantity::Force,
    );
    let (m1, m2, k1) = (1.0, 0.5, 1.0e4);
    for l in 0..h.n_lines() {
        let w = h.omega(l);
        let z = |k: f64, m: f64| Complex64::new(k - w * w * m, w * 3.2e-4 * k);
        let a = z(k1 + k2, m1);
        let b = -Complex64::new(k2, w * 3.2e-4 * k2);
        let c = z(k2, m2);
        let det = a * c - b * b;
        h.set(l, 0, 0, c / det);
        h.set(l, 0, 1, -b / det);
        h.set(l, 1, 0, -b / det);
        h.set(l, 1, 1, a / det);
    }
    h
}

#[test]
fn audit_command_flags_a_non_reciprocal_file_and_a_non_linear_pair() {
    let dir = common::scratch("audit_cli");
    let clean = two_dof("seat", 5e3);
    let mut skew = clean.clone();
    skew.name = "skew".into();
    for l in 0..skew.n_lines() {
        let v = skew.get(l, 0, 1);
        skew.set(l, 0, 1, v * 1.5); // H_12 ≠ H_21: not reciprocal (Maxwell–Betti)
    }
    let softer = two_dof("seat", 4e3); // the coupling spring softened at the higher level
    for (fmt, ext) in [(ExportFormat::Uff, "uff"), (ExportFormat::Csv, "csv")] {
        let p = |n: &str| {
            dir.join(format!("{n}.{ext}"))
                .to_string_lossy()
                .into_owned()
        };
        std::fs::write(p("clean"), save(std::slice::from_ref(&clean), fmt).unwrap()).unwrap();
        std::fs::write(p("skew"), save(std::slice::from_ref(&skew), fmt).unwrap()).unwrap();
        std::fs::write(p("high"), save(std::slice::from_ref(&softer), fmt).unwrap()).unwrap();

        let text = run_cli(&argv(&["audit", &p("clean"), &p("skew")])).unwrap();
        print!("{text}");
        assert!(text.contains("licensed professional"));
        let j: serde_json::Value = serde_json::from_str(
            &run_cli(&argv(&["audit", &p("clean"), &p("skew"), "--json"])).unwrap(),
        )
        .unwrap();
        let status = |f: usize, check: &str| {
            j["audits"][f]["reports"][0]["checks"]
                .as_array()
                .unwrap()
                .iter()
                .find(|c| c["check"] == check)
                .unwrap()["status"]
                .clone()
        };
        assert_eq!(status(0, "reciprocity"), "pass");
        assert_eq!(status(0, "passivity"), "pass");
        assert_eq!(status(1, "reciprocity"), "flag");

        let pair = run_cli(&argv(&[
            "audit",
            "--pair",
            &p("clean"),
            &p("high"),
            "--tolerance-db",
            "1",
        ]))
        .unwrap();
        print!("{pair}");
        assert!(pair
            .lines()
            .any(|l| l.trim_start().starts_with("linearity") && l.contains("FLAG")));
        let same = run_cli(&argv(&[
            "audit",
            "--pair",
            &format!("{},{}", p("clean"), p("clean")),
        ]))
        .unwrap();
        assert!(same
            .lines()
            .any(|l| l.trim_start().starts_with("linearity") && l.contains("pass")));
    }
}
