//! `--json` through the real binary: standard output holds one JSON document,
//! always, also when a file or a recipe fails (the good file's result and the
//! bad file's error with its place); the exit code says whether anything
//! failed; standard error holds a message, never the JSON.
//!
//! The data are single-DOF receptances 1/(k − ω²m + iωc) written by
//! `mortise::io::save`; the checks here are about the command line's
//! contract, not the physics (the parsers have their own reference tests).

mod cli_support;
mod common;

use cli_support::{corrupt_uff, mortise, sdof, write, Ran};
use mortise::io::ExportFormat;
use std::path::Path;

fn s(p: &Path) -> String {
    p.to_str().unwrap().to_string()
}

/// Standard error carries the message only: not the JSON, not parseable as JSON.
fn stderr_is_a_message(r: &Ran) {
    assert!(r.stderr.starts_with("mortise: "), "{}", r.stderr);
    assert!(
        serde_json::from_str::<serde_json::Value>(&r.stderr).is_err(),
        "{}",
        r.stderr
    );
    assert!(!r.stderr.contains('{'), "JSON on stderr: {}", r.stderr);
}

/// A good UFF and a bad one (line 16 holds 'abc' where a number belongs).
fn good_and_bad(d: &Path) -> (String, String) {
    let good = d.join("seat.uff");
    write(&good, &sdof("seat", 2.0, 8e4, 40.0, 50), ExportFormat::Uff);
    let bad = d.join("bad.uff");
    corrupt_uff(&good, &bad, 16);
    (s(&good), s(&bad))
}

#[test]
fn inspect_json_holds_the_good_file_and_the_bad_files_error_with_its_line() {
    let d = common::scratch("cli_json_inspect");
    let (good, bad) = good_and_bad(&d);
    let r = mortise(&d, &["inspect", &good, &bad, "--json"]);
    let j = r.json();
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert_eq!(j["ok"], false);
    assert_eq!(j["exit_code"], 1);
    assert_eq!(j["command"], "inspect");
    let files = j["files"].as_array().unwrap();
    assert_eq!(files.len(), 2);
    assert_eq!(files[0]["file"], good.as_str());
    assert_eq!(files[0]["ok"], true);
    assert_eq!(files[0]["sets"][0]["grid"]["lines"], 50);
    assert_eq!(files[0]["sets"][0]["kind"], "receptance");
    assert_eq!(files[1]["ok"], false);
    let e = &files[1]["error"];
    assert_eq!(e["kind"], "parse");
    assert_eq!(e["location"]["line"], 16, "{e}");
    assert!(e["file"].as_str().unwrap().ends_with("bad.uff"), "{e}");
    assert!(e["message"].as_str().unwrap().contains("'abc'"), "{e}");
    stderr_is_a_message(&r);
    assert!(r.stderr.contains("1 of 2 file(s)"), "{}", r.stderr);

    // all good: ok, exit 0, nothing on stderr
    let r = mortise(&d, &["inspect", &good, "--json"]);
    assert_eq!((r.code, r.stderr.as_str()), (0, ""));
    assert_eq!(r.json()["ok"], true);
    assert_eq!(r.json()["exit_code"], 0);
}

#[test]
fn audit_json_holds_every_file_in_order_with_the_failure_in_its_place() {
    let d = common::scratch("cli_json_audit");
    let (good, bad) = good_and_bad(&d);
    let gone = s(&d.join("gone.uff"));
    let r = mortise(&d, &["audit", &bad, &good, &gone, "--json"]);
    let j = r.json();
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert_eq!(j["ok"], false);
    let a = j["audits"].as_array().unwrap();
    assert_eq!(a.len(), 3);
    assert_eq!(a[0]["ok"], false);
    assert_eq!(a[0]["error"]["location"]["line"], 16);
    assert_eq!(a[1]["ok"], true);
    let checks = a[1]["reports"][0]["checks"].as_array().unwrap();
    assert!(checks.iter().any(|c| c["check"] == "passivity"));
    assert_eq!(a[2]["ok"], false);
    assert_eq!(a[2]["error"]["kind"], "io");
    assert!(j["caution"]
        .as_str()
        .unwrap()
        .contains("engineering estimates"));
    stderr_is_a_message(&r);
    assert!(r.stderr.contains("2 of 3 file(s)"), "{}", r.stderr);
    // the text form reports the same, on stdout, and fails the same way
    let t = mortise(&d, &["audit", &bad, &good]);
    assert_eq!(t.code, 1);
    assert!(t.stdout.contains("bad.uff\n  error: "), "{}", t.stdout);
    assert!(t.stdout.contains("passivity"), "{}", t.stdout);
}

