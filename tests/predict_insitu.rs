//! In-situ blocked forces on the invented heat-pump outdoor unit (a lumped
//! network: compressor on three mounts, base frame, casing panel), against
//! tests/py/insitu_blocked.py: the true blocked forces from the source with
//! its feet held fixed, numpy's least squares (numpy.linalg.lstsq / pinv),
//! a numpy Monte Carlo of the forces under 1 % response noise, and numpy's
//! Tikhonov solve (HᴴH + λ²I)⁻¹Hᴴy.

mod cli_support;
mod common;

use mortise::frf::{Dof, FrfSet, SignalKind};
use mortise::predict::blocked::{
    blocked_forces, BlockedForceOptions, BlockedMethod, Regularisation,
};
use mortise::predict::new_spectrum;
use mortise::recipe::{self, MapSource};
use mortise::uncertainty::{blocked::blocked_first_order, draws, relative_with_floor};
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::{json, Value};
use std::sync::OnceLock;

fn reference() -> &'static Value {
    static REF: OnceLock<Value> = OnceLock::new();
    REF.get_or_init(|| {
        let d = common::scratch("predict_insitu");
        let out = common::run_py("insitu_blocked.py", &[d.to_str().unwrap()]);
        assert!(out.contains("insitu"), "{out}");
        let text = std::fs::read_to_string(d.join("insitu.json")).unwrap();
        serde_json::from_str(&text).unwrap()
    })
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn complex(v: &Value) -> Vec<Complex64> {
    floats(&v["re"])
        .into_iter()
        .zip(floats(&v["im"]))
        .map(|(a, b)| Complex64::new(a, b))
        .collect()
}

fn dofs(key: &str) -> Vec<Dof> {
    reference()[key]
        .as_array()
        .unwrap()
        .iter()
        .map(|n| Dof::parse(&format!("unit:{}+Z", n.as_str().unwrap()), "").unwrap())
        .collect()
}

fn labels(key: &str) -> Vec<String> {
    dofs(key).iter().map(|d| d.to_string()).collect()
}

fn freqs() -> Vec<f64> {
    floats(&reference()["freqs"])
}

/// The assembly's receptance from the feet to every frame and panel node
/// (numpy's).
fn frf() -> FrfSet {
    let mut h = FrfSet::zeros(
        "asm",
        freqs(),
        dofs("at"),
        dofs("interface"),
        Quantity::Displacement,
        Quantity::Force,
    );
    h.data = complex(&reference()["frf"]);
    h
}

/// The running unit's responses at every frame and panel node.
fn responses() -> FrfSet {
    let mut y = new_spectrum(
        "op",
        freqs(),
        dofs("at"),
        Quantity::Displacement,
        SignalKind::Peak,
    );
    y.data = complex(&reference()["y"]);
    y
}

fn worst_rel(a: &[Complex64], b: &[Complex64]) -> f64 {
    assert_eq!(a.len(), b.len());
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).norm() / y.norm())
        .fold(0.0, f64::max)
}

/// The recipe: the assembly synthesized by mortise from the same network,
/// the feet selected as inputs, the responses inline.
fn recipe_with(step: Value, asm_unc: Option<Value>, op_unc: Option<Value>) -> recipe::Recipe {
    recipe::parse(&recipe_doc(step, asm_unc, op_unc).to_string()).unwrap()
}

/// The recipe's JSON (see [`recipe_with`]).
fn recipe_doc(step: Value, asm_unc: Option<Value>, op_unc: Option<Value>) -> Value {
    let r = reference();
    let mut asm = json!({
        "synth": r["network"],
        "grid": {"lines": r["freqs"]},
        "select": {"outputs": labels("at"), "inputs": labels("interface")}
    });
    if let Some(u) = asm_unc {
        asm["uncertainty"] = u;
    }
    let mut op = json!({ "inline": responses() });
    if let Some(u) = op_unc {
        op["uncertainty"] = u;
    }
    let mut s = json!({"id": "fb", "op": "blocked-forces", "bench": "asm", "operational": "op"});
    for (k, v) in step.as_object().unwrap() {
        s[k] = v.clone();
    }
    json!({
        "format": "mortise-recipe", "version": 1,
        "components": { "asm": asm, "op": op },
        "steps": [ s ],
        "outputs": ["asm", "fb"]
    })
}

