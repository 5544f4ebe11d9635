//! The per-line interface solve of LM-FBS: X = Z⁻¹ (B_u Y), or with a
//! truncated-SVD threshold X = Z⁺ (B_u Y), for the m × m complex interface
//! matrix Z = B_u Y B_fᵀ + Γ; its singular values and 2-norm condition number;
//! and the warnings that summarise these over the lines.
//!
//! # Singular values: one-sided Jacobi
//! Z is first scaled by a power of two (exact) so that its largest entry
//! lies in [1, 2); the columns W of the scaled matrix are then rotated in
//! pairs by [`crate::linalg::svd`]'s one-sided (Hestenes) Jacobi, the one
//! SVD of mortise, until they are orthogonal; the rotations, accumulated,
//! give V with Z = W Vᴴ / scale, W = U Σ. The column norms are the singular
//! values, each to high relative accuracy (Demmel & Veselić 1992; see that
//! module, also for why nalgebra's complex SVD is not used). The columns of
//! W evolve the same whether V is accumulated or not, so the condition
//! number does not depend on the threshold being set. The factors are used
//! unsorted, as they come, so that the arithmetic is the same on every line.
//! [`factor_lanes`] runs the Jacobi of up to eight lines at once, one per
//! vector lane ([`crate::linalg::jacobi_lanes`]), with the bits of one
//! line at a time; on the coupling benchmark a one-entry request, whose
//! floor this is, went from 0.18–0.26 s to 0.14–0.16 s with 4 lanes and
//! (with the update cut to the request) to 0.072–0.085 s with 8. The
//! page's WebAssembly factors one line at a time ([`IN_LANES`]).
//!
//! # The solve
//! * No singular value dropped (always so without a threshold): LU with
//!   partial pivoting (largest |re| + |im| in the column, as LAPACK's ZGETRF)
//!   of the scaled Z, then forward and back substitution on the columns of
//!   B_u Y. A backward-stable solve: forming Z⁻¹ first and multiplying, as
//!   before, lost up to 1e-3 relative on an extended-interface decoupling
//!   (condition 1e13) where this solve loses 1e-10. With a threshold that
//!   drops nothing the result is bit-identical to the result without one.
//! * Some dropped: Z⁺ = scale · Σ_kept v_j w_jᴴ / ‖w_j‖² from the Jacobi
//!   factors above, then X = Z⁺ (B_u Y) by the kernel's product.
//!
//! Everything is plain IEEE multiplies, adds, divisions and square roots in
//! a fixed order, no fused multiply-add: native and WebAssembly builds agree
//! bit for bit.

use super::kernel;
use crate::error::{Error, Result};
use crate::linalg::jacobi_lanes::{jacobi_lanes, Lane, LaneColumns, LANES};
use crate::linalg::svd::{self, MAX_SWEEPS};
use num_complex::Complex64;

/// Above this condition number an untruncated inverse is refused.
const SINGULAR: f64 = 1e16;

/// How one line's interface matrix is to be inverted.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum Rule {
    /// LU with partial pivoting.
    Plain,
    /// Truncated SVD at t · σ_max (LU where nothing falls below).
    Tsvd(f64),
    /// Tikhonov with λ = x · σ_max, x > 0.
    Tikhonov(f64),
}

impl Rule {
    /// The rule of an optional uniform truncation threshold.
    pub(crate) fn of_tsvd(t: Option<f64>) -> Rule {
        t.map_or(Rule::Plain, Rule::Tsvd)
    }
}

/// How one line's interface matrix was inverted.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Inverted {
    /// σ_max / σ_min of Z (infinite when σ_min is 0).
    pub cond: f64,
    /// Singular values dropped (0 when the LU solve was used).
    pub dropped: usize,
    /// σ_max / (smallest kept σ): the condition of what was inverted
    /// (Tikhonov: σ_max / max(σ_min, λ), the damped inverse's gain bound).
    pub kept_cond: f64,
    /// Tikhonov: singular values below λ (0 otherwise).
    pub damped: usize,
}

/// Scratch space for one thread.
pub(crate) struct SolveWork {
    m: usize,
    /// the interface matrix Z, m × m row-major (filled by the caller)
    pub(crate) z: Vec<Complex64>,
    /// the power of two Z was scaled by for its factors
    scale: f64,
    /// LU factors of the scaled Z (row-major) and the row interchanges
    lu: Vec<Complex64>,
    piv: Vec<usize>,
    /// Jacobi: W = U Σ and V, column-major (column j at j·m)
    w: Vec<Complex64>,
    v: Vec<Complex64>,
    /// squared column norms of W
    norms: Vec<f64>,
    /// the pseudo-inverse, m × m row-major, zero rows up to the kernel's padding
    zinv: Vec<Complex64>,
}

