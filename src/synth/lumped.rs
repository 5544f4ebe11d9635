//! Lumped networks: point masses at named nodes joined to each other or to
//! ground by links that are a spring k, a viscous damper c and a hysteretic
//! loss η together, with dynamic stiffness k(1 + iη) + iωc.
//!
//! The network is one-dimensional: every node has one DOF, whose direction
//! (`Z` unless chosen) is only the label of that DOF in the results.

use super::{check_value, SystemMatrices};
use crate::error::{Error, Result};
use crate::frf::{Direction, Dof, FrfSet};
use std::collections::HashMap;

fn default_dir() -> Direction {
    Direction::Z
}

/// A node and the mass on it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Mass {
    /// Node name, unique in the network; not "ground".
    pub node: String,
    /// Mass in kg (0 allowed for a node that only joins links).
    pub mass: f64,
    /// Direction label of this node's DOF; the network's `dir` when absent.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dir: Option<Direction>,
}

/// A link between node `a` and node `b`, or ground when `b` is absent.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Link {
    pub a: String,
    /// The other node; `None` (or absent) ties `a` to ground.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub b: Option<String>,
    /// Stiffness (N/m).
    #[serde(default)]
    pub k: f64,
    /// Viscous damping (N·s/m).
    #[serde(default)]
    pub c: f64,
    /// Loss factor of the stiffness: k(1 + iη).
    #[serde(default)]
    pub eta: f64,
}

/// A lumped mass–spring–damper network.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Network {
    /// Component namespace of the DOFs.
    pub component: String,
    /// Default direction label of the nodes.
    #[serde(default = "default_dir")]
    pub dir: Direction,
    pub masses: Vec<Mass>,
    pub links: Vec<Link>,
}

impl Network {
    /// The DOF of each node, in the order of `masses`.
    pub fn dofs(&self) -> Vec<Dof> {
        self.masses
            .iter()
            .map(|m| Dof::new(&self.component, &m.node, m.dir.unwrap_or(self.dir)))
            .collect()
    }

    fn node_index(&self) -> Result<HashMap<&str, usize>> {
        let mut idx = HashMap::new();
        for (n, m) in self.masses.iter().enumerate() {
            let f = format!("masses[{n}]");
            if m.node.trim().is_empty() || m.node == "ground" {
                return Err(Error::dof(format!(
                    "node name '{}' is not allowed; expected a non-empty name other than 'ground'",
                    m.node
                ))
                .field(f));
            }
            check_value(&format!("mass of node '{}'", m.node), m.mass, false)
                .map_err(|e| e.field(f.clone()))?;
            if idx.insert(m.node.as_str(), n).is_some() {
                return Err(Error::dof(format!("node '{}' is defined twice", m.node)).field(f));
            }
        }
        if idx.is_empty() {
            return Err(Error::dof(
                "the network has no nodes; expected at least one entry in 'masses'",
            ));
        }
        Ok(idx)
    }

    /// Check the description and build M, K, C and K_h.
    pub fn matrices(&self) -> Result<SystemMatrices> {
        let idx = self.node_index()?;
        let mut s = SystemMatrices::zeros(self.dofs());
        for (n, m) in self.masses.iter().enumerate() {
            s.m[(n, n)] = m.mass;
        }
        for (n, l) in self.links.iter().enumerate() {
            let f = format!("links[{n}]");
            let find = |name: &str| {
                idx.get(name).copied().ok_or_else(|| {
                    Error::dof(format!(
                        "link {} names node '{name}', which is not among the masses ({})",
                        n + 1,
                        self.masses
                            .iter()
                            .map(|m| m.node.as_str())
                            .collect::<Vec<_>>()
                            .join(", ")
                    ))
                    .field(f.clone())
                })
            };
            let a = find(&l.a)?;
            let b = match &l.b {
                None => None,
                Some(x) if x == "ground" => None,
                Some(x) => Some(find(x)?),
            };
            if b == Some(a) {
                return Err(
                    Error::dof(format!("link {} joins node '{}' to itself", n + 1, l.a)).field(f),
                );
            }
            check_value("link stiffness k", l.k, false).map_err(|e| e.field(f.clone()))?;
            check_value("link damping c", l.c, false).map_err(|e| e.field(f.clone()))?;
            check_value("link loss factor eta", l.eta, false).map_err(|e| e.field(f.clone()))?;
            if l.k == 0.0 && l.c == 0.0 {
                return Err(Error::numeric(format!(
                    "link {} has neither stiffness nor damping; expected k > 0 or c > 0",
                    n + 1
                ))
                .field(f));
            }
            if l.eta > 0.0 && l.k == 0.0 {
                return Err(Error::numeric(format!(
                    "link {} has a loss factor but no stiffness; the loss factor multiplies k",
                    n + 1
                ))
                .field(f));
            }
            let add = |mat: &mut nalgebra::DMatrix<f64>, v: f64| {
                mat[(a, a)] += v;
                if let Some(b) = b {
                    mat[(b, b)] += v;
                    mat[(a, b)] -= v;
                    mat[(b, a)] -= v;
                }
            };
            add(&mut s.k, l.k);
            add(&mut s.c, l.c);
            add(&mut s.kh, l.k * l.eta);
        }
        Ok(s)
    }

