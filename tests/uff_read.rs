//! Reading UFF 58 into FRF sets: grouping, missing entries, signs, units,
//! tolerated variants of the layout.
//!
//! Files are built here following the dataset 58 record layout as
//! reproduced in pyuff 2.5.8 `datasets/dataset_58.py` (records 1-11, field
//! columns, direction codes, specific data type codes 8/9/11/12/13/15/18).

use mortise::frf::{Direction, Dof, SignalKind};
use mortise::io::uff58;
use mortise::units::Quantity;
use num_complex::Complex64;

struct Ds {
    func: i32,
    rsp: (i64, i32),
    refr: (i64, i32),
    x: Vec<f64>,
    even: bool,
    y: Vec<Complex64>,
    codes: (i32, i32),
    units: (&'static str, &'static str),
    id1: &'static str,
    id2: &'static str,
}

fn ds(func: i32, rsp: (i64, i32), refr: (i64, i32), x: &[f64], y: &[Complex64]) -> Ds {
    Ds {
        func,
        rsp,
        refr,
        x: x.to_vec(),
        even: false,
        y: y.to_vec(),
        codes: (12, 13),
        units: ("m/s^2", "N"),
        id1: "NONE",
        id2: "NONE",
    }
}

fn axis(code: i32, units: &str) -> String {
    format!(
        "{code:>10}{:>5}{:>5}{:>5} {:<20} {:<20}",
        0, 0, 0, "NONE", units
    )
}

fn text(d: &Ds) -> String {
    let mut l = vec![
        "    -1".to_string(),
        "    58".to_string(),
        d.id1.to_string(),
        d.id2.to_string(),
        "NONE".into(),
        "NONE".into(),
        "NONE".into(),
        format!(
            "{:>5}{:>10}{:>5}{:>10} {:>10}{:>10}{:>4} {:>10}{:>10}{:>4}",
            d.func, 0, 0, 0, "NONE", d.rsp.0, d.rsp.1, "NONE", d.refr.0, d.refr.1
        ),
    ];
    let (x0, dx) = if d.even {
        (d.x[0], d.x[1] - d.x[0])
    } else {
        (0.0, 0.0)
    };
    l.push(format!(
        "{:>10}{:>10}{:>10}{:>13.5e}{:>13.5e}{:>13.5e}",
        6,
        d.y.len(),
        d.even as i32,
        x0,
        dx,
        0.0
    ));
    l.push(axis(18, "Hz"));
    l.push(axis(d.codes.0, d.units.0));
    l.push(axis(d.codes.1, d.units.1));
    l.push(axis(0, "NONE"));
    for (k, v) in d.y.iter().enumerate() {
        if d.even {
            l.push(format!("{:>20.12e}{:>20.12e}", v.re, v.im));
        } else {
            l.push(format!("{:>13.5e}{:>20.12e}{:>20.12e}", d.x[k], v.re, v.im));
        }
    }
    l.push("    -1".into());
    l.join("\n") + "\n"
}

fn file(list: &[Ds]) -> Vec<u8> {
    list.iter().map(text).collect::<String>().into_bytes()
}

fn c(re: f64, im: f64) -> Complex64 {
    Complex64::new(re, im)
}

fn dof(node: &str, d: Direction) -> Dof {
    Dof::new("w", node, d)
}

const GA: [f64; 3] = [10.0, 20.0, 40.0];
const GB: [f64; 3] = [10.0, 20.0, 30.0];

