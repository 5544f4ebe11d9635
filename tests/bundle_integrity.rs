//! Bundle integrity: every hash a bundle records (each input file's bytes,
//! each stored set's canonical bytes, the whole content) is checked when it is
//! opened, and a bundle failing one is refused in plain words naming the entry.
//! The reference for the hashes is an independent implementation of the
//! layout documented in src/io/bundle.rs, in Python's hashlib and struct
//! (tests/py/bundle_hashes.py); SHA-256 itself is FIPS 180-4.

mod common;

use mortise::frf::{Direction, Dof, FrfSet, Provenance};
use mortise::io::bundle::{self, Bundle, BundleInput};
use mortise::io::{self, ExportFormat};
use mortise::units::Quantity;
use mortise::workspace::{BundleOptions, Workspace};
use num_complex::Complex64;
use serde_json::json;
use std::collections::BTreeMap;

fn freqs() -> Vec<f64> {
    (1..=40).map(|i| i as f64 * 2.5).collect()
}

/// A one-mass receptance 1/(k − ω²m + iωc) between two DOFs of a part
/// (common practice: single-degree-of-freedom oscillator).
fn part(comp: &str, m: f64, k: f64, c: f64) -> FrfSet {
    let d1 = Dof::new(comp, "1", Direction::X);
    let d2 = Dof::new(comp, "2", Direction::X);
    let mut s = FrfSet::zeros(
        comp,
        freqs(),
        vec![d1.clone(), d2.clone()],
        vec![d1, d2],
        Quantity::Displacement,
        Quantity::Force,
    );
    for l in 0..s.n_lines() {
        let w = s.omega(l);
        let h = Complex64::new(1.0, 0.0) / Complex64::new(k - w * w * m, w * c);
        for i in 0..2 {
            for j in 0..2 {
                s.set(l, i, j, h * if i == j { 1.0 } else { 0.5 });
            }
        }
    }
    s
}

fn csv(s: &FrfSet) -> Vec<u8> {
    io::save(std::slice::from_ref(s), ExportFormat::Csv).unwrap()
}

fn recipe() -> String {
    json!({
        "format": "mortise-recipe", "version": 1, "title": "wall and unit",
        "components": { "wall": { "file": "wall.csv" }, "unit": { "file": "unit.csv" } },
        "steps": [
            { "id": "mounted", "op": "couple", "parts": ["wall", "unit"],
              "joints": [{ "a": "wall:1+X", "b": "unit:1+X", "type": "spring", "k": 2e5 }] },
            { "id": "tip", "op": "select", "from": "mounted", "outputs": ["wall:2+X"], "inputs": ["wall:2+X"] }
        ],
        "outputs": ["mounted", "tip"]
    })
    .to_string()
}

fn wall() -> FrfSet {
    part("wall", 40.0, 4e6, 300.0)
}

fn unit() -> FrfSet {
    part("unit", 8.0, 9e5, 40.0)
}

fn loaded() -> Workspace {
    let mut ws = Workspace::new();
    ws.load_file("wall.csv", &csv(&wall()), json!({})).unwrap();
    ws.load_file("unit.csv", &csv(&unit()), json!({})).unwrap();
    ws.run_recipe(&recipe()).unwrap();
    ws
}

fn withholding(name: &str) -> BundleOptions {
    let mut include = BTreeMap::new();
    include.insert(name.to_string(), false);
    BundleOptions {
        created: "2026-12-01T08:00:00Z".into(),
        include_raw: include,
        ..Default::default()
    }
}

/// A bundle written directly, with a set that exercises every part of the
/// canonical bytes: a non-ASCII name, a negative DOF, a missing entry (NaN),
/// coherence with NaN and infinity, provenance, warnings; the input travels
/// as sets (as version 1 bundles carried them).
fn crafted() -> Vec<u8> {
    let mut s = part("gehäuse", 2.0, 5e4, 3.0);
    s.name = "gehäuse — casing".into();
    s.outputs[1].positive = false;
    s.present[1] = false;
    for l in 0..s.n_lines() {
        s.set(l, 0, 1, Complex64::new(f64::NAN, f64::NAN));
    }
    s.set(3, 1, 1, Complex64::new(0.123456789, -7.5e-300));
    let mut c = vec![0.5; s.data.len()];
    c[0] = f64::NAN;
    c[1] = f64::INFINITY;
    s.coherence = Some(c);
    s.provenance.push(Provenance {
        file: "casing.uff".into(),
        sha256: "ab".repeat(32),
        format: "uff58-ascii".into(),
        options: "component=gehäuse".into(),
    });
    s.warnings
        .push("line 4: a \"quoted\" remark\twith a tab".into());
    let mut b = Bundle::new("2026-12-01T08:00:00Z");
    b.inputs.push(BundleInput {
        name: "casing.uff".into(),
        sha256: "ab".repeat(32),
        format: "uff58-ascii".into(),
        options: json!({"component": "gehäuse"}),
        sets: Some(vec![s.clone()]),
        data: None,
    });
    b.results.push(s);
    b.recipe = Some(json!({"format": "mortise-recipe", "version": 1}));
    bundle::write(&b).unwrap()
}

