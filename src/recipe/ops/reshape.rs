//! Chains and combinations: `cascade`, `sum`, `series`, `parallel`.

use super::{req, Ctx, Operand, Operation, StepOutput};
use crate::assemble;
use crate::error::Result;
use serde::{Deserialize, Serialize};

/// H = second · first (a transfer chain).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Cascade {
    pub first: String,
    pub second: String,
}

/// The sum of parallel transfer paths.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Sum {
    pub parts: Vec<String>,
}

/// Elements in series: mobilities add.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Series {
    pub parts: Vec<String>,
}

/// Elements in parallel: impedances add.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Parallel {
    pub parts: Vec<String>,
}

impl Operation for Cascade {
    const SUMMARY: &'static str =
        "chain two transfers, H = second · first (the outputs of first are the inputs of second)";
    const OPERANDS: &'static [Operand] = &[
        req(
            "first",
            "name of the first transfer (e.g. force → velocity)",
        ),
        req(
            "second",
            "name of the second transfer (e.g. velocity → pressure)",
        ),
    ];
    fn reads(&self) -> Vec<&str> {
        vec![&self.first, &self.second]
    }
    fn run(&self, cx: &Ctx) -> Result<StepOutput> {
        let a = cx.get("first", &self.first)?;
        let b = cx.get("second", &self.second)?;
        let (l, o, m, i) = (a.n_lines(), b.n_out(), a.n_out(), a.n_in());
        cx.check_set("the cascaded set", l, o, i)?;
        cx.check_work(
            &format!("cascading {l} lines of {o} × {m} by {m} × {i}"),
            8.0 * l as f64 * o as f64 * m as f64 * i as f64,
        )?;
        let Some(req) = cx.demand else {
            return Ok(StepOutput::plain(cx, "cascade", assemble::cascade(a, b)?));
        };
        // only the rows and columns later steps read (recipe::demand)
        let (set, (r, c)) = assemble::cascade_requested(a, b, req)?;
        let mut out = StepOutput::plain(cx, "cascade", set);
        out.report.notes.push(format!(
            "computed {} of the {o} × {i} its operands give ({r} × {c} multiplied): the rows and columns later steps read; the values equal the whole cascade's",
            req.describe((o, i))
        ));
        Ok(out)
    }
}

macro_rules! parts_op {
    ($ty:ident, $name:literal, $summary:literal, $f:path) => {
        impl Operation for $ty {
            const SUMMARY: &'static str = $summary;
            const OPERANDS: &'static [Operand] = &[req("parts", "names of the sets to combine")];
            fn reads(&self) -> Vec<&str> {
                self.parts.iter().map(String::as_str).collect()
            }
            fn run(&self, cx: &Ctx) -> Result<StepOutput> {
                let parts = cx.get_all("parts", &self.parts)?;
                // the result has the first part's size; series and parallel
                // may invert every part line by line
                let p = &parts[0];
                cx.check_set(
                    concat!("the ", $name, " result"),
                    p.n_lines(),
                    p.n_out(),
                    p.n_in(),
                )?;
                let work = parts.iter().fold(0.0, |a, s| {
                    a + super::transform::inversion_work(s.n_lines(), s.n_out().max(s.n_in()))
                });
                cx.check_work(concat!("the ", $name, " of the parts"), work)?;
                Ok(StepOutput::plain(cx, $name, $f(&parts)?))
            }
        }
    };
}

parts_op!(
    Sum,
    "sum",
    "add transfers of parallel paths entry by entry (same DOFs, quantities and grid)",
    assemble::sum_paths
);
parts_op!(
    Series,
    "series",
    "mechanical elements in series: mobilities (receptances) add",
    assemble::series
);
parts_op!(
    Parallel,
    "parallel",
    "mechanical elements in parallel: impedances (dynamic stiffnesses) add",
    assemble::parallel
);
