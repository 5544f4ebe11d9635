//! The recipe: a versioned, declarative JSON description of an assembly
//! (components, joints, operations, requested outputs) and its executor.
//! The CLI (`mortise run`) and the page execute recipes with this code.
//!
//! # Schema (version 1)
//! ```json
//! {
//!   "format": "mortise-recipe",
//!   "version": 1,
//!   "title": "free text",
//!   "components": {
//!     "NAME": { "file": "relative/path.uff", "component": "ns", "import": { ...ImportOptions... },
//!               "select": { "outputs": ["ns:1+Z"], "inputs": ["ns:1+Z"] }, "set": 0 },
//!     ...
//!   },
//!   "steps": [
//!     { "id": "ID", "op": "OP", ...operands... },
//!     ...
//!   ],
//!   "variants": [ { "name": "softer isolators", "scale": { "NAME": 0.5 }, "drop_joints": ["STEP#index"] } ],
//!   "outputs": ["ID", ...]
//! }
//! ```
//! Components and step results share one namespace of names; a step may use
//! any name defined before it. Operations (`op`):
//! * `couple` — `parts: [names]`, `joints: [{a, b, type, ...}]`, optional `tsvd` (relative threshold).
//!   Joint `type`: `rigid`, `spring` (k), `damper` (c), `hysteretic` (k, eta),
//!   `spring-damper` (k, c, eta), `measured` (`stiffness`: a component name holding a 1×1 dynamic stiffness).
//! * `decouple` — `assembly`, `remove`, `joints`, optional `tsvd`.
//! * `cascade` — `first`, `second`: H = second · first.
//! * `sum` — `parts`; `series` — `parts` (mobilities add); `parallel` — `parts` (impedances add).
//! * `select` — `from`, `outputs`, `inputs` (DOF labels; omitted = all).
//! * `convert` — `from`, `kind` (receptance, mobility, accelerance, dynamic-stiffness, impedance, apparent-mass).
//! * `invert` — `from`: line-by-line matrix inverse (receptance ↔ dynamic stiffness).
//! * `scale` — `from`, `factor`.
//! * `respond` — `frf`, `excitation` (a spectrum set): y = H·f.
//! * `paths` — `frf`, `excitation`, optional `groups: {name: [DOF labels]}`: contributions of each
//!   input DOF (or group) to each output; their complex sum is the total.
//! * `blocked-forces` — `bench` (FRFs from indicator DOFs to the source's interface DOFs, measured
//!   with the source on a test bench; more indicators than forces allowed), `operational` (the
//!   running source's responses at the indicators, a peak or RMS spectrum), optional `tsvd`
//!   (relative singular-value threshold, default 1e-3) and `validate` (indicator DOFs left out of the
//!   inversion and predicted as an on-board check; the report gives the error per band in dB).
//!   The result is the blocked-force spectrum at the interface DOFs.
//!
//! Every error names the recipe entry (`components.NAME`, `steps[3] (id 'x')`).

use crate::assemble::{self, CouplingOptions, Joint, JointKind};
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};
use crate::io::{self, ImportOptions};
use crate::levels::{self, Weighting};
use crate::predict::{self, paths::PathGroup, paths::RankOptions};
use crate::synth::Synth;
use serde::{Deserialize, Serialize};
use serde_json::{json, Value};
use std::collections::BTreeMap;

/// The `format` field of every recipe.
pub const RECIPE_FORMAT: &str = "mortise-recipe";
/// The schema version this build reads and writes.
pub const RECIPE_VERSION: u32 = 1;

/// Where a recipe's files come from: the disk for the CLI, memory for the page.
pub trait FileSource {
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
        })
    }
}

/// Files on disk relative to a directory (the recipe's own).
#[derive(Debug, Clone)]
pub struct DirSource(pub std::path::PathBuf);

impl FileSource for DirSource {
    fn read(&self, name: &str) -> Result<Vec<u8>> {
        let p = self.0.join(name);
        std::fs::read(&p)
            .map_err(|e| Error::io(format!("cannot read '{}': {e}", p.display())).in_file(name))
    }
}

