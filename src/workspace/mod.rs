//! The workspace: what a user has open (loaded files with their bytes and
//! import options, an opened bundle's inputs, the last run's results and
//! report), running a recipe on it, and bundles: written with each input's
//! raw data included or withheld, opened, and run again.
//!
//! The page's worker holds one `Workspace` (the wasm layer only translates);
//! the CLI uses it for `mortise run BUNDLE`. Sets are addressed by string ids:
//! `file:<name>#<k>` (a loaded file's k-th set), `bundle:<name>#<k>` (a
//! bundle input's), `run<N>:<k>` (run N's, the last run's among them; see
//! [`crate::history`]), `preview`.
//!
//! Withholding: when any input's raw data is withheld (or "results only"),
//! the bundle keeps only the recipe's requested outputs (with their extra
//! results), and of those only the sets with no DOF of a withheld part; the
//! notice says what a recipient could still infer.

use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::history::{self, RunRecord};
use crate::io::{self, bundle, ImportOptions};
use crate::limits::Limits;
use crate::recipe::{self, FileSource};
use crate::summary::{self, FileSummary, SetSummary};
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, BTreeSet};

pub mod time;
pub use time::{
    time_analysis_options, window_corrections, ImpactRequest, OrdersRequest, RecordInfo,
    TimeRequest, TimeResult,
};

/// A loaded file.
#[derive(Debug, Clone)]
struct WsFile {
    bytes: Vec<u8>,
    /// The import options as given (JSON), kept for bundles.
    options: serde_json::Value,
    format: String,
}

/// An input of an opened bundle.
#[derive(Debug, Clone)]
struct BundleIn {
    sha256: String,
    options: serde_json::Value,
    format: String,
    /// The file's bytes when the bundle carries them.
    bytes: Option<Vec<u8>>,
    /// Sets of a version-1 bundle (no bytes).
    sets: Option<Vec<FrfSet>>,
}

/// The workspace.
#[derive(Debug, Clone, Default)]
pub struct Workspace {
    files: BTreeMap<String, WsFile>,
    bundle_name: Option<String>,
    bundle_inputs: BTreeMap<String, BundleIn>,
    bundle_recipe: Option<serde_json::Value>,
    sets: BTreeMap<String, FrfSet>,
    /// The uncertainty and reliability of result sets that have one, by
    /// set id (runs with uncertain components); dropped with their sets.
    uncertainties: BTreeMap<String, recipe::Assessed>,
    results: Vec<String>,
    report: Option<serde_json::Value>,
    /// Every run, oldest first (at most [`history::KEEP_RUNS`]).
    history: Vec<RunRecord>,
    /// The budget of every run (kept when the workspace is cleared).
    limits: Limits,
    /// Time data held as recordings, by file name (`time.rs`).
    recordings: BTreeMap<String, time::WsRecording>,
    /// The inputs of a sweep split over workers, loaded from the bytes
    /// another workspace gathered ([`Workspace::load_sweep_inputs`]).
    sweep_inputs: Option<recipe::SweepInputs>,
    /// A run begun without its sweep while the workers compute it
    /// ([`Workspace::run_recipe_begin`]): the SHA-256 of its recipe text
    /// and its outcome.
    pending: Option<(String, Result<recipe::RunResult>)>,
}

/// What a run left in the workspace.
#[derive(Debug, Clone, Serialize)]
pub struct RunSummary {
    pub results: Vec<SetSummary>,
    pub report: Option<serde_json::Value>,
}

/// How to write a bundle.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BundleOptions {
    /// ISO 8601 creation time (the caller's clock; the core has none).
    #[serde(default)]
    pub created: String,
    /// File name → include its raw data (default: include).
    #[serde(default)]
    pub include_raw: BTreeMap<String, bool>,
    /// No raw data at all: the recipe, the provenance and the requested outputs.
    #[serde(default)]
    pub results_only: bool,
}

/// A written bundle and what it shares.
#[derive(Debug, Clone, Serialize)]
pub struct MadeBundle {
    #[serde(skip)]
    pub bytes: Vec<u8>,
    /// Inputs whose raw data stayed out.
    pub withheld: Vec<String>,
    /// Results left out (not requested, or over a withheld part's DOFs).
    pub dropped_results: Vec<String>,
    /// Results the bundle holds.
    pub kept_results: Vec<String>,
    /// One sentence: what a recipient could still infer from what is shared.
    pub notice: String,
    /// The SHA-256 of the bundle's whole content (`io::bundle` docs), for the
    /// sender to tell the recipient by another channel.
    pub content_sha256: String,
}

/// An opened bundle, for the page.
#[derive(Debug, Clone, Serialize)]
pub struct OpenedBundle {
    pub recipe: Option<serde_json::Value>,
    pub created: String,
    pub mortise_version: String,
    pub inputs: Vec<OpenedInput>,
    pub results: Vec<SetSummary>,
    pub report: Option<serde_json::Value>,
    /// Inputs to drop in again (withheld) before the recipe can run.
    pub missing: Vec<String>,
    /// The bundle's version (`io::bundle` docs).
    pub version: u32,
    /// The whole-content SHA-256, recorded and checked (version 3); `None`
    /// for earlier versions, which record none.
    pub content_sha256: Option<String>,
    /// What could not be checked (earlier versions), in words.
    pub notes: Vec<String>,
}

/// One input of an opened bundle.
#[derive(Debug, Clone, Serialize)]
pub struct OpenedInput {
    pub name: String,
    pub sha256: String,
    pub format: String,
    pub options: serde_json::Value,
    pub withheld: bool,
    /// Loaded again from a file the user gave (SHA-256 checked).
    pub supplied: bool,
    pub sets: Vec<SetSummary>,
    /// Time data the input holds, read again as a recording (none when a
    /// loaded file of the same name holds its own).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub recording: Option<crate::summary::RecordingSummary>,
}

fn import_options(value: &serde_json::Value) -> Result<ImportOptions> {
    if value.is_null() {
        return Ok(ImportOptions::default());
    }
    serde_json::from_value(value.clone())
        .map_err(|e| Error::parse(format!("import options: {e}")).field("options"))
}

