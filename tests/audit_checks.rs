//! The fitness audit on deliberately faulty sets and on clean ones.

mod common;

use mortise::audit::*;
use mortise::frf::{Direction, Dof, FrfSet};
use mortise::units::Quantity;
use nalgebra::DMatrix;
use num_complex::Complex64;

fn grid(f0: f64, f1: f64, df: f64) -> Vec<f64> {
    let n = ((f1 - f0) / df).round() as usize;
    (0..=n).map(|i| f0 + i as f64 * df).collect()
}

/// Receptance of a lumped system (K − ω²M + iωC)⁻¹ per line (e^{+iωt}).
fn lumped(name: &str, freqs: &[f64], m: &[f64], k: &DMatrix<f64>, c: &DMatrix<f64>) -> FrfSet {
    let n = m.len();
    let d: Vec<Dof> = (0..n)
        .map(|i| Dof::new("part", &(i + 1).to_string(), Direction::Z))
        .collect();
    let mut h = FrfSet::zeros(
        name,
        freqs.to_vec(),
        d.clone(),
        d,
        Quantity::Displacement,
        Quantity::Force,
    );
    for (l, &f) in freqs.iter().enumerate() {
        let w = 2.0 * std::f64::consts::PI * f;
        let z = DMatrix::from_fn(n, n, |i, j| {
            let mm = if i == j { m[i] } else { 0.0 };
            Complex64::new(k[(i, j)] - w * w * mm, w * c[(i, j)])
        });
        let inv = z.try_inverse().unwrap();
        for i in 0..n {
            for j in 0..n {
                h.set(l, i, j, inv[(i, j)]);
            }
        }
    }
    h
}

/// Two masses: ground spring 1e4 N/m under mass 1 kg, 5e3 N/m to 0.5 kg; C = βK, ζ ≈ 2 % near 20 Hz.
fn clean_two_dof(freqs: &[f64]) -> FrfSet {
    let k = DMatrix::from_row_slice(2, 2, &[1.5e4, -5e3, -5e3, 5e3]);
    let c = &k * 3.2e-4;
    lumped("clean", freqs, &[1.0, 0.5], &k, &c)
}

fn sdof(freqs: &[f64], m: f64, k: f64, c: f64) -> FrfSet {
    lumped(
        "sdof",
        freqs,
        &[m],
        &DMatrix::from_element(1, 1, k),
        &DMatrix::from_element(1, 1, c),
    )
}

#[test]
fn clean_set_passes_every_check() {
    // Symmetric M, K, C: reciprocal (Maxwell–Betti) and, with positive damping,
    // passive (textbook). Half-power bandwidth 2ζf_n (Ewins 2000) ≈ 0.4 Hz at the
    // first mode, so 0.02 Hz lines resolve it.
    let mut h = clean_two_dof(&grid(1.0, 100.0, 0.02));
    h.coherence = Some(vec![0.99; h.data.len()]);
    let r = audit(&h, &AuditOptions::default());
    print!("{}", r.table());
    for c in &r.checks {
        assert_eq!(c.status, Status::Pass, "{}: {}", c.check, c.summary);
        assert!(c.flagged.is_empty());
    }
    assert!(!r.flagged());
    let json = serde_json::to_string(&r).unwrap();
    let back: AuditReport = serde_json::from_str(&json).unwrap();
    assert_eq!(back, r);
    assert!(r.caution.contains("licensed professional"));
    // the same physics as accelerance and as dynamic stiffness still passes
    for kind in ["accelerance", "dynamic-stiffness"] {
        let a = h.to_kind(kind).unwrap();
        let ra = audit(&a, &AuditOptions::default());
        assert_eq!(
            ra.check("passivity").unwrap().status,
            Status::Pass,
            "{kind}"
        );
        assert_eq!(
            ra.check("reciprocity").unwrap().status,
            Status::Pass,
            "{kind}"
        );
    }
}

