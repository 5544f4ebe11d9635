//! `couple` and `decouple`: LM-FBS through the recipe's joints.

use super::{check_tsvd, opt, req, Ctx, Operand, Operation, RelativeOrNoise, StepOutput};
use crate::assemble::{self, Assembled, CouplingOptions, Joint, PerLine, Request};
use crate::error::{Error, Result};
use crate::recipe::joint::JointSpec;
use crate::recipe::report::{InterfaceReport, StepReport};
use serde::{Deserialize, Serialize};

/// Couple components at their interface DOFs.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Couple {
    pub parts: Vec<String>,
    pub joints: Vec<JointSpec>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tsvd: Option<RelativeOrNoise>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tikhonov: Option<RelativeOrNoise>,
}

/// Remove a known part from an assembly.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Decouple {
    pub assembly: String,
    pub remove: String,
    pub joints: Vec<JointSpec>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tsvd: Option<RelativeOrNoise>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tikhonov: Option<RelativeOrNoise>,
}

const JOINTS_DOC: &str = "list of {a, b, type, parameters}: see the joint types";
const TSVD_DOC: &str = "truncated-SVD regularisation of the interface inversion: singular values below this fraction of the largest are dropped (for example 1e-6); nothing dropped → the plain solve. \"noise\": per line, the threshold where the interface matrix's error from the inputs' stated uncertainty lies (√E‖δZ‖²_F / σ_max), so only singular values the noise hides are dropped";
const TIKHONOV_DOC: &str = "Tikhonov regularisation of the interface inversion instead of the truncation, Z_λ⁺ = (ZᴴZ + λ²I)⁻¹Zᴴ: a number is λ as a fraction of the largest singular value on each line (for example 1e-4); \"noise\": per line λ = √E‖δZ‖²_F, the interface matrix's error from the inputs' stated uncertainty, so singular values above the noise are kept nearly whole and those below it damped";

/// The inversion's regularisation from the `tsvd` and `tikhonov` operands
/// on `lines` lines; `noise` gives the per-line noise-referenced values
/// (√E‖δZ‖²_F / σ_max) when an operand asks for them.
fn regularisation(
    tsvd: &Option<RelativeOrNoise>,
    tikhonov: &Option<RelativeOrNoise>,
    lines: usize,
    noise: impl FnOnce(&str) -> Result<Vec<f64>>,
) -> Result<CouplingOptions> {
    Ok(match (tsvd, tikhonov) {
        (Some(_), Some(_)) => return Err(RelativeOrNoise::refuse_both()),
        (None, None) => CouplingOptions::default(),
        (Some(RelativeOrNoise::Relative(t)), None) => CouplingOptions {
            tsvd_rel_threshold: check_tsvd(Some(*t))?,
            per_line: None,
        },
        (Some(RelativeOrNoise::Rule(r)), None) => {
            RelativeOrNoise::check_rule(r, "tsvd")?;
            // a threshold of 1 or more would drop σ_max too: everything the
            // noise hides is dropped, the largest is kept
            let t = noise("tsvd")?
                .into_iter()
                .map(|t| {
                    if t.is_nan() {
                        0.0
                    } else {
                        t.min(1.0 - f64::EPSILON)
                    }
                })
                .collect();
            CouplingOptions {
                tsvd_rel_threshold: None,
                per_line: Some(PerLine::Tsvd(t)),
            }
        }
        (None, Some(RelativeOrNoise::Relative(x))) => CouplingOptions {
            tsvd_rel_threshold: None,
            per_line: Some(PerLine::Tikhonov(vec![
                RelativeOrNoise::check_lambda(*x)?;
                lines
            ])),
        },
        (None, Some(RelativeOrNoise::Rule(r))) => {
            RelativeOrNoise::check_rule(r, "tikhonov")?;
            let x = noise("tikhonov")?
                .into_iter()
                .map(|x| if x.is_finite() { x } else { 0.0 })
                .collect();
            CouplingOptions {
                tsvd_rel_threshold: None,
                per_line: Some(PerLine::Tikhonov(x)),
            }
        }
    })
}

/// The noise rule needs a stated uncertainty on at least one operand.
fn no_uncertainty(field: &str, names: &[&str]) -> Error {
    Error::recipe(format!(
        "'{field}': \"noise\" takes its values from the stated uncertainty of {}, which carry none; give a component an \"uncertainty\" key, or a number",
        names
            .iter()
            .map(|n| format!("'{}'", crate::error::quote(n)))
            .collect::<Vec<_>>()
            .join(", ")
    ))
    .field(field)
}

