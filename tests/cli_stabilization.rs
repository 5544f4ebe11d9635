//! The stabilization chart `mortise run` writes for an identify-modes step
//! (`ID.stability.svg`), read back by an independent parser (Python's
//! xml.etree, tests/py/svg_chart.py):
//! * each chosen mode's line lies at its frequency: the x axis is
//!   recovered from the tick labels (a least-squares line through their
//!   positions) and the line must sit within half a pixel of where that
//!   axis puts the mode's frequency from report.json;
//! * one mark per pole of the report's table, per class, the classes taken
//!   from the table's flags by the rule the stability module documents
//!   (frequency first, then damping and vector);
//! * every text keeps a contrast of at least 4.5:1 on its background (WCAG
//!   2.1 SC 1.4.3, the ratio computed in Python from the WCAG definition).
//!
//! The measured FRFs are numpy's (tests/py/identify_ref.py: six known modes,
//! two of them 2 % apart, 1 % noise).

mod cli_support;
mod common;

use cli_support::mortise;
use mortise::frf::{Direction, Dof, FrfSet};
use mortise::io::ExportFormat;
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::Value;
use std::path::{Path, PathBuf};

fn nums(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

/// numpy's noisy accelerance of six known modes, written as our CSV, and a
/// recipe identifying its modes and regenerating clean FRFs.
fn measured(dir: &Path) -> PathBuf {
    let d: Value =
        serde_json::from_str(&common::run_py("identify_ref.py", &["modal", "0.01", "3"])).unwrap();
    let freqs = nums(&d["freqs"]);
    let outs: Vec<Dof> = [Direction::X, Direction::Y, Direction::Z]
        .into_iter()
        .map(|k| Dof::new("p", "1", k))
        .collect();
    let ins = outs[..2].to_vec();
    let mut s = FrfSet::zeros(
        "meas",
        freqs,
        outs,
        ins,
        Quantity::Acceleration,
        Quantity::Force,
    );
    s.data = d["noisy"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| Complex64::new(p[0].as_f64().unwrap(), p[1].as_f64().unwrap()))
        .collect();
    std::fs::write(
        dir.join("meas.csv"),
        mortise::save(&[s], ExportFormat::Csv).unwrap(),
    )
    .unwrap();
    let recipe = serde_json::json!({
        "format": "mortise-recipe", "version": 1, "title": "stabilization chart",
        "components": {"meas": {"file": "meas.csv"}},
        "steps": [
            {"id": "modes", "op": "identify-modes", "from": "meas", "band": [30.0, 250.0], "max_order": 24},
            {"id": "clean", "op": "regenerate", "from": "modes", "grid": {"from": 40, "to": 240, "step": 0.5}}
        ],
        "outputs": ["clean"]
    });
    let rp = dir.join("modes.recipe.json");
    std::fs::write(&rp, recipe.to_string()).unwrap();
    rp
}

/// A tick label as a number ("1.5k" is 1500).
fn tick_value(t: &str) -> f64 {
    match t.strip_suffix('k') {
        Some(m) => m.parse::<f64>().unwrap() * 1e3,
        None => t.parse().unwrap(),
    }
}

/// The class of a pole from its flags, as src/identify/stability.rs
/// documents the criteria: not stable in frequency; frequency only;
/// frequency and damping; frequency and vector; every criterion that
/// applies (no vector criterion with one reference).
fn class_of(p: &Value) -> &'static str {
    let f = p["stable_freq"].as_bool().unwrap();
    let d = p["stable_damping"].as_bool().unwrap();
    let v = p["stable_vector"].as_bool();
    match (f, d, v) {
        (false, _, _) => "new",
        (true, true, None | Some(true)) => "stable",
        (true, true, Some(false)) => "frequency-damping",
        (true, false, Some(true)) => "frequency-vector",
        (true, false, _) => "frequency",
    }
}

