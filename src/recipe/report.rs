//! The run report: typed, versioned, serialized to `report.json`. The CLI,
//! the headline and the page read its fields.
//!
//! Levels are weighted only where the weighting is defined: A for sound
//! pressure (IEC 61672-1); every other quantity in plain dB (Z) with its
//! ISO 1683 reference.

use crate::audit::AuditReport;
use crate::error::{quote, Error, Result};
use crate::frf::{FrfSet, Provenance};
use crate::levels::{self, Weighting};
use crate::predict::blocked::BlockedForces;
use crate::predict::paths::Ranking;
use crate::summary::{self, SetSummary};
use crate::units::Quantity;
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// The `format` of every report.
pub const REPORT_FORMAT: &str = "mortise-report";
/// The report's schema version (2: typed report; weighting only where defined,
/// per-path outputs, interface and indicator conditioning kept apart).
pub const REPORT_VERSION: u32 = 2;

/// A finite number, or nothing (JSON has no NaN or infinity).
pub(crate) fn fin(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

/// Everything a run tells besides its FRF sets.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunReport {
    pub format: String,
    pub version: u32,
    pub title: String,
    pub mortise_version: String,
    /// How the recipe was read: joint types read from their parameters, and
    /// any other interpretation the user should know of.
    pub notes: Vec<String>,
    /// What each component holds and where it came from.
    pub components: BTreeMap<String, ComponentReport>,
    pub steps: Vec<StepReport>,
    pub variants: Vec<VariantReport>,
    /// Every set written, in order: requested outputs, each followed by its
    /// extra results (`ID/NAME`), then the variants' (`NAME [variant]`).
    pub outputs: Vec<String>,
    /// The fitness audit of every supplier FRF set (common-practice limits).
    pub audit: BTreeMap<String, AuditReport>,
    /// Short lines for the terminal and the page's headline.
    pub headline: Vec<String>,
    /// Integer node numbers given to text labels in UFF exports, per output.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub uff_node_numbers: BTreeMap<String, serde_json::Value>,
    /// A Monte Carlo of the whole recipe over its components' stated
    /// uncertainty, when asked for (`mortise run --monte-carlo N`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub monte_carlo: Option<super::monte_carlo::RecipeMonteCarlo>,
    /// The recipe's sweep, when it has one: levels at each point.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sweep: Option<super::sweep::SweepReport>,
    pub caution: String,
}

/// A component: the one set summary (as `inspect` and the page's cards show
/// it) and its provenance.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ComponentReport {
    pub summary: SetSummary,
    pub provenance: Vec<Provenance>,
}

impl ComponentReport {
    pub fn new(s: &FrfSet) -> ComponentReport {
        ComponentReport {
            summary: summary::set_summary(s),
            provenance: s.provenance.clone(),
        }
    }
}

/// What one step did.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StepReport {
    pub id: String,
    pub op: String,
    /// Each warning once.
    pub warnings: Vec<String>,
    /// How the step was read (e.g. a joint type inferred from its parameters).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub notes: Vec<String>,
    /// Coupling and decoupling: the interface matrix B Y Bᵀ + Γ.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub interface: Option<InterfaceReport>,
    /// Blocked forces: the indicator matrix and the on-board validation.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub blocked: Option<BlockedReport>,
    /// Levels at each target (responses and path analyses).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub levels: Option<Vec<LevelRow>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ranking: Option<Ranking>,
    /// Extra results written beside the step's own (`ID/NAME`).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub extras: Vec<String>,
    /// Virtual points: each point's consistencies and their flag.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub virtual_points: Option<Vec<crate::vpt::VirtualPointReport>>,
    /// Modal identification: the model, the stabilization table, the fit's quality.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub identification: Option<Box<crate::identify::Identification>>,
    /// Entries of the step's set that were not measured but synthesized
    /// (`regenerate` with `fill_missing`).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub filled: Vec<FilledEntry>,
    /// The result's propagated uncertainty and the reliability of its lines
    /// (when its inputs carry an uncertainty).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub uncertainty: Option<UncertaintyReport>,
}

/// A step result's uncertainty: how it was propagated, and which lines are
/// unreliable (see [`crate::uncertainty::reliability`]).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct UncertaintyReport {
    pub method: String,
    /// Fraction of the result's present values flagged unreliable.
    pub fraction_flagged: f64,
    /// The unreliable ranges in words, one statement per entry.
    pub statements: Vec<String>,
    /// The unreliable ranges, entry by entry.
    pub bands: Vec<crate::uncertainty::reliability::Band>,
    /// The thresholds used.
    pub thresholds: crate::uncertainty::ReliabilityOptions,
}

