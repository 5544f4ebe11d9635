//! `mortise convert`: format changes, kind changes, partial failures.

mod common;

use mortise::cli::run_cli;
use mortise::io::{self, ImportOptions};
use std::path::Path;

fn argv(v: &[&str]) -> Vec<String> {
    v.iter().map(|s| s.to_string()).collect()
}

fn p(d: &Path, f: &str) -> String {
    d.join(f).to_str().unwrap().to_string()
}

/// Receptance of an invented isolated bracket in mm/N, real and imaginary columns.
const BRACKET: &str = "f;re;im\n10;0,002;-0,001\n20;0,004;-0,003\n";

fn bracket_opts() -> Vec<&'static str> {
    vec![
        "--skip",
        "1",
        "--decimal",
        "comma",
        "--re",
        "2",
        "--im",
        "3",
        "--out-dof",
        "bracket:1+Z",
        "--in-dof",
        "bracket:1+Z",
        "--unit",
        "mm/N",
        "--out-qty",
        "displacement",
        "--in-qty",
        "force",
    ]
}

#[test]
fn supplier_csv_to_mobility_in_our_layout() {
    let d = common::scratch("cli_convert_kind");
    std::fs::write(d.join("bracket.csv"), BRACKET).unwrap();
    let (i, o) = (p(&d, "bracket.csv"), p(&d, "bracket_y.csv"));
    let mut a = vec![
        "convert",
        i.as_str(),
        "-o",
        o.as_str(),
        "--kind",
        "mobility",
        "--units",
        "si",
    ];
    a.extend(bracket_opts());
    let out = run_cli(&argv(&a)).unwrap();
    assert!(out.contains("read ") && out.contains("wrote "), "{out}");
    let bytes = std::fs::read(&o).unwrap();
    let l = io::load(&bytes, "bracket_y.csv", &ImportOptions::default()).unwrap();
    let s = &l.sets[0];
    assert_eq!(s.kind(), mortise::FrfKind::Mobility);
    // Y = iωH with e^{+iωt} (crate convention): H = (2 - 1i)e-6 m/N at 10 Hz
    let w = 2.0 * std::f64::consts::PI * 10.0;
    let h = num_complex::Complex64::new(2e-6, -1e-6);
    let want = num_complex::Complex64::new(0.0, w) * h;
    assert!(
        (s.get(0, 0, 0) - want).norm() < 1e-15 * want.norm() * 4.0,
        "{}",
        s.get(0, 0, 0)
    );
    // provenance chain: the supplier file, then our CSV
    assert_eq!(s.provenance.len(), 2);
    assert_eq!(s.provenance[0].file, "bracket.csv");
    assert_eq!(s.provenance[0].format, "csv-mapped");
    assert!(s.provenance[0].options.contains("mm/N"));
}

#[test]
fn bundle_by_extension_and_back() {
    let d = common::scratch("cli_convert_bundle");
    std::fs::write(d.join("bracket.csv"), BRACKET).unwrap();
    let (i, b, c) = (p(&d, "bracket.csv"), p(&d, "b.json"), p(&d, "c.csv"));
    let mut a = vec!["convert", i.as_str(), "-o", b.as_str()];
    a.extend(bracket_opts());
    run_cli(&argv(&a)).unwrap();
    let out = run_cli(&argv(&["convert", b.as_str(), "-o", c.as_str()])).unwrap();
    assert!(
        out.contains("read ") && out.contains(": bundle, 1 set(s)"),
        "{out}"
    );
    let s = &io::load(
        &std::fs::read(&c).unwrap(),
        "c.csv",
        &ImportOptions::default(),
    )
    .unwrap()
    .sets[0];
    assert_eq!(s.get(1, 0, 0).re, 0.004 * 1e-3);
    // no extension we know, no --to
    let e = run_cli(&argv(&["convert", c.as_str(), "-o", "x.dat"])).unwrap_err();
    assert!(
        e.message
            .contains("give --to uff, uff-binary, csv or bundle"),
        "{}",
        e.message
    );
    let e = run_cli(&argv(&[
        "convert",
        c.as_str(),
        "-o",
        "x.csv",
        "--units",
        "mm",
    ]))
    .unwrap_err();
    assert!(e.message.contains("SI values only"), "{}", e.message);
}

