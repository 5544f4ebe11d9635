//! Bad UFF input: every error names the file, the line (ASCII, 1-based) or
//! byte (binary, 0-based), the field and what was expected.
//!
//! The valid base file follows the dataset 58 record layout (records 1-11,
//! then data) as reproduced in pyuff 2.5.8 `datasets/dataset_58.py`.

use mortise::error::{Error, ErrorKind, Location};
use mortise::frf::{Direction, Dof, FrfSet};
use mortise::io::uff58;
use mortise::units::Quantity;
use num_complex::Complex64;

fn axis(code: i32, units: &str) -> String {
    format!(
        "{code:>10}{:>5}{:>5}{:>5} {:<20} {:<20}",
        0, 0, 0, "NONE", units
    )
}

/// Lines of a valid ASCII dataset: FRF, complex double; even (3 points from
/// 10 Hz by 1 Hz) or uneven with the given abscissa.
fn base(uneven: Option<[f64; 3]>) -> Vec<String> {
    let mut l = vec![
        "    -1".to_string(),
        "    58".to_string(),
        "bracket test".to_string(),
        "NONE".into(),
        "NONE".into(),
        "NONE".into(),
        "NONE".into(),
        format!(
            "{:>5}{:>10}{:>5}{:>10} {:>10}{:>10}{:>4} {:>10}{:>10}{:>4}",
            4, 0, 0, 0, "NONE", 1, 3, "NONE", 2, 3
        ),
    ];
    match uneven {
        None => {
            l.push(format!(
                "{:>10}{:>10}{:>10}{:>13}{:>13}{:>13}",
                6, 3, 1, "1.00000e+01", "1.00000e+00", "0.00000e+00"
            ));
        }
        Some(_) => {
            l.push(format!(
                "{:>10}{:>10}{:>10}{:>13}{:>13}{:>13}",
                6, 3, 0, "0.00000e+00", "0.00000e+00", "0.00000e+00"
            ));
        }
    }
    l.push(axis(18, "Hz"));
    l.push(axis(12, "m/s^2"));
    l.push(axis(13, "N"));
    l.push(axis(0, "NONE"));
    match uneven {
        None => {
            l.push(format!(
                "{:>20}{:>20}{:>20}{:>20}",
                "1.00000000000e+00", "2.00000000000e+00", "3.00000000000e+00", "4.00000000000e+00"
            ));
            l.push(format!(
                "{:>20}{:>20}",
                "5.00000000000e+00", "6.00000000000e+00"
            ));
        }
        Some(x) => {
            for (k, xv) in x.iter().enumerate() {
                l.push(format!(
                    "{:>13}{:>20}{:>20}",
                    format!("{xv:.5e}"),
                    format!("{:.11e}", k as f64 + 1.0),
                    "-1.00000000000e+00"
                ));
            }
        }
    }
    l.push("    -1".into());
    l
}

fn join(l: &[String]) -> Vec<u8> {
    let mut s = l.join("\n");
    s.push('\n');
    s.into_bytes()
}

fn err(bytes: &[u8]) -> Error {
    match uff58::read(bytes, "bad.uff", "c") {
        Ok(_) => panic!("bad input was accepted"),
        Err(e) => e,
    }
}

/// Check file, line, field and message words; returns the text.
fn check(e: &Error, line: usize, field: &str, words: &[&str]) -> String {
    let text = e.to_string();
    eprintln!("{text}");
    assert_eq!(e.file.as_deref(), Some("bad.uff"), "{text}");
    assert_eq!(e.location, Some(Location::Line(line)), "{text}");
    assert!(
        e.field.as_deref().unwrap_or("").contains(field),
        "field '{field}' not in: {text}"
    );
    for w in words {
        assert!(text.contains(w), "'{w}' not in: {text}");
    }
    text
}

#[test]
fn the_base_file_is_valid() {
    // guards the cases below: each differs from a file that reads
    let (sets, _) = uff58::read(&join(&base(None)), "good.uff", "c").unwrap();
    assert_eq!(sets[0].freqs, vec![10.0, 11.0, 12.0]);
    assert_eq!(sets[0].get(2, 0, 0), Complex64::new(5.0, 6.0));
    let (sets, _) = uff58::read(&join(&base(Some([10.0, 12.0, 15.0]))), "good.uff", "c").unwrap();
    assert_eq!(sets[0].freqs, vec![10.0, 12.0, 15.0]);
}

#[test]
fn empty_file() {
    let e = err(b"");
    check(&e, 1, "file", &["empty", "expected UFF datasets"]);
    let e = err(b"  \n\n");
    check(&e, 1, "file", &["empty"]);
}

#[test]
fn png_bytes_are_not_uff() {
    let png = b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00\x00\x10";
    let e = err(png);
    check(
        &e,
        1,
        "start tag",
        &["not a UFF file", "\\x89PNG", "'    -1'"],
    );
    assert_eq!(uff58::looks_like_uff(png), None);
}

#[test]
fn plain_text_letter_is_not_uff() {
    let letter = b"\nDear supplier,\n\nplease send the transfer functions of the bracket.\n";
    let e = err(letter);
    check(
        &e,
        2,
        "start tag",
        &["not a UFF file", "Dear supplier", "expected the start tag"],
    );
    assert_eq!(uff58::looks_like_uff(letter), None);
}

