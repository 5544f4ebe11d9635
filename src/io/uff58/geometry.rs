//! Geometry: node coordinates (datasets 15 and 2411), coordinate systems
//! (18 and 2420) and trace lines (82), into one [`Geometry`] whose node
//! coordinates are **global, in metres**.
//!
//! Layouts (the public dataset descriptions, as reproduced in pyuff 2.5.8
//! `datasets/`):
//! * 15: one line a node, `4I10,1P3E13.5`: node, definition coordinate
//!   system, displacement coordinate system, colour, x y z;
//! * 2411: two lines a node, `4I10` then `1P3D25.16` (same fields);
//! * 18: per system `5I10` (number, type, reference system, colour, method
//!   of definition 1 = origin, point on +x axis, point on +xz plane), a
//!   name, then 9 reals `1P6E13.5` over two lines: origin, point on +x, point
//!   in the +xz plane, each in the reference system;
//! * 2420: part UID, part name, then per system `3I10` (label, type, colour),
//!   a name and four rows `1P3D25.16`: rows 1-3 the unit vectors of the local
//!   x, y, z axes in the global system, row 4 the origin;
//! * 82: `3I10` (trace line number, number of node entries, colour), an ID
//!   line, then the node numbers `8I10`; a 0 lifts the pen (starts a new
//!   polyline).
//!
//! How coordinates end global: a node's definition system 0 is the global
//! system; another number names a system of 18 or 2420 anywhere in the file
//! (a missing one is refused, naming the node). Cartesian (type 0): global =
//! origin + x·e_x + y·e_y + z·e_z. Cylindrical (type 1): (r, θ in degrees, z)
//! → (r cos θ, r sin θ, z) in the system, then as cartesian. Spherical
//! (type 2) is refused (its angle conventions differ between programs). An 18
//! system is built from its three points taken to global through its
//! reference system (cycles refused): e_x along origin → x point, e_z the
//! part of origin → xz point normal to e_x, e_y = e_z × e_x. A 2420 matrix
//! must be orthonormal within 1e-6. Lengths are divided by the length factor
//! of the dataset 164 in force where each dataset stands (see `units164.rs`);
//! angles are not. The displacement system of each node is kept as read (it
//! says in which directions that node's DOFs are measured).

use super::block::Block;
use super::text::perr;
use super::units164::UnitSystem;
use crate::error::Result;
use std::collections::HashMap;

/// A node in global coordinates (m).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Node {
    pub id: i64,
    /// Global x, y, z in m.
    pub xyz: [f64; 3],
    /// The system the file defined the node in (0 global).
    pub def_cs: i64,
    /// The system of the node's DOF directions (0 global).
    pub disp_cs: i64,
    pub color: i64,
}

/// A coordinate system resolved to global.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CoordSystem {
    pub id: i64,
    /// 0 cartesian, 1 cylindrical.
    pub kind: i64,
    pub name: String,
    /// Origin in global coordinates (m).
    pub origin: [f64; 3],
    /// Unit vectors of the local x, y, z axes in global coordinates.
    pub axes: [[f64; 3]; 3],
    /// Dataset (18 or 2420) and its 1-based start line.
    pub dataset: i64,
    pub line: usize,
}

/// A trace line: polylines through node numbers.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TraceLine {
    pub id: i64,
    pub color: i64,
    pub description: String,
    pub polylines: Vec<Vec<i64>>,
}

/// The geometry of a file.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct Geometry {
    pub nodes: Vec<Node>,
    pub systems: Vec<CoordSystem>,
    pub lines: Vec<TraceLine>,
}

/// Counts and bounding box, for `inspect` and the page's cards.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct GeometrySummary {
    pub nodes: usize,
    pub systems: usize,
    pub trace_lines: usize,
    /// Global bounding box in m: [min xyz, max xyz] (absent without nodes).
    pub bbox: Option<[[f64; 3]; 2]>,
}

