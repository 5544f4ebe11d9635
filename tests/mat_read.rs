//! MAT-files written by scipy.io.savemat (level 5, with and without
//! compression) and one big-endian file written by hand (checked by
//! scipy.io.loadmat in the script) read with the values numpy wrote:
//! ≤ 1e-12 relative for doubles (the reader does no arithmetic on them but a
//! unit factor, g_n = 9.80665 m/s² from ISO 80000-3, and 2π for rad/s), and
//! single precision exactly as float32 widened to f64. References:
//! `tests/py/mat_savemat.py`.

mod common;

use mortise::frf::FrfSet;
use mortise::io::{self, Format, ImportOptions};
use serde_json::{json, Value};
use std::path::PathBuf;

fn fixtures(test: &str) -> (PathBuf, Value) {
    let d = common::scratch(&format!("mat_read_{test}"));
    let out = common::run_py("mat_savemat.py", &[d.to_str().unwrap()]);
    (d, serde_json::from_str(&out).unwrap())
}

fn load(d: &std::path::Path, name: &str, mat: Value) -> FrfSet {
    let bytes = std::fs::read(d.join(name)).unwrap();
    let opts: ImportOptions = serde_json::from_value(json!({ "mat": mat })).unwrap();
    let l = io::load(&bytes, name, &opts).unwrap_or_else(|e| panic!("{name}: {e}"));
    assert_eq!(l.format, Format::Mat);
    assert_eq!(l.sets.len(), 1);
    l.sets.into_iter().next().unwrap()
}

fn close(a: f64, b: f64, what: &str) {
    let tol = 1e-12 * b.abs().max(1e-300);
    assert!((a - b).abs() <= tol, "{what}: {a} vs {b}");
}

fn check_column(s: &FrfSet, i: usize, j: usize, reference: &Value, factor: f64, what: &str) {
    let r = reference.as_array().unwrap();
    assert_eq!(r.len(), s.n_lines(), "{what}");
    for (k, v) in r.iter().enumerate() {
        let (re, im) = (v[0].as_f64().unwrap(), v[1].as_f64().unwrap());
        let got = s.get(k, i, j);
        close(got.re, re * factor, &format!("{what} re line {k}"));
        close(got.im, im * factor, &format!("{what} im line {k}"));
    }
}

fn check_freqs(s: &FrfSet, reference: &Value, what: &str) {
    let r: Vec<f64> = serde_json::from_value(reference.clone()).unwrap();
    assert_eq!(r.len(), s.freqs.len(), "{what}");
    for (a, b) in s.freqs.iter().zip(&r) {
        close(*a, *b, what);
    }
}

