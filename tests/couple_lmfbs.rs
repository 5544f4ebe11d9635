//! LM-FBS coupling and decoupling against an outside reference.
//!
//! reference: numpy direct assembly of M, K, C (tests/py/couple_msd.py builds
//! lumped mass-spring-damper components, inverts K − ω²M + iωC per line for
//! the component FRFs, and inverts the directly assembled global matrices
//! for the coupled system).

mod common;
mod couple_support;

use couple_support::*;
use mortise::assemble::{
    couple, couple_requested, couple_with_threads, decouple, decouple_requested, CouplingOptions,
    Joint, JointKind, Request,
};
use mortise::{Direction, Dof, ErrorKind, FrfSet};
use serde_json::Value;
use std::path::PathBuf;
use std::sync::OnceLock;

fn scenarios() -> &'static PathBuf {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let d = common::scratch("couple_lmfbs");
        let out = common::run_py("couple_msd.py", &[d.to_str().unwrap()]);
        assert!(out.contains("rigid"), "{out}");
        d
    })
}

struct Case {
    comps: Vec<FrfSet>,
    joints: Vec<Joint>,
    reference: FrfSet,
    json: Value,
    freqs: Vec<f64>,
}

fn case(name: &str) -> Case {
    let v = read_json(&scenarios().join(format!("{name}.json")));
    let freqs = freqs_of(&v);
    let comps = v["components"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| set_from_json(c, &freqs))
        .collect();
    Case {
        comps,
        joints: joints_from_json(&v["joints"]),
        reference: set_from_json(&v["reference"], &freqs),
        json: v,
        freqs,
    }
}

fn check_coupling(name: &str) -> mortise::assemble::Assembled {
    let c = case(name);
    let r = couple(&c.comps, &c.joints, &CouplingOptions::default()).unwrap();
    let d = max_rel_diff(&r.set, &c.reference);
    eprintln!("{name}: coupling max relative difference {d:e}");
    // reference: numpy direct assembly of M, K, C; noise-free data agree to 1e-8 relative
    assert!(d <= 1e-8, "{name}: max relative difference {d:e}");
    assert_eq!(r.condition.len(), c.freqs.len());
    assert!(r.condition.iter().all(|&k| k.is_finite() && k >= 1.0));
    assert!(r.truncated.iter().all(|&t| t == 0));
    check_requested(&c, &r);
    r
}

/// Demand-driven coupling: the first and last output and input of the
/// assembly, asked alone (in another order), equal the full coupling's
/// entries bit for bit.
fn check_requested(c: &Case, full: &mortise::assemble::Assembled) {
    let s = &full.set;
    let outputs = vec![s.outputs[s.n_out() - 1].clone(), s.outputs[0].clone()];
    let inputs = vec![s.inputs[0].clone(), s.inputs[s.n_in() - 1].clone()];
    // both sides named, and the rows alone (every column)
    for req in [
        Request::of(outputs.clone(), inputs.clone()),
        Request {
            outputs: Some(outputs.clone()),
            inputs: None,
        },
    ] {
        let got = couple_requested(&c.comps, &c.joints, &CouplingOptions::default(), &req).unwrap();
        let want = s
            .select_dofs(&outputs, req.inputs.as_deref().unwrap_or(&s.inputs))
            .unwrap();
        same_entries(&got, &want, full);
    }
}

fn bits(x: &FrfSet) -> Vec<(u64, u64)> {
    x.data
        .iter()
        .map(|v| (v.re.to_bits(), v.im.to_bits()))
        .collect()
}

/// A demand-driven result holds the whole result's entries `want`, bit for
/// bit, with its name, condition numbers and warnings.
fn same_entries(
    got: &mortise::assemble::Demanded,
    want: &FrfSet,
    full: &mortise::assemble::Assembled,
) {
    assert_eq!(got.assembled.set.outputs, want.outputs);
    assert_eq!(got.assembled.set.inputs, want.inputs);
    assert_eq!(got.assembled.set.name, full.set.name);
    assert_eq!(
        bits(&got.assembled.set),
        bits(want),
        "requested entries differ"
    );
    assert_eq!(got.assembled.condition, full.condition);
    assert_eq!(got.assembled.warnings, full.warnings);
    assert!(got.solved.0 <= got.whole.0 && got.solved.1 <= got.whole.1);
    eprintln!(
        "requested {} × {} of {} × {}: solved {} × {}",
        want.n_out(),
        want.n_in(),
        got.whole.0,
        got.whole.1,
        got.solved.0,
        got.solved.1
    );
}

