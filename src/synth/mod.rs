//! Component synthesis: lumped networks, modal superposition, beams and
//! planar frames, isolators.
//!
//! Every builder returns SI [`FrfSet`]s: receptances (m/N, rad/(N·m) on
//! rotations) for structures, dynamic stiffness (N/m) for isolators. Time
//! convention e^{+iωt} (see the crate docs): a system with mass M, stiffness
//! K, viscous damping C and hysteretic (structural) damping K_h has the
//! dynamic stiffness Z(ω) = K + iK_h − ω²M + iωC, and its receptance is
//! H = Z⁻¹, solved per frequency line with nalgebra's LU.
//!
//! The description structs are serde-serialisable so that a recipe can embed
//! them as JSON; every builder validates its description first and reports
//! what it expected and what it found.

pub mod beam;
pub mod isolator;
pub mod lumped;
pub mod modal;

pub use beam::{Beam, BeamEnd, Frame, FrameMember, FrameNode, Rayleigh, Support};
pub use isolator::{Isolator, StiffnessPoint};
pub use lumped::{Link, Mass, Network};
pub use modal::{ModalModel, Mode, Residual};

use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};
use crate::limits::Limits;
use crate::units::Quantity;
use nalgebra::DMatrix;
use num_complex::Complex64;

/// One synthesized component, as a recipe embeds it (JSON, tagged by
/// `"model"`): every builder of this module behind one call.
///
/// ```
/// let spec: mortise::synth::Synth = serde_json::from_str(r#"{
///   "model": "network", "component": "rig",
///   "masses": [{"node": "1", "mass": 2.0}],
///   "links": [{"a": "1", "k": 8.0e4, "c": 15.0}]
/// }"#).unwrap();
/// let h = spec.synthesize(&[10.0, 20.0]).unwrap();
/// assert_eq!(h.outputs[0].to_string(), "rig:1+Z");
/// ```
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(tag = "model", rename_all = "kebab-case")]
pub enum Synth {
    /// A lumped network; receptance at the nodes in `at` (all when empty).
    Network {
        #[serde(flatten)]
        network: Network,
        #[serde(default)]
        at: Vec<String>,
    },
    /// A modal model; receptance at its DOFs.
    Modal(ModalModel),
    /// A beam; receptance (Z, RY) at the node numbers in `at` (both ends when empty).
    Beam {
        #[serde(flatten)]
        beam: Beam,
        #[serde(default)]
        at: Vec<usize>,
    },
    /// A planar frame; receptance at the DOFs in `at` (text form).
    Frame {
        #[serde(flatten)]
        frame: Frame,
        #[serde(with = "dof_text::list")]
        at: Vec<Dof>,
    },
    /// An isolator; 1×1 dynamic stiffness.
    Isolator(Isolator),
}

/// What building a synthesized model costs, estimated from its description
/// alone (before any matrix is allocated): its size in words, the memory
/// it holds at its peak and the floating-point operations it performs.
#[derive(Debug, Clone, PartialEq)]
pub struct Cost {
    /// The model's size in words ("a beam of 10000 elements: 20002 DOFs, 4 receptances on 200 lines").
    pub size: String,
    /// Peak memory in bytes (`None` when the count overflows).
    pub bytes: Option<u64>,
    /// Estimated floating-point operations (infinite when the count overflows).
    pub work: f64,
}

/// Dense n × n real matrices a finite-element model holds at the peak of
/// its real-mode solution: M, K, C, K_h, their copies with the supports
/// removed, and in [`real_modes`] the Cholesky factor, its inverse, the
/// transformed stiffness and its temporaries, the eigenvectors and the
/// mode shapes (counted from the code; measured peak in DEVELOPERS.md).
pub const DENSE_MATRICES: u64 = 16;

/// Floating-point operations of [`real_modes`] per n³: Cholesky (n³/3),
/// inverse of the factor (n³/3), L⁻¹ K L⁻ᵀ (4n³), the symmetric
/// eigen-solution with vectors (about 9n³), Φ = L⁻ᵀ V (2n³).
pub const REAL_MODES_WORK_PER_N3: f64 = 16.0;

