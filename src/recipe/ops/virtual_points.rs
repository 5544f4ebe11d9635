//! `to-virtual-points`: a set's interface channels and impacts reduced to
//! virtual points (six DOFs each) by [`crate::vpt`].

use super::{opt, req, Ctx, Op, Operand, Operation, StepOutput};
use crate::error::{quote, Error, Result};
use crate::frf::FrfSet;
use crate::limits::Limits;
use crate::recipe::execute::values_before;
use crate::recipe::report::StepReport;
use crate::recipe::{FileSource, Recipe};
use crate::vpt::{self, Geometry, RawRow, VirtualPointDef, DEFAULT_CONSISTENCY_MIN};
use serde::{Deserialize, Serialize};

/// The geometry operand: a file of our geometry layout, or the rows inline.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(untagged)]
pub enum GeometryOperand {
    File(String),
    Inline(InlineGeometry),
}

/// `{"unit": "mm", "rows": [{"label", "at", "dir"}]}`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InlineGeometry {
    #[serde(default)]
    pub unit: String,
    pub rows: Vec<InlineRow>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InlineRow {
    pub label: String,
    pub at: [f64; 3],
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dir: Option<[f64; 3]>,
}

/// One virtual point as the recipe writes it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PointSpec {
    pub name: String,
    pub origin: [f64; 3],
    pub sensors: Vec<String>,
    pub impacts: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sensor_weights: Option<serde_json::Map<String, serde_json::Value>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub impact_weights: Option<serde_json::Map<String, serde_json::Value>>,
}

/// The points of a step; each is read on its own so an error names it.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(transparent)]
pub struct Points(pub Vec<PointSpec>);

fn key_message(m: &str) -> String {
    m.replace("unknown field", "unknown key")
        .replace("missing field", "missing key")
}

impl<'de> Deserialize<'de> for Points {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        use serde::de::Error as _;
        let v = Vec::<serde_json::Value>::deserialize(d)?;
        let mut out = Vec::with_capacity(v.len());
        for (i, p) in v.into_iter().enumerate() {
            let name = p
                .get("name")
                .and_then(|n| n.as_str())
                .map(|n| format!(" ('{}')", quote(n)))
                .unwrap_or_default();
            let spec = serde_json::from_value::<PointSpec>(p).map_err(|e| {
                D::Error::custom(format!(
                    "points[{i}]{name}: {}",
                    key_message(&e.to_string())
                ))
            })?;
            out.push(spec);
        }
        Ok(Points(out))
    }
}

impl<'de> Deserialize<'de> for GeometryOperand {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        use serde::de::Error as _;
        match serde_json::Value::deserialize(d)? {
            serde_json::Value::String(s) => Ok(GeometryOperand::File(s)),
            v @ serde_json::Value::Object(_) => serde_json::from_value::<InlineGeometry>(v)
                .map(GeometryOperand::Inline)
                .map_err(|e| {
                    D::Error::custom(format!(
                        "geometry: {} (an inline geometry is {{\"unit\": \"mm\", \"rows\": [{{\"label\": ..., \"at\": [x, y, z], \"dir\": [dx, dy, dz]}}]}})",
                        key_message(&e.to_string())
                    ))
                }),
            _ => Err(D::Error::custom(
                "geometry: expected a file name (our geometry layout) or an inline object {\"unit\", \"rows\"}",
            )),
        }
    }
}

/// Reduce interface channels and impacts to virtual points.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ToVirtualPoints {
    pub from: String,
    pub geometry: GeometryOperand,
    pub points: Points,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub consistency_min: Option<f64>,
}

fn weights(
    m: &Option<serde_json::Map<String, serde_json::Value>>,
    key: &str,
) -> Result<Vec<(String, f64)>> {
    let Some(m) = m else { return Ok(Vec::new()) };
    m.iter()
        .map(|(k, v)| {
            v.as_f64().map(|x| (k.clone(), x)).ok_or_else(|| {
                Error::recipe(format!("the weight of '{}' is not a number", quote(k)))
                    .field(format!("{key}.{}", quote(k)))
            })
        })
        .collect()
}

