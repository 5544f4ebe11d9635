//! Proposing which channels and impacts belong to which virtual point: each
//! output and input DOF of a set that the geometry locates goes to the
//! nearest of the given origins, if that origin is within the radius. A
//! proposal only: the page shows it and the user adds the points it wants.

use super::geometry::Geometry;
use crate::error::{quote, Error, Result};
use crate::frf::FrfSet;
use serde::{Deserialize, Serialize};

/// One origin to group around, in the geometry's unit.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Origin {
    pub name: String,
    pub origin: [f64; 3],
}

/// What the page asks: the origins and the radius, in the geometry's unit.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Request {
    pub origins: Vec<Origin>,
    pub radius: f64,
}

impl Request {
    /// Read a request from JSON; an error names what is wrong.
    pub fn from_json(text: &str) -> Result<Request> {
        serde_json::from_str(text).map_err(|e| {
            Error::usage(format!(
                "grouping request {{\"origins\": [{{\"name\", \"origin\": [x, y, z]}}], \"radius\": r}}: {e}"
            ))
            .field("request")
        })
    }
}

/// A proposed virtual point: the channels and impacts nearest its origin.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Group {
    pub name: String,
    /// In the geometry's unit.
    pub origin: [f64; 3],
    /// DOF labels of the set's outputs (sensor channels) in this group.
    pub sensors: Vec<String>,
    /// DOF labels of the set's inputs (impacts) in this group.
    pub impacts: Vec<String>,
}

/// The proposal for a set and a geometry.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Proposal {
    pub groups: Vec<Group>,
    /// The geometry's length unit (origins, radius).
    pub unit: String,
    /// Located outputs (sensor channels) and inputs (impacts) farther than
    /// the radius from every origin.
    pub outside_sensors: Vec<String>,
    pub outside_impacts: Vec<String>,
    /// Outputs and inputs the geometry does not locate (no row, or a scalar point).
    pub not_located_sensors: Vec<String>,
    pub not_located_impacts: Vec<String>,
}

/// Group the outputs and inputs of `set` located by `geom` around
/// `origins` (geometry unit): each goes to the nearest origin within
/// `radius` (geometry unit; the first listed origin wins a tie). Refused:
/// no origin, two origins of one name, a radius that is not a positive
/// finite number, a non-finite origin.
pub fn propose(set: &FrfSet, geom: &Geometry, origins: &[Origin], radius: f64) -> Result<Proposal> {
    if origins.is_empty() {
        return Err(Error::usage("give at least one origin to group around").field("origins"));
    }
    if !(radius.is_finite() && radius > 0.0) {
        return Err(Error::usage(format!(
            "the radius must be a positive number in {} (got {radius})",
            geom.unit
        ))
        .field("radius"));
    }
    for (i, o) in origins.iter().enumerate() {
        if o.name.trim().is_empty() {
            return Err(Error::usage("an origin needs a name").field(format!("origins[{i}].name")));
        }
        if origins[..i].iter().any(|p| p.name == o.name) {
            return Err(
                Error::usage(format!("two origins are named '{}'", quote(&o.name)))
                    .field(format!("origins[{i}].name")),
            );
        }
        if o.origin.iter().any(|v| !v.is_finite()) {
            return Err(Error::usage("the origin is not three finite numbers")
                .field(format!("origins[{i}].origin")));
        }
    }
    let k = geom.to_metres;
    let mut groups: Vec<Group> = origins
        .iter()
        .map(|o| Group {
            name: o.name.clone(),
            origin: o.origin,
            sensors: Vec::new(),
            impacts: Vec::new(),
        })
        .collect();
    let (mut outside, mut not_located) = ([Vec::new(), Vec::new()], [Vec::new(), Vec::new()]);
    for (dofs, sensors, what) in [
        (&set.outputs, true, "sensor channel"),
        (&set.inputs, false, "impact"),
    ] {
        for d in dofs {
            let label = d.to_string();
            let Ok(at) = geom.locate(d, what) else {
                not_located[usize::from(!sensors)].push(label);
                continue;
            };
            let mut best: Option<(usize, f64)> = None;
            for (i, o) in origins.iter().enumerate() {
                let dist = (0..3)
                    .map(|j| (at.at[j] - o.origin[j] * k).powi(2))
                    .sum::<f64>()
                    .sqrt()
                    / k;
                if dist <= radius && best.is_none_or_gt(dist) {
                    best = Some((i, dist));
                }
            }
            match best {
                Some((i, _)) if sensors => groups[i].sensors.push(label),
                Some((i, _)) => groups[i].impacts.push(label),
                None => outside[usize::from(!sensors)].push(label),
            }
        }
    }
    let [outside_sensors, outside_impacts] = outside;
    let [not_located_sensors, not_located_impacts] = not_located;
    Ok(Proposal {
        groups,
        unit: geom.unit.clone(),
        outside_sensors,
        outside_impacts,
        not_located_sensors,
        not_located_impacts,
    })
}

trait Nearer {
    fn is_none_or_gt(&self, d: f64) -> bool;
}

