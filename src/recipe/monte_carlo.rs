//! A Monte Carlo of a whole recipe: every component with an `"uncertainty"`
//! key drawn N times (seeded, [`crate::uncertainty::draws`]), the baseline
//! steps run on each draw, and the spread of every level the report gives
//! (responses and path totals). It takes the nonlinearity of every step and
//! the correlation of a component used twice into account, which the
//! step-by-step first-order propagation does not; it is the cross-check of
//! that propagation's level intervals.
//!
//! Draw `d` of value `v` of the `c`-th component with an uncertainty (in the
//! components' name order) is the normal pair d·T + o_c + v (T the values of
//! all those components, o_c those before `c`), times u/√2.

use super::execute::{execute_on, execute_plain, load_components_with};
use super::tolerance::draw_variant;
use super::uncertainty::component_uncertainties;
use super::{FileSource, Recipe};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::limits::Limits;
use crate::uncertainty::{draws, FrfUncertainty, McOptions};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The spread of one level over the draws.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LevelSpread {
    pub step: String,
    /// The step's operation (respond or paths).
    pub op: String,
    pub dof: String,
    /// "dB(A)" for A-weighted sound pressure, else "dB".
    pub unit: String,
    /// The level of the nominal run (dB, in the report's weighting).
    pub nominal_db: f64,
    /// The 2.5 % and 97.5 % quantiles over the draws.
    pub interval_95_db: [f64; 2],
    pub mean_db: f64,
    pub std_db: f64,
}

/// What [`monte_carlo_levels`] found.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RecipeMonteCarlo {
    pub draws: usize,
    pub seed: u64,
    pub method: String,
    pub levels: Vec<LevelSpread>,
}

/// (step, op, dof, unit) and the overall level of every level row.
pub(crate) type Row = ((String, String, String, String), Option<f64>);

pub(crate) fn level_values(steps: &[super::report::StepReport]) -> Vec<Row> {
    steps
        .iter()
        .flat_map(|s| {
            s.levels.iter().flatten().map(move |r| {
                (
                    (
                        s.id.clone(),
                        s.op.clone(),
                        r.dof.clone(),
                        super::report::db_unit(r.weighting).to_string(),
                    ),
                    r.overall_db,
                )
            })
        })
        .collect()
}

/// What both Monte Carlo runs start from: the components, their stated
/// uncertainties, the nominal levels and the count of drawn values.
struct Prepared {
    comps: BTreeMap<String, FrfSet>,
    unc: BTreeMap<String, FrfUncertainty>,
    nominal: Vec<Row>,
    total: u64,
}

/// Check the draws, load the components and their uncertainties (refused
/// when none has one: nothing to draw), run the nominal recipe.
fn prepare(
    recipe: &Recipe,
    files: &dyn FileSource,
    limits: &Limits,
    mc: McOptions,
) -> Result<Prepared> {
    if mc.draws < 2 {
        return Err(Error::usage(format!(
            "a Monte Carlo of the recipe needs at least 2 draws; {} asked",
            mc.draws
        )));
    }
    super::check_names(recipe)?;
    let comps = load_components_with(recipe, files, limits)?;
    let (unc, _) = component_uncertainties(recipe, &comps)?;
    if unc.is_empty() && recipe.tolerances.is_empty() {
        return Err(Error::recipe(
            "no component has an 'uncertainty' key and the recipe has no 'tolerances': there is nothing to draw",
        ));
    }
    let nominal = level_values(&execute_plain(recipe, &comps, &unc, limits, files)?);
    let total: u64 = unc
        .keys()
        .filter_map(|k| comps.get(k))
        .map(|s| s.data.len() as u64)
        .sum();
    Ok(Prepared {
        comps,
        unc,
        nominal,
        total,
    })
}

