//! The demo from the command line: `mortise demo -o DIR`, then
//! `mortise run DIR/heat-pump.recipe.json -o OUT`, and what a user finds in
//! OUT (the demo data are invented; see src/demo.rs).

mod common;

use mortise::io::{self, ImportOptions};
use mortise::predict::paths::path_contributions;
use mortise::recipe::{self, DirSource};
use mortise::FrfSet;
use num_complex::Complex64;
use serde_json::Value;
use std::path::{Path, PathBuf};

fn cli(args: &[&str]) -> String {
    let v: Vec<String> = args.iter().map(|s| s.to_string()).collect();
    mortise::cli::run_cli(&v).unwrap()
}

fn load(path: &Path) -> FrfSet {
    let bytes = std::fs::read(path).unwrap();
    let mut l = io::load(&bytes, path.to_str().unwrap(), &ImportOptions::default()).unwrap();
    l.sets.remove(0)
}

/// A weighting in dB from the analytic pole frequencies of IEC 61672-1:2013
/// (20.598997, 107.65265, 737.86223, 12194.217 Hz), normalised to 0 dB at 1 kHz.
fn a_weighting_db(f: f64) -> f64 {
    let r = |f: f64| {
        let f2 = f * f;
        let (p1, p2, p3, p4) = (20.598997f64, 107.65265f64, 737.86223f64, 12194.217f64);
        p4 * p4 * f2 * f2
            / ((f2 + p1 * p1) * ((f2 + p2 * p2) * (f2 + p3 * p3)).sqrt() * (f2 + p4 * p4))
    };
    20.0 * (r(f) / r(1000.0)).log10()
}

/// Σ |p|² · 10^(A/10) over the lines of a one-row spectrum: proportional to
/// the A-weighted mean square, whatever the amplitude convention.
fn a_weighted_energy(s: &FrfSet) -> f64 {
    (0..s.n_lines())
        .map(|k| s.get(k, 0, 0).norm_sqr() * 10f64.powf(a_weighting_db(s.freqs[k]) / 10.0))
        .sum()
}