#[test]
fn insitu_forces_equal_the_true_blocked_forces_and_predict_the_left_out_dofs() {
    let r = recipe_with(
        json!({"method": "in-situ", "validate": labels("validation"), "target": labels("target")}),
        None,
        None,
    );
    let res = recipe::run(&r, &MapSource::default()).unwrap();
    let get = |n: &str| res.outputs.iter().find(|s| s.name == n).unwrap();
    // mortise's network synthesis equals numpy's inverse of K(1+iη) − ω²M + iωC
    let asm = get("asm");
    let e = worst_rel(&asm.data, &frf().data);
    assert!(e <= 1e-9, "synthesized assembly vs numpy: {e:e}");
    // the true blocked forces (source with its feet held fixed, numpy) and numpy.linalg.lstsq
    let fb = get("fb");
    assert_eq!(fb.outputs, dofs("interface"));
    let truth = complex(&reference()["truth"]);
    let e_truth = worst_rel(&fb.data, &truth);
    let e_lstsq = worst_rel(&fb.data, &complex(&reference()["lstsq"]));
    let e_pinv = worst_rel(&fb.data, &complex(&reference()["pinv"]));
    println!("in-situ forces: vs truth {e_truth:.2e}, vs numpy lstsq {e_lstsq:.2e}, vs numpy pinv {e_pinv:.2e}");
    assert!(e_truth <= 1e-9 && e_lstsq <= 1e-9 && e_pinv <= 1e-9);
    // the validation indicator and the target reproduced (numpy's predictions)
    let vp = get("fb/validation-predicted");
    let e = worst_rel(&vp.data, &complex(&reference()["pred_validation"]));
    assert!(e <= 1e-9, "validation prediction {e:e}");
    let tp = get("fb/target-predicted");
    let e = worst_rel(&tp.data, &complex(&reference()["pred_target"]));
    assert!(e <= 1e-9, "target prediction {e:e}");
    let tm = get("fb/target-measured");
    let e = worst_rel(&tp.data, &tm.data);
    assert!(e <= 1e-9, "target predicted vs measured {e:e}");
    // the report says the method and compares the target
    let b = res.report.steps[0].blocked.as_ref().unwrap();
    assert_eq!(b.method, "in-situ");
    let t = b.target.as_ref().unwrap();
    assert_eq!(t.measured, vec![true]);
    assert!(t.worst_error_db.unwrap() < 1e-7);
    assert_eq!(b.indicators.len(), 6);
    // the default stays the bench method, said in the report
    let r = recipe_with(json!({}), None, None);
    let res = recipe::run(&r, &MapSource::default()).unwrap();
    assert_eq!(
        res.report.steps[0].blocked.as_ref().unwrap().method,
        "bench"
    );
}

#[test]
fn first_order_force_std_agrees_with_numpy_monte_carlo() {
    let n = reference()["draws"].as_f64().unwrap();
    // the standard deviation of a sample standard deviation of n normal draws
    // is about σ/√(2(n−1)) (Student; common practice): four of those
    let tol = 4.0 / (2.0 * (n - 1.0)).sqrt();
    // the FRF noise enters nonlinearly (through the inverse), but at 1 % the
    // terms the first order leaves out are below the Monte Carlo's error
    for (asm_unc, key) in [
        (None, "mc_std_y"),
        (Some(json!({"relative": 0.01})), "mc_std_yh"),
    ] {
        let r = recipe_with(
            json!({"method": "in-situ", "validate": labels("validation"), "target": labels("target")}),
            asm_unc,
            Some(json!({"relative": 0.01})),
        );
        let res = recipe::run(&r, &MapSource::default()).unwrap();
        let u = &res.uncertainties["fb"].uncertainty;
        assert!(u.method.contains("in-situ"), "{}", u.method);
        let mc = floats(&reference()[key]);
        assert_eq!(u.std.len(), mc.len());
        let worst = u
            .std
            .iter()
            .zip(&mc)
            .map(|(a, b)| (a / b - 1.0).abs())
            .fold(0.0, f64::max);
        let mean = u.std.iter().zip(&mc).map(|(a, b)| a / b - 1.0).sum::<f64>() / mc.len() as f64;
        println!("{key}: first order / Monte Carlo − 1: worst {worst:.4}, mean {mean:+.4} (tolerance {tol:.4})");
        assert!(worst <= tol, "{key}: worst {worst}");
        // the report carries the bands of the validation and target predictions
        let b = res.report.steps[0].blocked.as_ref().unwrap();
        let of: Vec<&str> = b.prediction_bands.iter().map(|p| p.of.as_str()).collect();
        assert_eq!(of, ["validation", "target"]);
        // noise-free data: the measured validation and target equal their
        // predictions, so every line lies in the band
        for p in &b.prediction_bands {
            assert_eq!(p.measured_within, vec![Some(1.0)], "{}", p.of);
        }
        assert!(res.report.steps[0].uncertainty.is_some());
    }
}

