//! Running a recipe: load the components once, run the steps for the
//! baseline and for each variant, collect the requested outputs (with each
//! step's extra results beside it) and the typed report.

use super::component::load_component;
use super::headline::headline;
use super::ops::{scale_in_place, Ctx};
use super::report::{
    dedup, fin, weighting_for, BandChange, ComponentReport, RunReport, StepReport, VariantReport,
    REPORT_FORMAT, REPORT_VERSION,
};
use super::uncertainty::{check_uncertainty_used, component_uncertainties, propagate, Assessed};
use super::{FileSource, Recipe, Variant};
use crate::audit::{self, AuditOptions};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::limits::Limits;
use crate::predict;
use crate::uncertainty::FrfUncertainty;
use std::collections::BTreeMap;

/// What a run produced.
#[derive(Debug, Clone)]
pub struct RunResult {
    /// Requested outputs, each named after its step and followed by the
    /// step's extra results (`ID/NAME`); variants' as `NAME [variant]`.
    pub outputs: Vec<FrfSet>,
    pub report: RunReport,
    /// The uncertainty and reliability of the outputs that carry one, by
    /// output name (when components have an `"uncertainty"` key).
    pub uncertainties: BTreeMap<String, Assessed>,
}

/// Load every component of a recipe (once; variants reuse them) within the
/// default [`Limits`].
pub fn load_components(
    recipe: &Recipe,
    files: &dyn FileSource,
) -> Result<BTreeMap<String, FrfSet>> {
    load_components_with(recipe, files, &Limits::default())
}

/// Load every component of a recipe within `limits`: each synthesized or
/// resampled component is checked before it is built, and all of them
/// together must fit the memory budget.
pub fn load_components_with(
    recipe: &Recipe,
    files: &dyn FileSource,
    limits: &Limits,
) -> Result<BTreeMap<String, FrfSet>> {
    let mut out = BTreeMap::new();
    let mut held = 0u64;
    for (name, spec) in &recipe.components {
        let within = format!("components.{name}");
        let mut set = load_component(name, spec, recipe.grid.as_ref(), files, limits)
            .map_err(|e| e.within(within.clone()))?;
        held = held.saturating_add(values_of(&set));
        limits
            .check_values(
                &format!("the components up to '{name}' ({held} values together)"),
                Some(held),
            )
            .map_err(|e| e.within(within))?;
        dedup(&mut set.warnings);
        out.insert(name.clone(), set);
    }
    Ok(out)
}

/// Complex values a set holds (its coherence, real, counted as half).
pub(crate) fn values_of(s: &FrfSet) -> u64 {
    let c = s.coherence.as_ref().map_or(0, |c| c.len() as u64 / 2);
    (s.data.len() as u64).saturating_add(c)
}

/// Estimated operations of a set's audit: dominated by the conditioning
/// check's Jacobi SVD per line (about 30 · m · n · min(m, n) operations).
pub(crate) fn audit_work(s: &FrfSet) -> f64 {
    let (m, n) = (s.n_out() as f64, s.n_in() as f64);
    30.0 * s.n_lines() as f64 * m * n * m.min(n)
}

/// Complex values held by a map of sets.
fn values_held(values: &BTreeMap<String, FrfSet>) -> u64 {
    values
        .values()
        .fold(0u64, |a, s| a.saturating_add(values_of(s)))
}

struct Executed {
    values: BTreeMap<String, FrfSet>,
    /// The propagated uncertainty of each step result that carries one.
    assessed: BTreeMap<String, Assessed>,
    /// Extra results of each step, by step id: (full name, set).
    extras: BTreeMap<String, Vec<(String, FrfSet)>>,
    steps: Vec<StepReport>,
}