/// A component: a file (and a selection of its FRFs), or a set given inline.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ComponentSpec {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub file: Option<String>,
    /// Component namespace for the DOFs (default: the component's name).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub component: Option<String>,
    /// Import options (column map for supplier CSVs).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub import: Option<ImportOptions>,
    /// Which set of the file (0-based) when it holds several.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub set: Option<usize>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub select: Option<Selection>,
    /// Convert to this kind after loading.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub kind: Option<String>,
    /// An FRF set given inline (as the bundle stores it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub inline: Option<Box<FrfSet>>,
    /// A synthesized part (lumped network, modal model, beam, frame, isolator),
    /// computed on `grid` (or the recipe's grid).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub synth: Option<Box<Synth>>,
    /// The grid of a synthesized part.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grid: Option<GridSpec>,
    /// Free text shown beside the component.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// A frequency grid: `{"from": 10, "to": 1000, "step": 1}` or `{"lines": [...]}` (Hz).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged, deny_unknown_fields)]
pub enum GridSpec {
    Range { from: f64, to: f64, step: f64 },
    Lines { lines: Vec<f64> },
}

impl GridSpec {
    /// The lines in Hz (checked: finite, strictly increasing, at most 1,000,000).
    pub fn lines(&self) -> Result<Vec<f64>> {
        let v = match self {
            GridSpec::Lines { lines } => lines.clone(),
            GridSpec::Range { from, to, step } => {
                if !(step.is_finite()
                    && *step > 0.0
                    && from.is_finite()
                    && to.is_finite()
                    && to >= from)
                {
                    return Err(Error::grid(format!(
                        "grid from {from} to {to} step {step}: expected finite from ≤ to and step > 0"
                    )));
                }
                let n = ((to - from) / step + 1e-9).floor() as usize + 1;
                if n > 1_000_000 {
                    return Err(Error::grid(format!(
                        "grid of {n} lines; at most 1,000,000 are allowed"
                    )));
                }
                (0..n).map(|i| from + i as f64 * step).collect()
            }
        };
        crate::grid::check_grid(&v)?;
        Ok(v)
    }
}

/// A choice of outputs and inputs by DOF label (omitted = all).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Selection {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outputs: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub inputs: Option<Vec<String>>,
}

/// A joint as written in a recipe.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct JointSpec {
    pub a: String,
    pub b: String,
    #[serde(rename = "type", default = "rigid")]
    pub kind: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub k: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub c: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub eta: Option<f64>,
    /// For `measured`: the name of a component holding a 1×1 dynamic stiffness.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub stiffness: Option<String>,
}

fn rigid() -> String {
    "rigid".into()
}

/// One step. Operands depend on `op` (see the module docs).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Step {
    pub id: String,
    pub op: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub parts: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub joints: Option<Vec<JointSpec>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tsvd: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub assembly: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub remove: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub first: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub second: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub from: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outputs: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub inputs: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub kind: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub factor: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub frf: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub excitation: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub groups: Option<BTreeMap<String, Vec<String>>>,
    /// For `blocked-forces`: the bench FRFs (indicators × interface DOFs).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bench: Option<String>,
    /// For `blocked-forces`: the operational responses at the indicators (a spectrum).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub operational: Option<String>,
    /// For `blocked-forces`: indicator DOFs left out of the inversion and predicted as a check.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub validate: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// A what-if version of the recipe, computed beside the baseline.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Variant {
    pub name: String,
    /// Multiply a component's (or step result's) values by a factor.
    #[serde(default)]
    pub scale: BTreeMap<String, f64>,
    /// Joints to leave out, as "STEP_ID#INDEX" (0-based index in that step's joints).
    #[serde(default)]
    pub drop_joints: Vec<String>,
}

/// A parsed recipe.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Recipe {
    pub format: String,
    pub version: u32,
    #[serde(default)]
    pub title: String,
    /// Default grid for synthesized components.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grid: Option<GridSpec>,
    #[serde(default)]
    pub components: BTreeMap<String, ComponentSpec>,
    #[serde(default)]
    pub steps: Vec<Step>,
    #[serde(default)]
    pub variants: Vec<Variant>,
    #[serde(default)]
    pub outputs: Vec<String>,
}

/// What a run produced.
#[derive(Debug, Clone)]
pub struct RunResult {
    /// Requested outputs, each named after its step (variants: "ID [variant]").
    pub outputs: Vec<FrfSet>,
    /// Conditioning, warnings, headline numbers, as JSON.
    pub report: Value,
}

