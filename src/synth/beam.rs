//! Euler–Bernoulli beams and planar frames by finite elements.
//!
//! Elements are two-node Hermite cubics with the consistent mass matrix
//! (bending) and linear bar elements (axial, frames only). Damping is a loss
//! factor η on the stiffness (complex modulus E(1 + iη)) and/or Rayleigh
//! damping C = αM + βK.
//!
//! Signs follow the right-hand rule of the global axes: a rotation RY
//! positive about +Y turns +Z towards +X, so along a beam on the X axis
//! RY = −dw/dx, where w is the Z deflection.

use super::{check_value, SystemMatrices};
use crate::error::{Error, Result};
use crate::frf::{Direction, Dof, FrfSet};
use nalgebra::DMatrix;

/// An end condition of a straight beam.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum BeamEnd {
    #[default]
    Free,
    /// Deflection and rotation held.
    Clamped,
    /// Deflection held, rotation free.
    Pinned,
}

/// Rayleigh damping C = αM + βK.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Rayleigh {
    /// Mass-proportional factor α (1/s).
    pub alpha: f64,
    /// Stiffness-proportional factor β (s).
    pub beta: f64,
}

/// A straight uniform beam along X bending in the X–Z plane, nodes "0" to
/// "n" (n elements), DOFs Z and RY at each node.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Beam {
    pub component: String,
    /// Young's modulus E (Pa).
    pub young: f64,
    /// Second moment of area I (m⁴).
    pub second_moment: f64,
    /// Density ρ (kg/m³).
    pub density: f64,
    /// Cross-section area A (m²).
    pub area: f64,
    /// Length L (m).
    pub length: f64,
    /// Number of elements.
    pub elements: usize,
    /// Loss factor η of the modulus (E(1 + iη)).
    #[serde(default)]
    pub loss_factor: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rayleigh: Option<Rayleigh>,
    /// End at x = 0 (node "0").
    #[serde(default)]
    pub left: BeamEnd,
    /// End at x = L (node "n").
    #[serde(default)]
    pub right: BeamEnd,
}

/// Bending stiffness and consistent mass of one Hermite element, local DOFs
/// (v₁, θ₁, v₂, θ₂) with θ = dv/ds (textbook element matrices).
fn hermite(ei: f64, rho_a: f64, l: f64) -> ([[f64; 4]; 4], [[f64; 4]; 4]) {
    let c = ei / (l * l * l);
    let k = [
        [12.0 * c, 6.0 * l * c, -12.0 * c, 6.0 * l * c],
        [6.0 * l * c, 4.0 * l * l * c, -6.0 * l * c, 2.0 * l * l * c],
        [-12.0 * c, -6.0 * l * c, 12.0 * c, -6.0 * l * c],
        [6.0 * l * c, 2.0 * l * l * c, -6.0 * l * c, 4.0 * l * l * c],
    ];
    let d = rho_a * l / 420.0;
    let m = [
        [156.0 * d, 22.0 * l * d, 54.0 * d, -13.0 * l * d],
        [
            22.0 * l * d,
            4.0 * l * l * d,
            13.0 * l * d,
            -3.0 * l * l * d,
        ],
        [54.0 * d, 13.0 * l * d, 156.0 * d, -22.0 * l * d],
        [
            -13.0 * l * d,
            -3.0 * l * l * d,
            -22.0 * l * d,
            4.0 * l * l * d,
        ],
    ];
    (k, m)
}

fn check_section(what: &str, e: f64, i: f64, rho: f64, a: f64) -> Result<()> {
    check_value(&format!("{what}: Young's modulus"), e, true)?;
    check_value(&format!("{what}: second moment of area"), i, true)?;
    check_value(&format!("{what}: density"), rho, true)?;
    check_value(&format!("{what}: area"), a, true)?;
    Ok(())
}

