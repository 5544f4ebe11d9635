//! UFF → our CSV → bundle → UFF 58b: every f64 comes back bit for bit.
//! The source files are written by pyuff (a reference library outside
//! mortise), in ASCII and in binary.
//!

mod common;

use mortise::io::{self, ExportFormat, Format, ImportOptions};
use mortise::{Direction, Dof, FrfSet, Quantity};

fn bits_equal(a: &FrfSet, b: &FrfSet, stage: &str) {
    assert_eq!(a.outputs, b.outputs, "{stage}: outputs");
    assert_eq!(a.inputs, b.inputs, "{stage}: inputs");
    assert_eq!(
        (a.out_qty, a.in_qty),
        (b.out_qty, b.in_qty),
        "{stage}: quantities"
    );
    assert_eq!(a.present, b.present, "{stage}: present");
    assert_eq!(a.freqs.len(), b.freqs.len(), "{stage}: lines");
    for (x, y) in a.freqs.iter().zip(&b.freqs) {
        assert_eq!(x.to_bits(), y.to_bits(), "{stage}: frequency {x} vs {y}");
    }
    for i in 0..a.n_out() {
        for j in 0..a.n_in() {
            if !a.is_present(i, j) {
                continue;
            }
            for k in 0..a.n_lines() {
                let (x, y) = (a.get(k, i, j), b.get(k, i, j));
                assert_eq!(x.re.to_bits(), y.re.to_bits(), "{stage}: re line {k}");
                assert_eq!(x.im.to_bits(), y.im.to_bits(), "{stage}: im line {k}");
            }
        }
    }
}

fn round_trip(binary: bool) {
    let d = common::scratch(if binary { "roundtrip_b" } else { "roundtrip_a" });
    let src = d.join("casing.uff");
    let src_s = src.to_str().unwrap();
    let args: Vec<&str> = if binary {
        vec![src_s, "binary"]
    } else {
        vec![src_s]
    };
    let exp: serde_json::Value =
        serde_json::from_str(&common::run_py("roundtrip_uff.py", &args)).unwrap();
    let bytes = std::fs::read(&src).unwrap();
    let opts = ImportOptions::default();
    let l0 = io::load(&bytes, "casing.uff", &opts).unwrap();
    assert_eq!(
        l0.format,
        if binary {
            Format::Uff58Binary
        } else {
            Format::Uff58Ascii
        }
    );
    assert_eq!(
        l0.sets.len(),
        1,
        "two FRFs of one grid and quantity pair form one set"
    );
    let s0 = &l0.sets[0];
    assert_eq!(
        (s0.out_qty, s0.in_qty),
        (Quantity::Displacement, Quantity::Force)
    );
    // the values pyuff was given (ASCII UFF holds 12 significant digits; binary is exact)
    let out = s0
        .out_index(&Dof::new("casing", "1", Direction::Z))
        .unwrap();
    for r in ["1", "2"] {
        let j = s0.in_index(&Dof::new("casing", r, Direction::Z)).unwrap();
        for (k, v) in exp["values"][r].as_array().unwrap().iter().enumerate() {
            let (re, im) = (v[0].as_f64().unwrap(), v[1].as_f64().unwrap());
            let got = s0.get(k, out, j);
            let tol = if binary {
                0.0
            } else {
                1e-11 * (re.abs() + im.abs())
            };
            assert!(
                (got.re - re).abs() <= tol && (got.im - im).abs() <= tol,
                "ref {r} line {k}"
            );
        }
    }
    let csv = io::save(&l0.sets, ExportFormat::Csv).unwrap();
    let l1 = io::load(&csv, "casing.csv", &opts).unwrap();
    bits_equal(s0, &l1.sets[0], "UFF → CSV");
    let bundle = io::save(&l1.sets, ExportFormat::Bundle).unwrap();
    let l2 = io::load(&bundle, "casing.json", &opts).unwrap();
    bits_equal(s0, &l2.sets[0], "CSV → bundle");
    let uff = io::save(&l2.sets, ExportFormat::UffBinary).unwrap();
    // the component travels in the UFF entity names, not in the file name
    let l3 = io::load(&uff, "casing_out.uff", &opts).unwrap();
    assert_eq!(l3.format, Format::Uff58Binary);
    bits_equal(s0, &l3.sets[0], "bundle → UFF 58b");
    // our CSV, the bundle and our UFF (in ID lines 3-5) carry the provenance chain
    let files: Vec<&str> = l2.sets[0]
        .provenance
        .iter()
        .map(|p| p.file.as_str())
        .collect();
    assert_eq!(files, vec!["casing.uff", "casing.csv", "casing.json"]);
    let files: Vec<&str> = l3.sets[0]
        .provenance
        .iter()
        .map(|p| p.file.as_str())
        .collect();
    assert_eq!(
        files,
        vec!["casing.uff", "casing.csv", "casing.json", "casing_out.uff"]
    );
}

#[test]
fn ascii_uff_to_csv_to_bundle_to_binary_uff_is_bit_exact() {
    round_trip(false);
}

#[test]
fn binary_uff_to_csv_to_bundle_to_binary_uff_is_bit_exact() {
    round_trip(true);
}

#[test]
fn pyuff_files_are_detected_by_content() {
    for binary in [false, true] {
        let d = common::scratch(if binary { "detect_b" } else { "detect_a" });
        let src = d.join("casing.bin");
        let s = src.to_str().unwrap();
        let args: Vec<&str> = if binary { vec![s, "binary"] } else { vec![s] };
        common::run_py("roundtrip_uff.py", &args);
        let bytes = std::fs::read(&src).unwrap();
        // the extension says nothing; the content decides
        let f = io::detect(&bytes, "casing.bin").unwrap();
        assert_eq!(
            f,
            if binary {
                Format::Uff58Binary
            } else {
                Format::Uff58Ascii
            }
        );
    }
}
