//! `mortise run` from files alone against a direct assembly in numpy.
//!
//! tests/py/run_msd_files.py builds three lumped mass-spring-damper parts with
//! non-proportional damping, writes their receptances in three formats
//! (mortise's CSV layout, a supplier table read through a column map, UFF 58b
//! written by pyuff) and the directly assembled systems as JSON (reference:
//! numpy direct assembly of M, K, C, inverting K − ω²M + iωC per line). The
//! recipe tests/recipes/run_msd.recipe.json couples them (rigid joint,
//! spring-damper joint, three parts with a two-DOF interface) and decouples
//! one part from an assembly; `mortise run` writes the results, which are read
//! back with `mortise::io::load` and compared line by line.

mod common;

use mortise::io::{self, ImportOptions};
use mortise::FrfSet;
use num_complex::Complex64;
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

struct Setup {
    dir: PathBuf,
    out: PathBuf,
    reference: Value,
    report: Value,
}

fn setup() -> &'static Setup {
    static S: OnceLock<Setup> = OnceLock::new();
    S.get_or_init(|| {
        let dir = common::scratch("run_msd_files");
        let said = common::run_py("run_msd_files.py", &[dir.to_str().unwrap()]);
        assert!(said.contains("reference.json"), "{said}");
        let recipe = dir.join("run_msd.recipe.json");
        std::fs::copy(
            Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/recipes/run_msd.recipe.json"),
            &recipe,
        )
        .unwrap();
        let out = dir.join("out");
        let printed = mortise::cli::run_cli(&[
            "run".to_string(),
            recipe.to_str().unwrap().to_string(),
            "-o".to_string(),
            out.to_str().unwrap().to_string(),
        ])
        .unwrap();
        assert!(printed.contains("wrote 4 output(s)"), "{printed}");
        let reference =
            serde_json::from_str(&std::fs::read_to_string(dir.join("reference.json")).unwrap())
                .unwrap();
        let report =
            serde_json::from_str(&std::fs::read_to_string(out.join("report.json")).unwrap())
                .unwrap();
        Setup {
            dir,
            out,
            reference,
            report,
        }
    })
}

fn load(path: &Path) -> FrfSet {
    let bytes = std::fs::read(path).unwrap();
    let mut l = io::load(&bytes, path.to_str().unwrap(), &ImportOptions::default()).unwrap();
    assert_eq!(l.sets.len(), 1, "{}", path.display());
    l.sets.remove(0)
}