#[allow(clippy::too_many_arguments)]
fn execute(
    recipe: &Recipe,
    comps: &BTreeMap<String, FrfSet>,
    comp_unc: &BTreeMap<String, FrfUncertainty>,
    variant: Option<&Variant>,
    limits: &Limits,
    files: &dyn FileSource,
    propagating: bool,
    demand_driven: bool,
) -> Result<Executed> {
    // what later steps read of each coupling (none: every step whole)
    let demands = if demand_driven {
        super::demand::requests(recipe)?
    } else {
        BTreeMap::new()
    };
    let mut values: BTreeMap<String, FrfSet> = comps.clone();
    let mut unc: BTreeMap<String, FrfUncertainty> = comp_unc.clone();
    let mut assessed: BTreeMap<String, Assessed> = BTreeMap::new();
    if let Some(v) = variant {
        // a swap first: a variant scaling NAME scales what NAME now holds
        for (name, other) in &v.swap {
            if let (Some(a), Some(b)) = (comps.get(name), comps.get(other)) {
                if a.outputs != b.outputs || a.inputs != b.inputs {
                    return Err(crate::error::Error::recipe(format!(
                        "swap '{name}' → '{other}': the DOFs differ ({} × {} against {} × {}, or their names); the replacement must have the DOFs the steps read (give it \"component\": \"{name}\" when only the namespace differs)",
                        b.n_out(),
                        b.n_in(),
                        a.n_out(),
                        a.n_in()
                    ))
                    .field(format!("swap.{}", crate::error::quote(name))));
                }
            }
            if let Some(s) = comps.get(other) {
                let mut s = s.clone();
                s.name = name.clone();
                values.insert(name.clone(), s);
            }
            match comp_unc.get(other) {
                Some(u) => unc.insert(name.clone(), u.clone()),
                None => unc.remove(name),
            };
        }
        for (name, f) in &v.scale {
            if let Some(s) = values.get_mut(name) {
                scale_in_place(s, *f)
                    .map_err(|e| e.field(format!("scale.{}", crate::error::quote(name))))?;
            }
            scale_uncertainty(unc.get_mut(name), *f);
        }
    }
    let mut steps = Vec::new();
    let mut extras = BTreeMap::new();
    for (n, step) in recipe.steps.iter().enumerate() {
        let label = format!("steps[{n}] (id '{}', op '{}')", step.id, step.op.name());
        let cx = Ctx {
            values: &values,
            id: &step.id,
            variant,
            limits,
            held: values_held(&values),
            files,
            steps: &steps,
            uncertainties: &unc,
            demand: demands.get(&step.id),
        };
        let mut out = step.op.run(&cx).map_err(|e| e.within(label.clone()))?;
        let mut extra_unc = Vec::new();
        let mut a = if propagating {
            propagate(&step.op, &cx, &unc, &mut out, &mut extra_unc)
                .map_err(|e| e.within(label.clone()))?
        } else {
            None
        };
        if let Some(f) = variant.and_then(|v| v.scale.get(&step.id)) {
            // the variant's factor on this step's result: the error names both
            scale_in_place(&mut out.set, *f).map_err(|mut e| {
                e.field = Some(format!("scale.{}", crate::error::quote(&step.id)));
                e.within(label)
            })?;
            scale_uncertainty(a.as_mut().map(|a| &mut a.uncertainty), *f);
        }
        match a {
            Some(a) => {
                unc.insert(step.id.clone(), a.uncertainty.clone());
                assessed.insert(step.id.clone(), a);
            }
            None => {
                unc.remove(&step.id);
            }
        }
        out.set.name = step.id.clone();
        dedup(&mut out.set.warnings);
        let mut named = Vec::new();
        for (suffix, mut s) in out.extras {
            let full = format!("{}/{suffix}", step.id);
            s.name = full.clone();
            dedup(&mut s.warnings);
            out.report.extras.push(full.clone());
            named.push((full, s));
        }
        for (full, s) in &named {
            values.insert(full.clone(), s.clone());
            unc.remove(full);
        }
        // the extras' uncertainties (a variant's scale of the step leaves
        // its extras as they are, so theirs stay too)
        for (suffix, ea) in extra_unc {
            let full = format!("{}/{suffix}", step.id);
            unc.insert(full.clone(), ea.uncertainty.clone());
            assessed.insert(full, ea);
        }
        extras.insert(step.id.clone(), named);
        steps.push(out.report);
        values.insert(step.id.clone(), out.set);
    }
    Ok(Executed {
        values,
        assessed,
        extras,
        steps,
    })
}