#[test]
fn demo_runs_from_its_files_and_the_paths_add_up() {
    let dir = common::scratch("run_demo");
    let input = dir.join("in");
    let out = dir.join("out");
    cli(&["demo", "-o", input.to_str().unwrap()]);
    let recipe_path: PathBuf = input.join("heat-pump.recipe.json");
    let printed = cli(&[
        "run",
        recipe_path.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(printed.contains("caution:"), "{printed}");

    let report: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    let headline = report["headline"].as_array().unwrap();
    assert!(!headline.is_empty());
    assert!(
        headline
            .iter()
            .any(|l| l.as_str().unwrap().contains("paths ranked at room:bed")),
        "{headline:?}"
    );
    let bedroom = report["steps"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["id"] == "bedroom")
        .unwrap();
    let target = bedroom["ranking"]["targets"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["target"] == "room:bed")
        .expect("a paths ranking for room:bed");
    let ranked: Vec<&str> = target["overall"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p["path"].as_str().unwrap())
        .collect();
    // one path per wall anchor
    assert_eq!(ranked.len(), 4, "{ranked:?}");
    for a in ["a1", "a2", "a3", "a4"] {
        assert!(
            ranked.contains(&format!("wall:{a}+X").as_str()),
            "{ranked:?}"
        );
    }

    // the softer isolators lower the bedroom A-weighted level: in the report ...
    let base_dba = bedroom["levels"][0]["overall_db"].as_f64().unwrap();
    // sound pressure: A-weighted (IEC 61672-1)
    assert_eq!(bedroom["levels"][0]["weighting"], "a");
    let variant = report["variants"]
        .as_array()
        .unwrap()
        .iter()
        .find(|v| v["name"] == "softer isolators")
        .unwrap();
    let soft_dba = variant["steps"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["id"] == "bedroom")
        .unwrap()["levels"][0]["overall_db"]
        .as_f64()
        .unwrap();
    eprintln!("bedroom: {base_dba:.2} dB(A), softer isolators {soft_dba:.2} dB(A)");
    assert!(soft_dba < base_dba, "{soft_dba} ≥ {base_dba}");
    // ... and in the written spectra, A-weighted here with IEC 61672-1's formula
    let total = load(&out.join("bedroom.csv"));
    let soft = load(&out.join(format!(
        "{}.csv",
        mortise::cli::run::safe_name("bedroom [softer isolators]")
    )));
    let change = 10.0 * (a_weighted_energy(&soft) / a_weighted_energy(&total)).log10();
    eprintln!("A-weighted change from the written spectra: {change:+.2} dB");
    assert!(change < 0.0, "{change}");
    assert!((change - (soft_dba - base_dba)).abs() < 0.05, "{change}");
    // ... and in the report's A-weighted difference (overall and per band)
    let diff = &variant["band_change"]["bedroom"];
    let overall = diff["overall_db"][0].as_f64().unwrap();
    assert!((overall - (soft_dba - base_dba)).abs() < 1e-9, "{overall}");
    let per_band: Vec<f64> = diff["per_band_db"][0]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|x| x.as_f64())
        .collect();
    assert!(
        !per_band.is_empty() && per_band.iter().all(|&d| d < 0.0),
        "{per_band:?}"
    );

    // the complex sum of the path contributions equals the total written by
    // the run, and equals Σ_j H_bed,j F_j computed here (superposition of a
    // linear system; common practice)
    let r = recipe::parse(&std::fs::read_to_string(&recipe_path).unwrap()).unwrap();
    let comps =
        recipe::load_components(&r, &DirSource::confined(input.clone(), Default::default()))
            .unwrap();
    let room = &comps["room"];
    let forces = load(&out.join("anchor_forces.csv"));
    let c = path_contributions(room, &forces, &[]).unwrap();
    assert_eq!(c.n_paths(), 4);
    assert_eq!(total.freqs, c.freqs);
    let mut worst = 0.0f64;
    for k in 0..total.n_lines() {
        let sum: Complex64 = (0..c.n_paths()).map(|p| c.get(k, 0, p)).sum();
        let direct: Complex64 = (0..room.n_in())
            .map(|j| {
                let r = forces.out_index(&room.inputs[j]).unwrap();
                room.get(k, 0, j) * forces.get(k, r, 0)
            })
            .sum();
        let want = total.get(k, 0, 0);
        let scale = want.norm().max(f64::MIN_POSITIVE);
        worst = worst
            .max((sum - want).norm() / scale)
            .max((direct - want).norm() / scale);
    }
    eprintln!("path sum against the total: {worst:.2e} relative");
    assert!(worst <= 1e-12, "{worst:e}");

    // each path's complex contribution is written beside the total, and the
    // written contributions add up to the written total (superposition)
    let paths: Vec<FrfSet> = ["a1", "a2", "a3", "a4"]
        .iter()
        .map(|a| load(&out.join(format!("bedroom_wall_{a}_X.csv"))))
        .collect();
    let mut worst = 0.0f64;
    for k in 0..total.n_lines() {
        let sum: Complex64 = paths.iter().map(|p| p.get(k, 0, 0)).sum();
        let want = total.get(k, 0, 0);
        worst = worst.max((sum - want).norm() / want.norm().max(f64::MIN_POSITIVE));
    }
    assert!(worst <= 1e-12, "written paths against the total: {worst:e}");

    // levels are A-weighted only for sound pressure (IEC 61672-1): the anchor
    // velocities and forces are in plain dB, and no structural line says dB(A)
    for st in report["steps"].as_array().unwrap() {
        for row in st["levels"].as_array().into_iter().flatten() {
            let pressure = row["reference"].as_str().unwrap().contains("Pa");
            assert_eq!(row["weighting"], if pressure { "a" } else { "z" }, "{row}");
        }
    }
    for l in headline {
        let l = l.as_str().unwrap();
        if l.contains("dB re 1 nm/s") || l.contains("dB re 1 µN") {
            assert!(!l.contains("dB(A)"), "{l}");
        }
    }
    // each warning once: in the component report and in every written CSV
    for (name, c) in report["components"].as_object().unwrap() {
        let w: Vec<&str> = c["summary"]["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_str().unwrap())
            .collect();
        let mut u = w.clone();
        u.sort();
        u.dedup();
        assert_eq!(u.len(), w.len(), "component {name}: {w:?}");
    }
    for e in std::fs::read_dir(&out).unwrap() {
        let p = e.unwrap().path();
        if p.extension().and_then(|x| x.to_str()) != Some("csv") {
            continue;
        }
        let text = std::fs::read_to_string(&p).unwrap();
        let mut w: Vec<&str> = text
            .lines()
            .filter(|l| l.starts_with('#') && l.to_lowercase().contains("warning"))
            .collect();
        let n = w.len();
        w.sort();
        w.dedup();
        assert_eq!(w.len(), n, "{}: a warning line repeats", p.display());
    }
}