#[test]
fn groups_by_quantity_grid_and_function() {
    let y = [c(1.0, 2.0), c(3.0, 4.0), c(5.0, 6.0)];
    let mut mob = ds(4, (1, 3), (1, 3), &GA, &y);
    mob.codes = (11, 13);
    mob.units = ("m/s", "N");
    let mut spec = ds(12, (9, 2), (0, 0), &GA, &y);
    spec.codes = (13, 0);
    spec.units = ("N", "NONE");
    let bytes = file(&[
        ds(4, (1, 3), (1, 3), &GA, &y),
        ds(4, (2, 1), (1, 3), &GA, &y),
        mob,
        ds(4, (1, 3), (1, 3), &GB, &y),
        spec,
    ]);
    let (sets, warns) = uff58::read(&bytes, "wall.uff", "w").unwrap();
    assert_eq!(sets.len(), 4);
    let acc_a = &sets[0];
    assert_eq!(
        (acc_a.out_qty, acc_a.in_qty),
        (Quantity::Acceleration, Quantity::Force)
    );
    assert_eq!(
        acc_a.outputs,
        vec![dof("1", Direction::Z), dof("2", Direction::X)]
    );
    assert_eq!(acc_a.inputs, vec![dof("1", Direction::Z)]);
    assert_eq!(acc_a.freqs, GA.to_vec());
    assert_eq!(sets[1].out_qty, Quantity::Velocity);
    assert_eq!(sets[2].freqs, GB.to_vec());
    let sp = &sets[3];
    assert_eq!(sp.signal, Some(SignalKind::Peak));
    assert_eq!(sp.inputs, vec![Dof::scalar("", "ref")]);
    assert_eq!(sp.in_qty, Quantity::Dimensionless);
    assert_eq!(sp.out_qty, Quantity::Force);
    assert_eq!(sp.outputs, vec![dof("9", Direction::Y)]);
    assert!(warns.iter().any(|w| w.contains("peak or RMS")), "{warns:?}");
    assert!(sp.warnings.iter().any(|w| w.contains("peak or RMS")));
    // names are distinct
    let mut names: Vec<&str> = sets.iter().map(|s| s.name.as_str()).collect();
    names.sort();
    names.dedup();
    assert_eq!(names.len(), 4, "{names:?}");
    for s in &sets {
        assert_eq!(s.provenance[0].file, "wall.uff");
        assert_eq!(s.provenance[0].sha256, mortise::io::sha256_hex(&bytes));
        assert_eq!(s.provenance[0].format, "uff58-ascii");
    }
}

#[test]
fn entries_not_given_are_missing() {
    let y = [c(1.0, 0.5), c(2.0, 0.5), c(3.0, 0.5)];
    let bytes = file(&[
        ds(4, (1, 3), (1, 3), &GA, &y),
        ds(4, (2, 3), (1, 3), &GA, &y),
        ds(4, (1, 3), (2, 3), &GA, &y),
    ]);
    let (sets, _) = uff58::read(&bytes, "r.uff", "w").unwrap();
    let s = &sets[0];
    assert_eq!((s.n_out(), s.n_in()), (2, 2));
    assert!(!s.is_present(1, 1));
    assert!(s.get(0, 1, 1).re.is_nan());
    assert_eq!(s.missing_entries(), vec!["w:2+Z / w:2+Z".to_string()]);
    assert!(s.validate().is_ok());
}

#[test]
fn repeated_dof_pairs_are_kept_as_numbered_runs() {
    let y1 = [c(1.0, 0.0); 3];
    let y2 = [c(7.0, 0.0); 3];
    let y3 = [c(3.0, 0.0); 3];
    let bytes = file(&[
        ds(4, (1, 3), (1, 3), &GA, &y1),
        ds(4, (1, 3), (2, 3), &GA, &y3),
        ds(4, (1, 3), (1, 3), &GA, &y2),
    ]);
    let (sets, warns) = uff58::read(&bytes, "d.uff", "w").unwrap();
    // nothing dropped: run 1 holds both pairs, run 2 the repeat
    assert_eq!(sets.len(), 2);
    assert_eq!(sets[0].get(0, 0, 0), c(1.0, 0.0));
    assert_eq!(sets[0].get(0, 0, 1), c(3.0, 0.0));
    assert_eq!(sets[1].get(0, 0, 0), c(7.0, 0.0));
    assert_eq!((sets[1].n_out(), sets[1].n_in()), (1, 1));
    assert!(sets[0].name.ends_with(" run 1"), "{}", sets[0].name);
    assert!(sets[1].name.ends_with(" run 2"), "{}", sets[1].name);
    let w = warns
        .iter()
        .find(|w| w.contains("this is run 2"))
        .unwrap_or_else(|| panic!("{warns:?}"));
    // the third dataset starts at line 35
    assert!(w.contains("lines 35") && w.contains("\"set\" index"), "{w}");
}

#[test]
fn opposite_direction_sign_is_one_dof() {
    let y = [c(1.0, 2.0); 3];
    let bytes = file(&[
        ds(4, (1, 3), (5, 1), &GA, &y),
        ds(4, (1, -3), (6, 1), &GA, &y),
    ]);
    let (sets, _) = uff58::read(&bytes, "s.uff", "w").unwrap();
    let s = &sets[0];
    assert_eq!(s.outputs, vec![dof("1", Direction::Z)]);
    // UFF direction -3 is -Z: the value on +Z is the negative
    assert_eq!(s.get(0, 0, 1), c(-1.0, -2.0));
}

