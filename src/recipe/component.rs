//! Components: where a recipe's sets come from (a file, an inline set, a
//! synthesized part), and what is done to them on the way in (a selection,
//! a kind, a grid).

use super::ops::transform_select;
use super::FileSource;
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::grid;
use crate::io::{self, ImportOptions};
use crate::limits::Limits;
use crate::synth::Synth;
use serde::{Deserialize, Serialize};

/// A component: a file (and a choice of its FRFs), a set given inline, or a
/// synthesized part.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ComponentSpec {
    /// A file, by name relative to the recipe.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub file: Option<String>,
    /// Component namespace for the DOFs (default: the component's name).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub component: Option<String>,
    /// Import options of a file (column map for supplier CSVs, ...).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub import: Option<ImportOptions>,
    /// Which set of a file (0-based) when it holds several.
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
    /// The grid: where a synthesized part is computed; a file's or inline
    /// set's lines are resampled onto it (interpolation only, never
    /// extrapolation).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grid: Option<GridSpec>,
    /// Interpolation when `grid` resamples a file or inline set: `re-im`
    /// (default) or `log-mag-phase`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub interp: Option<String>,
    /// The uncertainty of the component's values (see
    /// [`crate::uncertainty::spec`]); propagated through the steps.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub uncertainty: Option<crate::uncertainty::UncertaintySpec>,
    /// Free text shown beside the component.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// The component keys, with their meaning (for the help; a unit test checks
/// them against the struct).
pub const COMPONENT_FIELDS: &[(&str, &str)] = &[
    ("file", "a file, by name relative to the recipe (format detected from its content)"),
    ("component", "namespace of the DOFs (default: the component's name)"),
    ("import", "import options of the file: column_map (supplier CSVs), mat (MAT-files: freq, frf, layout, DOFs, quantities, unit), signal (peak, rms, autopower, psd: what its spectra are), component, set_name, time_convention, out_qty / in_qty (UFF datasets that do not tell their quantities), dofs (UFF datasets without DOF numbers: [{\"dataset\": N, \"out\": DOF, \"in\": DOF}])"),
    ("set", "which set of the file, 0-based, when it holds several (required then)"),
    ("select", "{outputs: [DOF labels], inputs: [DOF labels]}: keep these, in this order"),
    ("kind", "convert to this FRF kind after loading (receptance, mobility, accelerance, ...)"),
    ("inline", "an FRF set written inline (as bundles store results)"),
    ("synth", "a synthesized part, tagged by \"model\": network (masses, springs, dampers), modal (modal superposition with residuals), beam, frame or isolator; computed on 'grid'"),
    ("grid", "{from, to, step} or {lines: [...]}, Hz: where a synthesized part, or the modal model (UFF dataset 55) of a file without FRFs, is computed; a file's or inline set's lines are resampled onto it (never extrapolated)"),
    ("interp", "interpolation for 'grid' on a file or inline set: re-im (default) or log-mag-phase"),
    ("uncertainty", "the standard uncertainty of the values: {\"relative\": 0.01, \"floor_db\": -60} (1 % of each value, plus a floor 60 dB below each FRF's accelerance peak), or {\"averages\": 40} (from the set's coherence, H1 estimate of 40 averages); propagated to first order through couple, decouple, cascade, sum, select, convert, respond, the total of paths and blocked forces (with their validation and target predictions), with a per-line reliability in the report and NAME.uncertainty.csv; refused on a component no step reads"),
    ("note", "free text"),
];

/// A frequency grid: `{"from": 10, "to": 1000, "step": 1}` or `{"lines": [...]}` (Hz).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged, deny_unknown_fields)]
pub enum GridSpec {
    Range { from: f64, to: f64, step: f64 },
    Lines { lines: Vec<f64> },
}

/// The most lines a recipe grid may have.
pub const MAX_GRID_LINES: usize = 1_000_000;

