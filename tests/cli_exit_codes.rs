//! Exit codes of the real binary: 0 success, 1 bad data or a failed
//! computation (anything from a file or a recipe), 2 a bad command line, 3 an
//! internal error (a bug). Each case checks the code, that standard error
//! names the problem, and that standard output holds nothing of it.

mod cli_support;
mod common;

use cli_support::{mortise, mortise_in, sdof, write, Ran};
use mortise::io::{save, ExportFormat};
use std::path::Path;

fn expect(r: &Ran, code: i32, says: &str) {
    assert_eq!(
        r.code, code,
        "expected exit {code}\n--- stdout\n{}\n--- stderr\n{}",
        r.stdout, r.stderr
    );
    assert!(
        r.stderr.contains(says),
        "stderr lacks '{says}': {}",
        r.stderr
    );
}

fn files(d: &Path) {
    write(
        &d.join("seat.uff"),
        &sdof("seat", 2.0, 8e4, 40.0, 50),
        ExportFormat::Uff,
    );
    // one file holding two sets (a receptance and a mobility)
    let mobility = sdof("foot", 1.0, 3e4, 10.0, 50)
        .to_kind("mobility")
        .unwrap();
    let two = save(
        &[sdof("seat", 2.0, 8e4, 40.0, 50), mobility],
        ExportFormat::Uff,
    )
    .unwrap();
    std::fs::write(d.join("seat-high.uff"), two).unwrap();
    // a supplier table: frequency, real, imaginary (m/N)
    std::fs::write(
        d.join("supplier.csv"),
        "f,re,im\n10,1e-6,-2e-7\n20,2e-6,-3e-7\n30,1e-6,-1e-7\n",
    )
    .unwrap();
}

#[test]
fn zero_on_success() {
    let d = common::scratch("cli_exit_0");
    files(&d);
    let r = mortise(&d, &["inspect", "seat.uff"]);
    expect(&r, 0, "");
    assert_eq!(r.stderr, "");
    assert!(r.stdout.contains("format: uff58-ascii"), "{}", r.stdout);
}

#[test]
fn one_for_data_problems_that_used_to_exit_as_usage_errors() {
    let d = common::scratch("cli_exit_1");
    files(&d);
    // a supplier table read without a column map: the file does not fit
    let r = mortise(&d, &["inspect", "supplier.csv"]);
    expect(&r, 1, "needs a column map");
    // the command line says how it takes one (the page says so in its own words)
    assert!(
        r.stderr.contains("On the command line: --map auto"),
        "{}",
        r.stderr
    );
    assert!(
        r.stdout.contains("supplier.csv\n  sha256: "),
        "the report goes to stdout: {}",
        r.stdout
    );
    // the same file in a one-line coupling
    let r = mortise(
        &d,
        &[
            "couple",
            "supplier.csv",
            "seat.uff",
            "--join",
            "supplier:1+Z = seat:1+Z",
            "-o",
            "x.csv",
        ],
    );
    expect(&r, 1, "needs a column map");
    // a saved column map that names column 0: the map file is wrong
    std::fs::write(
        d.join("map.json"),
        r#"{"entries":[{"out_dof":"s:1+Z","in_dof":"s:1+Z","values":{"form":"re-im","re":0,"im":3}}],
            "skip_rows":1,"out_qty":"displacement","in_qty":"force"}"#,
    )
    .unwrap();
    let r = mortise(&d, &["inspect", "supplier.csv", "--map", "map.json"]);
    expect(&r, 1, "column 0");
    // a recipe asking for a kind that does not exist
    let recipe = serde_json::json!({
        "format": "mortise-recipe", "version": 1,
        "components": { "seat": { "file": "seat.uff" } },
        "steps": [ { "id": "y", "op": "convert", "from": "seat", "kind": "sideways" } ],
        "outputs": ["y"]
    });
    std::fs::write(d.join("r.json"), recipe.to_string()).unwrap();
    let r = mortise(&d, &["run", "r.json", "-o", "out"]);
    expect(&r, 1, "unknown FRF kind 'sideways'");
    // a linearity pair whose files hold different numbers of sets
    let r = mortise(&d, &["audit", "--pair", "seat.uff,seat-high.uff"]);
    expect(&r, 1, "holds 1 set(s) and seat-high.uff holds 2");
    // files that are missing or unreadable, and recipes that are not JSON
    expect(&mortise(&d, &["inspect", "gone.uff"]), 1, "gone.uff");
    expect(
        &mortise(&d, &["run", "gone.json", "-o", "out"]),
        1,
        "gone.json",
    );
    std::fs::write(d.join("notes.json"), "not a recipe").unwrap();
    expect(
        &mortise(&d, &["run", "notes.json", "-o", "out"]),
        1,
        "notes.json",
    );
    expect(
        &mortise(&d, &["demo", "-o", "nowhere", "--check"]),
        1,
        "differ",
    );
}

