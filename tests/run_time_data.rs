//! Recipe steps `spectrum` and `estimate-frf` through `mortise run` on the
//! UFF time responses and WAV recording of tests/py/time_files.py, with a
//! `respond` step on their results: the predicted response PSD |H1|² G_ff
//! equals γ² G_yy, the coherent part of the measured response (Bendat &
//! Piersol, *Random Data*, 4th ed., 2010, §6.1: coherent output spectrum).

mod common;

use mortise::frf::SignalKind;
use mortise::io::{self, ImportOptions};

const RECIPE: &str = r#"{
  "format": "mortise-recipe", "version": 1,
  "title": "bench recording: FRF and force spectrum from time data",
  "components": {},
  "steps": [
    {"id": "frf", "op": "estimate-frf", "file": "rig.uff", "inputs": ["rig:1+Z"], "segment": 1024},
    {"id": "wavfrf", "op": "estimate-frf", "file": "rig.wav", "inputs": ["rig:1+Z"], "segment": 1024, "estimator": "hv",
     "channels": ["1=rig:1+Z force 100 N", "2=rig:2+Z acceleration 50 m/s^2"]},
    {"id": "psd", "op": "spectrum", "file": "rig.uff", "segment": 1024, "kind": "psd"},
    {"id": "force", "op": "resample", "from": "psd", "like": "frf"},
    {"id": "measured", "op": "resample", "from": "psd/acceleration", "like": "frf"},
    {"id": "predicted", "op": "respond", "frf": "frf", "excitation": "force"}
  ],
  "outputs": ["frf", "wavfrf", "predicted", "measured"]
}"#;

fn load(path: &std::path::Path) -> mortise::frf::FrfSet {
    let bytes = std::fs::read(path).unwrap();
    let mut l = io::load(&bytes, "x.csv", &ImportOptions::default()).unwrap();
    l.sets.remove(0)
}

#[test]
fn recipe_estimates_frfs_and_spectra_that_predict_the_coherent_response() {
    let dir = common::scratch("run_time_data");
    common::run_py("time_files.py", &[dir.to_str().unwrap()]);
    std::fs::write(dir.join("bench.recipe.json"), RECIPE).unwrap();
    let out = dir.join("out");
    let printed = mortise::cli::run_cli(&[
        "run".into(),
        dir.join("bench.recipe.json").to_str().unwrap().into(),
        "-o".into(),
        out.to_str().unwrap().into(),
    ])
    .unwrap();
    assert!(printed.contains("wrote 4 output(s)"), "{printed}");
    let frf = load(&out.join("frf.csv"));
    let wav = load(&out.join("wavfrf.csv"));
    let y = load(&out.join("predicted.csv"));
    let m = load(&out.join("measured.csv"));
    assert_eq!(y.signal, Some(SignalKind::Psd));
    assert_eq!(frf.freqs, m.freqs);
    let coh = frf.coherence.as_ref().unwrap();
    let mut worst = 0.0f64;
    let scale = m.column(0, 0).iter().fold(0.0f64, |a, v| a.max(v.re));
    for (k, g) in coh.iter().enumerate() {
        let coherent = g * m.get(k, 0, 0).re;
        worst = worst.max((y.get(k, 0, 0).re - coherent).abs() / scale);
    }
    println!("predicted PSD against γ²·measured PSD: {worst:e} of the largest");
    assert!(worst <= 1e-10);
    // the WAV's Hv lies within a few per cent of the UFF's H1 where the
    // coherence is high (the same signals, quantized to 32 bits)
    for (k, g) in coh.iter().enumerate() {
        if *g > 0.99 {
            let r = (wav.get(k, 0, 0) - frf.get(k, 0, 0)).norm() / frf.get(k, 0, 0).norm();
            assert!(r < 0.02, "{} Hz: {r}", frf.freqs[k]);
        }
    }
    let report: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    assert!(report.to_string().contains("estimate-frf"));
}

#[test]
fn recipe_estimates_frfs_from_a_hammer_test() {
    let dir = common::scratch("run_time_data_impact");
    let r: serde_json::Value =
        serde_json::from_str(&common::run_py("impact_test.py", &[dir.to_str().unwrap()])).unwrap();
    let recipe = format!(
        r#"{{"format": "mortise-recipe", "version": 1, "components": {{}},
  "steps": [{{"id": "beam", "op": "estimate-frf", "file": "impact.wav", "inputs": ["beam:1+Z"],
    "channels": ["1=beam:1+Z force 200 N", "2=beam:7+Z acceleration {} m/s^2"],
    "impact": {{"trigger": 20, "record_length": 1.5, "force_width": 0.02, "decay": 0.3}}}}],
  "outputs": ["beam"]}}"#,
        r["resp_full"]
    );
    std::fs::write(dir.join("hammer.recipe.json"), &recipe).unwrap();
    let out = dir.join("out");
    mortise::cli::run_cli(&[
        "run".into(),
        dir.join("hammer.recipe.json").to_str().unwrap().into(),
        "-o".into(),
        out.to_str().unwrap().into(),
    ])
    .unwrap();
    let h = load(&out.join("beam.csv"));
    let re = r["h1"]["re"].as_array().unwrap();
    let im = r["h1"]["im"].as_array().unwrap();
    let want: Vec<num_complex::Complex64> = re
        .iter()
        .zip(im)
        .map(|(a, b)| num_complex::Complex64::new(a.as_f64().unwrap(), b.as_f64().unwrap()))
        .collect();
    let scale = want.iter().fold(0.0f64, |m, v| m.max(v.norm()));
    let e = h
        .column(0, 0)
        .iter()
        .zip(&want)
        .fold(0.0f64, |m, (a, b)| m.max((a - b).norm()))
        / scale;
    assert!(e <= 1e-10, "{e:e}");
    let report = std::fs::read_to_string(out.join("report.json")).unwrap();
    assert!(
        report.contains("double hit") && report.contains("overload"),
        "{report}"
    );
    // Welch operands beside 'impact' are refused, naming the operand
    let bad = recipe.replace("\"inputs\"", "\"segment\": 1024, \"inputs\"");
    std::fs::write(dir.join("bad.recipe.json"), bad).unwrap();
    let e = mortise::cli::run_cli(&[
        "run".into(),
        dir.join("bad.recipe.json").to_str().unwrap().into(),
        "-o".into(),
        dir.join("out2").to_str().unwrap().into(),
    ])
    .unwrap_err();
    assert!(
        e.to_string().contains("segment") && e.to_string().contains("impact"),
        "{e}"
    );
}
