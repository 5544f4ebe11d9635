//! Joints as a recipe writes them: two DOF labels and a type with exactly
//! its parameters. One rule reads a joint written without a type, here, for
//! recipes and for the one-line `mortise couple --join` alike.

use crate::assemble::{Joint, JointKind};
use crate::error::{Error, Result};
use crate::frf::{Dof, FrfSet};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// A joint type and its parameters, as the recipe's `"type"` names it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "type", rename_all = "kebab-case", deny_unknown_fields)]
pub enum JointType {
    /// Compatibility and equilibrium: the two DOFs move together.
    Rigid,
    /// A massless spring `k` (N/m; N·m/rad on rotations).
    Spring { k: f64 },
    /// A viscous damper `c` (N·s/m).
    Damper { c: f64 },
    /// A hysteretic spring k(1 + iη): `k` and loss factor `eta`.
    Hysteretic { k: f64, eta: f64 },
    /// k(1 + iη) + iωc: `k`, and optionally `c` and `eta` (0 when left out).
    SpringDamper {
        k: f64,
        #[serde(default, skip_serializing_if = "Option::is_none")]
        c: Option<f64>,
        #[serde(default, skip_serializing_if = "Option::is_none")]
        eta: Option<f64>,
    },
    /// A measured or synthesized dynamic stiffness: `stiffness` names a
    /// component holding a 1×1 set of kind dynamic-stiffness.
    Measured { stiffness: String },
}

/// One joint type of the vocabulary: its name, parameters and meaning.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct JointTypeInfo {
    pub name: &'static str,
    /// Parameters: (name, required, meaning).
    pub params: &'static [(&'static str, bool, &'static str)],
    pub summary: &'static str,
}

/// Every joint type, for the docs, the help and the page (one definition;
/// a unit test checks it against [`JointType`]).
pub const JOINT_TYPES: &[JointTypeInfo] = &[
    JointTypeInfo {
        name: "rigid",
        params: &[],
        summary: "the two DOFs move together (compatibility and equilibrium)",
    },
    JointTypeInfo {
        name: "spring",
        params: &[("k", true, "stiffness, N/m (N·m/rad on rotations)")],
        summary: "a massless spring",
    },
    JointTypeInfo {
        name: "damper",
        params: &[("c", true, "viscous damping, N·s/m")],
        summary: "a viscous damper",
    },
    JointTypeInfo {
        name: "hysteretic",
        params: &[
            ("k", true, "stiffness, N/m"),
            ("eta", true, "loss factor (dimensionless)"),
        ],
        summary: "a spring with structural damping, k(1 + iη)",
    },
    JointTypeInfo {
        name: "spring-damper",
        params: &[
            ("k", true, "stiffness, N/m"),
            ("c", false, "viscous damping, N·s/m (0 when left out)"),
            ("eta", false, "loss factor (0 when left out)"),
        ],
        summary: "k(1 + iη) + iωc",
    },
    JointTypeInfo {
        name: "measured",
        params: &[(
            "stiffness",
            true,
            "name of a component holding a 1×1 dynamic stiffness on the assembly's grid",
        )],
        summary: "a measured or synthesized dynamic stiffness K(ω)",
    },
];

/// The rule for a joint written without `"type"` (recipes and `--join`):
/// no parameter → rigid; `stiffness` alone → measured; `k` → spring;
/// `c` → damper; `k` and `eta` → hysteretic; `k` and `c` (with or without
/// `eta`) → spring-damper. `eta` or `c`+`eta` without `k`, and `stiffness`
/// with other parameters, are refused.
pub const INFERENCE_RULE: &str = "a joint without \"type\" is read from its parameters: none → rigid; stiffness → measured; k → spring; c → damper; k and eta → hysteretic; k and c (and eta) → spring-damper";

/// A joint between DOF `a` and DOF `b`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct JointSpec {
    pub a: String,
    pub b: String,
    #[serde(flatten)]
    pub kind: JointType,
    /// True when the type was not written but read from the parameters
    /// ([`INFERENCE_RULE`]); the run report says so.
    #[serde(skip)]
    pub inferred: bool,
}

/// The joint as written: every key a joint may carry, nothing else.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawJoint {
    a: String,
    b: String,
    #[serde(rename = "type", default)]
    kind: Option<String>,
    #[serde(default)]
    k: Option<f64>,
    #[serde(default)]
    c: Option<f64>,
    #[serde(default)]
    eta: Option<f64>,
    #[serde(default)]
    stiffness: Option<String>,
}