/// Largest error of `got` against the reference case, relative to the largest
/// reference entry of the same line (normwise), and the largest entrywise
/// relative error |Δ|/|H_ref|. Every DOF label of `got` must be in the case's
/// label map (`rename` maps labels of `got` to the reference's first).
fn compare(got: &FrfSet, case: &Value, rename: &dyn Fn(String) -> String) -> (f64, f64) {
    let s = setup();
    let freqs: Vec<f64> = s.reference["freqs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    assert_eq!(got.freqs.len(), freqs.len());
    for (a, b) in got.freqs.iter().zip(&freqs) {
        assert!((a - b).abs() <= 1e-12 * b, "{a} Hz against {b} Hz");
    }
    let n = case["n"].as_u64().unwrap() as usize;
    let re = case["re"].as_array().unwrap();
    let im = case["im"].as_array().unwrap();
    let g = |d: &mortise::Dof| -> usize {
        let l = rename(d.to_string());
        case["labels"][&l]
            .as_u64()
            .unwrap_or_else(|| panic!("reference has no DOF {l}")) as usize
    };
    let oi: Vec<usize> = got.outputs.iter().map(g).collect();
    let ii: Vec<usize> = got.inputs.iter().map(g).collect();
    let (mut norm, mut entry) = (0.0f64, 0.0f64);
    for k in 0..freqs.len() {
        let r = |a: usize, b: usize| {
            let x = (k * n + a) * n + b;
            Complex64::new(re[x].as_f64().unwrap(), im[x].as_f64().unwrap())
        };
        let mut scale = 0.0f64;
        for &a in &oi {
            for &b in &ii {
                scale = scale.max(r(a, b).norm());
            }
        }
        for (i, &a) in oi.iter().enumerate() {
            for (j, &b) in ii.iter().enumerate() {
                let d = (got.get(k, i, j) - r(a, b)).norm();
                norm = norm.max(d / scale);
                entry = entry.max(d / r(a, b).norm());
            }
        }
    }
    (norm, entry)
}

fn same(l: String) -> String {
    l
}

fn check(name: &str, rename: &dyn Fn(String) -> String) {
    let s = setup();
    let got = load(&s.out.join(format!("{name}.csv")));
    let (norm, entry) = compare(&got, &s.reference[name], rename);
    eprintln!("{name}: max error {norm:.2e} of the line's largest entry, {entry:.2e} entrywise");
    // reference: numpy direct assembly of M, K, C (tests/py/run_msd_files.py)
    assert!(norm <= 1e-8, "{name}: relative error {norm:e}");
    assert!(entry <= 1e-8, "{name}: entrywise relative error {entry:e}");
}

#[test]
fn rigid_joint_from_files_equals_direct_assembly() {
    check("rigid", &same);
    let got = load(&setup().out.join("rigid.csv"));
    // every DOF of both parts, interface twice (A:3+Z and B:1+Z)
    assert_eq!(got.outputs.len(), 6);
}

#[test]
fn spring_damper_joint_from_files_equals_direct_assembly() {
    check("flex", &same);
}

#[test]
fn three_parts_with_a_two_dof_interface_equal_direct_assembly() {
    check("three", &same);
    let st = &setup().report["steps"];
    let three = st
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["id"] == "three")
        .unwrap();
    assert!(three["interface"]["worst_condition"]
        .as_f64()
        .unwrap()
        .is_finite());
}

#[test]
fn decoupling_recovers_the_part_from_the_assembly() {
    check("decoupled", &same);
}

/// The UFF written beside each CSV holds the same numbers: B's nodes, which
/// clash with A's numbers, are renumbered and the report says how.
#[test]
fn uff_output_reads_back_with_the_reported_node_numbers() {
    let s = setup();
    let map = s.report["uff_node_numbers"]["three"].as_array().unwrap();
    let back = move |l: String| -> String {
        let d = mortise::Dof::parse(&l, "").unwrap();
        for m in map {
            if m["component"] == d.component.as_str()
                && m["number"].as_u64().map(|n| n.to_string()) == Some(d.node.clone())
            {
                let mut e = d.clone();
                e.node = m["node"].as_str().unwrap().to_string();
                return e.to_string();
            }
        }
        l
    };
    let got = load(&s.out.join("three.uff"));
    assert_eq!(got.outputs.len(), 9);
    let (norm, entry) = compare(&got, &s.reference["three"], &back);
    eprintln!("three.uff: max error {norm:.2e} normwise, {entry:.2e} entrywise");
    // reference: numpy direct assembly of M, K, C (tests/py/run_msd_files.py)
    assert!(norm <= 1e-8, "{norm:e}");
}

/// The one-line route: `mortise couple A.csv B.csv --join 'A:3+Z = B:1+Z' -o out.csv`.
#[test]
fn one_line_couple_equals_direct_assembly() {
    let s = setup();
    let out = s.dir.join("one-line.csv");
    let arg = |p: PathBuf| p.to_str().unwrap().to_string();
    let printed = mortise::cli::run_cli(&[
        "couple".into(),
        arg(s.dir.join("A.csv")),
        arg(s.dir.join("B.csv")),
        "--join".into(),
        "A:3+Z = B:1+Z".into(),
        "-o".into(),
        arg(out.clone()),
    ])
    .unwrap();
    assert!(printed.contains("wrote 1 output(s)"), "{printed}");
    let got = load(&out);
    let (norm, entry) = compare(&got, &s.reference["rigid"], &same);
    eprintln!("one-line couple: max error {norm:.2e} normwise, {entry:.2e} entrywise");
    // reference: numpy direct assembly of M, K, C (tests/py/run_msd_files.py)
    assert!(norm <= 1e-8 && entry <= 1e-8, "{norm:e} {entry:e}");
}