#[test]
fn run_json_reports_a_recipe_error_with_its_place() {
    let d = common::scratch("cli_json_run");
    write(
        &d.join("seat.csv"),
        &sdof("seat", 2.0, 8e4, 40.0, 50),
        ExportFormat::Csv,
    );
    let recipe = |kind: &str| {
        serde_json::json!({
            "format": "mortise-recipe", "version": 1,
            "components": { "seat": { "file": "seat.csv" } },
            "steps": [ { "id": "y", "op": "convert", "from": "seat", "kind": kind } ],
            "outputs": ["y"]
        })
        .to_string()
    };
    std::fs::write(d.join("bad.recipe.json"), recipe("sideways")).unwrap();
    let r = mortise(&d, &["run", "bad.recipe.json", "-o", "out", "--json"]);
    let j = r.json();
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert_eq!(
        (j["ok"].clone(), j["exit_code"].clone()),
        (false.into(), 1.into())
    );
    assert_eq!(j["recipe"], "bad.recipe.json");
    assert_eq!(j["error"]["file"], "bad.recipe.json");
    assert!(
        j["error"]["message"]
            .as_str()
            .unwrap()
            .contains("unknown FRF kind 'sideways'"),
        "{j}"
    );
    stderr_is_a_message(&r);

    std::fs::write(d.join("good.recipe.json"), recipe("mobility")).unwrap();
    let r = mortise(&d, &["run", "good.recipe.json", "-o", "out", "--json"]);
    let j = r.json();
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(j["ok"], true);
    let files: Vec<&str> = j["files"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f.as_str().unwrap())
        .collect();
    assert_eq!(files, ["out/y.uff", "out/y.csv", "out/report.json"]);
    assert!(d.join("out/report.json").exists());
    assert!(j["report"].is_object());
}

#[test]
fn convert_json_lists_each_input_and_what_was_written() {
    let d = common::scratch("cli_json_convert");
    let (good, bad) = good_and_bad(&d);
    let r = mortise(&d, &["convert", &good, &bad, "-o", "all.csv", "--json"]);
    let j = r.json();
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert_eq!(j["inputs"][0]["ok"], true);
    assert_eq!(j["inputs"][0]["sets"][0], "seat");
    assert_eq!(j["inputs"][1]["ok"], false);
    assert_eq!(j["inputs"][1]["error"]["location"]["line"], 16);
    // the good file was still written
    assert_eq!(j["output"]["file"], "all.csv");
    assert_eq!(j["output"]["sets"], 1);
    assert!(d.join("all.csv").exists());
    stderr_is_a_message(&r);
}

#[test]
fn couple_json_and_usage_errors_with_json_are_json_too() {
    let d = common::scratch("cli_json_couple");
    write(
        &d.join("a.csv"),
        &sdof("a", 2.0, 8e4, 40.0, 50),
        ExportFormat::Csv,
    );
    write(
        &d.join("b.csv"),
        &sdof("b", 1.0, 3e4, 10.0, 50),
        ExportFormat::Csv,
    );
    let r = mortise(
        &d,
        &[
            "couple",
            "a.csv",
            "b.csv",
            "--join",
            "a:1+Z = b:1+Z",
            "-o",
            "ab.csv",
            "--json",
        ],
    );
    let j = r.json();
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert_eq!(j["output"]["file"], "ab.csv");
    assert_eq!(j["output"]["format"], "csv");
    assert!(j["report"]["steps"].is_array(), "{j}");

    // a DOF that neither file has: a data error, in the JSON
    let r = mortise(
        &d,
        &[
            "couple",
            "a.csv",
            "b.csv",
            "--join",
            "a:9+Z = b:1+Z",
            "-o",
            "ab.csv",
            "--json",
        ],
    );
    let j = r.json();
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert_eq!(j["error"]["kind"], "dof");
    assert!(j["message"].as_str().unwrap().contains("a:9+Z"), "{j}");
    stderr_is_a_message(&r);

    // a bad command line with --json: still one JSON document, exit 2
    for argv in [
        vec![
            "couple",
            "a.csv",
            "b.csv",
            "--join",
            "a:1+Z = b:1+Z",
            "--json",
        ],
        vec!["inspect", "a.csv", "--json", "--colour", "red"],
        vec!["audit", "--json"],
    ] {
        let r = mortise(&d, &argv);
        let j = r.json();
        assert_eq!(r.code, 2, "{argv:?}: {}", r.stderr);
        assert_eq!(j["ok"], false);
        assert_eq!(j["exit_code"], 2);
        assert_eq!(j["error"]["kind"], "usage");
        stderr_is_a_message(&r);
    }
}
