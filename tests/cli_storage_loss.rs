//! An isolator maker's table of storage stiffness K' (N/mm) and loss factor η
//! read through the command-line column map: the complex dynamic stiffness is
//! K'(1 + iη) in N/m (hysteretic damping with e^{+iωt}; common practice), and
//! N/mm = 1000 N/m (SI prefix milli).

mod common;

use mortise::cli::run_cli;
use mortise::io::{self, ImportOptions};

#[test]
fn storage_stiffness_and_loss_factor_columns() {
    let d = common::scratch("storage_loss");
    let src = d.join("iso.csv");
    std::fs::write(
        &src,
        "isolator table\nf [Hz];K' [N/mm];eta [-]\n10;145;0.09\n20;150.5;0.1\n40;160;0.125\n",
    )
    .unwrap();
    let out = d.join("iso-si.csv");
    let argv: Vec<String> = [
        "convert",
        src.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
        "--delim",
        "semicolon",
        "--skip",
        "2",
        "--freq-col",
        "1",
        "--out-dof",
        "iso:1+Z",
        "--in-dof",
        "iso:1+Z",
        "--stiffness",
        "2",
        "--loss",
        "3",
        "--unit",
        "N/mm",
        "--out-qty",
        "force",
        "--in-qty",
        "displacement",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    run_cli(&argv).unwrap();
    let bytes = std::fs::read(&out).unwrap();
    let l = io::load(&bytes, "iso-si.csv", &ImportOptions::default()).unwrap();
    let s = &l.sets[0];
    assert_eq!(s.kind().name(), "dynamic-stiffness");
    // worked by hand: 145 N/mm × (1 + 0.09i) = 145000 + 13050i N/m; 150.5 × (1 + 0.1i) = 150500 + 15050i;
    // 160 × (1 + 0.125i) = 160000 + 20000i
    let want = [
        (145000.0, 13050.0),
        (150500.0, 15050.0),
        (160000.0, 20000.0),
    ];
    for (k, (re, im)) in want.iter().enumerate() {
        let v = s.get(k, 0, 0);
        assert!(
            (v.re - re).abs() < 1e-9 * re && (v.im - im).abs() < 1e-9 * im,
            "line {k}: {v}"
        );
    }
    // both columns or neither
    let mut bad = argv.clone();
    let i = bad.iter().position(|a| a == "--loss").unwrap();
    bad.drain(i..i + 2);
    let e = run_cli(&bad).unwrap_err().to_string();
    assert!(e.contains("--stiffness") && e.contains("--loss"), "{e}");
}