/// Put a correct content SHA-256 back after an edit (what a forger does).
fn rehash_content(text: &str) -> String {
    let sha = bundle::content_sha256(text.as_bytes()).unwrap();
    let at = text.rfind("\"content_sha256\": \"").unwrap() + "\"content_sha256\": \"".len();
    format!("{}{sha}{}", &text[..at], &text[at + 64..])
}

/// The Python reference's lines for a bundle file.
fn python_hashes(path: &std::path::Path) -> (String, Vec<(String, String, String)>) {
    let out = common::run_py("bundle_hashes.py", &[path.to_str().unwrap()]);
    let mut content = String::new();
    let mut sets = Vec::new();
    for line in out.lines() {
        let f: Vec<&str> = line.split(' ').collect();
        match f.as_slice() {
            ["content", h] => content = h.to_string(),
            ["set", w, c, r] => sets.push((w.to_string(), c.to_string(), r.to_string())),
            _ => panic!("unexpected line {line}"),
        }
    }
    (content, sets)
}

fn cli(args: &[&str]) -> mortise::cli::Outcome {
    mortise::cli::execute(&args.iter().map(|s| s.to_string()).collect::<Vec<_>>())
}

/// No serde or Rust wording reaches a user.
fn assert_plain(msg: &str) {
    for word in [
        "untagged",
        "variant",
        "enum",
        "struct",
        "invalid type",
        "serde",
        "`",
        "Wire",
    ] {
        assert!(!msg.contains(word), "'{word}' in: {msg}");
    }
}

#[test]
fn a_good_bundle_round_trips_and_its_hashes_match_an_independent_python_reference() {
    let ws = loaded();
    let made = ws
        .make_bundle(
            &recipe(),
            &BundleOptions {
                created: "2026-12-01T08:00:00Z".into(),
                ..Default::default()
            },
        )
        .unwrap();
    let dir = common::scratch("bundle_integrity_good");
    let path = dir.join("shared.json");
    std::fs::write(&path, &made.bytes).unwrap();
    let (content, sets) = python_hashes(&path);
    assert_eq!(made.content_sha256, content, "content hash against Python");
    assert_eq!(sets.len(), 2, "the two results");
    for (w, computed, recorded) in &sets {
        assert_eq!(computed, recorded, "{w}: set hash against Python");
    }
    // opened: the same hash, the same numbers
    let mut back = Workspace::new();
    let opened = back.open_bundle("shared.json", &made.bytes).unwrap();
    assert_eq!(opened.content_sha256.as_deref(), Some(content.as_str()));
    assert_eq!(opened.version, 4);
    assert!(opened.notes.is_empty(), "{:?}", opened.notes);
    let (a, b) = (ws.results().0, back.results().0);
    assert_eq!(a.len(), b.len());
    for (x, y) in a.iter().zip(&b) {
        assert_eq!(x.data, y.data);
    }
    // the CLI prints it when it inspects the bundle
    let o = cli(&["inspect", path.to_str().unwrap()]);
    assert_eq!(o.code(), 0, "{}", o.stderr);
    assert!(
        o.stdout
            .contains(&format!("bundle content sha256: {content} (checked)")),
        "{}",
        o.stdout
    );
    // and when it runs it
    let o = cli(&[
        "run",
        path.to_str().unwrap(),
        "-o",
        dir.join("out").to_str().unwrap(),
    ]);
    assert_eq!(o.code(), 0, "{}", o.stderr);
    assert!(
        o.stdout
            .contains(&format!("bundle content sha256 {content}")),
        "{}",
        o.stdout
    );
}

