//! Modal superposition of real modes, with optional residual terms.
//!
//! With e^{+iωt}, natural frequency ω_r, viscous damping ratio ζ_r,
//! hysteretic loss factor η_r, modal mass m_r and shape values φ_ir:
//!
//! H_ij(ω) = Σ_r φ_ir φ_jr / (m_r (ω_r²(1 + iη_r) − ω² + 2iζ_r ω_r ω))
//!           + 1/K_r,ij − 1/(ω² M_r,ij)
//!
//! The lower residual (residual mass M_r) stands for modes below the band,
//! the upper residual (residual stiffness K_r) for modes above it. A mode of
//! frequency 0 is a rigid-body mode (mass line φφᵀ/(−ω² m_r)).

use super::check_value;
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};
use crate::units::Quantity;
use num_complex::Complex64;

fn one() -> f64 {
    1.0
}

/// One real mode.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Mode {
    /// Natural frequency f_r in Hz (0 for a rigid-body mode).
    pub freq: f64,
    /// Viscous damping ratio ζ_r.
    #[serde(default)]
    pub zeta: f64,
    /// Hysteretic loss factor η_r (stiffness ω_r²(1 + iη_r)).
    #[serde(default)]
    pub eta: f64,
    /// Modal mass m_r (kg); 1 for mass-normalised shapes.
    #[serde(default = "one")]
    pub modal_mass: f64,
    /// Shape value at each of the model's DOFs, in their order.
    pub shape: Vec<f64>,
}

/// A residual term on one entry (and its reciprocal entry).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Residual {
    #[serde(with = "super::dof_text")]
    pub output: Dof,
    #[serde(with = "super::dof_text")]
    pub input: Dof,
    /// Residual stiffness K_r (N/m): adds 1/K_r (upper residual).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub stiffness: Option<f64>,
    /// Residual mass M_r (kg): adds −1/(ω² M_r) (lower residual).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mass: Option<f64>,
}

/// A modal model at a list of DOFs.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ModalModel {
    /// Name of the resulting set.
    pub name: String,
    /// DOFs the shapes are given at (text form `component:node+Z`).
    #[serde(with = "super::dof_text::list")]
    pub dofs: Vec<Dof>,
    pub modes: Vec<Mode>,
    #[serde(default)]
    pub residuals: Vec<Residual>,
    /// Complex modes (non-proportional damping), added to the real modes.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub complex_modes: Vec<ComplexMode>,
}

/// A complex mode: pole s_r = −ζ_r ω_r + iω_r√(1 − ζ_r²) and complex shape
/// ψ_r scaled so that the residue is ψ_ir ψ_jr:
///
/// H_ij(ω) += ψ_ir ψ_jr / (iω − s_r) + ψ̄_ir ψ̄_jr / (iω − s̄_r).
///
/// A real mass-normalised mode φ_r with viscous ζ_r is the case
/// ψ_r = φ_r / √(2iω_r√(1 − ζ_r²)).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ComplexMode {
    /// Undamped natural frequency f_r (Hz), above 0.
    pub freq: f64,
    /// Damping ratio ζ_r, 0 < ζ_r < 1.
    pub zeta: f64,
    /// Shape at each DOF as [re, im].
    pub shape: Vec<Complex64>,
}

impl ModalModel {
    pub fn validate(&self) -> Result<()> {
        if self.dofs.is_empty() {
            return Err(Error::dof(format!(
                "modal model '{}' has no DOFs; expected at least one",
                self.name
            )));
        }
        for (a, d) in self.dofs.iter().enumerate() {
            if self.dofs[..a].iter().any(|e| e.same_place(d)) {
                return Err(Error::dof(format!(
                    "modal model '{}': DOF {d} appears twice",
                    self.name
                )));
            }
        }
        for (r, m) in self.modes.iter().enumerate() {
            let f = format!("modes[{r}]");
            check_value("natural frequency", m.freq, false).map_err(|e| e.field(f.clone()))?;
            check_value("damping ratio zeta", m.zeta, false).map_err(|e| e.field(f.clone()))?;
            check_value("loss factor eta", m.eta, false).map_err(|e| e.field(f.clone()))?;
            check_value("modal mass", m.modal_mass, true).map_err(|e| e.field(f.clone()))?;
            if m.shape.len() != self.dofs.len() {
                return Err(Error::numeric(format!(
                    "mode {} has {} shape values for {} DOFs",
                    r + 1,
                    m.shape.len(),
                    self.dofs.len()
                ))
                .field(f));
            }
            if m.shape.iter().any(|v| !v.is_finite()) {
                return Err(Error::numeric(format!(
                    "mode {} has a shape value that is not finite",
                    r + 1
                ))
                .field(f));
            }
        }
        for (r, m) in self.complex_modes.iter().enumerate() {
            let f = format!("complex_modes[{r}]");
            check_value("natural frequency", m.freq, true).map_err(|e| e.field(f.clone()))?;
            if !(m.zeta > 0.0 && m.zeta < 1.0) {
                return Err(Error::numeric(format!(
                    "complex mode {} has damping ratio {}; expected 0 < zeta < 1",
                    r + 1,
                    m.zeta
                ))
                .field(f));
            }
            if m.shape.len() != self.dofs.len()
                || m.shape
                    .iter()
                    .any(|v| !(v.re.is_finite() && v.im.is_finite()))
            {
                return Err(Error::numeric(format!(
                    "complex mode {} has {} shape values for {} DOFs, or a value that is not finite",
                    r + 1,
                    m.shape.len(),
                    self.dofs.len()
                ))
                .field(f));
            }
        }
        for (n, r) in self.residuals.iter().enumerate() {
            let f = format!("residuals[{n}]");
            self.index(&r.output).map_err(|e| e.field(f.clone()))?;
            self.index(&r.input).map_err(|e| e.field(f.clone()))?;
            if let Some(k) = r.stiffness {
                if !k.is_finite() || k == 0.0 {
                    return Err(Error::numeric(format!(
                        "residual stiffness is {k}; expected a finite, non-zero value in N/m"
                    ))
                    .field(f));
                }
            }
            if let Some(m) = r.mass {
                if !m.is_finite() || m == 0.0 {
                    return Err(Error::numeric(format!(
                        "residual mass is {m}; expected a finite, non-zero value in kg"
                    ))
                    .field(f));
                }
            }
        }
        Ok(())
    }