fn prefix_of(kind: &str, name: &str) -> String {
    format!("{kind}:{name}#")
}

impl Workspace {
    pub fn new() -> Workspace {
        Workspace::default()
    }

    /// A set by id.
    pub fn set(&self, id: &str) -> Option<&FrfSet> {
        self.sets.get(id)
    }

    /// Every set by id (for plots).
    pub fn sets(&self) -> &BTreeMap<String, FrfSet> {
        &self.sets
    }

    /// Put a set under an id (the page's CSV preview).
    pub fn put_set(&mut self, id: &str, set: FrfSet) {
        self.sets.insert(id.to_string(), set);
    }

    fn drop_prefix(&mut self, prefix: &str) {
        self.sets.retain(|k, _| !k.starts_with(prefix));
        self.uncertainties.retain(|k, _| !k.starts_with(prefix));
    }

    /// The uncertainty and reliability of the sets that have one, by set
    /// id (drawn as bands by the plots).
    pub fn uncertainties(&self) -> &BTreeMap<String, recipe::Assessed> {
        &self.uncertainties
    }

    /// Load one file (replacing one of the same name). A file named by an
    /// opened bundle's input must be that very file (same SHA-256).
    pub fn load_file(
        &mut self,
        name: &str,
        bytes: &[u8],
        options: serde_json::Value,
    ) -> Result<FileSummary> {
        self.load_file_with_progress(name, bytes.to_vec(), options, &mut |_| {})
    }

    /// [`Workspace::load_file`] taking the bytes it keeps (no copy of the
    /// file: the page's large files), telling `progress` the bytes of a UFF
    /// file parsed so far (see [`io::load_with_progress`]).
    pub fn load_file_with_progress(
        &mut self,
        name: &str,
        bytes: Vec<u8>,
        options: serde_json::Value,
        progress: &mut dyn FnMut(usize),
    ) -> Result<FileSummary> {
        // a supplier's time CSV is told by its time map, not by its content
        let recording = io::wav::looks_like_wav(&bytes)
            || io::time_csv::looks_like_time_csv(&bytes)
            || options.get("time_map").is_some_and(|m| !m.is_null());
        // a recording takes its own options (`time.rs`), checked there
        let opts = if recording {
            ImportOptions::default()
        } else {
            import_options(&options).map_err(|e| e.in_file(name))?
        };
        // the hash a bundle's input is checked by is the one the load records
        let mut known = None;
        if let Some(b) = self.bundle_inputs.get(name) {
            let sha = io::sha256_hex(&bytes);
            if sha != b.sha256 {
                return Err(Error::parse(format!(
                    "SHA-256 {sha} differs from {} recorded in bundle '{}' for this input: it is not the file the bundle's results came from",
                    b.sha256,
                    self.bundle_name.as_deref().unwrap_or("?")
                ))
                .in_file(name));
            }
            known = Some(sha);
        }
        if crate::vpt::geometry::looks_like_geometry(&bytes) {
            return self.load_geometry(name, bytes, options);
        }
        if recording {
            return self.load_recording(name, bytes, options);
        }
        let loaded = io::load_known(
            &bytes,
            known.as_deref(),
            name,
            &opts,
            &self.limits,
            progress,
        )
        .map_err(|e| e.in_file(name))?;
        let mut sum = summary::file_summary(name, &bytes, &loaded);
        self.recordings.remove(name);
        if !loaded.time_histories.is_empty() {
            // time histories become a recording; when they cannot (and the
            // file holds sets besides), the reason is a warning on the card
            match self.uff_recording(
                name,
                &loaded.time_histories,
                loaded.format.name(),
                &loaded.sha256,
            ) {
                Ok(r) => sum.recording = Some(r),
                Err(e) if sum.sets.is_empty() => return Err(e),
                Err(e) => sum.warnings.push(format!(
                    "the time histories are not held as a recording: {e}"
                )),
            }
        }
        let prefix = prefix_of("file", name);
        self.drop_prefix(&prefix);
        for (k, (set, s)) in loaded.sets.into_iter().zip(sum.sets.iter_mut()).enumerate() {
            let id = format!("{prefix}{k}");
            s.id = id.clone();
            self.sets.insert(id, set);
        }
        self.files.insert(
            name.to_string(),
            WsFile {
                bytes,
                options,
                format: loaded.format.name().to_string(),
            },
        );
        Ok(sum)
    }

    /// A geometry file of our layout (`# mortise-geometry 1`): checked by
    /// reading it, kept for the recipes that name it; it holds no sets and
    /// takes no import options (any given are refused).
    fn load_geometry(
        &mut self,
        name: &str,
        bytes: Vec<u8>,
        options: serde_json::Value,
    ) -> Result<FileSummary> {
        if options.as_object().is_some_and(|o| !o.is_empty()) {
            return Err(Error::usage(
                "a geometry file takes no import options (it has its own unit line)",
            )
            .field("options")
            .in_file(name));
        }
        self.limits
            .check_bytes("the geometry file", Some(bytes.len() as u64))
            .map_err(|e| e.in_file(name))?;
        let geom = crate::vpt::Geometry::from_csv(&bytes, name)?;
        let sum = summary::geometry_file_summary(name, &bytes, &geom);
        self.recordings.remove(name);
        self.drop_prefix(&prefix_of("file", name));
        self.files.insert(
            name.to_string(),
            WsFile {
                bytes,
                options,
                format: sum.format.clone(),
            },
        );
        Ok(sum)
    }

    /// Propose virtual-point groups for `from` with the geometry file
    /// `geometry`, on the workspace's files
    /// ([`recipe::virtual_point_groups`]).
    pub fn virtual_point_groups(
        &self,
        r: &recipe::Recipe,
        from: &str,
        geometry: &str,
        origins: &[crate::vpt::groups::Origin],
        radius: f64,
    ) -> Result<crate::vpt::groups::Proposal> {
        recipe::virtual_point_groups(
            r,
            from,
            geometry,
            origins,
            radius,
            &Source(self),
            &self.limits,
        )
    }

