//! wasm-bindgen layer: translation only. Every function here turns JS values
//! into library calls and library results into JSON text or bytes; the
//! physics and the file formats live in the library.
//!
//! The worker holds one [`Workspace`]: the bytes of the loaded files (so a
//! recipe can read them by name), the FRF sets read from them and the last
//! run's results, each under a string id the page uses in plot requests.
//! The page keeps its own copy of everything needed to rebuild the workspace
//! (file bytes, options, recipe, results), so a cancelled worker can be
//! replaced without losing work.
//!
//! Errors are thrown as the JSON text of [`crate::Error`] (kind, file,
//! location, field, message).

use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::io::{self, bundle, ExportFormat, ImportOptions};
use crate::plot::{self, PlotSpec};
use crate::recipe::{self, MapSource};
use crate::summary::{self, SetSummary};
use std::cell::RefCell;
use std::collections::BTreeMap;
use wasm_bindgen::prelude::*;

#[derive(Default)]
struct Workspace {
    /// name → (bytes, import options JSON, detected format name).
    files: BTreeMap<String, (Vec<u8>, serde_json::Value, String)>,
    /// id → set; ids "file:<name>#<k>", "bundle:<name>#<k>", "result:<k>", "preview".
    sets: BTreeMap<String, FrfSet>,
    results: Vec<String>,
    report: Option<serde_json::Value>,
}

thread_local! {
    static WS: RefCell<Workspace> = RefCell::new(Workspace::default());
}

fn js_err(e: Error) -> JsValue {
    let text = serde_json::to_string(&e).unwrap_or_else(|_| e.to_string());
    JsValue::from_str(&text)
}

fn to_json<T: serde::Serialize>(v: &T) -> std::result::Result<String, JsValue> {
    serde_json::to_string(v).map_err(|e| js_err(Error::io(format!("cannot encode result: {e}"))))
}

fn options(options_json: &str) -> Result<(ImportOptions, serde_json::Value)> {
    let text = if options_json.trim().is_empty() {
        "{}"
    } else {
        options_json
    };
    let value: serde_json::Value = serde_json::from_str(text)
        .map_err(|e| Error::usage(format!("import options are not JSON: {e}")).field("options"))?;
    let opts: ImportOptions = serde_json::from_value(value.clone())
        .map_err(|e| Error::usage(format!("import options: {e}")).field("options"))?;
    Ok((opts, value))
}

fn file_prefix(name: &str) -> String {
    format!("file:{name}#")
}

fn drop_prefix(ws: &mut Workspace, prefix: &str) {
    ws.sets.retain(|k, _| !k.starts_with(prefix));
}

fn summaries_with_ids(ids: &[String], ws: &Workspace) -> Vec<SetSummary> {
    ids.iter()
        .filter_map(|id| {
            ws.sets.get(id).map(|s| {
                let mut m = summary::set_summary(s);
                m.id = id.clone();
                m
            })
        })
        .collect()
}

/// The recipe vocabulary for the page: operations with their operands,
/// joint types with their parameters, the rule for untyped joints, and the
/// schema text (`mortise help recipe`).
#[wasm_bindgen]
pub fn recipe_vocabulary() -> std::result::Result<String, JsValue> {
    to_json(&serde_json::json!({
        "operations": recipe::vocabulary(),
        "joint_types": recipe::JOINT_TYPES,
        "inference_rule": recipe::INFERENCE_RULE,
        "schema": recipe::schema_help(),
    }))
}

