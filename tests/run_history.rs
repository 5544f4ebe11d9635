//! Run history: every run of a workspace is kept with its recipe, time,
//! duration, headline and results (or error); two runs compare through the
//! difference view. The reference for the level difference is the definition
//! of a field-quantity level, L = 20·log10(|X|/X0) (ISO 80000-3), evaluated
//! here on the two runs' own values.

use mortise::frf::{Direction, Dof, FrfSet};
use mortise::history::KEEP_RUNS;
use mortise::io::{self, ExportFormat};
use mortise::limits::Limits;
use mortise::plot::{probe, PlotSpec};
use mortise::units::Quantity;
use mortise::workspace::Workspace;
use num_complex::Complex64;
use serde_json::json;

/// A one-mass receptance 1/(k − ω²m + iωc) between two DOFs of a part
/// (common practice: single-degree-of-freedom oscillator).
fn part(comp: &str, m: f64, k: f64, c: f64) -> Vec<u8> {
    let d1 = Dof::new(comp, "1", Direction::X);
    let d2 = Dof::new(comp, "2", Direction::X);
    let freqs = (1..=40).map(|i| i as f64 * 2.5).collect();
    let mut s = FrfSet::zeros(
        comp,
        freqs,
        vec![d1.clone(), d2.clone()],
        vec![d1, d2],
        Quantity::Displacement,
        Quantity::Force,
    );
    for l in 0..s.n_lines() {
        let w = s.omega(l);
        let h = Complex64::new(1.0, 0.0) / Complex64::new(k - w * w * m, w * c);
        for i in 0..2 {
            for j in 0..2 {
                s.set(l, i, j, h * if i == j { 1.0 } else { 0.5 });
            }
        }
    }
    io::save(std::slice::from_ref(&s), ExportFormat::Csv).unwrap()
}

fn recipe(k: f64) -> String {
    recipe_with(k, &["tip"])
}

fn recipe_with(k: f64, outputs: &[&str]) -> String {
    json!({
        "format": "mortise-recipe", "version": 1, "title": format!("mount k = {k}"),
        "components": { "wall": { "file": "wall.csv" }, "unit": { "file": "unit.csv" } },
        "steps": [
            { "id": "mounted", "op": "couple", "parts": ["wall", "unit"],
              "joints": [{ "a": "wall:1+X", "b": "unit:1+X", "type": "spring", "k": k }] },
            { "id": "tip", "op": "select", "from": "mounted", "outputs": ["wall:2+X"], "inputs": ["unit:2+X"] }
        ],
        "outputs": outputs
    })
    .to_string()
}

fn loaded() -> Workspace {
    let mut ws = Workspace::new();
    ws.load_file("wall.csv", &part("wall", 40.0, 4e6, 300.0), json!({}))
        .unwrap();
    ws.load_file("unit.csv", &part("unit", 8.0, 9e5, 40.0), json!({}))
        .unwrap();
    ws
}

#[test]
fn each_run_is_kept_with_its_recipe_time_duration_and_results() {
    let mut ws = loaded();
    // a clock that moves 250 ms per reading
    let clock = std::cell::Cell::new(0.0);
    let a = ws
        .run_recipe_clocked(&recipe(2e5), &|| {
            clock.set(clock.get() + 250.0);
            1.8e12 + clock.get()
        })
        .unwrap();
    let b = ws.run_recipe(&recipe(5e4)).unwrap();
    let h = ws.history();
    assert_eq!(h.len(), 2);
    assert_eq!((h[0].number, h[1].number), (1, 2));
    assert_eq!(h[0].recipe_text, recipe(2e5));
    assert_eq!(h[0].title, "mount k = 200000");
    assert_eq!(h[0].started_ms, 1.8e12 + 250.0);
    assert_eq!(h[0].duration_ms, 250.0);
    assert!(h[1].started_ms > 1_577_836_800_000.0 && h[1].duration_ms >= 0.0);
    assert!(h.iter().all(|r| r.curves_kept && r.error.is_none()));
    assert_eq!(h[0].results, a.results);
    assert_eq!(a.results[0].id, "run1:0");
    assert_eq!(b.results[0].id, "run2:0");
    // both runs' curves stay addressable; the difference view compares them
    let spec = PlotSpec::from_json(
        r#"{"kind":"difference","series":[{"set":"run2:0"}],"baseline":[{"set":"run1:0"}]}"#,
    )
    .unwrap();
    let (x, y) = (ws.set("run2:0").unwrap(), ws.set("run1:0").unwrap());
    for f in [10.0, 40.0, 75.0, 100.0] {
        let p = probe(&spec, ws.sets(), f).unwrap();
        let k = x.freqs.iter().position(|v| *v == p[0].freq).unwrap();
        let want = 20.0 * x.get(k, 0, 0).norm().log10() - 20.0 * y.get(k, 0, 0).norm().log10();
        assert!((p[0].level_db - want).abs() < 1e-9, "{f} Hz");
        assert!(
            want.abs() > 0.01,
            "a softer mount changes the transfer at {f} Hz"
        );
    }
}

