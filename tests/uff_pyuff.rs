//! Cross-checks of UFF 58 / 58b reading and writing against pyuff.
//! reference: pyuff 2.5.8 (PyPI)

mod common;

use mortise::frf::{Direction, Dof, FrfSet, SignalKind};
use mortise::io::uff58;
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::{json, Value};

fn dir_of(code: i64) -> (Direction, bool) {
    let d = match code.abs() {
        1 => Direction::X,
        2 => Direction::Y,
        3 => Direction::Z,
        4 => Direction::RX,
        5 => Direction::RY,
        6 => Direction::RZ,
        _ => Direction::Scalar,
    };
    (d, code >= 0)
}

fn dof(comp: &str, node: i64, code: i64) -> Dof {
    let (d, pos) = dir_of(code);
    let mut x = Dof::new(comp, &node.to_string(), d);
    x.positive = pos;
    x
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

/// Factor to SI of the labels pyuff was given.
fn label_factor(num: &str, den: &str) -> f64 {
    let n = match num {
        // ISO 80000-3: standard acceleration of gravity 9.80665 m/s^2
        "g" => 9.80665,
        // SI prefix milli
        "mm/s" => 1e-3,
        _ => 1.0,
    };
    assert_eq!(den.trim(), "N");
    n
}

fn rel(a: Complex64, b: Complex64) -> f64 {
    (a - b).norm() / b.norm().max(1e-300)
}

#[test]
fn mortise_reads_files_written_by_pyuff() {
    let dir = common::scratch("uff_pyuff_read");
    let d = dir.to_str().unwrap();
    common::run_py("uff_pyuff_write.py", &[d]);
    let exp: Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("expected.json")).unwrap()).unwrap();
    // reference: pyuff 2.5.8 (PyPI)
    assert_eq!(exp["pyuff"], "2.5.8");
    let files = exp["files"].as_array().unwrap();
    assert_eq!(files.len(), 10);
    let mut checked = 0;
    for f in files {
        let name = f["name"].as_str().unwrap();
        let binary = f["binary"].as_bool().unwrap();
        let double = f["double"].as_bool().unwrap();
        let bytes = std::fs::read(dir.join(name)).unwrap();
        assert_eq!(uff58::looks_like_uff(&bytes), Some(binary), "{name}");
        let (sets, warns) = uff58::read(&bytes, name, "p").unwrap_or_else(|e| panic!("{e}"));
        for s in &sets {
            assert_eq!(
                s.provenance[0].format,
                if binary {
                    "uff58-binary"
                } else {
                    "uff58-ascii"
                }
            );
            assert_eq!(s.provenance[0].file, name);
            assert_eq!(s.name, "pyuff check");
            assert!(s.freqs.len() > 1);
        }
        let dsets = f["datasets"].as_array().unwrap();
        // pyuff 2.5.8 writes the 58b byte count as points x 8 even for
        // complex or uneven data; mortise reads record 7 and says so.
        let real_even = dsets[0]["orig_im"]
            .as_array()
            .unwrap()
            .iter()
            .all(|v| v.as_f64() == Some(0.0))
            && name.contains("_even");
        let remark = warns.iter().any(|w| w.contains("58b header says"));
        assert_eq!(remark, binary && !real_even, "{name}: {warns:?}");
        for ds in dsets {
            let ft = ds["func_type"].as_i64().unwrap();
            let out = dof(
                "p",
                ds["rsp_node"].as_i64().unwrap(),
                ds["rsp_dir"].as_i64().unwrap(),
            );
            let inp = dof(
                "p",
                ds["ref_node"].as_i64().unwrap(),
                ds["ref_dir"].as_i64().unwrap(),
            );
            if ft == 9 {
                // PSD: a spectrum set, one dimensionless reference
                let s = sets
                    .iter()
                    .find(|s| s.signal == Some(SignalKind::Psd))
                    .expect("PSD set");
                let i = s.out_index(&out).unwrap();
                assert_eq!(s.inputs, vec![Dof::scalar("", "ref")]);
                assert_eq!(s.out_qty, Quantity::Acceleration);
                let re = floats(&ds["re"]);
                // ISO 80000-3: 1 g = 9.80665 m/s^2, so 1 g^2/Hz = 9.80665^2 (m/s^2)^2/Hz
                let fac = 9.80665f64 * 9.80665;
                for (k, r) in re.iter().enumerate() {
                    let got = s.get(k, i, 0);
                    // reference: pyuff 2.5.8 (PyPI)
                    assert!((got.re - r * fac).abs() <= 1e-12 * (r * fac).abs() && got.im == 0.0);
                }
                checked += 1;
                continue;
            }
            let s = sets
                .iter()
                .find(|s| {
                    s.signal.is_none() && s.out_index(&out).is_some() && s.in_index(&inp).is_some()
                })
                .unwrap_or_else(|| panic!("{name}: no set holds {out} / {inp}"));
            let i = s.out_index(&out).unwrap();
            let j = s.in_index(&inp).unwrap();
            // nodes and directions (with sign) as pyuff reads them
            assert_eq!(s.outputs[i], out);
            assert_eq!(s.inputs[j], inp);
            let x = floats(&ds["x"]);
            assert_eq!(s.freqs.len(), x.len(), "{name}");
            for (a, b) in s.freqs.iter().zip(&x) {
                // reference: pyuff 2.5.8 (PyPI), abscissa as pyuff reads it
                assert!((a - b).abs() <= 1e-12 * b.abs(), "{name}: {a} vs {b}");
            }
            let (re, im) = (floats(&ds["re"]), floats(&ds["im"]));
            let (ore, oim) = (floats(&ds["orig_re"]), floats(&ds["orig_im"]));
            if ft == 6 {
                let coh = s.coherence.as_ref().expect("coherence attached");
                for k in 0..x.len() {
                    let c = coh[s.idx(k, i, j)];
                    // reference: pyuff 2.5.8 (PyPI)
                    assert!(
                        (c - re[k]).abs() <= 1e-12 * re[k].abs(),
                        "{name}: {c} vs {}",
                        re[k]
                    );
                }
                checked += 1;
                continue;
            }
            assert_eq!(ft, 4);
            let fac = label_factor(
                ds["num_units"].as_str().unwrap(),
                ds["den_units"].as_str().unwrap(),
            );
            assert!(s.is_present(i, j));
            for k in 0..x.len() {
                let got = s.get(k, i, j);
                let want = Complex64::new(re[k], im[k]) * fac;
                // reference: pyuff 2.5.8 (PyPI): the values pyuff reads back, ≤ 1e-12
                assert!(rel(got, want) <= 1e-12, "{name} line {k}: {got} vs {want}");
                let orig = Complex64::new(ore[k], oim[k]) * fac;
                // what pyuff was given: its ASCII doubles keep 12 significant
                // digits ('%20.11e'), single precision 6 ('%13.5e'); 58b is exact
                let tol = match (binary, double) {
                    (true, _) => 1e-15,
                    (false, true) => 1e-11,
                    (false, false) => 1e-5,
                };
                assert!(rel(got, orig) <= tol, "{name} line {k}: {got} vs {orig}");
            }
            checked += 1;
        }
    }
    assert_eq!(checked, 2 * (12 + 2 + 1 + 1) + 2 + 2);
}

