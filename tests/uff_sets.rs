//! Several FRF sets in one UFF file: what mortise writes comes back as the
//! same sets (not one merged matrix), while a file that really is one set
//! spread over many datasets (a measurement export, written here by pyuff)
//! still reads as one set.
//!
//! reference for the layout: the dataset 58 description as reproduced in
//! pyuff 2.5.8 `datasets/dataset_58.py`; reference reader: pyuff 2.5.8 (PyPI).

mod common;

use mortise::frf::{Direction, Dof, FrfSet};
use mortise::io::{self, uff58, ImportOptions};
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::Value;

fn z(comp: &str, node: &str) -> Dof {
    Dof::new(comp, node, Direction::Z)
}

/// An accelerance set on an even grid, values needing all 17 digits.
fn accelerance(name: &str, comp: &str, nodes_out: &[&str], nodes_in: &[&str], seed: f64) -> FrfSet {
    let freqs: Vec<f64> = (0..48).map(|k| 5.0 + 0.5 * k as f64).collect();
    let mut s = FrfSet::zeros(
        name,
        freqs,
        nodes_out.iter().map(|n| z(comp, n)).collect(),
        nodes_in.iter().map(|n| z(comp, n)).collect(),
        Quantity::Acceleration,
        Quantity::Force,
    );
    for k in 0..s.n_lines() {
        for i in 0..s.n_out() {
            for j in 0..s.n_in() {
                let a = seed * (1.0 + k as f64).sqrt() / (3.0 + i as f64 + 7.0 * j as f64);
                s.set(
                    k,
                    i,
                    j,
                    Complex64::new(a / 3.0, -(a * 1.1 + k as f64 / 7.0).sin()),
                );
            }
        }
    }
    s
}

fn with_coherence(mut s: FrfSet, base: f64) -> FrfSet {
    let n = s.data.len();
    s.coherence = Some((0..n).map(|m| base + 0.001 * (m % 37) as f64).collect());
    s
}

/// Read back with the default options (components from the entity names).
fn read_back(bytes: &[u8], name: &str) -> Vec<FrfSet> {
    let l = io::load(bytes, name, &ImportOptions::default()).unwrap();
    l.sets
}

/// `tol` 0: bit for bit; else |a - b| <= tol |b|.
fn assert_same(got: &FrfSet, want: &FrfSet, tol: f64) {
    assert_eq!(got.name, want.name);
    assert_eq!(got.outputs, want.outputs, "{}", want.name);
    assert_eq!(got.inputs, want.inputs, "{}", want.name);
    assert_eq!(got.present, want.present, "{}", want.name);
    assert_eq!(got.freqs, want.freqs);
    let worst = got
        .data
        .iter()
        .zip(&want.data)
        .filter(|(_, b)| b.norm() > 0.0)
        .map(|(a, b)| (a - b).norm() / b.norm())
        .fold(0.0f64, f64::max);
    eprintln!("{}: largest relative difference {worst:.2e}", want.name);
    for (a, b) in got.data.iter().zip(&want.data) {
        if tol == 0.0 {
            assert_eq!(
                (a.re.to_bits(), a.im.to_bits()),
                (b.re.to_bits(), b.im.to_bits()),
                "{}: {a} vs {b}",
                want.name
            );
        } else {
            assert!(
                (a - b).norm() <= tol * b.norm(),
                "{}: {a} vs {b}",
                want.name
            );
        }
    }
    match (&got.coherence, &want.coherence) {
        (None, None) => {}
        (Some(a), Some(b)) => {
            for (x, y) in a.iter().zip(b) {
                assert!((x - y).abs() <= tol * y.abs(), "{}: {x} vs {y}", want.name);
            }
        }
        _ => panic!("{}: coherence lost or invented", want.name),
    }
}

// The documented exactness of the writer (src/io/uff58/mod.rs docs):
// 58b bit-exact; ASCII in the standard columns at least 13 significant
// digits (asked here: ≤ 1e-12 relative).
const LAYOUTS: [(&str, bool, f64); 2] = [("ascii", false, 1e-12), ("58b", true, 0.0)];

#[test]
fn two_sets_with_different_dofs_read_back_as_two() {
    let a = with_coherence(
        accelerance("casing", "casing", &["1", "2"], &["1"], 1.0),
        0.9,
    );
    let b = accelerance("bracket", "bracket", &["5", "6", "7"], &["5", "6"], 2.0);
    for (what, binary, tol) in LAYOUTS {
        let bytes = uff58::write(&[a.clone(), b.clone()], binary).unwrap();
        let sets = read_back(&bytes, "both.uff");
        assert_eq!(
            sets.len(),
            2,
            "{what}: {:?}",
            sets.iter().map(|s| &s.name).collect::<Vec<_>>()
        );
        assert_same(&sets[0], &a, tol);
        assert_same(&sets[1], &b, tol);
        assert!(
            sets.iter().all(|s| s.missing_entries().is_empty()),
            "{what}"
        );
    }
}