impl Geometry {
    pub fn summary(&self) -> GeometrySummary {
        let bbox = (!self.nodes.is_empty()).then(|| {
            let mut b = [[f64::INFINITY; 3], [f64::NEG_INFINITY; 3]];
            for n in &self.nodes {
                for (k, v) in n.xyz.iter().enumerate() {
                    b[0][k] = b[0][k].min(*v);
                    b[1][k] = b[1][k].max(*v);
                }
            }
            b
        });
        GeometrySummary {
            nodes: self.nodes.len(),
            systems: self.systems.len(),
            trace_lines: self.lines.len(),
            bbox,
        }
    }
    /// The node table as JSON (`{"nodes": [{"id", "xyz", ...}], "systems",
    /// "lines"}`), for the page's drawing.
    pub fn to_json(&self) -> String {
        serde_json::to_string(self).unwrap_or_else(|_| "{}".to_string())
    }
    /// One line for `inspect`.
    pub fn describe(&self) -> String {
        let s = self.summary();
        let bbox = match s.bbox {
            Some([a, b]) => format!(
                ", bounding box x {} to {} m, y {} to {} m, z {} to {} m",
                a[0], b[0], a[1], b[1], a[2], b[2]
            ),
            None => String::new(),
        };
        format!(
            "geometry: {} node(s), {} coordinate system(s), {} trace line(s){bbox}",
            s.nodes, s.systems, s.trace_lines
        )
    }
}

/// A node as read: local coordinates in file units, the length factor to m.
pub(super) struct RawNode {
    id: i64,
    def_cs: i64,
    disp_cs: i64,
    color: i64,
    local: [f64; 3],
    to_m: f64,
    line: usize,
}

enum RawDef {
    /// 18: reference system, three points (file units).
    Points { reference: i64, pts: [[f64; 3]; 3] },
    /// 2420: axes rows and origin (file units).
    Matrix {
        axes: [[f64; 3]; 3],
        origin: [f64; 3],
    },
}

pub(super) struct RawSystem {
    id: i64,
    kind: i64,
    name: String,
    def: RawDef,
    to_m: f64,
    dataset: i64,
    line: usize,
}

/// What the datasets of a file give, before resolution.
#[derive(Default)]
pub(super) struct GeometryBuilder {
    nodes: Vec<RawNode>,
    systems: Vec<RawSystem>,
    lines: Vec<(TraceLine, usize)>,
}

fn to_m(u: Option<&UnitSystem>) -> f64 {
    u.map(|s| s.length_to_si()).unwrap_or(1.0)
}

fn three(v: &[f64]) -> [f64; 3] {
    [v[0], v[1], v[2]]
}

impl GeometryBuilder {
    pub(super) fn is_empty(&self) -> bool {
        self.nodes.is_empty() && self.systems.is_empty() && self.lines.is_empty()
    }

    /// Dataset 15: one line a node.
    pub(super) fn add_15(&mut self, b: &Block, u: Option<&UnitSystem>) -> Result<usize> {
        for i in 0..b.len() {
            let f = "node record (node, definition system, displacement system, colour, x, y, z)";
            let (no, t) = b.line(i, f)?;
            let toks: Vec<&str> = t.split_whitespace().collect();
            let (ints, reals) = if toks.len() == 7 {
                (b.ints(i, 4, 10, f)?, {
                    let v: Option<Vec<f64>> = toks[4..]
                        .iter()
                        .map(|s| super::text::parse_num(s))
                        .collect();
                    v.ok_or_else(|| {
                        b.err(
                            i,
                            f,
                            format!(
                                "expected x, y, z as numbers, found '{}'",
                                crate::error::quote(t)
                            ),
                        )
                    })?
                })
            } else {
                let ints = b.ints(i, 4, 10, f)?;
                let rest: String = t.chars().skip(40).collect();
                let r: Option<Vec<f64>> = (0..3)
                    .map(|k| {
                        let s: String = rest.chars().skip(13 * k).take(13).collect();
                        super::text::parse_num(s.trim())
                    })
                    .collect();
                (
                    ints,
                    r.ok_or_else(|| {
                        b.err(
                            i,
                            f,
                            format!(
                                "expected 4 integers and 3 reals (4I10, 3E13.5), found '{}'",
                                crate::error::quote(t)
                            ),
                        )
                    })?,
                )
            };
            self.push_node(b, i, no, &ints, &reals, u)?;
        }
        Ok(b.len())
    }

    /// Dataset 2411: two lines a node.
    pub(super) fn add_2411(&mut self, b: &Block, u: Option<&UnitSystem>) -> Result<usize> {
        if b.len() % 2 != 0 {
            return Err(b.err(
                b.len(),
                "record 2 (coordinates x, y, z)",
                format!(
                    "dataset 2411 has {} record lines; expected two a node (node record, then coordinates), so the last node has no coordinates",
                    b.len()
                ),
            ));
        }
        for n in 0..b.len() / 2 {
            let ints = b.ints(
                2 * n,
                4,
                10,
                "record 1 (node, export system, displacement system, colour)",
            )?;
            let reals = b.reals(2 * n + 1, 3, 25, "record 2 (coordinates x, y, z)")?;
            let no = b.lines[2 * n].0;
            self.push_node(b, 2 * n, no, &ints, &reals, u)?;
        }
        Ok(b.len() / 2)
    }