#[test]
fn target_band_covers_the_truth_while_validation_looks_small() {
    // seeded noisy realisations of the responses (1 % relative, circular),
    // mortise's counter-based draws; the truth is the noise-free data
    let h = frf();
    let y0 = responses();
    let opts = BlockedForceOptions {
        method: BlockedMethod::InSitu,
        validation: dofs("validation"),
        target: dofs("target"),
        ..BlockedForceOptions::default()
    };
    let at = dofs("at");
    let ti = at.iter().position(|d| *d == dofs("target")[0]).unwrap();
    let nl = y0.n_lines();
    let realisations = 300u64;
    let (mut inside, mut total) = (0usize, 0usize);
    let mut val_db = Vec::new();
    let mut tar_db = Vec::new();
    let mut mc_target: Vec<Vec<Complex64>> = vec![Vec::new(); nl];
    for d in 0..realisations {
        let mut y = y0.clone();
        for (x, v) in y.data.iter_mut().enumerate() {
            *v += draws::circular(7, d * y0.data.len() as u64 + x as u64, 0.01 * v.norm());
        }
        let u = relative_with_floor(&y, 0.01, None);
        let b = blocked_forces(&h, &y, &opts).unwrap();
        let fo = blocked_first_order(&h, None, &y, Some(&u), &b).unwrap();
        let ut = fo.target.unwrap();
        let t = b.target.as_ref().unwrap();
        let mut worst_t = 0.0f64;
        for k in 0..nl {
            let p = t.predicted.get(k, 0, 0);
            let truth = y0.get(k, ti, 0);
            let half = mortise::uncertainty::reliability::Z95 * ut[k] / std::f64::consts::SQRT_2;
            if (truth.norm() - p.norm()).abs() <= half {
                inside += 1;
            }
            total += 1;
            worst_t = worst_t.max((20.0 * (p.norm() / truth.norm()).log10()).abs());
            mc_target[k].push(p);
        }
        tar_db.push(worst_t);
        // what the validation reports: the worst one-third-octave band error
        let v = b.validation.as_ref().unwrap();
        val_db.push(
            v.band_error_db[0]
                .iter()
                .filter(|x| x.is_finite())
                .fold(0.0f64, |a, x| a.max(x.abs())),
        );
    }
    let coverage = inside as f64 / total as f64;
    val_db.sort_by(|a, b| a.total_cmp(b));
    tar_db.sort_by(|a, b| a.total_cmp(b));
    let med = |v: &[f64]| v[v.len() / 2];
    println!(
        "coverage of the true target response by the 95 % band: {coverage:.4} ({inside} of {total} lines); median worst validation band error {:.3} dB, median worst target line error {:.3} dB",
        med(&val_db),
        med(&tar_db)
    );
    // 95 % normal interval (textbook): 93–97 % as the issue asks
    assert!((0.93..=0.97).contains(&coverage), "coverage {coverage}");
    // the case of the issue: validation small, the target's error larger
    assert!(med(&tar_db) > med(&val_db));
    // the target's first-order std against numpy's Monte Carlo (the same
    // model, numpy's own draws)
    let mc = floats(&reference()["mc_std_y_target"]);
    let u = relative_with_floor(&y0, 0.01, None);
    let b = blocked_forces(&h, &y0, &opts).unwrap();
    let ut = blocked_first_order(&h, None, &y0, Some(&u), &b)
        .unwrap()
        .target
        .unwrap();
    let n = reference()["draws"].as_f64().unwrap();
    let worst = ut
        .iter()
        .zip(&mc)
        .map(|(a, b)| (a / b - 1.0).abs())
        .fold(0.0, f64::max);
    println!("target std, first order / numpy Monte Carlo − 1: worst {worst:.4}");
    assert!(worst <= 4.0 / (2.0 * (n - 1.0)).sqrt());
}

