//! UFF datasets besides 58 (164 units, 151 header, 15/2411/18/2420/82
//! geometry, 55 modes) written by pyuff and read by mortise; 2411 and 55
//! written by mortise and read by pyuff.
//! reference: pyuff 2.5.8 (PyPI) for the files, numpy / scipy.linalg.eigh
//! for the expected values (tests/py/uff_geo_modal.py); unit factors by the
//! 1959 definitions (1 in = 0.0254 m, 1 lbf = 4.4482216152605 N).

mod common;

use mortise::io::{self, uff58, ImportOptions, Loaded};
use mortise::recipe::{self, MapSource};
use mortise::synth::Synth;
use num_complex::Complex64;
use serde_json::Value;
use std::collections::BTreeMap;
use std::path::Path;
use std::sync::OnceLock;

/// The files and expectations, written once for all tests here.
fn fixture() -> &'static (std::path::PathBuf, Value) {
    static F: OnceLock<(std::path::PathBuf, Value)> = OnceLock::new();
    F.get_or_init(|| {
        let dir = common::scratch("uff_geo_modal");
        let out = common::run_py("uff_geo_modal.py", &["write", dir.to_str().unwrap()]);
        (dir, serde_json::from_str(&out).unwrap())
    })
}

fn load(dir: &Path, name: &str) -> Loaded {
    let p = dir.join(name);
    let bytes = std::fs::read(&p).unwrap();
    io::load(&bytes, p.to_str().unwrap(), &ImportOptions::default())
        .unwrap_or_else(|e| panic!("{name}: {e}"))
}

fn cplx(v: &Value) -> Vec<Complex64> {
    let re = v["re"].as_array().unwrap();
    let im = v["im"].as_array().unwrap();
    re.iter()
        .zip(im)
        .map(|(a, b)| Complex64::new(a.as_f64().unwrap(), b.as_f64().unwrap()))
        .collect()
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

/// Largest |a − b| / |b| over all values (|b| of the largest for zeros).
fn max_rel(a: &[Complex64], b: &[Complex64]) -> f64 {
    assert_eq!(a.len(), b.len());
    let scale = b.iter().map(|v| v.norm()).fold(0.0, f64::max);
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).norm() / y.norm().max(1e-3 * scale))
        .fold(0.0, f64::max)
}

fn coords(l: &Loaded) -> Vec<f64> {
    let g = l.uff.as_ref().unwrap().geometry.as_ref().unwrap();
    g.nodes.iter().flat_map(|n| n.xyz).collect()
}

fn max_rel_f(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).abs() / y.abs().max(1e-300))
        .fold(0.0, f64::max)
}

#[test]
fn units_164_in_mm_and_inch_give_si_values_and_coordinates() {
    let (dir, exp) = fixture();
    for (key, spec) in [("mm", "spectrum"), ("inch", "psd")] {
        let e = &exp[key];
        let l = load(dir, e["file"].as_str().unwrap());
        assert_eq!(l.sets.len(), 2, "{key}");
        let frf = max_rel(&l.sets[0].data, &cplx(&e["frf"]));
        let sp = max_rel(&l.sets[1].data, &cplx(&e[spec]));
        let xyz = max_rel_f(&coords(&l), &floats(&e["xyz"]));
        println!("{key}: FRF {frf:.2e}, {spec} {sp:.2e}, coordinates {xyz:.2e}");
        assert!(frf <= 1e-12 && sp <= 1e-12 && xyz <= 1e-12, "{key}");
        let x = l.uff.as_ref().unwrap();
        assert_eq!(x.units.len(), 1);
        let text = x.describe().join("\n");
        assert!(text.contains("units (dataset 164, line 1)"), "{text}");
        assert!(
            l.warnings
                .iter()
                .any(|w| w.contains("2 dataset(s) 58 without units labels")),
            "{:?}",
            l.warnings
        );
    }
}

#[test]
fn coordinates_through_2420_and_18_systems_end_global() {
    let (dir, exp) = fixture();
    let l = load(dir, "geometry.unv");
    assert!(l.sets.is_empty());
    let g = l.uff.as_ref().unwrap().geometry.as_ref().unwrap();
    assert_eq!(g.systems.len(), 2);
    let want = floats(&exp["geometry"]["xyz"]);
    let got = coords(&l);
    let err = got
        .iter()
        .zip(&want)
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    println!("global coordinates: max |error| {err:.2e} m");
    assert!(err <= 1e-12, "{got:?} vs {want:?}");
    assert_eq!(g.lines.len(), 1);
    assert_eq!(g.lines[0].polylines, vec![vec![1, 2, 3], vec![4, 5, 6]]);
    let s = g.summary();
    assert_eq!((s.nodes, s.systems, s.trace_lines), (6, 2, 1));
    // the node table reaches the page through the file summary
    let bytes = std::fs::read(dir.join("geometry.unv")).unwrap();
    let sum = mortise::summary::file_summary("geometry.unv", &bytes, &l);
    let js = serde_json::to_value(&sum).unwrap();
    assert_eq!(js["uff"]["geometry"]["nodes"], 6);
    assert_eq!(
        js["uff"]["geometry_table"]["nodes"]
            .as_array()
            .unwrap()
            .len(),
        6
    );
}