    /// The consistency drawings of the last run's to-virtual-points step
    /// `step`, one per point ([`crate::plot::vpt_consistency_svgs`]), on the
    /// grid of the run's set named `step` (or else the first result with as
    /// many lines as the report's consistencies).
    pub fn virtual_point_consistency(
        &self,
        step: &str,
        width: u32,
        height: u32,
    ) -> Result<Vec<crate::plot::Drawing>> {
        let (sets, report) = self.results();
        let report = report
            .ok_or_else(|| Error::missing("no run yet: run the recipe first").field("report"))?;
        let points = crate::plot::step_virtual_points(report, step)?;
        let lines = points.first().map_or(0, |p| p.sensor_consistency.len());
        let grid = sets
            .iter()
            .find(|s| s.name == step)
            .or_else(|| sets.iter().find(|s| s.n_lines() == lines))
            .ok_or_else(|| {
                Error::missing(format!(
                    "the run's results hold no set on the grid of step '{}': add the step to the outputs",
                    crate::error::quote(step)
                ))
                .field("outputs")
            })?;
        crate::plot::vpt_consistency_svgs(report, step, grid, width, height)
    }

    /// Remove a file and its sets.
    pub fn forget_file(&mut self, name: &str) {
        self.files.remove(name);
        self.recordings.remove(name);
        self.drop_prefix(&prefix_of("file", name));
    }

    /// Empty the workspace (its limits stay as set).
    pub fn clear(&mut self) {
        let limits = self.limits;
        *self = Workspace::default();
        self.limits = limits;
    }

    /// Set the budget of every later run (checked: each budget above zero).
    pub fn set_limits(&mut self, limits: Limits) -> Result<()> {
        limits.validate("limits")?;
        self.limits = limits;
        Ok(())
    }

    /// The budget of runs.
    pub fn limits(&self) -> &Limits {
        &self.limits
    }

    /// Run a recipe on the loaded files and the opened bundle's inputs; the
    /// results replace the last ones. On failure the last results stay as
    /// they were (the page marks them stale). Either way the run joins the
    /// history, timed by the system clock (the page's in the browser).
    pub fn run_recipe(&mut self, recipe_text: &str) -> Result<RunSummary> {
        self.run_recipe_clocked(recipe_text, &history::now_ms)
    }

    /// [`Workspace::run_recipe`] with the caller's clock (milliseconds since
    /// 1970-01-01 UTC).
    pub fn run_recipe_clocked(
        &mut self,
        recipe_text: &str,
        clock: &dyn Fn() -> f64,
    ) -> Result<RunSummary> {
        let started = clock();
        // a run begun for a split that never came is let go
        self.pending = None;
        self.run_recorded(recipe_text, clock, started, None)
    }

    /// Gather what the sweep of `recipe_text` reads (its components as
    /// loaded, the files its steps read) as the bytes a sweep worker's
    /// workspace loads with [`Workspace::load_sweep_inputs`] (this one keeps
    /// no copy: it runs the rest of the recipe meanwhile).
    pub fn sweep_inputs(&self, recipe_text: &str) -> Result<Vec<u8>> {
        Ok(recipe::SweepInputs::gather(recipe_text, &Source(self), &self.limits)?.to_bytes())
    }

    /// Load a sweep's inputs written by [`Workspace::sweep_inputs`] (their
    /// hash and every set checked); returns the SHA-256 of the recipe text
    /// they serve.
    pub fn load_sweep_inputs(&mut self, bytes: &[u8]) -> Result<String> {
        let inputs = recipe::SweepInputs::from_bytes(bytes)?;
        let sha = inputs.recipe_sha256.clone();
        self.sweep_inputs = Some(inputs);
        Ok(sha)
    }

    /// Slice `k` of `n` of the sweep of `recipe_text`, on the sweep inputs
    /// this workspace holds, within its limits.
    pub fn sweep_slice(
        &self,
        recipe_text: &str,
        k: usize,
        n: usize,
    ) -> Result<recipe::SweepReport> {
        self.sweep_inputs
            .as_ref()
            .ok_or_else(|| {
                Error::usage("no sweep inputs are loaded in this workspace; load them first")
            })?
            .slice(recipe_text, k, n, &self.limits)
    }

    /// Run `recipe_text` without its sweep, on the files as they are now, and
    /// keep the outcome for [`Workspace::run_recipe_split`] with the same
    /// text (the workers compute the sweep meanwhile); a failure is kept
    /// too and reported there.
    pub fn run_recipe_begin(&mut self, recipe_text: &str) {
        let run = recipe::parse(recipe_text)
            .and_then(|r| recipe::run_without_sweep(&r, &Source(self), &self.limits));
        self.pending = Some((io::sha256_hex(recipe_text.as_bytes()), run));
    }

    /// [`Workspace::run_recipe`] with its sweep computed in `slices` (slice
    /// 1 to N, each the outcome of [`Workspace::sweep_slice`] in some
    /// workspace): folded by the one merge, the first failed slice failing
    /// the run. The report and headline are those of the run computed in
    /// one piece; the history record notes the split. The rest of the
    /// recipe is the run begun by [`Workspace::run_recipe_begin`] with the
    /// same text, else computed now. `started_ms` is when the caller began
    /// (its slices included), on the same clock.
    pub fn run_recipe_split(
        &mut self,
        recipe_text: &str,
        slices: Vec<Result<recipe::SweepReport>>,
        started_ms: f64,
    ) -> Result<RunSummary> {
        let now = history::now_ms();
        let started = if started_ms.is_finite() && started_ms <= now {
            started_ms
        } else {
            now
        };
        self.run_recorded(recipe_text, &history::now_ms, started, Some(slices))
    }