/// An entry of a step's set synthesized where nothing was measured.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FilledEntry {
    /// Output and input index in the set (0-based).
    pub output: usize,
    pub input: usize,
    /// "OUT/IN".
    pub label: String,
}

impl StepReport {
    pub fn new(id: &str, op: &str, warnings: Vec<String>) -> StepReport {
        let mut w = warnings;
        dedup(&mut w);
        StepReport {
            id: id.to_string(),
            op: op.to_string(),
            warnings: w,
            notes: Vec::new(),
            interface: None,
            blocked: None,
            levels: None,
            ranking: None,
            extras: Vec::new(),
            virtual_points: None,
            identification: None,
            filled: Vec::new(),
            uncertainty: None,
        }
    }
}

/// The identification of step `step` in a run report's JSON (as the page
/// keeps the report), for drawing its stabilization chart. Refused, naming
/// the step: a report without steps, a step it does not hold, a step that
/// is not an identify-modes step (the message lists those it holds).
pub fn step_identification(
    report: &serde_json::Value,
    step: &str,
) -> Result<crate::identify::Identification> {
    let steps = report
        .get("steps")
        .and_then(|s| s.as_array())
        .ok_or_else(|| {
            Error::parse("the run report has no list of steps; give the report of a run")
                .field("steps")
        })?;
    let id_of = |s: &serde_json::Value| s.get("id").and_then(|i| i.as_str()).map(str::to_string);
    let identify: Vec<String> = steps
        .iter()
        .filter(|s| s.get("identification").is_some())
        .filter_map(id_of)
        .collect();
    let listed = if identify.is_empty() {
        "the report has none".to_string()
    } else {
        format!("the report's are {}", identify.join(", "))
    };
    let Some(s) = steps.iter().find(|s| id_of(s).as_deref() == Some(step)) else {
        return Err(Error::recipe(format!(
            "the run report has no step '{}'; a stabilization chart is drawn for an identify-modes step ({listed})",
            quote(step)
        ))
        .field("step"));
    };
    let Some(v) = s.get("identification") else {
        let op = s.get("op").and_then(|o| o.as_str()).unwrap_or("?");
        return Err(Error::recipe(format!(
            "step '{}' is a '{}' step; a stabilization chart is drawn for an identify-modes step ({listed})",
            quote(step),
            quote(op)
        ))
        .field("step"));
    };
    serde_json::from_value(v.clone()).map_err(|e| {
        Error::parse(format!(
            "step '{}': its identification in the report cannot be read: {}",
            quote(step),
            quote(&e.to_string())
        ))
        .field("identification")
    })
}

/// Keep the first of each equal text, in order.
pub(crate) fn dedup(w: &mut Vec<String>) {
    let mut seen = std::collections::BTreeSet::new();
    w.retain(|x| seen.insert(x.clone()));
}

/// Conditioning of an interface inversion.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct InterfaceReport {
    /// 2-norm condition number per line (null where not finite).
    pub condition: Vec<Option<f64>>,
    pub worst_condition: Option<f64>,
    pub worst_condition_hz: Option<f64>,
    /// Singular values dropped by the regularisation, per line.
    pub truncated: Vec<usize>,
    /// The regularisation's value per line, relative to the line's largest
    /// singular value (the truncation threshold, or Tikhonov's λ), when it
    /// was set per line (from the noise, or Tikhonov).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub regularisation: Option<LineRegularisation>,
    /// Tikhonov: singular values below λ per line (damped).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub damped: Vec<usize>,
}

/// A per-line regularisation as the report states it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LineRegularisation {
    /// "tsvd" or "tikhonov".
    pub method: String,
    /// Relative to the line's largest singular value.
    pub relative: Vec<Option<f64>>,
}

impl InterfaceReport {
    pub fn new(freqs: &[f64], condition: &[f64], truncated: &[usize]) -> InterfaceReport {
        let (worst, at) = worst(freqs, condition);
        InterfaceReport {
            condition: condition.iter().map(|&c| fin(c)).collect(),
            worst_condition: worst,
            worst_condition_hz: at,
            truncated: truncated.to_vec(),
            regularisation: None,
            damped: Vec::new(),
        }
    }

    /// With the per-line regularisation used and the lines it damped.
    pub fn with_regularisation(
        mut self,
        per_line: Option<&crate::assemble::PerLine>,
        damped: &[usize],
    ) -> InterfaceReport {
        use crate::assemble::PerLine;
        self.regularisation = per_line.map(|p| LineRegularisation {
            method: match p {
                PerLine::Tsvd(_) => "tsvd",
                PerLine::Tikhonov(_) => "tikhonov",
            }
            .to_string(),
            relative: p.values().iter().map(|&v| fin(v)).collect(),
        });
        self.damped = damped.to_vec();
        self
    }
}