fn check_damping(eta: f64, r: &Option<Rayleigh>) -> Result<()> {
    check_value("loss factor", eta, false)?;
    if let Some(r) = r {
        check_value("Rayleigh alpha", r.alpha, false)?;
        check_value("Rayleigh beta", r.beta, false)?;
    }
    Ok(())
}

fn finish(mut s: SystemMatrices, eta: f64, r: &Option<Rayleigh>) -> SystemMatrices {
    s.kh = &s.k * eta;
    if let Some(r) = r {
        s.c = &s.m * r.alpha + &s.k * r.beta;
    }
    s
}

/// Keep only the DOFs whose flag is true.
fn reduce(s: &SystemMatrices, keep: &[bool]) -> SystemMatrices {
    let idx: Vec<usize> = (0..s.n()).filter(|&i| keep[i]).collect();
    let pick =
        |m: &DMatrix<f64>| DMatrix::from_fn(idx.len(), idx.len(), |a, b| m[(idx[a], idx[b])]);
    SystemMatrices {
        dofs: idx.iter().map(|&i| s.dofs[i].clone()).collect(),
        m: pick(&s.m),
        k: pick(&s.k),
        c: pick(&s.c),
        kh: pick(&s.kh),
    }
}

impl Beam {
    pub fn validate(&self) -> Result<()> {
        check_section(
            "beam",
            self.young,
            self.second_moment,
            self.density,
            self.area,
        )?;
        check_value("beam length", self.length, true)?;
        check_damping(self.loss_factor, &self.rayleigh)?;
        if self.elements == 0 || self.elements > 10_000 {
            return Err(Error::numeric(format!(
                "beam has {} elements; expected 1 to 10000",
                self.elements
            ))
            .field("elements"));
        }
        Ok(())
    }

    /// M, K, C, K_h with the supported DOFs removed; DOFs `node+Z`, `node+RY`.
    pub fn matrices(&self) -> Result<SystemMatrices> {
        self.validate()?;
        let ne = self.elements;
        let nn = ne + 1;
        let mut dofs = Vec::with_capacity(2 * nn);
        for n in 0..nn {
            dofs.push(Dof::new(&self.component, &n.to_string(), Direction::Z));
            dofs.push(Dof::new(&self.component, &n.to_string(), Direction::RY));
        }
        let mut s = SystemMatrices::zeros(dofs);
        let le = self.length / ne as f64;
        let (ke, me) = hermite(
            self.young * self.second_moment,
            self.density * self.area,
            le,
        );
        // global (Z, RY) → local (v, θ) = (−Z, RY)
        let t = [-1.0, 1.0, -1.0, 1.0];
        for e in 0..ne {
            for a in 0..4 {
                for b in 0..4 {
                    let (ga, gb) = (2 * e + a, 2 * e + b);
                    s.k[(ga, gb)] += t[a] * t[b] * ke[a][b];
                    s.m[(ga, gb)] += t[a] * t[b] * me[a][b];
                }
            }
        }
        let s = finish(s, self.loss_factor, &self.rayleigh);
        let mut keep = vec![true; 2 * nn];
        for (end, n) in [(self.left, 0), (self.right, ne)] {
            match end {
                BeamEnd::Free => {}
                BeamEnd::Pinned => keep[2 * n] = false,
                BeamEnd::Clamped => {
                    keep[2 * n] = false;
                    keep[2 * n + 1] = false;
                }
            }
        }
        Ok(reduce(&s, &keep))
    }

    /// The lowest natural frequencies of the undamped model (Hz), rigid-body
    /// modes (near 0 Hz) included.
    pub fn natural_frequencies(&self, n: usize) -> Result<Vec<f64>> {
        let s = self.matrices()?;
        let (lam, _) = super::real_modes(&s.k, &s.m)?;
        Ok(lam
            .iter()
            .take(n)
            .map(|l| l.max(0.0).sqrt() / (2.0 * std::f64::consts::PI))
            .collect())
    }