    fn index(&self, d: &Dof) -> Result<usize> {
        self.dofs
            .iter()
            .position(|e| e.same_place(d))
            .ok_or_else(|| {
                Error::dof(format!(
                    "modal model '{}' has no DOF {d}; it has {}",
                    self.name,
                    crate::frf::labels(&self.dofs)
                ))
            })
    }

    /// The receptance at all the model's DOFs (square, complete, reciprocal).
    pub fn receptance(&self, freqs: &[f64]) -> Result<FrfSet> {
        self.validate()?;
        crate::grid::check_grid(freqs)?;
        let n = self.dofs.len();
        let needs_w = self.residuals.iter().any(|r| r.mass.is_some())
            || self.modes.iter().any(|m| m.freq == 0.0);
        if needs_w && freqs[0] == 0.0 {
            return Err(Error::numeric(format!(
                "modal model '{}' has a rigid-body mode or a residual mass, which is infinite at 0 Hz; start the grid above 0 Hz",
                self.name
            )));
        }
        let mut set = FrfSet::zeros(
            &self.name,
            freqs.to_vec(),
            self.dofs.clone(),
            self.dofs.clone(),
            Quantity::Displacement,
            Quantity::Force,
        );
        // residual terms per entry (symmetric)
        let mut res_k = vec![0.0; n * n];
        let mut res_m = vec![0.0; n * n];
        for r in &self.residuals {
            let (i, j) = (self.index(&r.output)?, self.index(&r.input)?);
            let s = r.output.sign() * r.input.sign() * self.dofs[i].sign() * self.dofs[j].sign();
            let mut put = |a: usize, b: usize| {
                if let Some(k) = r.stiffness {
                    res_k[a * n + b] += s / k;
                }
                if let Some(m) = r.mass {
                    res_m[a * n + b] += s / m;
                }
            };
            put(i, j);
            if i != j {
                put(j, i);
            }
        }
        for (l, &f) in freqs.iter().enumerate() {
            let w = 2.0 * std::f64::consts::PI * f;
            let line = set.line_mut(l);
            for m in &self.modes {
                let wr = 2.0 * std::f64::consts::PI * m.freq;
                let den = m.modal_mass
                    * Complex64::new(wr * wr - w * w, wr * wr * m.eta + 2.0 * m.zeta * wr * w);
                let g = 1.0 / den;
                for i in 0..n {
                    for j in 0..n {
                        line[i * n + j] += g * (m.shape[i] * m.shape[j]);
                    }
                }
            }
            let iw = Complex64::new(0.0, w);
            for m in &self.complex_modes {
                let wr = 2.0 * std::f64::consts::PI * m.freq;
                let s = Complex64::new(-m.zeta * wr, wr * (1.0 - m.zeta * m.zeta).sqrt());
                let (g, gc) = (1.0 / (iw - s), 1.0 / (iw - s.conj()));
                for i in 0..n {
                    for j in 0..n {
                        let r = m.shape[i] * m.shape[j];
                        line[i * n + j] += r * g + r.conj() * gc;
                    }
                }
            }
            for e in 0..n * n {
                line[e] += res_k[e];
                if res_m[e] != 0.0 {
                    line[e] -= res_m[e] / (w * w);
                }
            }
        }
        Ok(set)
    }

