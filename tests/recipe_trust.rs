//! Each way a recipe used to give a silent wrong answer is now either one
//! exact computation or a refusal that names the entry. References: direct
//! assembly of the dynamic stiffness matrix of two oscillators joined by a
//! spring (textbook structural dynamics, common practice).

use mortise::frf::{Direction, Dof, FrfSet};
use mortise::recipe::{self, MapSource};
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::json;

const M: [f64; 2] = [1.0, 2.0];
const K: [f64; 2] = [1e4, 3e4];
const C: [f64; 2] = [3.0, 5.0];

fn freqs(step: f64) -> Vec<f64> {
    let n = (100.0 / step) as usize;
    (1..=n).map(|i| i as f64 * step).collect()
}

/// Grounded SDOF receptance 1/(k − ω²m + iωc) (e^{+iωt}).
fn sdof(comp: &str, i: usize, f: Vec<f64>) -> FrfSet {
    let d = Dof::new(comp, "1", Direction::X);
    let mut s = FrfSet::zeros(
        comp,
        f,
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    for l in 0..s.n_lines() {
        let w = s.omega(l);
        s.set(l, 0, 0, 1.0 / Complex64::new(K[i] - w * w * M[i], w * C[i]));
    }
    s
}

/// H_aa of the two oscillators joined by a complex stiffness kj:
/// D = [[d_a + kj, −kj], [−kj, d_b + kj]], H = D⁻¹ (direct assembly).
fn direct_haa(w: f64, kj: Complex64) -> Complex64 {
    let d = |i: usize| Complex64::new(K[i] - w * w * M[i], w * C[i]);
    let (a, b) = (d(0) + kj, d(1) + kj);
    b / (a * b - kj * kj)
}

fn recipe_text(steps: serde_json::Value, grid_b: f64) -> String {
    json!({
        "format": "mortise-recipe", "version": 1,
        "components": {
            "A": { "inline": sdof("A", 0, freqs(2.0)) },
            "B": { "inline": sdof("B", 1, freqs(grid_b)) },
        },
        "steps": steps,
        "outputs": ["c"],
    })
    .to_string()
}

fn run(text: &str) -> mortise::Result<recipe::RunResult> {
    recipe::run(&recipe::parse(text)?, &MapSource::default())
}

fn worst_against(s: &FrfSet, kj: impl Fn(f64) -> Complex64) -> f64 {
    let i = s.out_index(&Dof::new("A", "1", Direction::X)).unwrap();
    (0..s.n_lines())
        .map(|l| {
            let w = s.omega(l);
            let want = direct_haa(w, kj(w));
            (s.get(l, i, i) - want).norm() / want.norm()
        })
        .fold(0.0, f64::max)
}

#[test]
fn an_untyped_joint_with_k_and_eta_is_hysteretic_not_rigid() {
    let (k, eta) = (5e4, 0.05);
    let untyped = json!([{ "id": "c", "op": "couple", "parts": ["A", "B"],
        "joints": [{ "a": "A:1+X", "b": "B:1+X", "k": k, "eta": eta }] }]);
    let res = run(&recipe_text(untyped, 2.0)).unwrap();
    let worst = worst_against(&res.outputs[0], |_| Complex64::new(k, k * eta));
    assert!(
        worst < 1e-9,
        "untyped k, eta joint vs direct assembly: {worst:e}"
    );
    // the reading is reported, with the rule
    assert!(
        res.report
            .notes
            .iter()
            .any(|n| n.contains("read as 'hysteretic'")),
        "{:?}",
        res.report.notes
    );
    // the same as writing the type
    let typed = json!([{ "id": "c", "op": "couple", "parts": ["A", "B"],
        "joints": [{ "a": "A:1+X", "b": "B:1+X", "type": "hysteretic", "k": k, "eta": eta }] }]);
    let t = run(&recipe_text(typed, 2.0)).unwrap();
    assert_eq!(t.outputs[0].data, res.outputs[0].data);
    assert!(t.report.notes.is_empty());
    // and far from the rigid answer it used to give silently
    let rigid = json!([{ "id": "c", "op": "couple", "parts": ["A", "B"],
        "joints": [{ "a": "A:1+X", "b": "B:1+X", "type": "rigid" }] }]);
    let r = run(&recipe_text(rigid, 2.0)).unwrap();
    let off = (0..r.outputs[0].n_lines())
        .map(|l| {
            (r.outputs[0].get(l, 0, 0) - res.outputs[0].get(l, 0, 0)).norm()
                / res.outputs[0].get(l, 0, 0).norm()
        })
        .fold(0.0, f64::max);
    assert!(off > 1.0, "rigid and flexible differ by {off}");
}

#[test]
fn a_spring_with_eta_and_foreign_operands_are_refused_naming_the_entry() {
    let e = run(&recipe_text(
        json!([{ "id": "c", "op": "couple", "parts": ["A", "B"],
            "joints": [{ "a": "A:1+X", "b": "B:1+X", "type": "spring", "k": 5e4, "eta": 0.05 }] }]),
        2.0,
    ))
    .unwrap_err()
    .to_string();
    assert!(
        e.contains("steps[0] (id 'c', op 'couple')") && e.contains("'eta' does not belong"),
        "{e}"
    );
    let e = run(&recipe_text(
        json!([{ "id": "c", "op": "couple", "parts": ["A", "B"], "factor": 99, "first": "nonexistent",
            "joints": [{ "a": "A:1+X", "b": "B:1+X" }] }]),
        2.0,
    ))
    .unwrap_err()
    .to_string();
    assert!(
        e.contains("steps[0]") && e.contains("unknown operand `factor`"),
        "{e}"
    );
    let e = run(&recipe_text(
        json!([{ "id": "c", "op": "select", "from": "A", "outputs": ["A:1+X"], "excitation": "x" }]),
        2.0,
    ))
    .unwrap_err()
    .to_string();
    assert!(e.contains("unknown operand `excitation`"), "{e}");
}

#[test]
fn two_grids_meet_through_a_resample_step() {
    let joint = json!([{ "a": "A:1+X", "b": "B:1+X", "type": "spring", "k": 5e4 }]);
    // B on a 1 Hz grid, A on 2 Hz: refused, and the message names the way out
    let e = run(&recipe_text(
        json!([{ "id": "c", "op": "couple", "parts": ["A", "B"], "joints": joint }]),
        1.0,
    ))
    .unwrap_err()
    .to_string();
    assert!(e.contains("'resample' step"), "{e}");
    // with B resampled onto A's lines (which B holds exactly), the coupling
    // equals direct assembly
    let res = run(&recipe_text(
        json!([
            { "id": "b2", "op": "resample", "from": "B", "like": "A" },
            { "id": "c", "op": "couple", "parts": ["A", "b2"], "joints": joint }
        ]),
        1.0,
    ))
    .unwrap();
    let worst = worst_against(&res.outputs[0], |_| Complex64::new(5e4, 0.0));
    assert!(worst < 1e-9, "{worst:e}");
    // never extrapolated: a grid beyond B's lines is refused
    let e = run(&recipe_text(
        json!([
            { "id": "c", "op": "resample", "from": "B", "grid": { "from": 1, "to": 200, "step": 1 } }
        ]),
        1.0,
    ))
    .unwrap_err()
    .to_string();
    assert!(e.contains("steps[0] (id 'c', op 'resample')"), "{e}");
}

#[test]
fn errors_name_every_level_outer_to_inner() {
    let e = run(&recipe_text(
        json!([{ "id": "c", "op": "couple", "parts": ["A", "B"],
            "joints": [{ "a": "A:1+X", "b": "B:1+Q" }] }]),
        2.0,
    ))
    .unwrap_err();
    let t = e.to_string();
    assert!(
        t.contains("steps[0] (id 'c', op 'couple'): joints[0]: b:"),
        "{t}"
    );
    // a variant that drops every joint names the variant, then the step
    let text = json!({
        "format": "mortise-recipe", "version": 1,
        "components": { "A": { "inline": sdof("A", 0, freqs(2.0)) }, "B": { "inline": sdof("B", 1, freqs(2.0)) } },
        "steps": [{ "id": "c", "op": "couple", "parts": ["A", "B"], "joints": [{ "a": "A:1+X", "b": "B:1+X" }] }],
        "variants": [{ "name": "loose", "drop_joints": ["c#0"] }],
        "outputs": ["c"],
    })
    .to_string();
    let e = run(&text).unwrap_err();
    assert_eq!(
        e.context_path(),
        "variants[0] ('loose') → steps[0] (id 'c', op 'couple')"
    );
    assert!(e.to_string().contains("every joint is dropped"), "{e}");
}