impl SolveWork {
    pub(crate) fn new(m: usize) -> SolveWork {
        let zero = Complex64::new(0.0, 0.0);
        SolveWork {
            m,
            z: vec![zero; m * m],
            scale: 1.0,
            lu: vec![zero; m * m],
            piv: vec![0; m],
            w: vec![zero; m * m],
            v: vec![zero; m * m],
            norms: vec![0.0; m],
            zinv: vec![zero; m.div_ceil(kernel::ROW_PAD) * kernel::ROW_PAD * m],
        }
    }
}

/// The right-hand side B_u Y and the solution X, both m × cp with separate
/// real and imaginary parts (row stride cp, see [`kernel`]).
pub(crate) struct Columns<'a> {
    pub(crate) br: &'a [f64],
    pub(crate) bi: &'a [f64],
    pub(crate) xr: &'a mut [f64],
    pub(crate) xi: &'a mut [f64],
    pub(crate) cp: usize,
}

/// Scratch space of [`factor_lanes`] for one thread: W and V of
/// [`LANES`] interface matrices, lane-interleaved, and their squared norms.
pub(crate) struct LaneWork {
    w: LaneColumns,
    v: LaneColumns,
    norms: Vec<Lane>,
}

impl LaneWork {
    pub(crate) fn new(m: usize) -> LaneWork {
        LaneWork {
            w: LaneColumns::zeros(m * m),
            v: LaneColumns::zeros(m * m),
            norms: vec![[0.0; LANES]; m],
        }
    }
}

/// Whether [`factor_lanes`] runs its matrices' Jacobi in lanes. Not in the
/// page's WebAssembly: there the lanes took the coupling benchmark from
/// 0.32 s to 0.42–0.49 s (1,600 lines), the one-matrix code on each line
/// being faster with 128-bit registers; the bits are the same either way.
const IN_LANES: bool = cfg!(not(target_arch = "wasm32"));

/// The power of two that brings Z's largest real or imaginary part into
/// [1, 2) (exact scaling).
fn z_scale(z: &[Complex64]) -> f64 {
    svd::pow2_scale(
        z.iter()
            .fold(0.0, |a: f64, v| a.max(v.re.abs()).max(v.im.abs())),
    )
}

/// [`factor_lanes`] for one matrix, by [`svd::jacobi`].
fn factor_one(work: &mut SolveWork, want_v: bool) -> bool {
    let m = work.m;
    work.scale = z_scale(&work.z);
    // W = scaled Z, column-major
    for r in 0..m {
        for c in 0..m {
            work.w[c * m + r] = work.z[r * m + c] * work.scale;
        }
    }
    if want_v {
        for (k, d) in work.v.iter_mut().enumerate() {
            *d = Complex64::new(if k % (m + 1) == 0 { 1.0 } else { 0.0 }, 0.0);
        }
    }
    let v = if want_v { Some(&mut work.v[..]) } else { None };
    svd::jacobi(&mut work.w, m, m, v, &mut work.norms)
}

