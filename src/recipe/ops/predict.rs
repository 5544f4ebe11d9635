//! Operation: `respond`, `paths`, `blocked-forces`.

use super::{check_tsvd, opt, parse_dofs, req, Ctx, Operand, Operation, StepOutput};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::predict::{self, paths::PathGroup, paths::RankOptions};
use crate::recipe::report::{level_rows, weighting_for, BlockedReport, StepReport};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// y = H·f.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Respond {
    pub frf: String,
    pub excitation: String,
}

/// Contributions of each excitation DOF (or group) to each target.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Paths {
    pub frf: String,
    pub excitation: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub groups: Option<BTreeMap<String, Vec<String>>>,
}

/// Blocked forces on a test bench or in situ, with an on-board validation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BlockedForces {
    pub bench: String,
    pub operational: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub method: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tsvd: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tikhonov: Option<TikhonovSpec>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub validate: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub target: Option<Vec<String>>,
}

/// The `tikhonov` operand: λ as a fraction of the largest singular value
/// per line, or `"noise"`: λ from the FRFs' uncertainty.
pub use super::RelativeOrNoise as TikhonovSpec;

/// The λ rule that `"tikhonov": "noise"` names (for the help and the docs).
pub const TIKHONOV_NOISE_RULE: &str = "per line, λ = (Σ u²)^½ over the standard uncertainties u of the indicator FRFs used (an estimate of ‖δH‖_F, which bounds the spectral norm of the FRF error): singular values well above the FRF noise are kept nearly whole, those below it are damped";

const FRF: &str = "name of the FRFs from the excitation DOFs to the targets";
const EXC: &str =
    "name of the excitation spectrum (forces at the FRFs' input DOFs; peak, RMS, autopower or PSD)";

impl Operation for Respond {
    const SUMMARY: &'static str =
        "operational response y = H·f (coherent for peak/RMS spectra, incoherent sum for autopower/PSD)";
    const OPERANDS: &'static [Operand] = &[req("frf", FRF), req("excitation", EXC)];
    fn reads(&self) -> Vec<&str> {
        vec![&self.frf, &self.excitation]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let h = cx.get("frf", &self.frf)?;
        let f = cx.get("excitation", &self.excitation)?;
        cx.check_set("the response", h.n_lines(), h.n_out(), 1)?;
        cx.check_work(
            "the response",
            8.0 * h.n_lines() as f64 * h.n_out() as f64 * h.n_in() as f64,
        )?;
        let y = predict::operational_response(h, f)?;
        let mut report = StepReport::new(cx.id, "respond", y.warnings.clone());
        report.levels = Some(level_rows(&y));
        Ok(StepOutput {
            set: y,
            extras: Vec::new(),
            report,
        })
    }
}

impl Paths {
    /// The `groups` operand as path groups (DOF labels parsed).
    pub(crate) fn path_groups(&self) -> Result<Vec<PathGroup>> {
        let mut groups = Vec::new();
        for (name, dofs) in self.groups.iter().flatten() {
            groups.push(PathGroup {
                name: name.clone(),
                inputs: parse_dofs(dofs, &format!("groups.{name}"))?,
            });
        }
        Ok(groups)
    }
}

impl Operation for Paths {
    const SUMMARY: &'static str =
        "path contributions: the response split by excitation DOF (or group), ranked per band and overall; each path's complex contribution is written beside the total as ID/PATH";
    const OPERANDS: &'static [Operand] = &[
        req("frf", FRF),
        req("excitation", EXC),
        opt("groups", "{name: [DOF labels]}: excitation DOFs that form one path (others are paths of their own)"),
    ];
    fn reads(&self) -> Vec<&str> {
        vec![&self.frf, &self.excitation]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let h = cx.get("frf", &self.frf)?;
        let f = cx.get("excitation", &self.excitation)?;
        let groups = self.path_groups()?;
        // the total and one set per path, each lines × targets
        let paths = h.n_in().saturating_add(1);
        cx.check_set(
            "the path contributions (one set per excitation DOF and the total)",
            h.n_lines(),
            h.n_out(),
            paths,
        )?;
        let c = predict::paths::path_contributions(h, f, &groups)?;
        let ranking = predict::paths::rank_paths(
            &c,
            &RankOptions {
                band_fraction: Some(3),
                weighting: weighting_for(&c.total),
            },
        )?;
        let mut extras = Vec::new();
        for (p, name) in c.paths.iter().enumerate() {
            let mut s = c.total.clone();
            s.name = format!("{} {name}", cx.id);
            for k in 0..c.freqs.len() {
                for t in 0..c.targets.len() {
                    s.set(k, t, 0, c.get(k, t, p));
                }
            }
            extras.push((name.clone(), s));
        }
        let mut report = StepReport::new(cx.id, "paths", c.warnings.clone());
        report.levels = Some(level_rows(&c.total));
        report.ranking = Some(ranking);
        Ok(StepOutput {
            set: c.total,
            extras,
            report,
        })
    }
}