fn synth_of(l: &Loaded, freqs: &[f64]) -> Vec<Complex64> {
    let m = l.uff.as_ref().unwrap().modal.clone().unwrap();
    Synth::Modal(m).synthesize(freqs).unwrap().data
}

#[test]
fn modes_55_real_and_complex_equal_numpy_modal_superposition() {
    let (dir, exp) = fixture();
    for key in ["real", "complex"] {
        let e = &exp[key];
        let l = load(dir, e["file"].as_str().unwrap());
        let freqs = floats(&e["freqs"]);
        let err = max_rel(&synth_of(&l, &freqs), &cplx(&e["H"]));
        println!("{key} modes: max relative difference to numpy {err:.2e}");
        assert!(err <= 1e-12, "{key}: {err}");
    }
}

#[test]
fn modes_of_m_and_k_equal_the_direct_inverse_when_all_are_kept() {
    let (dir, exp) = fixture();
    let e = &exp["mk"];
    let l = load(dir, "modes_mk.unv");
    let freqs = floats(&e["freqs"]);
    let h = synth_of(&l, &freqs);
    let modal = max_rel(&h, &cplx(&e["modal"]));
    let direct = max_rel(&h, &cplx(&e["direct"]));
    println!("M, K model: to numpy modal sum {modal:.2e}, to (K − ω²M + iωC)⁻¹ {direct:.2e}");
    assert!(modal <= 1e-12, "{modal}");
    // all 6 modes kept: no truncation; pyuff writes 55 with 6 significant
    // digits ('%13.5e'), which bounds the agreement with the exact inverse
    assert!(direct <= 1e-3, "{direct}");
}

#[test]
fn a_recipe_file_component_of_modes_synthesizes_on_its_grid() {
    let (dir, exp) = fixture();
    let e = &exp["real"];
    let bytes = std::fs::read(dir.join("modes_real.unv")).unwrap();
    let files = MapSource(BTreeMap::from([("modes.unv".to_string(), bytes)]));
    let text = serde_json::json!({
        "format": "mortise-recipe", "version": 1,
        "components": {"unit": {"file": "modes.unv", "grid": {"lines": e["freqs"]}}},
        "steps": [], "outputs": [],
    })
    .to_string();
    let r = recipe::parse(&text).unwrap();
    let sets = recipe::load_components(&r, &files).unwrap();
    let s = &sets["unit"];
    assert_eq!(s.outputs[0].to_string(), "unit:101+X");
    let err = max_rel(&s.data, &cplx(&e["H"]));
    assert!(err <= 1e-12, "{err}");
    // without a grid: refused, naming the key
    let bad = serde_json::json!({
        "format": "mortise-recipe", "version": 1,
        "components": {"unit": {"file": "modes.unv"}},
        "steps": [], "outputs": [],
    })
    .to_string();
    let err = recipe::load_components(&recipe::parse(&bad).unwrap(), &files).unwrap_err();
    assert!(err.to_string().contains("give a 'grid'"), "{err}");
    // 'interp' and 'set' are refused for a modal file
    for (k, v) in [
        ("interp", serde_json::json!("re-im")),
        ("set", serde_json::json!(0)),
    ] {
        let mut c = serde_json::json!({"file": "modes.unv", "grid": {"from": 10.0, "to": 20.0, "step": 1.0}});
        c[k] = v;
        let t = serde_json::json!({"format": "mortise-recipe", "version": 1,
            "components": {"unit": c}, "steps": [], "outputs": []})
        .to_string();
        let err = recipe::load_components(&recipe::parse(&t).unwrap(), &files).unwrap_err();
        assert!(err.to_string().contains(&format!("'{k}'")), "{err}");
    }
}

#[test]
fn a_file_of_151_164_2411_58_and_55_reads_as_a_whole() {
    let (dir, exp) = fixture();
    let e = &exp["mixed"];
    let l = load(dir, "mixed.unv");
    assert_eq!(l.sets.len(), 2);
    assert!(max_rel(&l.sets[0].data, &cplx(&e["frf"])) <= 1e-12);
    assert!(max_rel(&l.sets[1].data, &cplx(&e["spectrum"])) <= 1e-12);
    assert!(max_rel_f(&coords(&l), &floats(&e["xyz"])) <= 1e-12);
    let x = l.uff.as_ref().unwrap();
    assert_eq!(x.headers[0].model, "outdoor unit mounts");
    assert_eq!(x.headers[0].program, "pyuff");
    assert_eq!(x.modes.len(), 3);
    // mm / mN leaves receptances as they are: the modes equal file 4's
    let freqs = floats(&exp["real"]["freqs"]);
    assert!(max_rel(&synth_of(&l, &freqs), &cplx(&exp["real"]["H"])) <= 1e-12);
    let sum = mortise::summary::file_summary("mixed.unv", &[], &l);
    let u = sum.uff.unwrap();
    assert!(u.headers[0].contains("model 'outdoor unit mounts'"));
    assert!(u.units[0].contains("mm (milli-newton)"));
}

