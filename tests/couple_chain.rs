//! Cascades, sums of paths and mechanical series/parallel against outside
//! references: python-control 0.10.2 (PyPI; control.frd, control.series,
//! control.parallel), numpy matrix inversion, and textbook spring rules.

mod common;
mod couple_support;

use couple_support::*;
use mortise::assemble::{cascade, cascade_requested, parallel, series, sum_paths, Request};
use mortise::frf::SignalKind;
use mortise::{Direction, Dof, ErrorKind, FrfKind, FrfSet, Quantity};
use num_complex::Complex64;
use serde_json::Value;
use std::sync::OnceLock;

fn reference() -> &'static Value {
    static V: OnceLock<Value> = OnceLock::new();
    V.get_or_init(|| {
        let d = common::scratch("couple_chain");
        let f = d.join("ctl.json");
        let out = common::run_py("couple_control.py", &[f.to_str().unwrap()]);
        assert!(out.contains("python-control 0.10.2"), "{out}");
        read_json(&f)
    })
}

fn get(name: &str) -> FrfSet {
    let v = reference();
    set_from_json(&v[name], &freqs_of(v))
}

#[test]
fn cascade_matches_control_series() {
    let first = get("first");
    let mut second = get("second");
    // list the second stage's inputs in the other order, one with the opposite
    // sign (the column negated): the same physics, so the same product
    let n_o = second.n_out();
    let mut s2 = FrfSet::zeros(
        "second",
        second.freqs.clone(),
        second.outputs.clone(),
        vec![second.inputs[1].clone(), second.inputs[0].clone()],
        second.out_qty,
        second.in_qty,
    );
    s2.inputs[0].positive = false;
    for k in 0..second.n_lines() {
        for i in 0..n_o {
            s2.set(k, i, 0, -second.get(k, i, 1));
            s2.set(k, i, 1, second.get(k, i, 0));
        }
    }
    second = s2;
    let h = cascade(&first, &second).unwrap();
    let want = get("series");
    let d = max_rel_diff(&h, &want);
    // reference: python-control 0.10.2 control.series(first, second)
    assert!(d < 1e-12, "{d:e}");
    assert_eq!(h.out_qty, Quantity::Pressure);
    assert_eq!(h.in_qty, Quantity::Force);
    requested_equals_whole(&first, &second);
}

/// Demand-driven cascades (rows and columns asked alone, in another order,
/// or one side only) hold the whole cascade's entries bit for bit, with its
/// name, quantities, signal kind and warnings.
fn requested_equals_whole(first: &FrfSet, second: &FrfSet) {
    let whole = cascade(first, second).unwrap();
    let bits = |x: &FrfSet| -> Vec<(u64, u64)> {
        x.data
            .iter()
            .map(|v| (v.re.to_bits(), v.im.to_bits()))
            .collect()
    };
    let (o, i) = (&whole.outputs, &whole.inputs);
    let last = |v: &[Dof]| v[v.len() - 1].clone();
    for req in [
        Request::of(vec![last(o)], vec![last(i), i[0].clone()]),
        Request {
            outputs: Some(vec![last(o), o[0].clone()]),
            inputs: None,
        },
        Request {
            outputs: None,
            inputs: Some(vec![last(i)]),
        },
    ] {
        let (got, computed) = cascade_requested(first, second, &req).unwrap();
        let want = whole
            .select_dofs(
                req.outputs.as_deref().unwrap_or(o),
                req.inputs.as_deref().unwrap_or(i),
            )
            .unwrap();
        assert_eq!(bits(&got), bits(&want), "requested entries differ");
        assert_eq!((&got.outputs, &got.inputs), (&want.outputs, &want.inputs));
        assert_eq!(got.name, whole.name);
        assert_eq!((got.out_qty, got.in_qty), (whole.out_qty, whole.in_qty));
        assert_eq!(got.signal, whole.signal);
        assert_eq!(got.warnings, whole.warnings);
        assert!(computed.0 <= whole.n_out() && computed.1 <= whole.n_in());
    }
}

#[test]
fn sum_paths_matches_control_parallel() {
    let s = sum_paths(&[get("first"), get("third")]).unwrap();
    let d = max_rel_diff(&s, &get("parallel"));
    // reference: python-control 0.10.2 control.parallel(first, third)
    assert!(d < 1e-12, "{d:e}");
}