#[test]
fn non_reciprocal_set_is_flagged_in_its_bands() {
    let mut h = clean_two_dof(&grid(1.0, 100.0, 0.02));
    // H_12 scaled by 1.3 between 20 and 40 Hz only
    for k in 0..h.n_lines() {
        if (20.0..=40.0).contains(&h.freqs[k]) {
            let v = h.get(k, 0, 1);
            h.set(k, 0, 1, v * 1.3);
        }
    }
    let c = check_reciprocity(&h, &AuditOptions::default());
    println!("{}", c.summary);
    assert_eq!(c.status, Status::Flag);
    assert_eq!(c.flagged.len(), 1);
    let r = &c.flagged[0];
    println!(
        "flagged {} ({:.2}–{:.2} Hz), worst {:.4}",
        r.label(),
        r.lower,
        r.upper,
        r.worst
    );
    // |1.3h − h| / |1.3h| = 0.3/1.3
    assert!((r.worst - 0.3 / 1.3).abs() < 1e-12);
    assert_eq!((r.first_band.as_str(), r.last_band.as_str()), ("20", "40"));
    assert!(r.lower > 17.0 && r.upper < 45.0);
    assert_eq!(r.entries, vec!["part:1+Z / part:2+Z".to_string()]);
    // opposite signs on one DOF are the same FRF, not a reciprocity error
    let mut s = clean_two_dof(&grid(1.0, 100.0, 0.5));
    s.inputs[1].positive = false;
    for k in 0..s.n_lines() {
        for i in 0..2 {
            let v = s.get(k, i, 1);
            s.set(k, i, 1, -v);
        }
    }
    assert_eq!(
        check_reciprocity(&s, &AuditOptions::default()).status,
        Status::Pass
    );
}

#[test]
fn non_passive_set_is_flagged() {
    // Negative damping c < 0 feeds energy in: Re(Y) = ω²c/|k − ω²m + iωc|² < 0 (textbook).
    let f = grid(2.0, 60.0, 0.05);
    let h = sdof(&f, 1.0, 1e4, -4.0);
    for set in [
        h.clone(),
        h.to_kind("accelerance").unwrap(),
        h.to_kind("mobility").unwrap(),
    ] {
        let c = check_passivity(&set, &AuditOptions::default());
        assert_eq!(c.status, Status::Flag, "{:?}", set.kind());
        assert_eq!(c.flagged.len(), 1);
        let r = &c.flagged[0];
        assert_eq!(r.lines, f.len());
        // at resonance the mobility is real: Re/|Y| = −1 there
        assert!((r.worst + 1.0).abs() < 2e-3, "{}", r.worst);
        assert!((r.worst_at - 15.9155).abs() < 0.05, "{}", r.worst_at);
        println!("{}: {}", set.kind(), c.summary);
    }
    // the analytic measure at one line: cos(phase of Y) = Re Y/|Y|
    let c = check_passivity(
        &sdof(&[10.0, 20.0, 30.0], 1.0, 1e4, -4.0),
        &AuditOptions::default(),
    );
    let w = 2.0 * std::f64::consts::PI * 10.0;
    let y = Complex64::new(0.0, w) / Complex64::new(1e4 - w * w, -4.0 * w);
    assert!(c.flagged[0].worst <= y.re / y.norm() + 1e-12);
    // positive damping passes
    assert_eq!(
        check_passivity(&sdof(&f, 1.0, 1e4, 4.0), &AuditOptions::default()).status,
        Status::Pass
    );
}

/// SDOF with a cubic (Duffing) spring k·x + k3·x³, linearised at amplitude X by
/// harmonic balance: k_eq = k + ¾·k3·X² (harmonic balance, textbook).
fn duffing_linearised(freqs: &[f64], k3: f64, amplitude: f64) -> FrfSet {
    let (m, k, c) = (1.0, 1.0e4, 4.0);
    let keq = k + 0.75 * k3 * amplitude * amplitude;
    let mut s = sdof(freqs, m, keq, c);
    s.name = format!("X = {amplitude} m");
    s
}