/// The Jacobi factors of the interface matrices in `works` (at most
/// [`LANES`], each `z` filled), computed together in lanes (see
/// [`crate::linalg::jacobi_lanes`]; the bits of one at a time): each Z
/// scaled by its power of two, W = U Σ, V when `want_v`, and the squared
/// column norms, into each work. Returns, per work, whether its Jacobi
/// converged.
pub(crate) fn factor_lanes(
    works: &mut [SolveWork],
    want_v: bool,
    lanes: &mut LaneWork,
) -> [bool; LANES] {
    let Some(m) = works.first().map(|w| w.m) else {
        return [true; LANES];
    };
    if !IN_LANES {
        let mut converged = [true; LANES];
        for (c, work) in converged.iter_mut().zip(works.iter_mut()) {
            *c = factor_one(work, want_v);
        }
        return converged;
    }
    let LaneWork { w, v, norms } = lanes;
    for l in 0..LANES {
        let Some(work) = works.get_mut(l) else {
            // an empty lane: all zero, no rotation
            for k in 0..m * m {
                w.re[k][l] = 0.0;
                w.im[k][l] = 0.0;
            }
            continue;
        };
        work.scale = z_scale(&work.z);
        // W = scaled Z, column-major
        for r in 0..m {
            for c in 0..m {
                let x = work.z[r * m + c] * work.scale;
                w.re[c * m + r][l] = x.re;
                w.im[c * m + r][l] = x.im;
            }
        }
        if want_v {
            for k in 0..m * m {
                v.re[k][l] = if k % (m + 1) == 0 { 1.0 } else { 0.0 };
                v.im[k][l] = 0.0;
            }
        }
    }
    let converged = jacobi_lanes(w, m, m, if want_v { Some(v) } else { None }, norms);
    for (l, work) in works.iter_mut().enumerate().take(LANES) {
        for k in 0..m * m {
            work.w[k] = Complex64::new(w.re[k][l], w.im[k][l]);
            if want_v {
                work.v[k] = Complex64::new(v.re[k][l], v.im[k][l]);
            }
        }
        for (d, s) in work.norms.iter_mut().zip(norms.iter()) {
            *d = s[l];
        }
    }
    converged
}

/// Solve Z X = B_u Y at `freq` Hz for the Z in `work`, factored by
/// [`factor_lanes`] (V too unless `rule` is plain; `converged`: its
/// Jacobi's outcome), by `rule`: LU; the pseudo-inverse without the
/// singular values below t · σ_max where there are any; or Tikhonov's
/// damped inverse. `path` and `buf` are the kernel's.
pub(crate) fn solve(
    work: &mut SolveWork,
    rule: Rule,
    freq: f64,
    converged: bool,
    cols: Columns,
    path: kernel::Path,
    buf: &mut [f64],
) -> Result<Inverted> {
    let m = work.m;
    let scale = work.scale;
    let tsvd = match rule {
        Rule::Tsvd(t) => Some(t),
        _ => None,
    };
    if !converged {
        return Err(Error::numeric(format!(
            "the singular values of the interface matrix at {freq} Hz did not converge in {MAX_SWEEPS} Jacobi sweeps; check the components' data there"
        )));
    }
    // singular values in units of the scaled matrix (the ratios are what count)
    let sigma = |j: usize| work.norms[j].sqrt();
    let smax = work.norms.iter().cloned().fold(0.0, f64::max).sqrt();
    let smin = work
        .norms
        .iter()
        .cloned()
        .fold(f64::INFINITY, f64::min)
        .sqrt();
    let cond = if smin > 0.0 {
        smax / smin
    } else {
        f64::INFINITY
    };
    if let Rule::Tikhonov(x) = rule {
        return tikhonov(work, x, smax, smin, scale, cond, cols, path, buf);
    }
    let thr = tsvd.map(|t| t * smax);
    let keep = |j: usize| match thr {
        Some(thr) => sigma(j) > 0.0 && sigma(j) >= thr,
        None => true,
    };
    let dropped = (0..m).filter(|&j| !keep(j)).count();
    if dropped == 0 {
        lu_solve(work, scale, cond, tsvd, freq, cols)?;
        return Ok(Inverted {
            cond,
            dropped,
            kept_cond: cond,
            damped: 0,
        });
    }

    // Z⁺ = scale · Σ_kept v_j w_jᴴ / ‖w_j‖²
    let out = &mut work.zinv;
    out.fill(Complex64::new(0.0, 0.0));
    svd::pinv_from_factors(&work.w, &work.v, &work.norms, m, m, scale, keep, out);
    let kept_min = (0..m)
        .filter(|&j| keep(j))
        .map(sigma)
        .fold(f64::INFINITY, f64::min);
    // X = Z⁺ (B_u Y)
    let Columns { br, bi, xr, xi, cp } = cols;
    kernel::product(path, m, m, out, br, bi, cp, buf, |i, re, im| {
        xr[i * cp..(i + 1) * cp].copy_from_slice(re);
        xi[i * cp..(i + 1) * cp].copy_from_slice(im);
    });
    let kept_cond = if kept_min.is_finite() {
        smax / kept_min
    } else {
        // nothing kept: the interface forces are all set to zero
        1.0
    };
    Ok(Inverted {
        cond,
        dropped,
        kept_cond,
        damped: 0,
    })
}

