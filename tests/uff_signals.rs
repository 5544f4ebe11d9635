//! Function types beyond the FRF, unit labels as measurement and FE programs
//! write them, Latin-1 header text, datasets without DOF numbers and repeated
//! runs, read against files written by pyuff.
//! reference: pyuff 2.5.8 (PyPI), tests/py/uff_pyuff_signals.py; unit
//! factors g_n = 9.80665 m/s² (ISO 80000-3), 1 lbf = 4.4482216152605 N and
//! 1 in = 0.0254 m (1959 international yard and pound).

mod common;

use mortise::frf::SignalKind;
use mortise::io::{self, ImportOptions};
use mortise::units::Quantity;
use num_complex::Complex64;
use serde_json::Value;

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn kind_of(k: &str) -> Option<SignalKind> {
    match k {
        "frf" => None,
        "peak" => Some(SignalKind::Peak),
        "autopower" => Some(SignalKind::Autopower),
        "psd" => Some(SignalKind::Psd),
        "cross" => Some(SignalKind::Cross),
        "esd" => Some(SignalKind::Esd),
        o => panic!("kind {o}"),
    }
}

#[test]
fn every_function_type_and_label_form_reads_in_si() {
    let dir = common::scratch("uff_signals");
    let out = common::run_py("uff_pyuff_signals.py", &[dir.to_str().unwrap()]);
    let v: Value = serde_json::from_str(&out).unwrap();
    let cases = v["cases"].as_array().unwrap();
    assert!(cases.len() >= 24);
    let mut worst = 0.0f64;
    let mut types = std::collections::BTreeSet::new();
    let mut forms = std::collections::BTreeSet::new();
    for c in cases {
        let name = c["name"].as_str().unwrap();
        let path = c["file"].as_str().unwrap();
        let bytes = std::fs::read(path).unwrap();
        let loaded = io::load(&bytes, &format!("{name}.uff"), &ImportOptions::default())
            .unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(loaded.sets.len(), 1, "{name}");
        let s = &loaded.sets[0];
        assert_eq!(s.signal, kind_of(c["kind"].as_str().unwrap()), "{name}");
        let q = |k: &str| Quantity::parse(c[k].as_str().unwrap()).unwrap();
        assert_eq!(s.out_qty, q("out_qty"), "{name}");
        assert_eq!(s.in_qty, q("in_qty"), "{name}");
        assert_eq!(s.freqs, floats(&c["freqs"]), "{name}");
        let re = floats(&c["re"]);
        let im = floats(&c["im"]);
        for (k, (r, i)) in re.iter().zip(&im).enumerate() {
            let want = Complex64::new(*r, *i);
            let got = s.get(k, 0, 0);
            let e = (got - want).norm() / want.norm();
            worst = worst.max(e);
            assert!(e <= 1e-12, "{name} line {k}: {got} vs {want} ({e:.2e})");
        }
        types.insert(c["func_type"].as_i64().unwrap());
        forms.insert((
            c["ord_data_type"].as_i64().unwrap(),
            c["binary"].as_bool().unwrap(),
        ));
        // the cross spectrum keeps its reference DOF
        if s.signal == Some(SignalKind::Cross) {
            assert_eq!(s.inputs[0].to_string(), format!("{name}:2+Z"), "{name}");
        }
    }
    assert_eq!(
        types.into_iter().collect::<Vec<_>>(),
        vec![0, 2, 3, 4, 5, 9, 10, 12]
    );
    // real and complex, single and double (ASCII), double in ASCII and 58b
    // (pyuff 2.5.8 writes 58b payloads in double whatever the declared type;
    // single-precision 58b is read in tests/uff_read.rs)
    for f in [
        (2, false),
        (5, false),
        (4, false),
        (6, false),
        (4, true),
        (6, true),
    ] {
        assert!(forms.contains(&f), "ordinate type and binary {f:?}");
    }
    println!(
        "worst relative error {worst:.2e} over {} cases",
        cases.len()
    );
}

