//! What later steps read of a result: demand-driven evaluation.
//!
//! The demand runs backwards from the recipe's readers. A `select` naming
//! its outputs, its inputs or both reads only those rows and columns of
//! its operand; a `couple`, `decouple` or `cascade` step read only so far
//! computes only that part ([`crate::assemble::couple_requested`],
//! [`crate::assemble::decouple_requested`],
//! [`crate::assemble::cascade_requested`]: bit for bit the entries of the
//! whole result), and a cascade read so far passes the demand on (its
//! second stage's requested rows, its first stage's requested columns).
//! Anything else that reads a step (another operation, the recipe's
//! `outputs`, a speed sweep's transfer) reads the whole of it, and so does
//! a step no one reads. The analysis is conservative: when in doubt, the
//! whole result.

use super::ops::{parse_dofs, Op};
use super::Recipe;
use crate::assemble::Request;
use crate::error::Result;
use crate::frf::Dof;
use std::collections::BTreeMap;

/// What the readers of a step read of it.
#[derive(Debug, Clone, PartialEq)]
enum Need {
    Whole,
    Part(Request),
}

impl Need {
    /// Both readers' needs: the union of the rows and of the columns.
    fn merge(self, other: Need) -> Need {
        match (self, other) {
            (Need::Part(a), Need::Part(b)) => {
                let join = |x: Option<Vec<Dof>>, y: Option<Vec<Dof>>| match (x, y) {
                    (Some(mut x), Some(y)) => {
                        add(&mut x, y);
                        Some(x)
                    }
                    _ => None,
                };
                let r = Request {
                    outputs: join(a.outputs, b.outputs),
                    inputs: join(a.inputs, b.inputs),
                };
                if r.is_whole() {
                    Need::Whole
                } else {
                    Need::Part(r)
                }
            }
            _ => Need::Whole,
        }
    }
}

/// The rows and columns each demand-driven step must compute, by step id
/// (steps not listed compute their whole result).
pub(crate) fn requests(recipe: &Recipe) -> Result<BTreeMap<String, Request>> {
    let mut need: BTreeMap<String, Need> = BTreeMap::new();
    let read = |need: &mut BTreeMap<String, Need>, id: &str, n: Need| {
        // readers come last to first: the earlier reader's labels first
        let merged = match need.remove(id) {
            Some(old) => n.merge(old),
            None => n,
        };
        need.insert(id.to_string(), merged);
    };
    for o in &recipe.outputs {
        read(&mut need, o, Need::Whole);
    }
    if let Some(sp) = recipe.sweep.as_ref().and_then(|s| s.speed.as_ref()) {
        read(&mut need, &sp.frf, Need::Whole);
    }
    let mut out = BTreeMap::new();
    for step in recipe.steps.iter().rev() {
        // unread: whole (conservative)
        let mine = need.remove(&step.id).unwrap_or(Need::Whole);
        let part = match (&step.op, mine) {
            (Op::Couple(_) | Op::Decouple(_) | Op::Cascade(_), Need::Part(r)) => Some(r),
            _ => None,
        };
        match (&step.op, &part) {
            (Op::Select(s), _) => {
                let r = Request {
                    outputs: s
                        .outputs
                        .as_ref()
                        .map(|o| parse_dofs(o, "outputs"))
                        .transpose()?,
                    inputs: s
                        .inputs
                        .as_ref()
                        .map(|i| parse_dofs(i, "inputs"))
                        .transpose()?,
                };
                let n = if r.is_whole() {
                    Need::Whole
                } else {
                    Need::Part(r)
                };
                read(&mut need, &s.from, n);
            }
            (Op::Cascade(c), Some(r)) => {
                // second · first: second's requested rows (all its
                // inputs), first's requested columns (all its outputs)
                let part = |r: Request| {
                    if r.is_whole() {
                        Need::Whole
                    } else {
                        Need::Part(r)
                    }
                };
                let first = part(Request {
                    outputs: None,
                    inputs: r.inputs.clone(),
                });
                let second = part(Request {
                    outputs: r.outputs.clone(),
                    inputs: None,
                });
                if c.first == c.second {
                    read(&mut need, &c.first, first.merge(second));
                } else {
                    read(&mut need, &c.first, first);
                    read(&mut need, &c.second, second);
                }
            }
            _ => {
                for id in step.op.reads() {
                    read(&mut need, id, Need::Whole);
                }
            }
        }
        if let Some(r) = part {
            out.insert(step.id.clone(), r);
        }
    }
    Ok(out)
}

