//! Error messages of the parsers on long input: a 100 kB DOF label or a
//! 1 MB token is quoted through `error::quote` (60 characters, "…" and
//! the length), never echoed whole, and every error keeps its place (file,
//! and line or byte or field). Robustness tests of the messages, each
//! naming what it checks.

mod parse_support;

use mortise::error::{Error, ErrorKind, Location};
use mortise::io::{self, csv, merge, ImportOptions};
use parse_support::{dataset, pressure_map, Counting};

#[global_allocator]
static ALLOC: Counting = Counting;

/// The message is short, shows the cut, and the error has its place.
fn short_and_placed(e: &Error, file: &str, what: &str) {
    let shown = e.to_string();
    assert!(
        shown.len() < 1_000,
        "{what}: {} bytes: {}",
        shown.len(),
        &shown[..300]
    );
    assert!(
        shown.contains("characters)") || shown.contains("bytes)"),
        "{what}: no cut shown: {shown}"
    );
    assert_eq!(e.file.as_deref(), Some(file), "{what}: {shown}");
    // a verdict on the whole file (kind Unsupported) has the file as its place
    assert!(
        e.location.is_some() || e.field.is_some() || e.kind == ErrorKind::Unsupported,
        "{what}: no place: {shown}"
    );
}

fn native(header_extra: &str, out_label: &str, row: &str) -> String {
    format!(
        "# mortise-frf 1\n# out-quantity: acceleration\n# in-quantity: force\n# units: SI\n{header_extra}\
# output: {out_label}\n# input: w:1+Z\nfreq_Hz,re {out_label}/w:1+Z,im {out_label}/w:1+Z\n{row}\n"
    )
}

#[test]
fn our_csv_quotes_long_labels_and_tokens() {
    let label = format!("w:{}+Z", "n".repeat(100_000));
    let token = "7".repeat(1_000_000) + "x";
    // a 1 MB token in a value cell: line 9, column 2
    let t = native("", "w:1+Z", &format!("1,{token},0"));
    let e = io::load(t.as_bytes(), "w.csv", &ImportOptions::default()).unwrap_err();
    short_and_placed(&e, "w.csv", "value cell");
    assert_eq!(e.location, Some(Location::Line(8)), "{e}");
    // a 100 kB DOF label whose column header does not match
    let t = native("", &label, "1,1,0").replace(&format!("re {label}"), "re other");
    let e = io::load(t.as_bytes(), "w.csv", &ImportOptions::default()).unwrap_err();
    short_and_placed(&e, "w.csv", "column header");
    // the same label twice: the duplicate-DOF message
    let t = format!(
        "# mortise-frf 1\n# out-quantity: acceleration\n# in-quantity: force\n# units: SI\n\
# output: {label}\n# output: {label}\n# input: w:1+Z\nfreq_Hz,re {label}/w:1+Z,im {label}/w:1+Z,re {label}/w:1+Z,im {label}/w:1+Z\n1,1,0,1,0\n"
    );
    let e = io::load(t.as_bytes(), "w.csv", &ImportOptions::default()).unwrap_err();
    short_and_placed(&e, "w.csv", "duplicate DOF");
    // a 1 MB header key, quantity, signal, units and 'missing' value
    for extra in [
        format!("# {token}: x\n"),
        format!("# {token}\n"),
        format!("# signal: {token}\n"),
        format!("# missing: {token}\n"),
        format!("# coherence: {token}\n"),
        format!("# provenance: \"{token}\"\n"),
    ] {
        let t = native(&extra, "w:1+Z", "1,1,0");
        let e = io::load(t.as_bytes(), "w.csv", &ImportOptions::default()).unwrap_err();
        short_and_placed(&e, "w.csv", &extra[..12]);
    }
    let t = native("", "w:1+Z", "1,1,0").replace("acceleration", &token);
    let e = io::load(t.as_bytes(), "w.csv", &ImportOptions::default()).unwrap_err();
    short_and_placed(&e, "w.csv", "quantity");
    let t = native("", "w:1+Z", "1,1,0").replace("units: SI", &format!("units: {token}"));
    let e = io::load(t.as_bytes(), "w.csv", &ImportOptions::default()).unwrap_err();
    short_and_placed(&e, "w.csv", "units");
}