/// X = Z_λ⁺ (B_u Y) with Tikhonov's Z_λ⁺ = (ZᴴZ + λ²I)⁻¹ Zᴴ, λ = x · σ_max.
/// From the Jacobi factors of the scaled matrix s·Z = W Vᴴ (W = U Σ_s,
/// Σ_s = s Σ): Z_λ⁺ = Σ σ/(σ² + λ²) v uᴴ = s · Σ v wᴴ / (‖w‖² + (s λ)²),
/// every singular value kept, those below λ damped. `smax` and `smin` are
/// of the scaled matrix (λ·s = x · smax).
#[allow(clippy::too_many_arguments)]
fn tikhonov(
    work: &mut SolveWork,
    x: f64,
    smax: f64,
    smin: f64,
    scale: f64,
    cond: f64,
    cols: Columns,
    path: kernel::Path,
    buf: &mut [f64],
) -> Result<Inverted> {
    let m = work.m;
    let lam = x * smax;
    let lam2 = lam * lam;
    let damped = work.norms.iter().filter(|&&n| n.sqrt() < lam).count();
    for n in work.norms.iter_mut() {
        *n += lam2;
    }
    let out = &mut work.zinv;
    out.fill(Complex64::new(0.0, 0.0));
    svd::pinv_from_factors(&work.w, &work.v, &work.norms, m, m, scale, |_| true, out);
    let Columns { br, bi, xr, xi, cp } = cols;
    kernel::product(path, m, m, out, br, bi, cp, buf, |i, re, im| {
        xr[i * cp..(i + 1) * cp].copy_from_slice(re);
        xi[i * cp..(i + 1) * cp].copy_from_slice(im);
    });
    Ok(Inverted {
        cond,
        dropped: 0,
        kept_cond: smax / smin.max(lam),
        damped,
    })
}

/// Above this condition number the inverse is reported as ill-conditioned.
pub(crate) const ILL: f64 = 1e10;