fn check_decoupling(name: &str) {
    let c = case(name);
    let dj = &c.json["decouple"];
    let asm = set_from_json(&dj["assembly"], &c.freqs);
    let rem = set_from_json(&dj["removed"], &c.freqs);
    let joints = joints_from_json(&dj["joints"]);
    let want = set_from_json(&dj["reference"], &c.freqs);
    let r = decouple(&asm, &rem, &joints, &CouplingOptions::default()).unwrap();
    let d = max_rel_diff(&r.set, &want);
    eprintln!("{name}: decoupling max relative difference {d:e}");
    // reference: numpy direct assembly of M, K, C (the component before coupling)
    assert!(
        d <= 1e-8,
        "{name}: decoupling max relative difference {d:e}"
    );
    assert!(r
        .warnings
        .iter()
        .any(|w| w.contains("only the DOFs of the remaining component")));
    // demand-driven: the first and last DOFs of the remaining component,
    // and its first output against every input, bit for bit the whole's
    let s = &r.set;
    let outputs = vec![s.outputs[s.n_out() - 1].clone(), s.outputs[0].clone()];
    let inputs = vec![s.inputs[0].clone(), s.inputs[s.n_in() - 1].clone()];
    for req in [
        Request::of(outputs.clone(), inputs.clone()),
        Request {
            outputs: Some(outputs[1..].to_vec()),
            inputs: None,
        },
    ] {
        let got =
            decouple_requested(&asm, &rem, &joints, &CouplingOptions::default(), &req).unwrap();
        let want = s
            .select_dofs(
                req.outputs.as_deref().unwrap_or(&s.outputs),
                req.inputs.as_deref().unwrap_or(&s.inputs),
            )
            .unwrap();
        same_entries(&got, &want, &r);
    }
}

#[test]
fn rigid_joint_of_two_chains() {
    check_coupling("rigid");
}

#[test]
fn rigid_decoupling_recovers_the_component() {
    check_decoupling("rigid");
}

#[test]
fn spring_damper_joint() {
    check_coupling("spring_damper");
}

#[test]
fn spring_damper_decoupling_removes_part_and_joint() {
    check_decoupling("spring_damper");
}

#[test]
fn hysteretic_joint() {
    check_coupling("hysteretic");
}

#[test]
fn three_components_two_dof_interfaces_rectangular_and_signed() {
    // A is rectangular (4 outputs, 3 inputs); C labels one interface DOF as -Z
    let r = check_coupling("three");
    assert_eq!(r.set.n_out(), 4 + 6 + 4);
    assert_eq!(r.set.n_in(), 3 + 6 + 4);
    assert_eq!(r.set.outputs[0].to_string(), "A:1+X");
    assert_eq!(r.set.outputs[4].to_string(), "B:1+X");
}

#[test]
fn non_proportional_damping_mixed_kinds() {
    // A is given as mobility, B as accelerance; the result is mobility (A's kind)
    let r = check_coupling("nonprop");
    assert_eq!(r.set.kind(), mortise::FrfKind::Mobility);
}

#[test]
fn reciprocal_and_passive_components_give_reciprocal_passive_assembly() {
    // Maxwell–Betti reciprocity (Y_ij = Y_ji) and passivity (Re of driving-point
    // mobility ≥ 0 with e^{+iωt}); common practice for linear passive structures
    for name in ["spring_damper", "rigid", "nonprop"] {
        let c = case(name);
        let r = couple(&c.comps, &c.joints, &CouplingOptions::default()).unwrap();
        let y = r.set.to_kind("mobility").unwrap();
        let n = y.n_out();
        assert_eq!(y.outputs, y.inputs);
        for k in 0..y.n_lines() {
            let scale = y.line(k).iter().map(|v| v.norm()).fold(0.0, f64::max);
            for i in 0..n {
                assert!(
                    y.get(k, i, i).re >= -1e-12 * scale,
                    "{name}: line {k} DOF {i} active"
                );
                for j in 0..n {
                    assert!((y.get(k, i, j) - y.get(k, j, i)).norm() <= 1e-10 * scale);
                }
            }
        }
    }
}

#[test]
fn threaded_and_serial_results_are_identical() {
    let c = case("three");
    let o = CouplingOptions::default();
    let a = couple_with_threads(&c.comps, &c.joints, &o, 1).unwrap();
    let b = couple_with_threads(&c.comps, &c.joints, &o, 2).unwrap();
    let e = couple_with_threads(&c.comps, &c.joints, &o, 5).unwrap();
    assert_eq!(a, b);
    assert_eq!(a, e);
}

