//! `mortise inspect`: what the user sees, through the same function the binary calls.

mod common;

use mortise::cli::{execute, run_cli};
use std::path::Path;

fn argv(v: &[&str]) -> Vec<String> {
    v.iter().map(|s| s.to_string()).collect()
}

fn p(d: &Path, f: &str) -> String {
    d.join(f).to_str().unwrap().to_string()
}

/// A supplier file: hammer test on the invented timber-frame wall, accelerance in g/N.
const WALL: &str = "Wall anchor A1, hammer test\nfreq,re,im,coh\n20,0.01,-0.02,0.99\n25,0.011,-0.019,0.98\n30,0.012,-0.018,0.97\n";

fn wall_opts() -> Vec<&'static str> {
    vec![
        "--skip",
        "2",
        "--freq-col",
        "freq",
        "--re",
        "re",
        "--im",
        "im",
        "--coh",
        "coh",
        "--out-dof",
        "wall:A1+Z",
        "--in-dof",
        "wall:A1+Z",
        "--unit",
        "g/N",
        "--out-qty",
        "acceleration",
        "--in-qty",
        "force",
    ]
}

#[test]
fn inspect_supplier_file_text_and_json() {
    let d = common::scratch("cli_inspect_text");
    std::fs::write(d.join("wall.csv"), WALL).unwrap();
    let f = p(&d, "wall.csv");
    let mut a = vec!["inspect", f.as_str()];
    a.extend(wall_opts());
    let out = run_cli(&argv(&a)).unwrap();
    // SHA-256 from Python's hashlib, not from mortise
    let sha = common::run_py("sha256_file.py", &[&f]);
    assert!(out.contains(&format!("sha256: {}", sha.trim())), "{out}");
    assert!(out.contains("format: csv-mapped"), "{out}");
    assert!(out.contains("1 FRF(s) in 1 output(s) × 1 input(s), accelerance (acceleration per force), SI unit (m/s^2)/N"), "{out}");
    assert!(out.contains("outputs: wall:A1+Z"), "{out}");
    assert!(
        out.contains("lines:   3, 20 Hz to 30 Hz, even, Δf = 5 Hz"),
        "{out}"
    );
    assert!(out.contains("coherence: supplied"), "{out}");

    a.push("--json");
    let j: serde_json::Value = serde_json::from_str(&run_cli(&argv(&a)).unwrap()).unwrap();
    let file = &j["files"][0];
    assert_eq!(file["ok"], true);
    assert_eq!(file["sha256"], sha.trim());
    let s = &file["sets"][0];
    // the one set summary (the page's cards and the run report show the same)
    assert_eq!(s["frfs"], 1);
    assert_eq!(s["kind"], "accelerance");
    assert_eq!(s["out_qty"], "acceleration");
    assert_eq!(s["inputs"][0], "wall:A1+Z");
    assert_eq!(s["grid"]["lines"], 3);
    assert_eq!(s["grid"]["f_min"], 20.0);
    assert_eq!(s["grid"]["f_max"], 30.0);
    assert_eq!(s["grid"]["spacing"], "uniform");
    assert_eq!(s["grid"]["step"], 5.0);
}

#[test]
fn a_bad_file_among_good_ones_is_reported_and_the_rest_inspected() {
    let d = common::scratch("cli_inspect_mixed");
    std::fs::write(d.join("wall.csv"), WALL).unwrap();
    std::fs::write(d.join("photo.png"), b"\x89PNG\r\n\x1a\n....").unwrap();
    std::fs::write(d.join("wall2.csv"), WALL.replace("30,", "40,")).unwrap();
    let (a, b, c) = (p(&d, "wall.csv"), p(&d, "photo.png"), p(&d, "wall2.csv"));
    let mut args = vec!["inspect", a.as_str(), b.as_str(), c.as_str()];
    args.extend(wall_opts());
    // the reports go to stdout, the failure (one message) to stderr
    let o = execute(&argv(&args));
    assert_eq!(o.code(), 1);
    let e = o.error.as_ref().unwrap();
    assert_eq!(e.kind, mortise::ErrorKind::Unsupported);
    assert!(
        e.message.contains("1 of 3 file(s) could not be used"),
        "{}",
        e.message
    );
    assert!(
        o.stderr.contains("photo.png: this looks like a PNG image"),
        "{}",
        o.stderr
    );
    let m = &o.stdout;
    assert!(m.contains("photo.png: this looks like a PNG image"), "{m}");
    assert!(m.contains("lines:   3, 20 Hz to 30 Hz"), "{m}");
    assert!(m.contains("lines:   3, 20 Hz to 40 Hz, uneven"), "{m}");
    // a missing file too
    let gone = p(&d, "gone.csv");
    let e = run_cli(&argv(&["inspect", gone.as_str()])).unwrap_err();
    assert_eq!(e.kind, mortise::ErrorKind::Io);
    assert!(
        e.message.contains("cannot read: no such file"),
        "{}",
        e.message
    );
    assert!(e.file.as_deref().unwrap().ends_with("gone.csv"));
    // JSON mode lists the failure with its fields, on stdout
    args.push("--json");
    let o = execute(&argv(&args));
    assert_eq!(o.code(), 1);
    let j: serde_json::Value = serde_json::from_str(&o.stdout).unwrap();
    assert_eq!(j["files"][1]["ok"], false);
    assert_eq!(j["files"][1]["error"]["kind"], "unsupported");
    assert_eq!(j["files"][2]["ok"], true);
}