#[test]
fn geometry_and_modes_written_by_mortise_read_back_by_pyuff() {
    let (dir, _) = fixture();
    // geometry: global coordinates of the file read through its systems
    let g = load(dir, "geometry.unv").uff.unwrap().geometry.unwrap();
    let text = uff58::write_2411(&g).unwrap();
    let real = load(dir, "modes_real.unv").uff.unwrap().modal.unwrap();
    let cm = load(dir, "modes_complex.unv").uff.unwrap().modal.unwrap();
    let out = dir.join("mortise_written.unv");
    let all = format!(
        "{text}{}{}",
        uff58::write_55(&real).unwrap(),
        uff58::write_55(&cm).unwrap()
    );
    std::fs::write(&out, &all).unwrap();
    let back: Value = serde_json::from_str(&common::run_py(
        "uff_geo_modal.py",
        &["read", out.to_str().unwrap()],
    ))
    .unwrap();
    let b = back.as_array().unwrap();
    assert_eq!(b.len(), 1 + 3 + 2);
    // 2411: bit-exact (shortest round-trip text in 25 columns)
    let want: Vec<f64> = g.nodes.iter().flat_map(|n| n.xyz).collect();
    assert_eq!(floats(&b[0]["xyz"]), want);
    // 55: 13-column fields, at least 7 significant digits
    for (r, m) in real.modes.iter().enumerate() {
        let d = &b[1 + r];
        assert_eq!(d["analysis"], 2);
        let got = [
            d["freq"].as_f64().unwrap(),
            d["modal_m"].as_f64().unwrap(),
            d["zeta"].as_f64().unwrap(),
        ];
        assert!(max_rel_f(&got, &[m.freq, m.modal_mass, m.zeta]) <= 5e-7);
        assert!(max_rel_f(&floats(&d["shape_re"]), &m.shape) <= 5e-7);
    }
    for (r, m) in cm.complex_modes.iter().enumerate() {
        let d = &b[4 + r];
        assert_eq!(d["analysis"], 3);
        let re = floats(&d["shape_re"]);
        let im = floats(&d["shape_im"]);
        let got: Vec<Complex64> = re
            .iter()
            .zip(&im)
            .map(|(a, b)| Complex64::new(*a, *b))
            .collect();
        assert!(max_rel(&got, &m.shape) <= 1e-6);
        assert_eq!(floats(&d["modal_a"]), vec![1.0, 0.0]);
    }
    // and mortise reads its own file: same geometry, same FRFs within the
    // 7 significant digits of the 55 fields
    let l = load(dir, "mortise_written.unv");
    assert_eq!(coords(&l), want);
    let freqs: Vec<f64> = (10..200).map(|f| f as f64).collect();
    let m2 = l.uff.unwrap().modal.unwrap();
    assert_eq!(m2.modes.len(), 3);
    assert_eq!(m2.complex_modes.len(), 2);
    let mut both = real.clone();
    both.complex_modes = cm.complex_modes.clone();
    let a = Synth::Modal(m2).synthesize(&freqs).unwrap().data;
    let h = Synth::Modal(both).synthesize(&freqs).unwrap().data;
    let err = max_rel(&a, &h);
    println!("mortise 55 round trip: {err:.2e}");
    assert!(err <= 1e-4, "{err}");
}

#[test]
fn convert_with_a_grid_synthesizes_a_file_of_modes() {
    let (dir, exp) = fixture();
    let e = &exp["real"];
    let out = dir.join("synth_real.csv");
    let argv: Vec<String> = [
        "convert",
        dir.join("modes_real.unv").to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
        "--grid",
        "5:199.5:0.5",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    let o = mortise::cli::execute(&argv);
    assert!(o.error.is_none(), "{}{}", o.stdout, o.stderr);
    let l = load(dir, "synth_real.csv");
    assert_eq!(l.sets[0].freqs, floats(&e["freqs"]));
    let err = max_rel(&l.sets[0].data, &cplx(&e["H"]));
    assert!(err <= 1e-12, "{err}");
    // without --grid: nothing to write, and the message says what to give
    let argv: Vec<String> = argv[..4].to_vec();
    let o = mortise::cli::execute(&argv);
    assert!(o.error.is_some());
    assert!(
        o.stdout.contains("give --grid START:STOP:STEP"),
        "{}",
        o.stdout
    );
}
