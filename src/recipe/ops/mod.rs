//! Recipe operations: one struct per operation with exactly its operands,
//! one `run` each. The [`Op`] enum, the list of names, the help text and the
//! page's list of operations all come from the one `operations!` table below.
//!
//! Adding an operation: write its struct (with `#[serde(deny_unknown_fields)]`)
//! and `impl Operation` in one of the files here, then add one line to the
//! table.

mod couple;
mod identify;
mod predict;
mod reshape;
mod time_data;
mod transform;
mod virtual_points;

pub(crate) use couple::resolve_joints;
pub use couple::{Couple, Decouple};
pub use identify::{pick_toggled, pick_written, IdentifyModes, Regenerate};
pub use predict::{BlockedForces, Paths, Respond};
pub use reshape::{Cascade, Parallel, Series, Sum};
pub use time_data::{EstimateFrf, Orders, Spectrum};
pub(crate) use transform::{
    interp as transform_interp, scale_in_place, select as transform_select,
};
pub use transform::{Convert, Invert, Resample, Scale, Select};
pub use virtual_points::{virtual_point_groups, virtual_point_plan, ToVirtualPoints};

use super::report::StepReport;
use super::Variant;
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};
use crate::limits::{product, Limits};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// One operand of an operation, for the docs and the page.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct Operand {
    pub name: &'static str,
    pub required: bool,
    /// What it holds and means.
    pub doc: &'static str,
}

const fn req(name: &'static str, doc: &'static str) -> Operand {
    Operand {
        name,
        required: true,
        doc,
    }
}

const fn opt(name: &'static str, doc: &'static str) -> Operand {
    Operand {
        name,
        required: false,
        doc,
    }
}

/// What an operation is, for the docs, the help and the page.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct OpInfo {
    pub name: &'static str,
    pub summary: &'static str,
    pub operands: &'static [Operand],
}

/// What a step sees while it runs.
pub(crate) struct Ctx<'a> {
    /// Components and earlier steps' results, by name.
    pub values: &'a BTreeMap<String, FrfSet>,
    /// The step's id.
    pub id: &'a str,
    /// The variant being computed, if any.
    pub variant: Option<&'a Variant>,
    /// The run's budget.
    pub limits: &'a Limits,
    /// Complex values the run holds already (components and earlier results).
    pub held: u64,
    /// The recipe's files (for operands naming a file, e.g. a geometry).
    pub files: &'a dyn super::FileSource,
    /// The reports of the earlier steps (a step may read what one found).
    pub steps: &'a [StepReport],
    /// The standard uncertainty of the components and earlier results that
    /// carry one, by name (a step may take a regularisation from it).
    pub uncertainties: &'a BTreeMap<String, crate::uncertainty::FrfUncertainty>,
    /// The rows and columns later steps read of this step's result, when
    /// that is all they read (`recipe::demand`); None: the whole result.
    pub demand: Option<&'a crate::assemble::Request>,
}

impl Ctx<'_> {
    /// Refuse a set of `lines × outputs × inputs` values that the step
    /// would create when it is over the memory budget on its own, or
    /// together with what the run holds already. `what` names it.
    pub fn check_set(&self, what: &str, lines: usize, outputs: usize, inputs: usize) -> Result<()> {
        self.limits.check_set(what, lines, outputs, inputs)?;
        let total = product(&[lines, outputs, inputs]).and_then(|n| n.checked_add(self.held));
        self.limits.check_values(
            &format!(
                "{what} ({lines} lines × {outputs} outputs × {inputs} inputs), with the {} values the run holds already,",
                self.held
            ),
            total,
        )
    }

    /// Refuse a step whose estimated operation count is over the work budget.
    pub fn check_work(&self, what: &str, operations: f64) -> Result<()> {
        self.limits.check_work(what, operations)
    }

    /// The set an operand names.
    pub fn get(&self, operand: &str, name: &str) -> Result<&FrfSet> {
        self.values.get(name).ok_or_else(|| {
            Error::recipe(format!(
                "'{operand}' names '{name}', which is not a component or an earlier step; known: {}",
                self.values.keys().cloned().collect::<Vec<_>>().join(", ")
            ))
            .field(operand.to_string())
        })
    }

    /// The sets a list operand names (at least one).
    pub fn get_all(&self, operand: &str, names: &[String]) -> Result<Vec<FrfSet>> {
        if names.is_empty() {
            return Err(Error::recipe(format!("'{operand}' is empty")).field(operand.to_string()));
        }
        names
            .iter()
            .map(|n| self.get(operand, n).cloned())
            .collect()
    }
}

/// What a step produced: its result, further named results written beside
/// it (`ID/NAME`), and its report.
pub(crate) struct StepOutput {
    pub set: FrfSet,
    pub extras: Vec<(String, FrfSet)>,
    pub report: StepReport,
}

