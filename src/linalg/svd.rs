//! The singular value decomposition of small dense complex matrices, A = U Σ Vᴴ,
//! the one used throughout mortise: the coupling's interface matrices
//! ([`crate::assemble`]), the blocked-force inversion
//! ([`crate::predict::blocked`]) and the audit's condition numbers
//! ([`crate::audit`]).
//!
//! # Method: one-sided (Hestenes) Jacobi
//! A is m × n with m ≥ n; a wider matrix is decomposed through its conjugate
//! transpose (Aᴴ = U' Σ V'ᴴ gives A = V' Σ U'ᴴ). A is first scaled by a power
//! of two (exact) so that its largest real or imaginary part lies in [1, 2).
//! Its n columns W are then rotated in pairs, cyclically by rows (p < q),
//! until every pair is orthogonal to √m · ε of the product of their norms
//! (M. R. Hestenes, "Inversion of matrices by biorthogonalization and
//! related results", J. SIAM 6(1), 1958). Each rotation first turns w_q by
//! the phase of γ = w_pᴴ w_q, which makes the pair's inner product real, then
//! applies the real rotation that zeroes it. The rotations, accumulated,
//! give the unitary V with A V = W = U Σ: the column norms are the singular
//! values and the normalised columns the left singular vectors.
//!
//! Each singular value comes out with a small *relative* error, also the
//! smallest ones of a graded matrix A = B D (D diagonal, B well conditioned):
//! the error is of order ε times the condition number of B, not ε σ_max / σ_j
//! as for methods through a bidiagonal form (J. Demmel and K. Veselić,
//! "Jacobi's method is more accurate than QR", SIAM J. Matrix Anal. Appl.
//! 13(4), 1992). Values below about 1e-150 of the largest are not resolved
//! (their squares underflow).
//!
//! # Why not nalgebra
//! nalgebra 0.35's complex SVD (`DMatrix<Complex64>::svd`), whenever it
//! also computed U or V, gave singular values wrong in the fourth digit on 4
//! of the 991 interface matrices of the demo coupling (8 × 8, complex
//! symmetric with zero blocks; at 459 Hz, condition number 78, the smallest
//! value 2.0865e-4 where numpy has 2.0806e-4, and Z Z⁺ missed I by 2.5e-2)
//! and on 79 of 3000 random complex 8 × 6 matrices whose singular values
//! form two clusters (up to 3e-4 relative; blocked forces off by 4e-4,
//! tests/predict_blocked_svd.rs). Its values alone were right on these, but
//! on graded matrices they are accurate only relative to σ_max (see the
//! test `graded_matrix_keeps_relative_accuracy`). Measured against
//! numpy.linalg.svd, December 2026.
//!
//! # Determinism
//! Plain IEEE multiplies, adds, divisions and square roots in a fixed
//! order, no fused multiply-add: native and WebAssembly builds agree bit for
//! bit. On x86-64 processors with AVX2 the rotations run in a copy compiled
//! for it (the same operations in wider registers; a test compares the
//! bits): the coupling's one-entry request, whose floor the per-line SVD
//! is, went from 0.213–0.241 s to 0.194–0.200 s. The coupling now runs its
//! interface matrices eight at a time instead
//! ([`super::jacobi_lanes`], the same bits); this copy serves [`Svd`].

use crate::error::{Error, Result};
use num_complex::Complex64;

/// Sweeps of the Jacobi rotations before giving up (quadratic convergence
/// needs far fewer; LAPACK's ZGESVJ uses the same cap).
pub(crate) const MAX_SWEEPS: usize = 30;

/// The SVD of an m × n complex matrix with k = min(m, n) singular values:
/// A = U Σ Vᴴ with U m × k and V n × k having orthonormal columns.
#[derive(Debug, Clone, PartialEq)]
pub struct Svd {
    rows: usize,
    cols: usize,
    /// σ_1 ≥ σ_2 ≥ ... ≥ σ_k ≥ 0
    s: Vec<f64>,
    /// U, column-major (column j at j·rows)
    u: Vec<Complex64>,
    /// V, column-major (column j at j·cols)
    v: Vec<Complex64>,
}

