//! Malformed and unusable MAT-files: each refused with a typed error naming
//! the file, the byte offset where it applies, the field and what was
//! expected; and a seeded mutation smoke test (no input panics). Seeds are
//! written by scipy.io.savemat (`tests/py/mat_savemat.py`); the crafted
//! cases use the level-5 layout (common practice: the published MAT-file
//! format, as scipy writes it) through the small writer below.

mod common;

use mortise::error::{Error, ErrorKind, Location};
use mortise::io::{self, ImportOptions};
use serde_json::{json, Value};
use std::path::PathBuf;

fn seeds(test: &str) -> PathBuf {
    let d = common::scratch(&format!("mat_bad_input_{test}"));
    common::run_py("mat_savemat.py", &[d.to_str().unwrap()]);
    d
}

fn opts(mat: Value) -> ImportOptions {
    serde_json::from_value(json!({ "mat": mat })).unwrap()
}

fn oif_map() -> Value {
    json!({"freq": "f", "frf": "H", "layout": "out-in-freq",
           "out_dofs_var": "outs", "in_dofs_var": "ins",
           "out_qty": "acceleration", "in_qty": "force"})
}

fn with(mut m: Value, key: &str, v: Value) -> Value {
    m[key] = v;
    m
}

fn err(bytes: &[u8], o: &ImportOptions) -> Error {
    match io::load(bytes, "supplier.mat", o) {
        Ok(_) => panic!("expected an error"),
        Err(e) => {
            assert_eq!(e.file.as_deref(), Some("supplier.mat"), "{e}");
            e
        }
    }
}

fn has(e: &Error, parts: &[&str]) {
    let t = e.to_string();
    for p in parts {
        assert!(t.contains(p), "expected '{p}' in: {t}");
    }
}

// --- a small level-5 writer (little-endian) for crafted cases ---
fn el(ty: u32, payload: &[u8]) -> Vec<u8> {
    let mut b = ty.to_le_bytes().to_vec();
    b.extend_from_slice(&(payload.len() as u32).to_le_bytes());
    b.extend_from_slice(payload);
    while b.len() % 8 != 0 {
        b.push(0);
    }
    b
}
fn matrix(name: &str, class: u32, dims: &[i32], data: &[Vec<u8>]) -> Vec<u8> {
    let mut body = el(6, &[class.to_le_bytes(), 0u32.to_le_bytes()].concat());
    body.extend(el(
        5,
        &dims
            .iter()
            .flat_map(|d| d.to_le_bytes())
            .collect::<Vec<_>>(),
    ));
    body.extend(el(1, name.as_bytes()));
    for d in data {
        body.extend_from_slice(d);
    }
    el(14, &body)
}
fn doubles(v: &[f64]) -> Vec<u8> {
    el(
        9,
        &v.iter().flat_map(|x| x.to_le_bytes()).collect::<Vec<_>>(),
    )
}
fn file(vars: &[Vec<u8>]) -> Vec<u8> {
    let mut b = b"MATLAB 5.0 MAT-file, crafted for a test".to_vec();
    b.resize(116, b' ');
    b.extend_from_slice(&[0; 8]);
    b.extend_from_slice(&0x0100u16.to_le_bytes());
    b.extend_from_slice(b"IM");
    for v in vars {
        b.extend_from_slice(v);
    }
    b
}
fn simple_map() -> Value {
    json!({"freq": "f", "frf": "H", "layout": "freq-frf",
           "out_dofs": ["1+Z"], "in_dofs": ["1+Z"],
           "out_qty": "displacement", "in_qty": "force"})
}

/// Offset of top-level variable `n` (0-based) of a little-endian file.
fn var_at(b: &[u8], n: usize) -> usize {
    let mut at = 128;
    for _ in 0..n {
        let size = u32::from_le_bytes(b[at + 4..at + 8].try_into().unwrap()) as usize;
        let ty = u32::from_le_bytes(b[at..at + 4].try_into().unwrap());
        at += 8 + if ty == 15 { size } else { size.div_ceil(8) * 8 };
    }
    at
}

