//! Supplier CSV/TSV through a column map, checked against values computed
//! independently with numpy (tests/py/csv_mapped.py) and against unit
//! definitions (ISO 80000-3 for g; SI prefixes).

mod common;

use mortise::io::csv::{
    preview, read_mapped, ColumnMap, ColumnRef, Delimiter, FreqUnit, MagScale, MapEntry, PhaseUnit,
    ValueColumns,
};
use mortise::Quantity;
use serde_json::Value;

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * a.abs().max(b.abs()).max(1e-300)
}

fn expected(dir: &std::path::Path) -> Value {
    let out = common::run_py("csv_mapped.py", &[dir.to_str().unwrap()]);
    serde_json::from_str(&out).unwrap()
}

fn check(set: &mortise::FrfSet, exp: &Value, entries: &[(usize, usize)], rel: f64) {
    let f = exp["freqs"].as_array().unwrap();
    assert_eq!(set.n_lines(), f.len());
    for (k, fv) in f.iter().enumerate() {
        assert!(
            close(set.freqs[k], fv.as_f64().unwrap(), 1e-15),
            "freq line {k}"
        );
    }
    for (e, &(i, j)) in entries.iter().enumerate() {
        let vals = exp["values"][e].as_array().unwrap();
        for (k, v) in vals.iter().enumerate() {
            let (re, im) = (v[0].as_f64().unwrap(), v[1].as_f64().unwrap());
            let got = set.get(k, i, j);
            let scale = (re * re + im * im).sqrt();
            assert!(
                (got.re - re).abs() <= rel * scale && (got.im - im).abs() <= rel * scale,
                "entry {e} line {k}: got {got}, numpy {re}{im:+}i"
            );
        }
    }
}

#[test]
fn db_magnitude_with_reference_and_degree_phase_matches_numpy() {
    let dir = common::scratch("csv_mapped_db");
    let exp = expected(&dir);
    let bytes = std::fs::read(dir.join("db_deg.csv")).unwrap();
    let map = ColumnMap {
        skip_rows: 3,
        freq: ColumnRef::Name("Frequency [Hz]".into()),
        entries: vec![MapEntry {
            out_dof: "A1+Z".into(),
            in_dof: "A1+Z".into(),
            values: ValueColumns::MagPhase {
                mag: ColumnRef::Index(2),
                phase: ColumnRef::Name("Phase [deg]".into()),
            },
            coherence: None,
        }],
        mag_scale: MagScale::Db { reference: 1e-6 },
        phase_unit: PhaseUnit::Deg,
        unit: "g/N".into(),
        out_qty: Quantity::Acceleration,
        in_qty: Quantity::Force,
        ..ColumnMap::default()
    };
    let s = read_mapped(&bytes, "db_deg.csv", &map, "wall").unwrap();
    assert_eq!(s.outputs[0].to_string(), "wall:A1+Z");
    assert_eq!(s.kind(), mortise::FrfKind::Accelerance);
    // 10^(L/20) and the complex exponential round differently in Rust and numpy: a few ulp
    check(&s, &exp["db_deg"], &[(0, 0)], 1e-13);
}

