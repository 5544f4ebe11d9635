//! Residues and residual terms with the poles fixed (the frequency-domain
//! least-squares step), an optional refinement of the poles, and the
//! scaling of the residues into mode shapes.
//!
//! Each entry e (output, input) is modelled, in receptance and e^{+iωt}, as
//!
//! H_e(ω) = Σ_r [R_er/(iω − s_r) + R̄_er/(iω − s̄_r)] + UR_e − LR_e/ω²
//!
//! with complex residues R_er and real residual terms: UR_e (upper, the
//! modes above the band, a residual flexibility 1/K) and LR_e (lower, the
//! modes below it, an inverse residual mass 1/M). With the poles fixed
//! the model is linear in its 2n + 2 real coefficients; every entry shares
//! the one basis, so one QR factorisation serves them all.
//!
//! The refinement adjusts the poles (σ_r, ω_d,r of s_r = σ_r + iω_d,r) to
//! minimise the same weighted error summed over the entries, with the
//! linear coefficients eliminated (separable least squares, Gauss–Newton
//! with Levenberg–Marquardt damping; the Kaufman form of the Jacobian).

use crate::error::{Error, Result};
use nalgebra::{DMatrix, DVector};
use num_complex::Complex64;
use std::f64::consts::PI;

/// The fitted coefficients of one entry.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct EntryFit {
    /// R_er for each pole, as [re, im] (receptance, m/N/s... per pole).
    pub residues: Vec<Complex64>,
    /// UR_e (m/N): 1/K of a residual stiffness.
    pub upper: f64,
    /// LR_e (1/kg): 1/M of a residual mass.
    pub lower: f64,
}

/// What the refinement did.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Refinement {
    pub iterations: usize,
    /// Weighted error (sum of squares over every entry) before and after.
    pub cost_before: f64,
    pub cost_after: f64,
    /// Why it stopped, or why its result was not kept.
    pub stop: String,
    pub kept: bool,
}

/// The complex basis value of column c at angular frequency w.
fn basis(poles: &[Complex64], w: f64, c: usize) -> Complex64 {
    let n = poles.len();
    let iw = Complex64::new(0.0, w);
    let i = Complex64::new(0.0, 1.0);
    if c < 2 * n {
        let s = poles[c / 2];
        let (g, gc) = (1.0 / (iw - s), 1.0 / (iw - s.conj()));
        if c % 2 == 0 {
            g + gc
        } else {
            i * g - i * gc
        }
    } else if c == 2 * n {
        Complex64::new(1.0, 0.0)
    } else {
        Complex64::new(-1.0 / (w * w), 0.0)
    }
}

/// One QR of the column-scaled real basis.
struct Fit {
    q: DMatrix<f64>,
    r: DMatrix<f64>,
    scale: Vec<f64>,
}

fn factor(omegas: &[f64], poles: &[Complex64]) -> Result<Fit> {
    let np = 2 * poles.len() + 2;
    let nl = omegas.len();
    if 2 * nl < np {
        return Err(Error::numeric(format!(
            "{nl} lines cannot fit {} poles with residual terms ({np} real coefficients per FRF); widen the band or pick fewer poles",
            poles.len()
        )));
    }
    let mut a = DMatrix::<f64>::zeros(2 * nl, np);
    for (k, &w) in omegas.iter().enumerate() {
        for c in 0..np {
            let v = basis(poles, w, c);
            a[(2 * k, c)] = v.re;
            a[(2 * k + 1, c)] = v.im;
        }
    }
    let mut scale = vec![1.0; np];
    for (c, sc) in scale.iter_mut().enumerate() {
        let nrm = a.column(c).norm();
        if !(nrm.is_finite() && nrm > 0.0) {
            return Err(Error::numeric(
                "a basis function of the fit is zero or not finite",
            ));
        }
        *sc = nrm;
        a.column_mut(c).scale_mut(1.0 / nrm);
    }
    let qr = a.qr();
    let (q, r) = (qr.q(), qr.r());
    // a regular R: distinct poles, a band with room for them
    let d: Vec<f64> = (0..np).map(|c| r[(c, c)].abs()).collect();
    let big = d.iter().cloned().fold(0.0, f64::max);
    if d.iter().any(|&x| x.is_nan() || x <= 1e-13 * big) {
        return Err(Error::numeric(
            "the poles' basis functions are linearly dependent on these lines (two poles too close, or a pole far outside the band)",
        ));
    }
    Ok(Fit { q, r, scale })
}