/// Floating-point operations of one complex LU factorisation per n³
/// (2n³/3 complex multiply-adds of 8 real operations each).
pub const COMPLEX_LU_WORK_PER_N3: f64 = 16.0 / 3.0;

/// a · b (· c ...) as f64, for operation counts.
fn ops(dims: &[usize]) -> f64 {
    dims.iter().map(|&d| d as f64).product()
}

/// a + b for byte counts that may have overflowed.
fn add(a: Option<u64>, b: Option<u64>) -> Option<u64> {
    a?.checked_add(b?)
}

/// Bytes of `dims` values of `each` bytes.
fn bytes_of(each: u64, dims: &[usize]) -> Option<u64> {
    crate::limits::product(dims)?.checked_mul(each)
}

/// The cost of a model solved by its real modes (beams, frames): `n` DOFs,
/// `no` × `ni` receptances on `lines` lines.
fn modal_fe_cost(n: usize, no: usize, ni: usize, lines: usize) -> (Option<u64>, f64) {
    let dense = bytes_of(8, &[n, n]).and_then(|b| b.checked_mul(DENSE_MATRICES));
    let products = bytes_of(8, &[n, no, ni]);
    let set = bytes_of(crate::limits::COMPLEX_BYTES, &[lines, no, ni]);
    let bytes = add(add(dense, products), set);
    let work =
        REAL_MODES_WORK_PER_N3 * ops(&[n, n, n]) + ops(&[lines, n]) * (8.0 * ops(&[no, ni]) + 12.0);
    (bytes, work)
}

impl Synth {
    /// What this model would cost on a grid of `lines` lines, from its
    /// description alone (nothing is built). Counts use checked arithmetic:
    /// an overflowing count is `None` bytes and infinite work.
    pub fn cost(&self, lines: usize) -> Cost {
        match self {
            Synth::Network { network, at } => {
                let n = network.masses.len();
                let k = if at.is_empty() { n } else { at.len() };
                // M, K, C, K_h; per line Z, its LU and the solution
                let bytes = add(
                    add(bytes_of(8, &[4, n, n]), bytes_of(16, &[3, n, n])),
                    add(
                        bytes_of(16, &[2, n, k]),
                        bytes_of(crate::limits::COMPLEX_BYTES, &[lines, k, k]),
                    ),
                );
                let work = lines as f64
                    * (COMPLEX_LU_WORK_PER_N3 * ops(&[n, n, n])
                        + 8.0 * ops(&[n, n, k])
                        + 8.0 * ops(&[n, n]));
                Cost {
                    size: format!("{n} masses, {k} × {k} receptances on {lines} lines"),
                    bytes,
                    work,
                }
            }
            Synth::Modal(m) => {
                let n = m.dofs.len();
                let r = m.modes.len().saturating_add(m.complex_modes.len());
                let bytes = add(
                    bytes_of(crate::limits::COMPLEX_BYTES, &[lines, n, n]),
                    bytes_of(16, &[n, n]),
                );
                let work = ops(&[lines, n, n]) * (10.0 * r as f64 + 6.0);
                Cost {
                    size: format!("{n} DOFs, {r} modes, {n} × {n} receptances on {lines} lines"),
                    bytes,
                    work,
                }
            }
            Synth::Beam { beam, at } => {
                let nodes = beam.elements.saturating_add(1);
                let n = nodes.saturating_mul(2);
                let k = if at.is_empty() {
                    4
                } else {
                    at.len().saturating_mul(2)
                };
                let (bytes, work) = modal_fe_cost(n, k, k, lines);
                Cost {
                    size: format!(
                        "{} elements, {n} DOFs, {k} × {k} receptances on {lines} lines",
                        beam.elements
                    ),
                    bytes,
                    work,
                }
            }
            Synth::Frame { frame, at } => {
                // every member adds elements − 1 nodes; 3 DOFs per node
                let nodes = frame.members.iter().try_fold(frame.nodes.len(), |acc, m| {
                    acc.checked_add(m.elements.saturating_sub(1))
                });
                let elements = frame
                    .members
                    .iter()
                    .try_fold(0usize, |acc, m| acc.checked_add(m.elements));
                let n = nodes.and_then(|x| x.checked_mul(3)).unwrap_or(usize::MAX);
                let k = at.len();
                let (bytes, work) = modal_fe_cost(n, k, k, lines);
                let count =
                    |x: Option<usize>| x.map_or("uncountably many".to_string(), |v| v.to_string());
                Cost {
                    size: format!(
                        "{} members, {} elements, {} DOFs, {k} × {k} receptances on {lines} lines",
                        frame.members.len(),
                        count(elements),
                        count(nodes.and_then(|x| x.checked_mul(3)))
                    ),
                    bytes,
                    work,
                }
            }
            Synth::Isolator(i) => Cost {
                size: format!("{} table points on {lines} lines", i.table.len()),
                bytes: bytes_of(crate::limits::COMPLEX_BYTES, &[lines]),
                work: lines as f64 * (ops(&[i.table.len()]).log2().max(1.0) + 20.0),
            },
        }
    }