/// The warnings about the inversions over all lines (`what` is "coupling" or
/// "decoupling"; `m` the number of joints): lines where singular values were
/// dropped, and lines where what was inverted is ill-conditioned, with the
/// worst value, what it does to the result and the remedy.
pub(crate) fn warnings(
    what: &str,
    lines: &[Inverted],
    freqs: &[f64],
    tsvd: Option<f64>,
    per_line: Option<&super::PerLine>,
    m: usize,
) -> Vec<String> {
    use super::PerLine;
    let op = if what == "decoupling" {
        "decouple"
    } else {
        "couple"
    };
    let nl = lines.len();
    let mut out = Vec::new();
    // the regularisation's value(s), as the messages state them
    let range = |v: &[f64]| {
        let lo = v.iter().cloned().fold(f64::INFINITY, f64::min);
        let hi = v.iter().cloned().fold(0.0, f64::max);
        if lo == hi {
            format!("{lo:e}")
        } else {
            format!("{lo:e} to {hi:e} (per line)")
        }
    };
    let threshold = match (tsvd, per_line) {
        (Some(t), _) => Some(format!("{t:e}")),
        (None, Some(PerLine::Tsvd(v))) => Some(range(v)),
        _ => None,
    };
    let cut: Vec<usize> = (0..nl).filter(|&k| lines[k].dropped > 0).collect();
    if let (Some(t), false) = (&threshold, cut.is_empty()) {
        let kept = |k: &usize| m - lines[*k].dropped;
        let (lo, hi) = (
            cut.iter().map(kept).min().unwrap_or(m),
            cut.iter().map(kept).max().unwrap_or(m),
        );
        let rank = if lo == hi {
            format!("{lo}")
        } else {
            format!("{lo} to {hi}")
        };
        out.push(format!(
            "{what}: the truncated SVD dropped singular values on {} of {nl} lines ({}): threshold {t} of the largest, rank {rank} of {m} kept; the interface forces there are regularised estimates (the joints' constraints are met only in the kept directions)",
            cut.len(),
            lines_text(&cut, freqs)
        ));
    }
    let tikhonov = match per_line {
        Some(PerLine::Tikhonov(v)) => Some(range(v)),
        _ => None,
    };
    if let Some(l) = &tikhonov {
        let damped: Vec<usize> = (0..nl).filter(|&k| lines[k].damped > 0).collect();
        if !damped.is_empty() {
            out.push(format!(
                "{what}: Tikhonov regularisation (λ {l} of the largest singular value) damped singular values below λ on {} of {nl} lines ({}); the interface forces there are regularised estimates (the joints' constraints are met only approximately)",
                damped.len(),
                lines_text(&damped, freqs)
            ));
        }
    }
    // what was actually inverted: the whole matrix, its kept part, or the
    // damped inverse
    let eff: Vec<f64> = lines
        .iter()
        .map(|l| {
            if l.dropped > 0 || tikhonov.is_some() {
                l.kept_cond
            } else {
                l.cond
            }
        })
        .collect();
    let bad: Vec<usize> = (0..nl)
        .filter(|&k| eff[k].is_nan() || eff[k] >= ILL)
        .collect();
    let Some(&worst) = bad.iter().max_by(|a, b| eff[**a].total_cmp(&eff[**b])) else {
        return out;
    };
    let at = format!("worst {:.2e} at {} Hz", eff[worst], freqs[worst]);
    let effect = "its inverse amplifies noise and rounding in the FRFs by up to that factor, so the result's entries on those lines are unreliable";
    out.push(match (&threshold, &tikhonov) {
        (Some(t), _) => format!(
            "{what}: even with the truncated SVD (threshold {t}) the inverted part of the interface matrix B Y Bᵀ + Γ is ill-conditioned on {} of {nl} lines ({}): condition number of the kept singular values above {ILL:.0e}, {at}; {effect}. Remedy: raise the threshold, the operand \"tsvd\" of this {op} step (or --tsvd X on the one-line mortise couple), for example to 1e-6 to 1e-3, or \"noise\"",
            bad.len(),
            lines_text(&bad, freqs)
        ),
        (None, Some(l)) => format!(
            "{what}: even with Tikhonov regularisation (λ {l}) the damped inverse of the interface matrix B Y Bᵀ + Γ amplifies by more than {ILL:.0e} on {} of {nl} lines ({}): {at}; {effect}. Remedy: raise λ, the operand \"tikhonov\" of this {op} step, or \"noise\"",
            bad.len(),
            lines_text(&bad, freqs)
        ),
        (None, None) => format!(
            "{what}: the interface matrix B Y Bᵀ + Γ is ill-conditioned on {} of {nl} lines ({}): 2-norm condition number above {ILL:.0e}, {at}; {effect}. Typical causes: more joints than the interface needs (an extended interface, or a DOF joined twice), a joint at a point that hardly moves. Remedy: regularise the inversion: a truncated SVD, which drops the singular values below a fraction of the largest (the operand \"tsvd\": <relative threshold>, for example 1e-6 to 1e-3, or \"noise\" for a threshold per line from the inputs' stated uncertainty, on this {op} step of the recipe, or --tsvd X on the one-line mortise couple), or Tikhonov's damped inverse (the operand \"tikhonov\": λ as a fraction of the largest singular value, or \"noise\")",
            bad.len(),
            lines_text(&bad, freqs)
        ),
    });
    out
}

/// "f1 Hz, f2 Hz, ..." (at most six).
fn lines_text(lines: &[usize], freqs: &[f64]) -> String {
    let mut s: Vec<String> = lines
        .iter()
        .take(6)
        .map(|&k| format!("{} Hz", freqs[k]))
        .collect();
    if lines.len() > 6 {
        s.push("...".into());
    }
    s.join(", ")
}