impl Fit {
    /// The unscaled coefficients of one entry's real data vector.
    fn coef(&self, y: &DVector<f64>) -> Result<Vec<f64>> {
        let qty = self.q.transpose() * y;
        let c = self
            .r
            .solve_upper_triangular(&qty)
            .ok_or_else(|| Error::numeric("the fit's triangular factor is singular"))?;
        Ok(c.iter().zip(&self.scale).map(|(v, s)| v / s).collect())
    }
    /// (I − QQᵀ) v
    fn project_out(&self, v: &DVector<f64>) -> DVector<f64> {
        v - &self.q * (self.q.transpose() * v)
    }
}

fn real_vec(h: &[Complex64]) -> DVector<f64> {
    DVector::from_iterator(2 * h.len(), h.iter().flat_map(|v| [v.re, v.im]))
}

fn to_fit(c: &[f64], n: usize) -> EntryFit {
    EntryFit {
        residues: (0..n)
            .map(|r| Complex64::new(c[2 * r], c[2 * r + 1]))
            .collect(),
        upper: c[2 * n],
        lower: c[2 * n + 1],
    }
}

/// The model value of one entry at angular frequency w.
pub fn entry_value(poles: &[Complex64], fit: &EntryFit, w: f64) -> Complex64 {
    let iw = Complex64::new(0.0, w);
    let mut h = Complex64::new(fit.upper - fit.lower / (w * w), 0.0);
    for (s, r) in poles.iter().zip(&fit.residues) {
        h += r / (iw - s) + r.conj() / (iw - s.conj());
    }
    h
}

/// Estimated operations of [`fit_fixed`] and of one refinement iteration.
pub fn work(n_lines: usize, n_entries: usize, n_poles: usize, iterations: usize) -> f64 {
    let (nl, ne, np) = (n_lines as f64, n_entries as f64, 2.0 * n_poles as f64 + 2.0);
    let qr = 4.0 * 2.0 * nl * np * np;
    let per_iter = qr + ne * (2.0 * n_poles as f64 + 1.0) * 8.0 * nl * np;
    per_iter * (iterations as f64 + 1.0)
}

/// The coefficients of every entry with the poles fixed. `entries[e]` holds
/// the entry's values on `freqs` (receptance).
pub fn fit_fixed(
    freqs: &[f64],
    entries: &[Vec<Complex64>],
    poles: &[Complex64],
) -> Result<Vec<EntryFit>> {
    let omegas: Vec<f64> = freqs.iter().map(|f| 2.0 * PI * f).collect();
    let fit = factor(&omegas, poles)?;
    entries
        .iter()
        .map(|h| Ok(to_fit(&fit.coef(&real_vec(h))?, poles.len())))
        .collect()
}

/// Gauss–Newton normal equations: JᵀJ and Jᵀr.
type Normal = (DMatrix<f64>, DVector<f64>);

/// The weighted cost and, with `jac`, the Gauss–Newton normal equations.
fn evaluate(
    omegas: &[f64],
    entries: &[Vec<Complex64>],
    weights: &[f64],
    poles: &[Complex64],
    jac: bool,
) -> Result<(f64, Option<Normal>)> {
    let fit = factor(omegas, poles)?;
    let n = poles.len();
    let np = 2 * n;
    let mut cost = 0.0;
    let mut g = DMatrix::<f64>::zeros(np, np);
    let mut b = DVector::<f64>::zeros(np);
    for (h, &w) in entries.iter().zip(weights) {
        let y = real_vec(h);
        let res = fit.project_out(&y) * w;
        cost += res.norm_squared();
        if !jac {
            continue;
        }
        let c = to_fit(&fit.coef(&y)?, n);
        // derivative columns of the model w.r.t. σ_r and ω_d,r, projected
        let mut cols = Vec::with_capacity(np);
        for (r, &s) in poles.iter().enumerate() {
            let rr = c.residues[r];
            let i = Complex64::new(0.0, 1.0);
            let mut ds = DVector::<f64>::zeros(2 * omegas.len());
            let mut dw = DVector::<f64>::zeros(2 * omegas.len());
            for (k, &om) in omegas.iter().enumerate() {
                let iw = Complex64::new(0.0, om);
                let (g1, g2) = (
                    1.0 / ((iw - s) * (iw - s)),
                    1.0 / ((iw - s.conj()) * (iw - s.conj())),
                );
                let vs = rr * g1 + rr.conj() * g2;
                let vw = i * rr * g1 - i * rr.conj() * g2;
                ds[2 * k] = vs.re;
                ds[2 * k + 1] = vs.im;
                dw[2 * k] = vw.re;
                dw[2 * k + 1] = vw.im;
            }
            // residual = w (I − P)(y − A c): its derivative is −w (I − P) ∂A c
            cols.push(fit.project_out(&ds) * (-w));
            cols.push(fit.project_out(&dw) * (-w));
        }
        for a in 0..np {
            b[a] += cols[a].dot(&res);
            for bb in a..np {
                let v = cols[a].dot(&cols[bb]);
                g[(a, bb)] += v;
                if a != bb {
                    g[(bb, a)] += v;
                }
            }
        }
    }
    Ok((cost, jac.then_some((g, b))))
}