#[test]
fn map_file_and_option_errors() {
    let d = common::scratch("cli_inspect_map");
    std::fs::write(
        d.join("iso.txt"),
        "# isolator, axial\n10 1200 -5\n20 1250 -7\n50 1300 -9\n",
    )
    .unwrap();
    std::fs::write(
        d.join("map.json"),
        r#"{"entries":[{"out_dof":"iso:1+Z","in_dof":"iso:1+Z","values":{"form":"mag-phase","mag":2,"phase":3}}],
            "unit":"N/mm","out_qty":"force","in_qty":"displacement","phase_unit":"deg"}"#,
    )
    .unwrap();
    let (f, m) = (p(&d, "iso.txt"), p(&d, "map.json"));
    let out = run_cli(&argv(&["inspect", f.as_str(), "--map", m.as_str()])).unwrap();
    assert!(
        out.contains("dynamic-stiffness (force per displacement), SI unit N/m"),
        "{out}"
    );
    assert!(out.contains("uneven, Δf from 10 to 30 Hz"), "{out}");
    // both --map and column options
    let e = run_cli(&argv(&[
        "inspect",
        f.as_str(),
        "--map",
        m.as_str(),
        "--re",
        "2",
    ]))
    .unwrap_err();
    assert!(
        e.message.contains("either --map or the column options"),
        "{}",
        e.message
    );
    // counts that do not match
    let e = run_cli(&argv(&[
        "inspect",
        f.as_str(),
        "--out-dof",
        "1+Z",
        "--in-dof",
        "1+Z",
        "--re",
        "2",
        "--out-qty",
        "force",
        "--in-qty",
        "displacement",
    ]))
    .unwrap_err();
    assert_eq!(e.kind, mortise::ErrorKind::Usage);
    assert!(
        e.message.contains("give 1 --re and 1 --im"),
        "{}",
        e.message
    );
    // unknown option
    let e = run_cli(&argv(&["inspect", f.as_str(), "--colour", "red"])).unwrap_err();
    assert!(
        e.message.contains("unknown option --colour"),
        "{}",
        e.message
    );
    // help lists the column-map options
    let h = run_cli(&argv(&["inspect", "--help"])).unwrap();
    assert!(h.contains("--mag-db-ref R"), "{h}");
}

/// A file large enough to be read by two threads, a half each, and hashed
/// on a second thread while it is parsed (a 58b file of 9.8 MB): inspect
/// gives the SHA-256 Python's hashlib gives, the provenance records it,
/// and the values read are the values written.
#[test]
fn a_large_file_is_read_and_hashed_whole() {
    let d = common::scratch("cli_inspect_large");
    let dofs: Vec<mortise::Dof> = (0..20)
        .map(|i| mortise::Dof::new("plate", &format!("{}", i + 1), mortise::Direction::Z))
        .collect();
    let freqs: Vec<f64> = (0..1530).map(|k| 1.0 + 0.5 * k as f64).collect();
    let mut s = mortise::FrfSet::zeros(
        "plate",
        freqs,
        dofs.clone(),
        dofs,
        mortise::Quantity::Displacement,
        mortise::Quantity::Force,
    );
    for (i, v) in s.data.iter_mut().enumerate() {
        *v = num_complex::Complex64::new(1e-6 * (i % 977) as f64 + 1e-9, -1e-7 * (i % 89) as f64);
    }
    let bytes = mortise::io::save(
        std::slice::from_ref(&s),
        mortise::io::ExportFormat::UffBinary,
    )
    .unwrap();
    assert!(bytes.len() > 9 << 20, "{} bytes", bytes.len());
    std::fs::write(d.join("plate.uff"), &bytes).unwrap();
    let f = p(&d, "plate.uff");
    let sha = common::run_py("sha256_file.py", &[&f]);
    let j: serde_json::Value =
        serde_json::from_str(&run_cli(&argv(&["inspect", f.as_str(), "--json"])).unwrap()).unwrap();
    assert_eq!(j["files"][0]["sha256"], sha.trim());
    let read = mortise::io::disk::read_file(Path::new(&f), &f, &Default::default()).unwrap();
    assert!(read == bytes);
    let l = mortise::io::load(&read, &f, &Default::default()).unwrap();
    assert_eq!(l.sha256, sha.trim());
    assert_eq!(l.sets[0].provenance[0].sha256, sha.trim());
    assert_eq!(l.sets[0].data, s.data);
}
