//! Poles over a range of model orders: the poly-reference least-squares
//! complex-frequency-domain estimator (Guillaume, Verboven, Vanlanduit, Van
//! der Auweraer, Peeters, 2003), a right matrix-fraction model with a
//! common denominator in the z-domain, solved through its reduced normal
//! equations.
//!
//! For each output o (a row over the m references) the model is
//! H_o(ω) ≈ B_o(z) A(z)⁻¹ with z = e^{+iωΔt}, Δt = 1/(2 f_hi),
//! B_o(z) = Σ_j z^j β_oj (1 × m) and A(z) = Σ_j z^j α_j (m × m), real
//! coefficients, α_p = I. The linearised error W_o (B_o − H_o A) is
//! minimised in least squares; the β_o are eliminated output by output,
//! leaving one (p+1)m square system for α (the reduced normal equations).
//!
//! The poles are the roots of det A(z): the eigenvalues of the block
//! companion matrix of A(z)ᵀ. The conversion to the library's e^{+iωt}
//! poles is [`z_to_s`], the one place it is done: s = ln(z)/Δt, so that
//! a pole s = −ζω_n + iω_n√(1 − ζ²) of a receptance term 1/(iω − s)
//! appears at z = e^{sΔt}, inside the unit circle for ζ > 0. The
//! participation vector of a pole is the null vector of A(z)ᵀ (A(z)
//! multiplies the data from the right, so the inputs' factors of the
//! residue are its left null vector).

use crate::error::{Error, Result};
use crate::limits::Limits;
use nalgebra::DMatrix;
use num_complex::Complex64;
use std::f64::consts::PI;

/// One pole found at one order, e^{+iωt} (Im s > 0).
#[derive(Debug, Clone, PartialEq)]
pub struct Pole {
    pub s: Complex64,
    /// The participation vector over the references (unit norm).
    pub participation: Vec<Complex64>,
}

/// The poles of one model order.
#[derive(Debug, Clone, PartialEq)]
pub struct OrderPoles {
    pub order: usize,
    pub poles: Vec<Pole>,
    /// Why the order gave no poles, if it did not.
    pub note: Option<String>,
}

/// The data the estimator reads: the band's lines and, per output used,
/// its values over the references (line-major: `rows[o][k * m + i]`),
/// all receptance.
pub struct LscfInput<'a> {
    pub freqs: &'a [f64],
    pub rows: &'a [Vec<Complex64>],
    pub n_ref: usize,
    /// The upper edge of the band (sets Δt = 1/(2 f_hi)).
    pub f_hi: f64,
}

/// z = e^{iωΔt} → s = ln(z)/Δt (e^{+iωt}). The one place the z-domain
/// variable is converted.
pub fn z_to_s(z: Complex64, dt: f64) -> Complex64 {
    Complex64::new(z.norm().ln(), z.arg()) / dt
}

/// Undamped natural frequency (Hz) and damping ratio of a pole.
pub fn freq_zeta(s: Complex64) -> (f64, f64) {
    let wn = s.norm();
    (wn / (2.0 * PI), -s.re / wn)
}

/// The pole of an undamped natural frequency (Hz) and damping ratio.
pub fn pole_of(freq: f64, zeta: f64) -> Complex64 {
    let wn = 2.0 * PI * freq;
    Complex64::new(-zeta * wn, wn * (1.0 - zeta * zeta).max(0.0).sqrt())
}

/// Estimated floating-point operations of [`poles_over_orders`].
pub fn work(n_lines: usize, n_out: usize, n_ref: usize, max_order: usize) -> f64 {
    let (nl, no, m, p) = (n_lines as f64, n_out as f64, n_ref as f64, max_order as f64);
    let moments = 8.0 * nl * (2.0 * p + 1.0) * (m + m * m) * no;
    let mut orders = 0.0;
    for q in 1..=max_order {
        let n = q as f64 + 1.0;
        let nm = n * m;
        let pm = q as f64 * m;
        orders += no * (n * n * n / 3.0 + 2.0 * n * n * nm + 2.0 * nm * nm * n)
            + pm * pm * pm
            + 30.0 * pm * pm * pm;
    }
    moments + orders
}

/// Smallest number of lines for an order: the reduced system must be
/// over-determined (2·lines·outputs·m real equations for
/// (p+1)(m·outputs + m²) unknowns) and the line matrix of order p regular.
pub fn min_lines(n_out: usize, n_ref: usize, order: usize) -> usize {
    let unknowns = (order + 1) * (n_ref * n_out + n_ref * n_ref);
    let per_line = 2 * n_out * n_ref;
    (unknowns.div_ceil(per_line.max(1))).max(order + 1)
}