    /// Receptance (Z and RY) at the given nodes, both ends when `nodes` is
    /// empty, by exact modal superposition of all the model's modes (the
    /// damping is proportional). DOFs held by a support are left out.
    pub fn receptance(&self, freqs: &[f64], nodes: &[usize]) -> Result<FrfSet> {
        let s = self.matrices()?;
        let nodes: Vec<usize> = if nodes.is_empty() {
            vec![0, self.elements]
        } else {
            nodes.to_vec()
        };
        let mut at = Vec::new();
        for &n in &nodes {
            if n > self.elements {
                return Err(Error::dof(format!(
                    "beam '{}' has nodes 0 to {}; node {n} was asked for",
                    self.component, self.elements
                )));
            }
            for dir in [Direction::Z, Direction::RY] {
                let d = Dof::new(&self.component, &n.to_string(), dir);
                if s.index_of(&d).is_ok() {
                    at.push(d);
                }
            }
        }
        if at.is_empty() {
            return Err(Error::dof(format!(
                "beam '{}': every DOF at the chosen nodes is held by a support",
                self.component
            )));
        }
        let (a, b) = self.rayleigh.map_or((0.0, 0.0), |r| (r.alpha, r.beta));
        s.receptance_proportional(&self.component, freqs, &at, &at, self.loss_factor, a, b)
    }
}

/// f_n = λ_n² / (2π L²) · √(EI / (ρA)) for an Euler–Bernoulli beam whose
/// end conditions give the eigenvalue λ_n = β_n L.
pub fn beam_frequency(
    lambda: f64,
    young: f64,
    second_moment: f64,
    density: f64,
    area: f64,
    length: f64,
) -> f64 {
    lambda * lambda / (2.0 * std::f64::consts::PI * length * length)
        * (young * second_moment / (density * area)).sqrt()
}

/// The n-th (1-based) flexible eigenvalue λ of a free–free (equally a
/// clamped–clamped) beam: root of cos λ cosh λ = 1 in ((n + ½)π ± ½π),
/// found by bisection; 0 for n = 0.
pub fn free_free_lambda(n: usize) -> f64 {
    if n == 0 {
        return 0.0; // the rigid-body modes
    }
    bisect(|x| x.cos() * x.cosh() - 1.0, n)
}

/// The n-th (1-based; 0 is taken as 1) eigenvalue λ of a clamped–free beam:
/// root of cos λ cosh λ = −1.
pub fn clamped_free_lambda(n: usize) -> f64 {
    bisect(|x| x.cos() * x.cosh() + 1.0, n.saturating_sub(1))
}

fn bisect(f: impl Fn(f64) -> f64, n: usize) -> f64 {
    let pi = std::f64::consts::PI;
    let c = (n as f64 + 0.5) * pi;
    let (mut a, mut b) = (c - 0.5 * pi + 1e-9, c + 0.5 * pi - 1e-9);
    if n == 0 {
        a = 1e-6;
    }
    // scale by 1/cosh to keep the function of order one
    let g = |x: f64| f(x) / x.cosh();
    let mut fa = g(a);
    for _ in 0..200 {
        let m = 0.5 * (a + b);
        let fm = g(m);
        if (fm > 0.0) == (fa > 0.0) {
            a = m;
            fa = fm;
        } else {
            b = m;
        }
    }
    0.5 * (a + b)
}

/// A point of a planar frame in the X–Z plane.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FrameNode {
    pub name: String,
    /// X coordinate (m).
    pub x: f64,
    /// Z coordinate (m).
    pub z: f64,
}

/// A straight member between two frame nodes, cut into `elements` elements
/// (intermediate nodes are named `a-b.1`, `a-b.2`, ...).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FrameMember {
    pub a: String,
    pub b: String,
    pub elements: usize,
    /// Young's modulus (Pa).
    pub young: f64,
    /// Second moment of area for bending in the X–Z plane (m⁴).
    pub second_moment: f64,
    /// Density (kg/m³).
    pub density: f64,
    /// Cross-section area (m²).
    pub area: f64,
}

