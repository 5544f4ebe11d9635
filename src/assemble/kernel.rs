//! The dense products of the coupling, C = P X, with P (rows × m, row-major,
//! complex) and X (m × cp) held as separate real and imaginary parts (row
//! stride `cp`, a multiple of [`LANES`]) so the inner loop is plain
//! multiply-adds on short fixed-size blocks that the compiler keeps in
//! registers and vectorizes. Rows are taken two (four with AVX-512) at a time; each finished
//! row of C is handed to a sink as (row index, real parts, imaginary parts).
//!
//! On x86-64 a copy compiled for AVX-512 or AVX2 is chosen at run time when
//! the processor has those instructions. Every copy does the same IEEE
//! multiplies and adds in the same order (no fused multiply-add, which would
//! round differently), so threaded, serial, native and WebAssembly runs give
//! the same numbers: the page and the CLI agree.

use num_complex::Complex64;

/// Column block width; the row stride of X must be a multiple of it.
pub(crate) const LANES: usize = 8;

/// P must hold a multiple of this many rows (zero rows after the last).
pub(crate) const ROW_PAD: usize = 4;

/// Round up to a multiple of [`LANES`].
pub(crate) fn padded(cols: usize) -> usize {
    cols.div_ceil(LANES) * LANES
}

trait Mac {
    /// a·b + c
    fn mac(a: f64, b: f64, c: f64) -> f64;
}

struct Plain;
impl Mac for Plain {
    #[inline(always)]
    fn mac(a: f64, b: f64, c: f64) -> f64 {
        a * b + c
    }
}

/// acc += c · x on one block of LANES columns (separate re/im parts).
#[inline(always)]
fn step<F: Mac>(
    acc_r: &mut [f64; LANES],
    acc_i: &mut [f64; LANES],
    c: Complex64,
    x_r: &[f64; LANES],
    x_i: &[f64; LANES],
) {
    for t in 0..LANES {
        acc_r[t] = F::mac(c.re, x_r[t], acc_r[t]);
        acc_r[t] = F::mac(-c.im, x_i[t], acc_r[t]);
        acc_i[t] = F::mac(c.re, x_i[t], acc_i[t]);
        acc_i[t] = F::mac(c.im, x_r[t], acc_i[t]);
    }
}

