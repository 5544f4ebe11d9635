//! Malformed and ambiguous dataset 58 files for the interpretation of
//! function types, quantities, unit labels, DOF numbers and the import
//! options that fill in what a file does not say: each error names the file,
//! the line, the field and what was expected.
//! Layout reference: the dataset 58 record layout as reproduced in pyuff
//! 2.5.8 `datasets/dataset_58.py` (record 6 at start + 7, records 9 and 10 at
//! start + 10 and + 11).

use mortise::error::{Error, ErrorKind};
use mortise::io::{self, uff58, ImportOptions};
use mortise::units::Quantity;

/// One ASCII dataset: 3 complex double points from 10 Hz by 1 Hz.
fn ds(ft: i32, rsp: (i64, i32), rf: (i64, i32), num: (i32, &str), den: (i32, &str)) -> String {
    let axis = |code: i32, units: &str| {
        format!(
            "{code:>10}{:>5}{:>5}{:>5} {:<20} {:<20}\n",
            0, 0, 0, "NONE", units
        )
    };
    let mut t = String::from("    -1\n    58\nbench run\nNONE\nNONE\nNONE\nNONE\n");
    t.push_str(&format!(
        "{:>5}{:>10}{:>5}{:>10} {:>10}{:>10}{:>4} {:>10}{:>10}{:>4}\n",
        ft, 0, 0, 0, "NONE", rsp.0, rsp.1, "NONE", rf.0, rf.1
    ));
    t.push_str("         6         3         1  1.00000e+01  1.00000e+00  0.00000e+00\n");
    t.push_str(&axis(18, "Hz"));
    t.push_str(&axis(num.0, num.1));
    t.push_str(&axis(den.0, den.1));
    t.push_str(&axis(0, "NONE"));
    t.push_str(
        "  1.000000000000e+00  2.000000000000e-01  3.000000000000e+00 -4.000000000000e-01\n",
    );
    t.push_str("  5.000000000000e+00  6.000000000000e-01\n    -1\n");
    t
}

fn err_of(text: &str) -> Error {
    match uff58::read(text.as_bytes(), "wall.uff", "wall") {
        Ok(_) => panic!("accepted:\n{text}"),
        Err(e) => e,
    }
}

fn load_err(text: &str, opts: &ImportOptions) -> Error {
    match io::load(text.as_bytes(), "wall.uff", opts) {
        Ok(_) => panic!("accepted:\n{text}"),
        Err(e) => e,
    }
}

/// File, line, field and the words of the message.
fn check(e: &Error, line: Option<usize>, field: &str, words: &[&str]) {
    let t = e.to_string();
    assert_eq!(e.file.as_deref(), Some("wall.uff"), "{t}");
    if let Some(l) = line {
        assert!(
            t.starts_with(&format!("wall.uff: line {l}: {field}: ")),
            "{t}"
        );
    } else {
        assert_eq!(e.field.as_deref(), Some(field), "{t}");
    }
    for w in words {
        assert!(t.contains(w), "missing '{w}' in: {t}");
    }
}

fn opts(json: &str) -> ImportOptions {
    serde_json::from_str(json).unwrap()
}