#[test]
fn bad_input_among_good_still_writes_the_good_ones() {
    let d = common::scratch("cli_convert_mixed");
    std::fs::write(d.join("a.csv"), BRACKET).unwrap();
    std::fs::write(d.join("letter.txt"), "Hello,\nthe data follow next week.\n").unwrap();
    std::fs::write(d.join("b.csv"), BRACKET.replace("bracket", "x")).unwrap();
    let (a, l, b, o) = (
        p(&d, "a.csv"),
        p(&d, "letter.txt"),
        p(&d, "b.csv"),
        p(&d, "out.csv"),
    );
    let mut args = vec![
        "convert",
        a.as_str(),
        l.as_str(),
        b.as_str(),
        "-o",
        o.as_str(),
    ];
    args.extend(bracket_opts());
    let e = run_cli(&argv(&args)).unwrap_err();
    assert!(
        e.message.contains("letter.txt: this looks like plain text"),
        "{}",
        e.message
    );
    assert!(
        e.message
            .contains("1 problem(s) in 1 of 3 file(s) (each is reported on standard output); the sets that could be read were written"),
        "{}",
        e.message
    );
    let l = io::load(
        &std::fs::read(&o).unwrap(),
        "out.csv",
        &ImportOptions::default(),
    )
    .unwrap();
    assert_eq!(l.sets.len(), 2);
    // the same map applied to both files; each set named after its file
    assert_eq!(l.sets[0].name, "a");
    assert_eq!(l.sets[1].name, "b");
    // nothing readable: nothing written
    let o2 = p(&d, "none.csv");
    let e = run_cli(&argv(&["convert", l_path(&d).as_str(), "-o", o2.as_str()])).unwrap_err();
    assert!(e.message.contains("nothing was written"), "{}", e.message);
    assert!(!Path::new(&o2).exists());
}

fn l_path(d: &Path) -> String {
    p(d, "letter.txt")
}

#[test]
fn kind_that_does_not_fit_is_reported() {
    let d = common::scratch("cli_convert_badkind");
    std::fs::write(d.join("a.csv"), BRACKET).unwrap();
    let (a, o) = (p(&d, "a.csv"), p(&d, "o.csv"));
    let mut args = vec![
        "convert",
        a.as_str(),
        "-o",
        o.as_str(),
        "--kind",
        "sideways",
    ];
    args.extend(bracket_opts());
    let e = run_cli(&argv(&args)).unwrap_err();
    assert!(
        e.message.contains("unknown FRF kind 'sideways'"),
        "{}",
        e.message
    );
}

#[test]
fn grid_option_puts_sets_on_one_grid_without_extrapolating() {
    let d = common::scratch("cli_convert_grid");
    // a: 10, 20 Hz; b: 10, 15, 20, 25 Hz; common range 10–20 Hz
    std::fs::write(d.join("a.csv"), BRACKET).unwrap();
    std::fs::write(d.join("b.csv"), "f;re;im\n10;1;0\n15;2;0\n20;3;0\n25;4;0\n").unwrap();
    let (a, b, o) = (p(&d, "a.csv"), p(&d, "b.csv"), p(&d, "o.csv"));
    let mut args = vec![
        "convert",
        a.as_str(),
        b.as_str(),
        "-o",
        o.as_str(),
        "--grid",
        "finest",
    ];
    args.extend(bracket_opts());
    let out = run_cli(&argv(&args)).unwrap();
    assert!(
        out.contains("grid: 3 lines, 10 Hz to 20 Hz, linear in re/im"),
        "{out}"
    );
    let l = io::load(
        &std::fs::read(&o).unwrap(),
        "o.csv",
        &ImportOptions::default(),
    )
    .unwrap();
    assert_eq!(l.sets[0].freqs, vec![10.0, 15.0, 20.0]);
    assert_eq!(l.sets[1].freqs, vec![10.0, 15.0, 20.0]);
    // a at 15 Hz: halfway between (2 - 1i) and (4 - 3i) mm/N = (3 - 2i) mm/N
    let v = l.sets[0].get(1, 0, 0);
    assert!(
        (v.re - 3e-6).abs() < 1e-20 && (v.im + 2e-6).abs() < 1e-20,
        "{v}"
    );
    assert!(l.sets[0].warnings.iter().any(|w| w.contains("resampled")));
    // b kept its own lines untouched
    assert_eq!(l.sets[1].get(2, 0, 0).re, 3e-3);
    // an even grid beyond a's range is refused, naming both ranges
    let mut args = vec![
        "convert",
        a.as_str(),
        b.as_str(),
        "-o",
        o.as_str(),
        "--grid",
        "5:25:5",
    ];
    args.extend(bracket_opts());
    let e = run_cli(&argv(&args)).unwrap_err();
    assert_eq!(e.kind, mortise::ErrorKind::Grid);
    assert!(e.message.contains("5–25 Hz"), "{}", e.message);
    assert!(e.message.contains("'a' 10–20 Hz"), "{}", e.message);
    let e = run_cli(&argv(&[
        "convert",
        a.as_str(),
        "-o",
        o.as_str(),
        "--grid",
        "1:2",
    ]))
    .unwrap_err();
    assert!(e.message.contains("START:STOP:STEP"), "{}", e.message);
}