/// Draw `d` of the uncertain components into `drawn` (a copy of `comps`):
/// value `v` of the `c`-th component gets the normal pair d·T + o_c + v.
fn draw_into(
    drawn: &mut BTreeMap<String, FrfSet>,
    comps: &BTreeMap<String, FrfSet>,
    unc: &BTreeMap<String, FrfUncertainty>,
    seed: u64,
    d: usize,
    total: u64,
) {
    let mut base = (d as u64).wrapping_mul(total);
    for (name, u) in unc {
        let (Some(src), Some(dst)) = (comps.get(name), drawn.get_mut(name)) else {
            continue;
        };
        for (v, ((x, y), s)) in dst.data.iter_mut().zip(&src.data).zip(&u.std).enumerate() {
            *x = if s.is_finite() && *s > 0.0 {
                *y + draws::circular(seed, base + v as u64, *s)
            } else {
                *y
            };
        }
        base += src.data.len() as u64;
    }
}

/// Draw `d`: the uncertain components drawn into `drawn` and the
/// tolerances' factors as a variant, and the steps run on them.
#[allow(clippy::too_many_arguments)]
fn run_draw(
    recipe: &Recipe,
    (comps, unc, total): (
        &BTreeMap<String, FrfSet>,
        &BTreeMap<String, FrfUncertainty>,
        u64,
    ),
    drawn: &mut BTreeMap<String, FrfSet>,
    seed: u64,
    d: usize,
    limits: &Limits,
    files: &dyn FileSource,
) -> Result<Vec<super::report::StepReport>> {
    draw_into(drawn, comps, unc, seed, d, total);
    let within = |e: Error| e.within(format!("Monte Carlo draw {}", d + 1));
    let v = draw_variant(recipe, seed, d).map_err(within)?;
    execute_on(recipe, drawn, unc, v.as_ref(), limits, files).map_err(within)
}

/// The levels of draws `range` of an `draws`-draw Monte Carlo (seed
/// `seed`) as a sweep over the draw index: each row one draw's every
/// response and path-total level, the value its index. Each draw depends on
/// (seed, index) only, so a slice computed alone (a shard) holds exactly
/// the rows of the whole run; computed on `threads` threads.
pub fn monte_carlo_draws(
    recipe: &Recipe,
    files: &dyn FileSource,
    limits: &Limits,
    mc: McOptions,
    range: Option<std::ops::Range<usize>>,
    threads: usize,
) -> Result<super::sweep::SweepReport> {
    let Prepared {
        comps,
        unc,
        nominal,
        total,
    } = prepare(recipe, files, limits, mc)?;
    let range = range.unwrap_or(0..mc.draws);
    let idx: Vec<usize> = range.clone().collect();
    let rows = super::sweep::on_threads(&idx, threads, |&d| {
        let mut drawn = comps.clone();
        let got = run_draw(
            recipe,
            (&comps, &unc, total),
            &mut drawn,
            mc.seed,
            d,
            limits,
            files,
        )?;
        Ok(super::sweep::SweepRow {
            index: d,
            value: d.to_string(),
            levels_db: level_values(&got).into_iter().map(|(_, l)| l).collect(),
            map_db: Vec::new(),
        })
    })?;
    Ok(super::sweep::SweepReport {
        name: "monte-carlo".into(),
        parameter: format!(
            "draw of seed {} (Monte Carlo of the stated uncertainty)",
            mc.seed
        ),
        total: mc.draws,
        first: range.start,
        end: range.end,
        columns: nominal
            .into_iter()
            .map(|((step, op, dof, unit), _)| super::sweep::SweepColumn {
                step,
                op,
                dof,
                unit,
            })
            .collect(),
        rows,
        orders: Vec::new(),
        notes: Vec::new(),
    })
}