#[test]
fn non_linear_softening_spring_is_flagged_near_resonance() {
    let f = grid(2.0, 60.0, 0.05);
    let k3 = -1.0e9; // softening, N/m³
    let x_hi = (0.1f64 * 1.0e4 / (0.75 * 1.0e9)).sqrt(); // k_eq = 0.9 k
    let low = duffing_linearised(&f, k3, 1e-4);
    let high = duffing_linearised(&f, k3, x_hi);
    let c = audit_linearity(&low, &high, &AuditOptions::default()).unwrap();
    println!("{}", c.summary);
    for r in &c.flagged {
        println!(
            "  flagged {} ({:.2}–{:.2} Hz), worst {:.2} dB at {:.2} Hz",
            r.label(),
            r.lower,
            r.upper,
            r.worst,
            r.worst_at
        );
    }
    assert_eq!(c.status, Status::Flag);
    // resonance of the low-level set at 15.9 Hz, of the high-level set at 15.1 Hz:
    // both in flagged bands; the stiffness line (2 Hz, ≈0.92 dB) and mass line (50 Hz, ≈0.1 dB) pass
    let in_flag = |f: f64| c.flagged.iter().any(|r| f >= r.lower && f < r.upper);
    assert!(in_flag(15.9) && in_flag(15.1));
    assert!(!in_flag(2.0) && !in_flag(50.0));
    // a linear spring (k3 = 0) passes at any amplitude
    let lin = audit_linearity(
        &duffing_linearised(&f, 0.0, 1e-4),
        &duffing_linearised(&f, 0.0, x_hi),
        &AuditOptions::default(),
    )
    .unwrap();
    assert_eq!(lin.status, Status::Pass);
    // a tighter tolerance also catches the 0.92 dB stiffness change at low frequency
    let tight = AuditOptions {
        linearity_tol_db: 0.5,
        ..AuditOptions::default()
    };
    let t = audit_linearity(&low, &high, &tight).unwrap();
    assert!(t.flagged.iter().any(|r| 2.0 >= r.lower && 2.0 < r.upper));
    let rep = audit_pair(&low, &high, &AuditOptions::default()).unwrap();
    assert_eq!(rep.check("linearity").unwrap().status, Status::Flag);
}

#[test]
fn low_coherence_is_flagged() {
    let mut h = clean_two_dof(&grid(1.0, 100.0, 0.5));
    let mut coh = vec![0.98; h.data.len()];
    for k in 0..h.n_lines() {
        if (40.0..=45.0).contains(&h.freqs[k]) {
            coh[h.idx(k, 1, 0)] = 0.6;
        }
    }
    h.coherence = Some(coh);
    let c = check_coherence(&h, &AuditOptions::default());
    println!("{}", c.summary);
    assert_eq!(c.status, Status::Flag);
    assert_eq!(c.flagged.len(), 1);
    assert_eq!(c.flagged[0].first_band, "40");
    assert_eq!(c.flagged[0].worst, 0.6);
    assert_eq!(c.flagged[0].lines, 11);
    let loose = AuditOptions {
        coherence_min: 0.5,
        ..AuditOptions::default()
    };
    assert_eq!(check_coherence(&h, &loose).status, Status::Pass);
    h.coherence = None;
    assert_eq!(
        check_coherence(&h, &AuditOptions::default()).status,
        Status::NotApplicable
    );
}