    /// The model's kind and name, for messages: "beam 'joist'".
    pub fn label(&self) -> String {
        match self {
            Synth::Network { network, .. } => format!("network '{}'", network.component),
            Synth::Modal(m) => format!("modal model '{}'", m.name),
            Synth::Beam { beam, .. } => format!("beam '{}'", beam.component),
            Synth::Frame { frame, .. } => format!("frame '{}'", frame.component),
            Synth::Isolator(i) => format!("isolator '{}'", i.name),
        }
    }

    /// Refuse the model when it would cost more on `lines` lines than
    /// `limits` allow (memory or work), naming it, its size and the budget.
    pub fn check_budget(&self, lines: usize, limits: &Limits) -> Result<()> {
        let c = self.cost(lines);
        limits.check_model(&format!("the {}", self.label()), &c.size, c.bytes, c.work)
    }

    /// Build the component's FRF set on `freqs` (receptance, or dynamic
    /// stiffness for an isolator) within the default [`Limits`].
    pub fn synthesize(&self, freqs: &[f64]) -> Result<FrfSet> {
        self.synthesize_with(freqs, &Limits::default())
    }

    /// Build the component's FRF set on `freqs`, first checking its
    /// estimated memory and work against `limits` ([`Synth::cost`]).
    pub fn synthesize_with(&self, freqs: &[f64], limits: &Limits) -> Result<FrfSet> {
        self.check_budget(freqs.len(), limits)?;
        match self {
            Synth::Network { network, at } => {
                let at: Vec<&str> = at.iter().map(|s| s.as_str()).collect();
                network.receptance(freqs, &at, &at)
            }
            Synth::Modal(m) => m.receptance(freqs),
            Synth::Beam { beam, at } => beam.receptance(freqs, at),
            Synth::Frame { frame, at } => {
                if at.is_empty() {
                    return Err(Error::dof(format!(
                        "frame '{}': 'at' lists no DOFs; expected labels such as {}:node+Z",
                        frame.component, frame.component
                    )));
                }
                frame.receptance(freqs, at, at)
            }
            Synth::Isolator(i) => i.stiffness(freqs),
        }
    }
}

/// The matrices of a linear structural model, all n × n real and symmetric,
/// one row per DOF in `dofs`.
#[derive(Debug, Clone, PartialEq)]
pub struct SystemMatrices {
    pub dofs: Vec<Dof>,
    /// Mass matrix (kg, kg·m² on rotations).
    pub m: DMatrix<f64>,
    /// Stiffness matrix (N/m).
    pub k: DMatrix<f64>,
    /// Viscous damping matrix (N·s/m).
    pub c: DMatrix<f64>,
    /// Hysteretic part: the imaginary part of the complex stiffness, K + iK_h.
    pub kh: DMatrix<f64>,
}

impl SystemMatrices {
    /// Zero matrices for the given DOFs.
    pub fn zeros(dofs: Vec<Dof>) -> SystemMatrices {
        let n = dofs.len();
        SystemMatrices {
            dofs,
            m: DMatrix::zeros(n, n),
            k: DMatrix::zeros(n, n),
            c: DMatrix::zeros(n, n),
            kh: DMatrix::zeros(n, n),
        }
    }

    pub fn n(&self) -> usize {
        self.dofs.len()
    }