#[test]
fn units_labels_convert_to_si() {
    let y = [c(1.0, -1.0); 3];
    let mut a = ds(4, (1, 3), (1, 3), &GA, &y);
    a.units = ("g", "N");
    let mut b = ds(4, (1, 3), (1, 3), &GB, &y);
    b.codes = (11, 13);
    b.units = ("in/s/lbf", "NONE"); // the whole ratio in record 9
    let mut r = ds(4, (1, 4), (1, 3), &[1.0, 2.0, 3.0], &y);
    r.codes = (8, 13);
    r.units = ("deg", "kN");
    let bytes = file(&[a, b, r]);
    let (sets, _) = uff58::read(&bytes, "u.uff", "w").unwrap();
    // ISO 80000-3: g_n = 9.80665 m/s^2
    assert_eq!(sets[0].get(0, 0, 0), c(9.80665, -9.80665));
    // 1959 yard and pound agreement: 1 in = 0.0254 m, 1 lbf = 4.4482216152605 N
    let f = 0.0254 / 4.4482216152605;
    assert!((sets[1].get(0, 0, 0) - c(f, -f)).norm() < 1e-15);
    // rotation in degrees per kN: π/180 rad per 1000 N
    let g = std::f64::consts::PI / 180.0 / 1000.0;
    assert!((sets[2].get(0, 0, 0) - c(g, -g)).norm() < 1e-18);
    assert_eq!(sets[2].outputs[0].dir, Direction::RX);
}

#[test]
fn empty_units_label_is_assumed_si_with_a_warning() {
    let y = [c(1.0, 0.0); 3];
    let mut a = ds(4, (1, 3), (1, 3), &GA, &y);
    a.units = ("NONE", "");
    let mut b = ds(4, (2, 3), (1, 3), &GA, &y);
    b.units = ("", "NONE");
    let (sets, warns) = uff58::read(&file(&[a, b]), "e.uff", "w").unwrap();
    assert_eq!(sets[0].get(0, 0, 0), c(1.0, 0.0));
    let w = warns
        .iter()
        .find(|w| w.contains("record 9 is empty; assumed SI (m/s^2)"))
        .unwrap();
    // one remark for both datasets, naming their lines
    assert!(w.contains("lines 1, 18"), "{w}");
    assert!(warns
        .iter()
        .any(|w| w.contains("record 10 is empty; assumed SI (N)")));
}

#[test]
fn microphone_scalar_point_and_pressure() {
    let y = [c(0.1, 0.2); 3];
    let mut a = ds(4, (30, 0), (1, 3), &GA, &y);
    a.codes = (15, 13);
    a.units = ("mPa", "N");
    let (sets, _) = uff58::read(&file(&[a]), "m.uff", "w").unwrap();
    assert_eq!(sets[0].outputs[0], Dof::scalar("w", "30"));
    assert_eq!(sets[0].out_qty, Quantity::Pressure);
    assert!((sets[0].get(0, 0, 0) - c(1e-4, 2e-4)).norm() < 1e-18);
}

#[test]
fn even_grid_name_from_id_line_and_coherence() {
    let y = [c(1.0, 0.0), c(2.0, 0.0), c(3.0, 0.0)];
    let mut a = ds(4, (1, 3), (1, 3), &GB, &y);
    a.even = true;
    a.id1 = "casing run 3";
    let mut coh = ds(
        6,
        (1, 3),
        (1, 3),
        &GB,
        &[c(0.9, 0.0), c(0.8, 0.0), c(0.7, 0.0)],
    );
    coh.even = true;
    coh.codes = (0, 0);
    coh.units = ("NONE", "NONE");
    let (sets, _) = uff58::read(&file(&[a, coh]), "g.uff", "w").unwrap();
    assert_eq!(sets.len(), 1);
    assert_eq!(sets[0].name, "casing run 3");
    assert_eq!(sets[0].freqs, GB.to_vec());
    assert_eq!(sets[0].coherence.as_ref().unwrap(), &vec![0.9, 0.8, 0.7]);
}