#[test]
fn a_supplier_csv_quotes_long_tokens_and_labels() {
    let token = "9".repeat(1_000_000) + "e";
    let head = "title\nfreq_Hz,p_bed_a1_re,p_bed_a1_im,p_bed_a2_re,p_bed_a2_im,p_bed_a3_re,p_bed_a3_im,p_bed_a4_re,p_bed_a4_im\n";
    let t = format!("{head}10,1,0,1,0,1,0,1,0\n11,1,0,1,0,1,0,1,0\n12,1,0,{token},0,1,0,1,0\n");
    let opts = ImportOptions {
        column_map: Some(pressure_map()),
        ..ImportOptions::default()
    };
    let e = io::load(t.as_bytes(), "p.csv", &opts).unwrap_err();
    short_and_placed(&e, "p.csv", "value cell");
    assert_eq!(e.location, Some(Location::Line(5)), "{e}");
    // a map naming a column by a 100 kB name, against a header of 10,000
    // long names: neither is echoed whole
    let mut map = pressure_map();
    map.entries[0].out_dof = format!("room:{}", "b".repeat(100_000));
    map.entries[1].out_dof = map.entries[0].out_dof.clone();
    map.entries[1].in_dof = map.entries[0].in_dof.clone();
    let opts = ImportOptions {
        column_map: Some(map),
        ..ImportOptions::default()
    };
    let t = format!("{head}10,1,0,1,0,1,0,1,0\n11,1,0,1,0,1,0,1,0\n");
    let e = io::load(t.as_bytes(), "p.csv", &opts).unwrap_err();
    short_and_placed(&e, "p.csv", "entry given twice");
    let mut map = pressure_map();
    map.freq = csv::ColumnRef::Name("f".repeat(100_000));
    let opts = ImportOptions {
        column_map: Some(map),
        ..ImportOptions::default()
    };
    let wide: Vec<String> = (0..10_000)
        .map(|k| format!("{k}{}", "c".repeat(100)))
        .collect();
    let t = format!(
        "title\n{}\n10,1,0,1,0,1,0,1,0\n11,1,0,1,0,1,0,1,0\n",
        wide.join(",")
    );
    let e = io::load(t.as_bytes(), "p.csv", &opts).unwrap_err();
    short_and_placed(&e, "p.csv", "unknown column name");
}

#[test]
fn uff_quotes_long_tokens_and_labels() {
    // a 1 MB token among the values, and a 1 MB units label read by the
    // blank-separated fallback of record 9
    let token = "1".repeat(1_000_000) + "q";
    let d = dataset("NONE", 1, 1, 1.0, 2);
    let lines: Vec<&str> = d.lines().collect();
    let mut bad = lines.clone();
    let row = format!("1.0 {token}");
    bad[13] = &row;
    let e = io::load(
        bad.join("\n").as_bytes(),
        "u.uff",
        &ImportOptions::default(),
    )
    .unwrap_err();
    short_and_placed(&e, "u.uff", "value token");
    assert_eq!(e.location, Some(Location::Line(14)), "{e}");
    let mut bad = lines.clone();
    let rec9 = format!("12 0 0 0 NONE {token}");
    bad[10] = &rec9;
    let e = io::load(
        bad.join("\n").as_bytes(),
        "u.uff",
        &ImportOptions::default(),
    )
    .unwrap_err();
    short_and_placed(&e, "u.uff", "units label");
    assert_eq!(e.location, Some(Location::Line(11)), "{e}");
}

#[test]
fn detection_and_merge_quote_long_input() {
    let token = "z".repeat(1_000_000);
    // plain text that is not data is not quoted at all
    let e = io::detect(format!("{token}\nmore\n").as_bytes(), "t.txt").unwrap_err();
    assert!(
        e.to_string().len() < 1_000 && !e.to_string().contains("zzz"),
        "{e}"
    );
    assert_eq!(e.file.as_deref(), Some("t.txt"));
    let e = io::detect(format!("{{\"format\": \"{token}\"}}").as_bytes(), "t.json").unwrap_err();
    short_and_placed(&e, "t.json", "JSON format field");
    // merging sets of different components names them quoted
    let a = io::load(
        dataset("NONE", 1, 1, 1.0, 2).as_bytes(),
        "a.uff",
        &ImportOptions {
            component: Some(token.clone()),
            ..ImportOptions::default()
        },
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let b = io::load(
        dataset("NONE", 1, 2, 1.0, 2).as_bytes(),
        "b.uff",
        &ImportOptions::default(),
    )
    .unwrap_or_else(|e| panic!("{e}"));
    let e = merge::merge(vec![a.sets[0].clone(), b.sets[0].clone()])
        .unwrap_err()
        .in_file("a.uff + b.uff");
    short_and_placed(&e, "a.uff + b.uff", "merge of components");
}
