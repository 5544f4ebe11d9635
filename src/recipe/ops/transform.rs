//! One set in, one set out: `select`, `convert`, `invert`, `scale`, `resample`.

use super::{opt, parse_dofs, req, Ctx, Operand, Operation, StepOutput};
use crate::error::{Error, Result};
use crate::frf::FrfSet;
use crate::grid::{self, Interp};
use crate::recipe::component::GridSpec;
use serde::{Deserialize, Serialize};

/// Keep some outputs and inputs of a set.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Select {
    pub from: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub outputs: Option<Vec<String>>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub inputs: Option<Vec<String>>,
}

/// Change the kind (receptance, mobility, accelerance, ...).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Convert {
    pub from: String,
    pub kind: String,
}

/// Line-by-line matrix inverse.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Invert {
    pub from: String,
}

/// Multiply every value by a factor.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Scale {
    pub from: String,
    pub factor: f64,
}

/// Bring a set onto another grid (interpolation only, never extrapolation).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Resample {
    pub from: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub grid: Option<GridSpec>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub like: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub interp: Option<String>,
}

const FROM: &str = "name of the set";

impl Operation for Select {
    const SUMMARY: &'static str = "keep the named outputs and inputs of a set, in the order given";
    const OPERANDS: &'static [Operand] = &[
        req("from", FROM),
        opt("outputs", "output DOF labels to keep (left out: all)"),
        opt("inputs", "input DOF labels to keep (left out: all)"),
    ];
    fn reads(&self) -> Vec<&str> {
        vec![&self.from]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let s = cx.get("from", &self.from)?;
        if self.outputs.is_none() && self.inputs.is_none() {
            return Err(Error::recipe(
                "a select needs 'outputs', 'inputs' or both; without them it would keep everything",
            ));
        }
        Ok(StepOutput::plain(
            cx,
            "select",
            select(s, self.outputs.as_deref(), self.inputs.as_deref())?,
        ))
    }
}

/// The outputs and inputs of `set` named by labels (None = all).
pub(crate) fn select(
    set: &FrfSet,
    outputs: Option<&[String]>,
    inputs: Option<&[String]>,
) -> Result<FrfSet> {
    let outs = match outputs {
        Some(o) => parse_dofs(o, "outputs")?,
        None => set.outputs.clone(),
    };
    let ins = match inputs {
        Some(i) => parse_dofs(i, "inputs")?,
        None => set.inputs.clone(),
    };
    set.select_dofs(&outs, &ins)
}

impl Operation for Convert {
    const SUMMARY: &'static str =
        "change the FRF kind by (iω)ⁿ or by inversion: receptance, mobility, accelerance, dynamic-stiffness, impedance, apparent-mass";
    const OPERANDS: &'static [Operand] =
        &[req("from", FROM), req("kind", "the kind to convert to")];
    fn reads(&self) -> Vec<&str> {
        vec![&self.from]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let s = cx.get("from", &self.from)?;
        cx.check_set("the converted set", s.n_lines(), s.n_out(), s.n_in())?;
        // a change between motion/force and force/motion inverts every line
        cx.check_work(
            "the conversion (possibly a line-by-line inversion)",
            inversion_work(s.n_lines(), s.n_out().max(s.n_in())),
        )?;
        Ok(StepOutput::plain(
            cx,
            "convert",
            s.to_kind(&self.kind).map_err(|e| e.field("kind"))?,
        ))
    }
}

impl Operation for Invert {
    const SUMMARY: &'static str =
        "invert every line's matrix (receptance ↔ dynamic stiffness); square, complete sets only";
    const OPERANDS: &'static [Operand] = &[req("from", FROM)];
    fn reads(&self) -> Vec<&str> {
        vec![&self.from]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let s = cx.get("from", &self.from)?;
        cx.check_set("the inverted set", s.n_lines(), s.n_in(), s.n_out())?;
        cx.check_work(
            &format!(
                "inverting {} lines of {} × {} matrices",
                s.n_lines(),
                s.n_out(),
                s.n_in()
            ),
            inversion_work(s.n_lines(), s.n_out().max(s.n_in())),
        )?;
        Ok(StepOutput::plain(cx, "invert", s.invert()?))
    }
}

impl Operation for Scale {
    const SUMMARY: &'static str = "multiply every value by a real factor";
    const OPERANDS: &'static [Operand] =
        &[req("from", FROM), req("factor", "a finite real number")];
    fn reads(&self) -> Vec<&str> {
        vec![&self.from]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let s = cx.get("from", &self.from)?;
        if !self.factor.is_finite() {
            return Err(Error::recipe(format!(
                "'factor' is {}; expected a finite number",
                self.factor
            ))
            .field("factor"));
        }
        cx.check_set("the scaled set", s.n_lines(), s.n_out(), s.n_in())?;
        let mut s = s.clone();
        scale_in_place(&mut s, self.factor)?;
        Ok(StepOutput::plain(cx, "scale", s))
    }
}

/// Estimated operations of inverting `lines` complex n × n matrices (LU
/// and n right-hand sides: about 8/3 n³ complex multiply-adds, 8 real
/// operations each).
pub(crate) fn inversion_work(lines: usize, n: usize) -> f64 {
    let n = n as f64;
    lines as f64 * (64.0 / 3.0) * n * n * n
}

/// Multiply every value of a set by `f`; refused when a product is not
/// finite (a factor that overflows the values), naming the first one.
pub(crate) fn scale_in_place(s: &mut FrfSet, f: f64) -> Result<()> {
    for v in &mut s.data {
        *v *= f;
    }
    s.validate().map_err(|e| {
        Error::numeric(format!(
            "multiplying '{}' by {f:e} overflows: {}",
            crate::error::quote(&s.name),
            e.message
        ))
        .field("factor")
    })
}

/// The interpolation an `interp` operand names (default: linear in re/im).
pub(crate) fn interp(name: Option<&str>) -> Result<Interp> {
    match name {
        None => Ok(Interp::default()),
        Some(n) => Interp::parse(n).map_err(|e| Error::recipe(e.message).field("interp")),
    }
}

impl Operation for Resample {
    const SUMMARY: &'static str =
        "bring a set onto another grid by interpolation; lines outside the set's own range are refused, never extrapolated";
    const OPERANDS: &'static [Operand] = &[
        req("from", FROM),
        opt(
            "grid",
            "the new grid: {from, to, step} or {lines: [...]}, Hz (give grid or like)",
        ),
        opt(
            "like",
            "name of a set whose grid to take (give grid or like)",
        ),
        opt(
            "interp",
            "re-im (default) or log-mag-phase (keeps lightly damped peaks)",
        ),
    ];
    fn reads(&self) -> Vec<&str> {
        let mut r = vec![self.from.as_str()];
        if let Some(l) = &self.like {
            r.push(l);
        }
        r
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let s = cx.get("from", &self.from)?;
        let lines = match (&self.grid, &self.like) {
            (Some(g), None) => g.lines().map_err(|e| e.field("grid"))?,
            (None, Some(l)) => cx.get("like", l)?.freqs.clone(),
            _ => {
                return Err(Error::recipe(
                    "a resample needs exactly one of 'grid' (the lines) or 'like' (a set whose grid to take)",
                ))
            }
        };
        let how = interp(self.interp.as_deref())?;
        cx.check_set("the resampled set", lines.len(), s.n_out(), s.n_in())?;
        Ok(StepOutput::plain(
            cx,
            "resample",
            grid::resample(s, &lines, how)?,
        ))
    }
}