impl Operation for BlockedForces {
    const SUMMARY: &'static str =
        "blocked forces at a source's interface from FRFs and operational responses at indicators (f = H⁺y per line); method 'bench' (the source on a test bench, the bench's FRFs) or 'in-situ' (the source installed, the assembly's FRFs from the interface to indicators, with target DOFs predicted); indicators in 'validate' are left out and predicted as an on-board check, written as ID/validation-predicted and ID/validation-measured; targets as ID/target-predicted (and ID/target-measured when the responses hold them)";
    const OPERANDS: &'static [Operand] = &[
        req("bench", "name of the FRFs: indicator DOFs × interface DOFs (more indicators than forces allowed); the bench's, or with method 'in-situ' the installed assembly's"),
        req("operational", "name of the running source's responses at the indicators (peak or RMS spectrum)"),
        opt("method", "'bench' (default) or 'in-situ': where the FRFs and responses were measured; said in the report"),
        opt("tsvd", "relative singular-value threshold of the inversion (default 1e-3 when no 'tikhonov')"),
        opt("tikhonov", "Tikhonov regularisation instead of the truncation, f = (HᴴH + λ²I)⁻¹Hᴴy: a number is λ as a fraction of the largest singular value per line; \"noise\" takes λ per line from the FRFs' 'uncertainty' (root sum of squares of the indicator FRFs' standard uncertainties)"),
        opt("validate", "indicator DOF labels left out of the inversion and predicted as a check"),
        opt("target", "in situ: DOF labels of the assembly (outputs of the FRFs, left out of the inversion) whose responses are predicted from the blocked forces, and compared where the responses hold them"),
    ];
    fn reads(&self) -> Vec<&str> {
        vec![&self.bench, &self.operational]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let bench = cx.get("bench", &self.bench)?;
        let op = cx.get("operational", &self.operational)?;
        let o = self.options(cx, bench)?;
        // per line an SVD of the m × n indicator matrix (Jacobi sweeps: about
        // 30 · m · n · min(m, n) operations), the inverse and, when
        // regularised, the plain solve beside it
        let (m, n) = (bench.n_out(), bench.n_in());
        cx.check_work(
            &format!(
                "the blocked forces ({} lines of {m} × {n} indicator matrices)",
                bench.n_lines()
            ),
            34.0 * bench.n_lines() as f64 * m as f64 * n as f64 * m.min(n) as f64,
        )?;
        let b = predict::blocked::blocked_forces(bench, op, &o)?;
        let mut extras: Vec<(String, FrfSet)> = Vec::new();
        if let Some(v) = &b.validation {
            let mut p = v.predicted.clone();
            p.name = format!("{} validation-predicted", cx.id);
            let mut m = op.select_dofs(&v.dofs, &op.inputs)?;
            m.name = format!("{} validation-measured", cx.id);
            extras.push(("validation-predicted".into(), p));
            extras.push(("validation-measured".into(), m));
        }
        if let Some(t) = &b.target {
            let mut p = t.predicted.clone();
            p.name = format!("{} target-predicted", cx.id);
            extras.push(("target-predicted".into(), p));
            let measured: Vec<_> = t
                .dofs
                .iter()
                .zip(&t.measured)
                .filter(|(_, m)| **m)
                .map(|(d, _)| d.clone())
                .collect();
            if !measured.is_empty() {
                let mut m = op.select_dofs(&measured, &op.inputs)?;
                m.name = format!("{} target-measured", cx.id);
                extras.push(("target-measured".into(), m));
            }
        }
        let mut report = StepReport::new(cx.id, "blocked-forces", b.warnings.clone());
        if matches!(self.tikhonov, Some(TikhonovSpec::Rule(_))) {
            report
                .notes
                .push(format!("Tikhonov λ from the noise: {TIKHONOV_NOISE_RULE}"));
        }
        report.blocked = Some(BlockedReport::new(&b));
        Ok(StepOutput {
            set: b.forces,
            extras,
            report,
        })
    }
}

impl BlockedForces {
    /// The solve's options from the operands; every operand used or refused.
    pub(crate) fn options(
        &self,
        cx: &Ctx,
        frf: &FrfSet,
    ) -> Result<predict::blocked::BlockedForceOptions> {
        use predict::blocked::{BlockedMethod, Regularisation};
        let method = match self.method.as_deref() {
            None | Some("bench") => BlockedMethod::Bench,
            Some("in-situ") => BlockedMethod::InSitu,
            Some(m) => {
                return Err(Error::recipe(format!(
                    "method '{}': expected 'bench' or 'in-situ'",
                    crate::error::quote(m)
                ))
                .field("method"))
            }
        };
        let tsvd = check_tsvd(self.tsvd)?;
        let regularisation = match (&self.tikhonov, tsvd) {
            (Some(_), Some(_)) => return Err(TikhonovSpec::refuse_both()),
            (None, Some(t)) => Regularisation::Truncated(t),
            (None, None) => Regularisation::Truncated(1e-3),
            (Some(TikhonovSpec::Relative(x)), None) => {
                Regularisation::TikhonovRelative(TikhonovSpec::check_lambda(*x)?)
            }
            (Some(TikhonovSpec::Rule(r)), None) => {
                TikhonovSpec::check_rule(r, "tikhonov")?;
                let Some(u) = cx.uncertainties.get(&self.bench) else {
                    return Err(Error::recipe(format!(
                        "'tikhonov': \"noise\" takes λ from the uncertainty of the FRFs '{}', which carry none; give the component an \"uncertainty\" key, or λ as a number",
                        crate::error::quote(&self.bench)
                    ))
                    .field("tikhonov"));
                };
                u.check_fits(frf)?;
                Regularisation::TikhonovNoise(u.std.clone())
            }
        };
        let mut o = predict::blocked::BlockedForceOptions {
            method,
            regularisation,
            ..predict::blocked::BlockedForceOptions::default()
        };
        if let Some(v) = &self.validate {
            o.validation = parse_dofs(v, "validate")?;
        }
        if let Some(t) = &self.target {
            if o.method != BlockedMethod::InSitu {
                return Err(Error::recipe(
                    "'target' predicts responses of the installed assembly: it needs method 'in-situ' (the bench's FRFs do not reach the receiver)",
                )
                .field("target"));
            }
            if t.is_empty() {
                return Err(
                    Error::recipe("'target' is empty; give DOF labels or leave it out")
                        .field("target"),
                );
            }
            o.target = parse_dofs(t, "target")?;
        }
        Ok(o)
    }
}