    fn push_node(
        &mut self,
        b: &Block,
        i: usize,
        no: usize,
        ints: &[i64],
        reals: &[f64],
        u: Option<&UnitSystem>,
    ) -> Result<()> {
        if reals.iter().any(|v| !v.is_finite()) {
            return Err(b.err(i, "coordinates", "a coordinate is not finite"));
        }
        if ints[0] < 1 {
            return Err(b.err(
                i,
                "node number",
                format!("node number {}; expected a positive integer", ints[0]),
            ));
        }
        self.nodes.push(RawNode {
            id: ints[0],
            def_cs: ints[1],
            disp_cs: ints[2],
            color: ints[3],
            local: three(reals),
            to_m: to_m(u),
            line: no,
        });
        Ok(())
    }

    /// Dataset 18: five record lines a system (header, name, 6 + 3 reals).
    pub(super) fn add_18(&mut self, b: &Block, u: Option<&UnitSystem>) -> Result<usize> {
        if b.len() % 4 != 0 {
            return Err(b.err(
                b.len(),
                "record 3 (definition points)",
                format!(
                    "dataset 18 has {} record lines; expected four a coordinate system (numbers, name, two lines of definition points)",
                    b.len()
                ),
            ));
        }
        for n in 0..b.len() / 4 {
            let h = b.ints(
                4 * n,
                5,
                10,
                "record 1 (system number, type, reference system, colour, method)",
            )?;
            if h[4] != 1 {
                return Err(b.err(
                    4 * n,
                    "record 1, method of definition",
                    format!(
                        "method of definition {}; expected 1 (origin, point on +x axis, point on +xz plane)",
                        h[4]
                    ),
                ));
            }
            let name = b.text(4 * n + 1, "record 2 (name)")?;
            let a = b.reals(4 * n + 2, 6, 13, "record 3 (origin and point on +x axis)")?;
            let c = b.reals(4 * n + 3, 3, 13, "record 3 (point on +xz plane)")?;
            self.systems.push(RawSystem {
                id: h[0],
                kind: h[1],
                name,
                def: RawDef::Points {
                    reference: h[2],
                    pts: [three(&a[0..3]), three(&a[3..6]), three(&c)],
                },
                to_m: to_m(u),
                dataset: 18,
                line: b.lines[4 * n].0,
            });
        }
        Ok(b.len() / 4)
    }

    /// Dataset 2420: part UID and name, then six record lines a system.
    pub(super) fn add_2420(&mut self, b: &Block, u: Option<&UnitSystem>) -> Result<usize> {
        b.ints(0, 1, 10, "record 1 (part UID)")?;
        b.text(1, "record 2 (part name)")?;
        let rest = b.len().saturating_sub(2);
        if rest % 6 != 0 {
            return Err(b.err(
                b.len(),
                "records 3-8 (coordinate system)",
                format!(
                    "dataset 2420 has {rest} record lines after the part name; expected six a coordinate system (label/type/colour, name, four matrix rows)"
                ),
            ));
        }
        for n in 0..rest / 6 {
            let k = 2 + 6 * n;
            let h = b.ints(k, 3, 10, "record 3 (system label, type, colour)")?;
            let name = b.text(k + 1, "record 4 (name)")?;
            let mut rows = [[0.0; 3]; 4];
            for (r, row) in rows.iter_mut().enumerate() {
                let v = b.reals(
                    k + 2 + r,
                    3,
                    25,
                    &format!("record {} (transformation matrix row {})", 5 + r, r + 1),
                )?;
                *row = three(&v);
            }
            // orthonormal axes
            for i in 0..3 {
                for j in 0..3 {
                    let d: f64 = (0..3).map(|c| rows[i][c] * rows[j][c]).sum();
                    let want = if i == j { 1.0 } else { 0.0 };
                    if (d - want).abs() > 1e-6 {
                        return Err(b.err(
                            k + 2 + i,
                            &format!("record {} (transformation matrix row {})", 5 + i, i + 1),
                            format!(
                                "rows 1-3 of the transformation matrix of system {} are not orthonormal (row {} · row {} = {d}); expected unit axes at right angles",
                                h[0],
                                i + 1,
                                j + 1
                            ),
                        ));
                    }
                }
            }
            self.systems.push(RawSystem {
                id: h[0],
                kind: h[1],
                name,
                def: RawDef::Matrix {
                    axes: [rows[0], rows[1], rows[2]],
                    origin: rows[3],
                },
                to_m: to_m(u),
                dataset: 2420,
                line: b.lines[k].0,
            });
        }
        Ok(rest / 6)
    }