fn worst(freqs: &[f64], v: &[f64]) -> (Option<f64>, Option<f64>) {
    let mut best: Option<(f64, f64)> = None;
    for (k, &c) in v.iter().enumerate() {
        if c.is_finite() && best.map_or(true, |(b, _)| c > b) {
            best = Some((c, freqs.get(k).copied().unwrap_or(f64::NAN)));
        }
    }
    (best.map(|b| b.0), best.and_then(|b| fin(b.1)))
}

/// Blocked forces: the indicator matrix's conditioning and the validation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BlockedReport {
    /// "bench" or "in-situ": where the FRFs and the responses were measured
    /// (reports written before the in-situ method read as "bench").
    #[serde(default = "bench_method")]
    pub method: String,
    /// The relative truncation threshold (0 under Tikhonov).
    pub rel_threshold: f64,
    /// Tikhonov's λ per line, when used.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tikhonov_lambda: Option<Vec<Option<f64>>>,
    pub indicators: Vec<String>,
    /// 2-norm condition number of the indicator matrix per line.
    pub indicator_condition: Vec<Option<f64>>,
    pub worst_indicator_condition: Option<f64>,
    pub worst_indicator_condition_hz: Option<f64>,
    /// Singular values kept per line.
    pub kept: Vec<usize>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub validation: Option<ValidationReport>,
    /// In situ: the responses predicted at target DOFs of the assembly.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub target: Option<TargetReport>,
    /// The 95 % bands of the validation and target predictions, when the
    /// inputs carry an uncertainty.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub prediction_bands: Vec<PredictionBands>,
}

fn bench_method() -> String {
    "bench".to_string()
}

/// The predicted responses at target DOFs (in situ).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TargetReport {
    pub dofs: Vec<String>,
    /// Per target: whether the operational responses hold it.
    pub measured: Vec<bool>,
    /// Level error 20·log10(|predicted| / |measured|), dB, per target per
    /// line (null where not measured).
    pub error_db: Vec<Vec<Option<f64>>>,
    /// The largest |level error| over the measured targets' lines, dB.
    pub worst_error_db: Option<f64>,
}

/// The 95 % bands of the responses a blocked-force step predicts, from the
/// first-order uncertainty.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PredictionBands {
    /// "validation" or "target".
    pub of: String,
    pub dofs: Vec<String>,
    /// The predicted level's 95 % interval relative to the prediction, dB
    /// ([low, high]), per DOF per line; null where not finite.
    pub interval_95_db: Vec<Vec<Option<[f64; 2]>>>,
    /// The median over the lines of the interval's upper end, dB, per DOF.
    pub median_upper_db: Vec<Option<f64>>,
    /// Per DOF, where measured: the fraction of lines whose measured level
    /// lies in the prediction's 95 % interval widened by the measurement's
    /// own uncertainty (in quadrature); null where not measured.
    pub measured_within: Vec<Option<f64>>,
}

/// The on-board validation at indicators left out of the inversion.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ValidationReport {
    pub dofs: Vec<String>,
    pub bands: Vec<String>,
    /// Band level error, predicted relative to measured, dB, per DOF per band.
    pub band_error_db: Vec<Vec<Option<f64>>>,
    /// The largest |band error|, dB.
    pub worst_band_error_db: Option<f64>,
}

impl BlockedReport {
    pub fn new(b: &BlockedForces) -> BlockedReport {
        let (w, at) = worst(&b.forces.freqs, &b.condition);
        BlockedReport {
            method: b.method.name().to_string(),
            rel_threshold: b.rel_threshold,
            tikhonov_lambda: b
                .tikhonov
                .as_ref()
                .map(|l| l.iter().map(|&x| fin(x)).collect()),
            indicators: b.indicators.iter().map(|d| d.to_string()).collect(),
            indicator_condition: b.condition.iter().map(|&c| fin(c)).collect(),
            worst_indicator_condition: w,
            worst_indicator_condition_hz: at,
            kept: b.kept.clone(),
            validation: b.validation.as_ref().map(|v| ValidationReport {
                dofs: v.dofs.iter().map(|d| d.to_string()).collect(),
                bands: v.bands.iter().map(|b| b.label.clone()).collect(),
                band_error_db: v
                    .band_error_db
                    .iter()
                    .map(|r| r.iter().map(|&x| fin(x)).collect())
                    .collect(),
                worst_band_error_db: v
                    .band_error_db
                    .iter()
                    .flatten()
                    .filter(|x| x.is_finite())
                    .map(|x| x.abs())
                    .reduce(f64::max),
            }),
            target: b.target.as_ref().map(|t| TargetReport {
                dofs: t.dofs.iter().map(|d| d.to_string()).collect(),
                measured: t.measured.clone(),
                error_db: t
                    .error_db
                    .iter()
                    .map(|r| r.iter().map(|&x| fin(x)).collect())
                    .collect(),
                worst_error_db: t
                    .error_db
                    .iter()
                    .flatten()
                    .filter(|x| x.is_finite())
                    .map(|x| x.abs())
                    .reduce(f64::max),
            }),
            prediction_bands: Vec::new(),
        }
    }
}