/// Read recipe text as the core reads it, for the page's assembly panel:
/// `{ recipe, notes }`, `recipe` being the parsed recipe written back as
/// JSON (every joint with its `"type"`, exactly the keys the recipe
/// holds) and `notes` how the recipe was read (joint types inferred from
/// their parameters, worded as the run report words them). A recipe the
/// core refuses comes back as the core's error JSON, its `context` naming
/// the entry (innermost first, as [`Error`] keeps it).
#[wasm_bindgen]
pub fn recipe_normalize(text: &str) -> std::result::Result<String, JsValue> {
    let r = recipe::parse(text).map_err(js_err)?;
    let mut notes = Vec::new();
    for st in &r.steps {
        let joints = match &st.op {
            recipe::Op::Couple(c) => &c.joints,
            recipe::Op::Decouple(d) => &d.joints,
            _ => continue,
        };
        for (j, joint) in joints.iter().enumerate() {
            if let Some(n) = joint.inference_note() {
                notes.push(format!("step '{}': joints[{j}]: {n}", st.id));
            }
        }
    }
    if !notes.is_empty() {
        notes.push(format!("rule: {}", recipe::INFERENCE_RULE));
    }
    let value = serde_json::to_value(&r)
        .map_err(|e| js_err(Error::internal(format!("cannot encode the recipe: {e}"))))?;
    to_json(&serde_json::json!({ "recipe": value, "notes": notes }))
}