/// Parse recipe text.
pub fn parse(text: &str) -> Result<Recipe> {
    let r: Recipe = serde_json::from_str(text).map_err(|e| {
        Error::recipe(format!("not a valid recipe: {e}"))
            .at_line(e.line())
            .field("recipe")
    })?;
    if r.format != RECIPE_FORMAT {
        return Err(Error::recipe(format!(
            "'format' is '{}'; expected '{RECIPE_FORMAT}'",
            r.format
        ))
        .field("format"));
    }
    if r.version != RECIPE_VERSION {
        return Err(Error::recipe(format!(
            "recipe version {} is not supported; this mortise reads version {RECIPE_VERSION}",
            r.version
        ))
        .field("version"));
    }
    Ok(r)
}

/// Serialise a recipe (pretty JSON).
pub fn to_text(r: &Recipe) -> String {
    serde_json::to_string_pretty(r).unwrap_or_default()
}

/// Execute a recipe: the baseline and then every variant.
pub fn run(recipe: &Recipe, files: &dyn FileSource) -> Result<RunResult> {
    let comps = load_components(recipe, files)?;
    let base = execute(recipe, &comps, None)?;
    let mut outputs = Vec::new();
    let mut report = json!({
        "title": recipe.title,
        "mortise_version": crate::VERSION,
        "steps": base.step_reports,
        "components": comps.iter().map(|(k, v)| (k.clone(), component_summary(v))).collect::<BTreeMap<_, _>>(),
    });
    for name in &recipe.outputs {
        let set = base.values.get(name).ok_or_else(|| {
            Error::recipe(format!("output '{name}' is not a component or step id"))
                .field(format!("outputs ('{name}')"))
        })?;
        let mut s = set.clone();
        s.name = name.clone();
        outputs.push(s);
    }
    let mut variants = Vec::new();
    for v in &recipe.variants {
        let res = execute(recipe, &comps, Some(v))
            .map_err(|e| e.field(format!("variants ('{}')", v.name)))?;
        let mut deltas = BTreeMap::new();
        for name in &recipe.outputs {
            if let (Some(a), Some(b)) = (base.values.get(name), res.values.get(name)) {
                let mut s = b.clone();
                s.name = format!("{name} [{}]", v.name);
                deltas.insert(name.clone(), level_change_db(a, b));
                outputs.push(s);
            }
        }
        // A-weighted 1/3-octave differences at each target of every spectrum output
        // (variant minus baseline; IEC 61672-1, IEC 61260-1)
        let mut bands = BTreeMap::new();
        for name in &recipe.outputs {
            if let (Some(a), Some(b)) = (base.values.get(name), res.values.get(name)) {
                if a.signal.is_some() {
                    if let Ok(d) = predict::variants::difference_db(a, b, 3, Weighting::A) {
                        let fin = |x: &f64| if x.is_finite() { json!(x) } else { Value::Null };
                        bands.insert(
                            name.clone(),
                            json!({
                                "targets": d.targets.iter().map(|t| t.to_string()).collect::<Vec<_>>(),
                                "bands": d.bands.iter().map(|b| b.label.clone()).collect::<Vec<_>>(),
                                "per_band_dba": d.per_band_db.iter().map(|r| r.iter().map(fin).collect::<Vec<_>>()).collect::<Vec<_>>(),
                                "overall_dba": d.overall_db.iter().map(fin).collect::<Vec<_>>(),
                            }),
                        );
                    }
                }
            }
        }
        variants.push(json!({ "name": v.name, "steps": res.step_reports, "level_change_db": deltas, "difference_dba": bands }));
    }
    // the fitness audit of every component, with default (common-practice) limits
    let audits: BTreeMap<String, crate::audit::AuditReport> = comps
        .iter()
        .filter(|(_, s)| s.signal.is_none())
        .map(|(k, s)| {
            (
                k.clone(),
                crate::audit::audit(s, &crate::audit::AuditOptions::default()),
            )
        })
        .collect();
    let mut flagged = Vec::new();
    for (name, a) in &audits {
        for c in &a.checks {
            if c.status == crate::audit::Status::Flag {
                flagged.push(format!("audit of '{name}': {}: {}", c.check, c.summary));
            }
        }
    }
    report["audit"] = serde_json::to_value(&audits).unwrap_or(Value::Null);
    let steps = report["steps"].as_array().cloned().unwrap_or_default();
    let mut head = headline(&steps, &variants);
    head.extend(flagged);
    report["headline"] = json!(head);
    report["variants"] = Value::Array(variants);
    report["caution"] = json!(predict::CAUTION);
    Ok(RunResult { outputs, report })
}

fn component_summary(s: &FrfSet) -> Value {
    json!({
        "kind": s.kind().name(),
        "outputs": s.outputs.len(),
        "inputs": s.inputs.len(),
        "lines": s.n_lines(),
        "from_hz": s.freqs.first(),
        "to_hz": s.freqs.last(),
        "provenance": s.provenance,
        "warnings": s.warnings,
    })
}

