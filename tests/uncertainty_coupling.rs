//! Uncertainty propagation through LM-FBS coupling, against a numpy Monte
//! Carlo with the same seeded draws (tests/py/unc_coupling.py), and the
//! reliability flags on supplier-like noise.

mod common;
mod couple_support;

use couple_support::{joints_from_json, read_json, set_from_json};
use mortise::assemble::{couple, CouplingOptions, Joint};
use mortise::uncertainty::FrfUncertainty;
use mortise::uncertainty::{self, draws, interval_db, Evidence, McOptions, ReliabilityOptions};
use mortise::FrfSet;
use num_complex::Complex64;
use serde_json::Value;
use std::path::PathBuf;
use std::sync::OnceLock;

fn cases() -> &'static PathBuf {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let d = common::scratch("uncertainty_coupling");
        let out = common::run_py("unc_coupling.py", &[d.to_str().unwrap()]);
        assert!(out.contains("rigid"), "{out}");
        d
    })
}

struct Case {
    parts: Vec<FrfSet>,
    small: Vec<FrfUncertainty>,
    supplier: Vec<FrfUncertainty>,
    joints: Vec<Joint>,
    truth: Vec<Complex64>,
    mc_std: Vec<f64>,
    mc: McOptions,
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn case(name: &str) -> Case {
    let v = read_json(&cases().join(format!("{name}.json")));
    let freqs = floats(&v["freqs"]);
    let comps = v["components"].as_array().unwrap();
    let u = |key: &str| -> Vec<FrfUncertainty> {
        comps
            .iter()
            .map(|c| FrfUncertainty {
                std: floats(&c[key]),
                method: key.into(),
            })
            .collect()
    };
    let re = floats(&v["truth_re"]);
    let im = floats(&v["truth_im"]);
    Case {
        parts: comps.iter().map(|c| set_from_json(c, &freqs)).collect(),
        small: u("u_small"),
        supplier: u("u_supplier"),
        joints: joints_from_json(&v["joints"]),
        truth: re
            .iter()
            .zip(&im)
            .map(|(a, b)| Complex64::new(*a, *b))
            .collect(),
        mc_std: floats(&v["mc_std"]),
        mc: McOptions {
            draws: v["draws"].as_u64().unwrap() as usize,
            seed: v["seed"].as_u64().unwrap(),
        },
    }
}

fn opts() -> CouplingOptions {
    CouplingOptions::default()
}

/// Rust Monte Carlo equals numpy's with the same draws; first order agrees
/// with it within the Monte Carlo error where the propagation is linear.
fn check_propagation(name: &str) {
    let c = case(name);
    let nominal = couple(&c.parts, &c.joints, &opts()).unwrap().set;
    // the layout: mortise's coupling equals numpy's noise-free result
    let scale = c.truth.iter().map(|v| v.norm()).fold(0.0, f64::max);
    for (a, b) in nominal.data.iter().zip(&c.truth) {
        assert!((a - b).norm() <= 1e-9 * scale, "{name}: {a} vs numpy {b}");
    }
    let u: Vec<Option<&FrfUncertainty>> = c.small.iter().map(Some).collect();
    let mc = uncertainty::couple_monte_carlo(&c.parts, &u, &c.joints, &opts(), c.mc).unwrap();
    // same draws, same formula: equal to rounding (numpy's solve vs our LU)
    let mut worst: f64 = 0.0;
    for (a, b) in mc.std.iter().zip(&c.mc_std) {
        worst = worst.max((a - b).abs() / b.max(1e-300));
    }
    eprintln!("{name}: Monte Carlo std, largest relative difference to numpy's: {worst:.1e}");
    assert!(
        worst < 1e-7,
        "{name}: Monte Carlo std differs from numpy's by {worst:e}"
    );

    let fo = uncertainty::couple_first_order(&c.parts, &u, &c.joints, &opts()).unwrap();
    // the sample std of N normal draws has relative standard error 1/√(2(N−1))
    // (common practice); 5 of them bound every one of the values compared
    let se = 1.0 / (2.0 * (c.mc.draws as f64 - 1.0)).sqrt();
    let (mut n, mut within2, mut worst) = (0usize, 0usize, 0.0f64);
    for (x, (f, m)) in fo.uncertainty.std.iter().zip(&mc.std).enumerate() {
        let rel = f / nominal.data[x].norm();
        if rel > 0.05 {
            continue; // not small: the linearization is not expected to hold
        }
        n += 1;
        let d = (f / m - 1.0).abs();
        worst = worst.max(d);
        within2 += usize::from(d <= 2.0 * se);
    }
    let frac = within2 as f64 / n as f64;
    eprintln!(
        "{name}: {n} values with u_c/|Y_c| ≤ 0.05, first order / Monte Carlo: worst |ratio − 1| {worst:.4}, {:.1} % within 2 standard errors ({se:.4})",
        100.0 * frac
    );
    assert!(
        n > nominal.data.len() / 2,
        "{name}: only {n} values compared"
    );
    assert!(
        worst < 5.0 * se,
        "{name}: first order vs Monte Carlo {worst}"
    );
    assert!(frac > 0.9, "{name}: {frac} within 2 standard errors");
}

#[test]
fn rigid_first_order_matches_monte_carlo_and_numpy() {
    check_propagation("rigid");
}

#[test]
fn flexible_first_order_matches_monte_carlo_and_numpy() {
    check_propagation("flexible");
}

#[test]
fn three_parts_first_order_matches_monte_carlo_and_numpy() {
    check_propagation("three");
}

/// One noisy realisation of the inputs with their supplier-like
/// uncertainty (draws of `seed`).
fn noisy(c: &Case, seed: u64) -> Vec<FrfSet> {
    let mut base = 0u64;
    c.parts
        .iter()
        .zip(&c.supplier)
        .map(|(p, u)| {
            let mut s = p.clone();
            for (v, (x, s)) in s.data.iter_mut().zip(&u.std).enumerate() {
                *x += draws::circular(seed, base + v as u64, *s);
            }
            base += p.data.len() as u64;
            s
        })
        .collect()
}

#[derive(Default, Debug)]
struct Tally {
    values: usize,
    flagged: usize,
    big: usize,
    big_caught: usize,
    big_in_band: usize,
    err_flagged: Vec<f64>,
    err_unflagged: Vec<f64>,
}

/// The user's view: noisy data, the uncertainty model computed from them
/// (1 % relative, floor 60 dB below each FRF's peak), propagated, assessed.
fn assess_realisation(c: &Case, seed: u64, t: &mut Tally) {
    let parts = noisy(c, seed);
    let model: Vec<FrfUncertainty> = parts
        .iter()
        .map(|p| uncertainty::relative_with_floor(p, 0.01, Some(-60.0)))
        .collect();
    let u: Vec<Option<&FrfUncertainty>> = model.iter().map(Some).collect();
    let a = couple(&parts, &c.joints, &opts()).unwrap();
    let fo = uncertainty::couple_first_order(&parts, &u, &c.joints, &opts()).unwrap();
    let r = uncertainty::assess(
        &a.set,
        &Evidence::of_coupling(&fo, &a.condition),
        &ReliabilityOptions::default(),
    );
    if seed == 1 {
        for st in r.statements.iter().take(3) {
            eprintln!("  {st}");
        }
    }
    for (x, y) in a.set.data.iter().enumerate() {
        let truth = c.truth[x].norm();
        if truth == 0.0 {
            continue; // an exact zero of the truth (none in these cases)
        }
        let err = 20.0 * (y.norm() / truth).log10();
        t.values += 1;
        let flagged = r.flags[x] != 0;
        if flagged {
            t.flagged += 1;
            t.err_flagged.push(err.abs());
        } else {
            t.err_unflagged.push(err.abs());
        }
        if err.abs() > 3.0 {
            t.big += 1;
            let (lo, hi) = interval_db(y.norm(), fo.uncertainty.std[x]);
            t.big_caught += usize::from(flagged);
            t.big_in_band += usize::from(!flagged && -err >= lo && -err <= hi);
        }
    }
}

fn percentile(v: &mut [f64], p: f64) -> f64 {
    v.sort_by(|a, b| a.total_cmp(b));
    if v.is_empty() {
        return f64::NAN;
    }
    v[((v.len() - 1) as f64 * p).round() as usize]
}

/// Supplier-like noise (1 % relative plus a floor 60 dB below each FRF's
/// accelerance peak, the measurement): the flags catch the lines
/// with large error. The numbers printed are reported in the README.
#[test]
fn reliability_mask_catches_large_errors_under_supplier_noise() {
    for name in ["rigid", "three"] {
        let c = case(name);
        let mut t = Tally::default();
        for seed in 1..=20u64 {
            assess_realisation(&c, seed, &mut t);
        }
        let missed = t.big - t.big_caught - t.big_in_band;
        let fe = percentile(&mut t.err_flagged, 0.5);
        let fe95 = percentile(&mut t.err_flagged, 0.95);
        let ue = percentile(&mut t.err_unflagged, 0.5);
        let ue95 = percentile(&mut t.err_unflagged, 0.95);
        let umax = percentile(&mut t.err_unflagged, 1.0);
        eprintln!(
            "{name}: 20 realisations, {} values; flagged {:.1} %; |error| median / 95th percentile: flagged {fe:.2} / {fe95:.2} dB, unflagged {ue:.3} / {ue95:.3} dB (max {umax:.2}); errors > 3 dB: {}, flagged {}, inside their 95 % band {}, missed {missed}",
            t.values,
            100.0 * t.flagged as f64 / t.values as f64,
            t.big,
            t.big_caught,
            t.big_in_band
        );
        assert!(
            t.flagged > 0 && t.big > 0,
            "{name}: the case shows no noise problem"
        );
        // the flagged lines carry the large errors: common practice, a factor 10
        assert!(
            fe95 > 10.0 * ue95,
            "{name}: flagged {fe95} vs unflagged {ue95}"
        );
        // an unflagged value's 95 % interval lies within ±3 dB, and 5 % of
        // values fall outside their 95 % interval by definition: a few of
        // the large errors remain unflagged; at most 1 % of them may
        assert!(ue95 < 3.0, "{name}: unflagged 95th percentile {ue95} dB");
        assert!(
            (missed as f64) <= 0.01 * t.big as f64,
            "{name}: {missed} of {} errors > 3 dB neither flagged nor inside their band",
            t.big
        );
    }
}

/// Coverage: over 200 seeded realisations with 1 % noise, the 95 % level
/// interval from the first-order uncertainty of the noisy data covers the
/// truth on about 95 % of the unflagged values.
#[test]
fn interval_coverage_near_95_percent() {
    let c = case("flexible");
    let (mut n, mut inside) = (0usize, 0usize);
    for seed in 100..300u64 {
        let mut base = 0u64;
        let parts: Vec<FrfSet> = c
            .parts
            .iter()
            .zip(&c.small)
            .map(|(p, u)| {
                let mut s = p.clone();
                for (v, (x, s)) in s.data.iter_mut().zip(&u.std).enumerate() {
                    *x += draws::circular(seed, base + v as u64, *s);
                }
                base += p.data.len() as u64;
                s
            })
            .collect();
        let model: Vec<FrfUncertainty> = parts
            .iter()
            .map(|p| uncertainty::relative_with_floor(p, 0.01, None))
            .collect();
        let u: Vec<Option<&FrfUncertainty>> = model.iter().map(Some).collect();
        let a = couple(&parts, &c.joints, &opts()).unwrap();
        let fo = uncertainty::couple_first_order(&parts, &u, &c.joints, &opts()).unwrap();
        for (x, y) in a.set.data.iter().enumerate() {
            let rel = fo.uncertainty.std[x] / y.norm();
            if rel > 0.05 {
                continue;
            }
            let (lo, hi) = interval_db(y.norm(), fo.uncertainty.std[x]);
            let e = 20.0 * (c.truth[x].norm() / y.norm()).log10();
            n += 1;
            inside += usize::from(e >= lo && e <= hi);
        }
    }
    let cov = inside as f64 / n as f64;
    eprintln!(
        "coverage of the 95 % interval: {:.2} % of {n} values",
        100.0 * cov
    );
    // the acceptance range
    assert!((0.93..=0.97).contains(&cov), "coverage {cov}");
}

/// Decoupling: B removed from the coupled A + B (its A rows and columns,
/// renamed AB), 1 % noise on both; first order against the Monte Carlo.
#[test]
fn decoupling_first_order_matches_monte_carlo() {
    let c = case("rigid");
    let mut full = couple(&c.parts, &c.joints, &opts()).unwrap().set;
    let a_dofs: Vec<mortise::Dof> = full.outputs[..3].to_vec();
    full = full.select_dofs(&a_dofs, &a_dofs).unwrap();
    for d in full.outputs.iter_mut().chain(full.inputs.iter_mut()) {
        d.component = "AB".into();
    }
    full.name = "AB".into();
    let removed = c.parts[1].clone();
    let joints = vec![Joint::rigid(
        mortise::Dof::parse("AB:3+X", "").unwrap(),
        mortise::Dof::parse("B:1+X", "").unwrap(),
    )];
    let ua = uncertainty::relative_with_floor(&full, 0.01, None);
    let ub = c.small[1].clone();
    let fo =
        uncertainty::decouple_first_order(&full, Some(&ua), &removed, Some(&ub), &joints, &opts())
            .unwrap();
    let mc = uncertainty::decouple_monte_carlo(
        &full,
        Some(&ua),
        &removed,
        Some(&ub),
        &joints,
        &opts(),
        McOptions {
            draws: 400,
            seed: 11,
        },
    )
    .unwrap();
    let nominal = mortise::assemble::decouple(&full, &removed, &joints, &opts())
        .unwrap()
        .set;
    // the decoupled A equals the component A (the noise-free check of the setup)
    let a = &c.parts[0];
    let scale = a.data.iter().map(|v| v.norm()).fold(0.0, f64::max);
    for (x, y) in nominal.data.iter().zip(&a.data) {
        assert!((x - y).norm() < 1e-8 * scale, "{x} vs {y}");
    }
    let se = 1.0 / (2.0 * 399.0f64).sqrt();
    let (mut n, mut worst) = (0usize, 0.0f64);
    for (x, (f, m)) in fo.uncertainty.std.iter().zip(&mc.std).enumerate() {
        if f / nominal.data[x].norm() > 0.05 {
            continue;
        }
        n += 1;
        worst = worst.max((f / m - 1.0).abs());
    }
    eprintln!("decoupling: {n} values compared, worst |first order / Monte Carlo − 1| {worst:.4}");
    assert!(n > nominal.data.len() / 2, "{n}");
    assert!(worst < 5.0 * se, "{worst}");
}

/// The truncation threshold referenced to the noise: with 1 % input noise
/// the three-part interface (two joints) resolves both singular values on
/// most lines, so a truncation at 0.5 drops resolved ones, and a
/// truncation at 1e-12 none.
#[test]
fn noise_referenced_threshold_on_three_parts() {
    let c = case("three");
    let u: Vec<Option<&FrfUncertainty>> = c.small.iter().map(Some).collect();
    let n =
        uncertainty::interface_noise::coupling_interface_noise(&c.parts, &u, &c.joints, Some(0.5))
            .unwrap();
    let dropped = n.iter().filter(|l| l.dropped_above_noise > 0).count();
    let below = n.iter().filter(|l| l.below_noise > 0).count();
    let mut t: Vec<f64> = n.iter().map(|l| l.threshold).collect();
    t.sort_by(|a, b| a.total_cmp(b));
    eprintln!(
        "three parts, 1 % noise: thresholds from the noise {:.1e} … {:.1e} (median {:.1e}); lines with a singular value below the noise {below}; a truncation at 0.5 drops resolved ones at {dropped} of {} lines",
        t[0],
        t[t.len() - 1],
        t[t.len() / 2],
        n.len()
    );
    assert!(dropped > 0);
    // 1 % noise on a two-joint interface: the threshold is of the order of 1 %
    assert!(t[t.len() / 2] > 1e-3 && t[t.len() / 2] < 0.1, "{t:?}");
    let n = uncertainty::interface_noise::coupling_interface_noise(
        &c.parts,
        &u,
        &c.joints,
        Some(1e-12),
    )
    .unwrap();
    assert!(n.iter().all(|l| l.dropped_above_noise == 0));
}

/// Tikhonov regularisation referenced to the noise (λ per line =
/// √E‖δZ‖²_F, the interface matrix's error from the inputs' stated
/// uncertainty) on noisy realisations of the coupling cases (1 % plus a
/// floor 60 dB below each FRF's peak). On lines where every singular value
/// of the interface matrix lies 10 times the noise or more above it (the
/// inverse then changes by at most λ²/(σ² + λ²) = 1 %) it keeps the plain
/// result (the dynamics the data resolve): within 0.5 dB at 99 % of the
/// values (the rest are values where the coupled result is a small
/// difference of large terms, which magnifies the 1 %; 0.5 dB: common
/// practice for a change too small to hear in a level);
/// where the noise hides a singular value it changes the result. Errors
/// against the truth are printed for the README: the regularisation does
/// not remove the noise's errors, it only stops the inversion from
/// amplifying the noise beyond 1/λ.
#[test]
fn tikhonov_from_the_noise_keeps_what_the_data_resolve() {
    use mortise::assemble::PerLine;
    for name in ["rigid", "three"] {
        let c = case(name);
        let (mut big, mut n) = ([0usize; 2], 0usize);
        let mut errs: [Vec<f64>; 2] = Default::default();
        let (mut resolved, mut resolved_kept, mut hidden, mut hidden_changed) = (0, 0, 0, 0);
        for seed in 1..=10u64 {
            let parts = noisy(&c, seed);
            let model: Vec<FrfUncertainty> = parts
                .iter()
                .map(|p| uncertainty::relative_with_floor(p, 0.01, Some(-60.0)))
                .collect();
            let u: Vec<Option<&FrfUncertainty>> = model.iter().map(Some).collect();
            let noise =
                uncertainty::interface_noise::coupling_interface_noise(&parts, &u, &c.joints, None)
                    .unwrap();
            let lam: Vec<f64> = noise.iter().map(|l| l.threshold).collect();
            let plain = couple(&parts, &c.joints, &opts()).unwrap();
            let tik = couple(
                &parts,
                &c.joints,
                &CouplingOptions {
                    tsvd_rel_threshold: None,
                    per_line: Some(PerLine::Tikhonov(lam)),
                },
            )
            .unwrap();
            assert!(
                tik.warnings.iter().any(|w| w.contains("Tikhonov"))
                    || tik.damped.iter().all(|&d| d == 0)
            );
            let per_line = plain.set.n_out() * plain.set.n_in();
            for (r, a) in [&plain, &tik].iter().enumerate() {
                for (x, y) in a.set.data.iter().enumerate() {
                    let e = 20.0 * (y.norm() / c.truth[x].norm()).log10();
                    errs[r].push(e.abs());
                    big[r] += usize::from(e.abs() > 3.0);
                    n += usize::from(r == 0);
                }
            }
            for (x, (p, t)) in plain.set.data.iter().zip(&tik.set.data).enumerate() {
                let change = (20.0 * (t.norm() / p.norm()).log10()).abs();
                let k = x / per_line;
                // σ_min / noise = 1 / (condition · t)
                if plain.condition[k] * noise[k].threshold <= 1.0 / 10.0 {
                    resolved += 1;
                    resolved_kept += usize::from(change <= 0.5);
                } else if noise[k].below_noise > 0 {
                    hidden += 1;
                    hidden_changed += usize::from(change > 0.5);
                }
            }
        }
        let med: Vec<f64> = errs.iter_mut().map(|e| percentile(e, 0.5)).collect();
        eprintln!(
            "{name}: 10 realisations, {n} values; against the truth: errors > 3 dB plain {}, tikhonov from the noise {}; median |error| {:.3} / {:.3} dB. Against the plain solve: values on lines whose singular values are all ≥ 10 × the noise kept within 0.5 dB {resolved_kept} of {resolved}; values on lines with a singular value below the noise changed by more than 0.5 dB {hidden_changed} of {hidden}",
            big[0], big[1], med[0], med[1]
        );
        assert!(
            resolved > 0 && hidden > 0,
            "{name}: the case has both kinds of line"
        );
        assert!(
            resolved_kept as f64 >= 0.99 * resolved as f64,
            "{name}: {resolved_kept} of {resolved}"
        );
        assert!(
            hidden_changed > 0,
            "{name}: the regularisation changed nothing"
        );
    }
}
