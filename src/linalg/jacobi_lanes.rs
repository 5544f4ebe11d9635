//! [`super::svd::jacobi`] on [`LANES`] matrices at once, one matrix per
//! lane: the coupling's per-line interface matrices, whose singular values
//! give the condition number every line reports.
//!
//! # Why lanes
//! The one-sided Jacobi of one small matrix is bound by the latency of its
//! inner products (each a chain of dependent additions) and of the
//! division and square roots of each rotation, not by the processor's
//! arithmetic width. Interleaving the same step of several independent
//! matrices fills the vector registers instead: entry (i, j) of lane l sits
//! at `(j·m + i)`, element `l`, so each step's loop over the lanes is
//! element-wise and compiles to vector instructions.
//!
//! # The same bits as one matrix at a time
//! Every lane performs exactly the operations of [`super::svd::jacobi`]
//! on its own matrix, in the same order: the sums over a column run
//! entry by entry as there; only which lanes' results are kept differs.
//! Where the scalar code skips a pair (a zero norm, a NaN or negligible
//! inner product), the lane computes the rotation anyway and keeps its old
//! values (a selection, not arithmetic); a lane whose sweep rotated
//! nothing has converged, and its further sweeps, which see the same
//! columns and norms, rotate nothing either. A test compares the bits with
//! the one-matrix code on matrices that converge after different numbers
//! of sweeps, with zero columns and with empty lanes.

// the loops over lanes index several arrays by the lane, the form the
// compiler turns into one vector operation
#![allow(clippy::needless_range_loop)]

use super::svd::MAX_SWEEPS;

/// Matrices per call: eight f64 fill two 256-bit registers, two
/// independent chains of additions in each inner product, which hides
/// their latency (on the coupling benchmark's one-entry request 8 lanes
/// took 0.072–0.085 s, 4 lanes 0.10 s, 16 lanes 0.081–0.088 s). The
/// page's WebAssembly factors one matrix at a time instead (see
/// `assemble::interface_solve::IN_LANES`).
pub(crate) const LANES: usize = 8;

/// One value per lane.
pub(crate) type Lane = [f64; LANES];

/// The columns of `LANES` complex m × n matrices, lane-interleaved, real
/// and imaginary parts apart: entry (i, j) of every lane at `j·m + i`.
pub(crate) struct LaneColumns {
    pub(crate) re: Vec<Lane>,
    pub(crate) im: Vec<Lane>,
}

impl LaneColumns {
    pub(crate) fn zeros(len: usize) -> LaneColumns {
        LaneColumns {
            re: vec![[0.0; LANES]; len],
            im: vec![[0.0; LANES]; len],
        }
    }
}

/// One-sided Jacobi on the n columns of length m of each lane of `w` (see
/// [`super::svd::jacobi`], whose results each lane reproduces bit for bit),
/// with `v` (n × n per lane, usually the identity) rotated alongside when
/// given. On return `norms[j][l]` is the squared norm of column j of lane
/// l. Returns, per lane, whether it converged within [`MAX_SWEEPS`].
pub(crate) fn jacobi_lanes(
    w: &mut LaneColumns,
    m: usize,
    n: usize,
    v: Option<&mut LaneColumns>,
    norms: &mut [Lane],
) -> [bool; LANES] {
    #[cfg(target_arch = "x86_64")]
    if super::avx2_fma() {
        // SAFETY: the processor has AVX2 and FMA (checked just now)
        return unsafe { lanes_avx2(w, m, n, v, norms) };
    }
    lanes_body::<Portable>(w, m, n, v, norms)
}

/// [`lanes_body`] compiled for AVX2: the same operations in wider
/// registers (Rust never fuses a multiply and an add of its own accord),
/// the rotations written with AVX intrinsics ([`rotate_avx`]).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn lanes_avx2(
    w: &mut LaneColumns,
    m: usize,
    n: usize,
    v: Option<&mut LaneColumns>,
    norms: &mut [Lane],
) -> [bool; LANES] {
    lanes_body::<Avx>(w, m, n, v, norms)
}

/// Σ |x|² over column `j` (entry by entry, as the scalar code sums).
#[inline(always)]
fn sumsq(re: &[Lane], im: &[Lane]) -> Lane {
    let mut a = [0.0; LANES];
    for (r, i) in re.iter().zip(im) {
        for l in 0..LANES {
            a[l] += r[l] * r[l] + i[l] * i[l];
        }
    }
    a
}

