//! Operational prediction, path contributions, blocked forces and variants
//! against numpy (tests/py/predict_reference.py: a five-mass chain assembled
//! from M, K, C and inverted per line by numpy.linalg.inv).

mod common;

use mortise::frf::{Direction, Dof, FrfSet, SignalKind};
use mortise::levels::{self, Weighting};
use mortise::predict::blocked::{blocked_forces, BlockedForceOptions, Regularisation};
use mortise::predict::paths::{path_contributions, rank_paths, PathGroup, RankOptions};
use mortise::predict::variants::{difference_db, scale_source};
use mortise::predict::{convert_signal, new_spectrum, operational_response, INCOHERENT_ASSUMPTION};
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::Value;

fn cx(v: &Value) -> Complex64 {
    Complex64::new(v[0].as_f64().unwrap(), v[1].as_f64().unwrap())
}

fn dof(n: usize) -> Dof {
    Dof::new("rig", &n.to_string(), Direction::Z)
}

struct Ref {
    v: Value,
    h: FrfSet,
    f: FrfSet,
}

fn reference(rcond: &str, noise: &str) -> Ref {
    let v: Value =
        serde_json::from_str(&common::run_py("predict_reference.py", &[rcond, noise])).unwrap();
    let freqs: Vec<f64> = v["freqs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect();
    let dofs: Vec<Dof> = (0..5).map(dof).collect();
    let mut h = FrfSet::zeros(
        "rig",
        freqs.clone(),
        dofs.clone(),
        dofs,
        Quantity::Displacement,
        Quantity::Force,
    );
    for k in 0..freqs.len() {
        for i in 0..5 {
            for j in 0..5 {
                h.set(k, i, j, cx(&v["H"][k][i][j]));
            }
        }
    }
    let mut f = new_spectrum(
        "source",
        freqs.clone(),
        (0..3).map(dof).collect(),
        Quantity::Force,
        SignalKind::Rms,
    );
    for k in 0..freqs.len() {
        for j in 0..3 {
            f.set(k, j, 0, cx(&v["f"][k][j]));
        }
    }
    Ref { v, h, f }
}

#[test]
fn operational_response_matches_numpy() {
    let r = reference("1e-3", "0");
    let y = operational_response(&r.h, &r.f).unwrap();
    assert_eq!(y.signal, Some(SignalKind::Rms));
    assert_eq!(y.out_qty, Quantity::Displacement);
    let mut worst: f64 = 0.0;
    for k in 0..y.n_lines() {
        for i in 0..5 {
            let want = cx(&r.v["y"][k][i]);
            worst = worst.max((y.get(k, i, 0) - want).norm() / want.norm());
        }
    }
    println!("operational response vs numpy: largest relative difference {worst:e}");
    assert!(worst < 1e-12, "{worst}");
    assert!(y
        .warnings
        .iter()
        .any(|w| w.contains("unloaded") && w.contains("rig:3+Z")));
    assert!(y
        .warnings
        .iter()
        .any(|w| w.contains("licensed professional")));

    // the same force given at -Z with the opposite sign is the same load
    let mut g = r.f.clone();
    g.outputs[1].positive = false;
    for k in 0..g.n_lines() {
        let v = g.get(k, 1, 0);
        g.set(k, 1, 0, -v);
    }
    let y2 = operational_response(&r.h, &g).unwrap();
    for (a, b) in y.data.iter().zip(&y2.data) {
        assert!((a - b).norm() <= 1e-15 * a.norm());
    }
}

#[test]
fn incoherent_sum_matches_numpy_and_is_labelled() {
    let r = reference("1e-3", "0");
    let s = convert_signal(&r.f, SignalKind::Autopower).unwrap();
    let y = operational_response(&r.h, &s).unwrap();
    assert_eq!(y.signal, Some(SignalKind::Autopower));
    let mut worst: f64 = 0.0;
    for k in 0..y.n_lines() {
        for i in 0..5 {
            let want = r.v["y_ms"][k][i].as_f64().unwrap();
            worst = worst.max((y.get(k, i, 0).re - want).abs() / want);
        }
    }
    println!("incoherent sum vs numpy: largest relative difference {worst:e}");
    assert!(worst < 1e-12);
    assert!(y.warnings.iter().any(|w| w == INCOHERENT_ASSUMPTION));
}

#[test]
fn kinds_quantities_and_grids_are_not_mixed() {
    let r = reference("1e-3", "0");
    let mut v = r.f.clone();
    v.out_qty = Quantity::Velocity;
    assert!(operational_response(&r.h, &v).is_err());
    let mut g = r.f.clone();
    g.freqs[3] += 0.5;
    let e = operational_response(&r.h, &g).unwrap_err();
    assert!(e.message.contains("resample"), "{}", e.message);
    let y = operational_response(&r.h, &r.f).unwrap();
    let a = convert_signal(&y, SignalKind::Autopower).unwrap();
    assert!(difference_db(&y, &a, 3, Weighting::Z).is_err());
    // an FRF set is not an excitation
    assert!(operational_response(&r.h, &r.h).is_err());
}

#[test]
fn path_contributions_sum_to_total_and_rank() {
    let r = reference("1e-3", "0");
    let groups = [PathGroup {
        name: "front pair".into(),
        inputs: vec![dof(0), dof(1)],
    }];
    let c = path_contributions(&r.h, &r.f, &groups).unwrap();
    assert_eq!(
        c.paths,
        vec!["front pair".to_string(), "rig:2+Z".to_string()]
    );
    let y = operational_response(&r.h, &r.f).unwrap();
    let mut worst: f64 = 0.0;
    for k in 0..y.n_lines() {
        for t in 0..5 {
            let s: Complex64 = (0..c.n_paths()).map(|p| c.get(k, t, p)).sum();
            worst = worst.max((s - y.get(k, t, 0)).norm() / y.get(k, t, 0).norm());
            // against numpy's total, too
            let want = c.total.get(k, t, 0);
            assert!((want - cx(&r.v["y"][k][t])).norm() <= 1e-12 * want.norm());
        }
    }
    println!("complex sum of paths vs total: largest relative difference {worst:e}");
    assert!(worst <= 1e-12);

    let rk = rank_paths(
        &c,
        &RankOptions {
            band_fraction: Some(1),
            weighting: Weighting::A,
        },
    )
    .unwrap();
    let t4 = &rk.targets[4];
    assert_eq!(t4.unit, "dB re 1 pm");
    // independent recomputation of the A-weighted path levels at target 4
    let reference = 1e-12;
    for pl in &t4.overall {
        let p = c.paths.iter().position(|n| *n == pl.path).unwrap();
        let ms: f64 = (0..c.freqs.len())
            .map(|k| {
                c.get(k, 4, p).norm_sqr()
                    * 10f64.powf(levels::weighting_db(Weighting::A, c.freqs[k]) / 10.0)
            })
            .sum();
        assert!((pl.level_db - 10.0 * (ms / reference / reference).log10()).abs() < 1e-9);
    }
    assert!(t4.overall[0].level_db >= t4.overall[1].level_db && t4.overall[0].rank == 1);
    let shares: f64 = t4.overall.iter().map(|p| p.share).sum();
    assert!((shares - 1.0).abs() < 1e-12);
    assert!(!t4.bands.is_empty());
    let json = serde_json::to_string(&rk).unwrap();
    assert!(json.contains("front pair"));
    println!(
        "target {}: total {:.2} {} (A), paths {:?}",
        t4.target,
        t4.total_db,
        t4.unit,
        t4.overall
            .iter()
            .map(|p| (p.path.clone(), (p.level_db * 100.0).round() / 100.0))
            .collect::<Vec<_>>()
    );

    // a DOF in two groups is refused
    let bad = [
        PathGroup {
            name: "a".into(),
            inputs: vec![dof(0)],
        },
        PathGroup {
            name: "b".into(),
            inputs: vec![dof(0)],
        },
    ];
    assert!(path_contributions(&r.h, &r.f, &bad).is_err());
}

fn bench(r: &Ref) -> (FrfSet, FrfSet) {
    // bench FRFs: indicators 1..4 × interface DOFs 0, 1
    let b = r.h.select(&[1, 2, 3, 4], &[0, 1]);
    let n = b.n_lines();
    let mut y = new_spectrum(
        "bench run",
        b.freqs.clone(),
        (1..5).map(dof).collect(),
        Quantity::Displacement,
        SignalKind::Rms,
    );
    for k in 0..n {
        y.set(k, 0, 0, cx(&r.v["val_y"][k]));
        for a in 0..3 {
            y.set(k, a + 1, 0, cx(&r.v["bench_y"][k][a]));
        }
    }
    (b, y)
}

#[test]
fn blocked_forces_exact_data_recovered() {
    let r = reference("1e-12", "0");
    let (b, y) = bench(&r);
    let opts = BlockedForceOptions {
        regularisation: Regularisation::Truncated(1e-12),
        validation: vec![dof(1)],
        band_fraction: 3,
        ..BlockedForceOptions::default()
    };
    let bf = blocked_forces(&b, &y, &opts).unwrap();
    let mut worst: f64 = 0.0;
    for k in 0..b.n_lines() {
        for j in 0..2 {
            let want = cx(&r.v["F0"][k][j]);
            worst = worst.max((bf.forces.get(k, j, 0) - want).norm() / want.norm());
        }
    }
    println!("blocked forces from noise-free responses vs the applied forces: {worst:e}");
    assert!(worst < 1e-8, "{worst}");
    let v = bf.validation.as_ref().unwrap();
    let e = v.error_db[0].iter().fold(0f64, |a, b| a.max(b.abs()));
    println!("validation at rig:1+Z: largest level error {e:e} dB");
    assert!(e < 1e-6);
    assert_eq!(bf.indicators, vec![dof(2), dof(3), dof(4)]);
    assert!(bf.kept.iter().all(|&n| n == 2));
}

#[test]
fn blocked_forces_match_numpy_pinv_with_noise_and_truncation() {
    for rcond in ["1e-3", "0.2"] {
        let r = reference(rcond, "0.01");
        let (b, y) = bench(&r);
        let opts = BlockedForceOptions {
            regularisation: Regularisation::Truncated(rcond.parse().unwrap()),
            validation: vec![dof(1)],
            band_fraction: 3,
            ..BlockedForceOptions::default()
        };
        let bf = blocked_forces(&b, &y, &opts).unwrap();
        let mut worst: f64 = 0.0;
        let mut worst_sv: f64 = 0.0;
        for k in 0..b.n_lines() {
            for j in 0..2 {
                let want = cx(&r.v["bench_f"][k][j]);
                worst = worst.max((bf.forces.get(k, j, 0) - want).norm() / want.norm().max(1e-300));
                let s = r.v["bench_sv"][k][j].as_f64().unwrap();
                worst_sv = worst_sv.max((bf.singular_values[k][j] - s).abs() / s);
            }
        }
        let truncated = bf.kept.iter().filter(|&&n| n < 2).count();
        let v = bf.validation.as_ref().unwrap();
        let band_err: Vec<f64> = v.band_error_db[0]
            .iter()
            .copied()
            .filter(|x| x.is_finite())
            .collect();
        let max_band = band_err.iter().fold(0f64, |a, b| a.max(b.abs()));
        println!(
            "rcond {rcond}: forces vs numpy.linalg.pinv {worst:e}, singular values vs numpy.linalg.svd {worst_sv:e}, truncated lines {truncated}, largest validation band error {max_band:.3} dB"
        );
        assert!(worst < 1e-9, "{worst}");
        assert!(worst_sv < 1e-12, "{worst_sv}");
        if rcond == "0.2" {
            assert!(truncated > 0);
            assert!(bf.warnings.iter().any(|w| w.contains("truncated SVD")));
            // the regularisation bias shows up at the left-out indicator
            assert!(max_band > 1.0, "{max_band}");
        } else {
            assert_eq!(truncated, 0);
            // 1 % noise on three indicators: the left-out response stays within 1 dB
            assert!(max_band < 1.0, "{max_band}");
        }
    }
}

#[test]
fn blocked_forces_refuse_too_few_indicators_and_no_phase() {
    let r = reference("1e-3", "0");
    let (b, y) = bench(&r);
    let opts = BlockedForceOptions {
        regularisation: Regularisation::Truncated(1e-3),
        validation: vec![dof(1), dof(2), dof(3)],
        band_fraction: 3,
        ..BlockedForceOptions::default()
    };
    assert!(blocked_forces(&b, &y, &opts).is_err());
    let a = convert_signal(&y, SignalKind::Autopower).unwrap();
    assert!(blocked_forces(&b, &a, &BlockedForceOptions::default()).is_err());
}

#[test]
fn halving_the_source_lowers_every_level_6_02_db() {
    // Homogeneity of a linear system: halving a force lowers the response
    // level by 20·log10(2) = 6.02 dB (common practice).
    let r = reference("1e-3", "0");
    let base = operational_response(&r.h, &r.f).unwrap();
    let half = scale_source(&r.f, Complex64::new(0.5, 0.0), None).unwrap();
    let var = operational_response(&r.h, &half).unwrap();
    let d = difference_db(&base, &var, 3, Weighting::A).unwrap();
    let want = -20.0 * 2f64.log10();
    for t in 0..5 {
        assert!(d.per_line_db[t].iter().all(|x| (x - want).abs() < 1e-9));
        assert!(d.per_band_db[t]
            .iter()
            .filter(|x| x.is_finite())
            .all(|x| (x - want).abs() < 1e-9));
        assert!((d.overall_db[t] - want).abs() < 1e-9);
    }
    println!(
        "halved source: overall difference at rig:4+Z {:.4} dB",
        d.overall_db[4]
    );
    // the same on autopowers (scaled by |0.5|²)
    let ap = convert_signal(&r.f, SignalKind::Autopower).unwrap();
    let ba = operational_response(&r.h, &ap).unwrap();
    let va = operational_response(
        &r.h,
        &scale_source(&ap, Complex64::new(0.5, 0.0), None).unwrap(),
    )
    .unwrap();
    let da = difference_db(&ba, &va, 1, Weighting::Z).unwrap();
    assert!((da.overall_db[0] - want).abs() < 1e-9);
    // scaling one DOF only changes that path
    let one = scale_source(&r.f, Complex64::new(0.0, 0.0), Some(&[dof(2)])).unwrap();
    assert!(one.column(2, 0).iter().all(|v| v.norm() == 0.0));
    assert_eq!(one.column(0, 0), r.f.column(0, 0));
}
