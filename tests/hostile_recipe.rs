//! Recipes and files that travel between companies, made hostile on
//! purpose (issue "hostile input"): each case is a few bytes that used to
//! read the machine's files, wait forever, overwrite an output or lose its
//! place, and is now refused in plain words that name the entry. These are
//! robustness checks of mortise's own rules (common practice for tools that
//! open files from others), not numerical references.

mod cli_support;
mod common;

use cli_support::{mortise, sdof, write, Ran};
use mortise::io::ExportFormat;
use serde_json::json;
use std::path::Path;

fn fails(r: &Ran, says: &str) {
    assert_eq!(
        r.code, 1,
        "expected exit 1\n--- stdout\n{}\n--- stderr\n{}",
        r.stdout, r.stderr
    );
    assert!(
        r.stderr.contains(says),
        "stderr lacks '{says}': {}",
        r.stderr
    );
}

/// A folder `recipe/` holding `a.uff` and a recipe over `file`.
fn setup(name: &str, file: &str, outputs: serde_json::Value) -> std::path::PathBuf {
    let d = common::scratch(name);
    let r = d.join("recipe");
    std::fs::create_dir_all(&r).unwrap();
    write(
        &r.join("a.uff"),
        &sdof("a", 1.0, 1e4, 3.0, 20),
        ExportFormat::Uff,
    );
    write(
        &d.join("outside.uff"),
        &sdof("o", 1.0, 2e4, 3.0, 20),
        ExportFormat::Uff,
    );
    let text = json!({
        "format": "mortise-recipe", "version": 1,
        "components": { "A": { "file": file } },
        "steps": [
            { "id": "twice", "op": "scale", "from": "A", "factor": 2.0 },
            { "id": "a b", "op": "scale", "from": "A", "factor": 3.0 },
            { "id": "a_b", "op": "scale", "from": "A", "factor": 4.0 },
        ],
        "outputs": outputs,
    });
    std::fs::write(r.join("r.json"), text.to_string()).unwrap();
    d
}

fn run(d: &Path, extra: &[&str]) -> Ran {
    let mut args = vec!["run", "recipe/r.json", "-o", "out"];
    args.extend_from_slice(extra);
    mortise(d, &args)
}

