//! The recipe's face of [`crate::uncertainty`]: each component's
//! uncertainty from its `"uncertainty"` key, its propagation step by step
//! (first order through couple, decouple, cascade, sum, select, convert,
//! respond, the total of paths and blocked forces with their
//! predictions), and
//! the reliability of each result in the step's report.

use super::ops::{resolve_joints, Ctx, Op, RelativeOrNoise, StepOutput};
use super::report::{weighting_for, PredictionBands, UncertaintyReport};
use super::Recipe;
use crate::assemble::CouplingOptions;
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::uncertainty::{
    self, reliability::Evidence, FrfUncertainty, Reliability, ReliabilityOptions,
};
use std::collections::BTreeMap;

/// A result's uncertainty with its reliability.
#[derive(Debug, Clone, PartialEq)]
pub struct Assessed {
    pub uncertainty: FrfUncertainty,
    pub reliability: Reliability,
}

/// The uncertainty of every component that has an `"uncertainty"` key, and
/// a note per component saying how it was obtained.
pub(crate) fn component_uncertainties(
    recipe: &Recipe,
    comps: &BTreeMap<String, FrfSet>,
) -> Result<(BTreeMap<String, FrfUncertainty>, Vec<String>)> {
    let mut out = BTreeMap::new();
    let mut notes = Vec::new();
    for (name, spec) in &recipe.components {
        let (Some(u), Some(set)) = (&spec.uncertainty, comps.get(name)) else {
            continue;
        };
        let v = u
            .resolve(set)
            .map_err(|e| e.within(format!("components.{name}")))?;
        notes.push(format!("component '{name}': uncertainty {}", v.method));
        out.insert(name.clone(), v);
    }
    Ok((out, notes))
}

/// Refuse an `"uncertainty"` key on a component that no step reads (it
/// would change nothing in the run).
pub(crate) fn check_uncertainty_used(recipe: &Recipe) -> Result<()> {
    for (name, spec) in &recipe.components {
        if spec.uncertainty.is_none() {
            continue;
        }
        if !recipe
            .steps
            .iter()
            .any(|s| s.op.reads().contains(&name.as_str()))
        {
            return Err(Error::recipe(format!(
                "component '{}' has an \"uncertainty\" but no step reads it, so the uncertainty would change nothing; remove the key, or use the component in a step",
                crate::error::quote(name)
            ))
            .field("uncertainty")
            .within(format!("components.{name}")));
        }
    }
    Ok(())
}

/// Estimated operations of the first-order propagation of a coupling: per
/// line, dense products of the whole block-diagonal matrix (rows × columns)
/// with the interface (m) and the result's rows and columns.
fn first_order_work(lines: usize, rows: usize, cols: usize, m: usize, nr: usize) -> f64 {
    let (l, r, c, m, n) = (lines as f64, rows as f64, cols as f64, m as f64, nr as f64);
    l * 8.0 * (r * c * (2.0 * m + n) + m * m * (r + c))
}

