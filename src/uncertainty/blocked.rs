//! First-order uncertainty of blocked forces and of the responses predicted
//! from them (validation indicators, targets).
//!
//! Per line the forces are f = P y with P the pseudo-inverse the solve
//! applied ([`crate::predict::blocked`]). For small errors δy of the
//! responses and δH of the FRFs' indicator rows,
//! δf = P (δy − δH f) (linearization of the least-squares solution for a
//! full-column-rank H on consistent data; the term (HᴴH)⁻¹ δHᴴ r of the
//! residual r = y − H f is left out, it is of second order when r is itself
//! of the size of the noise; Golub & Van Loan, Matrix Computations, 4th ed.,
//! §5.3.7). With independent circular errors (see [`super::model`]):
//!
//! * u_f,j² = Σ_i |P_ji|² (u_y,i² + Σ_c |f_c|² u_H,ic²);
//! * a prediction ŷ = h f at a row h of the FRFs left out of the inversion:
//!   δŷ = g (δy − δH f) + δh f with g = h P, so
//!   u_ŷ² = Σ_i |g_i|² (u_y,i² + Σ_c |f_c|² u_H,ic²) + Σ_c |f_c|² u_h,c²
//!   (the forces' errors are correlated; going through g keeps that).

use super::model::FrfUncertainty;
use crate::error::Result;
use crate::frf::FrfSet;
use crate::predict::blocked::{BlockedForces, Row};

/// The first-order uncertainties of a blocked-force solve.
#[derive(Debug, Clone, PartialEq)]
pub struct BlockedFirstOrder {
    /// Of the forces (the layout of `BlockedForces::forces`).
    pub forces: FrfUncertainty,
    /// Of the validation predictions (layout of `Validation::predicted`).
    pub validation: Option<Vec<f64>>,
    /// Of the target predictions (layout of `TargetPrediction::predicted`).
    pub target: Option<Vec<f64>>,
}