    /// Dataset 82: one trace line.
    pub(super) fn add_82(&mut self, b: &Block) -> Result<usize> {
        let h = b.ints(
            0,
            3,
            10,
            "record 1 (trace line number, number of nodes, colour)",
        )?;
        let description = b.text(1, "record 2 (identification line)")?;
        let n = usize::try_from(h[1]).map_err(|_| {
            b.err(
                0,
                "record 1, number of nodes",
                format!("number of nodes {}; expected 0 or more", h[1]),
            )
        })?;
        let mut nodes = Vec::new();
        let mut i = 2;
        while nodes.len() < n {
            let (no, t) = b.line(
                i,
                &format!(
                    "record 3 (node numbers: {n} announced, {} read)",
                    nodes.len()
                ),
            )?;
            for tok in t.split_whitespace() {
                match super::text::parse_int(tok) {
                    Some(v) => nodes.push(v),
                    None => {
                        return Err(super::text::perr(
                            b.file,
                            no,
                            "record 3 (node numbers)",
                            format!(
                                "expected node numbers (8I10), found '{}'",
                                crate::error::quote(t)
                            ),
                        ))
                    }
                }
            }
            i += 1;
        }
        if nodes.len() != n || i != b.len() {
            return Err(b.err(
                i.min(b.len().saturating_sub(1)),
                "record 1, number of nodes",
                format!(
                    "record 1 announces {n} node entries but the dataset holds {}; expected the same count",
                    nodes.len() + b.lines[i.min(b.len())..].iter().map(|l| l.1.split_whitespace().count()).sum::<usize>()
                ),
            ));
        }
        let mut polylines = vec![Vec::new()];
        for v in nodes {
            if v == 0 {
                if polylines.last().is_some_and(|p: &Vec<i64>| !p.is_empty()) {
                    polylines.push(Vec::new());
                }
            } else {
                if let Some(p) = polylines.last_mut() {
                    p.push(v);
                }
            }
        }
        polylines.retain(|p| !p.is_empty());
        self.lines.push((
            TraceLine {
                id: h[0],
                color: h[2],
                description,
                polylines,
            },
            b.start,
        ));
        Ok(1)
    }