    fn run_recorded(
        &mut self,
        recipe_text: &str,
        clock: &dyn Fn() -> f64,
        started: f64,
        slices: Option<Vec<Result<recipe::SweepReport>>>,
    ) -> Result<RunSummary> {
        let split = slices.as_ref().map(|v| {
            let ok: Vec<&recipe::SweepReport> = v.iter().filter_map(|s| s.as_ref().ok()).collect();
            match ok.first() {
                Some(f) if ok.len() == v.len() => {
                    let ranges: Vec<(usize, usize)> = ok.iter().map(|r| (r.first, r.end)).collect();
                    recipe::split_note(&ranges, &f.name, f.total)
                }
                _ => format!("sweep on {} workers", v.len()),
            }
        });
        let given = slices.map(recipe::fold_slices);
        let sha = io::sha256_hex(recipe_text.as_bytes());
        let begun = match self.pending.take() {
            Some((s, run)) if s == sha && given.is_some() => Some(run),
            _ => None,
        };
        let outcome = recipe::parse(recipe_text).and_then(|r| {
            let run = match (begun, given) {
                (Some(run), Some(sweep)) => recipe::finish_with_sweep(&r, run?, sweep)?,
                (_, given) => recipe::run_with_sweep(&r, &Source(self), &self.limits, given)?,
            };
            let report = serde_json::to_value(&run.report)
                .map_err(|e| Error::internal(format!("cannot encode the report: {e}")))?;
            Ok((r.title.clone(), run, report))
        });
        let duration_ms = clock() - started;
        let number = self.history.last().map_or(1, |h| h.number + 1);
        let mut record = RunRecord {
            number,
            recipe_text: recipe_text.to_string(),
            title: String::new(),
            started_ms: started,
            duration_ms,
            headline: Vec::new(),
            results: Vec::new(),
            curves_kept: false,
            error: None,
            split,
        };
        match outcome {
            Err(e) => {
                record.error = Some(e.to_string());
                self.remember(record);
                Err(e)
            }
            Ok((title, run, report)) => {
                record.title = title;
                record.headline = run.report.headline.clone();
                let summary = self.store_results(number, run.outputs, Some(report));
                self.keep_uncertainties(number, run.uncertainties);
                record.results = summary.results.clone();
                record.curves_kept = true;
                self.remember(record);
                Ok(summary)
            }
        }
    }

    /// Add a run to the history; forget the oldest beyond
    /// [`history::KEEP_RUNS`] and drop old curves beyond a quarter of the
    /// memory budget. The last results always stay.
    fn remember(&mut self, record: RunRecord) {
        self.history.push(record);
        while self.history.len() > history::KEEP_RUNS {
            let old = self.history.remove(0);
            self.drop_run_sets(old.number);
        }
        let sizes: Vec<(u32, u64, bool)> = self
            .history
            .iter()
            .map(|h| {
                let bytes = self
                    .sets
                    .range(history::prefix(h.number)..)
                    .take_while(|(k, _)| k.starts_with(&history::prefix(h.number)))
                    .map(|(_, s)| (s.data.len() * 16 + s.freqs.len() * 8) as u64)
                    .sum();
                (h.number, bytes, h.curves_kept)
            })
            .collect();
        let current = self.results.first().cloned().unwrap_or_default();
        for n in history::to_drop(&sizes, self.limits.memory_bytes / 4) {
            if current.starts_with(&history::prefix(n)) {
                continue;
            }
            self.drop_run_sets(n);
        }
    }

    fn drop_run_sets(&mut self, number: u32) {
        let p = history::prefix(number);
        if self.results.first().is_some_and(|id| id.starts_with(&p)) {
            return; // the last results stay
        }
        self.drop_prefix(&p);
        if let Some(h) = self.history.iter_mut().find(|h| h.number == number) {
            h.curves_kept = false;
        }
    }

    /// The runs of this workspace, oldest first.
    pub fn history(&self) -> &[RunRecord] {
        &self.history
    }

    /// Put back a history saved by the page: the records keep their text,
    /// times and headlines; their curves are gone (`curves_kept: false`)
    /// except those of the last results, put back by
    /// [`Workspace::put_results`] afterwards. Refused: numbers not
    /// increasing, or more than [`history::KEEP_RUNS`] records.
    pub fn put_history(&mut self, mut records: Vec<RunRecord>) -> Result<()> {
        if records.len() > history::KEEP_RUNS {
            return Err(Error::usage(format!(
                "{} runs in the saved history; at most {} are kept",
                records.len(),
                history::KEEP_RUNS
            ))
            .field("history"));
        }
        if records.windows(2).any(|w| w[0].number >= w[1].number)
            || records.first().is_some_and(|r| r.number == 0)
        {
            return Err(
                Error::usage("run numbers of the saved history must increase from 1")
                    .field("history"),
            );
        }
        for r in &mut records {
            r.curves_kept = false;
        }
        // no curve of an earlier history stays behind under a reused number
        self.sets.retain(|k, _| !history::is_run_id(k));
        self.results.clear();
        self.report = None;
        self.history = records;
        Ok(())
    }

    /// Run a parsed recipe on the workspace's files without keeping the
    /// results (the CLI's `mortise run BUNDLE`).
    pub fn run(&self, r: &recipe::Recipe) -> Result<recipe::RunResult> {
        recipe::run_with(r, &Source(self), &self.limits)
    }

    /// A to-virtual-points step of a recipe resolved on the workspace's
    /// files, for drawing its geometry ([`recipe::virtual_point_plan`]).
    pub fn virtual_point_plan(
        &self,
        r: &recipe::Recipe,
        step: &str,
    ) -> Result<(crate::vpt::Geometry, crate::vpt::Plan)> {
        recipe::virtual_point_plan(r, step, &Source(self), &self.limits)
    }

    /// The import options an opened bundle recorded for an input.
    pub fn bundle_input_options(&self, name: &str) -> Option<&serde_json::Value> {
        self.bundle_inputs.get(name).map(|b| &b.options)
    }

    /// Keep a run's uncertainties beside its stored results (by output
    /// name, as [`recipe::RunResult::uncertainties`] gives them).
    fn keep_uncertainties(&mut self, number: u32, mut by_name: BTreeMap<String, recipe::Assessed>) {
        let p = history::prefix(number);
        for id in self.results.clone() {
            if !id.starts_with(&p) {
                continue;
            }
            let Some(set) = self.sets.get(&id) else {
                continue;
            };
            if let Some(a) = by_name.remove(&set.name) {
                if a.uncertainty.std.len() == set.data.len() {
                    self.uncertainties.insert(id, a);
                }
            }
        }
    }

