//! `couple` and `decouple`: LM-FBS through the recipe's joints.

use super::{check_tsvd, opt, req, Ctx, Operand, Operation, StepOutput};
use crate::assemble::{self, Assembled, CouplingOptions, Joint};
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
    pub tsvd: Option<f64>,
}

/// Remove a known part from an assembly.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Decouple {
    pub assembly: String,
    pub remove: String,
    pub joints: Vec<JointSpec>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tsvd: Option<f64>,
}

const JOINTS_DOC: &str = "list of {a, b, type, parameters}: see the joint types";
const TSVD_DOC: &str = "truncated-SVD regularisation of the interface inversion: singular values below this fraction of the largest are dropped (for example 1e-6); nothing dropped → the plain solve";

impl Operation for Couple {
    const SUMMARY: &'static str =
        "couple components at interface DOFs (LM-FBS), rigidly or through joints; the result is in the first part's kind";
    const OPERANDS: &'static [Operand] = &[
        req("parts", "names of the components to couple"),
        req("joints", JOINTS_DOC),
        opt("tsvd", TSVD_DOC),
    ];
    fn reads(&self) -> Vec<&str> {
        let mut r: Vec<&str> = self.parts.iter().map(String::as_str).collect();
        r.extend(self.joints.iter().filter_map(JointSpec::reads));
        r
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let parts = cx.get_all("parts", &self.parts)?;
        let (joints, notes) = resolve_joints(cx, &self.joints)?;
        let opts = CouplingOptions {
            tsvd_rel_threshold: check_tsvd(self.tsvd)?,
        };
        let lines = parts.first().map_or(0, |p| p.n_lines());
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
        let mut a = assemble::couple(&parts, &joints, &opts)?;
        if a.truncated.iter().any(|&t| t > 0) {
            cx.check_work(
                "the plain coupling the truncated one is compared with",
                coupling_work(lines, outs, ins, joints.len()),
            )?;
            let plain = assemble::couple(&parts, &joints, &CouplingOptions::default());
            compare_with_plain(&mut a, plain, "coupled FRFs");
        }
        Ok(output(cx, "couple", a, notes))
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
    ];
    fn reads(&self) -> Vec<&str> {
        let mut r = vec![self.assembly.as_str(), self.remove.as_str()];
        r.extend(self.joints.iter().filter_map(JointSpec::reads));
        r
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let asm = cx.get("assembly", &self.assembly)?;
        let rem = cx.get("remove", &self.remove)?;
        let (joints, notes) = resolve_joints(cx, &self.joints)?;
        let opts = CouplingOptions {
            tsvd_rel_threshold: check_tsvd(self.tsvd)?,
        };
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
        let mut a = assemble::decouple(asm, rem, &joints, &opts)?;
        if a.truncated.iter().any(|&t| t > 0) {
            cx.check_work(
                "the plain decoupling the truncated one is compared with",
                coupling_work(
                    lines,
                    outs.saturating_add(rem.n_out()),
                    ins.saturating_add(rem.n_in()),
                    joints.len(),
                ),
            )?;
            let plain = assemble::decouple(asm, rem, &joints, &CouplingOptions::default());
            compare_with_plain(&mut a, plain, "decoupled FRFs");
        }
        Ok(output(cx, "decouple", a, notes))
    }
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
fn compare_with_plain(a: &mut Assembled, plain: Result<Assembled>, what: &str) {
    match plain {
        Ok(p) => a
            .warnings
            .extend(crate::peaks::peak_changes(&p.set, &a.set, what)),
        Err(e) => a.warnings.push(format!(
            "the plain solve the truncation is compared with failed ({}), so its effect on the peaks is not checked",
            e.message
        )),
    }
}

fn output(cx: &Ctx, op: &str, a: Assembled, notes: Vec<String>) -> StepOutput {
    let mut report = StepReport::new(cx.id, op, a.warnings.clone());
    report.notes = notes;
    report.interface = Some(InterfaceReport::new(
        &a.set.freqs,
        &a.condition,
        &a.truncated,
    ));
    StepOutput {
        set: a.set,
        extras: Vec::new(),
        report,
    }
}