    /// Resolve systems and nodes to global; `warnings` gets trace lines
    /// through nodes the file does not define.
    pub(super) fn build(self, file: &str, warnings: &mut Vec<String>) -> Result<Geometry> {
        let mut by_id: HashMap<i64, usize> = HashMap::new();
        for (k, s) in self.systems.iter().enumerate() {
            if s.id == 0 {
                return Err(perr(
                    file,
                    s.line,
                    "coordinate system number",
                    "coordinate system number 0 is the global system; expected 1 or more",
                ));
            }
            if let Some(&o) = by_id.get(&s.id) {
                return Err(perr(
                    file,
                    s.line,
                    "coordinate system number",
                    format!("coordinate system {} is defined twice (also at line {}); expected each number once", s.id, self.systems[o].line),
                ));
            }
            by_id.insert(s.id, k);
        }
        let mut frames: HashMap<i64, Frame> = HashMap::new();
        for s in &self.systems {
            resolve(
                file,
                s.id,
                &self.systems,
                &by_id,
                &mut frames,
                &mut Vec::new(),
            )?;
        }
        let mut nodes = Vec::with_capacity(self.nodes.len());
        let mut seen: HashMap<i64, (usize, usize)> = HashMap::new();
        for n in &self.nodes {
            let frame = if n.def_cs == 0 {
                Frame::global()
            } else {
                match frames.get(&n.def_cs) {
                    Some(f) => f.clone(),
                    None => {
                        return Err(perr(
                            file,
                            n.line,
                            "definition coordinate system",
                            format!(
                                "node {} is defined in coordinate system {}, which the file does not define; expected a system of dataset 18 or 2420 (or 0, global)",
                                n.id, n.def_cs
                            ),
                        ))
                    }
                }
            };
            if n.disp_cs != 0 && !frames.contains_key(&n.disp_cs) {
                return Err(perr(
                    file,
                    n.line,
                    "displacement coordinate system",
                    format!(
                        "node {} has displacement coordinate system {}, which the file does not define; expected a system of dataset 18 or 2420 (or 0, global)",
                        n.id, n.disp_cs
                    ),
                ));
            }
            let xyz = frame
                .point(n.local, n.to_m)
                .map_err(|m| perr(file, n.line, "coordinates", m))?;
            if let Some(&(o, first_line)) = seen.get(&n.id) {
                let prev: &Node = &nodes[o];
                if prev.xyz != xyz {
                    return Err(perr(
                        file,
                        n.line,
                        "node number",
                        format!("node {} is defined twice with different coordinates (also at line {}); expected each node once", n.id, first_line),
                    ));
                }
                continue;
            }
            seen.insert(n.id, (nodes.len(), n.line));
            nodes.push(Node {
                id: n.id,
                xyz,
                def_cs: n.def_cs,
                disp_cs: n.disp_cs,
                color: n.color,
            });
        }
        let mut systems: Vec<CoordSystem> = Vec::new();
        for s in &self.systems {
            if let Some(f) = frames.get(&s.id) {
                systems.push(CoordSystem {
                    id: s.id,
                    kind: s.kind,
                    name: s.name.clone(),
                    origin: f.origin,
                    axes: f.axes,
                    dataset: s.dataset,
                    line: s.line,
                });
            }
        }
        let mut lines = Vec::new();
        for (t, line) in self.lines {
            let missing = t
                .polylines
                .iter()
                .flatten()
                .filter(|v| !seen.contains_key(v))
                .count();
            if missing > 0 && !nodes.is_empty() {
                warnings.push(format!(
                    "{file}: line {line}: trace line {} goes through {missing} node entr(ies) the file does not define; it is kept as read",
                    t.id
                ));
            }
            lines.push(t);
        }
        Ok(Geometry {
            nodes,
            systems,
            lines,
        })
    }
}

#[derive(Clone)]
struct Frame {
    kind: i64,
    origin: [f64; 3],
    axes: [[f64; 3]; 3],
}

fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}
fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}
fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}
fn scale(a: [f64; 3], s: f64) -> [f64; 3] {
    [a[0] * s, a[1] * s, a[2] * s]
}

impl Frame {
    fn global() -> Frame {
        Frame {
            kind: 0,
            origin: [0.0; 3],
            axes: [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]],
        }
    }
    /// A point given in this system (file units, factor `to_m`) in global m.
    fn point(&self, p: [f64; 3], to_m: f64) -> std::result::Result<[f64; 3], String> {
        let c = match self.kind {
            0 => scale(p, to_m),
            1 => {
                let t = p[1].to_radians();
                [p[0] * to_m * t.cos(), p[0] * to_m * t.sin(), p[2] * to_m]
            }
            k => {
                return Err(format!(
                "coordinate system type {k} ({}); mortise reads 0 (cartesian) and 1 (cylindrical)",
                if k == 2 { "spherical" } else { "unknown" }
            ))
            }
        };
        let mut g = self.origin;
        for (a, ax) in self.axes.iter().enumerate() {
            for k in 0..3 {
                g[k] += c[a] * ax[k];
            }
        }
        Ok(g)
    }
}