/// X = Z⁻¹ (B_u Y) by LU with partial pivoting of `scale` · Z, refused where
/// Z is numerically singular.
fn lu_solve(
    work: &mut SolveWork,
    scale: f64,
    cond: f64,
    tsvd: Option<f64>,
    freq: f64,
    cols: Columns,
) -> Result<()> {
    let m = work.m;
    let singular = || {
        let remedy = match tsvd {
            Some(t) => format!(
                "or raise the truncated-SVD threshold (now {t:e}) so that it drops the smallest singular values, for example \"tsvd\": 1e-6"
            ),
            None => "or regularise the inversion with a truncated SVD: the recipe operand \"tsvd\": <relative threshold> (for example 1e-6) on this step, or --tsvd 1e-6 on the one-line mortise couple".to_string(),
        };
        Error::numeric(format!(
            "the interface matrix B Y Bᵀ + Γ is singular at {freq} Hz (condition number {cond:.3e}); check the joints (a DOF joined twice, more joints than the interface needs, a rigid joint at a point that cannot move) {remedy}"
        ))
    };
    if cond.is_nan() || cond >= SINGULAR {
        return Err(singular());
    }
    let a = &mut work.lu;
    for (d, s) in a.iter_mut().zip(&work.z) {
        *d = *s * scale;
    }
    // Doolittle elimination, row-major; the multipliers replace the zeros
    for k in 0..m {
        let mut p = k;
        let mut best = -1.0;
        for i in k..m {
            let v = a[i * m + k];
            let n1 = v.re.abs() + v.im.abs();
            if n1 > best {
                best = n1;
                p = i;
            }
        }
        if best.is_nan() || best <= 0.0 {
            return Err(singular());
        }
        work.piv[k] = p;
        if p != k {
            for j in 0..m {
                a.swap(k * m + j, p * m + j);
            }
        }
        let d = a[k * m + k];
        for i in k + 1..m {
            let l = a[i * m + k] / d;
            a[i * m + k] = l;
            for j in k + 1..m {
                let u = a[k * m + j];
                a[i * m + j] -= l * u;
            }
        }
    }
    let Columns { br, bi, xr, xi, cp } = cols;
    // (scale · Z) X = scale · B_u Y: the same X; multiplying by a power of two is exact
    for (d, s) in xr[..m * cp].iter_mut().zip(&br[..m * cp]) {
        *d = *s * scale;
    }
    for (d, s) in xi[..m * cp].iter_mut().zip(&bi[..m * cp]) {
        *d = *s * scale;
    }
    for k in 0..m {
        let p = work.piv[k];
        if p != k {
            for j in 0..cp {
                xr.swap(k * cp + j, p * cp + j);
                xi.swap(k * cp + j, p * cp + j);
            }
        }
    }
    // row i −= f · row j, over the cp columns
    let axpy = |xr: &mut [f64], xi: &mut [f64], i: usize, j: usize, f: Complex64| {
        let (lr, hr) = xr.split_at_mut(i.max(j) * cp);
        let (li, hi) = xi.split_at_mut(i.max(j) * cp);
        let (dr, di, sr, si) = if i > j {
            (
                &mut hr[..cp],
                &mut hi[..cp],
                &lr[j * cp..(j + 1) * cp],
                &li[j * cp..(j + 1) * cp],
            )
        } else {
            (
                &mut lr[i * cp..(i + 1) * cp],
                &mut li[i * cp..(i + 1) * cp],
                &hr[..cp],
                &hi[..cp],
            )
        };
        for t in 0..cp {
            dr[t] -= f.re * sr[t] - f.im * si[t];
            di[t] -= f.re * si[t] + f.im * sr[t];
        }
    };
    // L y = P b (unit lower), then U x = y
    for i in 1..m {
        for j in 0..i {
            axpy(xr, xi, i, j, a[i * m + j]);
        }
    }
    for i in (0..m).rev() {
        for j in i + 1..m {
            axpy(xr, xi, i, j, a[i * m + j]);
        }
        let f = Complex64::new(1.0, 0.0) / a[i * m + i];
        for t in 0..cp {
            let (r, im) = (xr[i * cp + t], xi[i * cp + t]);
            xr[i * cp + t] = f.re * r - f.im * im;
            xi[i * cp + t] = f.re * im + f.im * r;
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::DMatrix;

    fn random(m: usize, seed: u64, size: f64) -> DMatrix<Complex64> {
        crate::linalg::svd::tests::random(m, m, seed) * Complex64::new(size, 0.0)
    }

    fn max_abs(a: &DMatrix<Complex64>) -> f64 {
        a.iter().map(|v| v.norm()).fold(0.0, f64::max)
    }

    /// Solve with the identity as right-hand side: X = Z⁻¹ or Z⁺.
    fn inverse(
        z: &DMatrix<Complex64>,
        tsvd: Option<f64>,
        w: &mut SolveWork,
    ) -> Result<(Inverted, DMatrix<Complex64>)> {
        let m = z.nrows();
        let cp = kernel::padded(m);
        let mut br = vec![0.0; m * cp];
        for i in 0..m {
            br[i * cp + i] = 1.0;
        }
        let bi = vec![0.0; m * cp];
        let (mut xr, mut xi) = (vec![0.0; m * cp], vec![0.0; m * cp]);
        for r in 0..m {
            for c in 0..m {
                w.z[r * m + c] = z[(r, c)];
            }
        }
        let mut buf = vec![0.0; 8 * cp];
        let cols = Columns {
            br: &br,
            bi: &bi,
            xr: &mut xr,
            xi: &mut xi,
            cp,
        };
        let rule = Rule::of_tsvd(tsvd);
        let conv = factor_lanes(
            std::slice::from_mut(w),
            rule != Rule::Plain,
            &mut LaneWork::new(m),
        );
        let r = solve(w, rule, 10.0, conv[0], cols, kernel::path(), &mut buf)?;
        let x = DMatrix::from_fn(m, m, |i, j| Complex64::new(xr[i * cp + j], xi[i * cp + j]));
        Ok((r, x))
    }

    // common practice: the page's one-matrix path and the native lanes
    // must give the same bits (the page and the CLI agree)
    #[test]
    fn one_matrix_at_a_time_gives_the_lanes_bits() {
        let m = 12;
        let mut lanes: Vec<SolveWork> = (0..5).map(|_| SolveWork::new(m)).collect();
        let mut ones: Vec<SolveWork> = (0..5).map(|_| SolveWork::new(m)).collect();
        for (l, (a, b)) in lanes.iter_mut().zip(ones.iter_mut()).enumerate() {
            let z = random(m, 40 + l as u64, 10f64.powi(l as i32 - 2));
            for r in 0..m {
                for c in 0..m {
                    a.z[r * m + c] = z[(r, c)];
                    b.z[r * m + c] = z[(r, c)];
                }
            }
        }
        let conv = factor_lanes(&mut lanes, true, &mut LaneWork::new(m));
        let bits = |x: &[Complex64]| -> Vec<(u64, u64)> {
            x.iter().map(|c| (c.re.to_bits(), c.im.to_bits())).collect()
        };
        for (l, (a, b)) in lanes.iter().zip(ones.iter_mut()).enumerate() {
            assert_eq!(conv[l], factor_one(b, true), "lane {l}");
            assert_eq!(a.scale, b.scale);
            assert_eq!(bits(&a.w), bits(&b.w), "W, lane {l}");
            assert_eq!(bits(&a.v), bits(&b.v), "V, lane {l}");
            let nb = |x: &[f64]| -> Vec<u64> { x.iter().map(|v| v.to_bits()).collect() };
            assert_eq!(nb(&a.norms), nb(&b.norms), "norms, lane {l}");
        }
    }

    #[test]
    fn pseudo_inverse_meets_the_moore_penrose_conditions() {
        // a rank-2 matrix of size 5 (Z = A Bᴴ with A, B 5 × 2): the
        // pseudo-inverse with a threshold keeps two values and satisfies
        // Z Z⁺ Z = Z, Z⁺ Z Z⁺ = Z⁺, (Z Z⁺)ᴴ = Z Z⁺, (Z⁺ Z)ᴴ = Z⁺ Z (the
        // definition of the Moore–Penrose inverse)
        let m = 5;
        let a = random(m, 1, 1e-6).columns(0, 2).into_owned();
        let b = random(m, 2, 1.0).columns(0, 2).into_owned();
        let z = &a * b.adjoint();
        let mut w = SolveWork::new(m);
        let (r, p) = inverse(&z, Some(1e-9), &mut w).unwrap();
        assert_eq!(r.dropped, 3);
        assert!(r.cond > 1e12, "{}", r.cond);
        assert!(r.kept_cond < 1e3, "{}", r.kept_cond);
        let zz = max_abs(&z);
        let pp = max_abs(&p);
        assert!(max_abs(&(&z * &p * &z - &z)) <= 1e-14 * zz);
        assert!(max_abs(&(&p * &z * &p - &p)) <= 1e-14 * pp);
        let zp = &z * &p;
        let pz = &p * &z;
        assert!(max_abs(&(zp.adjoint() - &zp)) <= 1e-14);
        assert!(max_abs(&(pz.adjoint() - &pz)) <= 1e-14);
    }

    #[test]
    fn without_truncation_the_lu_solve_is_used_bit_for_bit() {
        let m = 7;
        let z = random(m, 3, 2e-5);
        let mut w = SolveWork::new(m);
        let (a, plain) = inverse(&z, None, &mut w).unwrap();
        let (b, thr) = inverse(&z, Some(1e-12), &mut w).unwrap();
        assert_eq!(a, b);
        assert_eq!(b.dropped, 0);
        assert_eq!(plain, thr);
        // and it is the inverse: Z Z⁻¹ = I (definition)
        let e = max_abs(&(&z * &plain - DMatrix::identity(m, m)));
        assert!(e <= 1e-13 * a.cond, "{e:e}");
    }

    #[test]
    fn singular_values_of_a_known_factorisation() {
        // Z = Q diag(σ) Rᴴ with Q, R unitary (Householder QR of random
        // matrices): the singular values are σ by construction, 1 … 1e-10
        let m = 6;
        let q = random(m, 4, 1.0).qr().q();
        let r = random(m, 5, 1.0).qr().q();
        let sig: Vec<f64> = (0..m).map(|i| 10f64.powi(-2 * i as i32)).collect();
        let d = DMatrix::from_fn(m, m, |i, j| {
            Complex64::new(if i == j { sig[i] } else { 0.0 }, 0.0)
        });
        let z = &q * d * r.adjoint();
        let mut w = SolveWork::new(m);
        let (res, _) = inverse(&z, Some(0.0), &mut w).unwrap();
        // relative to σ_max the construction itself is exact to ~ m ε
        assert!((res.cond / 1e10 - 1.0).abs() <= 1e-5, "{}", res.cond);
        let mut got: Vec<f64> = w.norms.iter().map(|n| n.sqrt()).collect();
        got.sort_by(|a, b| b.total_cmp(a));
        let top = got[0];
        for (g, s) in got.iter().zip(&sig) {
            assert!((g / top - s).abs() <= 1e-14, "{g} {s}");
        }
    }

    #[test]
    fn a_singular_matrix_without_threshold_is_refused_with_the_remedy() {
        let m = 3;
        let a = random(m, 6, 1.0).columns(0, 1).into_owned();
        let z = &a * a.adjoint();
        let mut w = SolveWork::new(m);
        let e = inverse(&z, None, &mut w).unwrap_err();
        assert!(e.message.contains("singular at 10 Hz"), "{}", e.message);
        assert!(e.message.contains("\"tsvd\""), "{}", e.message);
        assert!(e.message.contains("--tsvd"), "{}", e.message);
    }

    #[test]
    fn warnings_name_the_worst_line_and_the_remedy() {
        let line = |cond: f64, dropped: usize, kept_cond: f64| Inverted {
            cond,
            dropped,
            kept_cond,
            damped: 0,
        };
        let freqs = [10.0, 20.0, 30.0];
        // well conditioned: nothing to say
        let ok = [line(5.0, 0, 5.0); 3];
        assert!(warnings("coupling", &ok, &freqs, None, None, 4).is_empty());
        // ill-conditioned without the option: worst value, its line, the remedy
        let ill = [line(5.0, 0, 5.0), line(3e12, 0, 3e12), line(2e11, 0, 2e11)];
        let w = warnings("coupling", &ill, &freqs, None, None, 4);
        assert_eq!(w.len(), 1);
        assert!(w[0].contains("on 2 of 3 lines (20 Hz, 30 Hz)"), "{}", w[0]);
        assert!(w[0].contains("worst 3.00e12 at 20 Hz"), "{}", w[0]);
        assert!(w[0].contains("\"tsvd\": <relative threshold>"), "{}", w[0]);
        assert!(w[0].contains("this couple step"), "{}", w[0]);
        assert!(w[0].contains("--tsvd X"), "{}", w[0]);
        // truncated well: the dropped lines and the kept rank, no ill-conditioning
        let cut = [line(3e12, 2, 40.0), line(3e13, 1, 9.0), line(7.0, 0, 7.0)];
        let w = warnings("decoupling", &cut, &freqs, Some(1e-6), None, 4);
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("on 2 of 3 lines (10 Hz, 20 Hz)"), "{}", w[0]);
        assert!(w[0].contains("rank 2 to 3 of 4 kept"), "{}", w[0]);
        // truncated too little: the kept part is still ill-conditioned
        let weak = [line(3e14, 1, 2e12), line(4.0, 0, 4.0), line(4.0, 0, 4.0)];
        let w = warnings("decoupling", &weak, &freqs, Some(1e-13), None, 4);
        assert_eq!(w.len(), 2, "{w:?}");
        assert!(w[1].contains("even with the truncated SVD"), "{}", w[1]);
        assert!(w[1].contains("worst 2.00e12 at 10 Hz"), "{}", w[1]);
        assert!(w[1].contains("raise the threshold"), "{}", w[1]);
        assert!(w[1].contains("this decouple step"), "{}", w[1]);
    }
}