#[test]
fn a_recipe_reads_only_inside_its_folder_unless_allowed() {
    // the file inside: runs
    let d = setup("hostile_inside", "a.uff", json!(["twice"]));
    let r = run(&d, &[]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    // a system file by '..' and by absolute path: refused, its content never quoted
    for (i, name) in [
        "../../../../../../../../etc/passwd",
        "/etc/passwd",
        "../outside.uff",
    ]
    .iter()
    .enumerate()
    {
        let d = setup(&format!("hostile_outside_{i}"), name, json!(["twice"]));
        let r = run(&d, &[]);
        fails(&r, "--read-outside");
        assert!(
            r.stderr.contains("components.A"),
            "the entry is named: {}",
            r.stderr
        );
        assert!(!r.stderr.contains("root:"), "{}", r.stderr);
        assert!(!d.join("out/twice.uff").exists());
    }
    // the user allows it: the file beside the folder is read
    let d = setup("hostile_allowed", "../outside.uff", json!(["twice"]));
    let r = run(&d, &["--read-outside"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(d.join("out/twice.uff").exists());
}

#[cfg(unix)]
#[test]
fn devices_and_pipes_are_refused_not_read() {
    // /dev/zero would read until memory runs out
    let d = common::scratch("hostile_dev");
    let r = mortise(&d, &["inspect", "/dev/zero"]);
    fails(&r, "not a regular file (a device)");
    let d = setup("hostile_dev_recipe", "/dev/zero", json!(["twice"]));
    let r = run(&d, &["--read-outside"]);
    fails(&r, "not a regular file (a device)");
    // a named pipe would wait forever for a writer
    let d = setup("hostile_fifo", "pipe.uff", json!(["twice"]));
    let made = std::process::Command::new("mkfifo")
        .arg(d.join("recipe/pipe.uff"))
        .status();
    if matches!(made, Ok(s) if s.success()) {
        let r = run(&d, &[]);
        fails(&r, "not a regular file (a named pipe)");
        let r = mortise(&d, &["inspect", "recipe/pipe.uff"]);
        fails(&r, "a named pipe");
    }
}

#[test]
fn files_over_the_size_budget_are_refused_and_the_budget_can_be_raised() {
    let d = setup("hostile_size", "a.uff", json!(["twice"]));
    let r = run(&d, &["--max-file-mb", "0.001"]);
    fails(
        &r,
        "files up to 1 kB are read (raise it with --max-file-mb)",
    );
    let r = mortise(&d, &["inspect", "recipe/a.uff", "--max-file-mb", "0.001"]);
    fails(&r, "--max-file-mb");
    let r = mortise(&d, &["inspect", "recipe/a.uff", "--max-file-mb", "1"]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let r = mortise(&d, &["inspect", "recipe/a.uff", "--max-file-mb", "-3"]);
    assert_eq!(r.code, 2, "a bad budget is a usage error: {}", r.stderr);
}

#[test]
fn outputs_that_would_share_a_file_are_refused_before_anything_is_written() {
    let d = setup("hostile_names", "a.uff", json!(["twice", "a b", "a_b"]));
    let r = run(&d, &[]);
    fails(
        &r,
        "outputs 'a b' and 'a_b' would both be written as a_b.uff",
    );
    assert!(!d.join("out/twice.uff").exists(), "nothing written");
    // names differing only in case are one file on some file systems
    let d = common::scratch("hostile_case");
    write(
        &d.join("a.uff"),
        &sdof("a", 1.0, 1e4, 3.0, 20),
        ExportFormat::Uff,
    );
    let text = json!({
        "format": "mortise-recipe", "version": 1,
        "components": { "A": { "file": "a.uff" } },
        "steps": [
            { "id": "Bed", "op": "scale", "from": "A", "factor": 2.0 },
            { "id": "bed", "op": "scale", "from": "A", "factor": 3.0 },
        ],
        "outputs": ["Bed", "bed"],
    });
    std::fs::write(d.join("r.json"), text.to_string()).unwrap();
    let r = mortise(&d, &["run", "r.json", "-o", "out"]);
    fails(
        &r,
        "outputs 'Bed' and 'bed' would both be written as bed.uff",
    );
}

#[test]
fn empty_and_control_names_are_refused() {
    let d = common::scratch("hostile_empty");
    write(
        &d.join("a.uff"),
        &sdof("a", 1.0, 1e4, 3.0, 20),
        ExportFormat::Uff,
    );
    for (what, comps, steps, says) in [
        (
            "empty component",
            json!({ "": { "file": "a.uff" } }),
            json!([]),
            "components.: the name is empty",
        ),
        (
            "empty step id",
            json!({ "A": { "file": "a.uff" } }),
            json!([{ "id": "", "op": "scale", "from": "A", "factor": 2.0 }]),
            "'id' must be a non-empty string",
        ),
        (
            "terminal escape in an id",
            json!({ "A": { "file": "a.uff" } }),
            json!([{ "id": "x\u{1b}[2J", "op": "scale", "from": "A", "factor": 2.0 }]),
            "holds control characters",
        ),
    ] {
        let text = json!({ "format": "mortise-recipe", "version": 1, "components": comps, "steps": steps, "outputs": [] });
        std::fs::write(d.join("r.json"), text.to_string()).unwrap();
        let r = mortise(&d, &["run", "r.json", "-o", "out"]);
        assert_eq!(r.code, 1, "{what}: {}", r.stderr);
        assert!(r.stderr.contains(says), "{what}: {}", r.stderr);
        assert!(!r.stderr.contains('\u{1b}'), "{what}: no raw escape echoed");
    }
}

#[test]
fn a_variant_names_only_what_exists_and_overflow_names_the_variant() {
    let d = common::scratch("hostile_variant");
    write(
        &d.join("a.uff"),
        &sdof("a", 1.0, 1e4, 3.0, 20),
        ExportFormat::Uff,
    );
    // |A| < 1e-2 m/N, so the step's 1e300 stays finite and one more 1e308 overflows
    let recipe = |variant: serde_json::Value| {
        json!({
            "format": "mortise-recipe", "version": 1,
            "components": { "A": { "file": "a.uff" } },
            "steps": [{ "id": "s", "op": "scale", "from": "A", "factor": 1e300 }],
            "variants": [variant],
            "outputs": ["s"],
        })
        .to_string()
    };
    std::fs::write(
        d.join("r.json"),
        recipe(json!({ "name": "v", "drop_joints": ["s#0"] })),
    )
    .unwrap();
    fails(
        &mortise(&d, &["run", "r.json", "-o", "out"]),
        "'drop_joints' entry 's#0' names no joint",
    );
    std::fs::write(
        d.join("r.json"),
        recipe(json!({ "name": "v", "drop_joints": ["nothing#3"] })),
    )
    .unwrap();
    fails(
        &mortise(&d, &["run", "r.json", "-o", "out"]),
        "variants[0] ('v')",
    );
    // a factor that overflows the values: the variant, the step and the factor are named
    std::fs::write(
        d.join("r.json"),
        recipe(json!({ "name": "huge", "scale": { "A": 1e308 } })),
    )
    .unwrap();
    let r = mortise(&d, &["run", "r.json", "-o", "out"]);
    fails(&r, "variants[0] ('huge'): steps[0] (id 's', op 'scale'): factor: multiplying 'A' by 1e300 overflows");
    std::fs::write(
        d.join("r.json"),
        recipe(json!({ "name": "huge", "scale": { "s": 1e308 } })),
    )
    .unwrap();
    let r = mortise(&d, &["run", "r.json", "-o", "out"]);
    fails(
        &r,
        "variants[0] ('huge'): steps[0] (id 's', op 'scale'): scale.s: multiplying",
    );
}

#[test]
fn messages_keep_their_place_and_quote_little() {
    let d = common::scratch("hostile_messages");
    // not UTF-8: the byte offset of the first bad byte
    let mut bytes = br#"{"format": "mortise-recipe", "title": "caf"#.to_vec();
    let at = bytes.len();
    bytes.extend_from_slice(b"\xe9\"}");
    std::fs::write(d.join("latin1.json"), &bytes).unwrap();
    let r = mortise(&d, &["run", "latin1.json", "-o", "out"]);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(
        r.stderr.contains(&format!("latin1.json: byte {at}: ")),
        "{}",
        r.stderr
    );
    // a 1 MB token is not echoed
    let long = "q".repeat(1_000_000);
    let text = format!(
        r#"{{"format": "mortise-recipe", "version": 1, "components": {{}}, "steps": [], "outputs": ["{long}"]}}"#
    );
    std::fs::write(d.join("long.json"), text).unwrap();
    let r = mortise(&d, &["run", "long.json", "-o", "out"]);
    assert_eq!(r.code, 1, "{}", r.stderr);
    assert!(r.stderr.len() < 1000, "{} bytes of message", r.stderr.len());
    assert!(
        r.stderr.contains("(1000000 characters)"),
        "{}",
        &r.stderr[..r.stderr.len().min(400)]
    );
}