    /// Z(ω) = K + iK_h − ω²M + iωC.
    pub fn dynamic_stiffness(&self, omega: f64) -> DMatrix<Complex64> {
        let n = self.n();
        DMatrix::from_fn(n, n, |i, j| {
            Complex64::new(
                self.k[(i, j)] - omega * omega * self.m[(i, j)],
                self.kh[(i, j)] + omega * self.c[(i, j)],
            )
        })
    }

    /// Check the grid and the requested DOFs; their indices in the matrices.
    fn requested(
        &self,
        name: &str,
        freqs: &[f64],
        outputs: &[Dof],
        inputs: &[Dof],
    ) -> Result<(Vec<usize>, Vec<usize>)> {
        crate::grid::check_grid(freqs)?;
        if outputs.is_empty() || inputs.is_empty() {
            return Err(Error::dof(format!(
                "'{name}': no output or no input DOF was requested; expected at least one of each"
            )));
        }
        let idx = |ds: &[Dof]| {
            ds.iter()
                .map(|d| self.index_of(d))
                .collect::<Result<Vec<_>>>()
        };
        Ok((idx(outputs)?, idx(inputs)?))
    }

    /// Index of a DOF (same place; the sign of the request is applied by
    /// [`SystemMatrices::receptance`]).
    pub fn index_of(&self, d: &Dof) -> Result<usize> {
        self.dofs
            .iter()
            .position(|e| e.same_place(d))
            .ok_or_else(|| {
                Error::dof(format!(
                    "the model has no DOF {d}; it has {}",
                    crate::frf::labels(&self.dofs)
                ))
            })
    }

    /// Receptance H = Z⁻¹ between the requested output and input DOFs, one
    /// LU solve per line. A requested DOF with a negative sign flips the sign
    /// of its rows or columns. Fails, naming the line, where Z is singular
    /// (for example a free-free model at 0 Hz).
    pub fn receptance(
        &self,
        name: &str,
        freqs: &[f64],
        outputs: &[Dof],
        inputs: &[Dof],
    ) -> Result<FrfSet> {
        let (oi, ii) = self.requested(name, freqs, outputs, inputs)?;
        let mut set = FrfSet::zeros(
            name,
            freqs.to_vec(),
            outputs.to_vec(),
            inputs.to_vec(),
            Quantity::Displacement,
            Quantity::Force,
        );
        set.validate()?;
        let n = self.n();
        let mut rhs = DMatrix::<Complex64>::zeros(n, ii.len());
        for (b, &j) in ii.iter().enumerate() {
            rhs[(j, b)] = Complex64::new(1.0, 0.0);
        }
        for (l, &f) in freqs.iter().enumerate() {
            let w = 2.0 * std::f64::consts::PI * f;
            let z = self.dynamic_stiffness(w);
            let scale = z.iter().fold(0.0f64, |a, v| a.max(v.norm()));
            let lu = z.lu();
            let u = lu.u();
            let min_piv = (0..n).fold(f64::INFINITY, |a, i| a.min(u[(i, i)].norm()));
            if min_piv.is_nan() || min_piv <= 1e-12 * scale {
                return Err(Error::numeric(format!(
                    "'{name}': the dynamic stiffness K − ω²M + iωC is singular at {} Hz (smallest pivot {min_piv:.3e} against entries up to {scale:.3e}); a model that is free to move as a rigid body has no receptance at 0 Hz: start the grid above 0 Hz or add a support",
                    f
                )));
            }
            let x = lu
                .solve(&rhs)
                .ok_or_else(|| Error::numeric(format!("'{name}': singular system at {} Hz", f)))?;
            for (a, &i) in oi.iter().enumerate() {
                for (b, &j) in ii.iter().enumerate() {
                    let _ = j;
                    let s = outputs[a].sign() * inputs[b].sign();
                    set.set(l, a, b, x[(i, b)] * s);
                }
            }
        }
        Ok(set)
    }
}