#[test]
fn truncated_record() {
    let l = base(None);
    let e = err(&join(&l[..10]));
    check(
        &e,
        11,
        "record 9",
        &["truncated record", "expected record 9"],
    );
    // the end tag arrives too early
    let mut l2 = l[..9].to_vec();
    l2.push("    -1".into());
    let e = err(&join(&l2));
    check(&e, 10, "record 8", &["after 7 of 11 header records"]);
}

#[test]
fn short_header_line() {
    let mut l = base(None);
    l[7] = l[7].chars().take(60).collect();
    let e = err(&join(&l));
    check(
        &e,
        8,
        "record 6, reference node",
        &[
            "expected an integer in columns 67-76",
            "found nothing",
            "60 characters",
        ],
    );
}

#[test]
fn non_numeric_field() {
    let mut l = base(None);
    l[8] = format!(
        "{:>10}{:>10}{:>10}{:>13}{:>13}{:>13}",
        6, "abc", 1, "1.00000e+01", "1.00000e+00", "0.00000e+00"
    );
    let e = err(&join(&l));
    check(
        &e,
        9,
        "record 7, number of data points",
        &["expected an integer in columns 11-20", "found 'abc'"],
    );
    let mut l = base(None);
    l[13] = l[13].replace("3.00000000000e+00", "      3.0000x0e+00");
    let e = err(&join(&l));
    check(&e, 14, "record 12", &["expected a number", "3.0000x0e+00"]);
}

#[test]
fn nan_and_infinite_values() {
    let mut l = base(None);
    l[14] = l[14].replace("5.00000000000e+00", "              NaN");
    let e = err(&join(&l));
    assert_eq!(e.kind, ErrorKind::Numeric);
    check(
        &e,
        15,
        "record 12, ordinate",
        &["real part of point 3 is NaN", "expected a finite number"],
    );
    let mut l = base(None);
    l[13] = l[13].replace("4.00000000000e+00", "             -inf");
    let e = err(&join(&l));
    check(
        &e,
        14,
        "record 12, ordinate",
        &["imaginary part of point 2 is -inf", "finite"],
    );
}

#[test]
fn non_increasing_uneven_abscissa() {
    let e = err(&join(&base(Some([10.0, 12.0, 11.0]))));
    assert_eq!(e.kind, ErrorKind::Grid);
    check(
        &e,
        16,
        "record 12, abscissa",
        &[
            "point 3 (11) is below the previous one (12)",
            "strictly increasing",
        ],
    );
}

#[test]
fn duplicated_uneven_abscissa() {
    let e = err(&join(&base(Some([10.0, 12.0, 12.0]))));
    check(
        &e,
        16,
        "record 12, abscissa",
        &["point 3 (12) repeats", "strictly increasing"],
    );
}

#[test]
fn data_count_disagrees_with_header() {
    let mut l = base(None);
    l[8] = l[8].replacen("         3", "         4", 1);
    let e = err(&join(&l));
    check(
        &e,
        16,
        "record 7, number of data points",
        &["record 7 says 4 points (8 values", "holds 6 values"],
    );
    let mut l = base(None);
    l[8] = l[8].replacen("         3", "         2", 1);
    let e = err(&join(&l));
    check(&e, 16, "record 7", &["says 2 points", "holds 6 values"]);
}

#[test]
fn unknown_function_type() {
    let mut l = base(None);
    l[7] = format!("{:>5}{}", 99, &l[7][5..]);
    let e = err(&join(&l));
    check(
        &e,
        8,
        "record 6, function type",
        &["unknown function type 99", "expected 0-27"],
    );
}

#[test]
fn unknown_units_label() {
    let mut l = base(None);
    l[10] = axis(12, "furlong/s^2");
    let e = err(&join(&l));
    assert_eq!(e.kind, ErrorKind::Unit);
    check(
        &e,
        11,
        "record 9, axis units label",
        &["furlong", "unknown unit name"],
    );
}

#[test]
fn units_label_contradicts_data_type() {
    // code and label disagree: the label (which carries the unit) is read,
    // and the warning names both
    let mut l = base(None);
    l[10] = axis(12, "m/s");
    let (sets, w) = uff58::read(&join(&l), "bad.uff", "c").unwrap();
    assert_eq!(sets[0].out_qty, mortise::units::Quantity::Velocity);
    assert!(
        w.iter().any(|w| w.contains("bad.uff: dataset at line 1: record 9: specific data type 12 (acceleration) disagrees with the units label 'm/s' (velocity)")),
        "{w:?}"
    );
    // a label that names no quantity is refused
    let mut l = base(None);
    l[10] = axis(12, "m^5");
    let e = err(&join(&l));
    assert_eq!(e.kind, ErrorKind::Unit);
    check(
        &e,
        11,
        "record 9, axis units label",
        &["'m^5' (dimension m^5) names no quantity mortise reads, nor a ratio of two"],
    );
    let mut l = base(None);
    l[11] = axis(13, "kg");
    let e = err(&join(&l));
    check(
        &e,
        12,
        "record 10, axis units label",
        &[
            "'kg' (dimension kg) names no quantity",
            "13 (excitation force)",
        ],
    );
}

