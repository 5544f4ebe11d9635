//! A column map detected from the file alone (`"column_map": "auto"`, CLI
//! `--map auto`) reads the same numbers as a map written by hand: the
//! demo's three supplier CSVs against the maps in the demo recipe, and a
//! `freq, H_<out>_<in>_re, H_<out>_<in>_im, …` file against its hand map.
//! Header habits are common practice (no standard); the values compared are
//! the files' own, so the reference is the hand map of the same file.

use mortise::io::{self, ImportOptions};
use mortise::FrfSet;
use std::path::Path;

fn auto() -> ImportOptions {
    ImportOptions {
        auto_map: true,
        ..ImportOptions::default()
    }
}

/// Every value of `a` equals the value of `b` at the same place (the DOF
/// names may differ: detection cannot know a direction the file does not
/// write), entry by entry in the order of the outputs and inputs.
fn same_values(a: &FrfSet, b: &FrfSet, what: &str) {
    assert_eq!(a.freqs, b.freqs, "{what}: grid");
    assert_eq!(
        (a.n_out(), a.n_in()),
        (b.n_out(), b.n_in()),
        "{what}: shape"
    );
    assert_eq!(
        (a.out_qty, a.in_qty),
        (b.out_qty, b.in_qty),
        "{what}: quantities"
    );
    for l in 0..a.n_lines() {
        for i in 0..a.n_out() {
            for j in 0..a.n_in() {
                assert_eq!(
                    a.is_present(i, j),
                    b.is_present(i, j),
                    "{what}: entry {i},{j}"
                );
                if a.is_present(i, j) {
                    assert_eq!(
                        a.get(l, i, j),
                        b.get(l, i, j),
                        "{what}: line {l} entry {i},{j}"
                    );
                }
            }
        }
    }
}

#[test]
fn the_demo_supplier_csvs_map_by_detection_alone() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-frf");
    let recipe: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(root.join("heat-pump.recipe.json")).unwrap())
            .unwrap();
    let mut compared = 0;
    for (name, comp) in recipe["components"].as_object().unwrap() {
        let Some(file) = comp["file"].as_str() else {
            continue;
        };
        if !file.ends_with(".csv") {
            continue;
        }
        let bytes = std::fs::read(root.join(file)).unwrap();
        let hand: ImportOptions = serde_json::from_value(comp["import"].clone()).unwrap();
        let by_hand = io::load(&bytes, file, &hand).unwrap();
        let detected = io::load(&bytes, file, &auto()).unwrap();
        assert!(
            detected
                .warnings
                .iter()
                .any(|w| w.starts_with("column map detected from the file")),
            "{name}: the detection says how it decided: {:?}",
            detected.warnings
        );
        let h = &by_hand.sets[0];
        let d = &detected.sets[0];
        if h.n_out() == d.n_out() && h.n_in() == d.n_in() {
            same_values(d, h, name);
        } else {
            // the isolator's file holds two directions; the recipe maps the axial one
            assert_eq!(
                (h.n_out(), h.n_in(), d.n_out(), d.n_in()),
                (1, 1, 2, 2),
                "{name}"
            );
            assert_eq!(d.freqs, h.freqs, "{name}");
            assert_eq!((d.out_qty, d.in_qty), (h.out_qty, h.in_qty), "{name}");
            for l in 0..h.n_lines() {
                assert_eq!(d.get(l, 0, 0), h.get(l, 0, 0), "{name}: line {l}");
            }
            assert_eq!(d.outputs[0].to_string(), "isolator-stiffness:axial");
        }
        compared += 1;
    }
    assert_eq!(compared, 3, "the three supplier CSVs");
}

#[test]
fn a_file_of_h_out_in_re_im_columns_maps_like_its_hand_map() {
    // receptance of two points in mm/N; the unit in the column names
    let mut text = String::from("freq [Hz],H_101Z_101Z_re [mm/N],H_101Z_101Z_im [mm/N],H_102X_101Z_re [mm/N],H_102X_101Z_im [mm/N]\n");
    for k in 1..=50 {
        let f = k as f64 * 2.0;
        let (m, c, kk) = (1.5, 20.0, 4.0e4);
        let w = 2.0 * std::f64::consts::PI * f;
        let d = num_complex::Complex64::new(kk - w * w * m, w * c);
        let h = 1e3 / d; // mm/N
        let h2 = h * 0.4;
        text.push_str(&format!("{f},{},{},{},{}\n", h.re, h.im, h2.re, h2.im));
    }
    let hand: ImportOptions = serde_json::from_value(serde_json::json!({
        "column_map": {
            "freq": 1, "unit": "mm/N", "out_qty": "displacement", "in_qty": "force", "skip_rows": 1,
            "entries": [
                { "out_dof": "101+Z", "in_dof": "101+Z", "values": { "form": "re-im", "re": 2, "im": 3 } },
                { "out_dof": "102+X", "in_dof": "101+Z", "values": { "form": "re-im", "re": 4, "im": 5 } }
            ]
        }
    }))
    .unwrap();
    let by_hand = io::load(text.as_bytes(), "bench.csv", &hand).unwrap();
    let detected = io::load(text.as_bytes(), "bench.csv", &auto()).unwrap();
    same_values(&detected.sets[0], &by_hand.sets[0], "H columns");
    // the directions written as 101Z and 102X become DOF labels
    let outs: Vec<String> = detected.sets[0]
        .outputs
        .iter()
        .map(|d| d.to_string())
        .collect();
    assert_eq!(outs, ["bench:101+Z", "bench:102+X"]);
    // the recipe spelling is the same option
    let json: ImportOptions =
        serde_json::from_value(serde_json::json!({ "column_map": "auto" })).unwrap();
    assert!(json.auto_map);
}

#[test]
fn what_cannot_be_told_from_the_file_is_refused_plainly() {
    for (text, says) in [
        (
            "1,2,3\n4,5,6\n7,8,9\n",
            "no line of column names above the data",
        ),
        (
            "f,H_1_1_re,H_1_1_im\n1,2,3\n4,5,6\n7,8,9\n",
            "no unit of the values found",
        ),
        (
            "f [Hz],alpha,beta\n1,2,3\n4,5,6\n7,8,9\n",
            "no pair of value columns recognised",
        ),
        (
            "just words\nmore words\n",
            "plain text without columns of numbers",
        ),
    ] {
        let e = io::load(text.as_bytes(), "s.csv", &auto()).unwrap_err();
        assert!(e.to_string().contains(says), "{text:?}: {e}");
        assert!(e.to_string().starts_with("s.csv"), "{e}");
    }
    // auto on a file that needs no map, or with a map, is refused (used or refused)
    let uff =
        std::fs::read(Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-frf/unit-casing.uff"))
            .unwrap();
    let e = io::load(&uff, "unit-casing.uff", &auto()).unwrap_err();
    assert!(e.to_string().contains("needs none"), "{e}");
}