impl GridSpec {
    /// The lines in Hz (checked: finite, strictly increasing, at most
    /// [`MAX_GRID_LINES`]).
    pub fn lines(&self) -> Result<Vec<f64>> {
        let v = match self {
            GridSpec::Lines { lines } => {
                if lines.len() > MAX_GRID_LINES {
                    return Err(Error::grid(format!(
                        "grid of {} lines; at most {MAX_GRID_LINES} are allowed",
                        lines.len()
                    )));
                }
                lines.clone()
            }
            GridSpec::Range { from, to, step } => {
                grid::even_lines("grid", *from, *to, *step, MAX_GRID_LINES)?
            }
        };
        grid::check_grid(&v)?;
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

/// Refuse a key that this kind of component does not use.
fn unused(given: bool, key: &str, why: &str) -> Result<()> {
    if given {
        return Err(Error::recipe(format!("'{key}' {why}")).field(key.to_string()));
    }
    Ok(())
}

/// Load one component (every key used or refused).
pub(crate) fn load_component(
    name: &str,
    spec: &ComponentSpec,
    grid: Option<&GridSpec>,
    files: &dyn FileSource,
    limits: &Limits,
) -> Result<FrfSet> {
    let n_sources = [
        spec.file.is_some(),
        spec.inline.is_some(),
        spec.synth.is_some(),
    ]
    .iter()
    .filter(|&&b| b)
    .count();
    if n_sources != 1 {
        return Err(Error::recipe(if n_sources == 0 {
            "a component needs one of 'file', 'inline' or 'synth'"
        } else {
            "give one of 'file', 'inline' or 'synth', not several"
        }));
    }
    if spec.file.is_none() {
        unused(spec.import.is_some(), "import", "applies to a 'file' only")?;
        unused(spec.set.is_some(), "set", "applies to a 'file' only")?;
    }
    let file_load = match &spec.file {
        Some(file) => Some(load_file(name, file, spec, files, limits)?),
        None => None,
    };
    let mut set = if let Some(synth) = &spec.synth {
        unused(
            spec.interp.is_some(),
            "interp",
            "applies to a file or inline set resampled by 'grid'; a synthesized part is computed on its grid",
        )?;
        let g = spec.grid.as_ref().or(grid).ok_or_else(|| {
            Error::recipe(
                "a synthesized component needs a 'grid' (here or at the top of the recipe)",
            )
        })?;
        let freqs = g.lines().map_err(|e| e.field("grid"))?;
        let mut s = synth
            .synthesize_with(&freqs, limits)
            .map_err(|e| e.field("synth"))?;
        if let Some(c) = &spec.component {
            s.set_component(c);
        }
        s
    } else if let Some(FileLoad::Modal(model, notes, prov)) = file_load {
        // a file of modes (dataset 55): synthesized on the grid
        unused(
            spec.set.is_some(),
            "set",
            "chooses one of a file's FRF sets; this file holds a modal model (dataset 55), synthesized on 'grid'",
        )?;
        unused(
            spec.interp.is_some(),
            "interp",
            "applies to a file's FRF set resampled by 'grid'; a file's modal model (dataset 55) is synthesized on the grid",
        )?;
        let g = spec.grid.as_ref().or(grid).ok_or_else(|| {
            Error::recipe(
                "the file holds a modal model (dataset 55) and no FRFs; give a 'grid' (here or at the top of the recipe) to synthesize its FRFs on",
            )
            .field("grid")
        })?;
        let freqs = g.lines().map_err(|e| e.field("grid"))?;
        let mut s = Synth::Modal(*model)
            .synthesize_with(&freqs, limits)
            .map_err(|e| e.field("file"))?;
        s.warnings.extend(notes);
        s.provenance.push(prov);
        s
    } else {
        let mut s = if let Some(FileLoad::Set(s)) = file_load {
            *s
        } else if let Some(inline) = &spec.inline {
            let mut s = (**inline).clone();
            if let Some(c) = &spec.component {
                s.set_component(c);
            }
            s
        } else {
            return Err(Error::internal("component without a source"));
        };
        match &spec.grid {
            Some(g) => {
                let lines = g.lines().map_err(|e| e.field("grid"))?;
                limits
                    .check_set(
                        &format!("resampling '{name}' onto its grid"),
                        lines.len(),
                        s.n_out(),
                        s.n_in(),
                    )
                    .map_err(|e| e.field("grid"))?;
                let how = super::ops::transform_interp(spec.interp.as_deref())?;
                s = grid::resample(&s, &lines, how).map_err(|e| e.field("grid"))?;
            }
            None => unused(
                spec.interp.is_some(),
                "interp",
                "needs a 'grid' to resample onto",
            )?,
        }
        s
    };
    if let Some(sel) = &spec.select {
        set = transform_select(&set, sel.outputs.as_deref(), sel.inputs.as_deref())
            .map_err(|e| e.field("select"))?;
    }
    if let Some(kind) = &spec.kind {
        set = set.to_kind(kind).map_err(|e| e.field("kind"))?;
    }
    set.name = name.to_string();
    set.validate()?;
    Ok(set)
}

/// What a file component's file gives: one FRF set, or a modal model
/// (dataset 55 without any FRF set) with the file's notes and provenance.
enum FileLoad {
    Set(Box<FrfSet>),
    Modal(
        Box<crate::synth::modal::ModalModel>,
        Vec<String>,
        crate::frf::Provenance,
    ),
}

fn load_file(
    name: &str,
    file: &str,
    spec: &ComponentSpec,
    files: &dyn FileSource,
    limits: &Limits,
) -> Result<FileLoad> {
    let bytes = files.read(file)?;
    let mut opts = spec.import.clone().unwrap_or_default();
    match (&opts.component, &spec.component) {
        (Some(a), Some(b)) if a != b => {
            return Err(Error::recipe(format!(
                "'component' is '{b}' but 'import.component' is '{a}'; give one"
            ))
            .field("component"))
        }
        (None, _) => {
            opts.component = Some(spec.component.clone().unwrap_or_else(|| name.to_string()))
        }
        _ => {}
    }
    let loaded = io::load_with_limits(&bytes, file, &opts, limits)?;
    let modal = loaded.uff.as_ref().and_then(|x| x.modal.clone());
    if let (Some(m), true) = (&modal, loaded.sets.is_empty()) {
        let prov = crate::frf::Provenance {
            file: io::base_name(file),
            sha256: loaded.sha256.clone(),
            format: format!("{} dataset 55, modal superposition", loaded.format.name()),
            options: format!("component={}", opts.component.clone().unwrap_or_default()),
        };
        return Ok(FileLoad::Modal(Box::new(m.clone()), loaded.warnings, prov));
    }
    let n = loaded.sets.len();
    if n == 0 {
        return Err(Error::recipe(if loaded.time_histories.is_empty() {
            format!("file '{file}' holds no FRF set")
        } else {
            format!(
                "file '{file}' holds no FRF set, only {} time histor{} (UFF function type 1), which a component does not take; make spectra or FRFs from it with a 'spectrum' or 'estimate-frf' step naming it as \"file\"",
                loaded.time_histories.len(),
                if loaded.time_histories.len() == 1 { "y" } else { "ies" }
            )
        }));
    }
    let idx = match spec.set {
        Some(i) if i >= n => {
            return Err(Error::recipe(format!(
                "'set' is {i} but file '{file}' holds {n} set(s) (0 to {})",
                n - 1
            ))
            .field("set"))
        }
        Some(i) => i,
        None if n > 1 => {
            return Err(Error::recipe(format!(
                "file '{file}' holds {n} sets; say which with \"set\": 0 to {}",
                n - 1
            )))
        }
        None => 0,
    };
    let mut s = loaded
        .sets
        .into_iter()
        .nth(idx)
        .ok_or_else(|| Error::internal("set index out of range"))?;
    for w in loaded.warnings {
        if !s.warnings.contains(&w) {
            s.warnings.push(w);
        }
    }
    if let Some(m) = modal {
        s.warnings.push(format!(
            "file '{file}' also holds a modal model (dataset 55, {} mode(s)); the component uses its FRF set, not the modes",
            m.modes.len() + m.complex_modes.len()
        ));
    }
    Ok(FileLoad::Set(Box::new(s)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn documented_keys_are_exactly_the_accepted_ones() {
        let e = serde_json::from_value::<ComponentSpec>(serde_json::json!({"zz": 1}))
            .unwrap_err()
            .to_string();
        let tail = e.split("expected").nth(1).unwrap_or("").to_string();
        let mut got: Vec<&str> = tail
            .split('`')
            .enumerate()
            .filter(|(i, _)| i % 2 == 1)
            .map(|(_, s)| s)
            .collect();
        let mut doc: Vec<&str> = COMPONENT_FIELDS.iter().map(|f| f.0).collect();
        got.sort();
        doc.sort();
        assert_eq!(got, doc);
    }

    #[test]
    fn a_tiny_step_is_refused_not_wrapped() {
        // 1e-300 Hz steps: the line count overflows usize; it must be refused
        let e = GridSpec::Range {
            from: 10.0,
            to: 1000.0,
            step: 1e-300,
        }
        .lines()
        .unwrap_err();
        assert!(e.message.contains("at most 1000000"), "{e}");
        assert!(e.message.contains("asks for 9.900e302 lines"), "{e}");
    }
}

/// The first key of `given` that parsing did not use: the path of a key
/// absent from the re-serialized `parsed` (a `null` may be absent). The
/// synthesized models flatten their parameters, which serde cannot check for
/// unknown keys; this check closes that gap.
pub(crate) fn unused_key(
    given: &serde_json::Value,
    parsed: &serde_json::Value,
    path: &str,
) -> Option<String> {
    use serde_json::Value;
    match (given, parsed) {
        (Value::Object(g), Value::Object(p)) => {
            for (k, v) in g {
                let here = if path.is_empty() {
                    k.clone()
                } else {
                    format!("{path}.{k}")
                };
                match p.get(k) {
                    None if v.is_null() => {}
                    None => return Some(here),
                    Some(pv) => {
                        if let Some(u) = unused_key(v, pv, &here) {
                            return Some(u);
                        }
                    }
                }
            }
            None
        }
        (Value::Array(g), Value::Array(p)) if g.len() == p.len() => g
            .iter()
            .zip(p)
            .enumerate()
            .find_map(|(i, (a, b))| unused_key(a, b, &format!("{path}[{i}]"))),
        _ => None,
    }
}

#[cfg(test)]
mod synth_keys {
    use super::*;

    #[test]
    fn unknown_keys_of_synthesized_parts_are_refused() {
        for (t, key) in [
            (
                r#"{"model": "network", "component": "rig", "masses": [{"node": "1", "mass": 2.0}], "links": [{"a": "1", "k": 8.0e4, "c": 15.0}], "zz": 1}"#,
                "zz",
            ),
            (
                r#"{"model": "modal", "name": "m", "dofs": ["m:1+Z"], "modes": [{"freq": 30.0, "zeta": 0.02, "shape": [1.0]}], "damping": 1}"#,
                "damping",
            ),
            (
                r#"{"model": "beam", "component": "b", "young": 2.1e11, "second_moment": 1e-8, "density": 7850.0, "area": 1e-4, "length": 1.0, "elements": 6, "loss_factor": 0.01, "left": "clamped", "at": [6], "lenght": 2}"#,
                "lenght",
            ),
            (
                r#"{"model": "isolator", "name": "i", "dof": "i:1+Z", "table": [{"freq": 0.0, "k": 1e5, "eta": 0.1}], "zz": 1}"#,
                "zz",
            ),
            (
                r#"{"model": "network", "component": "rig", "masses": [{"node": "1", "mass": 2.0, "mas": 1}], "links": [{"a": "1", "k": 8.0e4, "c": 15.0}]}"#,
                "masses[0].mas",
            ),
        ] {
            let v =
                serde_json::json!({"synth": serde_json::from_str::<serde_json::Value>(t).unwrap()});
            let spec: ComponentSpec = serde_json::from_value(v.clone()).unwrap();
            let back = serde_json::to_value(&spec).unwrap();
            assert_eq!(
                unused_key(&v, &back, "").as_deref(),
                Some(format!("synth.{key}").as_str()),
                "{t}"
            );
            // and without the stray key nothing is flagged
            let mut clean = v.clone();
            let obj = clean["synth"].as_object_mut().unwrap();
            obj.remove(key);
            if key.starts_with("masses") {
                obj["masses"][0].as_object_mut().unwrap().remove("mas");
            }
            let spec: ComponentSpec = serde_json::from_value(clean.clone()).unwrap();
            assert_eq!(
                unused_key(&clean, &serde_json::to_value(&spec).unwrap(), ""),
                None,
                "{t}"
            );
        }
    }
}