impl<'de> Deserialize<'de> for JointSpec {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        let r = RawJoint::deserialize(d)?;
        JointSpec::from_parts(r.a, r.b, r.kind.as_deref(), r.k, r.c, r.eta, r.stiffness)
            .map_err(|e| serde::de::Error::custom(e.message))
    }
}

fn names() -> String {
    JOINT_TYPES
        .iter()
        .map(|t| t.name)
        .collect::<Vec<_>>()
        .join(", ")
}

impl JointSpec {
    /// A joint from its written parts: the one place where a type and its
    /// parameters are checked against each other, and where a missing type
    /// is read from the parameters ([`INFERENCE_RULE`]).
    pub fn from_parts(
        a: String,
        b: String,
        kind: Option<&str>,
        k: Option<f64>,
        c: Option<f64>,
        eta: Option<f64>,
        stiffness: Option<String>,
    ) -> Result<JointSpec> {
        let given: Vec<&str> = [
            ("k", k.is_some()),
            ("c", c.is_some()),
            ("eta", eta.is_some()),
            ("stiffness", stiffness.is_some()),
        ]
        .iter()
        .filter(|(_, g)| *g)
        .map(|(n, _)| *n)
        .collect();
        let inferred = kind.is_none();
        let name =
            match kind {
                Some(t) => t,
                None => {
                    match (stiffness.is_some(), k.is_some(), c.is_some(), eta.is_some()) {
                        (true, false, false, false) => "measured",
                        (true, ..) => return Err(Error::recipe(
                            "'stiffness' (a measured joint) cannot be combined with k, c or eta",
                        )),
                        (false, false, false, false) => "rigid",
                        (false, true, false, false) => "spring",
                        (false, false, true, false) => "damper",
                        (false, true, false, true) => "hysteretic",
                        (false, true, true, _) => "spring-damper",
                        (false, false, _, true) => return Err(Error::recipe(
                            "'eta' (a loss factor) needs a stiffness 'k'; give k, or a \"type\"",
                        )),
                    }
                }
            };
        let info = JOINT_TYPES.iter().find(|t| t.name == name).ok_or_else(|| {
            Error::recipe(format!(
                "unknown joint type '{name}'; the types are {}",
                names()
            ))
        })?;
        for g in &given {
            if !info.params.iter().any(|(p, _, _)| p == g) {
                let takes: Vec<&str> = info.params.iter().map(|p| p.0).collect();
                return Err(Error::recipe(format!(
                    "joint type '{name}' takes {}; '{g}' does not belong to it{}",
                    if takes.is_empty() {
                        "no parameters".to_string()
                    } else {
                        takes.join(", ")
                    },
                    match *g {
                        "eta" => " (a loss factor goes with 'hysteretic' or 'spring-damper')",
                        "c" => " (viscous damping goes with 'damper' or 'spring-damper')",
                        _ => "",
                    }
                )));
            }
        }
        let num = |v: Option<f64>, p: &str| -> Result<f64> {
            let x = v.ok_or_else(|| Error::recipe(format!("joint type '{name}' needs '{p}'")))?;
            check_param(x, p)
        };
        let opt = |v: Option<f64>, p: &str| -> Result<Option<f64>> {
            v.map(|x| check_param(x, p)).transpose()
        };
        let jt = match name {
            "rigid" => JointType::Rigid,
            "spring" => JointType::Spring { k: num(k, "k")? },
            "damper" => JointType::Damper { c: num(c, "c")? },
            "hysteretic" => JointType::Hysteretic {
                k: num(k, "k")?,
                eta: num(eta, "eta")?,
            },
            "spring-damper" => JointType::SpringDamper {
                k: num(k, "k")?,
                c: opt(c, "c")?,
                eta: opt(eta, "eta")?,
            },
            _ => JointType::Measured {
                stiffness: stiffness.ok_or_else(|| {
                    Error::recipe("joint type 'measured' needs 'stiffness' (a component name)")
                })?,
            },
        };
        // a joint that neither stiffens nor damps joins nothing (its
        // flexibility would be infinite)
        let zero = match &jt {
            JointType::Spring { k } | JointType::Hysteretic { k, .. } => *k == 0.0,
            JointType::Damper { c } => *c == 0.0,
            JointType::SpringDamper { k, c, .. } => *k == 0.0 && c.unwrap_or(0.0) == 0.0,
            _ => false,
        };
        if zero {
            return Err(Error::recipe(format!(
                "joint type '{name}' with zero stiffness and damping joins nothing; give k > 0 (or c > 0), or leave the joint out"
            )));
        }
        Ok(JointSpec {
            a,
            b,
            kind: jt,
            inferred,
        })
    }

