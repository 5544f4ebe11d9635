//! The geometry of a measurement: where each sensor channel and each impact
//! sits and which way it points, in one coordinate system, converted to
//! metres on the way in.
//!
//! A geometry is a list of rows `label, position[, direction]` with one
//! length unit. The label is either a node (`block:s1`: every DOF at that
//! node takes its direction from its own label, `+X` → (1, 0, 0), `-Y` →
//! (0, −1, 0), `+RZ` → an axis (0, 0, 1)) or one DOF (`block:s3+X`: that DOF
//! alone, with its own direction vector when the row gives one, normalised;
//! else the direction of its label). A label without a component
//! (`s1`) locates DOFs of that node in any component. The file layout is
//! described in the [module docs](super).

use crate::error::{quote, Error, Result};
use crate::frf::{Direction, Dof};
use crate::units::{self, Quantity};

/// What a geometry row locates.
#[derive(Debug, Clone, PartialEq)]
pub enum Target {
    /// Every DOF at this node (`component` empty: in any component).
    Node { component: String, node: String },
    /// This DOF alone (its component empty: in any component).
    Dof(Dof),
}

impl Target {
    /// The target a label names: a node when it has no direction.
    pub fn parse(label: &str) -> Result<Target> {
        let d = Dof::parse(label, "")?;
        Ok(if d.dir == Direction::Scalar {
            Target::Node {
                component: d.component,
                node: d.node,
            }
        } else {
            Target::Dof(d)
        })
    }
}

/// One row of a geometry.
#[derive(Debug, Clone, PartialEq)]
pub struct GeoRow {
    /// The label as written.
    pub label: String,
    pub target: Target,
    /// Position, metres.
    pub at: [f64; 3],
    /// Unit direction vector (DOF rows that give one).
    pub dir: Option<[f64; 3]>,
    /// Where the row is: "line 7" of a file, or "rows[3]" inline.
    pub place: String,
}

/// The geometry of one measurement, in metres.
#[derive(Debug, Clone, PartialEq)]
pub struct Geometry {
    /// The length unit as written (positions and virtual-point origins).
    pub unit: String,
    /// Factor from `unit` to metres.
    pub to_metres: f64,
    pub rows: Vec<GeoRow>,
    /// The file it was read from, if any (for messages).
    pub file: Option<String>,
    /// True when the rows describe a whole structure (the nodes of a UFF
    /// file): rows that locate no channel or impact of the step are then
    /// expected and not an error. False for our layout and inline rows,
    /// where every row must be used.
    pub whole_structure: bool,
}

/// The first line of a geometry file.
pub const GEOMETRY_MAGIC: &str = "# mortise-geometry 1";

/// A row as given by a user: label, position and optional direction, in
/// the geometry's unit.
#[derive(Debug, Clone, PartialEq)]
pub struct RawRow {
    pub label: String,
    pub at: [f64; 3],
    pub dir: Option<[f64; 3]>,
}

/// The factor to metres of a length unit; a missing unit is an error.
pub fn length_factor(unit: &str) -> Result<f64> {
    if unit.trim().is_empty() {
        return Err(
            Error::unit("the geometry has no length unit; give one, e.g. \"m\" or \"mm\"")
                .field("unit"),
        );
    }
    units::factor_for(unit.trim(), Quantity::Displacement, false).map_err(|e| e.field("unit"))
}

/// A unit vector from `v`, or an error naming `place` when it has no length.
fn unit_vector(v: [f64; 3], place: &str, label: &str) -> Result<[f64; 3]> {
    let n = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
    if !(n.is_finite() && n > 0.0) {
        return Err(Error::recipe(format!(
            "{place} ('{}'): the direction vector ({}, {}, {}) has no length; give a non-zero direction",
            quote(label),
            v[0],
            v[1],
            v[2]
        ))
        .field("direction"));
    }
    Ok([v[0] / n, v[1] / n, v[2] / n])
}

