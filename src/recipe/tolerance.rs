//! The recipe's `"tolerances"`: parameters known only within a tolerance
//! (an isolator's stiffness ± 15 %, a joint's loss factor), drawn by the
//! recipe's Monte Carlo (`mortise run --monte-carlo N`, `mortise sweep
//! --monte-carlo N`) together with the components' stated uncertainty. A
//! plain run uses the nominal values and says so in its notes.
//!
//! Each entry varies one thing by a factor drawn per Monte Carlo draw:
//! `"scale"` multiplies a component or step (as a variant's scale does),
//! `"set_joints"` sets the listed joint parameters to their nominal value
//! times the factor (one factor for all the listed joints: a batch of the
//! same isolators; give them separate entries to draw them independently).
//! The factor is 1 + r·z with z standard normal (`"distribution":
//! "normal"`, the default, r the relative standard deviation, at most 0.25
//! so that a factor at or below zero is a 4σ event) or uniform on [−1, 1]
//! (`"uniform"`, r the relative half-width, below 1). Draw `d` of entry `e`
//! takes the normal pair (or the uniform number) d·E + e of the stream
//! seed + [`TOLERANCE_STREAM`] (E entries), so it depends on the seed and
//! the draw only, as the components' draws do.

use super::{check_joint_setting, joint_key, Op, Recipe, Variant};
use crate::error::{quote, Error, Result};
use crate::uncertainty::draws;
use serde::{Deserialize, Serialize};

/// Added to the Monte Carlo seed for the tolerances' draws (the ASCII of
/// "tol"), so they never reuse the components' numbers.
pub const TOLERANCE_STREAM: u64 = 0x746F_6C00;

/// Largest relative standard deviation of a normal tolerance.
pub const MAX_NORMAL_RELATIVE: f64 = 0.25;

/// One entry of `"tolerances"`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Tolerance {
    /// A component or step multiplied by the drawn factor.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scale: Option<String>,
    /// Joint parameters "STEP_ID#INDEX.FIELD" set to nominal × factor.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub set_joints: Vec<String>,
    /// Relative standard deviation (normal) or half-width (uniform).
    pub relative: f64,
    /// "normal" (default) or "uniform".
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub distribution: Option<String>,
}

/// The keys of a tolerance, with their meaning (for the help).
pub const TOLERANCE_FIELDS: &[(&str, &str)] = &[
    ("scale", "a component or step multiplied by the drawn factor"),
    ("set_joints", "joint parameters \"STEP_ID#INDEX.FIELD\" set to their nominal value times the factor (one factor for all of them)"),
    ("relative", "the relative standard deviation (normal, at most 0.25) or half-width (uniform, below 1) of the factor around 1"),
    ("distribution", "\"normal\" (default) or \"uniform\""),
];

/// The distribution of a tolerance's factor.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Shape {
    Normal,
    Uniform,
}

impl Tolerance {
    fn shape(&self) -> Result<Shape> {
        match self.distribution.as_deref() {
            None | Some("normal") => Ok(Shape::Normal),
            Some("uniform") => Ok(Shape::Uniform),
            Some(other) => Err(Error::recipe(format!(
                "'{}' is not a distribution; expected \"normal\" or \"uniform\"",
                quote(other)
            ))
            .field("distribution")),
        }
    }

    /// What it varies, in words ("scale 'isolator'", "set_joints mounted#0.k").
    pub fn what(&self) -> String {
        match &self.scale {
            Some(s) => format!("scale '{s}'"),
            None => format!("set_joints {}", self.set_joints.join(", ")),
        }
    }