/// Propagate the uncertainty of a step's inputs to its result (the step has
/// just run: `out`), and write the result's reliability into its report.
/// The uncertainty of extra results (each path's contribution, blocked
/// forces' validation and target predictions) goes to `extras`, by the
/// extra's suffix.
/// `None` when no input carries an uncertainty, or when the operation does
/// not propagate one (a note says so).
pub(crate) fn propagate(
    op: &Op,
    cx: &Ctx,
    unc: &BTreeMap<String, FrfUncertainty>,
    out: &mut StepOutput,
    extras: &mut Vec<(String, Assessed)>,
) -> Result<Option<Assessed>> {
    let reads = op.reads();
    let carried: Vec<&str> = reads
        .iter()
        .copied()
        .filter(|n| unc.contains_key(*n))
        .collect();
    if carried.is_empty() {
        return Ok(None);
    }
    let get = |n: &str| unc.get(n);
    // a measured joint's stiffness is read, but joints are taken as exact
    let joint_sets: Vec<&str> = match op {
        Op::Couple(c) => c.joints.iter().filter_map(|j| j.reads()).collect(),
        Op::Decouple(d) => d.joints.iter().filter_map(|j| j.reads()).collect(),
        _ => Vec::new(),
    };
    let exact: Vec<&str> = carried
        .iter()
        .copied()
        .filter(|n| joint_sets.contains(n))
        .collect();
    if !exact.is_empty() {
        out.report.notes.push(format!(
            "the uncertainty of the measured joint stiffness {} is not propagated to first order (joints are taken as exact); mortise run --monte-carlo draws it",
            quoted(&exact)
        ));
        if carried.len() == exact.len() {
            return Ok(None);
        }
    }
    let opts = ReliabilityOptions::default();
    let (u, reliability) = match op {
        Op::Couple(c) if matches!(c.tsvd, Some(RelativeOrNoise::Relative(_))) => {
            let t = match c.tsvd {
                Some(RelativeOrNoise::Relative(t)) => Some(t),
                _ => None,
            };
            let parts = cx.get_all("parts", &c.parts)?;
            let (joints, _) = resolve_joints(cx, &c.joints)?;
            let us: Vec<Option<&FrfUncertainty>> = c.parts.iter().map(|n| get(n)).collect();
            let noise =
                uncertainty::interface_noise::coupling_interface_noise(&parts, &us, &joints, t)?;
            let hit: Vec<usize> = (0..noise.len())
                .filter(|&k| noise[k].dropped_above_noise > 0)
                .collect();
            if let Some(&k0) = hit.first() {
                let f = &out.set.freqs;
                out.report.warnings.push(format!(
                    "'tsvd' {} drops interface singular values that lie above the input noise at {} of {} lines (first at {} Hz, threshold from the noise there {:.2e}): the truncation removes coupled dynamics the data resolve",
                    t.unwrap_or(0.0),
                    hit.len(),
                    noise.len(),
                    f[k0],
                    noise[k0].threshold
                ));
            }
            out.report.notes.push(format!(
                "the uncertainty of {} {}",
                quoted(&carried),
                NOT_THROUGH_REGULARISED
            ));
            return Ok(None);
        }
        _ if regularised(op) => {
            out.report.notes.push(format!(
                "the uncertainty of {} {}",
                quoted(&carried),
                NOT_THROUGH_REGULARISED
            ));
            return Ok(None);
        }
        Op::Couple(c) => {
            let parts = cx.get_all("parts", &c.parts)?;
            let (joints, _) = resolve_joints(cx, &c.joints)?;
            let us: Vec<Option<&FrfUncertainty>> = c.parts.iter().map(|n| get(n)).collect();
            let rows: usize = parts.iter().map(|p| p.n_out()).sum();
            let cols: usize = parts.iter().map(|p| p.n_in()).sum();
            cx.check_work(
                "the first-order uncertainty propagation of the coupling",
                first_order_work(out.set.n_lines(), rows, cols, joints.len(), rows),
            )?;
            let mut fo =
                uncertainty::couple_first_order(&parts, &us, &joints, &CouplingOptions::default())?;
            if cx.demand.is_some() {
                // the step computed only the rows and columns later steps read
                let all = |f: fn(&FrfSet) -> &[crate::frf::Dof]| {
                    parts
                        .iter()
                        .flat_map(|p| f(p).iter().cloned())
                        .collect::<Vec<_>>()
                };
                fo = fo.select(
                    &all(|p| &p.outputs),
                    &all(|p| &p.inputs),
                    &out.set.outputs,
                    &out.set.inputs,
                )?;
            }
            let cond = condition(out);
            let mut r = uncertainty::assess(&out.set, &Evidence::of_coupling(&fo, &cond), &opts);
            let noise =
                uncertainty::interface_noise::coupling_interface_noise(&parts, &us, &joints, None)?;
            r.statements.push(noise_statement(&out.set.freqs, &noise));
            (fo.uncertainty, r)
        }
        Op::Decouple(d) => {
            let asm = cx.get("assembly", &d.assembly)?;
            let rem = cx.get("remove", &d.remove)?;
            let (joints, _) = resolve_joints(cx, &d.joints)?;
            let rows = asm.n_out() + rem.n_out();
            let cols = asm.n_in() + rem.n_in();
            cx.check_work(
                "the first-order uncertainty propagation of the decoupling",
                first_order_work(out.set.n_lines(), rows, cols, joints.len(), asm.n_out()),
            )?;
            let mut fo = uncertainty::decouple_first_order(
                asm,
                get(&d.assembly),
                rem,
                get(&d.remove),
                &joints,
                &CouplingOptions::default(),
            )?;
            if cx.demand.is_some() {
                // the step computed only the rows and columns later steps read
                fo = fo.select(&asm.outputs, &asm.inputs, &out.set.outputs, &out.set.inputs)?;
            }
            let cond = condition(out);
            let r = uncertainty::assess(&out.set, &Evidence::of_coupling(&fo, &cond), &opts);
            (fo.uncertainty, r)
        }
        Op::Cascade(c) => {
            let a = cx.get("first", &c.first)?;
            let b = cx.get("second", &c.second)?;
            let (whole, mut u) =
                uncertainty::cascade_first_order(a, get(&c.first), b, get(&c.second))?;
            if cx.demand.is_some() {
                // the step computed only the rows and columns later steps read
                let (o, i) = (&out.set.outputs, &out.set.inputs);
                u = uncertainty::select_uncertainty(&whole, &u, &|s| s.select_dofs(o, i))?;
            }
            let r = assess_std(&out.set, &u, &opts);
            (u, r)
        }
        Op::Sum(s) => {
            let parts = cx.get_all("parts", &s.parts)?;
            let us: Vec<Option<&FrfUncertainty>> = s.parts.iter().map(|n| get(n)).collect();
            let (_, u) = uncertainty::sum_first_order(&parts, &us)?;
            let r = assess_std(&out.set, &u, &opts);
            (u, r)
        }
        Op::Select(sel) => {
            let from = cx.get("from", &sel.from)?;
            let Some(uf) = get(&sel.from) else {
                return Ok(None);
            };
            let u = uncertainty::select_uncertainty(from, uf, &|s| {
                super::ops::transform_select(s, sel.outputs.as_deref(), sel.inputs.as_deref())
            })?;
            let r = assess_std(&out.set, &u, &opts);
            (u, r)
        }
        Op::Convert(c) => {
            let from = cx.get("from", &c.from)?;
            let Some(uf) = get(&c.from) else {
                return Ok(None);
            };
            let (_, u) = uncertainty::convert_first_order(from, uf, &c.kind)?;
            let r = assess_std(&out.set, &u, &opts);
            (u, r)
        }
        Op::Paths(p) => {
            // the total: the response of the same FRFs and excitation
            let h = cx.get("frf", &p.frf)?;
            let f = cx.get("excitation", &p.excitation)?;
            let (_, u) = uncertainty::respond_first_order(h, get(&p.frf), f, get(&p.excitation))?;
            let rel = assess_std(&out.set, &u, &opts);
            level_intervals(cx, out, &u)?;
            for (name, up) in path_spreads(cx, p, (get(&p.frf), get(&p.excitation)), out)? {
                if let Some((_, set)) = out.extras.iter().find(|(e, _)| *e == name) {
                    let r = assess_std(set, &up, &opts);
                    extras.push((
                        name,
                        Assessed {
                            uncertainty: up,
                            reliability: r,
                        },
                    ));
                }
            }
            (u, rel)
        }
        Op::BlockedForces(bf) => {
            let frf = cx.get("bench", &bf.bench)?;
            let op = cx.get("operational", &bf.operational)?;
            // the same solve as the step's (deterministic), for its inverse,
            // then per line the force and prediction variances
            let (nl, m, n) = (frf.n_lines() as f64, frf.n_out() as f64, frf.n_in() as f64);
            cx.check_work(
                "the first-order uncertainty of the blocked forces (the solve again and its propagation)",
                34.0 * nl * m * n * m.min(n) + 16.0 * nl * m * m * n,
            )?;
            let b = crate::predict::blocked::blocked_forces(frf, op, &bf.options(cx, frf)?)?;
            let fo = uncertainty::blocked::blocked_first_order(
                frf,
                get(&bf.bench),
                op,
                get(&bf.operational),
                &b,
            )?;
            let bands = prediction_bands(&b, &fo, op, get(&bf.operational));
            if let Some(r) = out.report.blocked.as_mut() {
                r.prediction_bands = bands;
            }
            for (name, std) in [
                ("validation-predicted", &fo.validation),
                ("target-predicted", &fo.target),
            ] {
                let (Some(std), Some((_, set))) = (std, out.extras.iter().find(|(e, _)| e == name))
                else {
                    continue;
                };
                if std.len() != set.data.len() {
                    continue;
                }
                let u = FrfUncertainty {
                    std: std.clone(),
                    method: format!("{} (the {name} responses)", fo.forces.method),
                };
                let r = assess_std(set, &u, &opts);
                extras.push((
                    name.to_string(),
                    Assessed {
                        uncertainty: u,
                        reliability: r,
                    },
                ));
            }
            let rel = assess_std(&out.set, &fo.forces, &opts);
            (fo.forces, rel)
        }
        Op::Respond(r) => {
            let h = cx.get("frf", &r.frf)?;
            let f = cx.get("excitation", &r.excitation)?;
            let (_, u) = uncertainty::respond_first_order(h, get(&r.frf), f, get(&r.excitation))?;
            let rel = assess_std(&out.set, &u, &opts);
            level_intervals(cx, out, &u)?;
            (u, rel)
        }
        other => {
            out.report.notes.push(format!(
                "the uncertainty of {} is not propagated through '{}': the result carries none",
                quoted(&carried),
                other.name()
            ));
            return Ok(None);
        }
    };
    let method = if matches!(op, Op::Respond(_) | Op::Paths(_)) {
        format!(
            "{}; level intervals: Monte Carlo over the lines, {} draws, seed {}",
            u.method,
            uncertainty::level::LEVEL_DRAWS,
            uncertainty::level::LEVEL_SEED
        )
    } else {
        u.method.clone()
    };
    out.report.uncertainty = Some(UncertaintyReport {
        method,
        fraction_flagged: reliability.fraction_flagged,
        statements: reliability.statements.clone(),
        bands: reliability.bands.clone(),
        thresholds: reliability.options,
    });
    Ok(Some(Assessed {
        uncertainty: u,
        reliability,
    }))
}

