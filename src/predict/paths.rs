//! Path contributions: the response at each target split into the parts
//! carried by each input DOF or named group of input DOFs (a path), and a
//! ranking of the paths by level, overall and per band.
//!
//! For complex (peak/RMS) excitation the contributions are complex and add
//! to the total exactly; their levels need not add energetically to the
//! total level, because paths interfere. For autopower/PSD excitation the
//! contributions are mean squares and add to the total (uncorrelated
//! sources assumed).

use super::{check_pair, match_inputs, CAUTION, INCOHERENT_ASSUMPTION};
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet, SignalKind};
use crate::levels::{self, Band, Weighting};
use crate::units::Quantity;
use num_complex::Complex64;

/// A named group of input DOFs that counts as one path.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PathGroup {
    pub name: String,
    pub inputs: Vec<Dof>,
}

/// Contributions of each path to each target, per line.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Contributions {
    pub freqs: Vec<f64>,
    pub targets: Vec<Dof>,
    /// Path names (group names, or the DOF label of an ungrouped input).
    pub paths: Vec<String>,
    /// The excitation DOFs of each path.
    pub path_inputs: Vec<Vec<Dof>>,
    pub out_qty: Quantity,
    pub signal: SignalKind,
    /// Contribution of path p to target t at line k, index (k·n_t + t)·n_p + p,
    /// in the signal kind (complex for peak/RMS, mean square in `re` otherwise).
    pub values: Vec<Complex64>,
    /// The total response (same kind), one row per target.
    pub total: FrfSet,
    pub warnings: Vec<String>,
}

impl Contributions {
    pub fn n_paths(&self) -> usize {
        self.paths.len()
    }
    pub fn get(&self, k: usize, t: usize, p: usize) -> Complex64 {
        self.values[(k * self.targets.len() + t) * self.paths.len() + p]
    }
    /// Contribution of path p at target t over all lines.
    pub fn path_column(&self, t: usize, p: usize) -> Vec<Complex64> {
        (0..self.freqs.len()).map(|k| self.get(k, t, p)).collect()
    }
}

/// Split the response of `frf` to `exc` into path contributions. `groups`
/// name paths made of several excitation DOFs; excitation DOFs in no group
/// are paths of their own. A DOF may be in one group only.
pub fn path_contributions(
    frf: &FrfSet,
    exc: &FrfSet,
    groups: &[PathGroup],
) -> Result<Contributions> {
    let kind = check_pair(frf, exc)?;
    let m = match_inputs(frf, exc)?;
    // path of each excitation row
    let mut paths: Vec<String> = Vec::new();
    let mut path_inputs: Vec<Vec<Dof>> = Vec::new();
    let mut row_path = vec![usize::MAX; exc.n_out()];
    for g in groups {
        if g.inputs.is_empty() {
            return Err(Error::recipe(format!(
                "path group '{}' has no DOFs",
                g.name
            )));
        }
        if paths.contains(&g.name) {
            return Err(Error::recipe(format!(
                "path group '{}' is named twice",
                g.name
            )));
        }
        let p = paths.len();
        paths.push(g.name.clone());
        path_inputs.push(Vec::new());
        for d in &g.inputs {
            let r = exc.out_place(d).ok_or_else(|| {
                Error::dof(format!(
                    "path group '{}' names {d}, where the excitation '{}' does not act",
                    g.name, exc.name
                ))
            })?;
            if row_path[r] != usize::MAX {
                return Err(Error::dof(format!(
                    "{d} is in path groups '{}' and '{}'; a DOF belongs to one path",
                    paths[row_path[r]], g.name
                )));
            }
            row_path[r] = p;
            path_inputs[p].push(exc.outputs[r].clone());
        }
    }
    for (r, rp) in row_path.iter_mut().enumerate() {
        if *rp == usize::MAX {
            *rp = paths.len();
            paths.push(exc.outputs[r].to_string());
            path_inputs.push(vec![exc.outputs[r].clone()]);
        }
    }
    let nt = frf.n_out();
    let np = paths.len();
    let mut values = vec![Complex64::new(0.0, 0.0); frf.n_lines() * nt * np];
    for k in 0..frf.n_lines() {
        for t in 0..nt {
            for (r, &(j, sg)) in m.iter().enumerate() {
                let h = frf.get(k, t, j);
                let f = exc.get(k, r, 0);
                let c = if kind.has_phase() {
                    h * f * sg
                } else {
                    Complex64::new(h.norm_sqr() * f.re, 0.0)
                };
                values[(k * nt + t) * np + row_path[r]] += c;
            }
        }
    }
    // the total is the sum of the contributions, so the split is exact
    let mut total = super::new_spectrum(
        &format!("{} response", frf.name),
        frf.freqs.clone(),
        frf.outputs.clone(),
        frf.out_qty,
        kind,
    );
    for k in 0..frf.n_lines() {
        for t in 0..nt {
            let s: Complex64 = values[(k * nt + t) * np..(k * nt + t + 1) * np]
                .iter()
                .sum();
            total.set(k, t, 0, s);
        }
    }
    let mut warnings = exc.warnings.clone();
    if !kind.has_phase() {
        warnings.push(INCOHERENT_ASSUMPTION.to_string());
    }
    warnings.push(CAUTION.to_string());
    total.warnings = warnings.clone();
    Ok(Contributions {
        freqs: frf.freqs.clone(),
        targets: frf.outputs.clone(),
        paths,
        path_inputs,
        out_qty: frf.out_qty,
        signal: kind,
        values,
        total,
        warnings,
    })
}

