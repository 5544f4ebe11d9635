//! Bundles that re-run and leak nothing: a bundle holding every input runs
//! again to the same numbers; a bundle with a supplier withheld runs once the
//! original file is dropped in again (SHA-256 checked), and holds no result
//! over the withheld part's DOFs, so the inversion attack
//! Z_B = inv(H_c) − Z_A (direct assembly of dynamic stiffness; common
//! practice) that recovered the withheld part before finds nothing to invert.

mod common;

use mortise::frf::{Direction, Dof, FrfSet};
use mortise::io::{self, bundle, ExportFormat};
use mortise::units::Quantity;
use mortise::workspace::{BundleOptions, Workspace};
use nalgebra::DMatrix;
use num_complex::Complex64;
use serde_json::json;
use std::collections::BTreeMap;

const KJ: f64 = 4e4; // joint spring, N/m

fn freqs() -> Vec<f64> {
    (1..=60).map(|i| i as f64 * 1.5).collect()
}

/// Receptance of a chain (mass 0 on a spring k0 to ground, spring k_i between
/// masses i−1 and i, viscous damping c to ground at each mass) at every mass:
/// H = (K − ω²M + iωC)⁻¹ (direct assembly).
fn chain(comp: &str, m: &[f64], k: &[f64], c: f64) -> FrfSet {
    let n = m.len();
    let dofs: Vec<Dof> = (1..=n)
        .map(|i| Dof::new(comp, &i.to_string(), Direction::X))
        .collect();
    let mut s = FrfSet::zeros(
        comp,
        freqs(),
        dofs.clone(),
        dofs,
        Quantity::Displacement,
        Quantity::Force,
    );
    for l in 0..s.n_lines() {
        let w = s.omega(l);
        let mut z = DMatrix::<Complex64>::zeros(n, n);
        for i in 0..n {
            z[(i, i)] += Complex64::new(k[i] - w * w * m[i], w * c);
            if i + 1 < n {
                z[(i, i)] += Complex64::new(k[i + 1], 0.0);
                z[(i, i + 1)] -= Complex64::new(k[i + 1], 0.0);
                z[(i + 1, i)] -= Complex64::new(k[i + 1], 0.0);
            }
        }
        let h = z.try_inverse().unwrap();
        for i in 0..n {
            for j in 0..n {
                s.set(l, i, j, h[(i, j)]);
            }
        }
    }
    s
}

fn csv(s: &FrfSet) -> Vec<u8> {
    io::save(std::slice::from_ref(s), ExportFormat::Csv).unwrap()
}

fn recipe() -> String {
    json!({
        "format": "mortise-recipe", "version": 1, "title": "two suppliers",
        "components": { "A": { "file": "A.csv" }, "B": { "file": "B.csv" } },
        "steps": [
            { "id": "c", "op": "couple", "parts": ["A", "B"],
              "joints": [{ "a": "A:1+X", "b": "B:1+X", "type": "spring", "k": KJ }] },
            { "id": "tip", "op": "select", "from": "c", "outputs": ["A:2+X"], "inputs": ["A:2+X"] }
        ],
        "outputs": ["c", "tip"]
    })
    .to_string()
}

struct Parts {
    a: FrfSet,
    b: FrfSet,
}

fn parts() -> Parts {
    Parts {
        a: chain("A", &[2.0, 1.0], &[3e4, 2e4], 4.0),
        b: chain("B", &[3.0], &[5e4], 6.0),
    }
}

fn loaded(p: &Parts) -> Workspace {
    let mut ws = Workspace::new();
    ws.load_file("A.csv", &csv(&p.a), json!({})).unwrap();
    ws.load_file("B.csv", &csv(&p.b), json!({})).unwrap();
    ws.run_recipe(&recipe()).unwrap();
    ws
}

fn results(bytes: &[u8]) -> Vec<FrfSet> {
    bundle::read(bytes, "b.json").unwrap().results
}

/// Z_B(B:1, B:1) recovered from a result set as inv(H_c) − (Z_A + joint) on
/// B's DOF, or None when the set holds no B DOF (nothing to invert). The
/// spring adds KJ to the B:1 diagonal of the coupled dynamic stiffness.
fn attack(s: &FrfSet, line: usize) -> Option<Complex64> {
    let n = s.n_out();
    if n != s.n_in() || s.outputs != s.inputs {
        return None;
    }
    let b = s.outputs.iter().position(|d| d.component == "B")?;
    let h = DMatrix::from_fn(n, n, |i, j| s.get(line, i, j));
    let z = h.try_inverse()?;
    Some(z[(b, b)] - KJ)
}

#[test]
fn a_bundle_with_every_input_runs_again_to_the_same_numbers() {
    let p = parts();
    let ws = loaded(&p);
    let made = ws
        .make_bundle(&recipe(), &BundleOptions::default())
        .unwrap();
    assert!(made.withheld.is_empty());
    let mut fresh = Workspace::new();
    let opened = fresh.open_bundle("b.json", &made.bytes).unwrap();
    assert!(opened.missing.is_empty());
    let again = fresh
        .run_recipe(&fresh.bundle_recipe_text().unwrap())
        .unwrap();
    let before = ws.results().0;
    let after = fresh.results().0;
    assert_eq!(again.results.len(), before.len());
    for (x, y) in before.iter().zip(&after) {
        assert_eq!(x.data, y.data, "{}", x.name);
    }
    // and the attack works on such a bundle (the check can see a leak): the
    // full coupled matrix gives B's dynamic stiffness back
    let c = results(&made.bytes)
        .into_iter()
        .find(|s| s.name == "c")
        .unwrap();
    let zb = attack(&c, 10).unwrap();
    let w = c.omega(10);
    let want = Complex64::new(5e4 - w * w * 3.0, w * 6.0);
    assert!((zb - want).norm() / want.norm() < 1e-9);
}

