//! The truncated-SVD regularisation of the LM-FBS interface inversion
//! (`CouplingOptions::tsvd_rel_threshold`, the recipe operand "tsvd").
//!
//! references: numpy 2.4 (tests/py/couple_tsvd.py): numpy.linalg.svd with
//! the singular values below t·σ_max dropped, cross-checked there against
//! numpy.linalg.pinv(Z, rtol=t), inside Y − Y Bᵀ Z⁺ B Y; the exact bracket
//! from numpy's inverse of its K − ω²M + iωC; and, where nothing is dropped,
//! mortise's own LU result, which the threshold must not change by one bit.

mod common;
mod couple_support;

use couple_support::*;
use mortise::assemble::{couple, decouple, Assembled, CouplingOptions, PerLine};
use mortise::recipe::{self, MapSource};
use mortise::FrfSet;
use serde_json::Value;
use std::collections::BTreeMap;
use std::path::PathBuf;
use std::sync::OnceLock;

fn scenarios() -> &'static PathBuf {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let d = common::scratch("couple_tsvd");
        let out = common::run_py("couple_tsvd.py", &[d.to_str().unwrap()]);
        assert!(out.contains("numpy 2.4"), "{out}");
        d
    })
}

fn scenario(name: &str) -> Value {
    read_json(&scenarios().join(format!("{name}.json")))
}

fn tsvd(t: f64) -> CouplingOptions {
    CouplingOptions {
        tsvd_rel_threshold: Some(t),
        per_line: None,
    }
}

/// The numpy pseudo-inverse results of a scenario: (threshold, result, dropped per line).
fn pinv_refs(v: &Value, freqs: &[f64]) -> Vec<(f64, FrfSet, Vec<usize>)> {
    v["pinv"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| {
            (
                r["t"].as_f64().unwrap(),
                set_from_json(&r["result"], freqs),
                r["dropped"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|d| d.as_u64().unwrap() as usize)
                    .collect(),
            )
        })
        .collect()
}

fn same_bits(a: &FrfSet, b: &FrfSet) -> bool {
    a.data.len() == b.data.len()
        && a.data
            .iter()
            .zip(&b.data)
            .all(|(x, y)| x.re.to_bits() == y.re.to_bits() && x.im.to_bits() == y.im.to_bits())
}

// ---- item 16 (a): a threshold that drops nothing changes nothing --------

#[test]
fn threshold_below_every_singular_value_is_bit_identical_to_lu() {
    // reference: the result without the option (LU solve of the interface).
    // The three parts of the "redundant" scenario joined without the
    // redundant third joint (P–Q and Q–R): Z is 2 × 2 and of full rank.
    let v = scenario("redundant");
    let freqs = freqs_of(&v);
    let comps: Vec<FrfSet> = v["components"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| set_from_json(c, &freqs))
        .collect();
    let joints = joints_from_json(&v["joints"]);
    let two = &joints[..2];
    let plain = couple(&comps, two, &CouplingOptions::default()).unwrap();
    let worst = plain.condition.iter().cloned().fold(0.0, f64::max);
    // just below the smallest relative singular value of any line, and far below
    for t in [0.5 / worst, 1e-12, 0.0] {
        let r = couple(&comps, two, &tsvd(t)).unwrap();
        assert!(r.truncated.iter().all(|&d| d == 0), "{:?}", r.truncated);
        let d = max_rel_diff(&r.set, &plain.set);
        assert!(same_bits(&r.set, &plain.set), "t = {t:e}: {d:e} from LU");
        assert_eq!(r.condition, plain.condition);
        assert_eq!(r.warnings, plain.warnings);
    }
}