    /// The type's name as written in a recipe.
    pub fn type_name(&self) -> &'static str {
        match self.kind {
            JointType::Rigid => "rigid",
            JointType::Spring { .. } => "spring",
            JointType::Damper { .. } => "damper",
            JointType::Hysteretic { .. } => "hysteretic",
            JointType::SpringDamper { .. } => "spring-damper",
            JointType::Measured { .. } => "measured",
        }
    }

    /// The parameters that decided an inferred type, for the run report.
    pub fn inference_note(&self) -> Option<String> {
        if !self.inferred {
            return None;
        }
        let from = match &self.kind {
            JointType::Rigid => "no parameters".to_string(),
            JointType::Spring { .. } => "k".into(),
            JointType::Damper { .. } => "c".into(),
            JointType::Hysteretic { .. } => "k and eta".into(),
            JointType::SpringDamper { eta, .. } => {
                if eta.is_some() {
                    "k, c and eta".into()
                } else {
                    "k and c".into()
                }
            }
            JointType::Measured { .. } => "stiffness".into(),
        };
        Some(format!(
            "{} = {}: no \"type\" given; read as '{}' from {from}",
            self.a,
            self.b,
            self.type_name()
        ))
    }

    /// The value of numeric parameter `field` (k, c or eta) the recipe
    /// gives this joint (None when its type has none, or an optional one is
    /// not given).
    pub fn param(&self, field: &str) -> Option<f64> {
        match (&self.kind, field) {
            (JointType::Spring { k }, "k") => Some(*k),
            (JointType::Damper { c }, "c") => Some(*c),
            (JointType::Hysteretic { k, .. }, "k") => Some(*k),
            (JointType::Hysteretic { eta, .. }, "eta") => Some(*eta),
            (JointType::SpringDamper { k, .. }, "k") => Some(*k),
            (JointType::SpringDamper { c, .. }, "c") => *c,
            (JointType::SpringDamper { eta, .. }, "eta") => *eta,
            _ => None,
        }
    }

    /// This joint with one numeric parameter (`k`, `c` or `eta`) set to
    /// `value`: a variant's or a sweep point's `set_joints`. The field must
    /// belong to the joint's type (an optional one of `spring-damper` may be
    /// given), and the joint is checked as a written one is.
    pub fn with_param(&self, field: &str, value: f64) -> Result<JointSpec> {
        let info = JOINT_TYPES
            .iter()
            .find(|t| t.name == self.type_name())
            .ok_or_else(|| Error::internal("a joint type missing from the table"))?;
        let numeric: Vec<&str> = info
            .params
            .iter()
            .map(|p| p.0)
            .filter(|p| *p != "stiffness")
            .collect();
        if !numeric.contains(&field) {
            return Err(Error::recipe(format!(
                "joint {} = {} is '{}', which has {}; '{}' is not one of them",
                self.a,
                self.b,
                self.type_name(),
                if numeric.is_empty() {
                    "no numeric parameter".to_string()
                } else {
                    format!("the numeric parameters {}", numeric.join(", "))
                },
                crate::error::quote(field)
            )));
        }
        let (mut k, mut c, mut eta) = match &self.kind {
            JointType::Spring { k } => (Some(*k), None, None),
            JointType::Damper { c } => (None, Some(*c), None),
            JointType::Hysteretic { k, eta } => (Some(*k), None, Some(*eta)),
            JointType::SpringDamper { k, c, eta } => (Some(*k), *c, *eta),
            JointType::Rigid | JointType::Measured { .. } => (None, None, None),
        };
        match field {
            "k" => k = Some(value),
            "c" => c = Some(value),
            _ => eta = Some(value),
        }
        let mut j = JointSpec::from_parts(
            self.a.clone(),
            self.b.clone(),
            Some(self.type_name()),
            k,
            c,
            eta,
            None,
        )?;
        j.inferred = self.inferred;
        Ok(j)
    }

    /// The component names this joint reads (a measured joint's stiffness).
    pub fn reads(&self) -> Option<&str> {
        match &self.kind {
            JointType::Measured { stiffness } => Some(stiffness),
            _ => None,
        }
    }

    /// The engine's joint, with DOFs parsed and a measured stiffness looked up.
    pub(crate) fn resolve(&self, values: &BTreeMap<String, FrfSet>) -> Result<Joint> {
        let a = Dof::parse(&self.a, "").map_err(|e| e.field("a"))?;
        let b = Dof::parse(&self.b, "").map_err(|e| e.field("b"))?;
        let kind = match &self.kind {
            JointType::Rigid => JointKind::Rigid,
            JointType::Spring { k } => JointKind::Spring { k: *k },
            JointType::Damper { c } => JointKind::Damper { c: *c },
            JointType::Hysteretic { k, eta } => JointKind::Hysteretic { k: *k, eta: *eta },
            JointType::SpringDamper { k, c, eta } => JointKind::SpringDamper {
                k: *k,
                c: c.unwrap_or(0.0),
                eta: eta.unwrap_or(0.0),
            },
            JointType::Measured { stiffness } => {
                let s = values.get(stiffness).ok_or_else(|| {
                    Error::recipe(format!(
                        "'stiffness' names '{stiffness}', which is not a component or an earlier step"
                    ))
                    .field("stiffness")
                })?;
                JointKind::Measured {
                    stiffness: Box::new(s.clone()),
                }
            }
        };
        Ok(Joint { a, b, kind })
    }
}