#[test]
fn a_withheld_supplier_stays_withheld_and_runs_after_the_original_is_dropped_in() {
    let p = parts();
    let ws = loaded(&p);
    let mut include = BTreeMap::new();
    include.insert("B.csv".to_string(), false);
    let made = ws
        .make_bundle(
            &recipe(),
            &BundleOptions {
                include_raw: include,
                ..Default::default()
            },
        )
        .unwrap();
    assert_eq!(made.withheld, vec!["B.csv".to_string()]);
    // no result over B's DOFs; the coupled matrix is left out, the tip kept
    let sets = results(&made.bytes);
    assert!(sets.iter().all(|s| s
        .outputs
        .iter()
        .chain(&s.inputs)
        .all(|d| d.component != "B")));
    assert_eq!(made.dropped_results, vec!["c".to_string()]);
    assert_eq!(made.kept_results, vec!["tip".to_string()]);
    assert!(
        made.notice.contains("B.csv") && made.notice.contains("infer"),
        "{}",
        made.notice
    );
    // the report keeps no summary or audit of the withheld part
    let report = bundle::read(&made.bytes, "b.json").unwrap().report.unwrap();
    assert!(report["components"].get("B").is_none() && report["audit"].get("B").is_none());
    assert!(report["components"].get("A").is_some());
    // the attack finds nothing to invert, on any set of the bundle
    for s in &sets {
        for l in 0..s.n_lines() {
            assert!(attack(s, l).is_none(), "{}", s.name);
        }
    }
    // B's values are nowhere in the bytes (the data travel as base64 or
    // shortest-form numbers; neither holds B's)
    let text = String::from_utf8(made.bytes.clone()).unwrap();
    let b_csv = String::from_utf8(csv(&p.b)).unwrap();
    assert!(!text.contains(&bundle::BundleInput::encode(&csv(&p.b))));
    let b_numbers: Vec<&str> = b_csv
        .lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .take(20)
        .flat_map(|l| l.split(',').skip(1))
        .collect();
    assert!(
        b_numbers.iter().all(|n| !text.contains(n)),
        "a value of B is in the bundle"
    );

    // opened elsewhere: the recipe cannot run until B.csv is dropped in again
    let mut fresh = Workspace::new();
    let opened = fresh.open_bundle("b.json", &made.bytes).unwrap();
    assert_eq!(opened.missing, vec!["B.csv".to_string()]);
    let e = fresh
        .run_recipe(&fresh.bundle_recipe_text().unwrap())
        .unwrap_err();
    assert!(
        e.to_string().contains("withheld") && e.to_string().contains("SHA-256"),
        "{e}"
    );
    // an edited B.csv is refused by its SHA-256
    let mut edited = csv(&p.b);
    edited.extend_from_slice(b"\n");
    let e = fresh.load_file("B.csv", &edited, json!({})).unwrap_err();
    assert!(e.to_string().contains("SHA-256"), "{e}");
    // the original runs, to the same numbers
    fresh.load_file("B.csv", &csv(&p.b), json!({})).unwrap();
    assert!(fresh.missing_inputs().is_empty());
    fresh
        .run_recipe(&fresh.bundle_recipe_text().unwrap())
        .unwrap();
    for (x, y) in ws.results().0.iter().zip(fresh.results().0.iter()) {
        assert_eq!(x.data, y.data, "{}", x.name);
    }
}

#[test]
fn results_only_carries_no_raw_data() {
    let p = parts();
    let ws = loaded(&p);
    let made = ws
        .make_bundle(
            &recipe(),
            &BundleOptions {
                results_only: true,
                ..Default::default()
            },
        )
        .unwrap();
    let b = bundle::read(&made.bytes, "b.json").unwrap();
    assert!(b.inputs.iter().all(|i| i.withheld()));
    assert_eq!(made.withheld.len(), 2);
    // nothing over either part's DOFs? the tip is A's: A is withheld too, so
    // no result is kept
    assert!(made.kept_results.is_empty(), "{:?}", made.kept_results);
}

#[test]
fn the_cli_runs_a_bundle_and_reads_withheld_inputs_beside_it() {
    let p = parts();
    let ws = loaded(&p);
    let dir = common::scratch("bundle_trust_cli");
    let mut include = BTreeMap::new();
    include.insert("B.csv".to_string(), false);
    let made = ws
        .make_bundle(
            &recipe(),
            &BundleOptions {
                include_raw: include,
                ..Default::default()
            },
        )
        .unwrap();
    let bpath = dir.join("shared.json");
    std::fs::write(&bpath, &made.bytes).unwrap();
    let run = |out: &str| {
        mortise::cli::run_cli(&[
            "run".into(),
            bpath.to_str().unwrap().into(),
            "-o".into(),
            dir.join(out).to_str().unwrap().into(),
        ])
    };
    let e = run("o1").unwrap_err();
    assert!(e.to_string().contains("withholds B.csv"), "{e}");
    std::fs::write(dir.join("B.csv"), csv(&p.b)).unwrap();
    run("o2").unwrap();
    let got = io::load(
        &std::fs::read(dir.join("o2/c.csv")).unwrap(),
        "c.csv",
        &Default::default(),
    )
    .unwrap();
    let want = ws.results().0.into_iter().find(|s| s.name == "c").unwrap();
    assert_eq!(got.sets[0].data, want.data);
}
