//! Bad input in the UFF datasets besides 58 (164, 151, 15, 2411, 18, 2420,
//! 82, 55): every error names the file, the line, the field and what was
//! expected. The valid pieces follow the dataset layouts as reproduced in
//! pyuff 2.5.8 `datasets/` (see `src/io/uff58/` module docs).

use mortise::error::Location;
use mortise::io::{self, ImportOptions};

const FILE: &str = "mounts.unv";

fn ds(num: &str, body: &[&str]) -> String {
    let mut s = format!("    -1\n{num:>6}\n");
    for l in body {
        s.push_str(l);
        s.push('\n');
    }
    s.push_str("    -1\n");
    s
}

fn units(code: i64, length: &str, force: &str) -> String {
    ds(
        "164",
        &[
            &format!("{code:>10}{:>20}{:>10}", "test units", 1),
            &format!("{length:>25}{force:>25}{:>25}", "1.0D+00"),
            &format!("{:>25}", "2.7315D+02"),
        ],
    )
}

fn node2411(id: i64, cs: i64, xyz: [f64; 3]) -> [String; 2] {
    [
        format!("{id:>10}{cs:>10}{:>10}{:>10}", 0, 1),
        format!("{:>25e}{:>25e}{:>25e}", xyz[0], xyz[1], xyz[2]),
    ]
}

fn nodes(list: &[(i64, i64, [f64; 3])]) -> String {
    let lines: Vec<String> = list
        .iter()
        .flat_map(|(i, c, x)| node2411(*i, *c, *x))
        .collect();
    let refs: Vec<&str> = lines.iter().map(|s| s.as_str()).collect();
    ds("2411", &refs)
}

/// A dataset 58 FRF with record 9's code, exponents and label.
fn frf58(func: i64, code9: i64, exps: (i64, i64, i64), label9: &str) -> String {
    let axis = |code: i64, e: (i64, i64, i64), label: &str| {
        format!(
            "{code:>10}{:>5}{:>5}{:>5} {:<20} {:<20}",
            e.0,
            e.1,
            e.2,
            "NONE",
            if label.is_empty() { "NONE" } else { label }
        )
    };
    ds(
        "58",
        &[
            "mount check",
            "NONE",
            "NONE",
            "NONE",
            "NONE",
            &format!(
                "{func:>5}{:>10}{:>5}{:>10} {:>10}{:>10}{:>4} {:>10}{:>10}{:>4}",
                0, 0, 0, "NONE", 1, 3, "NONE", 2, 3
            ),
            &format!(
                "{:>10}{:>10}{:>10}{:>13}{:>13}{:>13}",
                6, 2, 1, "1.00000e+01", "1.00000e+00", "0.00000e+00"
            ),
            &axis(18, (0, 0, 0), "Hz"),
            &axis(code9, exps, label9),
            &axis(13, (0, 0, 0), ""),
            &axis(0, (0, 0, 0), ""),
            "  1.00000000000e+00  2.00000000000e+00  3.00000000000e+00  4.00000000000e+00",
        ],
    )
}

/// A normal mode at nodes (3 values each).
fn mode(n: i64, mass: &str, nodes: &[i64], ndv: i64, data_ch: i64) -> String {
    let mut body: Vec<String> = vec![
        "mode".into(),
        "NONE".into(),
        "NONE".into(),
        "NONE".into(),
        "NONE".into(),
        format!("{:>10}{:>10}{data_ch:>10}{:>10}{:>10}{ndv:>10}", 1, 2, 8, 2),
        format!("{:>10}{:>10}{:>10}{n:>10}", 2, 4, 1),
        format!(
            "{:>13}{mass:>13}{:>13}{:>13}",
            "2.30000e+01", "2.00000e-02", "0.00000e+00"
        ),
    ];
    for id in nodes {
        body.push(format!("{id:>10}"));
        body.push(format!(
            "{:>13}{:>13}{:>13}",
            "1.00000e+00", "-5.00000e-01", "2.50000e-01"
        ));
    }
    let refs: Vec<&str> = body.iter().map(|s| s.as_str()).collect();
    ds("55", &refs)
}