    fn store_results(
        &mut self,
        number: u32,
        outputs: Vec<FrfSet>,
        report: Option<serde_json::Value>,
    ) -> RunSummary {
        let mut sums = Vec::new();
        let mut ids = Vec::new();
        let p = history::prefix(number);
        self.drop_prefix(&p);
        for (k, s) in outputs.into_iter().enumerate() {
            let id = format!("{p}{k}");
            let mut m = summary::set_summary(&s);
            m.id = id.clone();
            sums.push(m);
            self.sets.insert(id.clone(), s);
            ids.push(id);
        }
        self.results = ids;
        self.report = report.clone();
        RunSummary {
            results: sums,
            report,
        }
    }

    /// The last results and report, for saving (`{results, report}`).
    pub fn results(&self) -> (Vec<&FrfSet>, Option<&serde_json::Value>) {
        (
            self.results
                .iter()
                .filter_map(|id| self.sets.get(id))
                .collect(),
            self.report.as_ref(),
        )
    }

    /// Put saved results back: they become the curves of the newest
    /// successful run of the history (after [`Workspace::put_history`]), or
    /// of a run numbered after the history when it has none.
    pub fn put_results(
        &mut self,
        results: Vec<FrfSet>,
        report: Option<serde_json::Value>,
    ) -> Result<RunSummary> {
        for s in &results {
            s.validate()?;
        }
        let newest_ok = self
            .history
            .iter()
            .rev()
            .find(|h| h.error.is_none())
            .map(|h| h.number);
        let number = match newest_ok {
            Some(n) => n,
            None => self.history.last().map_or(1, |h| h.number + 1),
        };
        let summary = self.store_results(number, results, report);
        if let Some(h) = self.history.iter_mut().find(|h| h.number == number) {
            h.results = summary.results.clone();
            h.curves_kept = true;
        }
        Ok(summary)
    }

    /// The sets with the given ids.
    pub fn sets_by_id(&self, ids: &[String]) -> Result<Vec<FrfSet>> {
        ids.iter()
            .map(|id| {
                self.sets
                    .get(id)
                    .cloned()
                    .ok_or_else(|| Error::missing(format!("no data set '{id}' is loaded")))
            })
            .collect()
    }