#[test]
fn parallel_receptance_matrices_match_numpy() {
    let p = parallel(&[get("ra"), get("rb")]).unwrap();
    assert_eq!(p.kind(), FrfKind::Receptance);
    let d = max_rel_diff(&p, &get("rpar"));
    // reference: numpy inv(inv(Ra) + inv(Rb)) per line
    assert!(d < 1e-10, "{d:e}");
    // series of receptances: they add (numpy Ra + Rb, computed here from the same data)
    let s = series(&[get("ra"), get("rb")]).unwrap();
    let (a, b) = (get("ra"), get("rb"));
    for n in 0..s.data.len() {
        assert!((s.data[n] - (a.data[n] + b.data[n])).norm() <= 1e-15 * a.data[n].norm());
    }
}

fn one(
    name: &str,
    comp: &str,
    oq: Quantity,
    iq: Quantity,
    freqs: &[f64],
    f: impl Fn(f64) -> Complex64,
) -> FrfSet {
    let d = Dof::new(comp, "1", Direction::Z);
    let mut s = FrfSet::zeros(name, freqs.to_vec(), vec![d.clone()], vec![d], oq, iq);
    for k in 0..freqs.len() {
        let w = s.omega(k);
        s.set(k, 0, 0, f(w));
    }
    s
}

#[test]
fn springs_in_series_and_parallel() {
    // textbook: springs in series 1/k = 1/k1 + 1/k2, in parallel k = k1 + k2
    let freqs = [1.0, 10.0, 100.0];
    let (k1, k2) = (2.0e5, 3.0e5);
    let s1 = one(
        "k1",
        "pad",
        Quantity::Force,
        Quantity::Displacement,
        &freqs,
        |_| k1.into(),
    );
    let s2 = one(
        "k2",
        "mount",
        Quantity::Force,
        Quantity::Displacement,
        &freqs,
        |_| k2.into(),
    );
    let s = series(&[s1.clone(), s2.clone()]).unwrap();
    assert_eq!(s.kind(), FrfKind::DynamicStiffness);
    let want = 1.0 / (1.0 / k1 + 1.0 / k2);
    for k in 0..3 {
        assert!(
            (s.get(k, 0, 0) - want).norm() < 1e-9 * want,
            "{}",
            s.get(k, 0, 0)
        );
    }
    let p = parallel(&[s1, s2]).unwrap();
    for k in 0..3 {
        assert!((p.get(k, 0, 0) - (k1 + k2)).norm() < 1e-9 * (k1 + k2));
    }
    // the same springs given as receptances 1/k (parallel returns receptance)
    let r1 = one(
        "r1",
        "pad",
        Quantity::Displacement,
        Quantity::Force,
        &freqs,
        |_| (1.0 / k1).into(),
    );
    let r2 = one(
        "r2",
        "mount",
        Quantity::Displacement,
        Quantity::Force,
        &freqs,
        |_| (1.0 / k2).into(),
    );
    let p = parallel(&[r1.clone(), r2.clone()]).unwrap();
    assert_eq!(p.kind(), FrfKind::Receptance);
    assert!((p.get(1, 0, 0) - 1.0 / (k1 + k2)).norm() < 1e-9 / (k1 + k2));
    // mixed kinds: a spring as mobility iω/k in series with a receptance 1/k2
    let m1 = one(
        "m1",
        "pad",
        Quantity::Velocity,
        Quantity::Force,
        &freqs,
        |w| Complex64::new(0.0, w / k1),
    );
    let s = series(&[m1, r2]).unwrap();
    assert_eq!(s.kind(), FrfKind::Mobility);
    let w = 2.0 * std::f64::consts::PI * 10.0;
    let want = Complex64::new(0.0, w) * (1.0 / k1 + 1.0 / k2);
    assert!((s.get(1, 0, 0) - want).norm() < 1e-9 * want.norm());
}