/// The poles at every order 1..=max_order.
pub fn poles_over_orders(
    input: &LscfInput,
    max_order: usize,
    limits: &Limits,
) -> Result<Vec<OrderPoles>> {
    let (nl, m, no) = (input.freqs.len(), input.n_ref, input.rows.len());
    if m == 0 || no == 0 {
        return Err(Error::missing(
            "no output has every reference entry present; the pole estimate needs at least one",
        ));
    }
    let need = min_lines(no, m, max_order);
    if nl < need {
        return Err(Error::numeric(format!(
            "the band holds {nl} lines; max_order {max_order} with {m} reference(s) and {no} output(s) needs at least {need}"
        ))
        .field("max_order"));
    }
    limits.check_work(
        &format!(
            "the pole estimate ({nl} lines, {no} outputs, {m} references, orders 1 to {max_order})"
        ),
        work(nl, no, m, max_order),
    )?;
    let dt = 1.0 / (2.0 * input.f_hi);
    let p = max_order;
    let lags = 2 * p + 1; // d = −p..=p at index d + p
                          // z_k^d for d = 0..=p
    let theta: Vec<f64> = input.freqs.iter().map(|f| 2.0 * PI * f * dt).collect();
    // R0(d) = Σ cos(dθ)
    let r0: Vec<f64> = (0..=p)
        .map(|d| theta.iter().map(|t| (d as f64 * t).cos()).sum())
        .collect();
    // per output: weight², s_i(d), t_ii'(d)
    struct Mom {
        w2: f64,
        s: Vec<Complex64>, // [lag][i]
        t: Vec<Complex64>, // [lag][i][i']
    }
    let mut moms = Vec::with_capacity(no);
    for row in input.rows {
        let ms: f64 = row.iter().map(|v| v.norm_sqr()).sum::<f64>() / row.len().max(1) as f64;
        if !(ms.is_finite() && ms > 0.0) {
            return Err(Error::numeric(
                "an output's FRFs are zero in the band; it carries no information on the poles",
            ));
        }
        let mut s = vec![Complex64::new(0.0, 0.0); lags * m];
        let mut t = vec![Complex64::new(0.0, 0.0); lags * m * m];
        for (k, th) in theta.iter().enumerate() {
            let h = &row[k * m..(k + 1) * m];
            for d in 0..=p {
                let z = Complex64::from_polar(1.0, d as f64 * th);
                for i in 0..m {
                    s[(p + d) * m + i] += z * h[i];
                    if d > 0 {
                        s[(p - d) * m + i] += z.conj() * h[i];
                    }
                    for i2 in 0..m {
                        let c = h[i].conj() * h[i2];
                        t[((p + d) * m + i) * m + i2] += z * c;
                        if d > 0 {
                            t[((p - d) * m + i) * m + i2] += z.conj() * c;
                        }
                    }
                }
            }
        }
        moms.push(Mom { w2: 1.0 / ms, s, t });
    }
    let mut out = Vec::with_capacity(max_order);
    for q in 1..=max_order {
        let n = q + 1;
        let r = DMatrix::from_fn(n, n, |j, k| r0[j.abs_diff(k)]);
        let Some(chol) = r.cholesky() else {
            out.push(OrderPoles {
                order: q,
                poles: Vec::new(),
                note: Some("the line matrix is not positive definite at this order".into()),
            });
            continue;
        };
        let nm = n * m;
        let mut big = DMatrix::<f64>::zeros(nm, nm);
        for mo in &moms {
            // lag k − j at index (k − j) + p
            let sp = DMatrix::from_fn(n, nm, |j, c| {
                let (k, i) = (c / m, c % m);
                -mo.s[(k + p - j) * m + i].re
            });
            let x = chol.solve(&sp);
            let tp = DMatrix::from_fn(nm, nm, |a, b| {
                let (j, i) = (a / m, a % m);
                let (k, i2) = (b / m, b % m);
                mo.t[((k + p - j) * m + i) * m + i2].re
            });
            big += (tp - sp.transpose() * x) * mo.w2;
        }
        let pm = q * m;
        let maa = big.view((0, 0), (pm, pm)).into_owned();
        let mab = big.view((0, pm), (pm, m)).into_owned();
        let Some(alpha) = maa.lu().solve(&(-mab)) else {
            out.push(OrderPoles {
                order: q,
                poles: Vec::new(),
                note: Some("the reduced normal matrix is singular at this order".into()),
            });
            continue;
        };
        if alpha.iter().any(|v| !v.is_finite()) {
            out.push(OrderPoles {
                order: q,
                poles: Vec::new(),
                note: Some("the reduced normal equations gave non-finite coefficients".into()),
            });
            continue;
        }
        // α_j is alpha rows j*m..(j+1)*m (m × m); α_q = I.
        // companion of A(z)ᵀ = Σ z^j α_jᵀ: first block row −α_{q−1}ᵀ … −α_0ᵀ
        let mut comp = DMatrix::<f64>::zeros(pm, pm);
        for c in 0..q {
            let j = q - 1 - c;
            for a in 0..m {
                for b in 0..m {
                    comp[(a, c * m + b)] = -alpha[(j * m + b, a)];
                }
            }
        }
        for blk in 1..q {
            for a in 0..m {
                comp[(blk * m + a, (blk - 1) * m + a)] = 1.0;
            }
        }
        let eig = eigenvalues(comp);
        let Some(zs) = eig else {
            out.push(OrderPoles {
                order: q,
                poles: Vec::new(),
                note: Some("the eigenvalue iteration did not converge at this order".into()),
            });
            continue;
        };
        let mut poles = Vec::new();
        for z in zs {
            if !(z.norm() > 0.0 && z.im > 0.0) {
                continue;
            }
            let s = z_to_s(z, dt);
            let participation = if m == 1 {
                vec![Complex64::new(1.0, 0.0)]
            } else {
                let mut a = vec![Complex64::new(0.0, 0.0); m * m];
                let mut zj = Complex64::new(1.0, 0.0);
                for j in 0..=q {
                    for x in 0..m {
                        for y in 0..m {
                            // A(z)ᵀ[x][y] = Σ z^j α_j[y][x]
                            let v = if j == q {
                                if x == y {
                                    1.0
                                } else {
                                    0.0
                                }
                            } else {
                                alpha[(j * m + y, x)]
                            };
                            a[x * m + y] += zj * v;
                        }
                    }
                    zj *= z;
                }
                match crate::linalg::svd::Svd::new(&a, m, m) {
                    Ok(svd) => svd.v(m - 1).to_vec(),
                    Err(_) => continue,
                }
            };
            poles.push(Pole { s, participation });
        }
        poles.sort_by(|a, b| a.s.im.total_cmp(&b.s.im));
        out.push(OrderPoles {
            order: q,
            poles,
            note: None,
        });
    }
    Ok(out)
}