    /// Every key checked against the recipe: one of `scale` / `set_joints`,
    /// a relative tolerance above 0 and within its distribution's limit,
    /// each joint parameter present with a nominal value it may be varied
    /// around. Errors name the field.
    pub fn check(&self, r: &Recipe) -> Result<()> {
        let shape = self.shape()?;
        let rel = self.relative;
        if !rel.is_finite() || rel <= 0.0 {
            return Err(Error::recipe(format!(
                "'relative' is {rel}; expected a tolerance above 0 (a fraction: 0.15 is ± 15 %)"
            ))
            .field("relative"));
        }
        match shape {
            Shape::Normal if rel > MAX_NORMAL_RELATIVE => {
                return Err(Error::recipe(format!(
                    "'relative' {rel} as a normal standard deviation makes a factor at or below zero likely; at most {MAX_NORMAL_RELATIVE}, or use \"distribution\": \"uniform\""
                ))
                .field("relative"))
            }
            Shape::Uniform if rel >= 1.0 => {
                return Err(Error::recipe(format!(
                    "'relative' {rel} as a uniform half-width reaches a factor of zero; below 1"
                ))
                .field("relative"))
            }
            _ => {}
        }
        match (&self.scale, self.set_joints.is_empty()) {
            (Some(_), false) => Err(Error::recipe(
                "give either 'scale' or 'set_joints' in one tolerance, not both (use two entries)",
            )
            .field("set_joints")),
            (None, true) => Err(Error::recipe(
                "nothing to vary: give 'scale' (a component or step) or 'set_joints'",
            )
            .field("scale")),
            (Some(s), true) => {
                let known = r.components.contains_key(s) || r.steps.iter().any(|st| st.id == *s);
                if known {
                    Ok(())
                } else {
                    Err(Error::recipe(format!(
                        "'{}' is not a component or step of the recipe",
                        quote(s)
                    ))
                    .field("scale"))
                }
            }
            (None, false) => {
                for (i, key) in self.set_joints.iter().enumerate() {
                    let nominal =
                        nominal(r, key).map_err(|e| e.field(format!("set_joints[{i}]")))?;
                    // the extreme factors the distribution allows stay valid
                    for f in [1.0 - 4.0 * rel, 1.0 + 4.0 * rel] {
                        let f = if shape == Shape::Uniform {
                            f.clamp(1.0 - rel, 1.0 + rel)
                        } else {
                            f
                        };
                        check_joint_setting(r, key, nominal * f.max(f64::MIN_POSITIVE))
                            .map_err(|e| e.field(format!("set_joints[{i}]")))?;
                    }
                }
                Ok(())
            }
        }
    }

    /// The factor of draw `draw` for entry `entry` of `entries`.
    pub fn factor(&self, seed: u64, draw: usize, entry: usize, entries: usize) -> f64 {
        let i = (draw as u64)
            .wrapping_mul(entries as u64)
            .wrapping_add(entry as u64);
        let s = seed.wrapping_add(TOLERANCE_STREAM);
        match self.shape() {
            Ok(Shape::Uniform) => 1.0 + self.relative * (2.0 * draws::uniform(s, i) - 1.0),
            _ => 1.0 + self.relative * draws::normal_pair(s, i).re,
        }
    }

    /// Put this tolerance's factor `f` into `v` (a scale multiplies one the
    /// variant has; joint parameters take nominal × f).
    pub fn apply(&self, r: &Recipe, f: f64, v: &mut Variant) -> Result<()> {
        if f <= 0.0 {
            return Err(Error::numeric(format!(
                "the tolerance of {} drew a factor of {f}, at or below zero",
                self.what()
            )));
        }
        if let Some(s) = &self.scale {
            *v.scale.entry(s.clone()).or_insert(1.0) *= f;
        }
        for key in &self.set_joints {
            v.set_joints.insert(key.clone(), nominal(r, key)? * f);
        }
        Ok(())
    }
}

/// The recipe's value of joint parameter `key` ("STEP_ID#INDEX.FIELD").
fn nominal(r: &Recipe, key: &str) -> Result<f64> {
    // the key's shape, step and joint are checked with a value of 1 first
    check_joint_setting(r, key, 1.0)?;
    let (step, index, field) = joint_key(key)
        .ok_or_else(|| Error::recipe(format!("'{}' is not a joint parameter", quote(key))))?;
    let joints = match r.steps.iter().find(|s| s.id == step).map(|s| &s.op) {
        Some(Op::Couple(c)) => &c.joints,
        Some(Op::Decouple(d)) => &d.joints,
        _ => return Err(Error::recipe(format!("'{}' names no joint", quote(key)))),
    };
    joints
        .get(index)
        .and_then(|j| j.param(field))
        .ok_or_else(|| {
            Error::recipe(format!(
                "'{}' has no value in the recipe to vary around; give the joint its '{field}' first",
                quote(key)
            ))
        })
}

/// Check every tolerance (errors name `tolerances[i]`).
pub(crate) fn check_all(r: &Recipe) -> Result<()> {
    for (i, t) in r.tolerances.iter().enumerate() {
        t.check(r)
            .map_err(|e| e.within(format!("tolerances[{i}]")))?;
    }
    Ok(())
}