/// How to rank.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RankOptions {
    /// Band width 1/b for per-band rankings (1 octave, 3 one-third octave); None: overall only.
    pub band_fraction: Option<u32>,
    pub weighting: Weighting,
}

impl Default for RankOptions {
    fn default() -> Self {
        RankOptions {
            band_fraction: Some(3),
            weighting: Weighting::Z,
        }
    }
}

/// One path's level in a ranking.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PathLevel {
    pub path: String,
    /// Level of the path's contribution alone, dB.
    pub level_db: f64,
    /// Share of the energetic sum of all contributions (0..1).
    pub share: f64,
    /// 1 = strongest.
    pub rank: usize,
    /// The level's 95 % interval from the inputs' stated uncertainty
    /// (overall rankings of a recipe whose inputs carry one).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub interval_95_db: Option<[f64; 2]>,
    /// The chance that the next path in the ranking is at least as loud as
    /// this one (from the same draws as the interval).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub swap_chance_with_next: Option<f64>,
}

/// The ranking in one band.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BandRanking {
    pub band: Band,
    /// Level of the total response in the band, dB.
    pub total_db: f64,
    /// Paths, strongest first.
    pub paths: Vec<PathLevel>,
}

/// The ranking at one target.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TargetRanking {
    pub target: String,
    /// Axis label of the levels, e.g. "dB re 20 µPa".
    pub unit: String,
    pub weighting: Weighting,
    /// Overall level of the total response (complex sum of the paths), dB.
    pub total_db: f64,
    /// Energetic sum of the path levels, dB; differs from `total_db` when paths interfere.
    pub sum_of_paths_db: f64,
    /// Paths over all lines, strongest first.
    pub overall: Vec<PathLevel>,
    pub bands: Vec<BandRanking>,
}

/// Rankings at every target, ready for a table or a bar chart.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Ranking {
    pub targets: Vec<TargetRanking>,
    /// True when the contributions are complex and were summed with phase.
    pub coherent: bool,
    pub notes: Vec<String>,
}

fn ranked(names: &[String], ms: &[f64], reference: f64) -> Vec<PathLevel> {
    let sum: f64 = ms.iter().sum();
    let mut v: Vec<PathLevel> = names
        .iter()
        .zip(ms)
        .map(|(n, &m)| PathLevel {
            path: n.clone(),
            level_db: levels::db_mean_square(m, reference),
            share: if sum > 0.0 { m / sum } else { 0.0 },
            rank: 0,
            interval_95_db: None,
            swap_chance_with_next: None,
        })
        .collect();
    v.sort_by(|a, b| b.level_db.total_cmp(&a.level_db));
    for (i, p) in v.iter_mut().enumerate() {
        p.rank = i + 1;
    }
    v
}

/// Rank the paths at every target by level, overall and per band
/// (energetic sums of the lines, optionally weighted).
pub fn rank_paths(c: &Contributions, opts: &RankOptions) -> Result<Ranking> {
    let nl = c.freqs.len();
    let np = c.n_paths();
    let mut targets = Vec::new();
    for (t, dof) in c.targets.iter().enumerate() {
        let reference = levels::reference(c.out_qty, dof.dir.is_rotational()).value;
        let ms_path: Vec<Vec<f64>> = (0..np)
            .map(|p| levels::mean_squares(&c.path_column(t, p), &c.freqs, c.signal))
            .collect::<Result<_>>()?;
        let ms_total = levels::mean_squares(&c.total.column(t, 0), &c.freqs, c.signal)?;
        let overall_ms: Vec<f64> = ms_path
            .iter()
            .map(|m| levels::overall_mean_square(&c.freqs, m, opts.weighting))
            .collect();
        let total_ms = levels::overall_mean_square(&c.freqs, &ms_total, opts.weighting);
        let mut bands = Vec::new();
        if let Some(b) = opts.band_fraction {
            if nl > 0 && c.freqs.iter().any(|&f| f > 0.0) {
                let tb = levels::band_mean_squares(&c.freqs, &ms_total, b, opts.weighting)?;
                let pb: Vec<levels::BandSpectrum> = ms_path
                    .iter()
                    .map(|m| levels::band_mean_squares(&c.freqs, m, b, opts.weighting))
                    .collect::<Result<_>>()?;
                for (bi, band) in tb.bands.iter().enumerate() {
                    if tb.lines[bi] == 0 {
                        continue;
                    }
                    let ms: Vec<f64> = pb.iter().map(|s| s.mean_square[bi]).collect();
                    bands.push(BandRanking {
                        band: band.clone(),
                        total_db: levels::db_mean_square(tb.mean_square[bi], reference),
                        paths: ranked(&c.paths, &ms, reference),
                    });
                }
            }
        }
        targets.push(TargetRanking {
            target: dof.to_string(),
            unit: levels::axis_label(c.out_qty, dof.dir.is_rotational()),
            weighting: opts.weighting,
            total_db: levels::db_mean_square(total_ms, reference),
            sum_of_paths_db: levels::db_mean_square(overall_ms.iter().sum(), reference),
            overall: ranked(&c.paths, &overall_ms, reference),
            bands,
        });
    }
    let coherent = c.signal.has_phase();
    let mut notes = Vec::new();
    if coherent {
        notes.push("paths were summed with their phases: the total level can be below or above the energetic sum of the path levels".to_string());
    } else {
        notes.push(INCOHERENT_ASSUMPTION.to_string());
    }
    if opts.weighting != Weighting::Z {
        notes.push(format!(
            "{}-weighted: each line weighted at its own frequency (IEC 61672-1)",
            opts.weighting.name()
        ));
    }
    notes.push(CAUTION.to_string());
    Ok(Ranking {
        targets,
        coherent,
        notes,
    })
}