#[test]
fn the_chart_of_an_identify_step_read_back_by_python() {
    let dir = common::scratch("cli_stabilization");
    let rp = measured(&dir);
    let out = dir.join("out");
    let r = mortise(
        &dir,
        &[
            "run",
            rp.to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
            "--json",
        ],
    );
    assert_eq!(r.code, 0, "{}{}", r.stdout, r.stderr);
    let svg = out.join("modes.stability.svg");
    assert!(
        r.json()["files"]
            .as_array()
            .unwrap()
            .iter()
            .any(|f| f.as_str() == svg.to_str()),
        "{}",
        r.stdout
    );
    let report: Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap()).unwrap();
    let ident = &report["steps"][0]["identification"];
    let modes: Vec<f64> = ident["modes"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["freq"].as_f64().unwrap())
        .collect();
    assert_eq!(modes.len(), 6, "{modes:?}");

    let py: Value =
        serde_json::from_str(&common::run_py("svg_chart.py", &[svg.to_str().unwrap()])).unwrap();
    assert_eq!(
        (py["width"].as_f64(), py["height"].as_f64()),
        (Some(960.0), Some(600.0))
    );

    // the x axis from its tick labels: least squares x = a + b f
    let ticks: Vec<(f64, f64)> = py["axes"]["x"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|t| t[0] != "frequency, Hz")
        .map(|t| (tick_value(t[0].as_str().unwrap()), t[1].as_f64().unwrap()))
        .collect();
    assert!(ticks.len() >= 4, "{ticks:?}");
    let n = ticks.len() as f64;
    let (mf, mx) = (
        ticks.iter().map(|t| t.0).sum::<f64>() / n,
        ticks.iter().map(|t| t.1).sum::<f64>() / n,
    );
    let b = ticks.iter().map(|t| (t.0 - mf) * (t.1 - mx)).sum::<f64>()
        / ticks.iter().map(|t| (t.0 - mf).powi(2)).sum::<f64>();
    let a = mx - b * mf;
    let tick_residual = ticks
        .iter()
        .map(|t| (a + b * t.0 - t.1).abs())
        .fold(0.0, f64::max);
    assert!(tick_residual <= 0.1, "ticks off a line by {tick_residual}");
    // the band's ends are the plot's edges: 30 Hz and 250 Hz
    let chosen = py["chosen"].as_array().unwrap();
    assert_eq!(chosen.len(), modes.len());
    let mut sorted = modes.clone();
    sorted.sort_by(f64::total_cmp);
    let mut worst: f64 = 0.0;
    for (c, f) in chosen.iter().zip(&sorted) {
        let (x1, x2) = (c["x1"].as_f64().unwrap(), c["x2"].as_f64().unwrap());
        assert_eq!(x1, x2, "a vertical line");
        let off = (x1 - (a + b * f)).abs();
        worst = worst.max(off);
        assert!(off <= 0.5, "mode at {f} Hz drawn {off:.2} px away");
        // labelled with its frequency to four significant digits
        let label = c["text"].as_str().unwrap();
        let shown: f64 = label.trim_end_matches(" Hz").parse().unwrap();
        assert!((shown - f).abs() <= 0.05, "{label} for {f}");
    }
    eprintln!(
        "# measure chosen-mode lines: largest offset {worst:.3} px from the tick-recovered axis ({:.4} px/Hz)",
        b
    );

    // one mark per pole of the report's table, per class
    let mut want = std::collections::BTreeMap::<&str, u64>::new();
    for o in ident["chart"].as_array().unwrap() {
        for p in o["poles"].as_array().unwrap() {
            *want.entry(class_of(p)).or_default() += 1;
        }
    }
    let got: std::collections::BTreeMap<&str, u64> = py["classes"]
        .as_object()
        .unwrap()
        .iter()
        .map(|(k, v)| (k.as_str(), v.as_u64().unwrap()))
        .collect();
    assert_eq!(got, want);
    assert!(want.len() >= 3, "{want:?}");
    eprintln!("# measure marks per class: {want:?}");

    // text contrast (WCAG 2.1 SC 1.4.3, normal text: 4.5:1)
    let texts = py["texts"].as_array().unwrap();
    let lowest = texts
        .iter()
        .map(|t| t["contrast"].as_f64().unwrap())
        .fold(f64::INFINITY, f64::min);
    assert!(lowest >= 4.5, "lowest text contrast {lowest:.2}");
    eprintln!(
        "# measure lowest text contrast {lowest:.2}:1 over {} texts",
        texts.len()
    );
    // a screen reader gets the title and the summary
    assert!(py["title"]
        .as_str()
        .unwrap()
        .starts_with("Stabilization chart, 30–250 Hz, model orders 1–24"));
    let desc = py["desc"].as_str().unwrap();
    assert!(desc.contains("6 chosen mode(s)"), "{desc}");
    // every class of the table is named in the legend
    for class in mortise::plot::PoleClass::ALL {
        let words = class.words(true);
        assert!(
            texts
                .iter()
                .any(|t| t["text"].as_str().unwrap().starts_with(words)),
            "{words}"
        );
    }

    // the page's path (the report JSON → the step's identification) draws
    // the same chart
    let id = mortise::recipe::step_identification(&report, "modes").unwrap();
    let page = mortise::plot::stabilization_svg(
        &mortise::identify::stabilization_chart(&id),
        960.0,
        600.0,
    )
    .unwrap();
    assert_eq!(
        std::fs::read_to_string(&svg).unwrap(),
        format!("{}\n", page.svg)
    );
    // and names what it refuses
    let e = mortise::recipe::step_identification(&report, "clean").unwrap_err();
    assert!(
        e.message.contains("step 'clean' is a 'regenerate' step")
            && e.message.contains("the report's are modes"),
        "{e}"
    );
    let e = mortise::recipe::step_identification(&report, "nope").unwrap_err();
    assert!(e.message.contains("no step 'nope'"), "{e}");
    let e = mortise::recipe::step_identification(&serde_json::json!({}), "modes").unwrap_err();
    assert!(e.message.contains("no list of steps"), "{e}");
}