/// Append the labels not yet in `to` (same place and sign), in order.
fn add(to: &mut Vec<Dof>, labels: Vec<Dof>) {
    for d in labels {
        if !to.contains(&d) {
            to.push(d);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn recipe(steps: serde_json::Value, outputs: &[&str]) -> Recipe {
        let v = serde_json::json!({
            "format": "mortise-recipe", "version": 1,
            "components": {
                "a": {"file": "a.csv"}, "b": {"file": "b.csv"}
            },
            "steps": steps,
            "outputs": outputs,
        });
        crate::recipe::parse(&v.to_string()).unwrap()
    }

    fn couple() -> serde_json::Value {
        serde_json::json!({"id": "ab", "op": "couple", "parts": ["a", "b"],
            "joints": [{"a": "a:2+Z", "b": "b:1+Z", "type": "rigid"}]})
    }

    #[test]
    fn selects_naming_both_sides_ask_for_their_union() {
        let r = recipe(
            serde_json::json!([couple(),
                {"id": "s1", "op": "select", "from": "ab", "outputs": ["b:3+Z"], "inputs": ["a:1+Z"]},
                {"id": "s2", "op": "select", "from": "ab", "outputs": ["b:3+Z", "b:2+Z"], "inputs": ["a:1-Z"]}]),
            &["s1", "s2"],
        );
        let q = requests(&r).unwrap();
        let req = &q["ab"];
        let labels = |v: &[Dof]| v.iter().map(|d| d.to_string()).collect::<Vec<_>>();
        assert_eq!(labels(req.outputs.as_ref().unwrap()), ["b:3+Z", "b:2+Z"]);
        // a sign-flipped label is its own column (select flips the sign)
        assert_eq!(labels(req.inputs.as_ref().unwrap()), ["a:1+Z", "a:1-Z"]);
    }

    #[test]
    fn any_other_reader_or_an_output_asks_for_the_whole() {
        let sel = serde_json::json!({"id": "s", "op": "select", "from": "ab",
            "outputs": ["b:3+Z"], "inputs": ["a:1+Z"]});
        // the coupling is an output itself
        let r = recipe(serde_json::json!([couple(), sel.clone()]), &["ab", "s"]);
        assert!(requests(&r).unwrap().is_empty());
        // another operation reads it
        let r = recipe(
            serde_json::json!([couple(), sel.clone(),
                {"id": "m", "op": "convert", "from": "ab", "kind": "mobility"}]),
            &["s", "m"],
        );
        assert!(requests(&r).unwrap().is_empty());
        // no one reads it
        let r = recipe(serde_json::json!([couple()]), &[]);
        assert!(requests(&r).unwrap().is_empty());
    }

    #[test]
    fn a_select_of_one_side_keeps_every_dof_of_the_other() {
        let r = recipe(
            serde_json::json!([couple(), {"id": "s", "op": "select", "from": "ab", "outputs": ["b:3+Z"]}]),
            &["s"],
        );
        let q = requests(&r).unwrap();
        assert_eq!(q["ab"].outputs.as_ref().map(Vec::len), Some(1));
        assert_eq!(q["ab"].inputs, None);
    }

    #[test]
    fn a_cascade_read_in_part_passes_the_demand_to_its_stages() {
        // c = ab · ab2 read for one row and one column: c computes that; its
        // second stage (ab) that row of every column, its first stage (s0,
        // a select, which reads its own) that column of every row
        let r = recipe(
            serde_json::json!([couple(),
                {"id": "s0", "op": "select", "from": "ab", "outputs": ["b:3+Z", "b:2+Z"], "inputs": ["a:1+Z"]},
                {"id": "c", "op": "cascade", "first": "s0", "second": "ab"},
                {"id": "pick", "op": "select", "from": "c", "outputs": ["b:2+Z"]}]),
            &["pick"],
        );
        let q = requests(&r).unwrap();
        let labels = |v: &Option<Vec<Dof>>| {
            v.as_ref()
                .map(|v| v.iter().map(|d| d.to_string()).collect::<Vec<_>>())
        };
        assert_eq!(labels(&q["c"].outputs), Some(vec!["b:2+Z".to_string()]));
        assert_eq!(q["c"].inputs, None);
        assert!(!q.contains_key("s0"), "a select is not demand-driven");
        // ab: the cascade's row b:2+Z (every column) and s0's rows and column
        assert_eq!(
            labels(&q["ab"].outputs),
            Some(vec!["b:3+Z".to_string(), "b:2+Z".to_string()])
        );
        assert_eq!(
            q["ab"].inputs, None,
            "the cascade reads every column of its second stage"
        );
        // the cascade read whole (an output) asks the whole of its stages
        let r = recipe(
            serde_json::json!([couple(),
                {"id": "s0", "op": "select", "from": "ab", "outputs": ["b:3+Z"], "inputs": ["a:1+Z"]},
                {"id": "c", "op": "cascade", "first": "s0", "second": "ab"},
                {"id": "pick", "op": "select", "from": "c", "outputs": ["b:2+Z"]}]),
            &["pick", "c"],
        );
        assert!(requests(&r).unwrap().is_empty());
    }

    #[test]
    fn a_decoupling_read_in_part_computes_that_part_and_reads_its_operands_whole() {
        let r = recipe(
            serde_json::json!([couple(),
                {"id": "d", "op": "decouple", "assembly": "ab", "remove": "b",
                 "joints": [{"a": "b:1+Z", "b": "b:1+Z", "type": "rigid"}]},
                {"id": "pick", "op": "select", "from": "d", "outputs": ["a:1+Z"], "inputs": ["a:2+Z"]}]),
            &["pick"],
        );
        let q = requests(&r).unwrap();
        assert_eq!(q.keys().collect::<Vec<_>>(), ["d"]);
    }
}