/// Refine the poles. Poles stay in the band with positive damping, else the
/// starting poles are kept (and the report says why).
pub fn refine(
    freqs: &[f64],
    entries: &[Vec<Complex64>],
    weights: &[f64],
    start: &[Complex64],
    max_iter: usize,
) -> Result<(Vec<Complex64>, Refinement)> {
    let omegas: Vec<f64> = freqs.iter().map(|f| 2.0 * PI * f).collect();
    let (w_lo, w_hi) = (omegas[0], omegas[omegas.len() - 1]);
    let (c0, _) = evaluate(&omegas, entries, weights, start, false)?;
    let mut poles = start.to_vec();
    let mut cost = c0;
    let mut lambda = 1e-3;
    let mut it = 0;
    let mut stop = format!("{max_iter} iterations reached");
    let mut done = false;
    while it < max_iter {
        it += 1;
        let (_, Some((g, b))) = evaluate(&omegas, entries, weights, &poles, true)? else {
            break;
        };
        let mut accepted = false;
        for _ in 0..12 {
            let mut a = g.clone();
            for d in 0..a.nrows() {
                a[(d, d)] += lambda * g[(d, d)].max(1e-300);
            }
            let Some(step) = a.lu().solve(&(-&b)) else {
                lambda *= 10.0;
                continue;
            };
            let trial: Vec<Complex64> = poles
                .iter()
                .enumerate()
                .map(|(r, s)| Complex64::new(s.re + step[2 * r], s.im + step[2 * r + 1]))
                .collect();
            let inside = trial
                .iter()
                .all(|s| s.re < 0.0 && s.im > 0.5 * w_lo && s.im < 1.5 * w_hi);
            let tc = if inside {
                evaluate(&omegas, entries, weights, &trial, false)
                    .map(|x| x.0)
                    .unwrap_or(f64::INFINITY)
            } else {
                f64::INFINITY
            };
            if tc < cost {
                let rel = (cost - tc) / cost.max(f64::MIN_POSITIVE);
                let small = (0..poles.len()).all(|r| {
                    Complex64::new(step[2 * r], step[2 * r + 1]).norm() <= 1e-13 * poles[r].norm()
                });
                poles = trial;
                cost = tc;
                lambda = (lambda / 3.0).max(1e-12);
                accepted = true;
                if rel < 1e-13 || small {
                    stop = "converged (relative change below 1e-13)".into();
                    done = true;
                }
                break;
            }
            lambda *= 4.0;
        }
        if !accepted {
            stop = "converged (no step lowers the error)".into();
            break;
        }
        if done {
            break;
        }
    }
    let iterations = it;
    Ok((
        poles,
        Refinement {
            iterations,
            cost_before: c0,
            cost_after: cost,
            stop,
            kept: true,
        },
    ))
}