impl SystemMatrices {
    /// Receptance by exact modal superposition for proportional damping,
    /// C = αM + βK and K_h = ηK (the matrices' own `c` and `kh` are not
    /// read): with the real modes (ω_r², φ_r) of K, M,
    /// H_ij = Σ_r φ_ir φ_jr / (ω_r²(1 + iη) − ω² + iω(α + βω_r²)).
    /// Keeping every mode this equals the direct solution of
    /// K(1 + iη) − ω²M + iωC, at far less cost per line.
    #[allow(clippy::too_many_arguments)]
    pub fn receptance_proportional(
        &self,
        name: &str,
        freqs: &[f64],
        outputs: &[Dof],
        inputs: &[Dof],
        eta: f64,
        alpha: f64,
        beta: f64,
    ) -> Result<FrfSet> {
        let (oi, ii) = self.requested(name, freqs, outputs, inputs)?;
        let (lam, phi) = real_modes(&self.k, &self.m)?;
        let lmax = lam.iter().fold(0.0f64, |a, &b| a.max(b.abs()));
        let rigid = lam.iter().any(|&l| l.abs() <= 1e-9 * lmax);
        if rigid && freqs[0] == 0.0 && alpha == 0.0 {
            return Err(Error::numeric(format!(
                "'{name}': the model can move as a rigid body, so its receptance at 0 Hz is infinite; start the grid above 0 Hz or add a support"
            )));
        }
        let mut set = FrfSet::zeros(
            name,
            freqs.to_vec(),
            outputs.to_vec(),
            inputs.to_vec(),
            Quantity::Displacement,
            Quantity::Force,
        );
        set.validate()?;
        // modal products φ_ir φ_jr with the requested signs, per entry
        let nr = lam.len();
        let (no, ni) = (oi.len(), ii.len());
        let mut prod = vec![0.0; nr * no * ni];
        for r in 0..nr {
            for (a, &i) in oi.iter().enumerate() {
                for (b, &j) in ii.iter().enumerate() {
                    prod[(r * no + a) * ni + b] =
                        phi[(i, r)] * phi[(j, r)] * outputs[a].sign() * inputs[b].sign();
                }
            }
        }
        for (l, &f) in freqs.iter().enumerate() {
            let w = 2.0 * std::f64::consts::PI * f;
            let line = set.line_mut(l);
            for r in 0..nr {
                let lr = if lam[r].abs() <= 1e-9 * lmax {
                    0.0
                } else {
                    lam[r]
                };
                let g = 1.0 / Complex64::new(lr - w * w, lr * eta + w * (alpha + beta * lr));
                for (e, v) in line.iter_mut().enumerate() {
                    *v += g * prod[r * no * ni + e];
                }
            }
        }
        Ok(set)
    }
}

/// Real modes of the undamped problem K φ = ω² M φ, M symmetric positive
/// definite: returns ω_r² ascending and the mass-normalised shapes as the
/// columns of Φ (Φᵀ M Φ = I). Uses nalgebra's Cholesky factor of M and its
/// symmetric eigen-solver.
pub fn real_modes(k: &DMatrix<f64>, m: &DMatrix<f64>) -> Result<(Vec<f64>, DMatrix<f64>)> {
    let n = m.nrows();
    if k.nrows() != n || k.ncols() != n || m.ncols() != n {
        return Err(Error::numeric(format!(
            "K is {}×{} and M is {}×{}; expected two square matrices of one size",
            k.nrows(),
            k.ncols(),
            m.nrows(),
            m.ncols()
        )));
    }
    let chol = nalgebra::Cholesky::new(m.clone()).ok_or_else(|| {
        Error::numeric(
            "the mass matrix is not positive definite (a DOF without mass?); the real modes need every DOF to carry mass",
        )
    })?;
    let l = chol.l();
    let linv = l.clone().try_inverse().ok_or_else(|| {
        Error::numeric("the Cholesky factor of the mass matrix cannot be inverted")
    })?;
    let a = &linv * k * linv.transpose();
    let a = (&a + a.transpose()) * 0.5;
    let eig = nalgebra::SymmetricEigen::new(a);
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&x, &y| eig.eigenvalues[x].total_cmp(&eig.eigenvalues[y]));
    let lam: Vec<f64> = order.iter().map(|&i| eig.eigenvalues[i]).collect();
    let v = DMatrix::from_fn(n, n, |i, j| eig.eigenvectors[(i, order[j])]);
    let phi = linv.transpose() * v;
    Ok((lam, phi))
}