#[test]
fn demo_coupling_with_a_threshold_that_drops_nothing_is_bit_identical() {
    // reference: the demo recipe's coupling step without "tsvd" (LU). Before
    // the fix the pseudo-inverse (nalgebra's complex SVD) differed from it by
    // 9.5e-3 relative at a condition number below 700.
    let files: BTreeMap<String, Vec<u8>> =
        mortise::demo_files::files().unwrap().into_iter().collect();
    let text = String::from_utf8(files["heat-pump.recipe.json"].clone()).unwrap();
    let mut j: Value = serde_json::from_str(&text).unwrap();
    j["outputs"] = serde_json::json!(["mounted"]);
    j["variants"] = serde_json::json!([]);
    assert_eq!(j["steps"][0]["op"], "couple");
    let src = MapSource(files);
    let run = |j: &Value| recipe::run(&recipe::parse(&j.to_string()).unwrap(), &src).unwrap();
    let plain = run(&j);
    let worst = plain.report.steps[0]
        .interface
        .as_ref()
        .unwrap()
        .worst_condition
        .unwrap();
    assert!(worst < 1e3, "{worst}");
    for t in [1e-6, 0.5 / worst] {
        j["steps"][0]["tsvd"] = serde_json::json!(t);
        let r = run(&j);
        let dropped: usize = r.report.steps[0]
            .interface
            .as_ref()
            .unwrap()
            .truncated
            .iter()
            .sum();
        assert_eq!(dropped, 0);
        let d = max_rel_diff(&r.outputs[0], &plain.outputs[0]);
        assert!(
            same_bits(&r.outputs[0], &plain.outputs[0]),
            "tsvd {t:e}: differs from LU by {d:e}"
        );
    }
}

#[test]
fn demo_coupling_truncated_past_a_mode_warns_of_the_moved_peak() {
    // a threshold of 1e-2 removes coupled dynamics of the demo's mounted
    // unit; the step then names the peaks it moves by more than 1 dB against
    // the plain LU solve (the reference; LU itself is checked against numpy
    // in couple_lmfbs)
    let files: BTreeMap<String, Vec<u8>> =
        mortise::demo_files::files().unwrap().into_iter().collect();
    let text = String::from_utf8(files["heat-pump.recipe.json"].clone()).unwrap();
    let mut j: Value = serde_json::from_str(&text).unwrap();
    j["outputs"] = serde_json::json!(["mounted"]);
    j["variants"] = serde_json::json!([]);
    let src = MapSource(files);
    let run = |j: &Value| recipe::run(&recipe::parse(&j.to_string()).unwrap(), &src).unwrap();
    let peak = |w: &[String]| {
        w.iter()
            .filter(|m| m.contains("changes") && m.contains("peak(s)"))
            .count()
    };
    let plain = run(&j);
    j["steps"][0]["tsvd"] = serde_json::json!(1e-2);
    let r = run(&j);
    let dropped: usize = r.report.steps[0]
        .interface
        .as_ref()
        .unwrap()
        .truncated
        .iter()
        .sum();
    let w = &r.report.steps[0].warnings;
    eprintln!(
        "tsvd 1e-2: {dropped} singular values dropped; {}",
        w.join("\n")
    );
    assert!(dropped > 0);
    assert!(peak(w) > 0, "{w:#?}");
    assert_eq!(peak(&plain.report.steps[0].warnings), 0);
}

// ---- item 16 (b): with truncation, agreement with numpy -----------------

fn check_against_numpy(name: &str, got: impl Fn(f64) -> Assembled) {
    let v = scenario(name);
    let freqs = freqs_of(&v);
    for (t, want, dropped) in pinv_refs(&v, &freqs) {
        let r = got(t);
        assert_eq!(r.truncated, dropped, "{name} t = {t:e}: dropped per line");
        assert!(dropped.iter().all(|&d| d > 0));
        let d = max_rel_diff(&r.set, &want);
        eprintln!("{name}: tsvd {t:e}, {d:e} from numpy");
        // reference: numpy.linalg.svd / pinv(Z, rtol=t) in Y − Y Bᵀ Z⁺ B Y
        assert!(d <= 1e-11, "{name} t = {t:e}: {d:e} from numpy");
        assert!(r
            .warnings
            .iter()
            .any(|w| w.contains("truncated SVD dropped")));
    }
}

#[test]
fn redundant_joints_truncated_match_numpy_pinv() {
    // P–Q, Q–R and P–R at one point: one singular value is zero on every
    // line (t = 1e-9 drops one); t = 0.15 also drops a physical one on 9 of
    // the 60 lines (their σ₂/σ₁ lie 8 % or more below 0.15), so the kept rank
    // changes from line to line
    let v = scenario("redundant");
    let freqs = freqs_of(&v);
    let comps: Vec<FrfSet> = v["components"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| set_from_json(c, &freqs))
        .collect();
    let joints = joints_from_json(&v["joints"]);
    check_against_numpy("redundant", |t| couple(&comps, &joints, &tsvd(t)).unwrap());
    let r = couple(&comps, &joints, &tsvd(0.15)).unwrap();
    assert_eq!(r.truncated.iter().filter(|&&d| d == 2).count(), 9);
    let w = r.warnings.iter().find(|w| w.contains("dropped")).unwrap();
    assert!(w.contains("rank 1 to 2 of 3 kept"), "{w}");
}