#[test]
fn halving_the_input_halves_the_output() {
    // linearity: half the force, half the response, 20·log10(2) = 6.02 dB less
    // (common practice)
    let first = get("first");
    let mut force = FrfSet::zeros(
        "force",
        first.freqs.clone(),
        first.inputs.clone(),
        vec![Dof::scalar("", "ref")],
        Quantity::Force,
        Quantity::Dimensionless,
    );
    force.signal = Some(SignalKind::Rms);
    for k in 0..force.n_lines() {
        for i in 0..force.n_out() {
            force.set(k, i, 0, Complex64::new(1.0 + i as f64, 0.5 * k as f64));
        }
    }
    let mut half = force.clone();
    for v in &mut half.data {
        *v *= 0.5;
    }
    let a = cascade(&force, &first).unwrap();
    let b = cascade(&half, &first).unwrap();
    requested_equals_whole(&force, &first);
    assert_eq!(a.signal, Some(SignalKind::Rms));
    for n in 0..a.data.len() {
        let db = 20.0 * (a.data[n].norm() / b.data[n].norm()).log10();
        assert!((db - 6.0206).abs() < 1e-3, "{db}");
    }
    // a spectrum without phase cannot be cascaded
    let mut auto = force.clone();
    auto.signal = Some(SignalKind::Autopower);
    let e = cascade(&auto, &first).unwrap_err();
    assert!(
        e.message.contains("autopower spectrum without phase"),
        "{}",
        e.message
    );
}

#[test]
fn error_cascade_quantity_mismatch_names_both_stages() {
    let first = get("first");
    let third = get("third"); // inputs are forces, first's outputs are velocities
    let e = cascade(&first, &third).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Quantity);
    // a request is refused alike (the whole cascade's checks run first)
    let req = Request::of(
        vec![third.outputs[0].clone()],
        vec![first.inputs[0].clone()],
    );
    assert_eq!(
        cascade_requested(&first, &third, &req).unwrap_err().message,
        e.message
    );
    assert!(
        e.message
            .contains("the outputs of the first stage 'first' are velocity"),
        "{}",
        e.message
    );
    assert!(
        e.message
            .contains("the inputs of the second stage 'third' are force"),
        "{}",
        e.message
    );
}

#[test]
fn error_cascade_dof_mismatch_names_dofs() {
    let first = get("first");
    let mut second = get("second");
    second.inputs[1] = Dof::new("mount", "7", Direction::Z);
    let e = cascade(&first, &second).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Dof);
    assert!(
        e.message.contains(
            "outputs of the first stage 'first' that are not inputs of 'second': mount:2+Z"
        ),
        "{}",
        e.message
    );
    assert!(
        e.message.contains(
            "inputs of the second stage 'second' that are not outputs of 'first': mount:7+Z"
        ),
        "{}",
        e.message
    );
}

#[test]
fn error_cascade_missing_entry() {
    let first = get("first");
    let mut second = get("second");
    second.present[3] = false;
    let e = cascade(&first, &second).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Missing);
    // an entry missing outside the requested rows still refuses the request
    // (the whole cascade's checks run first)
    let req = Request::of(
        vec![second.outputs[0].clone()],
        vec![first.inputs[0].clone()],
    );
    assert_eq!(
        cascade_requested(&first, &second, &req)
            .unwrap_err()
            .message,
        e.message
    );
    assert!(e.message.contains("room:m2 / mount:2+Z"), "{}", e.message);
}

#[test]
fn error_sum_paths_grid_and_dofs() {
    let a = get("first");
    let mut b = get("third");
    b.freqs = b.freqs.iter().map(|f| f * 1.01).collect();
    let e = sum_paths(&[a.clone(), b]).unwrap_err();
    assert_eq!(e.kind, ErrorKind::Grid);
    assert!(
        e.message.contains("'first' has 41 lines, 10–500 Hz"),
        "{}",
        e.message
    );
    assert!(
        e.message.contains("'third' has 41 lines, 10.1–505 Hz"),
        "{}",
        e.message
    );
    let mut c = get("third");
    c.outputs[0] = Dof::new("mount", "9", Direction::Z);
    let e = sum_paths(&[a.clone(), c]).unwrap_err();
    assert!(
        e.message
            .contains("'first' has mount:1+Z where 'third' has mount:9+Z"),
        "{}",
        e.message
    );
    // an entry missing in one path is missing in the sum, with a warning
    let mut d = get("third");
    d.present[0] = false;
    let s = sum_paths(&[a, d]).unwrap();
    assert!(!s.present[0] && s.data[0].re.is_nan());
    assert!(s
        .warnings
        .iter()
        .any(|w| w.contains("mount:1+Z / unit:1+Z")));
}

#[test]
fn error_parallel_needs_square_and_mechanical() {
    let e = parallel(&[get("first"), get("third")]).unwrap_err();
    assert!(e.message.contains("square"), "{}", e.message);
    let e = series(&[get("second"), get("second")]).unwrap_err();
    assert!(e.message.contains("needs mechanical FRFs"), "{}", e.message);
}
