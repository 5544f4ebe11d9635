//! A regularisation threshold referenced to the noise: per line, how large
//! the interface matrix Z = B_u Y B_fᵀ + Γ's error is against its largest
//! singular value, from the input FRFs' uncertainty.
//!
//! The error δZ = B_u δY B_fᵀ (joints exact) has E‖δZ‖_F² = Σ_rs Σ u² over
//! the FRF entries that make up Z_rs. A singular value moves by at most
//! ‖δZ‖₂ ≤ ‖δZ‖_F (Weyl's inequality, from memory), so singular values
//! below ‖δZ‖_F cannot be told from the noise: a truncated SVD with the
//! relative threshold t = ‖δZ‖_F / σ_max drops exactly those, and a larger
//! threshold also drops singular values the data resolve (genuine coupled
//! dynamics).

use super::model::FrfUncertainty;
use crate::assemble::{prepare_coupling, prepare_decoupling, CouplingOptions, Joint, Prepared};
use crate::error::Result;
use crate::frf::FrfSet;
use num_complex::Complex64;

/// The noise-referenced threshold of one line.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LineNoise {
    /// t = √(E‖δZ‖_F²) / σ_max (relative, as the `tsvd` operand).
    pub threshold: f64,
    /// Singular values of Z below the noise (σ < t · σ_max).
    pub below_noise: usize,
    /// Singular values a truncation at `tsvd` would drop that lie above
    /// the noise (0 without `tsvd`).
    pub dropped_above_noise: usize,
}

/// Per line, the noise-referenced threshold of a coupling's interface
/// matrix (the components' uncertainties in `uncertainties`, `None`:
/// exact), and what a truncation at `tsvd` would drop above it.
pub fn coupling_interface_noise(
    components: &[FrfSet],
    uncertainties: &[Option<&FrfUncertainty>],
    joints: &[Joint],
    tsvd: Option<f64>,
) -> Result<Vec<LineNoise>> {
    let refs: Vec<&FrfSet> = components.iter().collect();
    let p = prepare_coupling(&refs, joints, &CouplingOptions::default())?;
    line_noise(&p, &refs, uncertainties, tsvd)
}

/// [`coupling_interface_noise`] of a decoupling: the assembly with the
/// removed part (entering with −Y; the sign does not change the variance).
pub fn decoupling_interface_noise(
    assembly: &FrfSet,
    u_assembly: Option<&FrfUncertainty>,
    removed: &FrfSet,
    u_removed: Option<&FrfUncertainty>,
    joints: &[Joint],
    tsvd: Option<f64>,
) -> Result<Vec<LineNoise>> {
    let p = prepare_decoupling(assembly, removed, joints, &CouplingOptions::default())?;
    line_noise(&p, &[assembly, removed], &[u_assembly, u_removed], tsvd)
}

fn line_noise(
    p: &Prepared,
    components: &[&FrfSet],
    uncertainties: &[Option<&FrfUncertainty>],
    tsvd: Option<f64>,
) -> Result<Vec<LineNoise>> {
    let order = |s: &FrfSet| s.out_qty.motion_order().unwrap_or(0);
    let target = order(&p.sets[0]);
    let mut u2: Vec<Option<Vec<f64>>> = Vec::new();
    for (s, u) in components.iter().zip(uncertainties) {
        u2.push(match u {
            None => None,
            Some(u) => {
                u.check_fits(s)?;
                let r = u.reordered(s, order(s), target);
                Some(
                    r.std
                        .iter()
                        .map(|v| if v.is_nan() { 0.0 } else { v * v })
                        .collect(),
                )
            }
        });
    }
    let m = p.ends.len();
    let nl = p.sets[0].n_lines();
    let mut out = Vec::with_capacity(nl);
    let mut z = vec![Complex64::new(0.0, 0.0); m * m];
    for k in 0..nl {
        let mut var = 0.0;
        for (r, er) in p.ends.iter().enumerate() {
            for (s, es) in p.ends.iter().enumerate() {
                let mut v = Complex64::new(0.0, 0.0);
                for e in er {
                    for g in es {
                        if e.part != g.part {
                            continue;
                        }
                        let set = &p.sets[e.part];
                        let x = set.idx(k, e.o, g.i);
                        v += set.data[x] * (e.su * g.sf * p.psign[e.part]);
                        if let Some(u) = &u2[e.part] {
                            var += u[x];
                        }
                    }
                }
                z[r * m + s] = v;
            }
            z[r * m + r] += p.gamma[k * m + r];
        }
        let sv = crate::linalg::svd::singular_values(&z, m, m)?;
        let smax = sv.first().copied().unwrap_or(0.0);
        let noise = var.sqrt();
        let threshold = if smax > 0.0 {
            noise / smax
        } else {
            f64::INFINITY
        };
        let below_noise = sv.iter().filter(|&&s| s < noise).count();
        let dropped_above_noise = match tsvd {
            Some(t) => sv.iter().filter(|&&s| s < t * smax && s >= noise).count(),
            None => 0,
        };
        out.push(LineNoise {
            threshold,
            below_noise,
            dropped_above_noise,
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Dof;
    use crate::units::Quantity;

    fn one(name: &str, v: Complex64) -> FrfSet {
        let d = Dof::parse(&format!("{name}:1+Z"), "").unwrap();
        let mut s = FrfSet::zeros(
            name,
            vec![10.0],
            vec![d.clone()],
            vec![d],
            Quantity::Displacement,
            Quantity::Force,
        );
        s.data = vec![v];
        s
    }

    #[test]
    fn scalar_interface_hand_worked() {
        // Z = Y_a + Y_b = 3 + 1 = 4; δZ = δY_a + δY_b, E|δZ|² = 0.3² + 0.4² = 0.25:
        // t = 0.5 / 4 = 0.125; the one singular value (4) is above the noise;
        // a truncation at 0.9 (σ < 3.6: none) drops nothing
        let a = one("a", Complex64::new(3.0, 0.0));
        let b = one("b", Complex64::new(1.0, 0.0));
        let j = vec![Joint::rigid(
            Dof::parse("a:1+Z", "").unwrap(),
            Dof::parse("b:1+Z", "").unwrap(),
        )];
        let ua = FrfUncertainty {
            std: vec![0.3],
            method: String::new(),
        };
        let ub = FrfUncertainty {
            std: vec![0.4],
            method: String::new(),
        };
        let n = coupling_interface_noise(
            &[a.clone(), b.clone()],
            &[Some(&ua), Some(&ub)],
            &j,
            Some(0.9),
        )
        .unwrap();
        assert!((n[0].threshold - 0.125).abs() < 1e-15);
        assert_eq!((n[0].below_noise, n[0].dropped_above_noise), (0, 0));
        // noise larger than Z: 6 > 4, below the noise
        let big = FrfUncertainty {
            std: vec![6.0],
            method: String::new(),
        };
        let n = coupling_interface_noise(&[a, b], &[Some(&big), None], &j, None).unwrap();
        assert_eq!(n[0].below_noise, 1);
    }
}