/// The 95 % bands of a blocked-force step's validation and target
/// predictions, and how often the measured response lies in them.
fn prediction_bands(
    b: &crate::predict::blocked::BlockedForces,
    fo: &uncertainty::blocked::BlockedFirstOrder,
    op: &FrfSet,
    u_op: Option<&FrfUncertainty>,
) -> Vec<PredictionBands> {
    let mut out = Vec::new();
    let sets = [
        (
            "validation",
            b.validation.as_ref().map(|v| &v.predicted),
            &b.validation_rows,
            &fo.validation,
        ),
        (
            "target",
            b.target.as_ref().map(|t| &t.predicted),
            &b.target_rows,
            &fo.target,
        ),
    ];
    for (of, pred, rows, std) in sets {
        let (Some(pred), Some(std)) = (pred, std) else {
            continue;
        };
        let n = rows.len();
        let nl = pred.n_lines();
        let mut interval = Vec::new();
        let mut median = Vec::new();
        let mut within = Vec::new();
        for (t, r) in rows.iter().enumerate() {
            let mut row = Vec::with_capacity(nl);
            let mut upper = Vec::new();
            let mut inside = 0usize;
            for k in 0..nl {
                let p = pred.get(k, t, 0).norm();
                let u = std[k * n + t];
                let (lo, hi) = uncertainty::interval_db(p, u);
                row.push((lo.is_finite() && hi.is_finite()).then_some([lo, hi]));
                if hi.is_finite() {
                    upper.push(hi);
                }
                if let Some((o, _)) = r.op {
                    // the difference of two independent circular errors
                    let um = u_op.map_or(0.0, |w| w.std[op.idx(k, o, 0)]);
                    let m = op.get(k, o, 0).norm();
                    let half =
                        uncertainty::reliability::Z95 * u.hypot(um) / std::f64::consts::SQRT_2;
                    if (m - p).abs() <= half {
                        inside += 1;
                    }
                }
            }
            upper.sort_by(|a, b| a.total_cmp(b));
            median.push(upper.get(upper.len() / 2).copied());
            within.push(r.op.map(|_| inside as f64 / nl.max(1) as f64));
            interval.push(row);
        }
        out.push(PredictionBands {
            of: of.to_string(),
            dofs: pred.outputs.iter().map(|d| d.to_string()).collect(),
            interval_95_db: interval,
            median_upper_db: median,
            measured_within: within,
        });
    }
    out
}