fn complex_mode(a: &str) -> String {
    ds(
        "55",
        &[
            "mode",
            "NONE",
            "NONE",
            "NONE",
            "NONE",
            &format!("{:>10}{:>10}{:>10}{:>10}{:>10}{:>10}", 1, 3, 2, 8, 5, 3),
            &format!("{:>10}{:>10}{:>10}{:>10}", 2, 6, 1, 1),
            &format!(
                "{:>13}{:>13}{a:>13}{:>13}{:>13}{:>13}",
                "-5.00000e+00", "2.50000e+02", "0.00000e+00", "0.00000e+00", "0.00000e+00"
            ),
            &format!("{:>10}", 1),
            "  1.00000e+00  0.00000e+00  0.00000e+00  1.00000e+00  5.00000e-01  0.00000e+00",
        ],
    )
}

fn cs18(id: i64, reference: i64, method: i64, pts: [[f64; 3]; 3]) -> [String; 4] {
    [
        format!("{id:>10}{:>10}{reference:>10}{:>10}{method:>10}", 0, 1),
        format!("frame {id}"),
        format!(
            "{:>13e}{:>13e}{:>13e}{:>13e}{:>13e}{:>13e}",
            pts[0][0], pts[0][1], pts[0][2], pts[1][0], pts[1][1], pts[1][2]
        ),
        format!("{:>13e}{:>13e}{:>13e}", pts[2][0], pts[2][1], pts[2][2]),
    ]
}

fn ds18(systems: &[[String; 4]]) -> String {
    let lines: Vec<&str> = systems.iter().flatten().map(|s| s.as_str()).collect();
    ds("18", &lines)
}

fn cs2420(kind: i64, rows: [[f64; 3]; 4]) -> String {
    let mut body = vec![
        format!("{:>10}", 1),
        "part".to_string(),
        format!("{:>10}{kind:>10}{:>10}", 4, 8),
        "frame 4".to_string(),
    ];
    for r in rows {
        body.push(format!("{:>25e}{:>25e}{:>25e}", r[0], r[1], r[2]));
    }
    let refs: Vec<&str> = body.iter().map(|s| s.as_str()).collect();
    ds("2420", &refs)
}

const GOOD_PTS: [[f64; 3]; 3] = [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]];

/// Load and expect an error at `line` in `field` whose message holds `says`.
fn refused(text: &str, line: usize, field: &str, says: &str) {
    let e = io::load(text.as_bytes(), FILE, &ImportOptions::default())
        .err()
        .unwrap_or_else(|| panic!("accepted:\n{text}"));
    assert_eq!(e.file.as_deref(), Some(FILE), "{e}");
    assert_eq!(e.location, Some(Location::Line(line)), "{e}\n{text}");
    assert!(
        e.field.as_deref().is_some_and(|f| f.contains(field)),
        "field {:?}, wanted {field}: {e}",
        e.field
    );
    assert!(e.message.contains(says), "{e}");
}

#[test]
fn units_164_truncated_zero_factor_bad_code_and_bad_number() {
    // record 2's temperature offset missing: the dataset ends at line 5
    let t = ds(
        "164",
        &[
            &format!("{:>10}{:>20}{:>10}", 5, "mm", 1),
            "   1.0D+03   1.0D+03   1.0D+00",
        ],
    ) + &nodes(&[(1, 0, [1.0, 2.0, 3.0])]);
    refused(
        &t,
        5,
        "record 2 (temperature offset)",
        "ends at line 5 after 2 record line(s)",
    );
    refused(
        &(units(5, "0.0D+00", "1.0D+03") + &nodes(&[(1, 0, [1.0, 2.0, 3.0])])),
        4,
        "record 2, length factor",
        "the length factor is 0; expected a number above 0",
    );
    refused(
        &(units(12, "1.0D+03", "1.0D+03") + &nodes(&[(1, 0, [1.0, 2.0, 3.0])])),
        3,
        "record 1, units code",
        "units code 12; expected 1 to 9",
    );
    refused(
        &(units(5, "1.0D+03", "thousand") + &nodes(&[(1, 0, [1.0, 2.0, 3.0])])),
        4,
        "record 2 (length, force, temperature factors)",
        "expected 3 real number(s)",
    );
}