/// Energetic level change in dB, b relative to a, over all present entries and lines.
fn level_change_db(a: &FrfSet, b: &FrfSet) -> Option<f64> {
    if a.data.len() != b.data.len() {
        return None;
    }
    let ea: f64 = a
        .data
        .iter()
        .filter(|v| v.re.is_finite())
        .map(|v| v.norm_sqr())
        .sum();
    let eb: f64 = b
        .data
        .iter()
        .filter(|v| v.re.is_finite())
        .map(|v| v.norm_sqr())
        .sum();
    if ea > 0.0 && eb > 0.0 {
        Some(10.0 * (eb / ea).log10())
    } else {
        None
    }
}

/// Load every component of a recipe (once; variants reuse them).
pub fn load_components(
    recipe: &Recipe,
    files: &dyn FileSource,
) -> Result<BTreeMap<String, FrfSet>> {
    let mut out = BTreeMap::new();
    for (name, spec) in &recipe.components {
        let at = format!("components.{name}");
        let set = load_component(name, spec, recipe.grid.as_ref(), files)
            .map_err(|e| e.field(at.clone()))?;
        out.insert(name.clone(), set);
    }
    Ok(out)
}

fn load_component(
    name: &str,
    spec: &ComponentSpec,
    grid: Option<&GridSpec>,
    files: &dyn FileSource,
) -> Result<FrfSet> {
    let sources = [
        spec.file.is_some(),
        spec.inline.is_some(),
        spec.synth.is_some(),
    ];
    if sources.iter().filter(|&&b| b).count() > 1 {
        return Err(Error::recipe(
            "give one of 'file', 'inline' or 'synth', not several",
        ));
    }
    let mut set = match (&spec.file, &spec.inline) {
        (None, None) if spec.synth.is_some() => {
            let g = spec.grid.as_ref().or(grid).ok_or_else(|| {
                Error::recipe(
                    "a synthesized component needs a 'grid' (here or at the top of the recipe)",
                )
            })?;
            let freqs = g.lines().map_err(|e| e.field("grid"))?;
            let synth = spec
                .synth
                .as_ref()
                .ok_or_else(|| Error::recipe("missing 'synth'"))?;
            let mut s = synth.synthesize(&freqs).map_err(|e| e.field("synth"))?;
            if let Some(c) = &spec.component {
                s.set_component(c);
            }
            s
        }
        (Some(file), None) => {
            let bytes = files.read(file)?;
            let mut opts = spec.import.clone().unwrap_or_default();
            if opts.component.is_none() {
                opts.component = Some(spec.component.clone().unwrap_or_else(|| name.to_string()));
            }
            let loaded = io::load(&bytes, file, &opts)?;
            let n = loaded.sets.len();
            let idx = spec.set.unwrap_or(0);
            if n == 0 {
                return Err(Error::recipe(format!("file '{file}' holds no FRF set")));
            }
            if idx >= n {
                return Err(Error::recipe(format!(
                    "'set' is {idx} but file '{file}' holds {n} sets (0 to {})",
                    n - 1
                )));
            }
            if n > 1 && spec.set.is_none() {
                return Err(Error::recipe(format!(
                    "file '{file}' holds {n} sets; say which with \"set\": 0 to {}",
                    n - 1
                )));
            }
            let mut s = loaded
                .sets
                .into_iter()
                .nth(idx)
                .ok_or_else(|| Error::recipe("set index out of range"))?;
            s.warnings.extend(loaded.warnings);
            s
        }
        (None, Some(inline)) => (**inline).clone(),
        (Some(_), Some(_)) => {
            return Err(Error::recipe(
                "give one of 'file', 'inline' or 'synth', not several",
            ))
        }
        (None, None) => {
            return Err(Error::recipe(
                "a component needs 'file', 'inline' or 'synth'",
            ))
        }
    };
    if let Some(sel) = &spec.select {
        set = select(&set, sel.outputs.as_deref(), sel.inputs.as_deref())?;
    }
    if let Some(kind) = &spec.kind {
        set = set.to_kind(kind)?;
    }
    set.name = name.to_string();
    set.validate()?;
    Ok(set)
}

fn parse_dofs(labels: &[String], what: &str) -> Result<Vec<Dof>> {
    labels
        .iter()
        .map(|l| Dof::parse(l, "").map_err(|e| e.field(what.to_string())))
        .collect()
}