/// All ones where `c`, else zero: a lane mask for [`pick`].
#[inline(always)]
fn mask(c: bool) -> u64 {
    (c as u64).wrapping_neg()
}

/// `a` where `mask` is all ones, else `b`: a selection by bits, which
/// compiles to a vector blend where a branch per lane would not.
#[inline(always)]
fn pick(mask: u64, a: f64, b: f64) -> f64 {
    f64::from_bits((a.to_bits() & mask) | (b.to_bits() & !mask))
}

/// The rotation of one pair of columns in every lane, and which lanes take
/// it (a [`mask`]).
struct Rotation {
    take: [u64; LANES],
    ph_re: Lane,
    ph_im: Lane,
    c: Lane,
    s: Lane,
}

/// How the rotations are applied: the portable loop, or AVX intrinsics.
trait Rotor {
    fn rotate(a: &mut LaneColumns, len: usize, p: usize, q: usize, r: &Rotation);
}

struct Portable;

impl Rotor for Portable {
    #[inline(always)]
    fn rotate(a: &mut LaneColumns, len: usize, p: usize, q: usize, r: &Rotation) {
        rotate(a, len, p, q, r)
    }
}

#[cfg(target_arch = "x86_64")]
struct Avx;

#[cfg(target_arch = "x86_64")]
impl Rotor for Avx {
    #[inline(always)]
    fn rotate(a: &mut LaneColumns, len: usize, p: usize, q: usize, r: &Rotation) {
        // SAFETY: only reached from `lanes_avx2`, called where the
        // processor has AVX2 and FMA
        unsafe { rotate_avx(a, len, p, q, r) }
    }
}

/// [`rotate`] in AVX registers, the same multiplies, adds and subtractions
/// in the same order (no fused multiply-add), then a blend by the lanes'
/// masks. Written with intrinsics because the compiler turns the
/// loop-invariant masks of the portable loop into a branch per lane.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
#[inline]
unsafe fn rotate_avx(a: &mut LaneColumns, len: usize, p: usize, q: usize, r: &Rotation) {
    use std::arch::x86_64::*;
    let (lo_re, hi_re) = a.re.split_at_mut(q * len);
    let (lo_im, hi_im) = a.im.split_at_mut(q * len);
    let (xr, xi) = (
        &mut lo_re[p * len..(p + 1) * len],
        &mut lo_im[p * len..(p + 1) * len],
    );
    let (yr, yi) = (&mut hi_re[..len], &mut hi_im[..len]);
    // SAFETY (every load and store below): each pointer is that of four f64
    // inside a live [f64; LANES] (4·h + 4 ≤ LANES), unaligned access allowed
    let ld = |x: &Lane, h: usize| unsafe { _mm256_loadu_pd(x.as_ptr().add(4 * h)) };
    let st = |x: &mut Lane, h: usize, v: __m256d| unsafe {
        _mm256_storeu_pd(x.as_mut_ptr().add(4 * h), v)
    };
    for h in 0..LANES / 4 {
        let take = unsafe { _mm256_loadu_si256(r.take.as_ptr().add(4 * h).cast::<__m256i>()) };
        let take = _mm256_castsi256_pd(take);
        let (phr, phi) = (ld(&r.ph_re, h), ld(&r.ph_im, h));
        let (c, s) = (ld(&r.c, h), ld(&r.s, h));
        for i in 0..len {
            let (x0r, x0i, y0r, y0i) = (ld(&xr[i], h), ld(&xi[i], h), ld(&yr[i], h), ld(&yi[i], h));
            let yyr = _mm256_sub_pd(_mm256_mul_pd(y0r, phr), _mm256_mul_pd(y0i, phi));
            let yyi = _mm256_add_pd(_mm256_mul_pd(y0r, phi), _mm256_mul_pd(y0i, phr));
            let nxr = _mm256_sub_pd(_mm256_mul_pd(x0r, c), _mm256_mul_pd(yyr, s));
            let nxi = _mm256_sub_pd(_mm256_mul_pd(x0i, c), _mm256_mul_pd(yyi, s));
            let nyr = _mm256_add_pd(_mm256_mul_pd(x0r, s), _mm256_mul_pd(yyr, c));
            let nyi = _mm256_add_pd(_mm256_mul_pd(x0i, s), _mm256_mul_pd(yyi, c));
            // blendv takes the second operand where the mask's sign bit is set
            st(&mut xr[i], h, _mm256_blendv_pd(x0r, nxr, take));
            st(&mut xi[i], h, _mm256_blendv_pd(x0i, nxi, take));
            st(&mut yr[i], h, _mm256_blendv_pd(y0r, nyr, take));
            st(&mut yi[i], h, _mm256_blendv_pd(y0i, nyi, take));
        }
    }
}

