//! The recipe: a versioned, declarative JSON description of an assembly
//! (components, joints, operations, requested outputs, what-if variants) and
//! its executor. The CLI (`mortise run`), the page and the tests execute
//! recipes with this code.
//!
//! The full schema, generated from the same definitions the parser uses, is
//! printed by `mortise help recipe` ([`schema_help`]); the page lists the
//! operations and joint types from [`vocabulary`] and [`JOINT_TYPES`].
//!
//! A recipe means exactly one computation or is refused: every key is known
//! to the entry that carries it (components, each operation, each joint type,
//! import options), each operation takes exactly its operands, and an error
//! names its entry, outer to inner (variant → step → joint → field).
//!
//! Module map: `component` (sources of sets), `joint` (joint types),
//! `ops/` (one struct per operation), `execute` (running steps and
//! variants), `report` (the typed run report), `headline` (the short lines),
//! `help` (the schema text).

mod component;
mod demand;
pub(crate) mod execute;
mod headline;
mod help;
mod joint;
mod monte_carlo;
mod ops;
mod report;
mod speed;
mod sweep;
mod sweep_inputs;
mod tolerance;
mod uncertainty;

pub use component::{ComponentSpec, GridSpec, Selection, COMPONENT_FIELDS, MAX_GRID_LINES};
pub use execute::{
    finish_with_sweep, load_components, load_components_with, run, run_with, run_with_sweep,
    run_without_sweep, RunResult,
};
pub use help::schema_help;
pub use joint::{JointSpec, JointType, JointTypeInfo, INFERENCE_RULE, JOINT_TYPES};
pub use monte_carlo::{monte_carlo_draws, monte_carlo_levels, LevelSpread, RecipeMonteCarlo};
pub use ops::{pick_toggled, pick_written};
pub use ops::{
    virtual_point_groups, virtual_point_plan, vocabulary, BlockedForces, Cascade, Convert, Couple,
    Decouple, Invert, Op, OpInfo, Operand, Parallel, Paths, RelativeOrNoise, Resample, Respond,
    Scale, Select, Series, Step, Sum, ToVirtualPoints,
};
pub use report::{
    db_unit, level_rows, step_identification, weighting_for, BandChange, BlockedReport,
    ComponentReport, FilledEntry, InterfaceReport, LevelRow, LineLevel, RunReport, StepReport,
    UncertaintyReport, ValidationReport, VariantReport, REPORT_FORMAT, REPORT_VERSION,
};
pub use speed::{OrderForce, SpeedSource, SPEED_FIELDS};
pub use sweep::{
    merge_csv as merge_sweep_csv, merge_reports as merge_sweep_reports, run_sweep,
    slice as shard_slice, sweep_csv, sweep_headline, sweep_map_csv, PointValue, SweepColumn,
    SweepReport, SweepRow, SweepSpec, MAX_SWEEP_POINTS, SWEEP_CSV_MAGIC, SWEEP_FIELDS,
};
pub use sweep_inputs::{
    fold_slices, split_note, workers as sweep_workers, SweepInputs, MAX_WORKERS, SWEEP_INPUTS_MAGIC,
};
pub use tolerance::{Tolerance, TOLERANCE_FIELDS};
pub use uncertainty::Assessed;

use crate::error::{quote, quote_upto, Error, Result};
use crate::io;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The `format` field of every recipe.
pub const RECIPE_FORMAT: &str = "mortise-recipe";
/// The schema version this build reads and writes.
pub const RECIPE_VERSION: u32 = 1;

/// Where a recipe's files come from: the disk for the CLI, memory for the page.
pub trait FileSource: Sync {
    /// The bytes of the file the recipe names (a name relative to the recipe).
    fn read(&self, name: &str) -> Result<Vec<u8>>;
}

/// Files held in memory, by name.
#[derive(Debug, Clone, Default)]
pub struct MapSource(pub BTreeMap<String, Vec<u8>>);

impl FileSource for MapSource {
    fn read(&self, name: &str) -> Result<Vec<u8>> {
        if let Some(b) = self.0.get(name) {
            return Ok(b.clone());
        }
        // the page keys files by base name
        let base = io::base_name(name);
        self.0.get(&base).cloned().ok_or_else(|| {
            Error::recipe(format!(
                "file '{name}' is not loaded; loaded: {}",
                if self.0.is_empty() {
                    "none".to_string()
                } else {
                    self.0.keys().cloned().collect::<Vec<_>>().join(", ")
                }
            ))
            .field("file")
        })
    }
}

/// Files on disk, relative to the recipe's folder and confined to it
/// unless the user allowed more ([`crate::io::disk`]).
pub use crate::io::disk::DirSource;