/// The baseline steps' reports on `comps`, with no uncertainty propagated
/// (each draw of [`super::monte_carlo`]); the components' stated
/// uncertainties `comp_unc` are still seen by the steps (a Tikhonov λ from
/// the noise), as in the baseline run.
pub(crate) fn execute_plain(
    recipe: &Recipe,
    comps: &BTreeMap<String, FrfSet>,
    comp_unc: &BTreeMap<String, FrfUncertainty>,
    limits: &Limits,
    files: &dyn FileSource,
) -> Result<Vec<StepReport>> {
    execute_on(recipe, comps, comp_unc, None, limits, files)
}

/// The steps' reports of the baseline or of one variant on `comps`, with no
/// uncertainty propagated (the components' stated uncertainty is seen by
/// steps that read it, e.g. Tikhonov's λ from the noise): each point of a
/// sweep ([`super::sweep`]) is the variant with its value, computed here as
/// a recipe's variant is.
pub(crate) fn execute_on(
    recipe: &Recipe,
    comps: &BTreeMap<String, FrfSet>,
    comp_unc: &BTreeMap<String, FrfUncertainty>,
    variant: Option<&Variant>,
    limits: &Limits,
    files: &dyn FileSource,
) -> Result<Vec<StepReport>> {
    Ok(execute(recipe, comps, comp_unc, variant, limits, files, false, true)?.steps)
}

/// Every set of the baseline run on `comps` (components and step results),
/// with no uncertainty propagated: what a speed sweep reads its transfer from.
pub(crate) fn baseline_values(
    recipe: &Recipe,
    comps: &BTreeMap<String, FrfSet>,
    limits: &Limits,
    files: &dyn FileSource,
) -> Result<BTreeMap<String, FrfSet>> {
    let (unc, _) = super::uncertainty::component_uncertainties(recipe, comps)?;
    Ok(execute(recipe, comps, &unc, None, limits, files, false, false)?.values)
}

/// The sets the step at index `n` can read, as the baseline run makes them:
/// every component loaded, the steps before it run (no variant, no audit),
/// within `limits`.
pub(crate) fn values_before(
    recipe: &Recipe,
    n: usize,
    files: &dyn FileSource,
    limits: &Limits,
) -> Result<BTreeMap<String, FrfSet>> {
    super::check_names(recipe)?;
    let comps = load_components_with(recipe, files, limits)?;
    let mut before = recipe.clone();
    before.steps.truncate(n);
    before.variants.clear();
    let (unc, _) = component_uncertainties(&before, &comps)?;
    Ok(execute(&before, &comps, &unc, None, limits, files, true, false)?.values)
}

/// The uncertainty of a set scaled by `f`: |f| times.
fn scale_uncertainty(u: Option<&mut FrfUncertainty>, f: f64) {
    if let Some(u) = u {
        for v in &mut u.std {
            *v *= f.abs();
        }
    }
}

/// The requested outputs of one execution, each followed by its extras,
/// and the uncertainties of those that carry one.
fn collect(
    recipe: &Recipe,
    ex: &Executed,
    suffix: &str,
    uncertainties: &mut BTreeMap<String, Assessed>,
) -> Vec<FrfSet> {
    let mut out = Vec::new();
    for name in &recipe.outputs {
        if let Some(s) = ex.values.get(name) {
            let mut s = s.clone();
            s.name = format!("{name}{suffix}");
            if let Some(a) = ex.assessed.get(name) {
                uncertainties.insert(s.name.clone(), a.clone());
            }
            out.push(s);
        }
        for (full, s) in ex.extras.get(name).into_iter().flatten() {
            let mut s = s.clone();
            s.name = format!("{full}{suffix}");
            if let Some(a) = ex.assessed.get(full) {
                uncertainties.insert(s.name.clone(), a.clone());
            }
            out.push(s);
        }
    }
    out
}

/// Execute a recipe: the baseline and then every variant, within the
/// default [`Limits`].
pub fn run(recipe: &Recipe, files: &dyn FileSource) -> Result<RunResult> {
    run_with(recipe, files, &Limits::default())
}

