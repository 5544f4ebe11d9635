//! A recipe's sweep split over several workspaces, as the page splits it
//! over its workers: the main workspace gathers the sweep's inputs as bytes,
//! each other workspace loads its own copy and computes one slice, and the
//! main one folds the slices and runs the rest of the recipe. The reference
//! is the same recipe run in one piece in a workspace of its own (the
//! invariant: the split never changes a result); equality is of the report's
//! JSON text, whose numbers are the shortest text that reads back to the same
//! double (so equal text is equal bits).

use mortise::workspace::Workspace;
use serde_json::{json, Value};

/// The demo's recipe (its sweep replaced by `sweep` when given).
fn demo_recipe(sweep: Option<Value>) -> String {
    let files = mortise::demo_files::files().unwrap();
    let (_, b) = files
        .iter()
        .find(|(n, _)| n.ends_with(".recipe.json"))
        .unwrap();
    let mut r: Value = serde_json::from_slice(b).unwrap();
    if let Some(s) = sweep {
        r["sweep"] = s;
    }
    r.to_string()
}

/// A workspace holding the demo's files, each read with the options the
/// recipe gives its component (as the page reads them).
fn demo_workspace(text: &str) -> Workspace {
    let r: Value = serde_json::from_str(text).unwrap();
    let mut ws = Workspace::new();
    for (name, bytes) in mortise::demo_files::files().unwrap() {
        if name.ends_with(".recipe.json") {
            continue;
        }
        let mut options = json!({});
        for (key, c) in r["components"].as_object().unwrap() {
            if c["file"].as_str() == Some(name.as_str()) {
                options = c.get("import").cloned().unwrap_or(json!({}));
                options["component"] = c.get("component").cloned().unwrap_or(json!(key));
            }
        }
        ws.load_file(&name, &bytes, options).unwrap();
    }
    ws
}

/// Run `text` with its sweep split over `w` workspaces besides the main
/// one; with `begin`, the main one runs the rest of the recipe first (as the
/// page does while the workers compute), else all of it at the end.
fn run_split(text: &str, w: usize, begin: bool) -> (Workspace, mortise::workspace::RunSummary) {
    let mut main = demo_workspace(text);
    let bytes = main.sweep_inputs(text).unwrap();
    if begin {
        main.run_recipe_begin(text);
    }
    let mut slices = vec![];
    for k in 1..=w {
        // a workspace with none of the files: only the inputs' bytes
        let mut extra = Workspace::new();
        extra.load_sweep_inputs(&bytes).unwrap();
        slices.push(extra.sweep_slice(text, k, w));
    }
    let run = main.run_recipe_split(text, slices, f64::NAN).unwrap();
    (main, run)
}

#[test]
fn a_split_run_gives_the_report_and_headline_of_the_run_in_one_piece() {
    for sweep in [
        Some(
            json!({"name": "isolator", "scale": "isolator", "from": 0.5, "to": 2.0, "steps": 5, "spacing": "log"}),
        ),
        None, // the demo's speed sweep (71 speeds)
    ] {
        let text = demo_recipe(sweep);
        let mut one = demo_workspace(&text);
        let whole = one.run_recipe(&text).unwrap();
        let want = serde_json::to_string(&whole.report).unwrap();
        assert!(whole.report.as_ref().unwrap()["sweep"].is_object());
        for (w, begin) in [(2, true), (3, false), (1, true)] {
            let (main, run) = run_split(&text, w, begin);
            assert_eq!(
                serde_json::to_string(&run.report).unwrap(),
                want,
                "{w} workers"
            );
            let h = main.history().last().unwrap();
            assert_eq!(h.headline, one.history().last().unwrap().headline);
            let note = h.split.as_deref().unwrap();
            assert!(
                note.contains(&format!(
                    "on {w} {} (points 0..",
                    if w == 1 { "worker" } else { "workers" }
                )),
                "{note}"
            );
            assert!(one.history().last().unwrap().split.is_none());
            // the results' values too
            assert_eq!(run.results.len(), whole.results.len());
            let (a, _) = main.results();
            let (b, _) = one.results();
            for (x, y) in a.iter().zip(b) {
                assert_eq!(
                    mortise::io::bundle::set_sha256(x),
                    mortise::io::bundle::set_sha256(y)
                );
            }
        }
    }
}

#[test]
fn a_failed_slice_fails_the_run_with_its_error_and_is_kept_in_the_history() {
    let text = demo_recipe(Some(json!({"scale": "isolator", "values": [0.5, 1, 2, 4]})));
    let mut main = demo_workspace(&text);
    let bytes = main.sweep_inputs(&text).unwrap();
    let mut extra = Workspace::new();
    extra.load_sweep_inputs(&bytes).unwrap();
    // the extra workspace's budget is too small for its slice's levels
    extra
        .set_limits(mortise::limits::Limits {
            memory_bytes: 16,
            ..Default::default()
        })
        .unwrap();
    let second = extra.sweep_slice(&text, 2, 2);
    let err = second.clone().unwrap_err();
    let mut first = Workspace::new();
    first.load_sweep_inputs(&bytes).unwrap();
    let slices = vec![first.sweep_slice(&text, 1, 2), second];
    main.run_recipe_begin(&text);
    let e = main.run_recipe_split(&text, slices, f64::NAN).unwrap_err();
    assert_eq!(e, err);
    let h = main.history().last().unwrap();
    assert!(h.error.is_some() && h.results.is_empty());
    assert_eq!(h.split.as_deref(), Some("sweep on 2 workers"));
    // no result of a partial sweep is shown as current
    assert!(main.results().0.is_empty());
}