#[test]
fn condition_numbers_match_numpy_and_flag_near_singular() {
    // Reference: numpy.linalg.cond of the numpy-built five-mass receptance.
    let v: serde_json::Value =
        serde_json::from_str(&common::run_py("predict_reference.py", &["1e-3", "0"])).unwrap();
    let freqs: Vec<f64> = v["freqs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect();
    let d: Vec<Dof> = (0..5)
        .map(|i| Dof::new("rig", &i.to_string(), Direction::Z))
        .collect();
    let mut h = FrfSet::zeros(
        "rig",
        freqs.clone(),
        d.clone(),
        d,
        Quantity::Displacement,
        Quantity::Force,
    );
    for k in 0..freqs.len() {
        for i in 0..5 {
            for j in 0..5 {
                let e = &v["H"][k][i][j];
                h.set(
                    k,
                    i,
                    j,
                    Complex64::new(e[0].as_f64().unwrap(), e[1].as_f64().unwrap()),
                );
            }
        }
    }
    let ours = condition_numbers(&h);
    let mut worst: f64 = 0.0;
    for (k, c) in ours.iter().enumerate() {
        let want = v["cond"][k].as_f64().unwrap();
        worst = worst.max((c - want).abs() / want);
    }
    println!("condition numbers vs numpy.linalg.cond: largest relative difference {worst:e}; range {:.1}..{:.1}",
        ours.iter().cloned().fold(f64::INFINITY, f64::min), ours.iter().cloned().fold(0.0, f64::max));
    assert!(worst <= 1e-10, "{worst:e}");
    // a 2×2 matrix whose rows become nearly equal between 100 and 120 Hz
    let f = grid(50.0, 200.0, 1.0);
    let dd = vec![
        Dof::new("i", "a", Direction::Z),
        Dof::new("i", "b", Direction::Z),
    ];
    let mut m = FrfSet::zeros(
        "iface",
        f.clone(),
        dd.clone(),
        dd,
        Quantity::Displacement,
        Quantity::Force,
    );
    for (k, fk) in f.iter().enumerate() {
        let e = if (100.0..=120.0).contains(fk) {
            1e-5
        } else {
            0.5
        };
        m.set(k, 0, 0, Complex64::new(1.0, 0.1));
        m.set(k, 0, 1, Complex64::new(1.0, 0.1));
        m.set(k, 1, 0, Complex64::new(1.0, 0.1));
        m.set(k, 1, 1, Complex64::new(1.0 + e, 0.1));
    }
    m.set(110 - 50, 1, 1, Complex64::new(1.0, 0.1)); // exactly singular at 110 Hz
    let c = check_conditioning(&m, &AuditOptions::default());
    println!("{}", c.summary);
    let back: CheckResult = serde_json::from_str(&serde_json::to_string(&c).unwrap()).unwrap();
    assert_eq!(back.flagged[0].worst, f64::MAX);
    assert_eq!(c.status, Status::Flag);
    assert_eq!(c.flagged.len(), 1);
    assert_eq!(c.flagged[0].lines, 21);
    assert_eq!(
        check_conditioning(&h.select(&[0, 1], &[2, 3]), &AuditOptions::default()).status,
        Status::NotApplicable
    );
}

#[test]
fn condition_numbers_match_numpy_cond_where_singular_values_cluster() {
    // Reference: numpy.linalg.cond(A, 2) (tests/py/svd_reference.py) of 6 × 6
    // complex matrices Q diag(s) Wᴴ per line: s spread from 1 to 0.1, and s
    // in two clusters (three near 1, three near 0.03), the case where
    // nalgebra 0.35's SVD with singular vectors is wrong in the fourth digit
    // (its values-only path, which the audit used, was not off on these).
    let d = common::scratch("audit_checks_cond");
    common::run_py("svd_reference.py", &[d.to_str().unwrap()]);
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("svd_reference.json")).unwrap())
            .unwrap();
    for case in ["audit_spread", "audit_clustered"] {
        let c = &v[case];
        let freqs: Vec<f64> = c["freqs"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap())
            .collect();
        let dofs: Vec<Dof> = (1..=6)
            .map(|i| Dof::new("seat", &i.to_string(), Direction::Z))
            .collect();
        let mut h = FrfSet::zeros(
            "interface",
            freqs.clone(),
            dofs.clone(),
            dofs,
            Quantity::Displacement,
            Quantity::Force,
        );
        for k in 0..freqs.len() {
            for i in 0..6 {
                for j in 0..6 {
                    let e = &c["A"][k][i][j];
                    let z = Complex64::new(e[0].as_f64().unwrap(), e[1].as_f64().unwrap());
                    h.set(k, i, j, z);
                }
            }
        }
        let ours = condition_numbers(&h);
        let mut worst: f64 = 0.0;
        for (k, got) in ours.iter().enumerate() {
            let want = c["cond"][k].as_f64().unwrap();
            worst = worst.max((got - want).abs() / want);
        }
        println!("{case}: condition numbers vs numpy.linalg.cond: largest relative difference {worst:.1e}");
        assert!(worst <= 1e-10, "{case}: {worst:e}");
        // the check compares them with its limit
        let strict = AuditOptions {
            condition_max: 20.0,
            ..AuditOptions::default()
        };
        let want = if case == "audit_spread" {
            Status::Pass
        } else {
            Status::Flag
        };
        assert_eq!(check_conditioning(&h, &strict).status, want);
    }
}