impl Svd {
    /// The SVD of the `rows` × `cols` matrix `a` (row-major, as one line of
    /// an [`crate::FrfSet`]). Refused: a wrong length, an empty or a
    /// non-finite matrix, no convergence in [`MAX_SWEEPS`] sweeps.
    pub fn new(a: &[Complex64], rows: usize, cols: usize) -> Result<Svd> {
        let f = Factors::new(a, rows, cols, true)?;
        let order = f.descending();
        let (m, n) = (f.m, f.n);
        // the factors' columns, normalised, in descending order of σ
        let mut lu = vec![Complex64::new(0.0, 0.0); m * n];
        let mut lv = vec![Complex64::new(0.0, 0.0); n * n];
        let mut zero = vec![false; n];
        for (d, &j) in order.iter().enumerate() {
            let w = &f.w[j * m..(j + 1) * m];
            let nrm = f.norms[j].sqrt();
            if nrm > 0.0 {
                for (x, y) in lu[d * m..(d + 1) * m].iter_mut().zip(w) {
                    *x = *y / nrm;
                }
            } else {
                zero[d] = true;
            }
            lv[d * n..(d + 1) * n].copy_from_slice(&f.v[j * n..(j + 1) * n]);
        }
        complete(&mut lu, m, &zero);
        let s = order.iter().map(|&j| f.sigma(j)).collect();
        // for a wide A the factors are those of Aᴴ: U and V swap
        let (u, v) = if f.transposed { (lv, lu) } else { (lu, lv) };
        Ok(Svd {
            rows,
            cols,
            s,
            u,
            v,
        })
    }

    /// The singular values, largest first.
    pub fn singular_values(&self) -> &[f64] {
        &self.s
    }

    /// Column `j` of U (length m), the left singular vector of σ_j.
    pub fn u(&self, j: usize) -> &[Complex64] {
        &self.u[j * self.rows..(j + 1) * self.rows]
    }

    /// Column `j` of V (length n), the right singular vector of σ_j.
    pub fn v(&self, j: usize) -> &[Complex64] {
        &self.v[j * self.cols..(j + 1) * self.cols]
    }

    /// The 2-norm condition number σ_max / σ_min (infinite when σ_min is 0).
    pub fn condition(&self) -> f64 {
        ratio(&self.s)
    }

    /// How many singular values a relative threshold `rel` keeps: those with
    /// σ_j ≥ rel · σ_max and σ_j > 0.
    pub fn kept(&self, rel: f64) -> usize {
        let thr = rel * self.s[0];
        self.s.iter().filter(|&&s| s > 0.0 && s >= thr).count()
    }

    /// The least-squares solution of A x = y by the truncated-SVD
    /// pseudo-inverse, x = Σ_kept v_j (u_jᴴ y) / σ_j over the singular values
    /// kept by `rel` (see [`Svd::kept`]); with `rel` = 0 the minimum-norm
    /// least-squares solution. Returns x (length n) and the number kept.
    pub fn solve_truncated(&self, y: &[Complex64], rel: f64) -> Result<(Vec<Complex64>, usize)> {
        if y.len() != self.rows {
            return Err(Error::internal(format!(
                "truncated-SVD solve: right-hand side of length {} for a matrix of {} rows",
                y.len(),
                self.rows
            )));
        }
        if !(0.0..1.0).contains(&rel) {
            return Err(Error::numeric(format!(
                "truncated-SVD threshold {rel}: expected a fraction of the largest singular value in [0, 1)"
            )));
        }
        let kept = self.kept(rel);
        let mut x = vec![Complex64::new(0.0, 0.0); self.cols];
        // the values are in descending order: the kept ones come first
        for j in 0..kept {
            let c = dot(self.u(j), y) / self.s[j];
            for (xi, vi) in x.iter_mut().zip(self.v(j)) {
                *xi += *vi * c;
            }
        }
        Ok((x, kept))
    }
}

/// The singular values of the `rows` × `cols` matrix `a` (row-major),
/// largest first, without the singular vectors. Refused as [`Svd::new`].
pub fn singular_values(a: &[Complex64], rows: usize, cols: usize) -> Result<Vec<f64>> {
    let f = Factors::new(a, rows, cols, false)?;
    Ok(f.descending().iter().map(|&j| f.sigma(j)).collect())
}