/// Execute a recipe within `limits`: every synthesized component, every set
/// a step would create and every step's estimated work is checked against
/// them before it is computed (an [`ErrorKind::Budget`](crate::error::ErrorKind::Budget)
/// error names the entry, the size asked for and the budget).
pub fn run_with(recipe: &Recipe, files: &dyn FileSource, limits: &Limits) -> Result<RunResult> {
    run_with_sweep(recipe, files, limits, None)
}

/// [`run_with`], its sweep computed elsewhere: `sweep` is the whole sweep
/// (the page's workers' slices merged by [`super::sweep::merge_reports`]),
/// or the first error a slice met, which the run fails with where it would
/// have computed the sweep; `None` computes the sweep here.
pub fn run_with_sweep(
    recipe: &Recipe,
    files: &dyn FileSource,
    limits: &Limits,
    sweep: Option<Result<super::sweep::SweepReport>>,
) -> Result<RunResult> {
    match sweep {
        None => run_parts(recipe, files, limits, true),
        Some(given) => finish_with_sweep(recipe, run_parts(recipe, files, limits, false)?, given),
    }
}

/// [`run_with`] without the recipe's sweep (computed meanwhile elsewhere):
/// no `sweep` in the report and no sweep in the headline until
/// [`finish_with_sweep`] adds them.
pub fn run_without_sweep(
    recipe: &Recipe,
    files: &dyn FileSource,
    limits: &Limits,
) -> Result<RunResult> {
    run_parts(recipe, files, limits, false)
}

/// A run made by [`run_without_sweep`] given its whole sweep (or the first
/// error of its slices): the report and headline [`run_with`] gives.
pub fn finish_with_sweep(
    recipe: &Recipe,
    mut run: RunResult,
    sweep: Result<super::sweep::SweepReport>,
) -> Result<RunResult> {
    if recipe.sweep.is_none() {
        return Err(Error::internal(
            "a sweep was given for a recipe without a \"sweep\" section",
        ));
    }
    let sweep = sweep?;
    super::sweep::check_whole(recipe, &sweep)?;
    run.report.sweep = Some(sweep);
    set_headline(&mut run.report);
    Ok(run)
}

/// The headline: the levels, and a speed sweep's loudest speed beside them.
fn set_headline(report: &mut RunReport) {
    report.headline = headline(report);
    if let Some(sw) = &report.sweep {
        report.headline.extend(super::sweep::sweep_headline(sw));
    }
}