/// The best rank-one product R ≈ a bᵀ (unconjugated) of a residue matrix
/// (rows outputs, columns inputs) over its present entries, by alternating
/// least squares. `None` where nothing is present.
pub fn rank_one(
    r: &[Option<Complex64>],
    n_out: usize,
    n_in: usize,
) -> Option<(Vec<Complex64>, Vec<Complex64>)> {
    let zero = Complex64::new(0.0, 0.0);
    // start: the input column with the largest present norm
    let col = (0..n_in).max_by(|&x, &y| {
        let nx: f64 = (0..n_out)
            .filter_map(|o| r[o * n_in + x])
            .map(|v| v.norm_sqr())
            .sum();
        let ny: f64 = (0..n_out)
            .filter_map(|o| r[o * n_in + y])
            .map(|v| v.norm_sqr())
            .sum();
        nx.total_cmp(&ny)
    })?;
    let mut a: Vec<Complex64> = (0..n_out)
        .map(|o| r[o * n_in + col].unwrap_or(zero))
        .collect();
    let mut b = vec![zero; n_in];
    for _ in 0..500 {
        let prev = b.clone();
        for (i, bi) in b.iter_mut().enumerate() {
            let (mut num, mut den) = (zero, 0.0);
            for (o, ao) in a.iter().enumerate() {
                if let Some(v) = r[o * n_in + i] {
                    num += v * ao.conj();
                    den += ao.norm_sqr();
                }
            }
            *bi = if den > 0.0 { num / den } else { zero };
        }
        for (o, ao) in a.iter_mut().enumerate() {
            let (mut num, mut den) = (zero, 0.0);
            for (i, bi) in b.iter().enumerate() {
                if let Some(v) = r[o * n_in + i] {
                    num += v * bi.conj();
                    den += bi.norm_sqr();
                }
            }
            *ao = if den > 0.0 { num / den } else { zero };
        }
        let change: f64 = b.iter().zip(&prev).map(|(x, y)| (x - y).norm_sqr()).sum();
        let size: f64 = b.iter().map(|x| x.norm_sqr()).sum();
        if change <= 1e-30 * size {
            break;
        }
    }
    let na: f64 = a.iter().map(|x| x.norm_sqr()).sum();
    (na > 0.0 && na.is_finite()).then_some((a, b))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn synth(poles: &[Complex64], fits: &[EntryFit], freqs: &[f64]) -> Vec<Vec<Complex64>> {
        fits.iter()
            .map(|f| {
                freqs
                    .iter()
                    .map(|&x| entry_value(poles, f, 2.0 * PI * x))
                    .collect()
            })
            .collect()
    }

    #[test]
    fn fixed_poles_recover_residues_and_refinement_recovers_poles() {
        let poles = vec![
            crate::identify::lscf::pole_of(30.0, 0.02),
            crate::identify::lscf::pole_of(31.0, 0.01),
        ];
        let truth = vec![
            EntryFit {
                residues: vec![Complex64::new(0.1, -2.0), Complex64::new(-0.3, 1.0)],
                upper: 1e-4,
                lower: 50.0,
            },
            EntryFit {
                residues: vec![Complex64::new(0.0, -1.0), Complex64::new(0.2, -0.5)],
                upper: -2e-4,
                lower: 0.0,
            },
        ];
        let freqs: Vec<f64> = (0..300).map(|k| 20.0 + k as f64 * 0.07).collect();
        let h = synth(&poles, &truth, &freqs);
        let got = fit_fixed(&freqs, &h, &poles).unwrap();
        for (g, t) in got.iter().zip(&truth) {
            for (a, b) in g.residues.iter().zip(&t.residues) {
                assert!((a - b).norm() < 1e-8 * b.norm(), "{a} {b}");
            }
            assert!((g.upper - t.upper).abs() < 1e-9);
            assert!((g.lower - t.lower).abs() < 1e-6 * 50.0);
        }
        let start = vec![poles[0] * Complex64::new(1.002, 0.001), poles[1] * 0.999];
        let (p, rep) = refine(&freqs, &h, &[1.0, 1.0], &start, 60).unwrap();
        for (a, b) in p.iter().zip(&poles) {
            assert!((a - b).norm() < 1e-9 * b.norm(), "{a} {b} {rep:?}");
        }
        assert!(rep.cost_after < 1e-20 * rep.cost_before.max(1e-300) || rep.cost_after < 1e-25);
    }

    #[test]
    fn rank_one_of_an_outer_product_with_a_gap() {
        let a = [
            Complex64::new(1.0, 0.5),
            Complex64::new(-0.2, 0.1),
            Complex64::new(0.3, 0.0),
        ];
        let b = [Complex64::new(0.7, -0.1), Complex64::new(2.0, 1.0)];
        let mut r: Vec<Option<Complex64>> = Vec::new();
        for x in &a {
            for y in &b {
                r.push(Some(x * y));
            }
        }
        r[5] = None;
        let (ga, gb) = rank_one(&r, 3, 2).unwrap();
        for o in 0..3 {
            for i in 0..2 {
                assert!((ga[o] * gb[i] - a[o] * b[i]).norm() < 1e-12);
            }
        }
    }
}