/// Propagate the uncertainties of the FRFs (`u_frf`) and of the operational
/// responses (`u_op`) through the solve `b` made from `frf` and `operational`.
pub fn blocked_first_order(
    frf: &FrfSet,
    u_frf: Option<&FrfUncertainty>,
    operational: &FrfSet,
    u_op: Option<&FrfUncertainty>,
    b: &BlockedForces,
) -> Result<BlockedFirstOrder> {
    if let Some(u) = u_frf {
        u.check_fits(frf)?;
    }
    if let Some(u) = u_op {
        u.check_fits(operational)?;
    }
    let uh = |k: usize, i: usize, c: usize| u_frf.map_or(0.0, |u| u.std[frf.idx(k, i, c)]);
    let uy = |k: usize, r: usize| u_op.map_or(0.0, |u| u.std[operational.idx(k, r, 0)]);
    let (nl, nf, nu) = (frf.n_lines(), frf.n_in(), b.rows.len());
    let mut uf = vec![0.0; nl * nf];
    let mut uv = vec![0.0; nl * b.validation_rows.len()];
    let mut ut = vec![0.0; nl * b.target_rows.len()];
    // the variance of each used indicator's equation error δy − δH f
    let mut e2 = vec![0.0; nu];
    for k in 0..nl {
        let f: Vec<_> = (0..nf).map(|c| b.forces.get(k, c, 0)).collect();
        let p = &b.inverse[k * nf * nu..(k + 1) * nf * nu];
        for (i, r) in b.rows.iter().enumerate() {
            let y = r.op.map_or(0.0, |(o, _)| uy(k, o));
            e2[i] = y * y
                + (0..nf)
                    .map(|c| f[c].norm_sqr() * uh(k, r.frf, c).powi(2))
                    .sum::<f64>();
        }
        for j in 0..nf {
            let v: f64 = (0..nu).map(|i| p[j * nu + i].norm_sqr() * e2[i]).sum();
            uf[k * nf + j] = v.sqrt();
        }
        let pred = |rows: &[Row], out: &mut Vec<f64>| {
            for (t, r) in rows.iter().enumerate() {
                let mut v = 0.0;
                for (i, e) in e2.iter().enumerate() {
                    let g: num_complex::Complex64 =
                        (0..nf).map(|c| frf.get(k, r.frf, c) * p[c * nu + i]).sum();
                    v += g.norm_sqr() * e;
                }
                v += (0..nf)
                    .map(|c| f[c].norm_sqr() * uh(k, r.frf, c).powi(2))
                    .sum::<f64>();
                out[k * rows.len() + t] = v.sqrt();
            }
        };
        pred(&b.validation_rows, &mut uv);
        pred(&b.target_rows, &mut ut);
    }
    let from: Vec<String> = [(frf, u_frf), (operational, u_op)]
        .iter()
        .filter_map(|(s, u)| u.map(|u| format!("'{}': {}", s.name, u.method)))
        .collect();
    // lines where the inverse applied is regularised: the spread is that of
    // the regularised estimate, whose bias it does not include
    let regularised = (0..nl)
        .filter(|&k| b.kept[k] < nf || b.tikhonov.as_ref().is_some_and(|l| l[k] > 0.0))
        .count();
    let caveat = if regularised > 0 {
        format!(
            "; at {regularised} of {nl} lines the inverse is regularised: the uncertainty there is the spread of the regularised estimate, not its bias"
        )
    } else {
        String::new()
    };
    Ok(BlockedFirstOrder {
        forces: FrfUncertainty {
            std: uf,
            method: format!(
                "first order through the {} blocked-force inverse of ({}){caveat}",
                b.method.name(),
                from.join("; ")
            ),
        },
        validation: b.validation.as_ref().map(|_| uv),
        target: b.target.as_ref().map(|_| ut),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::{Dof, SignalKind};
    use crate::predict::blocked::{blocked_forces, BlockedForceOptions};
    use crate::units::Quantity;
    use num_complex::Complex64;

    fn dof(s: &str) -> Dof {
        Dof::parse(s, "").unwrap()
    }

    #[test]
    fn one_force_two_indicators_hand_worked() {
        // H = [1; 1], y = [2; 2]: P = [1/2, 1/2], f = 2. With u_y = 0.1 on
        // both: u_f² = 2 · (1/4) · 0.01 = 0.005 (least squares, common practice:
        // the mean of two equal-variance readings). With u_H = 0.2 on row 1
        // too: u_f² = 1/4 · (0.01 + 4 · 0.04) + 1/4 · 0.01 = 0.045.
        let mut h = FrfSet::zeros(
            "h",
            vec![10.0],
            vec![dof("r:1+Z"), dof("r:2+Z")],
            vec![dof("s:1+Z")],
            Quantity::Acceleration,
            Quantity::Force,
        );
        h.data = vec![Complex64::new(1.0, 0.0); 2];
        let mut y = crate::predict::new_spectrum(
            "y",
            vec![10.0],
            vec![dof("r:1+Z"), dof("r:2+Z")],
            Quantity::Acceleration,
            SignalKind::Peak,
        );
        y.data = vec![Complex64::new(2.0, 0.0); 2];
        let b = blocked_forces(&h, &y, &BlockedForceOptions::default()).unwrap();
        assert!((b.forces.data[0] - Complex64::new(2.0, 0.0)).norm() < 1e-14);
        let uy = FrfUncertainty {
            std: vec![0.1, 0.1],
            method: "given".into(),
        };
        let r = blocked_first_order(&h, None, &y, Some(&uy), &b).unwrap();
        assert!((r.forces.std[0] - 0.005f64.sqrt()).abs() < 1e-14);
        let uh = FrfUncertainty {
            std: vec![0.2, 0.0],
            method: "given".into(),
        };
        let r = blocked_first_order(&h, Some(&uh), &y, Some(&uy), &b).unwrap();
        assert!((r.forces.std[0] - 0.045f64.sqrt()).abs() < 1e-14);
        assert!(r.forces.method.contains("bench"), "{}", r.forces.method);
    }
}