#[test]
fn tab_separated_khz_by_header_name_with_coherence_matches_numpy() {
    let dir = common::scratch("csv_mapped_tsv");
    let exp = expected(&dir);
    let bytes = std::fs::read(dir.join("reim_mm.tsv")).unwrap();
    let n = |s: &str| ColumnRef::Name(s.into());
    let map = ColumnMap {
        skip_rows: 1,
        freq: n("f_kHz"),
        freq_unit: FreqUnit::KHz,
        entries: vec![
            MapEntry {
                out_dof: "wall:A1+Z".into(),
                in_dof: "wall:A1+Z".into(),
                values: ValueColumns::ReIm {
                    re: n("Y11_re"),
                    im: n("Y11_im"),
                },
                coherence: Some(n("coh11")),
            },
            MapEntry {
                out_dof: "wall:A2+Z".into(),
                in_dof: "wall:A1+Z".into(),
                values: ValueColumns::ReIm {
                    re: n("y21_RE"), // header names match without regard to case
                    im: n("Y21_im"),
                },
                coherence: None,
            },
        ],
        unit: "mm/s/N".into(),
        out_qty: Quantity::Velocity,
        in_qty: Quantity::Force,
        ..ColumnMap::default()
    };
    let s = read_mapped(&bytes, "reim_mm.tsv", &map, "x").unwrap();
    assert_eq!((s.n_out(), s.n_in()), (2, 1));
    // ×1e-3 for mm (SI prefix) is one rounding: 1 ulp-level agreement
    check(&s, &exp["reim_mm"], &[(0, 0), (1, 0)], 4e-16);
    let coh = s.coherence.as_ref().unwrap();
    for (k, c) in exp["reim_mm"]["coherence"]
        .as_array()
        .unwrap()
        .iter()
        .enumerate()
    {
        assert_eq!(coh[s.idx(k, 0, 0)], c.as_f64().unwrap());
        assert!(coh[s.idx(k, 1, 0)].is_nan());
    }
}

#[test]
fn whitespace_rad_per_s_n_per_mm_matches_numpy() {
    let dir = common::scratch("csv_mapped_ws");
    let exp = expected(&dir);
    let bytes = std::fs::read(dir.join("stiff.txt")).unwrap();
    let map = ColumnMap {
        freq_unit: FreqUnit::RadPerS,
        entries: vec![MapEntry {
            out_dof: "iso:top+Z".into(),
            in_dof: "iso:top+Z".into(),
            values: ValueColumns::MagPhase {
                mag: ColumnRef::Index(2),
                phase: ColumnRef::Index(3),
            },
            coherence: None,
        }],
        phase_unit: PhaseUnit::Rad,
        unit: "N/mm".into(),
        out_qty: Quantity::Force,
        in_qty: Quantity::Displacement,
        ..ColumnMap::default()
    };
    let s = read_mapped(&bytes, "stiff.txt", &map, "iso").unwrap();
    check(&s, &exp["stiff"], &[(0, 0)], 1e-15);
    assert_eq!(s.kind(), mortise::FrfKind::DynamicStiffness);
}

fn one_value_map(unit: &str, out: Quantity, inp: Quantity) -> ColumnMap {
    ColumnMap {
        entries: vec![MapEntry {
            out_dof: "1+Z".into(),
            in_dof: "1+Z".into(),
            values: ValueColumns::Real {
                value: ColumnRef::Index(2),
            },
            coherence: None,
        }],
        unit: unit.into(),
        out_qty: out,
        in_qty: inp,
        ..ColumnMap::default()
    }
}

#[test]
fn unit_factors_follow_their_definitions() {
    let data = b"10,2.5\n20,4\n";
    // N/mm = 1000 N/m (SI prefix milli)
    let s = read_mapped(
        data,
        "k.csv",
        &one_value_map("N/mm", Quantity::Force, Quantity::Displacement),
        "c",
    )
    .unwrap();
    assert_eq!(s.get(0, 0, 0).re, 2500.0);
    assert_eq!(s.get(1, 0, 0).re, 4000.0);
    // g = 9.80665 m/s^2 (ISO 80000-3)
    let s = read_mapped(
        data,
        "a.csv",
        &one_value_map("g/N", Quantity::Acceleration, Quantity::Force),
        "c",
    )
    .unwrap();
    assert_eq!(s.get(0, 0, 0).re, 2.5 * 9.80665);
    // in/s per lbf: 0.0254 m and 4.4482216152605 N (1959 international yard and pound)
    let s = read_mapped(
        data,
        "v.csv",
        &one_value_map("in/s/lbf", Quantity::Velocity, Quantity::Force),
        "c",
    )
    .unwrap();
    assert!(close(
        s.get(0, 0, 0).re,
        2.5 * 0.0254 / 4.4482216152605,
        1e-15
    ));
    // SI when the unit is empty
    let s = read_mapped(
        data,
        "si.csv",
        &one_value_map("", Quantity::Displacement, Quantity::Force),
        "c",
    )
    .unwrap();
    assert_eq!(s.get(1, 0, 0).re, 4.0);
    assert!(s.provenance.is_empty()); // provenance is added by io::load
}