#[test]
fn every_part_of_a_set_enters_its_hash_as_documented() {
    // the crafted set: non-ASCII text, NaN, infinity, provenance, warnings,
    // an input carried as sets; Python rebuilds each set's canonical bytes
    let bytes = crafted();
    let dir = common::scratch("bundle_integrity_crafted");
    let path = dir.join("crafted.json");
    std::fs::write(&path, &bytes).unwrap();
    let (content, sets) = python_hashes(&path);
    assert_eq!(sets.len(), 2, "input set and result");
    for (w, computed, recorded) in &sets {
        assert_eq!(computed, recorded, "{w}: set hash against Python");
    }
    let r = bundle::read_checked(&bytes, "crafted.json").unwrap();
    assert_eq!(r.content_sha256.as_deref(), Some(content.as_str()));
    // the CLI prints it when it makes a bundle
    let out = dir.join("made.json");
    let o = cli(&[
        "convert",
        path.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.code(), 0, "{}", o.stderr);
    let (made_content, _) = python_hashes(&out);
    assert!(
        o.stdout
            .contains(&format!("bundle content sha256 {made_content}")),
        "{}",
        o.stdout
    );
}

#[test]
fn a_tampered_set_value_is_refused_naming_the_set() {
    let text = String::from_utf8(crafted()).unwrap();
    assert_eq!(
        text.matches("0.123456789").count(),
        2,
        "input set and result"
    );
    // the result's value (the second occurrence) changed in its last digit
    let at = text.rfind("0.123456789").unwrap();
    let bad = format!("{}0.123456788{}", &text[..at], &text[at + 11..]);
    let e = bundle::read(bad.as_bytes(), "b.json").unwrap_err();
    let m = e.to_string();
    assert!(
        m.starts_with("b.json: result 1 ('gehäuse — casing'): sha256: set 'gehäuse — casing' in the bundle does not match its recorded SHA-256: recorded "),
        "{m}"
    );
    assert!(m.contains(", computed "), "{m}");
    // a forger who also puts the content hash right is still caught by the set's
    let e = bundle::read(rehash_content(&bad).as_bytes(), "b.json").unwrap_err();
    assert!(
        e.to_string().contains("result 1 ('gehäuse — casing')"),
        "{e}"
    );
    // the input's set is checked the same way
    let at = text.find("0.123456789").unwrap();
    let bad = format!("{}0.123456788{}", &text[..at], &text[at + 11..]);
    let e = bundle::read(bad.as_bytes(), "b.json").unwrap_err();
    assert!(
        e.to_string()
            .contains("input 1 ('casing.uff'): set 1 ('gehäuse — casing'): sha256: set 'gehäuse — casing' in the bundle does not match"),
        "{e}"
    );
    // the workspace (the page) refuses it too and keeps what it had
    let mut ws = loaded();
    let before = ws.results().0.len();
    let e = ws.open_bundle("b.json", bad.as_bytes()).unwrap_err();
    assert!(e.to_string().contains("does not match"), "{e}");
    assert_eq!(ws.results().0.len(), before, "the last results stay");
    assert!(ws.set("file:wall.csv#0").is_some(), "the loaded files stay");
}

#[test]
fn tampered_carried_input_bytes_are_refused() {
    let made = loaded()
        .make_bundle(&recipe(), &BundleOptions::default())
        .unwrap();
    let text = String::from_utf8(made.bytes).unwrap();
    let good = BundleInput::encode(&csv(&unit()));
    assert!(text.contains(&good));
    // one value of the supplier's file changed, re-encoded: valid base64, a
    // file mortise would read, but not the file the bundle recorded
    let mut raw = csv(&unit());
    let k = raw.iter().rposition(|b| b.is_ascii_digit()).unwrap();
    raw[k] = if raw[k] == b'9' { b'8' } else { raw[k] + 1 };
    let bad = rehash_content(&text.replace(&good, &BundleInput::encode(&raw)));
    for (kind, e) in [
        ("read", bundle::read(bad.as_bytes(), "b.json").unwrap_err()),
        (
            "open",
            Workspace::new()
                .open_bundle("b.json", bad.as_bytes())
                .unwrap_err(),
        ),
    ] {
        let m = e.to_string();
        assert!(
            m.starts_with("b.json: input 1 ('unit.csv'): data: the file's bytes in the bundle do not match its recorded SHA-256: recorded "),
            "{kind}: {m}"
        );
    }
    // not base64 at all: refused plainly, naming the input
    let bad = text.replace(&good, "@@not base64@@");
    let e = bundle::read(bad.as_bytes(), "b.json").unwrap_err();
    assert!(
        e.to_string().contains("input 1 ('unit.csv')") && e.to_string().contains("are not base64"),
        "{e}"
    );
}

/// The text with the last occurrence of `a` replaced by `b` (the input set
/// and the result of [`crafted`] are the same set, so they hash the same).
fn last_replaced(text: &str, a: &str, b: &str) -> String {
    let at = text.rfind(a).unwrap();
    format!("{}{b}{}", &text[..at], &text[at + a.len()..])
}

#[test]
fn a_hash_that_is_not_hex_is_refused_plainly() {
    let text = String::from_utf8(crafted()).unwrap();
    // the result's own hash: the first field of the first result
    let result_sha = {
        let from = text.find("\"results\": [").unwrap();
        let at = from + text[from..].find("\"sha256\": \"").unwrap() + 11;
        text[at..at + 64].to_string()
    };
    let content_sha = bundle::read_checked(text.as_bytes(), "b.json")
        .unwrap()
        .content_sha256
        .unwrap();
    let cases = [
        // the input file's hash
        (
            text.replacen(&"ab".repeat(32), "not a hash", 1),
            "input 1 ('casing.uff'): sha256: 'not a hash' is not a SHA-256 (64 hexadecimal digits)",
        ),
        // a set's hash: 64 characters, one not hex
        (
            last_replaced(&text, &result_sha, &format!("{}g", &result_sha[..63])),
            "result 1 ('gehäuse — casing'): sha256: '",
        ),
        // a set's hash that is not text at all
        (
            last_replaced(&text, &format!("\"{result_sha}\""), "12"),
            "result 1 ('gehäuse — casing'): sha256: found the number 12; expected text",
        ),
        // the content hash, too short
        (
            text.replace(
                &format!("\"content_sha256\": \"{content_sha}\""),
                "\"content_sha256\": \"abc\"",
            ),
            "b.json: content_sha256: 'abc' is not a SHA-256 (64 hexadecimal digits)",
        ),
    ];
    for (bad, want) in cases {
        assert_ne!(bad, text);
        let e = bundle::read(bad.as_bytes(), "b.json").unwrap_err();
        let m = e.to_string();
        assert!(m.contains(want), "want '{want}' in: {m}");
        assert!(
            m.contains("is not a SHA-256") || m.contains("expected text"),
            "{m}"
        );
        assert_plain(&m);
    }
}

#[test]
fn a_whole_content_mismatch_is_refused() {
    let text = String::from_utf8(crafted()).unwrap();
    let refused = |bad: &str, want: &str| {
        let e = bundle::read(bad.as_bytes(), "b.json").unwrap_err();
        let m = e.to_string();
        assert!(m.starts_with("b.json: content_sha256: "), "{m}");
        assert!(m.contains(want), "{m}");
    };
    // what no set hash covers: the creation time, the recipe
    refused(
        &text.replace("2026-12-01T08:00:00Z", "2026-12-02T08:00:00Z"),
        "the bundle's content does not match its recorded SHA-256: recorded ",
    );
    refused(
        &text.replace("\"version\": 1", "\"version\": 2"),
        "does not match its recorded SHA-256",
    );
    // the same JSON laid out otherwise is no longer what was recorded
    refused(
        &text.replace('\n', "\r\n"),
        "changing its line endings counts too",
    );
    // the field moved from its place at the end
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    refused(
        &serde_json::to_string(&v).unwrap(),
        "is not the bundle's last field",
    );
    // a whole-content hash that is missing in a version 3 bundle
    let cut = text.rfind(",\n  \"content_sha256\"").unwrap();
    let e = bundle::read(format!("{}\n}}\n", &text[..cut]).as_bytes(), "b.json").unwrap_err();
    assert!(
        e.to_string()
            .contains("content_sha256: missing; expected text"),
        "{e}"
    );
}

#[test]
fn hashes_prove_content_not_origin() {
    // whoever alters a bundle can recompute every hash: a consistent forgery
    // opens (the README says so; only comparing the content hash with the
    // sender's, by another channel, tells it apart)
    let text = String::from_utf8(crafted()).unwrap();
    let forged = rehash_content(&text.replace("2026-12-01T08:00:00Z", "2030-01-01T00:00:00Z"));
    let r = bundle::read_checked(forged.as_bytes(), "b.json").unwrap();
    let orig = bundle::read_checked(text.as_bytes(), "b.json").unwrap();
    assert_ne!(r.content_sha256, orig.content_sha256);
}

#[test]
fn malformed_bundles_get_plain_messages_naming_the_entry() {
    let text = String::from_utf8(crafted()).unwrap();
    let at = text.rfind("0.123456789").unwrap();
    let with_value = |v: &str| format!("{}{v}{}", &text[..at], &text[at + 11..]);
    let cases: Vec<(String, &str)> = vec![
        // the case issue 10 found: serde's untagged-enum message
        (
            with_value("true"),
            "result 1 ('gehäuse — casing'): data, value 16, real part: found true; expected a number, null (NaN), \"inf\" or \"-inf\"",
        ),
        (
            with_value("{\"x\": 1}"),
            "data, value 16, real part: found an object; expected a number",
        ),
        (
            with_value("\"lots\""),
            "data, value 16, real part: found the text 'lots'; expected a number",
        ),
        (
            text.replacen("\"out_qty\": \"displacement\"", "\"out_qty\": \"speed\"", 2),
            "input 1 ('casing.uff'): set 1 ('gehäuse — casing'): out_qty: found the text 'speed'; expected a quantity: displacement, velocity",
        ),
        (
            text.replacen("\"dir\": \"X\"", "\"dir\": 7", 1),
            "outputs, DOF 1.dir: found the number 7; expected a direction: X, Y, Z, RX, RY, RZ, Scalar",
        ),
        (
            text.replacen("\"positive\": true", "\"positive\": \"yes\"", 1),
            "outputs, DOF 1.positive: found the text 'yes'; expected true or false",
        ),
        (
            text.replacen("\"positive\": true", "\"positive\": true, \"colour\": \"red\"", 1),
            "input 1 ('casing.uff'): set 1 ('gehäuse — casing'): outputs, DOF 1.colour: unknown field 'colour'; a version 4 bundle has here: component, node, dir, positive",
        ),
        (
            text.replacen("\"created\":", "\"kreated\": 1, \"created\":", 1),
            "b.json: kreated: unknown field 'kreated'; a version 4 bundle has here: format, version",
        ),
        (
            text.replacen("\"created\": \"2026-12-01T08:00:00Z\"", "\"created\": [5]", 1),
            "b.json: created: found a list of 1 item(s); expected text",
        ),
        (
            text.replacen("\"name\": \"casing.uff\"", "\"name\": \"../../etc/passwd\"", 1),
            "input 1 ('../../etc/passwd'): name: not a plain file name",
        ),
        (
            text.replacen(
                "\"name\": \"casing.uff\"",
                &format!("\"name\": \"{}/\"", "x".repeat(100_000)),
                1,
            ),
            "xx… (100001 characters)'): name: not a plain file name",
        ),
    ];
    for (bad, want) in cases {
        assert_ne!(bad, text);
        let e = bundle::read(bad.as_bytes(), "b.json").unwrap_err();
        let m = e.to_string();
        assert!(m.contains(want), "want '{want}' in: {m}");
        assert!(m.len() < 600, "a short message: {} characters", m.len());
        assert_plain(&m);
        // the CLI says the same, exit code 1
        let dir = common::scratch("bundle_integrity_malformed");
        let p = dir.join("b.json");
        std::fs::write(&p, &bad).unwrap();
        let o = cli(&["inspect", p.to_str().unwrap()]);
        assert_eq!(o.code(), 1);
        assert!(o.stdout.contains(want), "{}", o.stdout);
        assert_plain(&o.stdout);
    }
    // not JSON: no serde wording either
    let e = bundle::read(b"{\"format\": \"mortise-bundle\", x}", "b.json").unwrap_err();
    assert_plain(&e.to_string());
    assert!(e.to_string().contains("not valid JSON"), "{e}");
}

/// A version 2 bundle as mortise wrote it: no set or content hashes.
fn as_version_2(v3: &[u8]) -> Vec<u8> {
    let mut v: serde_json::Value = serde_json::from_slice(v3).unwrap();
    let o = v.as_object_mut().unwrap();
    o.remove("content_sha256");
    o.insert("version".into(), 2.into());
    for s in o["results"].as_array_mut().unwrap() {
        s.as_object_mut().unwrap().remove("sha256");
    }
    serde_json::to_vec_pretty(&v).unwrap()
}

#[test]
fn version_2_bundles_open_with_a_plain_note_and_their_input_hashes_checked() {
    let made = loaded()
        .make_bundle(&recipe(), &BundleOptions::default())
        .unwrap();
    let old = as_version_2(&made.bytes);
    let mut ws = Workspace::new();
    let opened = ws.open_bundle("old.json", &old).unwrap();
    assert_eq!(opened.version, 2);
    assert_eq!(opened.content_sha256, None);
    assert_eq!(opened.notes.len(), 1);
    assert!(
        opened.notes[0].starts_with("a version 2 bundle records only its input files' SHA-256 (checked); its recipe, results and report carry none"),
        "{:?}",
        opened.notes
    );
    // the CLI shows the note
    let dir = common::scratch("bundle_integrity_v2");
    let p = dir.join("old.json");
    std::fs::write(&p, &old).unwrap();
    let o = cli(&["inspect", p.to_str().unwrap()]);
    assert_eq!(o.code(), 0, "{}", o.stderr);
    assert!(
        o.stdout
            .contains("warning: a version 2 bundle records only"),
        "{}",
        o.stdout
    );
    assert!(!o.stdout.contains("content sha256"), "{}", o.stdout);
    // what a version 2 bundle does record is still checked
    let good = BundleInput::encode(&csv(&unit()));
    let text = String::from_utf8(old).unwrap();
    let bad = text.replace(&good, &BundleInput::encode(b"other bytes"));
    let e = ws.open_bundle("old.json", bad.as_bytes()).unwrap_err();
    assert!(
        e.to_string()
            .contains("input 1 ('unit.csv'): data: the file's bytes"),
        "{e}"
    );
    // a set hash in a version 2 bundle is not part of that version
    let e = bundle::read(
        text.replacen(
            "\"name\": \"mounted",
            "\"sha256\": \"x\", \"name\": \"mounted",
            1,
        )
        .as_bytes(),
        "old.json",
    )
    .unwrap_err();
    assert!(
        e.to_string()
            .contains("unknown field 'sha256'; a version 2 bundle"),
        "{e}"
    );
}

#[test]
fn a_withheld_input_carries_no_hash_beyond_its_file_sha256() {
    let ws = loaded();
    let made = ws.make_bundle(&recipe(), &withholding("unit.csv")).unwrap();
    let v: serde_json::Value = serde_json::from_slice(&made.bytes).unwrap();
    let unit_in = v["inputs"]
        .as_array()
        .unwrap()
        .iter()
        .find(|i| i["name"] == "unit.csv")
        .unwrap();
    let keys: Vec<&String> = unit_in.as_object().unwrap().keys().collect();
    assert_eq!(keys, ["format", "name", "options", "sha256"]);
    // every 64-hex string in the bundle is one of: the input files' SHA-256
    // (recorded since version 1), a kept result's set hash, the content hash
    let text = String::from_utf8(made.bytes.clone()).unwrap();
    let mut allowed = vec![
        io::sha256_hex(&csv(&wall())),
        io::sha256_hex(&csv(&unit())),
        made.content_sha256.clone(),
    ];
    let back = bundle::read(&made.bytes, "b.json").unwrap();
    allowed.extend(back.results.iter().map(bundle::set_sha256));
    let bytes = text.as_bytes();
    let mut found = 0;
    for k in 0..bytes.len().saturating_sub(64) {
        let w = std::str::from_utf8(&bytes[k..k + 64]).unwrap_or("");
        let edge = |i: usize| i >= bytes.len() || !bytes[i].is_ascii_hexdigit();
        if (k == 0 || edge(k - 1)) && edge(k + 64) && bundle::is_sha256_hex(w) {
            assert!(allowed.iter().any(|a| a == w), "unexpected hash {w}");
            found += 1;
        }
    }
    assert!(found >= 3, "{found}");
    // the withheld supplier's sets hash to nothing in the bundle
    let mut supplier = Workspace::new();
    supplier
        .load_file("unit.csv", &csv(&unit()), json!({}))
        .unwrap();
    let h = bundle::set_sha256(supplier.set("file:unit.csv#0").unwrap());
    assert!(!text.contains(&h));
    // and it still opens, asks for the file, and runs once it is dropped in
    let mut r = Workspace::new();
    let opened = r.open_bundle("b.json", &made.bytes).unwrap();
    assert_eq!(opened.missing, ["unit.csv"]);
    assert_eq!(
        opened.content_sha256.as_deref(),
        Some(made.content_sha256.as_str())
    );
    r.load_file("unit.csv", &csv(&unit()), json!({})).unwrap();
    r.run_recipe(&recipe()).unwrap();
}