#[test]
fn variants_crlf_fortran_d_and_blank_separated_headers() {
    let t = "    -1\r\n    58\r\nfree format\r\nNONE\r\nNONE\r\nNONE\r\nNONE\r\n\
4 0 0 0 NONE 1 3 NONE 2 -2\r\n6 2 1 1.0D+01 5.0D-01 0.0\r\n18 0 0 0 NONE Hz\r\n\
12 0 0 0 NONE m/s^2\r\n13 0 0 0 NONE N\r\n0 0 0 0 NONE NONE\r\n\
";
    // a data line in the 20-column fields where two numbers touch
    let t = format!(
        "{t}{:>20}{:>20}{:>20}{:>20}\r\n    -1\r\n",
        "1.5D+00", "-2.0D-01", "2.5000000000000E+00", "-3.0000000000000E-01"
    );
    let (sets, _) = uff58::read(t.as_bytes(), "f.uff", "w").unwrap();
    let s = &sets[0];
    assert_eq!(s.freqs, vec![10.0, 10.5]);
    assert_eq!(s.inputs[0].dir, Direction::Y);
    assert!(!s.inputs[0].positive);
    assert_eq!(s.get(0, 0, 0), c(1.5, -0.2));
    // touching numbers in the 20-column fields are split by columns
    assert_eq!(s.get(1, 0, 0), c(2.5, -0.3));
}

#[test]
fn other_datasets_and_function_types_are_skipped_with_remarks() {
    let y = [c(1.0, 0.0); 3];
    let units164 = "    -1\n   164\n         1SI - mks (Newton)  2\n    1.0000000000000000E+00    1.0000000000000000E+00    1.0000000000000000E+00\n    2.7314999999999998E+02\n    -1\n";
    let mut bytes = units164.as_bytes().to_vec();
    bytes.extend(file(&[
        ds(1, (1, 3), (1, 3), &GA, &y),
        ds(4, (1, 3), (1, 3), &GA, &y),
    ]));
    let (sets, warns) = uff58::read(&bytes, "o.uff", "w").unwrap();
    assert_eq!(sets.len(), 1);
    assert!(
        warns
            .iter()
            .any(|w| w.contains("line 1: dataset 164: units 1 (SI: metre (newton))")),
        "{warns:?}"
    );
    assert!(
        warns.iter().any(|w| w
            .contains("line 7: time response skipped: abscissa specific data type 18 (frequency)")),
        "{warns:?}"
    );
    assert_eq!(uff58::looks_like_uff(&bytes), Some(false));
    // only a time response (whose abscissa says frequency): its error
    let e = uff58::read(&file(&[ds(1, (1, 3), (1, 3), &GA, &y)]), "t.uff", "w").unwrap_err();
    assert!(
        e.to_string()
            .starts_with("t.uff: line 10: record 8, specific data type: abscissa specific data type 18 (frequency) for a time response"),
        "{e}"
    );
}

#[test]
fn big_endian_single_precision_binary() {
    // 58b header: byte ordering 2 (big endian), floating-point format 2 (IEEE 754)
    let mut t = String::new();
    t.push_str("    -1\n");
    t.push_str(&format!(
        "{:>6}b{:>6}{:>6}{:>12}{:>12}{:>6}{:>6}{:>12}{:>12}\n",
        58, 2, 2, 11, 24, 0, 0, 0, 0
    ));
    for _ in 0..5 {
        t.push_str("NONE\n");
    }
    t.push_str(&format!(
        "{:>5}{:>10}{:>5}{:>10} {:>10}{:>10}{:>4} {:>10}{:>10}{:>4}\n",
        4, 0, 0, 0, "NONE", 3, 2, "NONE", 4, 1
    ));
    t.push_str(&format!(
        "{:>10}{:>10}{:>10}{:>13}{:>13}{:>13}\n",
        5, 3, 1, "1.00000e+00", "2.00000e+00", "0.00000e+00"
    ));
    t.push_str(&(axis(18, "Hz") + "\n"));
    t.push_str(&(axis(8, "mm") + "\n"));
    t.push_str(&(axis(13, "N") + "\n"));
    t.push_str(&(axis(0, "NONE") + "\n"));
    let mut b = t.into_bytes();
    for v in [0.5f32, -0.25, 1.5, 2.0, -3.0, 0.125] {
        b.extend_from_slice(&v.to_be_bytes());
    }
    b.extend_from_slice(b"    -1\n");
    assert_eq!(uff58::looks_like_uff(&b), Some(true));
    let (sets, warns) = uff58::read(&b, "be.uff", "w").unwrap();
    assert!(warns.is_empty(), "{warns:?}");
    let s = &sets[0];
    assert_eq!(s.freqs, vec![1.0, 3.0, 5.0]);
    assert_eq!(s.out_qty, Quantity::Displacement);
    assert_eq!(s.get(0, 0, 0), c(0.5e-3, -0.25e-3));
    assert_eq!(s.get(2, 0, 0), c(-3.0e-3, 0.125e-3));
    assert_eq!(s.provenance[0].format, "uff58-binary");
}

