//! wasm-bindgen layer: translation only. Every function here turns JS values
//! into library calls and library results into JSON text or bytes; the
//! physics and the file formats live in the library.
//!
//! The worker holds one core [`Workspace`] (files, an opened bundle's
//! inputs, results; `src/workspace.rs`, tested natively): every function
//! here calls it. The page keeps its own copy of everything needed to
//! rebuild the workspace (file bytes, options, recipe, results), so a
//! cancelled worker can be replaced without losing work.
//!
//! Errors are thrown as the JSON text of [`crate::Error`] (kind, file,
//! location, field, message).

use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::io::{self, ExportFormat, ImportOptions};
use crate::plot::{self, PlotSpec};
use crate::recipe;
use crate::summary;
use crate::workspace::{BundleOptions, Workspace};
use std::cell::RefCell;
use std::collections::BTreeMap;
use wasm_bindgen::prelude::*;
use wasm_bindgen::JsCast;

thread_local! {
    static WS: RefCell<Workspace> = RefCell::new(Workspace::new());
}

fn js_err(e: Error) -> JsValue {
    let text = serde_json::to_string(&e).unwrap_or_else(|_| e.to_string());
    JsValue::from_str(&text)
}

fn to_json<T: serde::Serialize>(v: &T) -> std::result::Result<String, JsValue> {
    serde_json::to_string(v)
        .map_err(|e| js_err(Error::internal(format!("cannot encode result: {e}"))))
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

    // Each slot's shape, as slot name → shape: first the required slots
    // (the first assignment of probes `accepts` takes, the optional slots
    // left out), then each optional slot alone on top of that. Linear in the
    // optional slots: an operation of a dozen optional operands is probed in
    // a few dozen tries, not in probes^slots (which took 34 s for the
    // time-data steps). A slot no probe fits, or an operation whose required
    // slots take no assignment, is "json" (the panel's plain text field).
    fn search(
        slots: &[(&str, bool)],
        probes: &[(&'static str, Value)],
        accepts: &dyn Fn(&Map<String, Value>) -> bool,
    ) -> Map<String, Value> {
        let all_json = || {
            slots
                .iter()
                .map(|(name, _)| ((*name).to_string(), Value::from("json")))
                .collect::<Map<String, Value>>()
        };
        let required: Vec<usize> = (0..slots.len()).filter(|&k| !slots[k].1).collect();
        let object = |pick: &[(usize, usize)]| {
            let mut obj = Map::new();
            for &(slot, p) in pick {
                obj.insert(slots[slot].0.to_string(), probes[p].1.clone());
            }
            obj
        };
        // required slots: odometer over the probes
        let mut pick = vec![0usize; required.len()];
        let base: Vec<(usize, usize)> = loop {
            let trial: Vec<(usize, usize)> =
                required.iter().copied().zip(pick.iter().copied()).collect();
            if accepts(&object(&trial)) {
                break trial;
            }
            let mut k = 0;
            loop {
                if k == pick.len() {
                    return all_json();
                }
                pick[k] += 1;
                if pick[k] < probes.len() {
                    break;
                }
                pick[k] = 0;
                k += 1;
            }
        };
        let mut shapes = all_json();
        for &(slot, p) in &base {
            shapes.insert(slots[slot].0.to_string(), Value::from(probes[p].0));
        }
        for (slot, (name, optional)) in slots.iter().enumerate() {
            if !optional {
                continue;
            }
            let fits: Vec<&str> = (0..probes.len())
                .filter(|&p| {
                    let mut trial = base.clone();
                    trial.push((slot, p));
                    accepts(&object(&trial))
                })
                .map(|p| probes[p].0)
                .collect();
            // a slot taking a number or a word (e.g. a parameter or "noise")
            // is the plain JSON field, which writes either as typed
            let shape = if fits.contains(&"text") && fits.contains(&"number") {
                Some("json")
            } else {
                fits.first().copied()
            };
            if let Some(shape) = shape {
                shapes.insert((*name).to_string(), Value::from(shape));
            }
        }
        shapes
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
/// `report`, when given, is called with (bytes parsed, file length) while a
/// UFF file is parsed (at most once per `uff58::PROGRESS_STEP` bytes; the
/// worker forwards it to the page).
#[wasm_bindgen]
pub fn load_file(
    name: &str,
    bytes: Vec<u8>,
    options_json: &str,
    report: Option<js_sys::Function>,
) -> std::result::Result<String, JsValue> {
    to_json(&load_summary(name, bytes, options_json, report)?)
}

/// A file the page was given, in one call, so its bytes cross to the
/// worker once: a bundle (by its content) is not loaded, and the answer is
/// `{"kind": "bundle"}` (the page asks before opening it, by
/// `open_bundle`); any other file is loaded as by [`load_file`], and the
/// answer is `{"kind": "data", "summary": …}`. Refusals as [`load_file`]'s.
/// The import options are a data file's (a bundle's own recipe says how
/// its inputs are read): a bundle's answer leaves them unread, as
/// `open_bundle` takes none.
#[wasm_bindgen]
pub fn take_file(
    name: &str,
    bytes: Vec<u8>,
    options_json: &str,
    report: Option<js_sys::Function>,
) -> std::result::Result<String, JsValue> {
    if matches!(io::detect(&bytes, name), Ok(io::Format::Bundle)) {
        return to_json(&serde_json::json!({"kind": "bundle"}));
    }
    let sum = load_summary(name, bytes, options_json, report)?;
    to_json(&serde_json::json!({"kind": "data", "summary": sum}))
}

/// [`load_file`]'s work: the file read into the workspace, its summary.
/// The bytes are taken, not borrowed: the glue has copied them into this
/// memory once, and the workspace keeps that copy (a large file is not
/// copied a second time).
fn load_summary(
    name: &str,
    bytes: Vec<u8>,
    options_json: &str,
    report: Option<js_sys::Function>,
) -> std::result::Result<summary::FileSummary, JsValue> {
    // JSON only here: the workspace reads the options as the file's kind
    // takes them (import options, or a recording's channels)
    let text = if options_json.trim().is_empty() {
        "{}"
    } else {
        options_json
    };
    let value: serde_json::Value = serde_json::from_str(text).map_err(|e| {
        js_err(
            Error::usage(format!("import options are not JSON: {e}"))
                .field("options")
                .in_file(name),
        )
    })?;
    let total = JsValue::from_f64(bytes.len() as f64);
    let mut progress = |done: usize| {
        if let Some(f) = &report {
            // a failing report (the page's affair) does not stop the read
            let _ = f.call2(&JsValue::NULL, &JsValue::from_f64(done as f64), &total);
        }
    };
    WS.with(|ws| {
        ws.borrow_mut()
            .load_file_with_progress(name, bytes, value, &mut progress)
    })
    .map_err(js_err)
}

/// Remove a file and its sets from the workspace.
#[wasm_bindgen]
pub fn forget_file(name: &str) {
    WS.with(|ws| ws.borrow_mut().forget_file(name));
}

/// Set the budget of later runs from JSON (`{"memory_bytes": N, "work": N,
/// "file_bytes": N}`, each optional; `{}` restores the defaults) and return
/// the limits now in force as JSON. The page's "Limits" settings call it.
#[wasm_bindgen]
pub fn set_limits(json: &str) -> std::result::Result<String, JsValue> {
    let l = crate::limits::Limits::from_json(json).map_err(js_err)?;
    WS.with(|ws| ws.borrow_mut().set_limits(l))
        .map_err(js_err)?;
    to_json(&l)
}

/// Empty the workspace.
#[wasm_bindgen]
pub fn clear_workspace() {
    WS.with(|ws| ws.borrow_mut().clear());
}

/// Preview of a supplier CSV read with the given import options: the core's
/// preview (first rows split into cells, the values the column map gives
/// them, or why it gives none), the default column map as a template, and,
/// when the options read the whole file, its summary and a plot of its first
/// curve; otherwise the error. Without a column map in the options, also
/// the map the core detects from the file (`detected`: `{map, reasons}`) or
/// why it cannot (`detect_error`), for the dialog to start from.
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
    if opts.column_map.is_none() {
        match io::csv::detect_map(bytes, name) {
            Ok(d) => out["detected"] = serde_json::to_value(&d).unwrap_or_default(),
            Err(e) => out["detect_error"] = serde_json::to_value(&e).unwrap_or_default(),
        }
    }
    match io::csv::preview_as(bytes, name, &map, opts.signal, rows.clamp(1, 200)) {
        Ok(p) => out["preview"] = serde_json::to_value(&p).unwrap_or_default(),
        Err(e) => out["error"] = serde_json::to_value(&e).unwrap_or_default(),
    }
    if opts.column_map.is_none() {
        return to_json(&out);
    }
    let limits = WS.with(|ws| *ws.borrow().limits());
    match io::load_with_limits(bytes, name, &opts, &limits) {
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

/// Whether the column map in `options_json` (made for the loaded file
/// `mapped`) reads file `name` the same way ([`io::csv::same_layout`]):
/// `{ "same": true }` or `{ "same": false, "why": text }`.
#[wasm_bindgen]
pub fn csv_same_layout(
    mapped: &[u8],
    name: &str,
    bytes: &[u8],
    options_json: &str,
) -> std::result::Result<String, JsValue> {
    let (opts, _) = options(options_json).map_err(|e| js_err(e.in_file(name)))?;
    let map = opts.column_map.ok_or_else(|| {
        js_err(Error::usage("no column map to compare layouts with").field("column_map"))
    })?;
    match io::csv::same_layout(mapped, bytes, name, &map).map_err(js_err)? {
        None => to_json(&serde_json::json!({ "same": true })),
        Some(why) => to_json(&serde_json::json!({ "same": false, "why": why })),
    }
}

/// Run a recipe on the workspace's files and the opened bundle's inputs.
/// Returns `{ results: [SetSummary], report }` and keeps the results for
/// plots, exports and bundles; on failure the last results stay (the page
/// marks them stale).
#[wasm_bindgen]
pub fn run_recipe(recipe_text: &str) -> std::result::Result<String, JsValue> {
    let run = WS
        .with(|ws| ws.borrow_mut().run_recipe(recipe_text))
        .map_err(js_err)?;
    to_json(&run)
}

/// The number of points of the sweep of `recipe_text` (0 when the text does
/// not parse or has no sweep: [`run_recipe`] then reports why), and the
/// workers the page's option `workers_text` asks for (1 to
/// [`recipe::MAX_WORKERS`], refused naming `workers` otherwise), as JSON
/// `{ points, workers }`.
#[wasm_bindgen]
pub fn sweep_plan(recipe_text: &str, workers_text: &str) -> std::result::Result<String, JsValue> {
    let workers = recipe::sweep_workers(workers_text).map_err(js_err)?;
    let points = recipe::parse(recipe_text)
        .ok()
        .and_then(|r| {
            r.sweep
                .as_ref()
                .and_then(|s| s.points(&r).ok())
                .map(|p| p.len())
        })
        .unwrap_or(0);
    to_json(&serde_json::json!({ "points": points, "workers": workers }))
}

/// The inputs of the sweep of `recipe_text` as bytes (components as loaded
/// and the files its steps read; [`recipe::SweepInputs`]) for the page's
/// sweep workers (this worker keeps no copy).
#[wasm_bindgen]
pub fn sweep_inputs(recipe_text: &str) -> std::result::Result<Vec<u8>, JsValue> {
    WS.with(|ws| ws.borrow().sweep_inputs(recipe_text))
        .map_err(js_err)
}

/// Load a sweep's inputs made by [`sweep_inputs`] in another worker (hash
/// and sets checked); returns the SHA-256 of the recipe text they serve.
#[wasm_bindgen]
pub fn load_sweep_inputs(bytes: &[u8]) -> std::result::Result<String, JsValue> {
    WS.with(|ws| ws.borrow_mut().load_sweep_inputs(bytes))
        .map_err(js_err)
}

/// Slice `k` of `n` of the sweep of `recipe_text` on the inputs loaded, as
/// JSON (a sweep report of that slice).
#[wasm_bindgen]
pub fn sweep_slice(recipe_text: &str, k: u32, n: u32) -> std::result::Result<String, JsValue> {
    let rep = WS
        .with(|ws| ws.borrow().sweep_slice(recipe_text, k as usize, n as usize))
        .map_err(js_err)?;
    to_json(&rep)
}

/// Run `recipe_text` without its sweep while the extra workers compute it;
/// [`run_recipe_split`] with the same text finishes it (a failure is
/// reported there).
#[wasm_bindgen]
pub fn run_recipe_begin(recipe_text: &str) {
    WS.with(|ws| ws.borrow_mut().run_recipe_begin(recipe_text));
}

/// [`run_recipe`] with the sweep computed by the workers: `slices_json` is
/// `[{ "ok": SLICE } | { "err": ERROR }, ...]`, slice 1 to N in order (the
/// texts [`sweep_slice`] returned or threw); `started_ms` when the page
/// began the run. Returns what [`run_recipe`] returns.
#[wasm_bindgen]
pub fn run_recipe_split(
    recipe_text: &str,
    slices_json: &str,
    started_ms: f64,
) -> std::result::Result<String, JsValue> {
    #[derive(serde::Deserialize)]
    #[serde(deny_unknown_fields)]
    struct Outcome {
        #[serde(default)]
        ok: Option<recipe::SweepReport>,
        #[serde(default)]
        err: Option<Error>,
    }
    let outcomes: Vec<Outcome> = serde_json::from_str(slices_json)
        .map_err(|e| js_err(Error::parse(format!("the sweep's slices: {e}")).field("slices")))?;
    let slices = outcomes
        .into_iter()
        .enumerate()
        .map(|(i, o)| match (o.ok, o.err) {
            (Some(r), None) => Ok(r),
            (None, Some(e)) => Err(e),
            _ => Err(
                Error::usage(format!("slice {}: expected one of 'ok' or 'err'", i + 1))
                    .field("slices"),
            ),
        })
        .collect();
    let run = WS
        .with(|ws| {
            ws.borrow_mut()
                .run_recipe_split(recipe_text, slices, started_ms)
        })
        .map_err(js_err)?;
    to_json(&run)
}

/// The runs of the workspace, oldest first, as JSON (`[RunRecord]`, see
/// [`crate::history`]): recipe text, start, duration, headline, result
/// summaries (or the error), and whether their curves are still kept.
#[wasm_bindgen]
pub fn run_history() -> std::result::Result<String, JsValue> {
    WS.with(|ws| to_json(&ws.borrow().history()))
}

/// Put back a history saved by the page (before [`put_results`]); the
/// records come back without their curves.
#[wasm_bindgen]
pub fn put_history(json: &str) -> std::result::Result<String, JsValue> {
    let records: Vec<crate::history::RunRecord> = serde_json::from_str(json)
        .map_err(|e| js_err(Error::parse(format!("saved run history: {e}")).field("history")))?;
    WS.with(|ws| ws.borrow_mut().put_history(records))
        .map_err(js_err)?;
    run_history()
}

/// The last results as JSON (`{ results: [FrfSet], report }`), for the page's
/// autosave.
#[wasm_bindgen]
pub fn results_json() -> std::result::Result<String, JsValue> {
    WS.with(|ws| {
        let ws = ws.borrow();
        let (sets, report) = ws.results();
        to_json(&serde_json::json!({ "results": sets, "report": report }))
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
    let run = WS
        .with(|ws| ws.borrow_mut().put_results(saved.results, saved.report))
        .map_err(js_err)?;
    to_json(&run)
}

/// The sets with the given ids (JSON array) written by [`io::export`] as
/// "uff", "uff-binary" or "csv" (UFF: text node labels numbered as
/// `mortise run` numbers them).
fn export_ids(ids_json: &str, format: &str) -> Result<io::Exported> {
    // the one parser of format names; a bundle is written by make_bundle
    let fmt = match ExportFormat::parse(format).map_err(|e| e.field("format"))? {
        ExportFormat::Bundle => {
            return Err(Error::usage(
                "a bundle is written by 'Save bundle', not as an export of sets",
            )
            .field("format"))
        }
        f => f,
    };
    let ids: Vec<String> = serde_json::from_str(ids_json)
        .map_err(|e| Error::usage(format!("set list: {e}")).field("ids"))?;
    let sets = WS.with(|ws| ws.borrow().sets_by_id(&ids))?;
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
    bytes_and_text(&ex.bytes, "node_numbers", &ex.node_numbers_json())
}

fn bytes_and_text(bytes: &[u8], key: &str, text: &str) -> std::result::Result<JsValue, JsValue> {
    let o = js_sys::Object::new();
    let b: JsValue = js_sys::Uint8Array::from(bytes).into();
    js_sys::Reflect::set(&o, &JsValue::from_str("bytes"), &b)?;
    js_sys::Reflect::set(&o, &JsValue::from_str(key), &JsValue::from_str(text))?;
    Ok(o.into())
}

/// The sounds of the chosen curves (JSON `[[set_id, out], ...]`: sound-
/// pressure spectra, e.g. a baseline and its variants) at one gain
/// (`crate::listen::synthesize_together`), with `options_json` a
/// `ListenOptions` (empty: defaults). Returns `{ wavs: [Uint8Array...],
/// info: text }`, `info` the JSON `{sounds: [Sound...], caution}`.
#[wasm_bindgen]
pub fn listen_sounds(
    curves_json: &str,
    options_json: &str,
) -> std::result::Result<JsValue, JsValue> {
    let curves: Vec<(String, usize)> = serde_json::from_str(curves_json)
        .map_err(|e| js_err(Error::usage(format!("curve list: {e}")).field("curves")))?;
    let opts: crate::listen::ListenOptions = if options_json.trim().is_empty() {
        Default::default()
    } else {
        serde_json::from_str(options_json)
            .map_err(|e| js_err(Error::usage(format!("sound options: {e}")).field("listen")))?
    };
    let ids: Vec<String> = curves.iter().map(|c| c.0.clone()).collect();
    let (sets, limits) = WS
        .with(|ws| {
            let ws = ws.borrow();
            ws.sets_by_id(&ids).map(|s| (s, *ws.limits()))
        })
        .map_err(js_err)?;
    let pairs: Vec<(&crate::frf::FrfSet, usize)> =
        sets.iter().zip(&curves).map(|(s, c)| (s, c.1)).collect();
    let sounds = crate::listen::synthesize_together(&pairs, &opts, &limits).map_err(js_err)?;
    let wavs = js_sys::Array::new();
    for s in &sounds {
        let b: JsValue =
            js_sys::Uint8Array::from(crate::listen::float_wav(s.rate, &s.samples).as_slice())
                .into();
        wavs.push(&b);
    }
    let info = serde_json::json!({ "sounds": sounds, "caution": crate::listen::HEARING_CAUTION });
    let o = js_sys::Object::new();
    js_sys::Reflect::set(&o, &JsValue::from_str("wavs"), &wavs)?;
    js_sys::Reflect::set(
        &o,
        &JsValue::from_str("info"),
        &JsValue::from_str(&info.to_string()),
    )?;
    Ok(o.into())
}

/// Make a bundle of the recipe, the loaded files (raw data per file included
/// or withheld, or `results_only`) and the last results. Returns
/// `{ bytes: Uint8Array, info: text }`, `info` being the JSON of
/// `workspace::MadeBundle` (what was withheld or left out, the notice of
/// what a recipient could still infer, and the content SHA-256).
#[wasm_bindgen]
pub fn make_bundle(recipe_text: &str, options_json: &str) -> std::result::Result<JsValue, JsValue> {
    let opts: BundleOptions = if options_json.trim().is_empty() {
        BundleOptions::default()
    } else {
        serde_json::from_str(options_json)
            .map_err(|e| js_err(Error::usage(format!("bundle options: {e}"))))?
    };
    let made = WS
        .with(|ws| ws.borrow().make_bundle(recipe_text, &opts))
        .map_err(js_err)?;
    bytes_and_text(&made.bytes, "info", &to_json(&made)?)
}

/// Open a bundle: every SHA-256 it records is checked (a bundle failing one
/// is refused, naming the entry, and the workspace stays as it was); its
/// inputs (raw data carried, or to be dropped in again) become available to
/// recipes and its results become the workspace's; returns
/// `workspace::OpenedBundle` as JSON (with the checked content SHA-256, or
/// the note of what an earlier version could not have checked).
#[wasm_bindgen]
pub fn open_bundle(name: &str, bytes: &[u8]) -> std::result::Result<String, JsValue> {
    let b = WS
        .with(|ws| ws.borrow_mut().open_bundle(name, bytes))
        .map_err(js_err)?;
    to_json(&b)
}

/// The assembly a recipe describes, drawn by the core
/// ([`plot::assembly_svg`]): `{ svg, items, width, height, summary }`, each
/// item a component, step or joint with its box in SVG pixels. A recipe
/// the core refuses comes back as the core's error JSON, as from
/// [`recipe_normalize`].
#[wasm_bindgen]
pub fn assembly_diagram(recipe_text: &str) -> std::result::Result<String, JsValue> {
    let r = recipe::parse(recipe_text).map_err(js_err)?;
    to_json(&plot::assembly_svg(&r).map_err(js_err)?)
}

/// Which switches a plot of this spec's kind reads (`plot::Controls`
/// JSON), for the page to disable the others.
#[wasm_bindgen]
pub fn plot_controls(spec_json: &str) -> std::result::Result<String, JsValue> {
    let spec = PlotSpec::from_json(spec_json).map_err(js_err)?;
    to_json(&spec.kind.controls())
}

/// Cursor readout: each curve's values at the line nearest `freq` (Hz).
#[wasm_bindgen]
pub fn probe(spec_json: &str, freq: f64) -> std::result::Result<String, JsValue> {
    let spec = PlotSpec::from_json(spec_json).map_err(js_err)?;
    let p = WS
        .with(|ws| plot::probe(&spec, ws.borrow().sets(), freq))
        .map_err(js_err)?;
    to_json(&p)
}

// ---------- plots: the worker resolves, the page's main thread draws ----------
//
// The worker holds the sets and resolves a plot (`plot_data`): curve data
// as Float64Arrays (transferred, not copied, to the page) and a small
// structured description (serde-wasm-bindgen). The page's main thread runs a
// second instance of this module for drawing only: `plot_put` keeps the
// data, `plot_draw` draws it on the canvas with a view (switches, zoom),
// `plot_export_svg` writes the same drawing as SVG, and the read-outs
// (`plot_read`, `plot_step`, `plot_nearest`) read the same data. Nothing of
// the workspace (files, recipes, results) exists in that instance.

fn structured<T: serde::Serialize>(v: &T) -> std::result::Result<JsValue, JsValue> {
    v.serialize(&serde_wasm_bindgen::Serializer::json_compatible())
        .map_err(|e| js_err(Error::internal(format!("cannot encode result: {e}"))))
}

fn plot_spec_of(spec: JsValue) -> Result<PlotSpec> {
    let spec: PlotSpec = serde_wasm_bindgen::from_value(spec)
        .map_err(|e| Error::usage(format!("plot description: {e}")).field("plot"))?;
    spec.checked()
}

fn view_of(view: JsValue) -> Result<plot::View> {
    serde_wasm_bindgen::from_value(view)
        .map_err(|e| Error::usage(format!("plot view: {e}")).field("view"))
}

/// Resolve a plot (`plot::PlotSpec` as a JS object) against the workspace:
/// returns `{ meta, grids, arrays }`, `meta` the `plot::PlotMeta` (the
/// resolved spec and each curve's label, units and grid), `grids` the
/// distinct frequency grids and `arrays` per curve its real parts,
/// imaginary parts and levels (dB), each a Float64Array. The worker
/// transfers the arrays' buffers to the page.
#[wasm_bindgen]
pub fn plot_data(spec: JsValue) -> std::result::Result<JsValue, JsValue> {
    let spec = plot_spec_of(spec).map_err(js_err)?;
    let data = WS
        .with(|ws| {
            let ws = ws.borrow();
            plot::PlotData::resolve_with_bands(&spec, ws.sets(), ws.uncertainties())
        })
        .map_err(js_err)?;
    let parts = data.to_parts();
    let o = js_sys::Object::new();
    let arrays = |v: &[Vec<f64>]| -> js_sys::Array {
        v.iter()
            .map(|a| JsValue::from(js_sys::Float64Array::from(a.as_slice())))
            .collect()
    };
    js_sys::Reflect::set(&o, &"meta".into(), &structured(&parts.meta)?)?;
    js_sys::Reflect::set(&o, &"grids".into(), &arrays(&parts.grids))?;
    js_sys::Reflect::set(&o, &"arrays".into(), &arrays(&parts.arrays))?;
    Ok(o.into())
}

/// The same parts as [`plot_data`] written as one JSON text (numbers as
/// shortest round-trip decimal text, NaN and infinities as null): the way
/// results crossed to the page before, kept to measure the two against each
/// other (tests/e2e/plot.test.mjs).
#[wasm_bindgen]
pub fn plot_data_json(spec: JsValue) -> std::result::Result<String, JsValue> {
    let spec = plot_spec_of(spec).map_err(js_err)?;
    let data = WS
        .with(|ws| {
            let ws = ws.borrow();
            plot::PlotData::resolve_with_bands(&spec, ws.sets(), ws.uncertainties())
        })
        .map_err(js_err)?;
    let p = data.to_parts();
    to_json(&serde_json::json!({ "meta": p.meta, "grids": p.grids, "arrays": p.arrays }))
}

thread_local! {
    /// The page's drawing instance: the plot on screen and its last frames.
    static SHOWN: RefCell<Option<(plot::PlotData, Vec<plot::Frame>)>> = const { RefCell::new(None) };
}

fn float_arrays(v: &JsValue, key: &str) -> Result<Vec<Vec<f64>>> {
    let list = js_sys::Reflect::get(v, &JsValue::from_str(key))
        .ok()
        .filter(js_sys::Array::is_array)
        .map(|a| js_sys::Array::from(&a))
        .ok_or_else(|| Error::usage(format!("plot data: no list '{key}'")).field(key))?;
    let mut out = Vec::with_capacity(list.length() as usize);
    for (i, a) in list.iter().enumerate() {
        let a: js_sys::Float64Array = a.dyn_into().map_err(|_| {
            Error::usage(format!("plot data: {key}[{i}] is not a Float64Array")).field(key)
        })?;
        out.push(a.to_vec());
    }
    Ok(out)
}

/// Keep plot data made by [`plot_data`] (in the worker) for drawing here;
/// returns `{ kind, count }` (the plot's kind and how many curves, lines or
/// bar groups it draws).
#[wasm_bindgen]
pub fn plot_put(parts: JsValue) -> std::result::Result<JsValue, JsValue> {
    let meta_js = js_sys::Reflect::get(&parts, &JsValue::from_str("meta"))?;
    let meta: plot::PlotMeta = serde_wasm_bindgen::from_value(meta_js)
        .map_err(|e| js_err(Error::usage(format!("plot data: {e}")).field("meta")))?;
    let data = plot::PlotData::from_parts(plot::PlotParts {
        meta,
        grids: float_arrays(&parts, "grids").map_err(js_err)?,
        arrays: float_arrays(&parts, "arrays").map_err(js_err)?,
    })
    .map_err(js_err)?;
    let out = serde_json::json!({ "kind": data.kind(), "count": data.count() });
    SHOWN.with(|s| *s.borrow_mut() = Some((data, Vec::new())));
    structured(&out)
}

fn with_shown<T>(
    f: impl FnOnce(&mut (plot::PlotData, Vec<plot::Frame>)) -> Result<T>,
) -> Result<T> {
    SHOWN.with(|s| match s.borrow_mut().as_mut() {
        Some(shown) => f(shown),
        None => Err(Error::missing("no plot data: draw a plot first")),
    })
}

/// Draw the kept plot on `canvas`, `width` × `height` CSS pixels at `dpr`
/// device pixels per CSS pixel, with `view` (`plot::View`: db, x_log,
/// y_log, x_range, y_range), in passes (`plot::Pass`): the curves
/// `from..from + count`, the frame when `from` is 0 (the canvas sized and
/// cleared), the legend in the last pass. Returns `plot::Drawn`
/// (`{ frames, legend, next }`, `next` the next pass's `from` or null when
/// the drawing is complete).
#[wasm_bindgen]
pub fn plot_draw(
    canvas: web_sys::HtmlCanvasElement,
    view: JsValue,
    width: u32,
    height: u32,
    dpr: f64,
    from: u32,
    count: u32,
) -> std::result::Result<JsValue, JsValue> {
    let view = view_of(view).map_err(js_err)?;
    let pass = plot::Pass {
        from: from as usize,
        to: (from as usize).saturating_add(count as usize),
    };
    let drawn = with_shown(|(data, frames)| {
        plot::check_size(width, height)?;
        let b = if pass.from == 0 {
            plot::Canvas::new(canvas, width, height, dpr)
        } else {
            plot::Canvas::resume(canvas, width, height, dpr)
        };
        let mut b = b.map_err(|e| Error::io(format!("the plot canvas: {e}")))?;
        let drawn = plot::draw_data_pass(&mut b, data, &view, pass)?;
        frames.clone_from(&drawn.frames);
        Ok(drawn)
    })
    .map_err(js_err)?;
    structured(&drawn)
}

/// The kept plot drawn as SVG text with `view` at `width` × `height` px:
/// the export of exactly what the canvas shows.
#[wasm_bindgen]
pub fn plot_export_svg(
    view: JsValue,
    width: u32,
    height: u32,
) -> std::result::Result<String, JsValue> {
    let view = view_of(view).map_err(js_err)?;
    with_shown(|(data, _)| Ok(plot::render_data_svg(data, &view, width, height)?.0)).map_err(js_err)
}

/// Read-out of the kept plot: each curve's values at the line nearest
/// `freq` (Hz), `[plot::Probe]`.
#[wasm_bindgen]
pub fn plot_read(freq: f64) -> std::result::Result<JsValue, JsValue> {
    let p = with_shown(|(data, _)| Ok(plot::probe_data(data, freq))).map_err(js_err)?;
    structured(&p)
}

/// The line next to `freq` over the kept plot's grids: above when `dir` > 0,
/// below when `dir` < 0; undefined when there is none that way.
#[wasm_bindgen]
pub fn plot_step(freq: f64, dir: i32) -> Option<f64> {
    with_shown(|(data, _)| Ok(plot::step_line(data, freq, dir)))
        .ok()
        .flatten()
}

/// Nyquist read-out of the kept plot: the point nearest the pointer at
/// (`x`, `y`) CSS pixels inside the last drawing's panel, as `{ probe, x,
/// y }` (`x`, `y` the point's own position), or null.
#[wasm_bindgen]
pub fn plot_nearest(x: f64, y: f64) -> std::result::Result<JsValue, JsValue> {
    let hit = with_shown(|(data, frames)| {
        let frame = frames
            .iter()
            .find(|f| x >= f.x0 as f64 && x <= f.x1 as f64 && y >= f.y0 as f64 && y <= f.y1 as f64);
        Ok(frame.and_then(|f| plot::nearest_point(data, f, x, y)))
    })
    .map_err(js_err)?;
    match hit {
        Some((probe, px, py)) => {
            structured(&serde_json::json!({ "probe": probe, "x": px, "y": py }))
        }
        None => Ok(JsValue::NULL),
    }
}

/// The stabilization chart of an identify-modes step, drawn by the core
/// ([`plot::stabilization_svg`]) from the run report the page holds (the
/// `report` of [`run_recipe`], as JSON text) and the step's id, `width` ×
/// `height` pixels: `{ svg, width, height, summary }` (`plot::Drawing`),
/// `summary` being the chart in words for a screen reader. A report
/// without that step, a step of another kind or a chart without poles
/// comes back as the core's error JSON, naming the step.
#[wasm_bindgen]
pub fn stabilization_chart_svg(
    report_json: &str,
    step_id: &str,
    width: f64,
    height: f64,
) -> std::result::Result<String, JsValue> {
    let report: serde_json::Value = serde_json::from_str(report_json).map_err(|e| {
        js_err(Error::parse(format!("the run report is not JSON: {e}")).field("report"))
    })?;
    let id = recipe::step_identification(&report, step_id).map_err(js_err)?;
    let chart = crate::identify::stabilization_chart(&id);
    to_json(&plot::stabilization_svg(&chart, width, height).map_err(js_err)?)
}

/// The geometry of the to-virtual-points step `step_id` of a recipe, drawn
/// by the core ([`plot::vpt_geometry_svg`]) in three views: each virtual
/// point's origin, sensor channels and impacts, a scale bar. The files the
/// recipe names are read from the workspace (loaded files, then an opened
/// bundle's inputs), as [`run_recipe`] reads them, and the steps before it
/// are run to know the channels of the set it reads. Returns `{ svg, width,
/// height, summary }` (`plot::Drawing`); a recipe the core refuses, a
/// missing file, a step the recipe does not have or a step of another kind
/// comes back as the core's error JSON, naming it.
#[wasm_bindgen]
pub fn vpt_geometry_svg(recipe_text: &str, step_id: &str) -> std::result::Result<String, JsValue> {
    let r = recipe::parse(recipe_text).map_err(js_err)?;
    let (geom, plan) = WS
        .with(|ws| ws.borrow().virtual_point_plan(&r, step_id))
        .map_err(js_err)?;
    to_json(&plot::vpt_geometry_svg(step_id, &geom, &plan.points).map_err(js_err)?)
}

/// The identify-modes step `step_id` of a run report (as JSON text).
fn report_identification(
    report_json: &str,
    step_id: &str,
) -> std::result::Result<crate::identify::Identification, JsValue> {
    let report: serde_json::Value = serde_json::from_str(report_json).map_err(|e| {
        js_err(Error::parse(format!("the run report is not JSON: {e}")).field("report"))
    })?;
    recipe::step_identification(&report, step_id).map_err(js_err)
}

/// The fitting view's chart: [`stabilization_chart_svg`]'s drawing with the
/// box of every pole's mark (`poles`: order, index, frequency, damping,
/// class, picked, x, y, w, h in SVG pixels; `plot::PoleMark`) and the
/// groups of stable poles (`groups`: frequency, damping, orders, the pole
/// to choose; `identify::stability::StableGroup`), for a page to tell
/// which mark a click is on and to list the stable poles for the keyboard.
#[wasm_bindgen]
pub fn stabilization_chart_marks(
    report_json: &str,
    step_id: &str,
    width: f64,
    height: f64,
) -> std::result::Result<String, JsValue> {
    let id = report_identification(report_json, step_id)?;
    let chart = crate::identify::stabilization_chart(&id);
    let d = plot::stabilization_drawing(&chart, width, height).map_err(js_err)?;
    let groups = crate::identify::stability::stable_groups(&id.chart, &id.tolerances);
    let mut v = serde_json::to_value(&d)
        .map_err(|e| js_err(Error::internal(format!("cannot encode result: {e}"))))?;
    v["groups"] = serde_json::to_value(&groups)
        .map_err(|e| js_err(Error::internal(format!("cannot encode result: {e}"))))?;
    to_json(&v)
}

/// A click on pole `order`/`index` of step `step_id`'s chart: the step's
/// new `pick` (`pick_json`: the step's `pick` as the recipe has it, or
/// `null`) as `{pick, added}` (`recipe::pick_toggled`); the
/// page writes it into the recipe text.
#[wasm_bindgen]
pub fn identify_pick_toggle(
    report_json: &str,
    step_id: &str,
    pick_json: &str,
    order: usize,
    index: usize,
) -> std::result::Result<String, JsValue> {
    let id = report_identification(report_json, step_id)?;
    let current: serde_json::Value = serde_json::from_str(pick_json)
        .map_err(|e| js_err(Error::parse(format!("'pick' is not JSON: {e}")).field("pick")))?;
    let current = (!current.is_null()).then_some(current);
    let (pick, added) =
        recipe::pick_toggled(&id, current.as_ref(), order, index).map_err(js_err)?;
    to_json(&serde_json::json!({ "pick": pick, "added": added }))
}

/// The modes step `step_id` chose, as a `pick` list for the recipe (the
/// automatic choice written out; `recipe::ops::identify::pick_written`).
#[wasm_bindgen]
pub fn identify_pick_written(
    report_json: &str,
    step_id: &str,
) -> std::result::Result<String, JsValue> {
    let id = report_identification(report_json, step_id)?;
    to_json(&recipe::pick_written(&id).map_err(js_err)?)
}

/// Propose virtual points for the set `from` names (a component or a step
/// of the recipe) with the geometry file `geometry` from the workspace:
/// each channel and impact the geometry locates goes to the nearest origin
/// within the radius (`vpt::groups::propose`). `request_json` is
/// `{"origins": [{"name", "origin": [x, y, z]}], "radius": r}` in the
/// geometry's unit. Returns the proposal as JSON (`groups` with their
/// `sensors` and `impacts` DOF labels, `outside`, `not_located`, `unit`).
#[wasm_bindgen]
pub fn vpt_propose_groups(
    recipe_text: &str,
    from: &str,
    geometry: &str,
    request_json: &str,
) -> std::result::Result<String, JsValue> {
    let r = recipe::parse(recipe_text).map_err(js_err)?;
    let q = crate::vpt::groups::Request::from_json(request_json).map_err(js_err)?;
    let p = WS
        .with(|ws| {
            ws.borrow()
                .virtual_point_groups(&r, from, geometry, &q.origins, q.radius)
        })
        .map_err(js_err)?;
    to_json(&p)
}

/// The consistency over frequency of each virtual point of the last run's
/// step `step_id` (`Workspace::virtual_point_consistency`), drawn by the
/// core as `width` × `height` px SVG: a JSON array of `plot::Drawing`.
#[wasm_bindgen]
pub fn vpt_consistency_svg(
    step_id: &str,
    width: u32,
    height: u32,
) -> std::result::Result<String, JsValue> {
    let d = WS
        .with(|ws| {
            ws.borrow()
                .virtual_point_consistency(step_id, width, height)
        })
        .map_err(js_err)?;
    to_json(&d)
}

/// The coupling benchmark in this worker: the case of
/// `assemble::bench_case` (60 + 48 DOFs, 12 rigid joints) on `lines` lines,
/// made under the workspace's limits, then coupled (timed alone). Returns
/// `{ lines, seconds, digest }`, `digest` the SHA-256 of the result's values
/// (`assemble::values_digest`), for `tools/wasm-bench.mjs` to compare with
/// the native run.
#[wasm_bindgen]
pub fn bench_couple(lines: u32) -> std::result::Result<JsValue, JsValue> {
    let limits = WS.with(|ws| *ws.borrow().limits());
    let (comps, joints) = crate::assemble::bench_case(
        lines as usize,
        60,
        48,
        12,
        crate::assemble::BENCH_SEED,
        &limits,
    )
    .map_err(js_err)?;
    let t0 = js_sys::Date::now();
    let r = crate::assemble::couple(
        &comps,
        &joints,
        &crate::assemble::CouplingOptions::default(),
    )
    .map_err(js_err)?;
    let seconds = (js_sys::Date::now() - t0) / 1e3;
    drop(comps);
    structured(&serde_json::json!({
        "lines": lines,
        "seconds": seconds,
        "digest": crate::assemble::values_digest(&r.set),
    }))
}

// ---------- time data: recordings, their analyses and the time view ----------

fn time_request(json: &str) -> Result<crate::workspace::TimeRequest> {
    serde_json::from_str(json)
        .map_err(|e| Error::usage(format!("time analysis: {e}")).field("analysis"))
}

/// The time analyses' vocabulary (`workspace::time_analysis_options`):
/// analyses, windows, spectrum kinds, estimators, detrend choices and
/// defaults, for the page's choices.
#[wasm_bindgen]
pub fn time_analysis_options() -> std::result::Result<String, JsValue> {
    to_json(&crate::workspace::time_analysis_options())
}

/// A window's coherent gain, ENBW and corrections on `segment` samples at
/// `fs` Hz (`workspace::window_corrections`), shown beside the choice.
#[wasm_bindgen]
pub fn time_window_corrections(
    window: &str,
    segment: u32,
    fs: f64,
) -> std::result::Result<String, JsValue> {
    let c = crate::workspace::window_corrections(window, segment as usize, fs).map_err(js_err)?;
    to_json(&c)
}

/// Analyse the recording `name` (`request_json` a
/// `workspace::TimeRequest`); the result file is loaded into the workspace.
/// Returns `{ bytes: Uint8Array, info: text }`, `info` the JSON of
/// `workspace::TimeResult`; the page keeps the bytes like a dropped file's.
#[wasm_bindgen]
pub fn time_analyse(name: &str, request_json: &str) -> std::result::Result<JsValue, JsValue> {
    let req = time_request(request_json).map_err(js_err)?;
    let r = WS
        .with(|ws| ws.borrow_mut().analyse_time(name, &req))
        .map_err(js_err)?;
    let info = to_json(&r)?;
    bytes_and_text(&r.bytes, "info", &info)
}

/// The time view of the recording `name` (`plot::time_view`): `range_json`
/// `[t0, t1]` seconds or empty (the whole record), `request_json` the
/// analysis whose blocks are shaded or empty (none). Returns a
/// `plot::Drawing` as JSON.
#[wasm_bindgen]
pub fn time_view_svg(
    name: &str,
    range_json: &str,
    request_json: &str,
    width: f64,
    height: f64,
) -> std::result::Result<String, JsValue> {
    let range: Option<[f64; 2]> = if range_json.trim().is_empty() {
        None
    } else {
        Some(serde_json::from_str(range_json).map_err(|e| {
            js_err(
                Error::usage(format!("time range: {e}; expected [t0, t1] in seconds"))
                    .field("range"),
            )
        })?)
    };
    let req = if request_json.trim().is_empty() {
        None
    } else {
        Some(time_request(request_json).map_err(js_err)?)
    };
    let d = WS
        .with(|ws| {
            ws.borrow()
                .time_view(name, range, req.as_ref(), width, height)
        })
        .map_err(js_err)?;
    to_json(&d)
}