fn select(set: &FrfSet, outputs: Option<&[String]>, inputs: Option<&[String]>) -> Result<FrfSet> {
    let outs = match outputs {
        Some(o) => parse_dofs(o, "outputs")?,
        None => set.outputs.clone(),
    };
    let ins = match inputs {
        Some(i) => parse_dofs(i, "inputs")?,
        None => set.inputs.clone(),
    };
    set.select_dofs(&outs, &ins)
}

struct Executed {
    values: BTreeMap<String, FrfSet>,
    step_reports: Vec<Value>,
}

fn execute(
    recipe: &Recipe,
    comps: &BTreeMap<String, FrfSet>,
    variant: Option<&Variant>,
) -> Result<Executed> {
    let mut values: BTreeMap<String, FrfSet> = comps.clone();
    if let Some(v) = variant {
        for (name, f) in &v.scale {
            if let Some(s) = values.get_mut(name) {
                scale_in_place(s, *f);
            } else if !recipe.steps.iter().any(|st| &st.id == name) {
                return Err(Error::recipe(format!(
                    "'scale' names '{name}', which is neither a component nor a step"
                )));
            }
        }
    }
    let mut reports = Vec::new();
    for (n, step) in recipe.steps.iter().enumerate() {
        let at = format!("steps[{n}] (id '{}', op '{}')", step.id, step.op);
        if values.contains_key(&step.id) {
            return Err(Error::recipe(format!("id '{}' is already used", step.id)).field(at));
        }
        let (mut set, report) =
            run_step(step, &values, variant).map_err(|e| e.field(at.clone()))?;
        if let Some(v) = variant {
            if let Some(f) = v.scale.get(&step.id) {
                scale_in_place(&mut set, *f);
            }
        }
        set.name = step.id.clone();
        reports.push(report);
        values.insert(step.id.clone(), set);
    }
    Ok(Executed {
        values,
        step_reports: reports,
    })
}

fn scale_in_place(s: &mut FrfSet, f: f64) {
    for v in &mut s.data {
        *v *= f;
    }
}

fn need<'a>(
    values: &'a BTreeMap<String, FrfSet>,
    name: &Option<String>,
    operand: &str,
) -> Result<&'a FrfSet> {
    let n = name
        .as_ref()
        .ok_or_else(|| Error::recipe(format!("missing operand '{operand}'")))?;
    values.get(n).ok_or_else(|| {
        Error::recipe(format!(
            "'{operand}' names '{n}', which is not a component or an earlier step; known: {}",
            values.keys().cloned().collect::<Vec<_>>().join(", ")
        ))
    })
}

fn need_parts(
    values: &BTreeMap<String, FrfSet>,
    parts: &Option<Vec<String>>,
) -> Result<Vec<FrfSet>> {
    let p = parts
        .as_ref()
        .ok_or_else(|| Error::recipe("missing operand 'parts'"))?;
    if p.is_empty() {
        return Err(Error::recipe("'parts' is empty"));
    }
    p.iter()
        .map(|n| need(values, &Some(n.clone()), "parts").cloned())
        .collect()
}

fn joints(
    step: &Step,
    values: &BTreeMap<String, FrfSet>,
    variant: Option<&Variant>,
) -> Result<Vec<Joint>> {
    let specs = step
        .joints
        .as_ref()
        .ok_or_else(|| Error::recipe("missing operand 'joints'"))?;
    let mut out = Vec::new();
    for (i, j) in specs.iter().enumerate() {
        if let Some(v) = variant {
            if v.drop_joints
                .iter()
                .any(|d| d == &format!("{}#{i}", step.id))
            {
                continue;
            }
        }
        let at = format!("joints[{i}]");
        let a = Dof::parse(&j.a, "").map_err(|e| e.field(format!("{at}.a")))?;
        let b = Dof::parse(&j.b, "").map_err(|e| e.field(format!("{at}.b")))?;
        let num = |v: Option<f64>, name: &str| -> Result<f64> {
            let x = v.ok_or_else(|| {
                Error::recipe(format!("joint type '{}' needs '{name}'", j.kind)).field(at.clone())
            })?;
            if !x.is_finite() || x < 0.0 {
                return Err(Error::recipe(format!(
                    "'{name}' is {x}; expected a finite, non-negative number"
                ))
                .field(at.clone()));
            }
            Ok(x)
        };
        let kind = match j.kind.as_str() {
            "rigid" => JointKind::Rigid,
            "spring" => JointKind::Spring { k: num(j.k, "k")? },
            "damper" => JointKind::Damper { c: num(j.c, "c")? },
            "hysteretic" => JointKind::Hysteretic {
                k: num(j.k, "k")?,
                eta: num(j.eta, "eta")?,
            },
            "spring-damper" => JointKind::SpringDamper {
                k: num(j.k, "k")?,
                c: j.c.unwrap_or(0.0),
                eta: j.eta.unwrap_or(0.0),
            },
            "measured" => {
                let s = need(values, &j.stiffness, "stiffness").map_err(|e| e.field(at.clone()))?;
                JointKind::Measured {
                    stiffness: Box::new(s.clone()),
                }
            }
            other => {
                return Err(Error::recipe(format!(
                    "unknown joint type '{other}'; expected rigid, spring, damper, hysteretic, spring-damper or measured"
                ))
                .field(at))
            }
        };
        out.push(Joint { a, b, kind });
    }
    Ok(out)
}