impl Geometry {
    /// A geometry from rows in `unit` (converted to metres). `places` name
    /// the rows for messages (same length as `rows`).
    pub fn from_rows(unit: &str, rows: &[RawRow], places: &[String]) -> Result<Geometry> {
        let f = length_factor(unit)?;
        let mut out = Vec::with_capacity(rows.len());
        for (r, place) in rows.iter().zip(places) {
            let target = Target::parse(&r.label)
                .map_err(|e| Error::recipe(format!("{place}: {}", e.message)).field("label"))?;
            if r.at.iter().any(|x| !x.is_finite()) {
                return Err(Error::recipe(format!(
                    "{place} ('{}'): a position coordinate is not a finite number",
                    quote(&r.label)
                ))
                .field("position"));
            }
            let dir = match (r.dir, &target) {
                (None, _) => None,
                (Some(_), Target::Node { .. }) => {
                    return Err(Error::recipe(format!(
                        "{place} ('{}') is a node: each of its DOFs takes the direction of its own label; to give a direction vector, label the row with one DOF, e.g. '{}+X'",
                        quote(&r.label),
                        quote(&r.label)
                    ))
                    .field("direction"))
                }
                (Some(v), Target::Dof(_)) => Some(unit_vector(v, place, &r.label)?),
            };
            out.push(GeoRow {
                label: r.label.clone(),
                target,
                at: [r.at[0] * f, r.at[1] * f, r.at[2] * f],
                dir,
                place: place.clone(),
            });
        }
        Ok(Geometry {
            unit: unit.trim().to_string(),
            to_metres: f,
            rows: out,
            file: None,
            whole_structure: false,
        })
    }

    /// Read our geometry file (layout in the [module docs](super)); errors
    /// name the file, the line and the column.
    pub fn from_csv(bytes: &[u8], file: &str) -> Result<Geometry> {
        let text = crate::io::csv::decode_text(bytes);
        let place = |e: Error, line: usize| e.in_file(file.to_string()).at_line(line);
        let mut lines = crate::io::csv::text_lines(&text).enumerate();
        match lines.next() {
            Some((_, l)) if l.trim() == GEOMETRY_MAGIC => {}
            _ => {
                return Err(place(
                    Error::parse(format!(
                        "a geometry file starts with the line '{GEOMETRY_MAGIC}'"
                    )),
                    1,
                ))
            }
        }
        let mut unit: Option<(String, usize)> = None;
        let mut rows = Vec::new();
        let mut places = Vec::new();
        for (n, l) in lines {
            let line = n + 1;
            let t = l.trim();
            if t.is_empty() || t.starts_with('#') {
                continue;
            }
            let cells: Vec<&str> = t.split(',').map(str::trim).collect();
            if cells[0].eq_ignore_ascii_case("unit") {
                if let Some((_, first)) = &unit {
                    return Err(place(
                        Error::parse(format!(
                            "a second 'unit' line (the first is line {first}); a geometry has one length unit"
                        )),
                        line,
                    ));
                }
                if !rows.is_empty() {
                    return Err(place(
                        Error::parse("the 'unit' line must come before the first row"),
                        line,
                    ));
                }
                if cells.len() != 2 || cells[1].is_empty() {
                    return Err(place(
                        Error::parse("expected 'unit, LENGTH_UNIT', e.g. 'unit, mm'"),
                        line,
                    ));
                }
                length_factor(cells[1]).map_err(|e| place(e, line))?;
                unit = Some((cells[1].to_string(), line));
                continue;
            }
            if unit.is_none() {
                return Err(place(
                    Error::unit(
                        "the geometry has no length unit: a line 'unit, mm' (or m, cm, in...) must come before the first row",
                    )
                    .field("unit"),
                    line,
                ));
            }
            if cells.len() != 4 && cells.len() != 7 {
                return Err(place(
                    Error::parse(format!(
                        "{} cells; a row is 'label, x, y, z' (a node, or a DOF along its label) or 'label, x, y, z, dx, dy, dz' (a DOF with its direction vector)",
                        cells.len()
                    )),
                    line,
                ));
            }
            let names = ["x", "y", "z", "dx", "dy", "dz"];
            let mut v = [0.0f64; 6];
            for (k, c) in cells[1..].iter().enumerate() {
                v[k] = c
                    .parse::<f64>()
                    .ok()
                    .filter(|x| x.is_finite())
                    .ok_or_else(|| {
                        place(
                            Error::parse(format!("'{}' is not a finite number", quote(c)))
                                .field(format!("column {} ({})", k + 2, names[k])),
                            line,
                        )
                    })?;
            }
            if cells[0].is_empty() {
                return Err(place(
                    Error::parse("the row has no label").field("column 1 (label)"),
                    line,
                ));
            }
            rows.push(RawRow {
                label: cells[0].to_string(),
                at: [v[0], v[1], v[2]],
                dir: (cells.len() == 7).then_some([v[3], v[4], v[5]]),
            });
            places.push(format!("line {line}"));
        }
        let Some((unit, _)) = unit else {
            return Err(Error::unit(
                "the geometry has no length unit: add a line 'unit, mm' (or m, cm, in...) after the first line",
            )
            .field("unit")
            .in_file(file.to_string()));
        };
        if rows.is_empty() {
            return Err(Error::parse("the geometry file has no rows").in_file(file.to_string()));
        }
        let mut g = Geometry::from_rows(&unit, &rows, &places).map_err(|e| {
            let line = places_line(&e.message);
            let e = e.in_file(file.to_string());
            match line {
                Some(l) => e.at_line(l),
                None => e,
            }
        })?;
        g.file = Some(file.to_string());
        Ok(g)
    }