/// Columns p < q (each of length `len`) of every lane taking the rotation:
/// (x, y) ← (c·x − s·y e^{−iφ}, s·x + c·y e^{−iφ}), the others unchanged.
#[inline(always)]
fn rotate(a: &mut LaneColumns, len: usize, p: usize, q: usize, r: &Rotation) {
    let (lo_re, hi_re) = a.re.split_at_mut(q * len);
    let (lo_im, hi_im) = a.im.split_at_mut(q * len);
    let xs = lo_re[p * len..(p + 1) * len]
        .iter_mut()
        .zip(&mut lo_im[p * len..(p + 1) * len]);
    let ys = hi_re[..len].iter_mut().zip(&mut hi_im[..len]);
    for ((xr, xi), (yr, yi)) in xs.zip(ys) {
        for l in 0..LANES {
            // y e^{−iφ} as num_complex multiplies: (a c − b d, a d + b c)
            let yyr = yr[l] * r.ph_re[l] - yi[l] * r.ph_im[l];
            let yyi = yr[l] * r.ph_im[l] + yi[l] * r.ph_re[l];
            let (x0r, x0i) = (xr[l], xi[l]);
            let nxr = x0r * r.c[l] - yyr * r.s[l];
            let nxi = x0i * r.c[l] - yyi * r.s[l];
            let nyr = x0r * r.s[l] + yyr * r.c[l];
            let nyi = x0i * r.s[l] + yyi * r.c[l];
            let t = r.take[l];
            xr[l] = pick(t, nxr, x0r);
            xi[l] = pick(t, nxi, x0i);
            yr[l] = pick(t, nyr, yr[l]);
            yi[l] = pick(t, nyi, yi[l]);
        }
    }
}