/// Levels of every row of a spectrum: A-weighted and unweighted overall,
/// A-weighted 1/3-octave bands (IEC 61260-1, IEC 61672-1).
fn spectrum_report(y: &FrfSet) -> Value {
    let mut rows = Vec::new();
    for i in 0..y.n_out() {
        match levels::spectrum_levels(y, i, 3, Weighting::A) {
            Ok(a) => {
                // `line_db` is unweighted: the Z overall is its energetic sum, and the
                // three strongest lines are weighted here (IEC 61672-1)
                let mut lines: Vec<(f64, f64)> = a
                    .freqs
                    .iter()
                    .zip(&a.line_db)
                    .filter(|(_, l)| l.is_finite())
                    .map(|(&f, &l)| (f, l + levels::weighting_db(Weighting::A, f)))
                    .collect();
                lines.sort_by(|x, y| y.1.total_cmp(&x.1));
                lines.truncate(3);
                rows.push(json!({
                    "dof": a.dof,
                    "unit": a.unit,
                    "overall_dba": a.overall_db,
                    "overall_db": levels::sum_levels_db(&a.line_db),
                    "bands": a.bands.iter().map(|b| b.label.clone()).collect::<Vec<_>>(),
                    "band_dba": a.band_db.iter().map(|v| if v.is_finite() { json!(v) } else { Value::Null }).collect::<Vec<_>>(),
                    "top_lines_dba": lines.iter().map(|(f, l)| json!({"hz": f, "dba": l})).collect::<Vec<_>>(),
                }))
            }
            Err(e) => rows.push(json!({ "dof": y.outputs[i].to_string(), "error": e.to_string() })),
        }
    }
    Value::Array(rows)
}