#[test]
fn extended_interface_truncated_matches_numpy_pinv() {
    let v = scenario("extended");
    let freqs = freqs_of(&v);
    let asm = set_from_json(&v["assembly"], &freqs);
    let rig = set_from_json(&v["removed"], &freqs);
    let joints = joints_from_json(&v["joints"]);
    check_against_numpy("extended", |t| {
        decouple(&asm, &rig, &joints, &tsvd(t)).unwrap()
    });
}

// ---- item 9: the ill-conditioning warning names the remedy --------------

#[test]
fn extended_interface_decoupling_warns_and_tsvd_brings_it_closer() {
    // Removing the rig with compatibility at the joint and at the rig's two
    // internal DOFs (three constraints where one is needed): B Y Bᵀ has rank
    // one up to the 1e-12 measurement noise of the data.
    let v = scenario("extended");
    let freqs = freqs_of(&v);
    let asm = set_from_json(&v["assembly"], &freqs);
    let rig = set_from_json(&v["removed"], &freqs);
    let joints = joints_from_json(&v["joints"]);
    let exact = set_from_json(&v["exact"], &freqs);
    let bracket_part = |s: &FrfSet| {
        let mut b = FrfSet::zeros(
            "bracket",
            s.freqs.clone(),
            exact.outputs.clone(),
            exact.inputs.clone(),
            s.out_qty,
            s.in_qty,
        );
        for k in 0..s.n_lines() {
            for i in 0..3 {
                for j in 0..3 {
                    b.set(k, i, j, s.get(k, i, j));
                }
            }
        }
        b
    };

    let lu = decouple(&asm, &rig, &joints, &CouplingOptions::default()).unwrap();
    let w = lu
        .warnings
        .iter()
        .find(|w| w.contains("ill-conditioned"))
        .expect("an ill-conditioning warning");
    eprintln!("{w}");
    let worst = lu.condition.iter().cloned().fold(0.0, f64::max);
    let at = lu.condition.iter().position(|&c| c == worst).unwrap();
    assert!(worst > 1e10, "{worst:e}");
    for needle in [
        "decoupling:".to_string(),
        format!("worst {worst:.2e} at {} Hz", freqs[at]),
        "amplifies noise".to_string(),
        "unreliable".to_string(),
        "\"tsvd\": <relative threshold>".to_string(),
        "1e-6 to 1e-3".to_string(),
        "this decouple step".to_string(),
        "--tsvd".to_string(),
        "mortise couple".to_string(),
    ] {
        assert!(w.contains(&needle), "missing '{needle}' in: {w}");
    }
    assert!(lu.truncated.iter().all(|&d| d == 0));

    let reg = decouple(&asm, &rig, &joints, &tsvd(1e-6)).unwrap();
    assert!(reg.truncated.iter().all(|&d| d == 2), "{:?}", reg.truncated);
    // the kept part (rank 1) is well conditioned: no ill-conditioning warning
    assert!(
        !reg.warnings.iter().any(|w| w.contains("ill-conditioned")),
        "{:?}",
        reg.warnings
    );
    // reference: the exact bracket (numpy inverse of its dynamic stiffness)
    let e_lu = max_rel_diff(&bracket_part(&lu.set), &exact);
    let e_reg = max_rel_diff(&bracket_part(&reg.set), &exact);
    eprintln!("extended interface: without tsvd {e_lu:e}, with tsvd 1e-6 {e_reg:e}");
    // measured here: 1.0e-10 without, 2.3e-11 with (noise 1e-12 relative)
    assert!(e_reg < 0.5 * e_lu, "{e_reg:e} vs {e_lu:e}");
    assert!(e_reg < 1e-10, "{e_reg:e}");
    // without the option the LU solve is backward stable: the noise, not the
    // algorithm, limits it (forming Z⁻¹ and multiplying gave 1.5e-3 here)
    assert!(e_lu < 1e-8, "{e_lu:e}");
}

// ---- Tikhonov's damped inverse, against numpy ------------------------------

