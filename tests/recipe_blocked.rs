//! Blocked forces through the recipe: a source's forces recovered from bench
//! FRFs and operational indicator responses (in-situ blocked force: Moorhouse,
//! Elliott, Evans, J. Sound Vib. 325, 2009), with an indicator left out as the
//! on-board validation. On noise-free data the least-squares solution is exact
//! (linear algebra; common practice), so recovery is checked to 1e-9.

use mortise::frf::{Direction, Dof, FrfSet, SignalKind};
use mortise::predict::new_spectrum;
use mortise::recipe::{self, MapSource};
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::json;

#[test]
fn recipe_recovers_blocked_forces_and_validates() {
    let freqs: Vec<f64> = (1..=40).map(|i| 5.0 * i as f64).collect();
    let ind: Vec<Dof> = (1..=4)
        .map(|i| Dof::new("bench", &format!("i{i}"), Direction::Z))
        .collect();
    let src: Vec<Dof> = (1..=2)
        .map(|i| Dof::new("src", &i.to_string(), Direction::Z))
        .collect();
    let mut h = FrfSet::zeros(
        "bench",
        freqs.clone(),
        ind.clone(),
        src.clone(),
        Quantity::Acceleration,
        Quantity::Force,
    );
    let mut y = new_spectrum(
        "op",
        freqs.clone(),
        ind.clone(),
        Quantity::Acceleration,
        SignalKind::Peak,
    );
    let mut truth = Vec::new();
    for (k, &fk) in freqs.iter().enumerate() {
        let w = 2.0 * std::f64::consts::PI * fk;
        // a well-conditioned, frequency-dependent 4×2 transfer (invented test data)
        for i in 0..4 {
            for j in 0..2 {
                let a = 1.0 + (i * 2 + j) as f64 * 0.37 + (w * 1e-3 * (i + 1) as f64).sin();
                h.set(
                    k,
                    i,
                    j,
                    Complex64::new(a, 0.3 * (j as f64 + 1.0) - 0.1 * i as f64),
                );
            }
        }
        let f = [
            Complex64::new(2.0, -1.0 + 0.01 * k as f64),
            Complex64::new(-0.5, 0.8),
        ];
        for i in 0..4 {
            let v = h.get(k, i, 0) * f[0] + h.get(k, i, 1) * f[1];
            y.set(k, i, 0, v);
        }
        truth.push(f);
    }
    let r = json!({
        "format": "mortise-recipe", "version": 1,
        "components": { "bench": { "inline": h }, "op": { "inline": y } },
        "steps": [ { "id": "fb", "op": "blocked-forces", "bench": "bench", "operational": "op",
                     "tsvd": 1e-6, "validate": ["bench:i4+Z"] } ],
        "outputs": ["fb"]
    });
    let r = recipe::parse(&r.to_string()).unwrap();
    let res = recipe::run(&r, &MapSource::default()).unwrap();
    let fb = &res.outputs[0];
    assert_eq!(fb.outputs, src);
    let mut worst = 0.0f64;
    for (k, f) in truth.iter().enumerate() {
        for (j, fj) in f.iter().enumerate() {
            worst = worst.max((fb.get(k, j, 0) - fj).norm() / fj.norm());
        }
    }
    assert!(worst <= 1e-9, "blocked forces recovered to {worst:e}");
    // the left-out indicator is predicted from the recovered forces: error ~0 dB
    let b = res.report.steps[0].blocked.as_ref().unwrap();
    let v = b.validation.as_ref().unwrap().worst_band_error_db.unwrap();
    assert!(v.abs() < 1e-6, "validation error {v} dB");
    assert_eq!(b.indicators.len(), 3);
    // no interface conditioning on a blocked-force step: it has an indicator matrix
    assert!(res.report.steps[0].interface.is_none());
}
