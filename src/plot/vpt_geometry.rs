//! The geometry of a `to-virtual-points` step as three orthographic views
//! (top X–Y, front X–Z, side Y–Z, the projection of [`Views`]): each
//! virtual point's origin as a ringed cross labelled with its name, each
//! sensor channel as a solid arrow from its position along its direction
//! with a filled head, each impact as a dashed arrow ending at the point it
//! hits with an open head, a scale bar in the geometry's unit and a legend.
//! Sensors and impacts differ in line (solid, dashed), head (filled, open)
//! and end (the head away from or at the position), not only in colour. A
//! channel or impact along the line of sight of a view is a small ring with
//! a dot (toward the viewer) or a cross (away), dashed for an impact;
//! rotations and moments get a double head (the usual notation of a moment
//! vector). Arrows have one length on screen, shortened as their direction
//! leaves the view's plane.
//!
//! Every drawn thing is a `<g>` with `data-kind` (`origin`, `sensor`,
//! `impact`, `scale`), `data-view` (`top`, `front`, `side`) and
//! `data-name` (the point's name, or the DOF's label) whose first `<circle>`
//! (origin, end-on arrow) or `<line>` (arrow: from the sensor, into the
//! impact's point) is placed at the projected position.

use super::diagram::{esc, text_w, INK, LINE, MUTED};
use super::drawing::{summary_text, Drawing};
use super::geometry::{Views, VIEWS};
use crate::error::{quote, Error, Result};
use crate::vpt::geometry::Located;
use crate::vpt::{Geometry, VpMatrices};
use std::collections::BTreeMap;
use std::fmt::Write as _;

/// The side of each square view, pixels.
const S: f64 = 300.0;
const MARGIN: f64 = 12.0;
/// Free space at a view's edges, pixels (arrows and labels).
const PAD: f64 = 48.0;
const TOP: f64 = 30.0;
/// An arrow's length on screen, pixels, when in the view's plane.
const ARROW: f64 = 26.0;
const HEAD: f64 = 7.0;
const FS: f64 = 12.0;
const FS_SMALL: f64 = 10.0;
const VIEW_KEYS: [&str; 3] = ["top", "front", "side"];
/// A white outline under a label, so it stays readable over arrows.
const HALO: &str =
    r##" stroke="#ffffff" stroke-width="3" stroke-linejoin="round" paint-order="stroke""##;

// At least 3:1 on white (WCAG 2.1 SC 1.4.11, non-text contrast).
const C_SENSOR: &str = "#0063a0";
const C_IMPACT: &str = "#b4540a";

/// The nicest 1-2-5 length at most `max`.
fn nice_below(max: f64) -> f64 {
    let p = 10f64.powf(max.log10().floor());
    [5.0, 2.0, 1.0]
        .into_iter()
        .map(|m| m * p)
        .find(|v| *v <= max)
        .unwrap_or(p)
}

/// A number in short form (`20`, `0.5`, `1e-05`).
fn short(v: f64) -> String {
    let s = format!("{v:.6}");
    let s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    if s == "0" && v != 0.0 {
        format!("{v:e}")
    } else {
        s
    }
}

/// Which end of an arrow sits at the position.
#[derive(Clone, Copy, PartialEq)]
enum Role {
    /// From the position along the direction, head at the tip.
    Sensor,
    /// Into the position along the direction, head at the position.
    Impact,
}

impl Role {
    fn key(self) -> &'static str {
        match self {
            Role::Sensor => "sensor",
            Role::Impact => "impact",
        }
    }
    fn colour(self) -> &'static str {
        match self {
            Role::Sensor => C_SENSOR,
            Role::Impact => C_IMPACT,
        }
    }
    fn dash(self) -> &'static str {
        match self {
            Role::Sensor => "",
            Role::Impact => r#" stroke-dasharray="4 2.5""#,
        }
    }
}

/// An arrowhead with its tip at (x, y) pointing along (ux, uy).
fn head(x: f64, y: f64, ux: f64, uy: f64, role: Role) -> String {
    let (bx, by) = (x - HEAD * ux, y - HEAD * uy);
    let (nx, ny) = (-uy * HEAD * 0.5, ux * HEAD * 0.5);
    let c = role.colour();
    let fill = match role {
        Role::Sensor => c,
        Role::Impact => "#ffffff",
    };
    format!(
        r#"<path d="M{x:.1} {y:.1}L{:.1} {:.1}L{:.1} {:.1}Z" fill="{fill}" stroke="{c}" stroke-width="1.2"/>"#,
        bx + nx,
        by + ny,
        bx - nx,
        by - ny
    )
}