#[test]
fn latin1_header_bytes_read_with_the_right_unit() {
    // a pyuff-written FRF whose record-9 label is rewritten byte by byte in
    // Latin-1: 'mm/s\xB2/N' (0xB2 superscript two) and '\xB5m/s/N' (0xB5 micro)
    let dir = common::scratch("uff_signals_latin1");
    let out = common::run_py("uff_pyuff_signals.py", &[dir.to_str().unwrap()]);
    let v: Value = serde_json::from_str(&out).unwrap();
    let case = v["cases"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == "frf_caret")
        .unwrap();
    let bytes = std::fs::read(case["file"].as_str().unwrap()).unwrap();
    let from = b"(m/s^2)/N ";
    let at = bytes.windows(from.len()).position(|w| w == from).unwrap();
    for (label, factor, q) in [
        (&b"mm/s\xB2/N   "[..], 1e-3, Quantity::Acceleration),
        (&b"\xB5m/s/N    "[..], 1e-6, Quantity::Velocity),
    ] {
        assert_eq!(label.len(), from.len());
        let mut b = bytes.clone();
        b[at..at + from.len()].copy_from_slice(label);
        assert!(std::str::from_utf8(&b[..at + 20]).is_err());
        let l = io::load(&b, "latin1.uff", &ImportOptions::default()).unwrap();
        let s = &l.sets[0];
        assert_eq!(s.out_qty, q);
        let re = floats(&case["re"]);
        let im = floats(&case["im"]);
        for k in 0..re.len() {
            let want = Complex64::new(re[k], im[k]) * factor;
            assert!((s.get(k, 0, 0) - want).norm() <= 1e-12 * want.norm());
        }
        let w: Vec<&String> = l
            .warnings
            .iter()
            .filter(|w| w.contains("Latin-1"))
            .collect();
        assert_eq!(w.len(), 1, "{:?}", l.warnings);
        assert!(
            w[0].starts_with("latin1.uff: dataset at line 1: header text"),
            "{}",
            w[0]
        );
    }
}

#[test]
fn cross_spectra_and_esd_write_back_and_pyuff_reads_them() {
    use mortise::io::uff58;
    let dir = common::scratch("uff_signals_write");
    let out = common::run_py("uff_pyuff_signals.py", &[dir.to_str().unwrap()]);
    let v: Value = serde_json::from_str(&out).unwrap();
    for name in ["cross_g_lbf", "cross_g2", "esd_full", "psd_pa", "trans_g_g"] {
        let c = v["cases"]
            .as_array()
            .unwrap()
            .iter()
            .find(|c| c["name"] == name)
            .unwrap();
        let bytes = std::fs::read(c["file"].as_str().unwrap()).unwrap();
        let set = io::load(&bytes, &format!("{name}.uff"), &ImportOptions::default())
            .unwrap()
            .sets
            .remove(0);
        for binary in [false, true] {
            let w = uff58::write(std::slice::from_ref(&set), binary).unwrap();
            let (back, _) = uff58::read_with(&w, "back.uff", None).unwrap();
            let b = &back[0];
            assert_eq!(b.signal, set.signal, "{name}");
            assert_eq!((b.out_qty, b.in_qty), (set.out_qty, set.in_qty), "{name}");
            assert_eq!(b.inputs[0].node, set.inputs[0].node, "{name}");
            for k in 0..set.n_lines() {
                let (x, y) = (b.get(k, 0, 0), set.get(k, 0, 0));
                let e = (x - y).norm() / y.norm();
                // 58b is bit-exact; ASCII keeps ≥ 13 significant digits
                assert!(
                    if binary { e == 0.0 } else { e <= 5e-13 },
                    "{name} {binary}: {e:.2e}"
                );
            }
            if binary {
                continue;
            }
            // pyuff reads mortise's file: function type, nodes, labels, values
            let (dsets, _) = uff58::parse_datasets(&w, "back.uff").unwrap();
            let d = &dsets[0];
            let want = serde_json::json!({
                "x_rel_tol": 1e-12,
                "y_rel_tol": 5e-13,
                "datasets": [{
                    "func_type": d.func_type, "rsp_node": d.rsp_node, "rsp_dir": d.rsp_dir,
                    "ref_node": d.ref_node, "ref_dir": d.ref_dir,
                    "num_units": d.axes[1].units, "den_units": if d.axes[2].units.is_empty() { "NONE".to_string() } else { d.axes[2].units.clone() },
                    "x": d.x, "re": d.y.iter().map(|z| z.re).collect::<Vec<_>>(),
                    "im": d.y.iter().map(|z| z.im).collect::<Vec<_>>(),
                }]
            });
            let f = dir.join(format!("{name}-mortise.uff"));
            let j = dir.join(format!("{name}-mortise.json"));
            std::fs::write(&f, &w).unwrap();
            std::fs::write(&j, want.to_string()).unwrap();
            let r = common::run_py(
                "uff_pyuff_read.py",
                &[f.to_str().unwrap(), j.to_str().unwrap()],
            );
            assert!(r.starts_with("ok 1 datasets"), "{name}: {r}");
        }
    }
}