    /// The name of the geometry for messages: its file, or "the inline geometry".
    pub fn name(&self) -> String {
        match &self.file {
            Some(f) => format!("geometry file '{}'", quote(f)),
            None => "the inline geometry".into(),
        }
    }

    /// A length in metres written in the geometry's unit (to 6 decimals,
    /// so rounding noise of the conversion is not shown), for messages.
    pub fn show_len(&self, metres: f64) -> String {
        let v = (metres / self.to_metres * 1e6).round() / 1e6;
        format!("{}", if v == 0.0 { 0.0 } else { v })
    }
}

/// The line number of a "line N: ..." message (rows of a file are placed so).
fn places_line(msg: &str) -> Option<usize> {
    let rest = msg.strip_prefix("line ")?;
    let end = rest.find(|c: char| !c.is_ascii_digit())?;
    rest[..end].parse().ok()
}

/// The direction of a DOF's own label, its sign respected: the unit vector
/// of a translation, or the axis of a rotation. None for a scalar point.
pub fn label_direction(d: &Dof) -> Option<[f64; 3]> {
    let v = match d.dir {
        Direction::X | Direction::RX => [1.0, 0.0, 0.0],
        Direction::Y | Direction::RY => [0.0, 1.0, 0.0],
        Direction::Z | Direction::RZ => [0.0, 0.0, 1.0],
        Direction::Scalar => return None,
    };
    let s = d.sign();
    Some([s * v[0], s * v[1], s * v[2]])
}

/// Where one DOF sits and which way it points.
#[derive(Debug, Clone, PartialEq)]
pub struct Located {
    pub dof: Dof,
    /// Position, metres.
    pub at: [f64; 3],
    /// Unit direction (translation) or axis (rotation).
    pub dir: [f64; 3],
    /// True for a rotation (RX, RY, RZ) or a moment.
    pub rotational: bool,
    /// The geometry row that located it.
    pub row: usize,
}

fn component_matches(want: &str, have: &str) -> bool {
    want.is_empty() || want == have
}

/// Whether `bytes` are a geometry file of our layout: the first line is
/// [`GEOMETRY_MAGIC`] (after a byte-order mark, surrounding blanks ignored).
pub fn looks_like_geometry(bytes: &[u8]) -> bool {
    let head = &bytes[..bytes.len().min(256)];
    let text = crate::io::csv::decode_text(head);
    let first = crate::io::csv::text_lines(&text)
        .next()
        .is_some_and(|l| l.trim() == GEOMETRY_MAGIC);
    first
}

