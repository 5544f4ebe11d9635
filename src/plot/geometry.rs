//! A file's geometry as a three-view sketch (top X–Y, front X–Z, side Y–Z):
//! the nodes, the trace lines, and an arrow at each node for every
//! translational DOF the file's FRFs use. Written as plain SVG text rather
//! than through plotters: three small panels of points and lines, no axes
//! or ticks, and the page shows it as an image (no script can run in it).
//!
//! [`Views`] is the one projection of the three-view sketches (this one and
//! the virtual points' in `vpt_geometry.rs`): one scale for the three
//! panels, each centred on the middle of the points' bounding box.

use crate::frf::{Direction, Dof};
use crate::io::uff58::Geometry;
use std::collections::BTreeMap;
use std::fmt::Write as _;

const W: f64 = 150.0;
const PAD: f64 = 14.0;

/// The three views: title, horizontal axis, vertical axis (0 X, 1 Y, 2 Z).
pub(super) const VIEWS: [(&str, usize, usize); 3] = [
    ("top (X–Y)", 0, 1),
    ("front (X–Z)", 0, 2),
    ("side (Y–Z)", 1, 2),
];

/// Three orthographic views side by side, square panels of `size` pixels
/// from (`left`, `top`), one scale (pixels per metre) for all of them.
#[derive(Debug, Clone, Copy)]
pub(super) struct Views {
    mid: [f64; 3],
    /// Pixels per unit of the coordinates.
    pub(super) scale: f64,
    pub(super) size: f64,
    pub(super) left: f64,
    pub(super) top: f64,
}

impl Views {
    /// Views fitting `points` inside panels of `size` pixels with `pad`
    /// pixels free at each edge; `None` without a finite point. Points all
    /// at one place are drawn at the panels' centres.
    pub(super) fn fit(
        points: impl IntoIterator<Item = [f64; 3]>,
        size: f64,
        pad: f64,
        left: f64,
        top: f64,
    ) -> Option<Views> {
        let mut lo = [f64::INFINITY; 3];
        let mut hi = [f64::NEG_INFINITY; 3];
        for p in points {
            if p.iter().all(|v| v.is_finite()) {
                for k in 0..3 {
                    lo[k] = lo[k].min(p[k]);
                    hi[k] = hi[k].max(p[k]);
                }
            }
        }
        if !lo[0].is_finite() {
            return None;
        }
        let span = (0..3).map(|k| hi[k] - lo[k]).fold(0.0f64, f64::max);
        let scale = if span > 0.0 {
            (size - 2.0 * pad) / span
        } else {
            1.0
        };
        Some(Views {
            mid: [0, 1, 2].map(|k| (lo[k] + hi[k]) / 2.0),
            scale,
            size,
            left,
            top,
        })
    }

    /// Pixel position of `p` in view `v` (0 top, 1 front, 2 side).
    pub(super) fn px(&self, v: usize, p: &[f64; 3]) -> (f64, f64) {
        let (_, h, vv) = VIEWS[v];
        (
            self.left + v as f64 * self.size + self.size / 2.0 + (p[h] - self.mid[h]) * self.scale,
            self.top + self.size / 2.0 - (p[vv] - self.mid[vv]) * self.scale,
        )
    }

    /// A direction as seen in view `v`: its on-screen components (pixels
    /// down positive) per unit length, and its component toward the viewer.
    pub(super) fn dir(&self, v: usize, d: &[f64; 3]) -> (f64, f64, f64) {
        let (_, h, vv) = VIEWS[v];
        // the axis out of the screen is h × v (right-handed): +Z, −Y, +X
        let toward = match v {
            0 => d[2],
            1 => -d[1],
            _ => d[0],
        };
        (d[h], -d[vv], toward)
    }

    /// Left edge of panel `v`.
    pub(super) fn panel_left(&self, v: usize) -> f64 {
        self.left + v as f64 * self.size
    }
}

fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// The sketch, or `None` without nodes. `dofs` are the DOFs of the file's
/// sets; those whose node label is a node number of the geometry get an
/// arrow in their direction (rotations are left out).
pub fn geometry_svg(g: &Geometry, dofs: &[Dof]) -> Option<String> {
    if g.nodes.is_empty() {
        return None;
    }
    let pos: BTreeMap<i64, [f64; 3]> = g.nodes.iter().map(|n| (n.id, n.xyz)).collect();
    let views = Views::fit(pos.values().copied(), W, PAD, 0.0, 0.0)?;
    let arrow = 0.12 * (W - 2.0 * PAD);
    let mut s = String::new();
    let _ = write!(
        s,
        r##"<svg xmlns="http://www.w3.org/2000/svg" width="{}" height="{}" viewBox="0 0 {} {}" font-family="sans-serif" font-size="9"><rect width="100%" height="100%" fill="#ffffff"/>"##,
        3.0 * W,
        W + 12.0,
        3.0 * W,
        W + 12.0
    );
    let mut seen = std::collections::BTreeSet::new();
    let arrows: Vec<([f64; 3], usize, f64)> = dofs
        .iter()
        .filter_map(|d| {
            let id: i64 = d.node.parse().ok()?;
            let p = *pos.get(&id)?;
            let (axis, sign) = match d.dir {
                Direction::X => (0, 1.0),
                Direction::Y => (1, 1.0),
                Direction::Z => (2, 1.0),
                _ => return None,
            };
            let sign = if d.positive { sign } else { -sign };
            seen.insert((id, axis, sign as i8))
                .then_some((p, axis, sign))
        })
        .collect();
    for (v, (title, h, vv)) in VIEWS.iter().enumerate() {
        let ox = views.panel_left(v);
        let px = |p: &[f64; 3]| views.px(v, p).0;
        let py = |p: &[f64; 3]| views.px(v, p).1;
        let _ = write!(
            s,
            r##"<rect x="{:.1}" y="0.5" width="{:.1}" height="{:.1}" fill="none" stroke="#c9d1d3"/><text x="{:.1}" y="{:.1}" fill="#334">{}</text>"##,
            ox + 0.5,
            W - 1.0,
            W - 1.0,
            ox + 4.0,
            W + 10.0,
            esc(title)
        );
        for t in &g.lines {
            for pl in &t.polylines {
                let pts: Vec<String> = pl
                    .iter()
                    .filter_map(|id| pos.get(id))
                    .map(|p| format!("{:.1},{:.1}", px(p), py(p)))
                    .collect();
                if pts.len() > 1 {
                    let _ = write!(
                        s,
                        r##"<polyline points="{}" fill="none" stroke="#7a8a90" stroke-width="1"/>"##,
                        pts.join(" ")
                    );
                }
            }
        }
        for p in pos.values() {
            let _ = write!(
                s,
                r##"<circle cx="{:.1}" cy="{:.1}" r="2" fill="#1f4e5a"/>"##,
                px(p),
                py(p)
            );
        }
        for (p, axis, sign) in &arrows {
            let (dx, dy) = if axis == h {
                (sign * arrow, 0.0)
            } else if axis == vv {
                (0.0, -sign * arrow)
            } else {
                continue; // along the line of sight
            };
            let (x0, y0) = (px(p), py(p));
            let _ = write!(
                s,
                r##"<line x1="{x0:.1}" y1="{y0:.1}" x2="{:.1}" y2="{:.1}" stroke="#a3520f" stroke-width="1.5"/><circle cx="{:.1}" cy="{:.1}" r="1.6" fill="#a3520f"/>"##,
                x0 + dx,
                y0 + dy,
                x0 + dx,
                y0 + dy
            );
        }
    }
    s.push_str("</svg>");
    Some(s)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::io::uff58::Node;

    #[test]
    fn three_views_with_an_arrow_per_translational_dof() {
        let node = |id, xyz| Node {
            id,
            xyz,
            def_cs: 0,
            disp_cs: 0,
            color: 0,
        };
        let g = Geometry {
            nodes: vec![
                node(1, [0.0, 0.0, 0.0]),
                node(2, [1.0, 0.0, 0.0]),
                node(3, [1.0, 0.5, 0.2]),
            ],
            ..Geometry::default()
        };
        let dofs = vec![
            Dof::new("w", "2", Direction::Z),
            Dof::new("w", "3", Direction::X),
            Dof::new("w", "3", Direction::RX),
            Dof::new("w", "9", Direction::X),
        ];
        let svg = geometry_svg(&g, &dofs).unwrap();
        assert_eq!(
            svg.matches("<circle").count(),
            3 * 3 + 4,
            "nodes in every view, arrow heads where seen"
        );
        assert!(svg.contains("top (X–Y)") && svg.contains("side (Y–Z)"));
        assert!(!svg.contains("<script"));
        assert!(geometry_svg(&Geometry::default(), &dofs).is_none());
    }
}
