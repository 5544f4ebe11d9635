//! A CI-sized mutation fuzz of every parser: small seeds (cut from
//! sample-frf/ and written by mortise's own writers, plus another writer's
//! UFF layout) are mutated by a seeded xorshift generator (deterministic:
//! the same cases on every run) and fed to format detection, `io::load`,
//! the UFF reader, our CSV reader, the column-map reader and the import
//! preview. Robustness test: no input may panic, and every error must name
//! the file and a place in it (line, byte or field).
//!
//! Longer, coverage-guided runs: the `fuzz/` crate (cargo-fuzz, nightly),
//! see DEVELOPERS.md "Fuzzing"; a crash it finds is kept as a regression
//! test in `tests/`.

mod parse_support;

use mortise::error::{Error, ErrorKind};
use mortise::frf::FrfSet;
use mortise::io::{self, csv, uff58, ImportOptions};
use parse_support::{dataset, pressure_map, sample, Counting};
use std::panic::{catch_unwind, AssertUnwindSafe};

#[global_allocator]
static ALLOC: Counting = Counting;

/// Marsaglia's xorshift64 (Journal of Statistical Software 8(14), 2003),
/// shifts 13, 7, 17.
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

/// The first `lines` lines and `n` outputs and inputs of a set: a small seed.
fn cut(s: &FrfSet, lines: usize, n: usize) -> FrfSet {
    let outs: Vec<usize> = (0..s.n_out().min(n)).collect();
    let ins: Vec<usize> = (0..s.n_in().min(n)).collect();
    let sel = s.select(&outs, &ins);
    let lines = lines.min(sel.n_lines());
    let mut c = FrfSet::zeros(
        &sel.name,
        sel.freqs[..lines].to_vec(),
        sel.outputs.clone(),
        sel.inputs.clone(),
        sel.out_qty,
        sel.in_qty,
    );
    c.present = sel.present.clone();
    c.signal = sel.signal;
    for k in 0..lines {
        for i in 0..c.n_out() {
            for j in 0..c.n_in() {
                c.set(k, i, j, sel.get(k, i, j));
            }
        }
    }
    if let Some(coh) = &sel.coherence {
        c.coherence = Some(coh[..c.data.len()].to_vec());
    }
    c
}

/// The seeds: (file name, bytes).
pub fn seeds() -> Vec<(&'static str, Vec<u8>)> {
    let load = |name: &str| {
        io::load(&sample(name), name, &ImportOptions::default())
            .unwrap_or_else(|e| panic!("{e}"))
            .sets
    };
    let casing: Vec<FrfSet> = load("unit-casing.uff")
        .iter()
        .map(|s| cut(s, 5, 2))
        .collect();
    let forces: Vec<FrfSet> = load("unit-blocked-forces.uff")
        .iter()
        .map(|s| cut(s, 4, 2))
        .collect();
    let w = |sets: &[FrfSet], binary: bool| {
        uff58::write(sets, binary).unwrap_or_else(|e| panic!("{e}"))
    };
    let head = |name: &str, lines: usize| {
        let b = sample(name);
        let t = String::from_utf8_lossy(&b);
        let mut s: String = t.lines().take(lines).collect::<Vec<_>>().join("\n");
        s.push('\n');
        s.into_bytes()
    };
    let other = [
        dataset("NONE", 1, 1, 10.0, 3),
        dataset("run 2", 2, 1, 10.0, 3),
    ]
    .concat();
    vec![
        ("casing.uff", w(&casing[..1], false)),
        ("casing.uffb", w(&casing[..1], true)),
        ("forces.uff", w(&forces, false)),
        ("other.uff", other.into_bytes()),
        (
            "casing.csv",
            csv::write_native(&casing).unwrap_or_else(|e| panic!("{e}")),
        ),
        (
            "wall-to-bed-pressure.csv",
            head("wall-to-bed-pressure.csv", 6),
        ),
    ]
}

const TOKENS: &[&[u8]] = &[
    b"    -1\n",
    b"    -1\n    58\n",
    b"    58b     1     2          11        64\n",
    b"\r",
    b"\r\n",
    b"\xEF\xBB\xBF",
    b"\0",
    b"\xFF",
    b"nan",
    b"1e308",
    b"-0",
    b"99999999999999999999",
    b"-9223372036854775808",
    b",",
    b";",
    b"\t",
    b"\"",
    b"# output: x:1+Z\n",
    b"# missing: 1 1\n",
    b"# mortise-frf 1\n",
    b"NONE",
    b" ",
];

/// One to four mutations of `seed`.
fn mutate(seed: &[u8], rng: &mut XorShift) -> Vec<u8> {
    let mut b = seed.to_vec();
    for _ in 0..1 + rng.below(4) {
        let len = b.len();
        match rng.below(7) {
            0 if len > 0 => {
                let p = rng.below(len);
                b[p] = rng.next() as u8;
            }
            1 if len > 0 => {
                let p = rng.below(len);
                b[p] = b"\r\n-1,#e9 .+"[rng.below(11)];
            }
            2 => {
                let p = rng.below(len + 1);
                let t = TOKENS[rng.below(TOKENS.len())];
                b.splice(p..p, t.iter().copied());
            }
            3 if len > 0 => {
                let p = rng.below(len);
                let n = 1 + rng.below(64.min(len - p));
                b.drain(p..p + n);
            }
            4 if len > 0 => {
                // a chunk copied elsewhere (a line or a dataset twice)
                let p = rng.below(len);
                let n = 1 + rng.below(400.min(len - p));
                let chunk = b[p..p + n].to_vec();
                let q = rng.below(len + 1);
                b.splice(q..q, chunk);
            }
            5 if len > 0 => b.truncate(rng.below(len)),
            _ => {
                // a digit run replaced by a large count
                if let Some(p) = (0..len)
                    .map(|_| rng.below(len))
                    .find(|&p| b[p].is_ascii_digit())
                {
                    b.splice(p..p + 1, b"4000000".iter().copied());
                }
            }
        }
    }
    b
}