impl FileSource for DirSource {
    fn read(&self, name: &str) -> Result<Vec<u8>> {
        DirSource::read(self, name)
    }
}

/// A what-if version of the recipe, computed beside the baseline.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Variant {
    pub name: String,
    /// Multiply a component's (or step result's) values by a factor.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub scale: BTreeMap<String, f64>,
    /// Joints to leave out, as "STEP_ID#INDEX" (0-based index in that step's joints).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub drop_joints: Vec<String>,
    /// Joint parameters to set, "STEP_ID#INDEX.FIELD" → value: `k`, `c` or
    /// `eta` of that joint's type, in SI units.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub set_joints: BTreeMap<String, f64>,
    /// Components replaced by another component: NAME → OTHER (every step
    /// and joint reading NAME reads OTHER instead).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub swap: BTreeMap<String, String>,
}

impl Variant {
    /// True when this variant leaves out joint `index` of step `step`.
    pub fn drops(&self, step: &str, index: usize) -> bool {
        self.drop_joints
            .iter()
            .any(|d| d.rsplit_once('#') == Some((step, &index.to_string())))
    }

    /// The parameters this variant sets on joint `index` of step `step`:
    /// (field, value).
    pub fn joint_settings<'a>(
        &'a self,
        step: &'a str,
        index: usize,
    ) -> impl Iterator<Item = (&'a str, f64)> + 'a {
        self.set_joints.iter().filter_map(move |(k, v)| {
            let (s, i, f) = joint_key(k)?;
            (s == step && i == index).then_some((f, *v))
        })
    }
}

/// "STEP_ID#INDEX.FIELD" split into its parts (the index 0-based).
pub(crate) fn joint_key(key: &str) -> Option<(&str, usize, &str)> {
    let (at, field) = key.rsplit_once('.')?;
    let (step, index) = at.rsplit_once('#')?;
    Some((step, index.parse().ok()?, field))
}

/// Check one "STEP_ID#INDEX.FIELD" = value against the recipe's steps: the
/// step is a couple or decouple step, the joint exists, the field belongs to
/// its type and the value is allowed there. The error names the key.
pub(crate) fn check_joint_setting(r: &Recipe, key: &str, value: f64) -> Result<()> {
    let (step, index, field) = joint_key(key).ok_or_else(|| {
        Error::recipe(format!(
            "'{}' is not a joint parameter; expected STEP_ID#INDEX.FIELD (a couple or decouple step's joint, 0-based, and k, c or eta)",
            quote(key)
        ))
    })?;
    let st = r.steps.iter().find(|s| s.id == step).ok_or_else(|| {
        Error::recipe(format!(
            "'{}' names step '{}', which is not a step of the recipe",
            quote(key),
            quote(step)
        ))
    })?;
    let joints = match &st.op {
        Op::Couple(c) => &c.joints,
        Op::Decouple(c) => &c.joints,
        _ => {
            return Err(Error::recipe(format!(
                "'{}' names step '{}', a '{}' step, which has no joints",
                quote(key),
                quote(step),
                st.op.name()
            )))
        }
    };
    let j = joints.get(index).ok_or_else(|| {
        Error::recipe(format!(
            "'{}' names joint {index} of step '{}', which has {} joint(s) (0-based)",
            quote(key),
            quote(step),
            joints.len()
        ))
    })?;
    j.with_param(field, value)
        .map(|_| ())
        .map_err(|e| Error::recipe(format!("'{}': {}", quote(key), e.message)))
}

/// Check one swap NAME → OTHER: both are components and differ.
pub(crate) fn check_swap(r: &Recipe, name: &str, other: &str) -> Result<()> {
    for n in [name, other] {
        if !r.components.contains_key(n) {
            return Err(Error::recipe(format!(
                "swap '{}' → '{}': '{}' is not a component; components: {}",
                quote(name),
                quote(other),
                quote(n),
                known_list(&r.components.keys().map(String::as_str).collect::<Vec<_>>())
            )));
        }
    }
    if name == other {
        return Err(Error::recipe(format!(
            "swap '{}' → '{}' replaces a component by itself",
            quote(name),
            quote(other)
        )));
    }
    Ok(())
}

/// A parsed recipe.
#[derive(Debug, Clone, Serialize)]
pub struct Recipe {
    pub format: String,
    pub version: u32,
    #[serde(default)]
    pub title: String,
    /// Default grid for synthesized components.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grid: Option<GridSpec>,
    pub components: BTreeMap<String, ComponentSpec>,
    pub steps: Vec<Step>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub variants: Vec<Variant>,
    pub outputs: Vec<String>,
    /// The baseline at a list of points over one parameter.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sweep: Option<SweepSpec>,
    /// Parameters known within a tolerance, drawn by the recipe's Monte Carlo.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub tolerances: Vec<Tolerance>,
}