    /// The modal model of a system's real modes: mass-normalised shapes of
    /// K φ = ω² M φ at the chosen DOFs, the lowest `n_modes` modes, each
    /// with the same viscous damping ratio `zeta`.
    pub fn from_matrices(
        name: &str,
        sys: &super::SystemMatrices,
        at: &[Dof],
        n_modes: usize,
        zeta: f64,
    ) -> Result<ModalModel> {
        let (lam, phi) = super::real_modes(&sys.k, &sys.m)?;
        let idx = at
            .iter()
            .map(|d| sys.index_of(d))
            .collect::<Result<Vec<_>>>()?;
        let modes = (0..n_modes.min(lam.len()))
            .map(|r| Mode {
                freq: lam[r].max(0.0).sqrt() / (2.0 * std::f64::consts::PI),
                zeta,
                eta: 0.0,
                modal_mass: 1.0,
                shape: idx
                    .iter()
                    .zip(at)
                    .map(|(&i, d)| phi[(i, r)] * d.sign())
                    .collect(),
            })
            .collect();
        Ok(ModalModel {
            name: name.to_string(),
            dofs: at.to_vec(),
            modes,
            residuals: Vec::new(),
            complex_modes: Vec::new(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Direction;

    #[test]
    fn sdof_mode_equals_closed_form() {
        // m = 2 kg, k = 8e4 N/m, ζ = 0.02: H = 1/(k − ω²m + iω·2ζ√(km)) (Ewins, Modal Testing, ch. 2)
        let (m, k, z): (f64, f64, f64) = (2.0, 8.0e4, 0.02);
        let fr = (k / m).sqrt() / (2.0 * std::f64::consts::PI);
        let model = ModalModel {
            name: "s".into(),
            dofs: vec![Dof::new("s", "1", Direction::Z)],
            modes: vec![Mode {
                freq: fr,
                zeta: z,
                eta: 0.0,
                modal_mass: m,
                shape: vec![1.0],
            }],
            residuals: vec![],
            complex_modes: vec![],
        };
        let h = model.receptance(&[5.0, 31.0, 100.0]).unwrap();
        for l in 0..3 {
            let w = h.omega(l);
            let want = 1.0 / Complex64::new(k - w * w * m, w * 2.0 * z * (k * m).sqrt());
            assert!((h.get(l, 0, 0) - want).norm() < 1e-12 * want.norm());
        }
        let mut bad = model.clone();
        bad.modes[0].shape.push(1.0);
        assert!(bad
            .receptance(&[1.0])
            .unwrap_err()
            .message
            .contains("2 shape values for 1 DOFs"));
        let json = serde_json::to_string(&model).unwrap();
        assert!(json.contains("\"s:1+Z\""), "{json}");
        let back: ModalModel = serde_json::from_str(&json).unwrap();
        assert_eq!(back, model);
    }

    #[test]
    fn complex_form_of_a_real_mode_is_the_same() {
        // ψ = φ/√(2iω_d) reproduces φφᵀ/(ω_r² − ω² + 2iζω_rω) (partial fractions; Ewins, Modal Testing)
        let dofs = vec![
            Dof::new("s", "1", Direction::Z),
            Dof::new("s", "2", Direction::Z),
        ];
        let (fr, z, phi) = (40.0, 0.05, [0.3, -0.7]);
        let real = ModalModel {
            name: "r".into(),
            dofs: dofs.clone(),
            modes: vec![Mode {
                freq: fr,
                zeta: z,
                eta: 0.0,
                modal_mass: 1.0,
                shape: phi.to_vec(),
            }],
            residuals: vec![],
            complex_modes: vec![],
        };
        let wd = 2.0 * std::f64::consts::PI * fr * (1.0f64 - z * z).sqrt();
        let sc = (Complex64::new(0.0, 2.0 * wd)).sqrt();
        let cplx = ModalModel {
            modes: vec![],
            complex_modes: vec![ComplexMode {
                freq: fr,
                zeta: z,
                shape: phi.iter().map(|p| p / sc).collect(),
            }],
            ..real.clone()
        };
        let f = [5.0, 39.0, 41.0, 300.0];
        let (a, b) = (real.receptance(&f).unwrap(), cplx.receptance(&f).unwrap());
        for l in 0..4 {
            for e in 0..4 {
                assert!((a.line(l)[e] - b.line(l)[e]).norm() < 1e-12 * a.line(l)[e].norm());
            }
        }
        let json = serde_json::to_string(&cplx).unwrap();
        assert_eq!(serde_json::from_str::<ModalModel>(&json).unwrap(), cplx);
    }

    #[test]
    fn residuals_add_constant_and_mass_line() {
        let d = Dof::new("s", "1", Direction::Z);
        let model = ModalModel {
            name: "r".into(),
            dofs: vec![d.clone()],
            modes: vec![],
            residuals: vec![Residual {
                output: d.clone(),
                input: d,
                stiffness: Some(1e6),
                mass: Some(4.0),
            }],
            complex_modes: vec![],
        };
        let h = model.receptance(&[10.0]).unwrap();
        let w = h.omega(0);
        let want = 1e-6 - 1.0 / (w * w * 4.0);
        assert!((h.get(0, 0, 0) - Complex64::new(want, 0.0)).norm() < 1e-18);
        assert!(model.receptance(&[0.0, 1.0]).is_err());
    }
}