/// Where the interface has singular values below the input noise, in words.
fn noise_statement(freqs: &[f64], noise: &[uncertainty::interface_noise::LineNoise]) -> String {
    let lines: Vec<usize> = (0..noise.len())
        .filter(|&k| noise[k].below_noise > 0)
        .collect();
    let (Some(&a), Some(&b)) = (lines.first(), lines.last()) else {
        let worst = noise.iter().map(|n| n.threshold).fold(0.0, f64::max);
        return format!(
            "interface: no singular value lies below the input noise (the noise-referenced truncation threshold is at most {worst:.2e}): a truncated SVD would only remove dynamics the data resolve"
        );
    };
    let mut t: Vec<f64> = lines.iter().map(|&k| noise[k].threshold).collect();
    t.sort_by(|x, y| x.total_cmp(y));
    format!(
        "interface: singular values below the input noise at {} of {} lines, from {} Hz to {} Hz; a truncated SVD at the threshold from the noise (median {:.2e} on those lines) removes only them",
        lines.len(),
        noise.len(),
        freqs[a],
        freqs[b],
        t[t.len() / 2]
    )
}

/// The 95 % interval of each level row of a response (or path total).
fn level_intervals(cx: &Ctx, out: &mut StepOutput, u: &FrfUncertainty) -> Result<()> {
    let rows = out.report.levels.iter().flatten().count();
    // per draw and row: the lines' levels and their 1/3-octave bands
    cx.check_work(
        "the level intervals (a Monte Carlo over the lines)",
        rows as f64 * uncertainty::level::LEVEL_DRAWS as f64 * out.set.n_lines() as f64 * 100.0,
    )?;
    let w = weighting_for(&out.set);
    for (i, row) in out.report.levels.iter_mut().flatten().enumerate() {
        if row.overall_db.is_some() {
            let (lo, hi) = uncertainty::level_interval(&out.set, u, i, w)?;
            row.overall_interval_95_db = Some([lo, hi]);
        }
    }
    Ok(())
}

