//! Byte-order marks and line endings: every text format (UFF 58 ASCII, our
//! own CSV, a supplier CSV through a column map) is detected and read the
//! same with a UTF-8 byte-order mark and with CR LF, lone CR (old Mac) or
//! mixed line endings, and errors keep the right line numbers. A 58b file
//! with a byte-order mark is detected and read too.
//!
//! Robustness tests: the reference is the same file with LF endings and no
//! mark, read by the same reader; values must agree bit for bit.

mod parse_support;

use mortise::error::Location;
use mortise::frf::FrfSet;
use mortise::io::{self, csv, Format, ImportOptions};
use parse_support::{pressure_map, sample, Counting};

#[global_allocator]
static ALLOC: Counting = Counting;

const BOM: &[u8] = b"\xEF\xBB\xBF";

/// The variants of an LF text: with a mark, CR LF, CR, mixed (LF, CR LF
/// and CR in turn), and a mark with CR.
fn variants(lf: &[u8]) -> Vec<(&'static str, Vec<u8>)> {
    let lines: Vec<&[u8]> = lf.split(|&b| b == b'\n').collect();
    let join = |ends: &dyn Fn(usize) -> &'static [u8]| {
        let mut v = Vec::new();
        for (k, l) in lines.iter().enumerate() {
            v.extend_from_slice(l);
            if k + 1 < lines.len() {
                v.extend_from_slice(ends(k));
            }
        }
        v
    };
    let bom = |v: Vec<u8>| [BOM, &v].concat();
    vec![
        ("BOM", bom(lf.to_vec())),
        ("CR LF", join(&|_| b"\r\n")),
        ("CR", join(&|_| b"\r")),
        (
            "mixed",
            join(&|k| match k % 3 {
                0 => b"\n",
                1 => b"\r\n",
                _ => b"\r",
            }),
        ),
        ("BOM and CR", bom(join(&|_| b"\r"))),
    ]
}

fn same_values(a: &[FrfSet], b: &[FrfSet], what: &str) {
    assert_eq!(a.len(), b.len(), "{what}: set count");
    for (x, y) in a.iter().zip(b) {
        assert_eq!(x.name, y.name, "{what}");
        assert_eq!(x.outputs, y.outputs, "{what}");
        assert_eq!(x.inputs, y.inputs, "{what}");
        assert_eq!(x.present, y.present, "{what}");
        assert!(
            x.freqs
                .iter()
                .zip(&y.freqs)
                .all(|(p, q)| p.to_bits() == q.to_bits()),
            "{what}: grid"
        );
        assert!(
            x.data
                .iter()
                .zip(&y.data)
                .all(|(p, q)| p.re.to_bits() == q.re.to_bits() && p.im.to_bits() == q.im.to_bits()),
            "{what}: values"
        );
    }
}

fn check_all(file: &str, lf: &[u8], format: Format, opts: &ImportOptions) {
    let reference = io::load(lf, file, opts).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(reference.format, format);
    for (what, bytes) in variants(lf) {
        let what = format!("{file} with {what}");
        assert_eq!(io::detect(&bytes, file).ok(), Some(format), "{what}");
        let got = io::load(&bytes, file, opts).unwrap_or_else(|e| panic!("{what}: {e}"));
        same_values(&reference.sets, &got.sets, &what);
    }
}

#[test]
fn uff_ascii_with_a_mark_and_any_line_endings() {
    // issue 10: with a mark the file was taken for a supplier CSV; with CR
    // endings for plain text
    check_all(
        "unit-casing.uff",
        &sample("unit-casing.uff"),
        Format::Uff58Ascii,
        &ImportOptions::default(),
    );
}

#[test]
fn uff_binary_with_a_mark() {
    let b = sample("brackets.uffb");
    let reference =
        io::load(&b, "brackets.uffb", &ImportOptions::default()).unwrap_or_else(|e| panic!("{e}"));
    let marked = [BOM, &b].concat();
    assert_eq!(
        io::detect(&marked, "brackets.uffb").ok(),
        Some(Format::Uff58Binary)
    );
    let got = io::load(&marked, "brackets.uffb", &ImportOptions::default())
        .unwrap_or_else(|e| panic!("{e}"));
    same_values(&reference.sets, &got.sets, "58b with a mark");
}

#[test]
fn our_csv_with_a_mark_and_any_line_endings() {
    let sets = io::load(
        &sample("unit-casing.uff"),
        "unit-casing.uff",
        &ImportOptions::default(),
    )
    .unwrap_or_else(|e| panic!("{e}"))
    .sets;
    let lf = csv::write_native(&sets).unwrap_or_else(|e| panic!("{e}"));
    check_all(
        "casing.csv",
        &lf,
        Format::CsvNative,
        &ImportOptions::default(),
    );
}

#[test]
fn a_supplier_csv_with_a_mark_and_any_line_endings() {
    let opts = ImportOptions {
        column_map: Some(pressure_map()),
        ..ImportOptions::default()
    };
    check_all(
        "wall-to-bed-pressure.csv",
        &sample("wall-to-bed-pressure.csv"),
        Format::CsvMapped,
        &opts,
    );
}

#[test]
fn errors_in_files_with_lone_cr_endings_name_the_right_line() {
    // one line of each file is damaged; the reported line is that line
    // whatever the endings
    let uff = sample("unit-casing.uff");
    let mut lines: Vec<Vec<u8>> = uff.split(|&b| b == b'\n').map(<[u8]>::to_vec).collect();
    // line 8 is record 6: an unknown function type in its first columns
    lines[7].splice(0..5, b"  999".iter().copied());
    for end in [&b"\r"[..], b"\r\n", b"\n"] {
        let bytes = lines.join(end);
        let e = io::load(&bytes, "c.uff", &ImportOptions::default()).unwrap_err();
        assert_eq!(e.location, Some(Location::Line(8)), "{e}");
    }
    let csv_text =
        "# mortise-frf 1\r# out-quantity: acceleration\r# in-quantity: force\r# units: SI\r\
# output: w:1+Z\r# input: w:1+Z\rfreq_Hz,re w:1+Z/w:1+Z,im w:1+Z/w:1+Z\r1,1,0\r2,x,0\r";
    let e = io::load(csv_text.as_bytes(), "w.csv", &ImportOptions::default()).unwrap_err();
    assert_eq!(e.location, Some(Location::Line(9)), "{e}");
    let mapped = "title\rfreq_Hz,p_bed_a1_re,p_bed_a1_im,p_bed_a2_re,p_bed_a2_im,p_bed_a3_re,p_bed_a3_im,p_bed_a4_re,p_bed_a4_im\r\
10,1,0,1,0,1,0,1,0\r11,1,0,1,0,1,0,1,0\r\n12,1,0,1,0,zz,0,1,0\r";
    let opts = ImportOptions {
        column_map: Some(pressure_map()),
        ..ImportOptions::default()
    };
    let e = io::load(mapped.as_bytes(), "p.csv", &opts).unwrap_err();
    assert_eq!(e.location, Some(Location::Line(5)), "{e}");
}