#[test]
fn units_164_before_a_58_it_cannot_scale_is_refused() {
    let inch = units(7, "3.9370078740157481D+01", "2.2480894309971052D-01");
    // specific data type 0 without label or exponents: quantity unknown
    let t = inch.clone() + &frf58(4, 0, (0, 0, 0), "");
    refused(
        &t,
        17,
        "record 9, axis units label",
        "cannot tell the quantity to convert",
    );
    // exponents that contradict acceleration (length 1, force 0)
    let t = inch.clone() + &frf58(4, 12, (2, 0, 0), "");
    refused(
        &t,
        17,
        "record 9, axis units label",
        "gives length, force and temperature exponents 2 0 0",
    );
    // a cross spectrum (type 3) without labels: scaling unknown
    let t = inch.clone() + &frf58(3, 12, (0, 0, 0), "");
    refused(
        &t,
        17,
        "record 9, axis units label",
        "cannot tell how these values scale",
    );
    // and with a label, the label decides: read without error
    let ok = inch + &frf58(4, 12, (0, 0, 0), "m/s^2");
    io::load(ok.as_bytes(), FILE, &ImportOptions::default()).unwrap();
}

#[test]
fn nodes_2411_and_15_cut_short_bad_numbers_missing_systems_duplicates() {
    // the last node has no coordinate line
    let mut lines: Vec<String> = node2411(1, 0, [1.0, 2.0, 3.0]).to_vec();
    lines.push(format!("{:>10}{:>10}{:>10}{:>10}", 2, 0, 0, 1));
    let refs: Vec<&str> = lines.iter().map(|s| s.as_str()).collect();
    refused(
        &ds("2411", &refs),
        6,
        "record 2 (coordinates x, y, z)",
        "expected two a node",
    );
    // a node in a system the file does not define
    refused(
        &nodes(&[(1, 0, [1.0, 2.0, 3.0]), (2, 9, [1.0, 2.0, 3.0])]),
        5,
        "definition coordinate system",
        "coordinate system 9, which the file does not define",
    );
    // a node defined twice with different coordinates
    refused(
        &nodes(&[(1, 0, [1.0, 2.0, 3.0]), (1, 0, [1.0, 2.0, 4.0])]),
        5,
        "node number",
        "defined twice with different coordinates (also at line 3)",
    );
    // dataset 15 with a word among the coordinates
    let t = ds(
        "15",
        &[&format!(
            "{:>10}{:>10}{:>10}{:>10}{:>13}{:>13}{:>13}",
            1, 0, 0, 1, "1.0", "two", "3.0"
        )],
    );
    refused(&t, 3, "node record", "expected x, y, z as numbers");
    // the file ends inside a 2411
    refused(
        "    -1\n  2411\n         1         0         0         1\n",
        4,
        "dataset end tag",
        "the file ends inside dataset 2411",
    );
}