/// Rows of C in groups of R (2 or 4); each accumulator is its own local so
/// the compiler keeps them all in registers.
#[inline(always)]
#[allow(clippy::too_many_arguments)]
fn body<F: Mac, const R: usize, S: FnMut(usize, &[f64], &[f64])>(
    rows: usize,
    m: usize,
    p: &[Complex64],
    xr: &[f64],
    xi: &[f64],
    cp: usize,
    buf: &mut [f64],
    sink: &mut S,
) {
    // R rows of results, real parts then imaginary parts, cp values each
    let buf = &mut buf[..8 * cp];
    let z = [0.0; LANES];
    let mut i = 0;
    while i < rows {
        let here = R.min(rows - i);
        // P has at least a multiple of ROW_PAD rows (zeros beyond `rows`)
        let pb = &p[i * m..(i + R) * m];
        for jb in (0..cp).step_by(LANES) {
            let (mut r0, mut i0, mut r1, mut i1) = (z, z, z, z);
            let (mut r2, mut i2, mut r3, mut i3) = (z, z, z, z);
            for s in 0..m {
                let o = s * cp + jb;
                let (Ok(x_r), Ok(x_i)) = (
                    <&[f64; LANES]>::try_from(&xr[o..o + LANES]),
                    <&[f64; LANES]>::try_from(&xi[o..o + LANES]),
                ) else {
                    continue;
                };
                step::<F>(&mut r0, &mut i0, pb[s], x_r, x_i);
                step::<F>(&mut r1, &mut i1, pb[m + s], x_r, x_i);
                if R == 4 {
                    step::<F>(&mut r2, &mut i2, pb[2 * m + s], x_r, x_i);
                    step::<F>(&mut r3, &mut i3, pb[3 * m + s], x_r, x_i);
                }
            }
            for (r, (a, b)) in [(r0, i0), (r1, i1), (r2, i2), (r3, i3)]
                .iter()
                .take(R)
                .enumerate()
            {
                buf[(2 * r) * cp + jb..(2 * r) * cp + jb + LANES].copy_from_slice(a);
                buf[(2 * r + 1) * cp + jb..(2 * r + 1) * cp + jb + LANES].copy_from_slice(b);
            }
        }
        for r in 0..here {
            let (re, im) = buf[2 * r * cp..(2 * r + 2) * cp].split_at(cp);
            sink(i + r, re, im);
        }
        i += R;
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
#[allow(clippy::too_many_arguments)]
unsafe fn body_avx512<S: FnMut(usize, &[f64], &[f64])>(
    rows: usize,
    m: usize,
    p: &[Complex64],
    xr: &[f64],
    xi: &[f64],
    cp: usize,
    buf: &mut [f64],
    sink: &mut S,
) {
    body::<Plain, 4, S>(rows, m, p, xr, xi, cp, buf, sink)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
#[allow(clippy::too_many_arguments)]
unsafe fn body_avx2<S: FnMut(usize, &[f64], &[f64])>(
    rows: usize,
    m: usize,
    p: &[Complex64],
    xr: &[f64],
    xi: &[f64],
    cp: usize,
    buf: &mut [f64],
    sink: &mut S,
) {
    body::<Plain, 2, S>(rows, m, p, xr, xi, cp, buf, sink)
}

/// Which compiled copy of the product this processor runs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Path {
    Generic,
    #[cfg(target_arch = "x86_64")]
    Avx2,
    #[cfg(target_arch = "x86_64")]
    Avx512,
}

pub(crate) fn path() -> Path {
    #[cfg(target_arch = "x86_64")]
    {
        if std::is_x86_feature_detected!("avx512f") {
            return Path::Avx512;
        }
        if crate::linalg::avx2_fma() {
            return Path::Avx2;
        }
    }
    Path::Generic
}

/// C = P X row by row: `sink(i, re, im)` receives row i of C (the first
/// `cols` of its `cp` values are meaningful). `buf` holds at least 8·cp values.
#[allow(clippy::too_many_arguments)]
pub(crate) fn product<S: FnMut(usize, &[f64], &[f64])>(
    path: Path,
    rows: usize,
    m: usize,
    p: &[Complex64],
    xr: &[f64],
    xi: &[f64],
    cp: usize,
    buf: &mut [f64],
    mut sink: S,
) {
    assert!(cp % LANES == 0 && p.len() >= rows.div_ceil(ROW_PAD) * ROW_PAD * m);
    assert!(buf.len() >= 8 * cp);
    assert!(xr.len() >= m * cp && xi.len() >= m * cp);
    match path {
        #[cfg(target_arch = "x86_64")]
        // SAFETY: `path()` chose this copy only after detecting the features.
        Path::Avx512 => unsafe { body_avx512(rows, m, p, xr, xi, cp, buf, &mut sink) },
        #[cfg(target_arch = "x86_64")]
        // SAFETY: as above.
        Path::Avx2 => unsafe { body_avx2(rows, m, p, xr, xi, cp, buf, &mut sink) },
        Path::Generic => body::<Plain, 2, S>(rows, m, p, xr, xi, cp, buf, &mut sink),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn matches_plain_complex_product() {
        // P X against a direct complex triple loop (definition of the matrix product)
        for (rows, m, cols) in [(5, 3, 7), (4, 12, 16), (1, 1, 1)] {
            let c = |a: usize, b: usize| {
                Complex64::new((a * 7 + b) as f64 * 0.1 - 1.0, (a + 3 * b) as f64 * 0.05)
            };
            let mut p: Vec<Complex64> = (0..rows * m).map(|x| c(x, 1)).collect();
            p.resize(
                rows.div_ceil(ROW_PAD) * ROW_PAD * m,
                Complex64::new(0.0, 0.0),
            );
            let x: Vec<Complex64> = (0..m * cols).map(|x| c(x, 2)).collect();
            let cp = padded(cols);
            let mut xr = vec![0.0; m * cp];
            let mut xi = vec![0.0; m * cp];
            for s in 0..m {
                for j in 0..cols {
                    xr[s * cp + j] = x[s * cols + j].re;
                    xi[s * cp + j] = x[s * cols + j].im;
                }
            }
            let mut buf = vec![0.0; 8 * cp];
            #[allow(unused_mut)]
            let mut paths = vec![Path::Generic];
            #[cfg(target_arch = "x86_64")]
            {
                if crate::linalg::avx2_fma() {
                    paths.push(Path::Avx2);
                }
                if std::is_x86_feature_detected!("avx512f") {
                    paths.push(Path::Avx512);
                }
            }
            for pa in paths {
                let mut seen = vec![false; rows];
                product(pa, rows, m, &p, &xr, &xi, cp, &mut buf, |i, re, im| {
                    seen[i] = true;
                    for j in 0..cols {
                        let mut want = Complex64::new(0.0, 0.0);
                        for s in 0..m {
                            want += p[i * m + s] * x[s * cols + j];
                        }
                        let d = (Complex64::new(re[j], im[j]) - want).norm();
                        assert!(d <= 1e-14 * (1.0 + want.norm()), "{d:e} {want}");
                    }
                });
                assert!(seen.iter().all(|&s| s));
            }
        }
    }
}