#[test]
fn time_responses_are_a_separate_typed_list() {
    let dir = common::scratch("uff_signals_time");
    let out = common::run_py("uff_pyuff_signals.py", &[dir.to_str().unwrap()]);
    let v: Value = serde_json::from_str(&out).unwrap();
    for c in v["time"].as_array().unwrap() {
        let name = c["name"].as_str().unwrap();
        let bytes = std::fs::read(c["file"].as_str().unwrap()).unwrap();
        let l = io::load(&bytes, &format!("{name}.uff"), &ImportOptions::default())
            .unwrap_or_else(|e| panic!("{name}: {e}"));
        // never a set on a frequency grid
        assert!(l.sets.is_empty(), "{name}");
        assert_eq!(l.time_histories.len(), 1, "{name}");
        let t = &l.time_histories[0];
        assert_eq!(t.quantity, Some(Quantity::Acceleration), "{name}");
        assert_eq!(t.unit, "m/s^2");
        assert_eq!(
            t.channel.as_ref().unwrap().to_string(),
            format!("{name}:5+Y")
        );
        assert_eq!(t.times, floats(&c["times"]), "{name}");
        let want = floats(&c["values"]);
        assert_eq!(t.values.len(), 64);
        for (a, b) in t.values.iter().zip(&want) {
            assert!((a - b).abs() <= 1e-12 * b.abs(), "{name}: {a} vs {b}");
        }
        let dt = c["dt"].as_f64().unwrap();
        assert_eq!(t.sample_rate_hz, Some(1.0 / dt));
        // the increment as record 7 holds it (13 columns: 9.76563e-04 s)
        assert!((t.duration_s - 63.0 * dt).abs() < 1e-15);
        // inspect's line and the card's summary say what it is
        let s = mortise::summary::time_summary(t).text();
        assert!(
            s.contains("64 samples at 1024.0005 Hz, 0.061523 s") && s.contains("mortise spectrum"),
            "{s}"
        );
        // the plain FRF reader refuses a file of time data, naming it
        let e = mortise::io::uff58::read(&bytes, "t.uff", "t").unwrap_err();
        assert!(
            e.to_string().contains("function type 1 (time response)"),
            "{e}"
        );
    }
}

#[test]
fn transmissibility_converts_as_a_ratio_of_like_quantities() {
    let dir = common::scratch("uff_signals_trans");
    let out = common::run_py("uff_pyuff_signals.py", &[dir.to_str().unwrap()]);
    let v: Value = serde_json::from_str(&out).unwrap();
    let c = v["cases"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == "trans_g_g")
        .unwrap();
    let bytes = std::fs::read(c["file"].as_str().unwrap()).unwrap();
    let s = io::load(&bytes, "t.uff", &ImportOptions::default())
        .unwrap()
        .sets
        .remove(0);
    // a_out/a_in -> v_out/a_in divides by iω (e^{+iωt}); v_out/v_in equals a_out/a_in
    let va = s
        .to_quantities(Quantity::Velocity, Quantity::Acceleration)
        .unwrap();
    let vv = s
        .to_quantities(Quantity::Velocity, Quantity::Velocity)
        .unwrap();
    for k in 0..s.n_lines() {
        let iw = Complex64::new(0.0, 2.0 * std::f64::consts::PI * s.freqs[k]);
        let want = s.get(k, 0, 0) / iw;
        assert!((va.get(k, 0, 0) - want).norm() <= 1e-14 * want.norm());
        assert_eq!(vv.get(k, 0, 0), s.get(k, 0, 0));
    }
    // a force side is not a transmissibility's: refused
    assert!(s
        .to_quantities(Quantity::Force, Quantity::Acceleration)
        .is_err());
    // cross spectra and ESD are not converted by (iω)^n
    let c = v["cases"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == "cross_g2")
        .unwrap();
    let bytes = std::fs::read(c["file"].as_str().unwrap()).unwrap();
    let x = io::load(&bytes, "x.uff", &ImportOptions::default())
        .unwrap()
        .sets
        .remove(0);
    let e = x
        .to_quantities(Quantity::Velocity, Quantity::Velocity)
        .unwrap_err();
    assert!(e.message.contains("is a cross spectrum"), "{}", e.message);
}
