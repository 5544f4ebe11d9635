//! mortise's own CSV layout: read(write(x)) reproduces every f64 bit for bit,
//! including extreme magnitudes, subnormals, negative zero, missing entries,
//! coherence gaps, spectra, rotational DOFs and awkward names.

use mortise::frf::{Direction, Dof, FrfSet, Provenance, SignalKind};
use mortise::io::{self, csv, ExportFormat, Format, ImportOptions};
use mortise::Quantity;
use num_complex::Complex64;

/// xorshift64*: a small deterministic generator (Vigna 2016), so the test
/// needs no extra crate.
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    /// Any finite f64, drawn from random bit patterns (all exponents, subnormals).
    fn any_finite(&mut self) -> f64 {
        loop {
            let x = f64::from_bits(self.next());
            if x.is_finite() {
                return x;
            }
        }
    }
}

pub fn awkward_set(seed: u64) -> FrfSet {
    let mut r = Rng(seed);
    let outs = vec![
        Dof::new("casing", "1", Direction::Z),
        Dof::new("casing", "2", Direction::RX),
        Dof {
            component: "casing".into(),
            node: "3".into(),
            dir: Direction::Y,
            positive: false,
        },
        Dof::scalar("room", "bed"),
        // a node whose text form would not read back: written as JSON
        Dof::scalar("odd", "x+Z"),
    ];
    let ins = vec![
        Dof::new("casing", "1", Direction::Z),
        Dof::new("casing", "2", Direction::RX),
    ];
    let mut freqs: Vec<f64> = (0..40).map(|_| r.any_finite().abs()).collect();
    freqs.sort_by(|a, b| a.partial_cmp(b).unwrap());
    freqs.dedup();
    let mut s = FrfSet::zeros(
        "casing, \"as delivered\"\nrev 2",
        freqs,
        outs,
        ins,
        Quantity::Acceleration,
        Quantity::Force,
    );
    for v in s.data.iter_mut() {
        *v = Complex64::new(r.any_finite(), r.any_finite());
    }
    s.set(0, 0, 0, Complex64::new(-0.0, 5e-324));
    s.set(1, 0, 0, Complex64::new(f64::MAX, f64::MIN_POSITIVE));
    s.set(2, 0, 0, Complex64::new(0.1, 1.0 / 3.0));
    // entry (3, 1) missing
    s.present[3 * 2 + 1] = false;
    for k in 0..s.n_lines() {
        s.set(k, 3, 1, Complex64::new(f64::NAN, f64::NAN));
    }
    let mut coh = vec![f64::NAN; s.data.len()];
    for k in 0..s.n_lines() {
        if k % 3 != 0 {
            coh[s.idx(k, 0, 0)] = (r.next() >> 11) as f64 / (1u64 << 53) as f64;
        }
    }
    s.coherence = Some(coh);
    s.provenance.push(Provenance {
        file: "casing.uff".into(),
        sha256: "00ff".into(),
        format: "uff58-ascii".into(),
        options: "{\"component\":\"casing\"}".into(),
    });
    s.warnings.push("back\\slash and\nnewline".into());
    s
}