impl Nearer for Option<(usize, f64)> {
    /// No origin yet, or the one kept is strictly farther than `d`.
    fn is_none_or_gt(&self, d: f64) -> bool {
        match self {
            None => true,
            Some((_, b)) => d < *b,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frf::Dof;
    use crate::units::Quantity;

    fn set(outs: &[&str], ins: &[&str]) -> FrfSet {
        let dof = |s: &&str| Dof::parse(s, "b").unwrap();
        FrfSet::zeros(
            "b",
            vec![10.0, 20.0],
            outs.iter().map(dof).collect(),
            ins.iter().map(dof).collect(),
            Quantity::Acceleration,
            Quantity::Force,
        )
    }

    fn geom(text: &str) -> Geometry {
        Geometry::from_csv(text.as_bytes(), "g.csv").unwrap()
    }

    // Hand-computed distances (common practice: Euclidean distance to the
    // nearest centre, as in nearest-neighbour assignment).
    #[test]
    fn nearest_origin_within_radius_takes_each_dof() {
        let g = geom(
            "# mortise-geometry 1\nunit, mm\nb:s1, 10, 0, 0\nb:s2, 95, 0, 0\nb:s3, 500, 0, 0\nb:h1+Z, 48, 0, 0\nb:h2+X, 52, 0, 0\n",
        );
        let s = set(
            &["b:s1+X", "b:s2+Y", "b:s3+Z"],
            &["b:h1+Z", "b:h2+X", "b:h9+X"],
        );
        let o = [
            Origin {
                name: "left".into(),
                origin: [0.0, 0.0, 0.0],
            },
            Origin {
                name: "right".into(),
                origin: [100.0, 0.0, 0.0],
            },
        ];
        let p = propose(&s, &g, &o, 60.0).unwrap();
        assert_eq!(p.unit, "mm");
        // s1 is 10 mm from left, 90 from right; s2 95 / 5; s3 400 from right: outside
        assert_eq!(p.groups[0].sensors, vec!["b:s1+X"]);
        assert_eq!(p.groups[1].sensors, vec!["b:s2+Y"]);
        // h1 48 / 52 → left; h2 52 / 48 → right
        assert_eq!(p.groups[0].impacts, vec!["b:h1+Z"]);
        assert_eq!(p.groups[1].impacts, vec!["b:h2+X"]);
        assert_eq!(p.outside_sensors, vec!["b:s3+Z"]);
        assert!(p.outside_impacts.is_empty());
        assert!(p.not_located_sensors.is_empty());
        assert_eq!(p.not_located_impacts, vec!["b:h9+X"]);
        // a smaller radius leaves h1 and h2 (48 mm from their nearest) outside
        let p = propose(&s, &g, &o, 40.0).unwrap();
        assert!(p.groups.iter().all(|g| g.impacts.is_empty()));
        assert_eq!(p.outside_sensors, vec!["b:s3+Z"]);
        assert_eq!(p.outside_impacts, vec!["b:h1+Z", "b:h2+X"]);
    }

    #[test]
    fn a_tie_goes_to_the_first_origin_and_units_are_the_geometrys() {
        let g = geom("# mortise-geometry 1\nunit, m\nb:s1, 0.5, 0, 0\n");
        let s = set(&["b:s1+X"], &[]);
        let o = [
            Origin {
                name: "a".into(),
                origin: [0.0, 0.0, 0.0],
            },
            Origin {
                name: "c".into(),
                origin: [1.0, 0.0, 0.0],
            },
        ];
        let p = propose(&s, &g, &o, 0.5).unwrap();
        assert_eq!(p.groups[0].sensors, vec!["b:s1+X"]);
        assert!(p.groups[1].sensors.is_empty());
    }

    #[test]
    fn bad_requests_are_refused_naming_the_field() {
        let g = geom("# mortise-geometry 1\nunit, mm\nb:s1, 0, 0, 0\n");
        let s = set(&["b:s1+X"], &[]);
        let one = [Origin {
            name: "a".into(),
            origin: [0.0, 0.0, 0.0],
        }];
        assert_eq!(
            propose(&s, &g, &[], 1.0).unwrap_err().field.as_deref(),
            Some("origins")
        );
        assert_eq!(
            propose(&s, &g, &one, 0.0).unwrap_err().field.as_deref(),
            Some("radius")
        );
        assert_eq!(
            propose(&s, &g, &one, f64::NAN)
                .unwrap_err()
                .field
                .as_deref(),
            Some("radius")
        );
        let two = [one[0].clone(), one[0].clone()];
        assert_eq!(
            propose(&s, &g, &two, 1.0).unwrap_err().field.as_deref(),
            Some("origins[1].name")
        );
        let bad = [Origin {
            name: "a".into(),
            origin: [f64::INFINITY, 0.0, 0.0],
        }];
        assert_eq!(
            propose(&s, &g, &bad, 1.0).unwrap_err().field.as_deref(),
            Some("origins[0].origin")
        );
    }
}