#[test]
fn a_failed_run_is_kept_with_its_error_and_the_last_results_stay() {
    let mut ws = loaded();
    ws.run_recipe(&recipe(2e5)).unwrap();
    let bad = recipe(2e5).replace("\"spring\"", "\"sprung\"");
    let e = ws.run_recipe(&bad).unwrap_err();
    let h = ws.history();
    assert_eq!(h.len(), 2);
    assert_eq!(h[1].error.as_deref(), Some(e.to_string().as_str()));
    assert!(h[1].results.is_empty() && !h[1].curves_kept);
    assert_eq!(ws.results().0.len(), 1, "the last results stay");
    assert!(ws.set("run1:0").is_some());
}

#[test]
fn the_history_keeps_the_newest_runs_and_drops_old_curves_over_budget() {
    let mut ws = loaded();
    for i in 0..KEEP_RUNS + 2 {
        ws.run_recipe(&recipe(1e5 + i as f64)).unwrap();
    }
    let h = ws.history();
    assert_eq!(h.len(), KEEP_RUNS);
    assert_eq!(h[0].number, 3);
    assert!(ws.set("run1:0").is_none() && ws.set("run2:0").is_none());
    assert!(ws.set("run3:0").is_some());
    // a budget whose quarter (15,000 bytes) holds one run's curves, not
    // two: 40 lines × (16 + 1) entries × 16 bytes + 2 × 40 × 8 = 11,520 bytes
    let mut ws = loaded();
    ws.set_limits(Limits {
        memory_bytes: 60_000,
        ..Limits::default()
    })
    .unwrap();
    for i in 0..3 {
        ws.run_recipe(&recipe_with(1e5 + i as f64, &["mounted", "tip"]))
            .unwrap();
    }
    let kept: Vec<bool> = ws.history().iter().map(|r| r.curves_kept).collect();
    assert_eq!(kept, [false, false, true]);
    assert!(ws.set("run2:0").is_none() && ws.set("run2:1").is_none());
    assert!(ws.set("run3:0").is_some() && ws.set("run3:1").is_some());
}

#[test]
fn a_saved_history_comes_back_without_old_curves() {
    let mut ws = loaded();
    ws.run_recipe(&recipe(2e5)).unwrap();
    ws.run_recipe(&recipe(5e4)).unwrap();
    let saved = ws.history().to_vec();
    let (results, report) = ws.results();
    let (results, report): (Vec<FrfSet>, _) =
        (results.into_iter().cloned().collect(), report.cloned());
    let mut back = loaded();
    back.put_history(saved.clone()).unwrap();
    let s = back.put_results(results, report).unwrap();
    assert_eq!(s.results[0].id, "run2:0");
    let h = back.history();
    assert_eq!(h.len(), 2);
    assert!(!h[0].curves_kept && h[1].curves_kept);
    assert_eq!(h[1].recipe_text, saved[1].recipe_text);
    // the next run numbers on
    back.run_recipe(&recipe(1e5)).unwrap();
    assert_eq!(back.history()[2].number, 3);
    // numbers that do not increase are refused, naming the field
    let mut bad = saved.clone();
    bad[1].number = 1;
    let e = loaded().put_history(bad).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("history"));
}
