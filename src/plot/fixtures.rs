//! Test data shared by the plot modules' unit tests: a single-DOF
//! receptance and a one-curve spec.

use super::spec::PlotSpec;
use crate::frf::{Direction, Dof, FrfSet};
use crate::units::Quantity;
use num_complex::Complex64;
use std::collections::BTreeMap;

pub(super) fn sdof() -> BTreeMap<String, FrfSet> {
    // Receptance of m = 1 kg, k = 1e4 N/m, c = 2 N·s/m: 1/(k − ω²m + iωc).
    let d = Dof::new("demo", "1", Direction::Z);
    let freqs: Vec<f64> = (1..=400).map(|i| i as f64 * 0.5).collect();
    let mut h = FrfSet::zeros(
        "sdof",
        freqs,
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    for l in 0..h.n_lines() {
        let w = h.omega(l);
        h.set(l, 0, 0, 1.0 / Complex64::new(1e4 - w * w, 2.0 * w));
    }
    let mut m = BTreeMap::new();
    m.insert("a".to_string(), h);
    m
}

pub(super) fn spec(kind: &str) -> PlotSpec {
    PlotSpec::from_json(&format!(
        r#"{{"kind":"{kind}","series":[{{"set":"a","out":0,"in":0}}],"title":"t"}}"#
    ))
    .unwrap()
}