#[test]
fn scipy_mat_files_read_with_the_values_numpy_wrote() {
    let (d, refs) = fixtures("values");

    // 3-D outputs × inputs × lines, labels from cell arrays, plain and compressed
    for name in ["oif.mat", "oif_z.mat"] {
        let s = load(
            &d,
            name,
            json!({"freq": "f", "frf": "H", "layout": "out-in-freq",
                   "out_dofs_var": "outs", "in_dofs_var": "ins",
                   "out_qty": "acceleration", "in_qty": "force"}),
        );
        let r = &refs[name];
        check_freqs(&s, &r["freqs"], name);
        let outs: Vec<String> = s.outputs.iter().map(|d| d.to_string()).collect();
        let ins: Vec<String> = s.inputs.iter().map(|d| d.to_string()).collect();
        assert_eq!(Value::from(outs), r["outputs"], "{name}");
        assert_eq!(Value::from(ins), r["inputs"], "{name}");
        assert!(s.is_complete());
        for i in 0..3 {
            for j in 0..2 {
                check_column(&s, i, j, &r["values"][format!("{i},{j}")], 1.0, name);
            }
        }
        // the provenance records the mapping
        assert!(
            s.provenance[0]
                .options
                .contains("\"layout\":\"out-in-freq\""),
            "{}",
            s.provenance[0].options
        );
    }

    // lines × outputs × inputs, int32 frequency vector, char-matrix labels, g/N
    let s = load(
        &d,
        "foi.mat",
        json!({"freq": "freq_hz", "frf": "A", "layout": "freq-out-in",
               "out_dofs_var": "labels", "in_dofs": ["wall:1+Z", "wall:2+Z"],
               "out_qty": "acceleration", "in_qty": "force", "unit": "g/N"}),
    );
    check_freqs(&s, &refs["foi.mat"]["freqs"], "foi.mat");
    assert_eq!(s.outputs[0].to_string(), "foi:7+X");
    assert_eq!(s.outputs[1].to_string(), "foi:12+Y");
    assert_eq!(s.inputs[1].to_string(), "wall:2+Z");
    for i in 0..2 {
        for j in 0..2 {
            check_column(
                &s,
                i,
                j,
                &refs["foi.mat"]["values"][format!("{i},{j}")],
                1.0,
                "foi.mat (values × g_n by numpy)",
            );
        }
    }

    // one FRF per column, compressed, rad/s; two FRFs share an input, one a second input
    let s = load(
        &d,
        "cols.mat",
        json!({"freq": "w", "freq_unit": "rad-per-s", "frf": "Y", "layout": "freq-frf",
               "out_dofs": ["1+Z", "2+Z", "1+Z"], "in_dofs": ["1+Z", "1+Z", "3+Z"],
               "out_qty": "velocity", "in_qty": "force", "name": "mobility"}),
    );
    assert_eq!(s.name, "mobility");
    check_freqs(&s, &refs["cols.mat"]["freqs"], "cols.mat");
    assert_eq!((s.n_out(), s.n_in()), (2, 2));
    let v = &refs["cols.mat"]["values"];
    check_column(&s, 0, 0, &v[0], 1.0, "cols FRF 1");
    check_column(&s, 1, 0, &v[1], 1.0, "cols FRF 2");
    check_column(&s, 0, 1, &v[2], 1.0, "cols FRF 3");
    assert!(!s.is_present(1, 1), "the fourth entry is not in the file");
    assert!(s.get(0, 1, 1).re.is_nan());

    // real single and real double, one FRF per row, single frequency vector
    for (var, key) in [("Hs", "single"), ("Hd", "double")] {
        let s = load(
            &d,
            "real.mat",
            json!({"freq": "fs", "frf": var, "layout": "frf-freq",
                   "out_dofs": ["1+X", "2+X"], "in_dofs": ["1+X", "1+X"],
                   "out_qty": "displacement", "in_qty": "force"}),
        );
        let f: Vec<f64> = serde_json::from_value(refs["real.mat"]["freqs"].clone()).unwrap();
        assert_eq!(s.freqs, f, "single-precision frequencies widen exactly");
        for k in 0..2 {
            let r: Vec<f64> = serde_json::from_value(refs["real.mat"][key][k].clone()).unwrap();
            let got: Vec<f64> = (0..s.n_lines()).map(|l| s.get(l, k, 0).re).collect();
            if key == "single" {
                assert_eq!(got, r, "float32 values widened exactly");
            } else {
                for (a, b) in got.iter().zip(&r) {
                    close(*a, *b, "real double");
                }
            }
            assert!((0..s.n_lines()).all(|l| s.get(l, k, 0).im == 0.0));
        }
    }

    // complex single: both parts widened exactly
    let s = load(
        &d,
        "csingle.mat",
        json!({"freq": "f", "frf": "H", "layout": "out-in-freq",
               "out_dofs": ["1+X", "2+X"], "in_dofs": ["1+X", "2+X"],
               "out_qty": "displacement", "in_qty": "force"}),
    );
    for i in 0..2 {
        for j in 0..2 {
            let r = refs["csingle.mat"]["values"][format!("{i},{j}")]
                .as_array()
                .unwrap();
            for (k, v) in r.iter().enumerate() {
                let got = s.get(k, i, j);
                assert_eq!(got.re, v[0].as_f64().unwrap());
                assert_eq!(got.im, v[1].as_f64().unwrap());
            }
        }
    }

    // big-endian, written by hand and checked by scipy.io.loadmat
    let s = load(
        &d,
        "big.mat",
        json!({"freq": "f", "frf": "G", "layout": "out-in-freq",
               "out_dofs": ["1+Y", "2+Y"], "in_dofs": ["1+Y"],
               "out_qty": "displacement", "in_qty": "force"}),
    );
    check_freqs(&s, &refs["big.mat"]["freqs"], "big.mat");
    for i in 0..2 {
        check_column(
            &s,
            i,
            0,
            &refs["big.mat"]["values"][format!("{i},0")],
            1.0,
            "big.mat",
        );
    }

    // the e^{-iωt} convention: values conjugated
    let s = load(
        &d,
        "big.mat",
        json!({"freq": "f", "frf": "G", "layout": "out-in-freq",
               "out_dofs": ["1+Y", "2+Y"], "in_dofs": ["1+Y"], "conjugate": true,
               "out_qty": "displacement", "in_qty": "force"}),
    );
    let r = &refs["big.mat"]["values"]["0,0"][0];
    assert_eq!(s.get(0, 0, 0).im, -r[1].as_f64().unwrap());

    // spectra (declared with "signal"): one output per column, the input is the reference
    let bytes = std::fs::read(d.join("cols.mat")).unwrap();
    let o: ImportOptions = serde_json::from_value(json!({"signal": "peak", "mat": {
        "freq": "w", "freq_unit": "rad-per-s", "frf": "Y", "layout": "freq-frf",
        "out_dofs": ["1+Z", "2+Z", "3+Z"], "out_qty": "force", "unit": "kN"}}))
    .unwrap();
    let s = io::load(&bytes, "cols.mat", &o).unwrap().sets.remove(0);
    assert_eq!(s.signal, Some(mortise::frf::SignalKind::Peak));
    assert_eq!((s.n_out(), s.n_in()), (3, 1));
    check_column(
        &s,
        2,
        0,
        &refs["cols.mat"]["values"][2],
        1000.0,
        "spectrum in kN",
    );
    // an input side for spectra is refused by name
    let o: ImportOptions = serde_json::from_value(json!({"signal": "peak", "mat": {
        "freq": "w", "frf": "Y", "layout": "freq-frf", "out_dofs": ["1+Z", "2+Z", "3+Z"],
        "in_dofs": ["1+Z", "1+Z", "1+Z"], "out_qty": "force"}}))
    .unwrap();
    let e = io::load(&bytes, "cols.mat", &o).unwrap_err();
    assert!(e.to_string().contains("mat.in_dofs"), "{e}");
}