/// The variant of draw `draw`: every tolerance's factor applied. None when
/// the recipe has no tolerances.
pub(crate) fn draw_variant(r: &Recipe, seed: u64, draw: usize) -> Result<Option<Variant>> {
    if r.tolerances.is_empty() {
        return Ok(None);
    }
    let mut v = Variant {
        name: format!("tolerance draw {}", draw + 1),
        scale: Default::default(),
        drop_joints: Vec::new(),
        set_joints: Default::default(),
        swap: Default::default(),
    };
    let n = r.tolerances.len();
    for (e, t) in r.tolerances.iter().enumerate() {
        t.apply(r, t.factor(seed, draw, e, n), &mut v)
            .map_err(|err| err.within(format!("tolerances[{e}]")))?;
    }
    Ok(Some(v))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::recipe::parse;

    fn demo() -> serde_json::Value {
        let files = crate::demo_files::files().unwrap();
        let (_, b) = files
            .iter()
            .find(|(n, _)| n.ends_with(".recipe.json"))
            .unwrap();
        serde_json::from_slice(b).unwrap()
    }

    fn refused(t: serde_json::Value) -> String {
        let mut r = demo();
        r["tolerances"] = serde_json::json!([t]);
        parse(&r.to_string()).unwrap_err().to_string()
    }

    #[test]
    fn bad_tolerances_are_refused_naming_the_field() {
        for (t, says) in [
            (
                serde_json::json!({"scale": "isolator", "relative": -0.1}),
                "tolerances[0]: relative",
            ),
            (
                serde_json::json!({"scale": "isolator", "relative": 0}),
                "above 0",
            ),
            (
                serde_json::json!({"scale": "isolator", "relative": 0.3}),
                "at most 0.25",
            ),
            (
                serde_json::json!({"scale": "isolator", "relative": 1.0, "distribution": "uniform"}),
                "below 1",
            ),
            (
                serde_json::json!({"scale": "isolator", "relative": 0.1, "distribution": "lognormal"}),
                "'lognormal' is not a distribution",
            ),
            (
                serde_json::json!({"scale": "nothing", "relative": 0.1}),
                "'nothing' is not a component",
            ),
            (serde_json::json!({"relative": 0.1}), "nothing to vary"),
            (
                serde_json::json!({"scale": "isolator", "set_joints": ["mounted#0.k"], "relative": 0.1}),
                "not both",
            ),
            // the demo's isolators are measured joints: no number to vary
            (
                serde_json::json!({"set_joints": ["mounted#0.k"], "relative": 0.1}),
                "set_joints[0]",
            ),
            (
                serde_json::json!({"scale": "isolator", "relative": 0.1, "spread": 2}),
                "unknown key",
            ),
        ] {
            let e = refused(t.clone());
            assert!(e.contains(says), "{t}: {e}");
        }
    }

    #[test]
    fn factors_follow_their_distribution_and_joints_vary_around_their_value() {
        // sample moments of 20,000 factors (common practice: within four
        // standard errors): normal mean 1, standard deviation r; uniform
        // mean 1, standard deviation r/√3 (uniform on [1 − r, 1 + r])
        let n = 20_000;
        for (dist, r, sd) in [("normal", 0.1, 0.1), ("uniform", 0.2, 0.2 / 3f64.sqrt())] {
            let t = Tolerance {
                scale: Some("x".into()),
                set_joints: Vec::new(),
                relative: r,
                distribution: Some(dist.into()),
            };
            let f: Vec<f64> = (0..n).map(|d| t.factor(5, d, 0, 1)).collect();
            let m = f.iter().sum::<f64>() / n as f64;
            let s = (f.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (n - 1) as f64).sqrt();
            assert!(
                (m - 1.0).abs() < 4.0 * sd / (n as f64).sqrt(),
                "{dist} mean {m}"
            );
            assert!(
                (s / sd - 1.0).abs() < 4.0 / (2.0 * n as f64).sqrt() * 1.5,
                "{dist} sd {s}"
            );
            if dist == "uniform" {
                assert!(f.iter().all(|x| (x - 1.0).abs() <= r));
            }
        }
        // a spring joint's k drawn around the recipe's value; two entries
        // draw independently, the same seed and draw give the same factor
        let mut r = demo();
        r["steps"][0]["joints"][0] = serde_json::json!(
            {"a": "casing:101+Z", "b": "bracket:1+Z", "type": "spring", "k": 4e5});
        r["tolerances"] = serde_json::json!([
            {"set_joints": ["mounted#0.k"], "relative": 0.1},
            {"scale": "isolator", "relative": 0.05, "distribution": "uniform"}
        ]);
        let rec = parse(&r.to_string()).unwrap();
        let v = draw_variant(&rec, 9, 4).unwrap().unwrap();
        let f0 = rec.tolerances[0].factor(9, 4, 0, 2);
        let f1 = rec.tolerances[1].factor(9, 4, 1, 2);
        assert_eq!(v.set_joints["mounted#0.k"], 4e5 * f0);
        assert_eq!(v.scale["isolator"], f1);
        assert_ne!(f0, rec.tolerances[0].factor(9, 5, 0, 2));
        assert_eq!(draw_variant(&rec, 9, 4).unwrap(), Some(v));
    }
}