fn same_bits(a: &FrfSet, b: &FrfSet) {
    assert_eq!(a.name, b.name);
    assert_eq!(a.outputs, b.outputs);
    assert_eq!(a.inputs, b.inputs);
    assert_eq!(
        (a.out_qty, a.in_qty, a.signal),
        (b.out_qty, b.in_qty, b.signal)
    );
    assert_eq!(a.present, b.present);
    assert_eq!(a.provenance, b.provenance);
    assert_eq!(a.warnings, b.warnings);
    assert_eq!(a.freqs.len(), b.freqs.len());
    for (x, y) in a.freqs.iter().zip(&b.freqs) {
        assert_eq!(x.to_bits(), y.to_bits());
    }
    for i in 0..a.n_out() {
        for j in 0..a.n_in() {
            if !a.is_present(i, j) {
                assert!(b
                    .column(i, j)
                    .iter()
                    .all(|v| v.re.is_nan() && v.im.is_nan()));
                continue;
            }
            for k in 0..a.n_lines() {
                let (x, y) = (a.get(k, i, j), b.get(k, i, j));
                assert_eq!(x.re.to_bits(), y.re.to_bits(), "re line {k} ({i},{j})");
                assert_eq!(x.im.to_bits(), y.im.to_bits(), "im line {k} ({i},{j})");
            }
        }
    }
    match (&a.coherence, &b.coherence) {
        (None, None) => {}
        (Some(x), Some(y)) => {
            for i in 0..a.n_out() {
                for j in 0..a.n_in() {
                    if a.is_present(i, j) {
                        for k in 0..a.n_lines() {
                            let (p, q) = (x[a.idx(k, i, j)], y[b.idx(k, i, j)]);
                            assert!(p.to_bits() == q.to_bits() || (p.is_nan() && q.is_nan()));
                        }
                    }
                }
            }
        }
        _ => panic!("coherence presence differs"),
    }
}

#[test]
fn write_then_read_is_bit_exact() {
    for seed in [1u64, 2, 3, 0x9E37_79B9_7F4A_7C15] {
        let s = awkward_set(seed);
        let bytes = csv::write_native(std::slice::from_ref(&s)).unwrap();
        let text = String::from_utf8(bytes.clone()).unwrap();
        assert!(text.starts_with("# mortise-frf 1\n"));
        assert!(text.contains("# output-json: "), "odd DOF written as JSON");
        assert!(text.contains("# missing: 4 2 (room:bed / casing:2+RX)"));
        let back = csv::read_native(&bytes, "c.csv").unwrap();
        assert_eq!(back.len(), 1);
        same_bits(&s, &back[0]);
    }
}

#[test]
fn several_sets_and_a_spectrum_in_one_file() {
    let a = awkward_set(11);
    let d = Dof::new("unit", "F1", Direction::Z);
    let mut sp = FrfSet::zeros(
        "blocked force",
        vec![50.0, 100.0, 150.0],
        vec![d],
        vec![Dof::scalar("", "ref")],
        Quantity::Force,
        Quantity::Dimensionless,
    );
    sp.signal = Some(SignalKind::Rms);
    for k in 0..3 {
        sp.set(k, 0, 0, Complex64::new(0.5 * k as f64, -0.25));
    }
    let bytes = io::save(&[a.clone(), sp.clone()], ExportFormat::Csv).unwrap();
    let l = io::load(&bytes, "two.csv", &ImportOptions::default()).unwrap();
    assert_eq!(l.format, Format::CsvNative);
    assert_eq!(l.sets.len(), 2);
    // load appends this file to the provenance
    let p = l.sets[1].provenance.last().unwrap();
    assert_eq!(p.file, "two.csv");
    assert_eq!(p.format, "csv-mortise");
    assert_eq!(p.sha256, io::sha256_hex(&bytes));
    let mut a2 = l.sets[0].clone();
    a2.provenance.pop();
    same_bits(&a, &a2);
    let mut s2 = l.sets[1].clone();
    s2.provenance.pop();
    same_bits(&sp, &s2);
    assert_eq!(s2.signal, Some(SignalKind::Rms));
}

#[test]
fn shortest_text_is_used() {
    // Rust's float formatting prints the shortest digits that read back exactly
    // (the property of Steele & White / Ryu-style printing): 0.1 stays "0.1".
    assert_eq!(csv::fmt_f64(0.1), "0.1");
    assert_eq!(csv::fmt_f64(1.0 / 3.0), "0.3333333333333333");
    assert_eq!(csv::fmt_f64(5e-324), "5e-324");
    assert_eq!(csv::fmt_f64(f64::MAX), "1.7976931348623157e308");
}
