//! The coupling benchmark's case, made the same way everywhere it runs: two
//! components of `n_a` and `n_b` DOFs with symmetric, receptance-like values
//! from a seeded counter-based generator (splitmix64, which
//! tests/py/bench_lmfbs.py reproduces bit for bit), joined rigidly by
//! `n_if` joints (A's last `n_if` DOFs to B's first). The native benchmark
//! (`examples/bench_couple.rs`) and the page's worker (the `bench_couple`
//! export, run by `tools/wasm-bench.mjs`) time [`super::couple`] on it.
//!
//! Synthetic numbers for timing only: no physical meaning.

use super::Joint;
use crate::error::{Error, Result};
use crate::frf::{Direction, Dof, FrfSet};
use crate::limits::Limits;
use crate::units::Quantity;
use num_complex::Complex64;

/// The benchmark's seed.
pub const BENCH_SEED: u64 = 20261201;

fn splitmix(x: u64) -> u64 {
    let mut z = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

fn unit(z: u64) -> f64 {
    (z >> 11) as f64 * 2f64.powi(-53)
}

/// Component `c` (0 for A, 1 for B) of `n` DOFs on `lines` lines.
fn component(c: u64, name: &str, n: usize, lines: usize, seed: u64) -> FrfSet {
    let dofs: Vec<Dof> = (0..n)
        .map(|i| Dof::new(name, &(i + 1).to_string(), Direction::Z))
        .collect();
    let freqs: Vec<f64> = (1..=lines).map(|k| k as f64 * 0.5).collect();
    let mut s = FrfSet::zeros(
        name,
        freqs,
        dofs.clone(),
        dofs,
        Quantity::Displacement,
        Quantity::Force,
    );
    let nn = n as u64;
    for k in 0..lines {
        let line = s.line_mut(k);
        for i in 0..n {
            for j in 0..n {
                let (lo, hi) = (i.min(j) as u64, i.max(j) as u64);
                let idx = ((c * lines as u64 + k as u64) * nn + lo) * nn + hi;
                let base = seed.wrapping_add(idx.wrapping_mul(2));
                let mut v = Complex64::new(
                    unit(splitmix(base)) - 0.5,
                    unit(splitmix(base.wrapping_add(1))) - 0.5,
                );
                if i == j {
                    v += Complex64::new(2.0, -1.0);
                }
                line[i * n + j] = v * 1e-6;
            }
        }
    }
    s
}

/// The two components and the rigid joints; the sizes are checked against
/// `limits` (the components and the coupled result) before anything is made.
pub fn bench_case(
    lines: usize,
    n_a: usize,
    n_b: usize,
    n_if: usize,
    seed: u64,
    limits: &Limits,
) -> Result<(Vec<FrfSet>, Vec<Joint>)> {
    if lines == 0 || n_a == 0 || n_b == 0 || n_if == 0 || n_if > n_a.min(n_b) {
        return Err(Error::usage(format!(
            "benchmark case: {lines} lines, {n_a} and {n_b} DOFs, {n_if} joints; expected at least one of each and no more joints than either component's DOFs"
        ))
        .field("bench"));
    }
    // the two components and the coupled result, held at once
    let values = [n_a, n_b, n_a + n_b]
        .iter()
        .map(|&n| crate::limits::product(&[lines, n, n]))
        .try_fold(0u64, |acc, v| v.and_then(|v| acc.checked_add(v)));
    limits.check_values("the benchmark case", values)?;
    let a = component(0, "A", n_a, lines, seed);
    let b = component(1, "B", n_b, lines, seed);
    let joints = (0..n_if)
        .map(|r| {
            Joint::rigid(
                Dof::new("A", &(n_a - n_if + r + 1).to_string(), Direction::Z),
                Dof::new("B", &(r + 1).to_string(), Direction::Z),
            )
        })
        .collect();
    Ok((vec![a, b], joints))
}

/// SHA-256 (hex) of a set's values, real and imaginary parts as
/// little-endian f64 in storage order: the native and the page's runs of
/// the benchmark compare results by it (the same bits are expected: no FMA).
pub fn values_digest(set: &FrfSet) -> String {
    use sha2::{Digest, Sha256};
    let mut h = Sha256::new();
    let mut buf = Vec::with_capacity(16 * 4096);
    for chunk in set.data.chunks(4096) {
        buf.clear();
        for v in chunk {
            buf.extend_from_slice(&v.re.to_le_bytes());
            buf.extend_from_slice(&v.im.to_le_bytes());
        }
        h.update(&buf);
    }
    h.finalize().iter().map(|b| format!("{b:02x}")).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splitmix_matches_its_published_first_outputs() {
        // splitmix64 seeded with 0: the generator's state advances by the
        // golden-ratio increment before each output (Steele, Lea, Flood,
        // "Fast splittable pseudorandom number generators", OOPSLA 2014;
        // the first output 0xE220A8397B1DCDAF, from memory)
        assert_eq!(splitmix(0), 0xE220_A839_7B1D_CDAF);
    }

    #[test]
    fn components_are_symmetric_and_sizes_are_checked() {
        let (c, j) = bench_case(3, 4, 3, 2, BENCH_SEED, &Limits::default()).unwrap();
        assert_eq!(j.len(), 2);
        let l = c[0].line(2);
        assert_eq!(l[4 + 3], l[3 * 4 + 1]); // (1, 3) and (3, 1)
        assert!(bench_case(3, 4, 3, 5, BENCH_SEED, &Limits::default()).is_err());
        let tight = Limits::default().with_budget_gb("0.001").unwrap();
        assert!(bench_case(6400, 60, 48, 12, BENCH_SEED, &tight).is_err());
    }

    #[test]
    fn digest_is_sha256_of_the_little_endian_values() {
        // one value 0 + 0i: 16 zero bytes; SHA-256 of 16 zero bytes
        // (FIPS 180-4; the value from Python: hashlib.sha256(bytes(16)).hexdigest())
        let d = Dof::new("A", "1", Direction::Z);
        let s = FrfSet::zeros(
            "z",
            vec![1.0],
            vec![d.clone()],
            vec![d],
            Quantity::Displacement,
            Quantity::Force,
        );
        assert_eq!(
            values_digest(&s),
            "374708fff7719dd5979ec875d56cd2286f6d3cf7ec317a3b25632aab28ec37bb"
        );
    }
}