#[test]
fn two_for_a_bad_command_line() {
    let d = common::scratch("cli_exit_2");
    files(&d);
    let cases: &[(&[&str], &str)] = &[
        (&[], "no command given"),
        (&["frobnicate"], "unknown command 'frobnicate'"),
        (
            &["inspect", "seat.uff", "--colour", "red"],
            "unknown option --colour",
        ),
        (&["inspect"], "at least one FILE"),
        (&["run", "-o", "out"], "needs a RECIPE"),
        (&["run", "r.json"], "needs -o OUTDIR"),
        (&["run", "a.json", "b.json", "-o", "out"], "one RECIPE"),
        (&["couple", "seat.uff"], "at least two files"),
        (
            &[
                "couple",
                "seat.uff",
                "seat-high.uff",
                "--join",
                "seat:1+Z = seat-high:1+Z",
                "-o",
                "x.csv",
                "--tsvd",
                "2",
            ],
            "--tsvd '2'",
        ),
        (
            &[
                "couple",
                "seat.uff",
                "seat-high.uff",
                "--join",
                "seat:1+Q = seat-high:1+Z",
                "-o",
                "x.csv",
            ],
            "unknown direction 'Q'",
        ),
        (
            &[
                "couple",
                "seat.uff",
                "seat-high.uff",
                "--join",
                "seat:1+Z = seat-high:1+Z k=-5",
                "-o",
                "x.csv",
            ],
            "k=-5",
        ),
        (
            &["convert", "seat.uff", "-o", "x.csv", "--kind", "sideways"],
            "--kind",
        ),
        (
            &[
                "convert", "seat.uff", "-o", "x.csv", "--to", "csv", "--to", "uff",
            ],
            "--to is given twice",
        ),
        (
            &["audit", "seat.uff", "--coherence-min", "1.5"],
            "--coherence-min",
        ),
        (&["demo", "somewhere"], "no operand"),
        (&["help", "frobnicate"], "no help on 'frobnicate'"),
        // a column map from options that names column 0: the command line is wrong
        (
            &[
                "inspect",
                "supplier.csv",
                "--skip",
                "1",
                "--re",
                "0",
                "--im",
                "3",
                "--out-dof",
                "s:1+Z",
                "--in-dof",
                "s:1+Z",
                "--out-qty",
                "displacement",
                "--in-qty",
                "force",
            ],
            "--re 0: columns count from 1",
        ),
    ];
    for (argv, says) in cases {
        let r = mortise(&d, argv);
        expect(&r, 2, says);
        if !argv.is_empty() {
            assert_eq!(r.stdout, "", "{argv:?}: {}", r.stdout);
        }
    }
    // nothing was written by the refused couple commands
    assert!(!d.join("x.csv").exists());
}

#[test]
fn three_for_an_internal_error_and_a_panic() {
    let d = common::scratch("cli_exit_3");
    files(&d);
    let r = mortise_in(
        &d,
        &["inspect", "seat.uff"],
        &[("MORTISE_TEST_FAULT", "internal")],
    );
    expect(&r, 3, "internal error");
    let r = mortise_in(
        &d,
        &["inspect", "seat.uff"],
        &[("MORTISE_TEST_FAULT", "panic")],
    );
    expect(&r, 3, "a bug in mortise");
    assert!(
        r.stderr.contains("MORTISE_TEST_FAULT=panic"),
        "{}",
        r.stderr
    );
    assert!(!r.stderr.contains("thread 'main' panicked"), "{}", r.stderr);
    // with --json, the JSON document says it too
    for fault in ["internal", "panic"] {
        let r = mortise_in(
            &d,
            &["audit", "seat.uff", "--json"],
            &[("MORTISE_TEST_FAULT", fault)],
        );
        assert_eq!(r.code, 3, "{}", r.stderr);
        let j = r.json();
        assert_eq!(j["exit_code"], 3);
        assert_eq!(j["error"]["kind"], "internal");
        assert_eq!(j["command"], "audit");
    }
    // the hook takes only those two values
    let r = mortise_in(&d, &["inspect", "seat.uff"], &[("MORTISE_TEST_FAULT", "1")]);
    expect(&r, 2, "MORTISE_TEST_FAULT");
}
