//! The seeded random draws of the Monte Carlo propagation: counter-based,
//! so a value's draw depends only on (seed, index) and not on the order or
//! thread it is made in, and any language can make the same numbers.
//!
//! Uniform number `n` of a seed: splitmix64's output function applied to
//! seed + (n + 1) · 0x9E3779B97F4A7C15 (Steele, Lea, Flood, "Fast splittable
//! pseudorandom number generators", OOPSLA 2014), its top 53 bits divided
//! by 2⁵³. Standard normal pair `i`: Box–Muller (Box & Muller 1958) on the
//! uniforms 2i and 2i + 1: r = √(−2 ln(1 − u₁)), (r cos 2πu₂, r sin 2πu₂).

use num_complex::Complex64;

/// Uniform number `n` of `seed`, in [0, 1).
pub fn uniform(seed: u64, n: u64) -> f64 {
    let mut z = seed.wrapping_add(n.wrapping_add(1).wrapping_mul(0x9E37_79B9_7F4A_7C15));
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^= z >> 31;
    (z >> 11) as f64 / (1u64 << 53) as f64
}

/// Standard normal pair `i` of `seed` as one complex number (real and
/// imaginary parts independent, each of unit variance).
pub fn normal_pair(seed: u64, i: u64) -> Complex64 {
    let u1 = uniform(seed, i.wrapping_mul(2));
    let u2 = uniform(seed, i.wrapping_mul(2).wrapping_add(1));
    let r = (-2.0 * (1.0 - u1).ln()).sqrt();
    let t = 2.0 * std::f64::consts::PI * u2;
    Complex64::new(r * t.cos(), r * t.sin())
}

/// A circular complex error of standard uncertainty `u` (E|δ|² = u²):
/// the normal pair `i` times u/√2.
pub fn circular(seed: u64, i: u64, u: f64) -> Complex64 {
    normal_pair(seed, i) * (u * std::f64::consts::FRAC_1_SQRT_2)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn splitmix64_reference_values() {
        // splitmix64 with state 0 (Vigna's reference splitmix64.c, from memory):
        // first output 0xE220A8397B1DCDAF
        let first = 0xE220_A839_7B1D_CDAFu64;
        assert_eq!(uniform(0, 0), (first >> 11) as f64 / (1u64 << 53) as f64);
    }

    #[test]
    fn normal_pairs_have_unit_variance_and_no_correlation() {
        // common practice: sample moments of 200,000 draws within 4 standard errors
        let n = 200_000u64;
        let (mut sr, mut si, mut srr, mut sii, mut sri) = (0.0, 0.0, 0.0, 0.0, 0.0);
        for i in 0..n {
            let z = normal_pair(7, i);
            sr += z.re;
            si += z.im;
            srr += z.re * z.re;
            sii += z.im * z.im;
            sri += z.re * z.im;
        }
        let nf = n as f64;
        let se = 1.0 / nf.sqrt();
        assert!((sr / nf).abs() < 4.0 * se && (si / nf).abs() < 4.0 * se);
        // var of a sample variance of normals: 2/n
        assert!((srr / nf - 1.0).abs() < 4.0 * (2.0 / nf).sqrt());
        assert!((sii / nf - 1.0).abs() < 4.0 * (2.0 / nf).sqrt());
        assert!((sri / nf).abs() < 4.0 * se);
        let c = circular(7, 3, 2.0);
        assert!((c.norm() - normal_pair(7, 3).norm() * 2f64.sqrt()).abs() < 1e-14);
    }
}