#[test]
fn resampling_matches_numpy_interp_and_unwrap() {
    let d = common::scratch("cli_convert_resample");
    let src = p(&d, "frf.csv");
    let exp: serde_json::Value =
        serde_json::from_str(&common::run_py("csv_resample.py", &[src.as_str()])).unwrap();
    for (interp, key) in [("re-im", "linear"), ("log-mag-phase", "logmag")] {
        let o = p(&d, &format!("{key}.csv"));
        run_cli(&argv(&[
            "convert",
            src.as_str(),
            "-o",
            o.as_str(),
            "--grid",
            "12:380:0.5",
            "--interp",
            interp,
            "--re",
            "2",
            "--im",
            "3",
            "--out-dof",
            "w:1+Z",
            "--in-dof",
            "w:1+Z",
            "--out-qty",
            "displacement",
            "--in-qty",
            "force",
        ]))
        .unwrap();
        let s = &io::load(
            &std::fs::read(&o).unwrap(),
            "o.csv",
            &ImportOptions::default(),
        )
        .unwrap()
        .sets[0];
        let g = exp["grid"].as_array().unwrap();
        assert_eq!(s.n_lines(), g.len());
        for (k, gv) in g.iter().enumerate() {
            assert!((s.freqs[k] - gv.as_f64().unwrap()).abs() < 1e-12);
            let v = &exp[key][k];
            let want = num_complex::Complex64::new(v[0].as_f64().unwrap(), v[1].as_f64().unwrap());
            let got = s.get(k, 0, 0);
            // numpy and mortise order the same few operations slightly differently
            assert!(
                (got - want).norm() <= 1e-12 * want.norm(),
                "{key} at {} Hz: {got} vs {want}",
                s.freqs[k]
            );
        }
    }
}

/// An invented accelerance of `comp` from each output node to each input node (+Z).
fn acc_set(name: &str, comp: &str, outs: &[&str], ins: &[&str], scale: f64) -> mortise::FrfSet {
    use mortise::frf::{Direction, Dof};
    let z = |n: &&str| Dof::new(comp, n, Direction::Z);
    let mut s = mortise::FrfSet::zeros(
        name,
        (0..30).map(|k| 10.0 + 2.0 * k as f64).collect(),
        outs.iter().map(z).collect(),
        ins.iter().map(z).collect(),
        mortise::units::Quantity::Acceleration,
        mortise::units::Quantity::Force,
    );
    for (n, v) in s.data.iter_mut().enumerate() {
        *v = num_complex::Complex64::new(scale * (1.0 + n as f64).ln(), -scale / (1.0 + n as f64));
    }
    s
}