/// The 2-norm condition number σ_max / σ_min of the `rows` × `cols` matrix
/// `a` (row-major; infinite when σ_min is 0), as numpy.linalg.cond(A, 2).
pub fn condition_number(a: &[Complex64], rows: usize, cols: usize) -> Result<f64> {
    Ok(ratio(&singular_values(a, rows, cols)?))
}

/// σ_max / σ_min of values in descending order (∞ when σ_min is 0).
fn ratio(s: &[f64]) -> f64 {
    match (s.first(), s.last()) {
        (Some(&hi), Some(&lo)) if lo > 0.0 => hi / lo,
        _ => f64::INFINITY,
    }
}

/// uᴴ y
#[inline(always)]
fn dot(u: &[Complex64], y: &[Complex64]) -> Complex64 {
    let mut g = Complex64::new(0.0, 0.0);
    for (x, y) in u.iter().zip(y) {
        g.re += x.re * y.re + x.im * y.im;
        g.im += x.re * y.im - x.im * y.re;
    }
    g
}

/// The Jacobi factors of an m × n matrix with m ≥ n (A itself, or Aᴴ when
/// A is wider than tall).
struct Factors {
    m: usize,
    n: usize,
    transposed: bool,
    /// the power of two applied to A
    scale: f64,
    /// W = scale · A V, column-major m × n
    w: Vec<Complex64>,
    /// V, column-major n × n (empty when not asked for)
    v: Vec<Complex64>,
    /// the squared column norms of W
    norms: Vec<f64>,
}

impl Factors {
    fn new(a: &[Complex64], rows: usize, cols: usize, want_v: bool) -> Result<Factors> {
        if a.len() != rows * cols || rows == 0 || cols == 0 {
            return Err(Error::internal(format!(
                "SVD of a {rows} × {cols} matrix given {} entries",
                a.len()
            )));
        }
        if let Some(at) = a
            .iter()
            .position(|x| !(x.re.is_finite() && x.im.is_finite()))
        {
            return Err(Error::numeric(format!(
                "the SVD needs finite entries; row {}, column {} is {}",
                at / cols + 1,
                at % cols + 1,
                a[at]
            )));
        }
        let transposed = rows < cols;
        let (m, n) = if transposed {
            (cols, rows)
        } else {
            (rows, cols)
        };
        let scale = pow2_scale(
            a.iter()
                .fold(0.0, |acc: f64, x| acc.max(x.re.abs()).max(x.im.abs())),
        );
        let mut w = vec![Complex64::new(0.0, 0.0); m * n];
        for r in 0..rows {
            for c in 0..cols {
                let x = a[r * cols + c] * scale;
                if transposed {
                    // Aᴴ (cols × rows): entry (c, r) is conj(a_rc), column r
                    w[r * m + c] = x.conj();
                } else {
                    w[c * m + r] = x;
                }
            }
        }
        let mut v = Vec::new();
        if want_v {
            v = vec![Complex64::new(0.0, 0.0); n * n];
            for j in 0..n {
                v[j * n + j] = Complex64::new(1.0, 0.0);
            }
        }
        let mut norms = vec![0.0; n];
        let vv = if want_v { Some(&mut v[..]) } else { None };
        if !jacobi(&mut w, m, n, vv, &mut norms) {
            return Err(Error::numeric(format!(
                "the SVD of a {rows} × {cols} matrix did not converge in {MAX_SWEEPS} Jacobi sweeps"
            )));
        }
        Ok(Factors {
            m,
            n,
            transposed,
            scale,
            w,
            v,
            norms,
        })
    }

    /// σ_j = ‖w_j‖ / scale (dividing by a power of two is exact)
    fn sigma(&self, j: usize) -> f64 {
        self.norms[j].sqrt() / self.scale
    }

    /// The column indices in descending order of their singular values
    /// (ties keep their order).
    fn descending(&self) -> Vec<usize> {
        let mut order: Vec<usize> = (0..self.n).collect();
        order.sort_by(|&a, &b| self.norms[b].total_cmp(&self.norms[a]));
        order
    }
}