/// The recipe as written: the top level checked with line numbers, each
/// entry kept raw so its errors can name the entry.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRecipe {
    format: String,
    version: u32,
    #[serde(default)]
    title: String,
    #[serde(default)]
    grid: Option<GridSpec>,
    #[serde(default)]
    components: BTreeMap<String, serde_json::Value>,
    #[serde(default)]
    steps: Vec<serde_json::Value>,
    #[serde(default)]
    variants: Vec<serde_json::Value>,
    #[serde(default)]
    outputs: Vec<String>,
    #[serde(default)]
    sweep: Option<serde_json::Value>,
    #[serde(default)]
    tolerances: Vec<serde_json::Value>,
}

/// Parse recipe text. Errors name the entry (`components.NAME`,
/// `steps[2] (id 'x', op 'couple')`, `variants[0] ('softer')`) or, for the
/// top level, the line.
pub fn parse(text: &str) -> Result<Recipe> {
    let raw: RawRecipe = serde_json::from_str(text).map_err(|e| {
        Error::recipe(format!(
            "not a valid recipe: {}",
            quote_upto(&e.to_string(), 240)
        ))
        .at_line(e.line())
        .field("recipe")
    })?;
    from_raw(raw)
}

fn from_raw(raw: RawRecipe) -> Result<Recipe> {
    if raw.format != RECIPE_FORMAT {
        return Err(Error::recipe(format!(
            "'format' is '{}'; expected '{RECIPE_FORMAT}'",
            raw.format
        ))
        .field("format"));
    }
    if raw.version != RECIPE_VERSION {
        return Err(Error::recipe(format!(
            "recipe version {} is not supported; this mortise reads version {RECIPE_VERSION}",
            raw.version
        ))
        .field("version"));
    }
    let mut components = BTreeMap::new();
    for (name, v) in raw.components {
        let c: ComponentSpec = serde_json::from_value(v.clone()).map_err(|e| {
            Error::recipe(quote_upto(
                &e.to_string().replace("unknown field", "unknown key"),
                240,
            ))
            .within(format!("components.{}", quote(&name)))
        })?;
        // every key used: what serde's flattened models cannot refuse
        let back = serde_json::to_value(&c)
            .map_err(|e| Error::internal(format!("cannot encode a component: {e}")))?;
        if let Some(k) = component::unused_key(&v["synth"], &back["synth"], "synth") {
            return Err(
                Error::recipe(format!("unknown key `{k}`: nothing reads it"))
                    .field(k)
                    .within(format!("components.{}", quote(&name))),
            );
        }
        components.insert(name, c);
    }
    let mut steps = Vec::new();
    for (n, v) in raw.steps.into_iter().enumerate() {
        let label = step_label(n, &v);
        steps.push(Step::from_value(v).map_err(|e| e.within(label))?);
    }
    let mut variants = Vec::new();
    for (n, v) in raw.variants.into_iter().enumerate() {
        let name = v
            .get("name")
            .and_then(|x| x.as_str())
            .unwrap_or("")
            .to_string();
        let var: Variant = serde_json::from_value(v).map_err(|e| {
            Error::recipe(quote_upto(&e.to_string(), 240))
                .within(format!("variants[{n}] ('{}')", quote(&name)))
        })?;
        variants.push(var);
    }
    let sweep = match raw.sweep {
        None => None,
        Some(v) => Some(serde_json::from_value::<SweepSpec>(v).map_err(|e| {
            Error::recipe(quote_upto(
                &e.to_string().replace("unknown field", "unknown key"),
                240,
            ))
            .within("sweep")
        })?),
    };
    let mut tolerances = Vec::new();
    for (i, v) in raw.tolerances.into_iter().enumerate() {
        tolerances.push(serde_json::from_value::<Tolerance>(v).map_err(|e| {
            Error::recipe(quote_upto(
                &e.to_string().replace("unknown field", "unknown key"),
                240,
            ))
            .within(format!("tolerances[{i}]"))
        })?);
    }
    let r = Recipe {
        format: raw.format,
        version: raw.version,
        title: raw.title,
        grid: raw.grid,
        components,
        steps,
        variants,
        outputs: raw.outputs,
        sweep,
        tolerances,
    };
    check_names(&r)?;
    tolerance::check_all(&r)?;
    if let Some(s) = &r.sweep {
        s.points(&r).map_err(|e| e.within("sweep"))?;
    }
    Ok(r)
}