#[test]
fn bad_direction_and_data_type_codes() {
    let mut l = base(None);
    l[7] = format!("{}{:>4}", &l[7][..76], 7);
    let e = err(&join(&l));
    check(
        &e,
        8,
        "record 6, reference direction",
        &["expected a direction code -6..6", "found 7"],
    );
    let mut l = base(None);
    l[8] = format!("{:>10}{}", 3, &l[8][10..]);
    let e = err(&join(&l));
    check(
        &e,
        9,
        "record 7, ordinate data type",
        &["expected 2 (real single)", "found 3"],
    );
}

#[test]
fn missing_end_tag() {
    let l = base(None);
    let e = err(&join(&l[..15]));
    check(
        &e,
        16,
        "dataset end tag",
        &["truncated record", "after 6 of 6 values", "'    -1'"],
    );
}

fn binary_file() -> Vec<u8> {
    let d = Dof::new("c", "5", Direction::Z);
    let mut s = FrfSet::zeros(
        "b",
        vec![1.0, 2.0, 3.0, 4.0],
        vec![d.clone()],
        vec![d],
        Quantity::Displacement,
        Quantity::Force,
    );
    for (k, v) in s.data.iter_mut().enumerate() {
        *v = Complex64::new(k as f64, -1.0);
    }
    uff58::write(&[s], true).unwrap()
}

#[test]
fn truncated_binary_payload() {
    let b = binary_file();
    assert!(uff58::read(&b, "ok.uff", "c").is_ok());
    let cut = &b[..b.len() - 7 - 20];
    let e = err(cut);
    assert_eq!(e.location, Some(Location::Byte(cut.len())));
    let text = e.to_string();
    assert!(
        e.field.as_deref().unwrap().contains("binary data values"),
        "{text}"
    );
    assert!(text.contains("truncated binary payload"), "{text}");
    assert!(text.contains("needs 64 bytes"), "{text}");
    assert!(text.starts_with("bad.uff: byte "), "{text}");
}

#[test]
fn binary_payload_longer_than_header_says() {
    let b = binary_file();
    let text = String::from_utf8_lossy(&b).into_owned();
    // record 7 says 4 points; claim 3
    let at = text.find("         6         4").unwrap();
    let mut c = b.clone();
    c[at + 19] = b'3';
    let e = err(&c);
    let header_end = b.len() - 7 - 64;
    assert_eq!(e.location, Some(Location::Byte(header_end + 48)));
    check_byte(
        &e,
        "dataset end tag",
        &["expected the end tag", "48 bytes", "3 points"],
    );
}

#[test]
fn short_58b_header_line() {
    let b = binary_file();
    let text = String::from_utf8_lossy(&b).into_owned();
    let start = text.find("    58b").unwrap();
    let end = start + text[start..].find('\n').unwrap();
    let mut c = b[..start].to_vec();
    c.extend_from_slice(b"    58b     1");
    c.extend_from_slice(&b[end..]);
    let e = err(&c);
    check(
        &e,
        2,
        "58b header line, floating-point format",
        &["expected an integer in columns 14-19", "found nothing"],
    );
}

fn check_byte(e: &Error, field: &str, words: &[&str]) {
    let text = e.to_string();
    eprintln!("{text}");
    assert_eq!(e.file.as_deref(), Some("bad.uff"));
    assert!(matches!(e.location, Some(Location::Byte(_))), "{text}");
    assert!(e.field.as_deref().unwrap_or("").contains(field), "{text}");
    for w in words {
        assert!(text.contains(w), "'{w}' not in: {text}");
    }
}

/// Damaged files (bytes replaced, cut, inserted) give errors or sets, never a
/// panic; every error names the file. Deterministic pseudo-random damage.
#[test]
fn damaged_files_never_panic() {
    let ascii = join(&base(Some([10.0, 12.0, 15.0])));
    let binary = binary_file();
    let mut state: u64 = 0x2545_f491_4f6c_dd1d;
    let mut next = move || {
        // xorshift64 (Marsaglia 2003)
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        state
    };
    let alphabet = b" -+.0123456789eEdDbN\n\r\x00\xff";
    let mut errors = 0;
    for round in 0..4000 {
        let src = if round % 2 == 0 { &ascii } else { &binary };
        let mut b = src.clone();
        for _ in 0..(1 + next() % 4) {
            let p = (next() as usize) % b.len();
            match next() % 4 {
                0 => b[p] = alphabet[(next() as usize) % alphabet.len()],
                1 => b.truncate(p),
                2 => b.insert(p, alphabet[(next() as usize) % alphabet.len()]),
                _ => {
                    b.remove(p);
                }
            }
            if b.is_empty() {
                break;
            }
        }
        if let Err(e) = uff58::read(&b, "bad.uff", "c") {
            assert_eq!(e.file.as_deref(), Some("bad.uff"), "{e}");
            errors += 1;
        }
    }
    assert!(errors > 1000, "{errors}");
}