#[test]
fn tikhonov_equals_numpy_regularised_normal_equations() {
    let r = reference();
    let h = frf();
    let y = responses();
    let base = BlockedForceOptions {
        method: BlockedMethod::InSitu,
        validation: dofs("validation"),
        target: dofs("target"),
        ..BlockedForceOptions::default()
    };
    let b = blocked_forces(
        &h,
        &y,
        &BlockedForceOptions {
            regularisation: Regularisation::TikhonovRelative(r["tikhonov_rel"].as_f64().unwrap()),
            ..base.clone()
        },
    )
    .unwrap();
    let e_rel = worst_rel(&b.forces.data, &complex(&r["tikhonov_rel_f"]));
    // λ from the noise through the recipe: 1 % relative on the assembly's FRFs
    let rc = recipe_with(
        json!({"method": "in-situ", "validate": labels("validation"), "target": labels("target"), "tikhonov": "noise"}),
        Some(json!({"relative": 0.01})),
        None,
    );
    let res = recipe::run(&rc, &MapSource::default()).unwrap();
    let fb = res.outputs.iter().find(|s| s.name == "fb").unwrap();
    let e_noise = worst_rel(&fb.data, &complex(&r["tikhonov_noise_f"]));
    let lam = res.report.steps[0]
        .blocked
        .as_ref()
        .unwrap()
        .tikhonov_lambda
        .clone()
        .unwrap();
    let e_lam = lam
        .iter()
        .zip(floats(&r["tikhonov_noise_lambda"]))
        .map(|(a, b)| (a.unwrap() / b - 1.0).abs())
        .fold(0.0, f64::max);
    println!("Tikhonov vs numpy solve: relative λ {e_rel:.2e}, noise λ {e_noise:.2e}, λ itself {e_lam:.2e}");
    assert!(e_rel <= 1e-10 && e_noise <= 1e-10 && e_lam <= 1e-12);
    assert!(res.report.steps[0]
        .notes
        .iter()
        .any(|n| n.contains("Tikhonov λ from the noise")));
    // the band of a regularised estimate says what it leaves out
    let m = &res.uncertainties["fb"].uncertainty.method;
    assert!(
        m.contains("146 of 146 lines the inverse is regularised"),
        "{m}"
    );
    // the recipe's Monte Carlo draws see the same stated uncertainty, so λ
    // from the noise is there in every draw
    let mc = recipe::monte_carlo_levels(
        &rc,
        &MapSource::default(),
        &mortise::limits::Limits::default(),
        mortise::uncertainty::McOptions { draws: 3, seed: 1 },
    );
    assert!(mc.is_ok(), "{:?}", mc.err());
}

#[test]
fn regularisation_that_moves_a_peak_is_warned() {
    let h = frf();
    let y = responses();
    let run = |reg| {
        blocked_forces(
            &h,
            &y,
            &BlockedForceOptions {
                method: BlockedMethod::InSitu,
                regularisation: reg,
                ..BlockedForceOptions::default()
            },
        )
        .unwrap()
    };
    let peak = |w: &[String]| {
        w.iter()
            .any(|m| m.contains("changes") && m.contains("peak"))
    };
    // λ = 30 % of σ_max damps the forces' peaks by far more than 1 dB
    let strong = run(Regularisation::TikhonovRelative(0.3));
    assert!(peak(&strong.warnings), "{:#?}", strong.warnings);
    // λ = 1e-9 σ_max changes nothing visible
    let weak = run(Regularisation::TikhonovRelative(1e-9));
    assert!(!peak(&weak.warnings), "{:#?}", weak.warnings);
    // a truncation keeping everything is no regularisation at all
    let none = run(Regularisation::Truncated(1e-12));
    assert!(!peak(&none.warnings), "{:#?}", none.warnings);
}