fn resolve(
    file: &str,
    id: i64,
    systems: &[RawSystem],
    by_id: &HashMap<i64, usize>,
    frames: &mut HashMap<i64, Frame>,
    stack: &mut Vec<i64>,
) -> Result<()> {
    if frames.contains_key(&id) {
        return Ok(());
    }
    let Some(&k) = by_id.get(&id) else {
        return Ok(());
    };
    let s = &systems[k];
    if !matches!(s.kind, 0 | 1) {
        return Err(perr(
            file,
            s.line,
            "coordinate system type",
            format!(
                "coordinate system {} has type {} ({}); expected 0 (cartesian) or 1 (cylindrical)",
                s.id,
                s.kind,
                if s.kind == 2 {
                    "spherical, not read: its angle conventions differ between programs"
                } else {
                    "unknown"
                }
            ),
        ));
    }
    stack.push(id);
    let frame = match &s.def {
        RawDef::Matrix { axes, origin } => Frame {
            kind: s.kind,
            origin: scale(*origin, s.to_m),
            axes: *axes,
        },
        RawDef::Points { reference, pts } => {
            let rf = if *reference == 0 {
                Frame::global()
            } else {
                if stack.contains(reference) {
                    return Err(perr(
                        file,
                        s.line,
                        "reference coordinate system",
                        format!(
                            "coordinate system {} is defined through itself (reference chain {}); expected a chain ending at 0 (global)",
                            s.id,
                            stack.iter().map(|v| v.to_string()).collect::<Vec<_>>().join(" → ")
                        ),
                    ));
                }
                if !by_id.contains_key(reference) {
                    return Err(perr(
                        file,
                        s.line,
                        "reference coordinate system",
                        format!(
                            "coordinate system {} is defined in reference system {reference}, which the file does not define; expected 0 (global) or a system of dataset 18 or 2420",
                            s.id
                        ),
                    ));
                }
                resolve(file, *reference, systems, by_id, frames, stack)?;
                frames.get(reference).cloned().unwrap_or_else(Frame::global)
            };
            let g: Vec<[f64; 3]> = pts
                .iter()
                .map(|p| rf.point(*p, s.to_m))
                .collect::<std::result::Result<_, _>>()
                .map_err(|m| perr(file, s.line, "record 3 (definition points)", m))?;
            let x = sub(g[1], g[0]);
            let lx = dot(x, x).sqrt();
            let v = sub(g[2], g[0]);
            let ex = if lx > 0.0 {
                scale(x, 1.0 / lx)
            } else {
                [0.0; 3]
            };
            let zp = sub(v, scale(ex, dot(v, ex)));
            let lz = dot(zp, zp).sqrt();
            let scale_ref = lx.max(dot(v, v).sqrt());
            if lx == 0.0 || lz <= 1e-9 * scale_ref {
                return Err(perr(
                    file,
                    s.line,
                    "record 3 (definition points)",
                    format!(
                        "coordinate system {}: the origin, the point on +x and the point in the +xz plane do not span a plane; expected three points not on one line",
                        s.id
                    ),
                ));
            }
            let ez = scale(zp, 1.0 / lz);
            let ey = cross(ez, ex);
            Frame {
                kind: s.kind,
                origin: g[0],
                axes: [ex, ey, ez],
            }
        }
    };
    stack.pop();
    frames.insert(id, frame);
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::super::scan::parse_file;

    fn build(text: &str) -> super::Geometry {
        let p = parse_file(text.as_bytes(), "g.unv").unwrap();
        p.geometry.build("g.unv", &mut Vec::new()).unwrap()
    }

    #[test]
    fn cylindrical_system_defined_in_a_local_one_and_mm() {
        // system 2 (cartesian): origin (0, 0, 1) m, local x = global y,
        // local z = global z; system 3 (cylindrical) defined in system 2 at
        // its origin with the same axes; a node at r = 2000 mm, θ = 90°,
        // z = 500 mm in system 3 is at local (0, 2, 0.5) of system 2, i.e.
        // global (−2, 0, 1.5) m (hand computation)
        let text = "    -1\n   164\n         5     mm (milli newton)         1\n   1.0D+03   1.0D+03   1.0D+00\n   0.0D+00\n    -1\n\
    -1\n    18\n         2         0         0         1         1\nframe\n  0.00000e+00  0.00000e+00  1.00000e+03  0.00000e+00  1.00000e+03  1.00000e+03\n  0.00000e+00  0.00000e+00  2.00000e+03\n\
         3         1         2         1         1\ncylinder\n  0.00000e+00  0.00000e+00  0.00000e+00  1.00000e+00  0.00000e+00  0.00000e+00\n  0.00000e+00  0.00000e+00  1.00000e+00\n    -1\n\
    -1\n  2411\n         7         3         0         1\n   2.0000000000000000D+03   9.0000000000000000D+01   5.0000000000000000D+02\n    -1\n";
        let g = build(text);
        let n = &g.nodes[0];
        let want = [-2.0, 0.0, 1.5];
        for (a, b) in n.xyz.iter().zip(want) {
            assert!((a - b).abs() < 1e-12, "{:?}", n.xyz);
        }
        assert_eq!(g.systems.len(), 2);
        let s = g.summary();
        assert_eq!(s.bbox, Some([n.xyz, n.xyz]));
    }
}