#[test]
fn malformed_and_unusable_mat_files_are_refused_with_place_and_expectation() {
    let d = seeds("cases");
    let read = |n: &str| std::fs::read(d.join(n)).unwrap();
    let oif = read("oif.mat");
    let oif_z = read("oif_z.mat");
    let m = opts(oif_map());

    // 1. truncated header
    let e = err(&oif[..60], &m);
    assert_eq!(e.kind, ErrorKind::Parse);
    assert_eq!(e.location, Some(Location::Byte(60)));
    has(
        &e,
        &[
            "MAT-file header",
            "ends after 60 bytes, inside the 128-byte",
        ],
    );

    // 2. a tag size beyond the end of the file
    let mut b = oif.clone();
    b[132..136].copy_from_slice(&0x7fff_fff0u32.to_le_bytes());
    let e = err(&b, &m);
    assert_eq!(e.location, Some(Location::Byte(132)));
    has(
        &e,
        &[
            "variable 1, size",
            "the tag gives 2147483632 bytes of miMATRIX, but only",
        ],
    );

    // 3. a corrupt compressed stream (variable 2, H): refused at its offset
    let mut b = oif_z.clone();
    let at = var_at(&b, 1);
    for k in 0..6 {
        b[at + 40 + k] ^= 0x5a;
    }
    let e = err(&b, &m);
    assert_eq!(e.kind, ErrorKind::Parse);
    assert_eq!(e.location, Some(Location::Byte(at)));
    has(
        &e,
        &["miCOMPRESSED data", "the compressed data do not inflate"],
    );

    // 4. dimensions whose product overflows: refused before allocating
    let huge = file(&[
        matrix("f", 6, &[65536, 65536, 65536, 65536], &[doubles(&[1.0])]),
        matrix("H", 6, &[1, 1], &[doubles(&[1.0])]),
    ]);
    let e = err(&huge, &opts(simple_map()));
    assert_eq!(e.kind, ErrorKind::Budget);
    has(
        &e,
        &[
            "variable 'f' (65536×65536×65536×65536)",
            "more memory than can be counted",
        ],
    );

    // 5. the wrong class for the FRFs: a char array
    let e = err(&oif, &opts(with(oif_map(), "frf", json!("note"))));
    assert_eq!(e.kind, ErrorKind::Usage);
    has(
        &e,
        &[
            "mat.frf ('note')",
            "variable 'note' is a char array; expected a numeric array",
        ],
    );

    // 6. a non-finite frequency
    let nan_map = json!({"freq": "f", "frf": "H", "layout": "out-in-freq",
        "out_dofs": ["1+Z"], "in_dofs": ["1+Z"], "out_qty": "displacement", "in_qty": "force"});
    let e = err(&read("nan_freq.mat"), &opts(nan_map.clone()));
    assert_eq!(e.kind, ErrorKind::Numeric);
    has(
        &e,
        &[
            "mat.freq ('f')",
            "value 3 is NaN; expected finite frequencies",
        ],
    );

    // 7. a decreasing frequency
    let e = err(&read("dec_freq.mat"), &opts(nan_map.clone()));
    assert_eq!(e.kind, ErrorKind::Grid);
    has(
        &e,
        &[
            "value 4 (2.5 Hz) does not exceed value 3 (3 Hz)",
            "strictly increasing",
        ],
    );

    // 8. v7.3 (HDF5): refused plainly, saying how to save level 5
    let mut h5 = b"MATLAB 7.3 MAT-file, Platform: GLNXA64, HDF5 schema 1.00".to_vec();
    h5.resize(512, b' ');
    h5.extend_from_slice(b"\x89HDF\r\n\x1a\n");
    h5.extend_from_slice(&[0; 64]);
    let e = err(&h5, &m);
    assert_eq!(e.kind, ErrorKind::Unsupported);
    has(
        &e,
        &[
            "MAT-file version 7.3, which is an HDF5 file",
            "'-v7'",
            "scipy.io.savemat",
        ],
    );
    let e = err(&h5[512..], &m);
    assert_eq!(e.kind, ErrorKind::Unsupported);

    // 9. a struct variable: refused plainly, with the way out
    let st = read("struct.mat");
    let e = err(&st, &opts(with(nan_map.clone(), "frf", json!("s"))));
    has(
        &e,
        &["variable 's' is a struct; mortise reads numeric arrays, not structs"],
    );

    // 10. a level-4 file (scipy format='4'): refused plainly
    let e = err(&read("level4.mat"), &m);
    assert_eq!(e.kind, ErrorKind::Unsupported);
    has(&e, &["level-4 MAT-file (first matrix 'f')", "'-v7'"]);

    // 11. a variable the file does not hold: the message lists what it holds
    let e = err(&oif, &opts(with(oif_map(), "frf", json!("Hx"))));
    has(
        &e,
        &["mat.frf", "no variable 'Hx' in the file; the file holds f (double, 1×40, real), H (double, 3×2×40, complex)"],
    );

    // 12. a complex frequency vector
    let e = err(&read("cfreq.mat"), &opts(nan_map.clone()));
    has(&e, &["the frequency variable is complex"]);

    // 13. DOF labels that do not match the dimensions
    let e = err(
        &oif,
        &opts(with(
            with(oif_map(), "out_dofs", json!(["1+X", "2+X"])),
            "out_dofs_var",
            Value::Null,
        )),
    );
    has(
        &e,
        &[
            "mat.out_dofs",
            "2 output DOF label(s) for the FRF variable's 3 outputs",
        ],
    );

    // 14. a layout that puts the lines on a dimension of another length
    let e = err(&oif, &opts(with(oif_map(), "layout", json!("freq-out-in"))));
    has(&e, &["puts the frequency lines on dimension 1 (3), but the frequency variable 'f' has 40 values"]);

    // 15. fewer values stored than the dimensions give
    let short = file(&[
        matrix("f", 6, &[1, 5], &[doubles(&[1.0, 2.0, 3.0, 4.0])]),
        matrix("H", 6, &[5, 1], &[doubles(&[1.0; 5])]),
    ]);
    let e = err(&short, &opts(simple_map()));
    assert_eq!(e.location, Some(Location::Byte(128 + 8 + 16 + 16 + 16)));
    has(
        &e,
        &[
            "variable 'f', real part",
            "4 values stored; the dimensions give 5",
        ],
    );

    // 16. a small data element claiming more than 4 bytes
    let mut small = file(&[matrix("f", 6, &[1, 1], &[doubles(&[1.0])])]);
    small[136..140].copy_from_slice(&((7u32 << 16) | 6).to_le_bytes());
    let e = err(&small, &opts(simple_map()));
    assert_eq!(e.location, Some(Location::Byte(136)));
    has(&e, &["small data element of 7 bytes; expected at most 4"]);

    // 17. a garbled endian indicator
    let mut b = oif.clone();
    b[126..128].copy_from_slice(b"XX");
    let e = err(&b, &m);
    assert_eq!(e.location, Some(Location::Byte(126)));
    has(&e, &["expected 'IM' (little-endian) or 'MI' (big-endian)"]);

    // 18. a DOF label that does not parse, named with its place in the list
    let e = err(
        &oif,
        &opts(with(
            with(oif_map(), "in_dofs", json!(["1+Q", "2+Z"])),
            "in_dofs_var",
            Value::Null,
        )),
    );
    assert_eq!(e.kind, ErrorKind::Dof);
    has(&e, &["mat.in_dofs, label 1", "unknown direction 'Q'"]);

    // 19. labels from a variable that is not text
    let e = err(&oif, &opts(with(oif_map(), "out_dofs_var", json!("H"))));
    has(
        &e,
        &[
            "mat.out_dofs_var",
            "variable 'H' is a double array; expected DOF labels as a cell array of strings",
        ],
    );

    // 20. a 64-bit integer a double cannot hold exactly
    let big_int = file(&[
        matrix(
            "f",
            14,
            &[1, 2],
            &[el(
                12,
                &[1i64.to_le_bytes(), ((1i64 << 53) + 1).to_le_bytes()].concat(),
            )],
        ),
        matrix("H", 6, &[2, 1], &[doubles(&[1.0, 2.0])]),
    ]);
    let e = err(&big_int, &opts(simple_map()));
    assert_eq!(e.kind, ErrorKind::Numeric);
    has(&e, &["value 2 is a 64-bit integer beyond 2^53"]);

    // 21. a MAT mapping for a file that is not a MAT-file, and a column map for a MAT-file
    let csv = b"# mortise-frf 1\n".to_vec();
    let e = io::load(&csv, "a.csv", &m).unwrap_err();
    has(
        &e,
        &["carry a MAT-file mapping (\"mat\"), but this file is"],
    );
    let cm: ImportOptions =
        serde_json::from_value(json!({"column_map": {"out_qty": "force"}})).unwrap();
    let e = err(&oif, &cm);
    has(&e, &["column_map", "give a MAT mapping (\"mat\") instead"]);

    // 22. no in_qty for FRFs; unknown mapping key
    let e = err(&oif, &opts(with(oif_map(), "in_qty", Value::Null)));
    has(&e, &["mat.in_qty", "needs \"in_qty\""]);
    let bad: Result<ImportOptions, _> =
        serde_json::from_value(json!({"mat": with(oif_map(), "dof_names", json!("x"))}));
    assert!(bad
        .unwrap_err()
        .to_string()
        .contains("unknown field `dof_names`"));

    // 23. no mapping at all: the message lists the variables and the keys to give
    let e = err(&oif, &ImportOptions::default());
    assert_eq!(e.kind, ErrorKind::Usage);
    has(
        &e,
        &[
            "needs a MAT mapping",
            "H (double, 3×2×40, complex)",
            "outs (cell, 1×3)",
            "\"layout\"",
        ],
    );
}