#[test]
fn general_function_without_quantities_names_the_override() {
    let e = err_of(&ds(0, (1, 3), (2, 3), (0, ""), (0, "")));
    assert_eq!(e.kind, ErrorKind::Quantity);
    check(
        &e,
        Some(11),
        "records 9 and 10, specific data type and units label",
        &[
            "function type 0 (general or unknown)",
            "\"out_qty\"",
            "--uff-out-qty",
        ],
    );
    // with the override the same file reads, as the FRF it is told to be
    let l = io::load(
        ds(0, (1, 3), (2, 3), (0, ""), (0, "")).as_bytes(),
        "wall.uff",
        &opts(r#"{"out_qty": "velocity", "in_qty": "force"}"#),
    )
    .unwrap();
    assert_eq!(l.sets[0].out_qty, Quantity::Velocity);
    assert_eq!(l.sets[0].in_qty, Quantity::Force);
    assert!(l.sets[0].signal.is_none());
}

#[test]
fn frf_without_response_quantity() {
    let e = err_of(&ds(4, (1, 3), (2, 3), (1, ""), (13, "N")));
    check(
        &e,
        Some(11),
        "records 9 and 10, specific data type and units label",
        &[
            "the response quantity (record 9) is not told",
            "1 (general)",
        ],
    );
}

#[test]
fn label_naming_no_quantity_nor_ratio() {
    let e = err_of(&ds(4, (1, 3), (2, 3), (1, "kg*m"), (0, "")));
    assert_eq!(e.kind, ErrorKind::Unit);
    check(
        &e,
        Some(11),
        "record 9, axis units label",
        &[
            "'kg*m' (dimension m kg) names no quantity mortise reads, nor a ratio of two",
            "(m/s^2)/N",
        ],
    );
}

#[test]
fn transmissibility_of_unlike_quantities() {
    let e = err_of(&ds(5, (1, 3), (2, 3), (12, "g"), (13, "N")));
    check(
        &e,
        Some(11),
        "records 9 and 10, specific data type",
        &[
            "function type 5 (transmissibility) relates like quantities",
            "acceleration",
            "force",
        ],
    );
}

#[test]
fn psd_label_without_per_hertz() {
    let e = err_of(&ds(9, (1, 3), (0, 0), (12, "g^2"), (0, "")));
    check(
        &e,
        Some(11),
        "record 9, axis units label",
        &["'g^2' does not fit record 9's data type 12 (acceleration) for a power spectral density", "(m/s^2)^2/Hz"],
    );
}

#[test]
fn esd_label_of_an_amplitude() {
    let e = err_of(&ds(10, (1, 3), (0, 0), (12, "g"), (0, "")));
    check(
        &e,
        Some(11),
        "record 9, axis units label",
        &["for an energy spectral density", "(m/s^2)^2*s/Hz"],
    );
}

#[test]
fn cross_spectrum_label_of_an_amplitude() {
    let e = err_of(&ds(3, (1, 3), (2, 3), (12, "m/s"), (12, "")));
    check(
        &e,
        Some(11),
        "record 9, axis units label",
        &[
            "'m/s' does not fit record 9's data type 12 (acceleration) for a cross spectrum",
            "(m/s^2)^2",
        ],
    );
}

#[test]
fn half_power_on_an_frf() {
    let e = err_of(&ds(4, (1, 3), (2, 3), (12, "m/s/√Hz"), (13, "N")));
    check(
        &e,
        Some(11),
        "record 9, axis units label",
        &["half power", "'m/s/√Hz'"],
    );
}

#[test]
fn unknown_unit_in_a_ratio_label() {
    let e = err_of(&ds(4, (1, 3), (2, 3), (1, "m/s²/furlong"), (0, "")));
    check(
        &e,
        Some(11),
        "record 9, axis units label",
        &["unknown unit name 'furlong'", "lbf"],
    );
}

#[test]
fn latin1_label_is_quoted_decoded_in_the_message() {
    // 'm/s\xB3' (0xB3 superscript three in Latin-1): a jerk, no quantity
    let mut b = ds(4, (1, 3), (2, 3), (1, "m/s#"), (13, "N")).into_bytes();
    let at = b.iter().position(|&c| c == b'#').unwrap();
    b[at] = 0xB3;
    let e = uff58::read(&b, "wall.uff", "wall").unwrap_err();
    check(
        &e,
        Some(11),
        "record 9, axis units label",
        &["'m/s³' (dimension m s^-3) names no quantity"],
    );
}

#[test]
fn declared_kind_against_a_cross_spectrum() {
    let e = load_err(
        &ds(3, (1, 3), (2, 3), (12, "g^2"), (12, "")),
        &opts(r#"{"signal": "psd"}"#),
    );
    assert_eq!(e.kind, ErrorKind::Usage);
    check(
        &e,
        Some(8),
        "record 6, function type",
        &[
            "function type 3 (cross spectrum) makes this dataset a cross spectrum",
            "declare psd",
        ],
    );
}

#[test]
fn only_time_responses() {
    // a time response whose abscissa says frequency: refused, not read
    let bad = ds(1, (1, 3), (0, 0), (12, "m/s^2"), (0, ""));
    let e = err_of(&bad);
    check(
        &e,
        Some(10),
        "record 8, specific data type",
        &["abscissa specific data type 18 (frequency) for a time response; expected 17 (time)"],
    );
    let good = bad.replace(
        "        18    0    0    0 NONE                 Hz  ",
        "        17    0    0    0 NONE                 s   ",
    );
    assert_ne!(good, bad);
    let e = err_of(&good);
    assert_eq!(e.kind, ErrorKind::Unsupported);
    check(
        &e,
        Some(8),
        "record 6, function type",
        &["function type 1 (time response)", "mortise spectrum"],
    );
}

#[test]
fn file_without_dataset_58_names_every_dataset() {
    let other = |n: &str| format!("    -1\n{n:>6}\nsomething\n    -1\n");
    // datasets mortise reads none of (elements 2412, results 2414, twice)
    let text = format!("{}{}{}", other("2412"), other("2414"), other("2412"));
    let e = err_of(&text);
    eprintln!("{e}");
    check(
        &e,
        None,
        "dataset number",
        &["dataset 2412", "×2", "dataset 2414", "×1"],
    );
}

#[test]
fn dofs_for_a_dataset_that_has_them_are_refused() {
    let e = load_err(
        &ds(4, (1, 3), (2, 3), (12, "g"), (13, "N")),
        &opts(r#"{"dofs": [{"dataset": 1, "out": "wall:1+Z", "in": "wall:2+Z"}]}"#),
    );
    check(
        &e,
        None,
        "dofs",
        &["assigns DOFs to dataset 1, but dataset 1 (line 1) carries DOF numbers"],
    );
    let e = load_err(
        &ds(4, (0, 0), (0, 0), (12, "g"), (13, "N")),
        &opts(r#"{"dofs": [{"dataset": 4, "out": "wall:1+Z", "in": "wall:2+Z"}]}"#),
    );
    check(&e, None, "dofs", &["the file holds 1 dataset(s) 58"]);
    // a bad DOF label is refused when the options are read
    let e = serde_json::from_str::<ImportOptions>(r#"{"dofs": [{"out": "wall:1+Q", "in": "x"}]}"#)
        .unwrap_err();
    assert!(e.to_string().contains("dofs: out DOF"), "{e}");
}

#[test]
fn quantity_override_not_needed_is_refused() {
    let e = load_err(
        &ds(4, (1, 3), (2, 3), (12, "g"), (13, "N")),
        &opts(r#"{"out_qty": "velocity"}"#),
    );
    assert_eq!(e.kind, ErrorKind::Usage);
    check(
        &e,
        None,
        "out_qty",
        &["every dataset of the file tells its response quantity"],
    );
    // and on a file that is not UFF
    let csv = "# mortise-frf 1\n";
    let e = io::load(csv.as_bytes(), "wall.csv", &opts(r#"{"in_qty": "force"}"#)).unwrap_err();
    assert!(
        e.to_string().contains("\"in_qty\" applies to UFF files"),
        "{e}"
    );
}

#[test]
fn unnumbered_dofs_are_no_driving_point_until_assigned() {
    let text = ds(4, (0, 0), (0, 0), (12, "g"), (13, "N"));
    let l = io::load(text.as_bytes(), "wall.uff", &ImportOptions::default()).unwrap();
    let s = &l.sets[0];
    assert_eq!(s.outputs[0].to_string(), "wall:nodof_out_1");
    assert_eq!(s.inputs[0].to_string(), "wall:nodof_in_1");
    assert!(!s.outputs[0].same_place(&s.inputs[0]));
    // the audit finds no driving point and no reciprocal pair among them
    let a = mortise::audit::audit(s, &Default::default());
    for c in ["reciprocity", "passivity"] {
        let r = a.checks.iter().find(|r| r.check == c).unwrap();
        assert_eq!(
            r.status,
            mortise::audit::Status::NotApplicable,
            "{c}: {}",
            r.summary
        );
    }
    assert!(
        l.warnings
            .iter()
            .any(|w| w.contains("the file carries no DOF numbers")
                && w.contains("assign DOFs with the import option \"dofs\"")),
        "{:?}",
        l.warnings
    );
    // assigned: a driving point again, by the user's word
    let l = io::load(
        text.as_bytes(),
        "wall.uff",
        &opts(r#"{"dofs": [{"out": "wall:7+Z", "in": "wall:7+Z"}]}"#),
    )
    .unwrap();
    let s = &l.sets[0];
    assert_eq!(s.outputs[0].to_string(), "wall:7+Z");
    assert!(s.outputs[0].same_place(&s.inputs[0]));
    // g_n = 9.80665 m/s^2 (ISO 80000-3)
    assert_eq!(s.get(0, 0, 0).re, 9.80665);
}

/// What real programs do to the text: tolerated where no number can change.
#[test]
fn tolerated_text_variants_read_the_same_values() {
    let good = ds(4, (1, 3), (2, 3), (12, "g"), (13, "N"));
    let want = uff58::read(good.as_bytes(), "wall.uff", "wall").unwrap().0;
    let variants: Vec<(&str, String)> = vec![
        ("CRLF", good.replace('\n', "\r\n")),
        ("trailing spaces", good.replace('\n', "   \n")),
        (
            "no newline after the end tag",
            good.trim_end_matches('\n').to_string(),
        ),
        (
            "end tag on the last data line",
            good.replace("6.000000000000e-01\n    -1\n", "6.000000000000e-01    -1\n"),
        ),
        (
            "short last data line padded differently",
            good.replace(
                "  5.000000000000e+00  6.000000000000e-01",
                "5.0e+00 6.0e-01",
            ),
        ),
        (
            "blank ID records",
            good.replace("bench run\nNONE\nNONE", "bench run\n\n"),
        ),
        (
            "blank lines between datasets",
            format!("{good}\n\n{}", good.replace("    1   3", "    4   3")),
        ),
    ];
    for (what, text) in variants {
        let got = uff58::read(text.as_bytes(), "wall.uff", "wall")
            .unwrap_or_else(|e| panic!("{what}: {e}"))
            .0;
        assert_eq!(got[0].get(0, 0, 0), want[0].get(0, 0, 0), "{what}");
        assert_eq!(got[0].get(2, 0, 0), want[0].get(2, 0, 0), "{what}");
    }
}

/// Strict where a number could change: a missing value, a value cut short.
#[test]
fn strict_where_a_number_could_change() {
    let good = ds(4, (1, 3), (2, 3), (12, "g"), (13, "N"));
    let short = good.replace(
        "  5.000000000000e+00  6.000000000000e-01\n",
        "  5.000000000000e+00\n",
    );
    let e = err_of(&short);
    check(
        &e,
        Some(16),
        "record 7, number of data points",
        &[
            "record 7 says 3 points (6 values for even complex data)",
            "holds 5 values",
        ],
    );
    // a seventh value '-1' then the end tag: never read as six values and
    // a tag without saying so; the lone tag after it is refused
    let extra = good.replace(
        "6.000000000000e-01\n    -1\n",
        "6.000000000000e-01 -1\n    -1\n",
    );
    let e = err_of(&extra);
    check(
        &e,
        Some(17),
        "dataset number",
        &["the file ends after the start tag at line 16"],
    );
    let bad = good.replace("6.000000000000e-01", "6.000000000000e-0x");
    let e = err_of(&bad);
    check(
        &e,
        Some(15),
        "record 12 (data values)",
        &["expected a number, found '6.000000000000e-0x'"],
    );
}

/// The CLI's UFF options reach the reader (`mortise inspect`, the same
/// function the binary calls).
#[test]
fn cli_uff_options_reach_the_reader() {
    use mortise::cli::execute;
    let dir = std::env::temp_dir().join(format!("mortise-uffsig-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let f = dir.join("wall.uff");
    let two = format!(
        "{}{}",
        ds(4, (0, 0), (0, 0), (12, "g"), (13, "N")),
        ds(0, (3, 1), (4, 1), (0, ""), (0, ""))
    );
    std::fs::write(&f, two).unwrap();
    let path = f.to_str().unwrap().to_string();
    let run = |extra: &[&str]| {
        let mut a = vec!["inspect".to_string(), path.clone()];
        a.extend(extra.iter().map(|s| s.to_string()));
        execute(&a)
    };
    // without the options: the general dataset is refused, naming the options
    let o = run(&[]);
    assert!(o.stdout.contains("--uff-out-qty"), "{}", o.stdout);
    // with them: both read; dataset 1 at the assigned DOFs
    let o = run(&[
        "--uff-out-qty",
        "velocity",
        "--uff-in-qty",
        "force",
        "--uff-dofs",
        "1:wall:7+Z,wall:8+Z",
    ]);
    assert!(o.error.is_none(), "{}{}", o.stdout, o.stderr);
    assert!(o.stdout.contains("outputs: wall:7+Z"), "{}", o.stdout);
    assert!(o.stdout.contains("(velocity per force)"), "{}", o.stdout);
    // a malformed --uff-dofs is a usage error naming the option
    let o = run(&["--uff-dofs", "wall:7+Z"]);
    let e = o.error.unwrap();
    assert_eq!(e.kind, ErrorKind::Usage);
    assert!(
        e.message.contains("--uff-dofs") && e.message.contains("OUT,IN"),
        "{}",
        e.message
    );
    let _ = std::fs::remove_dir_all(&dir);
}