impl StepOutput {
    /// A result with a plain report (id, op, the set's warnings).
    pub fn plain(cx: &Ctx, op: &str, set: FrfSet) -> StepOutput {
        let report = StepReport::new(cx.id, op, set.warnings.clone());
        StepOutput {
            set,
            extras: Vec::new(),
            report,
        }
    }
}

/// An operation of the recipe.
pub(crate) trait Operation {
    /// One line: what it computes.
    const SUMMARY: &'static str;
    /// Its operands, in the order the docs list them.
    const OPERANDS: &'static [Operand];
    /// The names of components or earlier steps it reads.
    fn reads(&self) -> Vec<&str>;
    /// Compute it.
    fn run(&self, cx: &Ctx) -> Result<StepOutput>;
}

macro_rules! operations {
    ($($name:literal => $variant:ident),* $(,)?) => {
        /// A recipe operation with exactly its operands (tagged by `"op"`).
        #[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
        #[serde(tag = "op")]
        pub enum Op {
            $(#[serde(rename = $name)] $variant($variant),)*
        }

        impl Op {
            /// Every operation's name, in the docs' order.
            pub const NAMES: &'static [&'static str] = &[$($name),*];

            /// The name written as `"op"`.
            pub fn name(&self) -> &'static str {
                match self { $(Op::$variant(_) => $name,)* }
            }

            /// The names of components or earlier steps the step reads.
            pub fn reads(&self) -> Vec<&str> {
                match self { $(Op::$variant(o) => o.reads(),)* }
            }

            pub(crate) fn run(&self, cx: &Ctx) -> Result<StepOutput> {
                match self { $(Op::$variant(o) => o.run(cx),)* }
            }
        }

        /// Every operation with its operands (the help and the page read this).
        pub fn vocabulary() -> Vec<OpInfo> {
            vec![$(OpInfo {
                name: $name,
                summary: <$variant as Operation>::SUMMARY,
                operands: <$variant as Operation>::OPERANDS,
            }),*]
        }
    };
}

operations! {
    "couple" => Couple,
    "decouple" => Decouple,
    "cascade" => Cascade,
    "sum" => Sum,
    "series" => Series,
    "parallel" => Parallel,
    "select" => Select,
    "convert" => Convert,
    "invert" => Invert,
    "scale" => Scale,
    "resample" => Resample,
    "respond" => Respond,
    "paths" => Paths,
    "blocked-forces" => BlockedForces,
    "to-virtual-points" => ToVirtualPoints,
    "identify-modes" => IdentifyModes,
    "regenerate" => Regenerate,
    "spectrum" => Spectrum,
    "estimate-frf" => EstimateFrf,
    "orders" => Orders,
}

/// One step: an id, an optional note, and an operation with its operands.
#[derive(Debug, Clone, PartialEq)]
pub struct Step {
    pub id: String,
    pub note: Option<String>,
    pub op: Op,
}

impl Serialize for Step {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        use serde::ser::Error as _;
        let mut v = serde_json::to_value(&self.op).map_err(S::Error::custom)?;
        let map = v
            .as_object_mut()
            .ok_or_else(|| S::Error::custom("an operation serializes to an object"))?;
        map.insert("id".into(), self.id.clone().into());
        if let Some(n) = &self.note {
            map.insert("note".into(), n.clone().into());
        }
        v.serialize(s)
    }
}

impl<'de> Deserialize<'de> for Step {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        let v = serde_json::Value::deserialize(d)?;
        Step::from_value(v).map_err(|e| serde::de::Error::custom(e.message))
    }
}

impl Step {
    /// A step from its JSON object: `id`, optional `note`, `op` and exactly
    /// that operation's operands.
    pub fn from_value(v: serde_json::Value) -> Result<Step> {
        let serde_json::Value::Object(mut map) = v else {
            return Err(Error::recipe("a step is a JSON object with 'id' and 'op'"));
        };
        let id = match map.remove("id") {
            Some(serde_json::Value::String(s)) if !s.is_empty() => s,
            Some(_) => return Err(Error::recipe("'id' must be a non-empty string").field("id")),
            None => return Err(Error::recipe("a step needs an 'id'").field("id")),
        };
        let note = match map.remove("note") {
            None => None,
            Some(serde_json::Value::String(s)) => Some(s),
            Some(_) => return Err(Error::recipe("'note' must be a string").field("note")),
        };
        let op_name = map.get("op").and_then(|o| o.as_str()).map(str::to_string);
        let Some(op_name) = op_name else {
            return Err(Error::recipe(format!(
                "a step needs an 'op', one of {}",
                Op::NAMES.join(", ")
            ))
            .field("op"));
        };
        if !Op::NAMES.contains(&op_name.as_str()) {
            return Err(Error::recipe(format!(
                "unknown op '{op_name}'; the operations are {}",
                Op::NAMES.join(", ")
            ))
            .field("op"));
        }
        // a joint's error names the joint (serde would name only the step)
        if let Some(serde_json::Value::Array(js)) = map.get("joints") {
            for (i, j) in js.iter().enumerate() {
                serde_json::from_value::<crate::recipe::JointSpec>(j.clone()).map_err(|e| {
                    Error::recipe(e.to_string().replace("unknown field", "unknown parameter"))
                        .within(format!("joints[{i}]"))
                })?;
            }
        }
        let op: Op = serde_json::from_value(serde_json::Value::Object(map)).map_err(|e| {
            Error::recipe(format!(
                "operation '{op_name}': {}",
                operand_message(&e.to_string())
            ))
        })?;
        Ok(Step { id, note, op })
    }
}