#[test]
fn redundant_joint_needs_and_gets_truncated_svd() {
    // Three parts meeting at one point joined pairwise (A–B, B–C and A–C): the
    // third constraint repeats the other two, B Y Bᵀ is singular, and a
    // pseudo-inverse gives the same coupled response as the two independent
    // joints (common practice for redundant interface constraints).
    let c = case("three");
    let three = vec![c.comps[0].clone(), c.comps[1].clone(), c.comps[2].clone()];
    let d = |s: &str| Dof::parse(s, "").unwrap();
    let base = vec![
        Joint::rigid(d("A:2+X"), d("B:1+X")),
        Joint::rigid(d("B:3+X"), d("C:1+X")),
    ];
    let mut redundant = base.clone();
    redundant.push(Joint::rigid(d("B:1+X"), d("B:3+X")));
    redundant.push(Joint::rigid(d("A:2+X"), d("C:1+X")));
    let want = couple(
        &three,
        &[base.clone(), vec![Joint::rigid(d("B:1+X"), d("B:3+X"))]].concat(),
        &CouplingOptions::default(),
    )
    .unwrap();
    let opts = CouplingOptions {
        tsvd_rel_threshold: Some(1e-9),
        per_line: None,
    };
    let got = couple(&three, &redundant, &opts).unwrap();
    assert!(got.truncated.iter().all(|&t| t == 1), "{:?}", got.truncated);
    assert!(got
        .warnings
        .iter()
        .any(|w| w.contains("truncated SVD dropped")));
    let diff = max_rel_diff(&got.set, &want.set);
    assert!(diff < 1e-7, "{diff:e}");
    // a threshold below every singular value changes nothing
    let plain = couple(&c.comps, &c.joints, &CouplingOptions::default()).unwrap();
    let tiny = couple(
        &c.comps,
        &c.joints,
        &CouplingOptions {
            tsvd_rel_threshold: Some(0.0),
            per_line: None,
        },
    )
    .unwrap();
    assert!(tiny.truncated.iter().all(|&t| t == 0));
    // where nothing is dropped the LU solve is used: bit-identical to the
    // result without the option (the reference: that result)
    let worst_cond = plain.condition.iter().cloned().fold(0.0, f64::max);
    let d = max_rel_diff(&tiny.set, &plain.set);
    eprintln!("threshold 0 vs none: {d:e} (condition up to {worst_cond:e})");
    assert_eq!(tiny, plain);
}

#[test]
fn error_mismatched_grids() {
    let c = case("rigid");
    let mut b = c.comps[1].clone();
    b.freqs[10] += 0.5;
    let e = couple(
        &[c.comps[0].clone(), b],
        &c.joints,
        &CouplingOptions::default(),
    )
    .unwrap_err();
    assert_eq!(e.kind, ErrorKind::Grid);
    assert!(
        e.message.contains("'A' has 67 lines, 4–400 Hz"),
        "{}",
        e.message
    );
    assert!(e.message.contains("'B' has 67 lines"), "{}", e.message);
    assert!(e.message.contains("line 11"), "{}", e.message);
}

#[test]
fn error_joint_names_unknown_dof() {
    let c = case("rigid");
    let j = vec![Joint::rigid(
        Dof::new("A", "3", Direction::X),
        Dof::new("B", "9", Direction::X),
    )];
    let e = couple(&c.comps, &j, &CouplingOptions::default()).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Dof);
    assert!(
        e.message
            .contains("joint 1 (A:3+X – B:9+X): no component has DOF B:9+X"),
        "{}",
        e.message
    );
    assert!(e.message.contains("'B' has B:1+X, B:2+X"), "{}", e.message);
}

#[test]
fn error_interface_dof_missing_as_input() {
    let c = case("three");
    // A's inputs are 1+X, 2+X, 2+Z; a joint at A:1+Z finds it only as an output
    let j = vec![Joint::rigid(
        Dof::new("A", "1", Direction::Z),
        Dof::new("B", "2", Direction::Z),
    )];
    let e = couple(&c.comps, &j, &CouplingOptions::default()).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Dof);
    assert!(
        e.message
            .contains("DOF A:1+Z is an output of 'A' but not one of its inputs"),
        "{}",
        e.message
    );
}