/// Run the recipe's baseline on `mc.draws` draws of its uncertain
/// components and gather the spread of every level.
pub fn monte_carlo_levels(
    recipe: &Recipe,
    files: &dyn FileSource,
    limits: &Limits,
    mc: McOptions,
) -> Result<RecipeMonteCarlo> {
    let Prepared {
        comps,
        unc,
        nominal,
        total,
    } = prepare(recipe, files, limits, mc)?;
    let mut per: Vec<Vec<f64>> = vec![Vec::with_capacity(mc.draws); nominal.len()];
    let mut drawn = comps.clone();
    for d in 0..mc.draws {
        let got = level_values(&run_draw(
            recipe,
            (&comps, &unc, total),
            &mut drawn,
            mc.seed,
            d,
            limits,
            files,
        )?);
        for (p, (_, l)) in per.iter_mut().zip(&got) {
            if let Some(l) = l {
                p.push(*l);
            }
        }
    }
    let mut levels = Vec::new();
    for (((step, op, dof, unit), nom), mut v) in nominal.into_iter().zip(per) {
        let Some(nominal_db) = nom else { continue };
        if v.len() < 2 {
            continue;
        }
        v.sort_by(|a, b| a.total_cmp(b));
        let q = |p: f64| v[((v.len() - 1) as f64 * p).round() as usize];
        let n = v.len() as f64;
        let mean = v.iter().sum::<f64>() / n;
        let var = v.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / (n - 1.0);
        levels.push(LevelSpread {
            step,
            op,
            dof,
            unit,
            nominal_db,
            interval_95_db: [q(0.025), q(0.975)],
            mean_db: mean,
            std_db: var.sqrt(),
        });
    }
    let names: Vec<String> = unc.keys().map(|k| format!("'{k}'")).collect();
    let mut drawn_what = Vec::new();
    if !names.is_empty() {
        drawn_what.push(format!(
            "{} with their stated uncertainty, lines and values independent",
            names.join(", ")
        ));
    }
    for t in &recipe.tolerances {
        drawn_what.push(format!(
            "the tolerance of {} ({} {} %)",
            t.what(),
            t.distribution.as_deref().unwrap_or("normal"),
            100.0 * t.relative
        ));
    }
    Ok(RecipeMonteCarlo {
        draws: mc.draws,
        seed: mc.seed,
        method: format!(
            "Monte Carlo of the whole recipe: {} draws (seed {}) of {}",
            mc.draws,
            mc.seed,
            drawn_what.join("; ")
        ),
        levels,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::recipe::{merge_sweep_csv, parse, shard_slice, sweep_csv, MapSource};

    #[test]
    fn monte_carlo_shards_hold_the_rows_of_the_whole_run() {
        let mut src = MapSource::default();
        let mut r = serde_json::Value::Null;
        for (n, b) in crate::demo_files::files().unwrap() {
            if n.ends_with(".recipe.json") {
                r = serde_json::from_slice(&b).unwrap();
            }
            src.0.insert(n, b);
        }
        r["components"]["casing"]["uncertainty"] = serde_json::json!({"relative": 0.05});
        let rec = parse(&r.to_string()).unwrap();
        let lim = Limits::default();
        let mc = McOptions { draws: 6, seed: 7 };
        let whole = monte_carlo_draws(&rec, &src, &lim, mc, None, 2).unwrap();
        let shards: Vec<(String, String)> = (1..=3)
            .map(|k| {
                let part =
                    monte_carlo_draws(&rec, &src, &lim, mc, Some(shard_slice(6, k, 3).unwrap()), 1)
                        .unwrap();
                (format!("s{k}"), sweep_csv(&part, "h"))
            })
            .collect();
        assert_eq!(merge_sweep_csv(&shards).unwrap(), sweep_csv(&whole, "h"));
        // the rows are the draws `mortise run --monte-carlo` summarizes: the
        // sample mean and standard deviation (n − 1) of the bed's level agree
        // (textbook sample statistics; common practice)
        let lv = monte_carlo_levels(&rec, &src, &lim, mc).unwrap();
        let bed = lv.levels.iter().find(|l| l.op == "paths").unwrap();
        let j = whole.columns.iter().position(|c| c.op == "paths").unwrap();
        let x: Vec<f64> = whole.rows.iter().map(|r| r.levels_db[j].unwrap()).collect();
        let mean = x.iter().sum::<f64>() / 6.0;
        let sd = (x.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / 5.0).sqrt();
        assert!((mean - bed.mean_db).abs() < 1e-12, "{mean} {}", bed.mean_db);
        assert!((sd - bed.std_db).abs() < 1e-12);
        assert!(sd > 0.0);
    }
}