/// Short lines for the terminal: levels at each target of `paths` and
/// `respond` steps, dominant bands, strongest paths, variant changes.
fn headline(steps: &[Value], variants: &[Value]) -> Vec<String> {
    let mut out = Vec::new();
    for st in steps {
        if st["op"] != "paths" {
            continue;
        }
        let Some(rows) = st["levels"].as_array() else {
            continue;
        };
        for row in rows {
            let (Some(dba), Some(unit)) = (row["overall_dba"].as_f64(), row["unit"].as_str())
            else {
                continue;
            };
            let mut bands: Vec<(String, f64)> = row["bands"]
                .as_array()
                .into_iter()
                .flatten()
                .zip(row["band_dba"].as_array().into_iter().flatten())
                .filter_map(|(b, v)| Some((b.as_str()?.to_string(), v.as_f64()?)))
                .collect();
            bands.sort_by(|a, b| b.1.total_cmp(&a.1));
            let top: Vec<String> = bands
                .iter()
                .take(3)
                .map(|(b, v)| format!("{b} Hz {v:.1} dB(A)"))
                .collect();
            let lines: Vec<String> = row["top_lines_dba"]
                .as_array()
                .into_iter()
                .flatten()
                .filter_map(|l| {
                    Some(format!(
                        "{} Hz {:.1} dB(A)",
                        l["hz"].as_f64()?,
                        l["dba"].as_f64()?
                    ))
                })
                .collect();
            out.push(format!(
                "{} at {}: {:.1} dB(A), {:.1} dB unweighted ({})",
                st["id"].as_str().unwrap_or("?"),
                row["dof"].as_str().unwrap_or("?"),
                dba,
                row["overall_db"].as_f64().unwrap_or(f64::NAN),
                unit,
            ));
            out.push(format!("  strongest lines: {}", lines.join(", ")));
            out.push(format!("  loudest 1/3-octave bands: {}", top.join(", ")));
        }
        if let Some(targets) = st["ranking"]["targets"].as_array() {
            for t in targets {
                let paths: Vec<String> = t["overall"]
                    .as_array()
                    .into_iter()
                    .flatten()
                    .map(|p| {
                        format!(
                            "{} {:.1} dB(A) ({:.0} %)",
                            p["path"].as_str().unwrap_or("?"),
                            p["level_db"].as_f64().unwrap_or(f64::NAN),
                            100.0 * p["share"].as_f64().unwrap_or(f64::NAN)
                        )
                    })
                    .collect();
                out.push(format!(
                    "  paths ranked at {}: {}",
                    t["target"].as_str().unwrap_or("?"),
                    paths.join("; ")
                ));
            }
        }
    }
    for v in variants {
        let name = v["name"].as_str().unwrap_or("?");
        let base: Vec<&Value> = steps.iter().filter(|s| s["op"] == "paths").collect();
        let Some(vsteps) = v["steps"].as_array() else {
            continue;
        };
        for b in base {
            let Some(vs) = vsteps.iter().find(|s| s["id"] == b["id"]) else {
                continue;
            };
            for (rb, rv) in b["levels"]
                .as_array()
                .into_iter()
                .flatten()
                .zip(vs["levels"].as_array().into_iter().flatten())
            {
                if let (Some(x), Some(y)) = (rb["overall_dba"].as_f64(), rv["overall_dba"].as_f64())
                {
                    out.push(format!(
                        "variant '{name}': {} at {}: {:.1} dB(A) ({:+.1} dB)",
                        b["id"].as_str().unwrap_or("?"),
                        rb["dof"].as_str().unwrap_or("?"),
                        y,
                        y - x
                    ));
                    // the change per 1/3-octave band, where the bands hold lines
                    let id = b["id"].as_str().unwrap_or("");
                    let d = &v["difference_dba"][id];
                    let t = d["targets"]
                        .as_array()
                        .and_then(|ts| ts.iter().position(|t| t == &rb["dof"]));
                    if let Some(t) = t {
                        let per: Vec<String> = d["bands"]
                            .as_array()
                            .into_iter()
                            .flatten()
                            .zip(d["per_band_dba"][t].as_array().into_iter().flatten())
                            .filter_map(|(b, x)| {
                                Some(format!("{} {:+.1}", b.as_str()?, x.as_f64()?))
                            })
                            .collect();
                        if !per.is_empty() {
                            out.push(format!(
                                "  change by 1/3-octave band (Hz dB): {}",
                                per.join(", ")
                            ));
                        }
                    }
                }
            }
        }
    }
    out
}

fn coupling_report(step: &Step, a: &assemble::Assembled) -> Value {
    let worst = a.condition.iter().cloned().fold(f64::NAN, f64::max);
    let worst_at = a
        .condition
        .iter()
        .position(|&c| c == worst)
        .and_then(|k| a.set.freqs.get(k).copied());
    json!({
        "id": step.id,
        "op": step.op,
        "condition": a.condition,
        "worst_condition": worst,
        "worst_condition_hz": worst_at,
        "truncated": a.truncated,
        "warnings": a.warnings,
    })
}