fn check_param(x: f64, p: &str) -> Result<f64> {
    if !x.is_finite() || x < 0.0 {
        return Err(Error::recipe(format!(
            "'{p}' is {x}; expected a finite, non-negative number"
        )));
    }
    Ok(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(v: serde_json::Value) -> std::result::Result<JointSpec, String> {
        serde_json::from_value(v).map_err(|e| e.to_string())
    }

    #[test]
    fn untyped_joint_with_parameters_is_not_rigid() {
        // the defect: {"k", "eta"} without a type coupled rigidly
        let j = parse(serde_json::json!({"a": "A:104+X", "b": "B:201+X", "k": 5e4, "eta": 0.05}))
            .unwrap();
        assert_eq!(j.kind, JointType::Hysteretic { k: 5e4, eta: 0.05 });
        assert!(j.inferred);
        assert!(j.inference_note().unwrap().contains("hysteretic"));
        let r = parse(serde_json::json!({"a": "A:1+X", "b": "B:1+X"})).unwrap();
        assert_eq!(r.kind, JointType::Rigid);
    }

    #[test]
    fn parameters_that_do_not_belong_are_refused() {
        let e = parse(
            serde_json::json!({"a": "A:1+X", "b": "B:1+X", "type": "spring", "k": 1e5, "eta": 0.1}),
        )
        .unwrap_err();
        assert!(e.contains("'eta' does not belong"), "{e}");
        let e = parse(serde_json::json!({"a": "A:1+X", "b": "B:1+X", "type": "rigid", "k": 1e5}))
            .unwrap_err();
        assert!(e.contains("no parameters"), "{e}");
        let e =
            parse(serde_json::json!({"a": "A:1+X", "b": "B:1+X", "type": "springy"})).unwrap_err();
        assert!(e.contains("the types are rigid, spring"), "{e}");
        let e = parse(serde_json::json!({"a": "A:1+X", "b": "B:1+X", "kk": 1})).unwrap_err();
        assert!(e.contains("unknown field `kk`"), "{e}");
        let e = parse(serde_json::json!({"a": "A:1+X", "b": "B:1+X", "eta": 0.1})).unwrap_err();
        assert!(e.contains("needs a stiffness"), "{e}");
    }

    #[test]
    fn written_form_always_names_the_type_and_reads_back() {
        let j =
            parse(serde_json::json!({"a": "A:1+X", "b": "B:1+X", "k": 2e5, "c": 30.0})).unwrap();
        let v = serde_json::to_value(&j).unwrap();
        assert_eq!(v["type"], "spring-damper");
        let back: JointSpec = serde_json::from_value(v).unwrap();
        assert_eq!(back.kind, j.kind);
        assert!(!back.inferred);
    }

    #[test]
    fn the_table_matches_the_enum() {
        // every tabled type deserializes with its required parameters, and its
        // serialized form carries exactly the tabled names
        for t in JOINT_TYPES {
            let mut v = serde_json::json!({"a": "A:1+X", "b": "B:1+X", "type": t.name});
            for (p, _, _) in t.params {
                v[p] = if *p == "stiffness" {
                    serde_json::json!("K")
                } else {
                    serde_json::json!(1.0)
                };
            }
            let j: JointSpec = serde_json::from_value(v).unwrap();
            assert_eq!(j.type_name(), t.name);
            let back = serde_json::to_value(&j).unwrap();
            let keys: Vec<&String> = back.as_object().unwrap().keys().collect();
            for k in keys {
                assert!(
                    ["a", "b", "type"].contains(&k.as_str()) || t.params.iter().any(|p| p.0 == k),
                    "{k} of {}",
                    t.name
                );
            }
        }
    }
}
