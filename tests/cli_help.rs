//! Help through the real binary (`mortise help CMD`, `mortise CMD --help`,
//! `-h`), and `mortise couple --print-recipe`, whose recipe must run with
//! `mortise run` from any directory and give the same result.

mod cli_support;
mod common;

use cli_support::{mortise, sdof, write};
use mortise::io::{self, ExportFormat, ImportOptions};
use num_complex::Complex64;
use std::path::Path;

const COMMANDS: [&str; 11] = [
    "inspect", "convert", "run", "couple", "audit", "demo", "help", "version", "spectrum",
    "estimate", "orders",
];

#[test]
fn each_command_has_its_own_help_three_ways() {
    let d = common::scratch("cli_help_each");
    for c in COMMANDS {
        let first = mortise(&d, &["help", c]);
        assert_eq!((first.code, first.stderr.as_str()), (0, ""), "help {c}");
        let h = &first.stdout;
        assert!(h.starts_with(&format!("mortise {c}: ")), "{h}");
        assert!(h.contains(&format!("usage: mortise {c}")), "{h}");
        assert!(h.contains("\nexample:\n  mortise "), "{h}");
        assert!(h.contains("  -h, --help "), "{h}");
        for form in [[c, "--help"], [c, "-h"]] {
            let r = mortise(&d, &form);
            assert_eq!((r.code, r.stderr.as_str()), (0, ""), "{form:?}");
            assert_eq!(&r.stdout, h, "{form:?}");
        }
    }
    // what the user asked for: run's own help, couple's options that were only in README.md
    let run = mortise(&d, &["help", "run"]).stdout;
    assert!(run.contains("  -o OUTDIR "), "{run}");
    assert!(
        run.contains("relative to the recipe file's own directory"),
        "{run}"
    );
    let couple = mortise(&d, &["couple", "--help"]).stdout;
    for o in [
        "--join ",
        "-o OUT ",
        "--tsvd X ",
        "--print-recipe RECIPE ",
        "--json ",
    ] {
        assert!(couple.contains(&format!("  {o}")), "{o}: {couple}");
    }
    // defaults are stated (the text is wrapped: compare words)
    let words = |s: &str| s.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        words(&couple).contains("default: no truncation"),
        "{couple}"
    );
    let audit = words(&mortise(&d, &["audit", "-h"]).stdout);
    assert!(
        audit.contains("--coherence-min X smallest coherence accepted, 0 to 1 (default 0.9)"),
        "{audit}"
    );
    let demo = words(&mortise(&d, &["help", "demo"]).stdout);
    assert!(demo.contains("default sample-frf"), "{demo}");
}

#[test]
fn general_help_lists_the_commands_and_says_how_to_get_more() {
    let d = common::scratch("cli_help_general");
    let g = mortise(&d, &["help"]);
    assert_eq!((g.code, g.stderr.as_str()), (0, ""));
    for c in COMMANDS {
        assert!(
            g.stdout.lines().any(|l| l.starts_with(&format!("  {c} "))),
            "{c}: {}",
            g.stdout
        );
    }
    assert!(g.stdout.contains("'mortise help COMMAND'"), "{}", g.stdout);
    assert!(
        g.stdout.contains("exit codes: 0 success; 1 "),
        "{}",
        g.stdout
    );
    for alias in ["--help", "-h"] {
        assert_eq!(mortise(&d, &[alias]).stdout, g.stdout);
    }
    // the recipe schema, generated from the definitions the parser uses
    let r = mortise(&d, &["help", "recipe"]);
    assert_eq!(r.code, 0);
    for op in mortise::recipe::Op::NAMES {
        assert!(
            r.stdout.contains(&format!("  {op}: ")),
            "{op}: {}",
            r.stdout
        );
    }
    assert!(r.stdout.contains("hysteretic"), "{}", r.stdout);
}

/// Values of the first set of a mortise CSV file.
fn values(path: &Path) -> (Vec<f64>, Vec<Complex64>) {
    let bytes = std::fs::read(path).unwrap();
    let l = io::load(&bytes, "x.csv", &ImportOptions::default()).unwrap();
    let s = &l.sets[0];
    let v = (0..s.n_lines()).map(|k| s.get(k, 0, 0)).collect();
    (s.freqs.clone(), v)
}

#[test]
fn printed_recipe_runs_from_any_directory_and_gives_couples_result() {
    let d = common::scratch("cli_print_recipe");
    let (m1, k1, c1) = (2.0, 8e4, 40.0);
    let (m2, k2, c2) = (1.0, 3e4, 10.0);
    write(
        &d.join("data/A.csv"),
        &sdof("A", m1, k1, c1, 80),
        ExportFormat::Csv,
    );
    write(
        &d.join("data/B.csv"),
        &sdof("B", m2, k2, c2, 80),
        ExportFormat::Csv,
    );
    std::fs::create_dir_all(d.join("sub")).unwrap();
    std::fs::create_dir_all(d.join("elsewhere")).unwrap();
    let r = mortise(
        &d,
        &[
            "couple",
            "data/A.csv",
            "data/B.csv",
            "--join",
            "A:1+Z = B:1+Z",
            "-o",
            "ab.csv",
            "--print-recipe",
            "sub/r.json",
        ],
    );
    assert_eq!(r.code, 0, "{}", r.stderr);
    let recipe: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("sub/r.json")).unwrap()).unwrap();
    assert_eq!(recipe["components"]["A"]["file"], "../data/A.csv");
    assert_eq!(recipe["components"]["B"]["file"], "../data/B.csv");
    assert!(
        r.stdout.contains("names files outside its own folder: run it with 'mortise run sub/r.json -o OUTDIR --read-outside'"),
        "couple says how to run the printed recipe: {}",
        r.stdout
    );

    let coupled = values(&d.join("ab.csv"));
    // rigidly joined grounded oscillators sharing one coordinate add their
    // masses, stiffnesses and dampings (common practice):
    // H = 1/((k1 + k2) − ω²(m1 + m2) + iω(c1 + c2))
    for (f, h) in coupled.0.iter().zip(&coupled.1) {
        let w = 2.0 * std::f64::consts::PI * f;
        let want = 1.0 / Complex64::new(k1 + k2 - w * w * (m1 + m2), w * (c1 + c2));
        assert!(
            (h - want).norm() <= 1e-9 * want.norm(),
            "{f} Hz: {h} vs {want}"
        );
    }

    // the same recipe from three current directories: same numbers as couple's
    let abs = d.join("sub/r.json").to_str().unwrap().to_string();
    let out_abs = d.join("out3").to_str().unwrap().to_string();
    for (cwd, recipe, out, written) in [
        (d.clone(), "sub/r.json", "out1", d.join("out1/coupled.csv")),
        (
            d.join("elsewhere"),
            "../sub/r.json",
            "../out2",
            d.join("out2/coupled.csv"),
        ),
        (
            d.join("data"),
            abs.as_str(),
            out_abs.as_str(),
            d.join("out3/coupled.csv"),
        ),
    ] {
        // the printed recipe names ../data/A.csv: outside its folder, so allowed explicitly
        let r = mortise(&cwd, &["run", recipe, "-o", out]);
        assert_eq!(r.code, 1, "from {}: {}", cwd.display(), r.stderr);
        assert!(r.stderr.contains("--read-outside"), "{}", r.stderr);
        let r = mortise(&cwd, &["run", recipe, "-o", out, "--read-outside"]);
        assert_eq!(r.code, 0, "from {}: {}", cwd.display(), r.stderr);
        assert_eq!(values(&written), coupled, "from {}", cwd.display());
    }
}