#[test]
fn lone_tag_before_a_dataset_is_skipped() {
    // pyuff 2.5.8 writing 58b in 'overwrite' mode leaves a lone '    -1'
    // in front of the next dataset
    let y = [c(1.0, 0.0); 3];
    let mut b = b"    -1\n".to_vec();
    b.extend(file(&[ds(4, (1, 3), (1, 3), &GA, &y)]));
    let (sets, warns) = uff58::read(&b, "l.uff", "w").unwrap();
    assert_eq!(sets[0].n_out(), 1);
    assert!(
        warns.iter().any(|w| w.contains("line 1: a lone tag")),
        "{warns:?}"
    );
}

#[test]
fn components_travel_in_entity_names() {
    let d = Dof::new("casing", "1", Direction::Z);
    let r = Dof::new("bracket_l", "2", Direction::X);
    let mut s = mortise::frf::FrfSet::zeros(
        "h",
        GA.to_vec(),
        vec![d.clone()],
        vec![r.clone()],
        Quantity::Displacement,
        Quantity::Force,
    );
    s.data[0] = c(1.0, 2.0);
    let bytes = uff58::write(&[s], false).unwrap();
    // record 6, response and reference entity names (10 columns each)
    let t = String::from_utf8(bytes.clone()).unwrap();
    assert!(
        t.contains("     casing         1   3  bracket_l         2   1"),
        "{t}"
    );
    let (sets, _) = uff58::read_with(&bytes, "out.uff", None).unwrap();
    assert_eq!(sets[0].outputs, vec![d]);
    assert_eq!(sets[0].inputs, vec![r]);
    // a component given by the caller wins
    let (sets, _) = uff58::read_with(&bytes, "out.uff", Some("x")).unwrap();
    assert_eq!(sets[0].outputs[0].component, "x");
    // no entity names: the file stem
    let (sets, _) = uff58::read_with(
        &file(&[ds(4, (1, 3), (1, 3), &GA, &[c(1.0, 0.0); 3])]),
        "dir/wall.uff",
        None,
    )
    .unwrap();
    assert_eq!(sets[0].outputs[0].component, "wall");
}

#[test]
fn provenance_chain_travels_in_id_lines() {
    use mortise::frf::Provenance;
    let d = Dof::new("w", "1", Direction::Z);
    let mut s = mortise::frf::FrfSet::zeros(
        "h",
        GA.to_vec(),
        vec![d.clone()],
        vec![d.clone(), Dof::new("w", "2", Direction::Z)],
        Quantity::Displacement,
        Quantity::Force,
    );
    for (n, f) in ["casing.uff", "casing.csv", "casing bundle.json"]
        .iter()
        .enumerate()
    {
        s.provenance.push(Provenance {
            file: f.to_string(),
            sha256: format!("{n}").repeat(64),
            format: ["uff58-ascii", "csv-mortise", "bundle"][n].to_string(),
            options: String::new(),
        });
    }
    let bytes = uff58::write(&[s.clone()], true).unwrap();
    let (sets, _) = uff58::read(&bytes, "out.uff", "w").unwrap();
    let p = &sets[0].provenance;
    // two datasets give six ID lines: room for three entries, then this file
    assert_eq!(p.len(), 4, "{p:?}");
    assert_eq!(&p[..3], &s.provenance[..]);
    assert_eq!(p[3].file, "out.uff");
    assert_eq!(p[3].sha256, mortise::io::sha256_hex(&bytes));
    // one dataset holds only the first entry and a half: the first is kept
    let one = s.select(&[0], &[0]);
    let bytes = uff58::write(&[one], false).unwrap();
    let (sets, _) = uff58::read(&bytes, "one.uff", "w").unwrap();
    assert_eq!(sets[0].provenance.len(), 2);
    assert_eq!(sets[0].provenance[0].file, "casing.uff");
}