/// xorshift64: a fixed, seeded sequence (stable across runs and platforms).
struct XorShift(u64);
impl XorShift {
    fn next(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        self.0 = x;
        x
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

#[test]
fn mutated_mat_files_never_panic() {
    let d = seeds("smoke");
    let cases: [(&str, Value); 4] = [
        ("oif.mat", oif_map()),
        ("oif_z.mat", oif_map()),
        (
            "foi.mat",
            json!({"freq": "freq_hz", "frf": "A", "layout": "freq-out-in",
                   "out_dofs_var": "labels", "in_dofs": ["1+Z", "2+Z"],
                   "out_qty": "acceleration", "in_qty": "force", "unit": "g/N"}),
        ),
        (
            "cols.mat",
            json!({"freq": "w", "frf": "Y", "layout": "freq-frf",
                   "out_dofs": ["1+Z", "2+Z", "1+Z"], "in_dofs": ["1+Z", "1+Z", "3+Z"],
                   "out_qty": "velocity", "in_qty": "force"}),
        ),
    ];
    let mut rng = XorShift(0x9e37_79b9_7f4a_7c15);
    let mut read_ok = 0;
    let mut refused = 0;
    for (name, map) in &cases {
        let seed = std::fs::read(d.join(name)).unwrap();
        let with_map = opts(map.clone());
        assert!(
            io::load(&seed, name, &with_map).is_ok(),
            "seed {name} reads"
        );
        for _ in 0..300 {
            let mut b = seed.clone();
            match rng.below(4) {
                0 => b.truncate(rng.below(b.len())),
                1 => {
                    for _ in 0..1 + rng.below(4) {
                        let at = rng.below(b.len());
                        b[at] = rng.next() as u8;
                    }
                }
                2 => {
                    // a size or count word set to an extreme
                    let at = (128 + rng.below(b.len() - 128)) & !3;
                    let v = [0u32, 1, 0x7fff_ffff, 0xffff_ffff, 0x8000_0000][rng.below(5)];
                    if at + 4 <= b.len() {
                        b[at..at + 4].copy_from_slice(&v.to_le_bytes());
                    }
                }
                _ => {
                    let at = rng.below(b.len());
                    let n = rng.below(64).min(b.len() - at);
                    b.drain(at..at + n);
                }
            }
            for o in [&with_map, &ImportOptions::default()] {
                match io::load(&b, name, o) {
                    Ok(_) => read_ok += 1,
                    Err(e) => {
                        assert_eq!(e.file.as_deref(), Some(*name), "{e}");
                        refused += 1;
                    }
                }
            }
            let _ = io::mat::variables(&b, name);
        }
    }
    eprintln!("mutated MAT-files: {read_ok} read, {refused} refused");
    // 1200 mutated files, each read with and without the mapping
    assert_eq!(read_ok + refused, 2400);
    assert!(refused > 600, "{refused} refused");
}
