//! Bad input never panics; every error names the file and, where there is
//! one, the line, the field and what was expected.

use mortise::io::csv::{read_mapped, ColumnMap, ColumnRef, MapEntry, ValueColumns};
use mortise::io::{self, bundle, Format, ImportOptions};
use mortise::{ErrorKind, Quantity};

fn map_reim(out: Quantity, inp: Quantity, unit: &str) -> ColumnMap {
    ColumnMap {
        entries: vec![MapEntry {
            out_dof: "A1+Z".into(),
            in_dof: "A1+Z".into(),
            values: ValueColumns::ReIm {
                re: ColumnRef::Index(2),
                im: ColumnRef::Index(3),
            },
            coherence: None,
        }],
        unit: unit.into(),
        out_qty: out,
        in_qty: inp,
        ..ColumnMap::default()
    }
}

fn mapped_err(text: &str, map: &ColumnMap) -> mortise::Error {
    read_mapped(text.as_bytes(), "supplier.csv", map, "wall").unwrap_err()
}

fn rec() -> ColumnMap {
    map_reim(Quantity::Displacement, Quantity::Force, "mm/N")
}

/// A small valid file of our own layout, to damage.
fn native() -> String {
    let d = mortise::Dof::new("c", "1", mortise::Direction::Z);
    let s = mortise::FrfSet::zeros(
        "c",
        vec![1.0, 2.0, 3.0],
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    String::from_utf8(io::csv::write_native(&[s]).unwrap()).unwrap()
}

#[test]
fn ragged_row() {
    let e = mapped_err("1,0.1,0.2\n2,0.1\n", &rec());
    let s = e.to_string();
    assert_eq!(e.file.as_deref(), Some("supplier.csv"));
    assert!(s.contains("line 2"), "{s}");
    assert!(s.contains("2 cells; expected 3"), "{s}");
    // and in our own layout
    let t = native().replace("\n2,0,0\n", "\n2,0\n");
    let e = io::csv::read_native(t.as_bytes(), "own.csv").unwrap_err();
    let s = e.to_string();
    assert!(
        s.starts_with("own.csv: line 10: 2 cells; expected 3 as in the column-header row (line 8)"),
        "{s}"
    );
}

#[test]
fn non_numeric_cell() {
    let e = mapped_err("1,0.1,0.2\n2,abc,0.2\n", &rec());
    let s = e.to_string();
    assert!(s.contains("supplier.csv: line 2"), "{s}");
    assert!(
        s.contains("column 2 (real part of wall:A1+Z / wall:A1+Z)"),
        "{s}"
    );
    assert!(s.contains("'abc'; expected a number"), "{s}");
}

#[test]
fn nan_and_infinity_are_refused() {
    for bad in ["NaN", "inf", "-Infinity"] {
        let e = mapped_err(&format!("1,0.1,0.2\n2,0.1,{bad}\n"), &rec());
        assert_eq!(e.kind, ErrorKind::Numeric);
        let s = e.to_string();
        assert!(s.contains("line 2") && s.contains("column 3"), "{s}");
        assert!(s.contains("expected a finite number"), "{s}");
    }
    let t = native().replace("\n3,0,0\n", "\n3,NaN,0\n");
    let e = io::csv::read_native(t.as_bytes(), "own.csv").unwrap_err();
    assert!(
        e.to_string()
            .contains("line 11: column 2 (re c:1+Z/c:1+Z): value is NaN"),
        "{e}"
    );
}

#[test]
fn non_increasing_and_duplicated_frequency() {
    let e = mapped_err("1,0,0\n2,0,0\n2,0,0\n", &rec());
    assert_eq!(e.kind, ErrorKind::Grid);
    let s = e.to_string();
    assert!(s.contains("line 3"), "{s}");
    assert!(s.contains("column 1 (frequency)"), "{s}");
    assert!(s.contains("does not exceed the previous row's 2 Hz"), "{s}");
    let e = mapped_err("5,0,0\n4,0,0\n", &rec());
    assert!(
        e.to_string().contains("frequency 4 Hz does not exceed"),
        "{e}"
    );
    let t = native().replace("\n3,0,0\n", "\n1.5,0,0\n");
    let e = io::csv::read_native(t.as_bytes(), "own.csv").unwrap_err();
    assert!(e.to_string().contains("line 11: column 1 (freq_Hz)"), "{e}");
    assert!(e.to_string().contains("strictly increasing"), "{e}");
}

#[test]
fn empty_file() {
    for bytes in [&b""[..], b"  \n\n \t\n"] {
        let e = io::detect(bytes, "empty.csv").unwrap_err();
        assert_eq!(e.kind, ErrorKind::Unsupported);
        let s = e.to_string();
        assert!(s.starts_with("empty.csv: the file is empty"), "{s}");
        assert!(s.contains("accepted: UFF dataset 58"), "{s}");
    }
    let e = mapped_err("", &rec());
    assert!(
        e.to_string().contains("supplier.csv: the file is empty"),
        "{e}"
    );
}

#[test]
fn png_bytes() {
    let png = b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00\x00\x10";
    let e = io::load(png, "plot.csv", &ImportOptions::default()).unwrap_err();
    let s = e.to_string();
    assert!(
        s.starts_with("plot.csv: this looks like a PNG image"),
        "{s}"
    );
    assert!(s.contains("mortise's own CSV"), "{s}");
    for (bytes, what) in [
        (&b"%PDF-1.7\n"[..], "a PDF document"),
        (b"PK\x03\x04\x14\x00", "a zip archive"),
        (b"\x00\x01\x02\x03binary", "binary file of unknown kind"),
    ] {
        let e = io::detect(bytes, "f").unwrap_err();
        assert!(e.to_string().contains(what), "{e}");
    }
}

#[test]
fn a_text_letter() {
    let letter = b"Dear colleague,\n\nplease find the wall measurements attached.\nRegards\n";
    let e = io::detect(letter, "notes.txt").unwrap_err();
    let s = e.to_string();
    assert!(s.contains("notes.txt"), "{s}");
    assert!(s.contains("plain text without columns of numbers"), "{s}");
    // not data: its content is never quoted (a recipe may have named a private file)
    assert!(!s.contains("Dear colleague"), "{s}");
    assert!(s.contains("3 non-blank lines"), "{s}");
    assert!(s.contains("UFF dataset 58 or 58b"), "{s}");
}

#[test]
fn unknown_unit() {
    let e = mapped_err(
        "1,0,0\n",
        &map_reim(Quantity::Displacement, Quantity::Force, "furlong/N"),
    );
    assert_eq!(e.kind, ErrorKind::Unit);
    let s = e.to_string();
    assert!(s.contains("supplier.csv"), "{s}");
    assert!(s.contains("unit"), "{s}");
    assert!(s.contains("furlong"), "{s}");
}

#[test]
fn unit_contradicting_quantity() {
    // g/N is accelerance; the map says receptance (displacement per force)
    let e = mapped_err(
        "1,0,0\n",
        &map_reim(Quantity::Displacement, Quantity::Force, "g/N"),
    );
    assert_eq!(e.kind, ErrorKind::Unit);
    let s = e.to_string();
    assert!(
        s.starts_with("supplier.csv: unit: unit 'g/N' does not fit displacement per force"),
        "{s}"
    );
    assert!(s.contains("m/N"), "{s}");
}

#[test]
fn missing_column() {
    let e = mapped_err("1,0.1\n2,0.2\n", &rec());
    let s = e.to_string();
    assert!(s.contains("line 1"), "{s}");
    assert!(s.contains("the row has 2 cells; expected column 3"), "{s}");
    let mut m = rec();
    m.skip_rows = 1;
    m.freq = ColumnRef::Name("Freq".into());
    let e = mapped_err("f,re,im\n1,0,0\n", &m);
    let s = e.to_string();
    assert!(
        s.contains("frequency column: no column named 'Freq'"),
        "{s}"
    );
    assert!(s.contains("'f', 're', 'im'"), "{s}");
}

#[test]
fn supplier_csv_without_a_column_map() {
    let t = b"Frequency,Re,Im\n10,0.1,0.2\n20,0.3,0.4\n";
    assert_eq!(io::detect(t, "w.csv").unwrap(), Format::CsvMapped);
    let e = io::load(t, "w.csv", &ImportOptions::default()).unwrap_err();
    let s = e.to_string();
    assert!(s.contains("w.csv"), "{s}");
    assert!(s.contains("needs a column map"), "{s}");
    // the library's message names no face's controls (the CLI adds its flags)
    assert!(!s.contains("--freq-col"), "{s}");
    assert!(s.contains("column map \"auto\""), "{s}");
    assert!(s.contains("'Frequency,Re,Im'"), "{s}");
}

#[test]
fn bundle_wrong_format_and_version() {
    let b = br#"{"format":"mortise-recipe","version":1,"mortise_version":"0.1.0"}"#;
    let e = bundle::read(b, "r.json").unwrap_err();
    assert_eq!(
        e.to_string(),
        "r.json: format: format 'mortise-recipe'; expected 'mortise-bundle'"
    );
    let e = io::detect(b, "r.json").unwrap_err();
    assert!(
        e.to_string().contains("\"format\": \"mortise-recipe\""),
        "{e}"
    );
    let b = br#"{"format":"mortise-bundle","version":7,"mortise_version":"9.0.0"}"#;
    let e = bundle::read(b, "new.json").unwrap_err();
    assert_eq!(e.field.as_deref(), Some("version"));
    assert!(
        e.to_string()
            .contains("version 7 was written by a newer mortise"),
        "{e}"
    );
    let b = br#"{"format":"mortise-bundle","mortise_version":"0.1.0"}"#;
    let e = bundle::read(b, "nov.json").unwrap_err();
    assert!(
        e.to_string().contains("no whole-number \"version\" field"),
        "{e}"
    );
}

#[test]
fn truncated_json() {
    let d = mortise::Dof::new("c", "1", mortise::Direction::Z);
    let s = mortise::FrfSet::zeros(
        "c",
        vec![1.0, 2.0],
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    let full = io::save(&[s], io::ExportFormat::Bundle).unwrap();
    let cut = &full[..full.len() / 2];
    assert_eq!(io::detect(cut, "cut.json").unwrap(), Format::Bundle);
    let e = io::load(cut, "cut.json", &ImportOptions::default()).unwrap_err();
    let s = e.to_string();
    assert!(s.starts_with("cut.json: line "), "{s}");
    assert!(s.contains("the JSON ends early"), "{s}");
    let lines = std::str::from_utf8(cut).unwrap().lines().count();
    assert_eq!(e.location, Some(mortise::error::Location::Line(lines)));
}

#[test]
fn bundle_with_a_damaged_set() {
    // a set whose grid runs backwards is refused when read, with the set named
    let d = mortise::Dof::new("c", "1", mortise::Direction::Z);
    let s = mortise::FrfSet::zeros(
        "plate",
        vec![1.0, 2.0],
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    let full = String::from_utf8(io::save(&[s], io::ExportFormat::Bundle).unwrap()).unwrap();
    let bad = full.replacen("1.0,\n        2.0", "2.0,\n        1.0", 1);
    assert_ne!(bad, full);
    let e = bundle::read(bad.as_bytes(), "b.json").unwrap_err();
    let s = e.to_string();
    assert!(s.contains("b.json") && s.contains("'plate'"), "{s}");
    assert!(s.contains("strictly increasing"), "{s}");
}

#[test]
fn own_layout_damage() {
    let t = native().replace("# units: SI", "# units: mm");
    let e = io::csv::read_native(t.as_bytes(), "own.csv").unwrap_err();
    assert!(
        e.to_string().contains("own.csv: line 1: units: units 'mm'"),
        "{e}"
    );
    let t = native().replace("# mortise-frf 1", "# mortise-frf 2");
    let e = io::load(t.as_bytes(), "own.csv", &ImportOptions::default()).unwrap_err();
    assert!(
        e.to_string()
            .contains("layout version '2'; this mortise reads version 1"),
        "{e}"
    );
    let t = native().replace("re c:1+Z/c:1+Z", "re c:2+Z/c:1+Z");
    let e = io::csv::read_native(t.as_bytes(), "own.csv").unwrap_err();
    let s = e.to_string();
    assert!(
        s.contains("line 8: column 2: found 're c:2+Z/c:1+Z', expected 're c:1+Z/c:1+Z'"),
        "{s}"
    );
}

#[test]
fn uff_without_dataset_58() {
    let t = b"    -1\n   151\nmodel\n    -1\n";
    let e = io::detect(t, "geo.unv").unwrap_err();
    assert!(
        e.to_string().contains("without any dataset 58 or 58b"),
        "{e}"
    );
}

#[test]
fn damaged_files_never_panic() {
    // every prefix and many single-byte changes of valid files: an error or a
    // result, never a panic
    let d = mortise::Dof::new("c", "µ1", mortise::Direction::Z);
    let mut s = mortise::FrfSet::zeros(
        "c",
        vec![1.0, 2.0, 3.0],
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    s.coherence = Some(vec![0.5, f64::NAN, 1.0]);
    let own = io::save(std::slice::from_ref(&s), io::ExportFormat::Csv).unwrap();
    let mut big = "{ \"format\":\"mortise-bundle\",\"pad\":\"".to_string(); // 35 bytes: the 4096th byte falls inside an é
    big.push_str(&"é".repeat(3000)); // multi-byte text across the 4096-byte sniffing window
    big.push('"');
    let files: Vec<Vec<u8>> = vec![
        own.clone(),
        io::save(std::slice::from_ref(&s), io::ExportFormat::Bundle).unwrap(),
        "Title\nf;re;im\n1;0,1;0,2\n2;0,3;0,4\n".as_bytes().to_vec(),
        big.into_bytes(),
    ];
    let mut map = rec();
    map.skip_rows = 2;
    map.decimal_comma = true;
    let with_map = ImportOptions {
        component: None,
        signal: None,
        column_map: Some(map),
        mat: None,
        ..Default::default()
    };
    let mut x: u32 = 12345;
    for f in &files {
        for n in 0..=f.len() {
            let _ = io::load(&f[..n], "cut", &ImportOptions::default());
            let _ = io::load(&f[..n], "cut", &with_map);
        }
        for _ in 0..400 {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            let mut g = f.clone();
            let at = x as usize % g.len();
            g[at] = (x >> 8) as u8;
            let _ = io::load(&g, "flip", &ImportOptions::default());
            let _ = io::load(&g, "flip", &with_map);
            let _ = io::csv::preview(&g, "flip", with_map.column_map.as_ref().unwrap(), 5);
        }
    }
}