fn mortise_sets() -> Vec<FrfSet> {
    // A: mobility 2x2 on an even grid, values needing all 17 digits, with coherence
    let freqs: Vec<f64> = (0..120).map(|k| 1.0 + 0.5 * k as f64).collect();
    let outs = vec![Dof::new("m", "12", Direction::Z), {
        let mut d = Dof::new("m", "7", Direction::RX);
        d.positive = false;
        d
    }];
    let ins = vec![Dof::new("m", "3", Direction::X), {
        let mut d = Dof::new("m", "4", Direction::Y);
        d.positive = false;
        d
    }];
    let mut a = FrfSet::zeros(
        "wall bracket",
        freqs.clone(),
        outs,
        ins,
        Quantity::Velocity,
        Quantity::Force,
    );
    let mut coh = vec![0.0; a.data.len()];
    for k in 0..a.n_lines() {
        let w = a.omega(k);
        for i in 0..2 {
            for j in 0..2 {
                let kk = 1.0e5 * (1.0 + i as f64 + 0.3 * j as f64);
                let h = Complex64::new(0.0, w) / Complex64::new(kk - w * w * 2.3, w * 17.0);
                a.set(k, i, j, h);
                let n = a.idx(k, i, j);
                coh[n] = 0.5 + 0.5 / (1.0 + (k + i + j) as f64).sqrt();
            }
        }
    }
    a.coherence = Some(coh);
    // B: accelerance on an uneven, computed grid (not exact in 13 columns)
    let g: Vec<f64> = (0..30).map(|k| 10.0 * 1.2f64.powi(k)).collect();
    let mut b = FrfSet::zeros(
        "isolator",
        g,
        vec![Dof::new("m", "101", Direction::Z)],
        vec![Dof::new("m", "102", Direction::Z)],
        Quantity::Acceleration,
        Quantity::Force,
    );
    for k in 0..b.n_lines() {
        let w = b.omega(k);
        b.set(k, 0, 0, Complex64::new(-w * w / 3.0e4, w * 1e-3 / 7.0));
    }
    // C: a force spectrum (peak)
    let mut c = FrfSet::zeros(
        "fan force",
        freqs,
        vec![Dof::new("m", "12", Direction::Z)],
        vec![Dof::scalar("", "ref")],
        Quantity::Force,
        Quantity::Dimensionless,
    );
    c.signal = Some(SignalKind::Peak);
    for k in 0..c.n_lines() {
        c.set(
            k,
            0,
            0,
            Complex64::new(1.0 / (k as f64 + 3.0), (k as f64).cos() / 11.0),
        );
    }
    // D: an acceleration PSD
    let mut p = FrfSet::zeros(
        "fan psd",
        c.freqs.clone(),
        vec![Dof::new("m", "30", Direction::Z)],
        vec![Dof::scalar("", "ref")],
        Quantity::Acceleration,
        Quantity::Dimensionless,
    );
    p.signal = Some(SignalKind::Psd);
    for k in 0..p.n_lines() {
        p.set(
            k,
            0,
            0,
            Complex64::new(1e-4 / (1.0 + k as f64).powf(0.7), 0.0),
        );
    }
    vec![a, b, c, p]
}