/// Fill the columns of `u` (column-major, columns of length `len`) marked
/// `zero` (those of zero singular values) so that all columns are
/// orthonormal: each is the unit vector with the largest part outside the
/// columns already set, orthogonalised against them twice (classical
/// Gram–Schmidt; twice is enough in floating point).
fn complete(u: &mut [Complex64], len: usize, zero: &[bool]) {
    let mut set: Vec<bool> = zero.iter().map(|z| !z).collect();
    for j in 0..zero.len() {
        if !zero[j] {
            continue;
        }
        let mut best = (f64::NEG_INFINITY, Vec::new());
        for i in 0..len {
            let mut x = vec![Complex64::new(0.0, 0.0); len];
            x[i] = Complex64::new(1.0, 0.0);
            for _ in 0..2 {
                for c in (0..set.len()).filter(|&c| set[c]) {
                    let col = &u[c * len..(c + 1) * len];
                    let g = dot(col, &x);
                    for (xi, ci) in x.iter_mut().zip(col) {
                        *xi -= *ci * g;
                    }
                }
            }
            let nrm = sumsq(&x);
            if nrm > best.0 {
                best = (nrm, x);
            }
        }
        let nrm = best.0.sqrt();
        for (d, x) in u[j * len..(j + 1) * len].iter_mut().zip(&best.1) {
            *d = *x / nrm;
        }
        set[j] = true;
    }
}

/// The power of two that brings `amax` into [1, 2) (1 for 0 or non-finite).
pub(crate) fn pow2_scale(amax: f64) -> f64 {
    if !(amax.is_finite() && amax >= f64::MIN_POSITIVE) {
        return 1.0;
    }
    let mut s = 1.0;
    let mut a = amax;
    // exact: multiplying by powers of two only changes the exponent
    while a >= 2.0 {
        a *= 0.5;
        s *= 0.5;
    }
    while a < 1.0 {
        a *= 2.0;
        s *= 2.0;
    }
    s
}

/// Σ |x|² over a column.
#[inline(always)]
fn sumsq(col: &[Complex64]) -> f64 {
    col.iter().fold(0.0, |a, x| a + (x.re * x.re + x.im * x.im))
}

/// One-sided Jacobi on the `n` columns of `w` (column-major, each of length
/// `m`). On return the columns are mutually orthogonal
/// (|w_pᴴ w_q| ≤ √m ε ‖w_p‖ ‖w_q‖), `norms` holds their squared norms, and
/// `v` (when given: n × n column-major, usually starting as the identity)
/// has been rotated alongside. False when [`MAX_SWEEPS`] did not suffice.
///
/// The columns of `w` evolve the same whether `v` is given or not. Pairs
/// with a zero or NaN inner product or norm are left alone, so NaN entries
/// end as NaN norms, never as a loop.
pub(crate) fn jacobi(
    w: &mut [Complex64],
    m: usize,
    n: usize,
    v: Option<&mut [Complex64]>,
    norms: &mut [f64],
) -> bool {
    #[cfg(target_arch = "x86_64")]
    if super::avx2_fma() {
        // SAFETY: the processor has AVX2 and FMA (checked just now)
        return unsafe { jacobi_avx2(w, m, n, v, norms) };
    }
    jacobi_body(w, m, n, v, norms)
}

/// [`jacobi_body`] compiled for AVX2: the same operations in the same
/// order, in wider registers. Rust never fuses a multiply and an add of
/// its own accord, so the bits are those of the plain build (and of the
/// WebAssembly one).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn jacobi_avx2(
    w: &mut [Complex64],
    m: usize,
    n: usize,
    v: Option<&mut [Complex64]>,
    norms: &mut [f64],
) -> bool {
    jacobi_body(w, m, n, v, norms)
}