#[inline(always)]
fn lanes_body<R: Rotor>(
    w: &mut LaneColumns,
    m: usize,
    n: usize,
    mut v: Option<&mut LaneColumns>,
    norms: &mut [Lane],
) -> [bool; LANES] {
    let norms = &mut norms[..n];
    let tol = f64::EPSILON * (m as f64).sqrt();
    let tol2 = tol * tol;
    let colsq =
        |w: &LaneColumns, j: usize| sumsq(&w.re[j * m..(j + 1) * m], &w.im[j * m..(j + 1) * m]);
    for (j, nj) in norms.iter_mut().enumerate() {
        *nj = colsq(w, j);
    }
    let mut done = [false; LANES];
    for _ in 0..MAX_SWEEPS {
        let mut rotated = [false; LANES];
        for p in 0..n.saturating_sub(1) {
            for q in p + 1..n {
                let (a, b) = (norms[p], norms[q]);
                // γ = w_pᴴ w_q, entry by entry
                let (mut gr, mut gi) = ([0.0; LANES], [0.0; LANES]);
                {
                    let (pr, pi) = (&w.re[p * m..(p + 1) * m], &w.im[p * m..(p + 1) * m]);
                    let (qr, qi) = (&w.re[q * m..(q + 1) * m], &w.im[q * m..(q + 1) * m]);
                    for (((xr, xi), yr), yi) in pr.iter().zip(pi).zip(qr).zip(qi) {
                        for l in 0..LANES {
                            gr[l] += xr[l] * yr[l] + xi[l] * yi[l];
                            gi[l] += xr[l] * yi[l] - xi[l] * yr[l];
                        }
                    }
                }
                let mut r = Rotation {
                    take: [0; LANES],
                    ph_re: [0.0; LANES],
                    ph_im: [0.0; LANES],
                    c: [0.0; LANES],
                    s: [0.0; LANES],
                };
                let mut tg = [0.0; LANES];
                for l in 0..LANES {
                    let g2 = gr[l] * gr[l] + gi[l] * gi[l];
                    // without branches (`|`, not `||`), so that the lanes
                    // stay in one vector
                    let skip =
                        (a[l] == 0.0) | (b[l] == 0.0) | g2.is_nan() | (g2 <= tol2 * a[l] * b[l]);
                    r.take[l] = mask(!skip);
                    let gn = g2.sqrt();
                    r.ph_re[l] = gr[l] / gn;
                    r.ph_im[l] = -gi[l] / gn;
                    let zeta = (b[l] - a[l]) / (2.0 * gn);
                    let sg = pick(mask(zeta >= 0.0), 1.0, -1.0);
                    let big = 0.5 / zeta;
                    let small = sg / (zeta.abs() + (1.0 + zeta * zeta).sqrt());
                    let t = pick(mask(zeta.abs() > 1e150), big, small);
                    let c = 1.0 / (1.0 + t * t).sqrt();
                    r.c[l] = c;
                    r.s[l] = c * t;
                    tg[l] = t * gn;
                }
                if r.take.iter().all(|&t| t == 0) {
                    continue;
                }
                for l in 0..LANES {
                    rotated[l] |= r.take[l] != 0;
                }
                R::rotate(w, m, p, q, &r);
                if let Some(v) = v.as_deref_mut() {
                    R::rotate(v, n, p, q, &r);
                }
                // ‖w_p‖² − t|γ| and ‖w_q‖² + t|γ|, summed afresh where that
                // would cancel (as the scalar code)
                let (mut np, mut nq) = (a, b);
                let mut resum = (false, false);
                for l in 0..LANES {
                    np[l] = pick(r.take[l], a[l] - tg[l], a[l]);
                    nq[l] = pick(r.take[l], b[l] + tg[l], b[l]);
                    resum.0 |= (r.take[l] != 0) & (np[l] < 0.5 * a[l]);
                    resum.1 |= (r.take[l] != 0) & (nq[l] < 0.5 * b[l]);
                }
                if resum.0 {
                    let s = colsq(w, p);
                    for l in 0..LANES {
                        np[l] = pick(r.take[l] & mask(np[l] < 0.5 * a[l]), s[l], np[l]);
                    }
                }
                if resum.1 {
                    let s = colsq(w, q);
                    for l in 0..LANES {
                        nq[l] = pick(r.take[l] & mask(nq[l] < 0.5 * b[l]), s[l], nq[l]);
                    }
                }
                norms[p] = np;
                norms[q] = nq;
            }
        }
        for (j, nj) in norms.iter_mut().enumerate() {
            *nj = colsq(w, j);
        }
        for l in 0..LANES {
            done[l] |= !rotated[l];
        }
        if done.iter().all(|&d| d) {
            break;
        }
    }
    done
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::linalg::svd::{jacobi, tests::random};
    use num_complex::Complex64;

    /// A lane's matrix, column-major, from the seeded generator; kind 1
    /// grades the columns (more sweeps), 2 zeroes a column, 3 is all zero
    /// (an empty lane), 4 is the identity (no rotation at all).
    fn matrix(m: usize, n: usize, seed: u64, kind: u8) -> Vec<Complex64> {
        let mut a: Vec<Complex64> = random(m, n, seed).as_slice().to_vec();
        match kind {
            1 => {
                for j in 0..n {
                    let f = 10f64.powi(-(2 * j as i32));
                    for x in &mut a[j * m..(j + 1) * m] {
                        *x *= f;
                    }
                }
            }
            2 => {
                for x in &mut a[(n / 2) * m..(n / 2 + 1) * m] {
                    *x = Complex64::new(0.0, 0.0);
                }
            }
            3 => a.fill(Complex64::new(0.0, 0.0)),
            4 => {
                a.fill(Complex64::new(0.0, 0.0));
                for j in 0..n.min(m) {
                    a[j * m + j] = Complex64::new(1.0, 0.0);
                }
            }
            _ => {}
        }
        a
    }

    fn identity(n: usize) -> Vec<Complex64> {
        (0..n * n)
            .map(|k| Complex64::new(if k % (n + 1) == 0 { 1.0 } else { 0.0 }, 0.0))
            .collect()
    }

    fn load(cols: &mut LaneColumns, l: usize, a: &[Complex64]) {
        for (k, x) in a.iter().enumerate() {
            cols.re[k][l] = x.re;
            cols.im[k][l] = x.im;
        }
    }

    fn bits(x: &[Complex64]) -> Vec<(u64, u64)> {
        x.iter().map(|c| (c.re.to_bits(), c.im.to_bits())).collect()
    }

    // the scalar Jacobi is the reference (itself checked against numpy in
    // svd.rs); common practice: batching independent problems must not change a bit
    #[test]
    fn each_lane_gives_the_one_matrix_codes_bits() {
        // the kinds of the lanes' matrices, repeated over the lanes
        let cases: [(usize, usize, [u8; 4]); 5] = [
            (12, 12, [0, 1, 2, 0]),
            (12, 12, [1, 3, 0, 4]),
            (9, 5, [0, 0, 1, 2]),
            (8, 8, [4, 4, 4, 1]),
            (1, 1, [0, 3, 0, 0]),
        ];
        for (case, (m, n, kinds)) in cases.into_iter().enumerate() {
            for with_v in [true, false] {
                let mats: Vec<Vec<Complex64>> = (0..LANES)
                    .map(|l| matrix(m, n, 100 * case as u64 + l as u64, kinds[l % 4]))
                    .collect();
                let mut w = LaneColumns::zeros(m * n);
                let mut v = LaneColumns::zeros(n * n);
                for (l, a) in mats.iter().enumerate() {
                    load(&mut w, l, a);
                    load(&mut v, l, &identity(n));
                }
                let mut norms = vec![[0.0; LANES]; n];
                let conv = jacobi_lanes(
                    &mut w,
                    m,
                    n,
                    if with_v { Some(&mut v) } else { None },
                    &mut norms,
                );
                for (l, a) in mats.iter().enumerate() {
                    let (mut w1, mut v1, mut n1) = (a.clone(), identity(n), vec![0.0; n]);
                    let c1 = jacobi(
                        &mut w1,
                        m,
                        n,
                        if with_v { Some(&mut v1) } else { None },
                        &mut n1,
                    );
                    assert_eq!(conv[l], c1, "case {case} lane {l}");
                    let wl: Vec<Complex64> = (0..m * n)
                        .map(|k| Complex64::new(w.re[k][l], w.im[k][l]))
                        .collect();
                    assert_eq!(bits(&wl), bits(&w1), "W, case {case} lane {l}");
                    if with_v {
                        let vl: Vec<Complex64> = (0..n * n)
                            .map(|k| Complex64::new(v.re[k][l], v.im[k][l]))
                            .collect();
                        assert_eq!(bits(&vl), bits(&v1), "V, case {case} lane {l}");
                    }
                    let nl: Vec<u64> = norms.iter().map(|x| x[l].to_bits()).collect();
                    let ns: Vec<u64> = n1.iter().map(|x| x.to_bits()).collect();
                    assert_eq!(nl, ns, "norms, case {case} lane {l}");
                }
            }
        }
    }

    #[test]
    fn the_avx2_build_gives_the_plain_builds_bits() {
        let (m, n) = (12, 12);
        let mut w1 = LaneColumns::zeros(m * n);
        let mut v1 = LaneColumns::zeros(n * n);
        for l in 0..LANES {
            load(&mut w1, l, &matrix(m, n, 7 + l as u64, (l % 3) as u8));
            load(&mut v1, l, &identity(n));
        }
        let copy = |x: &LaneColumns| LaneColumns {
            re: x.re.clone(),
            im: x.im.clone(),
        };
        let (mut w2, mut v2) = (copy(&w1), copy(&v1));
        let (mut n1, mut n2) = (vec![[0.0; LANES]; n], vec![[0.0; LANES]; n]);
        let c1 = jacobi_lanes(&mut w1, m, n, Some(&mut v1), &mut n1);
        let c2 = lanes_body::<Portable>(&mut w2, m, n, Some(&mut v2), &mut n2);
        assert_eq!(c1, c2);
        let b = |x: &[Lane]| -> Vec<u64> { x.iter().flatten().map(|v| v.to_bits()).collect() };
        assert_eq!(b(&w1.re), b(&w2.re));
        assert_eq!(b(&w1.im), b(&w2.im));
        assert_eq!(b(&v1.re), b(&v2.re));
        assert_eq!(b(&v1.im), b(&v2.im));
        assert_eq!(b(&n1), b(&n2));
    }
}