impl ToVirtualPoints {
    /// The step's geometry: its file read through `files`, or its inline rows.
    fn geometry(&self, files: &dyn FileSource) -> Result<Geometry> {
        match &self.geometry {
            GeometryOperand::File(name) => {
                let bytes = files.read(name).map_err(|e| e.field("geometry"))?;
                if crate::io::uff58::looks_like_uff(&bytes).is_some() {
                    Geometry::from_uff(&bytes, name).map_err(|e| e.field("geometry"))
                } else {
                    Geometry::from_csv(&bytes, name)
                }
            }
            GeometryOperand::Inline(g) => {
                let rows: Vec<RawRow> = g
                    .rows
                    .iter()
                    .map(|r| RawRow {
                        label: r.label.clone(),
                        at: r.at,
                        dir: r.dir,
                    })
                    .collect();
                let places: Vec<String> = (0..rows.len())
                    .map(|i| format!("geometry.rows[{i}]"))
                    .collect();
                Geometry::from_rows(&g.unit, &rows, &places).map_err(|e| e.field("geometry"))
            }
        }
    }

    /// The step's points resolved against the set it reads: its geometry
    /// and the plan (each point's channels and impacts located), as the
    /// run computes them.
    pub fn plan_on(&self, set: &FrfSet, files: &dyn FileSource) -> Result<(Geometry, vpt::Plan)> {
        let geom = self.geometry(files)?;
        let mut defs = Vec::with_capacity(self.points.0.len());
        for (i, p) in self.points.0.iter().enumerate() {
            let ctx = vpt::transform::point_context(i, &p.name);
            defs.push(VirtualPointDef {
                name: p.name.clone(),
                origin: p.origin,
                sensors: p.sensors.clone(),
                impacts: p.impacts.clone(),
                sensor_weights: weights(&p.sensor_weights, "sensor_weights")
                    .map_err(|e| e.within(ctx.clone()))?,
                impact_weights: weights(&p.impact_weights, "impact_weights")
                    .map_err(|e| e.within(ctx))?,
            });
        }
        let plan = vpt::plan(set, &geom, &defs)?;
        Ok((geom, plan))
    }
}

/// A to-virtual-points step of a recipe resolved for drawing: the set it
/// reads is made as the baseline run makes it (components loaded, the
/// steps before it run, within `limits`), then its points are resolved
/// against that set ([`ToVirtualPoints::plan_on`]). Refused, naming the
/// step: a step the recipe does not have, a step of another kind (the
/// message lists the recipe's to-virtual-points steps).
pub fn virtual_point_plan(
    recipe: &Recipe,
    step: &str,
    files: &dyn FileSource,
    limits: &Limits,
) -> Result<(Geometry, vpt::Plan)> {
    let vp_steps: Vec<&str> = recipe
        .steps
        .iter()
        .filter(|s| matches!(s.op, Op::ToVirtualPoints(_)))
        .map(|s| s.id.as_str())
        .collect();
    let listed = if vp_steps.is_empty() {
        "the recipe has none".to_string()
    } else {
        format!("the recipe's are {}", vp_steps.join(", "))
    };
    let Some(n) = recipe.steps.iter().position(|s| s.id == step) else {
        return Err(Error::recipe(format!(
            "the recipe has no step '{}'; the geometry is drawn for a to-virtual-points step ({listed})",
            quote(step)
        ))
        .field("step"));
    };
    let st = &recipe.steps[n];
    let Op::ToVirtualPoints(vp) = &st.op else {
        return Err(Error::recipe(format!(
            "step '{}' is a '{}' step; the geometry is drawn for a to-virtual-points step ({listed})",
            quote(step),
            st.op.name()
        ))
        .field("step"));
    };
    let label = format!("steps[{n}] (id '{}', op '{}')", st.id, st.op.name());
    let values = values_before(recipe, n, files, limits)?;
    let set = values.get(&vp.from).ok_or_else(|| {
        Error::recipe(format!(
            "'{}' is not a component or an earlier step",
            quote(&vp.from)
        ))
        .field("from")
        .within(label.clone())
    })?;
    vp.plan_on(set, files).map_err(|e| e.within(label))
}