fn expected_json(sets: &[FrfSet], layout: uff58::Layout, x_tol: f64, y_tol: f64) -> Value {
    let mut list = Vec::new();
    for s in sets {
        for ds in uff58::datasets_of(s, layout).unwrap() {
            list.push(json!({
                "func_type": ds.func_type,
                "rsp_node": ds.rsp_node, "rsp_dir": ds.rsp_dir,
                "ref_node": ds.ref_node, "ref_dir": ds.ref_dir,
                "num_units": ds.axes[1].units,
                "den_units": if ds.axes[2].units.is_empty() { "NONE".to_string() } else { ds.axes[2].units.clone() },
                "x": ds.x,
                "re": ds.y.iter().map(|v| v.re).collect::<Vec<_>>(),
                "im": ds.y.iter().map(|v| v.im).collect::<Vec<_>>(),
            }));
        }
    }
    json!({"datasets": list, "x_rel_tol": x_tol, "y_rel_tol": y_tol})
}

#[test]
fn pyuff_reads_files_written_by_mortise() {
    let dir = common::scratch("uff_pyuff_write");
    let sets = mortise_sets();
    // ASCII in the layout's columns: ordinates keep >= 13 significant digits
    // (≤ 1e-12 asked); the uneven computed grid keeps >= 10 in its 13
    // columns (≤ 5e-10). 58b: exact.
    for (name, layout, xt, yt) in [
        (
            "m_ascii.uff",
            uff58::Layout::Ascii(uff58::AsciiLayout::Standard),
            5e-10,
            1e-12,
        ),
        ("m_binary.uff", uff58::Layout::Binary, 0.0, 0.0),
    ] {
        let bytes = uff58::write_with(&sets, layout).unwrap();
        let p = dir.join(name);
        std::fs::write(&p, &bytes).unwrap();
        let e = expected_json(&sets, layout, xt, yt);
        let n = e["datasets"].as_array().unwrap().len();
        // 4 FRFs + 4 coherences + 1 FRF + 1 spectrum + 1 PSD
        assert_eq!(n, 11);
        let jp = dir.join(format!("{name}.json"));
        std::fs::write(&jp, e.to_string()).unwrap();
        // reference: pyuff 2.5.8 (PyPI)
        let out = common::run_py(
            "uff_pyuff_read.py",
            &[p.to_str().unwrap(), jp.to_str().unwrap()],
        );
        assert!(out.starts_with(&format!("ok {n} datasets")), "{out}");
        assert!(!out.contains("y=nan"), "{out}");
        eprintln!("{name}: {}", out.trim());
        // and mortise reads its own file back
        let (back, _) = uff58::read(&bytes, name, "m").unwrap();
        assert_eq!(back.len(), 4);
    }
}