#[test]
fn decimal_comma_semicolon_and_supplier_time_convention() {
    let data = "f;re;im\n1,5;0,25;-0,5\n3;1;2\n".as_bytes();
    let mut map = ColumnMap {
        skip_rows: 1,
        decimal_comma: true,
        entries: vec![MapEntry {
            out_dof: "p+Z".into(),
            in_dof: "p+Z".into(),
            values: ValueColumns::ReIm {
                re: ColumnRef::Name("re".into()),
                im: ColumnRef::Name("im".into()),
            },
            coherence: None,
        }],
        out_qty: Quantity::Displacement,
        in_qty: Quantity::Force,
        ..ColumnMap::default()
    };
    let s = read_mapped(data, "d.csv", &map, "c").unwrap();
    assert_eq!(s.freqs, vec![1.5, 3.0]);
    assert_eq!(s.get(0, 0, 0), num_complex::Complex64::new(0.25, -0.5));
    // e^{-iωt} data are the complex conjugate of e^{+iωt} data (common practice)
    map.conjugate = true;
    let s = read_mapped(data, "d.csv", &map, "c").unwrap();
    assert_eq!(s.get(1, 0, 0), num_complex::Complex64::new(1.0, -2.0));
}

#[test]
fn entries_not_in_the_file_stay_missing() {
    let data = b"1,0.1,0.2\n2,0.3,0.4\n";
    let mk = |o: &str, i: &str, c: usize| MapEntry {
        out_dof: o.into(),
        in_dof: i.into(),
        values: ValueColumns::Real {
            value: ColumnRef::Index(c),
        },
        coherence: None,
    };
    let map = ColumnMap {
        entries: vec![mk("1+Z", "1+Z", 2), mk("2+Z", "2+Z", 3)],
        out_qty: Quantity::Displacement,
        in_qty: Quantity::Force,
        ..ColumnMap::default()
    };
    let s = read_mapped(data, "m.csv", &map, "c").unwrap();
    assert_eq!((s.n_out(), s.n_in()), (2, 2));
    assert_eq!(s.missing_entries(), vec!["c:1+Z / c:2+Z", "c:2+Z / c:1+Z"]);
    assert!(s.get(0, 0, 1).re.is_nan());
    assert!(s.warnings.iter().any(|w| w.contains("2 of 4")));
}

#[test]
fn preview_splits_cells_and_shows_first_values() {
    let data = b"Title\nfreq\tre\tim\n10\t1\t2\n20\t3\t4\n30\t5\t6\n";
    let mut map = ColumnMap {
        skip_rows: 2,
        entries: vec![MapEntry {
            out_dof: "1+Z".into(),
            in_dof: "1+Z".into(),
            values: ValueColumns::ReIm {
                re: ColumnRef::Name("re".into()),
                im: ColumnRef::Name("im".into()),
            },
            coherence: None,
        }],
        unit: "mm/N".into(),
        out_qty: Quantity::Displacement,
        in_qty: Quantity::Force,
        ..ColumnMap::default()
    };
    let p = preview(data, "p.tsv", &map, 2).unwrap();
    assert_eq!(p.delimiter, Delimiter::Tab);
    assert_eq!(p.header, vec!["freq", "re", "im"]);
    assert_eq!(p.rows.len(), 2);
    assert_eq!(p.rows[0].line, 3);
    assert_eq!(p.rows[1].cells, vec!["20", "3", "4"]);
    assert_eq!(p.values.len(), 2);
    assert_eq!(p.values[1].freq_hz, 20.0);
    assert_eq!(p.values[1].entries[0], [3e-3, 4e-3]);
    assert!(p.problem.is_none());
    // an incomplete map still previews the cells and says what is wrong
    map.entries[0].values = ValueColumns::ReIm {
        re: ColumnRef::Name("real".into()),
        im: ColumnRef::Index(3),
    };
    let p = preview(data, "p.tsv", &map, 5).unwrap();
    assert_eq!(p.rows.len(), 3);
    assert!(p.values.is_empty());
    let prob = p.problem.unwrap();
    assert!(prob.contains("no column named 'real'"), "{prob}");
    assert!(prob.contains("'freq', 're', 'im'"), "{prob}");
}