#[test]
fn the_cli_lists_variables_without_a_mapping_and_reads_with_one() {
    let (d, _) = fixtures("cli");
    let p = d.join("oif_z.mat");
    let p = p.to_str().unwrap();
    let bin = env!("CARGO_BIN_EXE_mortise");
    let out = std::process::Command::new(bin)
        .args(["inspect", p])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(out.status.success(), "{text}");
    assert!(
        text.contains("H (double, 3×2×40, complex), compressed"),
        "{text}"
    );
    assert!(text.contains("outs (cell, 1×3)"), "{text}");
    let out = std::process::Command::new(bin)
        .args([
            "inspect",
            p,
            "--mat-freq",
            "f",
            "--mat-frf",
            "H",
            "--mat-layout",
            "out-in-freq",
            "--mat-out-dofs-var",
            "outs",
            "--in-dof",
            "unit:1+Z",
            "--in-dof",
            "unit:3+Z",
            "--out-qty",
            "acceleration",
            "--in-qty",
            "force",
            "--unit",
            "g/N",
        ])
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{text}{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        text.contains("6 FRF(s) in 3 output(s) × 2 input(s), accelerance"),
        "{text}"
    );
    // a CSV-only option beside the MAT options is refused by name
    let out = std::process::Command::new(bin)
        .args(["inspect", p, "--mat-freq", "f", "--skip", "2"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--skip is a CSV column-map option"));
    // convert without a mapping fails and names what to give
    let o = d.join("x.csv");
    let out = std::process::Command::new(bin)
        .args(["convert", p, "-o", o.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("needs a MAT mapping") && err.contains("--mat-freq"),
        "{err}"
    );
}

#[test]
fn a_recipe_reads_a_mat_file_through_its_import_mapping() {
    use mortise::recipe::{self, MapSource};
    let (d, refs) = fixtures("recipe");
    let mut files = MapSource::default();
    files.0.insert(
        "unit.mat".into(),
        std::fs::read(d.join("oif_z.mat")).unwrap(),
    );
    let text = json!({
        "format": "mortise-recipe", "version": 1,
        "components": {
            "unit": { "file": "unit.mat", "import": { "mat": {
                "freq": "f", "frf": "H", "layout": "out-in-freq",
                "out_dofs_var": "outs", "in_dofs_var": "ins",
                "out_qty": "acceleration", "in_qty": "force" } } }
        },
        "steps": [{ "id": "c", "op": "select", "from": "unit",
                    "outputs": ["unit:2+Z"], "inputs": ["unit:3+Z"] }],
        "outputs": ["c"]
    })
    .to_string();
    let r = recipe::run(&recipe::parse(&text).unwrap(), &files).unwrap();
    let s = &r.outputs[0];
    assert_eq!((s.n_out(), s.n_in()), (1, 1));
    check_column(
        s,
        0,
        0,
        &refs["oif_z.mat"]["values"]["2,1"],
        1.0,
        "recipe select",
    );
}