/// "steps[2] (id 'x', op 'couple')" from a raw step, as far as it tells.
fn step_label(n: usize, v: &serde_json::Value) -> String {
    let id = v.get("id").and_then(|x| x.as_str());
    let op = v.get("op").and_then(|x| x.as_str());
    match (id, op) {
        (Some(i), Some(o)) => format!("steps[{n}] (id '{}', op '{}')", quote(i), quote(o)),
        (Some(i), None) => format!("steps[{n}] (id '{}')", quote(i)),
        _ => format!("steps[{n}]"),
    }
}

/// Every name a step, an output or a variant uses is defined before it, ids
/// are unique, and every variant's scale and dropped joint exists.
fn check_names(r: &Recipe) -> Result<()> {
    for name in r.components.keys() {
        check_name(name).map_err(|e| e.within(format!("components.{}", quote(name))))?;
    }
    let mut known: Vec<&str> = r.components.keys().map(String::as_str).collect();
    for (n, st) in r.steps.iter().enumerate() {
        let label = format!("steps[{n}] (id '{}', op '{}')", quote(&st.id), st.op.name());
        check_name(&st.id).map_err(|e| e.field("id").within(label.clone()))?;
        if known.contains(&st.id.as_str()) {
            return Err(Error::recipe(format!(
                "id '{}' is already used by a component or an earlier step",
                quote(&st.id)
            ))
            .field("id")
            .within(label));
        }
        for name in st.op.reads() {
            // an earlier step's extra result is "ID/NAME"
            let base = name.split_once('/').map_or(name, |(id, _)| id);
            if !known.contains(&name) && !known.contains(&base) {
                return Err(Error::recipe(format!(
                    "'{}' is not a component or an earlier step; known: {}",
                    quote(name),
                    known_list(&known)
                ))
                .within(label));
            }
        }
        known.push(&st.id);
    }
    for o in &r.outputs {
        if !known.contains(&o.as_str()) {
            return Err(Error::recipe(format!(
                "output '{}' is not a component or step id; known: {}",
                quote(o),
                known_list(&known)
            ))
            .field("outputs"));
        }
    }
    for (n, v) in r.variants.iter().enumerate() {
        let label = format!("variants[{n}] ('{}')", quote(&v.name));
        check_name(&v.name).map_err(|e| e.field("name").within(label.clone()))?;
        for name in v.scale.keys() {
            if !known.contains(&name.as_str()) {
                return Err(Error::recipe(format!(
                    "'scale' names '{}', which is neither a component nor a step",
                    quote(name)
                ))
                .field("scale")
                .within(label));
            }
        }
        for d in &v.drop_joints {
            let ok = d.rsplit_once('#').and_then(|(id, i)| {
                let i: usize = i.parse().ok()?;
                let st = r.steps.iter().find(|s| s.id == id)?;
                let n = match &st.op {
                    Op::Couple(c) => c.joints.len(),
                    Op::Decouple(c) => c.joints.len(),
                    _ => return None,
                };
                (i < n).then_some(())
            });
            if ok.is_none() {
                return Err(Error::recipe(format!(
                    "'drop_joints' entry '{}' names no joint; expected STEP_ID#INDEX of a couple or decouple step's joints (0-based)",
                    quote(d)
                ))
                .field("drop_joints")
                .within(label));
            }
        }
        for (k, x) in &v.set_joints {
            check_joint_setting(r, k, *x).map_err(|e| {
                e.field(format!("set_joints.{}", quote(k)))
                    .within(label.clone())
            })?;
        }
        for (k, o) in &v.swap {
            check_swap(r, k, o)
                .map_err(|e| e.field(format!("swap.{}", quote(k))).within(label.clone()))?;
        }
    }
    Ok(())
}

/// A name (component, step id, variant) is not empty and holds no control
/// characters: it becomes a file name and a label on the page.
fn check_name(name: &str) -> Result<()> {
    if name.trim().is_empty() {
        return Err(Error::recipe(
            "the name is empty; give it a name of one or more letters",
        ));
    }
    if name.chars().any(char::is_control) {
        return Err(Error::recipe(format!(
            "the name '{}' holds control characters",
            quote(name)
        )));
    }
    Ok(())
}

/// The known names for a message: at most 12, then how many more.
fn known_list(known: &[&str]) -> String {
    let mut s = known
        .iter()
        .take(12)
        .map(|k| quote(k))
        .collect::<Vec<_>>()
        .join(", ");
    if known.len() > 12 {
        s.push_str(&format!(" and {} more", known.len() - 12));
    }
    s
}