fn tikhonov(x: f64, lines: usize) -> CouplingOptions {
    CouplingOptions {
        tsvd_rel_threshold: None,
        per_line: Some(PerLine::Tikhonov(vec![x; lines])),
    }
}

/// Y − Y Bᵀ Z_λ⁺ B Y with Z_λ⁺ = (ZᴴZ + λ²I)⁻¹Zᴴ, λ = x·σ_max, against
/// numpy's least-squares solution of [Z; λI] P = [I; 0]
/// (tests/py/couple_tsvd.py), on the redundant joints (one zero singular
/// value) and on the extended-interface decoupling (rank one up to 1e-12
/// noise). Returns the largest relative difference.
fn check_tikhonov(name: &str, got: impl Fn(f64) -> Assembled) {
    let v = scenario(name);
    let freqs = freqs_of(&v);
    for r in v["tikhonov"].as_array().unwrap() {
        let x = r["x"].as_f64().unwrap();
        let want = set_from_json(&r["result"], &freqs);
        let a = got(x);
        let d = max_rel_diff(&a.set, &want);
        eprintln!("{name}: tikhonov {x:e}, {d:e} from numpy");
        // reference: numpy.linalg.lstsq on the stacked system, condition ≤ 1/x.
        // The extended interface's result is sensitive to λ: at 1e-4 numpy's
        // own two routes (lstsq and its SVD) differ by 4.6e-10, and mortise
        // (from its Jacobi factors) lies 8.7e-9 from lstsq
        assert!(d <= 3e-8, "{name} x = {x:e}: {d:e} from numpy");
        assert!(a.truncated.iter().all(|&t| t == 0));
        assert_eq!(a.damped.len(), freqs.len());
        // a singular value below λ on every line (the zero one, or the noise)
        assert!(a.damped.iter().all(|&d| d >= 1), "{name}: {:?}", a.damped);
        assert!(
            a.warnings.iter().any(|w| w.contains("Tikhonov")),
            "{:?}",
            a.warnings
        );
    }
}

#[test]
fn redundant_joints_with_tikhonov_match_numpy() {
    let v = scenario("redundant");
    let freqs = freqs_of(&v);
    let comps: Vec<FrfSet> = v["components"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| set_from_json(c, &freqs))
        .collect();
    let joints = joints_from_json(&v["joints"]);
    check_tikhonov("redundant", |x| {
        couple(&comps, &joints, &tikhonov(x, freqs.len())).unwrap()
    });
}

#[test]
fn extended_interface_with_tikhonov_matches_numpy() {
    let v = scenario("extended");
    let freqs = freqs_of(&v);
    let asm = set_from_json(&v["assembly"], &freqs);
    let rig = set_from_json(&v["removed"], &freqs);
    let joints = joints_from_json(&v["joints"]);
    check_tikhonov("extended", |x| {
        decouple(&asm, &rig, &joints, &tikhonov(x, freqs.len())).unwrap()
    });
}

/// λ = 0 on a line is the plain LU solve, bit for bit; a per-line value
/// list of the wrong length, a negative λ and a per-line rule together with
/// a uniform threshold are refused.
#[test]
fn tikhonov_zero_is_the_plain_solve_and_bad_values_are_refused() {
    let v = scenario("extended");
    let freqs = freqs_of(&v);
    let asm = set_from_json(&v["assembly"], &freqs);
    let rig = set_from_json(&v["removed"], &freqs);
    let joints = joints_from_json(&v["joints"]);
    let plain = decouple(&asm, &rig, &joints, &CouplingOptions::default()).unwrap();
    let zero = decouple(&asm, &rig, &joints, &tikhonov(0.0, freqs.len())).unwrap();
    assert!(same_bits(&plain.set, &zero.set));
    assert!(zero.damped.iter().all(|&d| d == 0));
    let e = decouple(&asm, &rig, &joints, &tikhonov(1e-3, freqs.len() - 1)).unwrap_err();
    assert!(e.message.contains("one value per line"), "{}", e.message);
    let e = decouple(&asm, &rig, &joints, &tikhonov(-1e-3, freqs.len())).unwrap_err();
    assert!(e.message.contains("Tikhonov"), "{}", e.message);
    let mut both = tikhonov(1e-3, freqs.len());
    both.tsvd_rel_threshold = Some(1e-6);
    let e = decouple(&asm, &rig, &joints, &both).unwrap_err();
    assert!(e.message.contains("give one"), "{}", e.message);
}