#[inline(always)]
fn jacobi_body(
    w: &mut [Complex64],
    m: usize,
    n: usize,
    v: Option<&mut [Complex64]>,
    norms: &mut [f64],
) -> bool {
    // the sizes once, so that the loops below need no bounds checks
    let (w, norms) = (&mut w[..m * n], &mut norms[..n]);
    let mut v = v.map(|v| &mut v[..n * n]);
    let tol = f64::EPSILON * (m as f64).sqrt();
    let tol2 = tol * tol;
    for (j, nj) in norms.iter_mut().enumerate() {
        *nj = sumsq(&w[j * m..(j + 1) * m]);
    }
    for _ in 0..MAX_SWEEPS {
        let mut rotated = false;
        for p in 0..n.saturating_sub(1) {
            for q in p + 1..n {
                let (a, b) = (norms[p], norms[q]);
                if a == 0.0 || b == 0.0 {
                    continue;
                }
                // γ = w_pᴴ w_q
                let g = dot(&w[p * m..(p + 1) * m], &w[q * m..(q + 1) * m]);
                let g2 = g.re * g.re + g.im * g.im;
                if g2.is_nan() || g2 <= tol2 * a * b {
                    continue;
                }
                rotated = true;
                let gn = g2.sqrt();
                // w_q e^{−iφ} makes the pair's inner product real (|γ|); then a
                // real rotation with t = tan θ, the smaller root of
                // t² + 2ζt − 1 = 0, ζ = (‖w_q‖² − ‖w_p‖²) / (2|γ|), zeroes it
                let ph = Complex64::new(g.re / gn, -g.im / gn);
                let zeta = (b - a) / (2.0 * gn);
                let t = if zeta.abs() > 1e150 {
                    0.5 / zeta
                } else {
                    let sg = if zeta >= 0.0 { 1.0 } else { -1.0 };
                    sg / (zeta.abs() + (1.0 + zeta * zeta).sqrt())
                };
                let c = 1.0 / (1.0 + t * t).sqrt();
                let s = c * t;
                rotate(w, m, p, q, ph, c, s);
                if let Some(v) = v.as_deref_mut() {
                    rotate(v, n, p, q, ph, c, s);
                }
                // ‖w_p‖² − t|γ| and ‖w_q‖² + t|γ| (exact in exact arithmetic),
                // summed afresh where that would cancel
                let tg = t * gn;
                norms[p] = a - tg;
                norms[q] = b + tg;
                if norms[p] < 0.5 * a {
                    norms[p] = sumsq(&w[p * m..(p + 1) * m]);
                }
                if norms[q] < 0.5 * b {
                    norms[q] = sumsq(&w[q * m..(q + 1) * m]);
                }
            }
        }
        // the squared norms afresh from the columns, for the next sweep's tests
        // and for the singular values on return
        for (j, nj) in norms.iter_mut().enumerate() {
            *nj = sumsq(&w[j * m..(j + 1) * m]);
        }
        if !rotated {
            return true;
        }
    }
    false
}

/// Columns p < q (each of length `len`) of `a`:
/// (x, y) ← (c·x − s·y e^{−iφ}, s·x + c·y e^{−iφ}).
#[inline(always)]
fn rotate(a: &mut [Complex64], len: usize, p: usize, q: usize, ph: Complex64, c: f64, s: f64) {
    let (lo, hi) = a.split_at_mut(q * len);
    let cp = &mut lo[p * len..(p + 1) * len];
    let cq = &mut hi[..len];
    for (x, y) in cp.iter_mut().zip(cq.iter_mut()) {
        let yy = *y * ph;
        let xx = *x;
        *x = Complex64::new(xx.re * c - yy.re * s, xx.im * c - yy.im * s);
        *y = Complex64::new(xx.re * s + yy.re * c, xx.im * s + yy.im * c);
    }
}