/// What the page's assembly panel needs to edit a recipe, all from the
/// core: `empty_recipe` (the smallest recipe the core reads, with its
/// format and version), `untyped_joint_type` (the type the core reads for a
/// joint written with no parameters: a new joint's type), and the JSON
/// shape of every operand and joint parameter, found by asking the recipe
/// parser itself: for every operation (and joint type) the first
/// combination of probe values that [`recipe::Step::from_value`] (and the
/// joint reader) accepts gives each operand's shape: "text" (a string),
/// "names" (a list of strings), "number", "joints" (a list of joints),
/// "object", or "json" when no probe fits (the page then edits it as JSON).
/// Shapes come as `operations: {OP: {OPERAND: SHAPE}}` and `joint_types:
/// {TYPE: {PARAM: SHAPE}}`; the page draws its editors from them, so no list
/// of operands, parameters or shapes is kept in JS.
#[wasm_bindgen]
pub fn recipe_editor_info() -> std::result::Result<String, JsValue> {
    use serde_json::{json, Map, Value};
    let operand_probes = [
        ("text", json!("x")),
        ("names", json!(["x"])),
        ("number", json!(0.5)),
        ("joints", json!([{"a": "A:1+X", "b": "B:1+X"}])),
        ("object", json!({"x": ["x"]})),
    ];
    let param_probes = [("number", json!(1.0)), ("text", json!("x"))];

    // The first assignment of probes (an optional slot may also be left out)
    // that `accepts` takes, as slot name → shape.
    fn search(
        slots: &[(&str, bool)],
        probes: &[(&'static str, Value)],
        accepts: &dyn Fn(&Map<String, Value>) -> bool,
    ) -> Map<String, Value> {
        let choices: Vec<usize> = slots
            .iter()
            .map(|(_, optional)| probes.len() + usize::from(*optional))
            .collect();
        let mut pick = vec![0usize; slots.len()];
        loop {
            let mut obj = Map::new();
            for ((name, _), &p) in slots.iter().zip(&pick) {
                if let Some((_, v)) = probes.get(p) {
                    obj.insert((*name).to_string(), v.clone());
                }
            }
            if accepts(&obj) {
                return slots
                    .iter()
                    .zip(&pick)
                    .map(|((name, _), &p)| {
                        let shape = probes.get(p).map_or("json", |(s, _)| *s);
                        ((*name).to_string(), Value::from(shape))
                    })
                    .collect();
            }
            // next assignment (odometer order); none left → every slot "json"
            let mut k = 0;
            loop {
                if k == pick.len() {
                    return slots
                        .iter()
                        .map(|(name, _)| ((*name).to_string(), Value::from("json")))
                        .collect();
                }
                pick[k] += 1;
                if pick[k] < choices[k] {
                    break;
                }
                pick[k] = 0;
                k += 1;
            }
        }
    }

    let mut operations = Map::new();
    for op in recipe::vocabulary() {
        let slots: Vec<(&str, bool)> = op.operands.iter().map(|o| (o.name, !o.required)).collect();
        let name = op.name;
        let shapes = search(&slots, &operand_probes, &|obj| {
            let mut step = obj.clone();
            step.insert("id".into(), json!("probe"));
            step.insert("op".into(), json!(name));
            recipe::Step::from_value(Value::Object(step)).is_ok()
        });
        operations.insert(name.to_string(), Value::Object(shapes));
    }
    let mut joint_types = Map::new();
    for t in recipe::JOINT_TYPES {
        let slots: Vec<(&str, bool)> = t.params.iter().map(|p| (p.0, !p.1)).collect();
        let name = t.name;
        let shapes = search(&slots, &param_probes, &|obj| {
            let mut joint = obj.clone();
            joint.insert("a".into(), json!("A:1+X"));
            joint.insert("b".into(), json!("B:1+X"));
            joint.insert("type".into(), json!(name));
            serde_json::from_value::<recipe::JointSpec>(Value::Object(joint)).is_ok()
        });
        joint_types.insert(name.to_string(), Value::Object(shapes));
    }
    let empty = recipe::parse(
        &json!({"format": recipe::RECIPE_FORMAT, "version": recipe::RECIPE_VERSION}).to_string(),
    )
    .map_err(js_err)?;
    let empty = serde_json::to_value(&empty)
        .map_err(|e| js_err(Error::internal(format!("cannot encode the recipe: {e}"))))?;
    let untyped: recipe::JointSpec = serde_json::from_value(json!({"a": "A:1+X", "b": "B:1+X"}))
        .map_err(|e| {
            js_err(Error::internal(format!(
                "the joint reader refuses a joint without parameters: {e}"
            )))
        })?;
    to_json(&json!({
        "empty_recipe": empty,
        "untyped_joint_type": untyped.type_name(),
        "operations": operations,
        "joint_types": joint_types,
    }))
}

/// The library version.
#[wasm_bindgen]
pub fn version() -> String {
    crate::VERSION.to_string()
}

/// Load one file into the workspace (replacing one of the same name) and
/// return its summary as JSON (`summary::FileSummary`, set ids filled).
#[wasm_bindgen]
pub fn load_file(
    name: &str,
    bytes: &[u8],
    options_json: &str,
) -> std::result::Result<String, JsValue> {
    let (opts, value) = options(options_json).map_err(|e| js_err(e.in_file(name)))?;
    let loaded = io::load(bytes, name, &opts).map_err(|e| js_err(e.in_file(name)))?;
    let mut sum = summary::file_summary(name, bytes, &loaded);
    WS.with(|ws| {
        let mut ws = ws.borrow_mut();
        let prefix = file_prefix(name);
        drop_prefix(&mut ws, &prefix);
        for (k, (set, s)) in loaded.sets.into_iter().zip(sum.sets.iter_mut()).enumerate() {
            let id = format!("{prefix}{k}");
            s.id = id.clone();
            ws.sets.insert(id, set);
        }
        ws.files.insert(
            name.to_string(),
            (bytes.to_vec(), value, loaded.format.name().to_string()),
        );
    });
    to_json(&sum)
}

/// The format of a file, detected from its bytes by the core ("uff58-ascii",
/// "uff58-binary", "csv-mortise", "csv-mapped", "bundle").
#[wasm_bindgen]
pub fn detect_format(name: &str, bytes: &[u8]) -> std::result::Result<String, JsValue> {
    io::detect(bytes, name)
        .map(|f| f.name().to_string())
        .map_err(js_err)
}

/// Remove a file and its sets from the workspace.
#[wasm_bindgen]
pub fn forget_file(name: &str) {
    WS.with(|ws| {
        let mut ws = ws.borrow_mut();
        ws.files.remove(name);
        drop_prefix(&mut ws, &file_prefix(name));
        drop_prefix(&mut ws, &format!("bundle:{name}#"));
    });
}

/// Empty the workspace.
#[wasm_bindgen]
pub fn clear_workspace() {
    WS.with(|ws| *ws.borrow_mut() = Workspace::default());
}

/// Preview of a supplier CSV read with the given import options: the core's
/// preview (first rows split into cells, the values the column map gives
/// them, or why it gives none), the default column map as a template, and,
/// when the options read the whole file, its summary and a plot of its first
/// curve; otherwise the error.
#[wasm_bindgen]
pub fn csv_preview(
    name: &str,
    bytes: &[u8],
    options_json: &str,
    rows: usize,
) -> std::result::Result<String, JsValue> {
    let (opts, _) = options(options_json).map_err(|e| js_err(e.in_file(name)))?;
    let map = opts.column_map.clone().unwrap_or_default();
    let template = serde_json::to_value(io::csv::ColumnMap::default())
        .map_err(|e| js_err(Error::io(e.to_string())))?;
    let mut out = serde_json::json!({ "template": template });
    match io::csv::preview_as(bytes, name, &map, opts.signal, rows.clamp(1, 200)) {
        Ok(p) => out["preview"] = serde_json::to_value(&p).unwrap_or_default(),
        Err(e) => out["error"] = serde_json::to_value(&e).unwrap_or_default(),
    }
    if opts.column_map.is_none() {
        return to_json(&out);
    }
    match io::load(bytes, name, &opts) {
        Ok(loaded) => {
            let sum = summary::file_summary(name, bytes, &loaded);
            out["summary"] = serde_json::to_value(&sum).unwrap_or_default();
            if let Some(first) = loaded.sets.into_iter().next() {
                let mut sets = BTreeMap::new();
                sets.insert("preview".to_string(), first);
                let spec = PlotSpec {
                    series: vec![plot::SeriesRef {
                        set: "preview".into(),
                        out: 0,
                        inp: 0,
                        label: None,
                    }],
                    width: 640,
                    height: 360,
                    ..PlotSpec::from_json("{}").map_err(js_err)?
                };
                match plot::render_svg(&spec, &sets) {
                    Ok((svg, _)) => out["svg"] = serde_json::Value::String(svg),
                    Err(e) => out["error"] = serde_json::to_value(&e).unwrap_or_default(),
                }
            }
        }
        Err(e) => out["error"] = serde_json::to_value(e.in_file(name)).unwrap_or_default(),
    }
    to_json(&out)
}

/// Run a recipe on the workspace's files. Returns
/// `{ results: [SetSummary], report }` and keeps the results for plots,
/// exports and bundles.
#[wasm_bindgen]
pub fn run_recipe(recipe_text: &str) -> std::result::Result<String, JsValue> {
    let r = recipe::parse(recipe_text).map_err(js_err)?;
    let files = WS.with(|ws| {
        MapSource(
            ws.borrow()
                .files
                .iter()
                .map(|(k, v)| (k.clone(), v.0.clone()))
                .collect(),
        )
    });
    let run = recipe::run(&r, &files).map_err(js_err)?;
    let report = serde_json::to_value(&run.report)
        .map_err(|e| js_err(Error::internal(format!("cannot encode the report: {e}"))))?;
    store_results(run.outputs, Some(report))
}

fn store_results(
    outputs: Vec<FrfSet>,
    report: Option<serde_json::Value>,
) -> std::result::Result<String, JsValue> {
    WS.with(|ws| {
        let mut ws = ws.borrow_mut();
        drop_prefix(&mut ws, "result:");
        ws.results.clear();
        for (k, set) in outputs.into_iter().enumerate() {
            let id = format!("result:{k}");
            ws.sets.insert(id.clone(), set);
            ws.results.push(id);
        }
        ws.report = report;
        let out = serde_json::json!({
            "results": summaries_with_ids(&ws.results, &ws),
            "report": ws.report,
        });
        to_json(&out)
    })
}

/// The last results as JSON (`{ results: [FrfSet], report }`), for the page's
/// autosave.
#[wasm_bindgen]
pub fn results_json() -> std::result::Result<String, JsValue> {
    WS.with(|ws| {
        let ws = ws.borrow();
        let sets: Vec<&FrfSet> = ws.results.iter().filter_map(|id| ws.sets.get(id)).collect();
        to_json(&serde_json::json!({ "results": sets, "report": ws.report }))
    })
}

/// Put results saved by [`results_json`] back; returns the same as [`run_recipe`].
#[wasm_bindgen]
pub fn put_results(json: &str) -> std::result::Result<String, JsValue> {
    #[derive(serde::Deserialize)]
    struct Saved {
        results: Vec<FrfSet>,
        #[serde(default)]
        report: Option<serde_json::Value>,
    }
    let saved: Saved = serde_json::from_str(json)
        .map_err(|e| js_err(Error::parse(format!("saved results: {e}")).field("results")))?;
    for s in &saved.results {
        s.validate().map_err(js_err)?;
    }
    store_results(saved.results, saved.report)
}

/// The sets with the given ids (JSON array) written by [`io::export`] as
/// "uff", "uff-binary" or "csv" (UFF: text node labels numbered as
/// `mortise run` numbers them).
fn export_ids(ids_json: &str, format: &str) -> Result<io::Exported> {
    let fmt = match format {
        "uff" => ExportFormat::Uff,
        "uff-binary" => ExportFormat::UffBinary,
        "csv" => ExportFormat::Csv,
        other => {
            return Err(Error::usage(format!(
                "unknown export format '{other}'; expected uff, uff-binary or csv"
            ))
            .field("format"))
        }
    };
    let ids: Vec<String> = serde_json::from_str(ids_json)
        .map_err(|e| Error::usage(format!("set list: {e}")).field("ids"))?;
    let sets = WS.with(|ws| {
        let ws = ws.borrow();
        ids.iter()
            .map(|id| {
                ws.sets
                    .get(id)
                    .cloned()
                    .ok_or_else(|| Error::missing(format!("no data set '{id}' is loaded")))
            })
            .collect::<Result<Vec<FrfSet>>>()
    })?;
    io::export(&sets, fmt)
}

/// Write the sets with the given ids (JSON array) as "uff", "uff-binary" or
/// "csv"; the file's bytes only (see [`export_file`] for the node numbers).
#[wasm_bindgen]
pub fn export_sets(ids_json: &str, format: &str) -> std::result::Result<Vec<u8>, JsValue> {
    export_ids(ids_json, format)
        .map(|e| e.bytes)
        .map_err(js_err)
}

/// Like [`export_sets`], with the node-number table: returns
/// `{ bytes: Uint8Array, node_numbers: text }`, the text being the JSON list
/// `[{component, node, number}]` to show and to offer as a file beside the
/// UFF (`[]` when no label needed a number, and always for CSV).
#[wasm_bindgen]
pub fn export_file(ids_json: &str, format: &str) -> std::result::Result<JsValue, JsValue> {
    let ex = export_ids(ids_json, format).map_err(js_err)?;
    let o = js_sys::Object::new();
    let bytes: JsValue = js_sys::Uint8Array::from(ex.bytes.as_slice()).into();
    js_sys::Reflect::set(&o, &JsValue::from_str("bytes"), &bytes)?;
    js_sys::Reflect::set(
        &o,
        &JsValue::from_str("node_numbers"),
        &JsValue::from_str(&ex.node_numbers_json()),
    )?;
    Ok(o.into())
}

#[derive(serde::Deserialize, Default)]
struct BundleOptions {
    /// ISO 8601 creation time from the page's clock.
    #[serde(default)]
    created: String,
    /// File name → include its FRFs (default: include).
    #[serde(default)]
    include_raw: BTreeMap<String, bool>,
}

/// Make a bundle of the recipe, the loaded files' provenance (with or
/// without their FRFs, per file) and the last results.
#[wasm_bindgen]
pub fn make_bundle(recipe_text: &str, options_json: &str) -> std::result::Result<Vec<u8>, JsValue> {
    let opts: BundleOptions = if options_json.trim().is_empty() {
        BundleOptions::default()
    } else {
        serde_json::from_str(options_json)
            .map_err(|e| js_err(Error::usage(format!("bundle options: {e}"))))?
    };
    let recipe_value = if recipe_text.trim().is_empty() {
        None
    } else {
        Some(
            serde_json::from_str::<serde_json::Value>(recipe_text).map_err(|e| {
                js_err(Error::recipe(format!("the recipe is not JSON: {e}")).field("recipe"))
            })?,
        )
    };
    let b = WS.with(|ws| {
        let ws = ws.borrow();
        let inputs = ws
            .files
            .iter()
            .map(|(name, (bytes, o, format))| {
                let include = opts.include_raw.get(name).copied().unwrap_or(true);
                let prefix = file_prefix(name);
                bundle::BundleInput {
                    name: name.clone(),
                    sha256: io::sha256_hex(bytes),
                    format: format.clone(),
                    options: o.clone(),
                    sets: include.then(|| {
                        ws.sets
                            .iter()
                            .filter(|(k, _)| k.starts_with(&prefix))
                            .map(|(_, s)| s.clone())
                            .collect()
                    }),
                }
            })
            .collect();
        bundle::Bundle {
            format: bundle::BUNDLE_FORMAT.to_string(),
            version: bundle::BUNDLE_VERSION,
            mortise_version: crate::VERSION.to_string(),
            created: opts.created.clone(),
            recipe: recipe_value,
            inputs,
            results: ws
                .results
                .iter()
                .filter_map(|id| ws.sets.get(id).cloned())
                .collect(),
            report: ws.report.clone(),
        }
    });
    bundle::write(&b).map_err(js_err)
}

/// Open a bundle: its inputs' sets and its results replace the workspace's
/// sets; returns `{ recipe, created, mortise_version, inputs, results, report }`.
#[wasm_bindgen]
pub fn open_bundle(name: &str, bytes: &[u8]) -> std::result::Result<String, JsValue> {
    let b = bundle::read(bytes, name).map_err(js_err)?;
    let inputs = WS.with(|ws| {
        let mut ws = ws.borrow_mut();
        drop_prefix(&mut ws, "bundle:");
        let mut inputs = Vec::new();
        for inp in &b.inputs {
            let mut ids = Vec::new();
            if let Some(sets) = &inp.sets {
                for (k, s) in sets.iter().enumerate() {
                    let id = format!("bundle:{}#{k}", inp.name);
                    ws.sets.insert(id.clone(), s.clone());
                    ids.push(id);
                }
            }
            inputs.push(serde_json::json!({
                "name": inp.name,
                "sha256": inp.sha256,
                "format": inp.format,
                "options": inp.options,
                "withheld": inp.sets.is_none(),
                "sets": summaries_with_ids(&ids, &ws),
            }));
        }
        inputs
    });
    let stored = store_results(b.results.clone(), b.report.clone())?;
    let stored: serde_json::Value = serde_json::from_str(&stored).unwrap_or_default();
    to_json(&serde_json::json!({
        "recipe": b.recipe,
        "created": b.created,
        "mortise_version": b.mortise_version,
        "inputs": inputs,
        "results": stored["results"],
        "report": b.report,
    }))
}

/// Draw a plot (`plot::PlotSpec` JSON) as SVG; returns `{ svg, frames }`.
#[wasm_bindgen]
pub fn plot_svg(spec_json: &str) -> std::result::Result<String, JsValue> {
    let spec = PlotSpec::from_json(spec_json).map_err(js_err)?;
    let (svg, frames) = WS
        .with(|ws| plot::render_svg(&spec, &ws.borrow().sets))
        .map_err(js_err)?;
    to_json(&serde_json::json!({ "svg": svg, "frames": frames }))
}

/// Cursor readout: each curve's values at the line nearest `freq` (Hz).
#[wasm_bindgen]
pub fn probe(spec_json: &str, freq: f64) -> std::result::Result<String, JsValue> {
    let spec = PlotSpec::from_json(spec_json).map_err(js_err)?;
    let p = WS
        .with(|ws| plot::probe(&spec, &ws.borrow().sets, freq))
        .map_err(js_err)?;
    to_json(&p)
}