/// One channel or impact in one view.
fn arrow(s: &mut String, views: &Views, v: usize, l: &Located, role: Role, geom: &Geometry) {
    let (x, y) = views.px(v, &l.at);
    let (dx, dy, toward) = views.dir(v, &l.dir);
    let c = role.colour();
    let what = match (role, l.rotational) {
        (Role::Sensor, false) => "sensor channel",
        (Role::Sensor, true) => "rotation channel",
        (Role::Impact, false) => "impact",
        (Role::Impact, true) => "moment",
    };
    let at = l.at.map(|m| geom.show_len(m));
    let _ = write!(
        s,
        r#"<g data-kind="{}" data-view="{}" data-name="{}"><title>{what} {} at ({}, {}, {}) {}, direction ({:.3}, {:.3}, {:.3})</title>"#,
        role.key(),
        VIEW_KEYS[v],
        esc(&l.dof.to_string()),
        esc(&l.dof.to_string()),
        at[0],
        at[1],
        at[2],
        esc(&geom.unit),
        l.dir[0],
        l.dir[1],
        l.dir[2]
    );
    let len = dx.hypot(dy);
    let sign = if l.dof.positive { "+" } else { "−" };
    // a sensor's arrow is tagged with its direction (its position carries
    // the node's name), an impact's with its node
    let tag = match role {
        Role::Sensor => format!("{sign}{}", l.dof.dir.as_str()),
        Role::Impact => l.dof.node.clone(),
    };
    if len < 0.3 {
        // along the line of sight: a ring, a dot toward the viewer, a cross away
        let _ = write!(
            s,
            r#"<circle cx="{x:.1}" cy="{y:.1}" r="5" fill="none" stroke="{c}" stroke-width="1.2"{}/>"#,
            role.dash()
        );
        if toward > 0.0 {
            let _ = write!(s, r#"<circle cx="{x:.1}" cy="{y:.1}" r="1.6" fill="{c}"/>"#);
        } else {
            let _ = write!(
                s,
                r#"<path d="M{:.1} {:.1}L{:.1} {:.1}M{:.1} {:.1}L{:.1} {:.1}" stroke="{c}" stroke-width="1.2"/>"#,
                x - 3.0,
                y - 3.0,
                x + 3.0,
                y + 3.0,
                x - 3.0,
                y + 3.0,
                x + 3.0,
                y - 3.0
            );
        }
        let _ = write!(
            s,
            r#"<text x="{:.1}" y="{:.1}" font-size="{FS_SMALL}" fill="{INK}"{HALO}>{}</text></g>"#,
            x + 6.0,
            y - 5.0,
            esc(&tag)
        );
        return;
    }
    let (ux, uy) = (dx / len, dy / len);
    let l_px = ARROW * len.min(1.0);
    let (tip, tail, label_at) = match role {
        Role::Sensor => (
            (x + ux * l_px, y + uy * l_px),
            (x, y),
            (x + ux * (l_px + 8.0), y + uy * (l_px + 8.0)),
        ),
        Role::Impact => (
            (x, y),
            (x - ux * l_px, y - uy * l_px),
            (x - ux * (l_px + 8.0), y - uy * (l_px + 8.0)),
        ),
    };
    let _ = write!(
        s,
        r#"<line x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{c}" stroke-width="1.4"{}/>"#,
        tail.0,
        tail.1,
        tip.0,
        tip.1,
        role.dash()
    );
    s.push_str(&head(tip.0, tip.1, ux, uy, role));
    if l.rotational {
        s.push_str(&head(tip.0 - ux * 5.0, tip.1 - uy * 5.0, ux, uy, role));
    }
    let _ = write!(
        s,
        r#"<text x="{:.1}" y="{:.1}" font-size="{FS_SMALL}" fill="{INK}" text-anchor="middle"{HALO}>{}</text></g>"#,
        label_at.0,
        label_at.1 + 3.5,
        esc(&tag)
    );
}

/// Draw the virtual points of step `step`: its geometry (for the unit) and
/// each point with its located channels and impacts (as
/// [`crate::recipe::virtual_point_plan`] resolves them). Refused: no point.
pub fn vpt_geometry_svg(step: &str, geom: &Geometry, points: &[VpMatrices]) -> Result<Drawing> {
    if points.is_empty() {
        return Err(Error::recipe(format!(
            "step '{}' has no virtual point: nothing to draw",
            quote(step)
        ))
        .field("points"));
    }
    let all = points.iter().flat_map(|p| {
        std::iter::once(p.origin)
            .chain(p.sensors.iter().map(|l| l.at))
            .chain(p.impacts.iter().map(|l| l.at))
    });
    let spread = {
        let v: Vec<[f64; 3]> = all.clone().collect();
        (0..3)
            .map(|k| {
                let lo = v.iter().map(|p| p[k]).fold(f64::INFINITY, f64::min);
                let hi = v.iter().map(|p| p[k]).fold(f64::NEG_INFINITY, f64::max);
                hi - lo
            })
            .fold(0.0f64, f64::max)
    };
    let views = Views::fit(all, S, PAD, MARGIN, TOP).ok_or_else(|| {
        Error::recipe(format!(
            "step '{}': no position of its geometry is a finite number",
            quote(step)
        ))
        .field("geometry")
    })?;
    let name_of = |p: &VpMatrices| {
        p.dofs.first().map_or_else(String::new, |d| {
            if d.component.is_empty() {
                d.node.clone()
            } else {
                format!("{}:{}", d.component, d.node)
            }
        })
    };

    // legend entries, in rows
    let width = 3.0 * S + 2.0 * MARGIN;
    let legend = [
        "virtual point (origin)",
        "sensor channel: solid, from the sensor, filled head",
        "impact: dashed, into the point hit, open head",
        "along the line of sight: dot toward you, cross away",
        "rotation or moment: double head",
    ];
    let entry_w = |t: &str| 30.0 + text_w(t, FS_SMALL, false) + 18.0;
    let mut rows: Vec<Vec<usize>> = vec![Vec::new()];
    let mut used = 0.0;
    for (i, t) in legend.iter().enumerate() {
        let w = entry_w(t);
        if used + w > width - 2.0 * MARGIN && !rows[rows.len() - 1].is_empty() {
            rows.push(Vec::new());
            used = 0.0;
        }
        let last = rows.len() - 1;
        rows[last].push(i);
        used += w;
    }
    let y_caption = TOP + S + 16.0;
    let y_scale = y_caption + 26.0;
    let y_legend = y_scale + 28.0;
    let height = y_legend + rows.len() as f64 * 20.0 + 4.0;

    // the summary
    let mut parts = Vec::new();
    for p in points {
        let count = |ls: &[Located]| {
            let at: std::collections::BTreeSet<[u64; 3]> =
                ls.iter().map(|l| l.at.map(f64::to_bits)).collect();
            (ls.len(), at.len())
        };
        let (ns, ps) = count(&p.sensors);
        let (ni, pi) = count(&p.impacts);
        let o = p.origin.map(|m| geom.show_len(m));
        parts.push(format!(
            "{} at ({}, {}, {}) {}: {ns} sensor channel(s) at {ps} position(s), {ni} impact(s) at {pi} position(s)",
            name_of(p),
            o[0],
            o[1],
            o[2],
            geom.unit
        ));
    }
    let title = format!("Virtual points of step '{}'", clean_name(step));
    let summary = summary_text(&format!(
        "{title}, seen from the top (X–Y), the front (X–Z) and the side (Y–Z), lengths in {}: {}.",
        geom.unit,
        parts.join("; ")
    ));

    let mut s = String::new();
    let _ = write!(
        s,
        r##"<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" viewBox="0 0 {width} {height}" role="img" font-family="system-ui, 'Segoe UI', sans-serif" font-size="{FS}"><title>{}</title><desc>{}</desc><rect width="{width}" height="{height}" fill="#ffffff"/><text x="{MARGIN}" y="19" font-size="13" font-weight="700" fill="{INK}">{}</text>"##,
        esc(&title),
        esc(&summary),
        esc(&title)
    );
    for (v, (caption, _, _)) in VIEWS.iter().enumerate() {
        let ox = views.panel_left(v);
        let _ = write!(
            s,
            r#"<rect x="{:.1}" y="{TOP:.1}" width="{:.1}" height="{S:.1}" fill="none" stroke="{LINE}"/><text x="{:.1}" y="{y_caption:.1}" font-size="{FS_SMALL}" fill="{MUTED}">{}</text>"#,
            ox + 0.5,
            S - 1.0,
            ox + 4.0,
            esc(caption)
        );
        // sensor positions: node names, once per place
        let mut places: BTreeMap<(i64, i64), Vec<String>> = BTreeMap::new();
        for l in points.iter().flat_map(|p| p.sensors.iter()) {
            let (x, y) = views.px(v, &l.at);
            let names = places
                .entry(((x * 2.0).round() as i64, (y * 2.0).round() as i64))
                .or_default();
            if !names.contains(&l.dof.node) {
                names.push(l.dof.node.clone());
            }
        }
        for ((x2, y2), names) in &places {
            let _ = write!(
                s,
                r#"<circle cx="{:.1}" cy="{:.1}" r="1.5" fill="{MUTED}"/><text x="{:.1}" y="{:.1}" font-size="{FS_SMALL}" fill="{MUTED}" text-anchor="end"{HALO}>{}</text>"#,
                *x2 as f64 / 2.0,
                *y2 as f64 / 2.0,
                *x2 as f64 / 2.0 - 5.0,
                *y2 as f64 / 2.0 + 12.0,
                esc(&names.join(", "))
            );
        }
        for p in points {
            for l in &p.impacts {
                arrow(&mut s, &views, v, l, Role::Impact, geom);
            }
            for l in &p.sensors {
                arrow(&mut s, &views, v, l, Role::Sensor, geom);
            }
        }
        for p in points {
            let (x, y) = views.px(v, &p.origin);
            let name = name_of(p);
            let o = p.origin.map(|m| geom.show_len(m));
            let _ = write!(
                s,
                r##"<g data-kind="origin" data-view="{}" data-name="{}"><title>virtual point {} at ({}, {}, {}) {}</title><circle cx="{x:.1}" cy="{y:.1}" r="6" fill="#ffffff" fill-opacity="0.6" stroke="{INK}" stroke-width="1.6"/><path d="M{:.1} {y:.1}H{:.1}M{x:.1} {:.1}V{:.1}" stroke="{INK}" stroke-width="1.2"/><text x="{:.1}" y="{:.1}" font-size="{FS}" font-weight="700" fill="{INK}"{HALO}>{}</text></g>"##,
                VIEW_KEYS[v],
                esc(&name),
                esc(&name),
                o[0],
                o[1],
                o[2],
                esc(&geom.unit),
                x - 9.0,
                x + 9.0,
                y - 9.0,
                y + 9.0,
                x + 9.0,
                y - 9.0,
                esc(&name)
            );
        }
    }
    // the scale bar, in the geometry's unit
    let per_unit = views.scale * geom.to_metres;
    if spread > 0.0 && per_unit.is_finite() && per_unit > 0.0 {
        let len = nice_below(110.0 / per_unit);
        let px = len * per_unit;
        let (x0, y) = (MARGIN + 4.0, y_scale);
        let _ = write!(
            s,
            r#"<g data-kind="scale"><title>scale: {} {} is {px:.1} px</title><line x1="{x0:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{INK}" stroke-width="2"/><path d="M{x0:.1} {:.1}V{:.1}M{:.1} {:.1}V{:.1}" stroke="{INK}" stroke-width="1.2"/><text x="{:.1}" y="{:.1}" font-size="{FS_SMALL}" fill="{INK}">{} {}</text></g>"#,
            short(len),
            esc(&geom.unit),
            x0 + px,
            y - 4.0,
            y + 4.0,
            x0 + px,
            y - 4.0,
            y + 4.0,
            x0 + px + 8.0,
            y + 4.0,
            short(len),
            esc(&geom.unit)
        );
    } else {
        let _ = write!(
            s,
            r#"<text x="{MARGIN}" y="{:.1}" font-size="{FS_SMALL}" fill="{INK}">every position at one place: no scale</text>"#,
            y_scale + 4.0
        );
    }
    // the legend
    let mut ly = y_legend;
    for row in &rows {
        let mut lx = MARGIN;
        for &i in row {
            let (mx, my) = (lx + 12.0, ly - 4.0);
            match i {
                0 => {
                    let _ = write!(
                        s,
                        r#"<circle cx="{mx:.1}" cy="{my:.1}" r="6" fill="none" stroke="{INK}" stroke-width="1.6"/><path d="M{:.1} {my:.1}H{:.1}M{mx:.1} {:.1}V{:.1}" stroke="{INK}" stroke-width="1.2"/>"#,
                        mx - 9.0,
                        mx + 9.0,
                        my - 9.0,
                        my + 9.0
                    );
                }
                1 | 2 => {
                    let role = if i == 1 { Role::Sensor } else { Role::Impact };
                    let _ = write!(
                        s,
                        r#"<line x1="{:.1}" y1="{my:.1}" x2="{:.1}" y2="{my:.1}" stroke="{}" stroke-width="1.4"{}/>"#,
                        mx - 11.0,
                        mx + 11.0,
                        role.colour(),
                        role.dash()
                    );
                    s.push_str(&head(mx + 11.0, my, 1.0, 0.0, role));
                }
                3 => {
                    let _ = write!(
                        s,
                        r#"<circle cx="{:.1}" cy="{my:.1}" r="5" fill="none" stroke="{C_SENSOR}" stroke-width="1.2"/><circle cx="{:.1}" cy="{my:.1}" r="1.6" fill="{C_SENSOR}"/><circle cx="{:.1}" cy="{my:.1}" r="5" fill="none" stroke="{C_SENSOR}" stroke-width="1.2"/><path d="M{:.1} {:.1}L{:.1} {:.1}M{:.1} {:.1}L{:.1} {:.1}" stroke="{C_SENSOR}" stroke-width="1.2"/>"#,
                        mx - 6.0,
                        mx - 6.0,
                        mx + 7.0,
                        mx + 4.0,
                        my - 3.0,
                        mx + 10.0,
                        my + 3.0,
                        mx + 4.0,
                        my + 3.0,
                        mx + 10.0,
                        my - 3.0
                    );
                }
                _ => {
                    let _ = write!(
                        s,
                        r#"<line x1="{:.1}" y1="{my:.1}" x2="{:.1}" y2="{my:.1}" stroke="{C_SENSOR}" stroke-width="1.4"/>"#,
                        mx - 11.0,
                        mx + 11.0
                    );
                    s.push_str(&head(mx + 11.0, my, 1.0, 0.0, Role::Sensor));
                    s.push_str(&head(mx + 6.0, my, 1.0, 0.0, Role::Sensor));
                }
            }
            let _ = write!(
                s,
                r#"<text x="{:.1}" y="{ly:.1}" font-size="{FS_SMALL}" fill="{INK}">{}</text>"#,
                lx + 30.0,
                esc(legend[i])
            );
            lx += entry_w(legend[i]);
        }
        ly += 20.0;
    }
    s.push_str("</svg>");
    Ok(Drawing {
        svg: s,
        width,
        height,
        summary,
    })
}

/// A step id as it may appear in text.
fn clean_name(s: &str) -> String {
    super::diagram::clean(s)
}

#[cfg(test)]
mod tests {
    use super::super::fixtures::{contrast, well_formed};
    use super::*;
    use crate::frf::{Direction, Dof};

    fn located(label: &str, at: [f64; 3], dir: [f64; 3]) -> Located {
        let dof = Dof::parse(label, "").unwrap();
        Located {
            rotational: dof.dir.is_rotational(),
            dof,
            at,
            dir,
            row: 0,
        }
    }

    fn point() -> VpMatrices {
        let name = Dof::new("u", "bolt", Direction::X);
        VpMatrices {
            dofs: vec![name],
            origin: [0.0, 0.0, 0.0],
            sensors: vec![
                located("u:s1+X", [0.04, 0.0, 0.012], [1.0, 0.0, 0.0]),
                located("u:s1+Y", [0.04, 0.0, 0.012], [0.0, 1.0, 0.0]),
                located("u:s1+Z", [0.04, 0.0, 0.012], [0.0, 0.0, 1.0]),
                located("u:s2-Z", [-0.02, 0.035, 0.012], [0.0, 0.0, -1.0]),
            ],
            impacts: vec![
                located("u:h1+Z", [0.03, 0.01, 0.025], [0.0, 0.0, 1.0]),
                located("u:h2+X", [0.0, 0.045, 0.01], [0.3, -1.0, 0.2]),
            ],
            w_u: Vec::new(),
            w_f: Vec::new(),
            r_u: Vec::new(),
            t_u: Vec::new(),
            r_f: Vec::new(),
            t_f: Vec::new(),
            sensor_singular_values: Vec::new(),
            impact_singular_values: Vec::new(),
        }
    }

    fn geom() -> Geometry {
        Geometry {
            unit: "mm".into(),
            to_metres: 1e-3,
            rows: Vec::new(),
            file: None,
            whole_structure: false,
        }
    }

    #[test]
    fn every_channel_and_impact_in_every_view() {
        let d = vpt_geometry_svg("foot", &geom(), &[point()]).unwrap();
        well_formed(&d.svg);
        assert_eq!(d.svg.matches(r#"<g data-kind="sensor""#).count(), 4 * 3);
        assert_eq!(d.svg.matches(r#"<g data-kind="impact""#).count(), 2 * 3);
        assert_eq!(d.svg.matches(r#"<g data-kind="origin""#).count(), 3);
        // +Z seen from the top comes toward the viewer (a dot), −Z goes away
        // (a cross): right-handed axes, textbook
        let top_z = &d.svg[d.svg.find(r#"data-view="top" data-name="u:s1+Z""#).unwrap()..];
        let top_z = &top_z[..top_z.find("</g>").unwrap()];
        assert!(top_z.contains(r#"r="1.6""#), "{top_z}");
        let top_mz = &d.svg[d.svg.find(r#"data-view="top" data-name="u:s2-Z""#).unwrap()..];
        let top_mz = &top_mz[..top_mz.find("</g>").unwrap()];
        assert!(top_mz.contains("<path"), "{top_mz}");
        // impacts dashed, sensors not
        let imp = &d.svg[d
            .svg
            .find(r#"data-view="front" data-name="u:h2+X""#)
            .unwrap()..];
        assert!(imp[..imp.find("</g>").unwrap()].contains("stroke-dasharray"));
        let sen = &d.svg[d
            .svg
            .find(r#"data-view="front" data-name="u:s1+X""#)
            .unwrap()..];
        assert!(!sen[..sen.find("</g>").unwrap()].contains("stroke-dasharray"));
        assert!(d.svg.contains(">u:bolt</text>"));
        assert!(d.summary.contains(
            "u:bolt at (0, 0, 0) mm: 4 sensor channel(s) at 2 position(s), 2 impact(s) at 2 position(s)"
        ));
        assert!(d.svg.contains(r#"<g data-kind="scale">"#));
    }

    #[test]
    fn the_scale_bar_matches_the_projection() {
        let g = geom();
        let d = vpt_geometry_svg("foot", &g, &[point()]).unwrap();
        // the widest spread: x from −20 to 40 mm, 60 mm
        let views = Views::fit(
            [
                [0.0, 0.0, 0.0],
                [0.04, 0.0, 0.012],
                [-0.02, 0.035, 0.012],
                [0.03, 0.01, 0.025],
                [0.0, 0.045, 0.01],
            ],
            S,
            PAD,
            MARGIN,
            TOP,
        )
        .unwrap();
        // 60 mm over 300 − 2·48 px
        assert!((views.scale - 204.0 / 0.06).abs() < 1e-9);
        let per_mm = views.scale * 1e-3;
        let len = nice_below(110.0 / per_mm);
        assert_eq!(len, 20.0);
        assert!(d.svg.contains(">20 mm</text>"));
    }

    #[test]
    fn colours_and_refusals() {
        // WCAG 2.1 SC 1.4.11: graphics 3:1 on white; SC 1.4.3: text 4.5:1
        for c in [C_SENSOR, C_IMPACT] {
            assert!(contrast(c, "#ffffff") >= 3.0, "{c}");
        }
        for t in [INK, MUTED] {
            assert!(contrast(t, "#ffffff") >= 4.5, "{t}");
        }
        let e = vpt_geometry_svg("foot", &geom(), &[]).unwrap_err();
        assert!(
            e.message.contains("step 'foot' has no virtual point"),
            "{e}"
        );
        assert_eq!(nice_below(47.0), 20.0);
        assert_eq!(nice_below(0.7), 0.5);
        assert_eq!(short(20.0), "20");
        assert_eq!(short(0.5), "0.5");
    }
}