impl<'de> Deserialize<'de> for Recipe {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        let raw = RawRecipe::deserialize(d)?;
        from_raw(raw).map_err(|e| serde::de::Error::custom(e.to_string()))
    }
}

/// Serialise a recipe (pretty JSON).
pub fn to_text(r: &Recipe) -> String {
    serde_json::to_string_pretty(r).unwrap_or_default()
}

/// The components a step's or component's value is computed from (every
/// component it reads, through every step on the way); a component name
/// gives itself. Unknown names give nothing.
pub fn components_behind(recipe: &Recipe, name: &str) -> std::collections::BTreeSet<String> {
    let mut out = std::collections::BTreeSet::new();
    let mut todo = vec![name.to_string()];
    let mut seen = std::collections::BTreeSet::new();
    while let Some(n) = todo.pop() {
        if !seen.insert(n.clone()) {
            continue;
        }
        if recipe.components.contains_key(&n) {
            out.insert(n);
        } else if let Some(st) = recipe.steps.iter().find(|s| s.id == n) {
            todo.extend(st.op.reads().into_iter().map(String::from));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_wrong_format_and_version() {
        let e = parse(r#"{"format":"x","version":1}"#).unwrap_err();
        assert!(e.to_string().contains("expected 'mortise-recipe'"), "{e}");
        let e = parse(r#"{"format":"mortise-recipe","version":9}"#).unwrap_err();
        assert!(e.to_string().contains("version 9"), "{e}");
        let e = parse("{\n\"format\": \"mortise-recipe\",\n\"version\": 1,\n\"stepz\": []}")
            .unwrap_err();
        assert!(e.to_string().contains("line 4"), "{e}");
        assert!(e.to_string().contains("stepz"), "{e}");
    }

    #[test]
    fn missing_file_points_at_component() {
        let r = parse(r#"{"format":"mortise-recipe","version":1,"components":{"casing":{"file":"nope.uff"}}}"#).unwrap();
        let e = run(&r, &MapSource::default()).unwrap_err();
        let t = e.to_string();
        assert!(t.contains("components.casing"), "{t}");
        assert!(t.contains("nope.uff"), "{t}");
    }

    #[test]
    fn a_recipe_writes_back_as_it_reads() {
        let text = r#"{"format":"mortise-recipe","version":1,"title":"t",
            "components":{"A":{"file":"a.uff"},"B":{"file":"b.uff"}},
            "steps":[{"id":"c","op":"couple","parts":["A","B"],
                      "joints":[{"a":"A:1+Z","b":"B:1+Z","k":1e5,"eta":0.1}]}],
            "variants":[{"name":"v","drop_joints":["c#0"]}],
            "outputs":["c"]}"#;
        let r = parse(text).unwrap();
        let back = parse(&to_text(&r)).unwrap();
        assert_eq!(back.steps, {
            // the inferred type is written out, so it reads back as given
            let mut s = r.steps.clone();
            if let Op::Couple(c) = &mut s[0].op {
                c.joints[0].inferred = false;
            }
            s
        });
        assert!(to_text(&r).contains("\"type\": \"hysteretic\""));
    }

    #[test]
    fn variants_must_name_what_exists() {
        let base = r#"{"format":"mortise-recipe","version":1,
            "components":{"A":{"file":"a.uff"},"B":{"file":"b.uff"}},
            "steps":[{"id":"c","op":"couple","parts":["A","B"],"joints":[{"a":"A:1+Z","b":"B:1+Z"}]}],
            "variants":[VAR], "outputs":["c"]}"#;
        let e =
            parse(&base.replace("VAR", r#"{"name":"soft","drop_joints":["c#3"]}"#)).unwrap_err();
        assert!(e.to_string().contains("variants[0] ('soft')"), "{e}");
        let e = parse(&base.replace("VAR", r#"{"name":"soft","scale":{"Q":2}}"#)).unwrap_err();
        assert!(e.to_string().contains("'Q'"), "{e}");
        // a joint parameter the joint's type lacks, a joint that is not
        // there, a swap with a name that is no component
        let e = parse(&base.replace("VAR", r#"{"name":"soft","set_joints":{"c#0.k":1e5}}"#))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("set_joints.c#0.k") && e.contains("'rigid'"),
            "{e}"
        );
        let e = parse(&base.replace("VAR", r#"{"name":"soft","set_joints":{"c#1.k":1e5}}"#))
            .unwrap_err()
            .to_string();
        assert!(e.contains("joint 1 of step 'c'"), "{e}");
        let e = parse(&base.replace("VAR", r#"{"name":"soft","swap":{"A":"Q"}}"#))
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("swap.A") && e.contains("'Q' is not a component"),
            "{e}"
        );
    }
}
