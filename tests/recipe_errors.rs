//! A recipe that refers to a missing DOF, a missing file or incompatible
//! quantities fails with a message that points at the recipe entry.

use mortise::frf::{Direction, Dof, FrfSet};
use mortise::recipe::{self, MapSource};
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::json;

/// SDOF receptance 1/(k − ω²m + iωc) (textbook; e^{+iωt}).
fn sdof(comp: &str, m: f64, k: f64, c: f64) -> FrfSet {
    let d = Dof::new(comp, "1", Direction::Z);
    let freqs: Vec<f64> = (1..=50).map(|i| i as f64 * 2.0).collect();
    let mut s = FrfSet::zeros(
        comp,
        freqs,
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    for l in 0..s.n_lines() {
        let w = s.omega(l);
        s.set(l, 0, 0, 1.0 / Complex64::new(k - w * w * m, w * c));
    }
    s
}

fn recipe_with(steps: serde_json::Value) -> recipe::Recipe {
    try_recipe_with(steps).unwrap()
}

fn try_recipe_with(steps: serde_json::Value) -> mortise::Result<recipe::Recipe> {
    let r = json!({
        "format": "mortise-recipe",
        "version": 1,
        "components": {
            "a": { "inline": sdof("a", 1.0, 1e4, 3.0) },
            "b": { "inline": sdof("b", 2.0, 3e4, 5.0) },
        },
        "steps": steps,
        "outputs": []
    });
    recipe::parse(&r.to_string())
}

#[test]
fn missing_dof_points_at_step() {
    let r = recipe_with(json!([
        { "id": "ab", "op": "couple", "parts": ["a", "b"], "joints": [ { "a": "a:1+Z", "b": "b:9+Z" } ] }
    ]));
    let e = recipe::run(&r, &MapSource::default())
        .unwrap_err()
        .to_string();
    assert!(e.contains("steps[0] (id 'ab', op 'couple')"), "{e}");
    assert!(e.contains("b:9+Z"), "{e}");
}

#[test]
fn unknown_operand_points_at_step() {
    // refused when the recipe is read, before any file is loaded
    let e = try_recipe_with(json!([
        { "id": "x", "op": "cascade", "first": "a", "second": "nothing" }
    ]))
    .unwrap_err()
    .to_string();
    assert!(e.contains("steps[0] (id 'x', op 'cascade')"), "{e}");
    assert!(e.contains("'nothing'"), "{e}");
}

#[test]
fn incompatible_quantities_point_at_step() {
    // a receptance (displacement per force) cannot feed another receptance's force input
    let r = recipe_with(json!([
        { "id": "chain", "op": "cascade", "first": "a", "second": "b" }
    ]));
    let e = recipe::run(&r, &MapSource::default())
        .unwrap_err()
        .to_string();
    assert!(e.contains("steps[0] (id 'chain', op 'cascade')"), "{e}");
    assert!(e.contains("displacement") && e.contains("force"), "{e}");
}

#[test]
fn missing_file_points_at_component() {
    let r = recipe::parse(
        &json!({"format":"mortise-recipe","version":1,"components":{"wall":{"file":"wall.csv"}}})
            .to_string(),
    )
    .unwrap();
    let e = recipe::run(&r, &MapSource::default())
        .unwrap_err()
        .to_string();
    assert!(e.contains("components.wall"), "{e}");
    assert!(e.contains("wall.csv"), "{e}");
}

#[test]
fn unknown_output_is_named() {
    let mut r = recipe_with(json!([]));
    r.outputs = vec!["ghost".into()];
    let e = recipe::run(&r, &MapSource::default())
        .unwrap_err()
        .to_string();
    assert!(e.contains("outputs") && e.contains("'ghost'"), "{e}");
}

#[test]
fn variant_scaling_a_source_lowers_levels_by_6_02_db() {
    // Homogeneity of a linear system: halving the input halves the output,
    // 20·log10(2) = 6.02 dB (common practice).
    let r = json!({
        "format": "mortise-recipe", "version": 1,
        "components": { "a": { "inline": sdof("a", 1.0, 1e4, 3.0) } },
        "steps": [ { "id": "half", "op": "scale", "from": "a", "factor": 1.0 } ],
        "variants": [ { "name": "half", "scale": { "a": 0.5 } } ],
        "outputs": ["half"]
    });
    let r = recipe::parse(&r.to_string()).unwrap();
    let res = recipe::run(&r, &MapSource::default()).unwrap();
    let d = res.report.variants[0].level_change_db["half"].unwrap();
    assert!((d + 20.0 * 2f64.log10()).abs() < 1e-12, "{d}");
    assert_eq!(res.outputs.len(), 2);
}