    /// Write a bundle of the recipe, the inputs (raw data included or
    /// withheld per file) and the last results.
    pub fn make_bundle(&self, recipe_text: &str, opts: &BundleOptions) -> Result<MadeBundle> {
        let r = recipe::parse(recipe_text).map_err(|e| e.field("recipe"))?;
        let recipe_value = serde_json::to_value(&r)
            .map_err(|e| Error::internal(format!("cannot encode the recipe: {e}")))?;
        for name in opts.include_raw.keys() {
            if !self.files.contains_key(name) && !self.bundle_inputs.contains_key(name) {
                return Err(Error::usage(format!(
                    "'include_raw' names '{name}', which is not loaded"
                ))
                .field("include_raw"));
            }
        }
        let mut inputs = Vec::new();
        let mut withheld = Vec::new();
        let mut names: BTreeSet<&String> = self.files.keys().collect();
        names.extend(self.bundle_inputs.keys());
        for name in names {
            let include = !opts.results_only && opts.include_raw.get(name).copied().unwrap_or(true);
            let (bytes, options, format, sha, sets) = match self.files.get(name) {
                Some(f) => (
                    Some(f.bytes.clone()),
                    f.options.clone(),
                    f.format.clone(),
                    io::sha256_hex(&f.bytes),
                    None,
                ),
                None => {
                    let b = &self.bundle_inputs[name];
                    (
                        b.bytes.clone(),
                        b.options.clone(),
                        b.format.clone(),
                        b.sha256.clone(),
                        b.sets.clone(),
                    )
                }
            };
            let has = bytes.is_some() || sets.is_some();
            if !include || !has {
                withheld.push(name.clone());
            }
            inputs.push(bundle::BundleInput {
                name: name.clone(),
                sha256: sha,
                format,
                options,
                sets: if include && bytes.is_none() {
                    sets
                } else {
                    None
                },
                data: if include {
                    bytes.map(|b| bundle::BundleInput::encode(&b))
                } else {
                    None
                },
            });
        }
        // the results: everything of the last run, unless something is withheld
        let mut kept = Vec::new();
        let mut kept_uncertainty = Vec::new();
        let mut unc_left_out = Vec::new();
        let mut dropped = Vec::new();
        let hidden = self.withheld_namespaces(&r, &withheld);
        let withheld_comps = withheld_components(&r, &withheld);
        for id in &self.results {
            let Some(s) = self.sets.get(id) else { continue };
            let keep = if withheld.is_empty() {
                true
            } else {
                let requested = r.outputs.iter().any(|o| {
                    let base = s.name.split(" [").next().unwrap_or(&s.name);
                    base == o || base.starts_with(&format!("{o}/"))
                });
                let touches = s
                    .outputs
                    .iter()
                    .chain(&s.inputs)
                    .any(|d| hidden.contains(d.component.as_str()));
                requested && !touches
            };
            if keep {
                // its per-value uncertainty, unless a withheld input is behind it
                let base = s.name.split([' ', '/']).next().unwrap_or(&s.name);
                // a variant's result may read a swapped-in component: with
                // anything withheld, none of those travels
                let secret = (s.name.contains(" [") && !withheld_comps.is_empty())
                    || recipe::components_behind(&r, base)
                        .iter()
                        .any(|c| withheld_comps.contains(c));
                let u = self.uncertainties.get(id).and_then(|a| {
                    if secret {
                        unc_left_out.push(s.name.clone());
                        return None;
                    }
                    Some(bundle::BundleUncertainty {
                        method: a.uncertainty.method.clone(),
                        std: a.uncertainty.std.clone(),
                        flags: a.reliability.flags.clone(),
                    })
                });
                kept.push(s.clone());
                kept_uncertainty.push(u);
            } else {
                dropped.push(s.name.clone());
            }
        }
        let mut notice = notice(&withheld, &hidden, &dropped, &kept, opts.results_only);
        if !unc_left_out.is_empty() {
            notice.push_str(&format!(
                " The per-value uncertainty of {} is left out: it is computed from withheld inputs, and with their stated relative uncertainty its spread would say how large their FRFs are, line by line.",
                unc_left_out
                    .iter()
                    .map(|n| format!("'{n}'"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ));
        }
        let b = bundle::Bundle {
            format: bundle::BUNDLE_FORMAT.to_string(),
            version: bundle::BUNDLE_VERSION,
            mortise_version: crate::VERSION.to_string(),
            created: opts.created.clone(),
            recipe: Some(recipe_value),
            inputs,
            results: kept.clone(),
            uncertainties: kept_uncertainty,
            report: self.shared_report(&r, &withheld),
        };
        let bytes = bundle::write(&b)?;
        let content_sha256 = bundle::content_sha256(&bytes)
            .ok_or_else(|| Error::internal("the bundle written has no content SHA-256"))?;
        Ok(MadeBundle {
            bytes,
            content_sha256,
            withheld,
            dropped_results: dropped,
            kept_results: kept.iter().map(|s| s.name.clone()).collect(),
            notice,
        })
    }

    /// The last report as a bundle may carry it: with inputs withheld, the
    /// withheld components' summaries and audits (which describe their data)
    /// are left out.
    fn shared_report(&self, r: &recipe::Recipe, withheld: &[String]) -> Option<serde_json::Value> {
        let mut report = self.report.clone()?;
        for (name, c) in &r.components {
            let Some(file) = &c.file else { continue };
            if withheld
                .iter()
                .any(|w| w == file || *w == io::base_name(file))
            {
                for key in ["components", "audit"] {
                    if let Some(m) = report.get_mut(key).and_then(|v| v.as_object_mut()) {
                        m.remove(name);
                    }
                }
            }
        }
        Some(report)
    }

    /// The DOF namespaces of the components read from withheld files.
    fn withheld_namespaces(&self, r: &recipe::Recipe, withheld: &[String]) -> BTreeSet<String> {
        let mut out = BTreeSet::new();
        for (name, c) in &r.components {
            let Some(file) = &c.file else { continue };
            if withheld
                .iter()
                .any(|w| w == file || *w == io::base_name(file))
            {
                let ns = c
                    .import
                    .as_ref()
                    .and_then(|i| i.component.clone())
                    .or_else(|| c.component.clone())
                    .unwrap_or_else(|| name.clone());
                out.insert(ns);
            }
        }
        // the sets the page loaded from those files
        for w in withheld {
            let prefix = prefix_of("file", w);
            for (id, s) in &self.sets {
                if id.starts_with(&prefix) {
                    for d in s.outputs.iter().chain(&s.inputs) {
                        out.insert(d.component.clone());
                    }
                }
            }
        }
        out
    }

    /// Open a bundle: every hash it records is checked first (`io::bundle`
    /// docs; a bundle failing one is refused and the workspace is left as it
    /// was); its inputs become available to recipes (raw data carried, or
    /// files the user drops in again, checked by SHA-256), its results become
    /// the workspace's results.
    pub fn open_bundle(&mut self, name: &str, bytes: &[u8]) -> Result<OpenedBundle> {
        let checked = bundle::read_checked(bytes, name)?;
        let b = checked.bundle;
        // everything is read before the workspace changes, so a bundle that
        // fails here leaves the last one (and the loaded files) as they were
        let mut new_sets = Vec::new();
        let mut new_inputs = BTreeMap::new();
        let mut inputs = Vec::new();
        let mut missing = Vec::new();
        let mut notes = checked.notes;
        // recordings among the inputs (WAV, time CSV, UFF time histories),
        // held beside those of the loaded files within the memory budget
        let mut new_recordings: Vec<(String, time::WsRecording)> = Vec::new();
        let loaded_held: u64 = self
            .recordings
            .iter()
            .filter(|(n, _)| self.files.contains_key(*n))
            .map(|(_, r)| r.summary.held_bytes)
            .sum();
        for inp in &b.inputs {
            // checked against the recorded SHA-256 by bundle::read_checked
            let raw = inp.bytes().map_err(|e| e.in_file(name))?;
            let sets = match (&raw, &inp.sets) {
                (Some(r), _) => {
                    // the input's own errors name the input as the file
                    // (their lines are its lines) and say which bundle
                    let carried = |mut e: Error| {
                        e.message = format!(
                            "{} (input '{}' carried in bundle '{}')",
                            e.message,
                            crate::error::quote(&inp.name),
                            crate::error::quote(name)
                        );
                        e.in_file(inp.name.as_str())
                    };
                    // held recordings' bytes besides this input's
                    let others = new_recordings
                        .iter()
                        .map(|(_, w)| w.summary.held_bytes)
                        .fold(loaded_held, u64::saturating_add);
                    // a loaded file of the same name keeps its own recording
                    let hold = !self.files.contains_key(&inp.name);
                    let mut held =
                        |rec: crate::signal::Recording, over, format: &str, raw: u64, notes| {
                            if hold {
                                let summary = time::recording_summary(
                                    &inp.name,
                                    format,
                                    inp.sha256.clone(),
                                    raw,
                                    &rec,
                                    notes,
                                );
                                new_recordings.push((
                                    inp.name.clone(),
                                    time::WsRecording { rec, summary, over },
                                ));
                            }
                        };
                    if crate::vpt::geometry::looks_like_geometry(r) {
                        // a geometry file: checked by reading it; it holds no sets
                        crate::vpt::Geometry::from_csv(r, &inp.name).map_err(carried)?;
                        Vec::new()
                    } else if io::wav::looks_like_wav(r) || io::time_csv::looks_like_time_csv(r) {
                        // a recording: read with its own options, as when loaded
                        let (rec, over, format, rec_notes) = self
                            .read_recording(&inp.name, r, &inp.options, others)
                            .map_err(carried)?;
                        held(rec, over, &format, r.len() as u64, rec_notes);
                        Vec::new()
                    } else {
                        let opts = import_options(&inp.options).map_err(carried)?;
                        let loaded = io::load_with_limits(r, &inp.name, &opts, &self.limits)
                            .map_err(carried)?;
                        if !loaded.time_histories.is_empty() {
                            match self.read_uff_recording(&inp.name, &loaded.time_histories, others) {
                                Ok(rec) => {
                                    let over = vec![None; rec.channels.len()];
                                    held(rec, over, loaded.format.name(), 0, Vec::new())
                                }
                                Err(e) if loaded.sets.is_empty() => return Err(carried(e)),
                                Err(e) => notes.push(format!(
                                    "input '{}': the time histories are not held as a recording: {e}",
                                    crate::error::quote(&inp.name)
                                )),
                            }
                        }
                        loaded.sets
                    }
                }
                (None, Some(s)) => s.clone(),
                (None, None) => Vec::new(),
            };
            let mut summaries = Vec::new();
            for (k, s) in sets.into_iter().enumerate() {
                let id = format!("{}{k}", prefix_of("bundle", &inp.name));
                let mut m = summary::set_summary(&s);
                m.id = id.clone();
                summaries.push(m);
                new_sets.push((id, s));
            }
            let supplied = self
                .files
                .get(&inp.name)
                .is_some_and(|f| io::sha256_hex(&f.bytes) == inp.sha256);
            if inp.withheld() && !supplied {
                missing.push(inp.name.clone());
            }
            inputs.push(OpenedInput {
                name: inp.name.clone(),
                sha256: inp.sha256.clone(),
                format: inp.format.clone(),
                options: inp.options.clone(),
                withheld: inp.withheld(),
                supplied,
                sets: summaries,
                recording: new_recordings
                    .last()
                    .filter(|(n, _)| *n == inp.name)
                    .map(|(_, w)| w.summary.clone()),
            });
            new_inputs.insert(
                inp.name.clone(),
                BundleIn {
                    sha256: inp.sha256.clone(),
                    options: inp.options.clone(),
                    format: inp.format.clone(),
                    bytes: raw,
                    sets: inp.sets.clone(),
                },
            );
        }
        self.drop_prefix("bundle:");
        self.sets.extend(new_sets);
        // the last bundle's recordings go (a loaded file's stay)
        let files = &self.files;
        self.recordings.retain(|n, _| files.contains_key(n));
        self.recordings.extend(new_recordings);
        self.bundle_inputs = new_inputs;
        self.bundle_name = Some(name.to_string());
        self.bundle_recipe = b.recipe.clone();
        // the bundle's results join the history as a run of their own
        let number = self.history.last().map_or(1, |h| h.number + 1);
        let stored = self.store_results(number, b.results.clone(), b.report.clone());
        // the results' uncertainties (version 4) beside them, as after a run
        let mut carried = BTreeMap::new();
        for (set, u) in b.results.iter().zip(&b.uncertainties) {
            let Some(u) = u else { continue };
            let reliability = crate::uncertainty::reliability::from_flags(
                set,
                u.flags.clone(),
                &crate::uncertainty::ReliabilityOptions::default(),
            );
            carried.insert(
                set.name.clone(),
                recipe::Assessed {
                    uncertainty: crate::uncertainty::FrfUncertainty {
                        std: u.std.clone(),
                        method: u.method.clone(),
                    },
                    reliability,
                },
            );
        }
        self.keep_uncertainties(number, carried);
        let headline = b
            .report
            .as_ref()
            .and_then(|r| r.get("headline"))
            .and_then(|h| serde_json::from_value::<Vec<String>>(h.clone()).ok())
            .unwrap_or_default();
        self.remember(RunRecord {
            number,
            recipe_text: b
                .recipe
                .as_ref()
                .and_then(|r| serde_json::to_string_pretty(r).ok())
                .unwrap_or_default(),
            title: format!("results carried in bundle '{}'", crate::error::quote(name)),
            started_ms: history::now_ms(),
            duration_ms: 0.0,
            headline,
            results: stored.results.clone(),
            curves_kept: true,
            error: None,
            split: None,
        });
        Ok(OpenedBundle {
            recipe: b.recipe,
            created: b.created,
            mortise_version: b.mortise_version,
            inputs,
            results: stored.results,
            report: b.report,
            missing,
            version: b.version,
            content_sha256: checked.content_sha256,
            notes,
        })
    }

    /// The opened bundle's inputs still to be supplied (withheld, not yet
    /// dropped in again).
    pub fn missing_inputs(&self) -> Vec<String> {
        self.bundle_inputs
            .iter()
            .filter(|(n, b)| b.bytes.is_none() && b.sets.is_none() && !self.files.contains_key(*n))
            .map(|(n, _)| n.clone())
            .collect()
    }

    /// The recipe of the opened bundle, as text.
    pub fn bundle_recipe_text(&self) -> Option<String> {
        self.bundle_recipe
            .as_ref()
            .and_then(|v| serde_json::to_string_pretty(v).ok())
    }
}

/// Recipe files served from the workspace: loaded files first, then the
/// opened bundle's inputs.
struct Source<'a>(&'a Workspace);

impl FileSource for Source<'_> {
    fn read(&self, name: &str) -> Result<Vec<u8>> {
        let ws = self.0;
        let base = io::base_name(name);
        for key in [name, base.as_str()] {
            if let Some(f) = ws.files.get(key) {
                return Ok(f.bytes.clone());
            }
            if let Some(b) = ws.bundle_inputs.get(key) {
                if let Some(bytes) = &b.bytes {
                    return Ok(bytes.clone());
                }
                if b.sets.is_some() {
                    return Err(Error::unsupported(format!(
                        "'{key}' travels in this version-1 bundle as FRF sets, not as the file; drop the original file in again to run the recipe"
                    ))
                    .field("file"));
                }
                return Err(Error::missing(format!(
                    "'{key}' was withheld from bundle '{}'; drop the original file in again (its SHA-256 must be {})",
                    ws.bundle_name.as_deref().unwrap_or("?"),
                    b.sha256
                ))
                .field("file"));
            }
        }
        let mut loaded: Vec<&String> = ws.files.keys().collect();
        loaded.extend(ws.bundle_inputs.keys());
        Err(Error::recipe(format!(
            "file '{name}' is not loaded; loaded: {}",
            if loaded.is_empty() {
                "none".to_string()
            } else {
                loaded
                    .iter()
                    .map(|s| s.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            }
        ))
        .field("file"))
    }
}

/// The one sentence on what a recipient could still infer.
fn notice(
    withheld: &[String],
    hidden: &BTreeSet<String>,
    dropped: &[String],
    kept: &[FrfSet],
    results_only: bool,
) -> String {
    if withheld.is_empty() {
        return "Every input's raw data travels in this bundle: the recipient can see and re-run everything.".into();
    }
    let kept_names: Vec<&str> = kept.iter().map(|s| s.name.as_str()).collect();
    format!(
        "Withheld: {} (parts {}); the bundle keeps only requested outputs that hold none of the withheld parts' DOFs{}{}, yet a recipient who knows the other parts' FRFs and the excitation can still infer from the kept results ({}) how the withheld parts transmit between those results' DOFs, though not their FRFs over their own DOFs.",
        withheld.join(", "),
        hidden.iter().cloned().collect::<Vec<_>>().join(", "),
        if dropped.is_empty() {
            String::new()
        } else {
            format!(" (left out: {})", dropped.join(", "))
        },
        if results_only { ", and no raw data at all" } else { "" },
        if kept_names.is_empty() { "none".to_string() } else { kept_names.join(", ") },
    )
}

/// The recipe's components read from withheld files.
fn withheld_components(r: &recipe::Recipe, withheld: &[String]) -> BTreeSet<String> {
    r.components
        .iter()
        .filter(|(_, c)| {
            c.file.as_ref().is_some_and(|file| {
                withheld
                    .iter()
                    .any(|w| w == file || *w == io::base_name(file))
            })
        })
        .map(|(n, _)| n.clone())
        .collect()
}

#[cfg(test)]
mod geometry_file_tests {
    use super::*;
    use crate::frf::Dof;
    use crate::units::Quantity;