/// A one-DOF force spectrum dataset of function type `func`, amplitude unit label `units`.
fn spectrum(func: i32, units: &'static str) -> Ds {
    let y = [c(1.5, 0.5), c(2.0, -1.0), c(0.25, 0.0)];
    let y = if func == 12 {
        y
    } else {
        y.map(|v| c(v.norm_sqr(), 0.0))
    };
    let mut s = ds(func, (9, 3), (0, 0), &GA, &y);
    s.codes = (13, 0);
    s.units = (units, "NONE");
    s
}

fn opts(json: &str) -> mortise::io::ImportOptions {
    serde_json::from_str(json).unwrap()
}

// Item: a spectrum's scaling declared on import. UFF function type 12 does
// not say peak or RMS (common practice: the dataset 58 layout has no field
// for it), so the user's declaration decides, without the warning.
#[test]
fn declared_rms_spectrum_reads_as_rms_without_warning() {
    let bytes = file(&[spectrum(12, "N")]);
    let plain = mortise::io::load(&bytes, "fan.uff", &opts("{}")).unwrap();
    assert_eq!(plain.sets[0].signal, Some(SignalKind::Peak));
    assert!(plain.warnings.iter().any(|w| w.contains("read as peak")));
    for json in [
        r#"{"signal": "rms"}"#,
        r#"{"signal": "RMS", "component": "fan"}"#,
    ] {
        let l = mortise::io::load(&bytes, "fan.uff", &opts(json)).unwrap();
        let s = &l.sets[0];
        assert_eq!(s.signal, Some(SignalKind::Rms), "{json}");
        assert!(
            !l.warnings.iter().any(|w| w.contains("peak")),
            "{:?}",
            l.warnings
        );
        assert!(
            !s.warnings.iter().any(|w| w.contains("peak")),
            "{:?}",
            s.warnings
        );
        assert_eq!(s.data, plain.sets[0].data);
        assert!(
            s.provenance[0].options.contains("rms"),
            "{:?}",
            s.provenance
        );
    }
    // the function types that fix the kind agree with a matching declaration
    let l = mortise::io::load(
        &file(&[spectrum(2, "N^2")]),
        "a.uff",
        &opts(r#"{"signal": "autopower"}"#),
    )
    .unwrap();
    assert_eq!(l.sets[0].signal, Some(SignalKind::Autopower));
    let l = mortise::io::load(
        &file(&[spectrum(9, "N^2/Hz")]),
        "p.uff",
        &opts(r#"{"signal": "psd"}"#),
    )
    .unwrap();
    assert_eq!(l.sets[0].signal, Some(SignalKind::Psd));
}

#[test]
fn declaration_contradicting_the_function_type_is_refused() {
    for (func, units, decl, file_says) in [
        (2, "N^2", "rms", "autopower"),
        (9, "N^2/Hz", "peak", "psd"),
        (2, "N^2", "psd", "autopower"),
    ] {
        let bytes = file(&[spectrum(func, units)]);
        let e = mortise::io::load(
            &bytes,
            "s.uff",
            &opts(&format!(r#"{{"signal": "{decl}"}}"#)),
        )
        .unwrap_err();
        assert!(
            e.message.contains(decl) && e.message.contains(file_says),
            "type {func}, declared {decl}: {e}"
        );
        assert_eq!(e.file.as_deref(), Some("s.uff"));
        // record 6 of the first dataset: line 1 is the start tag
        assert_eq!(e.location, Some(mortise::error::Location::Line(8)), "{e}");
    }
    // our own writer's ID-line marker says RMS: a peak declaration contradicts it
    let mut own = spectrum(12, "N");
    own.id2 = "signal=rms";
    let e =
        mortise::io::load(&file(&[own]), "own.uff", &opts(r#"{"signal": "peak"}"#)).unwrap_err();
    assert!(
        e.message.contains("peak") && e.message.contains("rms"),
        "{e}"
    );
    // a file of FRFs only: the declaration would change nothing, so it is refused
    let y = [c(1.0, 2.0), c(3.0, 4.0), c(5.0, 6.0)];
    let e = mortise::io::load(
        &file(&[ds(4, (1, 3), (1, 3), &GA, &y)]),
        "frf.uff",
        &opts(r#"{"signal": "rms"}"#),
    )
    .unwrap_err();
    assert!(
        e.message.contains("rms") && e.message.contains("no spectr"),
        "{e}"
    );
}