#[test]
fn coordinate_systems_18_and_2420_refused_when_they_cannot_be_built() {
    let n = nodes(&[(1, 0, [1.0, 2.0, 3.0])]);
    // method of definition other than 1
    refused(
        &(ds18(&[cs18(3, 0, 2, GOOD_PTS)]) + &n),
        3,
        "record 1, method of definition",
        "method of definition 2; expected 1",
    );
    // three points on one line
    refused(
        &(ds18(&[cs18(3, 0, 1, [[0.0; 3], [1.0, 0.0, 0.0], [2.0, 0.0, 0.0]])]) + &n),
        3,
        "record 3 (definition points)",
        "do not span a plane",
    );
    // a reference chain that comes back to itself
    refused(
        &(ds18(&[cs18(3, 4, 1, GOOD_PTS), cs18(4, 3, 1, GOOD_PTS)]) + &n),
        7,
        "reference coordinate system",
        "is defined through itself",
    );
    // a reference system the file does not define
    refused(
        &(ds18(&[cs18(3, 8, 1, GOOD_PTS)]) + &n),
        3,
        "reference coordinate system",
        "reference system 8, which the file does not define",
    );
    // 2420 axes not orthonormal
    let skew = [[1.0, 0.0, 0.0], [0.5, 1.0, 0.0], [0.0, 0.0, 1.0], [0.0; 3]];
    refused(
        &(cs2420(0, skew) + &n),
        7,
        "transformation matrix row 1",
        "not orthonormal",
    );
    // 2420 spherical
    let eye = [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0], [0.0; 3]];
    refused(
        &(cs2420(2, eye) + &n),
        5,
        "coordinate system type",
        "spherical",
    );
}

#[test]
fn trace_line_82_with_a_wrong_count() {
    let t = nodes(&[(1, 0, [1.0, 2.0, 3.0])])
        + &ds(
            "82",
            &[
                &format!("{:>10}{:>10}{:>10}", 1, 5, 2),
                "outline",
                &format!("{:>10}{:>10}{:>10}", 1, 2, 3),
            ],
        );
    refused(
        &t,
        11,
        "record 3 (node numbers: 5 announced, 3 read)",
        "expected record 3",
    );
    let t = nodes(&[(1, 0, [1.0, 2.0, 3.0])])
        + &ds(
            "82",
            &[
                &format!("{:>10}{:>10}{:>10}", 1, 2, 2),
                "outline",
                &format!("{:>10}{:>10}{:>10}", 1, 2, 3),
            ],
        );
    refused(
        &t,
        10,
        "record 1, number of nodes",
        "announces 2 node entries but the dataset holds 3",
    );
}

#[test]
fn modes_55_inconsistent_cut_short_and_unscaled() {
    // the second mode has one node fewer
    let t = mode(1, "1.00000e+00", &[1, 2], 3, 2) + &mode(2, "1.00000e+00", &[1], 3, 2);
    refused(
        &t,
        16,
        "records 9-10 (nodes)",
        "every mode must give the same nodes",
    );
    // the same count in another order
    let t = mode(1, "1.00000e+00", &[1, 2], 3, 2) + &mode(2, "1.00000e+00", &[2, 1], 3, 2);
    refused(&t, 16, "record 9 (node number)", "gives node 2 in place 1");
    // the last node's values missing
    let mut t = mode(1, "1.00000e+00", &[1, 2], 3, 2);
    let body = t
        .strip_suffix("    -1\n")
        .unwrap_or(&t)
        .trim_end_matches('\n');
    let cut = body
        .rsplit_once('\n')
        .map(|p| p.0)
        .unwrap_or("")
        .to_string();
    t = format!("{cut}\n    -1\n");
    refused(&t, 14, "records 9-10", "the last node is cut short");
    // modal mass 0 (what a writer leaves when it has none)
    refused(
        &mode(1, "0.00000e+00", &[1], 3, 2),
        10,
        "record 8, modal mass",
        "modal mass 0; expected a value above 0",
    );
    // 6 values a node announced with data characteristic 2 (3 DOF)
    refused(
        &mode(1, "1.00000e+00", &[1], 6, 2),
        8,
        "record 6, values per node",
        "expected 3",
    );
    // a complex mode with modal A = 0
    refused(
        &complex_mode("0.00000e+00"),
        10,
        "record 8, modal A",
        "modal A = 0",
    );
}