#[test]
fn column_map_json_round_trip() {
    let map = ColumnMap {
        delimiter: Delimiter::Semicolon,
        skip_rows: 2,
        freq: ColumnRef::Name("Hz".into()),
        entries: vec![MapEntry {
            out_dof: "wall:A1+Z".into(),
            in_dof: "wall:A1+Z".into(),
            values: ValueColumns::MagPhase {
                mag: ColumnRef::Index(2),
                phase: ColumnRef::Index(3),
            },
            coherence: Some(ColumnRef::Index(4)),
        }],
        mag_scale: MagScale::Db { reference: 1e-6 },
        unit: "g/N".into(),
        out_qty: Quantity::Acceleration,
        in_qty: Quantity::Force,
        ..ColumnMap::default()
    };
    let j = serde_json::to_string(&map).unwrap();
    let back: ColumnMap = serde_json::from_str(&j).unwrap();
    assert_eq!(back, map);
    // a partial map from the page's dialog fills the rest with defaults
    let part: ColumnMap = serde_json::from_str(
        r#"{"entries":[{"out_dof":"1+Z","in_dof":"1+Z","values":{"form":"real","value":2}}],"out_qty":"displacement","in_qty":"force"}"#,
    )
    .unwrap();
    assert_eq!(part.freq, ColumnRef::Index(1));
    assert_eq!(part.delimiter, Delimiter::Auto);
}

// A typo in a recipe's "import" object must not be taken for "not given".
#[test]
fn import_options_refuse_unknown_keys() {
    use mortise::io::ImportOptions;
    let e = serde_json::from_str::<ImportOptions>(r#"{"componnet": "x"}"#).unwrap_err();
    assert!(e.to_string().contains("componnet"), "{e}");
    // inside the column map and its entries too
    for (json, key) in [
        (r#"{"column_map": {"skip_row": 3}}"#, "skip_row"),
        (
            r#"{"column_map": {"entries": [{"out_dof": "1+Z", "in_dof": "1+Z", "valeus": {"form": "real", "value": 2}}]}}"#,
            "valeus",
        ),
        (
            r#"{"column_map": {"entries": [{"out_dof": "1+Z", "values": {"form": "real", "value": 2, "imag": 3}}]}}"#,
            "imag",
        ),
        (
            r#"{"column_map": {"mag_scale": {"scale": "db", "reference": 1, "ref": 2}}}"#,
            "ref",
        ),
    ] {
        let e = serde_json::from_str::<ImportOptions>(json).unwrap_err();
        assert!(e.to_string().contains(key), "{json}: {e}");
    }
    // the recipe face (components.NAME.import) names it as well
    let recipe = r#"{"format": "mortise-recipe", "version": 1,
        "components": {"wall": {"file": "wall.csv", "import": {"componnet": "x"}}},
        "steps": [], "outputs": []}"#;
    let e = mortise::recipe::parse(recipe).unwrap_err();
    assert!(e.message.contains("componnet"), "{e}");
    // what the page's mapping dialog and saved maps write is still read:
    // "signal" inside the column map is the declaration of the import options
    let o: ImportOptions = serde_json::from_str(
        r#"{"component": "fan", "column_map": {"signal": "psd", "out_qty": "force"}}"#,
    )
    .unwrap();
    assert_eq!(o.signal, Some(mortise::frf::SignalKind::Psd));
    let o: ImportOptions =
        serde_json::from_str(r#"{"column_map": {"signal": null, "skip_rows": 2}}"#).unwrap();
    assert_eq!(o.signal, None);
    let e = serde_json::from_str::<ImportOptions>(
        r#"{"signal": "rms", "column_map": {"signal": "psd"}}"#,
    )
    .unwrap_err();
    assert!(
        e.to_string().contains("rms") && e.to_string().contains("psd"),
        "{e}"
    );
}