    impl Workspace {
        fn read_input(&self, name: &str) -> Result<Vec<u8>> {
            Source(self).read(name)
        }
    }

    const GEOM: &str =
        "# mortise-geometry 1\nunit, mm\nb:s1, 10, 0, 0\nb:s2, 0, 20, 0\nb:h1+Z, 0, 0, 5\n";

    fn component() -> Vec<u8> {
        let d = |s: &str| Dof::parse(s, "b").unwrap();
        let set = FrfSet::zeros(
            "b",
            vec![10.0, 20.0],
            vec![d("b:s1+X"), d("b:s2+Y"), d("b:f0+Z")],
            vec![d("b:h1+Z")],
            Quantity::Acceleration,
            Quantity::Force,
        );
        io::save(&[set], io::ExportFormat::Csv).unwrap()
    }

    // The summary counts the rows of the file as written (3 rows, unit mm).
    #[test]
    fn a_geometry_file_is_kept_with_its_summary_and_read_by_recipes() {
        let mut ws = Workspace::new();
        let sum = ws
            .load_file("foot.geom.csv", GEOM.as_bytes(), serde_json::Value::Null)
            .unwrap();
        assert_eq!(sum.format, "mortise-geometry");
        let g = sum.geometry.unwrap();
        assert_eq!(
            (g.rows, g.unit.as_str(), g.node_rows, g.dof_rows),
            (3, "mm", 2, 1)
        );
        assert!(sum.sets.is_empty());
        ws.load_file("b.csv", &component(), serde_json::json!({}))
            .unwrap();
        let r = recipe::parse(
            r#"{"format": "mortise-recipe", "version": 1, "components": {"b": {"file": "b.csv"}}, "steps": [], "outputs": ["b"]}"#,
        )
        .unwrap();
        let o = [crate::vpt::groups::Origin {
            name: "bolt".into(),
            origin: [0.0, 0.0, 0.0],
        }];
        let p = ws
            .virtual_point_groups(&r, "b", "foot.geom.csv", &o, 25.0)
            .unwrap();
        assert_eq!(p.groups[0].sensors, vec!["b:s1+X", "b:s2+Y"]);
        assert_eq!(p.groups[0].impacts, vec!["b:h1+Z"]);
        assert_eq!(p.not_located_sensors, vec!["b:f0+Z"]);
        assert!(p.not_located_impacts.is_empty());
    }

