//! Merging a roving-hammer delivery (one UFF file per reference) written by
//! pyuff. reference: pyuff 2.5.8 (PyPI)

mod common;

use mortise::frf::{Direction, Dof};
use mortise::io::{merge, uff58};
use num_complex::Complex64;
use serde_json::Value;

#[test]
fn merge_pyuff_roving_hammer_files() {
    let dir = common::scratch("uff_merge");
    common::run_py("uff_pyuff_roving.py", &[dir.to_str().unwrap()]);
    let exp: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("roving.json")).unwrap()).unwrap();
    let mut sets = Vec::new();
    for name in ["ref1.uff", "ref2.uff", "ref3.uff"] {
        let bytes = std::fs::read(dir.join(name)).unwrap();
        let (s, _) = uff58::read(&bytes, name, "wall").unwrap();
        assert_eq!(s.len(), 1);
        sets.extend(s);
    }
    let (m, remarks) = merge::merge(sets).unwrap();
    assert_eq!(m.n_out(), 4);
    assert_eq!(m.n_in(), 3);
    assert_eq!(m.provenance.len(), 3);
    // the duplicate 11+Z / 2+Z: ref2.uff kept, ref3.uff named
    let dup = remarks
        .iter()
        .find(|r| r.contains("kept the first"))
        .unwrap();
    assert!(
        dup.contains("wall:11+Z / wall:2+Z")
            && dup.contains("ref2.uff")
            && dup.contains("ref3.uff"),
        "{dup}"
    );
    // the gap 14+Z / 3+Z
    let gap = remarks
        .iter()
        .find(|r| r.contains("remain missing"))
        .unwrap();
    assert!(
        gap.contains("1 of 12") && gap.contains("wall:14+Z / wall:3+Z"),
        "{gap}"
    );
    let o14 = m.out_index(&Dof::new("wall", "14", Direction::Z)).unwrap();
    let i3 = m.in_index(&Dof::new("wall", "3", Direction::Z)).unwrap();
    assert!(!m.is_present(o14, i3));
    // every value as pyuff reads it (the first of a duplicate)
    let mut seen = std::collections::HashSet::new();
    let mut n = 0;
    for d in exp.as_array().unwrap() {
        let o = Dof::new(
            "wall",
            &d["rsp_node"].as_i64().unwrap().to_string(),
            Direction::Z,
        );
        let r = Dof::new(
            "wall",
            &d["ref_node"].as_i64().unwrap().to_string(),
            Direction::Z,
        );
        if !seen.insert((o.clone(), r.clone())) {
            continue;
        }
        let (i, j) = (m.out_index(&o).unwrap(), m.in_index(&r).unwrap());
        let re: Vec<f64> = d["re"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        let im: Vec<f64> = d["im"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        let x: Vec<f64> = d["x"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        assert_eq!(m.freqs, x);
        for k in 0..x.len() {
            let want = Complex64::new(re[k], im[k]);
            // reference: pyuff 2.5.8 (PyPI); 58b doubles, ≤ 1e-12 relative
            assert!((m.get(k, i, j) - want).norm() <= 1e-12 * want.norm());
        }
        n += 1;
    }
    assert_eq!(n, 11);
}