impl Operation for Couple {
    const SUMMARY: &'static str =
        "couple components at interface DOFs (LM-FBS), rigidly or through joints; the result is in the first part's kind";
    const OPERANDS: &'static [Operand] = &[
        req("parts", "names of the components to couple"),
        req("joints", JOINTS_DOC),
        opt("tsvd", TSVD_DOC),
        opt("tikhonov", TIKHONOV_DOC),
    ];
    fn reads(&self) -> Vec<&str> {
        let mut r: Vec<&str> = self.parts.iter().map(String::as_str).collect();
        r.extend(self.joints.iter().filter_map(JointSpec::reads));
        r
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let parts = cx.get_all("parts", &self.parts)?;
        let (joints, mut notes) = resolve_joints(cx, &self.joints)?;
        let lines = parts.first().map_or(0, |p| p.n_lines());
        let opts = regularisation(&self.tsvd, &self.tikhonov, lines, |field| {
            let us: Vec<_> = self.parts.iter().map(|n| cx.uncertainties.get(n)).collect();
            if us.iter().all(Option::is_none) {
                let names: Vec<&str> = self.parts.iter().map(String::as_str).collect();
                return Err(no_uncertainty(field, &names));
            }
            notes.push(format!("'{field}' from the noise: {NOISE_RULE}"));
            let noise = crate::uncertainty::interface_noise::coupling_interface_noise(
                &parts, &us, &joints, None,
            )?;
            Ok(noise.iter().map(|n| n.threshold).collect())
        })?;
        let outs = parts
            .iter()
            .fold(0usize, |a, p| a.saturating_add(p.n_out()));
        let ins = parts.iter().fold(0usize, |a, p| a.saturating_add(p.n_in()));
        cx.check_set("the coupled set", lines, outs, ins)?;
        cx.check_work(
            &format!(
                "coupling {} parts ({lines} lines, {outs} × {ins} DOFs, {} joints)",
                parts.len(),
                joints.len()
            ),
            coupling_work(lines, outs, ins, joints.len()),
        )?;
        // only the rows and columns later steps read, when that is all they
        // read (recipe::demand): the same values, bit for bit
        let couple = |o: &CouplingOptions| match cx.demand {
            Some(req) => assemble::couple_requested(&parts, &joints, o, req).map(|d| {
                (
                    d.assembled,
                    Some(demand_note("coupled", req, d.solved, d.whole)),
                )
            }),
            None => assemble::couple(&parts, &joints, o).map(|a| (a, None)),
        };
        let (mut a, computed) = couple(&opts)?;
        notes.extend(computed);
        if regularised(&a) {
            cx.check_work(
                "the plain coupling the regularised one is compared with",
                coupling_work(lines, outs, ins, joints.len()),
            )?;
            let plain = couple(&CouplingOptions::default()).map(|(a, _)| a);
            compare_with_plain(&mut a, plain, "coupled FRFs");
        }
        Ok(output(cx, "couple", a, &opts, notes))
    }
}

impl Operation for Decouple {
    const SUMMARY: &'static str =
        "remove a known part (a fixture, a mount) from an assembly: the removed part enters with −Y, its joints with −Γ";
    const OPERANDS: &'static [Operand] = &[
        req("assembly", "name of the assembled FRFs"),
        req("remove", "name of the part to remove"),
        req("joints", JOINTS_DOC),
        opt("tsvd", TSVD_DOC),
        opt("tikhonov", TIKHONOV_DOC),
    ];
    fn reads(&self) -> Vec<&str> {
        let mut r = vec![self.assembly.as_str(), self.remove.as_str()];
        r.extend(self.joints.iter().filter_map(JointSpec::reads));
        r
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let asm = cx.get("assembly", &self.assembly)?;
        let rem = cx.get("remove", &self.remove)?;
        let (joints, mut notes) = resolve_joints(cx, &self.joints)?;
        let opts = regularisation(&self.tsvd, &self.tikhonov, asm.n_lines(), |field| {
            let (ua, ur) = (
                cx.uncertainties.get(&self.assembly),
                cx.uncertainties.get(&self.remove),
            );
            if ua.is_none() && ur.is_none() {
                return Err(no_uncertainty(field, &[&self.assembly, &self.remove]));
            }
            notes.push(format!("'{field}' from the noise: {NOISE_RULE}"));
            let noise = crate::uncertainty::interface_noise::decoupling_interface_noise(
                asm, ua, rem, ur, &joints, None,
            )?;
            Ok(noise.iter().map(|n| n.threshold).collect())
        })?;
        let (lines, outs, ins) = (asm.n_lines(), asm.n_out(), asm.n_in());
        cx.check_set("the decoupled set", lines, outs, ins)?;
        cx.check_work(
            &format!(
                "decoupling ({lines} lines, {outs} × {ins} DOFs, {} joints)",
                joints.len()
            ),
            coupling_work(
                lines,
                outs.saturating_add(rem.n_out()),
                ins.saturating_add(rem.n_in()),
                joints.len(),
            ),
        )?;
        let decouple = |o: &CouplingOptions| match cx.demand {
            Some(req) => assemble::decouple_requested(asm, rem, &joints, o, req).map(|d| {
                (
                    d.assembled,
                    Some(demand_note("decoupled", req, d.solved, d.whole)),
                )
            }),
            None => assemble::decouple(asm, rem, &joints, o).map(|a| (a, None)),
        };
        let (mut a, computed) = decouple(&opts)?;
        notes.extend(computed);
        if regularised(&a) {
            cx.check_work(
                "the plain decoupling the regularised one is compared with",
                coupling_work(
                    lines,
                    outs.saturating_add(rem.n_out()),
                    ins.saturating_add(rem.n_in()),
                    joints.len(),
                ),
            )?;
            let plain = decouple(&CouplingOptions::default()).map(|(a, _)| a);
            compare_with_plain(&mut a, plain, "decoupled FRFs");
        }
        Ok(output(cx, "decouple", a, &opts, notes))
    }
}