fn run_step(
    step: &Step,
    values: &BTreeMap<String, FrfSet>,
    variant: Option<&Variant>,
) -> Result<(FrfSet, Value)> {
    let plain = |s: FrfSet| {
        let r = json!({ "id": step.id, "op": step.op, "warnings": s.warnings });
        (s, r)
    };
    let opts = CouplingOptions {
        tsvd_rel_threshold: step.tsvd,
    };
    match step.op.as_str() {
        "couple" => {
            let parts = need_parts(values, &step.parts)?;
            let js = joints(step, values, variant)?;
            let a = assemble::couple(&parts, &js, &opts)?;
            let r = coupling_report(step, &a);
            Ok((a.set, r))
        }
        "decouple" => {
            let asm = need(values, &step.assembly, "assembly")?;
            let rem = need(values, &step.remove, "remove")?;
            let js = joints(step, values, variant)?;
            let a = assemble::decouple(asm, rem, &js, &opts)?;
            let r = coupling_report(step, &a);
            Ok((a.set, r))
        }
        "cascade" => {
            let a = need(values, &step.first, "first")?;
            let b = need(values, &step.second, "second")?;
            Ok(plain(assemble::cascade(a, b)?))
        }
        "sum" => Ok(plain(assemble::sum_paths(&need_parts(values, &step.parts)?)?)),
        "series" => Ok(plain(assemble::series(&need_parts(values, &step.parts)?)?)),
        "parallel" => Ok(plain(assemble::parallel(&need_parts(values, &step.parts)?)?)),
        "select" => {
            let s = need(values, &step.from, "from")?;
            Ok(plain(select(s, step.outputs.as_deref(), step.inputs.as_deref())?))
        }
        "convert" => {
            let s = need(values, &step.from, "from")?;
            let k = step.kind.as_ref().ok_or_else(|| Error::recipe("missing operand 'kind'"))?;
            Ok(plain(s.to_kind(k)?))
        }
        "invert" => {
            let s = need(values, &step.from, "from")?;
            Ok(plain(s.invert()?))
        }
        "scale" => {
            let s = need(values, &step.from, "from")?;
            let f = step.factor.ok_or_else(|| Error::recipe("missing operand 'factor'"))?;
            if !f.is_finite() {
                return Err(Error::recipe(format!("'factor' is {f}; expected a finite number")));
            }
            let mut s = s.clone();
            scale_in_place(&mut s, f);
            Ok(plain(s))
        }
        "respond" => {
            let h = need(values, &step.frf, "frf")?;
            let f = need(values, &step.excitation, "excitation")?;
            let y = predict::operational_response(h, f)?;
            let r = json!({ "id": step.id, "op": step.op, "warnings": y.warnings, "levels": spectrum_report(&y) });
            Ok((y, r))
        }
        "paths" => {
            let h = need(values, &step.frf, "frf")?;
            let f = need(values, &step.excitation, "excitation")?;
            let mut groups = Vec::new();
            if let Some(g) = &step.groups {
                for (name, dofs) in g {
                    groups.push(PathGroup {
                        name: name.clone(),
                        inputs: parse_dofs(dofs, &format!("groups.{name}"))?,
                    });
                }
            }
            let c = predict::paths::path_contributions(h, f, &groups)?;
            let ranking = predict::paths::rank_paths(
                &c,
                &RankOptions {
                    band_fraction: Some(3),
                    weighting: Weighting::A,
                },
            )?;
            let total = c.total.clone();
            let r = json!({
                "id": step.id,
                "op": step.op,
                "warnings": c.warnings,
                "levels": spectrum_report(&total),
                "ranking": ranking,
            });
            Ok((total, r))
        }
        "blocked-forces" => {
            let bench = need(values, &step.bench, "bench")?;
            let op = need(values, &step.operational, "operational")?;
            let mut o = predict::blocked::BlockedForceOptions::default();
            if let Some(t) = step.tsvd {
                o.rel_threshold = t;
            }
            if let Some(v) = &step.validate {
                o.validation = parse_dofs(v, "validate")?;
            }
            let b = predict::blocked::blocked_forces(bench, op, &o)?;
            let worst_val = b.validation.as_ref().map(|v| {
                v.band_error_db
                    .iter()
                    .flatten()
                    .filter(|x| x.is_finite())
                    .fold(0.0f64, |m, x| m.max(x.abs()))
            });
            let worst = b.condition.iter().cloned().filter(|c| c.is_finite()).fold(f64::NAN, f64::max);
            let r = json!({
                "id": step.id,
                "op": step.op,
                "warnings": b.warnings,
                "rel_threshold": b.rel_threshold,
                "indicators": b.indicators.iter().map(|d| d.to_string()).collect::<Vec<_>>(),
                "condition": b.condition.iter().map(|c| if c.is_finite() { json!(c) } else { Value::Null }).collect::<Vec<_>>(),
                "worst_condition": if worst.is_finite() { json!(worst) } else { Value::Null },
                "kept": b.kept,
                "validation_worst_band_error_db": worst_val,
                "validation": b.validation.as_ref().map(|v| json!({
                    "dofs": v.dofs.iter().map(|d| d.to_string()).collect::<Vec<_>>(),
                    "bands": v.bands.iter().map(|b| b.label.clone()).collect::<Vec<_>>(),
                    "band_error_db": v.band_error_db.iter().map(|row| row.iter().map(|x| if x.is_finite() { json!(x) } else { Value::Null }).collect::<Vec<_>>()).collect::<Vec<_>>(),
                })),
            });
            Ok((b.forces, r))
        }
        other => Err(Error::recipe(format!(
            "unknown op '{other}'; expected couple, decouple, cascade, sum, series, parallel, select, convert, invert, scale, respond, paths or blocked-forces"
        ))),
    }
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
}