// The user's report: two files converted into one UFF read back as one
// merged set with missing entries, and `"set": 1` failed.
#[test]
fn two_uff_files_converted_into_one_keep_both_sets() {
    let d = common::scratch("cli_convert_two_sets");
    let a = acc_set("A", "A", &["1", "2", "3", "4"], &["1", "2", "3"], 1.0);
    let b = acc_set(
        "B",
        "B",
        &["11", "12", "13", "14"],
        &["11", "12", "13"],
        2.0,
    );
    std::fs::write(
        d.join("A.uff"),
        mortise::io::uff58::write(std::slice::from_ref(&a), false).unwrap(),
    )
    .unwrap();
    std::fs::write(
        d.join("B.uff"),
        mortise::io::uff58::write(std::slice::from_ref(&b), true).unwrap(),
    )
    .unwrap();
    for out_name in ["both.uff", "both_b.uff"] {
        let (ia, ib, o) = (p(&d, "A.uff"), p(&d, "B.uff"), p(&d, out_name));
        let mut args = vec!["convert", ia.as_str(), ib.as_str(), "-o", o.as_str()];
        if out_name == "both_b.uff" {
            args.extend(["--to", "uff-binary"]);
        }
        let printed = run_cli(&argv(&args)).unwrap();
        assert!(printed.contains("2 set(s)"), "{printed}");
        let bytes = std::fs::read(&o).unwrap();
        let l = io::load(&bytes, out_name, &ImportOptions::default()).unwrap();
        assert_eq!(l.sets.len(), 2, "{:?}", l.warnings);
        for (got, want) in l.sets.iter().zip([&a, &b]) {
            assert_eq!(got.name, want.name);
            assert_eq!(got.outputs, want.outputs);
            assert_eq!(got.inputs, want.inputs);
            assert!(
                got.missing_entries().is_empty(),
                "{:?}",
                got.missing_entries()
            );
        }
        // "set": 1 in a recipe takes the second
        let recipe = format!(
            r#"{{"format": "mortise-recipe", "version": 1,
                "components": {{"b": {{"file": "{out_name}", "set": 1}}}},
                "outputs": ["b"]}}"#
        );
        let r = mortise::recipe::parse(&recipe).unwrap();
        let res = mortise::recipe::run(
            &r,
            &mortise::recipe::DirSource::confined(d.clone(), Default::default()),
        )
        .unwrap();
        let s = &res.outputs[0];
        assert_eq!(s.n_out() * s.n_in(), 12);
        assert_eq!(s.outputs[3].node, "14");
        for (x, y) in s.data.iter().zip(&b.data) {
            // ASCII keeps ≥ 13 significant digits (src/io/uff58/mod.rs), 58b is exact
            assert!((x - y).norm() <= 1e-12 * y.norm(), "{x} vs {y}");
        }
    }
}

/// A UFF force spectrum of function type 12 (peak or RMS not stated), written
/// by mortise as a peak spectrum and with the ID-line marker removed, so the
/// file says no more than a foreign one would.
fn foreign_spectrum_uff() -> Vec<u8> {
    use mortise::frf::{Direction, Dof, SignalKind};
    let mut s = mortise::FrfSet::zeros(
        "fan",
        vec![50.0, 100.0, 150.0],
        vec![Dof::new("fan", "3", Direction::Z)],
        vec![Dof::scalar("", "ref")],
        mortise::units::Quantity::Force,
        mortise::units::Quantity::Dimensionless,
    );
    s.signal = Some(SignalKind::Peak);
    s.data[1] = num_complex::Complex64::new(2.0, -1.0);
    let text = String::from_utf8(mortise::io::uff58::write(&[s], false).unwrap()).unwrap();
    let text = text.replacen("signal=peak", "NONE", 1);
    assert!(!text.contains("signal="));
    text.into_bytes()
}

#[test]
fn signal_option_declares_uff_spectra() {
    let d = common::scratch("cli_convert_signal");
    std::fs::write(d.join("fan.uff"), foreign_spectrum_uff()).unwrap();
    let (i, o) = (p(&d, "fan.uff"), p(&d, "fan.csv"));
    let printed = run_cli(&argv(&[
        "convert",
        i.as_str(),
        "-o",
        o.as_str(),
        "--signal",
        "rms",
    ]))
    .unwrap();
    assert!(!printed.contains("read as peak"), "{printed}");
    let csv = std::fs::read_to_string(&o).unwrap();
    assert!(csv.contains("# signal: rms"), "{csv}");
    // without it: peak, with the warning
    let printed = run_cli(&argv(&["convert", i.as_str(), "-o", o.as_str()])).unwrap();
    assert!(printed.contains("read as peak"), "{printed}");
    // a declaration the file contradicts names both
    std::fs::write(d.join("own.uff"), {
        let l = io::load(
            &std::fs::read(d.join("fan.csv")).unwrap(),
            "fan.csv",
            &ImportOptions::default(),
        )
        .unwrap();
        io::save(&l.sets, io::ExportFormat::Uff).unwrap()
    })
    .unwrap();
    let own = p(&d, "own.uff");
    let e = run_cli(&argv(&[
        "convert",
        own.as_str(),
        "-o",
        o.as_str(),
        "--signal",
        "rms",
    ]))
    .unwrap_err();
    assert!(
        e.message.contains("rms") && e.message.contains("peak"),
        "{e}"
    );
    let e = run_cli(&argv(&[
        "convert",
        i.as_str(),
        "-o",
        o.as_str(),
        "--signal",
        "loud",
    ]))
    .unwrap_err();
    assert!(
        e.message.contains("--signal") && e.message.contains("loud"),
        "{e}"
    );
}
