//! The geometry of a measurement read from a Universal File: the nodes of
//! its datasets 15 or 2411 (in global metres, as
//! [`crate::io::uff58`] resolves them through 18, 2420 and 164) and, for
//! each node, the directions of its DOFs from the node's displacement
//! coordinate system.
//!
//! A measurement program that writes FRFs as dataset 58 usually writes the
//! test geometry beside them: the DOF `104+X` of a dataset 58 is measured
//! along the x axis of node 104's displacement system, not necessarily the
//! global x. Each node gives six rows, `104+X`, `104+Y`, `104+Z` along the
//! system's axes and `104+RX`, `104+RY`, `104+RZ` about them, for any
//! component (UFF node numbers carry no component). A cartesian system's
//! axes are the same everywhere; a cylindrical one's are the radial,
//! tangential and axial directions at the node (the convention of dataset
//! 2420: x radial, y tangential, z along the axis). Such a file describes the
//! whole structure, so nodes that locate no channel or impact of the step
//! are expected ([`Geometry::whole_structure`]).

use super::geometry::{GeoRow, Geometry, Target};
use crate::error::{quote, Error, Result};
use crate::frf::{Direction, Dof};
use crate::io::uff58::{self, CoordSystem};

/// The axes (x, y, z) of a node's displacement system at `at` (global m).
fn axes_at(sys: &CoordSystem, at: [f64; 3]) -> [[f64; 3]; 3] {
    if sys.kind != 1 {
        return sys.axes;
    }
    let [ex, ey, ez] = sys.axes;
    let p = [
        at[0] - sys.origin[0],
        at[1] - sys.origin[1],
        at[2] - sys.origin[2],
    ];
    let dot = |a: [f64; 3], b: [f64; 3]| a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
    let (x, y) = (dot(p, ex), dot(p, ey));
    // on the axis the radial direction is undefined; the system's x is taken
    let th = if x == 0.0 && y == 0.0 {
        0.0
    } else {
        y.atan2(x)
    };
    let (s, c) = th.sin_cos();
    let comb = |a: f64, u: [f64; 3], b: f64, v: [f64; 3]| {
        [
            a * u[0] + b * v[0],
            a * u[1] + b * v[1],
            a * u[2] + b * v[2],
        ]
    };
    [comb(c, ex, s, ey), comb(-s, ex, c, ey), ez]
}

impl Geometry {
    /// The geometry carried by a UFF file's node datasets; errors name the
    /// file (and the node whose displacement system is missing).
    pub fn from_uff(bytes: &[u8], file: &str) -> Result<Geometry> {
        let (extras, _notes, _has58) = uff58::read_extras(bytes, file, "")?;
        let Some(g) = extras
            .and_then(|x| x.geometry)
            .filter(|g| !g.nodes.is_empty())
        else {
            return Err(Error::parse(
                "the file holds no nodes (dataset 15 or 2411); a geometry from a Universal File needs them, or give our geometry layout ('# mortise-geometry 1')",
            )
            .in_file(file.to_string()));
        };
        let mut rows = Vec::with_capacity(g.nodes.len() * 6);
        for n in &g.nodes {
            let axes = if n.disp_cs == 0 {
                [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]
            } else {
                let Some(sys) = g.systems.iter().find(|s| s.id == n.disp_cs) else {
                    return Err(Error::parse(format!(
                        "node {} measures its DOFs in coordinate system {}, which the file does not define (dataset 18 or 2420)",
                        n.id, n.disp_cs
                    ))
                    .in_file(file.to_string()));
                };
                axes_at(sys, n.xyz)
            };
            let node = n.id.to_string();
            for (k, dir) in Direction::SPATIAL.iter().enumerate() {
                let dof = Dof::new("", &node, *dir);
                rows.push(GeoRow {
                    label: dof.to_string(),
                    target: Target::Dof(dof),
                    at: n.xyz,
                    dir: Some(axes[k % 3]),
                    place: format!("node {}", quote(&node)),
                });
            }
        }
        Ok(Geometry {
            unit: "m".into(),
            to_metres: 1.0,
            rows,
            file: Some(file.to_string()),
            whole_structure: true,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A dataset 2411 of two nodes, the second in displacement system 5.
    fn file(with_system: bool) -> String {
        let mut t = String::from("    -1\n  2411\n");
        t.push_str("         1         0         0         1\n   1.0000000000000000D-01   0.0000000000000000D+00   0.0000000000000000D+00\n");
        t.push_str("         2         0         5         1\n   0.0000000000000000D+00   2.0000000000000000D-01   0.0000000000000000D+00\n");
        t.push_str("    -1\n");
        if with_system {
            // dataset 2420: system 5, cartesian, rotated 90° about z
            t.push_str(
                "    -1\n  2420\n         1\nPART\n         5         0         1\nROTATED\n",
            );
            t.push_str(
                "   0.0000000000000000D+00   1.0000000000000000D+00   0.0000000000000000D+00\n",
            );
            t.push_str(
                "  -1.0000000000000000D+00   0.0000000000000000D+00   0.0000000000000000D+00\n",
            );
            t.push_str(
                "   0.0000000000000000D+00   0.0000000000000000D+00   1.0000000000000000D+00\n",
            );
            t.push_str(
                "   0.0000000000000000D+00   0.0000000000000000D+00   0.0000000000000000D+00\n",
            );
            t.push_str("    -1\n");
        }
        t
    }

    #[test]
    fn nodes_give_six_rows_along_their_displacement_system() {
        let g = Geometry::from_uff(file(true).as_bytes(), "g.unv").unwrap();
        assert!(g.whole_structure);
        assert_eq!(g.rows.len(), 12);
        let x2 = g
            .locate(&Dof::parse("frame:2+X", "").unwrap(), "sensor channel")
            .unwrap();
        assert_eq!(x2.at, [0.0, 0.2, 0.0]);
        // system 5's x axis is the global y (rotation of 90° about z)
        assert!((x2.dir[0]).abs() < 1e-15 && (x2.dir[1] - 1.0).abs() < 1e-15);
        let y1 = g
            .locate(&Dof::parse("frame:1-Y", "").unwrap(), "impact")
            .unwrap();
        assert_eq!(y1.dir, [0.0, -1.0, 0.0]);
    }

    #[test]
    fn a_missing_system_or_no_nodes_is_refused_naming_the_file() {
        let e = Geometry::from_uff(file(false).as_bytes(), "g.unv").unwrap_err();
        assert!(e.to_string().contains("coordinate system 5"), "{e}");
        assert!(e.to_string().contains("g.unv"), "{e}");
    }

    #[test]
    fn a_cylindrical_system_gives_radial_tangential_and_axial_directions() {
        let sys = CoordSystem {
            id: 3,
            kind: 1,
            name: String::new(),
            origin: [0.0; 3],
            axes: [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]],
            dataset: 2420,
            line: 1,
        };
        let a = axes_at(&sys, [0.0, 2.0, 1.0]);
        let close = |u: [f64; 3], v: [f64; 3]| u.iter().zip(v).all(|(p, q)| (p - q).abs() < 1e-15);
        assert!(close(a[0], [0.0, 1.0, 0.0]), "{a:?}");
        assert!(close(a[1], [-1.0, 0.0, 0.0]), "{a:?}");
        assert!(close(a[2], [0.0, 0.0, 1.0]), "{a:?}");
    }
}