/// Propose virtual-point groups for the set `from` names (a component, or
/// a step of the recipe, made as the baseline run makes it) with the
/// geometry file `geometry` (our layout or a Universal File with nodes,
/// read through `files`): each located channel and impact goes to the
/// nearest origin within `radius` ([`vpt::groups::propose`]; origins and
/// radius in the geometry's unit).
pub fn virtual_point_groups(
    recipe: &Recipe,
    from: &str,
    geometry: &str,
    origins: &[vpt::groups::Origin],
    radius: f64,
    files: &dyn FileSource,
    limits: &Limits,
) -> Result<vpt::groups::Proposal> {
    let n = recipe
        .steps
        .iter()
        .position(|s| s.id == from)
        .map_or(0, |k| k + 1);
    let values = values_before(recipe, n, files, limits)?;
    let set = values.get(from).ok_or_else(|| {
        Error::recipe(format!(
            "'{}' is not a component or a step of the recipe",
            quote(from)
        ))
        .field("from")
    })?;
    let step = ToVirtualPoints {
        from: from.to_string(),
        geometry: GeometryOperand::File(geometry.to_string()),
        points: Points(Vec::new()),
        consistency_min: None,
    };
    let geom = step.geometry(files)?;
    vpt::groups::propose(set, &geom, origins, radius)
}

impl Operation for ToVirtualPoints {
    const SUMMARY: &'static str =
        "reduce measured interface channels and impacts to virtual points (3 translations, 3 rotations each) by the virtual point transformation; other DOFs are kept; reports each point's sensor and impact consistency";
    const OPERANDS: &'static [Operand] = &[
        req("from", "name of the set (motion per force: receptance, mobility or accelerance)"),
        req(
            "geometry",
            "where each channel and impact sits: a file of our geometry layout ('# mortise-geometry 1', 'unit, mm', rows 'label, x, y, z[, dx, dy, dz]'; see the README), a Universal File with nodes (datasets 15 or 2411, directions from each node's displacement system; positions and origins in m), or inline {\"unit\": \"mm\", \"rows\": [{\"label\": \"c:s1\", \"at\": [x, y, z], \"dir\": [dx, dy, dz] (optional, DOF rows only)}]}; a node row gives each of its DOFs the direction of its label; every row must be used",
        ),
        req(
            "points",
            "the virtual points: [{\"name\": \"NODE\" or \"COMPONENT:NODE\" (DOFs NAME+X … NAME+RZ), \"origin\": [x, y, z] (in the geometry's unit), \"sensors\": [node or DOF labels of outputs], \"impacts\": [node or DOF labels of inputs], \"sensor_weights\" / \"impact_weights\" (optional): {label: positive weight, default 1}}]; at least 6 channels and 6 impacts each, not all on one line",
        ),
        opt(
            "consistency_min",
            "flag a point whose sensor or impact consistency falls below this value at any line (0 to 1; default 0.9, common practice)",
        ),
    ];
    fn reads(&self) -> Vec<&str> {
        vec![&self.from]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let s = cx.get("from", &self.from)?;
        let threshold = self.consistency_min.unwrap_or(DEFAULT_CONSISTENCY_MIN);
        if !(threshold.is_finite() && threshold > 0.0 && threshold <= 1.0) {
            return Err(Error::recipe(format!(
                "'consistency_min' is {threshold}; expected a number above 0 and at most 1 (for example 0.9)"
            ))
            .field("consistency_min"));
        }
        let (geom, plan) = self.plan_on(s, cx.files)?;
        cx.check_set(
            "the virtual-point set",
            s.n_lines(),
            plan.n_out(),
            plan.n_in(),
        )?;
        cx.check_work(
            &format!(
                "transforming {} lines of {} × {} to {} × {}",
                s.n_lines(),
                s.n_out(),
                s.n_in(),
                plan.n_out(),
                plan.n_in()
            ),
            plan.work(s.n_lines(), s.n_out(), s.n_in()),
        )?;
        let t = plan.apply(s, threshold)?;
        let mut report = StepReport::new(cx.id, "to-virtual-points", t.set.warnings.clone());
        if geom.whole_structure {
            report.notes.push(format!(
                "geometry from the nodes of {} ({} nodes; positions in m, DOF directions from each node's displacement system)",
                geom.name(),
                geom.rows.len() / 6
            ));
        }
        report.virtual_points = Some(t.points);
        Ok(StepOutput {
            set: t.set,
            extras: Vec::new(),
            report,
        })
    }
}
