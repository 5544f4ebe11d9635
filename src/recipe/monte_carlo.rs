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

use super::execute::{execute_plain, load_components_with};
use super::uncertainty::component_uncertainties;
use super::{FileSource, Recipe};
use crate::error::{Error, Result};
use crate::limits::Limits;
use crate::uncertainty::{draws, McOptions};
use serde::{Deserialize, Serialize};

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

/// Run the recipe's baseline on `mc.draws` draws of its uncertain
/// components and gather the spread of every level.
pub fn monte_carlo_levels(
    recipe: &Recipe,
    files: &dyn FileSource,
    limits: &Limits,
    mc: McOptions,
) -> Result<RecipeMonteCarlo> {
    if mc.draws < 2 {
        return Err(Error::usage(format!(
            "a Monte Carlo of the recipe needs at least 2 draws; {} asked",
            mc.draws
        )));
    }
    super::check_names(recipe)?;
    let comps = load_components_with(recipe, files, limits)?;
    let (unc, _) = component_uncertainties(recipe, &comps)?;
    if unc.is_empty() {
        return Err(Error::recipe(
            "no component has an 'uncertainty' key: there is nothing to draw",
        ));
    }
    let nominal = level_values(&execute_plain(recipe, &comps, limits, files)?);
    let total: u64 = unc
        .keys()
        .filter_map(|k| comps.get(k))
        .map(|s| s.data.len() as u64)
        .sum();
    let mut per: Vec<Vec<f64>> = vec![Vec::with_capacity(mc.draws); nominal.len()];
    let mut drawn = comps.clone();
    for d in 0..mc.draws {
        let mut base = (d as u64).wrapping_mul(total);
        for (name, u) in &unc {
            let (Some(src), Some(dst)) = (comps.get(name), drawn.get_mut(name)) else {
                continue;
            };
            for (v, ((x, y), s)) in dst.data.iter_mut().zip(&src.data).zip(&u.std).enumerate() {
                *x = if s.is_finite() && *s > 0.0 {
                    *y + draws::circular(mc.seed, base + v as u64, *s)
                } else {
                    *y
                };
            }
            base += src.data.len() as u64;
        }
        let got = level_values(
            &execute_plain(recipe, &drawn, limits, files)
                .map_err(|e| e.within(format!("Monte Carlo draw {}", d + 1)))?,
        );
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
    Ok(RecipeMonteCarlo {
        draws: mc.draws,
        seed: mc.seed,
        method: format!(
            "Monte Carlo of the whole recipe: {} draws (seed {}) of {} with their stated uncertainty, lines and values independent",
            mc.draws,
            mc.seed,
            names.join(", ")
        ),
        levels,
    })
}
