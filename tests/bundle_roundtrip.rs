//! Bundles: serde_json's shortest round-trip output read back with exact
//! rounding (feature float_roundtrip) gives every f64 back bit for bit; NaN
//! of missing entries is written as null and restored.

use mortise::frf::{Direction, Dof, FrfSet};
use mortise::io::bundle::{self, Bundle, BundleInput};
use mortise::io::{self, ExportFormat, Format, ImportOptions};
use mortise::Quantity;
use num_complex::Complex64;

struct Rng(u64);
impl Rng {
    // xorshift64* (Vigna 2016)
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    fn any_finite(&mut self) -> f64 {
        loop {
            let x = f64::from_bits(self.next());
            if x.is_finite() {
                return x;
            }
        }
    }
}

fn random_set(seed: u64, n: usize) -> FrfSet {
    let mut r = Rng(seed);
    let d1 = Dof::new("bracket", "1", Direction::Z);
    let d2 = Dof::new("bracket", "2", Direction::RY);
    let mut freqs: Vec<f64> = (0..n).map(|_| r.any_finite().abs()).collect();
    freqs.sort_by(|a, b| a.partial_cmp(b).unwrap());
    freqs.dedup();
    let mut s = FrfSet::zeros(
        "bracket",
        freqs,
        vec![d1.clone(), d2.clone()],
        vec![d1, d2],
        Quantity::Displacement,
        Quantity::Force,
    );
    for v in s.data.iter_mut() {
        *v = Complex64::new(r.any_finite(), r.any_finite());
    }
    s.present[1] = false;
    for k in 0..s.n_lines() {
        s.set(k, 0, 1, Complex64::new(f64::NAN, f64::NAN));
    }
    let mut c = vec![f64::NAN; s.data.len()];
    c[0] = 0.75;
    c[3] = 5e-324;
    s.coherence = Some(c);
    s
}

fn assert_bits(a: &FrfSet, b: &FrfSet) {
    assert_eq!(a.freqs.len(), b.freqs.len());
    for (x, y) in a.freqs.iter().zip(&b.freqs) {
        assert_eq!(x.to_bits(), y.to_bits());
    }
    for (n, (x, y)) in a.data.iter().zip(&b.data).enumerate() {
        if x.re.is_nan() {
            assert!(y.re.is_nan() && y.im.is_nan(), "value {n}");
        } else {
            assert_eq!(x.re.to_bits(), y.re.to_bits(), "value {n}");
            assert_eq!(x.im.to_bits(), y.im.to_bits(), "value {n}");
        }
    }
    let (ca, cb) = (a.coherence.as_ref().unwrap(), b.coherence.as_ref().unwrap());
    for (x, y) in ca.iter().zip(cb) {
        assert!(x.to_bits() == y.to_bits() || (x.is_nan() && y.is_nan()));
    }
    assert_eq!(a.present, b.present);
    assert_eq!(a.outputs, b.outputs);
}

#[test]
fn random_bit_patterns_survive_exactly() {
    for seed in [5u64, 77, 1234567] {
        let s = random_set(seed, 300);
        let mut b = Bundle::new("2026-12-01T22:00:00Z");
        b.inputs.push(BundleInput {
            name: "bracket.uff".into(),
            sha256: "ab".repeat(32),
            format: "uff58-ascii".into(),
            options: serde_json::json!({"component": "bracket"}),
            sets: Some(vec![s.clone()]),
            data: None,
        });
        b.results.push(s.clone());
        b.recipe = Some(serde_json::json!({"format": "mortise-recipe", "version": 1}));
        let bytes = bundle::write(&b).unwrap();
        let text = std::str::from_utf8(&bytes).unwrap();
        assert!(text.contains("null"), "missing entries are written as null");
        let back = bundle::read(&bytes, "b.json").unwrap();
        assert_eq!(back.format, "mortise-bundle");
        assert_eq!(back.created, b.created);
        assert_eq!(back.recipe, b.recipe);
        assert_bits(&s, &back.results[0]);
        assert_bits(&s, &back.inputs[0].sets.as_ref().unwrap()[0]);
    }
}

#[test]
fn raw_data_can_be_withheld() {
    let s = random_set(9, 20);
    let mut b = Bundle::new("");
    b.inputs.push(BundleInput {
        name: "wall.csv".into(),
        sha256: "cd".repeat(32),
        format: "csv-mapped".into(),
        options: serde_json::Value::Null,
        sets: Some(vec![s.clone()]),
        data: Some(BundleInput::encode(b"wall bytes")),
    });
    b.results.push(s.clone());
    let w = b.without_raw();
    assert!(w.inputs[0].sets.is_none() && w.inputs[0].data.is_none());
    assert!(w.inputs[0].withheld());
    assert_eq!(w.inputs[0].sha256, b.inputs[0].sha256);
    let bytes = bundle::write(&w).unwrap();
    let l = io::load(&bytes, "shared.json", &ImportOptions::default()).unwrap();
    assert_eq!(l.format, Format::Bundle);
    assert_eq!(l.sets.len(), 1, "only the result");
    assert!(
        l.warnings.iter().any(|m| m.contains("withheld")),
        "{:?}",
        l.warnings
    );
    // the unredacted bundle is larger by the raw data
    assert!(bundle::write(&b).unwrap().len() > bytes.len() + 1000);
}

#[test]
fn save_as_bundle_and_load_back() {
    let s = random_set(3, 50);
    let bytes = io::save(std::slice::from_ref(&s), ExportFormat::Bundle).unwrap();
    assert_eq!(io::detect(&bytes, "x.dat").unwrap(), Format::Bundle);
    let l = io::load(&bytes, "x.dat", &ImportOptions::default()).unwrap();
    assert_bits(&s, &l.sets[0]);
}
