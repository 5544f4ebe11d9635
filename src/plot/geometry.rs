//! A file's geometry as a three-view sketch (top X–Y, front X–Z, side Y–Z):
//! the nodes, the trace lines, and an arrow at each node for every
//! translational DOF the file's FRFs use. Written as plain SVG text rather
//! than through plotters: three small panels of points and lines, no axes
//! or ticks, and the page shows it as an image (no script can run in it).

use crate::frf::{Direction, Dof};
use crate::io::uff58::Geometry;
use std::collections::BTreeMap;
use std::fmt::Write as _;

const W: f64 = 150.0;
const PAD: f64 = 14.0;

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
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for p in pos.values() {
        for k in 0..3 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    let span = (0..3)
        .map(|k| hi[k] - lo[k])
        .fold(0.0f64, f64::max)
        .max(1e-9);
    let scale = (W - 2.0 * PAD) / span;
    let arrow = 0.12 * (W - 2.0 * PAD);
    // (title, horizontal axis, vertical axis)
    let views = [
        ("top (X–Y)", 0usize, 1usize),
        ("front (X–Z)", 0, 2),
        ("side (Y–Z)", 1, 2),
    ];
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
    for (v, (title, h, vv)) in views.iter().enumerate() {
        let ox = v as f64 * W;
        let px = |p: &[f64; 3]| ox + PAD + (p[*h] - lo[*h]) * scale;
        let py = |p: &[f64; 3]| W - PAD - (p[*vv] - lo[*vv]) * scale;
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