/// Eigenvalues of a real square matrix (nalgebra's real Schur form; see
/// DEVELOPERS.md: checked against numpy in `tests/identify_modes.rs`).
/// `None` when the iteration does not converge.
pub fn eigenvalues(a: DMatrix<f64>) -> Option<Vec<Complex64>> {
    let n = a.nrows();
    if n == 0 || a.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let schur = nalgebra::Schur::try_new(a, f64::EPSILON, 1000 * n.max(10))?;
    let ev = schur.complex_eigenvalues();
    Some(ev.iter().map(|c| Complex64::new(c.re, c.im)).collect())
}

/// Eigenvalues of a real `n × n` row-major matrix (for the cross-check
/// with numpy).
pub fn eigenvalues_row_major(a: &[f64], n: usize) -> Result<Vec<Complex64>> {
    if a.len() != n * n {
        return Err(Error::numeric(format!(
            "{} values for a {n} × {n} matrix",
            a.len()
        )));
    }
    eigenvalues(DMatrix::from_row_slice(n, n, a))
        .ok_or_else(|| Error::numeric("the eigenvalue iteration did not converge"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_mode_single_reference_is_found() {
        // one receptance term plus its conjugate: the estimator's pole at
        // order 2 (partial fractions; the paper's model holds it closely)
        let s0 = pole_of(50.0, 0.02);
        let freqs: Vec<f64> = (0..400).map(|k| 20.0 + k as f64 * 0.2).collect();
        let r = Complex64::new(0.0, -1e-3);
        let row: Vec<Complex64> = freqs
            .iter()
            .map(|f| {
                let iw = Complex64::new(0.0, 2.0 * PI * f);
                r / (iw - s0) + r.conj() / (iw - s0.conj())
            })
            .collect();
        let rows = vec![row];
        let inp = LscfInput {
            freqs: &freqs,
            rows: &rows,
            n_ref: 1,
            f_hi: 100.0,
        };
        let orders = poles_over_orders(&inp, 8, &Limits::default()).unwrap();
        let best = orders[7]
            .poles
            .iter()
            .map(|p| freq_zeta(p.s))
            .min_by(|a, b| (a.0 - 50.0).abs().total_cmp(&(b.0 - 50.0).abs()))
            .unwrap();
        assert!((best.0 - 50.0).abs() < 1e-3 * 50.0, "{best:?}");
        assert!((best.1 - 0.02).abs() < 0.05 * 0.02, "{best:?}");
        let (f, z) = freq_zeta(z_to_s((s0 * (1.0 / 200.0)).exp(), 1.0 / 200.0));
        assert!((f - 50.0).abs() < 1e-12 && (z - 0.02).abs() < 1e-14);
    }

    #[test]
    fn too_few_lines_is_refused() {
        let freqs = [10.0, 11.0, 12.0];
        let rows = vec![vec![Complex64::new(1.0, 0.0); 3]];
        let inp = LscfInput {
            freqs: &freqs,
            rows: &rows,
            n_ref: 1,
            f_hi: 12.0,
        };
        let e = poles_over_orders(&inp, 10, &Limits::default()).unwrap_err();
        assert!(e.message.contains("needs at least"), "{e}");
        assert_eq!(e.field.as_deref(), Some("max_order"));
    }
}