/// Each path's 95 % level interval and the chance that it swaps ranks with
/// the next path, at every target of a path analysis's overall ranking;
/// returns each path's first-order uncertainty by its name.
fn path_spreads(
    cx: &Ctx,
    p: &super::ops::Paths,
    (u_frf, u_exc): (Option<&FrfUncertainty>, Option<&FrfUncertainty>),
    out: &mut StepOutput,
) -> Result<Vec<(String, FrfUncertainty)>> {
    let h = cx.get("frf", &p.frf)?;
    let f = cx.get("excitation", &p.excitation)?;
    let c = crate::predict::paths::path_contributions(h, f, &p.path_groups()?)?;
    // the paths' own sets, in the contributions' order (the step wrote them)
    let sets: Vec<&FrfSet> = c
        .paths
        .iter()
        .filter_map(|n| out.extras.iter().find(|(e, _)| e == n).map(|(_, s)| s))
        .collect();
    if sets.len() != c.paths.len() {
        return Err(Error::numeric(
            "the path analysis's contributions were not all written; cannot rank their spread",
        ));
    }
    let Some(ranking) = out.report.ranking.as_mut() else {
        return Ok(Vec::new());
    };
    cx.check_work(
        "the paths' level intervals (a Monte Carlo over the lines of every path)",
        c.targets.len() as f64
            * c.paths.len() as f64
            * (uncertainty::level::LEVEL_DRAWS as f64)
            * (c.freqs.len() as f64 * 100.0 + c.paths.len() as f64),
    )?;
    let rows: Vec<Vec<usize>> = c
        .path_inputs
        .iter()
        .map(|dofs| dofs.iter().filter_map(|d| f.out_place(d)).collect())
        .collect();
    let us = uncertainty::chain::paths_first_order(h, u_frf, f, u_exc, &rows)?;
    let paths: Vec<(&FrfSet, Option<&FrfUncertainty>)> =
        sets.iter().zip(&us).map(|(s, u)| (*s, Some(u))).collect();
    for (t, target) in ranking.targets.iter_mut().enumerate() {
        let sp = uncertainty::level::path_spread(&paths, t, target.weighting)?;
        let at: Vec<Option<usize>> = target
            .overall
            .iter()
            .map(|pl| c.paths.iter().position(|n| *n == pl.path))
            .collect();
        for i in 0..target.overall.len() {
            let Some(a) = at[i] else { continue };
            target.overall[i].interval_95_db = sp.interval_95_db[a];
            if let Some(Some(b)) = at.get(i + 1) {
                target.overall[i].swap_chance_with_next = Some(1.0 - sp.louder[a][*b]);
            }
        }
    }
    Ok(c.paths.into_iter().zip(us).collect())
}

/// Whether a coupling or decoupling regularises its inversion.
fn regularised(op: &Op) -> bool {
    match op {
        Op::Couple(c) => c.tsvd.is_some() || c.tikhonov.is_some(),
        Op::Decouple(d) => d.tsvd.is_some() || d.tikhonov.is_some(),
        _ => false,
    }
}

const NOT_THROUGH_REGULARISED: &str = "is not propagated to first order through a regularised coupling (truncated SVD or Tikhonov; the first-order propagation linearizes the plain solve): the result carries none; mortise run --monte-carlo draws it";

fn quoted(names: &[&str]) -> String {
    let q: Vec<String> = names.iter().map(|n| format!("'{n}'")).collect();
    q.join(", ")
}

/// The interface condition numbers of a coupling step's report (NaN where
/// not finite).
fn condition(out: &StepOutput) -> Vec<f64> {
    out.report
        .interface
        .as_ref()
        .map(|i| i.condition.iter().map(|c| c.unwrap_or(f64::NAN)).collect())
        .unwrap_or_default()
}

fn assess_std(set: &FrfSet, u: &FrfUncertainty, opts: &ReliabilityOptions) -> Reliability {
    uncertainty::assess(
        set,
        &Evidence {
            std: Some(&u.std),
            ..Evidence::default()
        },
        opts,
    )
}
