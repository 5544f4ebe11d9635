//! The rank-m update of the coupling: out −= P X, with P (rows × m,
//! row-major, complex) and X (m × cols) held as separate real and imaginary
//! parts so the inner loop is plain multiply-adds the compiler vectorizes.
//! On x86-64 a copy compiled for AVX2/FMA is chosen at run time when the
//! processor has those instructions; the arithmetic is the same.

use num_complex::Complex64;

#[inline(always)]
#[allow(clippy::too_many_arguments)]
fn body(
    out: &mut [Complex64],
    rows: usize,
    cols: usize,
    p: &[Complex64],
    m: usize,
    xr: &[f64],
    xi: &[f64],
    tr: &mut [f64],
    ti: &mut [f64],
) {
    let tr = &mut tr[..cols];
    let ti = &mut ti[..cols];
    for i in 0..rows {
        tr.fill(0.0);
        ti.fill(0.0);
        for s in 0..m {
            let c = p[i * m + s];
            if c.re == 0.0 && c.im == 0.0 {
                continue;
            }
            let (a, b) = (c.re, c.im);
            let xr = &xr[s * cols..(s + 1) * cols];
            let xi = &xi[s * cols..(s + 1) * cols];
            for j in 0..cols {
                tr[j] += a * xr[j] - b * xi[j];
                ti[j] += a * xi[j] + b * xr[j];
            }
        }
        let row = &mut out[i * cols..(i + 1) * cols];
        for j in 0..cols {
            row[j].re -= tr[j];
            row[j].im -= ti[j];
        }
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
#[allow(clippy::too_many_arguments)]
unsafe fn body_avx2(
    out: &mut [Complex64],
    rows: usize,
    cols: usize,
    p: &[Complex64],
    m: usize,
    xr: &[f64],
    xi: &[f64],
    tr: &mut [f64],
    ti: &mut [f64],
) {
    body(out, rows, cols, p, m, xr, xi, tr, ti)
}

/// out[i·cols + j] −= Σ_s p[i·m + s] · (xr + i·xi)[s·cols + j]; `tr`, `ti`
/// are scratch rows of at least `cols` values.
#[allow(clippy::too_many_arguments)]
pub(crate) fn sub_product(
    out: &mut [Complex64],
    rows: usize,
    cols: usize,
    p: &[Complex64],
    m: usize,
    xr: &[f64],
    xi: &[f64],
    tr: &mut [f64],
    ti: &mut [f64],
) {
    assert!(out.len() >= rows * cols && p.len() >= rows * m);
    assert!(xr.len() >= m * cols && xi.len() >= m * cols);
    #[cfg(target_arch = "x86_64")]
    {
        if std::is_x86_feature_detected!("avx2") && std::is_x86_feature_detected!("fma") {
            // SAFETY: the CPU supports the features the function was compiled for.
            unsafe { body_avx2(out, rows, cols, p, m, xr, xi, tr, ti) };
            return;
        }
    }
    body(out, rows, cols, p, m, xr, xi, tr, ti)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn matches_plain_complex_product() {
        // out − P X against a direct complex triple loop (definition of the matrix product)
        let (rows, m, cols) = (5, 3, 7);
        let c = |a: usize, b: usize| {
            Complex64::new((a * 7 + b) as f64 * 0.1 - 1.0, (a + 3 * b) as f64 * 0.05)
        };
        let p: Vec<Complex64> = (0..rows * m).map(|x| c(x, 1)).collect();
        let x: Vec<Complex64> = (0..m * cols).map(|x| c(x, 2)).collect();
        let mut out: Vec<Complex64> = (0..rows * cols).map(|x| c(x, 3)).collect();
        let mut want = out.clone();
        for i in 0..rows {
            for j in 0..cols {
                for s in 0..m {
                    want[i * cols + j] -= p[i * m + s] * x[s * cols + j];
                }
            }
        }
        let xr: Vec<f64> = x.iter().map(|v| v.re).collect();
        let xi: Vec<f64> = x.iter().map(|v| v.im).collect();
        let (mut tr, mut ti) = (vec![0.0; cols], vec![0.0; cols]);
        sub_product(&mut out, rows, cols, &p, m, &xr, &xi, &mut tr, &mut ti);
        for (a, b) in out.iter().zip(&want) {
            assert!((a - b).norm() < 1e-12);
        }
    }
}