#[test]
fn two_sets_with_the_same_dofs_read_back_as_two() {
    // same component, DOFs, grid and quantities; other values and coherence
    let a = with_coherence(
        accelerance("wall", "wall", &["1", "2"], &["1", "2"], 1.0),
        0.9,
    );
    let b = with_coherence(
        accelerance("wall wet", "wall", &["1", "2"], &["1", "2"], 5.0),
        0.5,
    );
    // and a third one with the very same name as the first
    let c = accelerance("wall", "wall", &["1", "2"], &["1", "2"], 9.0);
    for (what, binary, tol) in LAYOUTS {
        let bytes = uff58::write(&[a.clone(), b.clone(), c.clone()], binary).unwrap();
        let (sets, warns) = uff58::read_with(&bytes, "wall.uff", None).unwrap();
        assert_eq!(sets.len(), 3, "{what}: {warns:?}");
        assert!(
            !warns.iter().any(|w| w.contains("duplicates")),
            "{what}: {warns:?}"
        );
        assert_same(&sets[0], &a, tol);
        assert_same(&sets[1], &b, tol);
        // the repeated name is told apart by the reader
        let mut c2 = c.clone();
        c2.name = sets[2].name.clone();
        assert_ne!(sets[2].name, "wall");
        assert!(sets[2].name.starts_with("wall"), "{}", sets[2].name);
        assert_same(&sets[2], &c2, tol);
    }
}

#[test]
fn a_set_with_no_entry_is_refused_not_dropped() {
    let a = accelerance("casing", "casing", &["1"], &["1"], 1.0);
    let mut b = accelerance("empty", "casing", &["2"], &["2"], 1.0);
    b.present = vec![false];
    for v in b.data.iter_mut() {
        *v = Complex64::new(f64::NAN, f64::NAN);
    }
    let e = uff58::write(&[a, b], false).unwrap_err();
    assert!(e.message.contains("'empty'"), "{e}");
}

#[test]
fn concatenated_mortise_files_keep_their_sets_apart() {
    // two files written separately, then joined byte for byte: each file's
    // sets keep their names, so they stay apart
    let a = accelerance("front", "unit", &["1"], &["1"], 1.0);
    let b = accelerance("rear", "unit", &["1"], &["1"], 3.0);
    let c = accelerance("side", "unit", &["1"], &["1"], 4.0);
    let mut bytes = uff58::write(&[a.clone(), b.clone()], true).unwrap();
    bytes.extend(uff58::write(std::slice::from_ref(&c), true).unwrap());
    let sets = read_back(&bytes, "joined.uff");
    assert_eq!(sets.len(), 3);
    for (s, w) in sets.iter().zip([&a, &b, &c]) {
        assert_same(s, w, 0.0);
    }
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

#[test]
fn pyuff_file_of_one_set_reads_as_one_set() {
    let dir = common::scratch("uff_sets_pyuff");
    // reference: pyuff 2.5.8 (PyPI)
    common::run_py("uff_pyuff_oneset.py", &[dir.to_str().unwrap()]);
    let exp: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("oneset.json")).unwrap()).unwrap();
    for (name, tol) in [("oneset_ascii.uff", 1e-12), ("oneset_binary.uff", 0.0)] {
        let bytes = std::fs::read(dir.join(name)).unwrap();
        let (sets, warns) = uff58::read(&bytes, name, "wall").unwrap();
        assert_eq!(sets.len(), 1, "{name}: {warns:?}");
        let s = &sets[0];
        assert_eq!((s.n_out(), s.n_in()), (3, 2), "{name}");
        assert!(s.missing_entries().is_empty(), "{name}");
        let mut n = 0;
        for d in exp.as_array().unwrap().iter().filter(|d| d["file"] == name) {
            let o = z("wall", &d["rsp_node"].as_i64().unwrap().to_string());
            let r = z("wall", &d["ref_node"].as_i64().unwrap().to_string());
            let (i, j) = (s.out_index(&o).unwrap(), s.in_index(&r).unwrap());
            assert_eq!(s.freqs, floats(&d["x"]), "{name}");
            let (re, im) = (floats(&d["re"]), floats(&d["im"]));
            for k in 0..re.len() {
                let want = Complex64::new(re[k], im[k]);
                let got = s.get(k, i, j);
                // reference: pyuff 2.5.8 (PyPI), the values pyuff reads back
                assert!(
                    (got - want).norm() <= tol * want.norm(),
                    "{name} {o}/{r} line {k}: {got} vs {want}"
                );
            }
            n += 1;
        }
        assert_eq!(n, 6, "{name}");
    }
}
