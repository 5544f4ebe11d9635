//! Shared by the couple_* integration tests: reading the JSON written by the
//! Python reference scripts, and comparing FRF sets.
#![allow(dead_code)]

use mortise::assemble::{Joint, JointKind};
use mortise::{Dof, FrfKind, FrfSet, Quantity};
use num_complex::Complex64;
use serde_json::Value;

/// An FRF set from {"name", "kind", "outputs", "inputs", "re", "im"} on `freqs`.
pub fn set_from_json(v: &Value, freqs: &[f64]) -> FrfSet {
    let labels = |k: &str| -> Vec<Dof> {
        v[k].as_array()
            .unwrap()
            .iter()
            .map(|s| Dof::parse(s.as_str().unwrap(), "").unwrap())
            .collect()
    };
    let (oq, iq) = match v["kind"].as_str() {
        Some(k) => FrfKind::quantities(k).unwrap(),
        None => (
            Quantity::parse(v["out_qty"].as_str().unwrap()).unwrap(),
            Quantity::parse(v["in_qty"].as_str().unwrap()).unwrap(),
        ),
    };
    let mut s = FrfSet::zeros(
        v["name"].as_str().unwrap(),
        freqs.to_vec(),
        labels("outputs"),
        labels("inputs"),
        oq,
        iq,
    );
    let re = v["re"].as_array().unwrap();
    let im = v["im"].as_array().unwrap();
    assert_eq!(re.len(), s.data.len());
    for (n, d) in s.data.iter_mut().enumerate() {
        *d = Complex64::new(re[n].as_f64().unwrap(), im[n].as_f64().unwrap());
    }
    s
}

pub fn joints_from_json(v: &Value) -> Vec<Joint> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|j| Joint {
            a: Dof::parse(j["a"].as_str().unwrap(), "").unwrap(),
            b: Dof::parse(j["b"].as_str().unwrap(), "").unwrap(),
            kind: serde_json::from_value::<JointKind>(j["kind"].clone()).unwrap(),
        })
        .collect()
}

pub fn freqs_of(v: &Value) -> Vec<f64> {
    v["freqs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

pub fn read_json(path: &std::path::Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

/// Largest per-line relative difference: max over lines of
/// max_ij |a − b| / max_ij |b|. DOF labels and kinds must agree.
pub fn max_rel_diff(a: &FrfSet, b: &FrfSet) -> f64 {
    assert_eq!(a.outputs, b.outputs, "output DOFs differ");
    assert_eq!(a.inputs, b.inputs, "input DOFs differ");
    assert_eq!(a.out_qty, b.out_qty);
    assert_eq!(a.in_qty, b.in_qty);
    assert_eq!(a.n_lines(), b.n_lines());
    let mut worst: f64 = 0.0;
    for k in 0..a.n_lines() {
        let (la, lb) = (a.line(k), b.line(k));
        let scale = lb.iter().map(|v| v.norm()).fold(0.0, f64::max);
        let d = la
            .iter()
            .zip(lb)
            .map(|(x, y)| (x - y).norm())
            .fold(0.0, f64::max);
        worst = worst.max(d / scale);
    }
    worst
}