/// Require a finite value, ≥ 0 (or > 0 when `strict`).
pub(crate) fn check_value(what: &str, v: f64, strict: bool) -> Result<()> {
    if !v.is_finite() || v < 0.0 || (strict && v == 0.0) {
        return Err(Error::numeric(format!(
            "{what} is {v}; expected a finite value {}",
            if strict { "above 0" } else { "of 0 or more" }
        )));
    }
    Ok(())
}

/// Serde helpers writing DOFs in their text form (`component:node+Z`).
pub mod dof_text {
    use crate::frf::Dof;
    use serde::{Deserialize, Deserializer, Serializer};

    pub fn serialize<S: Serializer>(d: &Dof, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&d.to_string())
    }
    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Dof, D::Error> {
        let t = String::deserialize(d)?;
        Dof::parse(&t, "").map_err(serde::de::Error::custom)
    }

    /// The same for a list of DOFs.
    pub mod list {
        use crate::frf::Dof;
        use serde::{Deserialize, Deserializer, Serializer};

        pub fn serialize<S: Serializer>(v: &[Dof], s: S) -> Result<S::Ok, S::Error> {
            s.collect_seq(v.iter().map(|d| d.to_string()))
        }
        pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<Dof>, D::Error> {
            let t = Vec::<String>::deserialize(d)?;
            t.iter()
                .map(|x| Dof::parse(x, "").map_err(serde::de::Error::custom))
                .collect()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Direction;

    #[test]
    fn two_dof_modes_are_mass_normalised() {
        let k = DMatrix::from_row_slice(2, 2, &[3.0, -1.0, -1.0, 1.0]);
        let m = DMatrix::from_row_slice(2, 2, &[2.0, 0.0, 0.0, 1.0]);
        let (lam, phi) = real_modes(&k, &m).unwrap();
        let g = phi.transpose() * &m * &phi;
        assert!((g - DMatrix::identity(2, 2)).norm() < 1e-12);
        // det(K − λM) = 2λ² − 5λ + 2 = 0 → λ = 0.5, 2 (hand calculation)
        assert!((lam[0] - 0.5).abs() < 1e-12 && (lam[1] - 2.0).abs() < 1e-12);
    }

    #[test]
    fn every_model_through_one_entry_point() {
        let specs = [
            r#"{"model": "modal", "name": "m", "dofs": ["m:1+Z"], "modes": [{"freq": 30.0, "zeta": 0.02, "shape": [1.0]}]}"#,
            r#"{"model": "beam", "component": "b", "young": 2.1e11, "second_moment": 1e-8, "density": 7850.0, "area": 1e-4, "length": 1.0, "elements": 6, "loss_factor": 0.01, "left": "clamped", "at": [6]}"#,
            r#"{"model": "frame", "component": "f", "nodes": [{"name": "p", "x": 0.0, "z": 0.0}, {"name": "q", "x": 0.5, "z": 0.0}], "members": [{"a": "p", "b": "q", "elements": 2, "young": 2.1e11, "second_moment": 1e-8, "density": 7850.0, "area": 1e-4}], "supports": [{"node": "p", "fixed": ["X", "Z", "RY"]}], "loss_factor": 0.01, "at": ["f:q+Z"]}"#,
            r#"{"model": "isolator", "name": "i", "dof": "i:1+Z", "table": [{"freq": 0.0, "k": 1e5, "eta": 0.1}]}"#,
        ];
        for t in specs {
            let s: Synth = serde_json::from_str(t).unwrap();
            let h = s.synthesize(&[5.0, 50.0]).unwrap();
            h.validate().unwrap();
            let back: Synth = serde_json::from_str(&serde_json::to_string(&s).unwrap()).unwrap();
            assert_eq!(back, s);
        }
        let e = serde_json::from_str::<Synth>(r#"{"model": "cloud"}"#).unwrap_err();
        assert!(e.to_string().contains("unknown variant"), "{e}");
    }

    #[test]
    fn singular_line_is_reported() {
        let d = Dof::new("c", "1", Direction::Z);
        let mut s = SystemMatrices::zeros(vec![d.clone()]);
        s.m[(0, 0)] = 1.0;
        let e = s
            .receptance(
                "free",
                &[0.0, 1.0],
                std::slice::from_ref(&d),
                std::slice::from_ref(&d),
            )
            .unwrap_err();
        assert!(e.message.contains("singular at 0 Hz"), "{}", e.message);
    }
}