/// The pseudo-inverse from Jacobi factors of a square or tall m × n matrix
/// scaled by `scale` (W = scale · A V, column-major, `norms` their squared
/// column norms): A⁺ = scale · Σ_j v_j w_jᴴ / ‖w_j‖² over the columns j for
/// which `keep(j)`, written row-major n × m into `out` (which the caller
/// has zeroed), in a fixed order.
#[allow(clippy::too_many_arguments)]
pub(crate) fn pinv_from_factors(
    w: &[Complex64],
    v: &[Complex64],
    norms: &[f64],
    m: usize,
    n: usize,
    scale: f64,
    keep: impl Fn(usize) -> bool,
    out: &mut [Complex64],
) {
    for j in (0..n).filter(|&j| keep(j)) {
        let f = scale / norms[j];
        let wj = &w[j * m..(j + 1) * m];
        let vj = &v[j * n..(j + 1) * n];
        for (r, vr) in vj.iter().enumerate() {
            let a = *vr * f;
            for (c, wc) in wj.iter().enumerate() {
                out[r * m + c] += a * wc.conj();
            }
        }
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use nalgebra::DMatrix;

    // common practice: a build for wider registers must not change a bit
    #[test]
    fn the_avx2_build_gives_the_plain_builds_bits() {
        for (seed, m, n) in [(1u64, 12usize, 12usize), (2, 9, 5), (3, 30, 30), (4, 1, 1)] {
            let a = random(m, n, seed);
            // column-major, as jacobi takes it (nalgebra stores so)
            let w0: Vec<Complex64> = a.as_slice().to_vec();
            let v0: Vec<Complex64> = (0..n * n)
                .map(|k| Complex64::new(if k % (n + 1) == 0 { 1.0 } else { 0.0 }, 0.0))
                .collect();
            let (mut w1, mut v1, mut n1) = (w0.clone(), v0.clone(), vec![0.0; n]);
            let (mut w2, mut v2, mut n2) = (w0.clone(), v0.clone(), vec![0.0; n]);
            assert!(jacobi(&mut w1, m, n, Some(&mut v1), &mut n1));
            assert!(jacobi_body(&mut w2, m, n, Some(&mut v2), &mut n2));
            let bits = |x: &[Complex64]| -> Vec<(u64, u64)> {
                x.iter().map(|c| (c.re.to_bits(), c.im.to_bits())).collect()
            };
            assert_eq!(bits(&w1), bits(&w2), "W, seed {seed}");
            assert_eq!(bits(&v1), bits(&v2), "V, seed {seed}");
            let nb = |x: &[f64]| -> Vec<u64> { x.iter().map(|v| v.to_bits()).collect() };
            assert_eq!(nb(&n1), nb(&n2), "norms, seed {seed}");
        }
    }

    /// Entries uniform in [−½, ½)² from a seeded counter-based generator
    /// (splitmix64); also the interface solve's test matrices.
    pub(crate) fn random(m: usize, n: usize, seed: u64) -> DMatrix<Complex64> {
        fn splitmix(x: u64) -> u64 {
            let mut z = x.wrapping_add(0x9E37_79B9_7F4A_7C15);
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            z ^ (z >> 31)
        }
        let u = |k: u64| (splitmix(seed * 7919 + k) >> 11) as f64 * 2f64.powi(-53) - 0.5;
        DMatrix::from_fn(m, n, |i, j| {
            let k = (i * n + j) as u64 * 2;
            Complex64::new(u(k), u(k + 1))
        })
    }

    fn rows(a: &DMatrix<Complex64>) -> Vec<Complex64> {
        (0..a.nrows())
            .flat_map(|i| (0..a.ncols()).map(move |j| a[(i, j)]))
            .collect()
    }

    fn max_abs(a: &DMatrix<Complex64>) -> f64 {
        a.iter().map(|v| v.norm()).fold(0.0, f64::max)
    }

    fn factors(a: &DMatrix<Complex64>) -> (DMatrix<Complex64>, DMatrix<Complex64>, Vec<f64>) {
        let (m, n) = a.shape();
        let d = Svd::new(&rows(a), m, n).unwrap();
        let k = m.min(n);
        let u = DMatrix::from_fn(m, k, |i, j| d.u(j)[i]);
        let v = DMatrix::from_fn(n, k, |i, j| d.v(j)[i]);
        (u, v, d.singular_values().to_vec())
    }

    /// A with its singular values set: Q diag(s) Rᴴ with Q, R unitary
    /// (Householder QR of random matrices).
    fn with_values(m: usize, n: usize, s: &[f64], seed: u64) -> DMatrix<Complex64> {
        let q = random(m, m, seed).qr().q();
        let r = random(n, n, seed + 1).qr().q();
        let d = DMatrix::from_fn(m, n, |i, j| {
            Complex64::new(if i == j { s[i] } else { 0.0 }, 0.0)
        });
        q * d * r.adjoint()
    }

    #[test]
    fn factors_reconstruct_the_matrix_and_are_orthonormal() {
        // definition of the SVD: A = U Σ Vᴴ, Uᴴ U = Vᴴ V = I, σ descending ≥ 0;
        // tall, wide, square, a single column and a single row
        for (seed, (m, n)) in [(8, 6), (6, 8), (7, 7), (5, 1), (1, 4), (12, 3)]
            .into_iter()
            .enumerate()
        {
            let a = random(m, n, 10 + seed as u64) * Complex64::new(3e-7, 0.0);
            let (u, v, s) = factors(&a);
            let k = m.min(n);
            assert!(s.windows(2).all(|w| w[0] >= w[1]) && s[k - 1] >= 0.0);
            let sd = DMatrix::from_fn(k, k, |i, j| {
                Complex64::new(if i == j { s[i] } else { 0.0 }, 0.0)
            });
            let rec = max_abs(&(&u * sd * v.adjoint() - &a)) / max_abs(&a);
            let uo = max_abs(&(u.adjoint() * &u - DMatrix::identity(k, k)));
            let vo = max_abs(&(v.adjoint() * &v - DMatrix::identity(k, k)));
            assert!(rec <= 1e-13, "{m}×{n}: A − U Σ Vᴴ {rec:e}");
            assert!(uo <= 1e-13, "{m}×{n}: Uᴴ U − I {uo:e}");
            assert!(vo <= 1e-13, "{m}×{n}: Vᴴ V − I {vo:e}");
        }
    }

    #[test]
    fn known_singular_values_from_1_to_1e_minus_12() {
        // A = Q diag(s) Rᴴ: the singular values are s by construction. The
        // product itself is exact only to about m ε of σ_max = 1, so that is
        // the tolerance, absolute, for every value
        let s: Vec<f64> = (0..7).map(|i| 10f64.powi(-2 * i)).collect();
        for (m, n, seed) in [(7, 7, 1), (9, 7, 3), (7, 11, 5)] {
            let a = with_values(m, n, &s, seed);
            let got = singular_values(&rows(&a), m, n).unwrap();
            let (_, _, full) = factors(&a);
            assert_eq!(got, full, "values alone and with vectors");
            for (g, w) in got.iter().zip(&s) {
                assert!((g - w).abs() <= 1e-14, "{m}×{n}: {g:e} vs {w:e}");
            }
            let c = condition_number(&rows(&a), m, n).unwrap();
            assert!((c / 1e12 - 1.0).abs() <= 1e-2, "{c:e}");
        }
    }

    #[test]
    fn graded_matrix_keeps_relative_accuracy() {
        // A = B D, B upper triangular with unit diagonal and entries up to
        // 0.7 in modulus above it, D = diag(1e-12, 1e-8, 1e-4, 1): then
        // |det A| = Π σ_j = Π d_j exactly (the determinant of a triangular
        // matrix is the product of its diagonal; textbook), while
        // σ_min ≈ 1e-12 σ_max. One-sided Jacobi gets each value to a few ε
        // relative (Demmel & Veselić 1992), so the product matches to 1e-14;
        // a method accurate only to ε σ_max may miss σ_min by up to 1e-4
        // relative (nalgebra 0.35's singular values, through a bidiagonal
        // form, missed this product by 7e-9 and that of Aᴴ by 1e-4, measured).
        let n = 4;
        let d = [1e-12, 1e-8, 1e-4, 1.0];
        let b = random(n, n, 21);
        let a = DMatrix::from_fn(n, n, |i, j| {
            let bij = if i == j {
                Complex64::new(1.0, 0.0)
            } else if i < j {
                b[(i, j)]
            } else {
                Complex64::new(0.0, 0.0)
            };
            bij * d[j]
        });
        let want: f64 = d.iter().product();
        let s = singular_values(&rows(&a), n, n).unwrap();
        let prod: f64 = s.iter().product();
        assert!((prod / want - 1.0).abs() <= 1e-14, "{prod:e} vs {want:e}");
        assert!(s[3] < 2e-12 && s[3] > 1e-13, "{:e}", s[3]);
        // and the row-graded Aᴴ
        let at = a.adjoint();
        let prod: f64 = singular_values(&rows(&at), n, n).unwrap().iter().product();
        assert!((prod / want - 1.0).abs() <= 1e-14, "{prod:e} vs {want:e}");
    }

    #[test]
    fn truncated_solve_is_the_pseudo_inverse() {
        // rank 3 of 6 columns (A = X Yᴴ, X 8 × 3, Y 6 × 3) plus nothing else:
        // with a threshold the solve keeps three values and returns A⁺ y,
        // which satisfies the normal equations Aᴴ A x = Aᴴ y and lies in the
        // row space (x = A⁺ A x): the Moore–Penrose conditions, definition
        let (m, n) = (8, 6);
        let x = random(m, 3, 30);
        let y = random(n, 3, 31);
        let a = &x * y.adjoint();
        let rhs = random(m, 1, 32);
        let d = Svd::new(&rows(&a), m, n).unwrap();
        assert!(d.condition() > 1e14, "{:e}", d.condition());
        let (sol, kept) = d.solve_truncated(rhs.as_slice(), 1e-9).unwrap();
        assert_eq!(kept, 3);
        let sol = DMatrix::from_column_slice(n, 1, &sol);
        let ne = max_abs(&(a.adjoint() * (&a * &sol - &rhs)));
        assert!(
            ne <= 1e-14 * max_abs(&a).powi(2) * max_abs(&sol).max(1.0),
            "{ne:e}"
        );
        let pa = DMatrix::from_fn(n, n, |i, j| {
            let e: Vec<Complex64> = (0..m).map(|r| a[(r, j)]).collect();
            d.solve_truncated(&e, 1e-9).unwrap().0[i]
        });
        let back = max_abs(&(&pa * &sol - &sol));
        assert!(back <= 1e-13 * max_abs(&sol), "{back:e}");
        // full rank and square: the plain solution
        let sq = random(5, 5, 33);
        let d = Svd::new(&rows(&sq), 5, 5).unwrap();
        let rhs = random(5, 1, 34);
        let (sol, kept) = d.solve_truncated(rhs.as_slice(), 0.0).unwrap();
        assert_eq!(kept, 5);
        let r = max_abs(&(&sq * DMatrix::from_column_slice(5, 1, &sol) - &rhs));
        assert!(r <= 1e-13 * d.condition(), "{r:e}");
        // the threshold is relative to σ_max and ties are kept
        let s = d.singular_values().to_vec();
        assert_eq!(d.kept(s[2] / s[0]), 3);
        assert_eq!(d.kept(0.0), 5);
        assert!(d.solve_truncated(rhs.as_slice(), f64::NAN).is_err());
        assert!(d.solve_truncated(&rhs.as_slice()[..4], 0.0).is_err());
    }

    #[test]
    fn zero_singular_values_get_orthonormal_vectors() {
        // two zero columns: two singular values exactly zero, their left
        // vectors completed to an orthonormal U (tall and, through Aᴴ, wide)
        let (m, n) = (5, 4);
        let r = random(m, 2, 40);
        let a = DMatrix::from_fn(m, n, |i, j| match j {
            0 | 1 => r[(i, j)],
            _ => Complex64::new(0.0, 0.0),
        });
        for a in [a.clone(), a.adjoint()] {
            let (u, v, s) = factors(&a);
            assert_eq!(&s[2..], &[0.0, 0.0]);
            assert!(s[1] > 0.1 * s[0], "{s:?}");
            let uo = max_abs(&(u.adjoint() * &u - DMatrix::identity(n, n)));
            let vo = max_abs(&(v.adjoint() * &v - DMatrix::identity(n, n)));
            assert!(uo <= 1e-14 && vo <= 1e-14, "{uo:e} {vo:e}");
            let d = Svd::new(&rows(&a), a.nrows(), a.ncols()).unwrap();
            assert_eq!(d.condition(), f64::INFINITY);
            assert_eq!(d.kept(0.0), 2);
        }
    }

    #[test]
    fn bad_matrices_are_refused() {
        let mut a = vec![Complex64::new(1.0, 0.0); 6];
        assert!(Svd::new(&a, 2, 2).is_err());
        assert!(singular_values(&[], 0, 3).is_err());
        a[4] = Complex64::new(f64::NAN, 0.0);
        let e = singular_values(&a, 2, 3).unwrap_err();
        assert!(e.message.contains("row 2, column 2"), "{}", e.message);
    }

    #[test]
    fn power_of_two_scale() {
        assert_eq!(pow2_scale(3.0), 0.5);
        assert_eq!(pow2_scale(1.0), 1.0);
        assert_eq!(pow2_scale(0.3), 4.0);
        assert_eq!(pow2_scale(0.0), 1.0);
        assert!(pow2_scale(1e-9) * 1e-9 >= 1.0);
    }
}