/// DOFs held at a node.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Support {
    pub node: String,
    /// Directions held: any of X, Z, RY.
    pub fixed: Vec<Direction>,
}

/// A planar frame in the X–Z plane: DOFs X, Z and RY at every node; members
/// carry axial load (bar) and bending (Hermite beam); members meeting at a
/// node are rigidly joined.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Frame {
    pub component: String,
    pub nodes: Vec<FrameNode>,
    pub members: Vec<FrameMember>,
    #[serde(default)]
    pub supports: Vec<Support>,
    /// Loss factor η of the modulus.
    #[serde(default)]
    pub loss_factor: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rayleigh: Option<Rayleigh>,
}

const FRAME_DIRS: [Direction; 3] = [Direction::X, Direction::Z, Direction::RY];

impl Frame {
    /// M, K, C, K_h with supported DOFs removed.
    pub fn matrices(&self) -> Result<SystemMatrices> {
        check_damping(self.loss_factor, &self.rayleigh)?;
        let mut names: Vec<String> = Vec::new();
        let mut pos: Vec<(f64, f64)> = Vec::new();
        for (n, p) in self.nodes.iter().enumerate() {
            if p.name.trim().is_empty() || names.contains(&p.name) {
                return Err(Error::dof(format!(
                    "frame node name '{}' is empty or used twice",
                    p.name
                ))
                .field(format!("nodes[{n}]")));
            }
            if !(p.x.is_finite() && p.z.is_finite()) {
                return Err(Error::numeric(format!(
                    "frame node '{}' has a coordinate that is not finite",
                    p.name
                )));
            }
            names.push(p.name.clone());
            pos.push((p.x, p.z));
        }
        let find = |names: &[String], s: &str| {
            names.iter().position(|n| n == s).ok_or_else(|| {
                Error::dof(format!(
                    "frame '{}' has no node '{s}'; it has {}",
                    self.component,
                    names.join(", ")
                ))
            })
        };
        // elements: (node a, node b, member index)
        let mut elems: Vec<(usize, usize, usize)> = Vec::new();
        for (mi, mb) in self.members.iter().enumerate() {
            let f = format!("members[{mi}]");
            check_section(
                "frame member",
                mb.young,
                mb.second_moment,
                mb.density,
                mb.area,
            )
            .map_err(|e| e.field(f.clone()))?;
            let a = find(&names, &mb.a).map_err(|e| e.field(f.clone()))?;
            let b = find(&names, &mb.b).map_err(|e| e.field(f.clone()))?;
            let (pa, pb) = (pos[a], pos[b]);
            let len = ((pb.0 - pa.0).powi(2) + (pb.1 - pa.1).powi(2)).sqrt();
            if len.is_nan() || len <= 0.0 {
                return Err(
                    Error::numeric(format!("member {}–{} has zero length", mb.a, mb.b)).field(f),
                );
            }
            if mb.elements == 0 || mb.elements > 10_000 {
                return Err(Error::numeric(format!(
                    "member {}–{} has {} elements; expected 1 to 10000",
                    mb.a, mb.b, mb.elements
                ))
                .field(f));
            }
            let mut prev = a;
            for e in 1..=mb.elements {
                let next = if e == mb.elements {
                    b
                } else {
                    let t = e as f64 / mb.elements as f64;
                    let gen = format!("{}-{}.{e}", mb.a, mb.b);
                    if names.contains(&gen) {
                        return Err(Error::dof(format!(
                            "member {}–{} would create the node '{gen}', which already exists; rename that node or join the two members once",
                            mb.a, mb.b
                        ))
                        .field(f));
                    }
                    names.push(gen);
                    pos.push((pa.0 + t * (pb.0 - pa.0), pa.1 + t * (pb.1 - pa.1)));
                    names.len() - 1
                };
                elems.push((prev, next, mi));
                prev = next;
            }
        }
        let nn = names.len();
        let dofs: Vec<Dof> = names
            .iter()
            .flat_map(|n| {
                FRAME_DIRS
                    .iter()
                    .map(move |&d| Dof::new(&self.component, n, d))
            })
            .collect();
        let mut s = SystemMatrices::zeros(dofs);
        for &(a, b, mi) in &elems {
            let mb = &self.members[mi];
            let (pa, pb) = (pos[a], pos[b]);
            let l = ((pb.0 - pa.0).powi(2) + (pb.1 - pa.1).powi(2)).sqrt();
            let (cx, cz) = ((pb.0 - pa.0) / l, (pb.1 - pa.1) / l);
            let (kb, mbm) = hermite(mb.young * mb.second_moment, mb.density * mb.area, l);
            let ka = mb.young * mb.area / l;
            let ma = mb.density * mb.area * l / 6.0;
            // local 6 DOFs (u₁, v₁, θ₁, u₂, v₂, θ₂), u along the member,
            // v = u·(cz, −cx) so that dv/ds = RY.
            let mut kl = [[0.0; 6]; 6];
            let mut ml = [[0.0; 6]; 6];
            let ax = [0usize, 3];
            let bd = [1usize, 2, 4, 5];
            for p in 0..2 {
                for q in 0..2 {
                    let sg = if p == q { 1.0 } else { -1.0 };
                    kl[ax[p]][ax[q]] = sg * ka;
                    ml[ax[p]][ax[q]] = if p == q { 2.0 * ma } else { ma };
                }
            }
            for p in 0..4 {
                for q in 0..4 {
                    kl[bd[p]][bd[q]] = kb[p][q];
                    ml[bd[p]][bd[q]] = mbm[p][q];
                }
            }
            // T: local = T · global, global per node (X, Z, RY)
            let mut t = [[0.0; 6]; 6];
            for o in [0usize, 3] {
                t[o][o] = cx;
                t[o][o + 1] = cz;
                t[o + 1][o] = cz;
                t[o + 1][o + 1] = -cx;
                t[o + 2][o + 2] = 1.0;
            }
            let g = [3 * a, 3 * a + 1, 3 * a + 2, 3 * b, 3 * b + 1, 3 * b + 2];
            for p in 0..6 {
                for q in 0..6 {
                    let (mut kv, mut mv) = (0.0, 0.0);
                    for r in 0..6 {
                        for u in 0..6 {
                            kv += t[r][p] * kl[r][u] * t[u][q];
                            mv += t[r][p] * ml[r][u] * t[u][q];
                        }
                    }
                    s.k[(g[p], g[q])] += kv;
                    s.m[(g[p], g[q])] += mv;
                }
            }
        }
        let s = finish(s, self.loss_factor, &self.rayleigh);
        let mut keep = vec![true; 3 * nn];
        for (n, sp) in self.supports.iter().enumerate() {
            let f = format!("supports[{n}]");
            let i = find(&names, &sp.node).map_err(|e| e.field(f.clone()))?;
            for d in &sp.fixed {
                let k = FRAME_DIRS.iter().position(|x| x == d).ok_or_else(|| {
                    Error::dof(format!(
                        "a planar frame in the X–Z plane can hold X, Z or RY; found {}",
                        d.as_str()
                    ))
                    .field(f.clone())
                })?;
                keep[3 * i + k] = false;
            }
        }
        Ok(reduce(&s, &keep))
    }