/// The weighting a set's levels are shown in: A for sound pressure
/// (IEC 61672-1 defines it for sound), none (Z) for everything else.
pub fn weighting_for(s: &FrfSet) -> Weighting {
    if s.out_qty == Quantity::Pressure {
        Weighting::A
    } else {
        Weighting::Z
    }
}

/// The unit suffix of a level in a weighting: "dB(A)" or "dB".
pub fn db_unit(w: Weighting) -> &'static str {
    match w {
        Weighting::A => "dB(A)",
        Weighting::C => "dB(C)",
        Weighting::Z => "dB",
    }
}

/// A level at one frequency line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LineLevel {
    pub hz: f64,
    pub db: f64,
}

/// Levels of one target of a spectrum.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LevelRow {
    pub dof: String,
    /// The reference, e.g. "dB re 20 µPa" (ISO 1683).
    pub reference: String,
    /// "A" for sound pressure, "Z" (none) otherwise.
    pub weighting: Weighting,
    /// Overall level in `weighting`.
    pub overall_db: Option<f64>,
    /// Overall level without weighting.
    pub overall_unweighted_db: Option<f64>,
    /// 1/3-octave bands (IEC 61260-1) and their levels in `weighting`.
    pub bands: Vec<String>,
    pub band_db: Vec<Option<f64>>,
    /// The three strongest lines, in `weighting`.
    pub top_lines: Vec<LineLevel>,
    /// The 95 % interval of `overall_db` from the propagated uncertainty
    /// (2.5 % and 97.5 % quantiles), when the inputs carry one.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub overall_interval_95_db: Option<[f64; 2]>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
}

/// Levels of every row of a spectrum (the one level function of the report).
pub fn level_rows(y: &FrfSet) -> Vec<LevelRow> {
    let w = weighting_for(y);
    (0..y.n_out())
        .map(|i| match levels::spectrum_levels(y, i, 3, w) {
            Ok(a) => {
                let mut lines: Vec<LineLevel> = a
                    .freqs
                    .iter()
                    .zip(&a.line_db)
                    .filter(|(_, l)| l.is_finite())
                    .map(|(&f, &l)| LineLevel {
                        hz: f,
                        db: l + levels::weighting_db(w, f),
                    })
                    .collect();
                lines.sort_by(|x, y| y.db.total_cmp(&x.db));
                lines.truncate(3);
                LevelRow {
                    dof: a.dof,
                    reference: a.unit,
                    weighting: w,
                    overall_db: fin(a.overall_db),
                    overall_unweighted_db: fin(levels::sum_levels_db(&a.line_db)),
                    bands: a.bands.iter().map(|b| b.label.clone()).collect(),
                    band_db: a.band_db.iter().map(|&v| fin(v)).collect(),
                    top_lines: lines,
                    overall_interval_95_db: None,
                    error: None,
                }
            }
            Err(e) => LevelRow {
                dof: y.outputs[i].to_string(),
                reference: String::new(),
                weighting: w,
                overall_db: None,
                overall_unweighted_db: None,
                bands: Vec::new(),
                band_db: Vec::new(),
                top_lines: Vec::new(),
                overall_interval_95_db: None,
                error: Some(e.to_string()),
            },
        })
        .collect()
}

/// A what-if variant beside the baseline.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct VariantReport {
    pub name: String,
    pub steps: Vec<StepReport>,
    /// Energetic level change of each requested output, variant relative to
    /// baseline, dB.
    pub level_change_db: BTreeMap<String, Option<f64>>,
    /// Per-band changes at each target of each spectrum output.
    pub band_change: BTreeMap<String, BandChange>,
}

/// Level change per 1/3-octave band at each target (variant − baseline).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandChange {
    pub weighting: Weighting,
    pub targets: Vec<String>,
    pub bands: Vec<String>,
    pub per_band_db: Vec<Vec<Option<f64>>>,
    pub overall_db: Vec<Option<f64>>,
}