fn run_parts(
    recipe: &Recipe,
    files: &dyn FileSource,
    limits: &Limits,
    with_sweep: bool,
) -> Result<RunResult> {
    // a recipe built in code gets the checks a parsed one had
    super::check_names(recipe)?;
    check_uncertainty_used(recipe)?;
    let comps = load_components_with(recipe, files, limits)?;
    let (comp_unc, unc_notes) = component_uncertainties(recipe, &comps)?;
    let base = execute(recipe, &comps, &comp_unc, None, limits, files, true, true)?;
    let mut uncertainties = BTreeMap::new();
    let mut outputs = collect(recipe, &base, "", &mut uncertainties);
    let mut variants = Vec::new();
    for (n, v) in recipe.variants.iter().enumerate() {
        let res = execute(
            recipe,
            &comps,
            &comp_unc,
            Some(v),
            limits,
            files,
            true,
            true,
        )
        .map_err(|e| e.within(format!("variants[{n}] ('{}')", v.name)))?;
        outputs.extend(collect(
            recipe,
            &res,
            &format!(" [{}]", v.name),
            &mut uncertainties,
        ));
        variants.push(variant_report(recipe, &base, res, &v.name));
    }
    let mut notes: Vec<String> = base
        .steps
        .iter()
        .flat_map(|s| s.notes.iter().map(move |n| format!("step '{}': {n}", s.id)))
        .collect();
    if !notes.is_empty() {
        notes.push(format!("rule: {}", super::INFERENCE_RULE));
    }
    notes.extend(unc_notes);
    if !recipe.tolerances.is_empty() {
        let what: Vec<String> = recipe.tolerances.iter().map(|t| t.what()).collect();
        notes.push(format!(
            "the tolerances of {} are drawn by a Monte Carlo of the recipe (mortise run --monte-carlo N); this run uses the nominal values",
            what.join("; ")
        ));
    }
    // the fitness audit of every FRF component, with common-practice limits;
    // its conditioning check is one SVD per line
    for (k, s) in comps.iter().filter(|(_, s)| s.signal.is_none()) {
        limits
            .check_work(
                &format!(
                    "the audit of component '{k}' (one SVD per line: {} lines of {} × {})",
                    s.n_lines(),
                    s.n_out(),
                    s.n_in()
                ),
                audit_work(s),
            )
            .map_err(|e| e.within(format!("components.{k}")))?;
    }
    let audit: BTreeMap<String, audit::AuditReport> = comps
        .iter()
        .filter(|(_, s)| s.signal.is_none())
        .map(|(k, s)| (k.clone(), audit::audit(s, &AuditOptions::default())))
        .collect();
    let mut report = RunReport {
        format: REPORT_FORMAT.into(),
        version: REPORT_VERSION,
        title: recipe.title.clone(),
        mortise_version: crate::VERSION.into(),
        notes,
        components: comps
            .iter()
            .map(|(k, v)| (k.clone(), ComponentReport::new(v)))
            .collect(),
        steps: base.steps,
        variants,
        outputs: outputs.iter().map(|s| s.name.clone()).collect(),
        audit,
        headline: Vec::new(),
        uff_node_numbers: BTreeMap::new(),
        monte_carlo: None,
        sweep: None,
        caution: predict::CAUTION.into(),
    };
    if recipe.sweep.is_some() && with_sweep {
        // the whole sweep, on threads where there are threads
        let threads = if cfg!(target_arch = "wasm32") { 1 } else { 2 };
        report.sweep = Some(super::sweep::sweep_on(
            recipe, &comps, files, limits, None, threads,
        )?);
    }
    // the headline names a speed sweep's loudest speed beside the level
    set_headline(&mut report);
    Ok(RunResult {
        outputs,
        report,
        uncertainties,
    })
}

fn variant_report(recipe: &Recipe, base: &Executed, res: Executed, name: &str) -> VariantReport {
    let mut level_change_db = BTreeMap::new();
    let mut band_change = BTreeMap::new();
    for out in &recipe.outputs {
        let (Some(a), Some(b)) = (base.values.get(out), res.values.get(out)) else {
            continue;
        };
        level_change_db.insert(out.clone(), level_change_db_of(a, b));
        if a.signal.is_some() {
            // per 1/3-octave band at each target (IEC 61260-1), weighted as
            // the output's levels are (A for sound pressure only)
            if let Ok(d) = predict::variants::difference_db(a, b, 3, weighting_for(a)) {
                band_change.insert(
                    out.clone(),
                    BandChange {
                        weighting: d.weighting,
                        targets: d.targets.iter().map(|t| t.to_string()).collect(),
                        bands: d.bands.iter().map(|b| b.label.clone()).collect(),
                        per_band_db: d
                            .per_band_db
                            .iter()
                            .map(|r| r.iter().map(|&x| fin(x)).collect())
                            .collect(),
                        overall_db: d.overall_db.iter().map(|&x| fin(x)).collect(),
                    },
                );
            }
        }
    }
    VariantReport {
        name: name.to_string(),
        steps: res.steps,
        level_change_db,
        band_change,
    }
}

/// Energetic level change in dB, b relative to a, over all present entries and lines.
fn level_change_db_of(a: &FrfSet, b: &FrfSet) -> Option<f64> {
    if a.data.len() != b.data.len() {
        return None;
    }
    let energy = |s: &FrfSet| -> f64 {
        s.data
            .iter()
            .filter(|v| v.re.is_finite())
            .map(|v| v.norm_sqr())
            .sum()
    };
    let (ea, eb) = (energy(a), energy(b));
    (ea > 0.0 && eb > 0.0).then(|| 10.0 * (eb / ea).log10())
}