/// The report's note on a demand-driven coupling or decoupling.
fn demand_note(what: &str, req: &Request, solved: (usize, usize), whole: (usize, usize)) -> String {
    let ((r, c), (wr, wc)) = (solved, whole);
    format!(
        "computed {} of the {wr} × {wc} {what} matrix: the rows and columns later steps read ({r} × {c} at the requested places, after the whole interface solve on every line); the values equal the whole {what} matrix's",
        req.describe(whole)
    )
}

/// Estimated operations of an LM-FBS coupling: per line, the interface
/// matrix (m × m from the m joints), its solve (m³) and the update of the
/// outs × ins result through the m interface columns.
fn coupling_work(lines: usize, outs: usize, ins: usize, joints: usize) -> f64 {
    let (l, o, i, m) = (lines as f64, outs as f64, ins as f64, joints as f64);
    l * 8.0 * (o * m * i + m * m * (o + i) + m * m * m)
}

/// The engine's joints, without those the variant drops and with the
/// parameters it sets; notes on joints
/// whose type was read from their parameters.
pub(crate) fn resolve_joints(cx: &Ctx, specs: &[JointSpec]) -> Result<(Vec<Joint>, Vec<String>)> {
    let mut out = Vec::new();
    let mut notes = Vec::new();
    for (i, j) in specs.iter().enumerate() {
        let at = format!("joints[{i}]");
        let mut j = j.clone();
        if let Some(v) = cx.variant {
            if v.drops(cx.id, i) {
                continue;
            }
            for (field, value) in v.joint_settings(cx.id, i) {
                j = j
                    .with_param(field, value)
                    .map_err(|e| e.field(field.to_string()).within(at.clone()))?;
            }
        }
        if let Some(n) = j.inference_note() {
            notes.push(format!("{at}: {n}"));
        }
        out.push(j.resolve(cx.values).map_err(|e| e.within(at))?);
    }
    if out.is_empty() {
        return Err(Error::recipe(if specs.is_empty() {
            "'joints' is empty: nothing joins the parts".to_string()
        } else {
            "every joint is dropped: nothing joins the parts".to_string()
        })
        .field("joints"));
    }
    Ok((out, notes))
}

/// Warn where a truncated-SVD result moves a peak of the plain solve
/// ([`crate::peaks`]); a plain solve that fails (a singular interface) is
/// said instead.
/// The rule the noise-referenced values follow (for the step's notes).
pub const NOISE_RULE: &str = "per line, √E‖δZ‖²_F / σ_max of the interface matrix Z = B Y Bᵀ + Γ, the root sum of the squared standard uncertainties of the FRF entries that make up Z (joints exact), relative to its largest singular value; a singular value moves by at most ‖δZ‖₂ ≤ ‖δZ‖_F (Weyl's inequality), so those below it cannot be told from the noise";

/// Whether the regularisation changed some line (then the result is
/// compared with the plain solve's peaks).
fn regularised(a: &Assembled) -> bool {
    a.truncated.iter().any(|&t| t > 0) || !a.damped.is_empty()
}

fn compare_with_plain(a: &mut Assembled, plain: Result<Assembled>, what: &str) {
    match plain {
        Ok(p) => a
            .warnings
            .extend(crate::peaks::peak_changes(&p.set, &a.set, what)),
        Err(e) => a.warnings.push(format!(
            "the plain solve the regularised one is compared with failed ({}), so its effect on the peaks is not checked",
            e.message
        )),
    }
}

fn output(
    cx: &Ctx,
    op: &str,
    a: Assembled,
    opts: &CouplingOptions,
    notes: Vec<String>,
) -> StepOutput {
    let mut report = StepReport::new(cx.id, op, a.warnings.clone());
    report.notes = notes;
    report.interface = Some(
        InterfaceReport::new(&a.set.freqs, &a.condition, &a.truncated)
            .with_regularisation(opts.per_line.as_ref(), &a.damped),
    );
    StepOutput {
        set: a.set,
        extras: Vec::new(),
        report,
    }
}