#[test]
fn coarse_resolution_and_uneven_grid_are_flagged() {
    // ζ = c/(2√(km)) = 1/(2·100) = 0.005; half-power bandwidth 2ζf_n ≈ 0.16 Hz (Ewins 2000)
    let fine = sdof(&grid(5.0, 30.0, 0.01), 1.0, 1e4, 1.0);
    let coarse = sdof(&grid(5.0, 30.0, 0.5), 1.0, 1e4, 1.0);
    let cf = check_grid(&fine, &AuditOptions::default());
    let cc = check_grid(&coarse, &AuditOptions::default());
    println!("fine: {}\ncoarse: {}", cf.summary, cc.summary);
    assert_eq!(cf.status, Status::Pass);
    assert_eq!(cc.status, Status::Flag);
    assert!(cc.flagged.iter().any(|r| 15.9 >= r.lower && 15.9 < r.upper));
    let mut fl = grid(5.0, 30.0, 0.01);
    fl.extend([31.0, 33.0]);
    let uneven = sdof(&fl, 1.0, 1e4, 1.0);
    let cu = check_grid(&uneven, &AuditOptions::default());
    assert_eq!(cu.status, Status::Flag);
    assert!(cu.summary.contains("uneven"));
    // import warnings and missing entries are reported
    let mut w = clean_two_dof(&grid(1.0, 10.0, 1.0));
    w.warnings.push("column 3: unit 'g' assumed".into());
    w.present[1] = false;
    let ci = check_import(&w);
    assert_eq!(ci.status, Status::Flag);
    assert_eq!(ci.details.len(), 2);
    // a side of unknown quantity cannot be unit-checked
    let mut u = clean_two_dof(&grid(1.0, 10.0, 1.0));
    u.in_qty = Quantity::Dimensionless;
    let cu = check_import(&u);
    assert_eq!(cu.status, Status::Flag);
    assert!(cu.summary.contains("dimensionless"), "{}", cu.summary);
    assert_eq!(
        check_passivity(&u, &AuditOptions::default()).status,
        Status::NotApplicable
    );
}

/// Passivity looks at the driving points only: a set with more outputs
/// than inputs, its inputs in another order than its outputs and a sign
/// flipped, gives the check of the square set of its driving points. A
/// damper of negative rate to ground at DOF 2 of a three-mass chain feeds
/// energy in, so Re(Y) < 0 at driving points (textbook: the power
/// ½ Re(Y) |F|² delivered by a point force).
#[test]
fn passivity_reads_the_driving_points_of_a_wide_set() {
    let f = grid(1.0, 40.0, 0.25);
    let k = DMatrix::from_row_slice(3, 3, &[2e4, -1e4, 0.0, -1e4, 2e4, -1e4, 0.0, -1e4, 1e4]);
    let c = DMatrix::from_row_slice(3, 3, &[3.0, 0.0, 0.0, 0.0, -12.0, 0.0, 0.0, 0.0, 3.0]);
    let h = lumped("chain", &f, &[1.0, 1.0, 1.0], &k, &c);
    // the driving points at DOFs 2 and 3
    let square = check_passivity(&h.select(&[1, 2], &[1, 2]), &AuditOptions::default());
    assert_eq!(square.status, Status::Flag);
    assert!(!square.flagged.is_empty());
    // outputs 3, 1, 2 of all three; inputs 2 and 3 only, the input at DOF 3
    // with its sign flipped (the driving point's sign is taken out)
    let mut wide = h.select(&[2, 0, 1], &[1, 2]);
    wide.inputs[1].positive = false;
    for l in 0..f.len() {
        for i in 0..3 {
            let v = wide.get(l, i, 1);
            wide.set(l, i, 1, -v);
        }
    }
    let r = check_passivity(&wide, &AuditOptions::default());
    assert_eq!(r.status, square.status);
    // the same ranges, lines and worst values; a range's entries are listed
    // in the set's output order
    let sorted = |v: &[FlaggedRange]| -> Vec<FlaggedRange> {
        v.iter()
            .map(|x| {
                let mut x = x.clone();
                x.entries.sort();
                x
            })
            .collect()
    };
    assert_eq!(sorted(&r.flagged), sorted(&square.flagged));
    assert!(
        r.summary.contains(" of 2 driving point(s)"),
        "{}",
        r.summary
    );
}
