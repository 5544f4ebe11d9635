//! Operation: `respond`, `paths`, `blocked-forces`.

use super::{check_tsvd, opt, parse_dofs, req, Ctx, Operand, Operation, StepOutput};
use crate::error::Result;
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

/// Blocked forces from a test bench, with an on-board validation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BlockedForces {
    pub bench: String,
    pub operational: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tsvd: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub validate: Option<Vec<String>>,
}

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
        let mut groups = Vec::new();
        for (name, dofs) in self.groups.iter().flatten() {
            groups.push(PathGroup {
                name: name.clone(),
                inputs: parse_dofs(dofs, &format!("groups.{name}"))?,
            });
        }
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
        "blocked forces at a source's interface from bench FRFs and operational responses at indicators (truncated-SVD inverse); indicators in 'validate' are left out and predicted as an on-board check, written as ID/validation-predicted and ID/validation-measured";
    const OPERANDS: &'static [Operand] = &[
        req("bench", "name of the bench FRFs: indicator DOFs × interface DOFs (more indicators than forces allowed)"),
        req("operational", "name of the running source's responses at the indicators (peak or RMS spectrum)"),
        opt("tsvd", "relative singular-value threshold of the inversion (default 1e-3)"),
        opt("validate", "indicator DOF labels left out of the inversion and predicted as a check"),
    ];
    fn reads(&self) -> Vec<&str> {
        vec![&self.bench, &self.operational]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let bench = cx.get("bench", &self.bench)?;
        let op = cx.get("operational", &self.operational)?;
        let mut o = predict::blocked::BlockedForceOptions::default();
        if let Some(t) = check_tsvd(self.tsvd)? {
            o.rel_threshold = t;
        }
        if let Some(v) = &self.validate {
            o.validation = parse_dofs(v, "validate")?;
        }
        // per line a truncated SVD of the m × n indicator matrix (Jacobi
        // sweeps: about 30 · m · n · min(m, n) operations)
        let (m, n) = (bench.n_out(), bench.n_in());
        cx.check_work(
            &format!(
                "the blocked forces ({} lines of {m} × {n} indicator matrices)",
                bench.n_lines()
            ),
            30.0 * bench.n_lines() as f64 * m as f64 * n as f64 * m.min(n) as f64,
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
        let mut report = StepReport::new(cx.id, "blocked-forces", b.warnings.clone());
        report.blocked = Some(BlockedReport::new(&b));
        Ok(StepOutput {
            set: b.forces,
            extras,
            report,
        })
    }
}