    #[test]
    fn a_bundle_carries_a_geometry_file_and_opens_again() {
        let mut ws = Workspace::new();
        ws.load_file("foot.geom.csv", GEOM.as_bytes(), serde_json::Value::Null)
            .unwrap();
        ws.load_file("b.csv", &component(), serde_json::json!({}))
            .unwrap();
        let text = r#"{"format": "mortise-recipe", "version": 1, "components": {"b": {"file": "b.csv"}}, "steps": [], "outputs": ["b"]}"#;
        ws.run_recipe_clocked(text, &|| 0.0).unwrap();
        let made = ws.make_bundle(text, &BundleOptions::default()).unwrap();
        let mut other = Workspace::new();
        let opened = other.open_bundle("x.mortise", &made.bytes).unwrap();
        let geo = opened
            .inputs
            .iter()
            .find(|i| i.name == "foot.geom.csv")
            .unwrap();
        assert!(geo.sets.is_empty());
        assert_eq!(
            other.read_input("foot.geom.csv").unwrap(),
            GEOM.as_bytes().to_vec()
        );
    }

    #[test]
    fn a_bad_geometry_file_or_import_options_are_refused_and_nothing_is_kept() {
        let mut ws = Workspace::new();
        let bad = GEOM.replace("0, 20, 0", "0, twenty, 0");
        let e = ws
            .load_file("g.csv", bad.as_bytes(), serde_json::Value::Null)
            .unwrap_err();
        assert_eq!(e.file.as_deref(), Some("g.csv"));
        assert!(e.to_string().contains("line 4"), "{e}");
        let e = ws
            .load_file(
                "g.csv",
                GEOM.as_bytes(),
                serde_json::json!({"component": "x"}),
            )
            .unwrap_err();
        assert_eq!(e.field.as_deref(), Some("options"));
        assert!(ws.files.is_empty());
    }
}