/// Every parser on `bytes`; returns the errors (a panic fails the test
/// with the case).
pub fn every_parser(bytes: &[u8], file: &str) -> Vec<Error> {
    let map = pressure_map();
    let with_map = ImportOptions {
        column_map: Some(map.clone()),
        ..ImportOptions::default()
    };
    let mut errors = Vec::new();
    let mut keep = |r: Result<(), Error>| {
        if let Err(e) = r {
            errors.push(e);
        }
    };
    keep(io::detect(bytes, file).map(|_| ()));
    keep(io::load(bytes, file, &ImportOptions::default()).map(|_| ()));
    keep(io::load(bytes, file, &with_map).map(|_| ()));
    keep(uff58::read_with(bytes, file, None).map(|_| ()));
    keep(csv::read_native(bytes, file).map(|_| ()));
    keep(csv::read_mapped(bytes, file, &map, "c").map(|_| ()));
    keep(csv::preview(bytes, file, &map, 5).map(|_| ()));
    errors
}

/// An error names the file and a place in it; a verdict on the whole
/// file (empty, or another kind of file by its signature: kind
/// `Unsupported`) has the file as its place.
pub fn placed(e: &Error, file: &str) -> bool {
    e.file.as_deref() == Some(file)
        && (e.location.is_some() || e.field.is_some() || e.kind == ErrorKind::Unsupported)
}

#[test]
fn mutated_seeds_never_panic_and_every_error_is_placed() {
    let cases_per_seed = 1000;
    let mut rng = XorShift(0x9E37_79B9_7F4A_7C15);
    let mut unplaced = Vec::new();
    let mut n_errors = 0;
    for (file, seed) in seeds() {
        // the seed itself reads, through its own reader
        for k in 0..cases_per_seed {
            let input = mutate(&seed, &mut rng);
            let r = catch_unwind(AssertUnwindSafe(|| every_parser(&input, file)));
            let errors = r.unwrap_or_else(|_| {
                panic!(
                    "{file}, case {k}: a parser panicked on {} bytes: {:?}",
                    input.len(),
                    String::from_utf8_lossy(&input[..input.len().min(2000)])
                )
            });
            n_errors += errors.len();
            for e in errors {
                // one line per kind of message (numbers blanked)
                let shape: String = e.message.chars().filter(|c| !c.is_ascii_digit()).collect();
                if !placed(&e, file) && !unplaced.iter().any(|(s, _)| *s == shape) {
                    unplaced.push((shape, format!("{file}, case {k}: {e:?}")));
                }
            }
        }
    }
    assert!(
        n_errors > 0,
        "the mutations never made an error: they test nothing"
    );
    let shown: Vec<&str> = unplaced.iter().map(|(_, e)| e.as_str()).collect();
    assert!(
        unplaced.is_empty(),
        "errors without a place:\n{}",
        shown.join("\n")
    );
}

#[test]
fn the_seeds_read_as_their_format() {
    // the smoke test starts from valid files: each seed reads through io::load
    let with_map = ImportOptions {
        column_map: Some(pressure_map()),
        ..ImportOptions::default()
    };
    for (file, seed) in seeds() {
        let r = io::load(&seed, file, &with_map);
        assert!(r.is_ok(), "{file}: {}", r.unwrap_err());
    }
}

/// Not a check: writes the seeds for the cargo-fuzz targets to
/// `fuzz/seeds/<target>/` (see DEVELOPERS.md "Fuzzing"). Run with
/// `cargo test --test parse_fuzz_smoke -- --ignored write_fuzz_seeds`.
#[test]
#[ignore]
fn write_fuzz_seeds() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("fuzz/seeds");
    let targets: &[(&str, &[&str])] = &[
        (
            "uff58",
            &["casing.uff", "casing.uffb", "forces.uff", "other.uff"],
        ),
        ("csv_native", &["casing.csv"]),
        ("csv_mapped", &["wall-to-bed-pressure.csv"]),
        (
            "load",
            &[
                "casing.uff",
                "casing.uffb",
                "forces.uff",
                "other.uff",
                "casing.csv",
                "wall-to-bed-pressure.csv",
            ],
        ),
    ];
    let seeds = seeds();
    for (target, files) in targets {
        let dir = root.join(target);
        std::fs::create_dir_all(&dir).unwrap_or_else(|e| panic!("{}: {e}", dir.display()));
        for (name, bytes) in seeds.iter().filter(|(n, _)| files.contains(n)) {
            std::fs::write(dir.join(name), bytes).unwrap_or_else(|e| panic!("{name}: {e}"));
        }
    }
}