/// serde's message with the operation's real operand list (serde lists the
/// fields of the struct; the tag and `id` are handled here).
fn operand_message(m: &str) -> String {
    m.replace("unknown field", "unknown operand")
        .replace("missing field", "missing operand")
}

/// Parse DOF labels of an operand.
pub(crate) fn parse_dofs(labels: &[String], what: &str) -> Result<Vec<Dof>> {
    labels
        .iter()
        .map(|l| Dof::parse(l, "").map_err(|e| e.field(what.to_string())))
        .collect()
}

/// A regularisation operand ("tsvd", "tikhonov"): a fraction of the
/// largest singular value per line, or a rule by name (`"noise"`: per line
/// from the inputs' stated uncertainty).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum RelativeOrNoise {
    Relative(f64),
    Rule(String),
}

impl RelativeOrNoise {
    /// The rule's word, refused unless it is `"noise"` (naming `field`).
    pub(crate) fn check_rule(rule: &str, field: &str) -> Result<()> {
        if rule == "noise" {
            return Ok(());
        }
        Err(Error::recipe(format!(
            "'{field}' is '{}'; expected a number (a fraction of the largest singular value) or \"noise\"",
            crate::error::quote(rule)
        ))
        .field(field))
    }

    /// A Tikhonov λ given as a number: positive and finite.
    pub(crate) fn check_lambda(x: f64) -> Result<f64> {
        if x.is_finite() && x > 0.0 {
            return Ok(x);
        }
        Err(Error::recipe(format!(
            "'tikhonov' is {x}; expected λ as a positive fraction of the largest singular value (for example 1e-4), or \"noise\""
        ))
        .field("tikhonov"))
    }

    /// `tsvd` and `tikhonov` both given: refused.
    pub(crate) fn refuse_both() -> Error {
        Error::recipe(
            "'tsvd' and 'tikhonov' are two regularisations of the same inversion; give one",
        )
        .field("tikhonov")
    }
}

/// A relative singular-value threshold operand: finite, in (0, 1).
pub(crate) fn check_tsvd(t: Option<f64>) -> Result<Option<f64>> {
    match t {
        Some(x) if !(x.is_finite() && x > 0.0 && x < 1.0) => Err(Error::recipe(format!(
            "'tsvd' is {x}; expected a relative threshold between 0 and 1 (for example 1e-6)"
        ))
        .field("tsvd")),
        _ => Ok(t),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The operand names serde accepts for an operation, read from its
    /// "unknown operand" message.
    fn accepted(name: &str) -> Vec<String> {
        let v = serde_json::json!({"op": name, "zz_not_an_operand": 1});
        let e = serde_json::from_value::<Op>(v).unwrap_err().to_string();
        let tail = e.split("expected").nth(1).unwrap_or("").to_string();
        tail.split('`')
            .enumerate()
            .filter(|(i, _)| i % 2 == 1)
            .map(|(_, s)| s.to_string())
            .collect()
    }

    #[test]
    fn documented_operands_are_exactly_the_accepted_ones() {
        for info in vocabulary() {
            let mut doc: Vec<String> = info.operands.iter().map(|o| o.name.to_string()).collect();
            let mut got = accepted(info.name);
            doc.sort();
            got.sort();
            assert_eq!(doc, got, "operation '{}'", info.name);
        }
        assert_eq!(vocabulary().len(), Op::NAMES.len());
    }

    #[test]
    fn operands_of_other_operations_are_refused() {
        // the defects: a couple step with factor and first; a select with excitation
        let e = Step::from_value(serde_json::json!({
            "id": "c", "op": "couple", "parts": ["A", "B"], "joints": [], "factor": 99, "first": "x"
        }))
        .unwrap_err();
        assert!(e.message.contains("unknown operand `factor`"), "{e}");
        let e = Step::from_value(serde_json::json!({
            "id": "s", "op": "select", "from": "A", "excitation": "x"
        }))
        .unwrap_err();
        assert!(e.message.contains("unknown operand `excitation`"), "{e}");
        let e = Step::from_value(serde_json::json!({"id": "s", "op": "cuple"})).unwrap_err();
        assert!(
            e.message.contains("the operations are couple, decouple"),
            "{e}"
        );
    }

    #[test]
    fn a_step_writes_back_as_it_reads() {
        let v = serde_json::json!({"id": "h", "op": "cascade", "first": "a", "second": "b", "note": "n"});
        let s = Step::from_value(v.clone()).unwrap();
        assert_eq!(serde_json::to_value(&s).unwrap(), v);
    }
}