impl Geometry {
    /// Locate the DOF `d` of a set: a DOF row for it wins over its node's
    /// row; two rows of one kind for one DOF, or none, are errors naming it.
    /// `what` names the DOF's role ("sensor channel", "impact").
    pub fn locate(&self, d: &Dof, what: &str) -> Result<Located> {
        if d.dir == Direction::Scalar {
            return Err(Error::dof(format!(
                "{what} {d} is a scalar point; a virtual point takes translations (X Y Z) or rotations (RX RY RZ)"
            )));
        }
        let dof_rows: Vec<usize> = (0..self.rows.len())
            .filter(|&i| match &self.rows[i].target {
                Target::Dof(g) => {
                    component_matches(&g.component, &d.component)
                        && g.node == d.node
                        && g.dir == d.dir
                }
                Target::Node { .. } => false,
            })
            .collect();
        let node_rows: Vec<usize> = (0..self.rows.len())
            .filter(|&i| match &self.rows[i].target {
                Target::Node { component, node } => {
                    component_matches(component, &d.component) && *node == d.node
                }
                Target::Dof(_) => false,
            })
            .collect();
        let twice = |rows: &[usize]| {
            Error::recipe(format!(
                "{} locates {what} {d} twice: {} ('{}') and {} ('{}'); keep one",
                self.name(),
                self.rows[rows[0]].place,
                quote(&self.rows[rows[0]].label),
                self.rows[rows[1]].place,
                quote(&self.rows[rows[1]].label)
            ))
        };
        let rotational = d.dir.is_rotational();
        let own = label_direction(d).unwrap_or([0.0, 0.0, 0.0]);
        if dof_rows.len() > 1 {
            return Err(twice(&dof_rows));
        }
        if let Some(&i) = dof_rows.first() {
            let r = &self.rows[i];
            let dir = match (r.dir, &r.target) {
                // the row's vector is that of its label's sign; the set's
                // DOF may be the opposite sign of the same place
                (Some(v), Target::Dof(g)) => {
                    let s = g.sign() * d.sign();
                    [s * v[0], s * v[1], s * v[2]]
                }
                _ => own,
            };
            return Ok(Located {
                dof: d.clone(),
                at: r.at,
                dir,
                rotational,
                row: i,
            });
        }
        if node_rows.len() > 1 {
            return Err(twice(&node_rows));
        }
        if let Some(&i) = node_rows.first() {
            return Ok(Located {
                dof: d.clone(),
                at: self.rows[i].at,
                dir: own,
                rotational,
                row: i,
            });
        }
        Err(Error::recipe(format!(
            "{what} {d} has no geometry: {} has no row for node '{}' or DOF '{d}'; add a row '{}:{}, x, y, z'",
            self.name(),
            quote(&d.node),
            quote(&d.component),
            quote(&d.node)
        )))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn csv(text: &str) -> Result<Geometry> {
        Geometry::from_csv(text.as_bytes(), "g.csv")
    }

    #[test]
    fn reads_rows_in_metres_with_directions() {
        let g = csv(
            "# mortise-geometry 1\nunit, mm\n# a comment\nblock:s1, 10, 0, -5\n\nblock:s2+X, 0, 20, 0, 3, 4, 0\n",
        )
        .unwrap();
        assert_eq!(g.rows.len(), 2);
        assert_eq!(g.rows[0].at, [0.01, 0.0, -0.005]);
        assert_eq!(g.rows[1].dir, Some([0.6, 0.8, 0.0]));
        let d = Dof::parse("block:s1-Y", "").unwrap();
        let l = g.locate(&d, "sensor channel").unwrap();
        // rigid-body kinematics, textbook: a -Y label measures along (0, -1, 0)
        assert_eq!(l.dir, [0.0, -1.0, 0.0]);
        let d = Dof::parse("block:s2-X", "").unwrap();
        assert_eq!(
            g.locate(&d, "sensor channel").unwrap().dir,
            [-0.6, -0.8, 0.0]
        );
    }

    #[test]
    fn bad_files_name_their_place() {
        let e = csv("# mortise-geometry 1\nblock:s1, 1, 2, 3\n").unwrap_err();
        assert!(e.message.contains("no length unit"), "{e}");
        assert_eq!(e.location, Some(crate::error::Location::Line(2)));
        let e = csv("# mortise-geometry 1\nunit, mm\nblock:s1+X, 1, 2, 3, 0, 0, 0\n").unwrap_err();
        assert!(e.message.contains("line 3"), "{e}");
        assert!(e.message.contains("has no length"), "{e}");
        assert_eq!(e.location, Some(crate::error::Location::Line(3)));
        let e = csv("# mortise-geometry 1\nunit, furlong\nblock:s1, 1, 2, 3\n").unwrap_err();
        assert_eq!(e.kind, crate::error::ErrorKind::Unit, "{e}");
        let e = csv("# mortise-geometry 1\nunit, mm\nblock:s1, 1, x, 3\n").unwrap_err();
        assert_eq!(e.field.as_deref(), Some("column 3 (y)"), "{e}");
        let e = csv("# mortise-geometry 1\nunit, mm\nblock:s1, 1, 2, 3, 0, 0, 1\n").unwrap_err();
        assert!(e.message.contains("is a node"), "{e}");
        assert!(csv("x,y\n").is_err());
    }

    #[test]
    fn missing_and_doubled_rows_are_named() {
        let g = csv("# mortise-geometry 1\nunit, m\ns1, 0, 0, 0\nblock:s1, 1, 0, 0\n").unwrap();
        let d = Dof::parse("block:s1+Z", "").unwrap();
        let e = g.locate(&d, "sensor channel").unwrap_err();
        assert!(e.message.contains("twice: line 3"), "{e}");
        let d = Dof::parse("block:s9+Z", "").unwrap();
        let e = g.locate(&d, "sensor channel").unwrap_err();
        assert!(
            e.message
                .contains("sensor channel block:s9+Z has no geometry"),
            "{e}"
        );
    }
}