#[test]
fn error_missing_interface_entry_and_missing_elsewhere_propagates() {
    let c = case("rigid");
    let mut a = c.comps[0].clone();
    // A:3+X / A:1+X sits in the interface row: needed
    let n = a.n_in();
    a.present[2 * n] = false;
    let e = couple(
        &[a, c.comps[1].clone()],
        &c.joints,
        &CouplingOptions::default(),
    )
    .unwrap_err();
    assert_eq!(e.kind, ErrorKind::Missing);
    assert!(e.message.contains("A:3+X / A:1+X"), "{}", e.message);
    // A:1+X / A:2+X is not read by the interface terms: the result just lacks it
    let mut a = c.comps[0].clone();
    a.present[1] = false;
    let r = couple(
        &[a, c.comps[1].clone()],
        &c.joints,
        &CouplingOptions::default(),
    )
    .unwrap();
    assert!(!r.set.is_present(0, 1));
    assert!(r.set.get(5, 0, 1).re.is_nan());
    assert!(r.set.is_present(1, 0));
}

/// A request refuses what the whole coupling refuses, even when the missing
/// entry lies outside the requested places: the interface terms of every
/// line need it (common practice: a result is never given from a coupling
/// that cannot be formed whole).
#[test]
fn a_request_refuses_a_missing_interface_entry_outside_it() {
    let c = case("rigid");
    let opts = CouplingOptions::default();
    // places of the other component, from the coupling of the intact parts
    let full = couple(&c.comps, &c.joints, &opts).unwrap();
    let out = full.set.outputs[full.set.n_out() - 1].clone();
    let inp = full.set.inputs[full.set.n_in() - 1].clone();
    assert!(
        out.component != "A" && inp.component != "A",
        "{out} / {inp}"
    );
    let req = Request::of(vec![out], vec![inp]);
    // the intact parts: the request is given
    assert!(couple_requested(&c.comps, &c.joints, &opts, &req).is_ok());
    // A:3+X / A:1+X (in the interface row) missing: both refuse alike
    let mut a = c.comps[0].clone();
    let n = a.n_in();
    a.present[2 * n] = false;
    let comps = [a, c.comps[1].clone()];
    let whole = couple(&comps, &c.joints, &opts).unwrap_err();
    let asked = couple_requested(&comps, &c.joints, &opts, &req).unwrap_err();
    assert_eq!(asked.kind, ErrorKind::Missing);
    assert_eq!((asked.kind, &asked.message), (whole.kind, &whole.message));
    assert!(asked.message.contains("A:3+X / A:1+X"), "{}", asked.message);
}

#[test]
fn error_shared_dof_labels_and_bad_joint_values() {
    let c = case("rigid");
    let mut b = c.comps[1].clone();
    b.set_component("A");
    let e = couple(
        &[c.comps[0].clone(), b],
        &c.joints,
        &CouplingOptions::default(),
    )
    .unwrap_err();
    assert!(
        e.message.contains("appears in both 'A' and 'B'"),
        "{}",
        e.message
    );
    let mut j = c.joints.clone();
    j[0].kind = JointKind::Spring { k: -3.0 };
    let e = couple(&c.comps, &j, &CouplingOptions::default()).unwrap_err();
    assert!(
        e.message
            .contains("k = -3; expected a finite positive value"),
        "{}",
        e.message
    );
    // a damper has zero stiffness at 0 Hz
    let mut j = c.joints.clone();
    j[0].kind = JointKind::Damper { c: 10.0 };
    let mut a0 = c.comps[0].clone();
    let mut b0 = c.comps[1].clone();
    a0.freqs[0] = 0.0;
    b0.freqs[0] = 0.0;
    let e = couple(&[a0, b0], &j, &CouplingOptions::default()).unwrap_err();
    assert!(
        e.message.contains("dynamic stiffness at 0 Hz"),
        "{}",
        e.message
    );
}

#[test]
fn measured_joint_equals_spring_damper() {
    // a measured K(ω) = k + iωc (as an impedance set, converted inside) gives
    // the spring-damper result: the same reference as spring_damper
    let c = case("spring_damper");
    let (k, cc) = (6.0e4, 35.0);
    let d = Dof::new("mount", "1", Direction::X);
    let mut z = FrfSet::zeros(
        "mount",
        c.freqs.clone(),
        vec![d.clone()],
        vec![d],
        mortise::Quantity::Force,
        mortise::Quantity::Velocity,
    );
    for l in 0..z.n_lines() {
        let w = z.omega(l);
        // impedance = K / (iω)
        z.set(
            l,
            0,
            0,
            num_complex::Complex64::new(k, w * cc) / num_complex::Complex64::new(0.0, w),
        );
    }
    let mut j = c.joints.clone();
    j[0].kind = JointKind::Measured {
        stiffness: Box::new(z),
    };
    let r = couple(&c.comps, &j, &CouplingOptions::default()).unwrap();
    let diff = max_rel_diff(&r.set, &c.reference);
    // reference: numpy direct assembly of M, K, C
    assert!(diff <= 1e-8, "{diff:e}");
}