    /// Nodes that no stiffness path ties to ground, grouped by the parts of
    /// the network they form (each such part moves freely at 0 Hz).
    pub fn free_parts(&self) -> Result<Vec<Vec<String>>> {
        let idx = self.node_index()?;
        let n = self.masses.len();
        let mut parent: Vec<usize> = (0..n).collect();
        fn root(p: &mut [usize], mut i: usize) -> usize {
            while p[i] != i {
                p[i] = p[p[i]];
                i = p[i];
            }
            i
        }
        let mut grounded = vec![false; n];
        for l in &self.links {
            if l.k <= 0.0 {
                continue;
            }
            let Some(&a) = idx.get(l.a.as_str()) else {
                continue;
            };
            match l.b.as_deref() {
                None | Some("ground") => grounded[a] = true,
                Some(b) => {
                    if let Some(&b) = idx.get(b) {
                        let (ra, rb) = (root(&mut parent, a), root(&mut parent, b));
                        parent[ra] = rb;
                    }
                }
            }
        }
        let mut root_grounded = vec![false; n];
        for (i, &g) in grounded.iter().enumerate() {
            if g {
                let r = root(&mut parent, i);
                root_grounded[r] = true;
            }
        }
        let mut parts: HashMap<usize, Vec<String>> = HashMap::new();
        for i in 0..n {
            let r = root(&mut parent, i);
            if !root_grounded[r] {
                parts
                    .entry(r)
                    .or_default()
                    .push(self.masses[i].node.clone());
            }
        }
        let mut v: Vec<Vec<String>> = parts.into_values().collect();
        v.sort();
        Ok(v)
    }

    /// Receptance between the named nodes (all nodes when a list is empty).
    pub fn receptance(&self, freqs: &[f64], outputs: &[&str], inputs: &[&str]) -> Result<FrfSet> {
        let s = self.matrices()?;
        if freqs.first() == Some(&0.0) {
            let free = self.free_parts()?;
            if !free.is_empty() {
                return Err(Error::numeric(format!(
                    "the network '{}' has parts not tied to ground by a spring ({}); it moves freely at 0 Hz, so its receptance there is infinite: start the grid above 0 Hz or add a spring to ground",
                    self.component,
                    free.iter().map(|p| format!("[{}]", p.join(", "))).collect::<Vec<_>>().join(" ")
                )));
            }
        }
        let pick = |names: &[&str]| -> Result<Vec<Dof>> {
            if names.is_empty() {
                return Ok(s.dofs.clone());
            }
            names
                .iter()
                .map(|n| {
                    s.dofs
                        .iter()
                        .find(|d| d.node == *n)
                        .cloned()
                        .ok_or_else(|| {
                            Error::dof(format!(
                                "the network '{}' has no node '{n}'",
                                self.component
                            ))
                        })
                })
                .collect()
        };
        let o = pick(outputs)?;
        let i = pick(inputs)?;
        s.receptance(&self.component, freqs, &o, &i)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sdof() -> Network {
        Network {
            component: "t".into(),
            dir: Direction::Z,
            masses: vec![Mass {
                node: "1".into(),
                mass: 2.0,
                dir: None,
            }],
            links: vec![Link {
                a: "1".into(),
                b: None,
                k: 8.0e4,
                c: 15.0,
                eta: 0.0,
            }],
        }
    }

    #[test]
    fn sdof_matches_closed_form() {
        // H = 1/(k − ω²m + iωc) (any vibration textbook, e^{+iωt})
        let h = sdof().receptance(&[3.0, 30.0], &[], &[]).unwrap();
        for l in 0..2 {
            let w = h.omega(l);
            let want = 1.0 / num_complex::Complex64::new(8.0e4 - 2.0 * w * w, 15.0 * w);
            assert!((h.get(l, 0, 0) - want).norm() < 1e-12 * want.norm());
        }
    }

    #[test]
    fn bad_descriptions_are_errors() {
        let mut n = sdof();
        n.masses[0].mass = -1.0;
        assert!(n
            .matrices()
            .unwrap_err()
            .message
            .contains("expected a finite value of 0 or more"));
        let mut n = sdof();
        n.links[0].a = "9".into();
        assert!(n.matrices().unwrap_err().message.contains("node '9'"));
        let mut n = sdof();
        n.links[0].k = 0.0;
        n.links[0].c = 0.0;
        assert!(n.matrices().is_err());
        let mut n = sdof();
        n.links.clear();
        let e = n.receptance(&[0.0, 1.0], &[], &[]).unwrap_err();
        assert!(e.message.contains("moves freely at 0 Hz"), "{}", e.message);
        let json = serde_json::to_string(&sdof()).unwrap();
        let back: Network = serde_json::from_str(&json).unwrap();
        assert_eq!(back, sdof());
    }
}