#[test]
fn bad_inputs_are_refused_naming_the_field() {
    let cases: Vec<(Value, &str, &str)> = vec![
        (json!({"tikhonov": -0.1}), "tikhonov", "-0.1"),
        (json!({"tikhonov": "nois"}), "tikhonov", "nois"),
        (
            json!({"tikhonov": 1e-3, "tsvd": 1e-3}),
            "tikhonov",
            "give one",
        ),
        (json!({"tikhonov": "noise"}), "tikhonov", "carry none"),
        (json!({"method": "insitu"}), "method", "insitu"),
        (json!({"target": ["unit:panel+Z"]}), "target", "in-situ"),
        (
            json!({"method": "in-situ", "target": ["unit:b4+Z"], "validate": ["unit:b4+Z"]}),
            "target",
            "give it once",
        ),
        (
            json!({"method": "in-situ", "target": []}),
            "target",
            "empty",
        ),
        (
            json!({"method": "in-situ", "target": ["unit:roof+Z"]}),
            "target",
            "unit:roof+Z",
        ),
    ];
    for (step, field, text) in cases {
        let r = recipe_with(step.clone(), None, None);
        let e = recipe::run(&r, &MapSource::default()).unwrap_err();
        assert_eq!(e.field.as_deref(), Some(field), "{step}: {e}");
        assert!(e.to_string().contains(text), "{step}: {e}");
        assert!(e.to_string().contains("steps[0]"), "{step}: {e}");
    }
    // a NaN λ cannot come through JSON; in code it is refused the same way
    for reg in [
        Regularisation::TikhonovRelative(f64::NAN),
        Regularisation::TikhonovNoise(vec![f64::NAN; frf().data.len()]),
    ] {
        let o = BlockedForceOptions {
            regularisation: reg,
            ..BlockedForceOptions::default()
        };
        let e = blocked_forces(&frf(), &responses(), &o).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("tikhonov"), "{e}");
        assert!(
            e.to_string().contains("NaN") || e.to_string().contains("not finite"),
            "{e}"
        );
    }
    // an uncertainty on a component no step reads: refused naming it
    let mut doc = json!({
        "format": "mortise-recipe", "version": 1,
        "components": {
            "asm": { "inline": frf() },
            "op": { "inline": responses() },
            "spare": { "inline": frf(), "uncertainty": {"relative": 0.01} }
        },
        "steps": [ {"id": "fb", "op": "blocked-forces", "bench": "asm", "operational": "op"} ],
        "outputs": ["fb", "spare"]
    });
    let r = recipe::parse(&doc.to_string()).unwrap();
    let e = recipe::run(&r, &MapSource::default()).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("uncertainty"), "{e}");
    assert!(e.to_string().contains("components.spare"), "{e}");
    // read by the step, it is accepted
    doc["steps"][0]["bench"] = json!("spare");
    let r = recipe::parse(&doc.to_string()).unwrap();
    assert!(recipe::run(&r, &MapSource::default()).is_ok());
}

#[test]
fn mortise_run_writes_the_in_situ_report_and_predictions() {
    // what a user runs: the recipe file through the binary
    let dir = common::scratch("predict_insitu_cli");
    let doc = recipe_doc(
        json!({"method": "in-situ", "validate": labels("validation"), "target": labels("target")}),
        None,
        Some(json!({"relative": 0.01})),
    );
    std::fs::write(dir.join("insitu.recipe.json"), doc.to_string()).unwrap();
    let ran = cli_support::mortise(&dir, &["run", "insitu.recipe.json", "-o", "out"]);
    assert_eq!(ran.code, 0, "{}", ran.stderr);
    let said = format!("{}{}", ran.stdout, ran.stderr);
    assert!(
        said.contains("in-situ blocked forces, target(s) unit:panel+Z predicted"),
        "{said}"
    );
    let report: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("out/report.json")).unwrap())
            .unwrap();
    let b = &report["steps"][0]["blocked"];
    assert_eq!(b["method"], "in-situ");
    assert_eq!(b["target"]["dofs"], json!(labels("target")));
    assert_eq!(b["prediction_bands"][1]["of"], "target");
    let names: Vec<String> = std::fs::read_dir(dir.join("out"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    for want in ["target-predicted", "target-measured", "fb.uncertainty.csv"] {
        assert!(names.iter().any(|n| n.contains(want)), "{want}: {names:?}");
    }
    // the predictions' uncertainty beside them: the target's standard
    // uncertainty per line is the first-order one checked against numpy's
    // Monte Carlo above, written in the shortest form that reads back
    for want in ["validation-predicted", "target-predicted"] {
        assert!(
            names
                .iter()
                .any(|n| n.contains(want) && n.ends_with(".uncertainty.csv")),
            "{want}: {names:?}"
        );
    }
    let file = names
        .iter()
        .find(|n| n.contains("target-predicted") && n.ends_with(".uncertainty.csv"))
        .unwrap();
    let csv = std::fs::read_to_string(dir.join("out").join(file)).unwrap();
    let written: Vec<f64> = csv
        .lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("freq"))
        .map(|l| l.split(',').nth(1).unwrap().parse().unwrap())
        .collect();
    let opts = BlockedForceOptions {
        method: BlockedMethod::InSitu,
        validation: dofs("validation"),
        target: dofs("target"),
        ..BlockedForceOptions::default()
    };
    let y0 = responses();
    let b = blocked_forces(&frf(), &y0, &opts).unwrap();
    let u = relative_with_floor(&y0, 0.01, None);
    let ut = blocked_first_order(&frf(), None, &y0, Some(&u), &b)
        .unwrap()
        .target
        .unwrap();
    assert_eq!(written.len(), ut.len());
    let worst = written
        .iter()
        .zip(&ut)
        .map(|(a, b)| (a - b).abs() / b.abs().max(1e-300))
        .fold(0.0, f64::max);
    assert!(
        worst < 1e-9,
        "written target uncertainty vs first order: {worst}"
    );
}
