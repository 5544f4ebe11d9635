//! Text node labels written to UFF (whose nodes are integers): the one
//! library export that the page's export and `mortise run` both call numbers
//! them, returns the table, and the table maps a file read back to the labels.

mod common;

use mortise::frf::{Direction, Dof, FrfSet, SignalKind};
use mortise::io::{self, nodes::NodeNumber, ExportFormat, ImportOptions};
use mortise::recipe::{self, MapSource};
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::Value;
use std::collections::BTreeMap;

/// A mobility with text labels (as suppliers write them) and numeric ones,
/// two components, and a spectrum at a text-labelled DOF.
fn labelled_sets() -> Vec<FrfSet> {
    let outs = vec![
        Dof::new("wall", "a1", Direction::X),
        Dof::new("wall", "7", Direction::Z),
        Dof::new("unit", "seat-rear", Direction::Z),
    ];
    let ins = vec![
        Dof::new("wall", "a1", Direction::X),
        Dof::new("unit", "7", Direction::Z),
    ];
    let mut h = FrfSet::zeros(
        "seat to wall",
        vec![20.0, 40.0, 80.0],
        outs,
        ins,
        Quantity::Velocity,
        Quantity::Force,
    );
    for (n, v) in h.data.iter_mut().enumerate() {
        *v = Complex64::new(1e-5 * (n as f64 + 1.0), -3e-6 * (n as f64).sqrt());
    }
    let mut f = FrfSet::zeros(
        "seat forces",
        vec![20.0, 40.0, 80.0],
        vec![Dof::new("unit", "seat-rear", Direction::Z)],
        vec![Dof::scalar("", "ref")],
        Quantity::Force,
        Quantity::Dimensionless,
    );
    f.signal = Some(SignalKind::Rms);
    f.data[2] = Complex64::new(0.5, 0.25);
    vec![h, f]
}

/// The DOF a written one stands for, by the table.
fn label_of(d: &Dof, table: &[NodeNumber]) -> Dof {
    let mut back = d.clone();
    if let Some(e) = table
        .iter()
        .find(|e| e.component == d.component && e.number.to_string() == d.node)
    {
        back.node = e.node.clone();
    }
    back
}

#[test]
fn export_numbers_text_labels_and_the_table_maps_back() {
    let sets = labelled_sets();
    // before: the page's export failed on the first text label
    assert!(io::save(&sets, ExportFormat::Uff)
        .unwrap_err()
        .message
        .contains("node 'a1' is not a number"));
    for fmt in [ExportFormat::Uff, ExportFormat::UffBinary] {
        let ex = io::export(&sets, fmt).unwrap();
        // numbers above the largest numeric node (7), in order of first
        // appearance; unit:7 collides with wall:7 and is renumbered too
        let want = [
            ("wall", "a1", 8),
            ("unit", "seat-rear", 9),
            ("unit", "7", 10),
        ];
        assert_eq!(ex.node_numbers.len(), want.len(), "{:?}", ex.node_numbers);
        for (e, (c, n, k)) in ex.node_numbers.iter().zip(want) {
            assert_eq!((e.component.as_str(), e.node.as_str(), e.number), (c, n, k));
        }
        // deterministic: the same bytes and table every time
        let again = io::export(&sets, fmt).unwrap();
        assert_eq!(again.bytes, ex.bytes);
        assert_eq!(again.node_numbers, ex.node_numbers);
        // read back: integer nodes; the table gives the labels again
        let l = io::load(&ex.bytes, "out.uff", &ImportOptions::default()).unwrap();
        assert_eq!(l.sets.len(), 2);
        for (got, orig) in l.sets.iter().zip(&sets) {
            for d in got.outputs.iter().chain(&got.inputs) {
                assert!(d.node == "ref" || d.node.parse::<u64>().is_ok(), "{d}");
            }
            let outs: Vec<Dof> = got
                .outputs
                .iter()
                .map(|d| label_of(d, &ex.node_numbers))
                .collect();
            let ins: Vec<Dof> = got
                .inputs
                .iter()
                .map(|d| label_of(d, &ex.node_numbers))
                .collect();
            assert_eq!(outs, orig.outputs);
            assert_eq!(ins, orig.inputs);
            assert_eq!(got.signal, orig.signal);
            for (a, b) in got.data.iter().zip(&orig.data) {
                // ASCII columns keep ≥ 13 significant digits (src/io/uff58/mod.rs); 58b exact
                assert!((a - b).norm() <= 1e-12 * b.norm(), "{a} vs {b}");
            }
        }
    }
    // formats with text labels keep them: no table
    let ex = io::export(&sets, ExportFormat::Csv).unwrap();
    assert!(ex.node_numbers.is_empty());
    assert_eq!(ex.bytes, io::save(&sets, ExportFormat::Csv).unwrap());
    // the table as JSON text, as the page offers it beside the file
    let ex = io::export(&sets, ExportFormat::Uff).unwrap();
    let v: Value = serde_json::from_str(&ex.node_numbers_json()).unwrap();
    assert_eq!(v[0]["node"], "a1");
    assert_eq!(v[0]["number"], 8);
}

#[test]
fn cli_run_and_library_export_number_alike() {
    // the demo (invented data) has text labels (wall:a1 ...) in its outputs
    let files: BTreeMap<String, Vec<u8>> =
        mortise::demo_files::files().unwrap().into_iter().collect();
    let text = String::from_utf8(files["heat-pump.recipe.json"].clone()).unwrap();
    let r = recipe::parse(&text).unwrap();
    let res = recipe::run(&r, &MapSource(files)).unwrap();
    let dir = common::scratch("uff_nodes_cli");
    mortise::cli::run::write_outputs(&res, &dir).unwrap();
    let report: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("report.json")).unwrap()).unwrap();
    let mut with_labels = 0;
    for s in &res.outputs {
        let ex = io::export(std::slice::from_ref(s), ExportFormat::Uff).unwrap();
        let cli = &report["uff_node_numbers"][&s.name];
        if ex.node_numbers.is_empty() {
            assert!(cli.is_null(), "{}: {cli}", s.name);
        } else {
            let cli: Vec<NodeNumber> = serde_json::from_value(cli.clone()).unwrap();
            assert_eq!(cli, ex.node_numbers, "{}", s.name);
            with_labels += 1;
        }
        let written =
            std::fs::read(dir.join(format!("{}.uff", mortise::cli::run::safe_name(&s.name))))
                .unwrap();
        assert_eq!(written, ex.bytes, "{}", s.name);
    }
    assert!(
        with_labels >= 2,
        "the demo outputs should carry text labels"
    );
}