    /// Receptance between the given DOFs (node names of the frame, X, Z or
    /// RY), by exact modal superposition of all the frame's modes (the
    /// damping is proportional).
    pub fn receptance(&self, freqs: &[f64], outputs: &[Dof], inputs: &[Dof]) -> Result<FrfSet> {
        let s = self.matrices()?;
        let (a, b) = self.rayleigh.map_or((0.0, 0.0), |r| (r.alpha, r.beta));
        s.receptance_proportional(
            &self.component,
            freqs,
            outputs,
            inputs,
            self.loss_factor,
            a,
            b,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn eigenvalue_roots() {
        // Blevins, Formulas for Natural Frequency and Mode Shape (from memory, /work/shared/REFERENCES.md)
        assert!((free_free_lambda(1) - 4.73004074).abs() < 1e-7);
        assert!((clamped_free_lambda(1) - 1.87510407).abs() < 1e-7);
        assert!((clamped_free_lambda(2) - 4.69409113).abs() < 1e-7);
    }

    #[test]
    fn cantilever_static_tip_receptance() {
        // tip deflection of a cantilever under a tip load: P L³ / (3EI) (any strength-of-materials text)
        let b = Beam {
            component: "b".into(),
            young: 2.1e11,
            second_moment: 1e-8,
            density: 7850.0,
            area: 1e-4,
            length: 0.5,
            elements: 4,
            loss_factor: 0.0,
            rayleigh: None,
            left: BeamEnd::Clamped,
            right: BeamEnd::Free,
        };
        let h = b.receptance(&[0.0], &[4]).unwrap();
        let want = 0.5f64.powi(3) / (3.0 * 2.1e11 * 1e-8);
        assert!((h.get(0, 0, 0).re - want).abs() < 1e-9 * want);
        // tip rotation P L²/(2EI), RY = −dw/dx, so RY/Fz = −L²/(2EI)
        let want_r = -0.25 / (2.0 * 2.1e11 * 1e-8);
        assert!((h.get(0, 1, 0).re - want_r).abs() < 1e-9 * want_r.abs());
    }

    #[test]
    fn frame_cantilever_along_z_matches_beam() {
        // a vertical cantilever loaded in X: tip deflection P L³/(3EI); axial tip receptance L/(EA)
        let f = Frame {
            component: "f".into(),
            nodes: vec![
                FrameNode {
                    name: "base".into(),
                    x: 0.0,
                    z: 0.0,
                },
                FrameNode {
                    name: "tip".into(),
                    x: 0.0,
                    z: 0.8,
                },
            ],
            members: vec![FrameMember {
                a: "base".into(),
                b: "tip".into(),
                elements: 3,
                young: 2.0e11,
                second_moment: 2e-8,
                density: 7800.0,
                area: 3e-4,
            }],
            supports: vec![Support {
                node: "base".into(),
                fixed: vec![Direction::X, Direction::Z, Direction::RY],
            }],
            loss_factor: 0.0,
            rayleigh: None,
        };
        let tip = |d| Dof::new("f", "tip", d);
        let at = [tip(Direction::X), tip(Direction::Z), tip(Direction::RY)];
        let h = f.receptance(&[0.0], &at, &at).unwrap();
        let l = 0.8f64;
        assert!(
            (h.get(0, 0, 0).re - l.powi(3) / (3.0 * 2.0e11 * 2e-8)).abs()
                < 1e-9 * h.get(0, 0, 0).re
        );
        assert!((h.get(0, 1, 1).re - l / (2.0e11 * 3e-4)).abs() < 1e-9 * h.get(0, 1, 1).re);
        // a positive RY turns +Z towards +X: a tip force +X gives a positive RY
        assert!(h.get(0, 2, 0).re > 0.0);
        // the modal route equals the direct LU solution with damping
        let mut g = f.clone();
        g.loss_factor = 0.02;
        g.rayleigh = Some(Rayleigh {
            alpha: 1.5,
            beta: 2e-6,
        });
        let freqs = [3.0, 47.0, 333.0, 1200.0];
        let hm = g.receptance(&freqs, &at, &at).unwrap();
        let hd = g
            .matrices()
            .unwrap()
            .receptance("d", &freqs, &at, &at)
            .unwrap();
        for l in 0..freqs.len() {
            let scale = hd.line(l).iter().map(|v| v.norm()).fold(0.0, f64::max);
            for e in 0..9 {
                assert!((hm.line(l)[e] - hd.line(l)[e]).norm() < 1e-9 * scale);
            }
        }
    }
}
